//! Fuzz target: any bytes as a recipe or titration document (JSON or TOML) → parse → compile →
//! solve, directly and as a batch line. The oracles are those of `tests/fuzz_check/mod.rs`
//! (shared with `cargo test`): an error or finite numbers that keep the residual promise,
//! sign sanity, one batch record; no panic, no hang.
#![no_main]

use libfuzzer_sys::fuzz_target;

#[path = "../../tests/fuzz_check/mod.rs"]
mod fuzz_check;

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else { return };
    fuzz_check::check_text(text);
});
