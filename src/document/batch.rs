//! Batch runs (feature `cli`): JSON Lines of recipe documents in, JSON Lines of results out.
//!
//! The input is read in chunks of lines (constant memory whatever its length); each chunk is
//! cut into blocks solved in parallel (rayon) and written back in input order. Within a
//! block, recipes with the same reagent names, complexes and conditions share one compiled
//! [`System`] (as a template): only the totals are reset from the amounts
//! ([`System::set_total_molal`]), and each solve starts from
//! the previous one of its kind in the block ([`Solver::solve_from`]).
//! Blocks are fixed by line numbers, so the output does not depend on the thread schedule.
//!
//! Every non-blank input line gives one output line: a [`BatchRecord`] or, for a line that
//! cannot be read or solved, a [`BatchErrorRecord`]; the other lines still run.

use std::borrow::Cow;
use std::io::{self, BufRead, Write};
use std::sync::Mutex;

use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use super::AmountLine;
use super::input::{AmountForm, amount_of};
use super::{DocumentError, RecipeDoc, SolveResult};
use crate::{Catalog, Conditions, Constituent, Equilibrium, Error, Reagent, Solver, System};

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
    /// Lines read per chunk (at least one block).
    pub chunk_lines: usize,
}

impl Default for BatchOptions {
    fn default() -> Self {
        BatchOptions {
            full: false,
            chunk_lines: 16 * BLOCK,
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
    /// pH.
    pub ph: f64,
    /// −log₁₀ of the H⁺ molality.
    pub p_h_molal: f64,
    /// Ionic strength, mol/kg.
    pub ionic_strength_mol_per_kg: f64,
    /// Largest relative charge or mass-balance residual.
    pub max_balance_residual: f64,
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
    /// `"syntax"` (not JSON or wrong types), `"input"` (a refused field or name),
    /// `"no-convergence"` or `"chemistry"` (another refusal by the solver).
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
/// `definitions` is read again as a [`RecipeDoc`] and compiled on its own.
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
    #[serde(borrow, default)]
    reagents: Vec<FastAmount<'a>>,
    #[serde(default)]
    complexes: Vec<String>,
    #[serde(default)]
    include_catalog_complexes: bool,
    #[serde(default)]
    definitions: Option<serde::de::IgnoredAny>,
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
            reagents: self.reagents.iter().map(|l| l.to_line(true)).collect(),
            complexes: self.complexes.clone(),
            include_catalog_complexes: self.include_catalog_complexes,
            definitions: None,
        }
    }
}

/// A compiled system re-used for recipes with the same names and conditions.
#[derive(Clone)]
struct Template {
    temperature_bits: u64,
    activity: Option<super::ActivityDoc>,
    include_catalog: bool,
    complexes: Vec<String>,
    names: Vec<String>,
    reagents: Vec<Reagent>,
    /// (component, count) contributions of one unit of each line.
    parts: Vec<Vec<(usize, f64)>>,
    sys: System,
    totals: Vec<f64>,
    warm: Option<Equilibrium>,
}

impl Template {
    fn matches(&self, line: &FastLine) -> bool {
        self.temperature_bits == line.temperature_celsius.unwrap_or(25.0).to_bits()
            && self.activity.unwrap_or_default() == line.activity.unwrap_or_default()
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
        let parts = reagents
            .iter()
            .map(|r| {
                r.parts()
                    .iter()
                    .filter_map(|(c, n)| {
                        let name = match c {
                            Constituent::Form { protolyte, .. } => protolyte.name(),
                            Constituent::Ion(ion) => ion.name(),
                            Constituent::Proton | Constituent::Hydroxide => return None,
                        };
                        sys.component_index(name).map(|i| (i, f64::from(*n)))
                    })
                    .collect()
            })
            .collect();
        let totals = vec![0.0; sys.components().len()];
        Ok((
            Template {
                temperature_bits: doc.temperature_celsius.unwrap_or(25.0).to_bits(),
                activity: doc.activity,
                include_catalog: doc.include_catalog_complexes,
                complexes: doc.complexes.clone(),
                names: doc.reagents.iter().map(|l| l.reagent.clone()).collect(),
                reagents,
                parts,
                sys,
                totals,
                warm: None,
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
            let amount = amount_of(form, &self.reagents[i]).map_err(|e| super::field_error(path(), e))?;
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
    /// start) and the equilibrium.
    fn solve_line(&mut self, text: &str) -> Result<(Option<String>, Option<usize>, Equilibrium), Failure> {
        let syntax = |e: serde_json::Error| {
            Failure::Syntax(format!(
                "column {}: {}",
                e.column().max(1),
                super::strip_position(&e.to_string())
            ))
        };
        let doc: FastLine = serde_json::from_str(text).map_err(syntax)?;
        let name = doc.name.as_ref().map(|n| n.to_string());
        super::check_format(doc.format.as_deref(), super::RECIPE_FORMAT, false)
            .map_err(|e| Failure::Input(name.clone(), e))?;
        if doc.definitions.is_some() {
            // Definitions of its own: read in full and compiled on its own.
            let full: RecipeDoc = serde_json::from_str(text).map_err(syntax)?;
            let (recipe, conditions) = full
                .to_recipe(self.catalog)
                .map_err(|e| Failure::Input(name.clone(), e))?;
            let eq = recipe
                .compile(&conditions)
                .and_then(|s| self.solver.solve(&s))
                .map_err(|e| Failure::Solve(name.clone(), e))?;
            return Ok((name, None, eq));
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
        let eq = match &t.warm {
            Some(w) => self.solver.solve_from(&t.sys, w),
            None => self.solver.solve(&t.sys),
        }
        .map_err(|e| Failure::Solve(name.clone(), e))?;
        Ok((name, Some(idx), eq))
    }

    /// Solves one line and appends its record (with a newline) to `out`; true when it
    /// failed.
    fn run_line(&mut self, line_no: usize, text: &str, full: bool, out: &mut Vec<u8>) -> bool {
        let failed = match self.solve_line(text) {
            Ok((name, idx, eq)) => {
                let warnings: Vec<String> = eq.warnings().iter().map(|w| w.to_string()).collect();
                let rec = BatchRecord {
                    line: line_no,
                    name,
                    ph: eq.ph(),
                    p_h_molal: eq.p_h_molal(),
                    ionic_strength_mol_per_kg: eq.ionic_strength_molal(),
                    max_balance_residual: eq.residuals().max_balance_relative(),
                    warnings,
                    result: full.then(|| SolveResult::from_equilibrium(&eq)),
                };
                write_record(out, &rec);
                if let Some(t) = idx.and_then(|i| self.templates.get_mut(i)) {
                    t.warm = Some(eq);
                }
                false
            }
            Err(f) => {
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
                true
            }
        };
        out.push(b'\n');
        failed
    }
}

fn write_record<T: Serialize>(out: &mut Vec<u8>, rec: &T) {
    if serde_json::to_writer(&mut *out, rec).is_err() {
        out.extend_from_slice(b"{\"kind\":\"internal\",\"error\":\"record could not be written\"}");
    }
}

/// Runs a batch: reads JSON Lines of recipe documents from `input`, writes one JSON line per
/// non-blank input line to `output`, in input order. `progress` is called after each chunk
/// with the bytes and lines read so far. Only I/O errors stop the run; a bad line gives an
/// error record.
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
    mut input: R,
    mut output: W,
    catalog: &Catalog,
    options: &BatchOptions,
    mut progress: impl FnMut(u64, usize),
) -> io::Result<BatchSummary> {
    let chunk = options.chunk_lines.max(BLOCK);
    let shared = Mutex::new(Vec::new());
    let mut summary = BatchSummary::default();
    let mut first_line = 0usize;
    let mut bytes = 0u64;
    let mut current: Vec<Vec<u8>> = Vec::with_capacity(chunk);
    let mut next: Vec<Vec<u8>> = Vec::with_capacity(chunk);
    let (mut n, mut got, mut eof) = read_chunk(&mut input, &mut current, chunk)?;
    bytes += got;
    while n > 0 {
        // Solve this chunk while the next one is read.
        let (read, results) = rayon::join(
            || {
                if eof {
                    Ok((0, 0, true))
                } else {
                    read_chunk(&mut input, &mut next, chunk)
                }
            },
            || solve_chunk(&current[..n], first_line, catalog, &shared, options.full),
        );
        for (out, records, failed) in &results {
            output.write_all(out)?;
            summary.records += records;
            summary.failed += failed;
        }
        first_line += n;
        progress(bytes, first_line);
        (n, got, eof) = read?;
        bytes += got;
        std::mem::swap(&mut current, &mut next);
    }
    output.flush()?;
    Ok(summary)
}

/// Reads up to `chunk` lines into `lines` (buffers re-used): (lines read, bytes, end of input).
fn read_chunk<R: BufRead>(input: &mut R, lines: &mut Vec<Vec<u8>>, chunk: usize) -> io::Result<(usize, u64, bool)> {
    let mut n = 0;
    let mut bytes = 0u64;
    while n < chunk {
        if lines.len() <= n {
            lines.push(Vec::with_capacity(256));
        }
        let buf = &mut lines[n];
        buf.clear();
        let got = input.read_until(b'\n', buf)?;
        if got == 0 {
            return Ok((n, bytes, true));
        }
        bytes += got as u64;
        n += 1;
    }
    Ok((n, bytes, false))
}

/// Solves a chunk in parallel blocks: per block, (records as JSON Lines, records, failures).
fn solve_chunk(
    lines: &[Vec<u8>],
    first_line: usize,
    catalog: &Catalog,
    shared: &Mutex<Vec<Template>>,
    full: bool,
) -> Vec<(Vec<u8>, usize, usize)> {
    lines
        .par_chunks(BLOCK)
        .enumerate()
        .map(|(k, block_lines)| {
            let mut block = Block {
                catalog,
                shared,
                templates: Vec::new(),
                solver: Solver::default(),
            };
            let mut out = Vec::with_capacity(block_lines.len() * if full { 2048 } else { 160 });
            let (mut records, mut failed) = (0, 0);
            for (j, raw) in block_lines.iter().enumerate() {
                let line_no = first_line + k * BLOCK + j + 1;
                let text = match std::str::from_utf8(raw) {
                    Ok(t) => t.trim(),
                    Err(e) => {
                        records += 1;
                        failed += 1;
                        write_record(
                            &mut out,
                            &BatchErrorRecord {
                                line: line_no,
                                name: None,
                                kind: "syntax".into(),
                                error: format!("not UTF-8 text: {e}"),
                            },
                        );
                        out.push(b'\n');
                        continue;
                    }
                };
                if text.is_empty() {
                    continue;
                }
                records += 1;
                if block.run_line(line_no, text, full, &mut out) {
                    failed += 1;
                }
            }
            (out, records, failed)
        })
        .collect()
}
