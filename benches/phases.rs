//! Criterion benchmarks of phases (issue 9 targets, one core): (a) the cost of reporting the
//! saturation index of every catalogue solid on a hard water (against the same solve with no
//! solid reported), (b) an equilibrium with two solids (calcite, gypsum) allowed to form and
//! an open CO2 system. The waters are demo scenarios of our own.

use criterion::{Criterion, criterion_group, criterion_main};
use protolyte::{ActivityModel, Amount, Catalog, Conditions, Pressure, Recipe, Temperature};
use std::hint::black_box;

fn hard_water() -> Recipe {
    let cat = Catalog::builtin();
    let mut r = Recipe::new();
    for (name, mm) in [
        ("calcium chloride", 2.0),
        ("magnesium sulfate", 1.0),
        ("sodium bicarbonate", 3.0),
        ("sodium chloride", 2.0),
    ] {
        r.add(&cat.reagent(name).expect("reagent"), Amount::millimolar(mm))
            .expect("amount");
    }
    r
}

fn bench(c: &mut Criterion) {
    let cat = Catalog::builtin();
    let conditions = Conditions::new(Temperature::celsius(25.0), ActivityModel::Davies);

    // (a) Saturation indices of the whole catalogue vs none.
    let with = hard_water().compile(&conditions).expect("compile");
    let mut none = hard_water();
    none.report_solids(&[]).report_gases(&[]);
    let without = none.compile(&conditions).expect("compile");
    assert!(with.solid_names().count() >= 5);
    c.bench_function("phases/a_hard_water_with_saturation_indices", |b| {
        b.iter(|| black_box(&with).solve().expect("solve"))
    });
    c.bench_function("phases/a_hard_water_without_saturation_indices", |b| {
        b.iter(|| black_box(&without).solve().expect("solve"))
    });

    // (b) Calcite and gypsum allowed, CO2 fixed at 420 µatm.
    let mut r = Recipe::new();
    r.add(
        &cat.reagent("calcium chloride").expect("reagent"),
        Amount::millimolar(30.0),
    )
    .expect("amount")
    .add(
        &cat.reagent("sodium sulfate").expect("reagent"),
        Amount::millimolar(25.0),
    )
    .expect("amount")
    .add(
        &cat.reagent("sodium carbonate").expect("reagent"),
        Amount::millimolar(5.0),
    )
    .expect("amount")
    .allow_solid(&cat.solid("calcite").expect("solid"))
    .allow_solid(&cat.solid("gypsum").expect("solid"))
    .fix_partial_pressure(&cat.gas("CO2(g)").expect("gas"), Pressure::microatm(420.0))
    .expect("pressure");
    let two = r.compile(&conditions).expect("compile");
    let eq = two.solve().expect("solve");
    assert!(eq.solids().iter().filter(|s| s.amount_molal > 0.0).count() == 2);
    c.bench_function("phases/b_two_solids_open_co2", |b| {
        b.iter(|| black_box(&two).solve().expect("solve"))
    });
}

criterion_group!(benches, bench);
criterion_main!(benches);
