//! The document format (feature `serde`): recipes, titration, design and fit requests in JSON
//! or TOML, and every result as a plain serde structure.
//!
//! The documents are plain structures of their own ([`RecipeDoc`], [`TitrationDoc`],
//! [`DesignDoc`], [`FitDoc`] in; [`SolveResult`], [`TitrationResult`], [`DesignResult`],
//! [`FitResult`] out) that convert to and from the library's types, so the core types carry
//! no serialisation attributes. Every document names its format and version in a `format`
//! field (`"protolyte-recipe/1"`, `"protolyte-titration/1"`, `"protolyte-design/1"`,
//! `"protolyte-fit/1"`, `"protolyte-calibration/1"`, `"protolyte-measured/1"`); the full
//! description with examples is in `docs/recipe-format.md`
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

#[cfg(feature = "batch")]
pub mod batch;
mod input;
pub mod limits;
mod measured;
mod output;
mod requests;

use std::borrow::Cow;
use std::path::Path;

use serde::de::DeserializeOwned;

pub use input::{
    ActivityDoc, AllowSolidsDoc, AmountLine, ComplexDef, ComplexPartDef, DefinitionsDoc, DesignDoc, FitCurveDoc,
    FitDoc, IonDef, IonicStrengthDoc, MeasuredPoint, PartialPressureDoc, PhConventionDoc, ProtolyteDef, ReagentDef,
    ReagentPartDef, RecipeDoc, SolutionDoc, StockDoc, TitrationDoc, UnknownDoc,
};
pub use measured::{
    AnalyteDoc, BudgetResult, BufferDoc, CalibrationDoc, CalibrationResult, ColumnDoc, DataDoc, DerivativeResult,
    GranResult, MeasuredDoc, MeasuredResult, ModelDoc, SampleDoc, ValueResult,
};
pub use output::{
    ChargeBalanceIonResult, DesignLineResult, DesignResult, EquivalenceResult, EstimateResult, FamilyResult, FitResult,
    GasResult, HalfEquivalenceResult, IonBalanceResult, PhShiftResult, ResidualsResult, SolidResult, SolveResult,
    SpeciesResult, TitrationPointResult, TitrationResult, VerdictResult,
};
pub use requests::{RequestError, RequestRecord, TitrationRun, run_design, run_titration};

/// The format tag of a recipe document.
pub const RECIPE_FORMAT: &str = "protolyte-recipe/1";
/// The format tag of a titration request.
pub const TITRATION_FORMAT: &str = "protolyte-titration/1";
/// The format tag of a buffer design request.
pub const DESIGN_FORMAT: &str = "protolyte-design/1";
/// The format tag of a fit request.
pub const FIT_FORMAT: &str = "protolyte-fit/1";
/// The format tag of a measured-titration request (`protolyte analyze`).
pub const MEASURED_FORMAT: &str = "protolyte-measured/1";
/// The format tag of an electrode calibration request (`protolyte calibrate`).
pub const CALIBRATION_FORMAT: &str = "protolyte-calibration/1";
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
        message: shorten_message(message.to_string()),
    }
}

/// A message cut to its first 160 and last 80 characters when it is longer than 300 (a
/// message may quote input: an unknown field's name, a string where a number belongs).
pub(crate) fn shorten_message(message: String) -> String {
    let n = message.chars().count();
    if n <= 300 {
        return message;
    }
    let head: String = message.chars().take(160).collect();
    let tail: String = message.chars().skip(n - 80).collect();
    format!("{head}… ({} characters left out) …{tail}", n - 240)
}

/// True when `text` looks like JSON (its first non-blank character opens an object or array).
fn looks_like_json(text: &str) -> bool {
    matches!(text.trim_start().chars().next(), Some('{') | Some('['))
}

/// `text` without a leading UTF-8 byte-order mark (written by some editors; not part of the
/// document).
fn without_bom(text: &str) -> &str {
    text.strip_prefix('\u{feff}').unwrap_or(text)
}

/// `s` as quoted in a message: whole when short, otherwise its first 40 characters, "…" and
/// its length.
pub(crate) fn shorten(s: &str) -> Cow<'_, str> {
    const KEEP: usize = 40;
    match s.char_indices().nth(KEEP + 20) {
        None => Cow::Borrowed(s),
        Some(_) => {
            let cut = s.char_indices().nth(KEEP).map(|(i, _)| i).unwrap_or(s.len());
            Cow::Owned(format!("{}… ({} characters)", &s[..cut], s.chars().count()))
        }
    }
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
    let text = without_bom(text);
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
    check_size(text.len(), file)?;
    let text = without_bom(text);
    serde_json::from_str(text).map_err(|e| DocumentError::Syntax {
        file: file.into(),
        line: e.line().max(1),
        column: e.column().max(1),
        message: shorten_message(strip_position(&e.to_string())),
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
    check_size(text.len(), file)?;
    let text = without_bom(text);
    toml::from_str(text).map_err(|e| {
        let (line, column) = e.span().map(|s| line_column(text, s.start)).unwrap_or((1, 1));
        DocumentError::Syntax {
            file: file.into(),
            line,
            column,
            message: shorten_message(e.message().trim().to_string()),
        }
    })
}

/// Refuses a document over [`limits::MAX_DOCUMENT_BYTES`].
fn check_size(bytes: usize, file: &str) -> Result<(), DocumentError> {
    if bytes > limits::MAX_DOCUMENT_BYTES {
        return Err(DocumentError::Read {
            file: file.into(),
            message: format!(
                "the document is {bytes} bytes long; a document may hold at most {} bytes (1 MiB)",
                limits::MAX_DOCUMENT_BYTES
            ),
        });
    }
    Ok(())
}

/// Reads and parses a document from `path` (`-` reads standard input). JSON or TOML is told
/// from the extension (`.toml`) or, failing that, from the text; a leading byte-order mark is
/// skipped. A document over [`limits::MAX_DOCUMENT_BYTES`] is refused before it is read in
/// full.
///
/// ```no_run
/// use protolyte::document::{RecipeDoc, load};
/// let doc: RecipeDoc = load("examples/hatchery_makeup.json")?;
/// # Ok::<(), protolyte::document::DocumentError>(())
/// ```
pub fn load<T: DeserializeOwned>(path: impl AsRef<Path>) -> Result<T, DocumentError> {
    let (text, name, is_toml) = load_text(path.as_ref())?;
    if is_toml {
        parse_toml(&text, &name)
    } else {
        parse(&text, &name)
    }
}

/// The document kinds this library reads: format tag, what it is, the command that reads it.
pub const DOCUMENT_KINDS: [(&str, &str, &str); 7] = [
    (
        RECIPE_FORMAT,
        "a recipe",
        "protolyte solve (or one line of protolyte batch)",
    ),
    (
        TITRATION_FORMAT,
        "a titration request",
        "protolyte titrate (or one line of protolyte batch)",
    ),
    (
        DESIGN_FORMAT,
        "a buffer design request",
        "protolyte design (or one line of protolyte batch)",
    ),
    (FIT_FORMAT, "a fit request", "protolyte fit"),
    (
        RESULT_FORMAT,
        "a result document (written by this program)",
        "no command: it is output",
    ),
    (MEASURED_FORMAT, "a measured-titration request", "protolyte analyze"),
    (CALIBRATION_FORMAT, "an electrode calibration", "protolyte calibrate"),
];

/// As [`load`], and when the text is not a valid document of the kind tagged `expected` but
/// its `format` tag names another kind, the error says which kind it is and which command
/// reads it.
///
/// ```
/// use protolyte::document::{TITRATION_FORMAT, TitrationDoc, load_expecting};
/// let dir = std::env::temp_dir().join("protolyte-load-expecting-doc");
/// std::fs::create_dir_all(&dir).unwrap();
/// let p = dir.join("r.json");
/// std::fs::write(&p, r#"{"format": "protolyte-recipe/1", "reagents": []}"#).unwrap();
/// let e = load_expecting::<TitrationDoc>(&p, TITRATION_FORMAT).unwrap_err();
/// assert!(e.to_string().contains("a recipe") && e.to_string().contains("protolyte solve"));
/// ```
pub fn load_expecting<T: DeserializeOwned>(path: impl AsRef<Path>, expected: &str) -> Result<T, DocumentError> {
    let (text, name, is_toml) = load_text(path.as_ref())?;
    let parsed = if is_toml {
        parse_toml(&text, &name)
    } else {
        parse(&text, &name)
    };
    parsed.map_err(|e| match format_tag(&text, is_toml) {
        Some(tag) if tag != expected => match DOCUMENT_KINDS.iter().find(|k| k.0 == tag) {
            Some((_, what, command)) => {
                let want = DOCUMENT_KINDS
                    .iter()
                    .find(|k| k.0 == expected)
                    .map(|k| k.1)
                    .unwrap_or("another kind");
                DocumentError::Field {
                    file: name.clone(),
                    field: "format".into(),
                    message: format!("this is {what} (`{tag}`), not {want} (`{expected}`); it is read by {command}"),
                }
            }
            None => e,
        },
        _ => e,
    })
}

/// The `format` tag of a document's text, when it can be read.
fn format_tag(text: &str, is_toml: bool) -> Option<String> {
    #[derive(serde::Deserialize)]
    struct Tag {
        format: Option<String>,
    }
    let text = without_bom(text);
    let tag: Tag = if is_toml || !looks_like_json(text) {
        toml::from_str(text).ok()?
    } else {
        serde_json::from_str(text).ok()?
    };
    tag.format
}

/// The text of a document, its name for messages, and whether it is TOML by its extension.
fn load_text(path: &Path) -> Result<(String, String, bool), DocumentError> {
    let name = if path == Path::new("-") {
        "<stdin>".to_string()
    } else {
        path.display().to_string()
    };
    let text = read_text(path).map_err(|e| DocumentError::Read {
        file: name.clone(),
        message: e.to_string(),
    })?;
    let text = match text {
        Ok(t) => t,
        Err(()) => {
            return Err(DocumentError::Read {
                file: name,
                message: format!(
                    "the document is longer than {} bytes (1 MiB), the most a document may hold",
                    limits::MAX_DOCUMENT_BYTES
                ),
            });
        }
    };
    let is_toml = path.extension().is_some_and(|e| e.eq_ignore_ascii_case("toml"));
    Ok((text, name, is_toml))
}

/// The text of `path`, or `Err(())` when it is over the size limit (reading stops just past
/// the limit).
fn read_text(path: &Path) -> std::io::Result<Result<String, ()>> {
    use std::io::Read;
    let limit = limits::MAX_DOCUMENT_BYTES as u64 + 1;
    let mut bytes = Vec::new();
    if path == Path::new("-") {
        std::io::stdin().lock().take(limit).read_to_end(&mut bytes)?;
    } else {
        let f = std::fs::File::open(path)?;
        if f.metadata()?.is_dir() {
            return Err(std::io::Error::new(std::io::ErrorKind::IsADirectory, "is a directory"));
        }
        f.take(limit).read_to_end(&mut bytes)?;
    }
    if bytes.len() > limits::MAX_DOCUMENT_BYTES {
        return Ok(Err(()));
    }
    String::from_utf8(bytes).map(Ok).map_err(|e| {
        std::io::Error::new(
            std::io::ErrorKind::InvalidData,
            format!("not UTF-8 text: {}", e.utf8_error()),
        )
    })
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
            let f = shorten(f);
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
