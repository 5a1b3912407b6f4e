//! The fast path: with no coupling species, every component's speciation is closed-form in
//! a(H⁺) (the alpha fractions), and the charge balance
//!
//! f(L) = Σ_free z·m + Σ_c T_c · z̄_c(L),   L = ln a(H⁺),
//!
//! is strictly increasing in L: dz̄_c/dL is the variance of the number of bound protons of
//! component c, and H⁺ and OH⁻ both add positive slope. It is bracketed and solved by Newton
//! steps that fall back to bisection whenever they leave the bracket. The ionic strength is
//! iterated to self-consistency around it (secant-accelerated fixed point).
//!
//! Evaluation cost: each species' weight exp(ln K − ln γ + ν·L) is kept as a coefficient
//! taken at a reference L (normalised per component, so nothing overflows) times x^ν with
//! x = exp(L − L_ref): one exponential per evaluation instead of one per species. The
//! coefficients are retaken in log space whenever L strays far from the reference.

use super::{Evaluation, I_MAX, I_MIN, LN_AH_MAX, LN_AH_MIN, Point};
use crate::error::{Error, Result};
use crate::system::System;

const LN10: f64 = std::f64::consts::LN_10;
/// How far (ln units) L may move from the reference before the coefficients are retaken.
const RESCALE_SPAN: f64 = 20.0;

/// The charge balance split into its positive part P = Σ_{z>0} z·m and negative part
/// N = Σ_{z<0} |z|·m, with their derivatives by L = ln a(H⁺).
#[derive(Debug, Default, Clone, Copy)]
struct Balance {
    pos: f64,
    dpos: f64,
    neg: f64,
    dneg: f64,
    ok: bool,
}

/// Largest |ν(H⁺)| of any species: families have at most 12 protons and complexes gain or
/// lose at most 12 (both checked where they are defined).
const NU_SPAN: usize = 12;

/// Working state of the fast path for one system.
pub(crate) struct Fast<'a> {
    sys: &'a System,
    pub(crate) ev: Evaluation,
    /// One buffer: the coefficient of each uncoupled species at `l_ref` (normalised per
    /// component) in `[..ns]`; per component, the log-scale taken out of its coefficients in
    /// `[ns..ns + nc]` and Σv at the last evaluation in `[ns + nc..]`.
    work: Vec<f64>,
    ns: usize,
    nc: usize,
    /// Under Davies: ln γ of a singly charged ion at the current I.
    davies_unit: f64,
    /// The previous ln γ while they are retaken (models other than Davies).
    old_ln_gamma: Vec<f64>,
    l_ref: f64,
    /// x^k for k = −12..=12 at index k + 12.
    pw: [f64; 2 * NU_SPAN + 1],
}

impl<'a> Fast<'a> {
    pub(crate) fn new(sys: &'a System) -> Self {
        let nc = sys.components.len();
        let ns = sys.species.len();
        Fast {
            sys,
            ev: Evaluation::without_slopes(sys),
            work: vec![0.0; ns + 2 * nc],
            ns,
            nc,
            davies_unit: 0.0,
            old_ln_gamma: Vec::new(),
            l_ref: f64::NAN,
            pw: [1.0; 2 * NU_SPAN + 1],
        }
    }

    /// Components with a positive total (not H⁺).
    fn active(&self) -> impl Iterator<Item = usize> + use<'a> {
        let sys = self.sys;
        (1..sys.components.len()).filter(move |&c| sys.components[c].total_molal > 0.0)
    }

    /// Retakes the coefficients at L (log space).
    fn rescale(&mut self, l: f64) {
        let sys = self.sys;
        for &s in &sys.members[0] {
            let b = sys.ln_k[s] - self.ev.ln_gamma[s] + f64::from(sys.nu_h[s]) * l;
            self.work[s] = b.min(700.0).exp();
        }
        for g in self.active() {
            let members = &sys.members[g];
            let mut m = f64::NEG_INFINITY;
            for &s in members {
                let b = sys.ln_k[s] - self.ev.ln_gamma[s] + f64::from(sys.nu_h[s]) * l;
                self.work[s] = b;
                m = m.max(b);
            }
            for &s in members {
                self.work[s] = (self.work[s] - m).exp();
            }
            self.work[self.ns + g] = m;
        }
        self.l_ref = l;
    }

    /// Moves to new activity coefficients at ionic strength `i` (and the held composition,
    /// where γ depends on it) without retaking the coefficients in log space: each one is
    /// multiplied by γ_old/γ_new. Under Davies, ln γ is z² times one number, so the factors
    /// are integer powers of a single exponential.
    fn update_gamma(&mut self, i: f64) {
        let sys = self.sys;
        if sys.model == crate::activity::ActivityModel::Davies {
            let profile = crate::activity::GammaProfile::new(sys.model, i, &sys.dh);
            let unit = profile.at(1, 0.0).0 * LN10; // ln γ of a singly charged ion
            let old_unit = self.davies_unit;
            let base = (old_unit - unit).exp();
            for (s, sp) in sys.species.iter().enumerate() {
                let z2 = sp.charge * sp.charge;
                if z2 != 0 {
                    self.ev.ln_gamma[s] = unit * f64::from(z2);
                    self.work[s] *= base.powi(z2);
                }
            }
            self.davies_unit = unit;
        } else {
            self.old_ln_gamma.clone_from(&self.ev.ln_gamma);
            self.ev.set_gamma(sys, i);
            for (s, (&old, &new)) in self.old_ln_gamma.iter().zip(&self.ev.ln_gamma).enumerate() {
                if new != old {
                    self.work[s] *= (old - new).exp();
                }
            }
        }
    }

    /// Fills the power table for L and returns false when it is out of safe range.
    fn powers(&mut self, l: f64) -> bool {
        let d = l - self.l_ref;
        if d.is_nan() || d.abs() > RESCALE_SPAN {
            return false;
        }
        let x = d.exp();
        let ix = 1.0 / x;
        let (up, down) = self.sys.nu_h_span;
        for k in 1..=up.min(NU_SPAN) {
            self.pw[NU_SPAN + k] = self.pw[NU_SPAN + k - 1] * x;
        }
        for k in 1..=down.min(NU_SPAN) {
            self.pw[NU_SPAN - k] = self.pw[NU_SPAN - k + 1] * ix;
        }
        true
    }

    #[inline]
    fn weight(&self, s: usize) -> f64 {
        self.work[s] * self.pw[(self.sys.nu_h[s] + NU_SPAN as i32) as usize]
    }

    /// The charge balance at L with the current ln γ, split into its positive and negative
    /// parts (see [`Balance`]).
    fn charge(&mut self, l: f64) -> Balance {
        if !self.powers(l) {
            self.rescale(l);
            self.powers(l);
        }
        let b = self.sums();
        if b.ok {
            return b;
        }
        self.rescale(l);
        self.powers(l);
        self.sums()
    }

    fn sums(&mut self) -> Balance {
        let sys = self.sys;
        let nc = sys.components.len();
        let mut b = Balance::default();
        for &s in &sys.members[0] {
            let v = self.weight(s);
            let z = sys.charge_f[s];
            let d = z * f64::from(sys.nu_h[s]) * v;
            if z > 0.0 {
                b.pos += z * v;
                b.dpos += d;
            } else {
                b.neg -= z * v;
                b.dneg -= d;
            }
        }
        let mut ok = b.pos.is_finite() && b.neg.is_finite();
        for g in self.active() {
            // Σv, Σν·v, and Σz·v, Σz·ν·v over the positive and over the negative species.
            let (mut s0, mut sn, mut zp, mut znp, mut zm, mut znm) = (0.0, 0.0, 0.0, 0.0, 0.0, 0.0);
            for &s in &sys.members[g] {
                let v = self.weight(s);
                let (nu, zpos, zneg) = sys.fast_coef[s];
                let nv = nu * v;
                s0 += v;
                sn += nv;
                zp += zpos * v;
                znp += zpos * nv;
                zm += zneg * v;
                znm += zneg * nv;
            }
            ok &= s0 > 1e-250 && s0 < 1e250;
            // m_s = T·v_s/Σv and dm_s/dL = m_s·(ν_s − ν̄).
            let t = sys.components[g].total_molal / s0;
            let nbar = sn / s0;
            b.pos += t * zp;
            b.dpos += t * (znp - zp * nbar);
            b.neg += t * zm;
            b.dneg += t * (znm - zm * nbar);
            self.work[self.ns + nc + g] = s0;
        }
        b.ok = ok;
        b
    }

    /// Solves the charge balance at fixed γ from `l0`. Returns L and the number of
    /// evaluations.
    ///
    /// Newton steps are taken on g(L) = ln P − ln N (P and N the positive and negative
    /// charge, both > 0 since H⁺ and OH⁻ are always present), which stays nearly linear in L
    /// over decades where P − N does not; the sign of P − N keeps a bracket, and a step that
    /// leaves the bracket becomes a bisection.
    fn solve_l(&mut self, l0: f64, accept: f64) -> Result<(f64, usize)> {
        const MAX_STEP: f64 = 8.0 * LN10;
        let mut l = l0.clamp(LN_AH_MIN, LN_AH_MAX);
        let mut b = self.charge(l);
        let mut lo = LN_AH_MIN;
        let mut hi = LN_AH_MAX;
        let mut lo_ok = false;
        let mut hi_ok = false;
        let mut evals = 1;
        for _ in 0..300 {
            let f = b.pos - b.neg;
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
            let g = (b.pos / b.neg).ln();
            let dg = b.dpos / b.pos - b.dneg / b.neg;
            let newton = if dg > 0.0 && dg.is_finite() && g.is_finite() {
                -g / dg
            } else {
                let df = b.dpos - b.dneg;
                if df > 0.0 { -f / df } else { f64::NAN }
            };
            if newton.abs() <= 1e-14 * l.abs().max(1.0) {
                // The Newton correction is below round-off: the balance holds to working
                // precision.
                return Ok((l, evals));
            }
            if newton.abs() <= accept.max(1e-8) && l + newton > lo && l + newton < hi {
                // Newton converges quadratically here: after a correction of 1e-8 the error
                // is of order 1e-16, below what one more evaluation could resolve. (A looser
                // `accept` serves the early ionic-strength iterations, whose γ are still off.)
                return Ok((l + newton, evals));
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
            b = self.charge(l);
            evals += 1;
            if !bisect && step.abs() <= 1e-12 {
                return Ok((l, evals));
            }
            if lo_ok && hi_ok && (hi - lo) <= 4.0 * f64::EPSILON * l.abs().max(1.0) {
                return Ok((l, evals));
            }
            let f = b.pos - b.neg;
            if (l <= LN_AH_MIN && f > 0.0) || (l >= LN_AH_MAX && f < 0.0) {
                return Err(no_root(l, evals));
            }
        }
        if lo_ok && hi_ok {
            Ok((l, evals))
        } else {
            Err(no_root(l, evals))
        }
    }

    /// Concentrations at L into `ev.conc`, the component activities into a point, and
    /// G = ½ Σ z² m with its total derivative dG/dI along the solution curve L(I) of the charge
    /// balance (implicit differentiation: dL/dI = −(∂f/∂I)/(∂f/∂L)), for Newton steps on I.
    fn finish(&mut self, l: f64, i: f64) -> (Point, f64, f64) {
        let sys = self.sys;
        let nc = sys.components.len();
        let b = self.charge(l);
        let profile = crate::activity::GammaProfile::new(sys.model, i, &sys.dh);
        // d ln γ/dI of each species; under Davies z² times that of a singly charged ion.
        let davies = sys.model == crate::activity::ActivityModel::Davies;
        let unit = profile.at(1, 0.0).1 * LN10;
        let slope = |s: usize| {
            if davies {
                unit * sys.charge_f[s] * sys.charge_f[s]
            } else {
                profile.at(sys.species[s].charge, sys.species[s].ion_size_angstrom).1 * LN10
            }
        };
        self.ev.conc.iter_mut().for_each(|c| *c = 0.0);
        let mut y = vec![f64::NEG_INFINITY; nc];
        y[0] = l;
        let (mut ionic, mut df_di, mut dg_dl, mut dg_di) = (0.0, 0.0, 0.0, 0.0);
        for &s in &sys.members[0] {
            let c = self.weight(s);
            self.ev.conc[s] = c;
            let (nu, z, gs) = (f64::from(sys.nu_h[s]), sys.charge_f[s], slope(s));
            ionic += 0.5 * z * z * c;
            df_di -= z * gs * c;
            dg_dl += 0.5 * z * z * nu * c;
            dg_di -= 0.5 * z * z * gs * c;
        }
        for g in self.active() {
            let t = sys.components[g].total_molal;
            let s0 = self.work[self.ns + self.nc + g];
            // Σ_s m_s = a_g · e^{m_g} · Σv = T, so ln a_g = ln T − m_g − ln Σv.
            y[g] = t.ln() - self.work[self.ns + g] - s0.ln();
            let (mut sz, mut sg, mut szg, mut sz2, mut sz2nu, mut snu, mut sz2g) = (0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0);
            for &s in &sys.members[g] {
                let w = self.weight(s) / s0;
                self.ev.conc[s] = t * w;
                let (nu, z, gs) = (f64::from(sys.nu_h[s]), sys.charge_f[s], slope(s));
                sz += z * w;
                sg += gs * w;
                szg += z * gs * w;
                sz2 += z * z * w;
                sz2nu += z * z * nu * w;
                snu += nu * w;
                sz2g += z * z * gs * w;
            }
            ionic += 0.5 * t * sz2;
            df_di -= t * (szg - sz * sg);
            dg_dl += 0.5 * t * (sz2nu - sz2 * snu);
            dg_di -= 0.5 * t * (sz2g - sz2 * sg);
        }
        let df_dl = b.dpos - b.dneg;
        let total = if df_dl > 0.0 {
            dg_di - dg_dl * df_di / df_dl
        } else {
            f64::NAN
        };
        (Point { y, ln_i: i.ln() }, ionic.max(I_MIN), total)
    }
}

/// The refusal of a solution whose species give an ionic strength above [`I_MAX`].
pub(crate) fn beyond_limit(ionic: f64) -> Error {
    Error::IonicStrengthBeyondLimit {
        ionic_strength_molal: ionic,
        limit_molal: I_MAX,
    }
}

fn no_root(l: f64, evals: usize) -> Error {
    Error::NoConvergence {
        path: "fast",
        iterations: evals,
        max_residual: f64::INFINITY,
        worst_equation: "charge balance (no root for pH in −4..20)".into(),
        last_ph: -l / LN10,
    }
}

/// Solves the uncoupled part of a system (species coupling two components are left out,
/// which is what the general path wants from its starting guess). `start` is
/// (ln a(H⁺), ln I); `tol` the relative ionic-strength tolerance. Returns the point, the
/// evaluation at it and the number of pH-equation evaluations.
pub(crate) fn solve(sys: &System, start: Option<(f64, f64)>, tol: f64) -> Result<(Point, Evaluation, usize)> {
    let mut fast = Fast::new(sys);
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
    let ideal = sys.model == crate::activity::ActivityModel::Ideal;
    let mut evals = 0;
    // How closely L is solved at the current γ: loosely while I is still far off (the γ
    // error then dominates), to round-off once it has settled.
    let mut accept = if ideal { 0.0 } else { 1e-3 };
    fast.ev.set_gamma(sys, i);
    fast.davies_unit = crate::activity::GammaProfile::new(sys.model, i, &sys.dh).at(1, 0.0).0 * LN10;
    fast.rescale(l);
    for iteration in 0..100 {
        if iteration > 0 {
            fast.update_gamma(i);
        }
        let (ln_ah, n) = fast.solve_l(l, accept)?;
        evals += n;
        l = ln_ah;
        let (p, g, dg) = fast.finish(l, i);
        if ideal {
            // γ does not depend on I: report the I of the solution.
            return Ok((Point { y: p.y, ln_i: g.ln() }, fast.ev, evals));
        }
        if g > I_MAX && i >= I_MAX {
            // The iteration is bounded at I_MAX and the species still give more: no
            // solution within the limit (reported, never capped).
            return Err(beyond_limit(g));
        }
        let h = g - i;
        // Where γ depends on the composition (SIT), the composition it was taken at must
        // also have settled: the residual of that iteration is the change of ln γ.
        let dc = fast.ev.composition_change(sys);
        if h.abs() <= tol * i && dc <= tol {
            if accept <= 1e-8 {
                return Ok((p, fast.ev, evals));
            }
            // I has settled while L was solved loosely: solve L tightly at this I.
            accept = 0.0;
            continue;
        }
        fast.ev.hold_composition();
        accept = (0.01 * (h / i).abs().max(dc)).min(1e-3);
        // Newton on h(I) = G(I) − I with the analytic dG/dI; the fixed point G(I) when the
        // step is not usable.
        let newton = i - h / (dg - 1.0);
        let next = if newton.is_finite() && newton > 0.5 * g.min(i) && newton < 2.0 * g.max(i) {
            newton
        } else {
            g
        };
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
