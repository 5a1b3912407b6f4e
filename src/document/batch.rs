//! Batch runs (feature `batch`): JSON Lines of recipe documents in, JSON Lines of results out.
//!
//! The input is read in blocks of lines by a reader thread, each block solved on the rayon
//! pool as soon as it is read and its records written by the calling thread, in input order,
//! as soon as the blocks before it are written (constant memory whatever the input's length:
//! at most [`BatchOptions::chunk_lines`] lines are read and not yet written). Within a
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
    /// Lines read ahead of the writing at most (in whole blocks, at least two): bounds the
    /// memory a run holds, whatever the length of the input or the time one block takes.
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

/// The common shape of a batch line, read without serde: a JSON object whose keys are those
/// of [`FastLine`] with plain values (strings without escapes, numbers, `true`/`false`, an
/// empty `complexes` list), and no definitions or phase requests. Any other line (an escape,
/// `null`, a repeated or unknown key, a phase request, a malformed line) gives `None` and is
/// read by serde as before, so that every line reads, and fails, exactly as on the serde path.
/// Numbers follow the JSON grammar and are converted by [`str::parse`], correctly rounded as
/// serde_json's `float_roundtrip` conversion is.
fn fast_line(text: &str) -> Option<FastLine<'_>> {
    let mut s = Scan {
        text,
        b: text.as_bytes(),
        i: 0,
    };
    let mut line = FastLine {
        format: None,
        name: None,
        temperature_celsius: None,
        activity: None,
        ph_convention: None,
        reagents: Vec::with_capacity(8),
        complexes: Vec::new(),
        include_catalog_complexes: false,
        definitions: None,
        fixed_ph: None,
        partial_pressures: None,
        allow_solids: None,
        fixed_alkalinity_meq_per_kg: None,
        fixed_dic_mmol_per_kg: None,
        charge_balance_on: None,
    };
    s.object(|s, key| {
        Some(match key {
            "format" => {
                line.format = Some(Cow::Borrowed(s.string()?));
                1
            }
            "name" => {
                line.name = Some(Cow::Borrowed(s.string()?));
                2
            }
            "temperature_celsius" => {
                line.temperature_celsius = Some(s.number()?);
                4
            }
            "activity" => {
                line.activity = Some(named(s.string()?)?);
                8
            }
            "ph_convention" => {
                line.ph_convention = Some(named(s.string()?)?);
                16
            }
            "reagents" => {
                s.reagents(&mut line.reagents)?;
                32
            }
            "complexes" => {
                // Only an empty list (a list of names is read by serde).
                s.eat(b'[')?;
                s.eat(b']')?;
                64
            }
            "include_catalog_complexes" => {
                line.include_catalog_complexes = s.boolean()?;
                128
            }
            _ => return None,
        })
    })?;
    s.ws();
    (s.i == s.b.len()).then_some(line)
}

/// The index of the first `"`, `\\` or control character (below 0x20) in `s`, eight bytes
/// at a time (the zero-byte test of [`find_newline`], and its "byte below n" form
/// `(w − n·0x01…01) & !w & 0x80…80`, whose lowest set bit is likewise exact).
fn string_end(s: &[u8]) -> Option<usize> {
    const ONES: u64 = 0x0101_0101_0101_0101;
    const HIGH: u64 = 0x8080_8080_8080_8080;
    let mut words = s.chunks_exact(8);
    let mut base = 0;
    for word in &mut words {
        let mut bytes = [0u8; 8];
        bytes.copy_from_slice(word);
        let w = u64::from_le_bytes(bytes);
        let q = w ^ (ONES * b'"' as u64);
        let b = w ^ (ONES * b'\\' as u64);
        let hit = (q.wrapping_sub(ONES) & !q) | (b.wrapping_sub(ONES) & !b) | (w.wrapping_sub(ONES * 0x20) & !w);
        let hit = hit & HIGH;
        if hit != 0 {
            return Some(base + (hit.trailing_zeros() / 8) as usize);
        }
        base += 8;
    }
    words
        .remainder()
        .iter()
        .position(|&c| c == b'"' || c == b'\\' || c < 0x20)
        .map(|i| base + i)
}

/// Exact powers of ten (every one up to 10²² is a `f64`).
const POW10: [f64; 23] = [
    1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20,
    1e21, 1e22,
];

/// A cursor over a batch line for [`fast_line`].
struct Scan<'a> {
    text: &'a str,
    b: &'a [u8],
    i: usize,
}

impl<'a> Scan<'a> {
    /// Skips JSON whitespace.
    fn ws(&mut self) {
        while let Some(b' ' | b'\t' | b'\n' | b'\r') = self.b.get(self.i) {
            self.i += 1;
        }
    }

    /// The next byte after whitespace, not consumed.
    fn peek(&mut self) -> Option<u8> {
        self.ws();
        self.b.get(self.i).copied()
    }

    /// The next byte after whitespace, consumed.
    fn next_byte(&mut self) -> Option<u8> {
        let c = self.peek()?;
        self.i += 1;
        Some(c)
    }

    /// A JSON object: `{`, then its entries as [`Scan::object_entries`] reads them.
    fn object(&mut self, entry: impl FnMut(&mut Self, &'a str) -> Option<u8>) -> Option<u8> {
        self.eat(b'{')?;
        if self.peek()? == b'}' {
            self.i += 1;
            return Some(0);
        }
        self.object_entries(entry)
    }

    /// The entries of a JSON object after its `{`, up to and with its `}`: `entry` reads each
    /// value after its key and gives the key's bit. A key not read here (`None` from
    /// `entry`) or one given twice leaves the line to serde. Gives the bits of the keys seen.
    fn object_entries(&mut self, mut entry: impl FnMut(&mut Self, &'a str) -> Option<u8>) -> Option<u8> {
        let mut seen = 0u8;
        loop {
            let key = self.string()?;
            self.eat(b':')?;
            let bit = entry(self, key)?;
            if seen & bit != 0 {
                return None;
            }
            seen |= bit;
            match self.next_byte()? {
                b',' => continue,
                b'}' => return Some(seen),
                _ => return None,
            }
        }
    }

    fn eat(&mut self, c: u8) -> Option<()> {
        (self.next_byte()? == c).then_some(())
    }

    /// A string without escapes or control characters, borrowed.
    fn string(&mut self) -> Option<&'a str> {
        self.eat(b'"')?;
        let start = self.i;
        let end = start + string_end(self.b.get(start..)?)?;
        if self.b.get(end) != Some(&b'"') {
            return None;
        }
        let out = self.text.get(start..end)?;
        self.i = end + 1;
        Some(out)
    }

    /// A JSON number (its grammar checked here), finite. One pass gathers the digits: when
    /// they make an integer below 2⁵³ and the decimal exponent is within ±22, the integer and
    /// the power of ten are exact and one multiplication or division rounds once, to the
    /// correctly rounded value that [`str::parse`] (and serde_json with `float_roundtrip`)
    /// gives (Clinger 1990, "How to read floating point numbers accurately", PLDI '90); any
    /// other number is converted by [`str::parse`].
    fn number(&mut self) -> Option<f64> {
        const EXACT: u64 = 1 << 53;
        self.ws();
        let b = self.b;
        let start = self.i;
        let mut i = start;
        let neg = b.get(i) == Some(&b'-');
        if neg {
            i += 1;
        }
        let (mut m, mut exp, mut exact) = (0u64, 0i64, true);
        match b.get(i)? {
            b'0' => i += 1,
            b'1'..=b'9' => {
                while let Some(&c @ b'0'..=b'9') = b.get(i) {
                    if m < EXACT {
                        m = m * 10 + u64::from(c - b'0');
                    } else {
                        exact = false;
                    }
                    i += 1;
                }
            }
            _ => return None,
        }
        if b.get(i) == Some(&b'.') {
            i += 1;
            let from = i;
            while let Some(&c @ b'0'..=b'9') = b.get(i) {
                if m < EXACT {
                    m = m * 10 + u64::from(c - b'0');
                    exp -= 1;
                } else {
                    exact = false;
                }
                i += 1;
            }
            if i == from {
                return None;
            }
        }
        if let Some(b'e' | b'E') = b.get(i) {
            i += 1;
            let sign = match b.get(i) {
                Some(b'-') => {
                    i += 1;
                    -1
                }
                Some(b'+') => {
                    i += 1;
                    1
                }
                _ => 1,
            };
            let from = i;
            let mut e = 0i64;
            while let Some(&c @ b'0'..=b'9') = b.get(i) {
                if i - from < 4 {
                    e = e * 10 + i64::from(c - b'0');
                } else {
                    exact = false;
                }
                i += 1;
            }
            if i == from {
                return None;
            }
            exp += sign * e;
        }
        self.i = i;
        let x = if exact && m < EXACT && (-22..=22).contains(&exp) {
            let p = POW10[exp.unsigned_abs() as usize];
            let x = if exp >= 0 { m as f64 * p } else { m as f64 / p };
            if neg { -x } else { x }
        } else {
            self.text.get(start..i)?.parse().ok()?
        };
        x.is_finite().then_some(x)
    }

    fn boolean(&mut self) -> Option<bool> {
        self.ws();
        let rest = self.b.get(self.i..)?;
        if rest.starts_with(b"true") {
            self.i += 4;
            Some(true)
        } else if rest.starts_with(b"false") {
            self.i += 5;
            Some(false)
        } else {
            None
        }
    }

    /// The `reagents` list: objects with a `reagent` name and numeric amounts.
    fn reagents(&mut self, out: &mut Vec<FastAmount<'a>>) -> Option<()> {
        self.eat(b'[')?;
        if self.peek()? == b']' {
            self.i += 1;
            return Some(());
        }
        loop {
            out.push(self.amount()?);
            match self.next_byte()? {
                b',' => continue,
                b']' => return Some(()),
                _ => return None,
            }
        }
    }

    fn amount(&mut self) -> Option<FastAmount<'a>> {
        self.eat(b'{')?;
        let mut a = FastAmount {
            reagent: Cow::Borrowed(""),
            molar: None,
            millimolar: None,
            molal: None,
            grams: None,
            stock_molar: None,
            aliquot_ml: None,
            final_volume_ml: None,
        };
        if self.peek()? == b'}' {
            // No `reagent`: serde's message.
            return None;
        }
        let seen = self.object_entries(|s, key| {
            let (slot, bit) = match key {
                "reagent" => {
                    a.reagent = Cow::Borrowed(s.string()?);
                    (None, 1)
                }
                "molar" => (Some(&mut a.molar), 2),
                "millimolar" => (Some(&mut a.millimolar), 4),
                "molal" => (Some(&mut a.molal), 8),
                "grams" => (Some(&mut a.grams), 16),
                "stock_molar" => (Some(&mut a.stock_molar), 32),
                "aliquot_ml" => (Some(&mut a.aliquot_ml), 64),
                "final_volume_ml" => (Some(&mut a.final_volume_ml), 128),
                _ => return None,
            };
            if let Some(slot) = slot {
                *slot = Some(s.number()?);
            }
            Some(bit)
        })?;
        (seen & 1 != 0).then_some(a)
    }
}

/// A document enum (activity model, pH convention) from its name, by the names its serde
/// derive gives it, so that the fast reader and serde accept the same names.
fn named<'de, T: serde::Deserialize<'de>>(name: &'de str) -> Option<T> {
    T::deserialize(serde::de::value::BorrowedStrDeserializer::<serde::de::value::Error>::new(name)).ok()
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

    /// Solves one line (`doc`, read from `text`): the template it used (to keep the result as
    /// the next warm start) and the result (in full where `full` asks for it or a warning may
    /// come with it). A failure carries the line's name.
    fn solve_line(&mut self, text: &str, doc: &FastLine, full: bool) -> Result<(Option<usize>, Solved), Failure> {
        let name = || doc.name.as_ref().map(|n| n.to_string());
        super::check_format(doc.format.as_deref(), super::RECIPE_FORMAT, false)
            .map_err(|e| Failure::Input(name(), e))?;
        if doc.reagents.len() > super::limits::MAX_ENTRIES {
            // Refused before any copy or look-up (the same message as the document path).
            return Err(Failure::Input(
                name(),
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
            let full: RecipeDoc = serde_json::from_str(text).map_err(syntax_failure)?;
            let (recipe, conditions) = full.to_recipe(self.catalog).map_err(|e| Failure::Input(name(), e))?;
            let eq = recipe
                .compile(&conditions)
                .and_then(|s| self.solver.solve(&s))
                .map_err(|e| Failure::Solve(name(), e))?;
            return Ok((None, Solved::Full(Box::new(eq), Some(Box::new(recipe)))));
        }
        let idx = match self.templates.iter().position(|t| t.matches(doc)) {
            Some(i) => i,
            None => {
                let t = self.shared_template(doc).map_err(|e| Failure::Input(name(), e))?;
                if self.templates.len() >= MAX_TEMPLATES {
                    self.templates.remove(0);
                }
                self.templates.push(t);
                self.templates.len() - 1
            }
        };
        let t = &mut self.templates[idx];
        t.retotal(doc).map_err(|e| Failure::Input(name(), e))?;
        if !full {
            match self.solver.solve_ph_unwarned(&t.sys, &mut t.ws) {
                Ok(Some(s)) => return Ok((Some(idx), Solved::Lean(s, t.sys.ph_convention))),
                Ok(None) => {}
                Err(e) => return Err(Failure::Solve(name(), e)),
            }
        }
        let eq = match &t.warm {
            Some(w) => self.solver.solve_from(&t.sys, w),
            None => self.solver.solve(&t.sys),
        }
        .map_err(|e| Failure::Solve(name(), e))?;
        t.ws.set_start(eq.unknowns().first().map(|&l| (l, eq.ln_ionic_strength())));
        Ok((Some(idx), Solved::Full(Box::new(eq), None)))
    }

    /// Runs a titration or design request line (`kind` its format tag) and appends its
    /// record; true when it failed.
    fn run_request(&self, line_no: usize, text: &str, kind: &str, out: &mut Vec<u8>) -> bool {
        let syntax = syntax_failure;
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
        // The common line shape is read without serde; any other line as before (a titration
        // or design request, then a recipe read by serde).
        let doc = match fast_line(text) {
            Some(doc) => {
                if let Some(kind) = doc.format.as_deref().and_then(request_tag) {
                    return self.run_request(line_no, text, kind, out);
                }
                doc
            }
            None => {
                if let Some(kind) = request_kind(text) {
                    return self.run_request(line_no, text, kind, out);
                }
                match serde_json::from_str::<FastLine>(text) {
                    Ok(doc) => doc,
                    Err(e) => {
                        write_failure(out, line_no, syntax_failure(e));
                        out.push(b'\n');
                        return true;
                    }
                }
            }
        };
        let failed = match self.solve_line(text, &doc, full) {
            Ok((_, Solved::Lean(s, convention))) => {
                write_lean_record(out, line_no, doc.name.as_deref(), convention, &s);
                false
            }
            Ok((idx, Solved::Full(eq, recipe))) => {
                let name = doc.name.as_ref().map(|n| n.to_string());
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
    tag.format.as_deref().and_then(request_tag)
}

/// The format tag of a titration or design request, when `format` is one.
fn request_tag(format: &str) -> Option<&'static str> {
    match format {
        super::TITRATION_FORMAT => Some(super::TITRATION_FORMAT),
        super::DESIGN_FORMAT => Some(super::DESIGN_FORMAT),
        _ => None,
    }
}

/// The error record's message of a line that serde could not read.
fn syntax_failure(e: serde_json::Error) -> Failure {
    Failure::Syntax(format!(
        "column {}: {}",
        e.column().max(1),
        super::shorten_message(super::strip_position(&e.to_string()))
    ))
}

/// Appends the record of a line solved without the full result (without the newline): the
/// bytes serde_json writes for the [`BatchRecord`] (its numbers written by serde_json itself),
/// without building the record or copying the name.
fn write_lean_record(
    out: &mut Vec<u8>,
    line: usize,
    name: Option<&str>,
    convention: crate::PhConvention,
    s: &crate::solve::PhSolution,
) {
    let mark = out.len();
    if write_lean_fields(out, line, name, convention, s).is_err() {
        // Not reached (writing to a `Vec` does not fail): the record as serde writes it.
        out.truncate(mark);
        write_record(
            out,
            &BatchRecord {
                line,
                name: name.map(str::to_string),
                ph_convention: match convention {
                    crate::PhConvention::Model => None,
                    crate::PhConvention::BatesGuggenheim => Some("bates-guggenheim".into()),
                },
                ph: s.ph,
                p_h_molal: s.p_h_molal,
                ionic_strength_mol_per_kg: s.ionic_strength_molal,
                max_balance_residual: s.max_residual,
                ion_balance_error_percent: None,
                warnings: Vec::new(),
                result: None,
            },
        );
    }
}

fn write_lean_fields(
    out: &mut Vec<u8>,
    line: usize,
    name: Option<&str>,
    convention: crate::PhConvention,
    s: &crate::solve::PhSolution,
) -> serde_json::Result<()> {
    out.extend_from_slice(b"{\"line\":");
    serde_json::to_writer(&mut *out, &line)?;
    if let Some(name) = name {
        out.extend_from_slice(b",\"name\":");
        serde_json::to_writer(&mut *out, name)?;
    }
    if convention == crate::PhConvention::BatesGuggenheim {
        out.extend_from_slice(b",\"ph_convention\":\"bates-guggenheim\"");
    }
    out.extend_from_slice(b",\"ph\":");
    serde_json::to_writer(&mut *out, &s.ph)?;
    out.extend_from_slice(b",\"p_h_molal\":");
    serde_json::to_writer(&mut *out, &s.p_h_molal)?;
    out.extend_from_slice(b",\"ionic_strength_mol_per_kg\":");
    serde_json::to_writer(&mut *out, &s.ionic_strength_molal)?;
    out.extend_from_slice(b",\"max_balance_residual\":");
    serde_json::to_writer(&mut *out, &s.max_residual)?;
    out.push(b'}');
    Ok(())
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
/// non-blank input line to `output`, in input order. `progress` is called after each block is written
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

/// Block and read-ahead sizes of a run (small ones in the tests).
#[derive(Debug, Clone, Copy)]
struct Sizes {
    /// Lines per block (one task, one worker).
    block: usize,
    /// Lines read and not yet written at most (in whole blocks, at least two).
    chunk_lines: usize,
    /// Expected bytes per record (output buffer reservation).
    record_bytes: usize,
}

/// Bytes read and not yet written at most, about (each block holds at most its share: with
/// lines near the line limit, a block holds fewer lines, so that memory stays bounded
/// whatever the input).
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
///
/// A reader thread reads the input block by block (`sizes.block` lines, fewer where the
/// block's bytes reach their bound) and hands each block to the rayon pool as soon as it is
/// read; the calling thread writes each block's records as soon as the blocks before it are
/// written. There is no barrier between groups of blocks: the workers only wait at the end of
/// the input. At most `sizes.chunk_lines` lines (in whole blocks, at least two) are read and
/// not yet written, so memory stays bounded whatever the input and however slow one block is.
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
    let block = sizes.block.max(1);
    let in_flight = (sizes.chunk_lines.max(block) / block).max(2);
    let block_bytes = (CHUNK_BYTES / in_flight as u64).max(1);
    // Buffers (input lines, output records) of a block go round: reader, worker, writer and
    // back to the reader; there are `in_flight` of them, which bounds the read-ahead.
    let (free_tx, free_rx) = std::sync::mpsc::channel::<(Vec<RawLine>, Vec<u8>)>();
    for _ in 0..in_flight {
        // The receiver is alive: this cannot fail.
        let _ = free_tx.send((Vec::new(), Vec::new()));
    }
    let (done_tx, done_rx) = std::sync::mpsc::channel::<SolvedBlock>();
    let mut summary = BatchSummary::default();
    std::thread::scope(|threads| {
        let reader = threads.spawn(move || -> io::Result<()> {
            let done_tx = done_tx;
            let (mut first_line, mut bytes, mut index) = (0usize, 0u64, 0usize);
            rayon::in_place_scope_fifo(|scope| {
                // The writer stopped (a write error) when no buffer comes back.
                while let Ok((mut lines, mut out)) = free_rx.recv() {
                    let (n, got, eof) = read_chunk(&mut input, &mut lines, block, block_bytes)?;
                    bytes += got;
                    if n == 0 {
                        break;
                    }
                    let done = done_tx.clone();
                    let (first, read_bytes) = (first_line, bytes);
                    scope.spawn_fifo(move |_| {
                        let (records, failed) = solve_block(&lines[..n], first, sizes, make, &mut out);
                        // A closed channel: the writer stopped on an error.
                        let _ = done.send(SolvedBlock {
                            index,
                            lines,
                            out,
                            records,
                            failed,
                            bytes: read_bytes,
                            lines_read: first + n,
                        });
                    });
                    first_line += n;
                    index += 1;
                    if eof {
                        break;
                    }
                }
                Ok(())
            })
        });
        // This thread writes the blocks in order as they come.
        let written = (|| -> io::Result<()> {
            let mut next = 0usize;
            let mut waiting: std::collections::VecDeque<Option<SolvedBlock>> = std::collections::VecDeque::new();
            for done in done_rx.iter() {
                let slot = done.index.saturating_sub(next);
                if waiting.len() <= slot {
                    waiting.resize_with(slot + 1, || None);
                }
                waiting[slot] = Some(done);
                while let Some(Some(_)) = waiting.front() {
                    let Some(Some(mut done)) = waiting.pop_front() else {
                        break;
                    };
                    output.write_all(&done.out)?;
                    summary.records += done.records;
                    summary.failed += done.failed;
                    progress(done.bytes, done.lines_read);
                    next += 1;
                    done.out.clear();
                    // A closed channel: the reader is done.
                    let _ = free_tx.send((done.lines, done.out));
                }
            }
            Ok(())
        })();
        // On a write error the reader sees no buffer come back and stops; its blocks in
        // flight are solved and dropped.
        drop(done_rx);
        drop(free_tx);
        let read = reader
            .join()
            .unwrap_or_else(|payload| std::panic::resume_unwind(payload));
        written?;
        read
    })?;
    output.flush()?;
    Ok(summary)
}

/// A solved block on its way to the writer, with its buffers.
struct SolvedBlock {
    /// The block's place in the input (0 for the first).
    index: usize,
    lines: Vec<RawLine>,
    /// Its records as JSON Lines.
    out: Vec<u8>,
    records: usize,
    failed: usize,
    /// Bytes and lines read when the block was read (for the progress report).
    bytes: u64,
    lines_read: usize,
}

/// Reads up to `chunk` lines (and about `max_bytes`) into `lines`, buffers re-used: (lines
/// read, bytes, end of input).
fn read_chunk<R: BufRead>(
    input: &mut R,
    lines: &mut Vec<RawLine>,
    chunk: usize,
    max_bytes: u64,
) -> io::Result<(usize, u64, bool)> {
    let mut n = 0;
    let mut bytes = 0u64;
    while n < chunk && bytes < max_bytes {
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
        let (take, done) = match find_newline(avail) {
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

/// The position of the first `\n` in `s`, eight bytes at a time: a byte equal to `\n` is a
/// zero byte of the word xor'ed with `\n` in every byte, and `(w − 0x01…01) & !w & 0x80…80`
/// has its lowest set bit in the first zero byte of `w` (a borrow can only mark bytes above a
/// zero byte). The same answer as `s.iter().position(|&b| b == b'\n')`, in about a fifth of
/// the instructions on a batch line.
fn find_newline(s: &[u8]) -> Option<usize> {
    const ONES: u64 = 0x0101_0101_0101_0101;
    const HIGH: u64 = 0x8080_8080_8080_8080;
    const NEWLINES: u64 = ONES * b'\n' as u64;
    let mut words = s.chunks_exact(8);
    let mut base = 0;
    for word in &mut words {
        let mut bytes = [0u8; 8];
        bytes.copy_from_slice(word);
        let w = u64::from_le_bytes(bytes) ^ NEWLINES;
        let zero = w.wrapping_sub(ONES) & !w & HIGH;
        if zero != 0 {
            return Some(base + (zero.trailing_zeros() / 8) as usize);
        }
        base += 8;
    }
    words.remainder().iter().position(|&b| b == b'\n').map(|i| base + i)
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

/// Solves one block (its first line is line `first_line + 1`): appends its records as JSON
/// Lines to `out` and returns (records, failures).
fn solve_block<M, F>(
    block_lines: &[RawLine],
    first_line: usize,
    sizes: Sizes,
    make: &M,
    out: &mut Vec<u8>,
) -> (usize, usize)
where
    M: Fn() -> F + Sync,
    F: FnMut(usize, &str, &mut Vec<u8>) -> bool,
{
    let mut worker = make();
    out.reserve(block_lines.len() * sizes.record_bytes);
    let (mut records, mut failed) = (0, 0);
    for (j, raw) in block_lines.iter().enumerate() {
        let line_no = first_line + j + 1;
        if let Some(len) = raw.overlong {
            records += 1;
            failed += 1;
            error_line(
                out,
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
                error_line(out, line_no, "syntax", format!("not UTF-8 text: {e}"));
                continue;
            }
        };
        if text.is_empty() {
            continue;
        }
        records += 1;
        let mark = out.len();
        let outcome = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| worker(line_no, text, &mut *out)));
        match outcome {
            Ok(f) => {
                // Exactly one record, ended by a newline (records hold no raw newline).
                let newlines = out[mark..].iter().filter(|&&b| b == b'\n').count();
                if newlines == 1 && out.last() == Some(&b'\n') {
                    failed += usize::from(f);
                } else {
                    failed += 1;
                    internal_error_line(
                        out,
                        mark,
                        line_no,
                        "internal error (a bug in protolyte; please report it): the record could not be written".into(),
                    );
                }
            }
            Err(payload) => {
                failed += 1;
                internal_error_line(
                    out,
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
    (records, failed)
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

    /// Everything a [`FastLine`] holds, numbers by their bits (so that −0 and 0 differ).
    fn fingerprint(l: &FastLine) -> String {
        let bits = |x: Option<f64>| x.map(f64::to_bits);
        let amounts: Vec<String> = l
            .reagents
            .iter()
            .map(|a| {
                format!(
                    "{:?} {:?} {:?} {:?} {:?} {:?} {:?} {:?}",
                    a.reagent,
                    bits(a.molar),
                    bits(a.millimolar),
                    bits(a.molal),
                    bits(a.grams),
                    bits(a.stock_molar),
                    bits(a.aliquot_ml),
                    bits(a.final_volume_ml)
                )
            })
            .collect();
        format!(
            "{:?} {:?} {:?} {:?} {:?} {:?} {:?} {} {:?}",
            l.format,
            l.name,
            bits(l.temperature_celsius),
            l.activity,
            l.ph_convention,
            amounts,
            l.complexes,
            l.include_catalog_complexes,
            [
                l.definitions.is_some(),
                l.fixed_ph.is_some(),
                l.partial_pressures.is_some(),
                l.allow_solids.is_some(),
                l.fixed_alkalinity_meq_per_kg.is_some(),
                l.fixed_dic_mmol_per_kg.is_some(),
                l.charge_balance_on.is_some()
            ]
        )
    }

    /// The fast reader agrees with serde: where it reads a line, serde reads the same line to
    /// the same fields; where serde refuses a line, so does the fast reader (which leaves it
    /// to serde, whose message the record carries). Returns whether the fast reader read it.
    fn check_against_serde(text: &str) -> bool {
        let fast = fast_line(text);
        let serde = serde_json::from_str::<FastLine>(text);
        match (&fast, &serde) {
            (Some(f), Ok(s)) => {
                assert_eq!(fingerprint(f), fingerprint(s), "line: {text}");
                true
            }
            (Some(_), Err(e)) => panic!("fast reader read a line serde refuses ({e}): {text}"),
            (None, _) => false,
        }
    }

    #[test]
    fn the_fast_reader_reads_the_common_lines_as_serde_and_leaves_the_rest() {
        // Lines the fast reader must read (the screen's shape and its variations).
        let read = [
            r#"{"name":"sample 0","temperature_celsius":25,"activity":"davies","reagents":[{"reagent":"sodium dihydrogen phosphate","millimolar":36.7568},{"reagent":"acetic acid","millimolar":3.8250}]}"#,
            r#"{}"#,
            r#" { "reagents" : [ ] , "complexes" : [ ] } "#,
            r#"{"format":"protolyte-recipe/1","ph_convention":"bates-guggenheim","activity":"sit","include_catalog_complexes":true,"reagents":[{"reagent":"HCl","molar":1e-3}]}"#,
            r#"{"temperature_celsius":-0,"reagents":[{"reagent":"x","molal":-0.0,"grams":12345678901234567890,"stock_molar":1E+2,"aliquot_ml":0.1e-2,"final_volume_ml":2.5}]}"#,
            r#"{"temperature_celsius":37.5,"activity":"extended-debye-huckel","reagents":[{"molar":0.1,"reagent":"é ☃ name"}]}"#,
            r#"{"activity":"ideal","ph_convention":"model","include_catalog_complexes":false,"reagents":[{"reagent":"a","millimolar":1.7976931348623157e308}]}"#,
            r#"{"reagents":[{"reagent":"a","molar":123456789.123456789},{"reagent":"b","molar":0.30000000000000004},{"reagent":"c","molar":4.9e-324}]}"#,
        ];
        for text in read {
            assert!(check_against_serde(text), "not read by the fast reader: {text}");
        }
        // Lines left to serde (valid or not): escapes, null, unknown or repeated keys, phase
        // requests, a list of complexes, bad numbers, trailing text, truncation.
        let left = [
            r#"{"name":"a\"b","reagents":[]}"#,
            r#"{"name":"a\u00e9","reagents":[]}"#,
            r#"{"name":null}"#,
            r#"{"name":"a","name":"b"}"#,
            r#"{"reagents":[{"reagent":"a","molar":1,"molar":2}]}"#,
            r#"{"reagents":[{"molar":1}]}"#,
            r#"{"reagents":[{}]}"#,
            r#"{"colour":"blue"}"#,
            r#"{"fixed_ph":7,"reagents":[]}"#,
            r#"{"definitions":{},"reagents":[]}"#,
            r#"{"complexes":["x"]}"#,
            r#"{"temperature_celsius":01}"#,
            r#"{"temperature_celsius":1.}"#,
            r#"{"temperature_celsius":.5}"#,
            r#"{"temperature_celsius":+5}"#,
            r#"{"temperature_celsius":1e}"#,
            r#"{"temperature_celsius":1e400}"#,
            r#"{"temperature_celsius":NaN}"#,
            r#"{"temperature_celsius":"25"}"#,
            r#"{"activity":"Davies"}"#,
            r#"{"ph_convention":"bates_guggenheim"}"#,
            r#"{"include_catalog_complexes":tru}"#,
            r#"{"reagents":[{"reagent":"a","molar":1}],}"#,
            r#"{"reagents":[{"reagent":"a","molar":1},]}"#,
            r#"{"reagents":[]} x"#,
            r#"{"reagents":[]}{}"#,
            r#"{"name":"tab	inside"}"#,
            r#"{"reagents":[{"reagent":"a","molar":1}"#,
            r#"["reagents"]"#,
            r#""#,
            r#"not json"#,
        ];
        for text in left {
            assert!(!check_against_serde(text), "read by the fast reader: {text}");
        }
    }

    /// Pieces of batch lines, valid and not, for the property below.
    fn number_text() -> impl Strategy<Value = String> {
        prop_oneof![
            any::<f64>().prop_map(|x| format!("{x}")),
            any::<f64>().prop_map(|x| format!("{x:e}")),
            (0u64..1_000_000, 0usize..6).prop_map(|(m, k)| format!("{:.*}", k, m as f64 / 1e4)),
            any::<u64>().prop_map(|m| m.to_string()),
            any::<i64>().prop_map(|m| m.to_string()),
            (any::<u32>(), -330i32..330).prop_map(|(m, e)| format!("{m}e{e}")),
            (any::<u32>(), any::<u32>(), -30i32..30).prop_map(|(a, b, e)| format!("-{a}.{b}E+{e}")),
            "-?[0-9]{0,3}\\.?[0-9]{0,25}([eE][-+]?[0-9]{0,3})?",
            Just("-0".to_string()),
            Just("null".to_string()),
            Just("\"1\"".to_string()),
        ]
    }

    fn string_text() -> impl Strategy<Value = String> {
        prop_oneof![
            8 => "[a-z ]{0,30}".prop_map(|s| format!("\"{s}\"")),
            1 => any::<String>().prop_map(|s| serde_json::to_string(&s).unwrap_or_default()),
            1 => "[\\PC\\\\\"\t]{0,12}".prop_map(|s| format!("\"{s}\"")),
            1 => Just("null".to_string()),
        ]
    }

    fn amount_text() -> impl Strategy<Value = String> {
        let keys = prop::sample::select(vec![
            "reagent",
            "molar",
            "millimolar",
            "molal",
            "grams",
            "stock_molar",
            "aliquot_ml",
            "final_volume_ml",
            "other",
        ]);
        prop::collection::vec((keys, string_text(), number_text()), 0..4).prop_map(|fields| {
            let inner: Vec<String> = fields
                .iter()
                .map(|(k, s, n)| {
                    if *k == "reagent" {
                        format!("\"{k}\":{s}")
                    } else {
                        format!("\"{k}\": {n}")
                    }
                })
                .collect();
            format!(
                "{{\"reagent\":\"acetic acid\"{}{}}}",
                if inner.is_empty() { "" } else { "," },
                inner.join(",")
            )
        })
    }

    fn line_text() -> impl Strategy<Value = String> {
        let field = prop_oneof![
            string_text().prop_map(|s| format!("\"name\":{s}")),
            string_text().prop_map(|s| format!("\"format\":{s}")),
            number_text().prop_map(|n| format!("\"temperature_celsius\":{n}")),
            prop::sample::select(vec![
                "\"davies\"",
                "\"ideal\"",
                "\"sit\"",
                "\"extended-debye-huckel\"",
                "\"Davies\"",
                "null",
                "1"
            ])
            .prop_map(|a| format!("\"activity\":{a}")),
            prop::sample::select(vec!["\"model\"", "\"bates-guggenheim\"", "\"x\""])
                .prop_map(|a| format!("\"ph_convention\":{a}")),
            prop::collection::vec(amount_text(), 0..4).prop_map(|a| format!("\"reagents\":[{}]", a.join(","))),
            prop::sample::select(vec!["[]", "[ ]", "[\"x\"]", "null"]).prop_map(|c| format!("\"complexes\":{c}")),
            prop::sample::select(vec!["true", "false", "1"]).prop_map(|b| format!("\"include_catalog_complexes\":{b}")),
            prop::sample::select(vec![
                "\"fixed_ph\":7",
                "\"definitions\":{}",
                "\"allow_solids\":true",
                "\"unknown\":1"
            ])
            .prop_map(str::to_string),
        ];
        (
            prop::collection::vec(field, 0..7),
            prop::sample::select(vec!["", " ", "\t", "\r\n "]),
            any::<prop::sample::Index>(),
            0u8..4,
        )
            .prop_map(|(fields, space, cut, damage)| {
                let mut text = format!("{{{space}{}{space}}}", fields.join(&format!(",{space}")));
                match damage {
                    // Cut at a char boundary: a malformed line.
                    0 => {
                        let mut at = cut.index(text.len() + 1);
                        while !text.is_char_boundary(at) {
                            at -= 1;
                        }
                        text.truncate(at);
                    }
                    1 => text.push_str(" ,"),
                    _ => {}
                }
                text
            })
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(2000))]

        #[test]
        fn the_fast_reader_agrees_with_serde_on_varied_lines(text in line_text()) {
            check_against_serde(&text);
        }

        #[test]
        fn numbers_read_fast_are_those_str_parse_gives(text in number_text()) {
            // The number reader agrees with serde_json's f64 on every text: a number serde
            // reads (in range) is read to the same bits, and a text it reads whole is one that
            // serde reads.
            let mut scan = Scan { text: &text, b: text.as_bytes(), i: 0 };
            let fast = scan.number().filter(|_| scan.i == text.len());
            match (serde_json::from_str::<f64>(&text), fast) {
                (Ok(exact), Some(x)) => prop_assert_eq!(x.to_bits(), exact.to_bits(), "{}", text),
                (Ok(exact), None) => prop_assert!(text == "null", "{} ({})", text, exact),
                (Err(_), Some(x)) => prop_assert!(false, "{} read as {} but refused by serde", text, x),
                (Err(_), None) => {}
            }
        }

        #[test]
        fn the_word_searches_agree_with_a_byte_scan(bytes in prop::collection::vec(prop_oneof![any::<u8>(), Just(b'\n'), Just(b'"'), Just(b'\\')], 0..70)) {
            prop_assert_eq!(find_newline(&bytes), bytes.iter().position(|&b| b == b'\n'));
            prop_assert_eq!(string_end(&bytes), bytes.iter().position(|&b| b == b'"' || b == b'\\' || b < 0x20));
        }

        #[test]
        fn a_lean_record_is_written_as_serde_writes_it(
            line in any::<usize>(),
            name in prop::option::of(any::<String>()),
            bates in any::<bool>(),
            numbers in prop::array::uniform4(prop_oneof![any::<f64>(), Just(f64::NAN), Just(f64::INFINITY), Just(-0.0), Just(7.0)]),
        ) {
            let convention = if bates { crate::PhConvention::BatesGuggenheim } else { crate::PhConvention::Model };
            let s = crate::solve::PhSolution {
                ph: numbers[0],
                p_h_molal: numbers[1],
                ionic_strength_molal: numbers[2],
                max_residual: numbers[3],
                path: crate::solve::SolverPath::Fast,
            };
            let mut fast = b"earlier".to_vec();
            write_lean_record(&mut fast, line, name.as_deref(), convention, &s);
            let mut slow = b"earlier".to_vec();
            write_record(&mut slow, &BatchRecord {
                line,
                name: name.clone(),
                ph_convention: bates.then(|| "bates-guggenheim".to_string()),
                ph: s.ph,
                p_h_molal: s.p_h_molal,
                ionic_strength_mol_per_kg: s.ionic_strength_molal,
                max_balance_residual: s.max_residual,
                ion_balance_error_percent: None,
                warnings: Vec::new(),
                result: None,
            });
            prop_assert_eq!(String::from_utf8_lossy(&fast), String::from_utf8_lossy(&slow));
        }
    }
}
