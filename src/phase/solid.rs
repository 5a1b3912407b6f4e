//! Solids: minerals and laboratory precipitates, each defined by its dissolution reaction
//! into components and that reaction's constant log₁₀ K (the solubility product where the
//! reaction is a plain dissociation).

use crate::complex::ComplexPart;
use crate::error::{Error, Result, check_int, check_parameter};
use crate::limits::{MAX_COMPLEX_PARTS, MAX_COMPLEX_PROTONS, MAX_PART_COUNT};
use crate::quantity::Temperature;
use crate::vant_hoff::{
    LogKEquation, TemperatureBasis, TemperatureGap, checked_enthalpy, checked_equation, checked_heat_capacity,
};

/// The charge a part brings into solution.
pub(crate) fn part_charge(p: &ComplexPart) -> i32 {
    match p {
        ComplexPart::Base(f) => f.form_charge(0),
        ComplexPart::Ion(i) => i.charge(),
        ComplexPart::Proton => 1,
    }
}

/// Checks the parts of a dissolution reaction (a solid's or a gas's): at least one non-proton
/// part, no zero count, non-proton counts 1..=[`MAX_PART_COUNT`], H⁺ within
/// ±[`MAX_COMPLEX_PROTONS`], and zero charge in all.
pub(crate) fn check_reaction_parts(name: &str, parts: &[(ComplexPart, i32)]) -> Result<()> {
    let bad = |reason: String| Error::InconsistentDefinition {
        name: name.to_string(),
        reason,
    };
    check_int(
        name,
        "number of parts",
        i64::try_from(parts.len()).unwrap_or(i64::MAX),
        1,
        MAX_COMPLEX_PARTS as i64,
    )?;
    let (mut heavy, mut protons, mut charge) = (0i64, 0i64, 0i64);
    for (k, (p, n)) in parts.iter().enumerate() {
        let n = i64::from(*n);
        if n == 0 {
            return Err(bad(format!("part {} has count 0", k + 1)));
        }
        if matches!(p, ComplexPart::Proton) {
            check_int(
                name,
                &format!("H⁺ count of part {}", k + 1),
                n,
                -i64::from(MAX_COMPLEX_PROTONS),
                i64::from(MAX_COMPLEX_PROTONS),
            )?;
            protons += n;
        } else {
            check_int(
                name,
                &format!("count of part {}", k + 1),
                n,
                1,
                i64::from(MAX_PART_COUNT),
            )?;
            heavy += n;
        }
        charge += i64::from(part_charge(p)) * n;
    }
    check_int(
        name,
        "net H⁺ (all proton parts together)",
        protons,
        -i64::from(MAX_COMPLEX_PROTONS),
        i64::from(MAX_COMPLEX_PROTONS),
    )?;
    if heavy == 0 {
        return Err(bad(
            "the dissolution reaction needs at least one ion or base part".into()
        ));
    }
    if charge != 0 {
        return Err(Error::NotElectroneutral {
            reagent: name.to_string(),
            charge,
        });
    }
    Ok(())
}

/// A solid phase: its dissolution reaction `solid = Σ νᵢ·partᵢ` (water implicit, H⁺ parts
/// signed) with log₁₀ K at 25 °C and infinite dilution, and optionally ΔH°, ΔCp° or an
/// analytic log K(T) of that reaction.
///
/// Its saturation index in a solution is SI = log₁₀ IAP − log₁₀ K(T), with IAP the product
/// of the parts' activities raised to their counts.
///
/// # Example
///
/// ```
/// use protolyte::{Catalog, ComplexPart, Solid, Temperature};
///
/// let cat = Catalog::builtin();
/// // Calcite: CaCO3(s) = Ca2+ + CO3^2-, log K = -8.48 at 25 °C (L. N. Plummer and
/// // E. Busenberg, Geochim. Cosmochim. Acta 46 (1982) 1011; from memory).
/// let calcite = Solid::new(
///     "my calcite",
///     vec![(ComplexPart::Ion(cat.ion("calcium")?), 1), (ComplexPart::Base(cat.protolyte("carbonate")?), 1)],
///     -8.48,
/// )?
/// .with_enthalpy_kj_per_mol(-9.61)?
/// .with_formula("CaCO3");
/// assert!(calcite.log10_k_at(Temperature::celsius(50.0)) < -8.48); // less soluble when warm
/// assert!((calcite.molar_mass_g_per_mol().unwrap() - 100.086).abs() < 0.01);
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct Solid {
    name: String,
    formula: Option<String>,
    parts: Vec<(ComplexPart, i32)>,
    log10_k: f64,
    dh_kj_per_mol: Option<f64>,
    dcp_j_per_mol_k: Option<f64>,
    equation: Option<LogKEquation>,
    source: Option<String>,
}

impl Solid {
    /// A solid from its dissolution parts and log₁₀ K at 25 °C. Refuses an empty name, a
    /// reaction without an ion or base part, zero counts, negative non-proton counts, a
    /// reaction whose parts do not sum to zero charge ([`Error::NotElectroneutral`]), the
    /// integer ranges of [`limits`](crate::limits), and a log K that is not finite or beyond ±300.
    pub fn new(name: &str, parts: Vec<(ComplexPart, i32)>, log10_k: f64) -> Result<Self> {
        let name = name.trim();
        if name.is_empty() {
            return Err(Error::InconsistentDefinition {
                name: "(unnamed solid)".into(),
                reason: "a solid needs a name".into(),
            });
        }
        check_reaction_parts(name, &parts)?;
        check_parameter(name, "log K", log10_k, -300.0, 300.0, "must be finite and within ±300")?;
        Ok(Solid {
            name: name.to_string(),
            formula: None,
            parts,
            log10_k,
            dh_kj_per_mol: None,
            dcp_j_per_mol_k: None,
            equation: None,
            source: None,
        })
    }

    /// Sets the standard enthalpy ΔH° of the dissolution reaction (kJ/mol).
    pub fn with_enthalpy_kj_per_mol(mut self, dh: f64) -> Result<Self> {
        self.dh_kj_per_mol = Some(checked_enthalpy(&self.name, dh)?);
        Ok(self)
    }

    /// Sets the heat-capacity change ΔCp° of the dissolution reaction (J/(mol·K)).
    pub fn with_heat_capacity_j_per_mol_k(mut self, dcp: f64) -> Result<Self> {
        self.dcp_j_per_mol_k = Some(checked_heat_capacity(
            &self.name,
            dcp,
            5000.0,
            "must be finite and within ±5000",
        )?);
        Ok(self)
    }

    /// Sets an analytic log₁₀ K(T) equation, used instead of ΔH°/ΔCp° for the change of
    /// log K from 25 °C. Refuses one whose value at 25 °C differs from the solid's log K by
    /// more than 0.03.
    pub fn with_log_k_equation(mut self, equation: LogKEquation) -> Result<Self> {
        self.equation = Some(checked_equation(&self.name, "", "solid", self.log10_k, equation)?);
        Ok(self)
    }

    /// Sets the formula (the molar mass is computed from it).
    pub fn with_formula(mut self, formula: &str) -> Self {
        self.formula = Some(formula.to_string());
        self
    }

    /// Records where the numbers come from.
    pub fn with_source(mut self, source: &str) -> Self {
        self.source = Some(source.to_string());
        self
    }

    /// The name.
    pub fn name(&self) -> &str {
        &self.name
    }

    /// The formula, if given.
    pub fn formula(&self) -> Option<&str> {
        self.formula.as_deref()
    }

    /// Molar mass from the formula (IUPAC standard atomic weights), g/mol.
    pub fn molar_mass_g_per_mol(&self) -> Option<f64> {
        self.formula
            .as_deref()
            .and_then(|f| crate::formula::molar_mass_from_formula(f, 0).ok())
    }

    /// The dissolution parts and their counts.
    pub fn parts(&self) -> &[(ComplexPart, i32)] {
        &self.parts
    }

    /// log₁₀ K of the dissolution reaction at 25 °C.
    pub fn log10_k(&self) -> f64 {
        self.log10_k
    }

    /// ΔH° of the dissolution reaction, kJ/mol, if known.
    pub fn dh_kj_per_mol(&self) -> Option<f64> {
        self.dh_kj_per_mol
    }

    /// ΔCp° of the dissolution reaction, J/(mol·K), if known.
    pub fn dcp_j_per_mol_k(&self) -> Option<f64> {
        self.dcp_j_per_mol_k
    }

    /// The analytic log K(T) equation, if set.
    pub fn log_k_equation(&self) -> Option<LogKEquation> {
        self.equation
    }

    /// The published source, if recorded.
    pub fn source(&self) -> Option<&str> {
        self.source.as_deref()
    }

    /// log₁₀ K at `t`: from the equation where set, else van't Hoff from ΔH° (and ΔCp°),
    /// else the 25 °C value (see [`crate::vant_hoff`]).
    pub fn log10_k_at(&self, t: Temperature) -> f64 {
        self.log10_k_and_gap_at(t).0
    }

    /// The same solid on new parts (a replaced family or ion), every other datum kept.
    pub(crate) fn rebuilt_with(&self, parts: Vec<(ComplexPart, i32)>) -> Result<Self> {
        check_reaction_parts(&self.name, &parts)?;
        let mut s = self.clone();
        s.parts = parts;
        Ok(s)
    }

    pub(crate) fn log10_k_and_gap_at(&self, t: Temperature) -> (f64, Option<TemperatureGap>) {
        TemperatureBasis::from_data(self.equation, self.dh_kj_per_mol, self.dcp_j_per_mol_k).log10_k(self.log10_k, t)
    }
}
