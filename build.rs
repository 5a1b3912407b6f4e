//! Reads the built-in catalogue files (`data/*.toml`) with the library's own TOML reader
//! (`src/data/format.rs`, compiled here on its own) and writes them, as read, in a compact
//! binary form (`postcard`) to `OUT_DIR/builtin-catalog.postcard`. The library decodes that
//! form instead of parsing the TOML each time a process reads the built-in catalogue; every
//! check of the entries still runs in the library, as for a user's file. A file that does not
//! parse is written as its parse error, which the library reports as it would for a user's
//! file (`Catalog::load_problems`).

#[path = "src/data/format.rs"]
#[allow(dead_code)]
mod format;

use std::path::PathBuf;

fn main() {
    println!("cargo::rerun-if-changed=build.rs");
    println!("cargo::rerun-if-changed=src/data/format.rs");
    let root = PathBuf::from(std::env::var_os("CARGO_MANIFEST_DIR").expect("cargo sets CARGO_MANIFEST_DIR"));
    let mut packed: format::PackedBuiltin = Vec::new();
    for path in format::BUILTIN_PATHS {
        println!("cargo::rerun-if-changed={path}");
        let text = match std::fs::read_to_string(root.join(path)) {
            Ok(t) => t,
            Err(e) => panic!("cannot read the built-in catalogue file {path}: {e}"),
        };
        packed.push(format::parse(&text).map(format::PackedFile::pack));
    }
    let bytes = match postcard::to_allocvec(&packed) {
        Ok(b) => b,
        Err(e) => panic!("cannot encode the built-in catalogue: {e}"),
    };
    let out = PathBuf::from(std::env::var_os("OUT_DIR").expect("cargo sets OUT_DIR")).join("builtin-catalog.postcard");
    if let Err(e) = std::fs::write(&out, bytes) {
        panic!("cannot write {}: {e}", out.display());
    }
}
