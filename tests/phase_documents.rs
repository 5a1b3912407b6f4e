//! Documents and recipes with phases: regressions found in a review of the phase code.
//!
//! Check values are worked by hand from the recipe's own amounts (charge sums, dilution
//! factors); each names how it is obtained.

use protolyte::document::{RecipeDoc, SolveResult, parse};
use protolyte::{ActivityModel, Amount, Catalog, Conditions, Constraint, Recipe, Temperature, Volume};

/// 5 mmol/kg calcium chloride, 8 meq/kg alkalinity, 5 mmol/kg DIC, closed on sodium, calcite
/// allowed: calcite precipitates.
fn precipitating_analysis() -> (Recipe, Conditions) {
    let doc: RecipeDoc = parse(
        r#"{ "reagents": [ { "reagent": "calcium chloride", "molal": 0.005 } ],
             "fixed_alkalinity_meq_per_kg": 8.0, "fixed_dic_mmol_per_kg": 5.0,
             "charge_balance_on": "sodium", "allow_solids": ["calcite"] }"#,
        "analysis.json",
    )
    .unwrap();
    doc.to_recipe(&Catalog::builtin()).unwrap()
}

#[test]
fn the_ion_balance_as_entered_counts_what_precipitated() {
    let (recipe, conditions) = precipitating_analysis();
    let eq = recipe.compile(&conditions).unwrap().solve().unwrap();
    let calcite = eq.solid("calcite").unwrap().amount_molal;
    assert!(calcite > 1e-3, "{calcite}");
    // As entered: 10 meq/kg of calcium against 10 meq/kg of chloride and 8 meq/kg of
    // alkalinity, the sodium (0 entered) closing it: (10 − 18)/(10 + 18) = −28.57 % (worked by
    // hand from the recipe). Counting only what stays dissolved gave −51 %.
    let b = SolveResult::from_equilibrium(&eq)
        .with_ion_balance_of(&recipe)
        .ion_balance
        .unwrap();
    assert!((b.error_percent - 100.0 * (10.0 - 18.0) / 28.0).abs() < 0.05, "{b:?}");
    assert!((b.cations_meq_per_kg - 10.0).abs() < 0.05, "{b:?}");
    // Without the recipe the solid's parts are unknown: no balance rather than a wrong one.
    let plain = SolveResult::from_equilibrium(&eq).with_ion_balance(1);
    assert_eq!(plain.ion_balance, None);
}

#[test]
fn the_ion_balance_without_solids_is_the_same_either_way() {
    let doc: RecipeDoc = parse(
        r#"{ "reagents": [ { "reagent": "calcium chloride", "millimolar": 1.0 },
                           { "reagent": "sodium bicarbonate", "millimolar": 1.9 } ],
             "fixed_alkalinity_meq_per_kg": 2.0, "charge_balance_on": "sodium" }"#,
        "a.json",
    )
    .unwrap();
    let (recipe, conditions) = doc.to_recipe(&Catalog::builtin()).unwrap();
    let eq = recipe.compile(&conditions).unwrap().solve().unwrap();
    let r = SolveResult::from_equilibrium(&eq);
    let a = r.clone().with_ion_balance(1).ion_balance.unwrap();
    let b = r.with_ion_balance_of(&recipe).ion_balance.unwrap();
    assert_eq!(a, b);
}

fn ideal() -> Conditions {
    Conditions::new(Temperature::celsius(25.0), ActivityModel::Ideal)
}

/// A water analysis: 1 mmol/kg calcium chloride, DIC 2.2 mmol/kg, alkalinity 2.0 meq/kg,
/// sodium closing the balance.
fn analysis() -> Recipe {
    let cat = Catalog::builtin();
    let mut r = Recipe::new();
    r.add(&cat.reagent("calcium chloride").unwrap(), Amount::molal(1e-3))
        .unwrap()
        .fix_dic(2.2e-3)
        .unwrap()
        .fix_alkalinity(2.0e-3)
        .unwrap()
        .close_charge_balance_on(&cat.ion("sodium").unwrap())
        .unwrap();
    r
}

#[test]
fn diluting_a_water_analysis_dilutes_its_dic_and_alkalinity() {
    let d = analysis().diluted(10.0).unwrap();
    let eq = d.compile(&ideal()).unwrap().solve().unwrap();
    // Ten-fold dilution with pure water: every conserved total is a tenth (by definition of
    // dilution); DIC and total alkalinity are conserved quantities.
    assert!((eq.dic_molal() / 2.2e-4 - 1.0).abs() < 1e-9, "{}", eq.dic_molal());
    assert!((eq.total_alkalinity_molal() / 2.0e-4 - 1.0).abs() < 1e-9);
    assert!((eq.dissolved_total_molal("calcium").unwrap() / 1e-4 - 1.0).abs() < 1e-9);
    // The sodium that closes the balance is a tenth of the undiluted water's.
    let whole = analysis().compile(&ideal()).unwrap().solve().unwrap();
    let (_, na) = whole.charge_balance_ion_added_molal().unwrap();
    let (_, na10) = eq.charge_balance_ion_added_molal().unwrap();
    assert!((na10 / (na / 10.0) - 1.0).abs() < 1e-9, "{na} {na10}");
}

#[test]
fn mixing_water_analyses_mixes_their_dic_and_alkalinity() {
    let cat = Catalog::builtin();
    let mut other = Recipe::new();
    other
        .add(&cat.reagent("calcium chloride").unwrap(), Amount::molal(3e-3))
        .unwrap()
        .fix_dic(4.2e-3)
        .unwrap()
        .fix_alkalinity(4.0e-3)
        .unwrap()
        .close_charge_balance_on(&cat.ion("sodium").unwrap())
        .unwrap();
    let m = Recipe::mix(&[(&analysis(), Volume::liters(1.0)), (&other, Volume::liters(3.0))]).unwrap();
    let eq = m.compile(&ideal()).unwrap().solve().unwrap();
    // Volume-weighted means (1:3, the mixing rule of Recipe::mix): DIC (2.2 + 3·4.2)/4 = 3.7,
    // alkalinity (2.0 + 3·4.0)/4 = 3.5, calcium (1 + 3·3)/4 = 2.5 mmol/kg (worked by hand).
    assert!((eq.dic_molal() / 3.7e-3 - 1.0).abs() < 1e-9, "{}", eq.dic_molal());
    assert!((eq.total_alkalinity_molal() / 3.5e-3 - 1.0).abs() < 1e-9);
    assert!((eq.dissolved_total_molal("calcium").unwrap() / 2.5e-3 - 1.0).abs() < 1e-9);
}

#[test]
fn mixing_a_fixed_dic_with_a_carbonate_reagent_is_refused_not_guessed() {
    let cat = Catalog::builtin();
    let mut soda = Recipe::new();
    soda.add(&cat.reagent("sodium bicarbonate").unwrap(), Amount::molal(1e-3))
        .unwrap();
    let Err(err) = Recipe::mix(&[(&analysis(), Volume::liters(1.0)), (&soda, Volume::liters(1.0))]) else {
        panic!("mixed without knowing the DIC");
    };
    let text = err.to_string();
    assert!(text.contains("DIC") && text.contains("carbonate"), "{text}");
}

#[test]
fn mixing_with_pure_water_halves_a_fixed_dic() {
    let m = Recipe::mix(&[
        (&analysis(), Volume::liters(1.0)),
        (&Recipe::new(), Volume::liters(1.0)),
    ])
    .unwrap();
    assert!(
        m.constraints().contains(&Constraint::Dic(1.1e-3)),
        "{:?}",
        m.constraints()
    );
    assert!(
        m.constraints().contains(&Constraint::Alkalinity(1.0e-3)),
        "{:?}",
        m.constraints()
    );
}

#[test]
fn a_refused_alkalinity_or_dic_is_quoted_in_the_unit_it_was_written_in() {
    let cat = Catalog::builtin();
    for (text, field, quoted) in [
        (
            r#"{ "fixed_dic_mmol_per_kg": -1 }"#,
            "fixed_dic_mmol_per_kg",
            "-1 mmol/kg",
        ),
        (
            r#"{ "fixed_dic_mmol_per_kg": 1e6 }"#,
            "fixed_dic_mmol_per_kg",
            "1000000 mmol/kg",
        ),
        (
            r#"{ "fixed_alkalinity_meq_per_kg": 1e300 }"#,
            "fixed_alkalinity_meq_per_kg",
            "1e300",
        ),
    ] {
        let doc: RecipeDoc = parse(text, "w.json").unwrap();
        let err = doc.to_recipe(&cat).unwrap_err().to_string();
        // Before: "-0.001 mol/kg", "1000 mol/kg", "1e297": numbers the document does not hold.
        assert!(err.contains(field) && err.contains(quoted), "{err}");
    }
}

#[test]
fn a_buffer_capacity_of_a_held_ph_is_refused_naming_the_constraint() {
    let cat = Catalog::builtin();
    let mut r = Recipe::new();
    r.add(&cat.reagent("acetic acid").unwrap(), Amount::millimolar(10.0))
        .unwrap()
        .fix_ph(5.0)
        .unwrap();
    // Before: 'invalid pH 6: not reached with up to 20 mol/kg of strong acid or base'.
    let err = protolyte::analysis::CapacityCurve::new(&r, &Conditions::default()).unwrap_err();
    assert!(err.to_string().contains("pH fixed at 5"), "{err}");
    let mut a = Recipe::new();
    a.fix_alkalinity(2e-3).unwrap();
    let err = protolyte::analysis::CapacityCurve::new(&a, &Conditions::default()).unwrap_err();
    assert!(err.to_string().contains("alkalinity"), "{err}");
}

#[test]
fn a_fixed_ph_read_under_bates_guggenheim_is_flagged() {
    let doc: RecipeDoc = parse(
        r#"{ "ph_convention": "bates-guggenheim", "activity": "davies",
             "reagents": [ { "reagent": "sodium chloride", "molar": 0.1 },
                           { "reagent": "sodium bicarbonate", "millimolar": 2 } ],
             "fixed_ph": 8.0 }"#,
        "bg.json",
    )
    .unwrap();
    let (recipe, conditions) = doc.to_recipe(&Catalog::builtin()).unwrap();
    let eq = recipe.compile(&conditions).unwrap().solve().unwrap();
    let r = SolveResult::from_equilibrium(&eq).with_recipe(&recipe);
    // The pH reported differs from the one fixed (the conventions differ at I = 0.1); before,
    // nothing said why a 'fixed_ph' of 8 read otherwise.
    assert!((r.ph - 8.0).abs() > 1e-4, "{}", r.ph);
    assert!(r.warnings.iter().any(|w| w.contains("fixed at 8")), "{:?}", r.warnings);
    // Under the model's own convention the fixed pH is the one reported, with no such note.
    let model: RecipeDoc = parse(
        r#"{ "reagents": [ { "reagent": "sodium chloride", "molar": 0.1 } ], "fixed_ph": 8.0 }"#,
        "m.json",
    )
    .unwrap();
    let (recipe, conditions) = model.to_recipe(&Catalog::builtin()).unwrap();
    let eq = recipe.compile(&conditions).unwrap().solve().unwrap();
    let r = SolveResult::from_equilibrium(&eq).with_recipe(&recipe);
    assert!((r.ph - 8.0).abs() < 1e-9);
    assert!(!r.warnings.iter().any(|w| w.contains("fixed at")));
}

#[test]
fn a_refused_partial_pressure_is_quoted_in_the_unit_it_was_written_in() {
    let doc: RecipeDoc = parse(
        r#"{ "partial_pressures": [ { "gas": "CO2(g)", "atm": 1000 } ] }"#,
        "p.json",
    )
    .unwrap();
    let err = doc.to_recipe(&Catalog::builtin()).unwrap_err().to_string();
    // Before: "invalid partial pressure (bar) for CO2(g): 1013.25", a number not in the
    // document, at `partial_pressures[0]` without the unit's field.
    assert!(
        err.contains("partial_pressures[0].atm") && err.contains("1000 atm"),
        "{err}"
    );
}

#[test]
fn a_solid_allowed_again_under_its_name_replaces_the_first() {
    let cat = Catalog::builtin();
    let c = cat.solid("calcite").unwrap();
    // An invented log K of −8.0 for the second definition (a scenario, not a datum).
    let mine = protolyte::Solid::new("calcite", c.parts().to_vec(), -8.0).unwrap();
    let mut r = Recipe::new();
    r.allow_solid(&c).allow_solid(&mine);
    // Before: the second definition was dropped without a word, the catalogue's kept.
    assert_eq!(r.allowed_solids().len(), 1);
    assert_eq!(r.allowed_solids()[0].log10_k(), -8.0);
}

#[test]
fn no_acid_or_base_is_reported_beside_a_closing_ion() {
    let doc: RecipeDoc = parse(
        r#"{ "reagents": [ { "reagent": "calcium chloride", "millimolar": 5 } ],
             "fixed_dic_mmol_per_kg": 5, "fixed_ph": 8.5, "charge_balance_on": "sodium",
             "allow_solids": ["calcite"] }"#,
        "c.json",
    )
    .unwrap();
    let (recipe, conditions) = doc.to_recipe(&Catalog::builtin()).unwrap();
    let eq = recipe.compile(&conditions).unwrap().solve().unwrap();
    // The closing ion takes the charge, so the H+ a fixed pH takes is zero up to round-off
    // (charge balance, by definition); before, "1.2e-17 mol/kg of base added" was reported.
    assert!(eq.proton_uptake_molal().abs() < 1e-12);
    assert_eq!(SolveResult::from_equilibrium(&eq).proton_uptake_mol_per_kg, None);
}

#[test]
fn a_solid_allowed_without_its_parts_is_named_in_a_warning() {
    let doc: RecipeDoc = parse(
        r#"{ "reagents": [ { "reagent": "sodium chloride", "millimolar": 1 } ],
             "allow_solids": ["calcite", "halite"] }"#,
        "s.json",
    )
    .unwrap();
    let (recipe, conditions) = doc.to_recipe(&Catalog::builtin()).unwrap();
    let eq = recipe.compile(&conditions).unwrap().solve().unwrap();
    let r = SolveResult::from_equilibrium(&eq).with_recipe(&recipe);
    // Before: calcite (no calcium, no carbonate here) vanished from the answer unmentioned.
    assert!(
        r.warnings.iter().any(|w| w.starts_with("calcite was allowed")),
        "{:?}",
        r.warnings
    );
    assert!(!r.warnings.iter().any(|w| w.starts_with("halite")), "{:?}", r.warnings);
}
