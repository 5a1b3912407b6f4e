//! Built-in data: acid–base families, simple ions, reagents and complexes, each row with its
//! published source, and the [`Catalog`] that looks them up by name or synonym and takes a
//! user's own definitions beside them.

mod complexes;
mod ions;
mod protolytes;
mod reagents;
mod records;

use std::sync::OnceLock;

use records::{ComplexPartRecord, PartRecord};

use crate::complex::{Complex, ComplexPart};
use crate::error::{Error, Result};
use crate::ion::Ion;
use crate::protolyte::{Protolyte, Step};
use crate::reagent::{Constituent, Reagent};

/// What kind of thing a catalog entry is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
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
}

/// A description of one catalog entry, for listings.
#[derive(Debug, Clone, PartialEq)]
pub struct DataInfo {
    /// What it is.
    pub kind: DataKind,
    /// Canonical name.
    pub name: String,
    /// Other names it is found by.
    pub synonyms: Vec<String>,
    /// Formula, if any.
    pub formula: String,
    /// A one-line summary of its numbers (pKa values, charge, molar mass, log β).
    pub summary: String,
    /// Its published source ("user" for entries a caller added).
    pub source: String,
    /// True when the numbers were entered from memory of the source.
    pub from_memory: bool,
    /// The name and synonyms normalised for lookup.
    keys: Vec<String>,
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
    info: Vec<DataInfo>,
    /// Built-in rows that could not be turned into definitions (a data bug; tested empty).
    problems: Vec<String>,
    /// Entries replaced on purpose, as they were.
    replaced: Vec<DataInfo>,
}

/// What a replacement puts in place of a family or ion in the entries that use it.
enum Rebind<'a> {
    Family(&'a Protolyte),
    Ion(&'a Ion),
}

/// The (name, formula, summary) of a family's description.
fn p_info(p: &Protolyte) -> (String, String, String) {
    let pk: Vec<String> = p.steps().iter().map(|s| format!("{}", s.pka)).collect();
    (
        p.name().to_string(),
        p.formula().unwrap_or("").to_string(),
        format!(
            "pKa {} (25 °C); most protonated charge {:+}",
            pk.join(", "),
            p.charge_most_protonated()
        ),
    )
}

/// A dependent entry that the replacement would leave invalid.
fn dependent(name: &str, e: Error) -> Error {
    Error::InconsistentDefinition {
        name: name.to_string(),
        reason: format!("it depends on the replaced entry and would become invalid: {e}"),
    }
}

/// Lower case, single spaces, ASCII hyphens.
fn normalize(s: &str) -> String {
    let s: String = s
        .trim()
        .chars()
        .map(|c| match c {
            '\u{2010}'..='\u{2015}' | '\u{2212}' => '-',
            c => c,
        })
        .collect::<String>()
        .to_lowercase();
    s.split_whitespace().collect::<Vec<_>>().join(" ")
}

/// Longest name (characters) for which a lookup that fails searches for a suggestion.
const MAX_SUGGEST_CHARS: usize = 64;

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

impl Catalog {
    /// An empty catalog.
    pub fn empty() -> Self {
        Catalog::default()
    }

    /// The built-in data (built once, then cloned).
    pub fn builtin() -> Self {
        static BUILTIN: OnceLock<Catalog> = OnceLock::new();
        BUILTIN.get_or_init(build_builtin).clone()
    }

    /// Built-in rows that failed to load (always empty in a correct build; the test suite
    /// checks it).
    pub fn load_problems(&self) -> &[String] {
        &self.problems
    }

    fn find(&self, kind: DataKind, name: &str) -> Result<usize> {
        let key = normalize(name);
        let entries = || self.info.iter().filter(|i| i.kind == kind);
        if let Some(idx) =
            entries().position(|info| normalize(&info.name) == key || info.synonyms.iter().any(|s| normalize(s) == key))
        {
            return Ok(idx);
        }
        // Not found: suggest the closest name or synonym, if it is close. The search is
        // bounded: a name longer than MAX_SUGGEST_CHARS gets no suggestion, and a key whose
        // length alone puts it beyond the limit is not compared.
        let key_len = key.chars().count();
        let limit = (key_len / 3).max(2);
        let mut best: Option<(usize, &str)> = None;
        if key_len <= MAX_SUGGEST_CHARS {
            for info in entries() {
                let d = info
                    .keys
                    .iter()
                    .filter(|n| n.chars().count().abs_diff(key_len) <= limit)
                    .map(|n| levenshtein(n, &key))
                    .min()
                    .unwrap_or(usize::MAX);
                if best.is_none_or(|(bd, _)| d < bd) {
                    best = Some((d, info.name.as_str()));
                }
            }
        }
        Err(Error::UnknownName {
            kind: kind.name(),
            name: name.to_string(),
            suggestion: best.filter(|(d, _)| *d <= limit).map(|(_, n)| n.to_string()),
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

    /// Every entry's description, built-in first.
    pub fn entries(&self) -> &[DataInfo] {
        &self.info
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

    /// The entries whose name or synonym equals one of `names` (normalised), among the kinds
    /// that share a namespace with `kind`: families, ions and complexes share one (they are
    /// matched by name when a recipe is compiled); reagents have their own (a reagent may
    /// carry the name of the family it delivers, such as "acetic acid").
    fn conflicts(&self, kind: DataKind, names: &[&str]) -> Vec<(String, usize)> {
        let space = |k: DataKind| k == DataKind::Reagent;
        let mut out = Vec::new();
        for n in names {
            let key = normalize(n);
            for (idx, info) in self.info.iter().enumerate() {
                if space(info.kind) == space(kind) && info.keys.contains(&key) {
                    out.push((n.to_string(), idx));
                }
            }
        }
        out
    }

    fn conflict_error(&self, kind: DataKind, name: &str, idx: usize) -> Error {
        Error::NameConflict {
            name: name.to_string(),
            kind: kind.name(),
            existing_kind: self.info[idx].kind.name(),
            existing_name: self.info[idx].name.clone(),
        }
    }

    /// Refuses a name or synonym already taken (see [`Catalog::add_protolyte`]).
    fn check_new(&self, kind: DataKind, names: &[&str]) -> Result<()> {
        match self.conflicts(kind, names).first() {
            Some((name, idx)) => Err(self.conflict_error(kind, name, *idx)),
            None => Ok(()),
        }
    }

    /// For a replacement: the one entry of the same kind that the names point to (`None`
    /// when they are all new). Refuses names held by an entry of another kind, or by two
    /// different entries.
    fn replacement_target(&self, kind: DataKind, names: &[&str]) -> Result<Option<usize>> {
        let mut target: Option<usize> = None;
        for (name, idx) in self.conflicts(kind, names) {
            if self.info[idx].kind != kind || target.is_some_and(|t| t != idx) {
                return Err(self.conflict_error(kind, &name, idx));
            }
            target = Some(idx);
        }
        Ok(target)
    }

    /// Position of info entry `idx` within the definitions of its kind.
    fn slot(&self, idx: usize) -> usize {
        let kind = self.info[idx].kind;
        self.info[..idx].iter().filter(|i| i.kind == kind).count()
    }

    /// The entries replaced by the `replace_*` calls, in order (their descriptions as they
    /// were before the replacement).
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
        let mut names = vec![p.name()];
        names.extend_from_slice(synonyms);
        let Some(idx) = self.replacement_target(DataKind::Protolyte, &names)? else {
            self.add_protolyte(p, synonyms)?;
            return Ok(None);
        };
        let mut next = self.clone();
        let k = next.slot(idx);
        let old_name = next.protolytes[k].name().to_string();
        next.rebind(&old_name, Rebind::Family(&p))?;
        next.protolytes[k] = p.clone();
        let old = next.info[idx].clone();
        next.info[idx] = next.replacement_info(DataKind::Protolyte, &old, &p_info(&p), synonyms);
        next.replaced.push(old.clone());
        *self = next;
        Ok(Some(old))
    }

    /// Replaces the simple ion that `ion`'s name or one of `synonyms` names, on purpose
    /// (see [`Catalog::replace_protolyte`], which this mirrors: reagents and complexes built
    /// on the old ion are rebuilt on the new one).
    pub fn replace_ion(&mut self, ion: Ion, synonyms: &[&str]) -> Result<Option<DataInfo>> {
        let mut names = vec![ion.name()];
        names.extend_from_slice(synonyms);
        let Some(idx) = self.replacement_target(DataKind::Ion, &names)? else {
            self.add_ion(ion, synonyms)?;
            return Ok(None);
        };
        let mut next = self.clone();
        let k = next.slot(idx);
        let old_name = next.ions[k].name().to_string();
        next.rebind(&old_name, Rebind::Ion(&ion))?;
        next.ions[k] = ion.clone();
        let old = next.info[idx].clone();
        let fresh = (
            ion.name().to_string(),
            ion.display_name().to_string(),
            format!("charge {:+}", ion.charge()),
        );
        next.info[idx] = next.replacement_info(DataKind::Ion, &old, &fresh, synonyms);
        next.replaced.push(old.clone());
        *self = next;
        Ok(Some(old))
    }

    /// Replaces the reagent that `r`'s name or one of `synonyms` names, on purpose (see
    /// [`Catalog::replace_protolyte`]).
    pub fn replace_reagent(&mut self, r: Reagent, synonyms: &[&str]) -> Result<Option<DataInfo>> {
        let mut names = vec![r.name()];
        names.extend_from_slice(synonyms);
        let Some(idx) = self.replacement_target(DataKind::Reagent, &names)? else {
            self.add_reagent(r, synonyms)?;
            return Ok(None);
        };
        let k = self.slot(idx);
        let old = self.info[idx].clone();
        let summary = match r.molar_mass_g_per_mol() {
            Some(m) => format!("M = {m} g/mol"),
            None => "no molar mass".into(),
        };
        let fresh = (r.name().to_string(), r.formula().unwrap_or("").to_string(), summary);
        self.info[idx] = self.replacement_info(DataKind::Reagent, &old, &fresh, synonyms);
        self.reagents[k] = r;
        self.replaced.push(old.clone());
        Ok(Some(old))
    }

    /// Replaces the complex that `c`'s name or one of `synonyms` names, on purpose (see
    /// [`Catalog::replace_protolyte`]).
    pub fn replace_complex(&mut self, c: Complex, synonyms: &[&str]) -> Result<Option<DataInfo>> {
        let mut names = vec![c.name()];
        names.extend_from_slice(synonyms);
        let Some(idx) = self.replacement_target(DataKind::Complex, &names)? else {
            self.add_complex(c, synonyms)?;
            return Ok(None);
        };
        let k = self.slot(idx);
        let old = self.info[idx].clone();
        let fresh = (
            c.name().to_string(),
            String::new(),
            format!("log β {} (25 °C); charge {:+}", c.log10_beta(), c.charge()),
        );
        self.info[idx] = self.replacement_info(DataKind::Complex, &old, &fresh, synonyms);
        self.complexes[k] = c;
        self.replaced.push(old.clone());
        Ok(Some(old))
    }

    /// The description of a replacement: the new (name, formula, summary), its synonyms
    /// plus the old entry's name and synonyms, source "user".
    fn replacement_info(
        &self,
        kind: DataKind,
        old: &DataInfo,
        fresh: &(String, String, String),
        synonyms: &[&str],
    ) -> DataInfo {
        let mut syn: Vec<String> = synonyms.iter().map(|s| s.to_string()).collect();
        for s in std::iter::once(&old.name).chain(&old.synonyms) {
            if normalize(s) != normalize(&fresh.0) && !syn.iter().any(|x| normalize(x) == normalize(s)) {
                syn.push(s.clone());
            }
        }
        let keys = std::iter::once(fresh.0.as_str())
            .chain(syn.iter().map(String::as_str))
            .map(normalize)
            .collect();
        DataInfo {
            kind,
            name: fresh.0.clone(),
            synonyms: syn,
            formula: fresh.1.clone(),
            summary: fresh.2.clone(),
            source: "user".into(),
            from_memory: false,
            keys,
        }
    }

    /// Rebuilds every reagent and complex that uses the family or ion named `old_name` on
    /// its replacement.
    fn rebind(&mut self, old_name: &str, new: Rebind<'_>) -> Result<()> {
        for r in &mut self.reagents {
            let uses = r.parts().iter().any(|(c, _)| match (c, &new) {
                (Constituent::Form { protolyte, .. }, Rebind::Family(_)) => protolyte.name() == old_name,
                (Constituent::Ion(i), Rebind::Ion(_)) => i.name() == old_name,
                _ => false,
            });
            if !uses {
                continue;
            }
            let parts = r
                .parts()
                .iter()
                .map(|(c, n)| {
                    let c = match (c, &new) {
                        (Constituent::Form { protolyte, protons }, Rebind::Family(p))
                            if protolyte.name() == old_name =>
                        {
                            Constituent::Form {
                                protolyte: (*p).clone(),
                                protons: *protons,
                            }
                        }
                        (Constituent::Ion(i), Rebind::Ion(ion)) if i.name() == old_name => {
                            Constituent::Ion((*ion).clone())
                        }
                        (c, _) => c.clone(),
                    };
                    (c, *n)
                })
                .collect();
            let mut rebuilt =
                Reagent::new(r.name(), r.molar_mass_g_per_mol(), parts).map_err(|e| dependent(r.name(), e))?;
            if let Some(f) = r.formula() {
                rebuilt = rebuilt.with_formula(f);
            }
            *r = rebuilt;
        }
        for c in &mut self.complexes {
            let uses = c.parts().iter().any(|(p, _)| match (p, &new) {
                (ComplexPart::Base(b), Rebind::Family(_)) => b.name() == old_name,
                (ComplexPart::Ion(i), Rebind::Ion(_)) => i.name() == old_name,
                _ => false,
            });
            if !uses {
                continue;
            }
            let parts = c
                .parts()
                .iter()
                .map(|(p, n)| {
                    let p = match (p, &new) {
                        (ComplexPart::Base(b), Rebind::Family(f)) if b.name() == old_name => {
                            ComplexPart::Base((*f).clone())
                        }
                        (ComplexPart::Ion(i), Rebind::Ion(ion)) if i.name() == old_name => {
                            ComplexPart::Ion((*ion).clone())
                        }
                        (p, _) => p.clone(),
                    };
                    (p, *n)
                })
                .collect();
            let rebuild = || -> Result<Complex> {
                let mut x = Complex::new(c.name(), parts, c.log10_beta())?;
                if let Some(h) = c.dh_kj_per_mol() {
                    x = x.with_enthalpy_kj_per_mol(h)?;
                }
                if let Some(a) = c.ion_size_angstrom() {
                    x = x.with_ion_size_angstrom(a)?;
                }
                if let Some(s) = c.source() {
                    x = x.with_source(s);
                }
                Ok(x)
            };
            *c = rebuild().map_err(|e| dependent(c.name(), e))?;
        }
        Ok(())
    }

    /// Records an entry's description; `provenance` is (source, entered from memory).
    fn push_info(
        &mut self,
        kind: DataKind,
        name: &str,
        synonyms: &[&str],
        formula: &str,
        summary: String,
        provenance: (&str, bool),
    ) {
        let keys = std::iter::once(name)
            .chain(synonyms.iter().copied())
            .map(normalize)
            .collect();
        self.info.push(DataInfo {
            kind,
            name: name.to_string(),
            synonyms: synonyms.iter().map(|s| s.to_string()).collect(),
            formula: formula.to_string(),
            summary,
            source: provenance.0.to_string(),
            from_memory: provenance.1,
            keys,
        });
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
        let mut names = vec![p.name()];
        names.extend_from_slice(synonyms);
        self.check_new(DataKind::Protolyte, &names)?;
        let source = p.source().unwrap_or("user").to_string();
        self.insert_protolyte(p, synonyms, &source, false);
        Ok(())
    }

    fn insert_protolyte(&mut self, p: Protolyte, synonyms: &[&str], source: &str, from_memory: bool) {
        let (name, formula, summary) = p_info(&p);
        self.protolytes.push(p);
        self.push_info(
            DataKind::Protolyte,
            &name,
            synonyms,
            &formula,
            summary,
            (source, from_memory),
        );
        self.sort_info();
    }

    /// Adds a user-defined ion (names as for [`Catalog::add_protolyte`]).
    pub fn add_ion(&mut self, ion: Ion, synonyms: &[&str]) -> Result<()> {
        let mut names = vec![ion.name()];
        names.extend_from_slice(synonyms);
        self.check_new(DataKind::Ion, &names)?;
        self.insert_ion(ion, synonyms, "user", false);
        Ok(())
    }

    fn insert_ion(&mut self, ion: Ion, synonyms: &[&str], source: &str, from_memory: bool) {
        let summary = format!("charge {:+}", ion.charge());
        let name = ion.name().to_string();
        let formula = ion.display_name().to_string();
        self.ions.push(ion);
        self.push_info(DataKind::Ion, &name, synonyms, &formula, summary, (source, from_memory));
        self.sort_info();
    }

    /// Adds a user-defined reagent (its name and synonyms must be new among the reagents).
    pub fn add_reagent(&mut self, r: Reagent, synonyms: &[&str]) -> Result<()> {
        let mut names = vec![r.name()];
        names.extend_from_slice(synonyms);
        self.check_new(DataKind::Reagent, &names)?;
        self.insert_reagent(r, synonyms, "user");
        Ok(())
    }

    fn insert_reagent(&mut self, r: Reagent, synonyms: &[&str], source: &str) {
        let summary = match r.molar_mass_g_per_mol() {
            Some(m) => format!("M = {m} g/mol"),
            None => "no molar mass".into(),
        };
        let name = r.name().to_string();
        let formula = r.formula().unwrap_or("").to_string();
        self.reagents.push(r);
        self.push_info(DataKind::Reagent, &name, synonyms, &formula, summary, (source, false));
        self.sort_info();
    }

    /// Adds a user-defined complex (names as for [`Catalog::add_protolyte`]).
    pub fn add_complex(&mut self, c: Complex, synonyms: &[&str]) -> Result<()> {
        let mut names = vec![c.name()];
        names.extend_from_slice(synonyms);
        self.check_new(DataKind::Complex, &names)?;
        let source = c.source().unwrap_or("user").to_string();
        self.insert_complex(c, synonyms, &source, false);
        Ok(())
    }

    fn insert_complex(&mut self, c: Complex, synonyms: &[&str], source: &str, from_memory: bool) {
        let summary = format!("log β {} (25 °C); charge {:+}", c.log10_beta(), c.charge());
        let name = c.name().to_string();
        self.complexes.push(c);
        self.push_info(DataKind::Complex, &name, synonyms, "", summary, (source, from_memory));
        self.sort_info();
    }

    /// Keeps `info` grouped by kind in the order of the definition vectors.
    fn sort_info(&mut self) {
        let order = |k: DataKind| k as u8;
        self.info.sort_by_key(|i| order(i.kind));
    }
}

fn names_of<'a>(name: &'a str, synonyms: &[&'a str]) -> Vec<&'a str> {
    std::iter::once(name).chain(synonyms.iter().copied()).collect()
}

fn build_builtin() -> Catalog {
    let mut cat = Catalog::empty();
    for r in protolytes::FAMILIES {
        let pkas: Vec<f64> = r.steps.iter().map(|s| s.pka).collect();
        let built = Protolyte::new(r.name, &pkas, r.charge_most_protonated).and_then(|p| {
            let steps = r
                .steps
                .iter()
                .map(|s| Step {
                    pka: s.pka,
                    dh_kj_per_mol: s.dh_kj_per_mol,
                    dcp_j_per_mol_k: s.dcp_j_per_mol_k,
                })
                .collect();
            let p = p.with_steps(steps)?.with_formula(r.formula).with_source(r.source);
            match r.ion_size_angstrom {
                Some(a) => p.with_ion_size_angstrom(a),
                None => Ok(p),
            }
        });
        let built = built.and_then(|p| {
            cat.check_new(DataKind::Protolyte, &names_of(r.name, r.synonyms))
                .map(|_| p)
        });
        match built {
            Ok(p) => cat.insert_protolyte(p, r.synonyms, r.source, r.from_memory),
            Err(e) => cat.problems.push(format!("protolyte {}: {e}", r.name)),
        }
    }
    for r in ions::IONS {
        let built = Ion::new(r.name, r.charge)
            .map(|i| i.with_formula(r.formula))
            .and_then(|i| match r.ion_size_angstrom {
                Some(a) => i.with_ion_size_angstrom(a),
                None => Ok(i),
            });
        let built = built.and_then(|i| cat.check_new(DataKind::Ion, &names_of(r.name, r.synonyms)).map(|_| i));
        match built {
            Ok(i) => cat.insert_ion(i, r.synonyms, r.source, r.from_memory),
            Err(e) => cat.problems.push(format!("ion {}: {e}", r.name)),
        }
    }
    for r in reagents::REAGENTS {
        let parts: Result<Vec<(Constituent, u32)>> = r
            .parts
            .iter()
            .map(|(p, n)| {
                let c = match p {
                    PartRecord::Form { family, protons } => Constituent::Form {
                        protolyte: cat.protolyte(family)?,
                        protons: *protons as usize,
                    },
                    PartRecord::Ion(name) => Constituent::Ion(cat.ion(name)?),
                    PartRecord::Proton => Constituent::Proton,
                    PartRecord::Hydroxide => Constituent::Hydroxide,
                };
                Ok((c, *n))
            })
            .collect();
        let built = parts
            .and_then(|p| Reagent::new(r.name, Some(r.molar_mass_g_per_mol), p))
            .and_then(|x| {
                cat.check_new(DataKind::Reagent, &names_of(r.name, r.synonyms))
                    .map(|_| x)
            });
        match built {
            Ok(x) => cat.insert_reagent(x.with_formula(r.formula), r.synonyms, r.source),
            Err(e) => cat.problems.push(format!("reagent {}: {e}", r.name)),
        }
    }
    for r in complexes::COMPLEXES {
        let parts: Result<Vec<(ComplexPart, i32)>> = r
            .parts
            .iter()
            .map(|(p, n)| {
                let c = match p {
                    ComplexPartRecord::Base(f) => ComplexPart::Base(cat.protolyte(f)?),
                    ComplexPartRecord::Ion(i) => ComplexPart::Ion(cat.ion(i)?),
                    ComplexPartRecord::Proton => ComplexPart::Proton,
                };
                Ok((c, *n))
            })
            .collect();
        let built = parts.and_then(|p| Complex::new(r.name, p, r.log_beta)).and_then(|c| {
            let c = c.with_source(r.source);
            let c = match r.dh_kj_per_mol {
                Some(h) => c.with_enthalpy_kj_per_mol(h)?,
                None => c,
            };
            match r.ion_size_angstrom {
                Some(a) => c.with_ion_size_angstrom(a),
                None => Ok(c),
            }
        });
        let built = built.and_then(|c| cat.check_new(DataKind::Complex, &[r.name]).map(|_| c));
        match built {
            Ok(c) => cat.insert_complex(c, &[], r.source, r.from_memory),
            Err(e) => cat.problems.push(format!("complex {}: {e}", r.name)),
        }
    }
    cat
}
