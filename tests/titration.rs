//! Titration curves: a textbook worked example, facts of the trade, the analytic slope
//! against finite differences, adaptive stepping, and the inverse (volume or amount for a
//! target pH).

use proptest::prelude::*;
use protolyte::analysis::{Stepping, Titration, amount_for_ph};
use protolyte::{ActivityModel, Amount, Catalog, Conditions, Protolyte, Reagent, Recipe, Temperature, Volume};

fn ideal() -> Conditions {
    Conditions::new(Temperature::celsius(25.0), ActivityModel::Ideal)
}

fn naoh(c: f64) -> Recipe {
    let cat = Catalog::builtin();
    let mut r = Recipe::new();
    r.add(&cat.reagent("sodium hydroxide").unwrap(), Amount::molar(c))
        .unwrap();
    r
}

fn weak_acid(name: &str, pka: f64, c: f64) -> Recipe {
    let p = Protolyte::new(name, &[pka], 0).unwrap();
    let mut r = Recipe::new();
    r.add(&Reagent::neutral_form(&p, None).unwrap(), Amount::molar(c))
        .unwrap();
    r
}

/// D. C. Harris, *Quantitative Chemical Analysis* (W. H. Freeman), chapter "Acid–Base
/// Titrations", worked example: 50.00 mL of 0.02000 M MES (pKa 6.27) titrated with
/// 0.1000 M NaOH, Ve = 10.00 mL. pH values as the book computes them (from memory):
/// 3.99 at 0 mL, 5.90 at 3.00 mL, 6.27 at 5.00 mL, 9.25 at 10.00 mL, 10.22 at 10.10 mL and
/// 11.51 at 12.00 mL. The book neglects activity, so the ideal model is compared; its
/// buffer-region approximations are good to about 0.01.
#[test]
fn harris_mes_worked_example() {
    let t = Titration::new(
        &weak_acid("MES", 6.27, 0.02),
        Volume::milliliters(50.0),
        &naoh(0.1),
        &ideal(),
    )
    .unwrap();
    for (v, want) in [
        (0.0, 3.99),
        (3.0, 5.90),
        (5.0, 6.27),
        (10.0, 9.25),
        (10.1, 10.22),
        (12.0, 11.51),
    ] {
        let ph = t.ph_at(Volume::milliliters(v)).unwrap();
        assert!((ph - want).abs() < 0.015, "{v} mL: {ph} vs {want}");
    }
    let eq = t.equivalence_points().unwrap();
    assert_eq!(eq.len(), 1);
    assert!((eq[0].volume_ml - 10.0).abs() < 1e-9);
}

#[test]
fn equivalence_volume_is_acidic_protons_over_titrant_concentration() {
    // Common practice: Ve = n(acidic protons)/c(titrant). 25 mL of 0.04 M phosphoric acid
    // with 0.1 M NaOH: 10, 20 and 30 mL for its three protons.
    let cat = Catalog::builtin();
    let mut acid = Recipe::new();
    acid.add(&cat.reagent("phosphoric acid").unwrap(), Amount::molar(0.04))
        .unwrap();
    let t = Titration::new(&acid, Volume::milliliters(25.0), &naoh(0.1), &Conditions::default()).unwrap();
    let v: Vec<f64> = t.equivalence_points().unwrap().iter().map(|e| e.volume_ml).collect();
    assert_eq!(v.len(), 3);
    for (got, want) in v.iter().zip([10.0, 20.0, 30.0]) {
        assert!((got - want).abs() < 1e-9, "{got} vs {want}");
    }
}

#[test]
fn equivalence_ph_facts() {
    // Common practice: strong acid with strong base gives pH 7 at equivalence (25 °C, ideal);
    // a weak acid with a strong base gives pH > 7; a weak base with a strong acid pH < 7.
    let cat = Catalog::builtin();
    let mut hcl = Recipe::new();
    hcl.add(&cat.reagent("hydrochloric acid").unwrap(), Amount::molar(0.1))
        .unwrap();
    let t = Titration::new(&hcl, Volume::milliliters(25.0), &naoh(0.1), &ideal()).unwrap();
    let e = &t.equivalence_points().unwrap()[0];
    assert!((e.ph - 7.0).abs() < 0.01, "{}", e.ph);

    let t = Titration::new(
        &weak_acid("HA", 4.76, 0.1),
        Volume::milliliters(25.0),
        &naoh(0.1),
        &ideal(),
    )
    .unwrap();
    assert!(t.equivalence_points().unwrap()[0].ph > 8.0);

    let mut nh3 = Recipe::new();
    nh3.add(&cat.reagent("ammonia").unwrap(), Amount::molar(0.1)).unwrap();
    let t = Titration::new(&nh3, Volume::milliliters(25.0), &hcl, &ideal()).unwrap();
    let e = t.equivalence_points().unwrap();
    assert_eq!(e.len(), 1);
    assert!((e[0].volume_ml - 25.0).abs() < 1e-9);
    assert!(e[0].ph < 6.0, "{}", e[0].ph);
}

#[test]
fn analytic_slope_matches_central_difference() {
    let cat = Catalog::builtin();
    let mut acid = Recipe::new();
    acid.add(&cat.reagent("phosphoric acid").unwrap(), Amount::molar(0.02))
        .unwrap();
    acid.add(&cat.reagent("acetic acid").unwrap(), Amount::molar(0.03))
        .unwrap();
    for cond in [ideal(), Conditions::default()] {
        let t = Titration::new(&acid, Volume::milliliters(25.0), &naoh(0.1), &cond).unwrap();
        for v in [0.5, 3.0, 7.5, 12.0, 17.0, 22.0] {
            let p = t.point(Volume::milliliters(v), None).unwrap();
            let h = 1e-4;
            let fd = (t.ph_at(Volume::milliliters(v + h)).unwrap() - t.ph_at(Volume::milliliters(v - h)).unwrap())
                / (2.0 * h);
            assert!(
                (p.dph_dv_per_ml - fd).abs() <= 1e-5 * fd.abs().max(1e-2),
                "{v} mL: {} vs {fd}",
                p.dph_dv_per_ml
            );
        }
    }
}

#[test]
fn warm_started_curve_equals_cold_points() {
    let t = Titration::new(
        &weak_acid("HA", 4.76, 0.05),
        Volume::milliliters(20.0),
        &naoh(0.1),
        &Conditions::default(),
    )
    .unwrap();
    let curve = t.curve_uniform(Volume::milliliters(20.0), 41).unwrap();
    for p in curve.iter().step_by(5) {
        let cold = t.point(Volume::milliliters(p.volume_ml), None).unwrap();
        assert!((cold.ph - p.ph).abs() < 1e-9);
        assert!((cold.dph_dv_per_ml - p.dph_dv_per_ml).abs() <= 1e-7 * p.dph_dv_per_ml.abs());
    }
}

#[test]
fn adaptive_steps_are_bounded_and_dense_at_the_break() {
    let t = Titration::new(
        &weak_acid("HA", 4.76, 0.1),
        Volume::milliliters(25.0),
        &naoh(0.1),
        &ideal(),
    )
    .unwrap();
    let curve = t
        .curve_adaptive(&Stepping::new(Volume::milliliters(50.0)).max_ph_step(0.05).unwrap())
        .unwrap();
    assert_eq!(curve[0].volume_ml, 0.0);
    assert!((curve.last().unwrap().volume_ml - 50.0).abs() < 1e-9);
    let min_ml = 50.0 * 1e-5;
    for w in curve.windows(2) {
        assert!(w[1].volume_ml > w[0].volume_ml);
        let dv = w[1].volume_ml - w[0].volume_ml;
        assert!((w[1].ph - w[0].ph).abs() <= 0.075 + 1e-12 || dv <= min_ml * 1.000001);
    }
    // More points within ±0.5 mL of the equivalence point than in the 5 mL before it.
    let near = curve.iter().filter(|p| (p.volume_ml - 25.0).abs() < 0.5).count();
    let plateau = curve
        .iter()
        .filter(|p| p.volume_ml > 10.0 && p.volume_ml < 15.0)
        .count();
    assert!(near > plateau, "{near} vs {plateau}");
}

#[test]
fn volume_and_amount_for_target_ph_round_trip() {
    let t = Titration::new(
        &weak_acid("HA", 4.76, 0.1),
        Volume::milliliters(25.0),
        &naoh(0.1),
        &Conditions::default(),
    )
    .unwrap();
    for target in [3.5, 4.76, 7.0, 9.0, 11.0, 12.0] {
        let v = t.volume_for_ph(target, Volume::milliliters(60.0)).unwrap();
        assert!((t.ph_at(v).unwrap() - target).abs() < 1e-8, "{target}");
    }
    assert!(t.volume_for_ph(13.5, Volume::milliliters(60.0)).is_err());
    assert!(t.volume_for_ph(f64::NAN, Volume::milliliters(60.0)).is_err());
    assert!(t.volume_for_ph(7.0, Volume::milliliters(-1.0)).is_err());

    let cat = Catalog::builtin();
    let hcl = cat.reagent("hydrochloric acid").unwrap();
    let mut buffer = Recipe::new();
    buffer.add(&cat.reagent("tris").unwrap(), Amount::molar(0.05)).unwrap();
    let a = amount_for_ph(&buffer, &hcl, &Conditions::default(), 7.4, Amount::molar(0.05)).unwrap();
    let mut check = buffer.clone();
    check.add(&hcl, a).unwrap();
    assert!((check.compile(&Conditions::default()).unwrap().solve().unwrap().ph() - 7.4).abs() < 1e-8);
    assert!(amount_for_ph(&buffer, &hcl, &Conditions::default(), 11.0, Amount::molar(0.05)).is_err());
}

#[test]
fn bad_inputs_are_errors_not_panics() {
    let t = Titration::new(
        &weak_acid("HA", 4.76, 0.1),
        Volume::milliliters(25.0),
        &naoh(0.1),
        &ideal(),
    )
    .unwrap();
    assert!(t.ph_at(Volume::milliliters(f64::NAN)).is_err());
    assert!(t.ph_at(Volume::milliliters(-1.0)).is_err());
    assert!(
        t.curve_adaptive(&Stepping::new(Volume::milliliters(f64::INFINITY)))
            .is_err()
    );
    assert!(Titration::new(&naoh(0.1), Volume::milliliters(0.0), &naoh(0.1), &ideal()).is_err());
    // Zero-length adaptive curve: just the start.
    assert_eq!(
        t.curve_adaptive(&Stepping::new(Volume::milliliters(0.0)))
            .unwrap()
            .len(),
        1
    );
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(32))]
    /// A weak acid titrated with strong base: pH rises with every addition, the analytic slope
    /// is positive and finite, and the curve crosses its equivalence point at n/c.
    #[test]
    fn weak_acid_curve_is_monotone(pka in 2.0f64..10.0, logc in -3.0f64..-0.5, logb in -2.0f64..0.0) {
        let (c, b) = (10f64.powf(logc), 10f64.powf(logb));
        let t = Titration::new(&weak_acid("HA", pka, c), Volume::milliliters(25.0), &naoh(b), &Conditions::default()).unwrap();
        let ve = 25.0 * c / b;
        let curve = t.curve_uniform(Volume::milliliters(2.0 * ve), 41).unwrap();
        for w in curve.windows(2) {
            prop_assert!(w[1].ph > w[0].ph);
        }
        prop_assert!(curve.iter().all(|p| p.dph_dv_per_ml > 0.0 && p.dph_dv_per_ml.is_finite()));
        let e = t.equivalence_points().unwrap();
        prop_assert_eq!(e.len(), 1);
        prop_assert!((e[0].volume_ml - ve).abs() <= 1e-9 * ve);
    }
}
