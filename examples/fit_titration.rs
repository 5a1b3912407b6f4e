//! Fitting a noisy measured titration.
//!
//! Invented scenario: a teaching lab titrates 20.00 mL of a vinegar sample, diluted ten-fold,
//! with sodium hydroxide labelled 0.1 mol/L. The "measured" curve is made here from a truth
//! the analyst does not know (0.0843 mol/L acetic acid, NaOH actually 0.0987 mol/L, an
//! electrode reading 0.03 high, pH noise 0.01), with a fixed seed. A second curve, a
//! standardisation of the same NaOH against 20.00 mL of 0.0500 mol/L potassium hydrogen
//! phthalate, is fitted jointly so that the titrant concentration is known from it.
//!
//! Run with `cargo run --example fit_titration`.

use protolyte::analysis::{Scope, Titration, TitrationFit, Unknown};
use protolyte::{ActivityModel, Amount, Catalog, Conditions, Reagent, Recipe, Temperature, Volume};

/// xorshift64* with Box–Muller normals (fixed seed: the example prints the same every run).
struct Noise(u64);

impl Noise {
    fn uniform(&mut self) -> f64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        ((self.0.wrapping_mul(0x2545_F491_4F6C_DD1D) >> 11) as f64 + 0.5) / (1u64 << 53) as f64
    }
    fn normal(&mut self) -> f64 {
        let (u, v) = (self.uniform(), self.uniform());
        (-2.0 * u.ln()).sqrt() * (2.0 * std::f64::consts::PI * v).cos()
    }
}

fn one(r: &Reagent, mol_per_l: f64) -> Result<Recipe, protolyte::Error> {
    let mut out = Recipe::new();
    out.add(r, Amount::molar(mol_per_l))?;
    Ok(out)
}

fn measure(
    t: &Titration,
    volumes_ml: &[f64],
    offset: f64,
    noise: &mut Noise,
) -> Result<Vec<(Volume, f64)>, protolyte::Error> {
    volumes_ml
        .iter()
        .map(|&v| {
            let v = Volume::milliliters(v);
            Ok((v, t.point(v, None)?.ph + offset + 0.01 * noise.normal()))
        })
        .collect()
}

fn main() -> Result<(), protolyte::Error> {
    let cat = Catalog::builtin();
    let conditions = Conditions::new(Temperature::celsius(22.0), ActivityModel::Davies);
    let acetic = cat.reagent("acetic acid")?;
    let khp = cat.reagent("potassium hydrogen phthalate")?;
    let naoh = cat.reagent("sodium hydroxide")?;
    let v0 = Volume::milliliters(20.0);

    // The truth, unknown to the analyst.
    let mut noise = Noise(0x05EE_D0FF_1E1D);
    let true_sample = Titration::new(&one(&acetic, 0.0843)?, v0, &one(&naoh, 0.0987)?, &conditions)?;
    let true_standard = Titration::new(&one(&khp, 0.0500)?, v0, &one(&naoh, 0.0987)?, &conditions)?;
    let sample_ml: Vec<f64> = (1..=45).map(|i| 0.5 * i as f64).collect();
    let standard_ml: Vec<f64> = (1..=30).map(|i| 0.5 * i as f64).collect();
    let sample = measure(&true_sample, &sample_ml, 0.03, &mut noise)?;
    let standard = measure(&true_standard, &standard_ml, 0.03, &mut noise)?;

    // The analyst's model: the label values.
    let mut fit = TitrationFit::new();
    let s = fit.add_curve(
        Titration::new(&one(&acetic, 0.08)?, v0, &one(&naoh, 0.1)?, &conditions)?,
        &sample,
    )?;
    fit.add_curve(
        Titration::new(&one(&khp, 0.0500)?, v0, &one(&naoh, 0.1)?, &conditions)?,
        &standard,
    )?;
    fit.estimate(Unknown::AnalyteTotal("acetate".into()), Scope::Curve(s))?
        .estimate(Unknown::pka("acetate", 0), Scope::Shared)?
        .estimate(Unknown::TitrantTotal("sodium".into()), Scope::Shared)?
        .estimate(Unknown::ElectrodeOffset, Scope::Shared)?;
    let r = fit.run()?;

    println!(
        "fit of {} + {} points: {} iterations, converged: {}",
        sample.len(),
        standard.len(),
        r.iterations,
        r.converged
    );
    println!(
        "residual sd {:.4} pH ({} degrees of freedom)",
        r.residual_sd, r.degrees_of_freedom
    );
    let truth = [Some(0.0843), None, Some(0.0987), Some(0.03)];
    for (e, t) in r.estimates.iter().zip(truth) {
        let known = t.map(|t| format!("(made with {t:.4})")).unwrap_or_default();
        println!(
            "  {:<40} {:>9.5} ± {:.5}  start {:.4} {known}",
            e.unknown.describe(),
            e.value,
            e.standard_error,
            e.start
        );
    }
    println!("correlation matrix:");
    for i in 0..r.correlation.nrows() {
        let row: Vec<String> = (0..r.correlation.ncols())
            .map(|j| format!("{:+.3}", r.correlation[(i, j)]))
            .collect();
        println!("  {}", row.join("  "));
    }
    let worst = r.residuals.iter().flatten().fold(0.0f64, |m, x| m.max(x.abs()));
    println!("largest |residual| {worst:.4} pH");
    Ok(())
}
