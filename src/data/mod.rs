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
        // Not found: suggest the closest name or synonym, if it is close.
        let mut best: Option<(usize, &str)> = None;
        for info in entries() {
            let d = info
                .keys
                .iter()
                .map(|n| levenshtein(n, &key))
                .min()
                .unwrap_or(usize::MAX);
            if best.is_none_or(|(bd, _)| d < bd) {
                best = Some((d, info.name.as_str()));
            }
        }
        let limit = (key.chars().count() / 3).max(2);
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

    fn check_new(&self, kind: DataKind, names: &[&str]) -> Result<()> {
        for n in names {
            if self.find(kind, n).is_ok() {
                return Err(Error::InconsistentDefinition {
                    name: n.to_string(),
                    reason: format!("a {} of that name is already in the catalog", kind.name()),
                });
            }
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
    pub fn add_protolyte(&mut self, p: Protolyte, synonyms: &[&str]) -> Result<()> {
        let mut names = vec![p.name()];
        names.extend_from_slice(synonyms);
        self.check_new(DataKind::Protolyte, &names)?;
        let source = p.source().unwrap_or("user").to_string();
        self.insert_protolyte(p, synonyms, &source, false);
        Ok(())
    }

    fn insert_protolyte(&mut self, p: Protolyte, synonyms: &[&str], source: &str, from_memory: bool) {
        let pk: Vec<String> = p.steps().iter().map(|s| format!("{}", s.pka)).collect();
        let summary = format!(
            "pKa {} (25 °C); most protonated charge {:+}",
            pk.join(", "),
            p.charge_most_protonated()
        );
        let formula = p.formula().unwrap_or("").to_string();
        let name = p.name().to_string();
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

    /// Adds a user-defined ion.
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

    /// Adds a user-defined reagent.
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

    /// Adds a user-defined complex.
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
        match parts.and_then(|p| Reagent::new(r.name, Some(r.molar_mass_g_per_mol), p)) {
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
        match built {
            Ok(c) => cat.insert_complex(c, &[], r.source, r.from_memory),
            Err(e) => cat.problems.push(format!("complex {}: {e}", r.name)),
        }
    }
    cat
}
