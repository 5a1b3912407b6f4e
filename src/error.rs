//! The error type: every failure says what went wrong and where.

use thiserror::Error;

/// Everything that can go wrong in protolyte.
///
/// Each variant names the thing at fault (a reagent, a family, a field) so that a caller
/// can show the message to a person as it is.
///
/// # Example
///
/// ```
/// use protolyte::{Amount, Error};
///
/// let err = Amount::molar(-0.1).validate("sodium acetate").unwrap_err();
/// assert!(matches!(err, Error::InvalidAmount { .. }));
/// assert!(err.to_string().contains("sodium acetate"));
/// ```
#[derive(Debug, Clone, PartialEq, Error)]
#[non_exhaustive]
pub enum Error {
    /// An amount, concentration, mass or volume was negative, NaN or infinite.
    #[error(
        "invalid amount for {}: {} {unit} (amounts must be finite and not negative)",
        quote(what),
        number(*value)
    )]
    InvalidAmount {
        /// What the amount belongs to.
        what: String,
        /// The offending value.
        value: f64,
        /// Its unit.
        unit: &'static str,
    },
    /// A parameter (pKa, enthalpy, ion size, log β, ...) was out of range or not finite.
    #[error("invalid {parameter} for {}: {} ({reason})", quote(what), number(*value))]
    InvalidParameter {
        /// What the parameter belongs to.
        what: String,
        /// Which parameter.
        parameter: &'static str,
        /// The offending value.
        value: f64,
        /// Why it was refused.
        reason: &'static str,
    },
    /// A name was looked up and not found.
    #[error("unknown {kind} `{}`{}", quote(name), suggestion.as_ref().map(|s| format!(" (did you mean `{s}`?)")).unwrap_or_default())]
    UnknownName {
        /// What kind of thing was looked up ("protolyte", "reagent", "ion", ...).
        kind: &'static str,
        /// The name as given (the message quotes it shortened past 80 characters).
        name: String,
        /// The closest known name, if one is close (not searched for names past 64
        /// characters).
        suggestion: Option<String>,
    },
    /// Two definitions disagree, or one contradicts itself.
    #[error("inconsistent definition of {}: {reason}", quote(name))]
    InconsistentDefinition {
        /// The thing defined.
        name: String,
        /// What is inconsistent.
        reason: String,
    },
    /// A reagent's constituents do not add up to zero charge.
    #[error(
        "reagent `{}` is not electroneutral: its constituents carry a net charge of {charge:+}",
        quote(reagent)
    )]
    NotElectroneutral {
        /// The reagent.
        reagent: String,
        /// The net charge of one formula unit.
        charge: i64,
    },
    /// An entry of a catalogue file is refused: the file, the line, the entry and the field
    /// say where (boxed: the details are rarely needed on the hot paths that pass errors on).
    #[error("{0}")]
    CatalogFile(Box<CatalogFileError>),
    /// A condition lies outside the declared domain of the library.
    #[error("{what} = {} is outside the supported domain {domain}", number(*value))]
    OutOfDomain {
        /// What is out of range.
        what: &'static str,
        /// The value given.
        value: f64,
        /// The supported range, in words.
        domain: &'static str,
    },
    /// An integer that enters the chemistry (a count, a number of protons, a charge) lies
    /// outside its documented range (see [`limits`](crate::limits)).
    #[error("{quantity} of {} is {value}, outside the accepted range {min}..={max}", quote(what))]
    IntegerOutOfRange {
        /// The definition at fault.
        what: String,
        /// Which integer ("net H⁺ gained or lost", "count of part 2", "charge", ...).
        quantity: String,
        /// The value given (or computed from the parts), as a 64-bit integer (every per-part range is checked before parts are summed, so no sum can overflow).
        value: i64,
        /// Smallest accepted value.
        min: i64,
        /// Largest accepted value.
        max: i64,
    },
    /// A name or synonym is already taken by another catalog entry.
    #[error("the {kind} name `{}` is already used by the {existing_kind} `{}`{}", quote(name), quote(existing_name), if kind == existing_kind { " (use the catalog's replace_* call to override it on purpose)" } else { "" })]
    NameConflict {
        /// The name (or synonym) of the new definition.
        name: String,
        /// What the new definition is ("ion", "protolyte", ...).
        kind: &'static str,
        /// What the entry already holding the name is.
        existing_kind: &'static str,
        /// The canonical name of that entry.
        existing_name: String,
    },
    /// An amount or total is larger than the library accepts
    /// ([`MAX_TOTAL_MOLAL`](crate::limits::MAX_TOTAL_MOLAL)), or a sum of volumes overflows.
    /// With phases this covers what the solution takes from them too: a total dissolved from
    /// a fixed partial pressure or brought by an ion closing the charge balance, and the acid
    /// or base taken to hold a fixed pH (`what` names the constraints).
    #[error("{} is {} {unit}, above the accepted maximum of {limit} {unit}", quote(what), number(*value))]
    AmountTooLarge {
        /// What the amount belongs to.
        what: String,
        /// The value given or summed.
        value: f64,
        /// Its unit.
        unit: &'static str,
        /// The largest accepted value.
        limit: f64,
    },
    /// A volume is positive but smaller than the library accepts
    /// ([`MIN_VOLUME_LITERS`](crate::limits::MIN_VOLUME_LITERS)).
    #[error("{} is {} L, below the smallest accepted volume of {min_liters} L", quote(what), number(*liters))]
    VolumeTooSmall {
        /// What the volume belongs to.
        what: String,
        /// The volume given, litres.
        liters: f64,
        /// The smallest accepted volume, litres.
        min_liters: f64,
    },
    /// The species of the solution would give an ionic strength above what the solver and
    /// the activity models represent
    /// ([`MAX_IONIC_STRENGTH_MOLAL`](crate::limits::MAX_IONIC_STRENGTH_MOLAL)).
    #[error(
        "the solution's ionic strength would be at least {ionic_strength_molal:.4} mol/kg, above the limit of {limit_molal} mol/kg for activity models (use the ideal model, or dilute)"
    )]
    IonicStrengthBeyondLimit {
        /// The ionic strength the species give at the last iterate, mol/kg.
        ionic_strength_molal: f64,
        /// The limit, mol/kg.
        limit_molal: f64,
    },
    /// More points were asked of a curve or sweep than the library computes
    /// ([`MAX_CURVE_POINTS`](crate::limits::MAX_CURVE_POINTS)).
    #[error("{what}: {requested} points requested, at most {limit} are computed")]
    TooManyPoints {
        /// The curve or sweep.
        what: &'static str,
        /// Points requested.
        requested: usize,
        /// The largest number accepted.
        limit: usize,
    },
    /// The solver did not converge; the diagnostics say how far it got.
    #[error(
        "no convergence on the {path} path after {iterations} iterations: largest scaled residual {max_residual:.3e} ({worst_equation}); last pH estimate {last_ph:.4}"
    )]
    NoConvergence {
        /// Which solver path gave up.
        path: &'static str,
        /// Iterations spent.
        iterations: usize,
        /// The largest scaled residual at the last iterate.
        max_residual: f64,
        /// The equation with that residual (e.g. "mass balance of phosphate").
        worst_equation: String,
        /// pH at the last iterate.
        last_ph: f64,
    },
    /// Two constraints on one system cannot hold together or fix the same equation
    /// (over-determined), e.g. a pH fixed twice, or a partial pressure fixed twice.
    #[error("conflicting constraints: {first} and {second}: {reason}")]
    ConflictingConstraints {
        /// The first constraint, described.
        first: String,
        /// The second constraint, described.
        second: String,
        /// Why they conflict.
        reason: String,
    },
    /// No assemblage of the allowed solids satisfies the constraints (the request is
    /// infeasible), or the solids found would break the phase rule, or the constraints held
    /// (a fixed pH, partial pressure, closing ion) bring in more than the library accepts
    /// where the ionic-strength iteration has nothing to settle on.
    #[error("no equilibrium with the allowed phases: {reason}")]
    InfeasiblePhases {
        /// What failed, naming the phases or constraints involved.
        reason: String,
    },
}

/// Where and why a catalogue file was refused.
///
/// ```
/// use protolyte::{Catalog, Error};
///
/// let err = Catalog::empty()
///     .with_toml_str("format = \"protolyte-catalog/1\"\n[[ion]]\nname = \"x\"\ncharge = 1\n", "mine.toml")
///     .unwrap_err();
/// let Error::CatalogFile(e) = &err else { panic!("{err}") };
/// // A missing field is reported at the entry's header line, `[[ion]]`.
/// assert_eq!((e.file.as_str(), e.line, e.field.as_str()), ("mine.toml", 2, "source"));
/// ```
#[derive(Debug, Clone, PartialEq, Error)]
#[error("{file}:{line}: {}{message}", catalog_where(entry, field))]
pub struct CatalogFileError {
    /// The file (or the origin given for text read from memory).
    pub file: String,
    /// Line, 1-based (0 when the file could not be read).
    pub line: usize,
    /// The entry at fault ("family `acetate`"), or empty for the file as a whole.
    pub entry: String,
    /// The field at fault (`steps[1].pka`), or empty.
    pub field: String,
    /// What is wrong.
    pub message: String,
}

/// "family `acetate`, field `steps[1].pka`: ", or less when the entry or field is not known.
fn catalog_where(entry: &str, field: &str) -> String {
    match (entry.is_empty(), field.is_empty()) {
        (true, true) => String::new(),
        (false, true) => format!("{entry}: "),
        (true, false) => format!("field `{field}`: "),
        (false, false) => format!("{entry}, field `{field}`: "),
    }
}

/// `Result` with protolyte's [`Error`](enum@Error).
pub type Result<T> = std::result::Result<T, Error>;

/// Longest name quoted whole in a message; a longer one is shortened.
const QUOTE_CHARS: usize = 80;

/// A name as a message quotes it: whole up to 80 characters, else its first 60 characters,
/// an ellipsis and its length (an error never repeats a huge input).
pub(crate) fn quote(s: &str) -> std::borrow::Cow<'_, str> {
    let n = s.chars().count();
    if n <= QUOTE_CHARS {
        std::borrow::Cow::Borrowed(s)
    } else {
        let head: String = s.chars().take(60).collect();
        std::borrow::Cow::Owned(format!("{head}… ({n} characters)"))
    }
}

/// A number for a message: plain where that is short, in exponent form past 1e15 or below
/// 1e-6 (so 1e305 is written `1e305`, not as 306 digits).
pub(crate) fn number(v: f64) -> String {
    if v != 0.0 && v.is_finite() && !(1e-6..1e15).contains(&v.abs()) {
        format!("{v:e}")
    } else {
        format!("{v}")
    }
}

/// Refuses a non-finite or negative amount.
pub(crate) fn check_amount(what: &str, value: f64, unit: &'static str) -> Result<f64> {
    if value.is_finite() && value >= 0.0 {
        Ok(value)
    } else {
        Err(Error::InvalidAmount {
            what: what.to_string(),
            value,
            unit,
        })
    }
}

/// Refuses a parameter that is not finite or lies outside `[lo, hi]`.
pub(crate) fn check_parameter(
    what: &str,
    parameter: &'static str,
    value: f64,
    lo: f64,
    hi: f64,
    reason: &'static str,
) -> Result<f64> {
    if value.is_finite() && value >= lo && value <= hi {
        Ok(value)
    } else {
        Err(Error::InvalidParameter {
            what: what.to_string(),
            parameter,
            value,
            reason,
        })
    }
}

/// Refuses an integer outside `min..=max`.
pub(crate) fn check_int(what: &str, quantity: &str, value: i64, min: i64, max: i64) -> Result<i64> {
    if (min..=max).contains(&value) {
        Ok(value)
    } else {
        Err(Error::IntegerOutOfRange {
            what: what.to_string(),
            quantity: quantity.to_string(),
            value,
            min,
            max,
        })
    }
}

/// Refuses an amount above [`MAX_TOTAL_MOLAL`](crate::limits::MAX_TOTAL_MOLAL) (in its own
/// unit), after the checks of [`check_amount`].
pub(crate) fn check_amount_max(what: &str, value: f64, unit: &'static str) -> Result<f64> {
    let v = check_amount(what, value, unit)?;
    if v <= crate::limits::MAX_TOTAL_MOLAL {
        Ok(v)
    } else {
        Err(Error::AmountTooLarge {
            what: what.to_string(),
            value: v,
            unit,
            limit: crate::limits::MAX_TOTAL_MOLAL,
        })
    }
}

/// Refuses a number of points above [`MAX_CURVE_POINTS`](crate::limits::MAX_CURVE_POINTS).
pub(crate) fn check_points(what: &'static str, points: usize) -> Result<usize> {
    if points <= crate::limits::MAX_CURVE_POINTS {
        Ok(points)
    } else {
        Err(Error::TooManyPoints {
            what,
            requested: points,
            limit: crate::limits::MAX_CURVE_POINTS,
        })
    }
}

/// Refuses a temperature outside 0–100 °C (or not finite); returns it in °C.
pub(crate) fn check_temperature(t: crate::quantity::Temperature) -> Result<f64> {
    let tc = t.as_celsius();
    let (lo, hi) = crate::limits::TEMPERATURE_RANGE_CELSIUS;
    if tc.is_finite() && (lo - 1e-9..=hi + 1e-9).contains(&tc) {
        Ok(tc)
    } else {
        Err(Error::OutOfDomain {
            what: "temperature (°C)",
            value: tc,
            domain: "0..100 °C",
        })
    }
}

/// Refuses an ion-size parameter å outside 0.5..20 Å (the range of tabulated ion sizes,
/// with room either side).
pub(crate) fn check_ion_size(what: &str, angstrom: f64) -> Result<f64> {
    check_parameter(what, "ion size (Å)", angstrom, 0.5, 20.0, "must be within 0.5..20 Å")
}
