//! The shapes of the built-in data tables.
//!
//! Every table row carries its published source in `source`, and says in `from_memory`
//! whether the numbers were entered from memory of that source rather than read off a copy
//! of it during data entry. The tables are plain `const` data so that the compiler checks
//! their shape and lookups cost nothing at start-up.

/// One stepwise acid dissociation: HₖA → Hₖ₋₁A + H⁺.
#[derive(Debug, Clone, Copy)]
pub(crate) struct StepRecord {
    /// Thermodynamic pKa at 25 °C, infinite dilution (molal scale).
    pub pka: f64,
    /// Standard enthalpy of the dissociation, kJ/mol, where published.
    pub dh_kj_per_mol: Option<f64>,
    /// Standard heat-capacity change of the dissociation, J/(mol·K), where published.
    pub dcp_j_per_mol_k: Option<f64>,
}

/// An acid–base family (a protolyte): HₙA with its n stepwise dissociations.
#[derive(Debug, Clone, Copy)]
pub(crate) struct FamilyRecord {
    /// Canonical name, lower case (e.g. "phosphate").
    pub name: &'static str,
    /// Other names a user may type (lower case), e.g. "phosphoric acid", "h3po4".
    pub synonyms: &'static [&'static str],
    /// Formula of the most protonated form, e.g. "H3PO4".
    pub formula: &'static str,
    /// Charge of the most protonated form (0 for H3PO4, +1 for NH4+, +1 for glycine's H2Gly+).
    pub charge_most_protonated: i32,
    /// Stepwise dissociations, most protonated first (pKa1, pKa2, ...).
    pub steps: &'static [StepRecord],
    /// Ion-size parameter å for the extended Debye–Hückel model, ångström.
    pub ion_size_angstrom: Option<f64>,
    /// The published source of the numbers.
    pub source: &'static str,
    /// True when the numbers were entered from memory of the source.
    pub from_memory: bool,
}

/// A simple ion that takes part in no acid–base reaction (a spectator), or a metal ion
/// that takes part only through the complexes in the complex table.
#[derive(Debug, Clone, Copy)]
pub(crate) struct IonRecord {
    /// Canonical name, lower case (e.g. "sodium").
    pub name: &'static str,
    /// Other names (lower case), e.g. "na+".
    pub synonyms: &'static [&'static str],
    /// Formula with charge, e.g. "Na+".
    pub formula: &'static str,
    /// Charge number.
    pub charge: i32,
    /// Ion-size parameter å for the extended Debye–Hückel model, ångström.
    pub ion_size_angstrom: Option<f64>,
    /// The published source of the ion size.
    pub source: &'static str,
    /// True when the numbers were entered from memory of the source.
    pub from_memory: bool,
}

/// One constituent of a reagent as a person weighs or pipettes it.
#[derive(Debug, Clone, Copy)]
pub(crate) enum PartRecord {
    /// A family in a given protonation state: `protons` bound, 0 = fully deprotonated.
    Form { family: &'static str, protons: u32 },
    /// A simple ion from the ion table, by canonical name.
    Ion(&'static str),
    /// A hydrogen ion (strong acids).
    Proton,
    /// A hydroxide ion (strong bases).
    Hydroxide,
}

/// A reagent: what is weighed or pipetted.
#[derive(Debug, Clone, Copy)]
pub(crate) struct ReagentRecord {
    /// Canonical name, lower case (e.g. "sodium dihydrogen phosphate monohydrate").
    pub name: &'static str,
    /// Other names (lower case).
    pub synonyms: &'static [&'static str],
    /// Formula as written on a bottle, e.g. "NaH2PO4·H2O".
    pub formula: &'static str,
    /// Molar mass, g/mol, including any water of crystallisation.
    pub molar_mass_g_per_mol: f64,
    /// Constituents with counts; the sum of their charges must be zero.
    pub parts: &'static [(PartRecord, u32)],
    /// The published source of the molar mass (atomic weights).
    pub source: &'static str,
}

/// One building block of a complex or ion pair.
#[derive(Debug, Clone, Copy)]
pub(crate) enum ComplexPartRecord {
    /// The fully deprotonated form of a family (e.g. Y⁴⁻ of EDTA, NH₃ of ammonia).
    Base(&'static str),
    /// A simple ion from the ion table, by canonical name.
    Ion(&'static str),
    /// H⁺ (negative counts for hydroxo complexes: M²⁺ + H₂O − H⁺ → MOH⁺).
    Proton,
}

/// A complex or ion pair with its overall formation constant from its parts.
#[derive(Debug, Clone, Copy)]
pub(crate) struct ComplexRecord {
    /// Name, e.g. "CuNH3+2" style or a word; shown to users.
    pub name: &'static str,
    /// Parts with (signed) counts.
    pub parts: &'static [(ComplexPartRecord, i32)],
    /// log₁₀ β at 25 °C, infinite dilution (or as stated in `source`).
    pub log_beta: f64,
    /// Standard enthalpy of formation from the parts, kJ/mol, where published.
    pub dh_kj_per_mol: Option<f64>,
    /// Ion-size parameter å, ångström.
    pub ion_size_angstrom: Option<f64>,
    /// The published source.
    pub source: &'static str,
    /// True when the numbers were entered from memory of the source.
    pub from_memory: bool,
}
