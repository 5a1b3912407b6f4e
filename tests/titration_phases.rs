//! Titrations with phases present: soda ash into a hard water with calcite allowed to form,
//! and a titration open to atmospheric CO₂. The recipes are scenarios (invented values); the
//! checks are conservation, monotonicity, the imposed pCO₂ and the analytic dpH/dV against
//! central differences of the same curve.

use protolyte::analysis::{Stepping, Titration};
use protolyte::{ActivityModel, Amount, Catalog, Conditions, Pressure, Recipe, Temperature, Volume};

fn davies() -> Conditions {
    Conditions::new(Temperature::celsius(25.0), ActivityModel::Davies)
}

/// Hard water slightly acidified (undersaturated in calcite at the start), calcite allowed.
fn hard_water_with_soda_ash() -> Titration {
    let cat = Catalog::builtin();
    let mut water = Recipe::new();
    water
        .add(&cat.reagent("calcium chloride").unwrap(), Amount::molar(0.002))
        .unwrap()
        .add(&cat.reagent("magnesium chloride").unwrap(), Amount::molar(0.001))
        .unwrap()
        .add(&cat.reagent("sodium bicarbonate").unwrap(), Amount::molar(0.002))
        .unwrap()
        .add(&cat.reagent("hydrochloric acid").unwrap(), Amount::molar(0.001))
        .unwrap()
        .add_complexes(cat.complexes())
        .allow_solid(&cat.solid("calcite").unwrap());
    let mut soda = Recipe::new();
    soda.add(&cat.reagent("sodium carbonate").unwrap(), Amount::molar(0.05))
        .unwrap();
    Titration::new(&water, Volume::milliliters(100.0), &soda, &davies()).unwrap()
}

/// Central difference of the pH by the titrant volume (per mL).
fn fd_slope(t: &Titration, ml: f64) -> f64 {
    let h = 1e-4;
    let up = t.ph_at(Volume::milliliters(ml + h)).unwrap();
    let down = t.ph_at(Volume::milliliters(ml - h)).unwrap();
    (up - down) / (2.0 * h)
}

#[test]
fn soda_ash_into_hard_water_precipitates_calcite() {
    let t = hard_water_with_soda_ash();
    let curve = t.curve_uniform(Volume::milliliters(10.0), 41).unwrap();
    let ca = t.system().component_index("calcium").unwrap();
    let v0_ml = 100.0;
    // Calcite formed, in mmol in the whole volume (not diluted away).
    let formed: Vec<f64> = curve
        .iter()
        .map(|p| p.equilibrium.solid("calcite").unwrap().amount_molal * (v0_ml + p.volume_ml))
        .collect();
    assert_eq!(formed[0], 0.0, "the acidified water starts undersaturated");
    assert!(*formed.last().unwrap() > 0.05, "calcite forms: {formed:?}"); // 0.05 mmol: lower bound chosen for this test (scenario values, doc comment)
    assert!(
        formed.windows(2).all(|w| w[1] >= w[0] - 1e-12), // monotonic growth, invariant; 1e-12 rounding tolerance
        "the calcite formed never decreases: {formed:?}"
    );
    assert!(curve.windows(2).all(|w| w[1].ph > w[0].ph), "pH rises monotonically");
    for p in &curve {
        let eq = &p.equilibrium;
        // Mass balances over aqueous + solid hold (the residuals include the solid).
        assert!(eq.residuals().max_relative() < 1e-9, "{:?}", eq.residuals()); // solver residual tolerance chosen for this test
        // Calcium: dissolved + calcite = the diluted total.
        let total = t.system_at(Volume::milliliters(p.volume_ml)).unwrap().components()[ca].total_molal;
        let held = eq.dissolved_total_molal("calcium").unwrap() + eq.solid("calcite").unwrap().amount_molal;
        assert!((held - total).abs() <= 1e-10 * total, "{held} vs {total}"); // mass balance of calcium, by definition; 1e-10 relative rounding tolerance
        // Never supersaturated in an allowed solid.
        assert!(eq.saturation_index("calcite").unwrap() <= 1e-8); // equilibrium with a present solid: SI ≤ 0, by definition; 1e-8 tolerance
    }
    // The analytic slope against central differences, with calcite absent and present.
    let mut worst: f64 = 0.0;
    for p in curve.iter().skip(1).step_by(4) {
        let fd = fd_slope(&t, p.volume_ml);
        let err = (p.dph_dv_per_ml - fd).abs() / fd.abs().max(1e-3);
        assert!(
            err < 1e-4, // analytic vs central difference, same result two ways; 1e-4 tolerance chosen for this test
            "at {} mL: analytic {} vs {fd}",
            p.volume_ml,
            p.dph_dv_per_ml
        );
        worst = worst.max(err);
    }
    eprintln!(
        "soda ash: calcite formed {:.4} mmol, worst dpH/dV disagreement {worst:.1e}",
        formed.last().unwrap()
    );
}

#[test]
fn adaptive_curve_through_the_appearance_of_calcite() {
    let t = hard_water_with_soda_ash();
    let curve = t
        .curve_adaptive(&Stepping::new(Volume::milliliters(10.0)).max_ph_step(0.05).unwrap())
        .unwrap();
    assert!(
        curve
            .iter()
            .any(|p| p.equilibrium.solid("calcite").unwrap().amount_molal == 0.0)
    );
    assert!(
        curve
            .iter()
            .any(|p| p.equilibrium.solid("calcite").unwrap().amount_molal > 0.0)
    );
    assert!(curve.windows(2).all(|w| w[1].ph > w[0].ph));
    // Each point equals a cold solve at its volume (the warm start changes nothing).
    for p in curve.iter().step_by(5) {
        let cold = t.ph_at(Volume::milliliters(p.volume_ml)).unwrap();
        assert!((cold - p.ph).abs() < 1e-9, "{} vs {cold}", p.ph); // warm vs cold solve, same result two ways; 1e-9 tolerance
    }
}

#[test]
fn open_co2_titration() {
    let cat = Catalog::builtin();
    let co2 = cat.gas("CO2(g)").unwrap();
    let mut water = Recipe::new();
    water
        .add(&cat.reagent("sodium hydroxide").unwrap(), Amount::molar(0.002))
        .unwrap()
        .fix_partial_pressure(&co2, Pressure::microatm(420.0))
        .unwrap();
    let mut acid = Recipe::new();
    acid.add(&cat.reagent("hydrochloric acid").unwrap(), Amount::molar(0.02))
        .unwrap();
    let t = Titration::new(&water, Volume::milliliters(100.0), &acid, &davies()).unwrap();
    let curve = t.curve_uniform(Volume::milliliters(15.0), 31).unwrap();
    assert!(curve.windows(2).all(|w| w[1].ph < w[0].ph), "pH falls monotonically");
    for p in &curve {
        let eq = &p.equilibrium;
        let g = eq.gas("CO2(g)").unwrap();
        assert!(g.fixed);
        assert!((g.partial_pressure.bar() / Pressure::microatm(420.0).bar() - 1.0).abs() < 1e-9); // the imposed 420 µatm (scenario value) is kept, by definition; 1e-9 tolerance
        assert!(eq.residuals().max_relative() < 1e-9, "{:?}", eq.residuals()); // solver residual tolerance chosen for this test
    }
    // Past the equivalence (10 mL) the CO₂ taken up from the air is given back: the DIC at
    // the end is the one of water at 420 µatm, far below that of the start.
    assert!(curve.last().unwrap().equilibrium.dic_molal() < 0.1 * curve[0].equilibrium.dic_molal()); // factor 0.1: margin chosen for this test
    let mut worst: f64 = 0.0;
    for p in curve.iter().skip(1).step_by(3) {
        let fd = fd_slope(&t, p.volume_ml);
        let err = (p.dph_dv_per_ml - fd).abs() / fd.abs().max(1e-3);
        assert!(
            err < 1e-4, // analytic vs central difference, same result two ways; 1e-4 tolerance chosen for this test
            "at {} mL: analytic {} vs {fd}",
            p.volume_ml,
            p.dph_dv_per_ml
        );
        worst = worst.max(err);
    }
    eprintln!("open CO2: worst dpH/dV disagreement {worst:.1e}");
}

#[test]
fn target_ph_searches_with_calcite_forming() {
    // Soda ash volume to pH 8.3 in the hard water (calcite forms on the way).
    let t = hard_water_with_soda_ash();
    let v = t.volume_for_ph(8.3, Volume::milliliters(10.0)).unwrap();
    let p = t.point(v, None).unwrap();
    assert!((p.ph - 8.3).abs() < 1e-8, "{}", p.ph); // target pH 8.3 is the requested one (scenario value): search hits its target, self-consistency; 1e-8 tolerance
    // Lime dose to pH 9.5 for the same water, calcite allowed.
    let cat = Catalog::builtin();
    let mut water = Recipe::new();
    water
        .add(&cat.reagent("calcium chloride").unwrap(), Amount::molal(0.002))
        .unwrap()
        .add(&cat.reagent("sodium bicarbonate").unwrap(), Amount::molal(0.003))
        .unwrap()
        .add_complexes(cat.complexes())
        .allow_solid(&cat.solid("calcite").unwrap());
    let lime = cat.reagent("calcium hydroxide").unwrap();
    let dose = protolyte::analysis::amount_for_ph(&water, &lime, &davies(), 9.5, Amount::molal(0.01)).unwrap();
    let mut check = water.clone();
    check.add(&lime, dose).unwrap();
    let eq = check.compile(&davies()).unwrap().solve().unwrap();
    assert!((eq.ph() - 9.5).abs() < 1e-8, "{}", eq.ph()); // target pH 9.5 is the requested one (scenario value): self-consistency; 1e-8 tolerance
    assert!(
        eq.solid("calcite").unwrap().amount_molal > 0.0,
        "lime softening precipitates calcite"
    );
}
