//! Specific ion interaction theory (SIT): the interaction coefficients ε and how they are
//! paired with the species of a system.
//!
//! log₁₀ γᵢ = −zᵢ² D + Σⱼ ε(i, j) mⱼ,   D = A√I / (1 + 1.5√I),
//!
//! with the sum over the ions j of opposite charge sign (ions of the same sign do not
//! interact specifically: Brønsted's principle), ε in kg/mol independent of I, and
//! 1.5 kg^½ mol^−½ the product B·å fixed for every ion (I. Grenthe, A. V. Plyasunov and
//! K. Spahiu, "Estimations of medium effects on thermodynamic data", ch. IX in *Modelling in
//! Aquatic Chemistry*, NEA/OECD 1997; L. Ciavatta, *Ann. Chim. (Rome)* **70** (1980) 551).
//! The model is stated to hold to about 3.5 mol/kg.
//!
//! **Unknown pairs.** A cation–anion pair without a tabulated ε gets ε = 0: the species then
//! keeps the Debye–Hückel term D (with the 1.5 convention) and the interactions that are
//! known. The 1:1 and 1:2 coefficients tabulated by the NEA-TDB lie mostly within
//! −0.25…+0.25 kg/mol, so the error this leaves in log₁₀ γ is of the order of 0.1·m of the
//! partner; each result in which such a pair meets a partner above 0.01 mol/kg carries a
//! [`Warning::UnknownInteraction`](crate::Warning::UnknownInteraction) naming the pair.
//!
//! H⁺ and OH⁻ are not paired with each other (they never meet at comparable molalities).
//!
//! **Neutral species** keep γ = 1: SIT gives them no Debye–Hückel term, and salting-out
//! coefficients of neutral solutes are not tabulated here.

/// One tabulated interaction coefficient.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct InteractionCoefficient {
    /// The cation, as the species is named in a system (its formula, e.g. `"Na+"`).
    pub cation: &'static str,
    /// The anion, e.g. `"Cl-"`.
    pub anion: &'static str,
    /// ε(cation, anion), kg/mol, at 25 °C.
    pub epsilon_kg_per_mol: f64,
    /// The uncertainty the source gives, kg/mol.
    pub uncertainty_kg_per_mol: f64,
    /// Where the value comes from.
    pub source: &'static str,
    /// True when the value was entered from memory rather than read from the source.
    pub from_memory: bool,
}

const NEA_B4: &str = "R. Guillaumont et al., Update on the Chemical Thermodynamics of U, Np, Pu, Am and Tc (NEA-TDB vol. 5, Elsevier 2003), appendix B, table B-4 (cations)";
const NEA_B5: &str = "R. Guillaumont et al., Update on the Chemical Thermodynamics of U, Np, Pu, Am and Tc (NEA-TDB vol. 5, Elsevier 2003), appendix B, table B-5 (anions)";
const CIAVATTA: &str = "L. Ciavatta, Ann. Chim. (Rome) 70 (1980) 551";

const fn eps(
    cation: &'static str,
    anion: &'static str,
    e: f64,
    u: f64,
    source: &'static str,
) -> InteractionCoefficient {
    InteractionCoefficient {
        cation,
        anion,
        epsilon_kg_per_mol: e,
        uncertainty_kg_per_mol: u,
        source,
        from_memory: true,
    }
}

/// The built-in interaction coefficients at 25 °C (kg/mol), every one entered from memory
/// of the cited tables.
pub const INTERACTION_COEFFICIENTS: &[InteractionCoefficient] = &[
    // H⁺ with the common anions
    eps("H+", "Cl-", 0.12, 0.01, NEA_B4),
    eps("H+", "Br-", 0.17, 0.01, NEA_B4),
    eps("H+", "ClO4-", 0.14, 0.02, NEA_B4),
    eps("H+", "NO3-", 0.07, 0.01, NEA_B4),
    // alkali metals with the medium anions
    eps("Li+", "Cl-", 0.10, 0.01, NEA_B4),
    eps("Li+", "ClO4-", 0.15, 0.01, NEA_B4),
    eps("Na+", "Cl-", 0.03, 0.01, NEA_B4),
    eps("Na+", "Br-", 0.05, 0.01, NEA_B4),
    eps("Na+", "ClO4-", 0.01, 0.01, NEA_B4),
    eps("Na+", "NO3-", -0.04, 0.03, NEA_B4),
    eps("K+", "Cl-", 0.00, 0.01, NEA_B4),
    eps("K+", "NO3-", -0.11, 0.04, NEA_B4),
    eps("NH4+", "Cl-", -0.01, 0.01, NEA_B4),
    // alkaline-earth metals
    eps("Mg^2+", "Cl-", 0.19, 0.02, NEA_B4),
    eps("Mg^2+", "ClO4-", 0.33, 0.03, NEA_B4),
    eps("Ca^2+", "Cl-", 0.14, 0.01, NEA_B4),
    eps("Ca^2+", "ClO4-", 0.27, 0.03, NEA_B4),
    // anions with the alkali metals
    eps("Li+", "OH-", -0.02, 0.03, NEA_B5),
    eps("Na+", "OH-", 0.04, 0.01, NEA_B5),
    eps("K+", "OH-", 0.09, 0.01, NEA_B5),
    eps("Na+", "F-", 0.02, 0.02, NEA_B5),
    eps("Na+", "HSO4-", -0.01, 0.02, NEA_B5),
    eps("Na+", "SO4^2-", -0.12, 0.06, NEA_B5),
    eps("K+", "SO4^2-", -0.06, 0.02, NEA_B5),
    eps("Na+", "HCO3-", 0.00, 0.02, NEA_B5),
    eps("K+", "HCO3-", -0.06, 0.05, NEA_B5),
    eps("Na+", "CO3^2-", -0.08, 0.03, NEA_B5),
    eps("K+", "CO3^2-", 0.02, 0.01, NEA_B5),
    eps("Na+", "H2PO4-", -0.08, 0.04, NEA_B5),
    eps("K+", "H2PO4-", -0.14, 0.04, NEA_B5),
    eps("Na+", "HPO4^2-", -0.15, 0.06, NEA_B5),
    eps("Na+", "PO4^3-", -0.25, 0.03, NEA_B5),
    eps("Na+", "C2H3O2-", 0.08, 0.01, CIAVATTA),
    eps("K+", "C2H3O2-", 0.09, 0.01, CIAVATTA),
];

/// ε(a, b) from the built-in table in either order, or `None` when the pair is not listed.
/// Names are species names ("Ca^2+", "Cl-"); one written without the caret ("Ca2+") is
/// found too.
pub fn interaction_coefficient(a: &str, b: &str) -> Option<&'static InteractionCoefficient> {
    let found = |same: fn(&str, &str) -> bool| {
        (INTERACTION_COEFFICIENTS.iter())
            .find(|e| (same(e.cation, a) && same(e.anion, b)) || (same(e.cation, b) && same(e.anion, a)))
    };
    tabulated(a, b).or_else(|| found(crate::protolyte::species_name_eq))
}

/// ε(a, b) for names exactly as the table writes them (the library's own species names).
fn tabulated(a: &str, b: &str) -> Option<&'static InteractionCoefficient> {
    (INTERACTION_COEFFICIENTS.iter()).find(|e| (e.cation == a && e.anion == b) || (e.cation == b && e.anion == a))
}

/// The interaction pairs of one system: species index pairs with ε (log₁₀ units, kg/mol),
/// and the opposite-charge pairs without a tabulated value (ε = 0 by the estimation rule).
#[derive(Debug, Clone, Default, PartialEq)]
pub(crate) struct Interactions {
    /// (species a, species b, ε) for every known opposite-charge pair.
    pub known: Vec<(usize, usize, f64)>,
    /// (species a, species b) for every opposite-charge pair without a tabulated ε.
    pub unknown: Vec<(usize, usize)>,
}

impl Interactions {
    /// Pairs every cation with every anion among `species` (name, charge).
    pub(crate) fn pair<'a>(species: impl Iterator<Item = (&'a str, i32)> + Clone) -> Self {
        let mut out = Interactions::default();
        for (a, (na, za)) in species.clone().enumerate() {
            if za <= 0 {
                continue;
            }
            for (b, (nb, zb)) in species.clone().enumerate() {
                // H⁺ and OH⁻ never meet at comparable molalities (water's ion product): no
                // interaction is counted between them, and none is missed.
                if zb >= 0 || (na == "H+" && nb == "OH-") {
                    continue;
                }
                match tabulated(na, nb) {
                    Some(e) => out.known.push((a, b, e.epsilon_kg_per_mol)),
                    None => out.unknown.push((a, b)),
                }
            }
        }
        out
    }

    /// Adds the composition part Σⱼ ε(i, j)·mⱼ, in ln units, to `ln_gamma` for molalities `m`.
    #[inline]
    pub(crate) fn add_ln_terms(&self, m: &[f64], ln_gamma: &mut [f64]) {
        const LN10: f64 = std::f64::consts::LN_10;
        for &(a, b, e) in &self.known {
            let e = e * LN10;
            ln_gamma[a] += e * m[b];
            ln_gamma[b] += e * m[a];
        }
    }

    /// The largest change of any species' composition term between molalities `old` and
    /// `new` (ln units): the residual of the activity-coefficient iteration.
    pub(crate) fn max_change(&self, n_species: usize, old: &[f64], new: &[f64]) -> f64 {
        if self.known.is_empty() {
            return 0.0;
        }
        let mut d = vec![0.0; n_species];
        for &(a, b, e) in &self.known {
            let e = e * std::f64::consts::LN_10;
            d[a] += e * (new[b] - old.get(b).copied().unwrap_or(0.0));
            d[b] += e * (new[a] - old.get(a).copied().unwrap_or(0.0));
        }
        d.iter().fold(0.0, |w, x| w.max(x.abs()))
    }

    /// The composition part of log₁₀ γ of a trace ion `name` of charge `z` among the
    /// species (name, charge, molality) of a solution: Σⱼ ε(name, j)·mⱼ over the ions of
    /// opposite sign with a tabulated ε.
    pub(crate) fn trace_log10_term<'a>(name: &str, z: i32, species: impl Iterator<Item = (&'a str, i32, f64)>) -> f64 {
        species
            .filter(|&(_, zj, _)| zj * z < 0)
            .filter_map(|(nj, _, m)| tabulated(name, nj).map(|e| e.epsilon_kg_per_mol * m))
            .sum()
    }
}
