//! Constraints that replace one equation of the tableau by an imposed quantity.

use super::gas::{Gas, Pressure};

/// An imposed quantity that replaces one equation of the system.
///
/// - [`Constraint::Ph`]: a fixed pH (−log₁₀ a(H⁺) on the model's own activity scale)
///   replaces the charge balance; the acid or base it takes is reported as the H⁺ taken up
///   ([`Equilibrium::proton_uptake_molal`](crate::Equilibrium::proton_uptake_molal)).
/// - [`Constraint::PartialPressure`]: a fixed partial pressure of a gas (an open system)
///   replaces the total of the gas's family, which becomes an output, with the amount taken
///   up from the gas phase.
///
/// ```
/// use protolyte::{Catalog, Constraint, Pressure};
/// let cat = Catalog::builtin();
/// let c = Constraint::PartialPressure { gas: cat.gas("CO2(g)")?, pressure: Pressure::microatm(420.0) };
/// assert_eq!(c.describe(), "partial pressure of CO2(g) fixed at 4.2e-4 atm");
/// assert_eq!(Constraint::Ph(8.3).describe(), "pH fixed at 8.3");
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub enum Constraint {
    /// pH fixed at this value.
    Ph(f64),
    /// The partial pressure of `gas` fixed at `pressure`.
    PartialPressure {
        /// The gas.
        gas: Gas,
        /// Its partial pressure.
        pressure: Pressure,
    },
}

impl Constraint {
    /// A short description naming the constraint, for messages.
    pub fn describe(&self) -> String {
        match self {
            Constraint::Ph(ph) => format!("pH fixed at {ph}"),
            Constraint::PartialPressure { gas, pressure } => {
                format!(
                    "partial pressure of {} fixed at {:e} atm",
                    gas.name(),
                    pressure.as_atm()
                )
            }
        }
    }
}
