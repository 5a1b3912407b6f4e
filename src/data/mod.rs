//! The catalogue: acid–base families, simple ions, reagents and complexes, each entry with
//! its published source, looked up by name or synonym.
//!
//! The built-in entries live in the data files `data/families.toml`, `data/ions.toml`,
//! `data/reagents.toml` and `data/complexes.toml` (format `protolyte-catalog/1`, documented in
//! `docs/catalog-format.md`), embedded at build time and read once. A user's own files in the
//! same format add entries or replace built-in ones ([`Catalog::with_file`]).

mod format;
use crate::formula;
mod located;
mod phases;

pub use crate::formula::molar_mass_from_formula;

use std::collections::{BTreeMap, HashMap};
use std::path::Path;
use std::sync::OnceLock;

use format::{
    CATALOG_FORMAT, CatalogFile, ComplexEntry, EquationEntry, FamilyEntry, IonEntry, PackedBuiltin, PartEntry,
    ReagentEntry, Text,
};
use located::Located;
use toml::Spanned;

use crate::complex::{Complex, ComplexPart};
use crate::error::{CatalogFileError, Error, Result};
use crate::ion::Ion;
use crate::phase::{Gas, Solid};
use crate::protolyte::{Protolyte, Step};
use crate::reagent::{Constituent, Reagent};
use crate::vant_hoff::{LogKEquation, ValidityRange};

/// The built-in data files, embedded at build time: (name shown in messages, text). The texts
/// serve the messages that name a line; the entries are read from [`BUILTIN_PACKED`].
const BUILTIN_FILES: [(&str, &str); 6] = [
    ("data/families.toml", include_str!("../../data/families.toml")),
    ("data/ions.toml", include_str!("../../data/ions.toml")),
    ("data/reagents.toml", include_str!("../../data/reagents.toml")),
    ("data/complexes.toml", include_str!("../../data/complexes.toml")),
    ("data/solids.toml", include_str!("../../data/solids.toml")),
    ("data/gases.toml", include_str!("../../data/gases.toml")),
];

/// The same files as read by `format::parse`, in the compact form the build script writes
/// (`build.rs`): decoding it costs a small part of parsing the TOML.
const BUILTIN_PACKED: &[u8] = include_bytes!(concat!(env!("OUT_DIR"), "/builtin-catalog.postcard"));

/// What kind of thing a catalog entry is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum DataKind {
    /// An acid–base family.
    Protolyte,
    /// A simple ion.
    Ion,
    /// A reagent.
    Reagent,
    /// A complex or ion pair.
    Complex,
}

impl DataKind {
    /// "protolyte", "ion", "reagent" or "complex".
    pub fn name(self) -> &'static str {
        match self {
            DataKind::Protolyte => "protolyte",
            DataKind::Ion => "ion",
            DataKind::Reagent => "reagent",
            DataKind::Complex => "complex",
        }
    }

    /// The table name of this kind in a catalogue file: "family", "ion", "reagent", "complex".
    fn table(self) -> &'static str {
        match self {
            DataKind::Protolyte => "family",
            DataKind::Ion => "ion",
            DataKind::Reagent => "reagent",
            DataKind::Complex => "complex",
        }
    }
}

/// One form of an acid–base family, for listings.
#[derive(Debug, Clone, PartialEq)]
pub struct FormInfo {
    /// Display name of the form ("H2PO4-").
    pub name: String,
    /// Bound protons, 0 = fully deprotonated.
    pub protons: usize,
    /// Charge number.
    pub charge: i32,
    /// Ion-size parameter å the extended Debye–Hückel model uses for this form, ångström: the
    /// form's own where the entry lists one per form, else the family's (none for a neutral
    /// form).
    pub ion_size_angstrom: Option<f64>,
}

/// A description of one catalog entry, for listings: every number the entry holds.
#[derive(Debug, Clone, PartialEq)]
pub struct DataInfo {
    /// What it is.
    pub kind: DataKind,
    /// Canonical name.
    pub name: String,
    /// Other names it is found by.
    pub synonyms: Vec<String>,
    /// Formula (of the most protonated form for a family), or empty.
    pub formula: String,
    /// A one-line summary of its numbers (pKa values, charge, molar mass, log β).
    pub summary: String,
    /// Its published source ("user" for entries a caller added without one).
    pub source: String,
    /// True when the numbers were entered from memory of the source.
    pub from_memory: bool,
    /// Where the entry was read: `built-in data/families.toml`, a user's file name, or
    /// "added in code".
    pub origin: String,
    /// Charge: of the most protonated form for a family, of the ion or complex, 0 for a reagent.
    pub charge: i32,
    /// Stepwise dissociations, most protonated first (families only): pKa at 25 °C and
    /// I = 0, ΔH° and ΔCp° where known.
    pub steps: Vec<Step>,
    /// The forms of a family, most protonated first (families only).
    pub forms: Vec<FormInfo>,
    /// The single ion-size parameter å, ångström, where set.
    pub ion_size_angstrom: Option<f64>,
    /// Molar mass, g/mol: a reagent's (stored, or computed from its formula), or computed from
    /// the formula of an ion or of a family's most protonated form where it is a formula of
    /// elements (IUPAC 2021 abridged atomic weights).
    pub molar_mass_g_per_mol: Option<f64>,
    /// Overall formation constant log₁₀ β (complexes only).
    pub log10_beta: Option<f64>,
    /// Formation enthalpy ΔH°, kJ/mol (complexes only, where known).
    pub dh_kj_per_mol: Option<f64>,
    /// Formation heat-capacity change ΔCp°, J/(mol·K) (complexes only, where known).
    pub dcp_j_per_mol_k: Option<f64>,
    /// Analytic log K(T) equations: one entry per step for a family, one for a complex
    /// (`None` where there is none); empty for ions and reagents.
    pub log_k_equations: Vec<Option<LogKEquation>>,
    /// The constituents of a reagent or the parts of a complex, in words ("2 × sodium").
    pub parts: Vec<String>,
}

impl DataInfo {
    /// The name and synonyms normalised for lookup, in order.
    fn keys(&self) -> impl Iterator<Item = String> + '_ {
        std::iter::once(&self.name).chain(&self.synonyms).map(|n| normalize(n))
    }
}

/// `names` normalised for lookup, in order.
fn keys_of(names: &[&str]) -> Vec<String> {
    names.iter().map(|n| normalize(n)).collect()
}

/// Built-in and user-defined definitions, looked up by name or synonym (case-insensitive).
///
/// # Example
///
/// ```
/// use protolyte::{Catalog, Protolyte};
///
/// let mut cat = Catalog::builtin();
/// let phosphate = cat.protolyte("H3PO4")?;
/// assert_eq!(phosphate.proton_count(), 3);
/// assert!(cat.reagent("sodium acetat").unwrap_err().to_string().contains("did you mean"));
///
/// cat.add_protolyte(Protolyte::new("dye X", &[6.8], 0)?, &["indicator x"])?;
/// assert_eq!(cat.protolyte("Indicator X")?.name(), "dye X");
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone, Default)]
pub struct Catalog {
    protolytes: Vec<Protolyte>,
    ions: Vec<Ion>,
    reagents: Vec<Reagent>,
    complexes: Vec<Complex>,
    /// Descriptions grouped by kind (in `DataKind` order), each group in definition order.
    info: Vec<DataInfo>,
    /// Normalised name or synonym → for each kind (in `DataKind` order), the index in that
    /// kind's definition vector.
    index: HashMap<String, [Option<usize>; 4]>,
    /// Citations by key, from every file read so far.
    sources: BTreeMap<String, String>,
    /// Built-in files that could not be read (a data bug; tested empty).
    problems: Vec<String>,
    /// Entries replaced on purpose, as they were.
    replaced: Vec<DataInfo>,
    /// Solids and gases (they share the namespace of families, ions and complexes).
    solids: Vec<Solid>,
    gases: Vec<Gas>,
    solid_entries: Vec<PhaseEntry>,
    gas_entries: Vec<PhaseEntry>,
    /// Normalised name or synonym of a solid or gas → (true for a gas, index).
    phase_index: HashMap<String, (bool, usize)>,
}

/// A description of a catalogued solid or gas, for listings.
#[derive(Debug, Clone, PartialEq)]
pub struct PhaseEntry {
    /// "solid" or "gas".
    pub kind: &'static str,
    /// Canonical name.
    pub name: String,
    /// Other names it is found by.
    pub synonyms: Vec<String>,
    /// Formula, or empty.
    pub formula: String,
    /// A one-line summary of its numbers.
    pub summary: String,
    /// Its published source.
    pub source: String,
    /// True when the numbers were entered from memory of the source.
    pub from_memory: bool,
    /// Where it was read (a file name) or "added in code".
    pub origin: String,
}

/// The built-in catalogue's solids and gases, shared once built.
pub(crate) type BuiltinPhases = (std::sync::Arc<[Solid]>, std::sync::Arc<[Gas]>);

/// The built-in catalogue's solids and gases, shared (what a new [`Recipe`](crate::Recipe)
/// reports saturation indices and partial pressures for).
pub(crate) fn builtin_phases() -> BuiltinPhases {
    static PHASES: OnceLock<BuiltinPhases> = OnceLock::new();
    PHASES
        .get_or_init(|| {
            let cat = Catalog::builtin();
            (cat.solids.clone().into(), cat.gases.clone().into())
        })
        .clone()
}

/// A dependent entry that the replacement would leave invalid.
fn dependent(name: &str, e: Error) -> Error {
    Error::InconsistentDefinition {
        name: name.to_string(),
        reason: format!("it depends on the replaced entry and would become invalid: {e}"),
    }
}

/// Longest name (characters) for which a lookup that fails searches for a suggestion.
const MAX_SUGGEST_CHARS: usize = 64;

/// The kinds that share a namespace with `kind`: families, ions and complexes share one
/// (a recipe matches them by name when it is compiled); reagents have their own (a reagent
/// may carry the name of the family it delivers, such as "acetic acid").
fn namespace(kind: DataKind) -> &'static [DataKind] {
    match kind {
        DataKind::Reagent => &[DataKind::Reagent],
        _ => &[DataKind::Protolyte, DataKind::Ion, DataKind::Complex],
    }
}

/// A name as the catalogue compares it: trimmed, lower case, single spaces, ASCII hyphens,
/// and no caret before a final bare sign (so "CaHCO3^+", as complexes were written before
/// the library used one charge notation, finds "CaHCO3+"; "AlF^2+" stays apart from
/// "AlF2+"). The document reader's name-collision checks use it too, so both compare alike.
pub(crate) fn normalize(s: &str) -> String {
    normalized(s).into_owned()
}

/// [`normalize`] without a copy when the text already is normalised.
/// `s` lower-cased into `buf` where [`normalized`] would only lower-case it (printable ASCII,
/// single spaces, no space at either end) and it fits; `None` otherwise.
fn plain_lowercase<'b>(s: &str, buf: &'b mut [u8]) -> Option<&'b str> {
    let bytes = s.as_bytes();
    if bytes.len() > buf.len() || plain_ascii(s).is_none() {
        return None;
    }
    let out = &mut buf[..bytes.len()];
    for (o, b) in out.iter_mut().zip(bytes) {
        *o = b.to_ascii_lowercase();
    }
    std::str::from_utf8(out).ok()
}

/// Whether `s` is printable ASCII with single spaces and none at either end (what
/// [`normalized`] only lower-cases), and if so whether it has an upper-case letter; one pass.
fn plain_ascii(s: &str) -> Option<bool> {
    let bytes = s.as_bytes();
    if bytes.first() == Some(&b' ') || bytes.last() == Some(&b' ') {
        return None;
    }
    let (mut upper, mut prev_space) = (false, false);
    for &b in bytes {
        let space = b == b' ';
        if !(b.is_ascii_graphic() || space) || (space && prev_space) {
            return None;
        }
        upper |= b.is_ascii_uppercase();
        prev_space = space;
    }
    Some(upper)
}

fn normalized(s: &str) -> std::borrow::Cow<'_, str> {
    // Most names are printable ASCII with single spaces (every built-in one is, lower case
    // too): copy them as they are, or lower-case them in one allocation.
    if !s.ends_with("^+")
        && !s.ends_with("^-")
        && let Some(upper) = plain_ascii(s)
    {
        return if upper {
            std::borrow::Cow::Owned(s.to_ascii_lowercase())
        } else {
            std::borrow::Cow::Borrowed(s)
        };
    }
    let s: String = s
        .trim()
        .chars()
        .map(|c| match c {
            '\u{2010}'..='\u{2015}' | '\u{2212}' => '-',
            c => c,
        })
        .collect::<String>()
        .to_lowercase();
    std::borrow::Cow::Owned(without_caret_before_sign(
        s.split_whitespace().collect::<Vec<_>>().join(" "),
    ))
}

/// "cahco3^+" → "cahco3+": the caret before a final bare sign taken out.
fn without_caret_before_sign(mut s: String) -> String {
    if s.ends_with("^+") || s.ends_with("^-") {
        s.remove(s.len() - 2);
    }
    s
}

/// The candidate to suggest for an unknown `name`: the value of the candidate whose key is
/// closest to it by edit distance, if it is close (within a third of the name's length, at
/// least 2). `candidates` are (key, shown name) pairs; keys are compared as [`normalize`]
/// leaves them, and the first of equally close candidates wins. The search is bounded: a
/// name longer than `MAX_SUGGEST_CHARS` gets no suggestion, and a key whose length alone
/// puts it beyond the limit is not compared. Every "did you mean" of the library comes
/// from here.
pub(crate) fn closest<'a, T>(name: &str, candidates: impl IntoIterator<Item = (&'a str, T)>) -> Option<T> {
    let key = normalized(name);
    let key_len = key.chars().count();
    if key_len > MAX_SUGGEST_CHARS {
        return None;
    }
    let limit = (key_len / 3).max(2);
    let mut best: Option<(usize, T)> = None;
    for (k, shown) in candidates {
        let k = normalized(k);
        if k.chars().count().abs_diff(key_len) > limit {
            continue;
        }
        let d = levenshtein(&k, &key);
        if d <= limit && best.as_ref().is_none_or(|(bd, _)| d < *bd) {
            best = Some((d, shown));
        }
    }
    best.map(|(_, n)| n)
}

/// [`closest`] as the name to suggest.
pub(crate) fn suggestion<'a>(name: &str, candidates: impl IntoIterator<Item = (&'a str, &'a str)>) -> Option<String> {
    closest(name, candidates).map(str::to_string)
}

fn levenshtein(a: &str, b: &str) -> usize {
    let a: Vec<char> = a.chars().collect();
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    for i in 1..=a.len() {
        let mut cur = vec![i; b.len() + 1];
        for j in 1..=b.len() {
            let cost = usize::from(a[i - 1] != b[j - 1]);
            cur[j] = (prev[j] + 1).min(cur[j - 1] + 1).min(prev[j - 1] + cost);
        }
        prev = cur;
    }
    prev[b.len()]
}

/// Provenance and extras of an entry that its definition does not carry.
struct Meta {
    source: String,
    from_memory: bool,
    origin: String,
    molar_mass: Option<f64>,
}

impl Meta {
    fn added_in_code(source: Option<&str>) -> Self {
        Meta {
            source: source.unwrap_or("user").to_string(),
            from_memory: false,
            origin: "added in code".into(),
            molar_mass: None,
        }
    }
}

impl Catalog {
    /// An empty catalog.
    pub fn empty() -> Self {
        Catalog::default()
    }

    /// The built-in data (read from the embedded data files once, then cloned).
    pub fn builtin() -> Self {
        static BUILTIN: OnceLock<Catalog> = OnceLock::new();
        BUILTIN.get_or_init(Catalog::read_builtin).clone()
    }

    /// Reads the embedded data files (what [`Catalog::builtin`] does once; public for the
    /// benchmark of reading them).
    #[doc(hidden)]
    pub fn read_builtin() -> Self {
        let mut cat = Catalog::empty();
        // The texts are borrowed from the embedded bytes: no copy of each until a definition
        // or description keeps it.
        let packed: PackedBuiltin<&'static str> = match postcard::from_bytes(BUILTIN_PACKED) {
            Ok(p) => p,
            Err(e) => {
                cat.problems.push(format!(
                    "the built-in catalogue written by the build script cannot be decoded: {e}"
                ));
                return cat;
            }
        };
        if packed.len() != BUILTIN_FILES.len() {
            cat.problems.push(format!(
                "the build script wrote {} built-in files, the library embeds {}",
                packed.len(),
                BUILTIN_FILES.len()
            ));
            return cat;
        }
        let files: Vec<_> = packed.into_iter().map(|f| f.map(format::PackedFile::unpack)).collect();
        // Room for the entries of all the files at once.
        let room = (files.iter().flatten()).fold(Room::default(), |r, f| r.add(Room::of(f)));
        cat.reserve(room);
        for ((name, text), file) in BUILTIN_FILES.into_iter().zip(files) {
            let origin = format!("built-in {name}");
            let loc = Located { file: &origin, text };
            let read = file.map_err(|f| loc.parse_error(f));
            if let Err(e) = read.and_then(|file| cat.load_parsed(file, &loc, false)) {
                cat.problems.push(e.to_string());
            }
        }
        cat
    }

    /// Built-in data files that failed to load (always empty in a correct build; the test
    /// suite checks it).
    pub fn load_problems(&self) -> &[String] {
        &self.problems
    }

    /// This catalog with the entries of the catalogue file at `path` added (format
    /// `protolyte-catalog/1`, see `docs/catalog-format.md`). An entry whose name is taken is
    /// refused unless it says `replace = true`; reagents and complexes built on a replaced
    /// family or ion then use the new definition. Nothing is changed when the file is refused.
    ///
    /// Errors name the file, the line and the field ([`Error::CatalogFile`]).
    pub fn with_file(mut self, path: impl AsRef<Path>) -> Result<Self> {
        let path = path.as_ref();
        let name = path.display().to_string();
        let text = std::fs::read_to_string(path).map_err(|e| {
            Error::CatalogFile(Box::new(CatalogFileError {
                file: name.clone(),
                line: 0,
                entry: String::new(),
                field: String::new(),
                message: format!("cannot read: {e}"),
            }))
        })?;
        self.load_toml_str(&text, &name)?;
        Ok(self)
    }

    /// Adds the entries of catalogue text `text`; `origin` names it in errors (a file name).
    /// All or nothing: when an entry is refused, the catalog is left as it was.
    ///
    /// ```
    /// use protolyte::Catalog;
    ///
    /// let mut cat = Catalog::builtin();
    /// cat.load_toml_str(r#"
    /// format = "protolyte-catalog/1"
    ///
    /// [[family]]
    /// name = "lab acid Q"
    /// charge_most_protonated = 0
    /// steps = [{ pka = 3.9 }, { pka = 6.1 }]
    /// source = "our own titration, notebook 12"
    /// "#, "lab.toml")?;
    /// assert_eq!(cat.protolyte("lab acid q")?.proton_count(), 2);
    ///
    /// let err = cat.load_toml_str("format = \"protolyte-catalog/1\"\n[[family]]\nname = \"y\"\n\
    ///     charge_most_protonated = 0\nsteps = [{ pka = 7.0 }, { pka = 3.0 }]\nsource = \"x\"\n", "bad.toml")
    ///     .unwrap_err();
    /// assert!(err.to_string().starts_with("bad.toml:5: family `y`, field `steps[1].pka`"), "{err}");
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn load_toml_str(&mut self, text: &str, origin: &str) -> Result<()> {
        self.load(text, origin, true)
    }

    /// Reads catalogue text; `atomic` leaves the catalog unchanged when an entry is refused
    /// (the built-in files need no copy: a refused entry there is a data bug, tested for).
    fn load(&mut self, text: &str, origin: &str, atomic: bool) -> Result<()> {
        let loc = Located { file: origin, text };
        let file = format::parse(text).map_err(|f| loc.parse_error(f))?;
        self.load_parsed(file, &loc, atomic)
    }

    /// Checks and adds the entries of a file as read (see [`Catalog::load`]).
    fn load_parsed<S: Text>(&mut self, file: CatalogFile<S>, loc: &Located, atomic: bool) -> Result<()> {
        match &file.format {
            None => {
                return Err(loc.error(
                    1,
                    "",
                    "format",
                    format!("missing: a catalogue file starts with format = \"{CATALOG_FORMAT}\""),
                ));
            }
            Some(f) if &**f.get_ref() != CATALOG_FORMAT => {
                return Err(loc.error(
                    loc.line_of(f.span().start),
                    "",
                    "format",
                    format!(
                        "`{}` is not a catalogue format this version reads (`{CATALOG_FORMAT}`)",
                        f.get_ref()
                    ),
                ));
            }
            Some(_) => {}
        }
        if atomic {
            let mut next = self.clone();
            next.apply(file, loc)?;
            *self = next;
            Ok(())
        } else {
            self.apply(file, loc)
        }
    }

    /// This catalog with the entries of catalogue text `text` added (see [`Catalog::load_toml_str`]).
    pub fn with_toml_str(mut self, text: &str, origin: &str) -> Result<Self> {
        self.load_toml_str(text, origin)?;
        Ok(self)
    }

    fn find(&self, kind: DataKind, name: &str) -> Result<usize> {
        // A short plain-ASCII name is lower-cased on the stack (no allocation per lookup);
        // the general normalisation serves the rest.
        let mut buf = [0u8; 64];
        if name.len() <= buf.len()
            && let Some(key) = plain_lowercase(name, &mut buf)
            && let Some(idx) = self.index.get(key).and_then(|a| a[kind as usize])
        {
            return Ok(idx);
        }
        let key = normalized(name);
        if let Some(idx) = self.index.get(key.as_ref()).and_then(|a| a[kind as usize]) {
            return Ok(idx);
        }
        // Not found: suggest the closest name or synonym, if it is close.
        let keyed: Vec<(String, &str)> = (self.info.iter().filter(|i| i.kind == kind))
            .flat_map(|info| info.keys().map(move |k| (k, info.name.as_str())))
            .collect();
        let candidates = keyed.iter().map(|(k, n)| (k.as_str(), *n));
        Err(Error::UnknownName {
            kind: kind.name(),
            name: name.to_string(),
            suggestion: suggestion(&key, candidates),
        })
    }

    /// The acid–base family named `name` (or a synonym).
    pub fn protolyte(&self, name: &str) -> Result<Protolyte> {
        self.find(DataKind::Protolyte, name).map(|i| self.protolytes[i].clone())
    }

    /// The simple ion named `name`.
    pub fn ion(&self, name: &str) -> Result<Ion> {
        self.find(DataKind::Ion, name).map(|i| self.ions[i].clone())
    }

    /// The reagent named `name`.
    pub fn reagent(&self, name: &str) -> Result<Reagent> {
        self.find(DataKind::Reagent, name).map(|i| self.reagents[i].clone())
    }

    /// The complex named `name`.
    pub fn complex(&self, name: &str) -> Result<Complex> {
        self.find(DataKind::Complex, name).map(|i| self.complexes[i].clone())
    }

    /// Every complex in the catalog (give them to [`Recipe::add_complexes`](crate::Recipe::add_complexes);
    /// the ones whose parts are absent are left out at compile time).
    pub fn complexes(&self) -> &[Complex] {
        &self.complexes
    }

    /// Every entry's description, grouped by kind (families, ions, reagents, complexes),
    /// built-in first within each kind.
    pub fn entries(&self) -> &[DataInfo] {
        &self.info
    }

    /// The description of the entry of `kind` named `name` (or a synonym).
    ///
    /// ```
    /// use protolyte::{Catalog, DataKind};
    /// let cat = Catalog::builtin();
    /// let info = cat.info(DataKind::Protolyte, "phosphoric acid")?;
    /// assert_eq!(info.steps.len(), 3);
    /// assert_eq!(info.forms[1].name, "H2PO4-");
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn info(&self, kind: DataKind, name: &str) -> Result<&DataInfo> {
        let i = self.find(kind, name)?;
        Ok(&self.info[self.offset(kind) + i])
    }

    /// The entry of any kind whose name or synonym is closest to `name` by edit distance, if
    /// it is close (the same search that gives an unknown name its "did you mean"): for a
    /// query that [`search`](Self::search) finds nothing for.
    ///
    /// ```
    /// use protolyte::Catalog;
    /// let cat = Catalog::builtin();
    /// assert!(cat.search("calcum").is_empty());
    /// assert_eq!(cat.closest("calcum").map(|e| e.name.as_str()), Some("calcium"));
    /// assert!(cat.closest("no such thing anywhere").is_none());
    /// ```
    pub fn closest(&self, name: &str) -> Option<&DataInfo> {
        let keyed: Vec<(String, &DataInfo)> = (self.info.iter())
            .flat_map(|info| info.keys().map(move |k| (k, info)))
            .collect();
        closest(name, keyed.iter().map(|(k, info)| (k.as_str(), *info)))
    }

    /// Entries whose name, a synonym or formula contains `query` (case-insensitive).
    ///
    /// ```
    /// use protolyte::Catalog;
    /// let cat = Catalog::builtin();
    /// let hits = cat.search("phosphate");
    /// assert!(hits.iter().any(|h| h.name == "phosphate"));
    /// ```
    pub fn search(&self, query: &str) -> Vec<&DataInfo> {
        let q = normalize(query);
        self.info
            .iter()
            .filter(|i| {
                normalize(&i.name).contains(&q)
                    || i.synonyms.iter().any(|s| normalize(s).contains(&q))
                    || normalize(&i.formula).contains(&q)
            })
            .collect()
    }

    /// The entries (kind, index within the kind) whose name or synonym equals one of `names`
    /// (`keys`: the names normalised), among the kinds that share a namespace with `kind`.
    fn conflicts(&self, kind: DataKind, names: &[&str], keys: &[String]) -> Vec<(String, DataKind, usize)> {
        let mut out = Vec::new();
        for (n, key) in names.iter().zip(keys) {
            if let Some(a) = self.index.get(key.as_str()) {
                for &k in namespace(kind) {
                    if let Some(idx) = a[k as usize] {
                        out.push((n.to_string(), k, idx));
                    }
                }
            }
        }
        out
    }

    fn conflict_error(&self, kind: DataKind, name: &str, existing: DataKind, idx: usize) -> Error {
        Error::NameConflict {
            name: name.to_string(),
            kind: kind.name(),
            existing_kind: existing.name(),
            existing_name: self.info[self.offset(existing) + idx].name.clone(),
        }
    }

    /// Refuses a name or synonym already taken (see [`Catalog::add_protolyte`]); `keys` are
    /// the names normalised ([`keys_of`]).
    fn check_new(&self, kind: DataKind, names: &[&str], keys: &[String]) -> Result<()> {
        if kind != DataKind::Reagent {
            self.check_phase_names(kind.name(), names, keys)?;
        }
        match self.conflicts(kind, names, keys).first() {
            Some((name, k, idx)) => Err(self.conflict_error(kind, name, *k, *idx)),
            None => Ok(()),
        }
    }

    /// For a replacement: the one entry of the same kind that the names point to (its index
    /// within the kind; `None` when they are all new). Refuses names held by an entry of
    /// another kind, or by two different entries.
    fn replacement_target(&self, kind: DataKind, names: &[&str]) -> Result<Option<usize>> {
        let mut target: Option<usize> = None;
        for (name, k, idx) in self.conflicts(kind, names, &keys_of(names)) {
            if k != kind || target.is_some_and(|t| t != idx) {
                return Err(self.conflict_error(kind, &name, k, idx));
            }
            target = Some(idx);
        }
        Ok(target)
    }

    /// The entries replaced by the `replace_*` calls and by catalogue files' `replace = true`,
    /// in order (their descriptions as they were before the replacement).
    pub fn replaced(&self) -> &[DataInfo] {
        &self.replaced
    }

    /// Replaces the family that `p`'s name or one of `synonyms` names, on purpose: the
    /// explicit override of a built-in (or earlier) definition of the same kind. Returns the
    /// description of the entry replaced (also kept in [`Catalog::replaced`]), or `None` when
    /// no entry had those names (then `p` is simply added).
    ///
    /// The replacement keeps the old entry's name and synonyms beside its own, and every
    /// reagent and complex of the catalog built on the old family is rebuilt on the new one
    /// (so that a recipe never meets two definitions under one name). Refuses names held by
    /// an entry of another kind or by two different entries ([`Error::NameConflict`]), and a
    /// replacement that leaves a dependent reagent or complex invalid (for instance with
    /// fewer steps than a reagent's form needs); the catalog is then unchanged.
    ///
    /// ```
    /// use protolyte::{Catalog, Protolyte};
    /// let mut cat = Catalog::builtin();
    /// let old = cat.replace_protolyte(Protolyte::new("acetate", &[4.80], 0)?, &[])?;
    /// assert_eq!(old.map(|o| o.name), Some("acetate".to_string()));
    /// assert_eq!(cat.protolyte("acetic acid")?.steps()[0].pka, 4.80);
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn replace_protolyte(&mut self, p: Protolyte, synonyms: &[&str]) -> Result<Option<DataInfo>> {
        let name = p.name().to_string();
        let meta = Meta::added_in_code(p.source());
        self.replace_with(DataKind::Protolyte, &name, synonyms, |cat, syn| {
            cat.add_protolyte_with(p, syn, meta)
        })
    }

    /// Replaces the simple ion that `ion`'s name or one of `synonyms` names, on purpose
    /// (see [`Catalog::replace_protolyte`], which this mirrors: reagents and complexes built
    /// on the old ion are rebuilt on the new one).
    pub fn replace_ion(&mut self, ion: Ion, synonyms: &[&str]) -> Result<Option<DataInfo>> {
        let name = ion.name().to_string();
        self.replace_with(DataKind::Ion, &name, synonyms, |cat, syn| {
            cat.add_ion_with(ion, syn, Meta::added_in_code(None))
        })
    }

    /// Replaces the reagent that `r`'s name or one of `synonyms` names, on purpose (see
    /// [`Catalog::replace_protolyte`]).
    pub fn replace_reagent(&mut self, r: Reagent, synonyms: &[&str]) -> Result<Option<DataInfo>> {
        let name = r.name().to_string();
        self.replace_with(DataKind::Reagent, &name, synonyms, |cat, syn| {
            cat.add_reagent_with(r, syn, Meta::added_in_code(None))
        })
    }

    /// Replaces the complex that `c`'s name or one of `synonyms` names, on purpose (see
    /// [`Catalog::replace_protolyte`]).
    pub fn replace_complex(&mut self, c: Complex, synonyms: &[&str]) -> Result<Option<DataInfo>> {
        let name = c.name().to_string();
        let meta = Meta::added_in_code(c.source());
        self.replace_with(DataKind::Complex, &name, synonyms, |cat, syn| {
            cat.add_complex_with(c, syn, meta)
        })
    }

    /// The replacement behind the `replace_*` calls: removes the target (if any), adds the new
    /// definition with the old entry's name and synonyms beside its own, and rebuilds the
    /// entries built on the old one. All or nothing.
    fn replace_with(
        &mut self,
        kind: DataKind,
        name: &str,
        synonyms: &[&str],
        add: impl FnOnce(&mut Catalog, &[&str]) -> Result<()>,
    ) -> Result<Option<DataInfo>> {
        let mut names = vec![name];
        names.extend_from_slice(synonyms);
        let Some(idx) = self.replacement_target(kind, &names)? else {
            add(self, synonyms)?;
            return Ok(None);
        };
        let mut next = self.clone();
        let old = next.remove(kind, idx);
        let mut all: Vec<String> = synonyms.iter().map(|s| s.to_string()).collect();
        for s in std::iter::once(&old.name).chain(&old.synonyms) {
            if normalize(s) != normalize(name) && !all.iter().any(|a| normalize(a) == normalize(s)) {
                all.push(s.clone());
            }
        }
        let refs: Vec<&str> = all.iter().map(String::as_str).collect();
        add(&mut next, &refs)?;
        next.rebind(kind, &old.name, name)?;
        next.replaced.push(old.clone());
        *self = next;
        Ok(Some(old))
    }

    /// Position of the first entry of `kind` in `info`.
    fn offset(&self, kind: DataKind) -> usize {
        let lens = [
            self.protolytes.len(),
            self.ions.len(),
            self.reagents.len(),
            self.complexes.len(),
        ];
        lens[..kind as usize].iter().sum()
    }

    fn len_of(&self, kind: DataKind) -> usize {
        match kind {
            DataKind::Protolyte => self.protolytes.len(),
            DataKind::Ion => self.ions.len(),
            DataKind::Reagent => self.reagents.len(),
            DataKind::Complex => self.complexes.len(),
        }
    }

    /// The display name of form `protons` of `p` (as [`Protolyte::form_name`] gives it):
    /// borrowed from the description of this catalog's family of the same name when that
    /// family has all that a form's name depends on alike (name, formula, charge, number of
    /// steps, form names), else computed. Reagents and complexes read from a file hold the
    /// catalog's own families, so their forms are named once, when the family is added.
    fn form_name_of<'s>(&'s self, p: &Protolyte, protons: usize) -> std::borrow::Cow<'s, str> {
        let own = self
            .index
            .get(normalized(p.name()).as_ref())
            .and_then(|a| a[DataKind::Protolyte as usize])
            .filter(|&i| {
                let q = &self.protolytes[i];
                q.name() == p.name()
                    && q.formula() == p.formula()
                    && q.charge_most_protonated() == p.charge_most_protonated()
                    && q.proton_count() == p.proton_count()
                    && q.form_names() == p.form_names()
            })
            .and_then(|i| {
                let forms = &self.info[self.offset(DataKind::Protolyte) + i].forms;
                let form = forms.get(p.proton_count().checked_sub(protons)?)?;
                (form.protons == protons).then_some(form.name.as_str())
            });
        match own {
            Some(name) => std::borrow::Cow::Borrowed(name),
            None => std::borrow::Cow::Owned(p.form_name(protons)),
        }
    }

    /// Records an entry's description at the end of its kind's group and indexes its names
    /// (`keys`: its name and `synonyms` normalised, [`keys_of`]). Call before pushing the
    /// definition.
    fn push_info(&mut self, mut info: DataInfo, synonyms: &[&str], keys: Vec<String>) {
        info.synonyms = synonyms.iter().map(|s| s.to_string()).collect();
        let kind = info.kind;
        let idx = self.len_of(kind);
        for k in keys {
            self.index.entry(k).or_default()[kind as usize].get_or_insert(idx);
        }
        let at = self.offset(kind) + idx;
        self.info.insert(at, info);
    }

    /// Adds a user-defined family, found by its name and `synonyms`.
    ///
    /// Names are unambiguous: families, simple ions and complexes share one namespace
    /// (a recipe matches them by name), reagents have their own. A name or synonym already
    /// held in that namespace, by an entry of any kind, is refused with
    /// [`Error::NameConflict`] naming both; to override an entry of the same kind on purpose
    /// use [`Catalog::replace_protolyte`] (and its siblings), which reports what it replaced.
    ///
    /// ```
    /// use protolyte::{Catalog, Error, Ion};
    /// let mut cat = Catalog::builtin();
    /// let err = cat.add_ion(Ion::new("acetate", 3)?, &[]).unwrap_err();
    /// assert!(matches!(err, Error::NameConflict { existing_kind: "protolyte", .. }));
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn add_protolyte(&mut self, p: Protolyte, synonyms: &[&str]) -> Result<()> {
        let meta = Meta::added_in_code(p.source());
        self.add_protolyte_with(p, synonyms, meta)
    }

    fn add_protolyte_with(&mut self, p: Protolyte, synonyms: &[&str], meta: Meta) -> Result<()> {
        let mut names = vec![p.name()];
        names.extend_from_slice(synonyms);
        let keys = keys_of(&names);
        self.check_new(DataKind::Protolyte, &names, &keys)?;
        let pk: Vec<String> = p.steps().iter().map(|s| format!("{}", s.pka)).collect();
        let summary = format!(
            "pKa {} (25 °C); most protonated charge {:+}",
            pk.join(", "),
            p.charge_most_protonated()
        );
        let formula = p.formula().unwrap_or("").to_string();
        let n = p.proton_count();
        let forms = (0..=n)
            .rev()
            .map(|j| FormInfo {
                name: p.form_name(j),
                protons: j,
                charge: p.form_charge(j),
                ion_size_angstrom: (p.form_charge(j) != 0).then(|| p.form_ion_size_angstrom(j)).flatten(),
            })
            .collect();
        let info = DataInfo {
            kind: DataKind::Protolyte,
            name: p.name().to_string(),
            synonyms: Vec::new(),
            molar_mass_g_per_mol: formula::molar_mass_g_per_mol(&formula, p.charge_most_protonated()),
            formula,
            summary,
            source: meta.source,
            from_memory: meta.from_memory,
            origin: meta.origin,
            charge: p.charge_most_protonated(),
            steps: p.steps().to_vec(),
            forms,
            ion_size_angstrom: p.ion_size_angstrom(),
            log10_beta: None,
            dh_kj_per_mol: None,
            dcp_j_per_mol_k: None,
            log_k_equations: (0..p.proton_count()).map(|k| p.log_k_equation(k)).collect(),
            parts: Vec::new(),
        };
        self.push_info(info, synonyms, keys);
        self.protolytes.push(p);
        Ok(())
    }

    /// Adds a user-defined ion (names as for [`Catalog::add_protolyte`]).
    pub fn add_ion(&mut self, ion: Ion, synonyms: &[&str]) -> Result<()> {
        self.add_ion_with(ion, synonyms, Meta::added_in_code(None))
    }

    fn add_ion_with(&mut self, ion: Ion, synonyms: &[&str], meta: Meta) -> Result<()> {
        let mut names = vec![ion.name()];
        names.extend_from_slice(synonyms);
        let keys = keys_of(&names);
        self.check_new(DataKind::Ion, &names, &keys)?;
        let formula = ion.display_name().to_string();
        let info = DataInfo {
            kind: DataKind::Ion,
            name: ion.name().to_string(),
            synonyms: Vec::new(),
            summary: format!("charge {:+}", ion.charge()),
            molar_mass_g_per_mol: formula::molar_mass_g_per_mol(&formula, ion.charge()),
            formula,
            source: meta.source,
            from_memory: meta.from_memory,
            origin: meta.origin,
            charge: ion.charge(),
            steps: Vec::new(),
            forms: Vec::new(),
            ion_size_angstrom: ion.ion_size_angstrom(),
            log10_beta: None,
            dh_kj_per_mol: None,
            dcp_j_per_mol_k: None,
            log_k_equations: Vec::new(),
            parts: Vec::new(),
        };
        self.push_info(info, synonyms, keys);
        self.ions.push(ion);
        Ok(())
    }

    /// Adds a user-defined reagent (its name and synonyms must be new among the reagents).
    pub fn add_reagent(&mut self, r: Reagent, synonyms: &[&str]) -> Result<()> {
        self.add_reagent_with(r, synonyms, Meta::added_in_code(None))
    }

    fn add_reagent_with(&mut self, r: Reagent, synonyms: &[&str], meta: Meta) -> Result<()> {
        let mut names = vec![r.name()];
        names.extend_from_slice(synonyms);
        let keys = keys_of(&names);
        self.check_new(DataKind::Reagent, &names, &keys)?;
        let molar_mass = r.molar_mass_g_per_mol().or(meta.molar_mass);
        let summary = match molar_mass {
            Some(m) => format!("M = {m} g/mol"),
            None => "no molar mass".into(),
        };
        let parts = r
            .parts()
            .iter()
            .map(|(c, n)| {
                // "{n} × {what}", written in one string.
                let mut s = n.to_string();
                s.push_str(" × ");
                match c {
                    Constituent::Form { protolyte, protons } => {
                        s.push_str(&self.form_name_of(protolyte, *protons));
                        s.push_str(" (");
                        s.push_str(protolyte.name());
                        s.push(')');
                    }
                    Constituent::Ion(i) => s.push_str(i.name()),
                    Constituent::Proton => s.push_str("H+"),
                    Constituent::Hydroxide => s.push_str("OH-"),
                }
                s
            })
            .collect();
        let info = DataInfo {
            kind: DataKind::Reagent,
            name: r.name().to_string(),
            synonyms: Vec::new(),
            formula: r.formula().unwrap_or("").to_string(),
            summary,
            source: meta.source,
            from_memory: meta.from_memory,
            origin: meta.origin,
            charge: 0,
            steps: Vec::new(),
            forms: Vec::new(),
            ion_size_angstrom: None,
            molar_mass_g_per_mol: molar_mass,
            log10_beta: None,
            dh_kj_per_mol: None,
            dcp_j_per_mol_k: None,
            log_k_equations: Vec::new(),
            parts,
        };
        self.push_info(info, synonyms, keys);
        self.reagents.push(r);
        Ok(())
    }

    /// Adds a user-defined complex (names as for [`Catalog::add_protolyte`]).
    pub fn add_complex(&mut self, c: Complex, synonyms: &[&str]) -> Result<()> {
        let meta = Meta::added_in_code(c.source());
        self.add_complex_with(c, synonyms, meta)
    }

    fn add_complex_with(&mut self, c: Complex, synonyms: &[&str], meta: Meta) -> Result<()> {
        let mut names = vec![c.name()];
        names.extend_from_slice(synonyms);
        let keys = keys_of(&names);
        self.check_new(DataKind::Complex, &names, &keys)?;
        let parts = c
            .parts()
            .iter()
            .map(|(p, n)| {
                // "{n} × {what}", written in one string.
                let mut s = n.to_string();
                s.push_str(" × ");
                match p {
                    ComplexPart::Base(f) => {
                        s.push_str(&self.form_name_of(f, 0));
                        s.push_str(" (");
                        s.push_str(f.name());
                        s.push(')');
                    }
                    ComplexPart::Ion(i) => s.push_str(i.name()),
                    ComplexPart::Proton => s.push_str("H+"),
                }
                s
            })
            .collect();
        let info = DataInfo {
            kind: DataKind::Complex,
            name: c.name().to_string(),
            synonyms: Vec::new(),
            formula: String::new(),
            summary: format!("log β {} (25 °C); charge {:+}", c.log10_beta(), c.charge()),
            source: meta.source,
            from_memory: meta.from_memory,
            origin: meta.origin,
            charge: c.charge(),
            steps: Vec::new(),
            forms: Vec::new(),
            ion_size_angstrom: c.ion_size_angstrom(),
            molar_mass_g_per_mol: None,
            log10_beta: Some(c.log10_beta()),
            dh_kj_per_mol: c.dh_kj_per_mol(),
            dcp_j_per_mol_k: c.dcp_j_per_mol_k(),
            log_k_equations: vec![c.log_k_equation()],
            parts,
        };
        self.push_info(info, synonyms, keys);
        self.complexes.push(c);
        Ok(())
    }

    /// Removes the entry of `kind` at `idx` (its definition and description) and returns
    /// its description.
    fn remove(&mut self, kind: DataKind, idx: usize) -> DataInfo {
        let at = self.offset(kind) + idx;
        let info = self.info.remove(at);
        match kind {
            DataKind::Protolyte => drop(self.protolytes.remove(idx)),
            DataKind::Ion => drop(self.ions.remove(idx)),
            DataKind::Reagent => drop(self.reagents.remove(idx)),
            DataKind::Complex => drop(self.complexes.remove(idx)),
        }
        self.reindex();
        info
    }

    fn reindex(&mut self) {
        self.index.clear();
        let mut per_kind = [0usize; 4];
        for info in &self.info {
            let idx = per_kind[info.kind as usize];
            per_kind[info.kind as usize] += 1;
            for k in info.keys() {
                self.index.entry(k).or_default()[info.kind as usize].get_or_insert(idx);
            }
        }
    }

    /// Rebuilds the reagents and complexes that hold the family or ion named `old_name` on
    /// its replacement, now named `new_name`.
    fn rebind(&mut self, kind: DataKind, old_name: &str, new_name: &str) -> Result<()> {
        let (new_family, new_ion) = match kind {
            DataKind::Protolyte => (self.protolyte(new_name).ok(), None),
            DataKind::Ion => (None, self.ion(new_name).ok()),
            _ => return Ok(()),
        };
        for r in &mut self.reagents {
            let mut touched = false;
            let parts: Vec<(Constituent, u32)> = r
                .parts()
                .iter()
                .map(|(c, n)| {
                    let c = match (c, &new_family, &new_ion) {
                        (Constituent::Form { protolyte, protons }, Some(f), _) if protolyte.name() == old_name => {
                            touched = true;
                            Constituent::Form {
                                protolyte: f.clone(),
                                protons: *protons,
                            }
                        }
                        (Constituent::Ion(i), _, Some(new)) if i.name() == old_name => {
                            touched = true;
                            Constituent::Ion(new.clone())
                        }
                        (c, _, _) => c.clone(),
                    };
                    (c, *n)
                })
                .collect();
            if touched {
                let mut rebuilt =
                    Reagent::new(r.name(), r.molar_mass_g_per_mol(), parts).map_err(|e| dependent(r.name(), e))?;
                if let Some(f) = r.formula() {
                    rebuilt = rebuilt.with_formula(f);
                }
                *r = rebuilt;
            }
        }
        for c in &mut self.complexes {
            let mut touched = false;
            let parts: Vec<(ComplexPart, i32)> = c
                .parts()
                .iter()
                .map(|(p, n)| {
                    let p = match (p, &new_family, &new_ion) {
                        (ComplexPart::Base(b), Some(f), _) if b.name() == old_name => {
                            touched = true;
                            ComplexPart::Base(f.clone())
                        }
                        (ComplexPart::Ion(i), _, Some(new)) if i.name() == old_name => {
                            touched = true;
                            ComplexPart::Ion(new.clone())
                        }
                        (p, _, _) => p.clone(),
                    };
                    (p, *n)
                })
                .collect();
            if touched {
                let rebuild = || -> Result<Complex> {
                    let mut x = Complex::new(c.name(), parts, c.log10_beta())?;
                    if let Some(s) = c.source() {
                        x = x.with_source(s);
                    }
                    if let Some(h) = c.dh_kj_per_mol() {
                        x = x.with_enthalpy_kj_per_mol(h)?;
                    }
                    if let Some(cp) = c.dcp_j_per_mol_k() {
                        x = x.with_heat_capacity_j_per_mol_k(cp)?;
                    }
                    if let Some(q) = c.log_k_equation() {
                        x = x.with_log_k_equation(q)?;
                    }
                    if let Some(a) = c.ion_size_angstrom() {
                        x = x.with_ion_size_angstrom(a)?;
                    }
                    Ok(x)
                };
                *c = rebuild().map_err(|e| dependent(c.name(), e))?;
            }
        }
        self.rebind_phases(old_name, new_family.as_ref(), new_ion.as_ref())
    }

    /// Adds every entry of a parsed file (families and ions first, so that reagents and
    /// complexes may refer to them).
    fn apply<S: Text>(&mut self, file: CatalogFile<S>, loc: &Located) -> Result<()> {
        for (k, v) in &file.sources {
            if v.trim().is_empty() {
                return Err(loc.error(
                    loc.line_of_key(&(0..loc.text.len()), k),
                    "",
                    "sources",
                    format!("`{k}` is empty"),
                ));
            }
        }
        // Room for every entry and name of the file at once (no regrowing entry by entry).
        self.reserve(Room::of(&file));
        self.sources
            .extend(file.sources.into_iter().map(|(k, v)| (k.into(), v.into())));
        for e in &file.family {
            self.apply_family(e, loc)?;
        }
        for e in &file.ion {
            self.apply_ion(e, loc)?;
        }
        for e in &file.reagent {
            self.apply_reagent(e, loc)?;
        }
        for e in &file.complex {
            self.apply_complex(e, loc)?;
        }
        for e in &file.solid {
            self.apply_solid(e, loc)?;
        }
        for e in &file.gas {
            self.apply_gas(e, loc)?;
        }
        Ok(())
    }

    /// The analytic log K(T) of an entry with one reaction (a complex, solid or gas, named by
    /// `kind`): refuses a `step`, reads the equation, and adds the equation's own citation to
    /// `source` (as "; `label`: ...") and its `from_memory` to `from_memory`.
    fn one_reaction_equation<S: Text>(
        &self,
        entry: &Entry,
        q: &EquationEntry<S>,
        kind: &str,
        label: &str,
        source: &mut String,
        from_memory: &mut bool,
    ) -> Result<LogKEquation> {
        if q.step.is_some() {
            return Err(entry.error("log_k_equation.step", format!("a {kind} has one reaction: no step")));
        }
        let eq = read_equation(q).map_err(|err| entry.error("log_k_equation", err))?;
        if q.source.is_some() || q.cite.is_some() {
            let text = self.citation(entry, q.source.as_deref(), q.cite.as_deref())?;
            source.push_str(&format!("; {label}: {text}"));
        }
        *from_memory |= q.from_memory;
        Ok(eq)
    }

    /// The citation of an entry: its `source`, or the `[sources]` text its `cite` names.
    fn citation(&self, entry: &Entry, source: Option<&str>, cite: Option<&str>) -> Result<String> {
        match (source, cite) {
            (Some(_), Some(_)) => Err(entry.error("cite", "give either `source` or `cite`, not both")),
            (None, None) => Err(entry.error(
                "source",
                "missing: every entry names its published source (`source = \"...\"` or `cite = \"key\"`)",
            )),
            (Some(s), None) if s.trim().is_empty() => Err(entry.error("source", "is empty")),
            (Some(s), None) => Ok(s.trim().to_string()),
            (None, Some(k)) => self
                .sources
                .get(k)
                .cloned()
                .ok_or_else(|| entry.error("cite", format!("no source `{k}` in the [sources] table"))),
        }
    }

    /// Adds a definition through the `add_*` functions, or through the `replace_*` machinery
    /// when the file says `replace = true` (then an entry of that name must exist).
    fn place<S: Text>(
        &mut self,
        kind: DataKind,
        entry: &Entry,
        replace: bool,
        synonyms: &[S],
        add: impl FnOnce(&mut Catalog, &[&str]) -> Result<()>,
    ) -> Result<()> {
        let refs: Vec<&str> = synonyms.iter().map(|s| &**s).collect();
        let named = |e: Error| match e {
            Error::NameConflict {
                name,
                kind: k,
                existing_kind,
                existing_name,
            } => {
                let hint = if k == existing_kind && !replace {
                    "; write `replace = true` in the entry to replace it"
                } else if k == existing_kind {
                    ""
                } else {
                    " (families, ions and complexes share one set of names)"
                };
                entry.error(
                    "name",
                    format!("the name `{name}` is already used by the {existing_kind} `{existing_name}`{hint}"),
                )
            }
            e => entry.wrap(e),
        };
        if replace {
            let mut names = vec![entry.name];
            names.extend_from_slice(&refs);
            if self.replacement_target(kind, &names).map_err(named)?.is_none() {
                return Err(entry.error(
                    "replace",
                    format!("there is no {} named `{}` to replace", kind.name(), entry.name),
                ));
            }
            self.replace_with(kind, entry.name, &refs, add).map_err(|e| match e {
                Error::InconsistentDefinition { .. } => entry.error("replace", e),
                e => named(e),
            })?;
        } else {
            add(self, &refs).map_err(named)?;
        }
        Ok(())
    }

    fn apply_family<S: Text>(&mut self, spanned: &Spanned<FamilyEntry<S>>, loc: &Located) -> Result<()> {
        let e = spanned.get_ref();
        let entry = Entry::new(loc, spanned.span(), DataKind::Protolyte, &e.name);
        let source = self.citation(&entry, e.source.as_deref(), e.cite.as_deref())?;
        for (k, pair) in e.steps.windows(2).enumerate() {
            let (a, b) = (pair[0].pka, pair[1].pka);
            if b < a {
                return Err(loc.error(
                    loc.line_of_item(&entry.span(), "steps", k + 1),
                    &entry.label(),
                    &format!("steps[{}].pka", k + 1),
                    format!("pKa values ascend, most protonated form first: {b} follows {a}"),
                ));
            }
        }
        let pkas: Vec<f64> = e.steps.iter().map(|s| s.pka).collect();
        let steps: Vec<Step> = e
            .steps
            .iter()
            .map(|s| Step {
                pka: s.pka,
                dh_kj_per_mol: s.dh_kj_per_mol,
                dcp_j_per_mol_k: s.dcp_j_per_mol_k,
            })
            .collect();
        let mut p = Protolyte::new(&e.name, &pkas, e.charge_most_protonated)
            .and_then(|p| p.with_steps(steps))
            .map_err(|err| entry.wrap(err))?
            .with_source(&source);
        if let Some(f) = &e.formula {
            p = p.with_formula(f);
        }
        if let Some(names) = &e.form_names {
            let names: Vec<&str> = names.iter().map(|n| &**n).collect();
            p = p.with_form_names(&names).map_err(|err| match err {
                Error::InconsistentDefinition { reason, .. } => entry.error("form_names", reason),
                other => entry.wrap(other),
            })?;
        }
        if let Some(a) = e.ion_size_angstrom {
            p = p.with_ion_size_angstrom(a).map_err(|err| entry.wrap(err))?;
        }
        if let Some(sizes) = &e.form_ion_sizes_angstrom {
            let n = pkas.len();
            if sizes.len() != n + 1 {
                return Err(entry.error(
                    "form_ion_sizes_angstrom",
                    format!(
                        "{} values for {} forms (one per form, most protonated first)",
                        sizes.len(),
                        n + 1
                    ),
                ));
            }
            // 0 means "none listed": a neutral form needs none, a charged one takes the
            // family's single size.
            let mut filled = Vec::with_capacity(n + 1);
            for (k, &a) in sizes.iter().enumerate() {
                let protons = n - k;
                let charged = p.form_charge(protons) != 0;
                filled.push(match (a == 0.0, charged, p.ion_size_angstrom()) {
                    (true, false, _) => 0.0,
                    (true, true, Some(family)) => family,
                    (true, true, None) => {
                        return Err(entry.error(
                            "form_ion_sizes_angstrom",
                            format!(
                                "the charged form {} has no size (0) and the family has no ion_size_angstrom to fall back on",
                                p.form_name(protons)
                            ),
                        ));
                    }
                    (false, _, _) => a,
                });
            }
            p = p
                .with_form_ion_sizes(&filled)
                .map_err(|err| entry.error("form_ion_sizes_angstrom", err))?;
        }
        // Temperature data with sources of their own: named in the family's source text.
        let (mut source, mut from_memory) = (source, e.from_memory);
        for (k, s) in e.steps.iter().enumerate() {
            if s.source.is_some() || s.cite.is_some() {
                let text = self.citation(&entry, s.source.as_deref(), s.cite.as_deref())?;
                source.push_str(&format!("; step {} ΔH°/ΔCp°: {text}", k + 1));
                from_memory |= s.from_memory;
            }
        }
        // The line of the i-th [[family.log_k_equation]] table of this entry, for errors.
        let eq_error = |i: usize, field: &str, message: String| {
            let start = entry.span().start.min(loc.text.len());
            let rest = &loc.text[start..];
            let end = rest
                .get(1..)
                .and_then(|r| r.find("\n[[family]]"))
                .map_or(rest.len(), |e| e + 1);
            let line = rest[..end]
                .match_indices("[[family.log_k_equation]]")
                .nth(i)
                .map_or_else(|| loc.line_of(start), |(o, _)| loc.line_of(start + o));
            loc.error(line, &entry.label(), field, message)
        };
        for (i, q) in e.log_k_equation.iter().enumerate() {
            let field = format!("log_k_equation[{i}]");
            let step = match q.step {
                Some(k) if (1..=pkas.len()).contains(&k) => k,
                Some(k) => {
                    return Err(eq_error(
                        i,
                        &format!("{field}.step"),
                        format!("step {k} of a family with {} steps (1 = most protonated)", pkas.len()),
                    ));
                }
                None => {
                    return Err(eq_error(
                        i,
                        &format!("{field}.step"),
                        "missing: which step (1 = most protonated)".into(),
                    ));
                }
            };
            let eq = read_equation(q).map_err(|err| eq_error(i, &field, err.to_string()))?;
            p = p
                .with_log_k_equation(step - 1, eq)
                .map_err(|err| eq_error(i, &field, err.to_string()))?;
            if q.source.is_some() || q.cite.is_some() {
                let text = self.citation(&entry, q.source.as_deref(), q.cite.as_deref())?;
                source.push_str(&format!("; log K(T) equation of step {step}: {text}"));
            }
            from_memory |= q.from_memory;
        }
        let p = p.with_source(&source);
        let meta = Meta {
            source,
            from_memory,
            origin: loc.file.to_string(),
            molar_mass: None,
        };
        self.place(DataKind::Protolyte, &entry, e.replace, &e.synonyms, |cat, syn| {
            cat.add_protolyte_with(p, syn, meta)
        })
    }

    fn apply_ion<S: Text>(&mut self, spanned: &Spanned<IonEntry<S>>, loc: &Located) -> Result<()> {
        let e = spanned.get_ref();
        let entry = Entry::new(loc, spanned.span(), DataKind::Ion, &e.name);
        let source = self.citation(&entry, e.source.as_deref(), e.cite.as_deref())?;
        let mut ion = Ion::new(&e.name, e.charge).map_err(|err| entry.wrap(err))?;
        if let Some(f) = &e.formula {
            ion = ion.with_formula(f);
        }
        if let Some(a) = e.ion_size_angstrom {
            ion = ion.with_ion_size_angstrom(a).map_err(|err| entry.wrap(err))?;
        }
        let meta = Meta {
            source,
            from_memory: e.from_memory,
            origin: loc.file.to_string(),
            molar_mass: None,
        };
        self.place(DataKind::Ion, &entry, e.replace, &e.synonyms, |cat, syn| {
            cat.add_ion_with(ion, syn, meta)
        })
    }

    fn apply_reagent<S: Text>(&mut self, spanned: &Spanned<ReagentEntry<S>>, loc: &Located) -> Result<()> {
        let e = spanned.get_ref();
        let entry = Entry::new(loc, spanned.span(), DataKind::Reagent, &e.name);
        let source = self.citation(&entry, e.source.as_deref(), e.cite.as_deref())?;
        let parts = read_parts(
            &e.parts,
            loc,
            &entry,
            |part, at| match part {
                PartRef::Family(f, protons) => Ok(Constituent::Form {
                    protolyte: self.protolyte(f).map_err(|err| at.error("family", err))?,
                    protons: protons as usize,
                }),
                PartRef::Ion(i) => Ok(Constituent::Ion(self.ion(i).map_err(|err| at.error("ion", err))?)),
                PartRef::Proton => Ok(Constituent::Proton),
                PartRef::Hydroxide => Ok(Constituent::Hydroxide),
                PartRef::Base(_) => Err(at.error(
                    "base",
                    "a reagent names a family form as { family = \"...\", protons = n }",
                )),
            },
            |n, at| {
                u32::try_from(n).map_err(|_| at.error("count", format!("a reagent's counts are positive, got {n}")))
            },
        )?;
        let computed = e.formula.as_deref().and_then(|f| formula::molar_mass_g_per_mol(f, 0));
        if let (Some(stored), Some(m)) = (e.molar_mass_g_per_mol, computed)
            && (stored - m).abs() > 1e-3 * m
        {
            return Err(entry.error(
                "molar_mass_g_per_mol",
                format!(
                    "{stored} g/mol disagrees with {m:.3} g/mol computed from the formula {} (IUPAC 2021 atomic weights)",
                    e.formula.as_deref().unwrap_or("")
                ),
            ));
        }
        let mut r = Reagent::new(&e.name, e.molar_mass_g_per_mol.or(computed), parts).map_err(|err| entry.wrap(err))?;
        if let Some(f) = &e.formula {
            r = r.with_formula(f);
        }
        let meta = Meta {
            source,
            from_memory: e.from_memory,
            origin: loc.file.to_string(),
            molar_mass: computed,
        };
        self.place(DataKind::Reagent, &entry, e.replace, &e.synonyms, |cat, syn| {
            cat.add_reagent_with(r, syn, meta)
        })
    }

    fn apply_complex<S: Text>(&mut self, spanned: &Spanned<ComplexEntry<S>>, loc: &Located) -> Result<()> {
        let e = spanned.get_ref();
        let entry = Entry::new(loc, spanned.span(), DataKind::Complex, &e.name);
        let source = self.citation(&entry, e.source.as_deref(), e.cite.as_deref())?;
        let parts = read_parts(
            &e.parts,
            loc,
            &entry,
            |part, at| match part {
                PartRef::Base(f) => Ok(ComplexPart::Base(
                    self.protolyte(f).map_err(|err| at.error("base", err))?,
                )),
                PartRef::Ion(i) => Ok(ComplexPart::Ion(self.ion(i).map_err(|err| at.error("ion", err))?)),
                PartRef::Proton => Ok(ComplexPart::Proton),
                PartRef::Family(..) => Err(at.error(
                    "family",
                    "a complex names its ligand by the fully deprotonated form: { base = \"...\" }",
                )),
                PartRef::Hydroxide => Err(at.error(
                    "hydroxide",
                    "a hydroxo complex loses protons: write { proton = -1 } for each OH",
                )),
            },
            |n, _| Ok(n),
        )?;
        let mut c = Complex::new(&e.name, parts, e.log_beta)
            .map_err(|err| entry.wrap(err))?
            .with_source(&source);
        if let Some(h) = e.dh_kj_per_mol {
            c = c.with_enthalpy_kj_per_mol(h).map_err(|err| entry.wrap(err))?;
        }
        if let Some(cp) = e.dcp_j_per_mol_k {
            c = c
                .with_heat_capacity_j_per_mol_k(cp)
                .map_err(|err| entry.error("dcp_j_per_mol_k", err))?;
        }
        let (mut source, mut from_memory) = (source, e.from_memory);
        if let Some(q) = &e.log_k_equation {
            let eq =
                self.one_reaction_equation(&entry, q, "complex", "log K(T) equation", &mut source, &mut from_memory)?;
            c = c
                .with_log_k_equation(eq)
                .map_err(|err| entry.error("log_k_equation", err))?
                .with_source(&source);
        }
        if let Some(a) = e.ion_size_angstrom {
            c = c.with_ion_size_angstrom(a).map_err(|err| entry.wrap(err))?;
        }
        let meta = Meta {
            source,
            from_memory,
            origin: loc.file.to_string(),
            molar_mass: None,
        };
        self.place(DataKind::Complex, &entry, e.replace, &e.synonyms, |cat, syn| {
            cat.add_complex_with(c, syn, meta)
        })
    }
}

/// How many entries and names a file adds: (names of families, ions, reagents and complexes;
/// their entries; names of solids and gases).
#[derive(Clone, Copy, Default)]
struct Room(usize, usize, usize);

impl Room {
    fn of<S>(file: &CatalogFile<S>) -> Self {
        fn names<T>(entries: &[Spanned<T>], synonyms: impl Fn(&T) -> usize) -> usize {
            entries.iter().map(|e| 1 + synonyms(e.get_ref())).sum()
        }
        Room(
            names(&file.family, |e| e.synonyms.len())
                + names(&file.ion, |e| e.synonyms.len())
                + names(&file.reagent, |e| e.synonyms.len())
                + names(&file.complex, |e| e.synonyms.len()),
            file.family.len() + file.ion.len() + file.reagent.len() + file.complex.len(),
            names(&file.solid, |e| e.synonyms.len()) + names(&file.gas, |e| e.synonyms.len()),
        )
    }

    fn add(self, other: Room) -> Self {
        Room(self.0 + other.0, self.1 + other.1, self.2 + other.2)
    }
}

impl Catalog {
    /// Makes room for `room` more names and entries (a no-op where there is room already).
    fn reserve(&mut self, room: Room) {
        self.index.reserve(room.0);
        self.info.reserve(room.1);
        self.phase_index.reserve(room.2);
    }
}

/// A log K(T) equation as read from a file.
fn read_equation<S>(q: &EquationEntry<S>) -> Result<LogKEquation> {
    LogKEquation::new(
        q.coefficients,
        ValidityRange::celsius(q.range_celsius[0], q.range_celsius[1])?,
    )
}

/// An entry being read: where it is, for errors.
struct Entry<'a> {
    loc: &'a Located<'a>,
    /// The span of the entry's `[[table]]` header (the entry's whole text is found from it
    /// only when an error needs a line: [`Entry::span`]).
    header: std::ops::Range<usize>,
    kind: DataKind,
    /// The table name shown in messages ("family", ..., "solid", "gas").
    table: &'static str,
    name: &'a str,
}

impl<'a> Entry<'a> {
    fn new(loc: &'a Located<'a>, header: std::ops::Range<usize>, kind: DataKind, name: &'a str) -> Self {
        Entry {
            loc,
            header,
            kind,
            table: kind.table(),
            name,
        }
    }

    /// A solid's or a gas's entry (`table` "solid" or "gas"); its parts read as a complex's.
    fn phase(loc: &'a Located<'a>, span: std::ops::Range<usize>, table: &'static str, name: &'a str) -> Self {
        let mut e = Entry::new(loc, span, DataKind::Complex, name);
        e.table = table;
        e
    }

    /// The text range of the whole entry, for the line of a field.
    fn span(&self) -> std::ops::Range<usize> {
        self.loc.entry_range(self.header.clone())
    }

    fn label(&self) -> String {
        format!("{} `{}`", self.table, self.name)
    }

    fn error(&self, field: &str, message: impl std::fmt::Display) -> Error {
        let key = field.split(['[', '.']).next().unwrap_or(field);
        let line = self.loc.line_of_key(&self.span(), key);
        self.loc.error(line, &self.label(), field, message)
    }

    /// A definition's own error, attributed to the field it is about.
    fn wrap(&self, err: Error) -> Error {
        let field = match &err {
            Error::InvalidParameter { parameter, .. } => match *parameter {
                "pKa" => "steps",
                "ΔH° (kJ/mol)" if self.kind == DataKind::Protolyte => "steps",
                "ΔCp° (J/(mol·K))" => "steps",
                "ΔH° (kJ/mol)" => "dh_kj_per_mol",
                "ion size (Å)" => "ion_size_angstrom",
                "log β" => "log_beta",
                "log K" => "log_k",
                "log K_H" => "log_kh",
                "molar mass (g/mol)" => "molar_mass_g_per_mol",
                _ => "",
            },
            Error::NotElectroneutral { .. } => "parts",
            Error::InconsistentDefinition { reason, .. } if reason.contains("step") => "steps",
            Error::InconsistentDefinition { reason, .. } if reason.contains("charge") => match self.kind {
                DataKind::Protolyte => "charge_most_protonated",
                DataKind::Ion => "charge",
                _ => "parts",
            },
            Error::InconsistentDefinition { reason, .. } if reason.contains("name") => "name",
            _ => "parts",
        };
        let field = if field.is_empty() { "name" } else { field };
        self.error(field, err)
    }
}

/// One part of a reagent or complex being read.
struct PartAt<'a> {
    loc: &'a Located<'a>,
    entry: &'a Entry<'a>,
    k: usize,
}

impl PartAt<'_> {
    fn error(&self, key: &str, message: impl std::fmt::Display) -> Error {
        self.loc.error(
            self.loc.line_of_item(&self.entry.span(), "parts", self.k),
            &self.entry.label(),
            &format!("parts[{}].{key}", self.k),
            message,
        )
    }
}

enum PartRef<'a> {
    Family(&'a str, u32),
    Base(&'a str),
    Ion(&'a str),
    Proton,
    Hydroxide,
}

/// Which part this is; exactly one of `family`, `base`, `ion`, `proton`, `hydroxide`.
fn read_part<'a, S: Text>(p: &'a PartEntry<S>, at: &PartAt) -> Result<PartRef<'a>> {
    let given = [
        p.family.is_some(),
        p.base.is_some(),
        p.ion.is_some(),
        p.proton.is_some(),
        p.hydroxide.is_some(),
    ];
    if given.iter().filter(|&&g| g).count() != 1 {
        return Err(at.error(
            "",
            "a part is exactly one of { family = \"...\", protons = n }, { base = \"...\" }, { ion = \"...\" }, { proton = n }, { hydroxide = n }",
        ));
    }
    if p.protons.is_some() && p.family.is_none() {
        return Err(at.error("protons", "only a family part takes `protons`"));
    }
    if p.count.is_some() && (p.proton.is_some() || p.hydroxide.is_some()) {
        return Err(at.error("count", "a proton or hydroxide part gives its count as its value"));
    }
    Ok(if let Some(f) = &p.family {
        let protons = p
            .protons
            .ok_or_else(|| at.error("protons", "a family part says how many protons the form holds"))?;
        PartRef::Family(f, protons)
    } else if let Some(b) = &p.base {
        PartRef::Base(b)
    } else if let Some(i) = &p.ion {
        PartRef::Ion(i)
    } else if p.proton.is_some() {
        PartRef::Proton
    } else {
        PartRef::Hydroxide
    })
}

/// The parts of a reagent or complex, in order: for each, which part it is, turned into the
/// definition's own part by `kind` (which refuses the kinds the definition does not take),
/// then its count, checked by `count`. The first error met is returned.
fn read_parts<C, N, S: Text>(
    parts: &[PartEntry<S>],
    loc: &Located,
    entry: &Entry,
    mut kind: impl FnMut(PartRef<'_>, &PartAt) -> Result<C>,
    mut count: impl FnMut(i32, &PartAt) -> Result<N>,
) -> Result<Vec<(C, N)>> {
    let mut out = Vec::with_capacity(parts.len());
    for (k, p) in parts.iter().enumerate() {
        let at = PartAt { loc, entry, k };
        let c = kind(read_part(p, &at)?, &at)?;
        let n = count(read_count(p, &at)?, &at)?;
        out.push((c, n));
    }
    Ok(out)
}

/// The count of a part: `count` (default 1), or the value of `proton` / `hydroxide`.
fn read_count<S>(p: &PartEntry<S>, at: &PartAt) -> Result<i32> {
    let n = p.proton.or(p.hydroxide).or(p.count).unwrap_or(1);
    if n == 0 {
        return Err(at.error("count", "a count of 0"));
    }
    Ok(n)
}

#[cfg(test)]
mod tests {
    use super::format::{self, BUILTIN_PATHS, PackedBuiltin, PackedFile};
    use super::{BUILTIN_FILES, BUILTIN_PACKED, Catalog, normalized, plain_lowercase};

    /// The compact form the build script embedded is, file by file, what the TOML reader
    /// gives for the embedded text now: spans included, so error lines cannot drift either.
    #[test]
    fn embedded_compact_form_is_a_fresh_parse_of_the_data_files() {
        let packed: PackedBuiltin = postcard::from_bytes(BUILTIN_PACKED).expect("decodes");
        assert_eq!(packed.len(), BUILTIN_FILES.len());
        for (((name, text), path), file) in BUILTIN_FILES.iter().zip(BUILTIN_PATHS).zip(packed) {
            assert_eq!(
                *name, path,
                "the library and the build script embed the same files in one order"
            );
            let fresh = format::parse(text).map(PackedFile::pack);
            assert!(fresh.is_ok(), "{name} parses");
            assert!(
                fresh == file,
                "{name}: the embedded compact form differs from a fresh parse"
            );
        }
    }

    /// The built-in catalogue read through the compact form (`read_builtin`) is the catalogue
    /// that the users' path (`load_toml_str`, TOML parsed at run time) builds from the same
    /// files: every definition, description, index key, citation, solid and gas.
    #[test]
    fn fast_path_and_user_file_path_build_the_same_catalogue() {
        let fast = Catalog::read_builtin();
        assert!(fast.load_problems().is_empty(), "{:?}", fast.load_problems());
        let mut slow = Catalog::empty();
        for (name, text) in BUILTIN_FILES {
            slow.load_toml_str(text, &format!("built-in {name}"))
                .expect("loads as a user's file");
        }
        assert!(!fast.info.is_empty() && !fast.solids.is_empty() && !fast.gases.is_empty());
        assert_eq!(fast.protolytes, slow.protolytes);
        assert_eq!(fast.ions, slow.ions);
        assert_eq!(fast.reagents, slow.reagents);
        assert_eq!(fast.complexes, slow.complexes);
        assert_eq!(fast.info, slow.info);
        assert_eq!(fast.index, slow.index);
        assert_eq!(fast.sources, slow.sources);
        assert_eq!(fast.solids, slow.solids);
        assert_eq!(fast.gases, slow.gases);
        assert_eq!(fast.solid_entries, slow.solid_entries);
        assert_eq!(fast.gas_entries, slow.gas_entries);
        assert_eq!(fast.phase_index, slow.phase_index);
        assert_eq!(fast.replaced, slow.replaced);
    }

    /// Each reagent's and complex's parts in words, with every form named as the family's
    /// own `form_name` names it (the descriptions borrow the names given when the family was
    /// added; a family of the same name that names its forms otherwise gets its own names).
    #[test]
    fn part_texts_name_forms_as_their_families_do() {
        use crate::{ComplexPart, Constituent, Protolyte, Reagent};
        fn reagent_text(r: &Reagent) -> Vec<String> {
            (r.parts().iter())
                .map(|(c, n)| match c {
                    Constituent::Form { protolyte, protons } => {
                        format!("{n} × {} ({})", protolyte.form_name(*protons), protolyte.name())
                    }
                    Constituent::Ion(i) => format!("{n} × {}", i.name()),
                    Constituent::Proton => format!("{n} × H+"),
                    Constituent::Hydroxide => format!("{n} × OH-"),
                })
                .collect()
        }
        let mut cat = Catalog::read_builtin();
        let reagents = cat.info.iter().filter(|i| i.kind == super::DataKind::Reagent);
        assert_eq!(reagents.clone().count(), cat.reagents.len());
        for (r, info) in cat.reagents.iter().zip(reagents) {
            assert_eq!(info.parts, reagent_text(r), "{}", r.name());
        }
        let complexes = cat.info.iter().filter(|i| i.kind == super::DataKind::Complex);
        for (c, info) in cat.complexes.iter().zip(complexes) {
            let want: Vec<String> = (c.parts().iter())
                .map(|(p, n)| match p {
                    ComplexPart::Base(f) => format!("{n} × {} ({})", f.form_name(0), f.name()),
                    ComplexPart::Ion(i) => format!("{n} × {}", i.name()),
                    ComplexPart::Proton => format!("{n} × H+"),
                })
                .collect();
            assert_eq!(info.parts, want, "{}", c.name());
        }
        // A reagent built in code on a family that shares the built-in acetate's name but not
        // its formula: its forms are named from its own formula.
        let own = Protolyte::new("acetate", &[4.0], 0).expect("family").with_formula("HQ");
        assert_ne!(
            own.form_name(0),
            cat.protolyte("acetate").expect("built in").form_name(0)
        );
        let sodium = cat.ion("sodium").expect("built in");
        let r = Reagent::new(
            "sodium Q (test)",
            None,
            vec![
                (
                    Constituent::Form {
                        protolyte: own,
                        protons: 0,
                    },
                    1,
                ),
                (Constituent::Ion(sodium), 1),
            ],
        )
        .expect("reagent");
        cat.add_reagent(r.clone(), &[]).expect("added");
        let info = cat.info(super::DataKind::Reagent, "sodium Q (test)").expect("found");
        assert_eq!(info.parts, reagent_text(&r));
        assert!(info.parts[0].starts_with("1 × Q-"), "{:?}", info.parts);
    }

    /// A fault in a built-in file is reported as a user's file reports it: the same message,
    /// naming the file, the line, the entry and the field.
    #[test]
    fn a_fault_reads_the_same_on_both_paths() {
        let text = "format = \"protolyte-catalog/1\"\n[[family]]\nname = \"y\"\ncharge_most_protonated = 0\n\
                    steps = [{ pka = 7.0 }, { pka = 3.0 }]\nsource = \"x\"\n";
        let slow = Catalog::empty().load_toml_str(text, "f.toml").unwrap_err();
        let file = PackedFile::pack(format::parse(text).expect("parses")).unpack();
        let loc = super::Located { file: "f.toml", text };
        let fast = Catalog::empty().load_parsed(file, &loc, false).unwrap_err();
        assert_eq!(fast.to_string(), slow.to_string());
        assert!(
            slow.to_string()
                .starts_with("f.toml:5: family `y`, field `steps[1].pka`"),
            "{slow}"
        );
        // A syntax error: the same line and message.
        let bad = "format = \"protolyte-catalog/1\"\n[[family]]\nname = \n";
        let slow = Catalog::empty().load_toml_str(bad, "g.toml").unwrap_err();
        let loc = super::Located {
            file: "g.toml",
            text: bad,
        };
        let fast = loc.parse_error(format::parse(bad).expect_err("does not parse"));
        assert_eq!(fast.to_string(), slow.to_string());
        assert!(slow.to_string().starts_with("g.toml:3:"), "{slow}");
    }

    /// The slow path alone, as the reference for the shortcut (common practice: a fast path
    /// must give what the general one gives).
    fn reference(s: &str) -> String {
        let s: String = s
            .trim()
            .chars()
            .map(|c| match c {
                '\u{2010}'..='\u{2015}' | '\u{2212}' => '-',
                c => c,
            })
            .collect::<String>()
            .to_lowercase();
        let s = s.split_whitespace().collect::<Vec<_>>().join(" ");
        match s.strip_suffix("^+").or_else(|| s.strip_suffix("^-")) {
            Some(body) => format!("{body}{}", &s[s.len() - 1..]),
            None => s,
        }
    }

    #[test]
    fn shortcut_agrees_with_the_general_normalisation() {
        for s in [
            "acetic acid",
            "Acetic Acid",
            "SODIUM HYDROXIDE",
            " acetic  acid ",
            "acetic\tacid",
            "a\u{0b}b",
            "a\u{1}B",
            "tris\u{2212}HCl",
            "CaHCO3^+",
            "NaSO4^-",
            "CO3^2-",
            "AlF^2+",
            "Éthanol",
            "",
            " ",
        ] {
            assert_eq!(normalized(s), reference(s), "{s:?}");
        }
        assert!(matches!(normalized("acetic acid"), std::borrow::Cow::Borrowed(_)));
        // The stack shortcut of lookups gives what the normalisation gives, or nothing.
        let mut buf = [0u8; 64];
        for s in [
            "Sodium Dihydrogen Phosphate",
            "acetic acid",
            " x",
            "a  b",
            "Ünïcode",
            "HCl",
        ] {
            if let Some(k) = plain_lowercase(s, &mut buf) {
                assert_eq!(k, normalized(s).as_ref(), "{s:?}");
            }
        }
        assert_eq!(
            plain_lowercase("Sodium Dihydrogen Phosphate", &mut buf),
            Some("sodium dihydrogen phosphate")
        );
    }
}
