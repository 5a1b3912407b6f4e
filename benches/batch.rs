//! Batch throughput: 100,000 recipes of three acid–base families each (Davies), as JSON Lines
//! in and out, through `protolyte::document::batch::run` (the code behind `protolyte batch`).
//!
//! The recipes are invented (a sweep of phosphate, acetate and ammonium buffers with salt).

use std::hint::black_box;
use std::time::Instant;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use protolyte::Catalog;
use protolyte::document::batch::{BatchOptions, run};

#[path = "common/screen.rs"]
mod screen;
use screen::recipe_line;

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
