//! Solids and gases in the catalogue: `[[solid]]` and `[[gas]]` entries of catalogue files,
//! the `add_*` calls and the lookups. They share one namespace with families, ions and
//! complexes.

use toml::Spanned;

use super::format::{GasEntry, SolidEntry, Text};
use super::located::Located;
use super::{Catalog, DataKind, Entry, Meta, PartRef, PhaseEntry, keys_of, normalized, read_parts};
use crate::complex::ComplexPart;
use crate::error::{Error, Result};
use crate::phase::{Gas, Solid};

impl Catalog {
    /// Refuses a name already held by a solid or a gas.
    /// Refuses a name already held by a solid or a gas (`keys`: `names` normalised).
    pub(super) fn check_phase_names(&self, kind: &'static str, names: &[&str], keys: &[String]) -> Result<()> {
        for (n, key) in names.iter().zip(keys) {
            if let Some(&(gas, idx)) = self.phase_index.get(key.as_str()) {
                let (existing_kind, existing_name) = if gas {
                    ("gas", self.gas_entries[idx].name.clone())
                } else {
                    ("solid", self.solid_entries[idx].name.clone())
                };
                return Err(Error::NameConflict {
                    name: n.to_string(),
                    kind,
                    existing_kind,
                    existing_name,
                });
            }
        }
        Ok(())
    }

    /// Refuses a solid's or gas's name held by any entry of the shared namespace.
    fn check_new_phase(&self, kind: &'static str, names: &[&str], keys: &[String]) -> Result<()> {
        self.check_phase_names(kind, names, keys)?;
        if let Some((name, k, idx)) = self.conflicts(DataKind::Complex, names, keys).into_iter().next() {
            return Err(Error::NameConflict {
                name,
                kind,
                existing_kind: k.name(),
                existing_name: self.info[self.offset(k) + idx].name.clone(),
            });
        }
        Ok(())
    }

    fn find_phase(&self, gas: bool, name: &str) -> Result<usize> {
        let key = normalized(name);
        if let Some(&(g, idx)) = self.phase_index.get(key.as_ref())
            && g == gas
        {
            return Ok(idx);
        }
        let entries = if gas { &self.gas_entries } else { &self.solid_entries };
        let candidates = (entries.iter()).flat_map(|e| {
            std::iter::once(&e.name)
                .chain(&e.synonyms)
                .map(move |n| (n.as_str(), e.name.as_str()))
        });
        let suggestion = super::suggestion(&key, candidates);
        Err(Error::UnknownName {
            kind: if gas { "gas" } else { "solid" },
            name: name.to_string(),
            suggestion,
        })
    }

    /// The solid named `name` (or a synonym).
    ///
    /// ```
    /// use protolyte::Catalog;
    /// let cat = Catalog::builtin();
    /// assert_eq!(cat.solid("Calcite")?.formula(), Some("CaCO3"));
    /// assert!(cat.solid("calcit").unwrap_err().to_string().contains("did you mean"));
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn solid(&self, name: &str) -> Result<Solid> {
        self.find_phase(false, name).map(|i| self.solids[i].clone())
    }

    /// The gas named `name` (or a synonym).
    ///
    /// ```
    /// use protolyte::Catalog;
    /// let cat = Catalog::builtin();
    /// assert_eq!(cat.gas("CO2(g)")?.protons(), 2);
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn gas(&self, name: &str) -> Result<Gas> {
        self.find_phase(true, name).map(|i| self.gases[i].clone())
    }

    /// Every solid in the catalog.
    pub fn solids(&self) -> &[Solid] {
        &self.solids
    }

    /// Every gas in the catalog.
    pub fn gases(&self) -> &[Gas] {
        &self.gases
    }

    /// Descriptions of the solids, in definition order.
    pub fn solid_entries(&self) -> &[PhaseEntry] {
        &self.solid_entries
    }

    /// Descriptions of the gases, in definition order.
    pub fn gas_entries(&self) -> &[PhaseEntry] {
        &self.gas_entries
    }

    /// Adds a solid, found by its name and `synonyms` (one namespace with families, ions,
    /// complexes and gases: a name already held there is refused with
    /// [`Error::NameConflict`]).
    ///
    /// ```
    /// use protolyte::{Catalog, ComplexPart, Error, Solid};
    /// let mut cat = Catalog::builtin();
    /// let ca = cat.ion("calcium")?;
    /// let co3 = cat.protolyte("carbonate")?;
    /// let s = Solid::new("lab carbonate", vec![(ComplexPart::Ion(ca), 1), (ComplexPart::Base(co3), 1)], -8.3)?;
    /// cat.add_solid(s.clone(), &["our precipitate"])?;
    /// assert_eq!(cat.solid("our precipitate")?.log10_k(), -8.3);
    /// let clash = Solid::new("calcium", s.parts().to_vec(), -8.3)?;
    /// assert!(matches!(cat.add_solid(clash, &[]), Err(Error::NameConflict { existing_kind: "ion", .. })));
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn add_solid(&mut self, solid: Solid, synonyms: &[&str]) -> Result<()> {
        let meta = Meta::added_in_code(solid.source());
        self.add_solid_with(solid, synonyms, meta)
    }

    /// Adds a gas (names as for [`Catalog::add_solid`]).
    pub fn add_gas(&mut self, gas: Gas, synonyms: &[&str]) -> Result<()> {
        let meta = Meta::added_in_code(gas.source());
        self.add_gas_with(gas, synonyms, meta)
    }

    fn add_phase_names(&mut self, gas: bool, idx: usize, keys: Vec<String>) {
        for k in keys {
            self.phase_index.entry(k).or_insert((gas, idx));
        }
    }

    fn add_solid_with(&mut self, solid: Solid, synonyms: &[&str], meta: Meta) -> Result<()> {
        let mut names = vec![solid.name()];
        names.extend_from_slice(synonyms);
        let keys = keys_of(&names);
        self.check_new_phase("solid", &names, &keys)?;
        let idx = self.solids.len();
        self.add_phase_names(false, idx, keys);
        let parts: Vec<String> = solid
            .parts()
            .iter()
            .map(|(p, n)| format!("{n} × {}", self.part_name(p)))
            .collect();
        self.solid_entries.push(PhaseEntry {
            kind: "solid",
            name: solid.name().to_string(),
            synonyms: synonyms.iter().map(|s| s.to_string()).collect(),
            formula: solid.formula().unwrap_or("").to_string(),
            summary: format!(
                "log K {} (25 °C) of dissolution to {}",
                solid.log10_k(),
                parts.join(" + ")
            ),
            source: meta.source,
            from_memory: meta.from_memory,
            origin: meta.origin,
        });
        self.solids.push(solid);
        Ok(())
    }

    fn add_gas_with(&mut self, gas: Gas, synonyms: &[&str], meta: Meta) -> Result<()> {
        let mut names = vec![gas.name()];
        names.extend_from_slice(synonyms);
        let keys = keys_of(&names);
        self.check_new_phase("gas", &names, &keys)?;
        let idx = self.gases.len();
        self.add_phase_names(true, idx, keys);
        self.gas_entries.push(PhaseEntry {
            kind: "gas",
            name: gas.name().to_string(),
            synonyms: synonyms.iter().map(|s| s.to_string()).collect(),
            formula: gas.formula().unwrap_or("").to_string(),
            summary: format!(
                "log K_H {} mol/(kg·bar) (25 °C), dissolves to {}",
                gas.log10_kh(),
                self.form_name_of(gas.family(), gas.protons())
            ),
            source: meta.source,
            from_memory: meta.from_memory,
            origin: meta.origin,
        });
        self.gases.push(gas);
        Ok(())
    }

    /// A solid's part in words: the form or ion's display name.
    fn part_name<'s>(&'s self, p: &'s ComplexPart) -> std::borrow::Cow<'s, str> {
        match p {
            ComplexPart::Base(f) => self.form_name_of(f, 0),
            ComplexPart::Ion(i) => std::borrow::Cow::Borrowed(i.display_name()),
            ComplexPart::Proton => std::borrow::Cow::Borrowed("H+"),
        }
    }

    /// Rebuilds the solids and gases built on a replaced family or ion.
    pub(super) fn rebind_phases(
        &mut self,
        old_name: &str,
        family: Option<&crate::Protolyte>,
        ion: Option<&crate::Ion>,
    ) -> Result<()> {
        for s in &mut self.solids {
            if !s.parts().iter().any(|(p, _)| part_is(p, old_name)) {
                continue;
            }
            let parts = s
                .parts()
                .iter()
                .map(|(p, n)| {
                    let p = match (p, family, ion) {
                        (ComplexPart::Base(b), Some(f), _) if b.name() == old_name => ComplexPart::Base(f.clone()),
                        (ComplexPart::Ion(i), _, Some(new)) if i.name() == old_name => ComplexPart::Ion(new.clone()),
                        (p, _, _) => p.clone(),
                    };
                    (p, *n)
                })
                .collect();
            *s = s.rebuilt_with(parts).map_err(|e| super::dependent(s.name(), e))?;
        }
        if let Some(f) = family {
            for g in &mut self.gases {
                if g.family().name() == old_name {
                    *g = g.rebuilt_with(f).map_err(|e| super::dependent(g.name(), e))?;
                }
            }
        }
        Ok(())
    }

    pub(super) fn apply_solid<S: Text>(&mut self, spanned: &Spanned<SolidEntry<S>>, loc: &Located) -> Result<()> {
        let e = spanned.get_ref();
        let entry = Entry::phase(loc, spanned.span(), "solid", &e.name);
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
                    "a solid names a family by its fully deprotonated form: { base = \"...\" }",
                )),
                PartRef::Hydroxide => Err(at.error(
                    "hydroxide",
                    "a hydroxide dissolves with H+ taken up: write { proton = -n } for n OH",
                )),
            },
            |n, _| Ok(n),
        )?;
        let mut s = Solid::new(&e.name, parts, e.log_k).map_err(|err| entry.wrap(err))?;
        if let Some(f) = &e.formula {
            if crate::data::molar_mass_from_formula(f, 0).is_err() {
                return Err(entry.error("formula", format!("`{f}` is not a formula of known elements")));
            }
            s = s.with_formula(f);
        }
        if let Some(h) = e.dh_kj_per_mol {
            s = s
                .with_enthalpy_kj_per_mol(h)
                .map_err(|err| entry.error("dh_kj_per_mol", err))?;
        }
        if let Some(cp) = e.dcp_j_per_mol_k {
            s = s
                .with_heat_capacity_j_per_mol_k(cp)
                .map_err(|err| entry.error("dcp_j_per_mol_k", err))?;
        }
        let (mut source, mut from_memory) = (source, e.from_memory);
        if let Some(q) = &e.log_k_equation {
            let eq =
                self.one_reaction_equation(&entry, q, "solid", "log K(T) equation", &mut source, &mut from_memory)?;
            s = s
                .with_log_k_equation(eq)
                .map_err(|err| entry.error("log_k_equation", err))?;
        }
        let s = s.with_source(&source);
        let meta = Meta {
            source,
            from_memory,
            origin: loc.file.to_string(),
            molar_mass: None,
        };
        let refs: Vec<&str> = e.synonyms.iter().map(|s| &**s).collect();
        self.add_solid_with(s, &refs, meta)
            .map_err(|err| phase_conflict(&entry, err))
    }

    pub(super) fn apply_gas<S: Text>(&mut self, spanned: &Spanned<GasEntry<S>>, loc: &Located) -> Result<()> {
        let e = spanned.get_ref();
        let entry = Entry::phase(loc, spanned.span(), "gas", &e.name);
        let source = self.citation(&entry, e.source.as_deref(), e.cite.as_deref())?;
        let (Some(family), Some(protons)) = (&e.dissolves_to.family, e.dissolves_to.protons) else {
            return Err(entry.error(
                "dissolves_to",
                "a gas dissolves to a family form: dissolves_to = { family = \"...\", protons = n }",
            ));
        };
        let f = self.protolyte(family).map_err(|err| entry.error("dissolves_to", err))?;
        let mut g = Gas::new(&e.name, &f, protons as usize, e.log_kh).map_err(|err| match err {
            Error::InconsistentDefinition { .. } => entry.error("dissolves_to", err),
            err => entry.wrap(err),
        })?;
        if let Some(fm) = &e.formula {
            g = g.with_formula(fm);
        }
        if let Some(h) = e.dh_kj_per_mol {
            g = g
                .with_enthalpy_kj_per_mol(h)
                .map_err(|err| entry.error("dh_kj_per_mol", err))?;
        }
        if let Some(cp) = e.dcp_j_per_mol_k {
            g = g
                .with_heat_capacity_j_per_mol_k(cp)
                .map_err(|err| entry.error("dcp_j_per_mol_k", err))?;
        }
        let (mut source, mut from_memory) = (source, e.from_memory);
        if let Some(q) = &e.log_k_equation {
            let eq =
                self.one_reaction_equation(&entry, q, "gas", "log K_H(T) equation", &mut source, &mut from_memory)?;
            g = g
                .with_log_k_equation(eq)
                .map_err(|err| entry.error("log_k_equation", err))?;
        }
        let g = g.with_source(&source);
        let meta = Meta {
            source,
            from_memory,
            origin: loc.file.to_string(),
            molar_mass: None,
        };
        let refs: Vec<&str> = e.synonyms.iter().map(|s| &**s).collect();
        self.add_gas_with(g, &refs, meta)
            .map_err(|err| phase_conflict(&entry, err))
    }
}

fn phase_conflict(entry: &Entry, err: Error) -> Error {
    match err {
        Error::NameConflict {
            name,
            existing_kind,
            existing_name,
            ..
        } => entry.error(
            "name",
            format!(
                "the name `{name}` is already used by the {existing_kind} `{existing_name}` (families, ions, complexes, solids and gases share one set of names)"
            ),
        ),
        err => entry.wrap(err),
    }
}

fn part_is(p: &ComplexPart, name: &str) -> bool {
    match p {
        ComplexPart::Base(b) => b.name() == name,
        ComplexPart::Ion(i) => i.name() == name,
        ComplexPart::Proton => false,
    }
}
