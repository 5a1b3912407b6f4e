//! Helpers shared by the integration tests: recipes built from custom definitions so that
//! the tests do not depend on the built-in data unless they mean to.
#![allow(dead_code)]

use protolyte::{Amount, Constituent, Ion, Protolyte, Reagent, Recipe};

pub fn sodium() -> Ion {
    Ion::new("sodium", 1).unwrap()
}

pub fn chloride() -> Ion {
    Ion::new("chloride", -1).unwrap()
}

/// NaOH as Na⁺ + OH⁻.
pub fn naoh() -> Reagent {
    Reagent::new(
        "sodium hydroxide",
        None,
        vec![(Constituent::Ion(sodium()), 1), (Constituent::Hydroxide, 1)],
    )
    .unwrap()
}

/// HCl as H⁺ + Cl⁻.
pub fn hcl() -> Reagent {
    Reagent::new(
        "hydrochloric acid",
        None,
        vec![(Constituent::Proton, 1), (Constituent::Ion(chloride()), 1)],
    )
    .unwrap()
}

/// The form of `p` with `protons` bound, made neutral with Na⁺ or Cl⁻.
pub fn salt(p: &Protolyte, protons: usize) -> Reagent {
    let z = p.charge_of_form(protons).expect("a form of the family");
    let mut parts = vec![(
        Constituent::Form {
            protolyte: p.clone(),
            protons,
        },
        1,
    )];
    if z < 0 {
        parts.push((Constituent::Ion(sodium()), (-z) as u32));
    } else if z > 0 {
        parts.push((Constituent::Ion(chloride()), z as u32));
    }
    Reagent::new(&format!("{} form {protons}", p.name()), None, parts).unwrap()
}

/// A recipe of one form of `p` at `molal` mol/kg.
pub fn one(p: &Protolyte, protons: usize, molal: f64) -> Recipe {
    let mut r = Recipe::new();
    r.add(&salt(p, protons), Amount::molal(molal)).unwrap();
    r
}

/// xorshift64* (S. Vigna, ACM TOMS 42 (2016) art. 30; from memory) with Box–Muller normals.
pub struct Rng(u64);

impl Rng {
    pub fn new(seed: u64) -> Self {
        Rng(seed.wrapping_mul(0x9E37_79B9_7F4A_7C15) | 1)
    }
    pub fn uniform(&mut self) -> f64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        let x = self.0.wrapping_mul(0x2545_F491_4F6C_DD1D);
        ((x >> 11) as f64 + 0.5) / (1u64 << 53) as f64
    }
    pub fn normal(&mut self) -> f64 {
        let (u, v) = (self.uniform(), self.uniform());
        (-2.0 * u.ln()).sqrt() * (2.0 * std::f64::consts::PI * v).cos()
    }
}
