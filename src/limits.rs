//! The input limits and the accepted domain, in one place.
//!
//! Each limit is enforced where a value enters the library (a constructor, a recipe, a
//! setter) and refused past it with a typed [`Error`](crate::Error) that names the thing at
//! fault; a value inside the accepted domain but beyond the tested one is solved and the
//! result carries a [`Warning`](crate::Warning).
//!
//! | what | limit | past it |
//! |---|---|---|
//! | temperature | 0–100 °C | [`Error::OutOfDomain`](crate::Error::OutOfDomain) |
//! | an amount in a recipe line, a component's total (put in, or dissolved with phases) | ≤ [`MAX_TOTAL_MOLAL`] (mol/L or mol/kg) | [`Error::AmountTooLarge`](crate::Error::AmountTooLarge) |
//! | a component's total | ≤ [`TESTED_MAX_TOTAL_MOLAR`] mol/L tested | [`Warning::BeyondTestedDomain`](crate::Warning::BeyondTestedDomain) |
//! | a positive total | ≥ [`MIN_TOTAL_MOLAL`] | taken as exactly 0, [`Warning::TotalBelowFloor`](crate::Warning::TotalBelowFloor) |
//! | ionic strength of a result (every activity model but the ideal one) | ≤ [`MAX_IONIC_STRENGTH_MOLAL`] | [`Error::IonicStrengthBeyondLimit`](crate::Error::IonicStrengthBeyondLimit) |
//! | H⁺ gained or lost by a complex (all its proton parts together) | ±[`MAX_COMPLEX_PROTONS`] | [`Error::IntegerOutOfRange`](crate::Error::IntegerOutOfRange) |
//! | count of one non-proton part of a complex | 1..=[`MAX_PART_COUNT`] | [`Error::IntegerOutOfRange`](crate::Error::IntegerOutOfRange) |
//! | parts of a complex (list entries) | ≤ [`MAX_COMPLEX_PARTS`] | [`Error::IntegerOutOfRange`](crate::Error::IntegerOutOfRange) |
//! | charge of a complex | ±[`MAX_COMPLEX_CHARGE`] | [`Error::IntegerOutOfRange`](crate::Error::IntegerOutOfRange) |
//! | count of one constituent of a reagent | 1..=[`MAX_CONSTITUENT_COUNT`] | [`Error::IntegerOutOfRange`](crate::Error::IntegerOutOfRange) |
//! | a volume that must be positive (final, analyte, end of a curve) | ≥ [`MIN_VOLUME_LITERS`] (1 nL) | [`Error::VolumeTooSmall`](crate::Error::VolumeTooSmall) |
//! | points of a curve or sweep | ≤ [`MAX_CURVE_POINTS`] | [`Error::TooManyPoints`](crate::Error::TooManyPoints) |
//! | iteration budget of a titration fit | ≤ [`MAX_FIT_ITERATIONS`] | [`Error::InvalidParameter`](crate::Error::InvalidParameter) |
//!
//! Families (1–12 steps, charge of the most protonated form −10..10) and simple ions
//! (charge −6..6, not 0) are checked by their constructors.
//!
//! The residual promise: every returned [`Equilibrium`](crate::Equilibrium) has
//! [`Residuals::max_relative`](crate::Residuals::max_relative) (every equation solved, the
//! ionic-strength equation included) at most [`RESIDUAL_PROMISE`], or the solver's
//! tolerance where that was set looser; a result that misses it carries
//! [`Warning::ResidualAbovePromise`](crate::Warning::ResidualAbovePromise).

/// Largest amount in one recipe line (in its own unit, mol/L or mol/kg) and largest total
/// of a component, mol/kg. Far above any aqueous solution (pure water is 55.5 mol/kg); it
/// keeps every sum of totals finite.
pub const MAX_TOTAL_MOLAL: f64 = 100.0;

/// Largest total of a component, mol/L, inside the tested domain; a result with a larger
/// total carries [`Warning::BeyondTestedDomain`](crate::Warning::BeyondTestedDomain).
pub const TESTED_MAX_TOTAL_MOLAR: f64 = 2.0;

/// Smallest positive total, mol/kg, that is solved as given. A positive total below it is
/// taken as exactly zero (its contribution to every balance is below 1e-20 of water's own
/// ions) and the result carries [`Warning::TotalBelowFloor`](crate::Warning::TotalBelowFloor):
/// below it the relative mass balance of the component cannot be kept in floating point.
pub const MIN_TOTAL_MOLAL: f64 = 1e-30;

/// Largest ionic strength, mol/kg, of a result under an activity model (Davies, extended
/// Debye–Hückel): the solver's iterations are bounded there, and activity coefficients
/// mean nothing far beyond it. A solution whose species would give more is refused. Under
/// the ideal model the ionic strength is a by-product and has no limit.
pub const MAX_IONIC_STRENGTH_MOLAL: f64 = 50.0;

/// Largest number of H⁺ a complex gains or loses, over all its proton parts together
/// (the solver's fast path tabulates powers of a(H⁺) up to this order).
pub const MAX_COMPLEX_PROTONS: i32 = 12;

/// Largest count of one non-proton part of a complex.
pub const MAX_PART_COUNT: i32 = 12;

/// Largest number of part entries in one complex.
pub const MAX_COMPLEX_PARTS: usize = 16;

/// Largest |charge| of a complex.
pub const MAX_COMPLEX_CHARGE: i32 = 12;

/// Largest count of one constituent of a reagent.
pub const MAX_CONSTITUENT_COUNT: u32 = 100;

/// The smallest volume accepted where a volume must be positive (a final volume, an analyte
/// volume, the end volume of a titration curve), litres: 1 nL. Smaller volumes are below any
/// real dispensing, and the dilution arithmetic of a titration curve divided into steps loses
/// its precision there (volumes that no longer increase). Refused with
/// [`Error::VolumeTooSmall`](crate::Error::VolumeTooSmall).
pub const MIN_VOLUME_LITERS: f64 = 1e-9;

/// Largest number of points of a titration curve or a buffer-capacity sweep.
pub const MAX_CURVE_POINTS: usize = 1_000_000;

/// Largest iteration budget of a titration fit.
pub const MAX_FIT_ITERATIONS: usize = 10_000;

/// The residual promise: the largest relative residual of a returned result over every
/// equation solved (charge balance, mass balances, ionic strength), unless the solver's
/// tolerance was set looser.
pub const RESIDUAL_PROMISE: f64 = 1e-10;

/// Temperature range of the library and of the functions in [`water`](crate::water), °C.
pub const TEMPERATURE_RANGE_CELSIUS: (f64, f64) = (0.0, 100.0);
