//! Instruction-count driver for `benches/callgrind.sh`: runs one case a given number of times
//! inside `measured`, the only function callgrind collects in (`--toggle-collect`), so that
//! set-up (catalogue, compilation) is left out and the count per repetition does not depend on
//! the machine's load. The cases are those of `benches/solve.rs` and `benches/analysis.rs`
//! (demo scenarios of our own). Natively it prints the heap allocations per repetition
//! (a counting global allocator).
//!
//! Usage: `icount CASE REPETITIONS` with CASE one of `monoprotic_davies`,
//! `three_families_davies`, `three_families_davies_records`, `three_families_davies_workspace`, `eight_families_complex_edh`, `titration_1000_davies`,
//! `titration_1000_davies_lean`, `lookup_synonym`, `general_three_families_davies`, `read_builtin_catalog` (the built-in
//! catalogue read from its embedded files, as `Catalog::builtin` does once). Run natively it only checks that the case works.

use protolyte::analysis::Titration;
use protolyte::solve::Workspace;
use protolyte::{
    ActivityModel, Amount, Catalog, Complex, ComplexPart, Conditions, Constituent, PathChoice, Reagent, Recipe, Solver,
    System, Temperature, Volume,
};
use std::alloc::{GlobalAlloc, Layout, System as Heap};
use std::hint::black_box;
use std::sync::atomic::{AtomicUsize, Ordering};

/// Counts heap allocations (and reallocations), to report allocations per repetition.
struct Counting;
static ALLOCATIONS: AtomicUsize = AtomicUsize::new(0);

// SAFETY: every call is forwarded unchanged to the system allocator; only a counter is added.
unsafe impl GlobalAlloc for Counting {
    unsafe fn alloc(&self, layout: Layout) -> *mut u8 {
        ALLOCATIONS.fetch_add(1, Ordering::Relaxed);
        // SAFETY: the caller's contract is passed on.
        unsafe { Heap.alloc(layout) }
    }
    unsafe fn alloc_zeroed(&self, layout: Layout) -> *mut u8 {
        ALLOCATIONS.fetch_add(1, Ordering::Relaxed);
        // SAFETY: the caller's contract is passed on.
        unsafe { Heap.alloc_zeroed(layout) }
    }
    unsafe fn realloc(&self, ptr: *mut u8, layout: Layout, new_size: usize) -> *mut u8 {
        ALLOCATIONS.fetch_add(1, Ordering::Relaxed);
        // SAFETY: the caller's contract is passed on.
        unsafe { Heap.realloc(ptr, layout, new_size) }
    }
    unsafe fn dealloc(&self, ptr: *mut u8, layout: Layout) {
        // SAFETY: the caller's contract is passed on.
        unsafe { Heap.dealloc(ptr, layout) }
    }
}

#[global_allocator]
static GLOBAL: Counting = Counting;

fn system(items: &[(&str, f64)], model: ActivityModel) -> System {
    let cat = Catalog::builtin();
    let mut r = Recipe::new();
    for (name, mm) in items {
        r.add(&cat.reagent(name).expect("reagent"), Amount::millimolar(*mm))
            .expect("amount");
    }
    r.compile(&Conditions::new(Temperature::celsius(25.0), model))
        .expect("compile")
}

const THREE: [(&str, f64); 4] = [
    ("acetic acid", 5.0),
    ("sodium dihydrogen phosphate", 3.0),
    ("ammonium chloride", 2.0),
    ("sodium hydroxide", 4.0),
];

fn eight_families() -> System {
    let cat = Catalog::builtin();
    let calcium = cat.ion("calcium").expect("ion");
    let edta = cat.protolyte("edta").expect("edta");
    let cay = Complex::new(
        "CaY2-",
        vec![(ComplexPart::Ion(calcium.clone()), 1), (ComplexPart::Base(edta), 1)],
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
    r.compile(&Conditions::new(
        Temperature::celsius(25.0),
        ActivityModel::ExtendedDebyeHuckel,
    ))
    .expect("compile")
}

/// The measured region: `n` repetitions of `f` (after one unmeasured repetition, so that
/// buffers kept between repetitions have grown), with the allocations per repetition printed.
fn measured<F: FnMut() -> f64>(n: usize, mut f: F) -> f64 {
    let mut acc = f();
    let before = ALLOCATIONS.load(Ordering::Relaxed);
    acc += repeat(n, &mut f);
    let count = ALLOCATIONS.load(Ordering::Relaxed) - before;
    println!("allocations per repetition: {}", count as f64 / n.max(1) as f64);
    acc
}

/// The region callgrind collects in.
#[inline(never)]
fn repeat<F: FnMut() -> f64>(n: usize, f: &mut F) -> f64 {
    let mut acc = 0.0;
    for _ in 0..n {
        acc += f();
    }
    acc
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    // `cargo bench` passes `--bench`: then run every case once as a check.
    if args.len() < 3 {
        for case in CASES {
            run(case, 1);
        }
        return;
    }
    let n: usize = args[2].parse().expect("repetitions");
    run(&args[1], n);
}

const CASES: [&str; 10] = [
    "monoprotic_davies",
    "three_families_davies",
    "three_families_davies_records",
    "three_families_davies_workspace",
    "eight_families_complex_edh",
    "titration_1000_davies",
    "titration_1000_davies_lean",
    "lookup_synonym",
    "general_three_families_davies",
    "read_builtin_catalog",
];

fn run(case: &str, n: usize) {
    let acc = match case {
        "monoprotic_davies" => {
            let s = system(&[("acetic acid", 10.0)], ActivityModel::Davies);
            measured(n, || black_box(&s).solve().expect("solve").ph())
        }
        "three_families_davies" => {
            let s = system(&THREE, ActivityModel::Davies);
            measured(n, || black_box(&s).solve().expect("solve").ph())
        }
        "three_families_davies_records" => {
            // The full solve with every record read (species, families, residuals), which the
            // result assembles on first access.
            let s = system(&THREE, ActivityModel::Davies);
            measured(n, || {
                let eq = black_box(&s).solve().expect("solve");
                let species: f64 = eq.species().iter().map(|x| x.activity).sum();
                let fractions: f64 = eq.families().iter().map(|f| f.fractions[0]).sum();
                eq.ph() + species + fractions + eq.residuals().max_relative()
            })
        }
        "three_families_davies_workspace" => {
            // The same solve through `Solver::solve_ph` in a reused workspace, each repetition
            // started cold (as `three_families_davies`).
            let s = system(&THREE, ActivityModel::Davies);
            let solver = Solver::default();
            let mut ws = Workspace::new();
            measured(n, || {
                ws.forget_start();
                solver.solve_ph(black_box(&s), &mut ws).expect("solve").ph
            })
        }
        "general_three_families_davies" => {
            let s = system(&THREE, ActivityModel::Davies);
            let solver = Solver::default().path(PathChoice::General);
            measured(n, || solver.solve(black_box(&s)).expect("solve").ph())
        }
        "eight_families_complex_edh" => {
            let s = eight_families();
            measured(n, || black_box(&s).solve().expect("solve").ph())
        }
        "titration_1000_davies" | "titration_1000_davies_lean" => {
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
            if case == "titration_1000_davies_lean" {
                // The lean curve: pH, dpH/dv and I per point, no `Equilibrium` per point.
                measured(n, || {
                    let c = black_box(&t).ph_curve(black_box(&volumes)).expect("curve");
                    c.last().map_or(0.0, |p| p.ph)
                })
            } else {
                measured(n, || {
                    let c = black_box(&t).curve(black_box(&volumes)).expect("curve");
                    c.last().map_or(0.0, |p| p.ph)
                })
            }
        }
        "lookup_synonym" => {
            let cat = Catalog::builtin();
            measured(n, || {
                let r = black_box(&cat)
                    .reagent(black_box("Sodium Dihydrogen Phosphate"))
                    .expect("found");
                r.molar_mass_g_per_mol().unwrap_or(0.0)
            })
        }
        "read_builtin_catalog" => measured(n, || {
            let cat = Catalog::read_builtin();
            assert!(cat.load_problems().is_empty());
            black_box(cat).entries().len() as f64
        }),
        other => panic!("unknown case {other}; one of {CASES:?}"),
    };
    black_box(acc);
}
