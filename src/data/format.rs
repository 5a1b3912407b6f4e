//! The catalogue file format, `protolyte-catalog/1` (documented for users in
//! `docs/catalog-format.md`): the shapes of a file as read, the TOML reader, and the compact
//! form of a read file that the build script writes for the built-in files.
//!
//! The build script (`build.rs`) compiles this file on its own, so it uses nothing of the
//! crate: only `std`, `serde`, `toml`.

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};
use toml::Spanned;

/// The format tag every catalogue file carries.
pub(crate) const CATALOG_FORMAT: &str = "protolyte-catalog/1";

/// One catalogue file.
#[derive(Debug, Deserialize, PartialEq)]
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
#[derive(Debug, Serialize, Deserialize, PartialEq)]
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
#[derive(Debug, Serialize, Deserialize, PartialEq)]
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
#[derive(Debug, Serialize, Deserialize, PartialEq)]
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
#[derive(Debug, Serialize, Deserialize, PartialEq)]
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
#[derive(Debug, Serialize, Deserialize, PartialEq)]
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
#[derive(Debug, Serialize, Deserialize, PartialEq)]
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
#[derive(Debug, Serialize, Deserialize, PartialEq)]
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
#[derive(Debug, Serialize, Deserialize, PartialEq)]
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
#[derive(Debug, Serialize, Deserialize, PartialEq)]
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

/// The built-in data files, in the order they are read (paths from the crate root). The
/// library embeds the same files, in this order (`BUILTIN_FILES` in `data/mod.rs`).
#[cfg_attr(not(test), allow(dead_code))] // the build script's list; the tests hold the library's equal to it
pub(crate) const BUILTIN_PATHS: [&str; 6] = [
    "data/families.toml",
    "data/ions.toml",
    "data/reagents.toml",
    "data/complexes.toml",
    "data/solids.toml",
    "data/gases.toml",
];

/// Why a text is not a catalogue file as TOML: the byte offset of the fault where the reader
/// knows it, and its message.
#[derive(Debug, Serialize, Deserialize, PartialEq)]
pub(crate) struct ParseFailure {
    pub at: Option<usize>,
    pub message: String,
}

/// Reads catalogue text (TOML) into the shapes above; checks nothing beyond the shapes.
pub(crate) fn parse(text: &str) -> Result<CatalogFile, ParseFailure> {
    toml::from_str(text).map_err(|e| ParseFailure {
        at: e.span().map(|s| s.start),
        message: e.message().trim().to_string(),
    })
}

/// A value with the byte range of its text, as a plain pair (what [`Spanned`] holds, in a
/// form that serialises both).
pub(crate) type Span<T> = (usize, usize, T);

#[cfg_attr(not(test), allow(dead_code))] // packing is the build script's (and the tests')
fn pack<T>(items: Vec<Spanned<T>>) -> Vec<Span<T>> {
    items
        .into_iter()
        .map(|s| {
            let r = s.span();
            (r.start, r.end, s.into_inner())
        })
        .collect()
}

fn unpack<T>(items: Vec<Span<T>>) -> Vec<Spanned<T>> {
    items.into_iter().map(|(a, b, v)| Spanned::new(a..b, v)).collect()
}

/// A [`CatalogFile`] in a form that serialises with its spans: what the build script writes
/// for each built-in file (with `postcard`), so that the library decodes the files instead
/// of parsing their TOML. [`PackedFile::unpack`] gives back the very [`CatalogFile`] that
/// [`parse`] gives for the same text (a test holds them equal).
#[derive(Debug, Serialize, Deserialize, PartialEq)]
pub(crate) struct PackedFile {
    pub format: Option<Span<String>>,
    pub sources: BTreeMap<String, String>,
    pub family: Vec<Span<FamilyEntry>>,
    pub ion: Vec<Span<IonEntry>>,
    pub reagent: Vec<Span<ReagentEntry>>,
    pub complex: Vec<Span<ComplexEntry>>,
    pub solid: Vec<Span<SolidEntry>>,
    pub gas: Vec<Span<GasEntry>>,
}

impl PackedFile {
    /// The compact form of a file as read.
    #[cfg_attr(not(test), allow(dead_code))] // the build script's (and the tests')
    pub fn pack(f: CatalogFile) -> Self {
        PackedFile {
            format: f.format.map(|s| {
                let r = s.span();
                (r.start, r.end, s.into_inner())
            }),
            sources: f.sources,
            family: pack(f.family),
            ion: pack(f.ion),
            reagent: pack(f.reagent),
            complex: pack(f.complex),
            solid: pack(f.solid),
            gas: pack(f.gas),
        }
    }

    /// The file as read, back from its compact form.
    pub fn unpack(self) -> CatalogFile {
        CatalogFile {
            format: self.format.map(|(a, b, v)| Spanned::new(a..b, v)),
            sources: self.sources,
            family: unpack(self.family),
            ion: unpack(self.ion),
            reagent: unpack(self.reagent),
            complex: unpack(self.complex),
            solid: unpack(self.solid),
            gas: unpack(self.gas),
        }
    }
}

/// What the build script writes for the built-in files: for each of [`BUILTIN_PATHS`], in
/// order, the file as read or why it could not be read.
pub(crate) type PackedBuiltin = Vec<Result<PackedFile, ParseFailure>>;
