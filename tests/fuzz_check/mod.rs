//! The oracles of the fuzz targets, shared with `cargo test`: `tests/fuzz_regressions.rs`
//! replays every kept input through [`check_text`], and the fuzz targets
//! (`fuzz/fuzz_targets/`) include this file.
//!
//! For any text, read as a recipe or titration document:
//! - no panic and no hang (the fuzzer's own timeout);
//! - every result that comes back `Ok` holds finite numbers, and its charge, mass and
//!   ionic-strength residuals keep the library's promise (`limits::RESIDUAL_PROMISE`) or it
//!   carries `Warning::ResidualAbovePromise`;
//! - sign sanity that cannot misfire: a recipe of strong acids only (no definitions) has at
//!   least as much H⁺ as OH⁻ and a pH at most the neutral pH −log Kw(T)/2; strong bases only,
//!   at least as much OH⁻ as H⁺ (by the charge balance);
//! - `batch` gives exactly one record for the document as one line, never an internal
//!   error, and agrees with the direct solve (same success, same pH to 1e-6);
//! - a titration curve of a few points has finite, increasing volumes and finite pH.

#![allow(dead_code)]

use protolyte::document::batch::{BatchOptions, run};
use protolyte::document::{RecipeDoc, TitrationDoc, parse};
use protolyte::{Catalog, Equilibrium, Temperature};

/// Reagents that add only a strong acid (H⁺ and a non-basic anion).
pub const STRONG_ACIDS: &[&str] = &["hydrochloric acid", "nitric acid", "perchloric acid"];
/// Reagents that add only a strong base (OH⁻ and a non-acidic cation).
pub const STRONG_BASES: &[&str] = &["sodium hydroxide", "potassium hydroxide"];

/// Runs every oracle on `text` (a recipe or titration document, JSON or TOML).
pub fn check_text(text: &str) {
    let cat = Catalog::builtin();
    if text.contains("protolyte-titration/1") {
        check_titration(text, &cat);
    } else {
        check_recipe(text, &cat);
    }
}

/// The checks of one solved recipe.
pub fn check_equilibrium(eq: &Equilibrium, doc: &RecipeDoc) {
    assert!(
        eq.ph().is_finite() && eq.p_h_molal().is_finite() && eq.ionic_strength_molal().is_finite(),
        "non-finite pH or ionic strength"
    );
    for s in eq.species() {
        assert!(
            s.molal.is_finite() && s.molar.is_finite() && s.gamma.is_finite() && s.activity.is_finite(),
            "{s:?}"
        );
    }
    for f in eq.families() {
        assert!(
            f.fractions.iter().all(|v| v.is_finite()) && f.mean_bound_protons.is_finite(),
            "{f:?}"
        );
    }
    let r = eq.residuals();
    let worst = r.max_relative();
    let warned = eq
        .warnings()
        .iter()
        .any(|w| matches!(w, protolyte::Warning::ResidualAbovePromise { .. }));
    assert!(
        worst <= protolyte::limits::RESIDUAL_PROMISE || warned,
        "residual {worst:e} above the promise without a warning: {r:?}"
    );
    // Sign sanity.
    if doc.definitions.is_none() && !doc.reagents.is_empty() {
        let only = |set: &[&str]| {
            doc.reagents
                .iter()
                .all(|l| set.iter().any(|s| s.eq_ignore_ascii_case(l.reagent.trim())))
        };
        let m = |name: &str| eq.species_named(name).map(|s| s.molal).unwrap_or(0.0);
        let (h, oh) = (m("H+"), m("OH-"));
        let t = doc.temperature_celsius.unwrap_or(25.0);
        let neutral = -protolyte::water::log10_kw(Temperature::celsius(t))
            .expect("a solved recipe's temperature is inside Kw(T)'s range")
            / 2.0;
        if only(STRONG_ACIDS) {
            assert!(
                h >= oh * (1.0 - 1e-6),
                "strong acid only, yet m(H+) {h:e} < m(OH-) {oh:e}"
            );
            assert!(
                eq.ph() <= neutral + 1e-6,
                "strong acid only, yet pH {} above neutral {neutral}",
                eq.ph()
            );
        }
        if only(STRONG_BASES) {
            assert!(
                oh >= h * (1.0 - 1e-6),
                "strong base only, yet m(OH-) {oh:e} < m(H+) {h:e}"
            );
        }
    }
}

/// Reads, solves and checks a recipe, directly and through `batch`.
pub fn check_recipe(text: &str, cat: &Catalog) {
    let Ok(doc) = parse::<RecipeDoc>(text, "fuzz.json") else {
        return;
    };
    let direct = doc
        .to_recipe(cat)
        .ok()
        .and_then(|(recipe, conditions)| recipe.compile(&conditions).ok())
        .map(|system| system.solve().map(|eq| (eq, system)));
    let ph = match &direct {
        Some(Ok((eq, system))) => {
            check_equilibrium(eq, &doc);
            if let Ok(sens) = eq.sensitivities(system) {
                assert!(sens.buffer_capacity_molal().is_finite());
            }
            Some(eq.ph())
        }
        _ => None,
    };
    // The same document as one batch line.
    let Ok(value) = serde_json::from_str::<serde_json::Value>(text.trim_start_matches('\u{feff}')) else {
        return;
    };
    let line = value.to_string() + "\n";
    let mut out = Vec::new();
    let summary = run(line.as_bytes(), &mut out, cat, &BatchOptions::default(), |_, _| {}).expect("batch in memory");
    let out = String::from_utf8(out).expect("batch writes UTF-8");
    let records: Vec<&str> = out.lines().collect();
    assert_eq!(records.len(), 1, "{out}");
    assert_eq!(summary.records, 1);
    let rec: serde_json::Value = serde_json::from_str(records[0]).expect("a record is JSON");
    assert_eq!(rec["line"].as_u64(), Some(1));
    assert_ne!(rec["kind"].as_str(), Some("internal"), "{out}");
    let batch_ph = rec["ph"].as_f64();
    if let Some(p) = batch_ph {
        assert!(p.is_finite());
    }
    match (&direct, batch_ph) {
        (Some(Ok(_)), Some(b)) => {
            let a = ph.unwrap_or(f64::NAN);
            assert!((a - b).abs() <= 1e-6, "direct pH {a} but batch pH {b}");
        }
        (Some(Ok(_)), None) => panic!("solved directly (pH {ph:?}) but batch refused it: {out}"),
        (None, Some(b)) => panic!("the document was refused, yet batch gave pH {b}: {out}"),
        // A solver refusal on one path and not on the other is left alone: a warm or cold
        // start may decide it.
        _ => {}
    }
}

/// Reads a titration request and computes a short uniform curve.
pub fn check_titration(text: &str, cat: &Catalog) {
    let Ok(doc) = parse::<TitrationDoc>(text, "fuzz.json") else {
        return;
    };
    let Ok(t) = doc.to_titration(cat) else { return };
    let Ok(end) = doc.end_volume() else { return };
    let n = doc.points.unwrap_or(12).clamp(2, 24);
    let Ok(curve) = t.curve_uniform(end, n) else { return };
    assert_eq!(curve.len(), n);
    for w in curve.windows(2) {
        assert!(w[1].volume_ml > w[0].volume_ml, "volumes not increasing: {w:?}");
    }
    for p in &curve {
        assert!(
            p.volume_ml.is_finite() && p.ph.is_finite() && p.equilibrium.ionic_strength_molal().is_finite(),
            "{p:?}"
        );
    }
}
