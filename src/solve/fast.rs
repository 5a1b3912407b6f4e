//! The fast path: with no coupling species, every component's speciation is closed-form in
//! a(H⁺) (the alpha fractions), and the charge balance
//!
//! f(L) = Σ_free z·m + Σ_c T_c · z̄_c(L),   L = ln a(H⁺),
//!
//! is strictly increasing in L: dz̄_c/dL is the variance of the number of bound protons of
//! component c, and H⁺ and OH⁻ both add positive slope. It is bracketed and solved by Newton
//! steps that fall back to bisection whenever they leave the bracket. The ionic strength is
//! iterated to self-consistency around it (secant-accelerated fixed point).

use super::{Evaluation, I_MAX, I_MIN, LN_AH_MAX, LN_AH_MIN, Point};
use crate::error::{Error, Result};
use crate::system::System;

const LN10: f64 = std::f64::consts::LN_10;

/// Per-component sums of the alpha-fraction evaluation.
struct Scratch {
    umax: Vec<f64>,
    s0: Vec<f64>,
    sz: Vec<f64>,
    sn: Vec<f64>,
    szn: Vec<f64>,
}

/// Charge balance and its slope at L with fixed ln γ.
fn charge(sys: &System, ev: &Evaluation, l: f64, w: &mut Scratch) -> (f64, f64) {
    let nc = sys.components.len();
    w.umax.iter_mut().for_each(|u| *u = f64::NEG_INFINITY);
    w.s0.iter_mut().for_each(|u| *u = 0.0);
    w.sz.iter_mut().for_each(|u| *u = 0.0);
    w.sn.iter_mut().for_each(|u| *u = 0.0);
    w.szn.iter_mut().for_each(|u| *u = 0.0);
    let mut f = 0.0;
    let mut df = 0.0;
    for s in 0..sys.species.len() {
        if sys.coupling[s] {
            continue;
        }
        let g = sys.group[s];
        let nh = sys.nu[s * nc];
        let u = sys.ln_k[s] + nh * l - ev.ln_gamma[s];
        if g == 0 {
            let c = u.min(700.0).exp();
            let z = f64::from(sys.species[s].charge);
            f += z * c;
            df += z * nh * c;
        } else if sys.components[g].total_molal > 0.0 && u > w.umax[g] {
            w.umax[g] = u;
        }
    }
    for s in 0..sys.species.len() {
        let g = sys.group[s];
        if g == 0 || sys.coupling[s] || sys.components[g].total_molal <= 0.0 {
            continue;
        }
        let nh = sys.nu[s * nc];
        let z = f64::from(sys.species[s].charge);
        let e = (sys.ln_k[s] + nh * l - ev.ln_gamma[s] - w.umax[g]).exp();
        w.s0[g] += e;
        w.sz[g] += z * e;
        w.sn[g] += nh * e;
        w.szn[g] += z * nh * e;
    }
    for (g, comp) in sys.components.iter().enumerate().skip(1) {
        let t = comp.total_molal;
        if t > 0.0 {
            let s0 = w.s0[g];
            let mz = w.sz[g] / s0;
            f += t * mz;
            df += t * (w.szn[g] / s0 - mz * w.sn[g] / s0);
        }
    }
    (f, df)
}

/// Solves f(L) = 0 at fixed γ from `l0`. Returns L and the number of evaluations.
fn solve_l(sys: &System, ev: &Evaluation, l0: f64, w: &mut Scratch) -> Result<(f64, usize)> {
    const MAX_STEP: f64 = 3.0 * LN10;
    let mut l = l0.clamp(LN_AH_MIN, LN_AH_MAX);
    let (mut f, mut d) = charge(sys, ev, l, w);
    let mut lo = LN_AH_MIN;
    let mut hi = LN_AH_MAX;
    let mut lo_ok = false;
    let mut hi_ok = false;
    let mut evals = 1;
    for _ in 0..300 {
        if f == 0.0 {
            return Ok((l, evals));
        }
        if f < 0.0 {
            lo = l;
            lo_ok = true;
        } else {
            hi = l;
            hi_ok = true;
        }
        let newton = if d > 0.0 && d.is_finite() { -f / d } else { f64::NAN };
        if newton.abs() <= 1e-14 * l.abs().max(1.0) {
            // The Newton correction is below round-off: f is zero to working precision.
            return Ok((l, evals));
        }
        let mut next = if newton.is_finite() {
            l + newton.clamp(-MAX_STEP, MAX_STEP)
        } else if f < 0.0 {
            l + MAX_STEP
        } else {
            l - MAX_STEP
        };
        let bisect = !(next > lo && next < hi);
        if bisect {
            next = if lo_ok && hi_ok {
                0.5 * (lo + hi)
            } else if f < 0.0 {
                (l + MAX_STEP).min(LN_AH_MAX)
            } else {
                (l - MAX_STEP).max(LN_AH_MIN)
            };
        }
        if next == l {
            break;
        }
        let step = next - l;
        l = next;
        (f, d) = charge(sys, ev, l, w);
        evals += 1;
        if !bisect && step.abs() <= 1e-12 {
            return Ok((l, evals));
        }
        if lo_ok && hi_ok && (hi - lo) <= 4.0 * f64::EPSILON * l.abs().max(1.0) {
            return Ok((l, evals));
        }
        let at_edge = (l <= LN_AH_MIN && f > 0.0) || (l >= LN_AH_MAX && f < 0.0);
        if at_edge {
            return Err(no_root(sys, l, evals));
        }
    }
    if lo_ok && hi_ok {
        Ok((l, evals))
    } else {
        Err(no_root(sys, l, evals))
    }
}

fn no_root(sys: &System, l: f64, evals: usize) -> Error {
    let _ = sys;
    Error::NoConvergence {
        path: "fast",
        iterations: evals,
        max_residual: f64::INFINITY,
        worst_equation: "charge balance (no root for pH in −4..20)".into(),
        last_ph: -l / LN10,
    }
}

/// Ionic strength from the concentrations at L (γ as set in `ev`), also filling the free
/// component activities into `y`.
fn finish(sys: &System, ev: &mut Evaluation, l: f64, ln_i: f64, w: &mut Scratch) -> Point {
    let nc = sys.components.len();
    charge(sys, ev, l, w);
    let mut y = vec![f64::NEG_INFINITY; nc];
    y[0] = l;
    for (g, comp) in sys.components.iter().enumerate().skip(1) {
        if comp.total_molal > 0.0 {
            y[g] = comp.total_molal.ln() - w.umax[g] - w.s0[g].ln();
        }
    }
    let p = Point { y, ln_i };
    ev.set_conc(sys, &p);
    p
}

fn ionic_strength(sys: &System, ev: &Evaluation) -> f64 {
    let mut i = 0.0;
    for (s, sp) in sys.species.iter().enumerate() {
        if sys.coupling[s] {
            continue;
        }
        let z = f64::from(sp.charge);
        i += 0.5 * z * z * ev.conc[s];
    }
    i.clamp(I_MIN, I_MAX)
}

/// Solves an uncoupled system (species coupling two components are ignored, which is what
/// the general path wants from its starting guess). `start` is (ln a(H⁺), ln I).
pub(crate) fn solve(sys: &System, start: Option<(f64, f64)>, tol: f64) -> Result<(Point, usize)> {
    let nc = sys.components.len();
    let mut w = Scratch {
        umax: vec![0.0; nc],
        s0: vec![0.0; nc],
        sz: vec![0.0; nc],
        sn: vec![0.0; nc],
        szn: vec![0.0; nc],
    };
    let mut ev = Evaluation::new(sys.species.len());
    let (mut l, mut i) = match start {
        Some((l, li)) if l.is_finite() && li.is_finite() => (l, li.exp().clamp(I_MIN, I_MAX)),
        _ => {
            // A first guess at I from the simple ions alone (strong electrolytes); the
            // families' share follows from the first pH solve.
            let mut i0 = 1e-7;
            for c in sys.components.iter().skip(1) {
                if matches!(c.kind, crate::system::ComponentKind::Ion(_)) {
                    i0 += 0.5 * f64::from(c.charge * c.charge) * c.total_molal;
                }
            }
            (-7.0 * LN10, i0.clamp(I_MIN, I_MAX))
        }
    };
    let ideal = sys.model == crate::ActivityModel::Ideal;
    let mut evals = 0;
    let mut prev: Option<(f64, f64)> = None; // (I, G(I) − I)
    for _ in 0..100 {
        ev.set_gamma(sys, i);
        let (ln_ah, n) = solve_l(sys, &ev, l, &mut w)?;
        evals += n;
        l = ln_ah;
        let p = finish(sys, &mut ev, l, i.ln(), &mut w);
        let g = ionic_strength(sys, &ev);
        if ideal {
            // γ does not depend on I: report the I of the solution.
            return Ok((Point { y: p.y, ln_i: g.ln() }, evals));
        }
        let h = g - i;
        if h.abs() <= tol.min(1e-13) * i {
            return Ok((p, evals));
        }
        let mut next = g;
        if let Some((ip, hp)) = prev {
            let den = h - hp;
            if den != 0.0 && den.is_finite() {
                let sec = i - h * (i - ip) / den;
                if sec.is_finite() && sec > 0.5 * g.min(i) && sec < 2.0 * g.max(i) {
                    next = sec;
                }
            }
        }
        prev = Some((i, h));
        i = next.clamp(I_MIN, I_MAX);
    }
    Err(Error::NoConvergence {
        path: "fast",
        iterations: evals,
        max_residual: f64::INFINITY,
        worst_equation: "ionic-strength iteration".into(),
        last_ph: -l / LN10,
    })
}
