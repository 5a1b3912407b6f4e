//! Property tests across the declared domain: pKa −2..16, totals 1e-9..2 mol/kg per family,
//! 0–100 °C, 1–8 families, every activity model. The properties are consequences of the
//! equations themselves (common practice), not of any data.

mod common;

use proptest::prelude::*;
use protolyte::{
    ActivityModel, Amount, Conditions, Equilibrium, Parameter, PathChoice, Protolyte, Recipe, Solver, System,
    Temperature,
};

#[derive(Debug, Clone)]
struct FamilySpec {
    pkas: Vec<f64>,
    charge_top: i32,
    protons: usize,
    log_total: f64,
    dh: Vec<f64>,
}

fn family() -> impl Strategy<Value = FamilySpec> {
    (1usize..=4)
        .prop_flat_map(|n| {
            (
                prop::collection::vec(-2.0f64..16.0, n),
                -1i32..=2,
                0..=n,
                -9.0f64..0.3,
                prop::collection::vec(-50.0f64..50.0, n),
            )
        })
        .prop_map(|(mut pkas, charge_top, protons, log_total, dh)| {
            pkas.sort_by(f64::total_cmp);
            FamilySpec {
                pkas,
                charge_top,
                protons,
                log_total,
                dh,
            }
        })
}

fn model() -> impl Strategy<Value = ActivityModel> {
    prop_oneof![
        Just(ActivityModel::Ideal),
        Just(ActivityModel::Davies),
        Just(ActivityModel::ExtendedDebyeHuckel)
    ]
}

#[derive(Debug, Clone)]
struct Case {
    families: Vec<FamilySpec>,
    log_base: f64,
    t: f64,
    model: ActivityModel,
}

fn case() -> impl Strategy<Value = Case> {
    (
        prop::collection::vec(family(), 1..=8),
        -10.0f64..0.3,
        0.0f64..100.0,
        model(),
    )
        .prop_map(|(families, log_base, t, model)| Case {
            families,
            log_base,
            t,
            model,
        })
}

fn recipe(c: &Case, extra_base: f64) -> Recipe {
    let mut r = Recipe::new();
    for (i, f) in c.families.iter().enumerate() {
        let p = Protolyte::new(&format!("family {i}"), &f.pkas, f.charge_top)
            .unwrap()
            .with_enthalpies_kj_per_mol(&f.dh)
            .unwrap();
        r.add(&common::salt(&p, f.protons), Amount::molal(10f64.powf(f.log_total)))
            .unwrap();
    }
    r.add(&common::naoh(), Amount::molal(10f64.powf(c.log_base) + extra_base))
        .unwrap();
    r
}

fn system(c: &Case, extra_base: f64) -> System {
    recipe(c, extra_base)
        .compile(&Conditions::new(Temperature::celsius(c.t), c.model))
        .unwrap()
}

fn check_balances(eq: &Equilibrium) -> Result<(), TestCaseError> {
    let r = eq.residuals();
    prop_assert!(
        r.charge_relative.abs() <= 1e-10,
        "charge residual {}",
        r.charge_relative
    );
    for (name, v) in &r.mass_relative {
        prop_assert!(v.abs() <= 1e-10, "mass residual of {} = {}", name, v);
    }
    for f in eq.families() {
        let sum: f64 = f.fractions.iter().sum::<f64>() + f.complexed_fraction;
        prop_assert!((sum - 1.0).abs() <= 1e-10, "fractions of {} sum to {}", f.name, sum);
    }
    prop_assert!(eq.ph().is_finite() && eq.ionic_strength_molal().is_finite());
    for s in eq.species() {
        prop_assert!(s.molal.is_finite() && s.molal >= 0.0 && s.gamma.is_finite() && s.gamma > 0.0);
    }
    Ok(())
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(2000))]

    #[test]
    fn converges_and_balances_hold(c in case()) {
        let sys = system(&c, 0.0);
        let eq = sys.solve();
        prop_assert!(eq.is_ok(), "{:?}", eq.err());
        check_balances(&eq.unwrap())?;
    }

    #[test]
    fn fast_path_equals_general_path(c in case()) {
        let sys = system(&c, 0.0);
        let fast = sys.solve().unwrap();
        let general = Solver::new().path(PathChoice::General).solve(&sys);
        prop_assert!(general.is_ok(), "{:?}", general.err());
        let general = general.unwrap();
        check_balances(&general)?;
        prop_assert!((fast.ph() - general.ph()).abs() <= 1e-9, "fast {} general {}", fast.ph(), general.ph());
    }

    #[test]
    fn ph_rises_as_strong_base_is_added(c in case(), steps in prop::collection::vec(1e-6f64..0.2, 1..6)) {
        let mut added = 0.0;
        let mut last = system(&c, 0.0).solve().unwrap().ph();
        for s in steps {
            added += s;
            let ph = system(&c, added).solve().unwrap().ph();
            prop_assert!(ph >= last - 1e-12, "pH fell from {} to {} at {} mol/kg added", last, ph, added);
            last = ph;
        }
    }

    #[test]
    fn sensitivities_equal_finite_differences(c in case()) {
        let sys = system(&c, 0.0);
        let eq = sys.solve().unwrap();
        let sens = eq.sensitivities(&sys).unwrap();
        // d pH / d total of each component, by central differences with a relative step.
        for ci in 1..sys.components().len() {
            let t = sys.components()[ci].total_molal;
            let an = sens.dph(Parameter::Total(ci));
            // A step that moves pH by at most ~1e-5 keeps the difference quotient local.
            let h = (t * 1e-5).min(1e-5 / an.abs().max(1e-300));
            let mut up = sys.clone();
            up.set_total_molal(ci, t + h).unwrap();
            let mut down = sys.clone();
            down.set_total_molal(ci, t - h).unwrap();
            let fd = (up.solve().unwrap().ph() - down.solve().unwrap().ph()) / (2.0 * h);
            // Scale-free comparison: the pH change over the step, analytic vs numeric.
            let err = (an - fd).abs() * h;
            prop_assert!(err <= 1e-7 + 1e-3 * (an.abs() * h), "component {}: analytic {} fd {} (h {})", ci, an, fd, h);
        }
    }
}
