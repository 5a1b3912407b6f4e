//! Criterion benchmark of the titration fit (issue 3 target: three parameters fitted to
//! 100 points in at most 20 ms). The scenario is our own: 25 mL of a 0.01 mol/L weak acid
//! (pKa 4.8) titrated with 0.1 mol/L NaOH at 25 °C, Davies activities, 100 points to 1.6
//! times the equivalence volume with fixed pseudo-random noise (sd 0.01); the fit estimates
//! the acid concentration, its pKa and an electrode offset from a start 10 %, 0.3 and 0
//! away.

use criterion::{Criterion, criterion_group, criterion_main};
use protolyte::analysis::{Scope, Titration, TitrationFit, Unknown};
use protolyte::{Amount, Catalog, Conditions, Protolyte, Reagent, Recipe, Volume};
use std::hint::black_box;

fn titration(acid_molar: f64, pka: f64) -> Titration {
    let cat = Catalog::builtin();
    let ha = Reagent::neutral_form(&Protolyte::new("acid HA", &[pka], 0).expect("protolyte"), None).expect("reagent");
    let mut acid = Recipe::new();
    acid.add(&ha, Amount::molar(acid_molar)).expect("amount");
    let mut base = Recipe::new();
    base.add(&cat.reagent("sodium hydroxide").expect("reagent"), Amount::molar(0.1))
        .expect("amount");
    Titration::new(&acid, Volume::milliliters(25.0), &base, &Conditions::default()).expect("titration")
}

fn bench(c: &mut Criterion) {
    let truth = titration(0.01, 4.8);
    // xorshift64 noise, uniform on ±0.0173 (sd 0.01).
    let mut s: u64 = 0x2545_F491_4F6C_DD1D;
    let data: Vec<(Volume, f64)> = (1..=100)
        .map(|i| {
            s ^= s << 13;
            s ^= s >> 7;
            s ^= s << 17;
            let u = (s >> 11) as f64 / (1u64 << 53) as f64 - 0.5;
            let v = Volume::milliliters(4.0 * i as f64 / 100.0);
            (v, truth.point(v, None).expect("point").ph + 0.02 + 0.0346 * u)
        })
        .collect();
    let mut fit = TitrationFit::new();
    let k = fit.add_curve(titration(0.011, 5.1), &data).expect("curve");
    fit.estimate(Unknown::AnalyteTotal("acid HA".into()), Scope::Curve(k))
        .expect("unknown");
    fit.estimate(Unknown::pka("acid HA", 0), Scope::Curve(k))
        .expect("unknown");
    fit.estimate(Unknown::ElectrodeOffset, Scope::Curve(k))
        .expect("unknown");
    let r = fit.run().expect("fit");
    assert!(r.converged && (r.estimates[1].value - 4.8).abs() < 0.05);
    c.bench_function("fit/3_params_100_points", |b| {
        b.iter(|| black_box(&fit).run().expect("fit"))
    });
}

criterion_group!(benches, bench);
criterion_main!(benches);
