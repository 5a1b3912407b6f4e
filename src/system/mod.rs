//! The compiled system: the tableau (components × species with stoichiometric coefficients
//! and formation constants) at one temperature and activity model.
//!
//! Component 0 is always H⁺. Each acid–base family contributes one component (its fully
//! deprotonated form) and one species per protonation state; each simple ion contributes a
//! component and its free species; each complex one more species row. This is the tableau of
//! F. M. M. Morel and J. G. Hering, *Principles and Applications of Aquatic Chemistry*
//! (Wiley, 1993), ch. 2.

use std::sync::Arc;

pub(crate) mod layout;
pub(crate) mod packed;

pub use crate::conditions::Conditions;

use crate::activity::sit::Interactions;
use crate::activity::{ActivityModel, DEFAULT_ION_SIZE_ANGSTROM, DebyeHuckelConstants, PhConvention};
use crate::complex::{Complex, ComplexPart};
use crate::error::{Error, Result};
use crate::ion::Ion;
use crate::phase::{Constraint, PhaseRow, RowKind};
use crate::protolyte::Protolyte;
use crate::quantity::Temperature;
use crate::reagent::Constituent;
use crate::recipe::Recipe;
use crate::warning::Warning;
use crate::water;

/// Ion size of H⁺ and OH⁻ (Kielland, *J. Am. Chem. Soc.* 59 (1937) 1675; from memory).
const ION_SIZE_H: f64 = 9.0;
const ION_SIZE_OH: f64 = 3.5;

/// What a component stands for.
#[derive(Debug, Clone, PartialEq)]
pub enum ComponentKind {
    /// H⁺ (component 0); its equation is the charge balance.
    Proton,
    /// The fully deprotonated form of the family with this index in [`System::families`].
    Family(usize),
    /// A simple ion.
    Ion(Ion),
}

/// A component of the tableau: a building block with a total amount.
#[derive(Debug, Clone, PartialEq)]
pub struct Component {
    /// Name (the family or ion name; "H+" for the proton).
    pub name: Arc<str>,
    /// Charge of the component as a free species.
    pub charge: i32,
    /// Total amount, mol/kg of water (unused for H⁺).
    pub total_molal: f64,
    /// What it is.
    pub kind: ComponentKind,
}

/// What a species is.
#[derive(Debug, Clone, PartialEq)]
pub enum SpeciesKind {
    /// H⁺.
    Proton,
    /// OH⁻.
    Hydroxide,
    /// Family `family` (index into [`System::families`]) with `protons` bound protons.
    Form {
        /// Family index.
        family: usize,
        /// Bound protons.
        protons: usize,
    },
    /// A free simple ion: component `component`.
    FreeIon {
        /// Component index.
        component: usize,
    },
    /// A complex or ion pair.
    Complex,
}

/// A species row of the tableau.
#[derive(Debug, Clone, PartialEq)]
pub struct Species {
    /// Display name.
    pub name: Arc<str>,
    /// Charge number.
    pub charge: i32,
    /// log₁₀ of the formation constant from the components, at the system's temperature.
    pub log10_k: f64,
    /// Ion-size parameter used by the extended Debye–Hückel model, ångström.
    pub ion_size_angstrom: f64,
    /// What it is.
    pub kind: SpeciesKind,
}

/// A family in the system: the protolyte, its component and its species (by bound protons).
#[derive(Debug, Clone, PartialEq)]
pub struct Family {
    /// The definition.
    pub protolyte: Protolyte,
    /// Its component index.
    pub component: usize,
    /// Species index of the form with `j` bound protons at position `j`.
    pub forms: Vec<usize>,
}

/// The tableau at one temperature and activity model, ready to solve.
///
/// Build it with [`Recipe::compile`]; change totals with [`System::set_total_molal`] (for
/// titrations and designs that re-solve one system many times).
///
/// # Example
///
/// ```
/// use protolyte::{Amount, Catalog, Conditions, Recipe};
///
/// let cat = Catalog::builtin();
/// let mut r = Recipe::new();
/// r.add(&cat.reagent("phosphoric acid")?, Amount::molar(0.01))?;
/// let sys = r.compile(&Conditions::default())?;
/// assert_eq!(&*sys.components()[0].name, "H+");
/// // H+, OH-, and the four phosphate forms.
/// assert_eq!(sys.species().len(), 6);
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct System {
    pub(crate) temperature: Temperature,
    pub(crate) model: ActivityModel,
    pub(crate) ph_convention: PhConvention,
    /// SIT interaction pairs among the species (empty unless the model is SIT).
    pub(crate) interactions: Interactions,
    pub(crate) dh: DebyeHuckelConstants,
    pub(crate) water_density: f64,
    pub(crate) log10_kw: f64,
    pub(crate) components: Vec<Component>,
    pub(crate) species: Vec<Species>,
    pub(crate) families: Vec<Family>,
    /// Stoichiometric coefficients, species-major: `nu[s * n_components + c]`.
    pub(crate) nu: Vec<f64>,
    /// Species that couple two or more non-H components, or hold one twice.
    pub(crate) coupling: Vec<bool>,
    /// The indices of the coupling species, in order (made at compile: the checks and
    /// balances that concern only them need not scan every species).
    pub(crate) coupled_species: Vec<usize>,
    /// ln K of each species (log₁₀ K × ln 10).
    pub(crate) ln_k: Vec<f64>,
    /// Sparse stoichiometry: the non-zero (component, ν) of species s are
    /// `terms[term_start[s]..term_start[s + 1]]`.
    pub(crate) term_start: Vec<usize>,
    pub(crate) terms: Vec<(usize, f64)>,
    /// Uncoupled species by their one non-H component (entry 0: species of H alone).
    pub(crate) members: Vec<Vec<usize>>,
    /// The free species of each component, where it has one.
    pub(crate) free_species: Vec<Option<usize>>,
    /// The names and shapes every result of this system shares (species, families,
    /// components).
    pub(crate) layout: Arc<layout::ResultLayout>,
    /// ν(H⁺) of each species as an integer, and each species' charge as a float.
    pub(crate) nu_h: Vec<i32>,
    pub(crate) charge_f: Vec<f64>,
    /// The uncoupled species by component, packed for the fast path's passes over them:
    /// component g's are `fast_members[fast_member_start[g]..fast_member_start[g + 1]]`, in
    /// the order of `members[g]`.
    pub(crate) fast_members: Vec<packed::Member>,
    pub(crate) fast_member_start: Vec<usize>,
    /// Largest ν(H⁺) and largest −ν(H⁺) over the uncoupled species (both ≥ 0).
    pub(crate) nu_h_span: (usize, usize),
    /// Largest |z| over the uncoupled species (the fast path's table of activity factors by
    /// charge serves systems with |z| below `fast::CHARGE_TABLE`).
    pub(crate) fast_zmax: usize,
    pub(crate) compile_warnings: Vec<Warning>,
    /// Per component: the positive total given below the floor, taken as zero.
    pub(crate) below_floor: Vec<Option<f64>>,
    /// Solids, gases and imposed quantities, compiled against the components (computed once
    /// here, read at every solve).
    pub(crate) phases: Vec<PhaseRow>,
    /// Per component: active although its total may be zero, because a fixed partial
    /// pressure sets its activity.
    pub(crate) open: Vec<bool>,
    /// Per component: its zero level of protons for total alkalinity (families; 0 for ions).
    pub(crate) alkalinity_reference: Vec<f64>,
    /// The component of the carbonate family, if present (for DIC and carbonate alkalinity).
    pub(crate) carbonate: Option<usize>,
}

impl Recipe {
    /// Compiles the recipe into a [`System`] (the tableau at the given temperature and
    /// activity model).
    pub fn compile(&self, conditions: &Conditions) -> Result<System> {
        System::compile(self, conditions)
    }
}

impl System {
    pub(crate) fn compile(recipe: &Recipe, conditions: &Conditions) -> Result<System> {
        let t = conditions.temperature;
        let tc = crate::error::check_temperature(t)?;
        let water_density = water::density_kg_per_l(t)?;
        let mut b = Builder {
            components: vec![Component {
                name: "H+".into(),
                charge: 1,
                total_molal: 0.0,
                kind: ComponentKind::Proton,
            }],
            families: Vec::new(),
        };
        // Components and totals from the recipe.
        for e in recipe.entries() {
            let amount = e.amount.molal_value(water_density);
            for (c, n) in e.reagent.parts() {
                let add = amount * f64::from(*n);
                match c {
                    Constituent::Form { protolyte, .. } => {
                        let idx = b.family_component(protolyte)?;
                        b.components[idx].total_molal += add;
                    }
                    Constituent::Ion(ion) => {
                        let idx = b.ion_component(ion)?;
                        b.components[idx].total_molal += add;
                    }
                    Constituent::Proton | Constituent::Hydroxide => {}
                }
            }
        }
        // A fixed partial pressure brings its family in even when no reagent holds it, a
        // DIC sets the carbonate total, an ion closing the charge balance is brought in.
        for c in recipe.constraints() {
            match c {
                Constraint::PartialPressure { gas, .. } => {
                    b.family_component(gas.family())?;
                }
                Constraint::Dic(dic) => {
                    let idx = match b.components.iter().position(|c| &*c.name == "carbonate") {
                        Some(i) if matches!(b.components[i].kind, ComponentKind::Family(_)) => i,
                        Some(_) => {
                            return Err(Error::InconsistentDefinition {
                                name: "carbonate".into(),
                                reason: "DIC needs the carbonate family, but the recipe's `carbonate` is an ion".into(),
                            });
                        }
                        None => {
                            let carbonate = crate::data::Catalog::builtin().protolyte("carbonate")?;
                            b.family_component(&carbonate)?
                        }
                    };
                    b.components[idx].total_molal = *dic;
                }
                Constraint::ChargeBalanceOn(ion) => {
                    b.ion_component(ion)?;
                }
                _ => {}
            }
        }
        // The accepted domain of totals: at most MAX_TOTAL_MOLAL (a sum of lines can pass it
        // where no single line does); a positive total below the floor is taken as zero.
        let mut below_floor = vec![None; b.components.len()];
        for (c, comp) in b.components.iter_mut().enumerate().skip(1) {
            let (total, floored) = checked_total(&comp.name, comp.total_molal)?;
            comp.total_molal = total;
            below_floor[c] = floored;
        }
        let mut warnings = Vec::new();
        // Species rows.
        let nc_guess = b.components.len();
        let mut rows: Vec<(Species, Vec<(usize, f64)>)> = Vec::new();
        rows.push((
            Species {
                name: "H+".into(),
                charge: 1,
                log10_k: 0.0,
                ion_size_angstrom: ION_SIZE_H,
                kind: SpeciesKind::Proton,
            },
            vec![(0, 1.0)],
        ));
        let log10_kw = water::log10_kw(t)?;
        rows.push((
            Species {
                name: "OH-".into(),
                charge: -1,
                log10_k: log10_kw,
                ion_size_angstrom: ION_SIZE_OH,
                kind: SpeciesKind::Hydroxide,
            },
            vec![(0, -1.0)],
        ));
        for (fi, fam) in b.families.iter_mut().enumerate() {
            let p = &fam.protolyte;
            let n = p.proton_count();
            let mut pkas = Vec::with_capacity(n);
            for i in 0..n {
                let (pka, gap) = p.pka_and_gap_at(i, t);
                pkas.push(pka);
                if let Some(gap) = gap {
                    // Step i (0-based) takes form n − i to form n − i − 1.
                    let forms = (p.form_name(n - i), p.form_name(n - i - 1));
                    warnings.push(Warning::from_gap(p.name(), Some((i + 1, forms)), gap, tc));
                }
            }
            fam.forms.clear();
            for j in 0..=n {
                // log β_j = Σ of the last j pKa values (protonation of the base j times).
                let log_beta: f64 = pkas[n - j..].iter().sum();
                fam.forms.push(rows.len());
                rows.push((
                    Species {
                        name: p.form_name(j).into(),
                        charge: p.form_charge(j),
                        log10_k: log_beta,
                        ion_size_angstrom: p.form_ion_size_angstrom(j).unwrap_or(DEFAULT_ION_SIZE_ANGSTROM),
                        kind: SpeciesKind::Form { family: fi, protons: j },
                    },
                    if j == 0 {
                        vec![(fam.component, 1.0)]
                    } else {
                        vec![(fam.component, 1.0), (0, j as f64)]
                    },
                ));
            }
        }
        for (ci, comp) in b.components.iter().enumerate() {
            if let ComponentKind::Ion(ion) = &comp.kind {
                rows.push((
                    Species {
                        name: ion.display_name().into(),
                        charge: ion.charge(),
                        log10_k: 0.0,
                        ion_size_angstrom: ion.ion_size_angstrom().unwrap_or(DEFAULT_ION_SIZE_ANGSTROM),
                        kind: SpeciesKind::FreeIon { component: ci },
                    },
                    vec![(ci, 1.0)],
                ));
            }
        }
        for cx in recipe.complexes() {
            let Some(stoich) = b.complex_stoichiometry(cx)? else {
                continue; // a part is absent from the recipe
            };
            let (lk, gap) = cx.log10_beta_and_gap_at(t);
            if let Some(gap) = gap {
                warnings.push(Warning::from_gap(cx.name(), None, gap, tc));
            }
            rows.push((
                Species {
                    name: cx.name().into(),
                    charge: cx.charge(),
                    log10_k: lk,
                    ion_size_angstrom: cx.ion_size_angstrom().unwrap_or(DEFAULT_ION_SIZE_ANGSTROM),
                    kind: SpeciesKind::Complex,
                },
                stoich,
            ));
        }
        let nc = b.components.len();
        debug_assert_eq!(nc, nc_guess);
        let mut nu = vec![0.0; rows.len() * nc];
        let mut coupling = Vec::with_capacity(rows.len());
        let mut group = Vec::with_capacity(rows.len());
        let mut species = Vec::with_capacity(rows.len());
        for (s, (sp, st)) in rows.into_iter().enumerate() {
            let mut heavy = 0.0;
            let mut g = 0;
            for (c, v) in st {
                nu[s * nc + c] += v;
                if c != 0 {
                    heavy += v.abs();
                    g = c;
                }
            }
            coupling.push(heavy > 1.0);
            group.push(g);
            species.push(sp);
        }
        let ln_k = species.iter().map(|s| s.log10_k * std::f64::consts::LN_10).collect();
        let mut term_start = Vec::with_capacity(species.len() + 1);
        let mut terms = Vec::new();
        let mut members = vec![Vec::new(); nc];
        for s in 0..species.len() {
            term_start.push(terms.len());
            for c in 0..nc {
                if nu[s * nc + c] != 0.0 {
                    terms.push((c, nu[s * nc + c]));
                }
            }
            if !coupling[s] {
                members[group[s]].push(s);
            }
        }
        term_start.push(terms.len());
        let free_species = (0..nc)
            .map(|c| {
                (c > 0)
                    .then(|| {
                        (0..species.len()).find(|&s| {
                            !matches!(species[s].kind, SpeciesKind::Complex)
                                && nu[s * nc + c] == 1.0
                                && nu[s * nc] == 0.0
                        })
                    })
                    .flatten()
            })
            .collect();
        let species_len = species.len();
        // ν(H⁺) of every species within ±MAX_COMPLEX_PROTONS (families have at most 12 steps
        // and complexes are checked where they are made; this guards the fast path's table).
        let span = i64::from(crate::limits::MAX_COMPLEX_PROTONS);
        let mut nu_h: Vec<i32> = Vec::with_capacity(species_len);
        for (s, sp) in species.iter().enumerate() {
            let v = nu[s * nc];
            if !(v.is_finite() && v.abs() <= span as f64) {
                return Err(Error::IntegerOutOfRange {
                    what: sp.name.to_string(),
                    quantity: "H⁺ count of the species".into(),
                    value: if v.is_finite() { v as i64 } else { i64::MAX },
                    min: -span,
                    max: span,
                });
            }
            nu_h.push(v.round() as i32);
        }
        let mut fast_members = Vec::with_capacity(species_len);
        let mut fast_member_start = Vec::with_capacity(nc + 1);
        for list in &members {
            fast_member_start.push(fast_members.len());
            fast_members.extend(
                list.iter()
                    .map(|&s| packed::Member::new(s, nu_h[s], f64::from(species[s].charge))),
            );
        }
        fast_member_start.push(fast_members.len());
        let fast_zmax = packed::largest_charge(&fast_members);
        let unc = || (0..species_len).filter(|&s| !coupling[s]);
        let nu_h_span = (
            unc().map(|s| nu_h[s].max(0).unsigned_abs() as usize).max().unwrap_or(0),
            unc().map(|s| nu_h[s].min(0).unsigned_abs() as usize).max().unwrap_or(0),
        );
        let charge_f = species.iter().map(|s| f64::from(s.charge)).collect();
        let (phases, open) = b.phase_rows(recipe, &species, t, tc, &mut warnings)?;
        let alkalinity_reference: Vec<f64> = b
            .components
            .iter()
            .map(|c| match c.kind {
                ComponentKind::Family(f) => crate::phase::reference_protons(&b.families[f].protolyte) as f64,
                _ => 0.0,
            })
            .collect();
        let carbonate = b.components.iter().position(|c| &*c.name == "carbonate");
        let interactions = if conditions.activity.depends_on_composition() {
            Interactions::pair(species.iter().map(|s| (&*s.name, s.charge)))
        } else {
            Interactions::default()
        };
        let layout = Arc::new(layout::ResultLayout::new(
            &species,
            &b.families,
            &b.components,
            (&term_start, &terms),
            &alkalinity_reference,
            carbonate,
            &phases,
        ));
        let coupled_species = (0..species.len()).filter(|&s| coupling[s]).collect();
        Ok(System {
            temperature: t,
            model: conditions.activity,
            ph_convention: conditions.ph_convention,
            interactions,
            dh: DebyeHuckelConstants::at(t)?,
            water_density,
            log10_kw,
            components: b.components,
            species,
            families: b.families,
            nu,
            coupling,
            coupled_species,
            ln_k,
            term_start,
            terms,
            members,
            free_species,
            layout,
            nu_h_span,
            fast_members,
            fast_member_start,
            fast_zmax,
            nu_h,
            charge_f,
            compile_warnings: warnings,
            below_floor,
            phases,
            open,
            alkalinity_reference,
            carbonate,
        })
    }

    /// The temperature.
    pub fn temperature(&self) -> Temperature {
        self.temperature
    }

    /// The activity model.
    pub fn activity_model(&self) -> ActivityModel {
        self.model
    }

    /// The pH convention of the results.
    pub fn ph_convention(&self) -> PhConvention {
        self.ph_convention
    }

    /// The Debye–Hückel constants at the system's temperature.
    pub fn debye_huckel(&self) -> DebyeHuckelConstants {
        self.dh
    }

    /// Density of water at the system's temperature, kg/L (molar = molal × this).
    pub fn water_density_kg_per_l(&self) -> f64 {
        self.water_density
    }

    /// log₁₀ Kw at the system's temperature.
    pub fn log10_kw(&self) -> f64 {
        self.log10_kw
    }

    /// The components; index 0 is H⁺.
    pub fn components(&self) -> &[Component] {
        &self.components
    }

    /// The species rows.
    pub fn species(&self) -> &[Species] {
        &self.species
    }

    /// The acid–base families.
    pub fn families(&self) -> &[Family] {
        &self.families
    }

    /// Stoichiometric coefficient of component `component` in species `species`; `None`
    /// when either index is out of range.
    ///
    /// ```
    /// use protolyte::{Amount, Catalog, Conditions, Recipe};
    /// let cat = Catalog::builtin();
    /// let mut r = Recipe::new();
    /// r.add(&cat.reagent("acetic acid")?, Amount::molal(0.1))?;
    /// let sys = r.compile(&Conditions::default())?;
    /// assert_eq!(sys.stoichiometry(1, 0), Some(-1.0)); // OH⁻ = H₂O − H⁺
    /// assert_eq!(sys.stoichiometry(99, 0), None);
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn stoichiometry(&self, species: usize, component: usize) -> Option<f64> {
        let nc = self.components.len();
        if species < self.species.len() && component < nc {
            Some(self.nu[species * nc + component])
        } else {
            None
        }
    }

    /// The components one unit of `reagent` adds to, with its count of each (H⁺ and OH⁻
    /// left out: they enter the charge balance, not a total). A part whose component is not
    /// in this system is left out.
    ///
    /// ```
    /// use protolyte::{Amount, Catalog, Conditions, Recipe};
    ///
    /// let cat = Catalog::builtin();
    /// let na2co3 = cat.reagent("sodium carbonate")?;
    /// let mut r = Recipe::new();
    /// r.add(&na2co3, Amount::millimolar(1.0))?;
    /// let sys = r.compile(&Conditions::default())?;
    /// let counts = sys.component_counts(&na2co3);
    /// let na = sys.component_index("sodium").unwrap();
    /// assert!(counts.contains(&(na, 2.0)));
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn component_counts(&self, reagent: &crate::reagent::Reagent) -> Vec<(usize, f64)> {
        reagent
            .parts()
            .iter()
            .filter_map(|(c, n)| {
                let name = match c {
                    Constituent::Form { protolyte, .. } => protolyte.name(),
                    Constituent::Ion(ion) => ion.name(),
                    Constituent::Proton | Constituent::Hydroxide => return None,
                };
                self.component_index(name).map(|i| (i, f64::from(*n)))
            })
            .collect()
    }

    /// Index of the component named `name` (a family or an ion name, or "H+").
    pub fn component_index(&self, name: &str) -> Option<usize> {
        self.components.iter().position(|c| &*c.name == name)
    }

    /// Index of the species named `name`. A name written without the caret of the charge
    /// notation ("CO32-" for "CO3^2-", "CaHCO3^+" for "CaHCO3+") finds the species too.
    pub fn species_index(&self, name: &str) -> Option<usize> {
        (self.species.iter().position(|s| &*s.name == name))
            .or_else(|| (self.species.iter()).position(|s| crate::protolyte::species_name_eq(&s.name, name)))
    }

    /// Sets the total of component `index` (mol/kg). Refuses H⁺ (index 0), an index out of
    /// range, a negative or non-finite total, and a total above
    /// [`MAX_TOTAL_MOLAL`](crate::limits::MAX_TOTAL_MOLAL) ([`Error::AmountTooLarge`]). A
    /// positive total below [`MIN_TOTAL_MOLAL`](crate::limits::MIN_TOTAL_MOLAL) is taken as
    /// zero and the results carry [`Warning::TotalBelowFloor`].
    ///
    /// ```
    /// use protolyte::{Amount, Catalog, Conditions, Recipe};
    /// let cat = Catalog::builtin();
    /// let mut r = Recipe::new();
    /// r.add(&cat.reagent("acetic acid")?, Amount::molal(0.1))?;
    /// let mut sys = r.compile(&Conditions::default())?;
    /// let i = sys.component_index("acetate").unwrap();
    /// sys.set_total_molal(i, 0.01)?;
    /// assert_eq!(sys.components()[i].total_molal, 0.01);
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn set_total_molal(&mut self, index: usize, total: f64) -> Result<()> {
        if index == 0 || index >= self.components.len() {
            return Err(Error::InconsistentDefinition {
                name: "system".into(),
                reason: format!(
                    "component index {index} cannot be set (1..{} are settable; 0 is H+)",
                    self.components.len()
                ),
            });
        }
        let name = self.components[index].name.clone();
        let (total, floored) = checked_total(&name, total)?;
        self.components[index].total_molal = total;
        self.below_floor[index] = floored;
        Ok(())
    }

    /// Sets log₁₀ K of species `species` (at the system's temperature). Refuses H⁺ (whose
    /// constant is 1 by definition), an index out of range and a value that is not finite
    /// or beyond ±300.
    pub fn set_log10_k(&mut self, species: usize, log10_k: f64) -> Result<()> {
        if species == 0 || species >= self.species.len() {
            return Err(Error::InconsistentDefinition {
                name: "system".into(),
                reason: format!(
                    "species index {species} cannot be set (1..{} are settable)",
                    self.species.len()
                ),
            });
        }
        let name = self.species[species].name.clone();
        crate::error::check_parameter(&name, "log K", log10_k, -300.0, 300.0, "must be finite and within ±300")?;
        if species == 1 {
            self.log10_kw = log10_k;
        }
        self.species[species].log10_k = log10_k;
        self.ln_k[species] = log10_k * std::f64::consts::LN_10;
        Ok(())
    }

    /// The stepwise pKa of step `step` (0-based, most protonated first) of family `family`
    /// at the system's temperature, as compiled (or as last set).
    pub fn pka(&self, family: usize, step: usize) -> Option<f64> {
        let f = self.families.get(family)?;
        let n = f.forms.len() - 1;
        if step >= n {
            return None;
        }
        // log β of the form with j protons minus that with j − 1 is pKa of step n − j.
        let j = n - step;
        Some(self.species[f.forms[j]].log10_k - self.species[f.forms[j - 1]].log10_k)
    }

    /// Sets the stepwise pKa of step `step` of family `family` at the system's temperature
    /// (for fitting and what-if studies): the formation constants of the forms are rebuilt.
    ///
    /// ```
    /// use protolyte::{Amount, Catalog, Conditions, Recipe};
    /// let cat = Catalog::builtin();
    /// let mut r = Recipe::new();
    /// r.add(&cat.reagent("acetic acid")?, Amount::molal(0.01))?;
    /// let mut sys = r.compile(&Conditions::default())?;
    /// sys.set_pka(0, 0, 5.0)?;
    /// assert!((sys.pka(0, 0).unwrap() - 5.0).abs() < 1e-12);
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn set_pka(&mut self, family: usize, step: usize, pka: f64) -> Result<()> {
        let Some(old) = self.pka(family, step) else {
            return Err(Error::InconsistentDefinition {
                name: "system".into(),
                reason: format!("family {family} has no dissociation step {step}"),
            });
        };
        let name = self.layout.family_names[family].clone();
        crate::error::check_parameter(&name, "pKa", pka, -10.0, 25.0, "must be finite and within -10..25")?;
        let forms = self.families[family].forms.clone();
        let n = forms.len() - 1;
        // pKa of step i enters log β_j for every j ≥ n − i.
        for &s in &forms[n - step..] {
            let v = self.species[s].log10_k + (pka - old);
            self.species[s].log10_k = v;
            self.ln_k[s] = v * std::f64::consts::LN_10;
        }
        Ok(())
    }

    /// True when no active species couples two components (the fast path applies).
    pub(crate) fn uncoupled(&self) -> bool {
        let nc = self.components.len();
        self.coupled_species.iter().all(|&s| !self.species_active(s, nc))
    }

    /// A species is active when every non-H component it needs has a positive total.
    pub(crate) fn species_active(&self, s: usize, nc: usize) -> bool {
        (1..nc).all(|c| self.nu[s * nc + c] == 0.0 || self.component_active(c))
    }

    /// A component is active when its total is positive or a fixed partial pressure sets it.
    pub(crate) fn component_active(&self, c: usize) -> bool {
        self.components[c].total_molal > 0.0 || self.open.get(c).copied().unwrap_or(false)
    }

    /// True when the system holds a fixed pH, a fixed partial pressure or a solid allowed to
    /// form: it is then solved on the general path with those relations.
    pub(crate) fn has_phase_constraints(&self) -> bool {
        self.phases
            .iter()
            .any(|r| r.is_equality() || r.is_inequality() || r.is_amount())
    }

    /// The names of the solids whose saturation index this system reports, in order.
    ///
    /// ```
    /// use protolyte::{Amount, Catalog, Conditions, Recipe};
    /// let cat = Catalog::builtin();
    /// let mut r = Recipe::new();
    /// r.add(&cat.reagent("calcium chloride")?, Amount::millimolar(1.0))?
    ///  .add(&cat.reagent("sodium bicarbonate")?, Amount::millimolar(2.0))?;
    /// let sys = r.compile(&Conditions::default())?;
    /// assert!(sys.solid_names().any(|n| n == "calcite"));
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn solid_names(&self) -> impl Iterator<Item = &str> {
        self.phases
            .iter()
            .filter(|r| matches!(r.kind, RowKind::Solid { .. }))
            .map(|r| &*r.name)
    }

    /// The names of the gases whose partial pressure this system reports, in order.
    pub fn gas_names(&self) -> impl Iterator<Item = &str> {
        self.phases
            .iter()
            .filter(|r| matches!(r.kind, RowKind::Gas { .. }))
            .map(|r| &*r.name)
    }
}

struct Builder {
    components: Vec<Component>,
    families: Vec<Family>,
}

impl Builder {
    fn family_component(&mut self, p: &Protolyte) -> Result<usize> {
        if let Some(fi) = self.families.iter().position(|f| f.protolyte.name() == p.name()) {
            let f = &self.families[fi];
            if !same_family(&f.protolyte, p) {
                return Err(Error::InconsistentDefinition {
                    name: p.name().to_string(),
                    reason: "two different definitions (pKa, charge or enthalpies) under one name".into(),
                });
            }
            return Ok(f.component);
        }
        if self.components.iter().any(|c| &*c.name == p.name()) {
            return Err(Error::InconsistentDefinition {
                name: p.name().to_string(),
                reason: "the name is used by both an ion and a protolyte".into(),
            });
        }
        let idx = self.components.len();
        self.components.push(Component {
            name: p.name().into(),
            charge: p.form_charge(0),
            total_molal: 0.0,
            kind: ComponentKind::Family(self.families.len()),
        });
        self.families.push(Family {
            protolyte: p.clone(),
            component: idx,
            forms: Vec::new(),
        });
        Ok(idx)
    }

    fn ion_component(&mut self, ion: &Ion) -> Result<usize> {
        if let Some(i) = self.components.iter().position(|c| &*c.name == ion.name()) {
            return match &self.components[i].kind {
                ComponentKind::Ion(existing) if existing.charge() == ion.charge() => Ok(i),
                _ => Err(Error::InconsistentDefinition {
                    name: ion.name().to_string(),
                    reason: "two different definitions under one name".into(),
                }),
            };
        }
        self.components.push(Component {
            name: ion.name().into(),
            charge: ion.charge(),
            total_molal: 0.0,
            kind: ComponentKind::Ion(ion.clone()),
        });
        Ok(self.components.len() - 1)
    }

    /// The complex's row, or `None` when one of its parts is not in the recipe.
    fn complex_stoichiometry(&self, cx: &Complex) -> Result<Option<Vec<(usize, f64)>>> {
        self.parts_stoichiometry(cx.name(), cx.parts())
    }

    /// The phase rows of the recipe's solids, gases and constraints, and the components a
    /// fixed partial pressure makes active.
    fn phase_rows(
        &self,
        recipe: &Recipe,
        species: &[Species],
        t: crate::quantity::Temperature,
        tc: f64,
        warnings: &mut Vec<Warning>,
    ) -> Result<(Vec<PhaseRow>, Vec<bool>)> {
        const LN10: f64 = std::f64::consts::LN_10;
        let nc = self.components.len();
        let mut open = vec![false; nc];
        let mut rows: Vec<PhaseRow> = Vec::new();
        let charge_of = |terms: &[(usize, f64)]| -> f64 {
            terms
                .iter()
                .map(|&(c, v)| v * f64::from(self.components[c].charge))
                .sum()
        };
        let sorted = |mut terms: Vec<(usize, f64)>| {
            terms.sort_by_key(|&(c, _)| c);
            // Merge repeated components.
            let mut out: Vec<(usize, f64)> = Vec::with_capacity(terms.len());
            for (c, v) in terms {
                match out.last_mut() {
                    Some((lc, lv)) if *lc == c => *lv += v,
                    _ => out.push((c, v)),
                }
            }
            out.retain(|&(_, v)| v != 0.0);
            out
        };
        // Solids: the reported ones and the allowed ones, once each.
        let mut seen: Vec<&str> = Vec::new();
        for solid in recipe.reported_solids().iter().chain(recipe.allowed_solids()) {
            if seen.contains(&solid.name()) {
                continue;
            }
            seen.push(solid.name());
            // An allowed solid's own definition wins over a reported one of the same name.
            let solid = recipe
                .allowed_solids()
                .iter()
                .find(|a| a.name() == solid.name())
                .unwrap_or(solid);
            let Some(terms) = self.parts_stoichiometry(solid.name(), solid.parts())? else {
                continue;
            };
            let (lk, gap) = solid.log10_k_and_gap_at(t);
            if let Some(gap) = gap {
                warnings.push(Warning::from_gap(solid.name(), None, gap, tc));
            }
            let allowed =
                recipe.allows_all_solids() || recipe.allowed_solids().iter().any(|s| s.name() == solid.name());
            let terms = sorted(terms);
            rows.push(PhaseRow {
                name: solid.name().into(),
                kind: RowKind::Solid { allowed },
                charge: charge_of(&terms),
                terms,
                ln_k: lk * LN10,
            });
        }
        // Gases: fixed ones first, then the reported ones whose family is present.
        let fixed: Vec<(&crate::phase::Gas, f64)> = recipe
            .constraints()
            .iter()
            .filter_map(|c| match c {
                Constraint::PartialPressure { gas, pressure } => Some((gas, pressure.bar().ln())),
                _ => None,
            })
            .collect();
        let mut gas_seen: Vec<&str> = Vec::new();
        for (gas, lp) in fixed
            .iter()
            .map(|&(g, lp)| (g, Some(lp)))
            .chain(recipe.reported_gases().iter().map(|g| (g, None)))
        {
            if gas_seen.contains(&gas.name()) {
                continue;
            }
            gas_seen.push(gas.name());
            let family = gas.family();
            let Some(fi) = self.families.iter().position(|f| f.protolyte.name() == family.name()) else {
                continue;
            };
            if !same_family(&self.families[fi].protolyte, family) {
                if lp.is_some() {
                    return Err(Error::InconsistentDefinition {
                        name: gas.name().to_string(),
                        reason: format!("its family `{}` differs from the recipe's definition", family.name()),
                    });
                }
                continue;
            }
            let comp = self.families[fi].component;
            let j = gas.protons();
            let form = self.families[fi].forms[j];
            let (lkh, gap) = gas.log10_kh_and_gap_at(t);
            if let Some(gap) = gap {
                warnings.push(Warning::from_gap(gas.name(), None, gap, tc));
            }
            let mut terms = vec![(comp, 1.0)];
            if j > 0 {
                terms.insert(0, (0, j as f64));
            }
            if lp.is_some() {
                open[comp] = true;
            }
            rows.push(PhaseRow {
                name: gas.name().into(),
                kind: RowKind::Gas { fixed: lp },
                charge: charge_of(&terms),
                terms,
                // ln p = ln a(form) − ln K_H = ln β_j + ν·y − ln K_H.
                ln_k: (lkh - species[form].log10_k) * LN10,
            });
        }
        let frees_charge_balance = recipe
            .constraints()
            .iter()
            .any(|c| matches!(c, Constraint::Ph(_) | Constraint::Alkalinity(_)));
        for c in recipe.constraints() {
            match c {
                Constraint::Ph(ph) => rows.push(PhaseRow {
                    name: "pH".into(),
                    kind: RowKind::Ph { ln_a_h: -ph * LN10 },
                    terms: vec![(0, 1.0)],
                    ln_k: 0.0,
                    charge: 1.0,
                }),
                Constraint::Alkalinity(molal) => rows.push(PhaseRow {
                    name: "total alkalinity".into(),
                    kind: RowKind::Alkalinity { molal: *molal },
                    terms: vec![(0, 1.0)],
                    ln_k: 0.0,
                    charge: 1.0,
                }),
                Constraint::ChargeBalanceOn(ion) => {
                    if !frees_charge_balance {
                        return Err(Error::ConflictingConstraints {
                            first: c.describe(),
                            second: "the charge balance, which sets the pH".into(),
                            reason: "closing the charge balance on an ion needs a fixed pH or alkalinity to set the pH instead".into(),
                        });
                    }
                    let Some(ci) = self.components.iter().position(|k| &*k.name == ion.name()) else {
                        continue;
                    };
                    open[ci] = true;
                    rows.push(PhaseRow {
                        name: ion.name().into(),
                        kind: RowKind::Closure,
                        terms: vec![(0, -f64::from(ion.charge())), (ci, 1.0)],
                        ln_k: 0.0,
                        charge: 0.0,
                    });
                }
                _ => {}
            }
        }
        Ok((rows, open))
    }

    /// The row of a reaction over `parts` (a complex's or a solid's), or `None` when one of
    /// its parts is not in the recipe.
    fn parts_stoichiometry(&self, name: &str, parts: &[(ComplexPart, i32)]) -> Result<Option<Vec<(usize, f64)>>> {
        struct Named<'a>(&'a str);
        impl Named<'_> {
            fn name(&self) -> &str {
                self.0
            }
        }
        let cx = Named(name);
        let mut out = Vec::new();
        for (part, n) in parts {
            let idx = match part {
                ComplexPart::Proton => Some(0),
                ComplexPart::Base(p) => match self.components.iter().position(|c| &*c.name == p.name()) {
                    Some(i) => match &self.components[i].kind {
                        ComponentKind::Family(f) if same_family(&self.families[*f].protolyte, p) => Some(i),
                        ComponentKind::Family(_) => {
                            return Err(Error::InconsistentDefinition {
                                name: cx.name().to_string(),
                                reason: format!("its ligand `{}` differs from the recipe's definition", p.name()),
                            });
                        }
                        _ => {
                            return Err(Error::InconsistentDefinition {
                                name: cx.name().to_string(),
                                reason: format!(
                                    "its part `{}` is an acid–base family, but the recipe's `{}` is a simple ion",
                                    p.name(),
                                    p.name()
                                ),
                            });
                        }
                    },
                    None => None,
                },
                ComplexPart::Ion(ion) => match self.components.iter().position(|c| &*c.name == ion.name()) {
                    Some(i) => match &self.components[i].kind {
                        ComponentKind::Ion(existing) if existing.charge() == ion.charge() => Some(i),
                        ComponentKind::Ion(existing) => {
                            return Err(Error::InconsistentDefinition {
                                name: cx.name().to_string(),
                                reason: format!(
                                    "its ion `{}` has charge {:+}, the recipe's ion of that name {:+}",
                                    ion.name(),
                                    ion.charge(),
                                    existing.charge()
                                ),
                            });
                        }
                        _ => {
                            return Err(Error::InconsistentDefinition {
                                name: cx.name().to_string(),
                                reason: format!(
                                    "its part `{}` is a simple ion, but the recipe's `{}` is an acid–base family",
                                    ion.name(),
                                    ion.name()
                                ),
                            });
                        }
                    },
                    None => None,
                },
            };
            match idx {
                Some(i) => out.push((i, f64::from(*n))),
                None => return Ok(None),
            }
        }
        Ok(Some(out))
    }
}

/// A component total checked against the accepted domain: refused above
/// [`MAX_TOTAL_MOLAL`](crate::limits::MAX_TOTAL_MOLAL) or when not finite and non-negative;
/// a positive total below [`MIN_TOTAL_MOLAL`](crate::limits::MIN_TOTAL_MOLAL) becomes zero
/// (the value given is returned beside it for the warning).
fn checked_total(name: &str, total: f64) -> Result<(f64, Option<f64>)> {
    // The message names the family, so it is only built when the check fails.
    let t = if total.is_finite() && (0.0..=crate::limits::MAX_TOTAL_MOLAL).contains(&total) {
        total
    } else {
        crate::error::check_amount_max(&format!("total of {name}"), total, "mol/kg")?
    };
    if t > 0.0 && t < crate::limits::MIN_TOTAL_MOLAL {
        Ok((0.0, Some(t)))
    } else {
        Ok((t, None))
    }
}

fn same_family(a: &Protolyte, b: &Protolyte) -> bool {
    a.charge_most_protonated() == b.charge_most_protonated() && a.steps() == b.steps()
}
