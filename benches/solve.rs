//! Criterion benchmarks of one solve (issue targets, one core): (a) a monoprotic acid,
//! (b) a 3-family mixture with Davies, (c) an 8-family mixture with one complex and the
//! extended Debye–Hückel model, (d) the 3-family mixture of (b) in a 0.5 mol/L sodium
//! chloride medium with SIT. The recipes are demo scenarios of our own.

use criterion::{Criterion, criterion_group, criterion_main};
use protolyte::{
    ActivityModel, Amount, Catalog, Complex, ComplexPart, Conditions, Constituent, Reagent, Recipe, System, Temperature,
};
use std::hint::black_box;

fn system(items: &[(&str, f64)], complexes: &[Complex], model: ActivityModel) -> System {
    let cat = Catalog::builtin();
    let mut r = Recipe::new();
    for (name, mm) in items {
        r.add(&cat.reagent(name).expect("reagent"), Amount::millimolar(*mm))
            .expect("amount");
    }
    r.add_complexes(complexes);
    r.compile(&Conditions::new(Temperature::celsius(25.0), model))
        .expect("compile")
}

fn bench(c: &mut Criterion) {
    let cat = Catalog::builtin();
    let a = system(&[("acetic acid", 10.0)], &[], ActivityModel::Ideal);
    c.bench_function("solve/a_monoprotic_ideal", |b| {
        b.iter(|| black_box(&a).solve().expect("solve"))
    });
    let a2 = system(&[("acetic acid", 10.0)], &[], ActivityModel::Davies);
    c.bench_function("solve/a_monoprotic_davies", |b| {
        b.iter(|| black_box(&a2).solve().expect("solve"))
    });

    let bsys = system(
        &[
            ("acetic acid", 5.0),
            ("sodium dihydrogen phosphate", 3.0),
            ("ammonium chloride", 2.0),
            ("sodium hydroxide", 4.0),
        ],
        &[],
        ActivityModel::Davies,
    );
    c.bench_function("solve/b_three_families_davies", |b| {
        b.iter(|| black_box(&bsys).solve().expect("solve"))
    });

    // The same three families in a sodium chloride medium, with SIT (γ depends on the
    // composition, iterated to self-consistency inside the ionic-strength iteration).
    let dsys = system(
        &[
            ("acetic acid", 5.0),
            ("sodium dihydrogen phosphate", 3.0),
            ("ammonium chloride", 2.0),
            ("sodium hydroxide", 4.0),
            ("sodium chloride", 500.0),
        ],
        &[],
        ActivityModel::Sit,
    );
    c.bench_function("solve/d_three_families_sit", |b| {
        b.iter(|| black_box(&dsys).solve().expect("solve"))
    });

    // Eight families and one complex (calcium–EDTA).
    let calcium = cat.ion("calcium").expect("ion");
    let edta = cat.protolyte("edta").expect("edta");
    let cay = Complex::new(
        "CaY2-",
        vec![
            (ComplexPart::Ion(calcium.clone()), 1),
            (ComplexPart::Base(edta.clone()), 1),
        ],
        10.65,
    )
    .expect("complex");
    let ca_salt = Reagent::new(
        "calcium chloride (bench)",
        None,
        vec![
            (Constituent::Ion(calcium), 1),
            (Constituent::Ion(cat.ion("chloride").expect("cl")), 2),
        ],
    )
    .expect("reagent");
    let mut r = Recipe::new();
    for (name, mm) in [
        ("acetic acid", 2.0),
        ("sodium dihydrogen phosphate", 1.0),
        ("ammonium chloride", 1.0),
        ("sodium bicarbonate", 2.0),
        ("citric acid", 0.5),
        ("boric acid", 1.0),
        ("glycine", 1.0),
        ("disodium edta dihydrate", 0.5),
        ("sodium hydroxide", 6.0),
    ] {
        r.add(&cat.reagent(name).expect(name), Amount::millimolar(mm))
            .expect("amount");
    }
    r.add(&ca_salt, Amount::millimolar(0.4)).expect("amount");
    r.add_complex(&cay);
    let csys = r
        .compile(&Conditions::new(
            Temperature::celsius(25.0),
            ActivityModel::ExtendedDebyeHuckel,
        ))
        .expect("compile");
    assert_eq!(csys.families().len(), 8);
    c.bench_function("solve/c_eight_families_complex_edh", |b| {
        b.iter(|| black_box(&csys).solve().expect("solve"))
    });
}

criterion_group!(benches, bench);
criterion_main!(benches);
