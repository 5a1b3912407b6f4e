//! Activity-coefficient models for ions in water.
//!
//! All models give log₁₀ γ of a species of charge `z` at ionic strength `I` (mol/kg) and
//! temperature `T`, through the Debye–Hückel constants A(T) and B(T), which are computed
//! from the relative permittivity ε and density ρ of water:
//!
//! A = 1.82483×10⁶ · ρ^½ · (εT)^−3/2   (kg^½ mol^−½),
//! B = 50.2916 · ρ^½ · (εT)^−½          (kg^½ mol^−½ Å⁻¹),
//!
//! the standard expressions (e.g. R. A. Robinson and R. H. Stokes, *Electrolyte Solutions*,
//! 2nd ed., Butterworths 1959, ch. 9; H. C. Helgeson and D. H. Kirkham, *Am. J. Sci.* **274**
//! (1974) 1199; constants entered from memory).
//!
//! Neutral species get γ = 1 in every model (no salting-out term).

use crate::quantity::Temperature;
use crate::water;

/// Default ion-size parameter å (ångström) for species without one of their own.
///
/// 4 Å is a common middle value of the ion sizes tabulated by J. Kielland,
/// *J. Am. Chem. Soc.* **59** (1937) 1675 (common practice).
pub const DEFAULT_ION_SIZE_ANGSTROM: f64 = 4.0;

/// The coefficient of the linear term in the Davies equation: 0.3 (C. W. Davies,
/// *Ion Association*, Butterworths 1962).
pub const DAVIES_LINEAR_COEFFICIENT: f64 = 0.3;

/// How activity coefficients are computed.
///
/// # Example
///
/// ```
/// use protolyte::{ActivityModel, DebyeHuckelConstants, Temperature};
///
/// let dh = DebyeHuckelConstants::at(Temperature::celsius(25.0))?;
/// // Davies at I = 0.1 mol/kg for a singly charged ion: γ ≈ 0.78.
/// let lg = ActivityModel::Davies.log10_gamma(1, 4.0, 0.1, &dh);
/// assert!((10f64.powf(lg) - 0.78).abs() < 0.01);
/// assert_eq!(ActivityModel::Ideal.log10_gamma(2, 4.0, 0.1, &dh), 0.0);
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default)]
pub enum ActivityModel {
    /// γ = 1 for every species: concentrations are activities.
    Ideal,
    /// Davies (1962): log γ = −A z² (√I/(1+√I) − 0.3 I). Stated validity: I ≲ 0.5 mol/kg.
    #[default]
    Davies,
    /// Extended Debye–Hückel: log γ = −A z² √I / (1 + B å √I), with each species' ion size
    /// å (ångström). Stated validity: I ≲ 0.1 mol/kg.
    ExtendedDebyeHuckel,
}

impl ActivityModel {
    /// The ionic strength (mol/kg) above which the model is used outside its stated range
    /// (common practice: Davies about 0.5, extended Debye–Hückel about 0.1); `None` for
    /// the ideal model, which has no activity correction to go wrong.
    pub fn validity_limit_molal(self) -> Option<f64> {
        match self {
            ActivityModel::Ideal => None,
            ActivityModel::Davies => Some(0.5),
            ActivityModel::ExtendedDebyeHuckel => Some(0.1),
        }
    }

    /// A short name for messages.
    pub fn name(self) -> &'static str {
        match self {
            ActivityModel::Ideal => "ideal",
            ActivityModel::Davies => "Davies",
            ActivityModel::ExtendedDebyeHuckel => "extended Debye–Hückel",
        }
    }

    /// log₁₀ γ for charge `z`, ion size `ion_size_angstrom`, ionic strength `i_molal`.
    pub fn log10_gamma(self, z: i32, ion_size_angstrom: f64, i_molal: f64, dh: &DebyeHuckelConstants) -> f64 {
        self.log10_gamma_and_slope(z, ion_size_angstrom, i_molal, dh).0
    }

    /// log₁₀ γ and its derivative with respect to I (per mol/kg).
    pub fn log10_gamma_and_slope(
        self,
        z: i32,
        ion_size_angstrom: f64,
        i_molal: f64,
        dh: &DebyeHuckelConstants,
    ) -> (f64, f64) {
        GammaProfile::new(self, i_molal, dh).at(z, ion_size_angstrom)
    }
}

/// The parts of a model's log₁₀ γ that depend on I only, computed once per ionic strength
/// and then applied to each species' charge and size.
#[derive(Debug, Clone, Copy)]
pub(crate) struct GammaProfile {
    model: ActivityModel,
    a: f64,
    b: f64,
    sqrt_i: f64,
    /// Davies: √I/(1+√I) − 0.3 I and its derivative by I.
    davies: (f64, f64),
}

impl GammaProfile {
    pub(crate) fn new(model: ActivityModel, i_molal: f64, dh: &DebyeHuckelConstants) -> Self {
        let i = i_molal.max(0.0);
        let s = i.sqrt();
        let davies = if model == ActivityModel::Davies {
            // d/dI [√I/(1+√I)] = 1 / (2 √I (1+√I)²)
            let df = if s > 0.0 {
                1.0 / (2.0 * s * (1.0 + s) * (1.0 + s)) - DAVIES_LINEAR_COEFFICIENT
            } else {
                0.0
            };
            (s / (1.0 + s) - DAVIES_LINEAR_COEFFICIENT * i, df)
        } else {
            (0.0, 0.0)
        };
        GammaProfile {
            model,
            a: dh.a,
            b: dh.b,
            sqrt_i: s,
            davies,
        }
    }

    /// log₁₀ γ and d log₁₀ γ / dI for charge `z` and ion size `size` (Å).
    #[inline]
    pub(crate) fn at(&self, z: i32, size: f64) -> (f64, f64) {
        if z == 0 {
            return (0.0, 0.0);
        }
        let az2 = -self.a * f64::from(z * z);
        match self.model {
            ActivityModel::Ideal => (0.0, 0.0),
            ActivityModel::Davies => (az2 * self.davies.0, az2 * self.davies.1),
            ActivityModel::ExtendedDebyeHuckel => {
                let s = self.sqrt_i;
                let den = 1.0 + self.b * size * s;
                // d/dI [√I/(1+bå√I)] = 1 / (2 √I (1+bå√I)²)
                let df = if s > 0.0 { 1.0 / (2.0 * s * den * den) } else { 0.0 };
                (az2 * s / den, az2 * df)
            }
        }
    }
}

/// The Debye–Hückel constants A (log₁₀ units, kg^½ mol^−½) and B (kg^½ mol^−½ Å⁻¹) at a
/// temperature, from water's relative permittivity and density.
///
/// ```
/// use protolyte::{DebyeHuckelConstants, Temperature};
///
/// let dh = DebyeHuckelConstants::at(Temperature::celsius(25.0))?;
/// assert!((dh.a - 0.511).abs() < 0.003);
/// assert!((dh.b - 0.329).abs() < 0.002);
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DebyeHuckelConstants {
    /// A, in log₁₀ units, kg^½ mol^−½.
    pub a: f64,
    /// B, kg^½ mol^−½ Å⁻¹.
    pub b: f64,
}

impl DebyeHuckelConstants {
    /// A and B at temperature `t`. Refuses a temperature outside 0–100 °C (the range of
    /// the water properties they are built from) with
    /// [`Error::OutOfDomain`](crate::Error::OutOfDomain).
    pub fn at(t: Temperature) -> crate::Result<Self> {
        let eps = water::dielectric_constant(t)?;
        let rho = water::density_kg_per_l(t)?;
        let et = eps * t.kelvin();
        Ok(DebyeHuckelConstants {
            a: 1.82483e6 * rho.sqrt() / (et * et.sqrt()),
            b: 50.2916 * rho.sqrt() / et.sqrt(),
        })
    }
}
