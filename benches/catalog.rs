//! Criterion benchmark of reading the built-in catalogue (issue 8 target: ≤ 5 ms): decoding the
//! six data files as the build script embedded them (parsed from TOML at build time), checking
//! every entry and building every definition, as `Catalog::builtin()` does once per process
//! (the catalogue is dropped inside the measurement too). `bash benches/callgrind.sh
//! read_builtin_catalog` counts its instructions.

use criterion::{Criterion, criterion_group, criterion_main};
use protolyte::Catalog;
use std::hint::black_box;

fn bench(c: &mut Criterion) {
    c.bench_function("catalog/builtin_parse", |b| {
        b.iter(|| {
            let cat = Catalog::read_builtin();
            assert!(cat.load_problems().is_empty());
            black_box(cat)
        })
    });
    let cat = Catalog::builtin();
    c.bench_function("catalog/builtin_clone", |b| b.iter(|| black_box(Catalog::builtin())));
    c.bench_function("catalog/lookup_synonym", |b| {
        b.iter(|| {
            black_box(&cat)
                .reagent(black_box("Sodium Dihydrogen Phosphate"))
                .expect("found")
        })
    });
}

criterion_group!(benches, bench);
criterion_main!(benches);
