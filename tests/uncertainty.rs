//! Uncertainty propagation: the linear estimate against Monte Carlo (a small xorshift
//! generator written here), against a closed form, against finite differences, with
//! correlations, and refusals.
//!
//! Sources are named beside every check value; "from memory" marks values recalled rather
//! than read from a copy of the source; "common practice" marks facts of the trade.

mod common;

use protolyte::analysis::{Input, Propagation};
use protolyte::{ActivityModel, Amount, Catalog, Conditions, Recipe, System, Temperature};

use proptest::prelude::*;

use common::Rng;

fn phosphate_buffer(model: ActivityModel) -> System {
    let cat = Catalog::builtin();
    let mut r = Recipe::new();
    r.add(
        &cat.reagent("sodium dihydrogen phosphate").unwrap(),
        Amount::millimolar(20.0),
    )
    .unwrap()
    .add(
        &cat.reagent("disodium hydrogen phosphate").unwrap(),
        Amount::millimolar(30.0),
    )
    .unwrap();
    r.compile(&Conditions::new(Temperature::celsius(25.0), model)).unwrap()
}

/// Monte Carlo of pH and log m(HPO₄²⁻) with correlated inputs: the sample standard
/// deviations agree with the linear ones within 6 % (the sampling error of a standard
/// deviation from 3000 draws is about 1.3 %; the rest is room for curvature).
#[test]
fn linear_against_monte_carlo() {
    let sys = phosphate_buffer(ActivityModel::Davies);
    let eq = sys.solve().unwrap();
    let (sd_pka, sd_p, sd_na) = (0.03, 1.5e-3, 2.0e-3);
    let mut prop = Propagation::new();
    prop.add(Input::pka("phosphate", 1), sd_pka)
        .unwrap()
        .add(Input::total("phosphate"), sd_p)
        .unwrap()
        .add(Input::total("sodium"), sd_na)
        .unwrap()
        .correlate(1, 2, 0.6)
        .unwrap();
    let u = prop.propagate(&sys, &eq).unwrap();
    let hpo4 = sys.families()[0].forms[1];
    let sd_hpo4 = u.species.iter().find(|s| s.index == hpo4).unwrap().log10_molal_sd;

    let p = sys.component_index("phosphate").unwrap();
    let na = sys.component_index("sodium").unwrap();
    let (p0, na0) = (sys.components()[p].total_molal, sys.components()[na].total_molal);
    let pka0 = sys.pka(0, 1).unwrap();
    let mut rng = Rng::new(2024);
    let n = 3000;
    let (mut ph, mut lh) = (Vec::with_capacity(n), Vec::with_capacity(n));
    let r = 0.6f64;
    for _ in 0..n {
        let (z1, z2, z3) = (rng.normal(), rng.normal(), rng.normal());
        let mut s = sys.clone();
        s.set_pka(0, 1, pka0 + sd_pka * z1).unwrap();
        s.set_total_molal(p, p0 + sd_p * z2).unwrap();
        s.set_total_molal(na, na0 + sd_na * (r * z2 + (1.0 - r * r).sqrt() * z3))
            .unwrap();
        let e = s.solve().unwrap();
        ph.push(e.ph());
        lh.push(e.species()[hpo4].molal.log10());
    }
    let sd = |x: &[f64]| {
        let m = x.iter().sum::<f64>() / x.len() as f64;
        (x.iter().map(|v| (v - m).powi(2)).sum::<f64>() / (x.len() - 1) as f64).sqrt()
    };
    let (mc_ph, mc_h) = (sd(&ph), sd(&lh));
    assert!(
        (mc_ph / u.ph_sd - 1.0).abs() < 0.06,
        "pH: MC {mc_ph} linear {}",
        u.ph_sd
    );
    assert!(
        (mc_h / sd_hpo4 - 1.0).abs() < 0.06,
        "log m(HPO4): MC {mc_h} linear {sd_hpo4}"
    );
    let shares: f64 = u.ph_variance_shares.iter().sum();
    assert!((shares - 1.0).abs() < 1e-12);
}

/// Henderson–Hasselbalch (common practice): in an ideal buffer pH = pKa + log(b/a), so
/// d pH/d pKa = 1, and Na⁺ added at a fixed acetate total turns acid into base one for one,
/// so d pH/d C(Na) = (1/a + 1/b)/ln 10. The equation neglects H⁺ and OH⁻ against a and b
/// (here 3e-5 against 0.04 mol/kg), so agreement to about 1e-3 relative is expected.
#[test]
fn henderson_hasselbalch_closed_form() {
    let cat = Catalog::builtin();
    let mut r = Recipe::new();
    r.add(&cat.reagent("acetic acid").unwrap(), Amount::molal(0.06))
        .unwrap()
        .add(&cat.reagent("sodium acetate").unwrap(), Amount::molal(0.04))
        .unwrap();
    let sys = r
        .compile(&Conditions::new(Temperature::celsius(25.0), ActivityModel::Ideal))
        .unwrap();
    let eq = sys.solve().unwrap();
    let mut prop = Propagation::new();
    prop.add(Input::pka("acetate", 0), 0.02)
        .unwrap()
        .add(Input::total("sodium"), 0.001)
        .unwrap();
    let u = prop.propagate(&sys, &eq).unwrap();
    let (a, b) = (0.06, 0.04);
    let dna = (1.0 / a + 1.0 / b) / std::f64::consts::LN_10;
    assert!((u.ph_gradient[0] - 1.0).abs() < 3e-3, "{:?}", u.ph_gradient);
    assert!((u.ph_gradient[1] / dna - 1.0).abs() < 3e-3, "{:?}", u.ph_gradient);
    let expect = (0.02f64.powi(2) + (dna * 0.001).powi(2)).sqrt();
    assert!((u.ph_sd / expect - 1.0).abs() < 3e-3);
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(16))]

    /// The gradient the propagation uses agrees with central differences of re-solves.
    #[test]
    fn gradient_matches_finite_differences(step in 0usize..3, c in 0.005f64..0.1, frac in 0.1f64..0.9, davies in any::<bool>()) {
        let cat = Catalog::builtin();
        let model = if davies { ActivityModel::Davies } else { ActivityModel::Ideal };
        let mut r = Recipe::new();
        r.add(&cat.reagent("phosphoric acid").unwrap(), Amount::molal(c)).unwrap()
         .add(&cat.reagent("sodium hydroxide").unwrap(), Amount::molal(c * (step as f64 + frac))).unwrap();
        let sys = r.compile(&Conditions::new(Temperature::celsius(25.0), model)).unwrap();
        let eq = sys.solve().unwrap();
        let mut prop = Propagation::new();
        prop.add(Input::pka("phosphate", step), 0.01).unwrap().add(Input::total("phosphate"), 1e-4).unwrap();
        let u = prop.propagate(&sys, &eq).unwrap();
        let h = 1e-5;
        let mut up = sys.clone();
        up.set_pka(0, step, sys.pka(0, step).unwrap() + h).unwrap();
        let mut dn = sys.clone();
        dn.set_pka(0, step, sys.pka(0, step).unwrap() - h).unwrap();
        let fd = (up.solve().unwrap().ph() - dn.solve().unwrap().ph()) / (2.0 * h);
        prop_assert!((u.ph_gradient[0] - fd).abs() < 1e-5 * (1.0 + fd.abs()), "{} vs {}", u.ph_gradient[0], fd);
        let p = sys.component_index("phosphate").unwrap();
        let t = sys.components()[p].total_molal;
        let hp = 1e-6 * t;
        let mut up = sys.clone();
        up.set_total_molal(p, t + hp).unwrap();
        let mut dn = sys.clone();
        dn.set_total_molal(p, t - hp).unwrap();
        let fd = (up.solve().unwrap().ph() - dn.solve().unwrap().ph()) / (2.0 * hp);
        prop_assert!((u.ph_gradient[1] - fd).abs() < 1e-4 * (1.0 + fd.abs()), "{} vs {}", u.ph_gradient[1], fd);
        prop_assert!(u.ph_sd.is_finite() && u.species.iter().all(|s| s.log10_molal_sd.is_finite()));
    }
}

#[test]
fn refusals_name_the_problem() {
    let sys = phosphate_buffer(ActivityModel::Davies);
    let eq = sys.solve().unwrap();
    let mut p = Propagation::new();
    assert!(p.add(Input::pka("phosphate", 0), -0.1).is_err());
    assert!(p.add(Input::pka("phosphate", 0), f64::NAN).is_err());
    p.add(Input::pka("phosphate", 0), 0.01).unwrap();
    p.add(Input::pka("phosphate", 1), 0.01).unwrap();
    p.add(Input::pka("phosphate", 2), 0.01).unwrap();
    assert!(p.correlate(0, 0, 0.5).is_err());
    assert!(p.correlate(0, 5, 0.5).is_err());
    assert!(p.correlate(0, 1, 1.5).is_err());
    // Not positive semi-definite: 1–2 and 1–3 strongly positive, 2–3 strongly negative.
    p.correlate(0, 1, 0.9)
        .unwrap()
        .correlate(0, 2, 0.9)
        .unwrap()
        .correlate(1, 2, -0.9)
        .unwrap();
    let e = p.propagate(&sys, &eq).unwrap_err();
    assert!(e.to_string().contains("semi-definite"), "{e}");
    // Names the system lacks.
    for input in [
        Input::pka("acetate", 0),
        Input::pka("phosphate", 3),
        Input::total("calcium"),
        Input::log10_k("CaHPO4"),
    ] {
        let mut q = Propagation::new();
        q.add(input.clone(), 0.01).unwrap();
        assert!(q.propagate(&sys, &eq).is_err(), "{input:?}");
    }
    // No inputs: zero uncertainty, no NaN.
    let u = Propagation::new().propagate(&sys, &eq).unwrap();
    assert_eq!(u.ph_sd, 0.0);
    assert!(u.species.iter().all(|s| s.log10_molal_sd == 0.0));
    // Strong base: d pH / d C(base) is 1/β.
    let mut q = Propagation::new();
    q.add(Input::StrongBase, 1e-4).unwrap();
    let u = q.propagate(&sys, &eq).unwrap();
    let beta = eq.sensitivities(&sys).unwrap().buffer_capacity_molal();
    assert!((u.ph_gradient[0] * beta - 1.0).abs() < 1e-9);
}
