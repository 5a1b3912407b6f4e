//! Built-in acid–base families (protolytes): stepwise thermodynamic pKa at 25 °C and infinite
//! dilution, most protonated form first, with standard dissociation enthalpies ΔH° (kJ/mol)
//! and heat-capacity changes ΔCp° (J/(mol·K)) where the cited source gives them.
//!
//! General sources: R. N. Goldberg, N. Kishore, R. M. Lennen, "Thermodynamic quantities for
//! the ionization reactions of buffers", J. Phys. Chem. Ref. Data 31 (2002) 231–370, for the
//! buffers, glycine, carboxylic acids, phosphate, carbonate, borate and ammonia;
//! A. E. Martell & R. M. Smith, Critical Stability Constants (Plenum, 1974–1989), for amino
//! acids and chelating agents; the CRC Handbook of Chemistry and Physics tables "Dissociation
//! constants of inorganic acids and bases" (after D. D. Perrin, 1982) and "... of organic acids
//! and bases" for simple acids. Ion-size parameters å are those of J. Kielland, J. Am. Chem.
//! Soc. 59 (1937) 1675; a family carries one å, taken for the form that matters most in
//! practice (usually the most highly charged form Kielland lists; a row comment says which),
//! or `None` when none of its forms is in his table.
//!
//! Formulas of the most protonated forms put the dissociable hydrogens first (H2C2O4,
//! H3C6H5O7, H2Gly+, H6Y2+ for EDTA) so that the name of every form can be built by taking
//! hydrogens off; amino acids, buffers and chelating agents use their usual abbreviations.
//!
//! Zwitterionic sulfonate buffers (MES, MOPS, HEPES, ...) are entered with the single amine
//! step that matters in water (HL± → L⁻ + H⁺); their sulfonic-acid protons are fully
//! dissociated in any practical solution.

use super::records::{FamilyRecord, StepRecord};

/// A step with pKa, ΔH° and ΔCp°.
const fn full(pka: f64, dh: f64, dcp: f64) -> StepRecord {
    StepRecord {
        pka,
        dh_kj_per_mol: Some(dh),
        dcp_j_per_mol_k: Some(dcp),
    }
}

/// A step with pKa and ΔH° only.
const fn with_dh(pka: f64, dh: f64) -> StepRecord {
    StepRecord {
        pka,
        dh_kj_per_mol: Some(dh),
        dcp_j_per_mol_k: None,
    }
}

/// A step with pKa only.
const fn pk(pka: f64) -> StepRecord {
    StepRecord {
        pka,
        dh_kj_per_mol: None,
        dcp_j_per_mol_k: None,
    }
}

const GKL: &str = "R. N. Goldberg, N. Kishore, R. M. Lennen, J. Phys. Chem. Ref. Data 31 (2002) 231-370";
const GKL_KIELLAND: &str = "R. N. Goldberg, N. Kishore, R. M. Lennen, J. Phys. Chem. Ref. Data 31 (2002) 231-370; \
     å: J. Kielland, J. Am. Chem. Soc. 59 (1937) 1675";
const MS: &str = "A. E. Martell, R. M. Smith, Critical Stability Constants, Vols. 1-6 (Plenum, 1974-1989)";
const MS_KIELLAND: &str = "A. E. Martell, R. M. Smith, Critical Stability Constants, Vols. 1-6 (Plenum, 1974-1989); \
     å: J. Kielland, J. Am. Chem. Soc. 59 (1937) 1675";
const CRC_INORG_KIELLAND: &str = "CRC Handbook of Chemistry and Physics, 'Dissociation constants of inorganic acids and \
     bases' (after D. D. Perrin, Ionization Constants of Inorganic Acids and Bases in Aqueous Solution, 2nd ed., 1982); \
     å: J. Kielland, J. Am. Chem. Soc. 59 (1937) 1675";
const CRC_ORG: &str = "CRC Handbook of Chemistry and Physics, 'Dissociation constants of organic acids and bases'";
const CRC_ORG_KIELLAND: &str = "CRC Handbook of Chemistry and Physics, 'Dissociation constants of organic acids and \
     bases'; å: J. Kielland, J. Am. Chem. Soc. 59 (1937) 1675";

// Glycylglycine's pKa1 of 3.14 is a measured constant, not an approximation of π.
#[allow(clippy::approx_constant)]
pub(crate) const FAMILIES: &[FamilyRecord] = &[
    // ------------------------------------------------------------------ inorganic acids
    // H2CO3* = CO2(aq) + H2CO3, the analytical convention of Harned & Davis (1943) used by
    // Goldberg et al.; pKa1 6.351 and pKa2 10.329 (CRC lists 6.35 and 10.33).
    // å: Kielland gives 4.5 for both HCO3- and CO3^2-.
    FamilyRecord {
        name: "carbonate",
        synonyms: &[
            "carbonic acid",
            "h2co3",
            "co2",
            "carbon dioxide",
            "bicarbonate",
            "hydrogen carbonate",
            "hydrogencarbonate",
            "hco3-",
        ],
        formula: "H2CO3",
        charge_most_protonated: 0,
        steps: &[full(6.351, 9.15, -371.0), full(10.329, 14.70, -249.0)],
        ion_size_angstrom: Some(4.5),
        source: GKL_KIELLAND,
        from_memory: true,
    },
    // å: Kielland gives 4.0 for HPO4^2- and PO4^3- (4.0-4.5 for H2PO4-).
    FamilyRecord {
        name: "phosphate",
        synonyms: &[
            "phosphoric acid",
            "orthophosphoric acid",
            "orthophosphate",
            "h3po4",
            "po4",
        ],
        formula: "H3PO4",
        charge_most_protonated: 0,
        steps: &[
            full(2.148, -8.0, -141.0),
            full(7.198, 3.6, -230.0),
            full(12.35, 16.0, -242.0),
        ],
        ion_size_angstrom: Some(4.0),
        source: GKL_KIELLAND,
        from_memory: true,
    },
    // Boric acid is a Lewis acid: B(OH)3 + H2O = B(OH)4- + H+. Polyborates are neglected,
    // which is sound below about 0.02 mol/kg total boron.
    FamilyRecord {
        name: "borate",
        synonyms: &[
            "boric acid",
            "orthoboric acid",
            "h3bo3",
            "b(oh)3",
            "b(oh)4-",
            "tetrahydroxyborate",
        ],
        formula: "B(OH)3",
        charge_most_protonated: 0,
        steps: &[full(9.237, 13.8, -240.0)],
        ion_size_angstrom: None,
        source: GKL,
        from_memory: true,
    },
    // First step: a nominal pKa of -3 that makes H2SO4 -> HSO4- complete (sulfuric acid is a
    // strong acid in water; no thermodynamic value is measurable). Second step (bisulfate):
    // pKa 1.99 (Dickson 1990). ΔH° and ΔCp° of the second step from the NBS tables
    // (ΔfH°: HSO4- -887.34, SO4^2- -909.27 kJ/mol; Cp°: HSO4- -84, SO4^2- -293 J/(mol K)).
    FamilyRecord {
        name: "sulfate",
        synonyms: &[
            "sulfuric acid",
            "sulphuric acid",
            "sulphate",
            "h2so4",
            "bisulfate",
            "bisulphate",
            "hydrogen sulfate",
            "hydrogensulfate",
            "hso4-",
            "so4",
        ],
        formula: "H2SO4",
        charge_most_protonated: 0,
        steps: &[pk(-3.0), full(1.99, -21.9, -209.0)],
        ion_size_angstrom: Some(4.0),
        source: "A. G. Dickson, J. Chem. Thermodyn. 22 (1990) 113-127 (pKa2); ΔH°, ΔCp°: D. D. Wagman et al., \
                 The NBS tables of chemical thermodynamic properties, J. Phys. Chem. Ref. Data 11, Suppl. 2 (1982); \
                 å: J. Kielland, J. Am. Chem. Soc. 59 (1937) 1675",
        from_memory: true,
    },
    // pKa checked against a stored copy of the CRC table; å (F- 3.5) from memory of Kielland.
    FamilyRecord {
        name: "fluoride",
        synonyms: &["hydrofluoric acid", "hydrogen fluoride", "hf"],
        formula: "HF",
        charge_most_protonated: 0,
        steps: &[pk(3.20)],
        ion_size_angstrom: Some(3.5),
        source: CRC_INORG_KIELLAND,
        from_memory: true,
    },
    // pKa checked against a stored copy of the CRC table. ΔH° from the NBS tables
    // (ΔfH°: HCN(aq) 107.1, CN- 150.6 kJ/mol).
    FamilyRecord {
        name: "cyanide",
        synonyms: &["hydrocyanic acid", "hydrogen cyanide", "hcn", "prussic acid"],
        formula: "HCN",
        charge_most_protonated: 0,
        steps: &[with_dh(9.21, 43.5)],
        ion_size_angstrom: Some(3.0),
        source: "CRC Handbook of Chemistry and Physics, 'Dissociation constants of inorganic acids and bases' \
                 (after D. D. Perrin, 1982); ΔH°: D. D. Wagman et al., J. Phys. Chem. Ref. Data 11, Suppl. 2 (1982); \
                 å: J. Kielland, J. Am. Chem. Soc. 59 (1937) 1675",
        from_memory: true,
    },
    // pKa checked against a stored copy of the CRC table.
    FamilyRecord {
        name: "nitrite",
        synonyms: &["nitrous acid", "hno2"],
        formula: "HNO2",
        charge_most_protonated: 0,
        steps: &[pk(3.25)],
        ion_size_angstrom: Some(3.0),
        source: CRC_INORG_KIELLAND,
        from_memory: true,
    },
    // Morris (1966): pKa = 3000.00/T - 10.0686 + 0.0253 T, giving 7.537 at 298.15 K; ΔH° is
    // the van 't Hoff enthalpy of that equation at 298.15 K. (The CRC table lists 7.40.)
    FamilyRecord {
        name: "hypochlorite",
        synonyms: &["hypochlorous acid", "hocl", "hclo", "ocl-"],
        formula: "HOCl",
        charge_most_protonated: 0,
        steps: &[with_dh(7.537, 14.4)],
        ion_size_angstrom: None,
        source: "J. C. Morris, J. Phys. Chem. 70 (1966) 3798-3805",
        from_memory: true,
    },
    // pKa1 7.05 and pKa2 19 checked against a stored copy of the CRC table. The second
    // constant is very uncertain (older values of 12-14 are now considered wrong); with 19
    // the S^2- ion is negligible in water. ΔH°1 from the NBS tables (H2S(aq) -39.7,
    // HS- -17.6 kJ/mol). å: Kielland's 3.5 for HS-.
    FamilyRecord {
        name: "sulfide",
        synonyms: &[
            "hydrogen sulfide",
            "hydrogen sulphide",
            "h2s",
            "hydrosulfide",
            "bisulfide",
            "hs-",
        ],
        formula: "H2S",
        charge_most_protonated: 0,
        steps: &[with_dh(7.05, 22.1), pk(19.0)],
        ion_size_angstrom: Some(3.5),
        source: "CRC Handbook of Chemistry and Physics, 'Dissociation constants of inorganic acids and bases' \
                 (after D. D. Perrin, 1982); ΔH°: D. D. Wagman et al., J. Phys. Chem. Ref. Data 11, Suppl. 2 (1982); \
                 å: J. Kielland, J. Am. Chem. Soc. 59 (1937) 1675",
        from_memory: true,
    },
    // Monomeric silicic acid; polysilicate species (above ~2 mmol/kg Si at high pH) neglected.
    // pKa2 from the overall constant log K = -23.0 for H4SiO4 = H2SiO4^2- + 2 H+.
    FamilyRecord {
        name: "silicate",
        synonyms: &["silicic acid", "orthosilicic acid", "h4sio4", "si(oh)4"],
        formula: "H4SiO4",
        charge_most_protonated: 0,
        steps: &[with_dh(9.83, 25.6), pk(13.17)],
        ion_size_angstrom: None,
        source: "D. K. Nordstrom, L. N. Plummer, D. Langmuir, E. Busenberg, H. M. May, B. F. Jones, \
                 D. L. Parkhurst, in Chemical Modeling of Aqueous Systems II, ACS Symp. Ser. 416 (1990) 398-413",
        from_memory: true,
    },
    // pKa values checked against a stored copy of the CRC table. å: Kielland's 4.0-4.5 for H2AsO4-.
    FamilyRecord {
        name: "arsenate",
        synonyms: &["arsenic acid", "orthoarsenic acid", "h3aso4"],
        formula: "H3AsO4",
        charge_most_protonated: 0,
        steps: &[pk(2.26), pk(6.76), pk(11.29)],
        ion_size_angstrom: Some(4.5),
        source: CRC_INORG_KIELLAND,
        from_memory: true,
    },
    // ------------------------------------------------------------------ ammonia and amines
    FamilyRecord {
        name: "ammonia",
        synonyms: &["ammonium", "ammonium ion", "nh3", "nh4+", "nh4"],
        formula: "NH4+",
        charge_most_protonated: 1,
        steps: &[full(9.245, 51.95, 8.0)],
        ion_size_angstrom: Some(2.5),
        source: GKL_KIELLAND,
        from_memory: true,
    },
    FamilyRecord {
        name: "methylamine",
        synonyms: &["methylammonium", "monomethylamine", "ch3nh2", "ch3nh3+"],
        formula: "CH3NH3+",
        charge_most_protonated: 1,
        steps: &[full(10.645, 55.34, 33.0)],
        ion_size_angstrom: Some(3.5),
        source: GKL_KIELLAND,
        from_memory: true,
    },
    FamilyRecord {
        name: "ethanolamine",
        synonyms: &["monoethanolamine", "2-aminoethanol", "ethanolammonium", "mea"],
        formula: "HOCH2CH2NH3+",
        charge_most_protonated: 1,
        steps: &[full(9.498, 50.52, 26.0)],
        ion_size_angstrom: None,
        source: GKL,
        from_memory: true,
    },
    FamilyRecord {
        name: "diethanolamine",
        synonyms: &["2,2'-iminodiethanol", "dea"],
        formula: "(HOCH2CH2)2NH2+",
        charge_most_protonated: 1,
        steps: &[with_dh(8.883, 42.08)],
        ion_size_angstrom: None,
        source: GKL,
        from_memory: true,
    },
    FamilyRecord {
        name: "triethanolamine",
        synonyms: &["tea", "trolamine", "2,2',2''-nitrilotriethanol"],
        formula: "(HOCH2CH2)3NH+",
        charge_most_protonated: 1,
        steps: &[full(7.762, 33.6, 50.0)],
        ion_size_angstrom: None,
        source: GKL,
        from_memory: true,
    },
    FamilyRecord {
        name: "ethylenediamine",
        synonyms: &["en", "1,2-diaminoethane", "ethane-1,2-diamine"],
        formula: "H2en2+",
        charge_most_protonated: 2,
        steps: &[pk(6.85), pk(9.93)],
        ion_size_angstrom: None,
        source: MS,
        from_memory: true,
    },
    FamilyRecord {
        name: "pyridine",
        synonyms: &["pyridinium", "c5h5n", "py"],
        formula: "C5H5NH+",
        charge_most_protonated: 1,
        steps: &[pk(5.23)],
        ion_size_angstrom: None,
        source: MS,
        from_memory: true,
    },
    FamilyRecord {
        name: "imidazole",
        synonyms: &["imidazolium", "glyoxaline", "c3h4n2"],
        formula: "HIm+",
        charge_most_protonated: 1,
        steps: &[full(6.993, 36.64, -9.0)],
        ion_size_angstrom: None,
        source: GKL,
        from_memory: true,
    },
    FamilyRecord {
        name: "tris",
        synonyms: &[
            "tham",
            "trometamol",
            "tromethamine",
            "trizma",
            "tris(hydroxymethyl)aminomethane",
            "2-amino-2-(hydroxymethyl)propane-1,3-diol",
        ],
        formula: "HTris+",
        charge_most_protonated: 1,
        steps: &[full(8.072, 47.45, -59.0)],
        ion_size_angstrom: None,
        source: GKL,
        from_memory: true,
    },
    FamilyRecord {
        name: "bis-tris",
        synonyms: &[
            "bistris",
            "bis-tris methane",
            "bis(2-hydroxyethyl)amino-tris(hydroxymethyl)methane",
            "2,2-bis(hydroxymethyl)-2,2',2''-nitrilotriethanol",
        ],
        formula: "HBisTris+",
        charge_most_protonated: 1,
        steps: &[full(6.484, 28.34, 27.0)],
        ion_size_angstrom: None,
        source: GKL,
        from_memory: true,
    },
    // ------------------------------------------------------------------ Good's buffers
    FamilyRecord {
        name: "mes",
        synonyms: &[
            "2-(n-morpholino)ethanesulfonic acid",
            "2-morpholinoethanesulfonic acid",
            "morpholineethanesulfonic acid",
        ],
        formula: "HMES",
        charge_most_protonated: 0,
        steps: &[full(6.270, 14.8, 5.0)],
        ion_size_angstrom: None,
        source: GKL,
        from_memory: true,
    },
    FamilyRecord {
        name: "aces",
        synonyms: &["n-(2-acetamido)-2-aminoethanesulfonic acid"],
        formula: "HACES",
        charge_most_protonated: 0,
        steps: &[full(6.847, 30.43, -49.0)],
        ion_size_angstrom: None,
        source: GKL,
        from_memory: true,
    },
    // Entered from HL- (one ring nitrogen protonated, both sulfonates ionised). The second
    // ring nitrogen's proton (pKa well below 4) is treated as fully dissociated, so the free
    // acid H2L is HL- + H+ in the reagent table. Valid above pH ~4.
    FamilyRecord {
        name: "pipes",
        synonyms: &[
            "piperazine-n,n'-bis(2-ethanesulfonic acid)",
            "1,4-piperazinediethanesulfonic acid",
        ],
        formula: "HPIPES-",
        charge_most_protonated: -1,
        steps: &[full(7.141, 11.2, 22.0)],
        ion_size_angstrom: None,
        source: GKL,
        from_memory: true,
    },
    FamilyRecord {
        name: "mopso",
        synonyms: &[
            "3-morpholino-2-hydroxypropanesulfonic acid",
            "3-(n-morpholino)-2-hydroxypropanesulfonic acid",
        ],
        formula: "HMOPSO",
        charge_most_protonated: 0,
        steps: &[with_dh(6.90, 25.0)],
        ion_size_angstrom: None,
        source: GKL,
        from_memory: true,
    },
    FamilyRecord {
        name: "bes",
        synonyms: &["n,n-bis(2-hydroxyethyl)-2-aminoethanesulfonic acid"],
        formula: "HBES",
        charge_most_protonated: 0,
        steps: &[full(7.187, 25.50, 2.0)],
        ion_size_angstrom: None,
        source: GKL,
        from_memory: true,
    },
    FamilyRecord {
        name: "mops",
        synonyms: &[
            "3-(n-morpholino)propanesulfonic acid",
            "3-morpholinopropane-1-sulfonic acid",
        ],
        formula: "HMOPS",
        charge_most_protonated: 0,
        steps: &[full(7.184, 21.1, 25.0)],
        ion_size_angstrom: None,
        source: GKL,
        from_memory: true,
    },
    FamilyRecord {
        name: "tes",
        synonyms: &["n-[tris(hydroxymethyl)methyl]-2-aminoethanesulfonic acid"],
        formula: "HTES",
        charge_most_protonated: 0,
        steps: &[full(7.550, 32.13, 0.0)],
        ion_size_angstrom: None,
        source: GKL,
        from_memory: true,
    },
    // The second ring nitrogen (pKa about 3) is not entered; valid above pH ~4.5.
    FamilyRecord {
        name: "hepes",
        synonyms: &[
            "4-(2-hydroxyethyl)piperazine-1-ethanesulfonic acid",
            "4-(2-hydroxyethyl)-1-piperazineethanesulfonic acid",
            "n-(2-hydroxyethyl)piperazine-n'-(2-ethanesulfonic acid)",
        ],
        formula: "HHEPES",
        charge_most_protonated: 0,
        steps: &[full(7.564, 20.4, 47.0)],
        ion_size_angstrom: None,
        source: GKL,
        from_memory: true,
    },
    FamilyRecord {
        name: "epps",
        synonyms: &["hepps", "4-(2-hydroxyethyl)-1-piperazinepropanesulfonic acid"],
        formula: "HEPPS",
        charge_most_protonated: 0,
        steps: &[full(7.957, 21.3, 48.0)],
        ion_size_angstrom: None,
        source: GKL,
        from_memory: true,
    },
    FamilyRecord {
        name: "taps",
        synonyms: &["n-[tris(hydroxymethyl)methyl]-3-aminopropanesulfonic acid"],
        formula: "HTAPS",
        charge_most_protonated: 0,
        steps: &[with_dh(8.44, 40.4)],
        ion_size_angstrom: None,
        source: GKL,
        from_memory: true,
    },
    FamilyRecord {
        name: "ches",
        synonyms: &[
            "2-(cyclohexylamino)ethanesulfonic acid",
            "n-cyclohexyl-2-aminoethanesulfonic acid",
        ],
        formula: "HCHES",
        charge_most_protonated: 0,
        steps: &[full(9.394, 39.55, 9.0)],
        ion_size_angstrom: None,
        source: GKL,
        from_memory: true,
    },
    FamilyRecord {
        name: "caps",
        synonyms: &[
            "3-(cyclohexylamino)-1-propanesulfonic acid",
            "n-cyclohexyl-3-aminopropanesulfonic acid",
        ],
        formula: "HCAPS",
        charge_most_protonated: 0,
        steps: &[full(10.499, 48.1, 57.0)],
        ion_size_angstrom: None,
        source: GKL,
        from_memory: true,
    },
    // N-substituted glycines: cation H2L+ (carboxyl step, then amine step). The carboxyl
    // pKa (about 2) is approximate.
    FamilyRecord {
        name: "tricine",
        synonyms: &["n-[tris(hydroxymethyl)methyl]glycine"],
        formula: "H2Tricine+",
        charge_most_protonated: 1,
        steps: &[pk(2.023), full(8.135, 31.37, -53.0)],
        ion_size_angstrom: None,
        source: GKL,
        from_memory: true,
    },
    FamilyRecord {
        name: "bicine",
        synonyms: &["n,n-bis(2-hydroxyethyl)glycine"],
        formula: "H2Bicine+",
        charge_most_protonated: 1,
        steps: &[pk(2.0), full(8.334, 26.34, 0.0)],
        ion_size_angstrom: None,
        source: GKL,
        from_memory: true,
    },
    FamilyRecord {
        name: "glycylglycine",
        synonyms: &["gly-gly", "glygly", "diglycine"],
        formula: "H2GlyGly+",
        charge_most_protonated: 1,
        steps: &[pk(3.14), with_dh(8.26, 43.4)],
        ion_size_angstrom: None,
        source: GKL,
        from_memory: true,
    },
    // ------------------------------------------------------------------ amino acids
    // H2Gly+ -> HGly (zwitterion) -> Gly-. å: Kielland's 4.5 for NH2CH2COO-.
    FamilyRecord {
        name: "glycine",
        synonyms: &["gly", "aminoacetic acid", "glycinate"],
        formula: "H2Gly+",
        charge_most_protonated: 1,
        steps: &[full(2.351, 4.00, -139.0), full(9.780, 44.20, -57.0)],
        ion_size_angstrom: Some(4.5),
        source: GKL_KIELLAND,
        from_memory: true,
    },
    // pKa values checked against a stored reproduction of the Martell & Smith table (I = 0).
    FamilyRecord {
        name: "alanine",
        synonyms: &["ala", "l-alanine", "alaninate"],
        formula: "H2Ala+",
        charge_most_protonated: 1,
        steps: &[pk(2.348), pk(9.867)],
        ion_size_angstrom: None,
        source: MS,
        from_memory: false,
    },
    // H3His2+ -> H2His+ -> HHis -> His-. pKa1 approximate (Martell & Smith); imidazolium and
    // amine steps with their enthalpies from Goldberg et al.
    FamilyRecord {
        name: "histidine",
        synonyms: &["his", "l-histidine", "histidinate"],
        formula: "H3His2+",
        charge_most_protonated: 2,
        steps: &[pk(1.70), with_dh(6.07, 29.5), with_dh(9.34, 43.8)],
        ion_size_angstrom: None,
        source: "R. N. Goldberg, N. Kishore, R. M. Lennen, J. Phys. Chem. Ref. Data 31 (2002) 231-370 (steps 2, 3); \
                 A. E. Martell, R. M. Smith, Critical Stability Constants (Plenum, 1974-1989) (step 1)",
        from_memory: true,
    },
    FamilyRecord {
        name: "glutamate",
        synonyms: &["glutamic acid", "glu", "l-glutamic acid", "l-glutamate"],
        formula: "H3Glu+",
        charge_most_protonated: 1,
        steps: &[pk(2.16), pk(4.30), pk(9.96)],
        ion_size_angstrom: None,
        source: MS,
        from_memory: true,
    },
    // pKa values checked against a stored reproduction of the Martell & Smith table (I = 0).
    FamilyRecord {
        name: "aspartate",
        synonyms: &["aspartic acid", "asp", "l-aspartic acid", "l-aspartate"],
        formula: "H3Asp+",
        charge_most_protonated: 1,
        steps: &[pk(1.990), pk(3.900), pk(10.002)],
        ion_size_angstrom: None,
        source: MS,
        from_memory: false,
    },
    FamilyRecord {
        name: "lysine",
        synonyms: &["lys", "l-lysine", "lysinate"],
        formula: "H3Lys2+",
        charge_most_protonated: 2,
        steps: &[pk(2.16), pk(9.06), pk(10.54)],
        ion_size_angstrom: None,
        source: CRC_ORG,
        from_memory: true,
    },
    // H3Cys+ -> H2Cys -> HCys- -> Cys2- (carboxyl, then thiol and amine, whose microscopic
    // constants overlap).
    FamilyRecord {
        name: "cysteine",
        synonyms: &["cys", "l-cysteine", "cysteinate"],
        formula: "H3Cys+",
        charge_most_protonated: 1,
        steps: &[pk(1.71), pk(8.36), pk(10.75)],
        ion_size_angstrom: None,
        source: GKL,
        from_memory: true,
    },
    // pKa values checked against a stored reproduction of the Martell & Smith table; the
    // guanidinium pKa 12.48 is marked there as less reliable.
    FamilyRecord {
        name: "arginine",
        synonyms: &["arg", "l-arginine", "argininate"],
        formula: "H3Arg2+",
        charge_most_protonated: 2,
        steps: &[pk(1.823), pk(8.991), pk(12.48)],
        ion_size_angstrom: None,
        source: MS,
        from_memory: false,
    },
    // ------------------------------------------------------------------ carboxylic acids
    FamilyRecord {
        name: "acetate",
        synonyms: &[
            "acetic acid",
            "ethanoic acid",
            "ethanoate",
            "ch3cooh",
            "ch3coo-",
            "hoac",
            "hac",
        ],
        formula: "HC2H3O2",
        charge_most_protonated: 0,
        steps: &[full(4.756, -0.41, -142.0)],
        ion_size_angstrom: Some(4.5),
        source: GKL_KIELLAND,
        from_memory: true,
    },
    FamilyRecord {
        name: "formate",
        synonyms: &["formic acid", "methanoic acid", "methanoate", "hcooh", "hcoo-"],
        formula: "HCHO2",
        charge_most_protonated: 0,
        steps: &[pk(3.75)],
        ion_size_angstrom: Some(3.5),
        source: CRC_ORG_KIELLAND,
        from_memory: true,
    },
    FamilyRecord {
        name: "propanoate",
        synonyms: &["propanoic acid", "propionic acid", "propionate"],
        formula: "HC3H5O2",
        charge_most_protonated: 0,
        steps: &[pk(4.87)],
        ion_size_angstrom: None,
        source: CRC_ORG,
        from_memory: true,
    },
    FamilyRecord {
        name: "benzoate",
        synonyms: &["benzoic acid", "c6h5cooh"],
        formula: "HC7H5O2",
        charge_most_protonated: 0,
        steps: &[pk(4.204)],
        ion_size_angstrom: Some(6.0),
        source: CRC_ORG_KIELLAND,
        from_memory: true,
    },
    FamilyRecord {
        name: "lactate",
        synonyms: &["lactic acid", "2-hydroxypropanoic acid"],
        formula: "HC3H5O3",
        charge_most_protonated: 0,
        steps: &[pk(3.86)],
        ion_size_angstrom: None,
        source: CRC_ORG,
        from_memory: true,
    },
    FamilyRecord {
        name: "chloroacetate",
        synonyms: &["chloroacetic acid", "monochloroacetic acid", "clch2cooh"],
        formula: "HC2H2ClO2",
        charge_most_protonated: 0,
        steps: &[pk(2.87)],
        ion_size_angstrom: Some(4.5),
        source: CRC_ORG_KIELLAND,
        from_memory: true,
    },
    // ΔH°2 from the NBS tables (ΔfH°: HC2O4- -818.4, C2O4^2- -825.1 kJ/mol).
    // å: Kielland's 4.5 for (COO)2^2-.
    FamilyRecord {
        name: "oxalate",
        synonyms: &["oxalic acid", "ethanedioic acid", "h2c2o4", "hydrogen oxalate"],
        formula: "H2C2O4",
        charge_most_protonated: 0,
        steps: &[pk(1.27), with_dh(4.266, -6.7)],
        ion_size_angstrom: Some(4.5),
        source: "A. E. Martell, R. M. Smith, Critical Stability Constants (Plenum, 1974-1989); ΔH°: D. D. Wagman \
                 et al., J. Phys. Chem. Ref. Data 11, Suppl. 2 (1982); å: J. Kielland, J. Am. Chem. Soc. 59 (1937) 1675",
        from_memory: true,
    },
    // å: Kielland's 5 for H2C(COO)2^2-.
    FamilyRecord {
        name: "malonate",
        synonyms: &["malonic acid", "propanedioic acid", "hydrogen malonate"],
        formula: "H2C3H2O4",
        charge_most_protonated: 0,
        steps: &[pk(2.847), pk(5.696)],
        ion_size_angstrom: Some(5.0),
        source: MS_KIELLAND,
        from_memory: true,
    },
    // å: Kielland's 5 for (CH2COO)2^2-.
    FamilyRecord {
        name: "succinate",
        synonyms: &["succinic acid", "butanedioic acid", "hydrogen succinate"],
        formula: "H2C4H4O4",
        charge_most_protonated: 0,
        steps: &[full(4.207, 3.0, -121.0), full(5.636, -0.5, -217.0)],
        ion_size_angstrom: Some(5.0),
        source: GKL_KIELLAND,
        from_memory: true,
    },
    FamilyRecord {
        name: "maleate",
        synonyms: &["maleic acid", "cis-butenedioic acid", "hydrogen maleate"],
        formula: "H2C4H2O4",
        charge_most_protonated: 0,
        steps: &[pk(1.92), pk(6.27)],
        ion_size_angstrom: None,
        source: GKL,
        from_memory: true,
    },
    FamilyRecord {
        name: "fumarate",
        synonyms: &["fumaric acid", "trans-butenedioic acid", "hydrogen fumarate"],
        formula: "H2C4H2O4",
        charge_most_protonated: 0,
        steps: &[pk(3.03), pk(4.44)],
        ion_size_angstrom: None,
        source: CRC_ORG,
        from_memory: true,
    },
    // L-(+)-tartaric acid. å: Kielland's 5 for (CHOHCOO)2^2-.
    FamilyRecord {
        name: "tartrate",
        synonyms: &[
            "tartaric acid",
            "l-tartaric acid",
            "l-(+)-tartaric acid",
            "hydrogen tartrate",
            "bitartrate",
        ],
        formula: "H2C4H4O6",
        charge_most_protonated: 0,
        steps: &[with_dh(3.036, 3.19), with_dh(4.366, 0.92)],
        ion_size_angstrom: Some(5.0),
        source: GKL_KIELLAND,
        from_memory: true,
    },
    // å: Kielland's 6 for C6H4(COO)2^2-.
    FamilyRecord {
        name: "phthalate",
        synonyms: &[
            "phthalic acid",
            "benzene-1,2-dicarboxylic acid",
            "hydrogen phthalate",
            "biphthalate",
        ],
        formula: "H2C8H4O4",
        charge_most_protonated: 0,
        steps: &[pk(2.950), with_dh(5.408, -2.17)],
        ion_size_angstrom: Some(6.0),
        source: GKL_KIELLAND,
        from_memory: true,
    },
    // å: Kielland gives 3.5 (H2Cit-), 4.5 (HCit^2-) and 5 (Cit^3-); the value for the
    // trianion is used.
    FamilyRecord {
        name: "citrate",
        synonyms: &["citric acid", "c6h8o7", "dihydrogen citrate", "hydrogen citrate"],
        formula: "H3C6H5O7",
        charge_most_protonated: 0,
        steps: &[
            full(3.128, 4.07, -131.0),
            full(4.761, 2.23, -178.0),
            full(6.396, -3.38, -254.0),
        ],
        ion_size_angstrom: Some(5.0),
        source: GKL_KIELLAND,
        from_memory: true,
    },
    // ------------------------------------------------------------------ chelating agents
    // H6Y2+ ... Y4-. These six constants are the values usually quoted from Martell & Smith,
    // which refer to I = 0.1 mol/L (not infinite dilution); values at I = 0 are higher for
    // the last step (log K about 11). Keep consistent with the EDTA complexes, also at I = 0.1.
    FamilyRecord {
        name: "edta",
        synonyms: &[
            "ethylenediaminetetraacetic acid",
            "ethylenediaminetetraacetate",
            "edetate",
            "edetic acid",
            "h4edta",
            "h4y",
        ],
        formula: "H6Y2+",
        charge_most_protonated: 2,
        steps: &[pk(0.0), pk(1.5), pk(2.00), pk(2.69), pk(6.13), pk(10.37)],
        ion_size_angstrom: None,
        source: "A. E. Martell, R. M. Smith, Critical Stability Constants, Vol. 1 (Plenum, 1974), I = 0.1 mol/L",
        from_memory: true,
    },
    // H4NTA+ ... NTA3-; constants for I = 0.1 mol/L as for EDTA.
    FamilyRecord {
        name: "nta",
        synonyms: &["nitrilotriacetic acid", "nitrilotriacetate", "h3nta"],
        formula: "H4NTA+",
        charge_most_protonated: 1,
        steps: &[pk(1.0), pk(1.81), pk(2.52), pk(9.46)],
        ion_size_angstrom: None,
        source: "A. E. Martell, R. M. Smith, Critical Stability Constants, Vol. 1 (Plenum, 1974), I = 0.1 mol/L",
        from_memory: true,
    },
];
