//! Criterion benchmarks of the analyses (issue 3 target: a 1,000-point titration curve in
//! at most 1 ms on one core). The recipes are demo scenarios of our own.

use criterion::{Criterion, criterion_group, criterion_main};
use protolyte::analysis::Titration;
use protolyte::{ActivityModel, Amount, Catalog, Conditions, Recipe, Temperature, Volume};
use std::hint::black_box;

fn bench(c: &mut Criterion) {
    let cat = Catalog::builtin();
    let mut acid = Recipe::new();
    acid.add(&cat.reagent("acetic acid").expect("reagent"), Amount::molar(0.1))
        .expect("amount");
    let mut base = Recipe::new();
    base.add(&cat.reagent("sodium hydroxide").expect("reagent"), Amount::molar(0.1))
        .expect("amount");
    let t = Titration::new(&acid, Volume::milliliters(25.0), &base, &Conditions::default()).expect("titration");
    let volumes: Vec<Volume> = (0..1000)
        .map(|i| Volume::milliliters(50.0 * i as f64 / 999.0))
        .collect();
    c.bench_function("titration/1000_points", |b| {
        b.iter(|| black_box(&t).curve(black_box(&volumes)).expect("curve"))
    });
    c.bench_function("titration/1000_points_lean", |b| {
        b.iter(|| black_box(&t).ph_curve(black_box(&volumes)).expect("curve"))
    });
    let ideal = Conditions::new(Temperature::celsius(25.0), ActivityModel::Ideal);
    let ti = Titration::new(&acid, Volume::milliliters(25.0), &base, &ideal).expect("titration");
    c.bench_function("titration/1000_points_ideal", |b| {
        b.iter(|| black_box(&ti).curve(black_box(&volumes)).expect("curve"))
    });
    c.bench_function("titration/1000_ph_only", |b| {
        b.iter(|| {
            volumes
                .iter()
                .map(|v| black_box(&t).ph_at(*v).expect("ph"))
                .sum::<f64>()
        })
    });
}

criterion_group!(benches, bench);
criterion_main!(benches);
