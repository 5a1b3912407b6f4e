//! The invented buffer screen shared by `benches/batch.rs` and `examples/make_batch.rs`.

/// The i-th invented recipe: three families (phosphate, acetate, ammonium) and salt.
pub fn recipe_line(i: usize) -> String {
    let f = |k: usize, lo: f64, hi: f64| lo + (hi - lo) * (((i * 7919 + k * 104_729) % 1000) as f64 / 999.0);
    format!(
        concat!(
            r#"{{"name":"sample {}","temperature_celsius":25,"activity":"davies","reagents":["#,
            r#"{{"reagent":"sodium dihydrogen phosphate","millimolar":{:.4}}},"#,
            r#"{{"reagent":"disodium hydrogen phosphate","millimolar":{:.4}}},"#,
            r#"{{"reagent":"acetic acid","millimolar":{:.4}}},"#,
            r#"{{"reagent":"ammonium chloride","millimolar":{:.4}}},"#,
            r#"{{"reagent":"sodium chloride","millimolar":{:.4}}}]}}"#
        ),
        i,
        f(1, 1.0, 50.0),
        f(2, 1.0, 50.0),
        f(3, 0.1, 20.0),
        f(4, 0.1, 20.0),
        f(5, 0.0, 150.0)
    )
}
