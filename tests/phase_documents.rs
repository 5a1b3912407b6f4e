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
