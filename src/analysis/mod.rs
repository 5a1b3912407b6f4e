//! Analyses built on the solver: titration curves, endpoints, buffer capacity, buffer
//! design, fitting of measured data, uncertainty propagation, and water analyses (ion
//! balance, Langelier index, calcium carbonate precipitation potential, dose search). None of them re-derives
//! the chemistry: each compiles or re-totals a [`System`](crate::System), solves it with a
//! [`Solver`](crate::Solver) and reads derivatives from
//! [`Sensitivities`](crate::Sensitivities).

pub mod capacity;
pub mod design;
pub mod endpoints;
pub mod fit;
pub mod indicators;
pub mod measured;
pub mod target;
pub mod titration;
pub mod uncertainty;
pub mod water;

pub use capacity::{CapacityCurve, CapacityPeak, CapacityPoint, capacity_along};
pub use design::{BufferRecipe, BufferSpec, Ingredients, Line, Measure, PhShift, Role, Stock};
pub use endpoints::{
    BreakFlag, DerivativeEndpoint, DeviationCause, EndpointCriterion, EndpointVerdict, EquivalencePoint, GranFit,
    GranFunction, HalfEquivalencePoint, Inflection, StepRef, derivative_endpoints, gran_fit,
};
pub use fit::{Estimate, FitReport, Scope, TitrationFit, Unknown};
pub use indicators::{Indicator, indicators, indicators_within};
pub use target::amount_for_ph;
pub use titration::{CurveSample, Stepping, Titration, TitrationPoint};
pub use uncertainty::{Input, PropagatedUncertainty, Propagation, SpeciesUncertainty};
