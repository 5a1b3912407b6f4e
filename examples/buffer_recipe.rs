//! A buffer recipe at 37 °C and its shift at 25 °C.
//!
//! Invented scenario: a cell-biology bench wants 500 mL of 25 mmol/L HEPES, pH 7.40 at
//! 37 °C, made up to an ionic strength of 0.16 mol/kg with sodium chloride, from solid
//! HEPES free acid and a 1 mol/L sodium hydroxide stock. The bench also keeps a tris
//! recipe for the same pH and wants to see why it is prepared at the temperature of use.
//!
//! Caution: a model result. Buffers for medical, food or pharmaceutical use must be made
//! by validated procedures under local rules and licensed practice; measure the pH of what
//! you make, at the temperature of use.
//!
//! Run with `cargo run --example buffer_recipe`.

use protolyte::analysis::{BufferRecipe, BufferSpec, Ingredients, Measure, Stock};
use protolyte::{ActivityModel, Amount, Catalog, Conditions, Temperature, Volume};

fn show(title: &str, r: &BufferRecipe) {
    println!("{title}");
    for line in &r.lines {
        let how = match line.measure {
            Measure::Mass(m) => format!("weigh {:>9.4} g", m.grams_value()),
            Measure::Volume(v) => format!("add   {:>9.3} mL", v.milliliters_value()),
        };
        println!(
            "  {how}  {:<28} ({:?}, {:.4} mol/L)",
            line.reagent, line.role, line.mol_per_l
        );
    }
    println!("  make up to {:.0} mL with water", r.final_volume.milliliters_value());
    println!(
        "  check: pH {:.4} (target {:.2}, residual {:+.1e}), balances {:.1e}, I = {:.4} mol/kg, β = {:.4} mol/L per pH",
        r.check_ph, r.target_ph, r.ph_residual, r.balance_residual, r.ionic_strength_molal, r.buffer_capacity_mol_per_l
    );
    for s in &r.temperature_shifts {
        println!(
            "  used at {:.0} °C: pH {:.3} ({:+.3})",
            s.temperature.as_celsius(),
            s.ph,
            s.shift
        );
    }
    println!(
        "  diluted {}-fold: pH {:.3} ({:+.3})",
        r.dilution_shift.dilution_factor, r.dilution_shift.ph, r.dilution_shift.shift
    );
    for w in &r.warnings {
        println!("  note: {w}");
    }
    println!();
}

fn main() -> Result<(), protolyte::Error> {
    let cat = Catalog::builtin();
    let at37 = Conditions::new(Temperature::celsius(37.0), ActivityModel::Davies);
    let compare = [Temperature::celsius(25.0), Temperature::celsius(4.0)];

    let hepes = BufferSpec::new(
        Ingredients::Adjusted {
            buffer: vec![Stock::solid(&cat.reagent("hepes")?)],
            adjuster: Stock::solution_molar(&cat.reagent("sodium hydroxide")?, 1.0),
        },
        7.40,
        Amount::millimolar(25.0),
        at37,
        Volume::milliliters(500.0),
    )
    .ionic_strength(Amount::molal(0.16), Stock::solid(&cat.reagent("sodium chloride")?))
    .compare_at(&compare)
    .design()?;
    show("HEPES 25 mmol/L, pH 7.40 at 37 °C, I = 0.16 mol/kg", &hepes);

    let tris = BufferSpec::new(
        Ingredients::AcidAndBase {
            acid: Stock::solid(&cat.reagent("tris hydrochloride")?),
            base: Stock::solid(&cat.reagent("tris base")?),
        },
        7.40,
        Amount::millimolar(25.0),
        at37,
        Volume::milliliters(500.0),
    )
    .compare_at(&compare)
    .design()?;
    show("Tris 25 mmol/L, pH 7.40 at 37 °C (from the two solids)", &tris);
    Ok(())
}
