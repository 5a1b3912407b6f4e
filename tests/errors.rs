//! Errors say what went wrong and where; no input panics; no result holds a NaN.

mod common;

use proptest::prelude::*;
use protolyte::{
    ActivityModel, Amount, Catalog, Complex, ComplexPart, Conditions, Constituent, Error, Ion, Mass, Protolyte,
    Reagent, Recipe, Temperature, Volume,
};

#[test]
fn negative_nan_and_infinite_amounts_are_refused_with_the_reagent_named() {
    let cat = Catalog::builtin();
    let acid = cat.reagent("acetic acid").unwrap();
    for bad in [-1e-3, f64::NAN, f64::INFINITY, f64::NEG_INFINITY] {
        let err = Recipe::new().add(&acid, Amount::molar(bad)).map(|_| ()).unwrap_err();
        assert!(matches!(err, Error::InvalidAmount { .. }), "{err:?}");
        assert!(err.to_string().contains("acetic acid"), "{err}");
    }
    let err = Recipe::new()
        .add_mass(&acid, Mass::grams(-2.0), Volume::liters(1.0))
        .map(|_| ())
        .unwrap_err();
    assert!(err.to_string().contains("acetic acid"), "{err}");
    let err = Recipe::new()
        .add_mass(&acid, Mass::grams(2.0), Volume::liters(0.0))
        .map(|_| ())
        .unwrap_err();
    assert!(matches!(err, Error::InvalidAmount { .. }), "{err:?}");
}

#[test]
fn unknown_names_suggest_the_closest_entry() {
    let cat = Catalog::builtin();
    let err = cat.reagent("sodium acetat").unwrap_err();
    match &err {
        Error::UnknownName { kind, name, suggestion } => {
            assert_eq!(*kind, "reagent");
            assert_eq!(name, "sodium acetat");
            assert_eq!(suggestion.as_deref(), Some("sodium acetate"));
        }
        other => panic!("unexpected {other:?}"),
    }
    assert!(matches!(
        cat.protolyte("unobtainium"),
        Err(Error::UnknownName { suggestion: None, .. })
    ));
}

#[test]
fn two_definitions_under_one_name_are_inconsistent() {
    let a = Protolyte::new("acid Q", &[4.0], 0).unwrap();
    let b = Protolyte::new("acid Q", &[5.0], 0).unwrap();
    let mut r = Recipe::new();
    r.add(&common::salt(&a, 1), Amount::molal(0.01)).unwrap();
    r.add(&common::salt(&b, 1), Amount::molal(0.01)).unwrap();
    let err = r.compile(&Conditions::default()).unwrap_err();
    assert!(
        matches!(err, Error::InconsistentDefinition { ref name, .. } if name == "acid Q"),
        "{err:?}"
    );
}

#[test]
fn reagents_must_be_electroneutral() {
    let p = Protolyte::new("acid Q", &[4.0], 0).unwrap();
    let err = Reagent::new(
        "half a salt",
        None,
        vec![(
            Constituent::Form {
                protolyte: p,
                protons: 0,
            },
            1,
        )],
    )
    .unwrap_err();
    assert!(matches!(err, Error::NotElectroneutral { charge: -1, .. }), "{err:?}");
    assert!(err.to_string().contains("half a salt"));
}

#[test]
fn definitions_refuse_bad_parameters() {
    assert!(Protolyte::new("x", &[f64::NAN], 0).is_err());
    assert!(Protolyte::new("x", &[], 0).is_err());
    assert!(Protolyte::new("", &[4.0], 0).is_err());
    assert!(
        Protolyte::new("x", &[4.0], 0)
            .unwrap()
            .with_enthalpies_kj_per_mol(&[1.0, 2.0])
            .is_err()
    );
    assert!(Ion::new("x", 0).is_err());
    let cu = Ion::new("copper", 2).unwrap();
    assert!(Complex::new("x", vec![(ComplexPart::Ion(cu.clone()), 1)], 3.0).is_err());
    assert!(
        Complex::new(
            "x",
            vec![(ComplexPart::Ion(cu.clone()), 1), (ComplexPart::Proton, -1)],
            f64::INFINITY
        )
        .is_err()
    );
    assert!(
        Complex::new(
            "CuOH+",
            vec![(ComplexPart::Ion(cu), 1), (ComplexPart::Proton, -1)],
            -8.0
        )
        .is_ok()
    );
}

#[test]
fn temperatures_outside_0_to_100_celsius_are_refused() {
    let r = common::one(&Protolyte::new("acid Q", &[4.0], 0).unwrap(), 1, 0.01);
    for t in [-5.0, 100.5, f64::NAN] {
        let err = r
            .compile(&Conditions::new(Temperature::celsius(t), ActivityModel::Davies))
            .unwrap_err();
        assert!(matches!(err, Error::OutOfDomain { .. }), "{err:?}");
    }
}

#[test]
fn pure_water_is_neutral() {
    // Neutral pH = pKw/2 (common practice); pKw(25 °C) = 13.995 (Marshall & Franck 1981, from memory).
    let eq = Recipe::new().compile(&Conditions::default()).unwrap().solve().unwrap();
    assert!((eq.ph() - 13.995 / 2.0).abs() < 0.002, "{}", eq.ph());
}

#[test]
fn davies_beyond_half_molal_warns() {
    // Davies (1962) states validity to about I = 0.5 mol/kg (common practice); a result past it
    // must carry a warning, not silence.
    let cat = Catalog::builtin();
    let mut r = Recipe::new();
    r.add(&cat.reagent("sodium chloride").unwrap(), Amount::molal(1.0))
        .unwrap();
    let eq = r.compile(&Conditions::default()).unwrap().solve().unwrap();
    assert!(
        eq.warnings()
            .iter()
            .any(|w| matches!(w, protolyte::Warning::IonicStrengthBeyondModel { .. }))
    );
}

fn any_f64() -> impl Strategy<Value = f64> {
    prop_oneof![
        Just(f64::NAN),
        Just(f64::INFINITY),
        Just(f64::NEG_INFINITY),
        Just(0.0),
        Just(-0.0),
        Just(f64::MAX),
        Just(f64::MIN_POSITIVE),
        -1e3f64..1e3,
        -30.0f64..30.0,
        1e-300f64..1e-200,
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(2000))]

    /// Whatever numbers come in, the library answers with Ok (and finite numbers) or Err.
    #[test]
    fn no_input_panics_and_no_result_holds_nan(
        pkas in prop::collection::vec(any_f64(), 0..4),
        charge in -12i32..12,
        amount in any_f64(),
        base in any_f64(),
        t in any_f64(),
        model in 0usize..3,
    ) {
        let model = [ActivityModel::Ideal, ActivityModel::Davies, ActivityModel::ExtendedDebyeHuckel][model];
        let Ok(p) = Protolyte::new("acid Q", &pkas, charge) else { return Ok(()); };
        let mut r = Recipe::new();
        let n = p.proton_count();
        let form = (0..=n).find(|&j| p.charge_of_form(j).is_some_and(|z| z.abs() <= 6)).unwrap_or(n);
        let Ok(salt) = std::panic::catch_unwind(|| common::salt(&p, form)) else { return Ok(()); };
        if r.add(&salt, Amount::molal(amount)).is_err() { return Ok(()); }
        if r.add(&common::naoh(), Amount::molal(base)).is_err() { return Ok(()); }
        let Ok(sys) = r.compile(&Conditions::new(Temperature::celsius(t), model)) else { return Ok(()); };
        if let Ok(eq) = sys.solve() {
            prop_assert!(eq.ph().is_finite() && eq.ionic_strength_molal().is_finite());
            for s in eq.species() {
                prop_assert!(s.molal.is_finite() && s.gamma.is_finite() && s.activity.is_finite());
            }
            if let Ok(sens) = eq.sensitivities(&sys) {
                prop_assert!(sens.buffer_capacity_molal().is_finite());
            }
        }
    }
}
