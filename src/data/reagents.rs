//! PLACEHOLDER written by the lead so the crate compiles; the data helper replaces this file.
use super::records::{PartRecord, ReagentRecord};
pub(crate) const REAGENTS: &[ReagentRecord] = &[
    ReagentRecord { name: "acetic acid", synonyms: &[], formula: "CH3COOH", molar_mass_g_per_mol: 60.052, parts: &[(PartRecord::Form { family: "acetate", protons: 1 }, 1)], source: "placeholder" },
    ReagentRecord { name: "sodium acetate", synonyms: &[], formula: "CH3COONa", molar_mass_g_per_mol: 82.034, parts: &[(PartRecord::Form { family: "acetate", protons: 0 }, 1), (PartRecord::Ion("sodium"), 1)], source: "placeholder" },
    ReagentRecord { name: "hydrochloric acid", synonyms: &["hcl"], formula: "HCl", molar_mass_g_per_mol: 36.458, parts: &[(PartRecord::Proton, 1), (PartRecord::Ion("chloride"), 1)], source: "placeholder" },
    ReagentRecord { name: "sodium hydroxide", synonyms: &["naoh"], formula: "NaOH", molar_mass_g_per_mol: 39.997, parts: &[(PartRecord::Hydroxide, 1), (PartRecord::Ion("sodium"), 1)], source: "placeholder" },
    ReagentRecord { name: "sodium chloride", synonyms: &["nacl"], formula: "NaCl", molar_mass_g_per_mol: 58.44, parts: &[(PartRecord::Ion("chloride"), 1), (PartRecord::Ion("sodium"), 1)], source: "placeholder" },
    ReagentRecord { name: "phosphoric acid", synonyms: &[], formula: "H3PO4", molar_mass_g_per_mol: 97.994, parts: &[(PartRecord::Form { family: "phosphate", protons: 3 }, 1)], source: "placeholder" },
];
