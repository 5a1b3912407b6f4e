//! Titrating a mixture of a diprotic and a monoprotic acid: where the endpoints fall, which
//! are usable, and which indicator to use.
//!
//! Scenario (invented): the QC bench of a small resin works checks a wash liquor that holds
//! maleic acid (diprotic) and boric acid (monoprotic). 20.00 mL of the liquor, nominally
//! 25 mmol/L maleic acid and 40 mmol/L boric acid, are titrated with 0.1000 mol/L sodium
//! hydroxide at 25 °C. The chemist wants to know which breaks will be visible, which
//! indicator to use for each, and how far the half-equivalence pH lies from pKa.
//!
//! Run with `cargo run --example titrate_mixture`.

use protolyte::analysis::{BreakFlag, Stepping, Titration, capacity_along};
use protolyte::{Amount, Catalog, Conditions, Recipe, Volume};

fn main() -> Result<(), protolyte::Error> {
    let cat = Catalog::builtin();
    let mut liquor = Recipe::new();
    liquor
        .add(&cat.reagent("maleic acid")?, Amount::millimolar(25.0))?
        .add(&cat.reagent("boric acid")?, Amount::millimolar(40.0))?;
    let mut naoh = Recipe::new();
    naoh.add(&cat.reagent("sodium hydroxide")?, Amount::molar(0.1))?;
    let t = Titration::new(&liquor, Volume::milliliters(20.0), &naoh, &Conditions::default())?;

    println!("Stoichiometric equivalence points (steep part: ±0.5 % of the volume)");
    for e in t.equivalence_points()? {
        let done = e
            .completed
            .as_ref()
            .map(|s| format!("{} step {} (pKa {:.2})", s.family, s.step + 1, s.pka));
        println!(
            "  {:7.3} mL  pH {:5.2}  break {:5.2} → {:5.2}  after {}",
            e.volume_ml,
            e.ph,
            e.steep_ph.0,
            e.steep_ph.1,
            done.unwrap_or_else(|| "excess strong acid".into())
        );
        for f in &e.flags {
            match f {
                BreakFlag::StepsMerge { delta_pka } => {
                    println!("      merges with the next step (ΔpKa {delta_pka:.2} < 3)")
                }
                BreakFlag::StepsClose { delta_pka } => println!("      weak break (ΔpKa {delta_pka:.2} < 4)"),
                BreakFlag::WeakStep { c_k } => println!("      no sharp endpoint (C·K = {c_k:.1e} < 1e-8)"),
                other => println!("      {other:?}"),
            }
        }
        if let Some((ind, err)) = e.nearest_indicator {
            println!(
                "      nearest indicator: {} ({:.1}–{:.1}), titration error {:+.2} %",
                ind.name,
                ind.ph_low,
                ind.ph_high,
                100.0 * err
            );
        }
        let v = &e.verdict;
        match v.locating_error_ml {
            Some(d) => println!(
                "      {}: ±{} pH locates it to ±{d:.3} mL (tolerance ±{:.3} mL)",
                if v.usable { "usable" } else { "not usable" },
                v.ph_window,
                v.tolerance_ml
            ),
            None => println!(
                "      not usable: the curve does not move ±{} pH around it",
                v.ph_window
            ),
        }
        if e.usable() {
            let names: Vec<&str> = e.indicators.iter().take(3).map(|i| i.name).collect();
            if names.is_empty() {
                println!("      usable, but no indicator's range fits inside the break");
            } else {
                println!("      indicators: {}", names.join(", "));
            }
        }
    }

    println!("\nInflection points of the computed curve");
    for ip in t.inflection_points(Volume::milliliters(30.0))? {
        println!(
            "  {:7.3} mL  pH {:5.2}  dpH/dV {:6.2} per mL",
            ip.volume_ml, ip.ph, ip.dph_dv_per_ml
        );
    }

    println!("\nHalf-equivalence points: pH − pKa and its causes");
    for h in t.half_equivalence_points()? {
        println!(
            "  {} step {} at {:6.3} mL: pH {:5.2}, pKa {:5.2}, Δ {:+.3} (activity {:+.3}, overlap {:+.3}, dissociation {:+.3}, protonation {:+.3}, water {:+.3}; mainly {:?})",
            h.step.family,
            h.step.step + 1,
            h.volume_ml,
            h.ph,
            h.step.pka,
            h.deviation,
            h.activity_part,
            h.overlap_part,
            h.dissociation_part,
            h.protonation_part,
            h.water_part,
            h.main_cause
        );
    }

    let curve = t.curve_adaptive(&Stepping::new(Volume::milliliters(30.0)).max_ph_step(0.1)?)?;
    let beta = capacity_along(&t, &curve)?;
    println!(
        "\nThe curve ({} adaptive points; every 8th shown) with buffer capacity β",
        curve.len()
    );
    for (p, b) in curve.iter().zip(&beta).step_by(8) {
        println!(
            "  {:7.3} mL  pH {:5.2}  β {:.2e} mol/kg per pH",
            p.volume_ml, p.ph, b.beta_molal
        );
    }
    let v = t.volume_for_ph(7.0, Volume::milliliters(30.0))?;
    println!("\npH 7.00 is reached after {:.3} mL of titrant.", v.milliliters_value());
    Ok(())
}
