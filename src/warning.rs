//! Warnings: what the caller should know about a result that is nevertheless returned.

use crate::activity::ActivityModel;

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
