//! The document format: round trips, TOML, errors that name the place, the shipped example
//! documents, and batch runs against single solves.
#![cfg(feature = "serde")]

use protolyte::document::{
    self, AmountLine, DesignDoc, DesignResult, DocumentError, FitDoc, FitResult, RecipeDoc, SolveResult, TitrationDoc,
};
use protolyte::{Amount, Catalog};

fn cat() -> Catalog {
    Catalog::builtin()
}

fn solve_doc(doc: &RecipeDoc) -> protolyte::Equilibrium {
    let (recipe, conditions) = doc.to_recipe(&cat()).expect("recipe");
    recipe.compile(&conditions).expect("compile").solve().expect("solve")
}

const BUFFER_JSON: &str = r#"{
  "format": "protolyte-recipe/1",
  "name": "acetate buffer",
  "temperature_celsius": 25,
  "activity": "davies",
  "reagents": [
    { "reagent": "acetic acid", "millimolar": 20 },
    { "reagent": "sodium acetate", "molar": 0.01 },
    { "reagent": "sodium chloride", "grams": 0.5844, "final_volume_ml": 100 }
  ]
}"#;

const BUFFER_TOML: &str = r#"
format = "protolyte-recipe/1"
name = "acetate buffer"
temperature_celsius = 25.0
activity = "davies"

[[reagents]]
reagent = "acetic acid"
millimolar = 20.0

[[reagents]]
reagent = "sodium acetate"
molar = 0.01

[[reagents]]
reagent = "sodium chloride"
grams = 0.5844
final_volume_ml = 100.0
"#;

#[test]
fn json_recipe_round_trips() {
    let doc: RecipeDoc = document::parse(BUFFER_JSON, "buffer.json").unwrap();
    let text = serde_json::to_string_pretty(&doc).unwrap();
    let back: RecipeDoc = document::parse(&text, "again.json").unwrap();
    assert_eq!(back, doc);
    // Document → recipe → document → recipe gives the same recipe.
    let (recipe, conditions) = doc.to_recipe(&cat()).unwrap();
    let again = RecipeDoc::from_recipe(&recipe, &conditions);
    let (recipe2, conditions2) = again.to_recipe(&cat()).unwrap();
    assert_eq!(recipe2, recipe);
    assert_eq!(conditions2, conditions);
}

#[test]
fn toml_and_json_give_the_same_recipe() {
    let j: RecipeDoc = document::parse(BUFFER_JSON, "b.json").unwrap();
    let t: RecipeDoc = document::parse(BUFFER_TOML, "b.toml").unwrap();
    assert_eq!(j, t);
    let ph = solve_doc(&t).ph();
    // With Davies activities the 2:1 acetate buffer reads below pKa − log 2 = 4.455
    // (pKa 4.756, Goldberg et al. 2002; the activity shift is common practice).
    assert!(ph > 4.1 && ph < 4.455, "pH {ph}");
}

#[test]
fn amount_forms_agree() {
    // 0.5844 g NaCl (58.44 g/mol, IUPAC atomic weights) in 100 mL is 0.1 mol/L; 10 mL of a
    // 1 mol/L stock made up to 100 mL is 0.1 mol/L (common practice).
    let forms = [
        r#"{"reagent": "sodium chloride", "molar": 0.1}"#,
        r#"{"reagent": "sodium chloride", "millimolar": 100}"#,
        r#"{"reagent": "sodium chloride", "grams": 0.58443, "final_volume_ml": 100}"#,
        r#"{"reagent": "sodium chloride", "stock_molar": 1.0, "aliquot_ml": 10, "final_volume_ml": 100}"#,
    ];
    for f in forms {
        let line: AmountLine = serde_json::from_str(f).unwrap();
        let doc = RecipeDoc {
            reagents: vec![line],
            ..RecipeDoc::new()
        };
        let (recipe, _) = doc.to_recipe(&cat()).unwrap();
        let v = recipe.entries()[0].amount.value();
        assert!((v - 0.1).abs() < 1e-4, "{f}: {v}");
    }
    // The molal form stays molal.
    let line: AmountLine = serde_json::from_str(r#"{"reagent": "sodium chloride", "molal": 0.1}"#).unwrap();
    let doc = RecipeDoc {
        reagents: vec![line],
        ..RecipeDoc::new()
    };
    assert_eq!(doc.to_recipe(&cat()).unwrap().0.entries()[0].amount, Amount::molal(0.1));
}

#[test]
fn bad_json_names_file_line_and_column() {
    let text = "{\n  \"format\": \"protolyte-recipe/1\",\n  \"reagents\": [\n    { \"reagent\": \"acetic acid\", \"millimolar\": 2o }\n  ]\n}";
    let err = document::parse::<RecipeDoc>(text, "broken.json").unwrap_err();
    match &err {
        DocumentError::Syntax { file, line, column, .. } => {
            assert_eq!(file, "broken.json");
            assert_eq!(*line, 4);
            assert!(*column > 30, "column {column}");
        }
        other => panic!("{other:?}"),
    }
    assert!(err.to_string().starts_with("broken.json:4:"));
    // An unknown field is refused with its position.
    let err = document::parse::<RecipeDoc>("{\"reagnets\": []}", "typo.json").unwrap_err();
    assert!(err.to_string().contains("unknown field `reagnets`"), "{err}");
}

#[test]
fn bad_toml_names_line_and_column() {
    let text = "format = \"protolyte-recipe/1\"\n[[reagents]]\nreagent = \"acetic acid\"\nmillimolar = \"lots\"\n";
    let err = document::parse::<RecipeDoc>(text, "broken.toml").unwrap_err();
    assert!(matches!(err, DocumentError::Syntax { line: 4, .. }), "{err:?}");
}

#[test]
fn refused_fields_are_named() {
    let field = |json: &str| -> (String, String) {
        let doc: RecipeDoc = document::parse(json, "x.json").unwrap();
        match doc.to_recipe(&cat()).unwrap_err() {
            DocumentError::Field { field, message, .. } => (field, message),
            other => panic!("{other:?}"),
        }
    };
    let (f, m) = field(
        r#"{"reagents": [{"reagent": "acetic acid", "molar": 0.1}, {"reagent": "sodium acetat", "molar": 0.1}]}"#,
    );
    assert_eq!(f, "reagents[1].reagent");
    assert!(m.contains("did you mean `sodium acetate`"), "{m}");
    let (f, m) = field(r#"{"reagents": [{"reagent": "acetic acid", "molar": 0.1, "millimolar": 3}]}"#);
    assert_eq!(f, "reagents[0]");
    assert!(m.contains("exactly one amount"), "{m}");
    let (f, m) = field(r#"{"reagents": [{"reagent": "acetic acid", "molar": -0.1}]}"#);
    assert_eq!(f, "reagents[0].molar");
    assert!(m.contains("acetic acid"), "{m}");
    let (f, _) = field(r#"{"reagents": [{"reagent": "sodium chloride", "grams": 1.0}]}"#);
    assert_eq!(f, "reagents[0].final_volume_ml");
    let (f, _) = field(r#"{"temperature_celsius": 150, "reagents": []}"#);
    assert_eq!(f, "temperature_celsius");
    let (f, m) = field(r#"{"format": "protolyte-recipe/9", "reagents": []}"#);
    assert_eq!(f, "format");
    assert!(m.contains("not supported"), "{m}");
    // Read from memory, the message starts with the field; in a file, with the file.
    let doc: RecipeDoc = document::parse(r#"{"reagents": [{"reagent": "vinegar?", "molar": 1}]}"#, "x.json").unwrap();
    let err = doc.to_recipe(&cat()).unwrap_err();
    assert!(err.to_string().starts_with("field `reagents[0].reagent`"), "{err}");
    assert!(
        err.in_file("x.json")
            .to_string()
            .starts_with("x.json: field `reagents[0].reagent`")
    );
    // A missing format tag is refused where it is required.
    let doc: RecipeDoc = document::parse(r#"{"reagents": []}"#, "x.json").unwrap();
    assert!(doc.check_format(true).is_err());
    assert!(doc.check_format(false).is_ok());
}

#[test]
fn user_definitions_are_used() {
    let doc: RecipeDoc = document::load("examples/indicator_dye.json").unwrap();
    let eq = solve_doc(&doc);
    let dye = eq.family("dye X").expect("the user's family");
    // pH above the dye's pKa 6.8: most of it is deprotonated (common practice).
    assert!(eq.ph() > 6.8 && dye.fractions[0] > 0.5);
    // A user complex joins the system.
    let json = r#"{
      "definitions": {
        "ions": [{"name": "metal M", "charge": 2}],
        "reagents": [{"name": "M chloride", "parts": [{"ion": "metal M"}, {"ion": "chloride", "count": 2}]}],
        "complexes": [{"name": "M-acetate+", "log_beta": 1.5, "parts": [{"ion": "metal M"}, {"base": "acetate"}]}]
      },
      "reagents": [{"reagent": "M chloride", "millimolar": 10}, {"reagent": "sodium acetate", "millimolar": 10}]
    }"#;
    let doc: RecipeDoc = document::parse(json, "m.json").unwrap();
    let eq = solve_doc(&doc);
    assert!(eq.species_named("M-acetate+").unwrap().molal > 0.0);
}

#[test]
fn solve_result_round_trips_without_nan() {
    let doc: RecipeDoc = document::load("examples/pool_water.toml").unwrap();
    let eq = solve_doc(&doc);
    let r = SolveResult::from_equilibrium(&eq);
    let text = serde_json::to_string(&r).unwrap();
    assert!(!text.contains("NaN") && !text.contains("null"));
    let back: SolveResult = serde_json::from_str(&text).unwrap();
    assert_eq!(back, r);
    assert_eq!(back.species.len(), eq.species().len());
}

/// Every shipped example document parses and runs, by its format tag.
#[test]
fn example_documents_all_run() {
    let mut seen = 0;
    for entry in std::fs::read_dir("examples").unwrap() {
        let path = entry.unwrap().path();
        let ext = path.extension().and_then(|e| e.to_str()).unwrap_or("");
        if ext != "json" && ext != "toml" {
            continue;
        }
        let text = std::fs::read_to_string(&path).unwrap();
        let name = path.display().to_string();
        let value: serde_json::Value = if ext == "json" {
            serde_json::from_str(&text).unwrap()
        } else {
            let t: toml::Value = toml::from_str(&text).unwrap();
            serde_json::to_value(t).unwrap()
        };
        let format = value["format"].as_str().unwrap_or_else(|| panic!("{name}: no format"));
        match format {
            "protolyte-recipe/1" => {
                let d: RecipeDoc = document::load(&path).unwrap();
                d.check_format(true).unwrap();
                let eq = solve_doc(&d);
                assert!(eq.residuals().max_relative() < 1e-9, "{name}");
            }
            "protolyte-titration/1" => {
                let d: TitrationDoc = document::load(&path).unwrap();
                let t = d.to_titration(&cat()).unwrap();
                let curve = t.curve_adaptive(&d.stepping().unwrap()).unwrap();
                assert!(curve.len() > 10, "{name}");
                assert!(!t.equivalence_points().unwrap().is_empty(), "{name}");
            }
            "protolyte-design/1" => {
                let d: DesignDoc = document::load(&path).unwrap();
                let r = d.to_spec(&cat()).unwrap().design().unwrap();
                assert!(r.ph_residual.abs() < 1e-6, "{name}");
                let doc = DesignResult::from_recipe(&r, &d.conditions().unwrap());
                // The designed recipe, written as a recipe document, solves to the target.
                let eq = solve_doc(&doc.recipe);
                assert!((eq.ph() - r.target_ph).abs() < 1e-6, "{name}");
            }
            "protolyte-fit/1" => {
                let d: FitDoc = document::load(&path).unwrap();
                let report = d.to_fit(&cat()).unwrap().run().unwrap();
                assert!(report.converged, "{name}");
                let r = FitResult::from(&report);
                assert!(r.estimates.iter().all(|e| e.standard_error.is_some()), "{name}");
            }
            "protolyte-calibration/1" => {
                let d: document::CalibrationDoc = document::load(&path).unwrap();
                let c = d.to_calibration().unwrap();
                assert!(c.warnings.is_empty(), "{name}");
            }
            "protolyte-measured/1" => {
                let d: document::MeasuredDoc = document::load(&path).unwrap();
                let data = path.parent().unwrap().join(&d.data.file);
                let r = d.analyze(&std::fs::read_to_string(data).unwrap(), &cat()).unwrap();
                assert!(r.relative_standard_uncertainty > 0.0, "{name}");
            }
            other => panic!("{name}: unknown format {other}"),
        }
        seen += 1;
    }
    assert!(seen >= 5, "only {seen} example documents");
}

#[cfg(feature = "batch")]
mod batch {
    use super::*;
    use protolyte::document::batch::{BatchErrorRecord, BatchOptions, BatchRecord, run};
    use protolyte::{Conditions, Recipe};

    fn line(i: usize) -> String {
        let a = 1.0 + (i % 17) as f64;
        let b = 1.0 + (i % 11) as f64;
        format!(
            r#"{{"name":"r{i}","reagents":[{{"reagent":"acetic acid","millimolar":{a}}},{{"reagent":"sodium acetate","millimolar":{b}}},{{"reagent":"ammonium chloride","millimolar":2}}]}}"#
        )
    }

    #[test]
    fn batch_keeps_order_matches_single_solves_and_survives_bad_lines() {
        let n = 3000;
        let mut input = String::new();
        for i in 0..n {
            if i == 1234 {
                input.push_str("{\"reagents\": [ oops ]}\n");
            } else if i == 2000 {
                input.push_str(r#"{"reagents": [{"reagent": "unobtainium", "molar": 1}]}"#);
                input.push('\n');
            } else {
                input.push_str(&line(i));
                input.push('\n');
            }
        }
        let opts = BatchOptions {
            full: false,
            chunk_lines: 1024,
        };
        let mut out = Vec::new();
        let s = run(input.as_bytes(), &mut out, &cat(), &opts, |_, _| {}).unwrap();
        assert_eq!((s.records, s.failed), (n, 2));
        let text = String::from_utf8(out.clone()).unwrap();
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(lines.len(), n);
        for (i, l) in lines.iter().enumerate() {
            if i == 1234 || i == 2000 {
                let e: BatchErrorRecord = serde_json::from_str(l).unwrap();
                assert_eq!(e.line, i + 1);
                assert_eq!(e.kind, if i == 1234 { "syntax" } else { "input" });
                continue;
            }
            let r: BatchRecord = serde_json::from_str(l).unwrap();
            assert_eq!(r.line, i + 1);
            assert_eq!(r.name.as_deref(), Some(format!("r{i}").as_str()));
            if i % 97 == 0 {
                // The same recipe solved on its own, from a cold start.
                let doc: RecipeDoc = serde_json::from_str(&line(i)).unwrap();
                let ph = solve_doc(&doc).ph();
                assert!((r.ph - ph).abs() < 1e-9, "line {}: {} vs {ph}", i + 1, r.ph);
            }
        }
        // The output does not depend on the thread schedule.
        let mut again = Vec::new();
        run(input.as_bytes(), &mut again, &cat(), &opts, |_, _| {}).unwrap();
        assert_eq!(again, out);
    }

    #[test]
    fn batch_lines_with_definitions_escapes_and_typos() {
        let dye = std::fs::read_to_string("examples/indicator_dye.json").unwrap();
        let dye: serde_json::Value = serde_json::from_str(&dye).unwrap();
        let input = format!(
            "{}\n{}\n{}\n{}\n",
            serde_json::to_string(&dye).unwrap(),
            // An escaped name is read like any other.
            r#"{"name": "tab\there", "reagents": [{"reagent": "acetic \u0061cid", "millimolar": 1}]}"#,
            r#"{"reagents": [{"reagent": "acetic acid", "milimolar": 1}]}"#,
            r#"{"format": "protolyte-titration/1", "reagents": []}"#,
        );
        let mut out = Vec::new();
        let s = run(input.as_bytes(), &mut out, &cat(), &BatchOptions::default(), |_, _| {}).unwrap();
        assert_eq!((s.records, s.failed), (4, 2));
        let text = String::from_utf8(out).unwrap();
        let lines: Vec<&str> = text.lines().collect();
        let dye_rec: BatchRecord = serde_json::from_str(lines[0]).unwrap();
        let single = solve_doc(&serde_json::from_value(dye).unwrap());
        assert!((dye_rec.ph - single.ph()).abs() < 1e-12);
        let esc: BatchRecord = serde_json::from_str(lines[1]).unwrap();
        assert_eq!(esc.name.as_deref(), Some("tab\there"));
        let typo: BatchErrorRecord = serde_json::from_str(lines[2]).unwrap();
        assert_eq!(typo.kind, "syntax");
        assert!(typo.error.contains("unknown field `milimolar`"), "{}", typo.error);
        // A titration request is run as one since batch accepts requests (issue 10): this
        // one lacks its fields and has a recipe's, a syntax error of the request.
        let wrong: BatchErrorRecord = serde_json::from_str(lines[3]).unwrap();
        assert_eq!(wrong.kind, "syntax");
        assert!(wrong.error.contains("reagents"), "{}", wrong.error);
    }

    #[test]
    fn full_records_carry_the_whole_result() {
        let input = format!("{}\n\n{}\n", line(1), line(2));
        let mut out = Vec::new();
        let opts = BatchOptions {
            full: true,
            ..Default::default()
        };
        let s = run(input.as_bytes(), &mut out, &cat(), &opts, |_, _| {}).unwrap();
        // The blank line gives no record; line numbers still count it.
        assert_eq!(s.records, 2);
        let text = String::from_utf8(out).unwrap();
        let recs: Vec<BatchRecord> = text.lines().map(|l| serde_json::from_str(l).unwrap()).collect();
        assert_eq!(recs[1].line, 3);
        let full = recs[0].result.as_ref().unwrap();
        assert_eq!(full.families.len(), 2);
        // The batch record agrees with the single solve's document.
        let eq = solve_doc(&serde_json::from_str(&line(1)).unwrap());
        assert!((full.ph - eq.ph()).abs() < 1e-9);
        let mut r = Recipe::new();
        r.add(&cat().reagent("acetic acid").unwrap(), Amount::millimolar(2.0))
            .unwrap();
        assert!(r.compile(&Conditions::default()).is_ok());
    }
}

/// The JSON Schema parses and knows every top-level field the example documents use.
#[test]
fn schema_knows_the_example_fields() {
    let schema: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string("schema/recipe.schema.json").unwrap()).unwrap();
    for entry in std::fs::read_dir("examples").unwrap() {
        let path = entry.unwrap().path();
        if path.extension().and_then(|e| e.to_str()) != Some("json") {
            continue;
        }
        let doc: serde_json::Value = serde_json::from_str(&std::fs::read_to_string(&path).unwrap()).unwrap();
        let kind = doc["format"]
            .as_str()
            .unwrap()
            .trim_start_matches("protolyte-")
            .trim_end_matches("/1");
        let props = &schema["$defs"][kind]["properties"];
        assert!(props.is_object(), "{kind}");
        for key in doc.as_object().unwrap().keys() {
            assert!(
                props.get(key).is_some(),
                "{}: `{key}` not in the schema",
                path.display()
            );
        }
    }
}

/// Every kind of request reads the same from TOML as from JSON.
#[test]
fn requests_read_from_toml_too() {
    fn same<T: serde::de::DeserializeOwned + serde::Serialize + PartialEq + std::fmt::Debug>(path: &str) {
        let from_json: T = document::load(path).unwrap();
        let toml_text = toml::to_string(&from_json).unwrap();
        let from_toml: T = document::parse_toml(&toml_text, "converted.toml").unwrap();
        assert_eq!(from_toml, from_json, "{path}");
    }
    same::<TitrationDoc>("examples/soft_drink_acidity.json");
    same::<DesignDoc>("examples/tris_buffer_design.json");
    same::<FitDoc>("examples/vinegar_fit.json");
    same::<RecipeDoc>("examples/indicator_dye.json");
}

#[test]
fn colliding_definitions_are_refused_with_both_names() {
    let err = |json: &str| -> (String, String) {
        let doc: RecipeDoc = document::parse(json, "x.json").unwrap();
        match doc.to_recipe(&cat()).unwrap_err() {
            DocumentError::Field { field, message, .. } => (field, message),
            other => panic!("{other:?}"),
        }
    };
    // An ion named like a built-in family (common practice: acetate is the conjugate base of
    // acetic acid, a family in the catalogue).
    let (f, m) = err(r#"{"definitions": {"ions": [{"name": "Acetate", "charge": 3}]}, "reagents": []}"#);
    assert_eq!(f, "definitions.ions[0].name");
    assert!(m.contains("`Acetate`") && m.contains("protolyte `acetate`"), "{m}");
    // A family named by a synonym of a built-in ion's entry, through its synonyms.
    let (f, m) = err(
        r#"{"definitions": {"protolytes": [{"name": "dye", "pka": [5], "charge_most_protonated": 0, "synonyms": ["SODIUM"]}]}, "reagents": []}"#,
    );
    assert_eq!(f, "definitions.protolytes[0].synonyms");
    assert!(m.contains("ion `sodium`"), "{m}");
    // A complex named like a user ion of the same document.
    let (f, m) = err(r#"{"definitions": {"ions": [{"name": "q", "charge": 2}],
            "complexes": [{"name": "q", "log_beta": 1, "parts": [{"ion": "q"}, {"ion": "chloride"}]}]}, "reagents": []}"#);
    assert_eq!(f, "definitions.complexes[0].name");
    assert!(m.contains("definitions.ions[0]"), "{m}");
    // Two reagents of the same name in one document.
    let (f, m) = err(
        r#"{"definitions": {"reagents": [{"name": "mix", "parts": [{"proton": true}, {"ion": "chloride"}]},
            {"name": "Mix", "parts": [{"hydroxide": true}, {"ion": "sodium"}]}]}, "reagents": []}"#,
    );
    assert_eq!(f, "definitions.reagents[1].name");
    assert!(m.contains("definitions.reagents[0]"), "{m}");
    // A neutral family's reagent of the same name is not a collision.
    let doc: RecipeDoc = document::load("examples/indicator_dye.json").unwrap();
    assert!(doc.to_recipe(&cat()).is_ok());
}

#[test]
fn names_and_lists_past_the_limits_are_refused_and_quoted_short() {
    use protolyte::document::limits::{MAX_ENTRIES, MAX_NAME_CHARS, MAX_PARTS};
    let mut doc = RecipeDoc::new();
    // At the limit: looked up (and unknown).
    doc.reagents
        .push(document::AmountLine::millimolar(&"é".repeat(MAX_NAME_CHARS), 1.0));
    let e = doc.to_recipe(&cat()).unwrap_err().to_string();
    assert!(e.contains("unknown reagent"), "{}", &e[..200]);
    // Past it: refused before the look-up, quoted short.
    doc.reagents[0] = document::AmountLine::millimolar(&"é".repeat(MAX_NAME_CHARS + 1), 1.0);
    let e = doc.to_recipe(&cat()).unwrap_err().to_string();
    assert!(
        e.contains("reagents[0].reagent") && e.contains("(201 characters)"),
        "{e}"
    );
    assert!(e.len() < 200, "{e}");
    let mut doc = RecipeDoc::new();
    doc.reagents = vec![document::AmountLine::millimolar("sodium chloride", 1.0); MAX_ENTRIES + 1];
    let e = doc.to_recipe(&cat()).unwrap_err();
    assert!(
        matches!(&e, DocumentError::Field { field, .. } if field == "reagents"),
        "{e}"
    );
    let pka: Vec<String> = (0..=MAX_PARTS).map(|i| format!("{}", 2 + i % 10)).collect();
    let json = format!(
        r#"{{"definitions": {{"protolytes": [{{"name": "poly", "pka": [{}], "charge_most_protonated": 0}}]}}, "reagents": []}}"#,
        pka.join(",")
    );
    let doc: RecipeDoc = document::parse(&json, "x.json").unwrap();
    let e = doc.to_recipe(&cat()).unwrap_err();
    assert!(
        matches!(&e, DocumentError::Field { field, .. } if field == "definitions.protolytes[0].pka"),
        "{e}"
    );
}

#[test]
fn a_byte_order_mark_is_skipped_in_json_and_toml() {
    let doc: RecipeDoc = document::parse("\u{feff}{\"reagents\": []}", "x.json").unwrap();
    assert!(doc.reagents.is_empty());
    let doc: RecipeDoc = document::parse("\u{feff}format = \"protolyte-recipe/1\"\nreagents = []\n", "x.toml").unwrap();
    assert_eq!(doc.format.as_deref(), Some("protolyte-recipe/1"));
    let text = format!(
        "{{\"name\": \"{}\"}}",
        "a".repeat(protolyte::document::limits::MAX_DOCUMENT_BYTES)
    );
    let e = document::parse::<RecipeDoc>(&text, "big.json").unwrap_err();
    assert!(matches!(e, DocumentError::Read { .. }), "{e}");
}

#[test]
fn a_definition_does_not_silently_replace_a_catalogue_entry() {
    // A second acetate family with another pKa (invented) would change every acetate reagent.
    let doc: RecipeDoc = document::parse(
        r#"{"definitions": {"protolytes": [{"name": "acetate", "pka": [4.0], "charge_most_protonated": 0}]}, "reagents": []}"#,
        "x.json",
    )
    .unwrap();
    match doc.to_recipe(&cat()).unwrap_err() {
        DocumentError::Field { field, message, .. } => {
            assert_eq!(field, "definitions.protolytes[0].name");
            assert!(message.contains("catalogue's protolyte `acetate`"), "{message}");
        }
        other => panic!("{other:?}"),
    }
}

/// The 0.05 mol/kg potassium hydrogen phthalate standard, in the Bates–Guggenheim convention.
const KHP_BG_JSON: &str = r#"{
  "format": "protolyte-recipe/1",
  "ph_convention": "bates-guggenheim",
  "reagents": [{ "reagent": "potassium hydrogen phthalate", "molal": 0.05 }]
}"#;

const KHP_BG_TOML: &str = r#"
format = "protolyte-recipe/1"
ph_convention = "bates-guggenheim"

[[reagents]]
reagent = "potassium hydrogen phthalate"
molal = 0.05
"#;

#[test]
fn ph_convention_is_read_from_json_and_toml() {
    use protolyte::{Conditions, PhConvention};
    let j: RecipeDoc = document::parse(KHP_BG_JSON, "khp.json").unwrap();
    let t: RecipeDoc = document::parse(KHP_BG_TOML, "khp.toml").unwrap();
    assert_eq!(j, t);
    assert_eq!(j.ph_convention, Some(document::PhConventionDoc::BatesGuggenheim));
    let (_, conditions) = j.to_recipe(&cat()).unwrap();
    assert_eq!(
        conditions,
        Conditions::default().with_ph_convention(PhConvention::BatesGuggenheim)
    );
    let bg = solve_doc(&j);
    assert_eq!(bg.ph_convention(), PhConvention::BatesGuggenheim);
    // "model" written out is the default; the speciation is the same under both conventions,
    // only the reported pH moves (DEVELOPERS.md, Activity coefficients).
    let model: RecipeDoc =
        document::parse(&KHP_BG_JSON.replace("bates-guggenheim", "model"), "khp-model.json").unwrap();
    assert_eq!(model.conditions().unwrap(), Conditions::default());
    let own = solve_doc(&model);
    assert_eq!(own.ph_convention(), PhConvention::Model);
    assert!((own.p_h_molal() - bg.p_h_molal()).abs() < 1e-12);
    assert!((own.ph() - bg.ph()).abs() > 1e-6, "{} {}", own.ph(), bg.ph());
    // The result document names the convention, and the round trip keeps it.
    assert_eq!(
        SolveResult::from_equilibrium(&bg).ph_convention.as_deref(),
        Some("bates-guggenheim")
    );
    let (recipe, c) = j.to_recipe(&cat()).unwrap();
    let back = RecipeDoc::from_recipe(&recipe, &c);
    assert_eq!(back.to_recipe(&cat()).unwrap().1, c);
    // Titration, design and fit requests take it too.
    let tdoc: TitrationDoc = document::parse(
        r#"{ "ph_convention": "bates-guggenheim",
             "analyte": { "volume_ml": 25, "reagents": [{ "reagent": "acetic acid", "molar": 0.01 }] },
             "titrant": { "reagents": [{ "reagent": "sodium hydroxide", "molar": 0.01 }] },
             "end_volume_ml": 30 }"#,
        "t.json",
    )
    .unwrap();
    assert_eq!(tdoc.conditions().unwrap().ph_convention, PhConvention::BatesGuggenheim);
    let ddoc: DesignDoc = document::parse(
        "ph_convention = \"bates-guggenheim\"\ntarget_ph = 7.0\nfinal_volume_ml = 100.0\n",
        "d.toml",
    )
    .unwrap();
    assert_eq!(ddoc.conditions().unwrap().ph_convention, PhConvention::BatesGuggenheim);
    let fdoc: FitDoc = document::parse(
        r#"{ "ph_convention": "bates-guggenheim", "curves": [], "estimate": [] }"#,
        "f.json",
    )
    .unwrap();
    assert_eq!(fdoc.ph_convention, Some(document::PhConventionDoc::BatesGuggenheim));
}

#[test]
fn an_unknown_ph_convention_is_refused_naming_the_field() {
    for (text, file) in [
        (KHP_BG_JSON.replace("bates-guggenheim", "Bates_Guggenheim"), "khp.json"),
        (KHP_BG_TOML.replace("bates-guggenheim", "bates guggenheim"), "khp.toml"),
    ] {
        let err = document::parse::<RecipeDoc>(&text, file).unwrap_err();
        let m = err.to_string();
        assert!(m.starts_with(&format!("{file}:")), "{m}");
        assert!(m.contains("`ph_convention`"), "{m}");
        assert!(m.contains("did you mean `bates-guggenheim`"), "{m}");
    }
    // A value like neither names both that are taken, and suggests nothing.
    let err = document::parse::<TitrationDoc>(r#"{ "ph_convention": "nbs" }"#, "t.json").unwrap_err();
    let m = err.to_string();
    assert!(
        m.contains("`ph_convention`") && m.contains("`model` or `bates-guggenheim`"),
        "{m}"
    );
    assert!(!m.contains("did you mean"), "{m}");
}

#[test]
fn without_ph_convention_documents_read_as_before() {
    use protolyte::PhConvention;
    let doc: RecipeDoc = document::parse(BUFFER_JSON, "buffer.json").unwrap();
    assert_eq!(doc.ph_convention, None);
    assert_eq!(doc.conditions().unwrap().ph_convention, PhConvention::Model);
    assert_eq!(solve_doc(&doc).ph_convention(), PhConvention::Model);
    // Documents written for the default leave the field out, so that they read as before.
    let (recipe, c) = doc.to_recipe(&cat()).unwrap();
    let text = serde_json::to_string(&RecipeDoc::from_recipe(&recipe, &c)).unwrap();
    assert!(!text.contains("ph_convention"), "{text}");
    let result = serde_json::to_string(&SolveResult::from_equilibrium(&solve_doc(&doc))).unwrap();
    assert!(!result.contains("ph_convention"), "{result}");
}

#[cfg(feature = "batch")]
#[test]
fn batch_lines_keep_their_own_ph_convention() {
    use protolyte::document::batch::{BatchOptions, BatchRecord, run};
    // The same recipe with and without the field, alternating: a compiled system is re-used
    // only for lines of the same conditions, so each line gets its own convention.
    let model = r#"{"name":"model","reagents":[{"reagent":"potassium hydrogen phthalate","molal":0.05}]}"#;
    let bg = r#"{"name":"bg","ph_convention":"bates-guggenheim","reagents":[{"reagent":"potassium hydrogen phthalate","molal":0.05}]}"#;
    let input: String = (0..6)
        .map(|i| if i % 2 == 0 { model } else { bg })
        .map(|l| format!("{l}\n"))
        .collect();
    let opts = BatchOptions {
        full: false,
        chunk_lines: 64,
    };
    let mut out = Vec::new();
    let s = run(input.as_bytes(), &mut out, &cat(), &opts, |_, _| {}).unwrap();
    assert_eq!((s.records, s.failed), (6, 0));
    let expect = |text: &str| solve_doc(&document::parse::<RecipeDoc>(text, "line.json").unwrap()).ph();
    let (ph_model, ph_bg) = (expect(model), expect(bg));
    for l in String::from_utf8(out).unwrap().lines() {
        let r: BatchRecord = serde_json::from_str(l).unwrap();
        let (want, convention) = if r.name.as_deref() == Some("bg") {
            (ph_bg, Some("bates-guggenheim"))
        } else {
            (ph_model, None)
        };
        assert!((r.ph - want).abs() < 1e-9, "line {}: {} vs {want}", r.line, r.ph);
        assert_eq!(r.ph_convention.as_deref(), convention, "line {}", r.line);
    }
}
