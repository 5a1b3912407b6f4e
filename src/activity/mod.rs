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
//! | model | log₁₀ γ of an ion of charge z | stated validity | source |
//! |---|---|---|---|
//! | [`Ideal`](ActivityModel::Ideal) | 0 | I ≲ 0.001 mol/kg (γ of a 1:1 ion within 4 % of 1) | — |
//! | [`Davies`](ActivityModel::Davies) | −A z² (√I/(1+√I) − 0.3 I) | I ≲ 0.5 mol/kg | C. W. Davies, *Ion Association*, Butterworths 1962 |
//! | [`ExtendedDebyeHuckel`](ActivityModel::ExtendedDebyeHuckel) | −A z² √I/(1 + B å √I), å per species | I ≲ 0.1 mol/kg | J. Kielland, *J. Am. Chem. Soc.* **59** (1937) 1675 (å) |
//! | [`Sit`](ActivityModel::Sit) | −z² A√I/(1 + 1.5√I) + Σⱼ ε(i,j) mⱼ | I ≲ 3.5 mol/kg | Grenthe, Plyasunov & Spahiu 1997; Ciavatta 1980 ([`sit`]) |
//!
//! Past its stated validity a result carries
//! [`Warning::IonicStrengthBeyondModel`](crate::Warning::IonicStrengthBeyondModel). For
//! concentrated solutions (brines, stocks of strong acids and bases, up to about 3.5 mol/kg)
//! use [`Sit`](ActivityModel::Sit); Davies far beyond 0.5 mol/kg gives activity coefficients
//! that rise without bound (γ ≈ 14 for 10 mol/L NaOH) and must not be trusted.
//!
//! How pH is reported is a separate choice, the [`PhConvention`].
//!
//! Neutral species get γ = 1 in every model (no salting-out term).

use crate::error::Error;
use crate::quantity::Temperature;
use crate::water;

pub mod sit;

pub use sit::{INTERACTION_COEFFICIENTS, InteractionCoefficient, interaction_coefficient};

/// The product B·å, kg^½ mol^−½, of the Bates–Guggenheim convention and of SIT: 1.5 for every
/// ion (R. G. Bates and E. A. Guggenheim, *Pure Appl. Chem.* **1** (1960) 163).
pub const BATES_GUGGENHEIM_BA: f64 = 1.5;

/// Ion size (Å) of Cl⁻ (J. Kielland, *J. Am. Chem. Soc.* **59** (1937) 1675; from memory),
/// used for the trace chloride of the Bates–Guggenheim convention under the extended
/// Debye–Hückel model.
pub const CHLORIDE_ION_SIZE_ANGSTROM: f64 = 3.0;

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
/// let lg = ActivityModel::Davies.log10_gamma(1, 4.0, 0.1, &dh)?;
/// assert!((10f64.powf(lg) - 0.78).abs() < 0.01);
/// assert_eq!(ActivityModel::Ideal.log10_gamma(2, 4.0, 0.1, &dh)?, 0.0);
/// // A negative ionic strength is refused, not taken as zero.
/// assert!(ActivityModel::Davies.log10_gamma(1, 4.0, -0.1, &dh).is_err());
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
    /// Specific ion interaction theory: log γᵢ = −zᵢ² A√I/(1 + 1.5√I) + Σⱼ ε(i,j) mⱼ over
    /// the ions j of opposite sign, with the tabulated ε of [`sit`]. γ depends on the
    /// composition, not only on I. Stated validity: I ≲ 3.5 mol/kg.
    Sit,
}

/// How the reported pH is tied to a single-ion activity of H⁺, which no measurement defines.
///
/// # Example
///
/// ```
/// use protolyte::{ActivityModel, Amount, Catalog, Conditions, PhConvention, Recipe, Temperature};
///
/// let cat = Catalog::builtin();
/// let mut r = Recipe::new();
/// r.add(&cat.reagent("potassium hydrogen phthalate")?, Amount::molal(0.05))?;
/// let c = Conditions::new(Temperature::celsius(25.0), ActivityModel::Davies)
///     .with_ph_convention(PhConvention::BatesGuggenheim);
/// let eq = r.compile(&c)?.solve()?;
/// assert_eq!(eq.ph_convention(), PhConvention::BatesGuggenheim);
/// assert!((eq.ph() - 4.005).abs() < 0.03); // pH(S) 4.005 (Buck et al. 2002)
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default)]
pub enum PhConvention {
    /// pH = −log₁₀(m(H⁺)·γ(H⁺)) with the activity model's own γ(H⁺).
    #[default]
    Model,
    /// The convention of the pH(S) values of reference buffers (R. G. Bates and
    /// E. A. Guggenheim, *Pure Appl. Chem.* **1** (1960) 163; R. P. Buck et al., *Pure Appl.
    /// Chem.* **74** (2002) 2169): pH = −log₁₀(m(H⁺) γ(H⁺) γ(Cl⁻)) + log₁₀ γ(Cl⁻)ᴮᴳ, the
    /// measurable product of a Harned cell with the single-ion activity of chloride fixed
    /// by log₁₀ γ(Cl⁻)ᴮᴳ = −A√I/(1 + 1.5√I). γ(H⁺) and γ(Cl⁻) (a trace of chloride) come
    /// from the activity model. The convention is defined for I ≤ 0.1 mol/kg; beyond it a
    /// result carries [`Warning::PhConventionBeyondRange`](crate::Warning::PhConventionBeyondRange).
    BatesGuggenheim,
}

impl PhConvention {
    /// A short name for messages and documents.
    pub fn name(self) -> &'static str {
        match self {
            PhConvention::Model => "single-ion activity of the model",
            PhConvention::BatesGuggenheim => "Bates–Guggenheim",
        }
    }

    /// The ionic strength (mol/kg) up to which the convention is defined, if limited.
    pub fn validity_limit_molal(self) -> Option<f64> {
        match self {
            PhConvention::Model => None,
            PhConvention::BatesGuggenheim => Some(0.1),
        }
    }
}

impl ActivityModel {
    /// The ionic strength (mol/kg) above which the model is used outside its stated range
    /// (common practice: ideal about 0.001, where γ of a singly charged ion is still within
    /// 4 % of 1; Davies about 0.5; extended Debye–Hückel about 0.1; SIT about 3.5, Grenthe,
    /// Plyasunov & Spahiu 1997).
    pub fn validity_limit_molal(self) -> f64 {
        match self {
            ActivityModel::Ideal => 0.001,
            ActivityModel::Davies => 0.5,
            ActivityModel::ExtendedDebyeHuckel => 0.1,
            ActivityModel::Sit => 3.5,
        }
    }

    /// True when γ depends on the composition, not only on I (SIT).
    pub fn depends_on_composition(self) -> bool {
        self == ActivityModel::Sit
    }

    /// A short name for messages.
    pub fn name(self) -> &'static str {
        match self {
            ActivityModel::Ideal => "ideal",
            ActivityModel::Davies => "Davies",
            ActivityModel::ExtendedDebyeHuckel => "extended Debye–Hückel",
            ActivityModel::Sit => "SIT",
        }
    }

    /// log₁₀ γ for charge `z`, ion size `ion_size_angstrom`, ionic strength `i_molal`; for
    /// SIT the Debye–Hückel part −z²D only (the ε terms need the composition).
    ///
    /// Refuses (`Error::OutOfDomain`) an ionic strength that is negative or not finite, and
    /// (`Error::InvalidParameter`) an ion size that is not finite and positive, or constants
    /// `dh` for which the formula gives no finite value.
    pub fn log10_gamma(
        self,
        z: i32,
        ion_size_angstrom: f64,
        i_molal: f64,
        dh: &DebyeHuckelConstants,
    ) -> crate::error::Result<f64> {
        Ok(self.log10_gamma_and_slope(z, ion_size_angstrom, i_molal, dh)?.0)
    }

    /// log₁₀ γ and its derivative with respect to I (per mol/kg), with the checks of
    /// [`log10_gamma`](Self::log10_gamma). At I = 0 the slope of the √I models is
    /// unbounded; it is reported as 0 there (the solver never evaluates it at I = 0).
    pub fn log10_gamma_and_slope(
        self,
        z: i32,
        ion_size_angstrom: f64,
        i_molal: f64,
        dh: &DebyeHuckelConstants,
    ) -> crate::error::Result<(f64, f64)> {
        check_ionic_strength(i_molal)?;
        crate::error::check_parameter(
            "activity coefficient",
            "ion size (Å)",
            ion_size_angstrom,
            f64::MIN_POSITIVE,
            f64::MAX,
            "must be finite and positive",
        )?;
        let (lg, slope) = GammaProfile::new(self, i_molal, dh).at(z, ion_size_angstrom);
        if lg.is_finite() && slope.is_finite() {
            Ok((lg, slope))
        } else {
            Err(Error::InvalidParameter {
                what: "activity coefficient".into(),
                parameter: "Debye–Hückel constants A, B",
                value: if dh.a.is_finite() { dh.b } else { dh.a },
                reason: "give no finite log γ (A and B must be finite, 1 + B·å·√I positive)",
            })
        }
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
    /// Davies: √I/(1+√I) − 0.3 I and its derivative by I; SIT: √I/(1+1.5√I) and its
    /// derivative.
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
        } else if model == ActivityModel::Sit {
            let den = 1.0 + BATES_GUGGENHEIM_BA * s;
            let df = if s > 0.0 { 1.0 / (2.0 * s * den * den) } else { 0.0 };
            (s / den, df)
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
        let az2 = -self.a * f64::from(z) * f64::from(z);
        match self.model {
            ActivityModel::Ideal => (0.0, 0.0),
            ActivityModel::Davies | ActivityModel::Sit => (az2 * self.davies.0, az2 * self.davies.1),
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
    /// [`Error::OutOfDomain`].
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

/// log₁₀ γ(Cl⁻) of the Bates–Guggenheim convention: −A√I/(1 + 1.5√I).
///
/// ```
/// use protolyte::{DebyeHuckelConstants, Temperature, activity};
///
/// let dh = DebyeHuckelConstants::at(Temperature::celsius(25.0))?;
/// // At I = 0.1 mol/kg: −0.511·0.316/(1 + 0.474) ≈ −0.110.
/// assert!((activity::bates_guggenheim_log10_gamma_chloride(0.1, &dh)? + 0.110).abs() < 0.001);
/// assert!(activity::bates_guggenheim_log10_gamma_chloride(-0.1, &dh).is_err());
/// # Ok::<(), protolyte::Error>(())
/// ```
///
/// Refuses (`Error::OutOfDomain`) an ionic strength that is negative or not finite.
pub fn bates_guggenheim_log10_gamma_chloride(i_molal: f64, dh: &DebyeHuckelConstants) -> crate::error::Result<f64> {
    check_ionic_strength(i_molal)?;
    Ok(bg_chloride(i_molal, dh))
}

/// An ionic strength a public γ function accepts: finite and not negative.
fn check_ionic_strength(i_molal: f64) -> crate::error::Result<f64> {
    if i_molal.is_finite() && i_molal >= 0.0 {
        Ok(i_molal)
    } else {
        Err(Error::OutOfDomain {
            what: "ionic strength (mol/kg)",
            value: i_molal,
            domain: "finite and not negative",
        })
    }
}

/// The Bates–Guggenheim log γ(Cl⁻) for the solver's own I (never negative there).
fn bg_chloride(i_molal: f64, dh: &DebyeHuckelConstants) -> f64 {
    let s = i_molal.max(0.0).sqrt();
    -dh.a * s / (1.0 + BATES_GUGGENHEIM_BA * s)
}

/// pH under `convention` minus pH with the model's own γ(H⁺), at ionic strength `i_molal`;
/// `sit_chloride_term` is Σⱼ ε(Cl⁻, j)·mⱼ of a trace chloride (used by SIT only).
pub(crate) fn ph_convention_shift(
    convention: PhConvention,
    model: ActivityModel,
    i_molal: f64,
    dh: &DebyeHuckelConstants,
    sit_chloride_term: f64,
) -> f64 {
    match convention {
        PhConvention::Model => 0.0,
        PhConvention::BatesGuggenheim => {
            let mut lg_cl = GammaProfile::new(model, i_molal, dh)
                .at(-1, CHLORIDE_ION_SIZE_ANGSTROM)
                .0;
            if model == ActivityModel::Sit {
                lg_cl += sit_chloride_term;
            }
            bg_chloride(i_molal, dh) - lg_cl
        }
    }
}

/// d(pH shift of [`ph_convention_shift`])/d ln I at fixed composition.
pub(crate) fn ph_convention_shift_dln_i(
    convention: PhConvention,
    model: ActivityModel,
    i_molal: f64,
    dh: &DebyeHuckelConstants,
) -> f64 {
    match convention {
        PhConvention::Model => 0.0,
        PhConvention::BatesGuggenheim => {
            let s = i_molal.max(0.0).sqrt();
            if s == 0.0 {
                return 0.0;
            }
            let den = 1.0 + BATES_GUGGENHEIM_BA * s;
            let d_bg = -dh.a / (2.0 * s * den * den);
            let d_model = GammaProfile::new(model, i_molal, dh)
                .at(-1, CHLORIDE_ION_SIZE_ANGSTROM)
                .1;
            i_molal * (d_bg - d_model)
        }
    }
}

/// The temperature range of the Debye–Hückel constants A(T) and B(T): that of the relative
/// permittivity of water they are computed from (Malmberg & Maryott 1956, 0–100 °C,
/// [`water::DIELECTRIC_RANGE`]); [`DebyeHuckelConstants::at`] refuses a temperature outside it.
pub const DEBYE_HUCKEL_RANGE: crate::vant_hoff::ValidityRange = water::DIELECTRIC_RANGE;
