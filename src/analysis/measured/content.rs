//! The analyte content from an endpoint, in the units a laboratory reports, with an
//! uncertainty budget.
//!
//! The model: the aliquot of V_a mL holds c = r·c_t·V_e/V_a mol/L of analyte, with c_t the
//! titrant's concentration, V_e the endpoint volume and r the moles of analyte per mole of
//! titrant. From it g/L = c·M and g/100 mL = c·M/10; when the aliquot was taken from a
//! sample of m g made up to V_f mL, % w/w = 100·c·M·V_f/(1000·m).
//!
//! Each input's standard uncertainty enters by the law of propagation of uncertainty for a
//! product of powers (JCGM 100:2008, the GUM, 5.1.6): the relative combined standard
//! uncertainty is the root sum of squares of the relative ones. A glassware tolerance ±a is
//! read as a rectangular distribution, u = a/√3 (GUM 4.3.7). The expanded uncertainty uses
//! k = 2 (about 95 % coverage for a normal distribution, GUM 6.3.3).
//!
//! Class A tolerances (from memory of the standards): burettes, ISO 385:2005; one-mark
//! pipettes, ISO 648:2008; one-mark volumetric flasks, ISO 1042:1998. Class B is twice
//! class A.

use super::{MeasuredError, MeasuredResult, check};

/// Coverage factor of the expanded uncertainty (GUM 6.3.3).
pub const COVERAGE_FACTOR: f64 = 2.0;

/// Accuracy class of volumetric glassware.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum GlassClass {
    /// Class A (the tolerances of the tables).
    A,
    /// Class B (twice class A).
    B,
}

impl GlassClass {
    fn factor(self) -> f64 {
        match self {
            GlassClass::A => 1.0,
            GlassClass::B => 2.0,
        }
    }
}

fn lookup(table: &[(f64, f64)], nominal_ml: f64, class: GlassClass) -> Option<f64> {
    table
        .iter()
        .find(|(v, _)| (v - nominal_ml).abs() < 1e-9 * v)
        .map(|(_, t)| t * class.factor())
}

/// Class A burette tolerances (nominal mL, ± mL), ISO 385:2005 (from memory).
pub const BURETTE_CLASS_A: [(f64, f64); 5] = [(5.0, 0.01), (10.0, 0.02), (25.0, 0.03), (50.0, 0.05), (100.0, 0.10)];
/// Class A one-mark pipette tolerances (nominal mL, ± mL), ISO 648:2008 (from memory).
pub const PIPETTE_CLASS_A: [(f64, f64); 9] = [
    (1.0, 0.008),
    (2.0, 0.010),
    (5.0, 0.015),
    (10.0, 0.020),
    (20.0, 0.030),
    (25.0, 0.030),
    (50.0, 0.050),
    (100.0, 0.080),
    (200.0, 0.100),
];
/// Class A one-mark volumetric flask tolerances (nominal mL, ± mL), ISO 1042:1998 (from
/// memory).
pub const FLASK_CLASS_A: [(f64, f64); 7] = [
    (25.0, 0.04),
    (50.0, 0.06),
    (100.0, 0.10),
    (200.0, 0.15),
    (250.0, 0.15),
    (500.0, 0.25),
    (1000.0, 0.40),
];

/// The tolerance (± mL) of a burette of `nominal_ml` capacity, ISO 385; `None` for a size
/// not in the table.
///
/// ```
/// use protolyte::analysis::measured::content::{GlassClass, burette_tolerance_ml};
/// assert_eq!(burette_tolerance_ml(50.0, GlassClass::A), Some(0.05));
/// assert_eq!(burette_tolerance_ml(50.0, GlassClass::B), Some(0.1));
/// assert_eq!(burette_tolerance_ml(37.0, GlassClass::A), None);
/// ```
pub fn burette_tolerance_ml(nominal_ml: f64, class: GlassClass) -> Option<f64> {
    lookup(&BURETTE_CLASS_A, nominal_ml, class)
}

/// The tolerance (± mL) of a one-mark pipette of `nominal_ml`, ISO 648; `None` for a size
/// not in the table.
pub fn pipette_tolerance_ml(nominal_ml: f64, class: GlassClass) -> Option<f64> {
    lookup(&PIPETTE_CLASS_A, nominal_ml, class)
}

/// The tolerance (± mL) of a one-mark volumetric flask of `nominal_ml`, ISO 1042; `None`
/// for a size not in the table.
pub fn flask_tolerance_ml(nominal_ml: f64, class: GlassClass) -> Option<f64> {
    lookup(&FLASK_CLASS_A, nominal_ml, class)
}

/// A weighed sample made up to volume, of which the aliquot was taken.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Sample {
    /// Sample mass, g.
    pub mass_g: f64,
    /// Standard uncertainty of the mass, g (from the balance's calibration certificate).
    pub mass_standard_uncertainty_g: f64,
    /// The volume the sample was made up to, mL.
    pub made_up_to_ml: f64,
    /// Standard uncertainty of that volume, mL.
    pub made_up_standard_uncertainty_ml: f64,
}

/// Everything a content is computed from, each value with its standard uncertainty.
#[derive(Debug, Clone, PartialEq)]
pub struct ContentInputs {
    /// Endpoint volume, mL.
    pub endpoint_ml: f64,
    /// Its standard uncertainty from the endpoint method (regression or fit), mL.
    pub endpoint_standard_uncertainty_ml: f64,
    /// Standard uncertainty of the delivered volume from the burette, mL.
    pub burette_standard_uncertainty_ml: f64,
    /// Titrant concentration, mol/L.
    pub titrant_molar: f64,
    /// Its standard uncertainty from the standardisation, mol/L.
    pub titrant_standard_uncertainty_molar: f64,
    /// Aliquot titrated, mL.
    pub aliquot_ml: f64,
    /// Its standard uncertainty (pipette), mL.
    pub aliquot_standard_uncertainty_ml: f64,
    /// Moles of analyte per mole of titrant at this endpoint.
    pub analyte_per_titrant: f64,
    /// Molar mass of the analyte, g/mol.
    pub molar_mass_g_per_mol: f64,
    /// The weighed sample, when the aliquot came from one.
    pub sample: Option<Sample>,
}

/// One line of an uncertainty budget.
#[derive(Debug, Clone, PartialEq)]
pub struct BudgetLine {
    /// The input.
    pub source: String,
    /// Its value.
    pub value: f64,
    /// Its standard uncertainty (same unit).
    pub standard_uncertainty: f64,
    /// Relative standard uncertainty.
    pub relative: f64,
    /// Share of the combined variance (0..1).
    pub share: f64,
}

/// A content with its uncertainty.
#[derive(Debug, Clone, PartialEq)]
pub struct Content {
    /// Analyte in the aliquot, mol/L.
    pub mol_per_l: f64,
    /// g/L.
    pub g_per_l: f64,
    /// g/100 mL.
    pub g_per_100_ml: f64,
    /// % w/w of the sample, when a sample was weighed.
    pub percent_w_w: Option<f64>,
    /// Relative combined standard uncertainty (the same for every unit above).
    pub relative_standard_uncertainty: f64,
    /// The coverage factor of the expanded uncertainties.
    pub coverage_factor: f64,
    /// The budget, largest share first.
    pub budget: Vec<BudgetLine>,
}

impl Content {
    /// The expanded uncertainty of `value` (one of the contents above): k·u_rel·value.
    pub fn expanded(&self, value: f64) -> f64 {
        self.coverage_factor * self.relative_standard_uncertainty * value.abs()
    }
}

/// The content and its uncertainty budget.
///
/// ```
/// use protolyte::analysis::measured::content::{ContentInputs, Sample, content};
/// // An invented vinegar check: 10 mL of a 10-fold dilution (10.000 g made up to 100 mL)
/// // takes 12.00 mL of 0.1000 mol/L NaOH; acetic acid, 60.052 g/mol.
/// let c = content(&ContentInputs {
///     endpoint_ml: 12.0, endpoint_standard_uncertainty_ml: 0.004,
///     burette_standard_uncertainty_ml: 0.05 / 3f64.sqrt(),
///     titrant_molar: 0.1, titrant_standard_uncertainty_molar: 0.0001,
///     aliquot_ml: 10.0, aliquot_standard_uncertainty_ml: 0.02 / 3f64.sqrt(),
///     analyte_per_titrant: 1.0, molar_mass_g_per_mol: 60.052,
///     sample: Some(Sample { mass_g: 10.0, mass_standard_uncertainty_g: 0.0002,
///         made_up_to_ml: 100.0, made_up_standard_uncertainty_ml: 0.1 / 3f64.sqrt() }),
/// })?;
/// assert!((c.mol_per_l - 0.12).abs() < 1e-12);
/// assert!((c.percent_w_w.unwrap() - 7.20624).abs() < 1e-9);
/// // The burette (±0.05 mL on 12 mL) outweighs the titrant (±0.1 %).
/// assert_eq!(c.budget[0].source, "burette");
/// # Ok::<(), protolyte::analysis::measured::MeasuredError>(())
/// ```
pub fn content(i: &ContentInputs) -> MeasuredResult<Content> {
    let pos = |what: &str, x: f64| check(what, x, f64::MIN_POSITIVE, 1e12);
    let nonneg = |what: &str, x: f64| check(what, x, 0.0, 1e12);
    let ve = pos("endpoint volume (mL)", i.endpoint_ml)?;
    let ct = pos("titrant concentration (mol/L)", i.titrant_molar)?;
    let va = pos("aliquot volume (mL)", i.aliquot_ml)?;
    let r = pos("analyte per titrant", i.analyte_per_titrant)?;
    let m = pos("molar mass (g/mol)", i.molar_mass_g_per_mol)?;
    let mut lines = vec![
        (
            "endpoint (method)",
            ve,
            nonneg("endpoint uncertainty (mL)", i.endpoint_standard_uncertainty_ml)?,
        ),
        (
            "burette",
            ve,
            nonneg("burette uncertainty (mL)", i.burette_standard_uncertainty_ml)?,
        ),
        (
            "titrant concentration",
            ct,
            nonneg("titrant uncertainty (mol/L)", i.titrant_standard_uncertainty_molar)?,
        ),
        (
            "aliquot (pipette)",
            va,
            nonneg("aliquot uncertainty (mL)", i.aliquot_standard_uncertainty_ml)?,
        ),
    ];
    let c = r * ct * ve / va;
    let mut percent = None;
    if let Some(s) = &i.sample {
        let mass = pos("sample mass (g)", s.mass_g)?;
        let vf = pos("made-up volume (mL)", s.made_up_to_ml)?;
        lines.push((
            "sample mass (balance)",
            mass,
            nonneg("mass uncertainty (g)", s.mass_standard_uncertainty_g)?,
        ));
        lines.push((
            "made-up volume (flask)",
            vf,
            nonneg("flask uncertainty (mL)", s.made_up_standard_uncertainty_ml)?,
        ));
        percent = Some(100.0 * c * m * vf / (1000.0 * mass));
    }
    let rel2: Vec<f64> = lines.iter().map(|l| (l.2 / l.1).powi(2)).collect();
    let total: f64 = rel2.iter().sum();
    let u_rel = total.sqrt();
    let mut budget: Vec<BudgetLine> = lines
        .iter()
        .zip(&rel2)
        .map(|(l, r2)| BudgetLine {
            source: l.0.into(),
            value: l.1,
            standard_uncertainty: l.2,
            relative: l.2 / l.1,
            share: if total > 0.0 { r2 / total } else { 0.0 },
        })
        .collect();
    budget.sort_by(|a, b| b.share.total_cmp(&a.share));
    if !(c.is_finite() && u_rel.is_finite()) {
        return Err(MeasuredError::Method {
            method: "content".into(),
            reason: "the content or its uncertainty is not finite for these inputs".into(),
        });
    }
    Ok(Content {
        mol_per_l: c,
        g_per_l: c * m,
        g_per_100_ml: c * m / 10.0,
        percent_w_w: percent,
        relative_standard_uncertainty: u_rel,
        coverage_factor: COVERAGE_FACTOR,
        budget,
    })
}
