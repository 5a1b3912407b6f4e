//! Demo scenario (invented): the water lab of the fictional Kestrel Bay trout hatchery blends
//! a make-up water for its incubation trays from softened well water (sodium bicarbonate,
//! sodium chloride), a phosphate dose, an acetate-based feed residue and a trace of ammonium
//! from the holding tanks. Before dosing, the lab wants the blend's pH and every species in
//! it, and how much the answer moves when activity corrections are made.
//!
//! The amounts below are invented for the demo; the constants are the built-in catalogue's,
//! each with its published source (`protolyte::Catalog::builtin().entries()`).
//!
//! Run: `cargo run --release --example hatchery_water`

use protolyte::{ActivityModel, Amount, Catalog, Conditions, Equilibrium, Recipe, Temperature};

fn main() -> Result<(), protolyte::Error> {
    let cat = Catalog::builtin();
    let mut blend = Recipe::new();
    blend
        .add(&cat.reagent("sodium bicarbonate")?, Amount::millimolar(2.4))?
        .add(&cat.reagent("sodium chloride")?, Amount::millimolar(85.0))?
        .add(&cat.reagent("potassium dihydrogen phosphate")?, Amount::millimolar(0.8))?
        .add(&cat.reagent("disodium hydrogen phosphate")?, Amount::millimolar(1.2))?
        .add(&cat.reagent("acetic acid")?, Amount::millimolar(0.6))?
        .add(&cat.reagent("ammonium chloride")?, Amount::millimolar(0.15))?;

    println!("Kestrel Bay hatchery: incubation make-up water at 12 °C (demo scenario)\n");
    let t = Temperature::celsius(12.0);
    let mut results = Vec::new();
    for model in [
        ActivityModel::Ideal,
        ActivityModel::Davies,
        ActivityModel::ExtendedDebyeHuckel,
    ] {
        let system = blend.compile(&Conditions::new(t, model))?;
        let eq = system.solve()?;
        results.push((model, eq));
    }

    println!(
        "{:<24} {:>8} {:>8} {:>12} {:>10}",
        "activity model", "pH", "p[H]", "I (mol/kg)", "max resid"
    );
    for (model, eq) in &results {
        println!(
            "{:<24} {:>8.4} {:>8.4} {:>12.5} {:>10.1e}",
            model.name(),
            eq.ph(),
            eq.p_h_molal(),
            eq.ionic_strength_molal(),
            eq.residuals().max_relative()
        );
    }

    let (_, ideal) = &results[0];
    let (_, davies) = &results[1];
    println!("\nSpecies with and without activity corrections (Davies vs ideal):");
    println!(
        "{:<12} {:>4} {:>13} {:>13} {:>8} {:>13}",
        "species", "z", "ideal mol/kg", "Davies mol/kg", "γ", "activity"
    );
    for (a, b) in ideal.species().iter().zip(davies.species()) {
        println!(
            "{:<12} {:>4} {:>13.4e} {:>13.4e} {:>8.4} {:>13.4e}",
            a.name, a.charge, a.molal, b.molal, b.gamma, b.activity
        );
    }

    println!("\nHow each family is distributed (Davies), fraction by bound protons:");
    print_families(davies);

    for (model, eq) in &results {
        for w in eq.warnings() {
            println!("warning ({}): {w}", model.name());
        }
    }
    println!("\nA model result, not a measurement: check the blend with a calibrated pH meter.");
    Ok(())
}

fn print_families(eq: &Equilibrium) {
    for f in eq.families() {
        let parts: Vec<String> = f
            .fractions
            .iter()
            .enumerate()
            .rev()
            .map(|(j, a)| format!("{j}H: {a:.4}"))
            .collect();
        println!(
            "  {:<10} total {:.3e} mol/kg, mean bound H⁺ {:.3}  [{}]",
            f.name,
            f.total_molal,
            f.mean_bound_protons,
            parts.join(", ")
        );
    }
}
