//! Facts of the trade (common practice), checked against the full model, with the size of
//! the deviations the classroom shortcuts ignore.

mod common;

use protolyte::{ActivityModel, Amount, Conditions, Protolyte, Recipe, Temperature, Volume};

fn ideal() -> Conditions {
    Conditions::new(Temperature::celsius(25.0), ActivityModel::Ideal)
}

/// Acetic acid, pKa 4.756 at 25 °C (Goldberg, Kishore & Lennen, J. Phys. Chem. Ref. Data 31
/// (2002) 231; from memory).
fn acetic() -> Protolyte {
    Protolyte::new("acetic", &[4.756], 0).unwrap()
}

fn half_neutralised(c: f64) -> f64 {
    let mut r = common::one(&acetic(), 1, c);
    r.add(&common::naoh(), Amount::molal(c / 2.0)).unwrap();
    r.compile(&ideal()).unwrap().solve().unwrap().ph()
}

#[test]
fn ph_equals_pka_at_half_neutralisation_of_a_concentrated_weak_acid() {
    // Common practice: pH ≈ pKa at half-neutralisation. Exact for 0.1 mol/kg to 0.01 pH.
    let ph = half_neutralised(0.1);
    assert!((ph - 4.756).abs() < 0.01, "pH {ph}");
}

#[test]
fn dilute_half_neutralised_acid_deviates_from_pka_as_the_charge_balance_says() {
    // At 1e-4 mol/kg the shortcut fails: [A⁻] = C_b + [H⁺] − [OH⁻], [HA] = C − [A⁻], so
    // pH = pKa + log([A⁻]/[HA]) with [H⁺] no longer negligible (common practice; e.g.
    // D. C. Harris, Quantitative Chemical Analysis, ch. on buffers, "when the
    // Henderson–Hasselbalch equation fails").
    let c = 1e-4;
    let ph = half_neutralised(c);
    let h = 10f64.powf(-ph);
    // Kw = 10^-13.995 at 25 °C (Marshall & Franck 1981, from memory); [OH⁻] is negligible here.
    let a = c / 2.0 + h - 10f64.powf(-13.995) / h;
    let expected = 4.756 + (a / (c - a)).log10();
    assert!(ph - 4.756 > 0.1, "deviation {} should be large", ph - 4.756);
    assert!(
        (ph - expected).abs() < 1e-6,
        "pH {ph} vs charge-balance form {expected}"
    );
}

#[test]
fn activity_corrections_lower_the_half_neutralisation_ph() {
    // With activity coefficients, pH = pKa + log(γ(A⁻)[A⁻]/[HA]) < pKa for a neutral acid
    // (common practice; about −0.1 at I = 0.05 mol/kg by Davies).
    let mut r = common::one(&acetic(), 1, 0.1);
    r.add(&common::naoh(), Amount::molal(0.05)).unwrap();
    let eq = r
        .compile(&Conditions::new(Temperature::celsius(25.0), ActivityModel::Davies))
        .unwrap()
        .solve()
        .unwrap();
    let shift = eq.ph() - 4.756;
    assert!(shift < -0.05 && shift > -0.15, "shift {shift}");
}

#[test]
fn weak_acid_equivalence_point_is_alkaline() {
    // Common practice: at the equivalence point of a weak acid with a strong base the
    // solution holds the conjugate base, so pH > 7 (here about 8.7 for 0.05 mol/kg acetate).
    let c = 0.05;
    let mut r = common::one(&acetic(), 1, c);
    r.add(&common::naoh(), Amount::molal(c)).unwrap();
    let ph = r.compile(&ideal()).unwrap().solve().unwrap().ph();
    assert!(ph > 8.5 && ph < 9.0, "pH {ph}");
}

#[test]
fn equivalence_volume_is_moles_of_acidic_protons_over_titrant_concentration() {
    // Common practice: V_eq = n(H⁺, acidic)/c(titrant). Phosphoric acid (pKa 2.148, 7.198,
    // 12.35; Goldberg et al. 2002, from memory) shows two usable breaks: the first and
    // second protons. 20 mL of 0.05 mol/L H3PO4 with 0.1 mol/L NaOH: breaks at 10 and 20 mL.
    let h3po4 = Protolyte::new("phosphoric", &[2.148, 7.198, 12.35], 0).unwrap();
    let mut analyte = Recipe::new();
    analyte.add(&common::salt(&h3po4, 3), Amount::molar(0.05)).unwrap();
    let mut titrant = Recipe::new();
    titrant.add(&common::naoh(), Amount::molar(0.1)).unwrap();
    let v0 = 20.0;
    let ph_at = |v: f64| {
        let mix = Recipe::mix(&[(&analyte, Volume::milliliters(v0)), (&titrant, Volume::milliliters(v))]).unwrap();
        mix.compile(&ideal()).unwrap().solve().unwrap().ph()
    };
    // Steepest slope of the computed curve on a 0.01 mL grid near each expected break.
    for expected in [10.0, 20.0] {
        let mut best = (0.0, f64::MIN);
        let mut v = expected - 1.0;
        while v <= expected + 1.0 {
            let slope = (ph_at(v + 0.005) - ph_at(v - 0.005)) / 0.01;
            if slope > best.1 {
                best = (v, slope);
            }
            v += 0.01;
        }
        assert!(
            (best.0 - expected).abs() < 0.1,
            "steepest point {} mL, expected {expected} mL",
            best.0
        );
    }
}
