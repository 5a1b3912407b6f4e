//! Analyses built on the solver: titration curves, endpoints, buffer capacity, buffer
//! design, fitting of measured data and uncertainty propagation. None of them re-derives
//! the chemistry: each compiles or re-totals a [`System`](crate::System), solves it with a
//! [`Solver`](crate::Solver) and reads derivatives from
//! [`Sensitivities`](crate::Sensitivities).

pub mod design;
pub mod fit;
pub mod titration;
pub mod uncertainty;

pub use titration::{Stepping, Titration, TitrationPoint};
pub use design::{BufferRecipe, BufferSpec, Ingredients, Line, Measure, PhShift, Role, Stock};
pub use fit::{Estimate, FitReport, Scope, TitrationFit, Unknown};
pub use uncertainty::{Input, PropagatedUncertainty, Propagation, SpeciesUncertainty};
