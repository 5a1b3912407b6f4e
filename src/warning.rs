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
}

impl std::fmt::Display for Warning {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Warning::IonicStrengthBeyondModel {
                ionic_strength_molal,
                limit_molal,
                model,
            } => write!(
                f,
                "ionic strength {ionic_strength_molal:.3} mol/kg is above the {} model's stated validity (about {limit_molal} mol/kg); activity coefficients are extrapolated",
                model.name()
            ),
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
        }
    }
}
