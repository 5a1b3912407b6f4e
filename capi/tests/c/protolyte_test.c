/* A C program against the protolyte C library: documents, the many-row hot path, and bad
 * input. Compiled with gcc and run under valgrind by capi/tests/c_program.rs. Prints one
 * line per check and "N passed, N failed" at the end; exits non-zero on any failure. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "protolyte.h"

static int passed = 0, failed = 0;

static void check(int ok, const char *what) {
    if (ok) {
        passed++;
        printf("ok   %s\n", what);
    } else {
        failed++;
        printf("FAIL %s (last error: %s)\n", what, ptl_last_error());
    }
}

/* The number after "key": in a JSON text (enough for these flat checks). */
static double number_after(const char *json, const char *key) {
    const char *p = strstr(json, key);
    if (!p) return NAN;
    p += strlen(key);
    while (*p == '"' || *p == ':' || *p == ' ') p++;
    return strtod(p, NULL);
}

static void documents(void) {
    char *out = NULL;
    /* 0.05 mol/kg potassium hydrogen phthalate: pH(S) 4.005 at 25 °C (R. P. Buck et al.,
     * Pure Appl. Chem. 74 (2002) 2169), under the Bates–Guggenheim convention. */
    const char *khp =
        "{\"format\": \"protolyte-recipe/1\", \"temperature_celsius\": 25, \"activity\": \"davies\","
        " \"ph_convention\": \"bates-guggenheim\","
        " \"reagents\": [{\"reagent\": \"potassium hydrogen phthalate\", \"molal\": 0.05}]}";
    int rc = ptl_run_document(khp, &out);
    check(rc == PTL_OK && out != NULL, "recipe document solves");
    if (out) {
        double ph = number_after(out, "\"ph\"");
        check(fabs(ph - 4.005) < 0.015, "KHP 0.05 mol/kg: pH 4.005 within 0.015 (Buck et al. 2002)"); /* 0.015: the agreement the README states for these models and buffers (as in python/tests/test_solve.py) */
        check(strstr(out, "\"format\":\"protolyte-result/1\"") != NULL, "result document names its format");
        ptl_string_free(out);
        out = NULL;
    }

    /* TOML is read too: 0.1 mol/L acetic acid, ideal, pH 2.88 (pKa 4.756, the weak-acid
     * quadratic; common practice). */
    const char *toml =
        "format = \"protolyte-recipe/1\"\nactivity = \"ideal\"\n"
        "[[reagents]]\nreagent = \"acetic acid\"\nmolar = 0.1\n";
    rc = ptl_run_document(toml, &out);
    check(rc == PTL_OK && out != NULL, "TOML recipe document solves");
    if (out) {
        check(fabs(number_after(out, "\"ph\"") - 2.88) < 0.01, "0.1 M acetic acid: pH 2.88 (common practice)"); /* 0.01 tolerance chosen for this test */
        ptl_string_free(out);
        out = NULL;
    }

    /* 20 mL of 0.1 mol/L acetic acid with 0.1 mol/L NaOH: equivalence at 20.0 mL
     * (stoichiometry; common practice). */
    const char *titration =
        "{\"format\": \"protolyte-titration/1\", \"activity\": \"davies\","
        " \"analyte\": {\"volume_ml\": 20, \"reagents\": [{\"reagent\": \"acetic acid\", \"molar\": 0.1}]},"
        " \"titrant\": {\"reagents\": [{\"reagent\": \"sodium hydroxide\", \"molar\": 0.1}]},"
        " \"end_volume_ml\": 30, \"points\": 16}";
    rc = ptl_run_document(titration, &out);
    check(rc == PTL_OK && out != NULL, "titration document runs");
    if (out) {
        const char *eq = strstr(out, "\"equivalence_points\"");
        check(eq != NULL && fabs(number_after(eq, "\"volume_ml\"") - 20.0) < 1e-6, /* 1e-6 tolerance chosen for this test */
              "acetic acid titration: equivalence at 20.0 mL (stoichiometry)");
        ptl_string_free(out);
        out = NULL;
    }

    /* Bad documents: a code and a message, never a crash. */
    rc = ptl_run_document("{\"format\": \"protolyte-recipe/1\", \"reagents\": [,]}", &out);
    check(rc == PTL_ERR_SYNTAX && out == NULL && strstr(ptl_last_error(), "1:") != NULL,
          "malformed JSON: PTL_ERR_SYNTAX with line and column");
    rc = ptl_run_document("{\"format\": \"protolyte-recipe/1\", \"reagents\": [{\"reagent\": \"acetic acdi\", \"molar\": 0.1}]}", &out);
    check(rc == PTL_ERR_INPUT && strstr(ptl_last_error(), "acetic acid") != NULL,
          "unknown reagent: PTL_ERR_INPUT with a suggestion");
    rc = ptl_run_document("{\"reagents\": []}", &out);
    check(rc == PTL_ERR_INPUT && strstr(ptl_last_error(), "format") != NULL, "no format: PTL_ERR_INPUT naming the field");
    rc = ptl_run_document("{\"format\": \"protolyte-recipe/1\", \"reagents\": [{\"reagent\": \"acetic acid\", \"molar\": -1}]}", &out);
    check(rc == PTL_ERR_INPUT && strstr(ptl_last_error(), "reagents[0]") != NULL, "negative amount: PTL_ERR_INPUT naming the line");
    rc = ptl_run_document(NULL, &out);
    check(rc == PTL_ERR_ARGUMENT, "null document: PTL_ERR_ARGUMENT");
    rc = ptl_run_document("{}", NULL);
    check(rc == PTL_ERR_ARGUMENT, "null result pointer: PTL_ERR_ARGUMENT");
    rc = ptl_run_document("\xff\xfe", &out);
    check(rc == PTL_ERR_SYNTAX, "not UTF-8: PTL_ERR_SYNTAX");
}

static void hot_path(void) {
    PtlSystem *sys = NULL;
    const char *recipe =
        "{\"format\": \"protolyte-recipe/1\", \"activity\": \"ideal\","
        " \"reagents\": [{\"reagent\": \"acetic acid\", \"millimolar\": 10},"
        "               {\"reagent\": \"sodium acetate\", \"millimolar\": 10}]}";
    int rc = ptl_system_new(recipe, &sys);
    check(rc == PTL_OK && sys != NULL, "system compiles");
    if (!sys) return;
    check(ptl_system_reagent_count(sys) == 2, "two reagent columns");
    check(strcmp(ptl_system_reagent_name(sys, 0), "acetic acid") == 0, "column 0 is acetic acid");
    check(ptl_system_reagent_name(sys, 2) == NULL, "past the end: null");
    size_t nt = ptl_system_total_count(sys), ns = ptl_system_species_count(sys);
    check(nt == 2, "two total columns (acetate, sodium)");

    /* Rows: equal acid and base (pH = pKa 4.756, Henderson–Hasselbalch, ideal; common
     * practice), ten times more base (pKa + 1), and a NaN amount (refused on its row). */
    enum { ROWS = 4 };
    double amounts[ROWS * 2] = {0.01, 0.01, 0.001, 0.01, 0.05, 0.05, NAN, 0.01};
    double ph[ROWS], ionic[ROWS], resid[ROWS];
    int32_t status[ROWS];
    double *species = malloc(sizeof(double) * ROWS * ns);
    PtlOutputs out = {ph, NULL, ionic, resid, NULL, species, status};
    rc = ptl_system_solve_amounts(sys, ROWS, amounts, 1, &out);
    check(rc == PTL_ERR_SOME_ROWS, "a NaN row: PTL_ERR_SOME_ROWS for the call");
    check(strstr(ptl_last_error(), "row 3") != NULL, "the message names the failed row");
    check(status[0] == PTL_OK && status[1] == PTL_OK && status[2] == PTL_OK, "the other rows solve");
    check(status[3] == PTL_ERR_INPUT && isnan(ph[3]), "the NaN row: PTL_ERR_INPUT, no pH");
    check(fabs(ph[0] - 4.756) < 0.01, "1:1 acetate buffer: pH = pKa 4.756 (common practice)"); /* 0.01 tolerance chosen for this test */
    check(fabs(ph[1] - 5.756) < 0.01, "1:10 acid:base: pH = pKa + 1 (common practice)"); /* 0.01 tolerance chosen for this test */
    check(resid[0] <= 1e-10 && resid[1] <= 1e-10, "residuals within the promise 1e-10"); /* solver residual tolerance, the library's stated 1e-10 */
    check(fabs(ionic[0] - 0.01) < 2e-4, "ionic strength of 10 mM sodium acetate: 0.01 mol/kg"); /* I = 1/2 sum c z^2 of 10 mM NaAc, by definition; 2e-4 tolerance chosen for this test */
    double sum = 0;
    for (size_t k = 0; k < ns; k++) {
        const char *name = ptl_system_species_name(sys, k);
        if (strcmp(name, "HC2H3O2") == 0 || strcmp(name, "C2H3O2-") == 0) sum += species[k];
    }
    check(fabs(sum - 0.02 / 0.99705) < 1e-6, "acetate mass balance over the species row"); /* mass balance, by definition (Kell 1975 density, below); 1e-6 tolerance */

    /* The same rows as totals, on two threads: the same pH. */
    double totals[3 * 2];
    for (int r = 0; r < 3; r++) {
        for (size_t c = 0; c < nt; c++) {
            const char *name = ptl_system_total_name(sys, c);
            double acid = amounts[2 * r], base = amounts[2 * r + 1];
            /* Water's density at 25 °C, 0.99705 kg/L (Kell 1975), as the library converts. */
            totals[2 * r + c] = (strcmp(name, "acetate") == 0 ? acid + base : base) / 0.99705;
        }
    }
    double ph2[3];
    PtlOutputs out2 = {ph2, NULL, NULL, NULL, NULL, NULL, NULL};
    rc = ptl_system_solve_totals(sys, 3, totals, 2, &out2);
    check(rc == PTL_OK, "totals solve on two threads");
    check(fabs(ph2[0] - ph[0]) < 1e-6 && fabs(ph2[2] - ph[2]) < 1e-6, "totals give the pH of the amounts"); /* same result two ways; 1e-6 tolerance chosen for this test */

    PtlOutputs no_ph = {NULL, NULL, NULL, NULL, NULL, NULL, NULL};
    check(ptl_system_solve_amounts(sys, 1, amounts, 1, &no_ph) == PTL_ERR_ARGUMENT, "no pH array: PTL_ERR_ARGUMENT");
    check(ptl_system_solve_amounts(NULL, 1, amounts, 1, &out) == PTL_ERR_ARGUMENT, "null system: PTL_ERR_ARGUMENT");
    check(ptl_system_solve_amounts(sys, 1, NULL, 1, &out) == PTL_ERR_ARGUMENT, "null amounts: PTL_ERR_ARGUMENT");
    double too_much[2] = {200.0, 0.0};
    check(ptl_system_solve_amounts(sys, 1, too_much, 1, &out) == PTL_ERR_SOME_ROWS && status[0] == PTL_ERR_INPUT,
          "200 mol/L: refused on its row");
    free(species);
    ptl_system_free(sys);

    PtlSystem *bad = (PtlSystem *)1;
    rc = ptl_system_new("{\"reagents\": [{\"reagent\": \"unobtainium\", \"molar\": 1}]}", &bad);
    check(rc == PTL_ERR_INPUT && bad == NULL, "unknown reagent: no handle");
    ptl_system_free(NULL);
}

int main(void) {
    printf("protolyte %s\n", ptl_version());
    documents();
    hot_path();
    printf("%d passed, %d failed\n", passed, failed);
    return failed == 0 ? 0 : 1;
}
