//! Fuzz target: any bytes as a recipe document (JSON or TOML) → parse → compile → solve.
//! Whatever the input, the library must answer with an error or with finite numbers: no
//! panic, no hang, no NaN.
#![no_main]

use libfuzzer_sys::fuzz_target;
use protolyte::Catalog;
use protolyte::document::{RecipeDoc, SolveResult, parse};

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else { return };
    let Ok(doc) = parse::<RecipeDoc>(text, "fuzz.json") else { return };
    let Ok((recipe, conditions)) = doc.to_recipe(&Catalog::builtin()) else { return };
    let Ok(system) = recipe.compile(&conditions) else { return };
    let Ok(eq) = system.solve() else { return };
    let result = SolveResult::from_equilibrium(&eq);
    assert!(result.ph.is_finite(), "pH is not finite");
    for s in eq.species() {
        assert!(s.molal.is_finite() && s.gamma.is_finite() && s.activity.is_finite(), "{s:?}");
    }
    if let Ok(sens) = eq.sensitivities(&system) {
        assert!(sens.buffer_capacity_molal().is_finite());
    }
});
