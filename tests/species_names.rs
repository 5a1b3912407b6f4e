//! Species display names: one charge notation (a bare sign for a charge of 1, a caret, the
//! magnitude and the sign for a larger one), names given per form where a family's formula
//! does not show where its protons sit, lookups that accept the former spellings, and "did
//! you mean" suggestions for every kind of catalogue name.
//!
//! The notation is common practice for plain-text chemical formulas; no check value here
//! is a published number.

use protolyte::activity::interaction_coefficient;
use protolyte::analysis::{Input, Propagation};
use protolyte::{Amount, Catalog, Conditions, DataKind, Error, Protolyte, Recipe};

/// The charge a name writes: none, a bare sign (±1), or "^m" and the sign.
fn written_charge(name: &str) -> Option<i32> {
    let sign = match name.chars().last() {
        Some('+') => 1,
        Some('-') => -1,
        _ => return Some(0),
    };
    let body = &name[..name.len() - 1];
    match body.rsplit_once('^') {
        Some((_, mag)) => mag.parse::<i32>().ok().filter(|&m| m > 1).map(|m| sign * m),
        None => Some(sign),
    }
}

/// "borate(H1)": a "(H", digits and ")" — the fallback for a family without form names.
fn machine_made(name: &str) -> bool {
    name.match_indices("(H").any(|(i, _)| {
        let rest = &name[i + 2..];
        let digits = rest.len() - rest.trim_start_matches(|c: char| c.is_ascii_digit()).len();
        digits > 0 && rest[digits..].starts_with(')')
    })
}

#[test]
fn every_built_in_name_writes_its_charge_in_one_notation() {
    let cat = Catalog::builtin();
    let mut seen = 0;
    for info in cat.entries() {
        match info.kind {
            DataKind::Protolyte => {
                for form in &info.forms {
                    assert!(!machine_made(&form.name), "machine-made form name {}", form.name);
                    assert_eq!(
                        written_charge(&form.name),
                        Some(form.charge),
                        "{} of {}",
                        form.name,
                        info.name
                    );
                    seen += 1;
                }
            }
            DataKind::Ion if !info.formula.is_empty() => {
                assert_eq!(written_charge(&info.formula), Some(info.charge), "ion {}", info.name);
                seen += 1;
            }
            DataKind::Complex => {
                let shown = info.name.trim_end_matches("(aq)");
                assert_eq!(written_charge(shown), Some(info.charge), "complex {}", info.name);
                seen += 1;
            }
            _ => {}
        }
    }
    assert!(seen > 200, "only {seen} names checked"); // 200: lower bound on the catalogue's size, chosen for this test
    assert!(machine_made("borate(H1)") && machine_made("borate(H0)-"));
    assert!(!machine_made("(HOCH2CH2)2NH2+"));
}

#[test]
fn the_five_families_without_a_proton_prefix_have_their_forms_named() {
    let cat = Catalog::builtin();
    let names = |family: &str| -> Vec<String> {
        cat.info(DataKind::Protolyte, family)
            .unwrap()
            .forms
            .iter()
            .map(|f| f.name.clone())
            .collect()
    };
    assert_eq!(names("borate"), ["B(OH)3", "B(OH)4-"]);
    assert_eq!(names("silicate"), ["H4SiO4", "H3SiO4-", "H2SiO4^2-"]);
    assert_eq!(names("ethylenediamine"), ["H2en^2+", "Hen+", "en"]);
    assert_eq!(names("peroxide"), ["H2O2", "HO2-"]);
    assert_eq!(names("arsenite"), ["H3AsO3", "H2AsO3-"]);
    // Built from the formula: the caret for a charge above 1.
    assert_eq!(names("phosphate"), ["H3PO4", "H2PO4-", "HPO4^2-", "PO4^3-"]);
    assert_eq!(cat.info(DataKind::Ion, "calcium").unwrap().formula, "Ca^2+");
    // Molar masses still come from the caret formulas: Ca 40.078 (Prohaska et al. 2022).
    let ca = cat
        .info(DataKind::Ion, "calcium")
        .unwrap()
        .molar_mass_g_per_mol
        .unwrap();
    assert!((ca - 40.078).abs() < 1e-9); // IUPAC standard atomic weight of calcium (the source tests/water_analysis.rs names); 1e-9 rounding tolerance
}

#[test]
fn form_names_are_checked() {
    let p = || Protolyte::new("lab acid z", &[3.0, 7.0], 1).unwrap();
    let ok = p().with_form_names(&["H2Z+", "HZ", "Z-"]).unwrap();
    assert_eq!(ok.form_name(2), "H2Z+");
    assert_eq!(ok.form_name(0), "Z-");
    for bad in [
        &["H2Z+", "HZ"][..],            // one name short
        &["H2Z+", "HZ", "Z-", "Y"][..], // one too many
        &["H2Z", "HZ", "Z-"][..],       // no sign on a +1 form
        &["H2Z^2+", "HZ", "Z-"][..],    // wrong magnitude
        &["H2Z+", "HZ", "Z+"][..],      // wrong sign
        &["H2Z+", "HZ-", "Z-"][..],     // a neutral form with a sign
        &["H2Z+", "", "Z-"][..],        // empty
        &["H2Z+", "HZ", "HZ"][..],      // wrong charge, and used twice
    ] {
        assert!(p().with_form_names(bad).is_err(), "{bad:?} accepted");
    }
    let q = Protolyte::new("lab base w", &[5.0, 9.0], 2).unwrap();
    assert!(
        q.clone().with_form_names(&["H2W2+", "HW+", "W"]).is_err(),
        "a charge of 2 needs the caret"
    );
    assert_eq!(
        q.with_form_names(&["H2W^2+", "HW+", "W"]).unwrap().form_name(2),
        "H2W^2+"
    );
}

#[test]
fn a_catalogue_file_gives_form_names_and_a_wrong_one_names_its_line() {
    let good = r#"format = "protolyte-catalog/1"

[[family]]
name = "lab base w"
formula = "H2W2+"
form_names = ["H2W^2+", "HW+", "W"]
charge_most_protonated = 2
steps = [{ pka = 5.0 }, { pka = 9.0 }]
source = "invented for this test"
"#;
    let cat = Catalog::builtin().with_toml_str(good, "w.toml").unwrap();
    let forms: Vec<String> = (cat.info(DataKind::Protolyte, "lab base w").unwrap().forms.iter())
        .map(|f| f.name.clone())
        .collect();
    assert_eq!(forms, ["H2W^2+", "HW+", "W"]);

    let bad = good.replace(r#"["H2W^2+", "HW+", "W"]"#, r#"["H2W^2+", "HW", "W"]"#);
    let err = Catalog::builtin()
        .with_toml_str(&bad, "w.toml")
        .unwrap_err()
        .to_string();
    assert!(err.contains("w.toml:6"), "{err}");
    assert!(err.contains("form_names"), "{err}");
    assert!(err.contains("\"+\""), "{err}");
}

fn pool_like() -> (protolyte::System, protolyte::Equilibrium) {
    let extra = r#"format = "protolyte-catalog/1"

[[reagent]]
name = "aluminium chloride for this test"
parts = [{ ion = "aluminium" }, { ion = "chloride", count = 3 }]
source = "invented for this test"
"#;
    let cat = Catalog::builtin().with_toml_str(extra, "extra.toml").unwrap();
    let mut r = Recipe::new();
    for (reagent, mm) in [
        ("sodium bicarbonate", 2.0),
        ("calcium chloride", 1.0),
        ("sodium fluoride", 0.5),
        ("aluminium chloride for this test", 0.01),
    ] {
        r.add(&cat.reagent(reagent).unwrap(), Amount::millimolar(mm)).unwrap();
    }
    r.add_complexes(cat.complexes());
    let sys = r.compile(&Conditions::default()).unwrap();
    let eq = sys.solve().unwrap();
    (sys, eq)
}

#[test]
fn former_spellings_still_find_species() {
    let (sys, eq) = pool_like();
    for (old, new) in [
        ("CO32-", "CO3^2-"),
        ("Ca2+", "Ca^2+"),
        ("CaHCO3^+", "CaHCO3+"),
        ("CaOH^+", "CaOH+"),
        ("AlF2^+", "AlF2+"),
    ] {
        let i = sys.species_index(new).unwrap_or_else(|| panic!("{new} absent"));
        assert_eq!(sys.species_index(old), Some(i), "{old}");
        assert_eq!(&*eq.species_named(old).unwrap().name, new);
    }
    // AlF^2+ (one fluoride) and AlF2+ (two) stay apart.
    let one = sys.species_index("AlF^2+").unwrap();
    let two = sys.species_index("AlF2+").unwrap();
    assert_ne!(one, two);
    assert_eq!(eq.species()[one].charge, 2);
    assert_eq!(eq.species()[two].charge, 1);
    assert_eq!(sys.species_index("CO3-"), None);
    assert_eq!(sys.species_index("co3^2-"), None, "case counts");

    // Catalogue lookups of complexes as they were written before.
    let cat = Catalog::builtin();
    assert_eq!(cat.complex("CaHCO3^+").unwrap().name(), "CaHCO3+");
    assert_eq!(cat.complex("AlF2^+").unwrap().charge(), 1);
    assert_eq!(cat.complex("AlF^2+").unwrap().charge(), 2);
    assert_eq!(cat.ion("Ca2+").unwrap().name(), "calcium");

    // A propagation input names a species in the former notation.
    let mut prop = Propagation::new();
    prop.add(Input::log10_k("CaHCO3^+"), 0.05).unwrap();
    let u = prop.propagate(&sys, &eq).unwrap();
    assert!(u.log10_molal_sd("CaHCO3^+").unwrap() > 0.0);
    assert_eq!(u.log10_molal_sd("CaHCO3^+"), u.log10_molal_sd("CaHCO3+"));

    // The SIT table answers in either spelling.
    let new = interaction_coefficient("Na+", "CO3^2-").unwrap();
    assert_eq!(interaction_coefficient("CO32-", "Na+"), Some(new));
}

#[test]
fn unknown_names_of_every_kind_get_a_suggestion() {
    let cat = Catalog::builtin();
    let suggestion = |e: Error| match e {
        Error::UnknownName { suggestion, .. } => suggestion,
        other => panic!("{other}"),
    };
    assert_eq!(
        suggestion(cat.complex("CaHC03+").unwrap_err()).as_deref(),
        Some("CaHCO3+")
    );
    assert_eq!(
        suggestion(cat.complex("CaOH^2+").unwrap_err()).as_deref(),
        Some("CaOH+")
    );
    assert_eq!(
        suggestion(cat.protolyte("phospate").unwrap_err()).as_deref(),
        Some("phosphate")
    );
    assert_eq!(
        suggestion(cat.protolyte("silicat").unwrap_err()).as_deref(),
        Some("silicate")
    );
    assert_eq!(suggestion(cat.ion("calcum").unwrap_err()).as_deref(), Some("calcium"));
    assert_eq!(
        suggestion(cat.reagent("sodium bicarbonat").unwrap_err()).as_deref(),
        Some("sodium bicarbonate")
    );
    assert_eq!(suggestion(cat.complex("nothing like it at all").unwrap_err()), None);
    assert_eq!(suggestion(cat.solid("calcit").unwrap_err()).as_deref(), Some("calcite"));

    // Names in a compiled system: a family, a component and a species.
    let (sys, eq) = pool_like();
    let missing = |input: Input| {
        let mut p = Propagation::new();
        p.add(input, 0.01).unwrap();
        suggestion(p.propagate(&sys, &eq).unwrap_err())
    };
    assert_eq!(missing(Input::pka("carbonat", 0)).as_deref(), Some("carbonate"));
    assert_eq!(missing(Input::total("calcim")).as_deref(), Some("calcium"));
    assert_eq!(missing(Input::log10_k("CaHC03+")).as_deref(), Some("CaHCO3+"));
}
