//! The protolyte C library: aqueous acid–base speciation for programs written in C, C++, C#
//! or anything else that links a C library.
//!
//! Two ways in:
//!
//! - **Documents.** [`ptl_run_document`] takes any protolyte document as text (a recipe,
//!   titration, design, fit, calibration or measured-titration request in JSON or TOML, told
//!   by its `format` field; the format is described in `docs/recipe-format.md`) and returns
//!   its result document as JSON, the same document `protolyte
//!   solve|titrate|design|fit|calibrate|analyze --json` writes.
//! - **The hot path.** [`ptl_system_new`] compiles a recipe document once into an opaque
//!   [`PtlSystem`]; [`ptl_system_solve_amounts`] and [`ptl_system_solve_totals`] then solve
//!   it for many compositions (reagent amounts or component totals, one row each) into
//!   arrays the caller owns.
//!
//! Every call returns an integer code (`PTL_OK` = 0, or one of the `PTL_ERR_*` codes) and, on
//! failure, leaves a message that says what and where for [`ptl_last_error`]. No Rust panic
//! crosses the boundary: each entry runs under `catch_unwind`, and a panic (a bug) returns
//! `PTL_ERR_INTERNAL`.
//!
//! Thread safety: every function may be called from any thread. A `PtlSystem` is never
//! changed after it is made, so one handle may be solved from several threads at once; it
//! must not be freed while another thread uses it. The last-error message is kept per
//! thread.

use std::cell::RefCell;
use std::ffi::{CStr, CString, c_char};
use std::panic::{AssertUnwindSafe, catch_unwind};

#[doc(hidden)]
#[path = "engine.rs"]
pub mod engine;

use engine::{Composition, Failure, Kind};

/// Success.
pub const PTL_OK: i32 = 0;
/// The document is not valid JSON or TOML, a value has the wrong type, or a string is not
/// UTF-8.
pub const PTL_ERR_SYNTAX: i32 = 1;
/// A value, name or field is refused, or an input is over a limit; the message names the
/// field.
pub const PTL_ERR_INPUT: i32 = 2;
/// A name is not in the catalogue (the message suggests the nearest one).
pub const PTL_ERR_UNKNOWN_NAME: i32 = 3;
/// The solver did not converge.
pub const PTL_ERR_NO_CONVERGENCE: i32 = 4;
/// Another refusal by the chemistry (an ionic strength or a pH past the solver's domain).
pub const PTL_ERR_CHEMISTRY: i32 = 5;
/// A wrong argument: a null pointer where one is required, or a size that does not fit.
pub const PTL_ERR_ARGUMENT: i32 = 6;
/// Some rows of a many-row solve failed: their `status` entries say why, their outputs are
/// NaN, and the other rows are solved.
pub const PTL_ERR_SOME_ROWS: i32 = 7;
/// The library failed internally (a bug; please report it with the input).
pub const PTL_ERR_INTERNAL: i32 = 99;

/// A recipe compiled once, to be solved for many compositions. Opaque: made by
/// [`ptl_system_new`], freed by [`ptl_system_free`].
pub struct PtlSystem {
    composition: Composition,
    reagent_names: Vec<CString>,
    total_names: Vec<CString>,
    species_names: Vec<CString>,
}

/// Where a many-row solve writes its results: arrays owned by the caller, each with one
/// entry per row (`species_molal`: rows × species, row-major). Any pointer but `ph` may be
/// null: that output is not written.
#[repr(C)]
pub struct PtlOutputs {
    /// pH (under the recipe's pH convention). Required.
    pub ph: *mut f64,
    /// −log₁₀ of the H⁺ molality.
    pub p_h_molal: *mut f64,
    /// Ionic strength, mol/kg.
    pub ionic_strength_mol_per_kg: *mut f64,
    /// Largest relative residual of every equation solved (at most 1e-10 unless the row has
    /// a warning that says otherwise).
    pub max_residual: *mut f64,
    /// Number of warnings of the row (solve the row's recipe document to read them).
    pub warnings: *mut u32,
    /// Every species' molality (mol/kg), in the order of [`ptl_system_species_name`].
    pub species_molal: *mut f64,
    /// `PTL_OK` or the error code of the row.
    pub status: *mut i32,
}

thread_local! {
    static LAST_ERROR: RefCell<CString> = RefCell::new(CString::default());
}

fn code_of(kind: Kind) -> i32 {
    match kind {
        Kind::Syntax => PTL_ERR_SYNTAX,
        Kind::Input => PTL_ERR_INPUT,
        Kind::UnknownName => PTL_ERR_UNKNOWN_NAME,
        Kind::NoConvergence => PTL_ERR_NO_CONVERGENCE,
        Kind::Chemistry => PTL_ERR_CHEMISTRY,
        Kind::Argument => PTL_ERR_ARGUMENT,
        Kind::Internal => PTL_ERR_INTERNAL,
    }
}

fn set_error(message: &str) {
    // A message never holds a NUL byte from us; one from the input is replaced.
    let c = CString::new(message.replace('\0', "\\0")).unwrap_or_default();
    LAST_ERROR.with(|e| *e.borrow_mut() = c);
}

/// Runs `f` under `catch_unwind`; its failure becomes an error code and the thread's last
/// error message.
fn guard(f: impl FnOnce() -> Result<i32, Failure>) -> i32 {
    match catch_unwind(AssertUnwindSafe(f)) {
        Ok(Ok(code)) => code,
        Ok(Err(failure)) => {
            set_error(&failure.message);
            code_of(failure.kind)
        }
        Err(_) => {
            set_error("protolyte failed internally (a bug; please report it with the input)");
            PTL_ERR_INTERNAL
        }
    }
}

fn argument(message: &str) -> Failure {
    Failure::new(Kind::Argument, message)
}

/// A C string argument as UTF-8 text.
///
/// # Safety
/// `p` is null or points to a NUL-terminated string.
unsafe fn text<'a>(p: *const c_char, what: &str) -> Result<&'a str, Failure> {
    if p.is_null() {
        return Err(argument(&format!("{what} is a null pointer")));
    }
    // SAFETY: the caller passes a NUL-terminated string (the function's contract).
    let c = unsafe { CStr::from_ptr(p) };
    c.to_str()
        .map_err(|e| Failure::new(Kind::Syntax, format!("{what} is not UTF-8 text: {e}")))
}

fn c_string(s: &str) -> CString {
    CString::new(s.replace('\0', "\\0")).unwrap_or_default()
}

/// The library's version, e.g. `"0.1.0"` (a static string; do not free it).
#[unsafe(no_mangle)]
pub extern "C" fn ptl_version() -> *const c_char {
    static VERSION: &CStr = match CStr::from_bytes_with_nul(concat!(env!("CARGO_PKG_VERSION"), "\0").as_bytes()) {
        Ok(v) => v,
        Err(_) => c"unknown",
    };
    VERSION.as_ptr()
}

/// The message of the last failed call on this thread (an empty string if none failed).
/// The pointer stays valid until the next failing call on this thread; do not free it.
#[unsafe(no_mangle)]
pub extern "C" fn ptl_last_error() -> *const c_char {
    LAST_ERROR.with(|e| e.borrow().as_ptr())
}

/// Frees a string returned by this library ([`ptl_run_document`]). Null is accepted.
///
/// # Safety
/// `s` is null or a string returned by this library and not yet freed.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn ptl_string_free(s: *mut c_char) {
    if !s.is_null() {
        // SAFETY: `s` came from `CString::into_raw` in this library (the contract).
        drop(unsafe { CString::from_raw(s) });
    }
}

/// Runs a document of any kind (recipe, titration, design, fit, calibration or
/// measured-titration request; JSON or TOML, told by its `format` field) and sets `*result`
/// to its result document as JSON (what `protolyte solve|titrate|design|fit|calibrate|analyze
/// --json` writes), a string the caller frees with [`ptl_string_free`]. The data file of a
/// measured-titration request is read from the working directory. On failure `*result` is set to null and the code
/// and [`ptl_last_error`] say why.
///
/// # Safety
/// `document` is null or a NUL-terminated string; `result` is null or points to writable
/// storage for one pointer.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn ptl_run_document(document: *const c_char, result: *mut *mut c_char) -> i32 {
    guard(|| {
        if result.is_null() {
            return Err(argument("result is a null pointer"));
        }
        // SAFETY: checked non-null; the caller gives writable storage.
        unsafe { *result = std::ptr::null_mut() };
        // SAFETY: the contract of this function.
        let doc = unsafe { text(document, "document") }?;
        let out = engine::run_document(doc)?;
        // SAFETY: as above.
        unsafe { *result = c_string(&out).into_raw() };
        Ok(PTL_OK)
    })
}

/// Compiles the reagents, complexes and conditions of a recipe document (JSON or TOML; its
/// amounts are not used) and sets `*system` to a new handle, freed with [`ptl_system_free`].
/// On failure `*system` is set to null.
///
/// # Safety
/// `recipe` is null or a NUL-terminated string; `system` is null or points to writable
/// storage for one pointer.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn ptl_system_new(recipe: *const c_char, system: *mut *mut PtlSystem) -> i32 {
    guard(|| {
        if system.is_null() {
            return Err(argument("system is a null pointer"));
        }
        // SAFETY: checked non-null.
        unsafe { *system = std::ptr::null_mut() };
        // SAFETY: the contract of this function.
        let doc = engine::recipe_doc(unsafe { text(recipe, "recipe") }?)?;
        let composition = Composition::new(&doc)?;
        let sys = composition.system();
        let handle = PtlSystem {
            reagent_names: composition.reagent_names().iter().map(|n| c_string(n)).collect(),
            total_names: sys.components()[1..].iter().map(|c| c_string(&c.name)).collect(),
            species_names: sys.species().iter().map(|s| c_string(&s.name)).collect(),
            composition,
        };
        // SAFETY: checked non-null.
        unsafe { *system = Box::into_raw(Box::new(handle)) };
        Ok(PTL_OK)
    })
}

/// Frees a handle made by [`ptl_system_new`]. Null is accepted.
///
/// # Safety
/// `system` is null or a handle from [`ptl_system_new`] not yet freed and not in use.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn ptl_system_free(system: *mut PtlSystem) {
    if !system.is_null() {
        // A panic in a destructor is caught too (the function returns nothing to say so).
        let _ = catch_unwind(AssertUnwindSafe(|| {
            // SAFETY: from `Box::into_raw` in `ptl_system_new` (the contract).
            drop(unsafe { Box::from_raw(system) });
        }));
    }
}

/// # Safety
/// `system` is null or a live handle.
unsafe fn handle<'a>(system: *const PtlSystem) -> Option<&'a PtlSystem> {
    // SAFETY: the caller's contract.
    unsafe { system.as_ref() }
}

fn name_at(names: &[CString], i: usize) -> *const c_char {
    names.get(i).map_or(std::ptr::null(), |n| n.as_ptr())
}

/// The number of reagent lines of the recipe: the columns of [`ptl_system_solve_amounts`]
/// (0 for a null handle).
///
/// # Safety
/// `system` is null or a live handle.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn ptl_system_reagent_count(system: *const PtlSystem) -> usize {
    // SAFETY: the contract.
    unsafe { handle(system) }.map_or(0, |s| s.reagent_names.len())
}

/// The name of reagent line `i`, or null past the end. Owned by the handle.
///
/// # Safety
/// `system` is null or a live handle.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn ptl_system_reagent_name(system: *const PtlSystem, i: usize) -> *const c_char {
    // SAFETY: the contract.
    unsafe { handle(system) }.map_or(std::ptr::null(), |s| name_at(&s.reagent_names, i))
}

/// The number of components whose totals are given to [`ptl_system_solve_totals`]: every
/// component of the compiled system except H⁺ (0 for a null handle).
///
/// # Safety
/// `system` is null or a live handle.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn ptl_system_total_count(system: *const PtlSystem) -> usize {
    // SAFETY: the contract.
    unsafe { handle(system) }.map_or(0, |s| s.total_names.len())
}

/// The name of total column `i` (a family's or an ion's name), or null past the end.
///
/// # Safety
/// `system` is null or a live handle.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn ptl_system_total_name(system: *const PtlSystem, i: usize) -> *const c_char {
    // SAFETY: the contract.
    unsafe { handle(system) }.map_or(std::ptr::null(), |s| name_at(&s.total_names, i))
}

/// The number of species (the columns of `species_molal`; 0 for a null handle).
///
/// # Safety
/// `system` is null or a live handle.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn ptl_system_species_count(system: *const PtlSystem) -> usize {
    // SAFETY: the contract.
    unsafe { handle(system) }.map_or(0, |s| s.species_names.len())
}

/// The name of species `i` (e.g. `"HPO42-"`), or null past the end.
///
/// # Safety
/// `system` is null or a live handle.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn ptl_system_species_name(system: *const PtlSystem, i: usize) -> *const c_char {
    // SAFETY: the contract.
    unsafe { handle(system) }.map_or(std::ptr::null(), |s| name_at(&s.species_names, i))
}

/// # Safety
/// As for [`ptl_system_solve_amounts`].
unsafe fn solve_many(
    system: *const PtlSystem,
    rows: usize,
    input: *const f64,
    amounts: bool,
    threads: u32,
    outputs: *const PtlOutputs,
) -> i32 {
    guard(|| {
        // SAFETY: the contract.
        let sys = unsafe { handle(system) }.ok_or_else(|| argument("system is a null pointer"))?;
        // SAFETY: the contract.
        let out = unsafe { outputs.as_ref() }.ok_or_else(|| argument("outputs is a null pointer"))?;
        if out.ph.is_null() {
            return Err(argument("outputs.ph is a null pointer"));
        }
        let comp = &sys.composition;
        let columns = if amounts {
            comp.reagent_names().len()
        } else {
            comp.total_columns()
        };
        let len = rows
            .checked_mul(columns)
            .ok_or_else(|| argument("rows × columns overflows"))?;
        let species = sys.species_names.len();
        if !out.species_molal.is_null() && rows.checked_mul(species).is_none() {
            return Err(argument("rows × species overflows"));
        }
        if rows == 0 {
            return Ok(PTL_OK);
        }
        let values: &[f64] = if len == 0 {
            &[]
        } else {
            if input.is_null() {
                return Err(argument("the input array is a null pointer"));
            }
            // SAFETY: the caller gives rows × columns values (the contract).
            unsafe { std::slice::from_raw_parts(input, len) }
        };
        if columns == 0 {
            return Err(argument("the recipe has no reagent lines or totals to vary"));
        }
        let results = comp.solve_many(values, amounts, threads as usize, !out.species_molal.is_null())?;
        let mut first: Option<(usize, Failure)> = None;
        let mut failed = 0usize;
        for (i, r) in results.into_iter().enumerate() {
            // SAFETY (every write below): the caller gives `rows` entries per non-null output
            // and rows × species for `species_molal` (the contract); i < rows.
            let (status, row) = match r {
                Ok(row) => (PTL_OK, Some(row)),
                Err(f) => {
                    failed += 1;
                    let code = code_of(f.kind);
                    if first.is_none() {
                        first = Some((i, f));
                    }
                    (code, None)
                }
            };
            let nan = f64::NAN;
            // SAFETY: see above.
            unsafe {
                *out.ph.add(i) = row.as_ref().map_or(nan, |r| r.ph);
                if !out.p_h_molal.is_null() {
                    *out.p_h_molal.add(i) = row.as_ref().map_or(nan, |r| r.p_h_molal);
                }
                if !out.ionic_strength_mol_per_kg.is_null() {
                    *out.ionic_strength_mol_per_kg.add(i) = row.as_ref().map_or(nan, |r| r.ionic_strength_molal);
                }
                if !out.max_residual.is_null() {
                    *out.max_residual.add(i) = row.as_ref().map_or(nan, |r| r.max_residual);
                }
                if !out.warnings.is_null() {
                    *out.warnings.add(i) = row.as_ref().map_or(0, |r| r.warnings);
                }
                if !out.species_molal.is_null() {
                    for k in 0..species {
                        *out.species_molal.add(i * species + k) = row
                            .as_ref()
                            .and_then(|r| r.species_molal.get(k).copied())
                            .unwrap_or(nan);
                    }
                }
                if !out.status.is_null() {
                    *out.status.add(i) = status;
                }
            }
        }
        match first {
            None => Ok(PTL_OK),
            Some((i, f)) => {
                set_error(&format!(
                    "{failed} of {rows} rows failed; the first, row {i}: {}",
                    f.message
                ));
                Ok(PTL_ERR_SOME_ROWS)
            }
        }
    })
}

/// Solves `rows` compositions given as reagent amounts in mol/L: `amounts` holds rows ×
/// [`ptl_system_reagent_count`] values, row-major, one column per reagent line of the
/// recipe. Results go to `outputs`. Rows are solved on up to `threads` threads (1: the
/// calling thread only; 0: one per core), each solve starting from the previous row's
/// result; the threads are joined before the call returns. Returns `PTL_OK`,
/// `PTL_ERR_SOME_ROWS` (see `outputs->status`; [`ptl_last_error`] names the first failed
/// row), or an error code for the whole call.
///
/// # Safety
/// `system` is null or a live handle; `amounts` points to rows × reagent-count doubles;
/// `outputs` is null or points to a [`PtlOutputs`] whose non-null arrays have room for
/// `rows` entries (`species_molal`: rows × [`ptl_system_species_count`]).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn ptl_system_solve_amounts(
    system: *const PtlSystem,
    rows: usize,
    amounts: *const f64,
    threads: u32,
    outputs: *const PtlOutputs,
) -> i32 {
    // SAFETY: the same contract.
    unsafe { solve_many(system, rows, amounts, true, threads, outputs) }
}

/// Solves `rows` compositions given as component totals in mol/kg of water: `totals` holds
/// rows × [`ptl_system_total_count`] values, row-major, in the order of
/// [`ptl_system_total_name`] (H⁺ is not given: the charge balance sets it). Otherwise as
/// [`ptl_system_solve_amounts`].
///
/// # Safety
/// As for [`ptl_system_solve_amounts`], with rows × total-count doubles in `totals`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn ptl_system_solve_totals(
    system: *const PtlSystem,
    rows: usize,
    totals: *const f64,
    threads: u32,
    outputs: *const PtlOutputs,
) -> i32 {
    // SAFETY: the same contract.
    unsafe { solve_many(system, rows, totals, false, threads, outputs) }
}
