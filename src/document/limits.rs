//! The input limits of the document format and of `batch`.
//!
//! Each bounds the memory and time one document or one batch line can take; past a limit the
//! input is refused with an error that names the field (or the line) and the limit. They are
//! far above what a laboratory recipe, titration or fit needs.
//!
//! ```
//! use protolyte::Catalog;
//! use protolyte::document::limits::MAX_NAME_CHARS;
//! use protolyte::document::{AmountLine, RecipeDoc};
//!
//! let mut doc = RecipeDoc::new();
//! doc.reagents.push(AmountLine::millimolar(&"x".repeat(MAX_NAME_CHARS + 1), 1.0));
//! let err = doc.to_recipe(&Catalog::builtin()).unwrap_err();
//! assert!(err.to_string().contains("reagents[0].reagent"));
//! ```

/// The largest document (`load`, `parse`), in bytes: 1 MiB.
pub const MAX_DOCUMENT_BYTES: usize = 1 << 20;

/// The longest batch line, in bytes without its line end: 1 MiB.
pub const MAX_LINE_BYTES: usize = 1 << 20;

/// The longest name, synonym or formula (of a reagent, family, ion or complex, as defined or
/// as looked up), in characters.
pub const MAX_NAME_CHARS: usize = 200;

/// The most entries in one list of a document: reagent lines of a recipe or solution,
/// definitions of each kind, complexes named, unknowns to estimate, temperatures to compare.
pub const MAX_ENTRIES: usize = 1000;

/// The most parts of one user reagent or complex, synonyms of one definition, or pKa values
/// of one family.
pub const MAX_PARTS: usize = 64;

/// The most points of one titration curve (`points`) or of one measured curve of a fit.
pub const MAX_POINTS: usize = 100_000;

/// The most measured curves in one fit request.
pub const MAX_CURVES: usize = 100;
