//! End-to-end tests of the `protolyte` program: outputs and exit codes.

use std::io::Write;
use std::process::{Command, Output, Stdio};

use protolyte::document::batch::{BatchErrorRecord, BatchRecord};
use protolyte::document::{DesignResult, FitResult, SolveResult, TitrationResult};

/// The repository root: the example documents the tests read live there.
fn repo_root() -> std::path::PathBuf {
    std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("..")
}

fn protolyte(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_protolyte"))
        .current_dir(repo_root())
        .args(args)
        .output()
        .expect("run protolyte")
}

fn with_stdin(args: &[&str], input: &str) -> Output {
    let mut child = Command::new(env!("CARGO_BIN_EXE_protolyte"))
        .current_dir(repo_root())
        .args(args)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("run protolyte");
    child.stdin.take().unwrap().write_all(input.as_bytes()).unwrap();
    child.wait_with_output().unwrap()
}

fn stdout(o: &Output) -> String {
    String::from_utf8(o.stdout.clone()).unwrap()
}

fn stderr(o: &Output) -> String {
    String::from_utf8(o.stderr.clone()).unwrap()
}

fn temp_file(name: &str, text: &str) -> std::path::PathBuf {
    let dir = std::env::temp_dir().join(format!("protolyte-cli-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

#[test]
fn solve_prints_a_table() {
    let o = protolyte(&["solve", "examples/hatchery_makeup.json"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let out = stdout(&o);
    assert!(out.contains("pH "), "{out}");
    assert!(out.contains("HCO3-"));
    assert!(out.contains("carbonate"));
}

/// Species names: one charge notation in the table, and a recipe written with the former
/// spellings of complex names ("CaOH^+") still reads.
#[test]
fn solve_shows_one_charge_notation_and_reads_former_spellings() {
    let o = protolyte(&["solve", "examples/pool_water.toml"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let out = stdout(&o);
    for name in ["CO3^2-", "Ca^2+", "CaHCO3+", "CaOH+", "B(OH)4-", "B(OH)3"] {
        assert!(
            out.lines().any(|l| l.starts_with(&format!("{name} "))),
            "{name} missing:\n{out}"
        );
    }
    assert!(
        !out.contains("(H1)") && !out.contains("^+") && !out.contains("CO32-"),
        "{out}"
    );

    let recipe = temp_file(
        "former_spellings.toml",
        "format = \"protolyte-recipe/1\"\ncomplexes = [\"CaOH^+\", \"CaHCO3^+\"]\n\n[[reagents]]\nreagent = \"calcium chloride\"\nmillimolar = 1.0\n\n[[reagents]]\nreagent = \"sodium bicarbonate\"\nmillimolar = 1.0\n",
    );
    let o = protolyte(&["solve", "--json", recipe.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let r: SolveResult = serde_json::from_str(&stdout(&o)).unwrap();
    let names: Vec<&str> = r.species.iter().map(|s| s.name.as_str()).collect();
    assert!(names.contains(&"CaOH+") && names.contains(&"CaHCO3+"), "{names:?}");

    // `data` with a query nothing contains names the closest entry.
    let o = protolyte(&["data", "calcum"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert!(
        stdout(&o).contains("0 entries\ndid you mean `calcium` (ion)?"),
        "{}",
        stdout(&o)
    );

    // A misspelt complex gets a suggestion.
    let recipe = temp_file(
        "misspelt_complex.toml",
        "format = \"protolyte-recipe/1\"\ncomplexes = [\"CaHC03+\"]\n\n[[reagents]]\nreagent = \"calcium chloride\"\nmillimolar = 1.0\n",
    );
    let o = protolyte(&["solve", recipe.to_str().unwrap()]);
    assert_ne!(o.status.code(), Some(0));
    assert!(stderr(&o).contains("did you mean `CaHCO3+`?"), "{}", stderr(&o));
}

#[test]
fn solve_json_and_stdin_and_toml_agree() {
    let o = protolyte(&["solve", "--json", "examples/hatchery_makeup.json"]);
    assert_eq!(o.status.code(), Some(0));
    let a: SolveResult = serde_json::from_str(&stdout(&o)).unwrap();
    let text = std::fs::read_to_string(repo_root().join("examples/hatchery_makeup.json")).unwrap();
    let o = with_stdin(&["solve", "--json", "-"], &text);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let b: SolveResult = serde_json::from_str(&stdout(&o)).unwrap();
    assert_eq!(a, b);
    // Carbonate-buffered water near neutral (common practice).
    assert!(a.ph > 6.5 && a.ph < 8.5);
    let o = protolyte(&["solve", "--json", "examples/pool_water.toml"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let pool: SolveResult = serde_json::from_str(&stdout(&o)).unwrap();
    assert!(pool.species.iter().any(|s| s.name.starts_with("CaHCO3")));
}

#[test]
fn bad_json_exits_3_with_line_and_column() {
    let p = temp_file(
        "bad.json",
        "{\n  \"format\": \"protolyte-recipe/1\",\n  \"reagents\": [\n    { \"reagent\": \"acetic acid\" \"molar\": 0.1 }\n  ]\n}\n",
    );
    let o = protolyte(&["solve", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(3));
    let err = stderr(&o);
    assert!(err.contains("bad.json:4:"), "{err}");
    // A refused field is named.
    let p = temp_file(
        "field.json",
        r#"{"format": "protolyte-recipe/1", "reagents": [{"reagent": "acetic acid", "molar": -1}]}"#,
    );
    let o = protolyte(&["solve", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(3));
    assert!(stderr(&o).contains("field `reagents[0].molar`"), "{}", stderr(&o));
    // A document without its format tag is refused.
    let p = temp_file("noformat.json", r#"{"reagents": []}"#);
    let o = protolyte(&["solve", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(3));
    assert!(stderr(&o).contains("format"));
}

#[test]
fn unreadable_file_exits_3_and_usage_errors_exit_2() {
    let o = protolyte(&["solve", "no/such/file.json"]);
    assert_eq!(o.status.code(), Some(3));
    assert!(stderr(&o).contains("no/such/file.json"));
    assert_eq!(protolyte(&["solve"]).status.code(), Some(2));
    assert_eq!(protolyte(&["frobnicate"]).status.code(), Some(2));
    assert_eq!(protolyte(&["solve", "--colour", "x.json"]).status.code(), Some(2));
}

#[test]
fn titrate_writes_csv_with_endpoints() {
    let o = protolyte(&["titrate", "examples/soft_drink_acidity.json"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let out = stdout(&o);
    let mut lines = out.lines();
    assert_eq!(
        lines.next(),
        Some("volume_ml,ph,dph_dv_per_ml,ionic_strength_mol_per_kg")
    );
    // Pure CSV: every line after the header is a row of four numbers.
    let rows: Vec<&str> = out.lines().skip(1).collect();
    assert!(rows.len() > 50);
    assert!(
        rows.iter()
            .all(|r| r.split(',').count() == 4 && r.split(',').all(|x| x.parse::<f64>().is_ok()))
    );
    // The endpoint report goes to standard error, or to the file asked for.
    let err = stderr(&o);
    assert!(err.contains("equivalence point 1:"), "{err}");
    assert!(err.contains("half-equivalence phosphate pKa1"));
    let report = std::env::temp_dir().join(format!("protolyte-cli-endpoints-{}.txt", std::process::id()));
    let o = protolyte(&[
        "titrate",
        "examples/soft_drink_acidity.json",
        "--endpoints",
        report.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert!(stderr(&o).is_empty());
    assert!(
        std::fs::read_to_string(&report)
            .unwrap()
            .contains("equivalence point 1:")
    );
}

#[test]
fn text_json_and_plot_read_the_same_verdict() {
    // The issue's maleic acid case: 25 mL of 20 mmol/L maleic acid with 0.1 mol/L NaOH.
    let doc = temp_file(
        "maleic.json",
        r#"{"format":"protolyte-titration/1","name":"maleic acid",
            "analyte":{"volume_ml":25,"reagents":[{"reagent":"maleic acid","millimolar":20}]},
            "titrant":{"reagents":[{"reagent":"sodium hydroxide","molar":0.1}]},"end_volume_ml":15}"#,
    );
    let svg = doc.with_file_name("maleic.svg");
    let o = protolyte(&["titrate", doc.to_str().unwrap(), "--plot", svg.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let text = stderr(&o);
    let lines: Vec<&str> = text.lines().filter(|l| l.starts_with("equivalence point")).collect();
    assert_eq!(lines.len(), 2, "{text}");
    assert!(lines[0].contains("not usable"), "{}", lines[0]);
    assert!(lines[1].contains("; usable"), "{}", lines[1]);
    let o = protolyte(&["titrate", "--json", doc.to_str().unwrap()]);
    let t: TitrationResult = serde_json::from_str(&stdout(&o)).unwrap();
    let verdicts: Vec<bool> = t.equivalence_points.iter().map(|e| e.verdict.usable).collect();
    assert_eq!(verdicts, [false, true]);
    let svg = std::fs::read_to_string(&svg).unwrap();
    assert_eq!(svg.matches("not usable").count(), 2, "one label and the legend");
}

#[test]
fn documents_of_another_kind_and_non_svg_plots_are_refused_clearly() {
    let o = protolyte(&["titrate", "examples/hatchery_makeup.json"]);
    assert_eq!(o.status.code(), Some(3));
    let err = stderr(&o);
    assert!(err.contains("a recipe") && err.contains("protolyte solve"), "{err}");
    let o = protolyte(&["solve", "examples/soft_drink_acidity.json"]);
    assert_eq!(o.status.code(), Some(3));
    assert!(stderr(&o).contains("protolyte titrate"), "{}", stderr(&o));
    let o = protolyte(&["titrate", "examples/soft_drink_acidity.json", "--plot", "curve.png"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("SVG"), "{}", stderr(&o));
    assert!(stdout(&o).is_empty());
}

#[test]
fn a_curve_that_stops_before_its_first_equivalence_point_says_so() {
    let doc = temp_file(
        "short.json",
        r#"{"format":"protolyte-titration/1",
            "analyte":{"volume_ml":25,"reagents":[{"reagent":"acetic acid","molar":0.1}]},
            "titrant":{"reagents":[{"reagent":"sodium hydroxide","molar":0.1}]},"end_volume_ml":10}"#,
    );
    let o = protolyte(&["titrate", doc.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(0));
    assert!(
        stderr(&o).contains("before its first equivalence point (25.0000 mL)"),
        "{}",
        stderr(&o)
    );
    let o = protolyte(&["titrate", "--json", doc.to_str().unwrap()]);
    let t: TitrationResult = serde_json::from_str(&stdout(&o)).unwrap();
    assert_eq!(t.notes.len(), 1);
}

#[test]
fn titrate_json_has_curve_and_endpoints() {
    let o = protolyte(&["titrate", "--json", "examples/soft_drink_acidity.json"]);
    assert_eq!(o.status.code(), Some(0));
    let t: TitrationResult = serde_json::from_str(&stdout(&o)).unwrap();
    assert!(t.points.windows(2).all(|w| w[1].volume_ml > w[0].volume_ml));
    assert!(!t.equivalence_points.is_empty());
    // The pH rises as base is added (common practice).
    assert!(t.points.last().unwrap().ph > t.points[0].ph + 5.0);
}

#[test]
fn design_gives_the_recipe_and_check_solve() {
    let o = protolyte(&["design", "examples/tris_buffer_design.json"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let out = stdout(&o);
    assert!(out.contains("tris base") && out.contains(" g") && out.contains(" mL"));
    assert!(out.contains("check solve"));
    let o = protolyte(&["design", "--json", "examples/tris_buffer_design.json"]);
    let d: DesignResult = serde_json::from_str(&stdout(&o)).unwrap();
    assert!(d.ph_residual.abs() < 1e-6);
    assert!((d.check.unwrap().ph - 8.0).abs() < 1e-6);
    // Tris buffers lose about 0.03 pH per °C on warming (common practice).
    let warm = d
        .temperature_shifts
        .iter()
        .find(|s| s.temperature_celsius > 30.0)
        .unwrap();
    assert!(warm.shift < -0.2);
}

#[test]
fn fit_reports_estimates_and_residuals() {
    let o = protolyte(&["fit", "examples/vinegar_fit.json"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let out = stdout(&o);
    assert!(out.contains("analyte total of acetate"));
    assert!(out.contains("curve,point,volume_ml,measured_ph,residual_ph"));
    let o = protolyte(&["fit", "--json", "examples/vinegar_fit.json"]);
    let f: FitResult = serde_json::from_str(&stdout(&o)).unwrap();
    // The invented data were made with 0.0987 mol/L and a +0.02 pH offset (examples/vinegar_fit.json).
    let c = &f.estimates[0];
    assert!(
        (c.value - 0.0987).abs() < 3.0 * c.standard_error.unwrap() + 1e-4,
        "{c:?}"
    );
    let off = &f.estimates[1];
    assert!((off.value - 0.02).abs() < 0.005, "{off:?}");
}

#[test]
fn batch_with_a_bad_line_gives_an_error_record_and_exit_1() {
    let good = std::fs::read_to_string(repo_root().join("examples/buffer_screen.jsonl")).unwrap();
    let mut lines: Vec<&str> = good.lines().collect();
    lines.insert(2, "{\"reagents\": [{\"reagent\": \"acetic acid\", \"molar\": 0.1},]}");
    let input = lines.join("\n") + "\n";
    let o = with_stdin(&["batch", "-"], &input);
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
    let out = stdout(&o);
    let recs: Vec<&str> = out.lines().collect();
    assert_eq!(recs.len(), lines.len());
    let e: BatchErrorRecord = serde_json::from_str(recs[2]).unwrap();
    assert_eq!(e.line, 3);
    assert_eq!(e.kind, "syntax");
    assert!(e.error.contains("column"), "{}", e.error);
    for (i, r) in recs.iter().enumerate().filter(|(i, _)| *i != 2) {
        let r: BatchRecord = serde_json::from_str(r).unwrap();
        assert_eq!(r.line, i + 1);
    }
    assert!(stderr(&o).contains("1 of 6 batch lines failed"));
    // The shipped batch runs clean, to a file.
    let dir = std::env::temp_dir().join(format!("protolyte-cli-out-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let out_path = dir.join("out.jsonl");
    let o = protolyte(&[
        "batch",
        "examples/buffer_screen.jsonl",
        "-o",
        out_path.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    // No progress bar when standard error is not a terminal.
    assert!(stderr(&o).is_empty());
    let text = std::fs::read_to_string(&out_path).unwrap();
    assert_eq!(text.lines().count(), 5);
}

#[test]
fn data_lists_and_searches_with_sources() {
    let o = protolyte(&["data", "phosphate"]);
    assert_eq!(o.status.code(), Some(0));
    let out = stdout(&o);
    assert!(out.contains("protolyte phosphate"));
    assert!(out.contains("source:"));
    let o = protolyte(&["data", "--json"]);
    let all: Vec<serde_json::Value> = serde_json::from_str(&stdout(&o)).unwrap();
    assert!(all.len() > 200);
    assert!(all.iter().all(|e| !e["source"].as_str().unwrap().is_empty()));
    let o = protolyte(&["data", "no such thing at all"]);
    assert_eq!(o.status.code(), Some(0));
    assert!(stdout(&o).contains("0 entries"));
}

#[test]
fn data_json_gives_structured_fields() {
    // Phosphate as entered from R. N. Goldberg, N. Kishore, R. M. Lennen, J. Phys. Chem. Ref.
    // Data 31 (2002) 231: pKa 2.148, 7.198, 12.35; ΔH°1 = −8.0 kJ/mol, ΔCp°1 = −141 J/(mol·K).
    let o = protolyte(&["data", "--json", "orthophosphoric"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let all: Vec<serde_json::Value> = serde_json::from_str(&stdout(&o)).unwrap();
    let p = all.iter().find(|e| e["kind"] == "protolyte").unwrap();
    let pk: Vec<f64> = p["steps"]
        .as_array()
        .unwrap()
        .iter()
        .map(|s| s["pka"].as_f64().unwrap())
        .collect();
    // Goldberg, Kishore & Lennen, J. Phys. Chem. Ref. Data 31 (2002) 231, as entered in the
    // catalogue (from memory).
    assert_eq!(pk, [2.148, 7.198, 12.35]);
    assert_eq!(p["steps"][0]["dh_kj_per_mol"], -8.0);
    assert_eq!(p["steps"][0]["dcp_j_per_mol_k"], -141.0);
    assert_eq!(p["forms"][1]["name"], "H2PO4-");
    assert_eq!(p["forms"][3]["charge"], -3);
    assert_eq!(p["from_memory"], true);
    // H3PO4: 97.994 g/mol from the IUPAC 2021 abridged atomic weights.
    assert!((p["molar_mass_g_per_mol"].as_f64().unwrap() - 97.994).abs() < 1e-9);
}

#[test]
fn catalog_option_adds_entries_for_documents_and_names_the_line_of_an_error() {
    // An invented laboratory acid (demo data).
    let cat = temp_file(
        "lab-catalog.toml",
        "format = \"protolyte-catalog/1\"\n\n[[family]]\nname = \"lab acid q\"\ncharge_most_protonated = 0\nsteps = [{ pka = 5.0 }]\nsource = \"invented\"\n\n[[reagent]]\nname = \"acid q\"\nparts = [{ family = \"lab acid q\", protons = 1 }]\nsource = \"invented\"\n",
    );
    let recipe = temp_file(
        "q.json",
        r#"{"format": "protolyte-recipe/1", "activity": "ideal", "reagents": [{"reagent": "acid q", "molar": 0.01}]}"#,
    );
    let o = protolyte(&[
        "solve",
        "--json",
        "--catalog",
        cat.to_str().unwrap(),
        recipe.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let r: SolveResult = serde_json::from_str(&stdout(&o)).unwrap();
    // 0.01 mol/L of a pKa 5 acid: pH 3.5 to within 0.02 (the square-root approximation; common practice).
    assert!((r.ph - 3.5).abs() < 0.02, "{}", r.ph);
    // Without the file the reagent is unknown.
    let o = protolyte(&["solve", recipe.to_str().unwrap()]);
    assert_ne!(o.status.code(), Some(0));
    // An error in the catalogue file names its file, line and field.
    let bad = temp_file(
        "bad-catalog.toml",
        "format = \"protolyte-catalog/1\"\n[[family]]\nname = \"y\"\ncharge_most_protonated = 0\nsteps = [{ pka = 7.0 }, { pka = 3.0 }]\nsource = \"s\"\n",
    );
    let o = protolyte(&["data", "--catalog", bad.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(3), "{}", stderr(&o)); // bad input
    let msg = stderr(&o);
    assert!(
        msg.contains("bad-catalog.toml:5:") && msg.contains("steps[1].pka"),
        "{msg}"
    );
}

#[test]
fn plot_option_writes_svg() {
    let dir = std::env::temp_dir().join(format!("protolyte-cli-plot-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let curve = dir.join("curve.svg");
    let o = protolyte(&[
        "titrate",
        "examples/soft_drink_acidity.json",
        "--plot",
        curve.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let svg = std::fs::read_to_string(&curve).unwrap();
    assert!(svg.starts_with("<svg") && svg.contains("titrant volume / mL"));
    let dist = dir.join("dist.svg");
    let o = protolyte(&[
        "solve",
        "examples/hatchery_makeup.json",
        "--plot",
        dist.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert!(std::fs::read_to_string(&dist).unwrap().starts_with("<svg"));
    // An SVG that cannot be written is an output failure.
    let o = protolyte(&["solve", "examples/hatchery_makeup.json", "--plot", "/no/such/dir/x.svg"]);
    assert_eq!(o.status.code(), Some(5));
}

// ---- Issue 7: no input may crash a run, lose a record or give a wrong answer with exit 0 ----

/// A line whose complex has proton parts adding up beyond ±12: once a panic in the solver's
/// fast path that ended `batch` with exit 101 and no record at all.
const PROTON_SUM_LINE: &str = r#"{"name":"protons","definitions":{"ions":[{"name":"q","charge":2}],"complexes":[{"name":"qx","log_beta":1,"parts":[{"ion":"q"},{"protons":-7},{"protons":-6}]}],"reagents":[{"name":"q salt","parts":[{"ion":"q"},{"ion":"chloride","count":2}]}]},"reagents":[{"reagent":"q salt","millimolar":10}]}"#;
/// The same with the smallest 32-bit proton count.
const PROTON_MIN_LINE: &str = r#"{"name":"min","definitions":{"ions":[{"name":"q","charge":2}],"complexes":[{"name":"qx","log_beta":1,"parts":[{"ion":"q"},{"protons":-2147483648}]}],"reagents":[{"name":"q salt","parts":[{"ion":"q"},{"ion":"chloride","count":2}]}]},"reagents":[{"reagent":"q salt","millimolar":10}]}"#;

#[test]
fn batch_gives_one_record_per_line_even_for_lines_that_once_crashed_it() {
    let good = r#"{"name":"good","reagents":[{"reagent":"acetic acid","millimolar":10}]}"#;
    let input = [good, PROTON_SUM_LINE, good, PROTON_MIN_LINE, good].join("\n") + "\n";
    let o = with_stdin(&["batch", "-"], &input);
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
    let out = stdout(&o);
    let recs: Vec<&str> = out.lines().collect();
    assert_eq!(recs.len(), 5, "{out}");
    for (i, r) in recs.iter().enumerate() {
        if i % 2 == 0 {
            let r: BatchRecord = serde_json::from_str(r).unwrap();
            assert_eq!(r.line, i + 1);
        } else {
            let e: BatchErrorRecord = serde_json::from_str(r).unwrap();
            assert_eq!(e.line, i + 1);
            assert!(!e.error.is_empty());
        }
    }
}

#[test]
fn a_user_definition_named_like_a_builtin_of_another_kind_is_refused() {
    // An ion named like the built-in acetate family, charge +3: once accepted, and 0.1 mol/L
    // sodium acetate then gave pH 13.60 with exit 0 (about 8.9 expected: pKa 4.76, common practice).
    let p = temp_file(
        "collide.json",
        r#"{"format":"protolyte-recipe/1",
           "definitions":{"ions":[{"name":"acetate","charge":3}],
             "complexes":[{"name":"weird","log_beta":2,"parts":[{"ion":"acetate"},{"ion":"sodium"}]}]},
           "reagents":[{"reagent":"sodium acetate","molar":0.1}]}"#,
    );
    let o = protolyte(&["solve", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(3), "{}", stdout(&o));
    let err = stderr(&o);
    assert!(err.contains("definitions.ions[0]"), "{err}");
    assert!(err.contains("acetate") && err.contains("protolyte"), "{err}");
    // Two definitions of the same name in one document: both are named.
    let p = temp_file(
        "twice.json",
        r#"{"format":"protolyte-recipe/1",
           "definitions":{"ions":[{"name":"q","charge":2}],"protolytes":[{"name":"Q","pka":[5],"charge_most_protonated":0}]},
           "reagents":[{"reagent":"sodium chloride","molar":0.1}]}"#,
    );
    let o = protolyte(&["solve", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(3), "{}", stdout(&o));
    let err = stderr(&o);
    assert!(
        err.contains("definitions.ions[0]") && err.contains("definitions.protolytes[0]"),
        "{err}"
    );
}

#[test]
fn long_names_and_lines_are_refused_quickly_with_a_short_message() {
    let long = "x".repeat(400_000);
    let p = temp_file(
        "longname.json",
        &format!(r#"{{"format":"protolyte-recipe/1","reagents":[{{"reagent":"{long}","molar":0.1}}]}}"#),
    );
    let o = protolyte(&["solve", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(3));
    let err = stderr(&o);
    assert!(
        err.contains("reagents[0].reagent") && err.contains("200"),
        "{}",
        &err[..err.len().min(300)]
    );
    assert!(err.len() < 400, "message of {} bytes", err.len());
    // A batch line over the line limit gives its own error record; the others run.
    let good = r#"{"reagents":[{"reagent":"acetic acid","millimolar":10}]}"#;
    let huge = format!(r#"{{"name":"{}","reagents":[]}}"#, "y".repeat(2 << 20));
    let input = format!("{good}\n{huge}\n{good}\n");
    let o = with_stdin(&["batch", "-"], &input);
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
    let out = stdout(&o);
    let recs: Vec<&str> = out.lines().collect();
    assert_eq!(recs.len(), 3);
    let e: BatchErrorRecord = serde_json::from_str(recs[1]).unwrap();
    assert_eq!((e.line, e.kind.as_str()), (2, "input"));
    assert!(e.error.contains("1048576"), "{}", e.error);
    assert!(recs[1].len() < 400);
    // Too many lines in one recipe.
    let line = r#"{"reagent":"sodium chloride","millimolar":1}"#;
    let many = vec![line; 1001].join(",");
    let p = temp_file(
        "many.json",
        &format!(r#"{{"format":"protolyte-recipe/1","reagents":[{many}]}}"#),
    );
    let o = protolyte(&["solve", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(3));
    assert!(
        stderr(&o).contains("field `reagents`") && stderr(&o).contains("1000"),
        "{}",
        stderr(&o)
    );
    // A document over the size limit.
    let p = temp_file("big.json", &format!("{{\"name\":\"{}\"}}", "z".repeat(2 << 20)));
    let o = protolyte(&["solve", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(3));
    assert!(stderr(&o).contains("1048576"), "{}", stderr(&o));
}

#[test]
fn batch_on_a_directory_is_an_input_error() {
    let dir = std::env::temp_dir().join(format!("protolyte-cli-dir-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let o = protolyte(&["batch", dir.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(3), "{}", stderr(&o));
    assert!(stderr(&o).contains("directory"), "{}", stderr(&o));
}

#[test]
fn a_plot_that_cannot_be_written_exits_5_after_the_table() {
    let o = protolyte(&["solve", "examples/hatchery_makeup.json", "--plot", "/no/such/dir/x.svg"]);
    assert_eq!(o.status.code(), Some(5));
    assert!(stdout(&o).contains("pH "), "{}", stdout(&o));
    assert!(stderr(&o).contains("/no/such/dir/x.svg"), "{}", stderr(&o));
    let o = protolyte(&[
        "titrate",
        "examples/soft_drink_acidity.json",
        "--plot",
        "/no/such/dir/x.svg",
    ]);
    assert_eq!(o.status.code(), Some(5));
    assert!(stdout(&o).starts_with("volume_ml,ph"), "{}", stdout(&o));
}

#[test]
fn a_refused_amount_names_its_field() {
    let p = temp_file(
        "amount.json",
        r#"{"format":"protolyte-recipe/1","reagents":[{"reagent":"acetic acid","molar":0.1},{"reagent":"sodium acetate","millimolar":-5}]}"#,
    );
    let o = protolyte(&["solve", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(3));
    assert!(stderr(&o).contains("field `reagents[1].millimolar`"), "{}", stderr(&o));
    let p = temp_file(
        "stock.json",
        r#"{"format":"protolyte-recipe/1","reagents":[{"reagent":"acetic acid","stock_molar":1,"aliquot_ml":-1,"final_volume_ml":100}]}"#,
    );
    let o = protolyte(&["solve", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(3));
    assert!(stderr(&o).contains("field `reagents[0].aliquot_ml`"), "{}", stderr(&o));
}

#[test]
fn json_with_a_byte_order_mark_is_read_as_json() {
    let text = std::fs::read_to_string(repo_root().join("examples/hatchery_makeup.json")).unwrap();
    let p = temp_file("bom.json", &format!("\u{feff}{text}"));
    let o = protolyte(&["solve", "--json", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let o = with_stdin(&["solve", "--json", "-"], &format!("\u{feff}{text}"));
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    // And a batch whose first line starts with one.
    let line = r#"{"reagents":[{"reagent":"acetic acid","millimolar":10}]}"#;
    let o = with_stdin(&["batch", "-"], &format!("\u{feff}{line}\n{line}\n"));
    assert_eq!(o.status.code(), Some(0), "{}", stdout(&o));
}

#[test]
fn no_convergence_messages_read_as_sentences() {
    let e = protolyte::Error::NoConvergence {
        path: "general",
        iterations: 3,
        max_residual: 1.0,
        worst_equation: "a non-finite value in the result".into(),
        last_ph: 7.0,
    };
    assert!(!e.to_string().contains("the a "), "{e}");
}

#[test]
fn syntax_errors_quote_long_input_short() {
    let key = "k".repeat(500_000);
    let line = format!(r#"{{"{key}": 1, "reagents": []}}"#);
    let o = with_stdin(&["batch", "-"], &format!("{line}\n"));
    assert_eq!(o.status.code(), Some(1));
    let out = stdout(&o);
    let e: BatchErrorRecord = serde_json::from_str(out.trim()).unwrap();
    assert_eq!(e.kind, "syntax");
    assert!(e.error.len() < 600, "{} bytes", e.error.len());
    let p = temp_file(
        "longvalue.json",
        &format!(r#"{{"format":"protolyte-recipe/1","reagents":[{{"reagent":"acetic acid","molar":"{key}"}}]}}"#),
    );
    let o = protolyte(&["solve", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(3));
    assert!(stderr(&o).len() < 700, "{} bytes", stderr(&o).len());
}

#[test]
fn solve_names_the_bates_guggenheim_convention_and_agrees_with_the_library() {
    use protolyte::{ActivityModel, Amount, Catalog, Conditions, PhConvention, Recipe, Temperature};
    // The 0.05 mol/kg potassium hydrogen phthalate reference buffer, pH(S) in the
    // Bates–Guggenheim convention.
    let doc = r#"{
  "format": "protolyte-recipe/1",
  "activity": "davies",
  "ph_convention": "bates-guggenheim",
  "reagents": [{ "reagent": "potassium hydrogen phthalate", "molal": 0.05 }]
}"#;
    let path = temp_file("khp_bates_guggenheim.json", doc);
    let o = protolyte(&["solve", path.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let out = stdout(&o);
    let conditions_line = out.lines().find(|l| l.starts_with("conditions")).unwrap();
    assert!(conditions_line.contains("pH convention: Bates–Guggenheim"), "{out}");
    // The same solution through the library, with the same Conditions.
    let cat = Catalog::builtin();
    let mut r = Recipe::new();
    r.add(
        &cat.reagent("potassium hydrogen phthalate").unwrap(),
        Amount::molal(0.05),
    )
    .unwrap();
    let c = Conditions::new(Temperature::celsius(25.0), ActivityModel::Davies)
        .with_ph_convention(PhConvention::BatesGuggenheim);
    let lib = r.compile(&c).unwrap().solve().unwrap().ph();
    let o = protolyte(&["solve", "--json", path.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let res: SolveResult = serde_json::from_str(&stdout(&o)).unwrap();
    assert_eq!(res.ph_convention.as_deref(), Some("bates-guggenheim"));
    assert!((res.ph - lib).abs() < 1e-12, "CLI {} vs library {lib}", res.ph);
    let text_ph: f64 = out
        .lines()
        .find_map(|l| l.strip_prefix("pH "))
        .unwrap()
        .trim()
        .parse()
        .unwrap();
    assert!((text_ph - lib).abs() < 1e-4, "table {text_ph} vs library {lib}");
    // Sanity bound: pH(S) = 4.005 at 25 °C (R. P. Buck et al., Pure Appl. Chem. 74 (2002)
    // 2169, the primary standard potassium hydrogen phthalate 0.05 mol/kg).
    assert!((lib - 4.005).abs() < 0.01, "pH {lib}");
    // Without the field the table names no convention.
    let plain = temp_file(
        "khp_model.json",
        &doc.replace("  \"ph_convention\": \"bates-guggenheim\",\n", ""),
    );
    let o = protolyte(&["solve", plain.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert!(!stdout(&o).contains("convention"), "{}", stdout(&o));
}

#[test]
fn titrate_and_design_name_the_bates_guggenheim_convention() {
    let t = r#"{ "format": "protolyte-titration/1", "ph_convention": "bates-guggenheim",
  "analyte": { "volume_ml": 25, "reagents": [{ "reagent": "acetic acid", "molar": 0.01 }] },
  "titrant": { "reagents": [{ "reagent": "sodium hydroxide", "molar": 0.01 }] },
  "end_volume_ml": 30 }"#;
    let path = temp_file("titration_bg.json", t);
    let o = protolyte(&["titrate", path.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    // In the endpoint report (standard error): the curve on standard output is pure CSV.
    assert!(stderr(&o).contains("pH convention: Bates–Guggenheim"), "{}", stderr(&o));
    let o = protolyte(&["titrate", "--json", path.to_str().unwrap()]);
    let r: TitrationResult = serde_json::from_str(&stdout(&o)).unwrap();
    assert_eq!(r.ph_convention.as_deref(), Some("bates-guggenheim"));
    let o = protolyte(&["titrate", "--json", "examples/soft_drink_acidity.json"]);
    let r: TitrationResult = serde_json::from_str(&stdout(&o)).unwrap();
    assert_eq!(r.ph_convention, None);

    let design = std::fs::read_to_string(repo_root().join("examples/tris_buffer_design.json")).unwrap();
    let design = design.replacen('{', "{\n  \"ph_convention\": \"bates-guggenheim\",", 1);
    let path = temp_file("design_bg.json", &design);
    let o = protolyte(&["design", path.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert!(
        stdout(&o).contains("pH convention     Bates–Guggenheim"),
        "{}",
        stdout(&o)
    );
    let o = protolyte(&["design", "--json", path.to_str().unwrap()]);
    let d: DesignResult = serde_json::from_str(&stdout(&o)).unwrap();
    let check = d.check.unwrap();
    assert_eq!(check.ph_convention.as_deref(), Some("bates-guggenheim"));
    assert!((check.ph - 8.0).abs() < 1e-6);
    assert_eq!(
        d.recipe.ph_convention,
        Some(protolyte::document::PhConventionDoc::BatesGuggenheim)
    );
}

#[test]
fn calibrate_and_analyze_the_example_measured_titration() {
    let o = protolyte(&["calibrate", "examples/electrode_calibration.json"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert!(stdout(&o).contains("% of the Nernst slope"), "{}", stdout(&o));
    let svg = std::env::temp_dir().join(format!("protolyte-cli-measured-{}.svg", std::process::id()));
    let o = protolyte(&[
        "analyze",
        "examples/vinegar_analysis.json",
        "--plot",
        svg.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let out = stdout(&o);
    assert!(
        out.contains("Gran after") && out.contains("% w/w") && out.contains("ISO 385"),
        "{out}"
    );
    assert!(std::fs::read_to_string(&svg).unwrap().contains("residual"));
    let o = protolyte(&["analyze", "--json", "examples/vinegar_analysis.json"]);
    let r: protolyte::document::MeasuredResult = serde_json::from_str(&stdout(&o)).unwrap();
    // The file was made from 5.00 % w/w acetic acid (examples/make_measured.rs): the reported
    // content covers it within its expanded uncertainty.
    let p = r.percent_w_w.unwrap();
    assert!((p.value - 5.0).abs() <= p.expanded_uncertainty, "{p:?}");
    assert!(r.gran_before.is_some() && r.gran_after.is_some());
    assert!(r.fit.is_some());
}

#[test]
fn a_bad_data_line_is_named_with_its_file_and_line() {
    let csv = temp_file("bad.csv", "volume_ml,ph\n1,4.0\n2,4.2\n3,x\n");
    let req = temp_file(
        "bad_measured.json",
        r#"{"format":"protolyte-measured/1","data":{"file":"bad.csv"},"aliquot_ml":25,
            "titrant_molar":0.1,"titrant_standard_uncertainty_molar":0.0001,
            "analyte":{"name":"acetic acid"}}"#,
    );
    let o = protolyte(&["analyze", req.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(3));
    let err = stderr(&o);
    assert!(err.contains(csv.to_str().unwrap()) && err.contains("line 4"), "{err}");
}

#[test]
fn fit_warns_when_two_estimates_correlate() {
    // One curve cannot separate the analyte's and the titrant's concentrations: only their
    // ratio (the endpoint) is fixed, so the two estimates correlate beyond 0.99.
    let doc = r#"{"format":"protolyte-fit/1",
      "curves":[{"analyte":{"volume_ml":25,"reagents":[{"reagent":"acetic acid","molar":0.1}]},
                 "titrant":{"reagents":[{"reagent":"sodium hydroxide","molar":0.1}]},
                 "measured":[{"volume_ml":5,"ph":4.16},{"volume_ml":10,"ph":4.57},{"volume_ml":15,"ph":4.93},
                             {"volume_ml":20,"ph":5.36},{"volume_ml":24,"ph":6.13},{"volume_ml":26,"ph":11.29},
                             {"volume_ml":30,"ph":11.96}]}],
      "estimate":[{"analyte_total":"acetate"},{"titrant_total":"sodium"}]}"#;
    let p = temp_file("correlated_fit.json", doc);
    let o = protolyte(&["fit", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert!(
        stdout(&o).contains("warning:") && stdout(&o).contains("correlate"),
        "{}",
        stdout(&o)
    );
}

#[test]
fn solve_draws_the_buffer_capacity_plot() {
    let svg = std::env::temp_dir().join(format!("protolyte-cli-capacity-{}.svg", std::process::id()));
    let o = protolyte(&[
        "solve",
        "examples/hatchery_makeup.json",
        "--capacity-plot",
        svg.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let text = std::fs::read_to_string(&svg).unwrap();
    assert!(
        text.starts_with("<svg") && text.contains("local maximum"),
        "{}",
        &text[..200.min(text.len())]
    );
}

#[test]
fn solve_draws_the_saturation_plot_of_the_closed_solution() {
    // The pool recipe holds its pH fixed; the sweep is of the closed solution, marked at the
    // result's pH, with one line for calcite among the solids whose parts are present.
    let svg = std::env::temp_dir().join(format!("protolyte-cli-saturation-{}.svg", std::process::id()));
    let o = protolyte(&[
        "solve",
        "examples/pool_water.toml",
        "--saturation-plot",
        svg.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let text = std::fs::read_to_string(&svg).unwrap();
    assert!(
        text.starts_with("<svg") && text.contains("calcite"),
        "{}",
        &text[..200.min(text.len())]
    );
    let o = protolyte(&["solve", "examples/pool_water.toml", "--saturation-plot", "x.png"]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
}

#[test]
fn batch_runs_titration_and_design_requests_beside_recipes() {
    let titration = std::fs::read_to_string(repo_root().join("examples/soft_drink_acidity.json")).unwrap();
    let design = std::fs::read_to_string(repo_root().join("examples/tris_buffer_design.json")).unwrap();
    let one_line = |t: &str| serde_json::to_string(&serde_json::from_str::<serde_json::Value>(t).unwrap()).unwrap();
    let input = format!(
        "{}\n{}\n{}\n{}\n",
        r#"{"reagents": [{"reagent": "acetic acid", "millimolar": 10}]}"#,
        one_line(&titration),
        one_line(&design),
        r#"{"format": "protolyte-titration/1", "analyte": {"volume_ml": 25, "reagents": []}, "titrant": {"reagents": [{"reagent": "no such thing", "molar": 0.1}]}, "end_volume_ml": 5}"#
    );
    let o = with_stdin(&["batch", "-"], &input);
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
    let out = stdout(&o);
    let lines: Vec<serde_json::Value> = out.lines().map(|l| serde_json::from_str(l).unwrap()).collect();
    assert_eq!(lines.len(), 4);
    assert!(lines[0]["ph"].as_f64().unwrap() > 3.0);
    assert_eq!(lines[1]["kind"], "titration");
    let t: TitrationResult = serde_json::from_value(lines[1]["result"].clone()).unwrap();
    assert!(!t.equivalence_points.is_empty());
    assert_eq!(lines[2]["kind"], "design");
    let d: DesignResult = serde_json::from_value(lines[2]["result"].clone()).unwrap();
    assert!((d.check_ph - 8.0).abs() < 1e-6);
    assert_eq!(lines[3]["kind"], "input");
    assert_eq!(lines[3]["line"], 4);
}

#[test]
fn a_buffer_far_from_its_pka_carries_a_warning() {
    // Tris (pKa 8.07 at 25 °C) asked for pH 6.0: two units away.
    let doc = std::fs::read_to_string(repo_root().join("examples/tris_buffer_design.json"))
        .unwrap()
        .replace("\"target_ph\": 8.0", "\"target_ph\": 6.0");
    assert!(doc.contains("\"target_ph\": 6.0"));
    let p = temp_file("tris_far.json", &doc);
    let o = protolyte(&["design", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert!(stdout(&o).contains("from the nearest pKa"), "{}", stdout(&o));
    let o = protolyte(&["design", "examples/tris_buffer_design.json"]);
    assert!(!stdout(&o).contains("from the nearest pKa"), "{}", stdout(&o));
}

#[test]
fn data_lists_solids_and_gases() {
    // Calcite: log K_sp −8.48 at 25 °C and ΔH° −9.61 kJ/mol (L. N. Plummer, E. Busenberg,
    // Geochim. Cosmochim. Acta 46 (1982) 1011), as entered in the catalogue.
    let o = protolyte(&["data", "calcite"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let out = stdout(&o);
    assert!(out.contains("solid     calcite"), "{out}");
    assert!(out.contains("log K -8.48"), "{out}");
    let o = protolyte(&["data", "--json", "calcite"]);
    let all: Vec<serde_json::Value> = serde_json::from_str(&stdout(&o)).unwrap();
    let c = all.iter().find(|e| e["kind"] == "solid").unwrap();
    assert_eq!(c["log10_k"].as_f64(), Some(-8.48));
    assert_eq!(c["dh_kj_per_mol"].as_f64(), Some(-9.61));
    assert_eq!(c["parts"].as_array().unwrap().len(), 2);
    assert!(c["reaction"].as_str().unwrap().starts_with("calcite ⇌"));
    assert!(c["from_memory"].is_boolean());
    assert!(c["log_k_equation"]["coefficients"].is_array());
    // CO2(g): log K_H −1.47 at 25 °C (Plummer & Busenberg 1982, as entered).
    let o = protolyte(&["data", "--json", "CO2(g)"]);
    let all: Vec<serde_json::Value> = serde_json::from_str(&stdout(&o)).unwrap();
    let g = all.iter().find(|e| e["kind"] == "gas").unwrap();
    assert!((g["log10_kh"].as_f64().unwrap() + 1.47).abs() < 0.01);
    assert!(!g["source"].as_str().unwrap().is_empty());
    // The full listing holds every solid and gas of the catalogue (at least 25 solids, 4 gases).
    let o = protolyte(&["data", "--json"]);
    let all: Vec<serde_json::Value> = serde_json::from_str(&stdout(&o)).unwrap();
    assert!(all.iter().filter(|e| e["kind"] == "solid").count() >= 25);
    assert!(all.iter().filter(|e| e["kind"] == "gas").count() >= 4);
}
