//! The checked-in header `capi/include/protolyte.h` is what cbindgen generates from the code.
//! Regenerate it after changing the C interface with
//! `PROTOLYTE_WRITE_HEADER=1 cargo test -p protolyte-c --test header`.

use std::path::Path;

#[test]
fn header_matches_the_code() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR"));
    let config = cbindgen::Config::from_file(dir.join("cbindgen.toml")).expect("cbindgen.toml reads");
    let mut generated = Vec::new();
    cbindgen::Builder::new()
        .with_crate(dir)
        .with_config(config)
        .generate()
        .expect("cbindgen generates the header")
        .write(&mut generated);
    let generated = String::from_utf8(generated).expect("the header is UTF-8");
    let path = dir.join("include/protolyte.h");
    if std::env::var_os("PROTOLYTE_WRITE_HEADER").is_some() {
        std::fs::write(&path, &generated).expect("header written");
    }
    let checked_in = std::fs::read_to_string(&path).unwrap_or_default();
    assert!(
        checked_in == generated,
        "capi/include/protolyte.h is out of date with the code; regenerate it with \
         PROTOLYTE_WRITE_HEADER=1 cargo test -p protolyte-c --test header"
    );
}
