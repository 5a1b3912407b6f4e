/*
 * protolyte: aqueous acid-base speciation, the C interface.
 *
 * Conventions
 * - Every call that can fail returns an int32_t code: PTL_OK (0) or a PTL_ERR_* code. On
 *   failure ptl_last_error() gives a message that says what and where (the field of a
 *   document, the row of a many-row solve, a suggestion for an unknown name).
 * - Strings in are UTF-8 and NUL-terminated; strings out from ptl_run_document are freed
 *   with ptl_string_free; names returned by ptl_system_*_name belong to the handle.
 * - No Rust panic crosses this interface: a failure inside the library (a bug) returns
 *   PTL_ERR_INTERNAL.
 *
 * Thread safety
 * - Every function may be called from any thread at any time.
 * - A PtlSystem is never changed after ptl_system_new: one handle may be solved from several
 *   threads at once. It must not be freed while another thread uses it.
 * - ptl_last_error() is kept per thread: read it on the thread whose call failed.
 * - ptl_system_solve_* with threads != 1 starts its own threads and joins them before it
 *   returns; no thread is left running between calls.
 */

#ifndef PROTOLYTE_H
#define PROTOLYTE_H

/* Generated from capi/src/lib.rs by cbindgen; do not edit (tests/header.rs checks it). */

#include <stdarg.h>
#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>
#include <stdlib.h>

// Success.
#define PTL_OK 0

// The document is not valid JSON or TOML, a value has the wrong type, or a string is not
// UTF-8.
#define PTL_ERR_SYNTAX 1

// A value, name or field is refused, or an input is over a limit; the message names the
// field.
#define PTL_ERR_INPUT 2

// A name is not in the catalogue (the message suggests the nearest one).
#define PTL_ERR_UNKNOWN_NAME 3

// The solver did not converge.
#define PTL_ERR_NO_CONVERGENCE 4

// Another refusal by the chemistry (an ionic strength or a pH past the solver's domain).
#define PTL_ERR_CHEMISTRY 5

// A wrong argument: a null pointer where one is required, or a size that does not fit.
#define PTL_ERR_ARGUMENT 6

// Some rows of a many-row solve failed: their `status` entries say why, their outputs are
// NaN, and the other rows are solved.
#define PTL_ERR_SOME_ROWS 7

// The library failed internally (a bug; please report it with the input).
#define PTL_ERR_INTERNAL 99

// A recipe compiled once, to be solved for many compositions. Opaque: made by
// [`ptl_system_new`], freed by [`ptl_system_free`].
typedef struct PtlSystem PtlSystem;

// Where a many-row solve writes its results: arrays owned by the caller, each with one
// entry per row (`species_molal`: rows × species, row-major). Any pointer but `ph` may be
// null: that output is not written.
typedef struct PtlOutputs {
  // pH (under the recipe's pH convention). Required.
  double *ph;
  // −log₁₀ of the H⁺ molality.
  double *p_h_molal;
  // Ionic strength, mol/kg.
  double *ionic_strength_mol_per_kg;
  // Largest relative residual of every equation solved (at most 1e-10 unless the row has
  // a warning that says otherwise).
  double *max_residual;
  // Number of warnings of the row (solve the row's recipe document to read them).
  uint32_t *warnings;
  // Every species' molality (mol/kg), in the order of [`ptl_system_species_name`].
  double *species_molal;
  // `PTL_OK` or the error code of the row.
  int32_t *status;
} PtlOutputs;

#ifdef __cplusplus
extern "C" {
#endif // __cplusplus

// The library's version, e.g. `"0.1.0"` (a static string; do not free it).
const char *ptl_version(void);

// The message of the last failed call on this thread (an empty string if none failed).
// The pointer stays valid until the next failing call on this thread; do not free it.
const char *ptl_last_error(void);

// Frees a string returned by this library ([`ptl_run_document`]). Null is accepted.
//
// # Safety
// `s` is null or a string returned by this library and not yet freed.
void ptl_string_free(char *s);

// Runs a document of any kind (recipe, titration, design, fit, calibration or
// measured-titration request; JSON or TOML, told by its `format` field) and sets `*result`
// to its result document as JSON (what `protolyte solve|titrate|design|fit|calibrate|analyze
// --json` writes), a string the caller frees with [`ptl_string_free`]. The data file of a
// measured-titration request is read from the working directory. On failure `*result` is set to null and the code
// and [`ptl_last_error`] say why.
//
// # Safety
// `document` is null or a NUL-terminated string; `result` is null or points to writable
// storage for one pointer.
int32_t ptl_run_document(const char *document,
                         char **result);

// Compiles the reagents, complexes and conditions of a recipe document (JSON or TOML; its
// amounts are not used) and sets `*system` to a new handle, freed with [`ptl_system_free`].
// On failure `*system` is set to null.
//
// # Safety
// `recipe` is null or a NUL-terminated string; `system` is null or points to writable
// storage for one pointer.
int32_t ptl_system_new(const char *recipe, struct PtlSystem **system);

// Frees a handle made by [`ptl_system_new`]. Null is accepted.
//
// # Safety
// `system` is null or a handle from [`ptl_system_new`] not yet freed and not in use.
void ptl_system_free(struct PtlSystem *system);

// The number of reagent lines of the recipe: the columns of [`ptl_system_solve_amounts`]
// (0 for a null handle).
//
// # Safety
// `system` is null or a live handle.
size_t ptl_system_reagent_count(const struct PtlSystem *system);

// The name of reagent line `i`, or null past the end. Owned by the handle.
//
// # Safety
// `system` is null or a live handle.
const char *ptl_system_reagent_name(const struct PtlSystem *system, size_t i);

// The number of components whose totals are given to [`ptl_system_solve_totals`]: every
// component of the compiled system except H⁺ (0 for a null handle).
//
// # Safety
// `system` is null or a live handle.
size_t ptl_system_total_count(const struct PtlSystem *system);

// The name of total column `i` (a family's or an ion's name), or null past the end.
//
// # Safety
// `system` is null or a live handle.
const char *ptl_system_total_name(const struct PtlSystem *system, size_t i);

// The number of species (the columns of `species_molal`; 0 for a null handle).
//
// # Safety
// `system` is null or a live handle.
size_t ptl_system_species_count(const struct PtlSystem *system);

// The name of species `i` (e.g. `"HPO42-"`), or null past the end.
//
// # Safety
// `system` is null or a live handle.
const char *ptl_system_species_name(const struct PtlSystem *system, size_t i);

// Solves `rows` compositions given as reagent amounts in mol/L: `amounts` holds rows ×
// [`ptl_system_reagent_count`] values, row-major, one column per reagent line of the
// recipe. Results go to `outputs`. Rows are solved on up to `threads` threads (1: the
// calling thread only; 0: one per core), each solve starting from the previous row's
// result; the threads are joined before the call returns. Returns `PTL_OK`,
// `PTL_ERR_SOME_ROWS` (see `outputs->status`; [`ptl_last_error`] names the first failed
// row), or an error code for the whole call.
//
// # Safety
// `system` is null or a live handle; `amounts` points to rows × reagent-count doubles;
// `outputs` is null or points to a [`PtlOutputs`] whose non-null arrays have room for
// `rows` entries (`species_molal`: rows × [`ptl_system_species_count`]).
int32_t ptl_system_solve_amounts(const struct PtlSystem *system,
                                 size_t rows,
                                 const double *amounts,
                                 uint32_t threads,
                                 const struct PtlOutputs *outputs);

// Solves `rows` compositions given as component totals in mol/kg of water: `totals` holds
// rows × [`ptl_system_total_count`] values, row-major, in the order of
// [`ptl_system_total_name`] (H⁺ is not given: the charge balance sets it). Otherwise as
// [`ptl_system_solve_amounts`].
//
// # Safety
// As for [`ptl_system_solve_amounts`], with rows × total-count doubles in `totals`.
int32_t ptl_system_solve_totals(const struct PtlSystem *system,
                                size_t rows,
                                const double *totals,
                                uint32_t threads,
                                const struct PtlOutputs *outputs);

#ifdef __cplusplus
}  // extern "C"
#endif  // __cplusplus

#endif  /* PROTOLYTE_H */
