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
#[serde(deny_unknown_fields, bound(deserialize = "S: Deserialize<'de> + Ord"))]
pub(crate) struct CatalogFile<S = String> {
    pub format: Option<Spanned<S>>,
    /// Citations by key, for entries that `cite` them.
    #[serde(default)]
    pub sources: BTreeMap<S, S>,
    #[serde(default)]
    pub family: Vec<Spanned<FamilyEntry<S>>>,
    #[serde(default)]
    pub ion: Vec<Spanned<IonEntry<S>>>,
    #[serde(default)]
    pub reagent: Vec<Spanned<ReagentEntry<S>>>,
    #[serde(default)]
    pub complex: Vec<Spanned<ComplexEntry<S>>>,
    #[serde(default)]
    pub solid: Vec<Spanned<SolidEntry<S>>>,
    #[serde(default)]
    pub gas: Vec<Spanned<GasEntry<S>>>,
}

/// A solid: its dissolution reaction (parts as a complex's) and log K at 25 °C.
#[derive(Debug, Serialize, Deserialize, PartialEq)]
#[serde(deny_unknown_fields, bound(deserialize = "S: Deserialize<'de>"))]
pub(crate) struct SolidEntry<S = String> {
    pub name: S,
    #[serde(default)]
    pub synonyms: Vec<S>,
    pub formula: Option<S>,
    pub parts: Vec<PartEntry<S>>,
    pub log_k: f64,
    pub dh_kj_per_mol: Option<f64>,
    pub dcp_j_per_mol_k: Option<f64>,
    /// An analytic log K(T) equation (`[solid.log_k_equation]`, without `step`).
    pub log_k_equation: Option<EquationEntry<S>>,
    pub source: Option<S>,
    pub cite: Option<S>,
    #[serde(default)]
    pub from_memory: bool,
}

/// A gas: the family form it dissolves to and log K_H at 25 °C.
#[derive(Debug, Serialize, Deserialize, PartialEq)]
#[serde(deny_unknown_fields, bound(deserialize = "S: Deserialize<'de>"))]
pub(crate) struct GasEntry<S = String> {
    pub name: S,
    #[serde(default)]
    pub synonyms: Vec<S>,
    pub formula: Option<S>,
    /// `{ family = "...", protons = n }`: the neutral aqueous form.
    pub dissolves_to: PartEntry<S>,
    pub log_kh: f64,
    pub dh_kj_per_mol: Option<f64>,
    pub dcp_j_per_mol_k: Option<f64>,
    /// An analytic log K_H(T) equation (`[gas.log_k_equation]`, without `step`).
    pub log_k_equation: Option<EquationEntry<S>>,
    pub source: Option<S>,
    pub cite: Option<S>,
    #[serde(default)]
    pub from_memory: bool,
}

/// An acid–base family.
#[derive(Debug, Serialize, Deserialize, PartialEq)]
#[serde(deny_unknown_fields, bound(deserialize = "S: Deserialize<'de>"))]
pub(crate) struct FamilyEntry<S = String> {
    pub name: S,
    #[serde(default)]
    pub synonyms: Vec<S>,
    pub formula: Option<S>,
    /// Display names of the forms, most protonated first.
    pub form_names: Option<Vec<S>>,
    pub charge_most_protonated: i32,
    pub steps: Vec<StepEntry<S>>,
    pub ion_size_angstrom: Option<f64>,
    pub form_ion_sizes_angstrom: Option<Vec<f64>>,
    pub source: Option<S>,
    pub cite: Option<S>,
    #[serde(default)]
    pub from_memory: bool,
    #[serde(default)]
    pub replace: bool,
    /// Analytic log K(T) equations, each naming its step (`[[family.log_k_equation]]`).
    #[serde(default)]
    pub log_k_equation: Vec<EquationEntry<S>>,
}

/// One dissociation step.
#[derive(Debug, Serialize, Deserialize, PartialEq)]
#[serde(deny_unknown_fields, bound(deserialize = "S: Deserialize<'de>"))]
pub(crate) struct StepEntry<S = String> {
    pub pka: f64,
    pub dh_kj_per_mol: Option<f64>,
    pub dcp_j_per_mol_k: Option<f64>,
    /// The source of this step's ΔH°/ΔCp° where it is not the family's.
    pub source: Option<S>,
    pub cite: Option<S>,
    /// True when this step's ΔH°/ΔCp° were entered from memory of their source.
    #[serde(default)]
    pub from_memory: bool,
}

/// An analytic equation log₁₀ K = a + b·T + c/T + d·log₁₀ T + e/T² (T in kelvin) for one
/// reaction, with the range its source fitted.
#[derive(Debug, Serialize, Deserialize, PartialEq)]
#[serde(deny_unknown_fields, bound(deserialize = "S: Deserialize<'de>"))]
pub(crate) struct EquationEntry<S = String> {
    /// The step (1 = the most protonated form's dissociation); families only.
    pub step: Option<usize>,
    /// a, b, c, d, e.
    pub coefficients: [f64; 5],
    /// Lowest and highest temperature of the fit, °C.
    pub range_celsius: [f64; 2],
    pub source: Option<S>,
    pub cite: Option<S>,
    #[serde(default)]
    pub from_memory: bool,
}

/// A simple ion.
#[derive(Debug, Serialize, Deserialize, PartialEq)]
#[serde(deny_unknown_fields, bound(deserialize = "S: Deserialize<'de>"))]
pub(crate) struct IonEntry<S = String> {
    pub name: S,
    #[serde(default)]
    pub synonyms: Vec<S>,
    pub formula: Option<S>,
    pub charge: i32,
    pub ion_size_angstrom: Option<f64>,
    pub source: Option<S>,
    pub cite: Option<S>,
    #[serde(default)]
    pub from_memory: bool,
    #[serde(default)]
    pub replace: bool,
}

/// A reagent.
#[derive(Debug, Serialize, Deserialize, PartialEq)]
#[serde(deny_unknown_fields, bound(deserialize = "S: Deserialize<'de>"))]
pub(crate) struct ReagentEntry<S = String> {
    pub name: S,
    #[serde(default)]
    pub synonyms: Vec<S>,
    pub formula: Option<S>,
    pub molar_mass_g_per_mol: Option<f64>,
    pub parts: Vec<PartEntry<S>>,
    pub source: Option<S>,
    pub cite: Option<S>,
    #[serde(default)]
    pub from_memory: bool,
    #[serde(default)]
    pub replace: bool,
}

/// A complex or ion pair.
#[derive(Debug, Serialize, Deserialize, PartialEq)]
#[serde(deny_unknown_fields, bound(deserialize = "S: Deserialize<'de>"))]
pub(crate) struct ComplexEntry<S = String> {
    pub name: S,
    #[serde(default)]
    pub synonyms: Vec<S>,
    pub parts: Vec<PartEntry<S>>,
    pub log_beta: f64,
    pub dh_kj_per_mol: Option<f64>,
    pub dcp_j_per_mol_k: Option<f64>,
    /// An analytic log β(T) equation (`[complex.log_k_equation]`, without `step`).
    pub log_k_equation: Option<EquationEntry<S>>,
    pub ion_size_angstrom: Option<f64>,
    pub source: Option<S>,
    pub cite: Option<S>,
    #[serde(default)]
    pub from_memory: bool,
    #[serde(default)]
    pub replace: bool,
}

/// One part of a reagent or complex: exactly one of `family` (with `protons`), `base`, `ion`,
/// `proton`, `hydroxide`, with `count` (default 1) for the named ones.
#[derive(Debug, Serialize, Deserialize, PartialEq)]
#[serde(deny_unknown_fields, bound(deserialize = "S: Deserialize<'de>"))]
pub(crate) struct PartEntry<S = String> {
    pub family: Option<S>,
    pub protons: Option<u32>,
    pub base: Option<S>,
    pub ion: Option<S>,
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
#[serde(bound(serialize = "S: Serialize", deserialize = "S: Deserialize<'de> + Ord"))]
pub(crate) struct PackedFile<S = String> {
    pub format: Option<Span<S>>,
    pub sources: BTreeMap<S, S>,
    pub family: Vec<Span<FamilyEntry<S>>>,
    pub ion: Vec<Span<IonEntry<S>>>,
    pub reagent: Vec<Span<ReagentEntry<S>>>,
    pub complex: Vec<Span<ComplexEntry<S>>>,
    pub solid: Vec<Span<SolidEntry<S>>>,
    pub gas: Vec<Span<GasEntry<S>>>,
}

impl<S> PackedFile<S> {
    /// The compact form of a file as read.
    #[cfg_attr(not(test), allow(dead_code))] // the build script's (and the tests')
    pub fn pack(f: CatalogFile<S>) -> Self {
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
    pub fn unpack(self) -> CatalogFile<S> {
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
pub(crate) type PackedBuiltin<S = String> = Vec<Result<PackedFile<S>, ParseFailure>>;

/// The text fields of a file as read: owned (`String`: a user's file, parsed at run time) or
/// borrowed from the embedded compact form (`&'static str`: the built-in files, decoded
/// without a copy of each text).
pub(crate) trait Text: std::ops::Deref<Target = str> + Into<String> + std::fmt::Display {}

impl<T: std::ops::Deref<Target = str> + Into<String> + std::fmt::Display> Text for T {}
