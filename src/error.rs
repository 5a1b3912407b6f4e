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
    #[error("invalid amount for {what}: {value} {unit} (amounts must be finite and not negative)")]
    InvalidAmount {
        /// What the amount belongs to.
        what: String,
        /// The offending value.
        value: f64,
        /// Its unit.
        unit: &'static str,
    },
    /// A parameter (pKa, enthalpy, ion size, log β, ...) was out of range or not finite.
    #[error("invalid {parameter} for {what}: {value} ({reason})")]
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
    #[error("unknown {kind} `{name}`{}", suggestion.as_ref().map(|s| format!(" (did you mean `{s}`?)")).unwrap_or_default())]
    UnknownName {
        /// What kind of thing was looked up ("protolyte", "reagent", "ion", ...).
        kind: &'static str,
        /// The name as given.
        name: String,
        /// The closest known name, if one is close.
        suggestion: Option<String>,
    },
    /// Two definitions disagree, or one contradicts itself.
    #[error("inconsistent definition of {name}: {reason}")]
    InconsistentDefinition {
        /// The thing defined.
        name: String,
        /// What is inconsistent.
        reason: String,
    },
    /// A reagent's constituents do not add up to zero charge.
    #[error("reagent `{reagent}` is not electroneutral: its constituents carry a net charge of {charge:+}")]
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
    #[error("{what} = {value} is outside the supported domain {domain}")]
    OutOfDomain {
        /// What is out of range.
        what: &'static str,
        /// The value given.
        value: f64,
        /// The supported range, in words.
        domain: &'static str,
    },
    /// The solver did not converge; the diagnostics say how far it got.
    #[error(
        "no convergence on the {path} path after {iterations} iterations: largest scaled residual {max_residual:.3e} in the {worst_equation}; last pH estimate {last_ph:.4}"
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

/// Refuses an ion-size parameter å outside 0.5..20 Å (the range of tabulated ion sizes,
/// with room either side).
pub(crate) fn check_ion_size(what: &str, angstrom: f64) -> Result<f64> {
    check_parameter(what, "ion size (Å)", angstrom, 0.5, 20.0, "must be within 0.5..20 Å")
}
