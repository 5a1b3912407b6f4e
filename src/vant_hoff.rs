//! Temperature dependence of equilibrium constants, and the temperature range over which
//! each way of computing it is trusted.
//!
//! Three ways, in the order the library prefers them for a reaction:
//!
//! 1. **An analytic equation** fitted by its source to measured constants,
//!    log₁₀ K = a + b·T + c/T + d·log₁₀ T + e/T² (T in kelvin), the form of
//!    L. N. Plummer and E. Busenberg, *Geochim. Cosmochim. Acta* **46** (1982) 1011, for the
//!    carbonate system; the older three-term form of H. S. Harned and R. A. Robinson,
//!    *Trans. Faraday Soc.* **36** (1940) 973, log₁₀ K = −A/T + D − C·T, is the special case
//!    d = e = 0. Trusted over the range its source fitted ([`LogKEquation::range`]).
//! 2. **The integrated van't Hoff equation with a constant heat-capacity change**,
//!
//!    ln K(T) = ln K(T₀) − (ΔH°/R)(1/T − 1/T₀) + (ΔCp°/R)(T₀/T − 1 + ln(T/T₀)),
//!
//!    from d ln K/dT = ΔH°(T)/(RT²) with ΔH°(T) = ΔH°(T₀) + ΔCp°·(T − T₀) (R. N. Goldberg,
//!    N. Kishore and R. M. Lennen, *J. Phys. Chem. Ref. Data* **31** (2002) 231, the equation
//!    their tables are meant for; form entered from memory, the derivation is standard
//!    thermodynamics). Trusted over [`CONSTANT_HEAT_CAPACITY_RANGE`].
//! 3. **ΔH° alone** (ΔCp° unknown, taken as zero). Trusted over [`ENTHALPY_ONLY_RANGE`].
//!
//! # Why these ranges (our rule, derived here)
//!
//! Expanding the van't Hoff integral about T₀ = 298.15 K, a neglected heat-capacity change
//! ΔCp° shifts log₁₀ K by about ΔCp°·(T − T₀)² / (2 ln 10 · R · T₀²). Acid dissociations
//! commonly have |ΔCp°| of 50–250 J/(mol·K) (Goldberg et al. 2002 tables: acetic acid −142,
//! phosphate step 2 −230, carbonate step 1 −371, from memory); at |ΔCp°| = 150 J/(mol·K)
//! the neglected term reaches 0.03 in log K at |T − T₀| = 25 K. So ΔH° alone is trusted
//! within ±25 K of 25 °C, that is 0–50 °C.
//!
//! With ΔCp° known, the error is the change of ΔCp° itself with temperature, about
//! (dΔCp°/dT)·(T − T₀)³ / (6 ln 10 · R · T₀²); with |dΔCp°/dT| up to about 2 J/(mol·K²)
//! (the curvature of the acetic acid and phosphate constants of Harned & Ehlers 1933 and
//! Bates & Acree 1943, from memory) this stays below 0.025 in log K up to |T − T₀| = 50 K,
//! so the constant-ΔCp° form is trusted over 0–75 °C.

use crate::error::{Error, Result, check_parameter};
use crate::quantity::Temperature;

/// The gas constant, J/(mol·K) (CODATA 2018).
pub const GAS_CONSTANT: f64 = 8.314_462_618;

const LN10: f64 = std::f64::consts::LN_10;

/// A temperature range in °C over which a temperature function is trusted (both ends
/// included).
///
/// ```
/// use protolyte::{Temperature, vant_hoff::ENTHALPY_ONLY_RANGE};
///
/// assert!(ENTHALPY_ONLY_RANGE.contains(Temperature::celsius(37.0)));
/// assert!(!ENTHALPY_ONLY_RANGE.contains(Temperature::celsius(60.0)));
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ValidityRange {
    /// Lowest trusted temperature, °C.
    pub min_celsius: f64,
    /// Highest trusted temperature, °C.
    pub max_celsius: f64,
}

impl ValidityRange {
    /// A range from `min_celsius` to `max_celsius`; refuses ends that are not finite, not
    /// ordered, or outside −273.15..1000 °C.
    ///
    /// ```
    /// use protolyte::vant_hoff::ValidityRange;
    /// assert!(ValidityRange::celsius(0.0, 90.0).is_ok());
    /// assert!(ValidityRange::celsius(50.0, 10.0).is_err());
    /// ```
    pub fn celsius(min_celsius: f64, max_celsius: f64) -> Result<Self> {
        let lo = check_parameter(
            "temperature range",
            "lowest temperature (°C)",
            min_celsius,
            -273.15,
            1000.0,
            "must be finite and within -273.15..1000",
        )?;
        let hi = check_parameter(
            "temperature range",
            "highest temperature (°C)",
            max_celsius,
            -273.15,
            1000.0,
            "must be finite and within -273.15..1000",
        )?;
        if hi < lo {
            return Err(Error::InconsistentDefinition {
                name: "temperature range".into(),
                reason: format!("the highest temperature {hi} °C is below the lowest {lo} °C"),
            });
        }
        Ok(ValidityRange {
            min_celsius: lo,
            max_celsius: hi,
        })
    }

    /// Whether `t` lies in the range (to 1 mK).
    pub fn contains(&self, t: Temperature) -> bool {
        let c = t.as_celsius();
        c >= self.min_celsius - 1e-3 && c <= self.max_celsius + 1e-3
    }
}

impl std::fmt::Display for ValidityRange {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}–{} °C", self.min_celsius, self.max_celsius)
    }
}

/// Where the van't Hoff equation with ΔH° alone (ΔCp° unknown) is trusted: 25 ± 25 °C (see
/// the module documentation for the rule).
pub const ENTHALPY_ONLY_RANGE: ValidityRange = ValidityRange {
    min_celsius: 0.0,
    max_celsius: 50.0,
};

/// Where the van't Hoff equation with ΔH° and a constant ΔCp° is trusted: 0–75 °C (see the
/// module documentation for the rule).
pub const CONSTANT_HEAT_CAPACITY_RANGE: ValidityRange = ValidityRange {
    min_celsius: 0.0,
    max_celsius: 75.0,
};

/// log₁₀ K at `t`, given log₁₀ K at 25 °C, the reaction enthalpy ΔH° (kJ/mol) and the
/// heat-capacity change ΔCp° (J/(mol·K)) of the same reaction.
///
/// Refuses (`Error::OutOfDomain`) a temperature that is not finite and above 0 K, and any
/// input for which the equation gives no finite value (a non-finite argument, or an
/// overflow from extreme ΔH°, ΔCp° or temperature).
///
/// # Example
///
/// ```
/// use protolyte::{Temperature, vant_hoff};
///
/// // An endothermic reaction (ΔH° > 0) has a larger K when warmer.
/// let lk = vant_hoff::log10_k_at(-4.756, 0.41, 0.0, Temperature::celsius(37.0))?;
/// assert!(lk > -4.756);
/// assert_eq!(vant_hoff::log10_k_at(-4.756, 0.41, 0.0, Temperature::STANDARD)?, -4.756);
/// assert!(vant_hoff::log10_k_at(-4.756, 0.41, 0.0, Temperature::kelvin_value(0.0)).is_err());
/// # Ok::<(), protolyte::Error>(())
/// ```
pub fn log10_k_at(log10_k_25: f64, dh_kj_per_mol: f64, dcp_j_per_mol_k: f64, t: Temperature) -> Result<f64> {
    let v = log10_k_at_unchecked(log10_k_25, dh_kj_per_mol, dcp_j_per_mol_k, t);
    if !(t.kelvin().is_finite() && t.kelvin() > 0.0) {
        return Err(Error::OutOfDomain {
            what: "temperature (K) for van't Hoff",
            value: t.kelvin(),
            domain: "above 0 K",
        });
    }
    if !v.is_finite() {
        let bad = [log10_k_25, dh_kj_per_mol, dcp_j_per_mol_k]
            .into_iter()
            .find(|x| !x.is_finite());
        return Err(Error::OutOfDomain {
            what: "log K from van't Hoff",
            value: bad.unwrap_or(v),
            domain: "finite log K, ΔH° and ΔCp°",
        });
    }
    Ok(v)
}

fn log10_k_at_unchecked(log10_k_25: f64, dh_kj_per_mol: f64, dcp_j_per_mol_k: f64, t: Temperature) -> f64 {
    let t0 = Temperature::STANDARD.kelvin();
    let tk = t.kelvin();
    if tk == t0 {
        return log10_k_25;
    }
    let dh = dh_kj_per_mol * 1e3;
    let ln_k = log10_k_25 * LN10 - dh / GAS_CONSTANT * (1.0 / tk - 1.0 / t0)
        + dcp_j_per_mol_k / GAS_CONSTANT * (t0 / tk - 1.0 + (tk / t0).ln());
    ln_k / LN10
}

/// An analytic equation for log₁₀ K of one reaction as a function of temperature,
/// log₁₀ K = a + b·T + c/T + d·log₁₀ T + e/T² (T in kelvin), with the range its source fitted.
///
/// # Example
///
/// ```
/// use protolyte::{Temperature, vant_hoff::{LogKEquation, ValidityRange}};
///
/// // Acetic acid, H. S. Harned and R. W. Ehlers, J. Am. Chem. Soc. 55 (1933) 652:
/// // pKa = 1170.48/T − 3.1649 + 0.013399·T, 0–60 °C (from memory).
/// let eq = LogKEquation::new([3.1649, -0.013399, -1170.48, 0.0, 0.0], ValidityRange::celsius(0.0, 60.0)?)?;
/// assert!((-eq.log10_k(Temperature::celsius(25.0)) - 4.756).abs() < 0.001);
/// assert!(eq.enthalpy_kj_per_mol(Temperature::celsius(25.0)).abs() < 1.0);
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LogKEquation {
    coefficients: [f64; 5],
    range: ValidityRange,
}

impl LogKEquation {
    /// An equation from its coefficients `[a, b, c, d, e]` and its fitted range.
    ///
    /// Refuses coefficients that are not finite or beyond ±10⁹ in magnitude, a range that
    /// reaches to or below 0 K, and an equation whose log₁₀ K is not finite or beyond ±100
    /// anywhere on a 1 K grid over the range.
    pub fn new(coefficients: [f64; 5], range: ValidityRange) -> Result<Self> {
        for (c, name) in coefficients.iter().zip(["a", "b", "c", "d", "e"]) {
            check_parameter("log K equation", name, *c, -1e9, 1e9, "must be finite and within ±1e9")?;
        }
        if range.min_celsius <= -273.0 {
            return Err(Error::InconsistentDefinition {
                name: "log K equation".into(),
                reason: format!("its range starts at {} °C, at or below 0 K", range.min_celsius),
            });
        }
        let eq = LogKEquation { coefficients, range };
        let mut c = range.min_celsius;
        loop {
            let v = eq.log10_k(Temperature::celsius(c));
            if !(v.is_finite() && v.abs() <= 100.0) {
                return Err(Error::InconsistentDefinition {
                    name: "log K equation".into(),
                    reason: format!("log K = {v} at {c} °C, inside its own range"),
                });
            }
            if c >= range.max_celsius {
                break;
            }
            c = (c + 1.0).min(range.max_celsius);
        }
        Ok(eq)
    }

    /// The coefficients `[a, b, c, d, e]`.
    pub fn coefficients(&self) -> [f64; 5] {
        self.coefficients
    }

    /// The temperature range the source fitted.
    pub fn range(&self) -> ValidityRange {
        self.range
    }

    /// log₁₀ K at `t` (also outside the range; check [`LogKEquation::range`]).
    pub fn log10_k(&self, t: Temperature) -> f64 {
        let [a, b, c, d, e] = self.coefficients;
        let tk = t.kelvin();
        a + b * tk + c / tk + d * tk.log10() + e / (tk * tk)
    }

    /// The reaction enthalpy the equation implies at `t`, ΔH° = ln 10 · R T² · d log₁₀ K/dT,
    /// in kJ/mol.
    pub fn enthalpy_kj_per_mol(&self, t: Temperature) -> f64 {
        let [_, b, c, d, e] = self.coefficients;
        let tk = t.kelvin();
        let slope = b - c / (tk * tk) + d / (tk * LN10) - 2.0 * e / (tk * tk * tk);
        LN10 * GAS_CONSTANT * tk * tk * slope / 1e3
    }

    /// The heat-capacity change the equation implies at `t`, ΔCp° = dΔH°/dT, in J/(mol·K).
    pub fn heat_capacity_j_per_mol_k(&self, t: Temperature) -> f64 {
        let [_, b, _, d, e] = self.coefficients;
        let tk = t.kelvin();
        // ΔH° = ln10·R·(b T² − c + d T/ln10 − 2e/T)
        LN10 * GAS_CONSTANT * (2.0 * b * tk + d / LN10 + 2.0 * e / (tk * tk))
    }
}

/// ΔH° (kJ/mol) of the reaction of `name`, checked: finite and within ±1000.
pub(crate) fn checked_enthalpy(name: &str, dh: f64) -> Result<f64> {
    check_parameter(
        name,
        "ΔH° (kJ/mol)",
        dh,
        -1000.0,
        1000.0,
        "must be finite and within ±1000",
    )?;
    Ok(dh)
}

/// ΔCp° (J/(mol·K)) of the reaction of `name`, checked: finite and within ±`limit`.
pub(crate) fn checked_heat_capacity(name: &str, dcp: f64, limit: f64, reason: &'static str) -> Result<f64> {
    check_parameter(name, "ΔCp° (J/(mol·K))", dcp, -limit, limit, reason)?;
    Ok(dcp)
}

/// An analytic log K(T) for the reaction of `name` (a `kind` whose 25 °C constant is
/// `log10_k25`; `quantity` names it in the message, such as "log β " or ""), refused when
/// the two differ at 25 °C by more than 0.03.
pub(crate) fn checked_equation(
    name: &str,
    quantity: &str,
    kind: &str,
    log10_k25: f64,
    equation: LogKEquation,
) -> Result<LogKEquation> {
    let at25 = equation.log10_k(Temperature::STANDARD);
    if (at25 - log10_k25).abs() > 0.03 {
        return Err(Error::InconsistentDefinition {
            name: name.to_string(),
            reason: format!("the log K equation gives {quantity}{at25:.3} at 25 °C, the {kind} has {log10_k25}"),
        });
    }
    Ok(equation)
}

/// What is known about one reaction's temperature dependence, and so how log K(T) is
/// computed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum TemperatureBasis {
    /// An analytic equation.
    Equation(LogKEquation),
    /// ΔH° (kJ/mol) and ΔCp° (J/(mol·K)).
    EnthalpyAndHeatCapacity(f64, f64),
    /// ΔH° (kJ/mol) only.
    EnthalpyOnly(f64),
    /// Nothing: the 25 °C constant is used unchanged.
    Nothing,
}

/// Why a computed log K(T) is less trustworthy than the data behind it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum TemperatureGap {
    /// No ΔH°: the 25 °C constant was used unchanged.
    NoEnthalpy,
    /// No ΔCp°, and `t` lies outside [`ENTHALPY_ONLY_RANGE`].
    NoHeatCapacity,
    /// The equation or the constant-ΔCp° form was used outside its range.
    BeyondRange(ValidityRange),
}

impl TemperatureBasis {
    /// From the data of one reaction: an equation wins over ΔH°/ΔCp°.
    pub(crate) fn from_data(equation: Option<LogKEquation>, dh: Option<f64>, dcp: Option<f64>) -> Self {
        match (equation, dh, dcp) {
            (Some(eq), _, _) => TemperatureBasis::Equation(eq),
            (None, Some(h), Some(c)) => TemperatureBasis::EnthalpyAndHeatCapacity(h, c),
            (None, Some(h), None) => TemperatureBasis::EnthalpyOnly(h),
            (None, None, _) => TemperatureBasis::Nothing,
        }
    }

    /// log₁₀ K at `t` from log₁₀ K at 25 °C, and what falls short at `t` (nothing at 25 °C).
    ///
    /// An equation gives log K at `t` as its value at 25 °C plus its own change from 25 °C,
    /// so that the stored 25 °C constant stays the one used at 25 °C.
    pub(crate) fn log10_k(&self, log10_k_25: f64, t: Temperature) -> (f64, Option<TemperatureGap>) {
        if (t.kelvin() - Temperature::STANDARD.kelvin()).abs() <= 1e-6 {
            return (log10_k_25, None);
        }
        match *self {
            TemperatureBasis::Equation(eq) => (
                log10_k_25 + eq.log10_k(t) - eq.log10_k(Temperature::STANDARD),
                (!eq.range().contains(t)).then_some(TemperatureGap::BeyondRange(eq.range())),
            ),
            TemperatureBasis::EnthalpyAndHeatCapacity(h, c) => (
                log10_k_at_unchecked(log10_k_25, h, c, t),
                (!CONSTANT_HEAT_CAPACITY_RANGE.contains(t))
                    .then_some(TemperatureGap::BeyondRange(CONSTANT_HEAT_CAPACITY_RANGE)),
            ),
            TemperatureBasis::EnthalpyOnly(h) => (
                log10_k_at_unchecked(log10_k_25, h, 0.0, t),
                (!ENTHALPY_ONLY_RANGE.contains(t)).then_some(TemperatureGap::NoHeatCapacity),
            ),
            TemperatureBasis::Nothing => (log10_k_25, Some(TemperatureGap::NoEnthalpy)),
        }
    }
}
