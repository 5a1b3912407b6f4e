//! Buffer capacity: the analytic β against the classical closed form for a monoprotic acid
//! (D. D. Van Slyke, J. Biol. Chem. 52 (1922) 525), the location of its peaks, and β along
//! a titration curve.

use proptest::prelude::*;
use protolyte::analysis::{CapacityCurve, Titration, capacity_along};
use protolyte::{ActivityModel, Amount, Catalog, Conditions, Protolyte, Reagent, Recipe, Temperature, Volume};

fn ideal() -> Conditions {
    Conditions::new(Temperature::celsius(25.0), ActivityModel::Ideal)
}

/// Van Slyke (1922): β = ln 10 · (Kw/h + h + C·Ka·h/(Ka + h)²), ideal solution.
fn van_slyke(ph: f64, pka: f64, c: f64, log10_kw: f64) -> f64 {
    let h = 10f64.powf(-ph);
    let ka = 10f64.powf(-pka);
    let kw = 10f64.powf(log10_kw);
    std::f64::consts::LN_10 * (kw / h + h + c * ka * h / ((ka + h) * (ka + h)))
}

fn weak_acid(pka: f64, c: f64) -> (Recipe, f64) {
    let p = Protolyte::new("test acid HA", &[pka], 0).unwrap();
    let mut r = Recipe::new();
    r.add(&Reagent::neutral_form(&p, None).unwrap(), Amount::molal(c))
        .unwrap();
    let kw = r.compile(&ideal()).unwrap().log10_kw();
    (r, kw)
}

#[test]
fn monoprotic_matches_van_slyke_closed_form() {
    // Acetic acid pKa 4.756 (common practice value) at 0.1 and 0.001 mol/kg.
    for &c in &[0.1, 1e-3] {
        let (r, kw) = weak_acid(4.756, c);
        let curve = CapacityCurve::new(&r, &ideal()).unwrap();
        for &ph in &[2.5, 3.5, 4.0, 4.756, 5.5, 6.5, 8.0, 10.0, 11.5] {
            let p = curve.at_ph(ph).unwrap();
            assert!((p.ph - ph).abs() < 1e-9, "reached pH {} for {ph}", p.ph);
            let want = van_slyke(ph, 4.756, c, kw);
            assert!(
                (p.beta_molal - want).abs() <= 1e-6 * want,
                "C = {c}, pH {ph}: β = {} vs Van Slyke {want}",
                p.beta_molal
            );
        }
    }
}

#[test]
fn monoprotic_peak_at_pka_with_height_c_ln10_over_4() {
    // Closed form (Van Slyke 1922): with water terms negligible, β peaks at pH = pKa with
    // β = ln 10 · C/4.
    let (r, kw) = weak_acid(6.0, 0.05);
    let peaks = CapacityCurve::new(&r, &ideal()).unwrap().peaks(4.0, 8.0).unwrap();
    assert_eq!(peaks.len(), 1);
    assert!((peaks[0].ph - 6.0).abs() < 1e-3, "peak at {}", peaks[0].ph);
    let want = van_slyke(peaks[0].ph, 6.0, 0.05, kw);
    assert!((peaks[0].beta_molal - want).abs() <= 1e-6 * want);
    assert!((peaks[0].beta_molal - std::f64::consts::LN_10 * 0.05 / 4.0).abs() < 1e-4);
}

#[test]
fn phosphate_middle_peak_near_its_second_pka() {
    // Phosphoric acid pKa 2.15, 7.20, 12.35 (common practice values): between pH 3 and 11
    // only the middle step gives a maximum of β (the others merge into the rise from water).
    let cat = Catalog::builtin();
    let mut r = Recipe::new();
    r.add(&cat.reagent("phosphoric acid").unwrap(), Amount::molal(0.1))
        .unwrap();
    let curve = CapacityCurve::new(&r, &ideal()).unwrap();
    let peaks = curve.peaks(3.0, 11.0).unwrap();
    assert_eq!(peaks.len(), 1, "{peaks:?}");
    assert!((peaks[0].ph - 7.2).abs() < 0.05);
}

#[test]
fn beta_along_titration_is_positive_and_smallest_at_equivalence() {
    let cat = Catalog::builtin();
    let mut acid = Recipe::new();
    acid.add(&cat.reagent("acetic acid").unwrap(), Amount::molar(0.1))
        .unwrap();
    let mut base = Recipe::new();
    base.add(&cat.reagent("sodium hydroxide").unwrap(), Amount::molar(0.1))
        .unwrap();
    let t = Titration::new(&acid, Volume::milliliters(25.0), &base, &Conditions::default()).unwrap();
    let curve = t.curve_uniform(Volume::milliliters(50.0), 201).unwrap();
    let beta = capacity_along(&t, &curve).unwrap();
    assert!(beta.iter().all(|b| b.beta_molal > 0.0 && b.beta_molal.is_finite()));
    // The minimum lies at the equivalence point, 25 mL (common practice).
    let (imin, _) = beta
        .iter()
        .enumerate()
        .skip(20)
        .take(160)
        .min_by(|a, b| a.1.beta_molal.total_cmp(&b.1.beta_molal))
        .unwrap();
    assert!(
        (curve[imin].volume_ml - 25.0).abs() < 0.5,
        "minimum at {} mL",
        curve[imin].volume_ml
    );
}

#[test]
fn unreachable_or_invalid_ph_is_an_error_not_a_panic() {
    let (r, _) = weak_acid(4.756, 0.01);
    let curve = CapacityCurve::new(&r, &ideal()).unwrap();
    assert!(curve.at_ph(f64::NAN).is_err());
    assert!(curve.at_ph(25.0).is_err());
    assert!(curve.sweep(f64::INFINITY, 3.0, 5).is_err());
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(48))]
    /// The analytic β equals the closed form for any monoprotic acid, concentration and pH.
    #[test]
    fn van_slyke_everywhere(pka in 2.0f64..12.0, logc in -4.0f64..0.0, ph in 2.0f64..12.0) {
        let c = 10f64.powf(logc);
        let (r, kw) = weak_acid(pka, c);
        let p = CapacityCurve::new(&r, &ideal()).unwrap().at_ph(ph).unwrap();
        let want = van_slyke(ph, pka, c, kw);
        prop_assert!((p.beta_molal - want).abs() <= 1e-6 * want, "β {} vs {}", p.beta_molal, want);
    }
}
