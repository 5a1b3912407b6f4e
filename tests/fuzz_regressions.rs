//! Inputs the fuzz targets (`fuzz/fuzz_targets/`) found or were seeded with, kept as
//! regression tests: each file in `tests/fuzz_inputs/` goes through the same oracles as the
//! fuzzer (`tests/fuzz_check/mod.rs`): read as a recipe or titration document, solved directly
//! and as a batch line, it must end in an error or in finite numbers that meet the residual
//! and sign checks, never a panic, a NaN or a lost batch record.
#![cfg(feature = "batch")]

mod fuzz_check;

#[test]
fn every_kept_fuzz_input_ends_in_an_error_or_checked_numbers() {
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fuzz_inputs");
    let mut count = 0;
    let mut entries: Vec<_> = std::fs::read_dir(&dir)
        .expect("tests/fuzz_inputs exists")
        .map(|e| e.expect("entry").path())
        .collect();
    entries.sort();
    for path in entries {
        let bytes = std::fs::read(&path).expect("readable");
        if let Ok(text) = std::str::from_utf8(&bytes) {
            let r = std::panic::catch_unwind(|| fuzz_check::check_text(text));
            assert!(r.is_ok(), "{} fails its checks", path.display());
        }
        count += 1;
    }
    assert!(count > 0, "no inputs in {}", dir.display());
}
