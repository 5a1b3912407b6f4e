//! Writes a JSON Lines file of invented recipes for `protolyte batch`: each line a recipe of
//! three acid–base families (phosphate, acetate, ammonium) with salt, Davies activities, at
//! 25 °C — a sweep of an invented buffer screen.
//!
//! ```sh
//! cargo run --release --example make_batch -- 100000 > /tmp/recipes.jsonl
//! cargo run --release -- batch /tmp/recipes.jsonl -o /tmp/results.jsonl
//! ```

use std::io::{BufWriter, Write};

/// The i-th recipe (the same sweep as `benches/batch.rs`).
fn recipe_line(i: usize) -> String {
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

fn main() -> std::io::Result<()> {
    let n: usize = match std::env::args().nth(1) {
        None => 100_000,
        Some(a) => match a.parse() {
            Ok(n) => n,
            Err(_) => {
                eprintln!("usage: make_batch [COUNT]   (COUNT recipes as JSON Lines on standard output)");
                std::process::exit(2);
            }
        },
    };
    let stdout = std::io::stdout();
    let mut out = BufWriter::new(stdout.lock());
    for i in 0..n {
        writeln!(out, "{}", recipe_line(i))?;
    }
    out.flush()
}
