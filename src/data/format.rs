//! The catalogue file format, `protolyte-catalog/1` (documented for users in
//! `docs/catalog-format.md`): the shapes of a file as read, and where in the text each field
//! sits (for errors that name the line).

use std::collections::BTreeMap;
use std::ops::Range;

use serde::Deserialize;
use toml::Spanned;

use crate::error::{CatalogFileError, Error};

/// The format tag every catalogue file carries.
pub(crate) const CATALOG_FORMAT: &str = "protolyte-catalog/1";

/// One catalogue file.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct CatalogFile {
    pub format: Option<Spanned<String>>,
    /// Citations by key, for entries that `cite` them.
    #[serde(default)]
    pub sources: BTreeMap<String, String>,
    #[serde(default)]
    pub family: Vec<Spanned<FamilyEntry>>,
    #[serde(default)]
    pub ion: Vec<Spanned<IonEntry>>,
    #[serde(default)]
    pub reagent: Vec<Spanned<ReagentEntry>>,
    #[serde(default)]
    pub complex: Vec<Spanned<ComplexEntry>>,
    #[serde(default)]
    pub solid: Vec<Spanned<SolidEntry>>,
    #[serde(default)]
    pub gas: Vec<Spanned<GasEntry>>,
}

/// A solid: its dissolution reaction (parts as a complex's) and log K at 25 °C.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct SolidEntry {
    pub name: String,
    #[serde(default)]
    pub synonyms: Vec<String>,
    pub formula: Option<String>,
    pub parts: Vec<PartEntry>,
    pub log_k: f64,
    pub dh_kj_per_mol: Option<f64>,
    pub dcp_j_per_mol_k: Option<f64>,
    /// An analytic log K(T) equation (`[solid.log_k_equation]`, without `step`).
    pub log_k_equation: Option<EquationEntry>,
    pub source: Option<String>,
    pub cite: Option<String>,
    #[serde(default)]
    pub from_memory: bool,
}

/// A gas: the family form it dissolves to and log K_H at 25 °C.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct GasEntry {
    pub name: String,
    #[serde(default)]
    pub synonyms: Vec<String>,
    pub formula: Option<String>,
    /// `{ family = "...", protons = n }`: the neutral aqueous form.
    pub dissolves_to: PartEntry,
    pub log_kh: f64,
    pub dh_kj_per_mol: Option<f64>,
    pub dcp_j_per_mol_k: Option<f64>,
    /// An analytic log K_H(T) equation (`[gas.log_k_equation]`, without `step`).
    pub log_k_equation: Option<EquationEntry>,
    pub source: Option<String>,
    pub cite: Option<String>,
    #[serde(default)]
    pub from_memory: bool,
}

/// An acid–base family.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct FamilyEntry {
    pub name: String,
    #[serde(default)]
    pub synonyms: Vec<String>,
    pub formula: Option<String>,
    /// Display names of the forms, most protonated first.
    pub form_names: Option<Vec<String>>,
    pub charge_most_protonated: i32,
    pub steps: Vec<StepEntry>,
    pub ion_size_angstrom: Option<f64>,
    pub form_ion_sizes_angstrom: Option<Vec<f64>>,
    pub source: Option<String>,
    pub cite: Option<String>,
    #[serde(default)]
    pub from_memory: bool,
    #[serde(default)]
    pub replace: bool,
    /// Analytic log K(T) equations, each naming its step (`[[family.log_k_equation]]`).
    #[serde(default)]
    pub log_k_equation: Vec<EquationEntry>,
}

/// One dissociation step.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct StepEntry {
    pub pka: f64,
    pub dh_kj_per_mol: Option<f64>,
    pub dcp_j_per_mol_k: Option<f64>,
    /// The source of this step's ΔH°/ΔCp° where it is not the family's.
    pub source: Option<String>,
    pub cite: Option<String>,
    /// True when this step's ΔH°/ΔCp° were entered from memory of their source.
    #[serde(default)]
    pub from_memory: bool,
}

/// An analytic equation log₁₀ K = a + b·T + c/T + d·log₁₀ T + e/T² (T in kelvin) for one
/// reaction, with the range its source fitted.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct EquationEntry {
    /// The step (1 = the most protonated form's dissociation); families only.
    pub step: Option<usize>,
    /// a, b, c, d, e.
    pub coefficients: [f64; 5],
    /// Lowest and highest temperature of the fit, °C.
    pub range_celsius: [f64; 2],
    pub source: Option<String>,
    pub cite: Option<String>,
    #[serde(default)]
    pub from_memory: bool,
}

/// A simple ion.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct IonEntry {
    pub name: String,
    #[serde(default)]
    pub synonyms: Vec<String>,
    pub formula: Option<String>,
    pub charge: i32,
    pub ion_size_angstrom: Option<f64>,
    pub source: Option<String>,
    pub cite: Option<String>,
    #[serde(default)]
    pub from_memory: bool,
    #[serde(default)]
    pub replace: bool,
}

/// A reagent.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct ReagentEntry {
    pub name: String,
    #[serde(default)]
    pub synonyms: Vec<String>,
    pub formula: Option<String>,
    pub molar_mass_g_per_mol: Option<f64>,
    pub parts: Vec<PartEntry>,
    pub source: Option<String>,
    pub cite: Option<String>,
    #[serde(default)]
    pub from_memory: bool,
    #[serde(default)]
    pub replace: bool,
}

/// A complex or ion pair.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct ComplexEntry {
    pub name: String,
    #[serde(default)]
    pub synonyms: Vec<String>,
    pub parts: Vec<PartEntry>,
    pub log_beta: f64,
    pub dh_kj_per_mol: Option<f64>,
    pub dcp_j_per_mol_k: Option<f64>,
    /// An analytic log β(T) equation (`[complex.log_k_equation]`, without `step`).
    pub log_k_equation: Option<EquationEntry>,
    pub ion_size_angstrom: Option<f64>,
    pub source: Option<String>,
    pub cite: Option<String>,
    #[serde(default)]
    pub from_memory: bool,
    #[serde(default)]
    pub replace: bool,
}

/// One part of a reagent or complex: exactly one of `family` (with `protons`), `base`, `ion`,
/// `proton`, `hydroxide`, with `count` (default 1) for the named ones.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct PartEntry {
    pub family: Option<String>,
    pub protons: Option<u32>,
    pub base: Option<String>,
    pub ion: Option<String>,
    pub proton: Option<i32>,
    pub hydroxide: Option<i32>,
    pub count: Option<i32>,
}

/// Where a file's text is: its name and the start of each line, for line numbers.
pub(crate) struct Located<'a> {
    pub file: &'a str,
    pub text: &'a str,
}

impl Located<'_> {
    /// The 1-based line of byte offset `at`.
    pub fn line_of(&self, at: usize) -> usize {
        let at = at.min(self.text.len());
        self.text.as_bytes()[..at].iter().filter(|&&b| b == b'\n').count() + 1
    }

    /// The text range of the entry whose `[[table]]` header spans `header`: up to the next
    /// table header written at the start of a line, or the end of the file.
    pub fn entry_range(&self, header: Range<usize>) -> Range<usize> {
        let from = header.end.min(self.text.len());
        let end = self.text[from..]
            .find("\n[")
            .map(|i| from + i + 1)
            .unwrap_or(self.text.len());
        header.start..end
    }

    /// The line where `key = ...` is written inside `span` (an entry), else the entry's first line.
    pub fn line_of_key(&self, span: &Range<usize>, key: &str) -> usize {
        let end = span.end.min(self.text.len());
        let start = span.start.min(end);
        let body = &self.text[start..end];
        let mut offset = start;
        for line in body.split_inclusive('\n') {
            let t = line.trim_start().trim_start_matches(['{', ',', ' ']);
            if let Some(rest) = t.strip_prefix(key)
                && rest.trim_start().starts_with('=')
            {
                return self.line_of(offset);
            }
            // Inline tables: `{ pka = 4.1, dh_kj_per_mol = ... }`.
            if let Some(i) = line
                .find(&format!(" {key} ="))
                .or_else(|| line.find(&format!("{{{key} =")))
                && !line.trim_start().starts_with('#')
            {
                return self.line_of(offset + i);
            }
            offset += line.len();
        }
        self.line_of(span.start)
    }

    /// The line of the `k`-th inline table in the array `key = [...]` inside `span`, else the
    /// line of `key`.
    pub fn line_of_item(&self, span: &Range<usize>, key: &str, k: usize) -> usize {
        let key_line = self.line_of_key(span, key);
        let end = span.end.min(self.text.len());
        // Byte offset where the key's line starts.
        let mut start = 0;
        for _ in 1..key_line {
            match self.text[start..].find('\n') {
                Some(i) => start += i + 1,
                None => break,
            }
        }
        let (mut depth, mut seen, mut in_str, mut in_comment) = (0usize, 0usize, false, false);
        for (i, c) in self.text[start.min(end)..end].char_indices() {
            match c {
                '\n' => in_comment = false,
                _ if in_comment => {}
                '"' => in_str = !in_str,
                _ if in_str => {}
                '#' => in_comment = true,
                '{' => {
                    if depth == 0 {
                        if seen == k {
                            return self.line_of(start + i);
                        }
                        seen += 1;
                    }
                    depth += 1;
                }
                '}' => depth = depth.saturating_sub(1),
                ']' if depth == 0 => break,
                _ => {}
            }
        }
        key_line
    }

    /// An error at `line` for `entry`'s `field`.
    pub fn error(&self, line: usize, entry: &str, field: &str, message: impl std::fmt::Display) -> Error {
        Error::CatalogFile(Box::new(CatalogFileError {
            file: self.file.to_string(),
            line,
            entry: entry.to_string(),
            field: field.to_string(),
            message: message.to_string(),
        }))
    }
}
