//! Writes a JSON Lines file of invented recipes for `protolyte batch`: each line a recipe of
//! three acid–base families (phosphate, acetate, ammonium) with salt, Davies activities, at
//! 25 °C — a sweep of an invented buffer screen.
//!
//! ```sh
//! cargo run --release --example make_batch -- 100000 > /tmp/recipes.jsonl
//! cargo run --release -- batch /tmp/recipes.jsonl -o /tmp/results.jsonl
//! ```

use std::io::{BufWriter, Write};

#[path = "../benches/common/screen.rs"]
mod screen;
use screen::recipe_line;

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
