//! # protolyte
//!
//! Aqueous acid–base speciation: given what was put into a solution, protolyte returns its
//! equilibrium state — pH and every species with its concentration, activity coefficient
//! and activity — for any mixture of weak and strong acids, bases, salts and complexes, at
//! real ionic strength and temperature (0–100 °C).
//!
//! ## The flow
//!
//! ```text
//! Recipe ──compile(Conditions)──▶ System ──Solver::solve──▶ Equilibrium ──▶ Sensitivities
//!  what was put in                 tableau at T           pH, species,       d pH / d(totals,
//!  (reagents × amounts)            (components,           activities,        log K), buffer
//!                                   species, log K)       residuals          capacity
//! ```
//!
//! - A [`Recipe`] lists [`Reagent`]s with [`Amount`]s (mol/L or mol/kg, or from a weighed
//!   [`Mass`] or a pipetted stock [`Volume`]), plus the [`Complex`]es to consider.
//! - [`Recipe::compile`] builds the [`System`]: the tableau of components (H⁺, each
//!   family's fully deprotonated form, each simple ion) and species with their formation
//!   constants at the chosen [`Temperature`] and [`ActivityModel`].
//! - A [`Solver`] turns the system into an [`Equilibrium`]. Without complexes it takes the
//!   fast path (one monotone equation in pH); otherwise Newton–Raphson on all log
//!   activities with the analytic Jacobian. Both report the same [`Residuals`].
//! - [`Equilibrium::sensitivities`] differentiates the result by every total and log K
//!   through the converged Jacobian (implicit differentiation): buffer capacity and error
//!   propagation come from there.
//!
//! The built-in [`Catalog`] holds acid–base families, ions, reagents and complexes, each
//! with its published source; your own definitions go beside them.
//!
//! ## Example
//!
//! ```
//! use protolyte::{ActivityModel, Amount, Catalog, Conditions, Recipe, Temperature};
//!
//! let cat = Catalog::builtin();
//! let mut recipe = Recipe::new();
//! recipe
//!     .add(&cat.reagent("acetic acid")?, Amount::millimolar(20.0))?
//!     .add(&cat.reagent("sodium acetate")?, Amount::millimolar(10.0))?
//!     .add(&cat.reagent("sodium chloride")?, Amount::millimolar(100.0))?;
//! let conditions = Conditions::new(Temperature::celsius(25.0), ActivityModel::Davies);
//! let system = recipe.compile(&conditions)?;
//! let eq = system.solve()?;
//!
//! // With activity corrections the buffer reads lower than pKa − log 2 = 4.455.
//! assert!(eq.ph() < 4.455 && eq.ph() > 4.2);
//! assert!(eq.residuals().max_relative() < 1e-10);
//! for s in eq.species() {
//!     println!("{:10} {:.3e} mol/kg  γ = {:.3}", s.name, s.molal, s.gamma);
//! }
//! # Ok::<(), protolyte::Error>(())
//! ```
//!
//! ## Units and conventions
//!
//! - Internally every amount is molal (mol/kg of water), the scale of the thermodynamic
//!   constants. Molar inputs are converted with the density of pure water at the system's
//!   temperature (the dilute-solution approximation); results carry both.
//! - pH is −log₁₀ a(H⁺) on the molal scale; [`Equilibrium::p_h_molal`] is −log₁₀ m(H⁺).
//! - Built-in constants are thermodynamic (infinite dilution) at 25 °C; other temperatures
//!   use the van't Hoff equation ([`vant_hoff`]) where ΔH° is known, and say so in a
//!   [`Warning`] where it is not.
//! - Every input limit (temperature, totals and their floor, ionic strength, integer ranges of
//!   complexes and reagents, points per curve) is a constant in [`limits`]; past a limit the
//!   call returns a typed [`Error`], beyond the tested domain the result carries a
//!   [`Warning`]. [`Residuals::max_relative`] covers every equation solved, ionic strength
//!   included, and every returned result keeps it below
//!   [`RESIDUAL_PROMISE`](limits::RESIDUAL_PROMISE) or says otherwise in a warning.
//!
//! ## Cautions
//!
//! protolyte computes model results. Strong acids and bases are corrosive; buffers for
//! medical, food or pharmaceutical use must be made and checked by validated procedures
//! under local rules and licensed practice. Measure the pH of what you make.

#![deny(missing_docs)]

pub mod activity;
pub mod analysis;
mod complex;
mod conditions;
pub mod data;
#[cfg(feature = "serde")]
pub mod document;
mod equilibrium;
mod error;
mod formula;
mod ion;
pub mod limits;
pub mod phase;
#[cfg(feature = "plot")]
pub mod plot;
mod protolyte;
mod quantity;
mod reagent;
mod recipe;
mod sensitivity;
pub mod solve;
mod system;
#[cfg(test)]
mod testing;
pub mod vant_hoff;
mod warning;
pub mod water;

pub use activity::{ActivityModel, DebyeHuckelConstants, PhConvention};
pub use complex::{Complex, ComplexPart};
pub use data::{Catalog, DataInfo, DataKind, FormInfo, PhaseEntry, molar_mass_from_formula};
pub use equilibrium::{Equilibrium, FamilyState, Residuals, SpeciesState};
pub use error::{CatalogFileError, Error, Result};
pub use ion::Ion;
pub use phase::{Constraint, Gas, GasState, Pressure, Solid, SolidState};
pub use protolyte::{Protolyte, Step, species_name_eq};
pub use quantity::{Amount, Mass, Temperature, Volume};
pub use reagent::{Constituent, Reagent};
pub use recipe::{Entry, Recipe};
pub use sensitivity::{Parameter, Sensitivities};
pub use solve::{PathChoice, Solver, SolverPath};
pub use system::{Component, ComponentKind, Conditions, Family, Species, SpeciesKind, System};
pub use warning::{TemperatureDatum, Warning};
