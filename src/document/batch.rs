//! Batch runs (feature `batch`): JSON Lines of recipe documents in, JSON Lines of results out.
//!
//! The input is read in chunks of lines (constant memory whatever its length); each chunk is
//! cut into blocks solved in parallel (rayon) and written back in input order. The next chunk
//! is read, and the records of the previous one written, while a chunk is solved. Within a
//! block, recipes with the same reagent names, complexes and conditions share one compiled
//! [`System`] (as a template): only the totals are reset from the amounts
//! ([`System::set_total_molal`]), and each solve starts from
//! the previous one of its kind in the block ([`Solver::solve_from`]). A record without the
//! full result is solved in the template's [`Workspace`](crate::solve::Workspace)
//! ([`Solver::solve_ph`]), without building the full result, wherever that result would carry
//! no warning (otherwise, and with `full`, the line is solved in full).
//! Blocks are fixed by line numbers, so the output does not depend on the thread schedule.
//!
//! Every non-blank input line gives exactly one output line, in input order: a [`BatchRecord`]
//! or, for a line that cannot be read or solved, a [`BatchErrorRecord`]; the other lines still
//! run. Lines longer than [`MAX_LINE_BYTES`](super::limits::MAX_LINE_BYTES) are skipped while
//! they are read (never held in memory) and get an error record. Each line's work runs under
//! [`std::panic::catch_unwind`]: should the program fail on a line (a bug), that line gets an
//! error record of kind `"internal"` and the run goes on.

use std::borrow::Cow;
use std::io::{self, BufRead, Write};
use std::sync::Mutex;

use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use super::AmountLine;
use super::input::{AmountForm, amount_of};
use super::{DocumentError, RecipeDoc, SolveResult};
use crate::{Catalog, Conditions, Equilibrium, Error, Reagent, Solver, System};

/// Lines per block (one rayon task, one warm-start chain).
const BLOCK: usize = 1024;
/// Compiled systems kept per block.
const MAX_TEMPLATES: usize = 64;

/// Options of a batch run.
///
/// ```
/// use protolyte::document::batch::BatchOptions;
/// let o = BatchOptions::default();
/// assert!(!o.full);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct BatchOptions {
    /// Write the full result (every species and family) in each record.
    pub full: bool,
    /// Lines read per chunk at most (at least one block); the first chunks are shorter (two
    /// blocks, then four times the last), so that the workers start early.
    pub chunk_lines: usize,
}

impl Default for BatchOptions {
    fn default() -> Self {
        BatchOptions {
            full: false,
            chunk_lines: 64 * BLOCK,
        }
    }
}

/// The result record of one input line.
///
/// ```
/// use protolyte::document::batch::BatchRecord;
/// let r: BatchRecord = serde_json::from_str(
///     r#"{"line":1,"ph":7.0,"p_h_molal":7.0,"ionic_strength_mol_per_kg":1e-7,"max_balance_residual":0.0}"#)?;
/// assert_eq!(r.line, 1);
/// # Ok::<(), serde_json::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BatchRecord {
    /// Input line number, 1-based.
    pub line: usize,
    /// The recipe's `name`, when it had one.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub name: Option<String>,
    /// The pH convention of `ph`, when it is not the model's own γ(H⁺): `"bates-guggenheim"`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ph_convention: Option<String>,
    /// pH.
    pub ph: f64,
    /// −log₁₀ of the H⁺ molality.
    pub p_h_molal: f64,
    /// Ionic strength, mol/kg.
    pub ionic_strength_mol_per_kg: f64,
    /// Largest relative residual of every equation solved: the charge balance, the mass
    /// balances, the ionic-strength equation and any phase relation held (a fixed pH or
    /// partial pressure, a solid present).
    pub max_balance_residual: f64,
    /// For a water analysis (its charge balance closed on an ion): the ion-balance error of
    /// the water as entered, solids that formed counted back, 100·(Σcations − Σanions)/(Σcations
    /// + Σanions) in meq/kg, % (see [`SolveResult::with_ion_balance_of`]).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ion_balance_error_percent: Option<f64>,
    /// Warnings, as sentences.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub warnings: Vec<String>,
    /// The full result (with `full`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub result: Option<SolveResult>,
}

/// The record of an input line that could not be read or solved.
///
/// ```
/// use protolyte::document::batch::BatchErrorRecord;
/// let r: BatchErrorRecord = serde_json::from_str(r#"{"line":3,"kind":"syntax","error":"column 7: expected value"}"#)?;
/// assert_eq!(r.kind, "syntax");
/// # Ok::<(), serde_json::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BatchErrorRecord {
    /// Input line number, 1-based.
    pub line: usize,
    /// The recipe's `name`, when it could be read.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub name: Option<String>,
    /// `"syntax"` (not JSON or wrong types), `"input"` (a refused field or name, or a line
    /// over the length limit), `"no-convergence"` or `"chemistry"` (another refusal by the
    /// solver), `"internal"` (the program failed on this line: a bug, to be reported).
    pub kind: String,
    /// The message.
    pub error: String,
}

/// What a batch run did.
///
/// ```
/// use protolyte::document::batch::BatchSummary;
/// assert_eq!(BatchSummary::default().failed, 0);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct BatchSummary {
    /// Records written (non-blank input lines).
    pub records: usize,
    /// Of which error records.
    pub failed: usize,
}

/// A batch line as read on the fast path: names borrowed from the input text where they can
/// be (no allocation per name). The fields are those of [`RecipeDoc`]; a line with
/// `definitions` or phase requests (`fixed_ph`, `partial_pressures`, `allow_solids`, a fixed
/// alkalinity or DIC, `charge_balance_on`) is read again as a [`RecipeDoc`] and compiled on
/// its own.
#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct FastLine<'a> {
    #[serde(borrow, default)]
    format: Option<Cow<'a, str>>,
    #[serde(borrow, default)]
    name: Option<Cow<'a, str>>,
    #[serde(default)]
    temperature_celsius: Option<f64>,
    #[serde(default)]
    activity: Option<super::ActivityDoc>,
    #[serde(default)]
    ph_convention: Option<super::PhConventionDoc>,
    #[serde(borrow, default)]
    reagents: Vec<FastAmount<'a>>,
    #[serde(default)]
    complexes: Vec<String>,
    #[serde(default)]
    include_catalog_complexes: bool,
    #[serde(default)]
    definitions: Option<serde::de::IgnoredAny>,
    #[serde(default)]
    fixed_ph: Option<serde::de::IgnoredAny>,
    #[serde(default)]
    partial_pressures: Option<serde::de::IgnoredAny>,
    #[serde(default)]
    allow_solids: Option<serde::de::IgnoredAny>,
    #[serde(default)]
    fixed_alkalinity_meq_per_kg: Option<serde::de::IgnoredAny>,
    #[serde(default)]
    fixed_dic_mmol_per_kg: Option<serde::de::IgnoredAny>,
    #[serde(default)]
    charge_balance_on: Option<serde::de::IgnoredAny>,
}

/// One line of a [`FastLine`]: the fields of [`AmountLine`] with a borrowed name.
#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct FastAmount<'a> {
    #[serde(borrow)]
    reagent: Cow<'a, str>,
    #[serde(default)]
    molar: Option<f64>,
    #[serde(default)]
    millimolar: Option<f64>,
    #[serde(default)]
    molal: Option<f64>,
    #[serde(default)]
    grams: Option<f64>,
    #[serde(default)]
    stock_molar: Option<f64>,
    #[serde(default)]
    aliquot_ml: Option<f64>,
    #[serde(default)]
    final_volume_ml: Option<f64>,
}

impl FastAmount<'_> {
    /// The line as an [`AmountLine`]; the reagent's name is copied only when asked for (an
    /// empty `String` does not allocate).
    fn to_line(&self, with_name: bool) -> AmountLine {
        AmountLine {
            reagent: if with_name {
                self.reagent.to_string()
            } else {
                String::new()
            },
            molar: self.molar,
            millimolar: self.millimolar,
            molal: self.molal,
            grams: self.grams,
            stock_molar: self.stock_molar,
            aliquot_ml: self.aliquot_ml,
            final_volume_ml: self.final_volume_ml,
        }
    }
}

impl FastLine<'_> {
    /// The line as a recipe document (for compiling a new system).
    fn to_doc(&self) -> RecipeDoc {
        RecipeDoc {
            format: self.format.as_ref().map(|f| f.to_string()),
            name: self.name.as_ref().map(|n| n.to_string()),
            temperature_celsius: self.temperature_celsius,
            activity: self.activity,
            ph_convention: self.ph_convention,
            reagents: self.reagents.iter().map(|l| l.to_line(true)).collect(),
            complexes: self.complexes.clone(),
            include_catalog_complexes: self.include_catalog_complexes,
            definitions: None,
            fixed_ph: None,
            partial_pressures: Vec::new(),
            allow_solids: None,
            fixed_alkalinity_meq_per_kg: None,
            fixed_dic_mmol_per_kg: None,
            charge_balance_on: None,
        }
    }
}

/// A compiled system re-used for recipes with the same names and conditions.
#[derive(Clone)]
struct Template {
    temperature_bits: u64,
    activity: Option<super::ActivityDoc>,
    ph_convention: Option<super::PhConventionDoc>,
    include_catalog: bool,
    complexes: Vec<String>,
    names: Vec<String>,
    reagents: Vec<Reagent>,
    /// (component, count) contributions of one unit of each line.
    parts: Vec<Vec<(usize, f64)>>,
    sys: System,
    totals: Vec<f64>,
    warm: Option<Equilibrium>,
    /// Buffers and warm start of the lean solves (records without the full result).
    ws: crate::solve::Workspace,
}

impl Template {
    fn matches(&self, line: &FastLine) -> bool {
        self.temperature_bits == line.temperature_celsius.unwrap_or(25.0).to_bits()
            && self.activity.unwrap_or_default() == line.activity.unwrap_or_default()
            && self.ph_convention.unwrap_or_default() == line.ph_convention.unwrap_or_default()
            && self.include_catalog == line.include_catalog_complexes
            && self.complexes == line.complexes
            && self.names.len() == line.reagents.len()
            && self.names.iter().zip(&line.reagents).all(|(a, b)| *a == b.reagent)
    }

    fn build(doc: &RecipeDoc, catalog: &Catalog) -> Result<(Template, Conditions), DocumentError> {
        let (recipe, conditions) = doc.to_recipe(catalog)?;
        let sys = recipe
            .compile(&conditions)
            .map_err(|e| super::field_error("reagents", e))?;
        let reagents: Vec<Reagent> = recipe.entries().iter().map(|e| e.reagent.clone()).collect();
        let parts = reagents.iter().map(|r| sys.component_counts(r)).collect();
        let totals = vec![0.0; sys.components().len()];
        Ok((
            Template {
                temperature_bits: doc.temperature_celsius.unwrap_or(25.0).to_bits(),
                activity: doc.activity,
                ph_convention: doc.ph_convention,
                include_catalog: doc.include_catalog_complexes,
                complexes: doc.complexes.clone(),
                names: doc.reagents.iter().map(|l| l.reagent.clone()).collect(),
                reagents,
                parts,
                sys,
                totals,
                warm: None,
                ws: crate::solve::Workspace::new(),
            },
            conditions,
        ))
    }

    /// Sets the totals from the document's amounts (the same sums, in the same order, as
    /// [`Recipe::compile`](crate::Recipe::compile)).
    fn retotal(&mut self, doc: &FastLine) -> Result<(), DocumentError> {
        self.totals.iter_mut().for_each(|t| *t = 0.0);
        let rho = self.sys.water_density_kg_per_l();
        for (i, fast) in doc.reagents.iter().enumerate() {
            // The path and the name are only formatted for an error message.
            let path = || format!("reagents[{i}]");
            let form: AmountForm = match fast.to_line(false).form("") {
                Ok(f) => f,
                Err(_) => {
                    let line = fast.to_line(true);
                    return Err(match line.form(&path()) {
                        Err(e) => e,
                        Ok(_) => super::field_error(path(), "invalid amount"),
                    });
                }
            };
            let amount =
                amount_of(form, &self.reagents[i]).map_err(|(f, e)| fast.to_line(false).amount_error(&path(), f, e))?;
            let m = amount.molal_value(rho);
            for &(c, n) in &self.parts[i] {
                self.totals[c] += m * n;
            }
        }
        for c in 1..self.totals.len() {
            self.sys
                .set_total_molal(c, self.totals[c])
                .map_err(|e| super::field_error("reagents", e))?;
        }
        Ok(())
    }
}

/// Per-block state: compiled systems by names and conditions.
struct Block<'a> {
    catalog: &'a Catalog,
    /// Compiled systems shared by every block of the run (copied into a block on first use,
    /// so that names are looked up and recipes compiled once per run, not once per block).
    shared: &'a Mutex<Vec<Template>>,
    templates: Vec<Template>,
    solver: Solver,
}

/// A solved line: the full result, or (for a record without it, where the full result would
/// carry no warning) the numbers the record gives, from a solve in the template's workspace.
enum Solved {
    /// The equilibrium, and for a line read in full (definitions or phase requests) its
    /// recipe, which the result reads back as the solve command does
    /// ([`SolveResult::with_recipe`]: the ion balance as entered and the recipe's warnings).
    Full(Box<Equilibrium>, Option<Box<crate::Recipe>>),
    Lean(crate::solve::PhSolution, crate::PhConvention),
}

enum Failure {
    Syntax(String),
    Input(Option<String>, DocumentError),
    Solve(Option<String>, Error),
}

impl Block<'_> {
    /// A copy of the run's compiled system for `doc`, compiling it on first use.
    fn shared_template(&self, line: &FastLine) -> Result<Template, DocumentError> {
        if let Ok(shared) = self.shared.lock()
            && let Some(t) = shared.iter().find(|t| t.matches(line))
        {
            return Ok(t.clone());
        }
        let (t, _) = Template::build(&line.to_doc(), self.catalog)?;
        if let Ok(mut shared) = self.shared.lock()
            && shared.len() < MAX_TEMPLATES
        {
            shared.push(t.clone());
        }
        Ok(t)
    }

    /// Solves one line: its name, the template it used (to keep the result as the next warm
    /// start) and the result (in full where `full` asks for it or a warning may come with it).
    fn solve_line(&mut self, text: &str, full: bool) -> Result<(Option<String>, Option<usize>, Solved), Failure> {
        let syntax = |e: serde_json::Error| {
            Failure::Syntax(format!(
                "column {}: {}",
                e.column().max(1),
                super::shorten_message(super::strip_position(&e.to_string()))
            ))
        };
        let doc: FastLine = serde_json::from_str(text).map_err(syntax)?;
        let name = doc.name.as_ref().map(|n| n.to_string());
        super::check_format(doc.format.as_deref(), super::RECIPE_FORMAT, false)
            .map_err(|e| Failure::Input(name.clone(), e))?;
        if doc.reagents.len() > super::limits::MAX_ENTRIES {
            // Refused before any copy or look-up (the same message as the document path).
            return Err(Failure::Input(
                name,
                super::field_error(
                    "reagents",
                    format!(
                        "{} reagent lines: a document may give at most {}",
                        doc.reagents.len(),
                        super::limits::MAX_ENTRIES
                    ),
                ),
            ));
        }
        if doc.definitions.is_some()
            || doc.fixed_ph.is_some()
            || doc.partial_pressures.is_some()
            || doc.allow_solids.is_some()
            || doc.fixed_alkalinity_meq_per_kg.is_some()
            || doc.fixed_dic_mmol_per_kg.is_some()
            || doc.charge_balance_on.is_some()
        {
            // Definitions of its own, or phase requests (a fixed pH or partial pressure,
            // solids allowed to form): read in full and compiled on its own.
            let full: RecipeDoc = serde_json::from_str(text).map_err(syntax)?;
            let (recipe, conditions) = full
                .to_recipe(self.catalog)
                .map_err(|e| Failure::Input(name.clone(), e))?;
            let eq = recipe
                .compile(&conditions)
                .and_then(|s| self.solver.solve(&s))
                .map_err(|e| Failure::Solve(name.clone(), e))?;
            return Ok((name, None, Solved::Full(Box::new(eq), Some(Box::new(recipe)))));
        }
        let idx = match self.templates.iter().position(|t| t.matches(&doc)) {
            Some(i) => i,
            None => {
                let t = self
                    .shared_template(&doc)
                    .map_err(|e| Failure::Input(name.clone(), e))?;
                if self.templates.len() >= MAX_TEMPLATES {
                    self.templates.remove(0);
                }
                self.templates.push(t);
                self.templates.len() - 1
            }
        };
        let t = &mut self.templates[idx];
        t.retotal(&doc).map_err(|e| Failure::Input(name.clone(), e))?;
        if !full {
            match self.solver.solve_ph_unwarned(&t.sys, &mut t.ws) {
                Ok(Some(s)) => return Ok((name, Some(idx), Solved::Lean(s, t.sys.ph_convention))),
                Ok(None) => {}
                Err(e) => return Err(Failure::Solve(name, e)),
            }
        }
        let eq = match &t.warm {
            Some(w) => self.solver.solve_from(&t.sys, w),
            None => self.solver.solve(&t.sys),
        }
        .map_err(|e| Failure::Solve(name.clone(), e))?;
        t.ws.start_from(&eq);
        Ok((name, Some(idx), Solved::Full(Box::new(eq), None)))
    }

    /// Runs a titration or design request line (`kind` its format tag) and appends its
    /// record; true when it failed.
    fn run_request(&self, line_no: usize, text: &str, kind: &str, out: &mut Vec<u8>) -> bool {
        let syntax = |e: serde_json::Error| {
            Failure::Syntax(format!(
                "column {}: {}",
                e.column().max(1),
                super::shorten_message(super::strip_position(&e.to_string()))
            ))
        };
        let outcome: Result<(Option<String>, &str, serde_json::Value), Failure> = (|| {
            if kind == super::TITRATION_FORMAT {
                let doc: super::TitrationDoc = serde_json::from_str(text).map_err(syntax)?;
                let name = doc.name.clone();
                let run = super::run_titration(&doc, self.catalog).map_err(|e| request_failure(name.clone(), e))?;
                let v = serde_json::to_value(&run.result)
                    .map_err(|e| Failure::Syntax(format!("the result could not be written: {e}")))?;
                Ok((name, "titration", v))
            } else {
                let doc: super::DesignDoc = serde_json::from_str(text).map_err(syntax)?;
                let name = doc.name.clone();
                let r = super::run_design(&doc, self.catalog).map_err(|e| request_failure(name.clone(), e))?;
                let v = serde_json::to_value(&r)
                    .map_err(|e| Failure::Syntax(format!("the result could not be written: {e}")))?;
                Ok((name, "design", v))
            }
        })();
        let failed = match outcome {
            Ok((name, kind, result)) => {
                write_record(
                    out,
                    &super::RequestRecord {
                        line: line_no,
                        name,
                        kind: kind.into(),
                        result,
                    },
                );
                false
            }
            Err(f) => {
                write_failure(out, line_no, f);
                true
            }
        };
        out.push(b'\n');
        failed
    }

    /// Solves one line and appends its record (with a newline) to `out`; true when it
    /// failed.
    fn run_line(&mut self, line_no: usize, text: &str, full: bool, out: &mut Vec<u8>) -> bool {
        let convention_name = |c: crate::PhConvention| match c {
            crate::PhConvention::Model => None,
            crate::PhConvention::BatesGuggenheim => Some("bates-guggenheim".to_string()),
        };
        if let Some(kind) = request_kind(text) {
            return self.run_request(line_no, text, kind, out);
        }
        let failed = match self.solve_line(text, full) {
            Ok((name, _, Solved::Lean(s, convention))) => {
                let rec = BatchRecord {
                    line: line_no,
                    name,
                    ph_convention: convention_name(convention),
                    ph: s.ph,
                    p_h_molal: s.p_h_molal,
                    ionic_strength_mol_per_kg: s.ionic_strength_molal,
                    max_balance_residual: s.max_residual,
                    ion_balance_error_percent: None,
                    warnings: Vec::new(),
                    result: None,
                };
                write_record(out, &rec);
                false
            }
            Ok((name, idx, Solved::Full(eq, recipe))) => {
                // A line read in full: what its recipe adds, as the solve command reports it
                // (the ion balance of a water analysis as entered, solids included; the
                // recipe's own warnings).
                let (result, warnings, ion_balance_error_percent) = match recipe {
                    Some(recipe) => {
                        let r = SolveResult::from_equilibrium(&eq).with_recipe(&recipe);
                        let e = r.ion_balance.as_ref().map(|b| b.error_percent);
                        let w = r.warnings.clone();
                        (full.then_some(r), w, e)
                    }
                    None => (
                        full.then(|| SolveResult::from_equilibrium(&eq)),
                        eq.warnings().iter().map(|w| w.to_string()).collect(),
                        None,
                    ),
                };
                let rec = BatchRecord {
                    line: line_no,
                    name,
                    ph_convention: convention_name(eq.ph_convention()),
                    ph: eq.ph(),
                    p_h_molal: eq.p_h_molal(),
                    ionic_strength_mol_per_kg: eq.ionic_strength_molal(),
                    max_balance_residual: eq.residuals().max_relative(),
                    ion_balance_error_percent,
                    warnings,
                    result,
                };
                write_record(out, &rec);
                if let Some(t) = idx.and_then(|i| self.templates.get_mut(i)) {
                    t.warm = Some(*eq);
                }
                false
            }
            Err(f) => {
                write_failure(out, line_no, f);
                true
            }
        };
        out.push(b'\n');
        failed
    }
}

/// The format tag of a titration or design request line, when the line is one (a recipe
/// line, the common case, costs one substring search).
fn request_kind(text: &str) -> Option<&'static str> {
    if !(text.contains(super::TITRATION_FORMAT) || text.contains(super::DESIGN_FORMAT)) {
        return None;
    }
    #[derive(Deserialize)]
    struct Tag {
        format: Option<String>,
    }
    let tag: Tag = serde_json::from_str(text).ok()?;
    match tag.format.as_deref() {
        Some(super::TITRATION_FORMAT) => Some(super::TITRATION_FORMAT),
        Some(super::DESIGN_FORMAT) => Some(super::DESIGN_FORMAT),
        _ => None,
    }
}

fn request_failure(name: Option<String>, e: super::RequestError) -> Failure {
    match e {
        super::RequestError::Input(d) => Failure::Input(name, d),
        super::RequestError::Chemistry(c) => Failure::Solve(name, c),
    }
}

/// Appends the error record of a failed line (without the newline).
fn write_failure(out: &mut Vec<u8>, line_no: usize, f: Failure) {
    let (name, kind, error) = match f {
        Failure::Syntax(m) => (None, "syntax", m),
        Failure::Input(n, e) => (n, "input", e.to_string()),
        Failure::Solve(n, e) => {
            let kind = if matches!(e, Error::NoConvergence { .. }) {
                "no-convergence"
            } else {
                "chemistry"
            };
            (n, kind, e.to_string())
        }
    };
    let error = error.strip_prefix(": ").map(str::to_string).unwrap_or(error);
    write_record(
        out,
        &BatchErrorRecord {
            line: line_no,
            name,
            kind: kind.into(),
            error,
        },
    );
}

fn write_record<T: Serialize>(out: &mut Vec<u8>, rec: &T) {
    if serde_json::to_writer(&mut *out, rec).is_err() {
        out.extend_from_slice(b"{\"kind\":\"internal\",\"error\":\"record could not be written\"}");
    }
}

/// Runs a batch: reads JSON Lines of recipe documents from `input`, writes one JSON line per
/// non-blank input line to `output`, in input order. `progress` is called after each chunk
/// with the bytes and lines read so far. Only I/O errors stop the run; a bad line gives an
/// error record, and so does a line longer than [`MAX_LINE_BYTES`](super::limits::MAX_LINE_BYTES)
/// (it is skipped without being held in memory) or a line on which the program fails
/// internally (kind `"internal"`: a bug, reported in the record instead of ending the run).
/// A read error is told from a write error by [`is_read_error`].
///
/// ```
/// use protolyte::Catalog;
/// use protolyte::document::batch::{BatchOptions, run};
///
/// let input = concat!(
///     r#"{"reagents": [{"reagent": "acetic acid", "millimolar": 10}]}"#, "\n",
///     "not json\n",
///     r#"{"reagents": [{"reagent": "acetic acid", "millimolar": 1}]}"#, "\n",
/// );
/// let mut out = Vec::new();
/// let s = run(input.as_bytes(), &mut out, &Catalog::builtin(), &BatchOptions::default(), |_, _| {})?;
/// assert_eq!((s.records, s.failed), (3, 1));
/// let text = String::from_utf8(out).unwrap();
/// let lines: Vec<&str> = text.lines().collect();
/// assert!(lines[0].starts_with(r#"{"line":1,"ph":3.3"#));
/// assert!(lines[1].contains(r#""kind":"syntax""#));
/// assert!(lines[2].starts_with(r#"{"line":3,"#));
/// # Ok::<(), std::io::Error>(())
/// ```
pub fn run<R: BufRead + Send, W: Write>(
    input: R,
    output: W,
    catalog: &Catalog,
    options: &BatchOptions,
    progress: impl FnMut(u64, usize),
) -> io::Result<BatchSummary> {
    let shared = Mutex::new(Vec::new());
    let full = options.full;
    let make = || {
        let mut block = Block {
            catalog,
            shared: &shared,
            templates: Vec::new(),
            solver: Solver::default(),
        };
        move |line_no: usize, text: &str, out: &mut Vec<u8>| block.run_line(line_no, text, full, out)
    };
    let sizes = Sizes {
        block: BLOCK,
        chunk_lines: options.chunk_lines.max(BLOCK),
        record_bytes: if full { 2048 } else { 160 },
    };
    run_with(input, output, sizes, progress, &make)
}

/// True when an error returned by [`run`] came from reading the input (not from writing the
/// output).
///
/// ```
/// use protolyte::Catalog;
/// use protolyte::document::batch::{BatchOptions, is_read_error, run};
///
/// struct Broken;
/// impl std::io::Read for Broken {
///     fn read(&mut self, _: &mut [u8]) -> std::io::Result<usize> {
///         Err(std::io::Error::other("disk gone"))
///     }
/// }
/// let input = std::io::BufReader::new(Broken);
/// let e = run(input, std::io::sink(), &Catalog::builtin(), &BatchOptions::default(), |_, _| {}).unwrap_err();
/// assert!(is_read_error(&e));
/// ```
pub fn is_read_error(e: &io::Error) -> bool {
    e.get_ref().is_some_and(|inner| inner.is::<ReadFailure>())
}

/// A read error, wrapped so that the caller can tell it from a write error.
#[derive(Debug)]
struct ReadFailure(io::Error);

impl std::fmt::Display for ReadFailure {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        self.0.fmt(f)
    }
}

impl std::error::Error for ReadFailure {
    fn source(&self) -> Option<&(dyn std::error::Error + 'static)> {
        Some(&self.0)
    }
}

fn read_failure(e: io::Error) -> io::Error {
    io::Error::new(e.kind(), ReadFailure(e))
}

/// Block and chunk sizes of a run (small ones in the tests).
#[derive(Debug, Clone, Copy)]
struct Sizes {
    /// Lines per block (one task, one worker).
    block: usize,
    /// Lines per chunk (read while the previous chunk is solved).
    chunk_lines: usize,
    /// Expected bytes per record (output buffer reservation).
    record_bytes: usize,
}

/// Bytes read per chunk at most (with lines near the line limit, fewer lines are read per
/// chunk, so that memory stays bounded whatever the input).
const CHUNK_BYTES: u64 = 64 << 20;

/// One input line as read: its bytes, or its length when it was over the limit (and skipped).
#[derive(Default)]
struct RawLine {
    bytes: Vec<u8>,
    overlong: Option<u64>,
}

/// The batch driver: reads lines, hands each non-blank one to a worker made by `make` (one
/// per block), and writes the records in input order. A worker appends exactly one record
/// and a newline to `out` and returns true when the record is an error record. Whatever a
/// worker does (a panic, a malformed record), every non-blank line gets exactly one record:
/// a panic becomes an `"internal"` error record and the block's worker is made afresh.
fn run_with<R, W, M, F>(
    mut input: R,
    mut output: W,
    sizes: Sizes,
    mut progress: impl FnMut(u64, usize),
    make: &M,
) -> io::Result<BatchSummary>
where
    R: BufRead + Send,
    W: Write,
    M: Fn() -> F + Sync,
    F: FnMut(usize, &str, &mut Vec<u8>) -> bool,
{
    let chunk = sizes.chunk_lines.max(sizes.block).max(1);
    let mut summary = BatchSummary::default();
    let mut first_line = 0usize;
    let mut bytes = 0u64;
    let mut current: Vec<RawLine> = Vec::with_capacity(chunk);
    let mut next: Vec<RawLine> = Vec::with_capacity(chunk);
    // The first chunk is read before anything else can run: a short one (two blocks) gets
    // the workers going sooner. Each next chunk is four times the last (up to `chunk`), so
    // that it is read in the time the workers take over the last one, and the chunks (where
    // a worker may wait for the other's last block) are few. Every size is a whole number of
    // blocks, so the blocks start at the same line numbers whatever the sizes.
    let mut size = (2 * sizes.block.max(1)).min(chunk);
    let (mut n, mut got, mut eof) = read_chunk(&mut input, &mut current, size)?;
    bytes += got;
    // The records of the chunk solved last, written while the next one is solved.
    let mut pending: Vec<(Vec<u8>, usize, usize)> = Vec::new();
    while n > 0 {
        // Solve this chunk and read the next one on the workers (a helper thread waits for
        // them) while this thread writes the records of the previous chunk.
        size = (4 * size).min(chunk);
        let (solved, written) = std::thread::scope(|scope| {
            let work = scope.spawn(|| {
                rayon::join(
                    || {
                        if eof {
                            Ok((0, 0, true))
                        } else {
                            read_chunk(&mut input, &mut next, size)
                        }
                    },
                    || solve_chunk(&current[..n], first_line, sizes, make),
                )
            });
            let written = write_results(&mut output, &pending, &mut summary);
            let solved = work.join().unwrap_or_else(|payload| std::panic::resume_unwind(payload));
            (solved, written)
        });
        written?;
        let (read, results) = solved;
        pending = results;
        first_line += n;
        progress(bytes, first_line);
        (n, got, eof) = read?;
        bytes += got;
        std::mem::swap(&mut current, &mut next);
    }
    write_results(&mut output, &pending, &mut summary)?;
    output.flush()?;
    Ok(summary)
}

/// Writes the records of solved blocks in order and counts them.
fn write_results<W: Write>(
    output: &mut W,
    results: &[(Vec<u8>, usize, usize)],
    summary: &mut BatchSummary,
) -> io::Result<()> {
    for (out, records, failed) in results {
        output.write_all(out)?;
        summary.records += records;
        summary.failed += failed;
    }
    Ok(())
}

/// Reads up to `chunk` lines (and about [`CHUNK_BYTES`]) into `lines`, buffers re-used:
/// (lines read, bytes, end of input).
fn read_chunk<R: BufRead>(input: &mut R, lines: &mut Vec<RawLine>, chunk: usize) -> io::Result<(usize, u64, bool)> {
    let mut n = 0;
    let mut bytes = 0u64;
    while n < chunk && bytes < CHUNK_BYTES {
        if lines.len() <= n {
            lines.push(RawLine::default());
        }
        let line = &mut lines[n];
        // A buffer that held a long line is not kept at that size.
        if line.bytes.capacity() > 1 << 16 {
            line.bytes = Vec::new();
        }
        let got = read_bounded_line(input, line, super::limits::MAX_LINE_BYTES).map_err(read_failure)?;
        if got == 0 {
            return Ok((n, bytes, true));
        }
        bytes += got;
        n += 1;
    }
    Ok((n, bytes, false))
}

/// Reads one line into `line`, keeping at most `max` bytes before the newline: a longer line
/// is consumed to its end but only its length is kept. Returns the bytes consumed (0 at the
/// end of the input).
fn read_bounded_line<R: BufRead>(input: &mut R, line: &mut RawLine, max: usize) -> io::Result<u64> {
    line.bytes.clear();
    line.overlong = None;
    let mut consumed = 0u64;
    let mut over = false;
    loop {
        let avail = match input.fill_buf() {
            Ok(b) => b,
            Err(e) if e.kind() == io::ErrorKind::Interrupted => continue,
            Err(e) => return Err(e),
        };
        if avail.is_empty() {
            break;
        }
        let (take, done) = match avail.iter().position(|&b| b == b'\n') {
            Some(i) => (i + 1, true),
            None => (avail.len(), false),
        };
        if !over {
            if line.bytes.len() + take > max.saturating_add(2) {
                over = true;
                line.bytes = Vec::new();
            } else {
                line.bytes.extend_from_slice(&avail[..take]);
            }
        }
        input.consume(take);
        consumed += take as u64;
        if done {
            break;
        }
    }
    if over {
        // The line end is counted in; the limit is far from it.
        line.overlong = Some(consumed);
        return Ok(consumed);
    }
    let mut len = line.bytes.len();
    if line.bytes.last() == Some(&b'\n') {
        len -= 1;
        if len > 0 && line.bytes[len - 1] == b'\r' {
            len -= 1;
        }
    }
    if len > max {
        line.bytes.clear();
        line.overlong = Some(len as u64);
    }
    Ok(consumed)
}

/// The message of a panic payload (its first 300 characters).
fn panic_message(payload: &(dyn std::any::Any + Send)) -> String {
    let m: &str = if let Some(s) = payload.downcast_ref::<&str>() {
        s
    } else if let Some(s) = payload.downcast_ref::<String>() {
        s
    } else {
        "(no message)"
    };
    match m.char_indices().nth(300) {
        Some((i, _)) => format!("{}…", &m[..i]),
        None => m.to_string(),
    }
}

/// Appends an error record and its newline.
fn error_line(out: &mut Vec<u8>, line: usize, kind: &str, error: String) {
    write_record(
        out,
        &BatchErrorRecord {
            line,
            name: None,
            kind: kind.into(),
            error,
        },
    );
    out.push(b'\n');
}

/// Drops what a worker wrote for this line (from `mark` on) and writes one `"internal"` error
/// record in its place: the worker panicked or did not write exactly one record.
fn internal_error_line(out: &mut Vec<u8>, mark: usize, line: usize, error: String) {
    out.truncate(mark);
    error_line(out, line, "internal", error);
}

/// Solves a chunk in parallel blocks: per block, (records as JSON Lines, records, failures).
fn solve_chunk<M, F>(lines: &[RawLine], first_line: usize, sizes: Sizes, make: &M) -> Vec<(Vec<u8>, usize, usize)>
where
    M: Fn() -> F + Sync,
    F: FnMut(usize, &str, &mut Vec<u8>) -> bool,
{
    let block = sizes.block.max(1);
    lines
        .par_chunks(block)
        .enumerate()
        .map(|(k, block_lines)| {
            let mut worker = make();
            let mut out = Vec::with_capacity(block_lines.len() * sizes.record_bytes);
            let (mut records, mut failed) = (0, 0);
            for (j, raw) in block_lines.iter().enumerate() {
                let line_no = first_line + k * block + j + 1;
                if let Some(len) = raw.overlong {
                    records += 1;
                    failed += 1;
                    error_line(
                        &mut out,
                        line_no,
                        "input",
                        format!(
                            "the line is {len} bytes long; a batch line may hold at most {} bytes (1 MiB)",
                            super::limits::MAX_LINE_BYTES
                        ),
                    );
                    continue;
                }
                let text = match std::str::from_utf8(&raw.bytes) {
                    // A byte-order mark (at the start of a file written by some editors) is
                    // not part of the document.
                    Ok(t) => t.trim().trim_start_matches('\u{feff}').trim_start(),
                    Err(e) => {
                        records += 1;
                        failed += 1;
                        error_line(&mut out, line_no, "syntax", format!("not UTF-8 text: {e}"));
                        continue;
                    }
                };
                if text.is_empty() {
                    continue;
                }
                records += 1;
                let mark = out.len();
                let outcome = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| worker(line_no, text, &mut out)));
                match outcome {
                    Ok(f) => {
                        // Exactly one record, ended by a newline (records hold no raw newline).
                        let newlines = out[mark..].iter().filter(|&&b| b == b'\n').count();
                        if newlines == 1 && out.last() == Some(&b'\n') {
                            failed += usize::from(f);
                        } else {
                            failed += 1;
                            internal_error_line(
                                &mut out,
                                mark,
                                line_no,
                                "internal error (a bug in protolyte; please report it): the record could not be written".into(),
                            );
                        }
                    }
                    Err(payload) => {
                        failed += 1;
                        internal_error_line(
                            &mut out,
                            mark,
                            line_no,
                            format!(
                                "internal error (a bug in protolyte; please report it with this line): {}",
                                panic_message(payload.as_ref())
                            ),
                        );
                        // The worker's state may be half-updated: start a fresh one.
                        worker = make();
                    }
                }
            }
            (out, records, failed)
        })
        .collect()
}

#[cfg(test)]
mod tests {
    //! The batch driver under injected failures: whatever the per-line worker does (succeed,
    //! fail, panic, write a malformed record), every non-blank line gets exactly one record,
    //! in input order, and the run ends normally.

    use super::*;
    use proptest::prelude::*;

    /// What the injected worker does with a line.
    #[derive(Debug, Clone, Copy)]
    enum Act {
        Ok,
        Fail,
        Panic,
        /// Writes two records (a worker bug the driver must catch).
        Twice,
        /// Writes nothing.
        Nothing,
        /// A blank line: no record.
        Blank,
    }

    /// The payload of an injected panic (silenced by the hook below, other panics are not).
    struct Injected;

    fn quiet_injected_panics() {
        static ONCE: std::sync::Once = std::sync::Once::new();
        ONCE.call_once(|| {
            let previous = std::panic::take_hook();
            std::panic::set_hook(Box::new(move |info| {
                if info.payload().downcast_ref::<Injected>().is_none() {
                    previous(info);
                }
            }));
        });
    }

    fn act() -> impl Strategy<Value = Act> {
        prop_oneof![
            10 => Just(Act::Ok),
            3 => Just(Act::Fail),
            2 => Just(Act::Panic),
            1 => Just(Act::Twice),
            1 => Just(Act::Nothing),
            1 => Just(Act::Blank),
        ]
    }

    fn input_of(acts: &[Act]) -> String {
        acts.iter()
            .enumerate()
            .map(|(i, a)| match a {
                Act::Blank => "  \n".to_string(),
                Act::Ok => format!("ok {i}\n"),
                Act::Fail => format!("fail {i}\n"),
                Act::Panic => format!("panic {i}\n"),
                Act::Twice => format!("twice {i}\n"),
                Act::Nothing => format!("nothing {i}\n"),
            })
            .collect()
    }

    /// A worker that counts the lines it saw since it was made (to check that a fresh one
    /// is made after a panic) and acts as the line says.
    fn make() -> impl FnMut(usize, &str, &mut Vec<u8>) -> bool {
        let mut seen = 0usize;
        move |line, text, out| {
            seen += 1;
            let (what, _) = text.split_once(' ').unwrap_or((text, ""));
            match what {
                "ok" => {
                    out.extend_from_slice(format!("{{\"line\":{line},\"seen\":{seen}}}\n").as_bytes());
                    false
                }
                "fail" => {
                    error_line(out, line, "input", "injected".into());
                    true
                }
                "panic" => {
                    out.extend_from_slice(b"{\"half\":");
                    std::panic::panic_any(Injected)
                }
                "twice" => {
                    out.extend_from_slice(format!("{{\"line\":{line}}}\n{{\"line\":{line}}}\n").as_bytes());
                    false
                }
                _ => false,
            }
        }
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(256))]

        #[test]
        fn every_line_gets_one_record_in_order_whatever_the_worker_does(
            acts in prop::collection::vec(act(), 0..80),
            block in 1usize..7,
            chunk in 1usize..20,
        ) {
            quiet_injected_panics();
            let input = input_of(&acts);
            let mut out = Vec::new();
            let sizes = Sizes { block, chunk_lines: chunk, record_bytes: 16 };
            let s = run_with(input.as_bytes(), &mut out, sizes, |_, _| {}, &make).unwrap();
            let text = String::from_utf8(out).unwrap();
            let records: Vec<serde_json::Value> =
                text.lines().map(|l| serde_json::from_str(l).unwrap()).collect();
            let expected: Vec<(usize, Act)> = acts
                .iter()
                .enumerate()
                .filter(|(_, a)| !matches!(a, Act::Blank))
                .map(|(i, a)| (i + 1, *a))
                .collect();
            prop_assert_eq!(records.len(), expected.len());
            prop_assert_eq!(s.records, expected.len());
            let failures = expected.iter().filter(|(_, a)| !matches!(a, Act::Ok)).count();
            prop_assert_eq!(s.failed, failures);
            for (r, (line, a)) in records.iter().zip(&expected) {
                prop_assert_eq!(r["line"].as_u64(), Some(*line as u64));
                let kind = r["kind"].as_str();
                match a {
                    Act::Ok => prop_assert_eq!(kind, None),
                    Act::Fail => prop_assert_eq!(kind, Some("input")),
                    _ => prop_assert_eq!(kind, Some("internal")),
                }
                if matches!(a, Act::Panic) {
                    prop_assert!(r["error"].as_str().unwrap().contains("internal error"));
                }
            }
            // After a panic the block's worker is made afresh: the next line is its first.
            for w in expected.windows(2) {
                let (prev, next) = (w[0], w[1]);
                let c = chunk.max(block);
                let (i, j) = (prev.0 - 1, next.0 - 1);
                let same_block = i / c == j / c && (i % c) / block == (j % c) / block;
                if matches!(prev.1, Act::Panic) && matches!(next.1, Act::Ok) && same_block {
                    let r = records.iter().find(|r| r["line"].as_u64() == Some(next.0 as u64)).unwrap();
                    prop_assert_eq!(r["seen"].as_u64(), Some(1));
                }
            }
        }
    }

    #[test]
    fn a_long_line_is_skipped_while_read_and_the_next_is_intact() {
        let max = 16;
        let text = format!("{}\nshort\r\n{}\nlast", "a".repeat(100), "b".repeat(max));
        let mut input = std::io::BufReader::with_capacity(7, text.as_bytes());
        let mut line = RawLine::default();
        assert_eq!(read_bounded_line(&mut input, &mut line, max).unwrap(), 101);
        assert_eq!(line.overlong, Some(101));
        assert!(line.bytes.capacity() < 64);
        read_bounded_line(&mut input, &mut line, max).unwrap();
        assert_eq!((line.bytes.as_slice(), line.overlong), (&b"short\r\n"[..], None));
        // Exactly at the limit: kept.
        read_bounded_line(&mut input, &mut line, max).unwrap();
        assert_eq!((line.bytes.len(), line.overlong), (max + 1, None));
        read_bounded_line(&mut input, &mut line, max).unwrap();
        assert_eq!(line.bytes.as_slice(), b"last");
        assert_eq!(read_bounded_line(&mut input, &mut line, max).unwrap(), 0);
    }
}
