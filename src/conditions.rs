//! The conditions a recipe is compiled for: temperature, activity model and pH convention.

use crate::activity::{ActivityModel, PhConvention};
use crate::quantity::Temperature;

/// The temperature, activity model and pH convention a recipe is compiled for.
///
/// # Example
///
/// ```
/// use protolyte::{ActivityModel, Conditions, PhConvention, Temperature};
///
/// let c = Conditions::new(Temperature::celsius(37.0), ActivityModel::ExtendedDebyeHuckel)
///     .with_ph_convention(PhConvention::BatesGuggenheim);
/// assert_eq!(c.temperature.as_celsius(), 37.0);
/// assert_eq!(Conditions::default().activity, ActivityModel::Davies);
/// assert_eq!(Conditions::default().ph_convention, PhConvention::Model);
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Conditions {
    /// Temperature (0–100 °C).
    pub temperature: Temperature,
    /// Activity-coefficient model.
    pub activity: ActivityModel,
    /// How the reported pH is tied to a single-ion activity (default: the model's own γ(H⁺)).
    pub ph_convention: PhConvention,
}

impl Conditions {
    /// Conditions at `temperature` with `activity`, pH from the model's own γ(H⁺).
    pub fn new(temperature: Temperature, activity: ActivityModel) -> Self {
        Conditions {
            temperature,
            activity,
            ph_convention: PhConvention::Model,
        }
    }

    /// The same conditions with pH reported under `convention`.
    pub fn with_ph_convention(mut self, convention: PhConvention) -> Self {
        self.ph_convention = convention;
        self
    }
}

impl Default for Conditions {
    /// 25 °C, Davies.
    fn default() -> Self {
        Conditions::new(Temperature::STANDARD, ActivityModel::Davies)
    }
}
