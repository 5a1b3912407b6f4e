//! Titration and design requests run to their result documents: the code that
//! `protolyte titrate`, `protolyte design` and `protolyte batch` share.

use serde::{Deserialize, Serialize};

use super::input::{DesignDoc, TitrationDoc};
use super::output::{DesignResult, TitrationResult};
use super::{DocumentError, RESULT_FORMAT};
use crate::analysis::endpoints::DEFAULT_STEEP_FRACTION;
use crate::analysis::{EquivalencePoint, TitrationPoint, indicators};
use crate::{Catalog, Error, PhConvention};

/// Why a request could not be run: the document is refused, or the chemistry is.
#[derive(Debug, thiserror::Error)]
pub enum RequestError {
    /// A refused document (a field, a name, a limit).
    #[error(transparent)]
    Input(#[from] DocumentError),
    /// A refusal or failure of the computation itself.
    #[error(transparent)]
    Chemistry(#[from] Error),
}

/// A titration request run: the result document and the library's curve and equivalence
/// points (all of them, also those past the end volume), for plotting.
#[derive(Debug, Clone)]
pub struct TitrationRun {
    /// The result document.
    pub result: TitrationResult,
    /// The curve.
    pub curve: Vec<TitrationPoint>,
    /// Every equivalence point, with its verdict.
    pub equivalence_points: Vec<EquivalencePoint>,
}

/// Runs a titration request: the curve (uniform or adaptive, as asked), the equivalence
/// points judged by the request's criterion, the half-equivalence points, and notes (a curve
/// that stops before its first equivalence point).
///
/// ```
/// use protolyte::Catalog;
/// use protolyte::document::{TitrationDoc, parse, run_titration};
/// let doc: TitrationDoc = parse(r#"{"format": "protolyte-titration/1",
///   "analyte": {"volume_ml": 25, "reagents": [{"reagent": "acetic acid", "molar": 0.1}]},
///   "titrant": {"reagents": [{"reagent": "sodium hydroxide", "molar": 0.1}]},
///   "end_volume_ml": 10}"#, "t.json")?;
/// let run = run_titration(&doc, &Catalog::builtin())?;
/// assert!(run.result.equivalence_points.is_empty());
/// assert!(run.result.notes[0].contains("before its first equivalence point"));
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn run_titration(doc: &TitrationDoc, catalog: &Catalog) -> Result<TitrationRun, RequestError> {
    let t = doc.to_titration(catalog)?;
    let curve = match doc.uniform_points()? {
        Some(n) => t.curve_uniform(doc.end_volume()?, n)?,
        None => t.curve_adaptive(&doc.stepping()?)?,
    };
    let criterion = doc.endpoint_criterion()?;
    let eqs = t.equivalence_points_judged(DEFAULT_STEEP_FRACTION, indicators(), &criterion)?;
    let halves = t.half_equivalence_points()?;
    let end = doc.end_volume_ml;
    let conditions = doc.conditions()?;
    let mut notes = Vec::new();
    if let Some(first) = eqs.first()
        && first.volume_ml > end
    {
        notes.push(format!(
            "the curve stops at {end} mL, before its first equivalence point ({:.4} mL): raise end_volume_ml to see it",
            first.volume_ml
        ));
    }
    let result = TitrationResult {
        format: RESULT_FORMAT.into(),
        name: doc.name.clone(),
        ph_convention: match conditions.ph_convention {
            PhConvention::Model => None,
            PhConvention::BatesGuggenheim => Some("bates-guggenheim".into()),
        },
        analyte_volume_ml: t.analyte_volume().milliliters_value(),
        points: curve.iter().map(Into::into).collect(),
        equivalence_points: eqs.iter().filter(|e| e.volume_ml <= end).map(Into::into).collect(),
        half_equivalence_points: halves.iter().filter(|h| h.volume_ml <= end).map(Into::into).collect(),
        notes,
    };
    Ok(TitrationRun {
        result,
        curve,
        equivalence_points: eqs,
    })
}

/// Runs a design request to its result document.
///
/// ```
/// use protolyte::Catalog;
/// use protolyte::document::{DesignDoc, load, run_design};
/// let doc: DesignDoc = load("examples/tris_buffer_design.json")?;
/// let r = run_design(&doc, &Catalog::builtin())?;
/// assert!((r.check_ph - 8.0).abs() < 1e-6);
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn run_design(doc: &DesignDoc, catalog: &Catalog) -> Result<DesignResult, RequestError> {
    let spec = doc.to_spec(catalog)?;
    let conditions = doc.conditions()?;
    let r = spec.design()?;
    let mut result = DesignResult::from_recipe(&r, &conditions);
    result.name = doc.name.clone();
    Ok(result)
}

/// The batch record of a titration or design request line: `kind` is `"titration"` or
/// `"design"` and `result` the whole result document.
///
/// ```
/// use protolyte::document::RequestRecord;
/// let r: RequestRecord = serde_json::from_str(r#"{"line": 2, "kind": "design", "result": {}}"#)?;
/// assert_eq!(r.kind, "design");
/// # Ok::<(), serde_json::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RequestRecord {
    /// Input line number, 1-based.
    pub line: usize,
    /// The request's `name`, when it had one.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub name: Option<String>,
    /// `"titration"` or `"design"`.
    pub kind: String,
    /// The result document (a `TitrationResult` or a `DesignResult`).
    pub result: serde_json::Value,
}
