//! Constraints that replace one equation of the tableau by an imposed quantity.

use super::gas::{Gas, Pressure};
use crate::ion::Ion;

/// An imposed quantity that replaces one equation of the system.
///
/// - [`Constraint::Ph`]: a fixed pH (−log₁₀ a(H⁺) on the model's own activity scale)
///   replaces the charge balance; the acid or base it takes is reported as the H⁺ taken up
///   ([`Equilibrium::proton_uptake_molal`](crate::Equilibrium::proton_uptake_molal)).
/// - [`Constraint::PartialPressure`]: a fixed partial pressure of a gas (an open system)
///   replaces the total of the gas's family, which becomes an output, with the amount taken
///   up from the gas phase.
/// - [`Constraint::Alkalinity`]: a total alkalinity (proton-condition definition, see
///   [`Equilibrium::total_alkalinity_molal`](crate::Equilibrium::total_alkalinity_molal))
///   replaces the charge balance: the water's proton content is set by it, and the charge it
///   leaves unbalanced is reported as H⁺ taken up.
/// - [`Constraint::Dic`]: dissolved inorganic carbon replaces the carbonate total (carbon
///   put in as CO₂; the counter-ions of carbonate reagents stay).
/// - [`Constraint::ChargeBalanceOn`]: the charge balance, freed by a fixed pH or alkalinity,
///   sets the total of this ion instead (the amount added is reported).
///
/// ```
/// use protolyte::{Catalog, Constraint, Pressure};
/// let cat = Catalog::builtin();
/// let c = Constraint::PartialPressure { gas: cat.gas("CO2(g)")?, pressure: Pressure::microatm(420.0) };
/// assert_eq!(c.describe(), "partial pressure of CO2(g) fixed at 4.2000e-4 atm");
/// assert_eq!(Constraint::Ph(8.3).describe(), "pH fixed at 8.3");
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
#[allow(clippy::large_enum_variant)] // a handful per recipe; the gas is kept whole for messages
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
    /// Total alkalinity fixed, mol/kg (proton equivalents per kg of water).
    Alkalinity(f64),
    /// Dissolved inorganic carbon fixed, mol/kg.
    Dic(f64),
    /// The charge balance closed on this ion.
    ChargeBalanceOn(Ion),
}

impl Constraint {
    /// A short description naming the constraint, for messages.
    pub fn describe(&self) -> String {
        match self {
            Constraint::Ph(ph) => format!("pH fixed at {ph}"),
            Constraint::PartialPressure { gas, pressure } => {
                format!(
                    "partial pressure of {} fixed at {:.4e} atm",
                    gas.name(),
                    pressure.as_atm()
                )
            }
            Constraint::Alkalinity(a) => format!("total alkalinity fixed at {a} mol/kg"),
            Constraint::Dic(d) => format!("DIC fixed at {d} mol/kg"),
            Constraint::ChargeBalanceOn(ion) => format!("charge balance closed on {}", ion.name()),
        }
    }
}
