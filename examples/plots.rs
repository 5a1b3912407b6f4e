//! Three SVG plots for an invented scenario: a pond-water test kit's reference solution,
//! 20 mL of 40 mmol/L phosphoric acid with 15 mmol/L acetic acid, titrated with
//! 0.1 mol/L sodium hydroxide.
//!
//! Run with `cargo run --example plots --features plot [OUT_DIR]`; it writes
//! `titration.svg`, `distribution.svg` and `capacity.svg` into OUT_DIR (default: the current
//! directory).

use std::path::PathBuf;

use protolyte::analysis::{CapacityCurve, Stepping, Titration};
use protolyte::plot::{PlotOptions, capacity_svg, distribution, distribution_svg, titration_svg, write_svg};
use protolyte::{Amount, Catalog, Conditions, Recipe, Volume};

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let out = PathBuf::from(std::env::args().nth(1).unwrap_or_else(|| ".".into()));
    let cat = Catalog::builtin();
    let conditions = Conditions::default();

    let mut sample = Recipe::new();
    sample
        .add(&cat.reagent("phosphoric acid")?, Amount::millimolar(40.0))?
        .add(&cat.reagent("acetic acid")?, Amount::millimolar(15.0))?;
    let mut base = Recipe::new();
    base.add(&cat.reagent("sodium hydroxide")?, Amount::molar(0.1))?;

    // Titration curve, adaptive steps (dense around the breaks).
    let t = Titration::new(&sample, Volume::milliliters(20.0), &base, &conditions)?;
    let curve = t.curve_adaptive(&Stepping::new(Volume::milliliters(30.0)).max_ph_step(0.03)?)?;
    let eps = t.equivalence_points()?;
    let svg = titration_svg(
        &curve,
        &eps,
        &PlotOptions::new().title("Reference solution: 20 mL titrated with 0.1 mol/L NaOH"),
    )?;
    write_svg(out.join("titration.svg"), &svg)?;

    // Distribution of every family, with the sample's own pH marked.
    let ph = sample.compile(&conditions)?.solve()?.ph();
    let dist = distribution(&sample, &conditions, 0.0, 14.0, 141)?;
    let svg = distribution_svg(
        &dist,
        &PlotOptions::new()
            .title("Reference solution: distribution of each family")
            .mark_ph(ph),
    )?;
    write_svg(out.join("distribution.svg"), &svg)?;

    // Buffer capacity against pH, with its local maxima.
    let cap = CapacityCurve::new(&sample, &conditions)?;
    let sweep = cap.sweep(1.0, 13.0, 241)?;
    let peaks = cap.peaks(1.0, 13.0)?;
    let svg = capacity_svg(
        &sweep,
        &peaks,
        &PlotOptions::new()
            .title("Reference solution: buffer capacity")
            .mark_ph(ph),
    )?;
    write_svg(out.join("capacity.svg"), &svg)?;

    println!(
        "wrote titration.svg ({} points, {} equivalence points), distribution.svg, capacity.svg ({} peaks) to {}",
        curve.len(),
        eps.len(),
        peaks.len(),
        out.display()
    );
    Ok(())
}
