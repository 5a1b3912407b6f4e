//! Closed-form references. A monoprotic acid HA (Cₐ) with a strong base (C_b), ideal
//! solution, satisfies the charge balance h + C_b = Kw/h + Cₐ·Ka/(h + Ka), i.e. the cubic
//!
//!   h³ + (Ka + C_b)·h² + (Ka·C_b − Ka·Cₐ − Kw)·h − Ka·Kw = 0
//!
//! (the standard proton-condition cubic; e.g. J. N. Butler, *Ionic Equilibrium: Solubility
//! and pH Calculations*, Wiley 1998, ch. 3). Its positive root, from the `roots` crate's
//! closed-form cubic solver, must equal the solver's p[H] to 1e-10.

mod common;

use proptest::prelude::*;
use protolyte::{ActivityModel, Amount, Conditions, Protolyte, Temperature};

/// Positive real root of the cubic, polished by Newton on the polynomial itself (the
/// closed-form roots lose digits to cancellation when h is far below the coefficients).
fn cubic_ph(ka: f64, kw: f64, ca: f64, cb: f64) -> f64 {
    let a2 = ka + cb;
    let a1 = ka * cb - ka * ca - kw;
    let a0 = -ka * kw;
    // By Descartes' rule of signs (+, +, ±, −) the cubic has exactly one positive root. The
    // closed form loses a root far smaller than the coefficients to cancellation, so the
    // reversed polynomial (in u = 1/h) is solved too and every positive candidate kept.
    let direct = roots::find_roots_cubic(1.0, a2, a1, a0);
    let reversed = roots::find_roots_cubic(a0, a1, a2, 1.0);
    let candidates: Vec<f64> = direct
        .as_ref()
        .iter()
        .copied()
        .chain(reversed.as_ref().iter().map(|u| 1.0 / u))
        .filter(|r| r.is_finite() && *r > 0.0)
        .collect();
    let resid =
        |h: f64| (((h + a2) * h + a1) * h + a0).abs() / (h * h * h + a2.abs() * h * h + a1.abs() * h + a0.abs());
    let mut h = candidates
        .iter()
        .copied()
        .min_by(|x, y| resid(*x).total_cmp(&resid(*y)))
        .unwrap_or(f64::NAN);
    // Newton in ln h on p(h)/h² form is well conditioned; a few steps reach round-off.
    for _ in 0..50 {
        let p = ((h + a2) * h + a1) * h + a0;
        let dp = (3.0 * h + 2.0 * a2) * h + a1;
        let step = p / (dp * h);
        h *= (-step).exp();
        if step.abs() < 1e-15 {
            break;
        }
    }
    -h.log10()
}

fn solver_ph(pka: f64, ca: f64, cb: f64, t: f64) -> (f64, f64) {
    let acid = Protolyte::new("HA", &[pka], 0).unwrap();
    let mut r = common::one(&acid, 1, ca);
    r.add(&common::naoh(), Amount::molal(cb)).unwrap();
    let sys = r
        .compile(&Conditions::new(Temperature::celsius(t), ActivityModel::Ideal))
        .unwrap();
    let eq = sys.solve().unwrap();
    (eq.ph(), sys.log10_kw())
}

#[test]
fn acetic_acid_with_half_equivalent_base_matches_cubic() {
    // pKa 4.756: acetic acid, Goldberg, Kishore & Lennen, J. Phys. Chem. Ref. Data 31 (2002) 231 (from memory).
    let (ph, lkw) = solver_ph(4.756, 0.1, 0.05, 25.0);
    let expected = cubic_ph(10f64.powf(-4.756), 10f64.powf(lkw), 0.1, 0.05);
    assert!((ph - expected).abs() < 1e-10, "{ph} vs {expected}");
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(2000))]
    #[test]
    fn monoprotic_acid_with_strong_base_is_the_cubic(
        pka in -2.0f64..16.0,
        log_ca in -9.0f64..0.3,
        frac in 0.0f64..2.0,
        t in 0.0f64..100.0,
    ) {
        let ca = 10f64.powf(log_ca);
        let cb = ca * frac;
        let (ph, lkw) = solver_ph(pka, ca, cb, t);
        let expected = cubic_ph(10f64.powf(-pka), 10f64.powf(lkw), ca, cb);
        prop_assert!((ph - expected).abs() < 1e-10, "pH {} vs cubic {} (pKa {}, Ca {}, Cb {})", ph, expected, pka, ca, cb);
    }
}
