//! The native module of the protolyte Python package (`protolyte._native`). The Python layer
//! (`python/protolyte/__init__.py`) gives the typed, documented API; this module runs the
//! library: documents in and out as JSON text, solutions with their sensitivities and
//! uncertainty, and many compositions or pH values solved on several threads with the GIL
//! released (arrays cross as little-endian float64 bytes, which numpy reads without a copy).

use std::sync::Arc;

use protolyte::analysis::{Input, Propagation};
use protolyte::{Equilibrium, System};
use pyo3::create_exception;
use pyo3::exceptions::PyException;
use pyo3::prelude::*;
use pyo3::types::PyBytes;
use serde_json::{Map, Value, json};

#[path = "../../capi/src/engine.rs"]
#[allow(dead_code)]
mod engine;

use engine::{Composition, Failure, Kind};

create_exception!(_native, ProtolyteError, PyException, "Base of every protolyte error.");
create_exception!(
    _native,
    InputError,
    ProtolyteError,
    "A refused value, field or document: the message names the field (and file position for syntax errors)."
);
create_exception!(
    _native,
    DocumentSyntaxError,
    InputError,
    "The document is not valid JSON or TOML, or a value has the wrong type."
);
create_exception!(
    _native,
    UnknownNameError,
    InputError,
    "A name that is not in the catalogue (the message suggests the nearest one)."
);
create_exception!(
    _native,
    NoConvergenceError,
    ProtolyteError,
    "The solver did not converge."
);
create_exception!(
    _native,
    ChemistryError,
    ProtolyteError,
    "Another refusal by the chemistry (an ionic strength or a pH past the solver's domain)."
);
create_exception!(
    _native,
    InternalError,
    ProtolyteError,
    "protolyte failed internally (a bug; please report it with the input)."
);

fn to_py(f: Failure) -> PyErr {
    let m = f.message;
    match f.kind {
        Kind::Syntax => DocumentSyntaxError::new_err(m),
        Kind::Input | Kind::Argument => InputError::new_err(m),
        Kind::UnknownName => UnknownNameError::new_err(m),
        Kind::NoConvergence => NoConvergenceError::new_err(m),
        Kind::Chemistry => ChemistryError::new_err(m),
        Kind::Internal => InternalError::new_err(m),
    }
}

fn kind_name(k: Kind) -> &'static str {
    match k {
        Kind::Syntax => "syntax",
        Kind::Input | Kind::Argument => "input",
        Kind::UnknownName => "unknown-name",
        Kind::NoConvergence => "no-convergence",
        Kind::Chemistry => "chemistry",
        Kind::Internal => "internal",
    }
}

/// Runs `f` with the GIL released and any panic turned into an `InternalError`.
fn detached<T: Send>(py: Python<'_>, f: impl FnOnce() -> Result<T, Failure> + Send) -> PyResult<T> {
    py.allow_threads(|| {
        std::panic::catch_unwind(std::panic::AssertUnwindSafe(f)).unwrap_or_else(|_| {
            Err(Failure::new(
                Kind::Internal,
                "protolyte failed internally (a bug; please report it with the input)",
            ))
        })
    })
    .map_err(to_py)
}

fn floats(bytes: &[u8]) -> PyResult<Vec<f64>> {
    if !bytes.len().is_multiple_of(8) {
        return Err(InputError::new_err(
            "array bytes are not a whole number of float64 values",
        ));
    }
    Ok(bytes
        .chunks_exact(8)
        .map(|c| f64::from_le_bytes([c[0], c[1], c[2], c[3], c[4], c[5], c[6], c[7]]))
        .collect())
}

fn float_bytes<'py>(py: Python<'py>, v: impl Iterator<Item = f64>) -> Bound<'py, PyBytes> {
    let b: Vec<u8> = v.flat_map(f64::to_le_bytes).collect();
    PyBytes::new(py, &b)
}

/// The library's version.
#[pyfunction]
fn version() -> &'static str {
    env!("CARGO_PKG_VERSION")
}

/// Runs a document of any kind (JSON or TOML text) and returns its result document as JSON.
#[pyfunction]
fn run_document(py: Python<'_>, text: String) -> PyResult<String> {
    detached(py, move || engine::run_document(&text))
}

fn info_json(i: &protolyte::DataInfo) -> Value {
    json!({
        "kind": i.kind.name(),
        "name": i.name,
        "synonyms": i.synonyms,
        "formula": i.formula,
        "summary": i.summary,
        "source": i.source,
        "from_memory": i.from_memory,
        "charge": i.charge,
        "pka": i.steps.iter().map(|s| s.pka).collect::<Vec<_>>(),
        "forms": i.forms.iter().map(|f| json!({"name": f.name, "protons": f.protons, "charge": f.charge})).collect::<Vec<_>>(),
        "molar_mass_g_per_mol": i.molar_mass_g_per_mol,
    })
}

/// Catalogue entries whose name, synonym or formula contains `query` (empty: every entry),
/// as a JSON list.
#[pyfunction]
fn catalog_search(query: &str) -> PyResult<String> {
    let cat = engine::catalog();
    let found: Vec<Value> = if query.is_empty() {
        cat.entries().iter().map(info_json).collect()
    } else {
        cat.search(query).into_iter().map(info_json).collect()
    };
    Ok(Value::Array(found).to_string())
}

/// The catalogue entry of a reagent (or else a family, ion or complex) named `name`.
#[pyfunction]
fn catalog_entry(name: &str) -> PyResult<String> {
    use protolyte::DataKind;
    let cat = engine::catalog();
    let mut first_err = None;
    for kind in [DataKind::Reagent, DataKind::Protolyte, DataKind::Ion, DataKind::Complex] {
        match cat.info(kind, name) {
            Ok(i) => return Ok(info_json(i).to_string()),
            Err(e) => {
                first_err.get_or_insert(e);
            }
        }
    }
    Err(to_py(first_err.map(Failure::from).unwrap_or_else(|| {
        Failure::new(Kind::UnknownName, format!("unknown name `{name}`"))
    })))
}

/// Of `labels`, the one `name` names: the same text, or an older spelling of a species
/// name ("CO32-" for "CO3^2-", "CaHCO3^+" for "CaHCO3+"); None when none is named.
#[pyfunction]
fn species_label(labels: Vec<String>, name: &str) -> Option<String> {
    engine::species_label(&labels, name).map(str::to_string)
}

/// A solved recipe: the compiled system and its equilibrium, for the result document, the
/// sensitivities and the propagation of uncertainty.
#[pyclass(frozen, module = "protolyte._native")]
struct Solution {
    system: Arc<System>,
    eq: Arc<Equilibrium>,
    name: Option<String>,
}

#[pymethods]
impl Solution {
    /// Compiles and solves a recipe document (JSON or TOML text).
    #[new]
    fn new(py: Python<'_>, text: String) -> PyResult<Self> {
        let (doc, system, eq) = detached(py, move || {
            let doc = engine::recipe_doc(&text)?;
            let (s, e) = engine::solve_recipe_doc(&doc)?;
            Ok((doc, s, e))
        })?;
        Ok(Solution {
            system: Arc::new(system),
            eq: Arc::new(eq),
            name: doc.name,
        })
    }

    /// The result document as JSON.
    fn result_json(&self) -> PyResult<String> {
        let r = protolyte::document::SolveResult::from_equilibrium(&self.eq).named(self.name.clone());
        serde_json::to_string(&r).map_err(|e| InternalError::new_err(e.to_string()))
    }

    /// The sensitivities of the pH as JSON: d pH/d total (mol/kg) of each component, d pH/d
    /// pKa of each family step, d pH/d log K of each species, buffer capacity.
    fn sensitivities_json(&self, py: Python<'_>) -> PyResult<String> {
        let (system, eq) = (self.system.clone(), self.eq.clone());
        detached(py, move || {
            let s = eq.sensitivities(&system)?;
            let mut totals = Map::new();
            for (i, c) in system.components().iter().enumerate().skip(1) {
                if let Some(v) = s.dph_dtotal_molal(i) {
                    totals.insert(c.name.to_string(), json!(v));
                }
            }
            let mut pka = Map::new();
            for (f, fam) in system.families().iter().enumerate() {
                let steps: Vec<f64> = (0..).map_while(|k| s.dph_dpka(f, k)).collect();
                pka.insert(fam.protolyte.name().to_string(), json!(steps));
            }
            let mut logk = Map::new();
            for (i, sp) in system.species().iter().enumerate() {
                if let Some(v) = s.dph_dlog10k(i) {
                    logk.insert(sp.name.to_string(), json!(v));
                }
            }
            Ok(json!({
                "buffer_capacity_mol_per_kg": s.buffer_capacity_molal(),
                "dph_dstrong_base_per_mol_per_kg": s.dph_dstrong_base_molal(),
                "dph_dtotal_per_mol_per_kg": totals,
                "dph_dpka": pka,
                "dph_dlog10k": logk,
            })
            .to_string())
        })
    }

    /// Propagates standard deviations (JSON list of {"kind": "pka"|"total"|"log10_k"|
    /// "strong_base", "name", "step", "sd"}) and optional correlations (list of [i, j, r]) to
    /// the pH and every species; returns JSON.
    fn propagate_json(&self, py: Python<'_>, inputs: String, correlations: String) -> PyResult<String> {
        let (system, eq) = (self.system.clone(), self.eq.clone());
        detached(py, move || {
            let bad = |m: String| Failure::new(Kind::Input, m);
            let list: Vec<Value> = serde_json::from_str(&inputs).map_err(|e| bad(format!("inputs: {e}")))?;
            let mut p = Propagation::new();
            for (i, v) in list.iter().enumerate() {
                let name = v.get("name").and_then(Value::as_str).unwrap_or("");
                let sd = v
                    .get("sd")
                    .and_then(Value::as_f64)
                    .ok_or_else(|| bad(format!("inputs[{i}].sd: a number is required")))?;
                let input = match v.get("kind").and_then(Value::as_str) {
                    Some("pka") => {
                        let step = v.get("step").and_then(Value::as_u64).unwrap_or(0);
                        Input::pka(name, usize::try_from(step).unwrap_or(usize::MAX))
                    }
                    Some("total") => Input::total(name),
                    Some("log10_k") => Input::log10_k(name),
                    Some("strong_base") => Input::StrongBase,
                    other => {
                        return Err(bad(format!(
                            "inputs[{i}].kind: {other:?} is not one of \"pka\", \"total\", \"log10_k\", \"strong_base\""
                        )));
                    }
                };
                p.add(input, sd).map_err(|e| bad(format!("inputs[{i}]: {e}")))?;
            }
            let corr: Vec<(usize, usize, f64)> =
                serde_json::from_str(&correlations).map_err(|e| bad(format!("correlations: {e}")))?;
            for (i, j, r) in corr {
                p.correlate(i, j, r)?;
            }
            let u = p.propagate(&system, &eq)?;
            Ok(json!({
                "ph": u.ph,
                "ph_sd": u.ph_sd,
                "ph_gradient": u.ph_gradient,
                "ph_variance_shares": u.ph_variance_shares,
                "species": u.species.iter().map(|s| json!({
                    "name": &*s.name, "log10_molal": s.log10_molal, "log10_molal_sd": s.log10_molal_sd
                })).collect::<Vec<_>>(),
            })
            .to_string())
        })
    }
}

/// A recipe compiled once and solved for many compositions.
#[pyclass(frozen, module = "protolyte._native")]
struct Batch {
    comp: Arc<Composition>,
}

/// The outputs of a many-row solve: pH, p[H], ionic strength, residual, warning counts
/// (float64 bytes each), species molalities (rows × species) and the failed rows.
type Solved<'py> = (
    Bound<'py, PyBytes>,
    Bound<'py, PyBytes>,
    Bound<'py, PyBytes>,
    Bound<'py, PyBytes>,
    Bound<'py, PyBytes>,
    Bound<'py, PyBytes>,
    Vec<(usize, &'static str, String)>,
);

#[pymethods]
impl Batch {
    /// Compiles the reagents, complexes and conditions of a recipe document.
    #[new]
    fn new(py: Python<'_>, text: String) -> PyResult<Self> {
        let comp = detached(py, move || Composition::new(&engine::recipe_doc(&text)?))?;
        Ok(Batch { comp: Arc::new(comp) })
    }

    /// Reagent names (the amount columns).
    fn reagent_names(&self) -> Vec<String> {
        self.comp.reagent_names().to_vec()
    }

    /// Component names but H⁺ (the total columns).
    fn total_names(&self) -> Vec<String> {
        self.comp.system().components()[1..]
            .iter()
            .map(|c| c.name.to_string())
            .collect()
    }

    /// Species names.
    fn species_names(&self) -> Vec<String> {
        self.comp
            .system()
            .species()
            .iter()
            .map(|s| s.name.to_string())
            .collect()
    }

    /// Solves the rows of `values` (row-major float64 bytes: amounts in mol/L when `amounts`,
    /// else totals in mol/kg) on `threads` threads (0: one per core) with the GIL released.
    fn solve<'py>(
        &self,
        py: Python<'py>,
        values: &[u8],
        amounts: bool,
        threads: usize,
        species: bool,
    ) -> PyResult<Solved<'py>> {
        let input = floats(values)?;
        let comp = self.comp.clone();
        let rows = detached(py, move || comp.solve_many(&input, amounts, threads, species))?;
        let ns = self.comp.system().species().len();
        let nan = f64::NAN;
        let get = |f: fn(&engine::Row) -> f64| rows.iter().map(move |r| r.as_ref().map_or(nan, f));
        let failed: Vec<(usize, &'static str, String)> = rows
            .iter()
            .enumerate()
            .filter_map(|(i, r)| r.as_ref().err().map(|e| (i, kind_name(e.kind), e.message.clone())))
            .collect();
        let sp = rows.iter().flat_map(|r| match r {
            Ok(row) if species => row.species_molal.clone(),
            Err(_) if species => vec![nan; ns],
            _ => Vec::new(),
        });
        Ok((
            float_bytes(py, get(|r| r.ph)),
            float_bytes(py, get(|r| r.p_h_molal)),
            float_bytes(py, get(|r| r.ionic_strength_molal)),
            float_bytes(py, get(|r| r.max_residual)),
            float_bytes(py, get(|r| f64::from(r.warnings))),
            float_bytes(py, sp),
            failed,
        ))
    }
}

/// Strong base (mol/kg; negative: strong acid) and buffer capacity (mol/kg per pH) that bring
/// the recipe to each pH of `ph` (float64 bytes), on `threads` threads with the GIL released.
#[pyfunction]
#[allow(clippy::type_complexity)]
fn ph_sweep<'py>(
    py: Python<'py>,
    text: String,
    ph: &[u8],
    threads: usize,
) -> PyResult<(
    Bound<'py, PyBytes>,
    Bound<'py, PyBytes>,
    Vec<(usize, &'static str, String)>,
)> {
    let ph = floats(ph)?;
    let out = detached(py, move || {
        let curve = engine::capacity_curve(&engine::recipe_doc(&text)?)?;
        Ok(engine::ph_sweep(&curve, &ph, threads))
    })?;
    let nan = f64::NAN;
    let failed = out
        .iter()
        .enumerate()
        .filter_map(|(i, r)| r.as_ref().err().map(|e| (i, kind_name(e.kind), e.message.clone())))
        .collect();
    Ok((
        float_bytes(py, out.iter().map(|r| r.as_ref().map_or(nan, |p| p.0))),
        float_bytes(py, out.iter().map(|r| r.as_ref().map_or(nan, |p| p.1))),
        failed,
    ))
}

/// The native module.
#[pymodule]
#[pyo3(name = "_native")]
fn native(m: &Bound<'_, PyModule>) -> PyResult<()> {
    let py = m.py();
    m.add_function(wrap_pyfunction!(version, m)?)?;
    m.add_function(wrap_pyfunction!(run_document, m)?)?;
    m.add_function(wrap_pyfunction!(catalog_search, m)?)?;
    m.add_function(wrap_pyfunction!(catalog_entry, m)?)?;
    m.add_function(wrap_pyfunction!(ph_sweep, m)?)?;
    m.add_function(wrap_pyfunction!(species_label, m)?)?;
    m.add_class::<Solution>()?;
    m.add_class::<Batch>()?;
    m.add("ProtolyteError", py.get_type::<ProtolyteError>())?;
    m.add("InputError", py.get_type::<InputError>())?;
    m.add("DocumentSyntaxError", py.get_type::<DocumentSyntaxError>())?;
    m.add("UnknownNameError", py.get_type::<UnknownNameError>())?;
    m.add("NoConvergenceError", py.get_type::<NoConvergenceError>())?;
    m.add("ChemistryError", py.get_type::<ChemistryError>())?;
    m.add("InternalError", py.get_type::<InternalError>())?;
    Ok(())
}
