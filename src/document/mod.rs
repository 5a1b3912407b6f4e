//! The document format (feature `serde`): recipes, titration, design and fit requests in JSON
//! or TOML, and every result as a plain serde structure.
//!
//! The documents are plain structures of their own ([`RecipeDoc`], [`TitrationDoc`],
//! [`DesignDoc`], [`FitDoc`] in; [`SolveResult`], [`TitrationResult`], [`DesignResult`],
//! [`FitResult`] out) that convert to and from the library's types, so the core types carry
//! no serialisation attributes. Every document names its format and version in a `format`
//! field (`"protolyte-recipe/1"`, `"protolyte-titration/1"`, `"protolyte-design/1"`,
//! `"protolyte-fit/1"`); the full description with examples is in `docs/recipe-format.md`
//! and the JSON Schema in `schema/recipe.schema.json`.
//!
//! A bad document gives a [`DocumentError`] that names the file and the line and column (a
//! syntax or type error) or the field (a value the chemistry refuses).
//!
//! # Example
//!
//! ```
//! use protolyte::Catalog;
//! use protolyte::document::{RecipeDoc, SolveResult};
//!
//! let json = r#"{
//!   "format": "protolyte-recipe/1",
//!   "temperature_celsius": 25,
//!   "activity": "davies",
//!   "reagents": [
//!     { "reagent": "acetic acid", "millimolar": 20 },
//!     { "reagent": "sodium acetate", "millimolar": 10 }
//!   ]
//! }"#;
//! let doc: RecipeDoc = protolyte::document::parse(json, "buffer.json")?;
//! let (recipe, conditions) = doc.to_recipe(&Catalog::builtin())?;
//! let eq = recipe.compile(&conditions)?.solve()?;
//! let result = SolveResult::from_equilibrium(&eq);
//! assert!(result.ph > 4.2 && result.ph < 4.5);
//! # Ok::<(), Box<dyn std::error::Error>>(())
//! ```

#[cfg(feature = "cli")]
pub mod batch;
mod input;
mod output;

use std::path::Path;

use serde::de::DeserializeOwned;

pub use input::{
    ActivityDoc, AmountLine, ComplexDef, ComplexPartDef, DefinitionsDoc, DesignDoc, FitCurveDoc, FitDoc, IonDef,
    IonicStrengthDoc, MeasuredPoint, ProtolyteDef, ReagentDef, ReagentPartDef, RecipeDoc, SolutionDoc, StockDoc,
    TitrationDoc, UnknownDoc,
};
pub use output::{
    DesignLineResult, DesignResult, EquivalenceResult, EstimateResult, FamilyResult, FitResult, HalfEquivalenceResult,
    PhShiftResult, ResidualsResult, SolveResult, SpeciesResult, TitrationPointResult, TitrationResult,
};

/// The format tag of a recipe document.
pub const RECIPE_FORMAT: &str = "protolyte-recipe/1";
/// The format tag of a titration request.
pub const TITRATION_FORMAT: &str = "protolyte-titration/1";
/// The format tag of a buffer design request.
pub const DESIGN_FORMAT: &str = "protolyte-design/1";
/// The format tag of a fit request.
pub const FIT_FORMAT: &str = "protolyte-fit/1";
/// The format tag of every result document.
pub const RESULT_FORMAT: &str = "protolyte-result/1";

/// What went wrong with a document.
///
/// # Example
///
/// ```
/// use protolyte::document::{DocumentError, RecipeDoc, parse};
///
/// let err = parse::<RecipeDoc>("{\n  \"format\": \"protolyte-recipe/1\",\n  \"reagents\": [,]\n}", "bad.json")
///     .unwrap_err();
/// assert!(matches!(err, DocumentError::Syntax { line: 3, .. }));
/// assert!(err.to_string().starts_with("bad.json:3:"));
/// ```
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum DocumentError {
    /// The file could not be read.
    #[error("{file}: cannot read: {message}")]
    Read {
        /// The file.
        file: String,
        /// The system's message.
        message: String,
    },
    /// The text is not valid JSON or TOML, or a value has the wrong type.
    #[error("{file}:{line}:{column}: {message}")]
    Syntax {
        /// The file.
        file: String,
        /// Line, 1-based.
        line: usize,
        /// Column, 1-based.
        column: usize,
        /// What is wrong.
        message: String,
    },
    /// A field holds a value that is refused (a missing amount, an unknown name, a negative
    /// concentration, a wrong format tag...).
    #[error("{}field `{field}`: {message}", file_prefix(file))]
    Field {
        /// The file.
        file: String,
        /// The field, as a path (`reagents[2].millimolar`).
        field: String,
        /// What is wrong.
        message: String,
    },
}

impl DocumentError {
    /// The same error attributed to `file`.
    pub fn in_file(self, name: &str) -> Self {
        match self {
            DocumentError::Read { message, .. } => DocumentError::Read {
                file: name.into(),
                message,
            },
            DocumentError::Syntax {
                line, column, message, ..
            } => DocumentError::Syntax {
                file: name.into(),
                line,
                column,
                message,
            },
            DocumentError::Field { field, message, .. } => DocumentError::Field {
                file: name.into(),
                field,
                message,
            },
        }
    }
}

/// "file: ", or nothing when the file is not known (a document read from memory).
fn file_prefix(file: &str) -> String {
    if file.is_empty() {
        String::new()
    } else {
        format!("{file}: ")
    }
}

/// A refused field (the file is filled in by the caller that knows it).
pub(crate) fn field_error(field: impl Into<String>, message: impl std::fmt::Display) -> DocumentError {
    DocumentError::Field {
        file: String::new(),
        field: field.into(),
        message: message.to_string(),
    }
}

/// True when `text` looks like JSON (its first non-blank character opens an object or array).
fn looks_like_json(text: &str) -> bool {
    matches!(text.trim_start().chars().next(), Some('{') | Some('['))
}

/// Parses a document from JSON or TOML text (JSON when the text starts with `{`, TOML
/// otherwise); `file` names it in errors.
///
/// ```
/// use protolyte::document::{RecipeDoc, parse};
///
/// let toml = r#"
/// format = "protolyte-recipe/1"
/// temperature_celsius = 37.0
///
/// [[reagents]]
/// reagent = "sodium chloride"
/// molar = 0.15
/// "#;
/// let doc: RecipeDoc = parse(toml, "saline.toml")?;
/// assert_eq!(doc.reagents.len(), 1);
/// # Ok::<(), protolyte::document::DocumentError>(())
/// ```
pub fn parse<T: DeserializeOwned>(text: &str, file: &str) -> Result<T, DocumentError> {
    if looks_like_json(text) {
        parse_json(text, file)
    } else {
        parse_toml(text, file)
    }
}

/// Parses a JSON document; `file` names it in errors (with line and column).
///
/// ```
/// use protolyte::document::{RecipeDoc, parse_json};
/// let err = parse_json::<RecipeDoc>("{\"reagents\": 3}", "x.json").unwrap_err();
/// assert!(err.to_string().contains("x.json:1:"));
/// ```
pub fn parse_json<T: DeserializeOwned>(text: &str, file: &str) -> Result<T, DocumentError> {
    serde_json::from_str(text).map_err(|e| DocumentError::Syntax {
        file: file.into(),
        line: e.line().max(1),
        column: e.column().max(1),
        message: strip_position(&e.to_string()),
    })
}

/// Parses a TOML document; `file` names it in errors (with line and column).
///
/// ```
/// use protolyte::document::{RecipeDoc, parse_toml};
/// let err = parse_toml::<RecipeDoc>("format = \"protolyte-recipe/1\"\nreagents = 3\n", "x.toml").unwrap_err();
/// assert!(err.to_string().starts_with("x.toml:2:"));
/// ```
pub fn parse_toml<T: DeserializeOwned>(text: &str, file: &str) -> Result<T, DocumentError> {
    toml::from_str(text).map_err(|e| {
        let (line, column) = e.span().map(|s| line_column(text, s.start)).unwrap_or((1, 1));
        DocumentError::Syntax {
            file: file.into(),
            line,
            column,
            message: e.message().trim().to_string(),
        }
    })
}

/// Reads and parses a document from `path` (`-` reads standard input). JSON or TOML is told
/// from the extension (`.toml`) or, failing that, from the text.
///
/// ```no_run
/// use protolyte::document::{RecipeDoc, load};
/// let doc: RecipeDoc = load("examples/hatchery_makeup.json")?;
/// # Ok::<(), protolyte::document::DocumentError>(())
/// ```
pub fn load<T: DeserializeOwned>(path: impl AsRef<Path>) -> Result<T, DocumentError> {
    let path = path.as_ref();
    let name = if path == Path::new("-") {
        "<stdin>".to_string()
    } else {
        path.display().to_string()
    };
    let text = read_text(path).map_err(|e| DocumentError::Read {
        file: name.clone(),
        message: e.to_string(),
    })?;
    let is_toml = path.extension().is_some_and(|e| e.eq_ignore_ascii_case("toml"));
    if is_toml {
        parse_toml(&text, &name)
    } else {
        parse(&text, &name)
    }
}

fn read_text(path: &Path) -> std::io::Result<String> {
    if path == Path::new("-") {
        let mut s = String::new();
        std::io::Read::read_to_string(&mut std::io::stdin(), &mut s)?;
        Ok(s)
    } else {
        std::fs::read_to_string(path)
    }
}

/// 1-based line and column of byte offset `at` in `text`.
fn line_column(text: &str, at: usize) -> (usize, usize) {
    let at = at.min(text.len());
    let before = text.get(..at).unwrap_or(text);
    let line = before.matches('\n').count() + 1;
    let column = before.rsplit('\n').next().map(|l| l.chars().count()).unwrap_or(0) + 1;
    (line, column)
}

/// serde_json appends " at line L column C"; the position is reported separately.
fn strip_position(msg: &str) -> String {
    match msg.rfind(" at line ") {
        Some(i) => msg[..i].to_string(),
        None => msg.to_string(),
    }
}

/// Checks a document's `format` tag: `expected`, or absent when `required` is false.
pub(crate) fn check_format(found: Option<&str>, expected: &str, required: bool) -> Result<(), DocumentError> {
    match found {
        Some(f) if f == expected => Ok(()),
        Some(f) => {
            let kind = expected.split('/').next().unwrap_or(expected);
            let message = if f.starts_with(kind) {
                format!("version `{f}` is not supported (this program reads `{expected}`)")
            } else {
                format!("`{f}` is not a {kind} document (expected `{expected}`)")
            };
            Err(field_error("format", message))
        }
        None if required => Err(field_error(
            "format",
            format!("missing: add \"format\": \"{expected}\""),
        )),
        None => Ok(()),
    }
}

/// `Some(x)` when `x` is finite, `None` otherwise (results never hold NaN or infinity).
pub(crate) fn finite(x: f64) -> Option<f64> {
    x.is_finite().then_some(x)
}
