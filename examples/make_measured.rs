//! Makes the example measured-titration file `examples/vinegar_potentials.csv`.
//!
//! Invented scenario: a quality-control laboratory checks a lot of table vinegar. 10.000 g of
//! vinegar is made up to 100 mL; a 25 mL aliquot is titrated with 0.1000 mol/L sodium
//! hydroxide at 25 °C while a glass electrode's potential is logged in mV. The truth behind
//! the file (the analyst does not know it): 5.00 % w/w acetic acid, an electrode of 98.5 %
//! Nernst slope and +3.0 mV offset at pH 7. The curve is the model's (Davies activities),
//! with normal noise of standard deviation 0.3 mV on each potential and 0.003 mL on each
//! burette reading, from a fixed seed.
//!
//! Run with `cargo run --example make_measured > examples/vinegar_potentials.csv`.

use protolyte::analysis::Titration;
use protolyte::analysis::measured::calibration::nernst_slope_mv;
use protolyte::{ActivityModel, Amount, Catalog, Conditions, Recipe, Temperature, Volume};

/// xorshift64* with Box–Muller normals (fixed seed: the file is the same every run).
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

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let cat = Catalog::builtin();
    let t25 = Temperature::celsius(25.0);
    let conditions = Conditions::new(t25, ActivityModel::Davies);
    // 5.00 % w/w of 10.000 g in 100 mL: 0.5000 g / 60.052 g/mol / 0.1 L.
    let acetic = 0.5 / 60.052 / 0.1;
    let mut analyte = Recipe::new();
    analyte.add(&cat.reagent("acetic acid")?, Amount::molar(acetic))?;
    let mut titrant = Recipe::new();
    titrant.add(&cat.reagent("sodium hydroxide")?, Amount::molar(0.1))?;
    let t = Titration::new(&analyte, Volume::milliliters(25.0), &titrant, &conditions)?;
    let slope = 0.985 * nernst_slope_mv(t25);
    let offset = 3.0;
    let mut noise = Noise(0x5eed_1e55_u64);
    // 0.5 mL steps, 0.1 mL steps from 19.5 to 22.5 mL around the expected endpoint.
    let mut volumes = Vec::new();
    let mut v: f64 = 0.5;
    while v <= 30.0 + 1e-9 {
        volumes.push(v);
        v += if (19.5..22.5).contains(&v) { 0.1 } else { 0.5 };
    }
    println!("# Invented scenario (examples/make_measured.rs): table vinegar, 10.000 g made up to 100 mL,");
    println!("# 25 mL aliquot titrated with 0.1000 mol/L NaOH at 25 °C; glass electrode potential in mV.");
    println!("# Made from the model with noise (0.3 mV on E, 0.003 mL on V), not measured.");
    println!("volume_ml,potential_mv");
    for v in volumes {
        let ph = t.ph_at(Volume::milliliters(v))?;
        let e = offset - slope * (ph - 7.0) + 0.3 * noise.normal();
        let read = v + 0.003 * noise.normal();
        println!("{read:.3},{e:.1}");
    }
    Ok(())
}
