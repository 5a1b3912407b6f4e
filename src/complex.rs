//! Complexes and ion pairs: species built from several components with an overall
//! formation constant (one more row of the tableau).

use crate::error::{Error, Result, check_int, check_ion_size, check_parameter};
use crate::ion::Ion;
use crate::limits::{MAX_COMPLEX_CHARGE, MAX_COMPLEX_PARTS, MAX_COMPLEX_PROTONS, MAX_PART_COUNT};
use crate::protolyte::Protolyte;
use crate::quantity::Temperature;
use crate::vant_hoff::{
    LogKEquation, TemperatureBasis, TemperatureGap, checked_enthalpy, checked_equation, checked_heat_capacity,
};

/// One building block of a complex.
#[derive(Debug, Clone, PartialEq)]
pub enum ComplexPart {
    /// The fully deprotonated form of a family (the ligand as a component).
    Base(Protolyte),
    /// A simple ion (usually the metal).
    Ion(Ion),
    /// H⁺; a negative count makes a hydroxo complex (M + H₂O − H⁺ → MOH).
    Proton,
}

impl ComplexPart {
    fn charge(&self) -> i32 {
        match self {
            ComplexPart::Base(p) => p.form_charge(0),
            ComplexPart::Ion(i) => i.charge(),
            ComplexPart::Proton => 1,
        }
    }
}

/// A complex or ion pair: Σ νᵢ·partᵢ ⇌ complex, with overall constant log₁₀ β at 25 °C and
/// infinite dilution, and optionally its formation enthalpy ΔH°.
///
/// # Example
///
/// ```
/// use protolyte::{Complex, ComplexPart, Ion, Protolyte};
///
/// let nh3 = Protolyte::new("ammonia", &[9.245], 1)?;
/// let cu = Ion::new("copper(II)", 2)?;
/// // Cu²⁺ + NH₃ ⇌ CuNH₃²⁺ (log β₁ ≈ 4.0; value for illustration)
/// let c = Complex::new("CuNH3 2+", vec![(ComplexPart::Ion(cu), 1), (ComplexPart::Base(nh3), 1)], 4.0)?;
/// assert_eq!(c.charge(), 2);
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct Complex {
    name: String,
    parts: Vec<(ComplexPart, i32)>,
    log10_beta: f64,
    dh_kj_per_mol: Option<f64>,
    dcp_j_per_mol_k: Option<f64>,
    equation: Option<LogKEquation>,
    ion_size_angstrom: Option<f64>,
    source: Option<String>,
}

impl Complex {
    /// A complex from its parts and overall formation constant log₁₀ β.
    ///
    /// Refuses an empty name, a complex with fewer than two non-proton parts unless it is
    /// one simple ion with H⁺ gained or lost (a hydrolysis product such as CuOH⁺; a species
    /// of one family alone belongs in the [`Protolyte`]), zero counts, non-proton parts with
    /// negative counts, and a log β that is not finite or beyond ±100. The integer ranges of
    /// [`limits`](crate::limits) are enforced with [`Error::IntegerOutOfRange`]: at most
    /// [`MAX_COMPLEX_PARTS`] part entries, each non-proton count 1..=[`MAX_PART_COUNT`], and
    /// on the complex as a whole (all parts together) at most [`MAX_COMPLEX_PROTONS`] H⁺
    /// gained or lost and a charge within ±[`MAX_COMPLEX_CHARGE`].
    pub fn new(name: &str, parts: Vec<(ComplexPart, i32)>, log10_beta: f64) -> Result<Self> {
        let name = name.trim();
        let bad = |reason: String| Error::InconsistentDefinition {
            name: if name.is_empty() {
                "(unnamed complex)".into()
            } else {
                name.into()
            },
            reason,
        };
        if name.is_empty() {
            return Err(bad("a complex needs a name".into()));
        }
        let label = name.to_string();
        check_int(
            &label,
            "number of parts",
            i64::try_from(parts.len()).unwrap_or(i64::MAX),
            1,
            MAX_COMPLEX_PARTS as i64,
        )?;
        let mut heavy: i64 = 0;
        let mut protons: i64 = 0;
        let mut charge: i64 = 0;
        for (k, (p, n)) in parts.iter().enumerate() {
            let n = i64::from(*n);
            if n == 0 {
                return Err(bad(format!("part {} has count 0", k + 1)));
            }
            if matches!(p, ComplexPart::Proton) {
                check_int(
                    &label,
                    &format!("H⁺ count of part {}", k + 1),
                    n,
                    -i64::from(MAX_COMPLEX_PROTONS),
                    i64::from(MAX_COMPLEX_PROTONS),
                )?;
                protons += n;
            } else {
                if n < 0 {
                    return Err(bad("only H⁺ may have a negative count".into()));
                }
                check_int(
                    &label,
                    &format!("count of part {}", k + 1),
                    n,
                    1,
                    i64::from(MAX_PART_COUNT),
                )?;
                heavy += n;
            }
            charge += i64::from(p.charge()) * n;
        }
        // The ranges hold for the species as a whole, not only part by part.
        check_int(
            &label,
            "net H⁺ gained or lost (all proton parts together)",
            protons,
            -i64::from(MAX_COMPLEX_PROTONS),
            i64::from(MAX_COMPLEX_PROTONS),
        )?;
        check_int(
            &label,
            "charge",
            charge,
            -i64::from(MAX_COMPLEX_CHARGE),
            i64::from(MAX_COMPLEX_CHARGE),
        )?;
        let lone_ion = heavy == 1 && parts.iter().any(|(p, _)| matches!(p, ComplexPart::Ion(_)));
        if heavy == 0 || (heavy == 1 && !(lone_ion && protons != 0)) {
            return Err(bad(
                "a complex joins at least two non-proton parts, or one ion with H⁺ gained or lost (hydrolysis); a family's own protonation belongs in its Protolyte".into(),
            ));
        }
        check_parameter(
            name,
            "log β",
            log10_beta,
            -100.0,
            100.0,
            "must be finite and within ±100",
        )?;
        Ok(Complex {
            name: name.to_string(),
            parts,
            log10_beta,
            dh_kj_per_mol: None,
            dcp_j_per_mol_k: None,
            equation: None,
            ion_size_angstrom: None,
            source: None,
        })
    }

    /// Sets the formation enthalpy ΔH° (kJ/mol) for the van't Hoff temperature correction.
    pub fn with_enthalpy_kj_per_mol(mut self, dh: f64) -> Result<Self> {
        self.dh_kj_per_mol = Some(checked_enthalpy(&self.name, dh)?);
        Ok(self)
    }

    /// Sets the heat-capacity change of formation ΔCp° (J/(mol·K)), used with ΔH°.
    pub fn with_heat_capacity_j_per_mol_k(mut self, dcp: f64) -> Result<Self> {
        self.dcp_j_per_mol_k = Some(checked_heat_capacity(
            &self.name,
            dcp,
            2000.0,
            "must be finite and within ±2000",
        )?);
        Ok(self)
    }

    /// Sets an analytic equation for log₁₀ β(T), used instead of ΔH° and ΔCp°; it gives the
    /// change of log β from 25 °C. Refuses an equation whose log β at 25 °C differs from the
    /// complex's by more than 0.03.
    ///
    /// ```
    /// use protolyte::{Complex, ComplexPart, Ion, Protolyte, Temperature};
    /// use protolyte::vant_hoff::{LogKEquation, ValidityRange};
    ///
    /// let co3 = Protolyte::new("carbonate", &[6.352, 10.329], 0)?;
    /// let ca = Ion::new("calcium", 2)?;
    /// // Ca²⁺ + CO₃²⁻ ⇌ CaCO₃°: L. N. Plummer, E. Busenberg, Geochim. Cosmochim. Acta 46
    /// // (1982) 1011, log K = −1228.732 − 0.299440 T + 35512.75/T + 485.818 log T, 0–90 °C
    /// // (from memory).
    /// let eq = LogKEquation::new([-1228.732, -0.299440, 35512.75, 485.818, 0.0], ValidityRange::celsius(0.0, 90.0)?)?;
    /// let c = Complex::new("CaCO3(aq)", vec![(ComplexPart::Ion(ca), 1), (ComplexPart::Base(co3), 1)], 3.224)?
    ///     .with_log_k_equation(eq)?;
    /// assert!(c.log10_beta_at(Temperature::celsius(60.0)) > 3.224);
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn with_log_k_equation(mut self, equation: LogKEquation) -> Result<Self> {
        self.equation = Some(checked_equation(
            &self.name,
            "log β ",
            "complex",
            self.log10_beta,
            equation,
        )?);
        Ok(self)
    }

    /// Formation heat-capacity change, if known.
    pub fn dcp_j_per_mol_k(&self) -> Option<f64> {
        self.dcp_j_per_mol_k
    }

    /// The analytic log β(T) equation, if set.
    pub fn log_k_equation(&self) -> Option<LogKEquation> {
        self.equation
    }

    /// log₁₀ β at `t`: from the analytic equation where set, else by van't Hoff from ΔH°
    /// (and ΔCp°) where known, else the 25 °C value (see [`crate::vant_hoff`]).
    pub fn log10_beta_at(&self, t: Temperature) -> f64 {
        self.log10_beta_and_gap_at(t).0
    }

    /// log₁₀ β at `t` and what falls short in the temperature data at `t`.
    pub(crate) fn log10_beta_and_gap_at(&self, t: Temperature) -> (f64, Option<TemperatureGap>) {
        TemperatureBasis::from_data(self.equation, self.dh_kj_per_mol, self.dcp_j_per_mol_k).log10_k(self.log10_beta, t)
    }

    /// Sets the ion-size parameter å (ångström).
    pub fn with_ion_size_angstrom(mut self, a: f64) -> Result<Self> {
        self.ion_size_angstrom = Some(check_ion_size(&self.name, a)?);
        Ok(self)
    }

    /// Records where the numbers come from.
    pub fn with_source(mut self, source: &str) -> Self {
        self.source = Some(source.to_string());
        self
    }

    /// The complex's name.
    pub fn name(&self) -> &str {
        &self.name
    }

    /// Parts and their counts.
    pub fn parts(&self) -> &[(ComplexPart, i32)] {
        &self.parts
    }

    /// Overall formation constant log₁₀ β at 25 °C.
    pub fn log10_beta(&self) -> f64 {
        self.log10_beta
    }

    /// Formation enthalpy, if known.
    pub fn dh_kj_per_mol(&self) -> Option<f64> {
        self.dh_kj_per_mol
    }

    /// Ion-size parameter, if set.
    pub fn ion_size_angstrom(&self) -> Option<f64> {
        self.ion_size_angstrom
    }

    /// The published source, if recorded.
    pub fn source(&self) -> Option<&str> {
        self.source.as_deref()
    }

    /// Charge of the complex: the sum of its parts' charges.
    pub fn charge(&self) -> i32 {
        self.parts.iter().map(|(p, n)| p.charge() * n).sum()
    }
}
