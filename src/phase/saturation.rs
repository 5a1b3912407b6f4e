//! What a result says about the phases: saturation indices of solids, partial pressures of
//! gases, and the reference level of total alkalinity.

use std::sync::Arc;

use crate::protolyte::Protolyte;

/// A solid is reported supersaturated (and warned about) when its saturation index exceeds
/// this. Well below any measurable supersaturation and well above the solver's
/// round-off (solids present at equilibrium have |SI| ≤ 1e-8).
pub const SUPERSATURATION_TOLERANCE: f64 = 1e-6;

/// The reference level of total alkalinity: acids with pKa ≥ 4.5 (25 °C, I = 0) count their
/// bases as proton acceptors, stronger acids count as proton donors (A. G. Dickson, Deep-Sea
/// Res. 28A (1981) 609–623). It corresponds to an end point near pH 4.5.
pub const ALKALINITY_REFERENCE_PKA: f64 = 4.5;

/// The zero level of protons of a family for total alkalinity: the number of its steps with
/// pKa ≥ [`ALKALINITY_REFERENCE_PKA`] at 25 °C (H₂CO₃ for carbonate, H₂PO₄⁻ for phosphate,
/// SO₄²⁻ for sulfate).
pub(crate) fn reference_protons(p: &Protolyte) -> usize {
    p.steps().iter().filter(|s| s.pka >= ALKALINITY_REFERENCE_PKA).count()
}

/// The saturation state of one solid in a result.
#[derive(Debug, Clone, PartialEq)]
pub struct SolidState {
    /// The solid's name.
    pub name: Arc<str>,
    /// SI = log₁₀ IAP − log₁₀ K(T).
    pub saturation_index: f64,
    /// log₁₀ of the ion activity product.
    pub log10_iap: f64,
    /// log₁₀ K of the dissolution reaction at the system's temperature.
    pub log10_k: f64,
    /// True when the solid was allowed to form in this solve.
    pub allowed: bool,
    /// Amount present at equilibrium, mol per kg of water (0 unless allowed and stable).
    pub amount_molal: f64,
}

impl SolidState {
    /// True when the solution is supersaturated in it beyond [`SUPERSATURATION_TOLERANCE`].
    pub fn supersaturated(&self) -> bool {
        self.saturation_index > SUPERSATURATION_TOLERANCE
    }
}

/// The state of one gas in a result.
#[derive(Debug, Clone, PartialEq)]
pub struct GasState {
    /// The gas's name.
    pub name: Arc<str>,
    /// Partial pressure in equilibrium with the solution (the one imposed in an open system).
    pub partial_pressure: crate::phase::Pressure,
    /// True when the partial pressure was imposed (open system).
    pub fixed: bool,
    /// Amount taken up from the gas phase, mol per kg of water (negative: given off); 0 in a
    /// closed system.
    pub taken_up_molal: f64,
}
