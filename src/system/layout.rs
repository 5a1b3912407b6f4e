//! How a system's results are laid out: the names, the family and component slots of a
//! result's derived numbers, and the per-species coefficients of the totals and
//! alkalinities a result assembles on first access (made once when the system is compiled
//! and shared by every result).

use std::sync::Arc;

/// The names a result shares with its system: made once when the system is compiled, and
/// referenced (not copied) by every result.
#[derive(Debug, PartialEq)]
pub(crate) struct ResultLayout {
    pub(crate) species_names: Vec<Arc<str>>,
    pub(crate) species_charges: Vec<i32>,
    pub(crate) family_names: Vec<Arc<str>>,
    /// Where each family's fractions start in a result's numbers (one entry more than there
    /// are families: the last is the total count of forms).
    pub(crate) family_start: Vec<usize>,
    pub(crate) component_names: Vec<Arc<str>>,
    /// The species of each family's forms (by bound protons), family after family as
    /// `family_start`.
    pub(crate) family_forms: Vec<usize>,
    /// The sparse stoichiometry of the system (`terms[term_start[s]..term_start[s + 1]]`),
    /// for the dissolved totals a result assembles on first access.
    pub(crate) term_start: Vec<usize>,
    pub(crate) terms: Vec<(usize, f64)>,
    /// Per species: the coefficient of its molality in total alkalinity (the protons its
    /// families' parts lack against their zero level, less ν(H⁺)).
    pub(crate) alkalinity: Vec<f64>,
    /// The species that hold carbonate, in species order, with the coefficient of their
    /// molality in carbonate alkalinity (2ν(carbonate) − ν(H⁺)).
    pub(crate) carbonate_alkalinity: Vec<(usize, f64)>,
    /// The component of the carbonate family, if present.
    pub(crate) carbonate: Option<usize>,
    /// The system's phase rows (for the saturation and gas states of a system that only
    /// reports them, assembled on first access).
    pub(crate) phase_rows: Vec<crate::phase::PhaseRow>,
}

impl ResultLayout {
    /// The layout of a system's results: its species, families and components, its sparse
    /// stoichiometry (`term_start`, `terms`), each component's zero level of protons for
    /// total alkalinity and the carbonate component.
    pub(crate) fn new(
        species: &[crate::system::Species],
        families: &[crate::system::Family],
        components: &[crate::system::Component],
        (term_start, terms): (&[usize], &[(usize, f64)]),
        alkalinity_reference: &[f64],
        carbonate: Option<usize>,
        phase_rows: &[crate::phase::PhaseRow],
    ) -> Self {
        let mut family_start = Vec::with_capacity(families.len() + 1);
        let mut at = 0;
        family_start.push(0);
        for f in families {
            at += f.forms.len();
            family_start.push(at);
        }
        // Each species' coefficients in total and carbonate alkalinity, summed over its terms
        // in the order a result's pass over the species took them.
        let mut alkalinity = Vec::with_capacity(species.len());
        let mut carbonate_alkalinity = Vec::new();
        for s in 0..species.len() {
            let (mut level, mut nu_h, mut nu_carb) = (0.0, 0.0, 0.0);
            for &(c, v) in &terms[term_start[s]..term_start[s + 1]] {
                if c == 0 {
                    nu_h = v;
                } else {
                    level += v * alkalinity_reference[c];
                    if Some(c) == carbonate {
                        nu_carb = v;
                    }
                }
            }
            alkalinity.push(level - nu_h);
            if nu_carb > 0.0 {
                carbonate_alkalinity.push((s, 2.0 * nu_carb - nu_h));
            }
        }
        ResultLayout {
            species_names: species.iter().map(|s| s.name.clone()).collect(),
            species_charges: species.iter().map(|s| s.charge).collect(),
            family_names: families.iter().map(|f| Arc::from(f.protolyte.name())).collect(),
            family_start,
            component_names: components.iter().map(|c| c.name.clone()).collect(),
            family_forms: families.iter().flat_map(|f| f.forms.iter().copied()).collect(),
            term_start: term_start.to_vec(),
            terms: terms.to_vec(),
            alkalinity,
            carbonate_alkalinity,
            carbonate,
            phase_rows: phase_rows.to_vec(),
        }
    }

    /// Adds the dissolved total Σ ν·m of every component (over every species, in species
    /// order) into its slot of a result's derived numbers.
    pub(crate) fn add_dissolved_totals(&self, molal: &[f64], numbers: &mut [f64]) {
        let comp_at = self.component_numbers();
        for (s, &m) in molal.iter().enumerate() {
            for &(c, v) in &self.terms[self.term_start[s]..self.term_start[s + 1]] {
                numbers[comp_at + 4 * c + 1] += v * m;
            }
        }
    }

    pub(crate) fn families(&self) -> usize {
        self.family_start.len() - 1
    }

    /// Offset of the per-family numbers.
    pub(crate) fn family_numbers(&self) -> usize {
        self.family_start[self.families()]
    }

    /// Offset of the per-component numbers.
    pub(crate) fn component_numbers(&self) -> usize {
        self.family_numbers() + 3 * self.families()
    }

    /// The count of derived numbers.
    pub(crate) fn numbers_len(&self) -> usize {
        self.component_numbers() + 4 * self.component_names.len()
    }
}
