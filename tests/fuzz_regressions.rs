//! Inputs the fuzz target (`fuzz/fuzz_targets/recipe_document.rs`) found or was seeded with,
//! kept as regression tests: each file in `tests/fuzz_inputs/` goes through the same path —
//! parse as a recipe document, compile, solve — and must end in an error or in finite numbers,
//! never a panic or a NaN.
#![cfg(feature = "serde")]

use protolyte::Catalog;
use protolyte::document::{RecipeDoc, SolveResult, parse};

fn run(text: &str) {
    let Ok(doc) = parse::<RecipeDoc>(text, "fuzz.json") else {
        return;
    };
    let Ok((recipe, conditions)) = doc.to_recipe(&Catalog::builtin()) else {
        return;
    };
    let Ok(system) = recipe.compile(&conditions) else {
        return;
    };
    let Ok(eq) = system.solve() else { return };
    let result = SolveResult::from_equilibrium(&eq);
    assert!(result.ph.is_finite(), "pH is not finite");
    for s in eq.species() {
        assert!(
            s.molal.is_finite() && s.gamma.is_finite() && s.activity.is_finite(),
            "{s:?}"
        );
    }
    if let Ok(sens) = eq.sensitivities(&system) {
        assert!(sens.buffer_capacity_molal().is_finite());
    }
}

#[test]
fn every_kept_fuzz_input_ends_in_an_error_or_finite_numbers() {
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fuzz_inputs");
    let mut count = 0;
    for entry in std::fs::read_dir(&dir).expect("tests/fuzz_inputs exists") {
        let path = entry.expect("entry").path();
        let bytes = std::fs::read(&path).expect("readable");
        if let Ok(text) = std::str::from_utf8(&bytes) {
            run(text);
        }
        count += 1;
    }
    assert!(count > 0, "no inputs in {}", dir.display());
}
