//! Analyses built on the solver: titration curves, endpoints, buffer capacity, buffer
//! design, fitting of measured data and uncertainty propagation. None of them re-derives
//! the chemistry: each compiles or re-totals a [`System`](crate::System), solves it with a
//! [`Solver`](crate::Solver) and reads derivatives from
//! [`Sensitivities`](crate::Sensitivities).

pub mod titration;

pub use titration::{Stepping, Titration, TitrationPoint};
