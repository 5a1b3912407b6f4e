//! Complexes and ion pairs: species built from several components with an overall
//! formation constant (one more row of the tableau).

use crate::error::{Error, Result, check_int, check_ion_size, check_parameter};
use crate::ion::Ion;
use crate::limits::{MAX_COMPLEX_CHARGE, MAX_COMPLEX_PARTS, MAX_COMPLEX_PROTONS, MAX_PART_COUNT};
use crate::protolyte::Protolyte;

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
            ion_size_angstrom: None,
            source: None,
        })
    }

    /// Sets the formation enthalpy ΔH° (kJ/mol) for the van't Hoff temperature correction.
    pub fn with_enthalpy_kj_per_mol(mut self, dh: f64) -> Result<Self> {
        check_parameter(
            &self.name,
            "ΔH° (kJ/mol)",
            dh,
            -1000.0,
            1000.0,
            "must be finite and within ±1000",
        )?;
        self.dh_kj_per_mol = Some(dh);
        Ok(self)
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
