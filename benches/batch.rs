//! Batch throughput: 100,000 recipes of three acid–base families each (Davies), as JSON Lines
//! in and out, through `protolyte::document::batch::run` (the code behind `protolyte batch`).
//!
//! The recipes are invented (a sweep of phosphate, acetate and ammonium buffers with salt).

use std::hint::black_box;
use std::time::Instant;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use protolyte::Catalog;
use protolyte::document::batch::{BatchOptions, run};

/// The i-th invented recipe: three families (phosphate, acetate, ammonium) and salt.
fn recipe_line(i: usize) -> String {
    let f = |k: usize, lo: f64, hi: f64| lo + (hi - lo) * (((i * 7919 + k * 104_729) % 1000) as f64 / 999.0);
    format!(
        concat!(
            r#"{{"name":"sample {}","temperature_celsius":25,"activity":"davies","reagents":["#,
            r#"{{"reagent":"sodium dihydrogen phosphate","millimolar":{:.4}}},"#,
            r#"{{"reagent":"disodium hydrogen phosphate","millimolar":{:.4}}},"#,
            r#"{{"reagent":"acetic acid","millimolar":{:.4}}},"#,
            r#"{{"reagent":"ammonium chloride","millimolar":{:.4}}},"#,
            r#"{{"reagent":"sodium chloride","millimolar":{:.4}}}]}}"#
        ),
        i,
        f(1, 1.0, 50.0),
        f(2, 1.0, 50.0),
        f(3, 0.1, 20.0),
        f(4, 0.1, 20.0),
        f(5, 0.0, 150.0)
    )
}

fn input(n: usize) -> Vec<u8> {
    let mut s = String::with_capacity(n * 300);
    for i in 0..n {
        s.push_str(&recipe_line(i));
        s.push('\n');
    }
    s.into_bytes()
}

fn bench(c: &mut Criterion) {
    let n = 100_000;
    let data = input(n);
    let cat = Catalog::builtin();
    // One timed run printed as recipes per second, then the criterion measurement.
    let t0 = Instant::now();
    let s = run(&data[..], std::io::sink(), &cat, &BatchOptions::default(), |_, _| {}).expect("batch");
    let secs = t0.elapsed().as_secs_f64();
    assert_eq!((s.records, s.failed), (n, 0));
    println!("batch: {n} recipes in {secs:.3} s = {:.0} recipes/s", n as f64 / secs);

    let mut g = c.benchmark_group("batch");
    g.sample_size(10);
    g.throughput(Throughput::Elements(n as u64));
    g.bench_function("100k_three_families_davies", |b| {
        b.iter(|| {
            run(
                black_box(&data[..]),
                std::io::sink(),
                &cat,
                &BatchOptions::default(),
                |_, _| {},
            )
            .expect("batch")
        })
    });
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
