//! Warnings: what the caller should know about a result that is nevertheless returned.

use crate::activity::{ActivityModel, PhConvention};

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
    /// A family or complex was used away from 25 °C without enthalpy data: its 25 °C
    /// constants were used unchanged.
    NoEnthalpyData {
        /// Family or complex name.
        name: String,
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
    /// ([`TESTED_MAX_TOTAL_MOLAR`](crate::limits::TESTED_MAX_TOTAL_MOLAR)).
    BeyondTestedDomain {
        /// The component (family or ion name).
        component: String,
        /// Its total, mol/L (molal × the density of water).
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
            Warning::NoEnthalpyData {
                name,
                temperature_celsius,
            } => write!(
                f,
                "{name}: no enthalpy data, so its 25 °C constants were used unchanged at {temperature_celsius} °C"
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
        }
    }
}
