//! Compiles `tests/c/protolyte_test.c` with gcc against the library and the checked-in
//! header, and runs it under valgrind (any memory error or leak fails the test). Needs `gcc`
//! and `valgrind` on the PATH (the library is built by `cargo build -p protolyte-c --lib`); `.ci/run` installs them where they are missing.

use std::path::{Path, PathBuf};
use std::process::Command;

/// target/<profile>/, where cargo put libprotolyte_c.so before running this test.
fn library_dir() -> PathBuf {
    let exe = std::env::current_exe().expect("test executable path");
    exe.parent()
        .and_then(Path::parent)
        .expect("target/<profile>/")
        .to_path_buf()
}

#[test]
fn c_program_passes_under_valgrind() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR"));
    let lib = library_dir();
    // Integration tests link the rlib; the shared library is built here (the same profile).
    let status = Command::new(env!("CARGO"))
        .args(["build", "-p", "protolyte-c", "--lib"])
        .args(if lib.ends_with("release") {
            &["--release"][..]
        } else {
            &[][..]
        })
        .current_dir(dir)
        .status()
        .expect("cargo runs");
    assert!(status.success(), "cargo build -p protolyte-c failed");
    assert!(
        lib.join("libprotolyte_c.so").exists(),
        "libprotolyte_c.so not found in {}",
        lib.display()
    );
    let exe = PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("protolyte_test");
    let status = Command::new("gcc")
        .args(["-std=c11", "-Wall", "-Wextra", "-Werror", "-g", "-o"])
        .arg(&exe)
        .arg(dir.join("tests/c/protolyte_test.c"))
        .arg("-I")
        .arg(dir.join("include"))
        .arg("-L")
        .arg(&lib)
        .arg(format!("-Wl,-rpath,{}", lib.display()))
        .args(["-lprotolyte_c", "-lm"])
        .status()
        .expect("gcc runs");
    assert!(status.success(), "gcc failed to compile the C test program");

    let out = Command::new("valgrind")
        .args([
            "--error-exitcode=3",
            "--leak-check=full",
            // "Possibly lost" is left out: the built-in catalogue is read once into a static
            // (kept for the life of the process, by design), and its hash tables point into
            // the middle of their blocks, which valgrind reports as possibly lost at exit.
            "--errors-for-leak-kinds=definite,indirect",
            "--quiet",
        ])
        .arg(&exe)
        .output()
        .expect("valgrind runs");
    let stdout = String::from_utf8_lossy(&out.stdout);
    let stderr = String::from_utf8_lossy(&out.stderr);
    println!("{stdout}");
    eprintln!("{stderr}");
    assert!(
        out.status.success(),
        "the C test program failed under valgrind (exit {:?})",
        out.status.code()
    );
    assert!(stdout.contains(" passed, 0 failed"), "the C program ran no checks");
    assert!(!stderr.contains("Invalid"), "valgrind reported an invalid access");
}
