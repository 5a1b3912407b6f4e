//! Endpoints: inflection against stoichiometric equivalence, break rules, indicators,
//! half-equivalence accounting, and the derivative and Gran methods on synthetic measured
//! data.

use proptest::prelude::*;
use protolyte::analysis::{
    BreakFlag, DeviationCause, GranFunction, Titration, derivative_endpoints, gran_fit, indicators,
};
use protolyte::{ActivityModel, Amount, Catalog, Conditions, Protolyte, Reagent, Recipe, Temperature, Volume};

fn ideal() -> Conditions {
    Conditions::new(Temperature::celsius(25.0), ActivityModel::Ideal)
}

fn reagent(name: &str, c: f64) -> Recipe {
    let mut r = Recipe::new();
    r.add(&Catalog::builtin().reagent(name).unwrap(), Amount::molar(c))
        .unwrap();
    r
}

fn weak_acid(pkas: &[f64], c: f64) -> Recipe {
    let p = Protolyte::new("test acid", pkas, 0).unwrap();
    let mut r = Recipe::new();
    r.add(&Reagent::neutral_form(&p, None).unwrap(), Amount::molar(c))
        .unwrap();
    r
}

#[test]
fn inflection_lies_at_equivalence_for_usual_titrations() {
    // Common practice: at usual concentrations the inflection point of a strong or
    // moderately weak acid titrated with strong base coincides with the equivalence point
    // within the reading error of a burette (well under 0.1 %).
    for (acid, tol) in [
        (reagent("hydrochloric acid", 0.1), 1e-5),
        (reagent("acetic acid", 0.1), 1e-3),
    ] {
        let t = Titration::new(
            &acid,
            Volume::milliliters(25.0),
            &reagent("sodium hydroxide", 0.1),
            &Conditions::default(),
        )
        .unwrap();
        let ve = t.equivalence_points().unwrap()[0].volume_ml;
        let ip = t.inflection_points(Volume::milliliters(40.0)).unwrap();
        assert_eq!(ip.len(), 1);
        assert!(((ip[0].volume_ml - ve) / ve).abs() < tol, "{} vs {ve}", ip[0].volume_ml);
    }
}

#[test]
fn strong_acid_break_suits_the_classic_indicators() {
    // Common practice: 0.1 M HCl with 0.1 M NaOH can be finished with methyl red,
    // bromothymol blue or phenolphthalein.
    let t = Titration::new(
        &reagent("hydrochloric acid", 0.1),
        Volume::milliliters(25.0),
        &reagent("sodium hydroxide", 0.1),
        &Conditions::default(),
    )
    .unwrap();
    let e = &t.equivalence_points_with(0.01, indicators()).unwrap()[0];
    assert!(e.usable());
    for name in ["methyl red", "bromothymol blue", "phenolphthalein"] {
        assert!(
            e.indicators.iter().any(|i| i.name == name),
            "{name} missing: {:?}",
            e.indicators
        );
    }
    assert_eq!(e.indicators[0].name, "bromothymol blue");
    // Weak acid: methyl red changes colour well before the equivalence point.
    let t = Titration::new(
        &reagent("acetic acid", 0.1),
        Volume::milliliters(25.0),
        &reagent("sodium hydroxide", 0.1),
        &ideal(),
    )
    .unwrap();
    let e = &t.equivalence_points_with(0.01, indicators()).unwrap()[0];
    assert!(e.indicators.iter().all(|i| i.name != "methyl red"));
    assert!(e.indicators.iter().any(|i| i.name == "phenolphthalein"));
}

#[test]
fn rules_of_thumb_flag_merging_and_weak_steps() {
    // Phosphoric acid (pKa 2.15, 7.20, 12.35): the first two breaks are usable (ΔpKa ≈ 5),
    // the third is not (C·Ka3 ≪ 1e-8) — common practice.
    let t = Titration::new(
        &reagent("phosphoric acid", 0.05),
        Volume::milliliters(25.0),
        &reagent("sodium hydroxide", 0.1),
        &Conditions::default(),
    )
    .unwrap();
    let e = t.equivalence_points().unwrap();
    assert_eq!(e.len(), 3);
    assert!(e[0].usable() && e[1].usable());
    assert!(matches!(e[2].flags[..], [BreakFlag::WeakStep { c_k }] if c_k < 1e-8));
    // An invented diprotic acid with pKa 4 and 6: the first break merges into the second.
    let t = Titration::new(
        &weak_acid(&[4.0, 6.0], 0.05),
        Volume::milliliters(25.0),
        &reagent("sodium hydroxide", 0.1),
        &ideal(),
    )
    .unwrap();
    let e = t.equivalence_points().unwrap();
    assert!(matches!(e[0].flags[..], [BreakFlag::StepsMerge { delta_pka }] if (delta_pka - 2.0).abs() < 1e-9));
    assert!(e[1].usable());
}

#[test]
fn half_equivalence_accounting() {
    // Ideal, concentrated, isolated step: pH(half) = pKa (Henderson–Hasselbalch, common practice).
    let t = Titration::new(
        &weak_acid(&[5.0], 0.1),
        Volume::milliliters(25.0),
        &reagent("sodium hydroxide", 0.1),
        &ideal(),
    )
    .unwrap();
    let h = &t.half_equivalence_points().unwrap()[0];
    assert!(h.deviation.abs() < 1e-3 && h.activity_part == 0.0);
    // A fairly strong acid (pKa 2) at 1 mmol/L: its own dissociation moves the half point up
    // (named as such since the causes were split; it was "water and dilution" before).
    let t = Titration::new(
        &weak_acid(&[2.0], 1e-3),
        Volume::milliliters(25.0),
        &reagent("sodium hydroxide", 0.01),
        &ideal(),
    )
    .unwrap();
    let h = &t.half_equivalence_points().unwrap()[0];
    assert_eq!(h.main_cause, DeviationCause::AcidDissociation);
    assert!(h.deviation > 0.5);
    // Close steps (pKa 4.0 and 4.6): overlap dominates.
    let t = Titration::new(
        &weak_acid(&[4.0, 4.6], 0.05),
        Volume::milliliters(25.0),
        &reagent("sodium hydroxide", 0.1),
        &ideal(),
    )
    .unwrap();
    for h in t.half_equivalence_points().unwrap() {
        assert_eq!(h.main_cause, DeviationCause::OverlappingSteps);
        let sum = h.activity_part + h.overlap_part + h.dissociation_part + h.protonation_part + h.water_part;
        assert!((sum - h.deviation).abs() < 1e-12);
    }
}

/// Synthetic "measured" data from the model with deterministic noise (a linear congruential
/// generator), for the measured-data methods.
fn synthetic(t: &Titration, end_ml: f64, n: usize, noise: f64, seed: u64) -> Vec<(f64, f64)> {
    let mut s = seed.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
    (0..n)
        .map(|i| {
            let v = end_ml * (i + 1) as f64 / n as f64;
            s = s.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
            let u = ((s >> 11) as f64 / (1u64 << 53) as f64) * 2.0 - 1.0;
            (v, t.ph_at(Volume::milliliters(v)).unwrap() + noise * u)
        })
        .collect()
}

#[test]
fn derivative_method_finds_the_endpoint() {
    let t = Titration::new(
        &reagent("acetic acid", 0.1),
        Volume::milliliters(25.0),
        &reagent("sodium hydroxide", 0.1),
        &Conditions::default(),
    )
    .unwrap();
    let data = synthetic(&t, 40.0, 400, 0.0, 1);
    let e = derivative_endpoints(&data, 0.5).unwrap();
    assert_eq!(e.len(), 1);
    assert!((e[0].volume_ml - 25.0).abs() < 0.05, "{}", e[0].volume_ml);
    assert!(derivative_endpoints(&[(1.0, 3.0), (1.0, 4.0), (2.0, 5.0), (3.0, 6.0)], 0.5).is_err());
    assert!(derivative_endpoints(&[(1.0, f64::NAN), (2.0, 4.0), (3.0, 5.0), (4.0, 6.0)], 0.5).is_err());
}

#[test]
fn gran_plots_recover_the_endpoint_from_both_sides() {
    // Gran (1952): v·10^−pH before and (V0 + v)·10^pH after the endpoint of a weak acid
    // titrated with strong base are straight lines through Ve. Ideal data, so the lines are
    // exact apart from the curvature near Ve (kept out of the windows).
    let t = Titration::new(
        &weak_acid(&[4.76], 0.1),
        Volume::milliliters(25.0),
        &reagent("sodium hydroxide", 0.1),
        &ideal(),
    )
    .unwrap();
    let data = synthetic(&t, 40.0, 160, 0.0, 2);
    let before = gran_fit(&data, 25.0, GranFunction::WeakAcidBuffer, 10.0, 22.0).unwrap();
    let after = gran_fit(&data, 25.0, GranFunction::ExcessBase, 27.0, 40.0).unwrap();
    assert!((before.endpoint_ml - 25.0).abs() < 0.02, "{}", before.endpoint_ml);
    assert!((after.endpoint_ml - 25.0).abs() < 0.02, "{}", after.endpoint_ml);
    // The slope before Ve is −Ka (ideal).
    assert!((before.slope / -10f64.powf(-4.76) - 1.0).abs() < 0.01);
    assert!(before.r_squared > 0.9999 && after.r_squared > 0.9999);
    assert!(gran_fit(&data, 25.0, GranFunction::ExcessBase, 50.0, 60.0).is_err());
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(16))]
    /// With pH noise of a few thousandths (a good electrode), both Gran lines still place the
    /// endpoint of a strong acid within 0.5 % (common practice for Gran plots).
    #[test]
    fn gran_with_noise(seed in 0u64..10_000, noise in 0.0f64..0.004) {
        let t = Titration::new(&reagent("hydrochloric acid", 0.05), Volume::milliliters(20.0), &reagent("sodium hydroxide", 0.1), &ideal()).unwrap();
        let data = synthetic(&t, 20.0, 80, noise, seed);
        let before = gran_fit(&data, 20.0, GranFunction::ExcessAcid, 4.0, 9.0).unwrap();
        let after = gran_fit(&data, 20.0, GranFunction::ExcessBase, 11.0, 20.0).unwrap();
        prop_assert!((before.endpoint_ml - 10.0).abs() < 0.05, "{}", before.endpoint_ml);
        prop_assert!((after.endpoint_ml - 10.0).abs() < 0.05, "{}", after.endpoint_ml);
    }
}
