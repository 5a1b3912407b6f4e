//! Warnings: what the caller should know about a result that is nevertheless returned.

use crate::activity::{ActivityModel, PhConvention};
use crate::vant_hoff::{TemperatureGap, ValidityRange};

/// Something the caller should know about a result that is nevertheless returned.
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub enum Warning {
    /// The ionic strength lies above the stated validity of the activity model.
    IonicStrengthBeyondModel {
        /// Ionic strength of the result, mol/kg.
        ionic_strength_molal: f64,
        /// The model's stated limit, mol/kg.
        limit_molal: f64,
        /// The model.
        model: ActivityModel,
    },
    /// SIT found no tabulated interaction coefficient ε for a cation–anion pair whose partner
    /// is abundant enough to matter (above 0.01 mol/kg): ε = 0 was used for it (see
    /// [`activity::sit`](crate::activity::sit) for the rule), so each ion of the pair keeps only
    /// its Debye–Hückel term and its known interactions.
    UnknownInteraction {
        /// The cation, as named in the system.
        cation: String,
        /// The anion.
        anion: String,
        /// The larger molality of the two, mol/kg.
        partner_molal: f64,
    },
    /// The pH convention is defined only up to an ionic strength below the result's.
    PhConventionBeyondRange {
        /// The convention.
        convention: PhConvention,
        /// Ionic strength of the result, mol/kg.
        ionic_strength_molal: f64,
        /// The ionic strength up to which the convention is defined, mol/kg.
        limit_molal: f64,
    },
    /// One reaction (a family's step or a complex) lacks a datum its constant needs at the
    /// system's temperature: without ΔH° its 25 °C constant was used unchanged; without
    /// ΔCp°, van't Hoff with ΔH° alone was used outside the range where that is trusted
    /// ([`crate::vant_hoff::ENTHALPY_ONLY_RANGE`]).
    TemperatureDataMissing {
        /// Family or complex name.
        name: String,
        /// For a family: the step (1 = the most protonated form's dissociation) and its
        /// form pair (acid form, base form); `None` for a complex.
        step: Option<(usize, (String, String))>,
        /// The missing datum.
        datum: TemperatureDatum,
        /// The temperature of the system, °C.
        temperature_celsius: f64,
    },
    /// One reaction's constant was computed outside the temperature range its method is
    /// trusted over: an analytic equation outside its fitted range, or van't Hoff with a
    /// constant ΔCp° outside [`crate::vant_hoff::CONSTANT_HEAT_CAPACITY_RANGE`].
    TemperatureBeyondRange {
        /// Family or complex name.
        name: String,
        /// For a family: the step (1 = most protonated) and its form pair; `None` for a complex.
        step: Option<(usize, (String, String))>,
        /// The range over which the method is trusted.
        range: ValidityRange,
        /// The temperature of the system, °C.
        temperature_celsius: f64,
    },
    /// A component's positive total lay below
    /// [`MIN_TOTAL_MOLAL`](crate::limits::MIN_TOTAL_MOLAL) and was taken as exactly zero.
    TotalBelowFloor {
        /// The component (family or ion name).
        component: String,
        /// The total given, mol/kg.
        total_molal: f64,
        /// The floor, mol/kg.
        floor_molal: f64,
    },
    /// A component's total lies above the tested domain
    /// ([`TESTED_MAX_TOTAL_MOLAR`](crate::limits::TESTED_MAX_TOTAL_MOLAR)): the total put in
    /// or, with phases, the total dissolved (a fixed partial pressure or an ion closing the
    /// charge balance can bring in more than was put in), whichever is larger.
    BeyondTestedDomain {
        /// The component (family or ion name).
        component: String,
        /// Its total (put in or dissolved, the larger), mol/L (molal × the density of water).
        total_molar: f64,
        /// The largest tested total, mol/L.
        tested_molar: f64,
    },
    /// The result's largest relative residual is above the promise
    /// ([`RESIDUAL_PROMISE`](crate::limits::RESIDUAL_PROMISE), or the solver's tolerance if
    /// looser).
    ResidualAbovePromise {
        /// The equation with the largest residual.
        equation: String,
        /// Its relative residual.
        residual: f64,
        /// The promise it misses.
        promise: f64,
    },
    /// The solution is supersaturated in a solid it was not allowed to form (saturation
    /// index above [`SUPERSATURATION_TOLERANCE`](crate::phase::SUPERSATURATION_TOLERANCE)):
    /// left alone it may precipitate; allow the solid ([`Recipe::allow_solid`](crate::Recipe::allow_solid))
    /// to find the equilibrium with it.
    Supersaturated {
        /// The solid.
        solid: String,
        /// Its saturation index.
        saturation_index: f64,
        /// The tolerance it exceeds.
        tolerance: f64,
    },
}

/// A thermodynamic datum a constant's temperature dependence needs.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum TemperatureDatum {
    /// The standard reaction enthalpy ΔH°.
    Enthalpy,
    /// The standard heat-capacity change ΔCp°.
    HeatCapacity,
}

impl Warning {
    pub(crate) fn from_gap(
        name: &str,
        step: Option<(usize, (String, String))>,
        gap: TemperatureGap,
        temperature_celsius: f64,
    ) -> Warning {
        let name = name.to_string();
        match gap {
            TemperatureGap::NoEnthalpy | TemperatureGap::NoHeatCapacity => Warning::TemperatureDataMissing {
                name,
                step,
                datum: if gap == TemperatureGap::NoEnthalpy {
                    TemperatureDatum::Enthalpy
                } else {
                    TemperatureDatum::HeatCapacity
                },
                temperature_celsius,
            },
            TemperatureGap::BeyondRange(range) => Warning::TemperatureBeyondRange {
                name,
                step,
                range,
                temperature_celsius,
            },
        }
    }
}

/// "phosphate step 2 (H2PO4- → HPO4^2- + H+)" or the complex's name.
fn reaction_label(name: &str, step: &Option<(usize, (String, String))>) -> String {
    match step {
        Some((k, (acid, base))) => format!("{name} step {k} ({acid} → {base} + H+)"),
        None => name.to_string(),
    }
}

impl std::fmt::Display for Warning {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Warning::IonicStrengthBeyondModel {
                ionic_strength_molal,
                limit_molal,
                model,
            } => {
                write!(
                    f,
                    "ionic strength {ionic_strength_molal:.3} mol/kg is above the {} model's stated validity (about {limit_molal} mol/kg); activity coefficients are extrapolated",
                    model.name()
                )?;
                let sit = ActivityModel::Sit.validity_limit_molal();
                if *model != ActivityModel::Sit && *ionic_strength_molal <= sit {
                    write!(f, "; the SIT model is stated to about {sit} mol/kg")?;
                }
                Ok(())
            }
            Warning::UnknownInteraction {
                cation,
                anion,
                partner_molal,
            } => write!(
                f,
                "SIT: no interaction coefficient for {cation} with {anion} (up to {partner_molal:.3} mol/kg); ε = 0 was used, which can leave an error of about 0.1·m in log γ"
            ),
            Warning::PhConventionBeyondRange {
                convention,
                ionic_strength_molal,
                limit_molal,
            } => write!(
                f,
                "the {} pH convention is defined up to I = {limit_molal} mol/kg; at {ionic_strength_molal:.3} mol/kg the reported pH extrapolates it",
                convention.name()
            ),
            Warning::TemperatureDataMissing {
                name,
                step,
                datum,
                temperature_celsius,
            } => {
                let what = reaction_label(name, step);
                match datum {
                    TemperatureDatum::Enthalpy => write!(
                        f,
                        "{what}: no ΔH°, so its 25 °C constant was used unchanged at {temperature_celsius} °C"
                    ),
                    TemperatureDatum::HeatCapacity => write!(
                        f,
                        "{what}: no ΔCp°, so van't Hoff with ΔH° alone was used at {temperature_celsius} °C, outside {} where that is trusted",
                        crate::vant_hoff::ENTHALPY_ONLY_RANGE
                    ),
                }
            }
            Warning::TemperatureBeyondRange {
                name,
                step,
                range,
                temperature_celsius,
            } => write!(
                f,
                "{}: its temperature dependence was used at {temperature_celsius} °C, outside its trusted range {range}",
                reaction_label(name, step)
            ),
            Warning::TotalBelowFloor {
                component,
                total_molal,
                floor_molal,
            } => write!(
                f,
                "{component}: total {total_molal:e} mol/kg is below {floor_molal:e} mol/kg and was taken as zero"
            ),
            Warning::BeyondTestedDomain {
                component,
                total_molar,
                tested_molar,
            } => write!(
                f,
                "{component}: total {total_molar:.4} mol/L is above the tested {tested_molar} mol/L; the dilute-solution conversions and the activity model are extrapolated"
            ),
            Warning::ResidualAbovePromise {
                equation,
                residual,
                promise,
            } => write!(
                f,
                "the {equation} holds only to {residual:.3e} (relative), above the promised {promise:e}"
            ),
            Warning::Supersaturated {
                solid,
                saturation_index,
                ..
            } => write!(
                f,
                "supersaturated in {solid} (saturation index {saturation_index:+.3}): it may precipitate; allow it to form to find the equilibrium with it"
            ),
        }
    }
}
