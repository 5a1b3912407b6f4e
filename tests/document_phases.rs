//! Recipe documents with phases: fixed partial pressures, a fixed pH and solids allowed to
//! form, in JSON, TOML and batch lines; results that carry alkalinity, DIC, gases and
//! saturation indices; documents of the earlier kind read as before.
#![cfg(feature = "serde")]

use protolyte::document::{self, AllowSolidsDoc, RecipeDoc, SolveResult};
use protolyte::{Catalog, Equilibrium};

fn solve(doc: &RecipeDoc) -> Equilibrium {
    let (recipe, conditions) = doc.to_recipe(&Catalog::builtin()).expect("recipe");
    recipe.compile(&conditions).expect("compile").solve().expect("solve")
}

fn parse_json(text: &str) -> RecipeDoc {
    document::parse(text, "r.json").expect("parse")
}

#[test]
fn rain_water_open_to_the_atmosphere() {
    // Pure water under 420 µatm of CO2 has pH 5.6 (common practice).
    let json = parse_json(
        r#"{ "format": "protolyte-recipe/1",
             "partial_pressures": [{ "gas": "CO2(g)", "microatm": 420 }] }"#,
    );
    let toml: RecipeDoc = document::parse(
        "format = \"protolyte-recipe/1\"\n[[partial_pressures]]\ngas = \"CO2(g)\"\natm = 4.2e-4\n",
        "r.toml",
    )
    .unwrap();
    let a = solve(&json);
    let b = solve(&toml);
    assert!((a.ph() - 5.6).abs() < 0.05, "{}", a.ph());
    assert!((a.ph() - b.ph()).abs() < 1e-10);
    let r = SolveResult::from_equilibrium(&a);
    let co2 = r.gases.iter().find(|g| g.name == "CO2(g)").unwrap();
    assert!(co2.fixed && (co2.partial_pressure_atm.unwrap() - 4.2e-4).abs() < 1e-12);
    assert!(co2.taken_up_mol_per_kg > 0.0);
    assert!(
        r.dic_mol_per_kg > 1e-5 && r.dic_mol_per_kg < 2e-5,
        "{}",
        r.dic_mol_per_kg
    );
}

#[test]
fn allowed_solids_form_and_are_reported() {
    // 10 mmol/L calcium chloride and sodium carbonate: far above calcite's solubility.
    let doc = parse_json(
        r#"{ "format": "protolyte-recipe/1",
             "reagents": [{ "reagent": "calcium chloride", "millimolar": 10 },
                          { "reagent": "sodium carbonate", "millimolar": 10 }],
             "allow_solids": ["calcite"] }"#,
    );
    let eq = solve(&doc);
    let r = SolveResult::from_equilibrium(&eq);
    let calcite = r.solids.iter().find(|s| s.name == "calcite").unwrap();
    assert!(calcite.allowed && calcite.amount_mol_per_kg > 9e-3, "{calcite:?}");
    assert!(calcite.saturation_index.unwrap().abs() < 1e-8);
    // Aragonite, reported but not allowed, is then undersaturated (it is more soluble).
    let aragonite = r.solids.iter().find(|s| s.name == "aragonite").unwrap();
    assert!(!aragonite.allowed && aragonite.saturation_index.unwrap() < 0.0);
    // "all": every catalogue solid may form; calcite (the least soluble CaCO3) forms.
    let mut all = doc.clone();
    all.allow_solids = Some(AllowSolidsDoc::All);
    let eq = solve(&all);
    assert!(eq.solid("calcite").unwrap().amount_molal > 0.0);
    assert!(
        eq.solids().iter().all(|s| s.saturation_index < 1e-8),
        "no solid left supersaturated"
    );
}

#[test]
fn a_fixed_ph_reports_the_base_it_took() {
    let doc = parse_json(
        r#"{ "format": "protolyte-recipe/1", "activity": "ideal",
             "reagents": [{ "reagent": "acetic acid", "molal": 0.01 }],
             "fixed_ph": 4.76 }"#,
    );
    let eq = solve(&doc);
    assert!((eq.ph() - 4.76).abs() < 1e-9);
    let r = SolveResult::from_equilibrium(&eq);
    // At pH = pKa (4.756, data/families.toml) about half the acid is neutralised: about
    // 5 mmol/kg of base.
    let u = r.proton_uptake_mol_per_kg.unwrap();
    assert!(u < -4e-3 && u > -6e-3, "{u}");
}

#[test]
fn phase_requests_round_trip_through_the_library() {
    let doc = parse_json(
        r#"{ "format": "protolyte-recipe/1",
             "reagents": [{ "reagent": "calcium chloride", "millimolar": 2 }],
             "partial_pressures": [{ "gas": "CO2(g)", "bar": 1e-3 }],
             "allow_solids": ["calcite", "gypsum"] }"#,
    );
    let cat = Catalog::builtin();
    let (recipe, conditions) = doc.to_recipe(&cat).unwrap();
    let back = RecipeDoc::from_recipe(&recipe, &conditions);
    assert_eq!(
        back.allow_solids,
        Some(AllowSolidsDoc::Named(vec!["calcite".into(), "gypsum".into()]))
    );
    assert_eq!(back.to_recipe(&cat).unwrap().0, recipe);
    let text = serde_json::to_string(&back).unwrap();
    assert!(text.contains("partial_pressures") && text.contains("allow_solids"));
}

#[test]
fn mistakes_in_phase_requests_name_the_field() {
    let cat = Catalog::builtin();
    let err = |json: &str| parse_json(json).to_recipe(&cat).unwrap_err().to_string();
    let e = err(r#"{ "partial_pressures": [{ "gas": "CO2(g)", "atm": 1e-3, "bar": 1e-3 }] }"#);
    assert!(e.contains("partial_pressures[0]") && e.contains("exactly one"), "{e}");
    let e = err(r#"{ "partial_pressures": [{ "gas": "CO2(g)" }] }"#);
    assert!(e.contains("partial_pressures[0]"), "{e}");
    let e = err(r#"{ "partial_pressures": [{ "gas": "CO2(g)", "atm": -1 }] }"#);
    assert!(e.contains("partial_pressures[0].atm"), "{e}");
    let e = err(r#"{ "partial_pressures": [{ "gas": "laughing gas", "atm": 1 }] }"#);
    assert!(e.contains("partial_pressures[0].gas"), "{e}");
    let e = err(r#"{ "allow_solids": ["calcite", "kryptonite"] }"#);
    assert!(e.contains("allow_solids[1]") && e.contains("kryptonite"), "{e}");
    let e = err(r#"{ "fixed_ph": 25 }"#);
    assert!(e.contains("fixed_ph"), "{e}");
    let e = document::parse::<RecipeDoc>(r#"{ "allow_solids": "any" }"#, "r.json")
        .unwrap_err()
        .to_string();
    assert!(e.contains("allow_solids") && e.contains("all"), "{e}");
}

#[test]
fn earlier_documents_read_and_solve_as_before() {
    // Without phase requests a document is the closed solution it always was; the result
    // gains alkalinity, DIC, gases and saturation indices beside what it had.
    let doc: RecipeDoc = document::load("examples/hatchery_makeup.json").unwrap();
    let mut closed = doc.clone();
    closed.partial_pressures.clear();
    closed.allow_solids = None;
    closed.fixed_ph = None;
    let eq = solve(&closed);
    let r = SolveResult::from_equilibrium(&eq);
    let text = serde_json::to_string(&r).unwrap();
    assert!(!text.contains("NaN") && !text.contains("null"));
    assert_eq!(serde_json::from_str::<SolveResult>(&text).unwrap(), r);
    assert!(r.total_alkalinity_eq_per_kg > 1e-3 && r.dic_mol_per_kg > 1e-3);
    // A result written before these fields existed still reads.
    let mut old: serde_json::Value = serde_json::from_str(&text).unwrap();
    let o = old.as_object_mut().unwrap();
    for k in [
        "total_alkalinity_eq_per_kg",
        "carbonate_alkalinity_eq_per_kg",
        "dic_mol_per_kg",
        "gases",
        "solids",
    ] {
        o.remove(k);
    }
    let back: SolveResult = serde_json::from_value(old).unwrap();
    assert!(back.solids.is_empty() && back.dic_mol_per_kg == 0.0);
}

#[cfg(feature = "batch")]
#[test]
fn batch_lines_with_phases_agree_with_single_solves() {
    use protolyte::document::batch::{BatchOptions, run};
    let lines = [
        r#"{"reagents": [{"reagent": "calcium chloride", "millimolar": 10}, {"reagent": "sodium carbonate", "millimolar": 10}], "allow_solids": ["calcite"]}"#,
        r#"{"partial_pressures": [{"gas": "CO2(g)", "microatm": 420}]}"#,
        r#"{"reagents": [{"reagent": "acetic acid", "millimolar": 10}], "fixed_ph": 5.0}"#,
        r#"{"reagents": [{"reagent": "acetic acid", "millimolar": 10}]}"#,
    ];
    let input = lines.join("\n") + "\n";
    let mut out = Vec::new();
    let opts = BatchOptions {
        full: true,
        ..BatchOptions::default()
    };
    let s = run(input.as_bytes(), &mut out, &Catalog::builtin(), &opts, |_, _| {}).unwrap();
    assert_eq!((s.records, s.failed), (4, 0));
    let text = String::from_utf8(out).unwrap();
    for (line, record) in lines.iter().zip(text.lines()) {
        let eq = solve(&parse_json(line));
        let v: serde_json::Value = serde_json::from_str(record).unwrap();
        let ph = v["result"]["ph"].as_f64().or_else(|| v["ph"].as_f64()).unwrap();
        assert!((ph - eq.ph()).abs() < 1e-9, "{line}: {ph} vs {}", eq.ph());
    }
}

#[test]
fn the_schema_knows_every_recipe_field() {
    // Every field a recipe document can carry (all set, so that none is skipped when written)
    // is a property of the schema's recipe.
    let schema: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string("schema/recipe.schema.json").unwrap()).unwrap();
    let props = &schema["$defs"]["recipe"]["properties"];
    let doc = parse_json(
        r#"{ "format": "protolyte-recipe/1", "name": "x", "temperature_celsius": 20, "activity": "davies",
             "ph_convention": "bates-guggenheim", "reagents": [], "complexes": ["CaCO3(aq)"],
             "include_catalog_complexes": true, "definitions": { "ions": [{ "name": "q", "charge": 1 }] },
             "fixed_ph": 7, "partial_pressures": [{ "gas": "CO2(g)", "atm": 1e-3 }], "allow_solids": "all",
             "fixed_alkalinity_meq_per_kg": 2, "fixed_dic_mmol_per_kg": 2, "charge_balance_on": "sodium" }"#,
    );
    let v = serde_json::to_value(&doc).unwrap();
    for key in v.as_object().unwrap().keys() {
        assert!(props.get(key).is_some(), "`{key}` not in the schema");
    }
    let pp = &schema["$defs"]["partial_pressure"]["properties"];
    for key in ["gas", "atm", "bar", "pascal", "microatm"] {
        assert!(pp.get(key).is_some(), "partial_pressure.{key}");
    }
}

#[test]
fn a_water_analysis_from_alkalinity_and_dic() {
    // DIC 2.2 mmol/kg and total alkalinity 2.0 meq/kg, sodium closing the charge balance: the
    // balance needs exactly the alkalinity's worth of sodium (the proton condition of NaHCO3
    // plus CO2; common practice), and the pH lies near pKa1 + log(2.0/0.2) = 7.35.
    let doc = parse_json(
        r#"{ "format": "protolyte-recipe/1", "activity": "ideal", "reagents": [],
             "fixed_alkalinity_meq_per_kg": 2.0, "fixed_dic_mmol_per_kg": 2.2,
             "charge_balance_on": "sodium" }"#,
    );
    let eq = solve(&doc);
    let r = SolveResult::from_equilibrium(&eq);
    assert!((r.total_alkalinity_eq_per_kg - 2.0e-3).abs() < 1e-12);
    assert!((r.dic_mol_per_kg - 2.2e-3).abs() < 1e-12);
    let c = r.charge_balance_ion.as_ref().unwrap();
    assert_eq!(c.ion, "sodium");
    assert!((c.added_mol_per_kg - 2.0e-3).abs() < 1e-9, "{c:?}");
    assert!(r.ph > 7.2 && r.ph < 7.5, "{}", r.ph);
    let cat = Catalog::builtin();
    let (recipe, conditions) = doc.to_recipe(&cat).unwrap();
    let back = RecipeDoc::from_recipe(&recipe, &conditions);
    assert_eq!(back.charge_balance_on.as_deref(), Some("sodium"));
    assert_eq!(back.to_recipe(&cat).unwrap().0, recipe);
    let e = parse_json(r#"{ "charge_balance_on": "unobtainium", "fixed_ph": 7 }"#)
        .to_recipe(&cat)
        .unwrap_err()
        .to_string();
    assert!(e.contains("charge_balance_on"), "{e}");
}

#[test]
fn the_ion_balance_of_an_analysis_closed_on_an_ion() {
    // Calcium 1.0 mmol/kg (2.0 meq), chloride 2.0, sodium bicarbonate 1.9 entered, total
    // alkalinity measured at 2.0 meq/kg, sodium closing the balance: the balance adds 0.1
    // mmol/kg of sodium, so the analysis as entered is short of 0.1 meq/kg of cations out of
    // about 8 meq/kg in all: an error of about -1.3 %, inside the 2 % that Standard Methods
    // 1030 E allows at an anion sum of 3-10 meq/L (common practice).
    let doc = parse_json(
        r#"{ "format": "protolyte-recipe/1", "activity": "ideal",
             "reagents": [{ "reagent": "calcium chloride", "millimolar": 1.0 },
                          { "reagent": "sodium bicarbonate", "millimolar": 1.9 }],
             "fixed_alkalinity_meq_per_kg": 2.0, "charge_balance_on": "sodium" }"#,
    );
    let eq = solve(&doc);
    let r = SolveResult::from_equilibrium(&eq).with_ion_balance(1);
    let added = r.charge_balance_ion.as_ref().unwrap().added_mol_per_kg;
    let b = r.ion_balance.as_ref().unwrap();
    let expected = -100.0 * 1e3 * added / (b.cations_meq_per_kg + b.anions_meq_per_kg);
    assert!((b.error_percent - expected).abs() < 1e-9, "{b:?}");
    assert!(b.error_percent < -1.0 && b.error_percent > -1.6, "{b:?}");
    assert_eq!(b.within_acceptance, Some(true));
    // Without a closing ion there is no balance to report.
    let plain = parse_json(r#"{ "reagents": [{ "reagent": "sodium chloride", "millimolar": 1.0 }] }"#);
    assert!(
        SolveResult::from_equilibrium(&solve(&plain))
            .with_ion_balance(1)
            .ion_balance
            .is_none()
    );
}

#[test]
fn hard_water_with_phosphate_and_every_solid_allowed_settles() {
    // An invented softening case: calcium, magnesium, carbonate, sulfate and a trace of
    // phosphate, with every catalogue solid allowed, open to air and at a fixed pH 12. Two
    // calcium phosphates and dolomite are supersaturated at the start together; their
    // relations with the fixed pCO2 (or pH) leave the first working set singular. The
    // assemblage must still settle: no allowed solid above saturation, every present one at
    // it, balances within the promise.
    let base = r#""reagents": [
        { "reagent": "calcium chloride", "millimolar": 5 },
        { "reagent": "sodium carbonate", "millimolar": 5 },
        { "reagent": "magnesium sulfate", "millimolar": 3 },
        { "reagent": "disodium hydrogen phosphate", "millimolar": 0.1 },
        { "reagent": "sodium hydroxide", "millimolar": 4 } ],
        "allow_solids": "all""#;
    for extra in [
        r#""partial_pressures": [{ "gas": "CO2(g)", "microatm": 420 }]"#,
        r#""fixed_ph": 12"#,
    ] {
        let doc = parse_json(&format!(r#"{{ "format": "protolyte-recipe/1", {base}, {extra} }}"#));
        let eq = solve(&doc);
        assert!(eq.residuals().max_relative() < 1e-10, "{extra}");
        assert!(eq.solids().iter().all(|s| s.saturation_index < 1e-8), "{extra}");
        let present: Vec<_> = eq.solids().iter().filter(|s| s.amount_molal > 0.0).collect();
        assert!(!present.is_empty(), "{extra}");
        assert!(present.iter().all(|s| s.saturation_index.abs() < 1e-8), "{extra}");
    }
}
