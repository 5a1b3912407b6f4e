//! The built-in catalogue loads whole, every row names a source, and lookups work by name and
//! synonym.

use protolyte::{Catalog, DataKind};

#[test]
fn every_builtin_row_loads() {
    let cat = Catalog::builtin();
    assert!(cat.load_problems().is_empty(), "{:?}", cat.load_problems());
}

#[test]
fn the_catalogue_is_as_large_as_promised() {
    // Issue 2 asks for at least 40 entries with mono- to tetraprotic acids, amines, amino
    // acids, biological buffers and a few metal–ligand complexes.
    let cat = Catalog::builtin();
    let count = |k| cat.entries().iter().filter(|i| i.kind == k).count();
    assert!(count(DataKind::Protolyte) >= 40);
    assert!(count(DataKind::Reagent) >= 40);
    assert!(count(DataKind::Complex) >= 5);
    for name in [
        "carbonate",
        "phosphate",
        "borate",
        "citrate",
        "sulfate",
        "oxalate",
        "phthalate",
        "tartrate",
        "acetate",
        "formate",
        "edta",
        "ammonia",
        "glycine",
        "tris",
        "hepes",
        "mes",
        "mops",
    ] {
        assert!(cat.protolyte(name).is_ok(), "{name} missing");
    }
    let tetraprotic = cat
        .entries()
        .iter()
        .filter(|i| i.kind == DataKind::Protolyte)
        .any(|i| cat.protolyte(&i.name).unwrap().proton_count() >= 4);
    assert!(tetraprotic);
}

#[test]
fn every_row_names_a_source() {
    for info in Catalog::builtin().entries() {
        assert!(info.source.trim().len() > 10, "{} has no source", info.name);
        let s = info.source.to_lowercase();
        for banned in ["lecture", "course", "video", "youtube"] {
            assert!(!s.contains(banned), "{}: source cites a {banned}", info.name);
        }
    }
}

#[test]
fn lookups_accept_synonyms_case_and_spacing() {
    let cat = Catalog::builtin();
    assert_eq!(cat.protolyte("  Phosphoric   ACID ").unwrap().name(), "phosphate");
    assert_eq!(cat.reagent("NaOH").unwrap().name(), "sodium hydroxide");
    assert!(cat.search("tris").len() >= 2);
}

#[test]
fn reagents_with_molar_masses_are_plausible() {
    // Molar masses from the IUPAC conventional atomic weights (CIAAW 2021): water 18.015 g/mol
    // is the lightest reagent one could weigh; nothing here is heavier than 1 kg/mol.
    let cat = Catalog::builtin();
    for info in cat.entries().iter().filter(|i| i.kind == DataKind::Reagent) {
        let r = cat.reagent(&info.name).unwrap();
        if let Some(m) = r.molar_mass_g_per_mol() {
            assert!((15.0..1000.0).contains(&m), "{}: {m}", r.name());
        }
    }
    // Sodium chloride 58.44 g/mol (IUPAC CIAAW 2021 atomic weights: Na 22.990, Cl 35.45).
    let nacl = cat.reagent("sodium chloride").unwrap().molar_mass_g_per_mol().unwrap();
    assert!((nacl - 58.44).abs() < 0.01, "{nacl}");
}
