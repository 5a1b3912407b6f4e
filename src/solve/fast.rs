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
//!
//! Where ln γ is z² times one number (Davies, ideal), the coefficients hold γ at a reference
//! ionic strength and each evaluation multiplies by a factor per |z| (a table of
//! exp((u_ref − u)·z²), u = ln γ of a singly charged ion): a new I costs one exponential and
//! no pass over the species. Such coefficients depend on the system's ln K only, so they are
//! kept with the buffers for the next solve of a system with the same ln K and species.

use super::{Evaluation, I_MAX, I_MIN, LN_AH_MAX, LN_AH_MIN, Point};
use crate::error::{Error, Result};
use crate::system::System;
use crate::system::packed::{CHARGE_MASK, CHARGE_TABLE, Member, NU_SPAN, POWER_MASK, POWER_SLOTS};

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

/// What the coefficients kept in [`Buffers`] were taken for: the ln K, the packed members and
/// their grouping of the system (the coefficients depend on nothing else).
#[derive(Debug, Default, Clone)]
struct Key {
    /// Per member: ln K, and its positions in the power and factor tables.
    ln_k: Vec<f64>,
    slots: Vec<(usize, usize)>,
    start: Vec<usize>,
}

impl Key {
    fn matches(&self, sys: &System) -> bool {
        self.start == sys.fast_member_start
            && self.ln_k.len() == sys.fast_members.len()
            && self.slots.len() == sys.fast_members.len()
            && sys
                .fast_members
                .iter()
                .zip(&self.ln_k)
                .zip(&self.slots)
                .all(|((m, &lk), &(k, zk))| m.k == k && m.zk == zk && sys.ln_k.get(m.s) == Some(&lk))
    }

    fn set(&mut self, sys: &System) {
        self.ln_k.clear();
        self.ln_k.extend(sys.fast_members.iter().map(|m| sys.ln_k[m.s]));
        self.slots.clear();
        self.slots.extend(sys.fast_members.iter().map(|m| (m.k, m.zk)));
        self.start.clone_from(&sys.fast_member_start);
    }
}

/// The fast path's working buffers, kept between solves (per thread, or in a
/// [`Workspace`](super::Workspace)) so that a repeated solve does not allocate them again.
#[derive(Debug, Default, Clone)]
pub(crate) struct Buffers {
    work: Vec<f64>,
    old_ln_gamma: Vec<f64>,
    sig: Vec<f64>,
    /// The point's component activities (given to the point; a caller that is done with it
    /// hands it back with [`Buffers::keep_y`]).
    y: Vec<f64>,
    /// The molalities and ln γ of an evaluation whose result has been read (see
    /// [`recycle`]).
    conc: Vec<f64>,
    ln_gamma: Vec<f64>,
    /// The system the coefficients in `work` were taken for, and (L_ref, u_ref) they were
    /// taken at, where they are kept (activity factor table in use).
    key: Key,
    kept: Option<(f64, f64)>,
}

impl Buffers {
    /// Keeps `y` (a point's activities, no longer needed) for the next solve.
    pub(crate) fn keep_y(&mut self, y: Vec<f64>) {
        self.y = y;
    }

    /// The activities kept by [`Buffers::keep_y`].
    pub(crate) fn y(&self) -> &[f64] {
        &self.y
    }
}

thread_local! {
    /// The buffers of the last fast solve on this thread, taken by the next one.
    static SPARE: std::cell::Cell<Option<Buffers>> = const { std::cell::Cell::new(None) };
}

/// Working state of the fast path for one system.
pub(crate) struct Fast<'a> {
    sys: &'a System,
    pub(crate) ev: Evaluation,
    /// One buffer: the coefficient of each entry of `members` at `l_ref` (normalised per
    /// component) in `[..nm]`; per component, the log-scale taken out of its coefficients in
    /// `[nm..nm + nc]` and Σv at the last evaluation in `[nm + nc..]`.
    work: Vec<f64>,
    nm: usize,
    nc: usize,
    /// Whether γ enters through the factor table `gz` (Davies and ideal, charges below
    /// [`CHARGE_TABLE`]); otherwise the coefficients are retaken species by species.
    table: bool,
    /// With the table: ln γ of a singly charged ion at the current I (`unit`) and at the
    /// coefficients' reference (`unit_ref`), and d ln γ/dI of a singly charged ion (`slope`).
    unit: f64,
    unit_ref: f64,
    slope: f64,
    /// exp((u_ref − u)·z²) at index |z|.
    gz: [f64; CHARGE_TABLE],
    /// Whether the coefficients were retaken in this solve (the key is then renewed).
    rescaled: bool,
    /// The last charge evaluation.
    last: Balance,
    /// The previous ln γ while they are retaken (without the table).
    old_ln_gamma: Vec<f64>,
    l_ref: f64,
    /// x^k for k = −12..=12 at index k + 12.
    pw: [f64; POWER_SLOTS],
    /// The buffer the next point's activities are written into.
    y: Vec<f64>,
    /// Buffers kept for the next evaluation (not used here).
    spare: (Vec<f64>, Vec<f64>),
    key: Key,
    /// The system's uncoupled species by component (`System::fast_members`).
    members: &'a [Member],
    member_start: &'a [usize],
    /// d ln γ/dI of each entry of `members` at the current I (filled for the joint step
    /// without the table only).
    sig: Vec<f64>,
}

/// Everything one Newton step on (L, ln I) needs, from one pass over the species at fixed
/// (L, I): the positive and negative charge P and N, G = ½ Σ z²·m, and the partial
/// derivatives of each by L and by I (the latter through ln γ(I)).
#[derive(Debug, Default, Clone, Copy)]
struct Joint {
    pos: f64,
    pos_l: f64,
    pos_i: f64,
    neg: f64,
    neg_l: f64,
    neg_i: f64,
    g: f64,
    g_l: f64,
    g_i: f64,
    ok: bool,
}

impl<'a> Fast<'a> {
    #[cfg(test)]
    pub(crate) fn new(sys: &'a System) -> Self {
        let mut f = Self::with(
            sys,
            Buffers::default(),
            Evaluation::without_slopes_in(sys, Vec::new(), Vec::new()),
        );
        // The tests set ln γ in the evaluation and retake the coefficients from it.
        f.table = false;
        f
    }

    /// The fast path on `sys` in the given buffers (resized as needed) and evaluation (which
    /// must have one entry per species in `conc` and `ln_gamma`).
    pub(crate) fn with(sys: &'a System, bufs: Buffers, ev: Evaluation) -> Self {
        let nc = sys.components.len();
        let nm = sys.fast_members.len();
        let Buffers {
            mut work,
            old_ln_gamma,
            sig,
            y,
            conc,
            ln_gamma,
            key,
            kept,
        } = bufs;
        let table = matches!(
            sys.model,
            crate::activity::ActivityModel::Davies | crate::activity::ActivityModel::Ideal
        ) && sys.fast_zmax < CHARGE_TABLE;
        let kept = kept.filter(|_| table && work.len() == nm + 2 * nc && key.matches(sys));
        if kept.is_none() {
            work.clear();
            work.resize(nm + 2 * nc, 0.0);
        }
        let (l_ref, unit_ref) = kept.unwrap_or((f64::NAN, 0.0));
        Fast {
            sys,
            ev,
            work,
            nm,
            nc,
            table,
            unit: unit_ref,
            unit_ref,
            slope: 0.0,
            gz: [1.0; CHARGE_TABLE],
            rescaled: false,
            last: Balance::default(),
            old_ln_gamma,
            l_ref,
            pw: [1.0; POWER_SLOTS],
            spare: (conc, ln_gamma),
            key,
            members: &sys.fast_members,
            member_start: &sys.fast_member_start,
            sig,
            y,
        }
    }

    /// The buffers and the evaluation back.
    pub(crate) fn into_parts(mut self) -> (Buffers, Evaluation) {
        let kept = (self.table && self.l_ref.is_finite()).then_some((self.l_ref, self.unit_ref));
        if kept.is_some() && self.rescaled {
            self.key.set(self.sys);
        }
        (
            Buffers {
                work: self.work,
                old_ln_gamma: self.old_ln_gamma,
                sig: self.sig,
                y: self.y,
                conc: self.spare.0,
                ln_gamma: self.spare.1,
                key: self.key,
                kept,
            },
            self.ev,
        )
    }

    /// ln γ of every species at the current I into the evaluation (with the table, ln γ is
    /// kept as one number during the iterations and written out once here).
    fn write_ln_gamma(&mut self) {
        if self.table {
            let unit = self.unit;
            for (lg, &z) in self.ev.ln_gamma.iter_mut().zip(&self.sys.charge_f) {
                *lg = unit * (z * z);
            }
        }
    }

    /// Prepares the slopes of the joint step.
    fn prepare_joint(&mut self) {
        if !self.table {
            self.sig.clear();
            self.sig.resize(self.members.len(), 0.0);
        }
    }

    /// d ln γ/dI of every species at ionic strength `i` into `sig` (models whose γ depends on
    /// I only; with the table the slope is kept as one number by [`Fast::update_gamma`]).
    fn set_slopes(&mut self, i: f64) {
        if self.table {
            return;
        }
        let sys = self.sys;
        let profile = crate::activity::GammaProfile::new(sys.model, i, &sys.dh);
        for (sig, m) in self.sig.iter_mut().zip(self.members) {
            let sp = &sys.species[m.s];
            *sig = profile.at(sp.charge, sp.ion_size_angstrom).1 * LN10;
        }
    }

    /// The positions in the power table are filled and the coefficients valid at L (retaken
    /// when L strays too far from the reference).
    fn ready(&mut self, l: f64) {
        if !self.powers(l) {
            self.rescale(l);
            self.powers(l);
        }
    }

    /// One pass over the species at (L, I) with the current γ and slopes (see [`Joint`]).
    fn joint(&mut self, l: f64) -> Joint {
        self.ready(l);
        let j = self.joint_sums();
        if j.ok {
            return j;
        }
        self.rescale(l);
        self.powers(l);
        self.joint_sums()
    }

    fn joint_sums(&mut self) -> Joint {
        if self.table {
            self.joint_sums_by::<true>()
        } else {
            self.joint_sums_by::<false>()
        }
    }

    /// [`Fast::joint_sums`] with σ = d ln γ/dI of each member from the table's slope
    /// (`TABLE`) or from `sig`.
    fn joint_sums_by<const TABLE: bool>(&mut self) -> Joint {
        let sys = self.sys;
        let (nm, nc) = (self.nm, self.nc);
        let (pw, gz, slope) = (&self.pw, &self.gz, self.slope);
        let (coef, tail) = self.work.split_at_mut(nm);
        let coef = &*coef;
        let members = self.members;
        let sig: &[f64] = if TABLE { &[] } else { &self.sig[..members.len()] };
        let start = self.member_start;
        let sigma = |j: usize, m: &Member| if TABLE { slope * m.z2 } else { sig[j] };
        let mut j = Joint::default();
        let r = start[0]..start[1];
        for (jj, (m, &c)) in members[r.clone()].iter().zip(&coef[r.clone()]).enumerate() {
            let v = c * pw[m.k & POWER_MASK] * gz[m.zk & CHARGE_MASK];
            let sg = sigma(r.start + jj, m);
            let (nv, sv) = (m.nu * v, sg * v);
            j.pos += m.zp * v;
            j.pos_l += m.zp * nv;
            j.pos_i -= m.zp * sv;
            j.neg += m.zn * v;
            j.neg_l += m.zn * nv;
            j.neg_i -= m.zn * sv;
            j.g += 0.5 * m.z2 * v;
            j.g_l += 0.5 * m.z2 * nv;
            j.g_i -= 0.5 * m.z2 * sv;
        }
        let mut ok = j.pos.is_finite() && j.neg.is_finite();
        for g in 1..nc {
            let t = sys.components[g].total_molal;
            if t <= 0.0 {
                continue;
            }
            let r = start[g]..start[g + 1];
            if let ([m], &[c]) = (&members[r.clone()], &coef[r.clone()]) {
                // One species (a simple ion): m = T whatever L and I.
                let v = c * pw[m.k & POWER_MASK] * gz[m.zk & CHARGE_MASK];
                ok &= v > 1e-250 && v < 1e250;
                j.pos += m.zp * t;
                j.neg += m.zn * t;
                j.g += 0.5 * m.z2 * t;
                tail[nc + g] = v;
                continue;
            }
            // Σv, Σν·v, Σσ·v; per sign Σz·v, Σz·ν·v, Σz·σ·v; Σz²·v, Σz²·ν·v, Σz²·σ·v.
            let mut a = [0.0f64; 12];
            for (jj, (m, &c)) in members[r.clone()].iter().zip(&coef[r.clone()]).enumerate() {
                let v = c * pw[m.k & POWER_MASK] * gz[m.zk & CHARGE_MASK];
                let sg = sigma(r.start + jj, m);
                let (nv, sv) = (m.nu * v, sg * v);
                a[0] += v;
                a[1] += nv;
                a[2] += sv;
                a[3] += m.zp * v;
                a[4] += m.zp * nv;
                a[5] += m.zp * sv;
                a[6] += m.zn * v;
                a[7] += m.zn * nv;
                a[8] += m.zn * sv;
                a[9] += m.z2 * v;
                a[10] += m.z2 * nv;
                a[11] += m.z2 * sv;
            }
            let s0 = a[0];
            ok &= s0 > 1e-250 && s0 < 1e250;
            // m_s = T·v_s/Σv: ∂m_s/∂L = m_s·(ν_s − ν̄), ∂m_s/∂I = m_s·(σ̄ − σ_s).
            let tt = t / s0;
            let (nbar, sbar) = (a[1] / s0, a[2] / s0);
            j.pos += tt * a[3];
            j.pos_l += tt * (a[4] - a[3] * nbar);
            j.pos_i += tt * (a[3] * sbar - a[5]);
            j.neg += tt * a[6];
            j.neg_l += tt * (a[7] - a[6] * nbar);
            j.neg_i += tt * (a[6] * sbar - a[8]);
            j.g += 0.5 * tt * a[9];
            j.g_l += 0.5 * tt * (a[10] - a[9] * nbar);
            j.g_i += 0.5 * tt * (a[9] * sbar - a[11]);
            tail[nc + g] = s0;
        }
        j.ok = ok;
        j
    }

    /// Concentrations at L (current γ) into `ev.conc` in one pass, the component activities
    /// into a point at ionic strength `i`, and G = ½ Σ z²·m.
    fn fill(&mut self, l: f64, i: f64) -> (Point, f64) {
        self.ready(l);
        let sys = self.sys;
        let (nm, nc) = (self.nm, self.nc);
        self.ev.conc.fill(0.0);
        let mut y = std::mem::take(&mut self.y);
        y.clear();
        y.resize(nc, f64::NEG_INFINITY);
        y[0] = l;
        let mut ionic = 0.0;
        let (coef, scale) = self.work.split_at(nm);
        let (pw, gz, members, start) = (&self.pw, &self.gz, self.members, self.member_start);
        let conc = &mut self.ev.conc;
        let r = start[0]..start[1];
        for (m, &c) in members[r.clone()].iter().zip(&coef[r]) {
            let c = c * pw[m.k & POWER_MASK] * gz[m.zk & CHARGE_MASK];
            conc[m.s] = c;
            ionic += 0.5 * m.z2 * c;
        }
        for (g, yg) in y.iter_mut().enumerate().skip(1) {
            let t = sys.components[g].total_molal;
            if t <= 0.0 {
                continue;
            }
            let r = start[g]..start[g + 1];
            if let ([m], &[c]) = (&members[r.clone()], &coef[r.clone()]) {
                // One species (a simple ion): m = T.
                let v = c * pw[m.k & POWER_MASK] * gz[m.zk & CHARGE_MASK];
                conc[m.s] = t;
                ionic += 0.5 * m.z2 * t;
                *yg = (t / v).ln() - scale[g];
                continue;
            }
            let mut s0 = 0.0;
            let mut q = 0.0;
            for (m, &c) in members[r.clone()].iter().zip(&coef[r.clone()]) {
                let v = c * pw[m.k & POWER_MASK] * gz[m.zk & CHARGE_MASK];
                conc[m.s] = v;
                s0 += v;
                q += m.z2 * v;
            }
            let tt = t / s0;
            for m in &members[r] {
                conc[m.s] *= tt;
            }
            ionic += 0.5 * tt * q;
            // Σ_s m_s = a_g · e^{m_g} · Σv = T, so ln a_g = ln(T/Σv) − m_g.
            *yg = tt.ln() - scale[g];
        }
        (Point { y, ln_i: i.ln() }, ionic.max(I_MIN))
    }

    /// Retakes the coefficients at L (log space), with ln γ at the current I (with the table)
    /// or as in the evaluation.
    fn rescale(&mut self, l: f64) {
        let sys = self.sys;
        let (nm, table, unit) = (self.nm, self.table, self.unit);
        let (coef, scale) = self.work.split_at_mut(nm);
        let ln_gamma = &self.ev.ln_gamma;
        let lg = |m: &Member| if table { unit * m.z2 } else { ln_gamma[m.s] };
        let start = self.member_start;
        let r = start[0]..start[1];
        for (m, c) in self.members[r.clone()].iter().zip(&mut coef[r]) {
            let b = sys.ln_k[m.s] - lg(m) + m.nu * l;
            *c = b.min(700.0).exp();
        }
        for g in 1..self.nc {
            let r = start[g]..start[g + 1];
            let (members, coef) = (&self.members[r.clone()], &mut coef[r]);
            let mut top = f64::NEG_INFINITY;
            for (m, c) in members.iter().zip(coef.iter_mut()) {
                let b = sys.ln_k[m.s] - lg(m) + m.nu * l;
                *c = b;
                top = top.max(b);
            }
            for c in coef.iter_mut() {
                *c = (*c - top).exp();
            }
            scale[g] = top;
        }
        self.l_ref = l;
        self.unit_ref = unit;
        self.gz = [1.0; CHARGE_TABLE];
        self.rescaled = true;
    }

    /// Moves to new activity coefficients at ionic strength `i` (and the held composition,
    /// where γ depends on it) without retaking the coefficients in log space. With the table
    /// (ln γ = z²·u) only u, its slope and the factors exp((u_ref − u)·z²) change; otherwise
    /// each coefficient is multiplied by γ_old/γ_new.
    fn update_gamma(&mut self, i: f64) {
        let sys = self.sys;
        if self.table {
            let profile = crate::activity::GammaProfile::new(sys.model, i, &sys.dh);
            let (lg, d) = profile.at(1, 0.0);
            self.unit = lg * LN10;
            self.slope = d * LN10;
            // base^(z²) = base^((z−1)²) · base^(2z−1).
            let base = (self.unit_ref - self.unit).exp();
            let (mut odd, base2) = (base, base * base);
            for z in 1..=sys.fast_zmax.min(CHARGE_MASK) {
                self.gz[z] = self.gz[z - 1] * odd;
                odd *= base2;
            }
        } else {
            self.old_ln_gamma.clone_from(&self.ev.ln_gamma);
            self.ev.set_gamma(sys, i);
            let (old, new) = (&self.old_ln_gamma, &self.ev.ln_gamma);
            for (c, m) in self.work[..self.nm].iter_mut().zip(self.members) {
                let (o, n) = (old[m.s], new[m.s]);
                if n != o {
                    *c *= (o - n).exp();
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

    /// The charge balance at L with the current ln γ, split into its positive and negative
    /// parts (see [`Balance`]).
    fn charge(&mut self, l: f64) -> Balance {
        if !self.powers(l) {
            self.rescale(l);
            self.powers(l);
        }
        let mut b = self.sums();
        if !b.ok {
            self.rescale(l);
            self.powers(l);
            b = self.sums();
        }
        self.last = b;
        b
    }

    fn sums(&mut self) -> Balance {
        let sys = self.sys;
        let (nm, nc) = (self.nm, self.nc);
        let mut b = Balance::default();
        let (coef, tail) = self.work.split_at_mut(nm);
        let coef = &*coef;
        let (pw, gz, members, start) = (&self.pw, &self.gz, self.members, self.member_start);
        let r = start[0]..start[1];
        for (m, &c) in members[r.clone()].iter().zip(&coef[r]) {
            let v = c * pw[m.k & POWER_MASK] * gz[m.zk & CHARGE_MASK];
            let nv = m.nu * v;
            b.pos += m.zp * v;
            b.dpos += m.zp * nv;
            b.neg += m.zn * v;
            b.dneg += m.zn * nv;
        }
        let mut ok = b.pos.is_finite() && b.neg.is_finite();
        for g in 1..nc {
            let t = sys.components[g].total_molal;
            if t <= 0.0 {
                continue;
            }
            let r = start[g]..start[g + 1];
            if let ([m], &[c]) = (&members[r.clone()], &coef[r.clone()]) {
                // One species (a simple ion): m = T whatever L.
                let v = c * pw[m.k & POWER_MASK] * gz[m.zk & CHARGE_MASK];
                ok &= v > 1e-250 && v < 1e250;
                b.pos += m.zp * t;
                b.neg += m.zn * t;
                tail[nc + g] = v;
                continue;
            }
            // Σv, Σν·v, and Σz·v, Σz·ν·v over the positive and over the negative species.
            let (mut s0, mut sn, mut zp, mut znp, mut zm, mut znm) = (0.0, 0.0, 0.0, 0.0, 0.0, 0.0);
            for (m, &c) in members[r.clone()].iter().zip(&coef[r]) {
                let v = c * pw[m.k & POWER_MASK] * gz[m.zk & CHARGE_MASK];
                let nv = m.nu * v;
                s0 += v;
                sn += nv;
                zp += m.zp * v;
                znp += m.zp * nv;
                zm += m.zn * v;
                znm += m.zn * nv;
            }
            ok &= s0 > 1e-250 && s0 < 1e250;
            // m_s = T·v_s/Σv and dm_s/dL = m_s·(ν_s − ν̄).
            let t = t / s0;
            let nbar = sn / s0;
            b.pos += t * zp;
            b.dpos += t * (znp - zp * nbar);
            b.neg += t * zm;
            b.dneg += t * (znm - zm * nbar);
            tail[nc + g] = s0;
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
        let (nm, nc) = (self.nm, self.nc);
        let b = self.charge(l);
        let profile = crate::activity::GammaProfile::new(sys.model, i, &sys.dh);
        // d ln γ/dI of each species; with the table z² times that of a singly charged ion.
        let (table, unit) = (self.table, self.slope);
        let slope = |m: &Member| {
            if table {
                unit * m.z2
            } else {
                profile
                    .at(sys.species[m.s].charge, sys.species[m.s].ion_size_angstrom)
                    .1
                    * LN10
            }
        };
        self.ev.conc.iter_mut().for_each(|c| *c = 0.0);
        let mut y = vec![f64::NEG_INFINITY; nc];
        y[0] = l;
        let (mut ionic, mut df_di, mut dg_dl, mut dg_di) = (0.0, 0.0, 0.0, 0.0);
        let (coef, tail) = self.work.split_at(nm);
        let (pw, gz, members, start) = (&self.pw, &self.gz, self.members, self.member_start);
        let weight = |m: &Member, c: f64| c * pw[m.k & POWER_MASK] * gz[m.zk & CHARGE_MASK];
        let r = start[0]..start[1];
        for (m, &c) in members[r.clone()].iter().zip(&coef[r]) {
            let c = weight(m, c);
            self.ev.conc[m.s] = c;
            let (nu, z, gs) = (m.nu, m.zp - m.zn, slope(m));
            ionic += 0.5 * z * z * c;
            df_di -= z * gs * c;
            dg_dl += 0.5 * z * z * nu * c;
            dg_di -= 0.5 * z * z * gs * c;
        }
        for g in 1..nc {
            let t = sys.components[g].total_molal;
            if t <= 0.0 {
                continue;
            }
            let s0 = tail[nc + g];
            // Σ_s m_s = a_g · e^{m_g} · Σv = T, so ln a_g = ln T − m_g − ln Σv.
            y[g] = t.ln() - tail[g] - s0.ln();
            let (mut sz, mut sg, mut szg, mut sz2, mut sz2nu, mut snu, mut sz2g) = (0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0);
            let r = start[g]..start[g + 1];
            for (m, &c) in members[r.clone()].iter().zip(&coef[r]) {
                let w = weight(m, c) / s0;
                self.ev.conc[m.s] = t * w;
                let (nu, z, gs) = (m.nu, m.zp - m.zn, slope(m));
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
    let mut bufs = SPARE.take().unwrap_or_default();
    let ev = Evaluation::without_slopes_in(sys, std::mem::take(&mut bufs.conc), std::mem::take(&mut bufs.ln_gamma));
    let mut fast = Fast::with(sys, bufs, ev);
    let result = run(&mut fast, start, tol, true);
    let (bufs, ev) = fast.into_parts();
    SPARE.set(Some(bufs));
    result.map(|(p, n)| (p, ev, n))
}

/// Keeps an evaluation's molalities and ln γ and a point's activities, once the result has
/// been read from them, for the next fast solve on this thread.
pub(crate) fn recycle(conc: Vec<f64>, ln_gamma: Vec<f64>, y: Vec<f64>) {
    let mut bufs = SPARE.take().unwrap_or_default();
    bufs.conc = conc;
    bufs.ln_gamma = ln_gamma;
    bufs.y = y;
    SPARE.set(Some(bufs));
}

/// [`solve`] in caller-owned buffers and evaluation (sized for `sys`, as
/// [`Evaluation::without_slopes_in`] makes it). Gives the point and the evaluations spent.
pub(crate) fn solve_in(
    sys: &System,
    start: Option<(f64, f64)>,
    tol: f64,
    bufs: &mut Buffers,
    ev: &mut Evaluation,
) -> Result<(Point, usize)> {
    let empty = Evaluation {
        conc: Vec::new(),
        ln_gamma: Vec::new(),
        dln_gamma_di: Vec::new(),
        held: Vec::new(),
        phase_amounts: Vec::new(),
    };
    let mut fast = Fast::with(sys, std::mem::take(bufs), std::mem::replace(ev, empty));
    let result = run(&mut fast, start, tol, true);
    let (b, e) = fast.into_parts();
    *bufs = b;
    *ev = e;
    result
}

/// The largest joint step accepted on L (ln units, 0.43 in pH) before the bracketed 1-D
/// iteration takes over.
const JOINT_MAX_STEP_L: f64 = 1.0;
/// How closely L is solved at the first I before the joint steps start (the last Newton
/// step of the 1-D iteration, ln units): the joint steps converge quadratically from there
/// and correct L for the change of γ anyway, so a closer start only costs charge
/// evaluations. (Measured: 0.1 and 1.0 cost more instructions than 0.5 on the benchmark
/// cases; the joint steps' own trust region is [`JOINT_MAX_STEP_L`].)
const JOINT_START_ACCEPT: f64 = 0.5;
/// Joint steps at most before the bracketed 1-D iteration takes over.
const JOINT_MAX_STEPS: usize = 30;

/// [`solve`], with the joint step on (L, ln I) (`joint`) or with the 1-D charge balance
/// solved at each ionic strength and I iterated around it (the reference the joint step is
/// tested against).
#[cfg(test)]
pub(crate) fn solve_with(
    sys: &System,
    start: Option<(f64, f64)>,
    tol: f64,
    joint: bool,
) -> Result<(Point, Evaluation, usize)> {
    let mut fast = Fast::new(sys);
    let result = run(&mut fast, start, tol, joint);
    result.map(|(p, n)| (p, fast.into_parts().1, n))
}

/// The fast path in `fast`'s buffers (ln γ of every species left in its evaluation).
fn run(fast: &mut Fast<'_>, start: Option<(f64, f64)>, tol: f64, joint: bool) -> Result<(Point, usize)> {
    let r = iterate(fast, start, tol, joint);
    fast.write_ln_gamma();
    r
}

fn iterate(fast: &mut Fast<'_>, start: Option<(f64, f64)>, tol: f64, joint: bool) -> Result<(Point, usize)> {
    let sys = fast.sys;
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
    if fast.table {
        // γ enters through the factor table: u at I; the coefficients kept from the last
        // solve of this system serve where they are (else taken here).
        fast.update_gamma(i);
        if fast.l_ref.is_nan() {
            fast.rescale(l);
        }
    } else {
        fast.ev.set_gamma(sys, i);
        fast.rescale(l);
    }
    if ideal {
        // γ does not depend on I: one charge balance, and the I of the solution reported.
        let (ln_ah, n) = fast.solve_l(l, 0.0)?;
        let (p, g) = fast.fill(ln_ah, i);
        return Ok((Point { y: p.y, ln_i: g.ln() }, evals + n));
    }
    // γ depends on I only: Newton on (L, ln I) jointly, from a bracketed loose solve of L.
    // (A loose tolerance is the general path asking for its start: it gets the 1-D
    // iteration's answer, L solved tightly at an I within `tol`, as before.)
    let mut first = true;
    if joint && fast.ev.held.is_empty() && tol <= 1e-6 {
        if start.is_some() {
            // Warm (a previous solution nearby): the joint steps first, within their trust
            // region; where they leave it, the bracketed solve below takes over from there.
            if let Some(done) = fast.joint_newton(&mut l, &mut i, tol, &mut evals) {
                return Ok((done, evals));
            }
        }
        let (ln_ah, n) = fast.solve_l(l, JOINT_START_ACCEPT)?;
        evals += n;
        l = ln_ah;
        first = false;
        // I from the charges just evaluated: ½(P + N) is I where every ion has |z| = 1 and
        // below it otherwise, so the larger of it and the guess is the closer start. (The
        // full ½ Σ z²·m costs a pass more and saved no joint step in the cases measured.)
        let b = fast.last;
        let estimate = 0.5 * (b.pos + b.neg);
        if b.ok && estimate.is_finite() && estimate > i && estimate <= I_MAX {
            i = estimate;
            fast.update_gamma(i);
        }
        if let Some(done) = fast.joint_newton(&mut l, &mut i, tol, &mut evals) {
            return Ok((done, evals));
        }
    }
    for iteration in 0..100 {
        if iteration > 0 || !first {
            fast.update_gamma(i);
        }
        let (ln_ah, n) = fast.solve_l(l, accept)?;
        evals += n;
        l = ln_ah;
        let (p, g, dg) = fast.finish(l, i);
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
                return Ok((p, evals));
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

impl Fast<'_> {
    /// Newton steps on (L, ln I) together, from L solved (loosely) at the current I:
    /// g(L, I) = ln P − ln N (the charge balance) and h(L, I) = ln G − ln I (the
    /// ionic-strength equation), with all four partial derivatives from one pass over the
    /// species ([`Fast::joint`]). Each step must stay within the bracket of pH −4..20, move
    /// L by at most [`JOINT_MAX_STEP_L`] and I by less than a factor of 2 towards G (as the
    /// 1-D iteration's own Newton step on I must); otherwise, or after [`JOINT_MAX_STEPS`],
    /// it returns `None` with (L, I) where it stopped (γ set there) and the bracketed 1-D
    /// iteration takes over. After a step below 1e-8 in both (quadratic convergence: the
    /// error left is of order 1e-16) the concentrations are filled at the new point and
    /// returned when the ionic-strength equation holds to `tol`.
    fn joint_newton(&mut self, l: &mut f64, i: &mut f64, tol: f64, evals: &mut usize) -> Option<Point> {
        self.prepare_joint();
        self.set_slopes(*i);
        for _ in 0..JOINT_MAX_STEPS {
            let j = self.joint(*l);
            *evals += 1;
            if !(j.ok && j.pos > 0.0 && j.neg > 0.0 && j.g > 0.0) {
                return None;
            }
            let ii = *i;
            let g = (j.pos / j.neg).ln();
            let g_l = j.pos_l / j.pos - j.neg_l / j.neg;
            let g_j = ii * (j.pos_i / j.pos - j.neg_i / j.neg);
            let gg = j.g.max(I_MIN);
            let h = (gg / ii).ln();
            let h_l = j.g_l / gg;
            let h_j = ii * j.g_i / gg - 1.0;
            let det = g_l * h_j - g_j * h_l;
            let dl = (h * g_j - g * h_j) / det;
            let dj = (g * h_l - h * g_l) / det;
            let next_l = *l + dl;
            let next_i = ii * dj.exp();
            let usable = dl.is_finite()
                && dj.is_finite()
                && dl.abs() <= JOINT_MAX_STEP_L
                && next_l > LN_AH_MIN
                && next_l < LN_AH_MAX
                && next_i > 0.5 * gg.min(ii)
                && next_i < 2.0 * gg.max(ii)
                && (I_MIN..=I_MAX).contains(&next_i);
            if !usable {
                return None;
            }
            *l = next_l;
            *i = next_i;
            self.update_gamma(next_i);
            if dl.abs() <= 1e-8 && dj.abs() <= 1e-8 {
                let (p, g) = self.fill(next_l, next_i);
                if (g - next_i).abs() <= tol * next_i {
                    return Some(p);
                }
            }
            self.set_slopes(next_i);
        }
        None
    }
}

#[cfg(test)]
mod tests {
    use crate::{ActivityModel, Amount, Catalog, Conditions, Recipe, Temperature};

    /// Coefficients kept between solves (Davies: γ through the factor table) give the pH of
    /// a solve without them (the reference: `solve_with`, which retakes the coefficients
    /// species by species), and a change of log K between two solves is seen: the kept
    /// coefficients are retaken, not reused.
    #[test]
    fn kept_coefficients_follow_the_system() {
        let cat = Catalog::builtin();
        let mut r = Recipe::new();
        r.add(&cat.reagent("acetic acid").unwrap(), Amount::millimolar(10.0))
            .unwrap();
        r.add(&cat.reagent("sodium chloride").unwrap(), Amount::millimolar(5.0))
            .unwrap();
        let a = r
            .compile(&Conditions::new(Temperature::celsius(25.0), ActivityModel::Davies))
            .unwrap();
        let acid = (1..a.members.len())
            .flat_map(|g| a.members[g].iter().copied())
            .find(|&s| a.nu_h[s] == 1)
            .unwrap();
        let mut b = a.clone();
        b.set_log10_k(acid, a.ln_k[acid] / std::f64::consts::LN_10 + 1.0)
            .unwrap();
        let fresh = |sys: &crate::System| super::solve_with(sys, None, 1e-12, true).unwrap().0;
        let (pa, pb) = (fresh(&a), fresh(&b));
        // One pK unit more moves the pH of a weak acid by about half a unit (worked by hand).
        assert!((pb.y[0] - pa.y[0]).abs() / std::f64::consts::LN_10 > 0.3);
        let mut bufs = super::Buffers::default();
        for (k, (sys, want)) in [(&a, &pa), (&a, &pa), (&b, &pb), (&b, &pb), (&a, &pa)]
            .into_iter()
            .enumerate()
        {
            // Cold, then warm from a perturbed start.
            for start in [None, Some((want.y[0] + 0.3, want.ln_i - 0.2))] {
                let mut ev = super::Evaluation::without_slopes_in(sys, Vec::new(), Vec::new());
                let (p, _) = super::solve_in(sys, start, 1e-12, &mut bufs, &mut ev).unwrap();
                assert!(bufs.kept.is_some(), "solve {k}: coefficients not kept");
                let d = (p.y[0] - want.y[0]).abs() / std::f64::consts::LN_10;
                assert!(d <= 1e-12, "solve {k} from {start:?}: pH differs by {d:e}");
                assert!((p.ln_i - want.ln_i).abs() <= 1e-10, "solve {k}: ln I differs");
            }
        }
    }

    /// The joint step on (L, ln I) gives the pH and ionic strength of the 1-D iteration it
    /// replaced (kept as `solve_with(.., joint: false)`) to 1e-12, on a fixed pseudo-random
    /// set of mixtures (1–5 reagents, 1e-5..0.3 mol/L each, 0–80 °C, every activity model).
    #[test]
    fn fast_path_equivalence() {
        let cat = Catalog::builtin();
        let names = [
            "acetic acid",
            "sodium dihydrogen phosphate",
            "disodium hydrogen phosphate",
            "ammonium chloride",
            "sodium hydroxide",
            "hydrochloric acid",
            "citric acid",
            "boric acid",
            "glycine",
            "sodium bicarbonate",
            "sodium chloride",
            "sulfuric acid",
            "calcium chloride",
            "disodium edta dihydrate",
            "ammonia",
        ];
        let models = [
            ActivityModel::Davies,
            ActivityModel::ExtendedDebyeHuckel,
            ActivityModel::Sit,
            ActivityModel::Ideal,
        ];
        let mut next = crate::testing::lcg(0x2545_f491_4f6c_dd1d);
        let (mut compared, mut ill, mut worst_ph) = (0, 0, 0.0f64);
        for case in 0..600 {
            let mut r = Recipe::new();
            let k = 1 + (next() * 5.0) as usize;
            for _ in 0..k {
                let name = names[(next() * names.len() as f64) as usize % names.len()];
                let molar = 10f64.powf(-5.0 + 4.5 * next()).min(0.3);
                r.add(&cat.reagent(name).unwrap(), Amount::molar(molar)).unwrap();
            }
            let model = models[case % models.len()];
            let cond = Conditions::new(Temperature::celsius(80.0 * next()), model);
            let Ok(sys) = r.compile(&cond) else { continue };
            if !sys.uncoupled() {
                continue;
            }
            let reference = super::solve_with(&sys, None, 1e-12, false);
            // Every other case warm-started from a perturbed point (as a titration or a screen
            // starts from its neighbour's solution).
            let start = match &reference {
                Ok((p, _, _)) if case % 2 == 1 => Some((p.y[0] + 0.5 * (next() - 0.5), p.ln_i + 0.4 * (next() - 0.5))),
                _ => None,
            };
            let joint = super::solve_with(&sys, start, 1e-12, true);
            match (reference, joint) {
                (Ok((p0, e0, _)), Ok((p1, e1, _))) => {
                    let d = (p0.y[0] - p1.y[0]).abs() / std::f64::consts::LN_10;
                    // Where P and N nearly cancel (strong acid beside strong base), the charge
                    // balance fixes L only to ε·(P + N)/(dP/dL − dN/dL): neither iteration can
                    // do better, and the two differ by round-off of that size.
                    let roundoff = {
                        let mut f = super::Fast::new(&sys);
                        f.ev.set_gamma(&sys, p0.ln_i.exp());
                        f.rescale(p0.y[0]);
                        let b = f.charge(p0.y[0]);
                        8.0 * f64::EPSILON * (b.pos + b.neg) / (b.dpos - b.dneg) / std::f64::consts::LN_10
                    };
                    if roundoff > 1e-13 {
                        ill += 1;
                    } else {
                        worst_ph = worst_ph.max(d);
                    }
                    assert!(
                        d <= 1e-12 + roundoff,
                        "case {case} ({model:?}): pH differs by {d:e} (round-off bound {roundoff:e})"
                    );
                    let di = (p0.ln_i - p1.ln_i).abs();
                    assert!(di <= 1e-10, "case {case}: ln I differs by {di:e}");
                    for (a, b) in e0.conc.iter().zip(&e1.conc) {
                        assert!(
                            (a - b).abs() <= 1e-9 * a.abs().max(1e-300),
                            "case {case}: {a:e} vs {b:e}"
                        );
                    }
                    compared += 1;
                }
                (Err(_), Err(_)) => {}
                (a, b) => panic!("case {case}: reference {:?}, joint {:?}", a.is_ok(), b.is_ok()),
            }
        }
        assert!(compared >= 400, "only {compared} mixtures compared");
        eprintln!(
            "{compared} mixtures ({ill} with a charge-balance round-off bound above 1e-13 pH); largest pH difference of the others {worst_ph:e}"
        );
    }
}
