//! Temperature dependence of equilibrium constants: the integrated van't Hoff equation with a
//! constant heat-capacity change.
//!
//! ln K(T) = ln K(T₀) − (ΔH°/R)(1/T − 1/T₀) + (ΔCp°/R)(T₀/T − 1 + ln(T/T₀)),
//!
//! from d ln K/dT = ΔH°(T)/(RT²) with ΔH°(T) = ΔH°(T₀) + ΔCp°·(T − T₀); see e.g.
//! R. N. Goldberg, N. Kishore and R. M. Lennen, *J. Phys. Chem. Ref. Data* **31** (2002) 231,
//! eq. (3) (form entered from memory; derivation is standard thermodynamics).

use crate::error::{Error, Result};
use crate::quantity::Temperature;

/// The gas constant, J/(mol·K) (CODATA 2018).
pub const GAS_CONSTANT: f64 = 8.314_462_618;

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
    let ln10 = std::f64::consts::LN_10;
    let dh = dh_kj_per_mol * 1e3;
    let ln_k = log10_k_25 * ln10 - dh / GAS_CONSTANT * (1.0 / tk - 1.0 / t0)
        + dcp_j_per_mol_k / GAS_CONSTANT * (t0 / tk - 1.0 + (tk / t0).ln());
    ln_k / ln10
}
