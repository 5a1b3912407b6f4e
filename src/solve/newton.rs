//! The general path: damped Newton–Raphson on (ln a(H⁺), ln a(c) for every component with a
//! positive total, ln I), with the analytic Jacobian and an LU step of its own on reused
//! buffers (nalgebra's for the phase rows).
//!
//! Start: the fast path on the uncoupled part of the system (complexes ignored), then
//! positive-continued-fraction sweeps on the component activities (J. Carrayrou, R. Mosé and
//! P. Behra, *AIChE J.* **48** (2002) 894–904), which bring strongly complexed components to
//! the right order of magnitude. Each Newton step is limited to two decades per unknown and
//! backtracked until the scaled residual norm decreases (Armijo condition).

use nalgebra::{DMatrix, DVector};

use super::{Evaluation, I_MAX, I_MIN, LN_AH_MAX, LN_AH_MIN, Point, fast};
use crate::error::{Error, Result};
use crate::phase::RowKind;
use crate::system::System;

const LN10: f64 = std::f64::consts::LN_10;
const MAX_STEP: f64 = 2.0 * LN10;
const CONVEX_MAX_STEP: f64 = 10.0 * LN10;

/// The active components: H⁺ and those with a positive total.
pub(crate) fn active(sys: &System) -> Vec<usize> {
    std::iter::once(0)
        .chain((1..sys.components.len()).filter(|&c| sys.component_active(c)))
        .collect()
}

/// The sparsity of the equations for one set of active components, computed once a solve.
///
/// Unknowns: ln a of each active component (position k in `act`), then ln I (position
/// m − 1). Equations: charge balance (row 0), the mass balance of each active non-H
/// component (row k), ionic strength (row m − 1).
#[derive(Default)]
pub(crate) struct Layout {
    pub act: Vec<usize>,
    /// Species whose components are all active (the others have zero concentration).
    species: Vec<usize>,
    /// Per listed species: (unknown, ν) for its active components.
    col_start: Vec<usize>,
    cols: Vec<(usize, f64)>,
    /// Per listed species: (equation, coefficient) — z, ν, ½z².
    row_start: Vec<usize>,
    rows: Vec<(usize, f64)>,
    /// Per active position k ≥ 1: (species, ν) with ν > 0, for the fraction sweeps.
    incidence: Vec<Vec<(usize, f64)>>,
    /// The index of each unknown (position k, ln I last) in the dense systems of the convex
    /// phase and the joint Newton: the components that no species couples to another non-H
    /// component first, then the coupled ones, then H⁺, then ln I. Their rows and columns
    /// then hold nonzeros only on the diagonal and against H⁺ and ln I, so the elimination
    /// of each of them touches two columns (see [`lu_solve_in_place`]).
    slot: Vec<usize>,
    /// `cols` and `rows` with each position replaced by its slot.
    cols_slot: Vec<(usize, f64)>,
    rows_slot: Vec<(usize, f64)>,
}

impl Layout {
    pub(crate) fn new(sys: &System) -> Self {
        // Sized for the system at once, so that filling it does not grow the vectors.
        let (ns, nt, nc) = (sys.species.len(), sys.terms.len(), sys.components.len());
        let mut layout = Layout {
            act: Vec::with_capacity(nc),
            species: Vec::with_capacity(ns),
            col_start: Vec::with_capacity(ns + 1),
            cols: Vec::with_capacity(nt),
            row_start: Vec::with_capacity(ns + 1),
            rows: Vec::with_capacity(nt + 2 * ns),
            incidence: (0..nc)
                .map(|c| Vec::with_capacity(sys.members.get(c).map_or(0, Vec::len) + 4))
                .collect(),
            slot: Vec::with_capacity(nc + 1),
            cols_slot: Vec::with_capacity(nt),
            rows_slot: Vec::with_capacity(nt + 2 * ns),
        };
        layout.fill(sys);
        layout
    }

    /// Makes this the layout of `sys`, in the buffers it already has.
    fn fill(&mut self, sys: &System) {
        let layout = self;
        layout.act.clear();
        layout.act.push(0);
        layout
            .act
            .extend((1..sys.components.len()).filter(|&c| sys.component_active(c)));
        let m = layout.act.len() + 1;
        let n = layout.act.len();
        layout.slot.clear();
        layout.slot.resize(sys.components.len().max(m), usize::MAX);
        // `slot` first holds each component's position (usize::MAX when inactive).
        let pos = &mut layout.slot;
        for (k, &c) in layout.act.iter().enumerate() {
            pos[c] = k;
        }
        layout.species.clear();
        layout.col_start.clear();
        layout.cols.clear();
        layout.row_start.clear();
        layout.rows.clear();
        layout.incidence.resize_with(n, Vec::new);
        for inc in &mut layout.incidence[..n] {
            inc.clear();
        }
        layout.col_start.push(0);
        layout.row_start.push(0);
        'species: for s in 0..sys.species.len() {
            let terms = &sys.terms[sys.term_start[s]..sys.term_start[s + 1]];
            let pos = &layout.slot;
            if terms.iter().any(|&(c, _)| pos[c] == usize::MAX) {
                continue 'species;
            }
            let z = sys.charge_f[s];
            for &(c, v) in terms {
                layout.cols.push((pos[c], v));
                if c != 0 {
                    layout.rows.push((pos[c], v));
                    if v > 0.0 {
                        layout.incidence[pos[c]].push((layout.species.len(), v));
                    }
                }
            }
            if z != 0.0 {
                layout.rows.push((0, z));
                layout.rows.push((m - 1, 0.5 * z * z));
            }
            layout.species.push(s);
            layout.col_start.push(layout.cols.len());
            layout.row_start.push(layout.rows.len());
        }
        // A non-H position is coupled when a species holds it together with another non-H
        // position (marked usize::MAX in `slot`, which now is indexed by position).
        layout.slot.clear();
        layout.slot.resize(m, 0);
        for w in layout.col_start.windows(2) {
            let cols = &layout.cols[w[0]..w[1]];
            if cols.iter().filter(|&&(k, _)| k != 0).count() > 1 {
                for &(k, _) in cols {
                    layout.slot[k] = usize::MAX;
                }
            }
        }
        let mut next = 0;
        for k in 1..n {
            if layout.slot[k] != usize::MAX {
                layout.slot[k] = next;
                next += 1;
            }
        }
        for k in 1..n {
            if layout.slot[k] == usize::MAX {
                layout.slot[k] = next;
                next += 1;
            }
        }
        layout.slot[0] = n - 1;
        layout.slot[m - 1] = m - 1;
        let slot = &layout.slot;
        layout.cols_slot.clear();
        layout.cols_slot.extend(layout.cols.iter().map(|&(k, v)| (slot[k], v)));
        layout.rows_slot.clear();
        layout.rows_slot.extend(layout.rows.iter().map(|&(k, v)| (slot[k], v)));
    }

    fn m(&self) -> usize {
        self.act.len() + 1
    }
}

/// Unscaled residual vector F and the row scales, in the order (charge, active masses, I),
/// written into `f` and `scale` (length m each).
fn residual(sys: &System, ev: &Evaluation, lay: &Layout, p: &Point, f: &mut [f64], scale: &mut [f64]) {
    let m = lay.m();
    f.fill(0.0);
    scale.fill(0.0);
    let i = p.ln_i.exp();
    for (n, &s) in lay.species.iter().enumerate() {
        let c = ev.conc[s];
        scale[0] += sys.charge_f[s].abs() * c;
        for &(row, coef) in &lay.rows[lay.row_start[n]..lay.row_start[n + 1]] {
            f[row] += coef * c;
        }
    }
    for (k, &comp) in lay.act.iter().enumerate().skip(1) {
        let t = sys.components[comp].total_molal;
        f[k] -= t;
        scale[k] = t;
    }
    f[m - 1] -= i;
    scale[m - 1] = i;
}

/// The analytic Jacobian of [`residual`] with respect to (ln a of the active components,
/// ln I): ∂F_row/∂y_k = Σ_s coef(row, s)·m_s·∂ln m_s/∂y_k, with ∂ln m_s/∂ln a_c = ν(s, c) and
/// ∂ln m_s/∂ln I = −(d ln γ_s/dI)·I.
pub(crate) fn jacobian_in(ev: &Evaluation, lay: &Layout, p: &Point) -> DMatrix<f64> {
    let m = lay.m();
    let mut j = vec![0.0; m * m];
    jacobian_into(ev, lay, p, &mut j, false);
    DMatrix::from_vec(m, m, j)
}

/// [`jacobian_in`] written into a reused column-major m × m buffer (entry (row, col) at
/// col·m + row), in the unknowns' positions or (`slotted`) in their slots
/// ([`Layout::slot`], ln I last in both).
fn jacobian_into(ev: &Evaluation, lay: &Layout, p: &Point, j: &mut [f64], slotted: bool) {
    let m = lay.m();
    j.fill(0.0);
    let i = p.ln_i.exp();
    let (all_cols, all_rows) = if slotted {
        (&lay.cols_slot, &lay.rows_slot)
    } else {
        (&lay.cols, &lay.rows)
    };
    for (n, &s) in lay.species.iter().enumerate() {
        let c = ev.conc[s];
        if c == 0.0 {
            continue;
        }
        let gi = -ev.dln_gamma_di[s] * i;
        let cols = &all_cols[lay.col_start[n]..lay.col_start[n + 1]];
        for &(row, coef) in &all_rows[lay.row_start[n]..lay.row_start[n + 1]] {
            let rc = coef * c;
            for &(k, v) in cols {
                j[k * m + row] += rc * v;
            }
            j[(m - 1) * m + row] += rc * gi;
        }
    }
    j[(m - 1) * m + (m - 1)] -= i;
}

/// Solves A·x = b in place for a small dense system: Gaussian elimination with threshold
/// partial pivoting (the LU factorisation, G. H. Golub and C. F. Van Loan, *Matrix
/// Computations*, 4th ed., Johns Hopkins 2013, Algorithm 3.4.1; the diagonal entry is kept as
/// pivot while it is at least [`PIVOT_THRESHOLD`] times the largest below it, the threshold
/// pivoting of sparse LU, I. S. Duff, A. M. Erisman and J. K. Reid, *Direct Methods for
/// Sparse Matrices*, Oxford 1986, §5.4, so that the ordering of [`Layout::slot`] keeps its
/// zeros) on a reused column-major n × n buffer `a` (overwritten by its factors), `b`
/// overwritten by x. A column whose pivot row is zero is skipped, so eliminating a row with
/// nonzeros in few columns costs O(n). Nothing is allocated. False when a pivot is exactly
/// zero (a singular matrix), as nalgebra's `LU::solve` returns `None`.
fn lu_solve_in_place(a: &mut [f64], n: usize, b: &mut [f64]) -> bool {
    let (a, b) = (&mut a[..n * n], &mut b[..n]);
    for k in 0..n {
        // Pivot: the diagonal, unless an entry below it is larger than it by more than the
        // threshold allows; then the largest |entry| of column k below the diagonal.
        let col = &a[k * n..(k + 1) * n];
        let mut p = k;
        let mut best = 0.0f64;
        for (r, v) in col.iter().enumerate().skip(k + 1) {
            if v.abs() > best {
                best = v.abs();
                p = r;
            }
        }
        let diag = col[k].abs();
        if diag >= PIVOT_THRESHOLD * best || diag.is_nan() {
            p = k;
            best = diag;
        }
        if best == 0.0 {
            return false;
        }
        if p != k {
            for c in 0..n {
                a.swap(c * n + k, c * n + p);
            }
            b.swap(k, p);
        }
        // Multipliers below the pivot, then each later column updated by them (column
        // oriented: contiguous in the column-major buffer).
        let (left, right) = a.split_at_mut((k + 1) * n);
        let colk = &mut left[k * n..];
        let pivot = colk[k];
        let multipliers = &mut colk[k + 1..];
        let bk = b[k];
        for (l, br) in multipliers.iter_mut().zip(&mut b[k + 1..]) {
            *l /= pivot;
            *br -= *l * bk;
        }
        for col in right.chunks_exact_mut(n) {
            let akc = col[k];
            if akc != 0.0 {
                for (x, l) in col[k + 1..].iter_mut().zip(multipliers.iter()) {
                    *x -= l * akc;
                }
            }
        }
    }
    // Back substitution, column by column.
    for k in (0..n).rev() {
        let col = &a[k * n..(k + 1) * n];
        b[k] /= col[k];
        let bk = b[k];
        for (br, u) in b[..k].iter_mut().zip(&col[..k]) {
            *br -= u * bk;
        }
    }
    true
}

/// The threshold of [`lu_solve_in_place`]'s pivoting (Duff, Erisman and Reid's u; 0.1 is
/// their usual choice): element growth is at most 1 + 1/u a step.
const PIVOT_THRESHOLD: f64 = 0.1;

/// Copies `src` into `dst` in `dst`'s buffer (the derived `Clone::clone_from` of a
/// point allocates anew).
fn copy_point(dst: &mut Point, src: &Point) {
    dst.y.clone_from(&src.y);
    dst.ln_i = src.ln_i;
}

/// The largest |entry|; NaN when an entry is NaN.
fn amax(v: &[f64]) -> f64 {
    let mut big: f64 = 0.0;
    for x in v {
        if x.is_nan() {
            return f64::NAN;
        }
        big = big.max(x.abs());
    }
    big
}

fn merit(f: &[f64], scale: &[f64]) -> f64 {
    f.iter()
        .zip(scale.iter())
        .map(|(a, s)| if *s > 0.0 { (a / s) * (a / s) } else { 0.0 })
        .sum::<f64>()
        * 0.5
}

fn max_scaled(f: &[f64], scale: &[f64], ideal: bool) -> f64 {
    let m = f.len();
    f.iter()
        .zip(scale.iter())
        .enumerate()
        .filter(|(k, _)| !(ideal && *k == m - 1))
        .map(|(_, (a, s))| if *s > 0.0 { (a / s).abs() } else { 0.0 })
        .fold(0.0, f64::max)
}

/// Evaluates concentrations at `p` (γ at exp(p.ln_i)).
fn evaluate(sys: &System, ev: &mut Evaluation, p: &Point) {
    ev.set_gamma(sys, p.ln_i.exp());
    ev.set_conc(sys, p);
}

/// Positive-continued-fraction sweeps on the component activities at fixed a(H⁺) and I,
/// Gauss–Seidel order (each component's update sees the previous ones), until every mass
/// balance is within a factor e or `sweeps` run out.
fn pcf_sweeps(sys: &System, ev: &mut Evaluation, lay: &Layout, p: &mut Point, sweeps: usize) {
    evaluate(sys, ev, p);
    for _ in 0..sweeps {
        let mut worst: f64 = 0.0;
        for (k, &c) in lay.act.iter().enumerate().skip(1) {
            let inc = &lay.incidence[k];
            let mut sum = 0.0;
            let mut nmax: f64 = 1.0;
            for &(n, v) in inc {
                sum += v * ev.conc[lay.species[n]];
                nmax = nmax.max(v);
            }
            if sum > 0.0 {
                let r = (sys.components[c].total_molal / sum).ln();
                worst = worst.max(r.abs());
                let dy = r / nmax;
                p.y[c] += dy;
                // Species holding c move by ν·dy; the others are unchanged.
                for &(n, v) in inc {
                    ev.conc[lay.species[n]] *= (v * dy).exp();
                }
            }
        }
        if worst < 1.0 {
            break;
        }
    }
}

/// Minimises, at fixed activity coefficients, the convex function
///
/// G(y) = Σ_s m_s(y) − Σ_k T_k·y_k,   m_s = exp(ln K_s − ln γ_s + Σ_k ν(s,k)·y_k),
///
/// over the log activities y of the active components, H⁺ included. Its gradient is the
/// vector of mass-balance residuals and its Hessian Σ_s ν_s ν_sᵀ m_s is positive
/// semi-definite, so Newton steps with backtracking on G converge from any start (the
/// dual, Gibbs-energy view of the mass-action equations; W. R. Smith and R. W. Missen,
/// *Chemical Reaction Equilibrium Analysis*, Wiley 1982). H⁺ gets a mass balance too, with
/// total T_H = −Σ_c z_c·T_c: for electroneutral reagents this is the charge balance.
///
/// Returns the iterations used; stops when every scaled gradient entry is below `tol`.
fn convex_phase(
    sys: &System,
    ev: &mut Evaluation,
    lay: &Layout,
    p: &mut Point,
    tol: f64,
    max_iter: usize,
    sc: &mut Scratch,
) -> usize {
    let act = &lay.act;
    let n = act.len();
    // Reused buffers: the totals, the gradient and scales (current and trial), the scaled
    // Hessian (column major), the Jacobi scaling, the step and the trial point.
    sc.size_convex(n, p);
    let Scratch {
        totals,
        grad,
        gscale: scale,
        g1,
        s1,
        h,
        d_inv,
        d,
        trial,
        ..
    } = sc;
    totals.fill(0.0);
    for (k, &c) in act.iter().enumerate().skip(1) {
        totals[k] = sys.components[c].total_molal;
        totals[0] -= f64::from(sys.components[c].charge) * totals[k];
    }
    let totals = &*totals;
    // G, its gradient, and the gradient scales (Σ_s |ν|·m_s) at the current concentrations.
    let objective = |ev: &Evaluation, y: &[f64]| -> f64 {
        let mut g = 0.0;
        for &s in &lay.species {
            g += ev.conc[s];
        }
        for (k, &c) in act.iter().enumerate() {
            g -= totals[k] * y[c];
        }
        g
    };
    let gradient = |ev: &Evaluation, g: &mut [f64], sc: &mut [f64]| {
        for (gk, t) in g.iter_mut().zip(totals) {
            *gk = -t;
        }
        sc.fill(0.0);
        for (idx, &s) in lay.species.iter().enumerate() {
            let m = ev.conc[s];
            for &(k, v) in &lay.cols[lay.col_start[idx]..lay.col_start[idx + 1]] {
                g[k] += v * m;
                sc[k] += v.abs() * m;
            }
        }
    };
    ev.set_conc(sys, p);
    let mut value = objective(ev, &p.y);
    gradient(ev, grad, scale);
    let mut iters = 0;
    while iters < max_iter {
        let worst = grad
            .iter()
            .zip(scale.iter())
            .map(|(g, s)| if *s > 0.0 { (g / s).abs() } else { 0.0 })
            .fold(0.0, f64::max);
        if worst <= tol {
            break;
        }
        iters += 1;
        // The Hessian in the slots of the unknowns (H⁺ last, see `Layout::slot`).
        h.fill(0.0);
        for (idx, &s) in lay.species.iter().enumerate() {
            let m = ev.conc[s];
            let cols = &lay.cols_slot[lay.col_start[idx]..lay.col_start[idx + 1]];
            for &(a, va) in cols {
                for &(b, vb) in cols {
                    h[b * n + a] += va * vb * m;
                }
            }
        }
        // Symmetric diagonal scaling (Jacobi) before the factorisation: components whose
        // totals differ by many decades would otherwise lose their digits in the pivots of
        // the large ones. A tiny ridge keeps the step defined where a component's species
        // all vanish.
        for k in 0..n {
            d_inv[k] = 1.0 / (h[k * n + k] * (1.0 + 1e-14) + 1e-300_f64).sqrt();
        }
        for (b, col) in h.chunks_exact_mut(n).enumerate() {
            let db = d_inv[b];
            for (x, da) in col.iter_mut().zip(d_inv.iter()) {
                *x *= da * db;
            }
            col[b] += 1e-14;
        }
        for (&i, g) in lay.slot.iter().zip(grad.iter()) {
            g1[i] = -g * d_inv[i];
        }
        if !lu_solve_in_place(h, n, g1) {
            break;
        }
        for (&i, dk) in lay.slot.iter().zip(d.iter_mut()) {
            *dk = g1[i] * d_inv[i];
        }
        let mut big = amax(d);
        if !big.is_finite() {
            break;
        }
        // G is convex and the line search guards every step, so a long step is safe.
        if big > CONVEX_MAX_STEP {
            let shrink = CONVEX_MAX_STEP / big;
            for x in d.iter_mut() {
                *x *= shrink;
            }
            big = amax(d);
        }
        let slope: f64 = grad.iter().zip(d.iter()).map(|(g, x)| g * x).sum();
        if slope >= 0.0 {
            break;
        }
        let mass_sum: f64 = lay.species.iter().map(|&s| ev.conc[s]).sum();
        // The line search ends where the step no longer moves any unknown beyond round-off.
        let y_size = act.iter().map(|&c| p.y[c].abs()).fold(0.0, f64::max);
        let round_off = 4.0 * f64::EPSILON * y_size.max(1.0);
        let mut alpha = 1.0;
        let mut accepted = false;
        for _ in 0..50 {
            if alpha * big < round_off {
                break;
            }
            for (k, &c) in act.iter().enumerate() {
                trial.y[c] = p.y[c] + alpha * d[k];
            }
            ev.set_conc(sys, trial);
            let v = objective(ev, &trial.y);
            if v.is_finite() && v <= value + 1e-4 * alpha * slope {
                value = v;
                accepted = true;
                break;
            }
            // Near the minimum, or where a trace component is off, G changes by less than
            // its own round-off; a full step that leaves G unchanged to round-off and shrinks
            // the scaled gradient is then accepted on that evidence instead.
            let flat = (v - value).abs() <= 1e-12 * (value.abs() + mass_sum);
            if alpha == 1.0 && flat && v.is_finite() {
                gradient(ev, g1, s1);
                let w1 = g1
                    .iter()
                    .zip(s1.iter())
                    .map(|(g, s)| if *s > 0.0 { (g / s).abs() } else { 0.0 })
                    .fold(0.0, f64::max);
                if w1 < worst {
                    value = v;
                    accepted = true;
                    break;
                }
            }
            alpha *= 0.5;
        }
        if !accepted {
            ev.set_conc(sys, p);
            break;
        }
        p.y.clone_from(&trial.y);
        gradient(ev, grad, scale);
    }
    iters
}

/// The fallback of the general path: the ionic strength iterated around full convex
/// solves at fixed activity coefficients (secant-accelerated fixed point, as on the fast
/// path). Slower than the joint Newton but it needs no merit function across unknowns of
/// very different scales. Returns the iterations used, or `None` if I does not settle.
fn nested(
    sys: &System,
    ev: &mut Evaluation,
    lay: &Layout,
    p: &mut Point,
    tol: f64,
    sc: &mut Scratch,
) -> Result<Option<usize>> {
    let ideal = sys.model == crate::activity::ActivityModel::Ideal;
    let mut iters = 0;
    let mut i = p.ln_i.exp().clamp(I_MIN, I_MAX);
    let mut prev: Option<(f64, f64)> = None;
    for _ in 0..60 {
        ev.set_gamma(sys, i);
        p.ln_i = i.ln();
        iters += convex_phase(sys, ev, lay, p, tol, 200, sc);
        let mut g = 0.0;
        for &s in &lay.species {
            g += 0.5 * sys.charge_f[s] * sys.charge_f[s] * ev.conc[s];
        }
        let g = g.max(I_MIN);
        if ideal {
            p.ln_i = g.ln();
            return Ok(Some(iters));
        }
        if g > I_MAX && i >= I_MAX {
            return Err(fast::beyond_limit(g));
        }
        let h = g - i;
        let dc = ev.composition_change(sys);
        if h.abs() <= tol * i && dc <= tol {
            return Ok(Some(iters));
        }
        ev.hold_composition();
        i = secant_on_ionic_strength(i, g, &mut prev);
    }
    Ok(None)
}

/// The general path's working buffers, kept per thread between solves so that a repeated
/// solve does not allocate them again (each is resized, never shrunk).
pub(crate) struct Scratch {
    // Convex phase: totals, gradient and scales (current and trial), scaled Hessian,
    // Jacobi scaling, step.
    totals: Vec<f64>,
    grad: Vec<f64>,
    gscale: Vec<f64>,
    g1: Vec<f64>,
    s1: Vec<f64>,
    h: Vec<f64>,
    d_inv: Vec<f64>,
    d: Vec<f64>,
    // Joint Newton: residual and scales (current and trial), Jacobian, step.
    f: Vec<f64>,
    fscale: Vec<f64>,
    tf: Vec<f64>,
    ts: Vec<f64>,
    jac: Vec<f64>,
    dx: Vec<f64>,
    /// The trial point of both line searches.
    trial: Point,
    /// The start of the direct joint Newton, to go back to if it does not converge.
    start: Point,
    /// The layout of the last system solved (remade for each solve in its buffers).
    layout: Layout,
}

impl Default for Scratch {
    fn default() -> Self {
        let empty = || Point {
            y: Vec::new(),
            ln_i: 0.0,
        };
        Scratch {
            totals: Vec::new(),
            grad: Vec::new(),
            gscale: Vec::new(),
            g1: Vec::new(),
            s1: Vec::new(),
            h: Vec::new(),
            d_inv: Vec::new(),
            d: Vec::new(),
            f: Vec::new(),
            fscale: Vec::new(),
            tf: Vec::new(),
            ts: Vec::new(),
            jac: Vec::new(),
            dx: Vec::new(),
            trial: empty(),
            start: empty(),
            layout: Layout::default(),
        }
    }
}

impl Scratch {
    fn size_convex(&mut self, n: usize, p: &Point) {
        for v in [
            &mut self.totals,
            &mut self.grad,
            &mut self.gscale,
            &mut self.g1,
            &mut self.s1,
            &mut self.d_inv,
            &mut self.d,
        ] {
            v.clear();
            v.resize(n, 0.0);
        }
        self.h.clear();
        self.h.resize(n * n, 0.0);
        copy_point(&mut self.trial, p);
    }

    fn size_newton(&mut self, m: usize) {
        for v in [&mut self.f, &mut self.fscale, &mut self.tf, &mut self.ts, &mut self.dx] {
            v.clear();
            v.resize(m, 0.0);
        }
        self.jac.clear();
        self.jac.resize(m * m, 0.0);
    }
}

thread_local! {
    /// The general path's buffers of the last solve on this thread, taken by the next one.
    static SCRATCH: std::cell::Cell<Option<Box<Scratch>>> = const { std::cell::Cell::new(None) };
}

/// How the joint Newton ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum JointEnd {
    /// The residuals are within the tolerance (polished).
    Converged,
    /// It stopped short: stalled, badly damped or out of iterations.
    Stopped,
}

/// The joint Newton on every unknown with ln I from `p` (evaluated at `p` on entry): analytic
/// Jacobian, steps limited to two decades and backtracked on the scaled residual norm, one
/// polishing step after the tolerance is met. `probe` is the direct route from the start
/// (convex phase skipped): it stops at the first sign of a hard problem (a step not accepted
/// or cut below a quarter, a singular Jacobian) instead of nudging with fraction sweeps.
#[allow(clippy::too_many_arguments)]
fn joint_newton(
    sys: &System,
    ev: &mut Evaluation,
    lay: &Layout,
    p: &mut Point,
    tol: f64,
    iters: &mut usize,
    joint_end: usize,
    sc: &mut Scratch,
    probe: bool,
) -> JointEnd {
    let act = &lay.act;
    let m = act.len() + 1;
    let ideal = sys.model == crate::activity::ActivityModel::Ideal;
    sc.size_newton(m);
    let Scratch {
        f,
        fscale: scale,
        tf,
        ts,
        jac,
        dx,
        trial,
        ..
    } = sc;
    residual(sys, ev, lay, p, f, scale);
    let mut phi = merit(f, scale);
    let mut stalls = 0;
    // The last accepted step (ln units): a solution within tolerance is polished by one more
    // Newton step unless the previous step was already at round-off, because a balance
    // scaled by large spectator totals can meet the tolerance while pH is still off in its
    // ninth digit.
    let mut last_step = f64::INFINITY;
    // ln I is bounded at the limit under an activity model (a solution beyond it is refused
    // below); under the ideal model I is a by-product and unbounded.
    let ln_i_max = if ideal { f64::INFINITY } else { I_MAX.ln() };
    let mut short_steps = 0;
    while *iters < joint_end {
        if max_scaled(f, scale, ideal) <= tol && last_step <= 1e-9 {
            if ev.composition_change(sys) <= tol {
                return JointEnd::Converged;
            }
            // γ depends on the composition (SIT): take it at the new concentrations and go
            // on from here (the residual of this iteration is the change of ln γ).
            ev.hold_composition();
            evaluate(sys, ev, p);
            residual(sys, ev, lay, p, f, scale);
            phi = merit(f, scale);
            last_step = f64::INFINITY;
            continue;
        }
        *iters += 1;
        jacobian_into(ev, lay, p, jac, true);
        for (k, r) in f.iter().enumerate() {
            tf[lay.slot[k]] = -r;
        }
        let solved = lu_solve_in_place(jac, m, tf);
        for (k, d) in dx.iter_mut().enumerate() {
            *d = tf[lay.slot[k]];
        }
        if !solved {
            if probe {
                return JointEnd::Stopped;
            }
            // Singular Jacobian: nudge with more fraction sweeps and go on.
            pcf_sweeps(sys, ev, lay, p, 10);
            evaluate(sys, ev, p);
            residual(sys, ev, lay, p, f, scale);
            phi = merit(f, scale);
            continue;
        }
        let mut big = amax(dx);
        if !big.is_finite() {
            break;
        }
        if big > MAX_STEP {
            if probe {
                return JointEnd::Stopped;
            }
            let shrink = MAX_STEP / big;
            for d in dx.iter_mut() {
                *d *= shrink;
            }
            big = amax(dx);
        }
        // The line search ends where the step no longer moves any unknown beyond round-off.
        let y_size = act.iter().map(|&c| p.y[c].abs()).fold(p.ln_i.abs(), f64::max);
        let round_off = 4.0 * f64::EPSILON * y_size.max(1.0);
        let mut alpha = 1.0;
        let mut accepted = false;
        copy_point(trial, p);
        for _ in 0..40 {
            if alpha * big < round_off || (probe && alpha < 0.25) {
                break;
            }
            for (k, &c) in act.iter().enumerate() {
                trial.y[c] = p.y[c] + alpha * dx[k];
            }
            trial.y[0] = trial.y[0].clamp(LN_AH_MIN, LN_AH_MAX);
            trial.ln_i = (p.ln_i + alpha * dx[m - 1]).clamp(I_MIN.ln(), ln_i_max);
            evaluate(sys, ev, trial);
            residual(sys, ev, lay, trial, tf, ts);
            let tphi = merit(tf, ts);
            if tphi.is_finite() && tphi <= (1.0 - 1e-4 * alpha) * phi {
                last_step = alpha * big;
                // Repeated heavy damping means the merit function is badly scaled here.
                short_steps = if alpha < 1e-2 { short_steps + 1 } else { 0 };
                copy_point(p, trial);
                std::mem::swap(f, tf);
                std::mem::swap(scale, ts);
                phi = tphi;
                accepted = true;
                break;
            }
            alpha *= 0.5;
        }
        if short_steps >= 4 {
            break;
        }
        if !accepted {
            // No decrease along the Newton direction: at round-off level we are done if the
            // residual is already small; otherwise take fraction sweeps and try again.
            evaluate(sys, ev, p);
            if max_scaled(f, scale, ideal) <= tol.max(1e-11) && ev.composition_change(sys) <= tol.max(1e-11) {
                return JointEnd::Converged;
            }
            if probe {
                return JointEnd::Stopped;
            }
            stalls += 1;
            if stalls > 5 {
                break;
            }
            pcf_sweeps(sys, ev, lay, p, 10);
            evaluate(sys, ev, p);
            residual(sys, ev, lay, p, f, scale);
            phi = merit(f, scale);
        }
    }
    JointEnd::Stopped
}

/// The largest scaled residual of the solution at `p` (charge balance over Σ|z|·m, each
/// active mass balance over its total, the ionic-strength equation over I unless ideal, and
/// the activity-coefficient iteration), as [`Evaluation::scaled_residuals`] and
/// `Residuals::worst` give it, without building either.
fn worst_residual(sys: &System, ev: &Evaluation, lay: &Layout, p: &Point, sc: &mut Scratch) -> f64 {
    let m = lay.m();
    sc.size_newton(m);
    residual(sys, ev, lay, p, &mut sc.f, &mut sc.fscale);
    let ideal = sys.model == crate::activity::ActivityModel::Ideal;
    if sc.f.iter().any(|x| x.is_nan()) {
        return f64::INFINITY;
    }
    let worst = max_scaled(&sc.f, &sc.fscale, ideal).max(ev.composition_change(sys));
    if worst.is_nan() { f64::INFINITY } else { worst }
}

/// Solves the full system. `start` is a previous solution's (ln a, ln I).
pub(crate) fn solve(
    sys: &System,
    start: Option<(&[f64], f64)>,
    tol: f64,
    max_iter: usize,
) -> Result<(Point, Evaluation, usize)> {
    let mut sc = SCRATCH.take().unwrap_or_default();
    let r = solve_in(sys, start, tol, max_iter, &mut sc, true);
    SCRATCH.set(Some(sc));
    r
}

#[cfg(test)]
thread_local! {
    /// How many solves on this thread the direct joint Newton finished (for the test).
    static DIRECT_TAKEN: std::cell::Cell<usize> = const { std::cell::Cell::new(0) };
}

/// [`solve`] in the given buffers; `direct` lets the joint Newton start from the fraction
/// sweeps' point (the convex phase skipped) when that point is close.
fn solve_in(
    sys: &System,
    start: Option<(&[f64], f64)>,
    tol: f64,
    max_iter: usize,
    sc: &mut Scratch,
    direct: bool,
) -> Result<(Point, Evaluation, usize)> {
    let mut lay = std::mem::take(&mut sc.layout);
    lay.fill(sys);
    let r = solve_laid_out(sys, start, tol, max_iter, sc, direct, &lay);
    sc.layout = lay;
    r
}

/// [`solve_in`] with the layout made.
fn solve_laid_out(
    sys: &System,
    start: Option<(&[f64], f64)>,
    tol: f64,
    max_iter: usize,
    sc: &mut Scratch,
    direct: bool,
    lay: &Layout,
) -> Result<(Point, Evaluation, usize)> {
    let act = &lay.act;
    let nc = sys.components.len();
    let mut iters = 0;
    let mut fast_ev = None;
    let mut p = match start {
        Some((y, li)) if y.len() == nc && li.is_finite() && y[0].is_finite() => {
            let mut y = y.to_vec();
            for (yc, comp) in y.iter_mut().zip(&sys.components).skip(1) {
                if comp.total_molal > 0.0 {
                    if !yc.is_finite() {
                        *yc = comp.total_molal.ln();
                    }
                } else {
                    *yc = f64::NEG_INFINITY;
                }
            }
            Point { y, ln_i: li }
        }
        _ => {
            let (p, n) = match fast::solve(sys, None, 1e-2) {
                Ok((p, fev, n)) => {
                    fast_ev = Some(fev);
                    (p, n)
                }
                Err(_) => {
                    let mut y = vec![f64::NEG_INFINITY; nc];
                    y[0] = -7.0 * LN10;
                    for &c in &act[1..] {
                        y[c] = sys.components[c].total_molal.ln();
                    }
                    (
                        Point {
                            y,
                            ln_i: (1e-3f64).ln(),
                        },
                        0,
                    )
                }
            };
            iters += n;
            p
        }
    };
    // The fast path's molalities and ln γ buffers become this evaluation's (every entry is
    // written before it is read) where γ does not depend on the composition.
    let mut ev = match fast_ev {
        Some(fev) if sys.interactions.known.is_empty() => Evaluation {
            conc: fev.conc,
            ln_gamma: fev.ln_gamma,
            dln_gamma_di: vec![0.0; sys.species.len()],
            held: Vec::new(),
            phase_amounts: Vec::new(),
        },
        _ => Evaluation::new(sys),
    };
    let ideal = sys.model == crate::activity::ActivityModel::Ideal;
    // The ionic strength of the species at `p` (under γ = 1 I is a by-product; the joint
    // Newton starts from it after the convex phase, and the direct joint Newton under any
    // model, as its start leaves the complexes out).
    let consistent_i = |ev: &Evaluation, p: &mut Point| {
        let mut ionic = 0.0;
        for &s in &lay.species {
            ionic += 0.5 * sys.charge_f[s] * sys.charge_f[s] * ev.conc[s];
        }
        p.ln_i = if ideal {
            ionic.max(I_MIN).ln()
        } else {
            ionic.clamp(I_MIN, I_MAX).ln()
        };
    };
    // Approach at the start's activity coefficients: fraction sweeps take the large jumps
    // (a component far from its total moves by the whole log ratio at once), the convex
    // phase converges from wherever they leave it; then the joint Newton on every unknown
    // with I, quadratic from there.
    pcf_sweeps(sys, &mut ev, lay, &mut p, 30);
    // Where the sweeps leave every balance close (judged at the concentrations they leave),
    // the joint Newton converges from there directly; at the first sign of trouble it goes
    // back to this point and takes the convex phase first, as when the start is far. (Not
    // under composition-dependent γ, whose held composition the joint Newton moves.)
    if direct && ev.held.is_empty() && worst_residual(sys, &ev, lay, &p, sc) <= DIRECT_START {
        copy_point(&mut sc.start, &p);
        let mut probe_iters = iters;
        let joint_end = (iters + DIRECT_ITERATIONS).min(max_iter);
        consistent_i(&ev, &mut p);
        evaluate(sys, &mut ev, &p);
        if joint_newton(sys, &mut ev, lay, &mut p, tol, &mut probe_iters, joint_end, sc, true) == JointEnd::Converged {
            #[cfg(test)]
            DIRECT_TAKEN.set(DIRECT_TAKEN.get() + 1);
            return Ok((p, ev, probe_iters));
        }
        iters = probe_iters;
        copy_point(&mut p, &sc.start);
        ev.set_gamma(sys, p.ln_i.exp());
    }
    iters += convex_phase(sys, &mut ev, lay, &mut p, 1e-3, 100, sc);
    if ideal {
        consistent_i(&ev, &mut p);
    }
    evaluate(sys, &mut ev, &p);
    // The joint Newton converges in well under 40 steps when it converges at all; past
    // that, hand over to the nested iteration below.
    let joint_end = (iters + 40).min(max_iter);
    if joint_newton(sys, &mut ev, lay, &mut p, tol, &mut iters, joint_end, sc, false) == JointEnd::Converged {
        return Ok((p, ev, iters));
    }
    evaluate(sys, &mut ev, &p);
    if worst_residual(sys, &ev, lay, &p, sc) <= tol.max(1e-11) {
        return Ok((p, ev, iters));
    }
    // The joint Newton stalled (typically where pH is set by traces beside large totals that
    // make its merit function badly scaled): finish with the nested iteration.
    if let Some(n) = nested(sys, &mut ev, lay, &mut p, tol, sc)? {
        iters += n;
    }
    evaluate(sys, &mut ev, &p);
    let r = ev.scaled_residuals(sys, &p);
    let (worst, eqn) = r.worst(sys);
    if worst <= tol.max(1e-11) {
        return Ok((p, ev, iters));
    }
    let ionic: f64 = lay
        .species
        .iter()
        .map(|&s| 0.5 * sys.charge_f[s] * sys.charge_f[s] * ev.conc[s])
        .sum();
    if !ideal && ionic > I_MAX {
        return Err(fast::beyond_limit(ionic));
    }
    Err(Error::NoConvergence {
        path: "general",
        iterations: iters,
        max_residual: worst,
        worst_equation: eqn,
        last_ph: -p.y[0] / LN10,
    })
}

/// The largest scaled residual at the fraction sweeps' point from which the joint Newton is
/// tried directly: well inside the region where Newton's steps shrink quadratically.
const DIRECT_START: f64 = 1e-2;

/// The iterations the direct joint Newton is given before the general path goes back to its
/// start and takes the convex phase first.
const DIRECT_ITERATIONS: usize = 8;

/// True when the rows (sparse vectors over the components) are linearly independent
/// (modified Gram–Schmidt with a relative tolerance).
fn independent(rows: &[&[(usize, f64)]], nc: usize) -> bool {
    let mut basis: Vec<Vec<f64>> = Vec::with_capacity(rows.len());
    for r in rows {
        let mut v = vec![0.0; nc];
        for &(c, x) in *r {
            v[c] += x;
        }
        let norm0 = v.iter().map(|x| x * x).sum::<f64>().sqrt();
        for b in &basis {
            let d: f64 = v.iter().zip(b).map(|(a, b)| a * b).sum();
            for (a, b) in v.iter_mut().zip(b) {
                *a -= d * b;
            }
        }
        let norm = v.iter().map(|x| x * x).sum::<f64>().sqrt();
        if norm <= 1e-9 * norm0.max(1e-300) {
            return false;
        }
        basis.push(v.into_iter().map(|x| x / norm).collect());
    }
    true
}

/// Minimises G(y) (see [`convex_phase`]) at fixed activity coefficients subject to the phase
/// rows in `working` holding as equalities, ν_r·y = c_r, by Newton steps on the KKT system
///
/// [H Nᵀ; N 0]·[Δy; λ] = [−∇G; c − N·y],
///
/// Jacobi-scaled, with backtracking on G once the iterate is feasible (the rows are linear,
/// so a full step makes it feasible and later steps keep it so). λ_r is the amount in phase r
/// (mol/kg): at the solution Σ_s ν_s·m_s + Σ_r λ_r·ν_r = T. Returns the iterations used.
#[allow(clippy::too_many_arguments)]
fn constrained_convex(
    sys: &System,
    ev: &mut Evaluation,
    lay: &Layout,
    p: &mut Point,
    working: &[usize],
    lambda: &mut [f64],
    totals: &[f64],
    tol: f64,
) -> Result<usize> {
    let act = &lay.act;
    let n = act.len();
    let r = working.len();
    let mut pos = vec![usize::MAX; sys.components.len()];
    for (k, &c) in act.iter().enumerate() {
        pos[c] = k;
    }
    // The rows in active positions, and their right-hand sides.
    let mut nmat = DMatrix::<f64>::zeros(r, n);
    let mut rhs_c = vec![0.0; r];
    for (j, &w) in working.iter().enumerate() {
        let row = &sys.phases[w];
        for &(c, v) in &row.terms {
            nmat[(j, pos[c])] += v;
        }
        rhs_c[j] = row.rhs();
    }
    let objective = |ev: &Evaluation, y: &[f64]| -> f64 {
        let mut g: f64 = lay.species.iter().map(|&s| ev.conc[s]).sum();
        for (k, &c) in act.iter().enumerate() {
            if totals[k] != 0.0 {
                g -= totals[k] * y[c];
            }
        }
        g
    };
    let mut iters = 0;
    let mut trial = p.clone();
    ev.set_conc(sys, p);
    let mut value = objective(ev, &p.y);
    // The multipliers start at the amounts the rows held last (zero for a row new to the
    // set) and the KKT system is solved for their change: where nearly all of a component
    // sits in a phase (a gas taking almost all the carbon), ∇G alone is of the size of that
    // component's total, and the row's small infeasibility would be lost in its round-off.
    let mut lam: Vec<f64> = working.iter().map(|&w| lambda[w]).collect();
    // Work space, allocated once a call.
    let mut grad = vec![0.0; n];
    let mut scale = vec![0.0; n];
    let mut h = vec![0.0; n * n];
    let mut e = vec![0.0; r];
    let mut d_inv = vec![0.0; n];
    let mut row_scale = vec![1.0; r];
    let mut d = vec![0.0; n];
    let mut rhs = DVector::<f64>::zeros(n + r);
    while iters < 300 {
        iters += 1;
        for k in 0..n {
            grad[k] = -totals[k];
            scale[k] = totals[k].abs();
        }
        h.fill(0.0);
        for (idx, &s) in lay.species.iter().enumerate() {
            let m = ev.conc[s];
            let cols = &lay.cols[lay.col_start[idx]..lay.col_start[idx + 1]];
            for &(a, va) in cols {
                grad[a] += va * m;
                scale[a] += va.abs() * m;
                for &(b, vb) in cols {
                    h[a * n + b] += va * vb * m;
                }
            }
        }
        let mut feas = 0.0f64;
        for j in 0..r {
            let mut v = rhs_c[j];
            for (k, &c) in act.iter().enumerate() {
                v -= nmat[(j, k)] * p.y[c];
            }
            e[j] = v;
            feas = feas.max(v.abs() / (1.0 + rhs_c[j].abs()));
        }
        for k in 0..n {
            d_inv[k] = 1.0 / (h[k * n + k] * (1.0 + 1e-14) + 1e-300_f64).sqrt();
        }
        for j in 0..r {
            let norm = (0..n).map(|k| (nmat[(j, k)] * d_inv[k]).powi(2)).sum::<f64>().sqrt();
            row_scale[j] = if norm > 0.0 { 1.0 / norm } else { 1.0 };
        }
        let kkt = DMatrix::<f64>::from_fn(n + r, n + r, |a, b| match (a < n, b < n) {
            (true, true) => h[a * n + b] * d_inv[a] * d_inv[b] + if a == b { 1e-14 } else { 0.0 },
            (true, false) => nmat[(b - n, a)] * d_inv[a] * row_scale[b - n],
            (false, true) => nmat[(a - n, b)] * d_inv[b] * row_scale[a - n],
            (false, false) => 0.0,
        });
        for k in 0..n {
            let mut g = grad[k];
            for (j, l) in lam.iter().enumerate() {
                g += nmat[(j, k)] * l;
            }
            rhs[k] = -g * d_inv[k];
        }
        for j in 0..r {
            rhs[n + j] = e[j] * row_scale[j];
        }
        if !kkt.lu().solve_mut(&mut rhs) || rhs.iter().any(|v| !v.is_finite()) {
            return Err(Error::InfeasiblePhases {
                reason: format!(
                    "the relations of {} cannot hold together (singular system)",
                    names(sys, working)
                ),
            });
        }
        for k in 0..n {
            d[k] = rhs[k] * d_inv[k];
        }
        for j in 0..r {
            lam[j] += rhs[n + j] * row_scale[j];
        }
        // Stationarity of the Lagrangian with the new multipliers: ∇G + Nᵀλ = −H·Δy.
        let mut worst = 0.0f64;
        for k in 0..n {
            if scale[k] > 0.0 {
                let hd: f64 = (0..n).map(|b| h[k * n + b] * d[b]).sum();
                worst = worst.max((hd / scale[k]).abs());
            }
        }
        let big = d.iter().fold(0.0f64, |a, v| a.max(v.abs()));
        if worst <= tol && feas <= 1e-13 && big <= 1e-6 {
            // Polish with the (tiny) full step and stop.
            for (k, &c) in act.iter().enumerate() {
                p.y[c] += d[k];
            }
            ev.set_conc(sys, p);
            break;
        }
        if !big.is_finite() {
            break;
        }
        if big > CONVEX_MAX_STEP {
            let f = CONVEX_MAX_STEP / big;
            d.iter_mut().for_each(|v| *v *= f);
        }
        if feas > 1e-13 {
            // Not yet on the rows: the step (full, or as long as allowed) moves onto them.
            for (k, &c) in act.iter().enumerate() {
                p.y[c] += d[k];
            }
            ev.set_conc(sys, p);
            value = objective(ev, &p.y);
            continue;
        }
        let slope: f64 = grad.iter().zip(&d).map(|(g, v)| g * v).sum();
        let mass_sum: f64 = lay.species.iter().map(|&s| ev.conc[s]).sum();
        let mut alpha = 1.0;
        let mut accepted = false;
        for _ in 0..60 {
            for (k, &c) in act.iter().enumerate() {
                trial.y[c] = p.y[c] + alpha * d[k];
            }
            ev.set_conc(sys, &trial);
            let v = objective(ev, &trial.y);
            if v.is_finite() && v <= value + 1e-4 * alpha * slope.min(0.0) {
                value = v;
                accepted = true;
                break;
            }
            let flat = (v - value).abs() <= 1e-12 * (value.abs() + mass_sum);
            if alpha == 1.0 && flat && v.is_finite() {
                value = v;
                accepted = true;
                break;
            }
            alpha *= 0.5;
        }
        if !accepted {
            ev.set_conc(sys, p);
            break;
        }
        p.y.clone_from(&trial.y);
    }
    for (w, l) in lambda.iter_mut().enumerate() {
        if sys.phases[w].is_equality() || sys.phases[w].is_inequality() {
            *l = 0.0;
        }
    }
    for (j, &w) in working.iter().enumerate() {
        lambda[w] = lam[j];
    }
    Ok(iters)
}

/// The names of phase rows, for messages.
fn names(sys: &System, rows: &[usize]) -> String {
    rows.iter()
        .map(|&w| format!("`{}`", sys.phases[w].name))
        .collect::<Vec<_>>()
        .join(", ")
}

/// The assemblage at fixed activity coefficients: equality rows always hold; solids allowed
/// to form enter the working set when supersaturated and leave it when their amount would be
/// negative (a primal–dual active-set iteration on the convex problem; the phase rule is kept
/// by refusing a solid whose relation depends on those already held, replacing the one it
/// depends on). Returns the iterations used.
#[allow(clippy::too_many_arguments)]
fn assemblage(
    sys: &System,
    ev: &mut Evaluation,
    lay: &Layout,
    p: &mut Point,
    working: &mut Vec<usize>,
    allowed: &[usize],
    lambda: &mut [f64],
    totals: &[f64],
    tol: f64,
) -> Result<usize> {
    let nc = sys.components.len();
    let amount_scale = totals.iter().skip(1).fold(1e-30_f64, |a, t| a.max(t.abs()));
    let mut iters = 0;
    let changes = 8 * allowed.len() + 8;
    for _ in 0..changes {
        match constrained_convex(sys, ev, lay, p, working, lambda, totals, tol) {
            Ok(n) => iters += n,
            // A set of solids whose relations leave the system singular (two phases that
            // fix the same activities together with the others, as two calcium phosphates
            // with a carbonate under a fixed pCO₂ can): the solid that entered last leaves,
            // and the loop below lets it back in only if it is still supersaturated.
            Err(e @ Error::InfeasiblePhases { .. }) => {
                let Some(last) = working.iter().rposition(|&w| sys.phases[w].is_inequality()) else {
                    return Err(e);
                };
                lambda[working[last]] = 0.0;
                working.remove(last);
                continue;
            }
            Err(e) => return Err(e),
        }
        // A solid whose amount came out negative dissolves completely: drop the worst.
        let negative = working
            .iter()
            .enumerate()
            .filter(|&(_, &w)| sys.phases[w].is_inequality() && lambda[w] < -1e-13 * amount_scale)
            .min_by(|a, b| lambda[*a.1].total_cmp(&lambda[*b.1]))
            .map(|(k, _)| k);
        if let Some(k) = negative {
            working.remove(k);
            continue;
        }
        // The most supersaturated allowed solid enters.
        let over = allowed
            .iter()
            .filter(|w| !working.contains(w))
            .map(|&w| (w, sys.phases[w].ln_q(&p.y)))
            .filter(|&(_, q)| q > 1e-10)
            .max_by(|a, b| a.1.total_cmp(&b.1));
        let Some((w, _)) = over else {
            return Ok(iters);
        };
        let rows_of =
            |set: &[usize]| -> Vec<&[(usize, f64)]> { set.iter().map(|&x| &sys.phases[x].terms[..]).collect() };
        let mut next = working.clone();
        next.push(w);
        if !independent(&rows_of(&next), nc) {
            // Phase rule: replace a solid the new one depends on.
            let swap = (0..working.len())
                .filter(|&k| sys.phases[working[k]].is_inequality())
                .find(|&k| {
                    let mut t = working.clone();
                    t.remove(k);
                    t.push(w);
                    independent(&rows_of(&t), nc)
                });
            match swap {
                Some(k) => {
                    next = working.clone();
                    next.remove(k);
                    next.push(w);
                }
                None => {
                    return Err(Error::InfeasiblePhases {
                        reason: format!(
                            "`{}` is supersaturated but its relation depends on {} (phase rule)",
                            sys.phases[w].name,
                            names(sys, working)
                        ),
                    });
                }
            }
        }
        *working = next;
    }
    Err(Error::InfeasiblePhases {
        reason: format!(
            "the assemblage among {} did not settle after {changes} changes",
            names(sys, allowed)
        ),
    })
}

/// The general path with phase rows: fixed pH, fixed partial pressures and solids allowed to
/// form. The convex problem of [`convex_phase`] gains one linear relation per row
/// (ν_r·y = c_r, or ≤ for a solid); the ionic strength (and, under SIT, the composition γ
/// depends on) is iterated around it by a secant-accelerated fixed point, as in [`nested`].
/// Returns the point, its evaluation (with the amounts of each row in
/// `Evaluation::phase_amounts`) and the iterations used.
pub(crate) fn solve_phases(
    sys: &System,
    start: Option<(&[f64], f64)>,
    tol: f64,
    max_iter: usize,
) -> Result<(Point, Evaluation, usize)> {
    let lay = Layout::new(sys);
    let nc = sys.components.len();
    let mut ev = Evaluation::new(sys);
    let mut iters = 0;
    let usable = |y: &[f64]| y.len() == nc && y[0].is_finite();
    let mut p = match start {
        Some((y, li)) if usable(y) && li.is_finite() => Point {
            y: y.to_vec(),
            ln_i: li,
        },
        _ => match fast::solve(sys, None, 1e-2) {
            Ok((p, _, n)) => {
                iters += n;
                p
            }
            Err(_) => Point {
                y: vec![f64::NEG_INFINITY; nc],
                ln_i: (1e-3f64).ln(),
            },
        },
    };
    if !p.y[0].is_finite() {
        p.y[0] = -7.0 * LN10;
    }
    for &c in &lay.act[1..] {
        if !p.y[c].is_finite() {
            let t = sys.components[c].total_molal;
            p.y[c] = if t > 0.0 { t.ln() } else { -30.0 * LN10 };
        }
    }
    for c in 1..nc {
        if !sys.component_active(c) {
            p.y[c] = f64::NEG_INFINITY;
        }
    }
    // Rows whose components are all active: the equalities always hold, the allowed solids
    // may enter.
    let usable_row = |w: usize| {
        sys.phases[w]
            .terms
            .iter()
            .all(|&(c, _)| c == 0 || sys.component_active(c))
    };
    let mut working: Vec<usize> = (0..sys.phases.len())
        .filter(|&w| sys.phases[w].is_equality() && usable_row(w))
        .collect();
    let allowed: Vec<usize> = (0..sys.phases.len())
        .filter(|&w| sys.phases[w].is_inequality() && usable_row(w))
        .collect();
    {
        let rows: Vec<&[(usize, f64)]> = working.iter().map(|&w| &sys.phases[w].terms[..]).collect();
        if !independent(&rows, nc) {
            return Err(Error::ConflictingConstraints {
                first: names(sys, &working[..working.len().saturating_sub(1)]),
                second: names(sys, &working[working.len().saturating_sub(1)..]),
                reason: "they fix the same combination of activities".into(),
            });
        }
    }
    // Solids supersaturated at the start enter together (most supersaturated first, each
    // only if its row is independent of those held): the active-set loop then drops any that
    // should not be there, and most assemblages need no further change.
    let mut over: Vec<(usize, f64)> = allowed
        .iter()
        .map(|&w| (w, sys.phases[w].ln_q(&p.y)))
        .filter(|&(_, q)| q > 0.0)
        .collect();
    over.sort_by(|a, b| b.1.total_cmp(&a.1));
    for (w, _) in over {
        let mut next = working.clone();
        next.push(w);
        let rows: Vec<&[(usize, f64)]> = next.iter().map(|&x| &sys.phases[x].terms[..]).collect();
        if independent(&rows, nc) {
            working = next;
        }
    }
    let mut lambda = vec![0.0; sys.phases.len()];
    // The totals of the convex problem (H⁺ included, T_H = −Σ z·T), then the rows whose
    // amounts are set by the totals: a fixed alkalinity sets T_H (Σ r·T − TA) and leaves the
    // charge it unbalances as its amount; an ion closing the balance takes it instead.
    let act = &lay.act;
    let mut totals = vec![0.0; act.len()];
    for (k, &c) in act.iter().enumerate().skip(1) {
        totals[k] = sys.components[c].total_molal;
        totals[0] -= f64::from(sys.components[c].charge) * totals[k];
    }
    let alkalinity_row = sys
        .phases
        .iter()
        .position(|r| matches!(r.kind, RowKind::Alkalinity { .. }));
    let closure_row = sys.phases.iter().position(|r| matches!(r.kind, RowKind::Closure));
    let ph_row = sys.phases.iter().position(|r| matches!(r.kind, RowKind::Ph { .. }));
    let pos_of = |c: usize| act.iter().position(|&a| a == c);
    let h_charge = totals[0];
    let apply = |totals: &mut Vec<f64>, w: usize, amount: f64| {
        for &(c, v) in &sys.phases[w].terms {
            if let Some(k) = pos_of(c) {
                totals[k] -= amount * v;
            }
        }
    };
    if let Some(w) = alkalinity_row
        && let RowKind::Alkalinity { molal } = sys.phases[w].kind
    {
        let mut h_ta = -molal;
        for (k, &c) in act.iter().enumerate().skip(1) {
            h_ta += sys.alkalinity_reference[c] * totals[k];
        }
        let unbalanced = h_charge - h_ta;
        match closure_row {
            Some(cw) => {
                // δ of the ion with z·δ = the unbalanced H⁺: amount of the closure row −δ.
                let z = sys.phases[cw]
                    .terms
                    .iter()
                    .find(|&&(c, _)| c != 0)
                    .map_or(1.0, |&(c, _)| f64::from(sys.components[c].charge));
                let delta = unbalanced / z;
                lambda[cw] = -delta;
                apply(&mut totals, cw, -delta);
            }
            None => {
                lambda[w] = unbalanced;
                apply(&mut totals, w, unbalanced);
            }
        }
    }
    if let Some(cw) = closure_row {
        check_closure(sys, &lay, cw, &totals)?;
    }
    // With a fixed pH and an ion closing the balance, the ion's amount is iterated until the
    // pH row takes no H⁺ (a few passes: the H⁺ in solution hardly depends on the spectator).
    let passes = if closure_row.is_some() && ph_row.is_some() {
        60
    } else {
        1
    };
    if let (Some(cw), Some(_)) = (closure_row, ph_row) {
        // A closing ion put in at zero would leave its activity undetermined on the first
        // pass: start it at 1 µmol/kg; the passes correct it.
        for &(c, _) in sys.phases[cw].terms.iter().filter(|&&(c, _)| c != 0) {
            if let Some(k) = pos_of(c)
                && totals[k] <= 0.0
            {
                let start = 1e-6 - totals[k];
                lambda[cw] -= start;
                apply(&mut totals, cw, -start);
            }
        }
    }
    // The closing ion's amount x is a root of f(x) = (H⁺ the pH row takes)/z, decreasing in x:
    // fixed-point steps x + f until a sign change brackets it, then regula falsi with the
    // Illinois modification (M. Dowell and P. Jarratt, BIT 11 (1971) 168–174) inside the
    // bracket, which the plain fixed point overshoots where γ depends strongly on the ion.
    let mut need_more: Option<(f64, f64)> = None;
    let mut need_less: Option<(f64, f64)> = None;
    let mut last_side = 0i8;
    for pass in 0..passes {
        iters += settle(
            sys,
            &mut ev,
            &lay,
            &mut p,
            &mut working,
            &allowed,
            &mut lambda,
            &totals,
            tol,
            max_iter,
        )?;
        let (Some(cw), Some(pw)) = (closure_row, ph_row) else {
            break;
        };
        let z = sys.phases[cw]
            .terms
            .iter()
            .find(|&&(c, _)| c != 0)
            .map_or(1.0, |&(c, _)| f64::from(sys.components[c].charge));
        let uptake = lambda[pw];
        let scale = totals.iter().fold(1e-30_f64, |a, t| a.max(t.abs()));
        if uptake.abs() <= tol.max(1e-14) * scale {
            break;
        }
        if pass + 1 == passes {
            return Err(Error::NoConvergence {
                path: "general",
                iterations: iters,
                max_residual: uptake.abs() / scale,
                worst_equation: format!("charge balance closed on {}", sys.phases[cw].name),
                last_ph: -p.y[0] / LN10,
            });
        }
        // More of the ion by δ; the closure row's amount is −(the ion added).
        let x = -lambda[cw];
        let f = uptake / z;
        let side = if f > 0.0 { 1 } else { -1 };
        if side > 0 {
            need_more = Some((x, f));
        } else {
            need_less = Some((x, f));
        }
        if side == last_side {
            // The same end moved twice: halve the other end's value (Illinois).
            let other = if side > 0 { &mut need_less } else { &mut need_more };
            if let Some((_, fo)) = other.as_mut() {
                *fo *= 0.5;
            }
        }
        last_side = side;
        let next = match (need_more, need_less) {
            (Some((xl, fl)), Some((xh, fh))) => {
                let s = xl - fl * (xh - xl) / (fh - fl);
                if s.is_finite() && s > xl.min(xh) && s < xl.max(xh) {
                    s
                } else {
                    0.5 * (xl + xh)
                }
            }
            _ => x + f,
        };
        let delta = next - x;
        // Where the relations held fix the ion's activity (a solid of it beside a fixed pH
        // and partial pressure), whatever is added precipitates and the charge cannot change:
        // the constraints cannot hold together.
        if f > 0.0
            && let Some(&(ci, _)) = sys.phases[cw].terms.iter().find(|&&(c, _)| c != 0)
        {
            let unit = [(ci, 1.0)];
            let mut rows: Vec<&[(usize, f64)]> = working.iter().map(|&w| &sys.phases[w].terms[..]).collect();
            rows.push(&unit);
            if !independent(&rows, nc) {
                let present: Vec<usize> = working
                    .iter()
                    .copied()
                    .filter(|&w| lambda[w] > 0.0 || sys.phases[w].is_equality())
                    .collect();
                return Err(Error::ConflictingConstraints {
                    first: format!("charge balance closed on {}", sys.phases[cw].name),
                    second: names(sys, &present),
                    reason: format!(
                        "these fix the activity of {0}, so {0} added to balance the charge precipitates and the charge left ({1:.4e} mol/kg) cannot be balanced",
                        sys.phases[cw].name, uptake
                    ),
                });
            }
        }
        lambda[cw] -= delta;
        apply(&mut totals, cw, -delta);
        check_closure(sys, &lay, cw, &totals)?;
    }
    // The phase relations held (fixed partial pressures and pH, solids present) are
    // equations of the result like the balances: held to the same tolerance, once more from
    // here if they are not, else no convergence is reported.
    let limit = crate::limits::RESIDUAL_PROMISE.max(tol);
    for again in [true, false] {
        let Some((worst, w)) = worst_row(sys, &p, &working, &lambda) else {
            break;
        };
        if worst <= limit {
            break;
        }
        if !again {
            return Err(Error::NoConvergence {
                path: "general",
                iterations: iters,
                max_residual: worst,
                worst_equation: format!("phase relation of {}", sys.phases[w].name),
                last_ph: -p.y[0] / LN10,
            });
        }
        iters += settle(
            sys,
            &mut ev,
            &lay,
            &mut p,
            &mut working,
            &allowed,
            &mut lambda,
            &totals,
            tol,
            max_iter,
        )?;
    }
    ev.set_conc(sys, &p);
    ev.phase_amounts = lambda;
    Ok((p, ev, iters))
}

/// The largest |ν·y − c| over the rows held as equalities (fixed partial pressures and pH,
/// solids present), with its row; `None` when no row is held.
fn worst_row(sys: &System, p: &Point, working: &[usize], lambda: &[f64]) -> Option<(f64, usize)> {
    working
        .iter()
        .filter(|&&w| sys.phases[w].is_equality() || lambda[w] > 0.0)
        .map(|&w| {
            let row = &sys.phases[w];
            let v = row.terms.iter().map(|&(c, nu)| nu * p.y[c]).sum::<f64>() - row.rhs();
            (if v.is_nan() { f64::INFINITY } else { v.abs() }, w)
        })
        .max_by(|a, b| a.0.total_cmp(&b.0))
}

/// Refuses a closing ion whose total would be negative, or above
/// [`MAX_TOTAL_MOLAL`](crate::limits::MAX_TOTAL_MOLAL) (the limit of a total put in).
fn check_closure(sys: &System, lay: &Layout, cw: usize, totals: &[f64]) -> Result<()> {
    for &(c, _) in sys.phases[cw].terms.iter().filter(|&&(c, _)| c != 0) {
        let Some(k) = lay.act.iter().position(|&a| a == c) else {
            continue;
        };
        if totals[k] > crate::limits::MAX_TOTAL_MOLAL {
            let ph = sys.phases.iter().find_map(|r| match r.kind {
                RowKind::Ph { ln_a_h } => {
                    Some(format!(" with the pH fixed at {}", crate::phase::fixed_ph_text(ln_a_h)))
                }
                _ => None,
            });
            return Err(Error::AmountTooLarge {
                what: format!(
                    "total of {} needed to close the charge balance{}",
                    sys.components[c].name,
                    ph.unwrap_or_default()
                ),
                value: totals[k],
                unit: "mol/kg",
                limit: crate::limits::MAX_TOTAL_MOLAL,
            });
        }
        if totals[k] < 0.0 {
            return Err(Error::InfeasiblePhases {
                reason: format!(
                    "closing the charge balance on {} needs {:e} mol/kg of it: the other ions leave a charge of its own sign",
                    sys.components[c].name, totals[k]
                ),
            });
        }
    }
    Ok(())
}

/// The ionic strength (and, under SIT, the composition γ depends on) iterated around the
/// assemblage at fixed γ: a secant-accelerated fixed point, as in [`nested`].
#[allow(clippy::too_many_arguments)]
fn settle(
    sys: &System,
    ev: &mut Evaluation,
    lay: &Layout,
    p: &mut Point,
    working: &mut Vec<usize>,
    allowed: &[usize],
    lambda: &mut [f64],
    totals: &[f64],
    tol: f64,
    max_iter: usize,
) -> Result<usize> {
    let ideal = sys.model == crate::activity::ActivityModel::Ideal;
    let mut i = p.ln_i.exp().clamp(I_MIN, I_MAX);
    let mut prev: Option<(f64, f64)> = None;
    let mut iters = 0;
    if !ideal && sys.interactions.known.is_empty() {
        // The assemblage at the start's γ, then the joint Newton with I; a change of the
        // assemblage on the way sends it round again, a failure to the fixed point below.
        ev.set_gamma(sys, i);
        p.ln_i = i.ln();
        for _ in 0..4 {
            // The joint Newton polishes: the assemblage needs only its phases and amounts' signs.
            iters += assemblage(sys, ev, lay, p, working, allowed, lambda, totals, tol.max(1e-7))?;
            match joint_phases(sys, ev, lay, p, working, lambda, totals, tol) {
                Some(n) => {
                    iters += n;
                    if assemblage_holds(sys, p, working, allowed, lambda, totals) {
                        return Ok(iters);
                    }
                    ev.set_gamma(sys, p.ln_i.exp());
                }
                None => break,
            }
        }
        i = p.ln_i.exp().clamp(I_MIN, I_MAX);
    }
    // The last iterate whose species lay beyond the accepted limits, in words, with its I.
    let mut beyond: Option<(f64, String)> = None;
    for _ in 0..80 {
        if iters > max_iter.max(200) * 4 {
            break;
        }
        ev.set_gamma(sys, i);
        p.ln_i = i.ln();
        iters += assemblage(sys, ev, lay, p, working, allowed, lambda, totals, tol)?;
        if let Some(why) = beyond_limits(sys, lay, ev, lambda) {
            beyond = Some((i, why));
        }
        let g: f64 = lay
            .species
            .iter()
            .map(|&s| 0.5 * sys.charge_f[s] * sys.charge_f[s] * ev.conc[s])
            .sum::<f64>()
            .max(I_MIN);
        if ideal {
            p.ln_i = g.ln();
            return Ok(iters);
        }
        if g > I_MAX && i >= I_MAX {
            return Err(fast::beyond_limit(g));
        }
        let h = g - i;
        let dc = ev.composition_change(sys);
        if h.abs() <= tol * i && dc <= tol {
            return Ok(iters);
        }
        ev.hold_composition();
        i = secant_on_ionic_strength(i, g, &mut prev);
    }
    // Where the relations held brought in more than the library accepts at an iterate
    // (a high fixed pH under a fixed pCO₂: the activities of carbonate and OH⁻ are set, and
    // only γ, which the model lets grow without bound at high I, could keep the molalities
    // in range), that is the cause to report.
    if let Some((i, why)) = beyond {
        return Err(Error::InfeasiblePhases {
            reason: format!(
                "the ionic strength does not settle: at an iterate (γ taken at I = {i:.4e} mol/kg) {} bring in {why}",
                held_constraints(sys)
            ),
        });
    }
    Err(Error::NoConvergence {
        path: "general",
        iterations: iters,
        max_residual: f64::INFINITY,
        worst_equation: "ionic-strength equation with phases".into(),
        last_ph: -p.y[0] / LN10,
    })
}

/// What lies beyond the accepted limits at the current evaluation, in words: a dissolved
/// total or the acid or base of a fixed pH above
/// [`MAX_TOTAL_MOLAL`](crate::limits::MAX_TOTAL_MOLAL), or (under an activity model) an ionic
/// strength above [`MAX_IONIC_STRENGTH_MOLAL`](crate::limits::MAX_IONIC_STRENGTH_MOLAL).
fn beyond_limits(sys: &System, lay: &Layout, ev: &Evaluation, lambda: &[f64]) -> Option<String> {
    let max = crate::limits::MAX_TOTAL_MOLAL;
    let mut dissolved = vec![0.0; sys.components.len()];
    let mut ionic = 0.0;
    for (idx, &s) in lay.species.iter().enumerate() {
        let m = ev.conc[s];
        for &(k, v) in &lay.cols[lay.col_start[idx]..lay.col_start[idx + 1]] {
            dissolved[lay.act[k]] += v * m;
        }
        ionic += 0.5 * sys.charge_f[s] * sys.charge_f[s] * m;
    }
    for (c, comp) in sys.components.iter().enumerate().skip(1) {
        if dissolved[c] > max {
            return Some(format!(
                "{:.4e} mol/kg of {} dissolved, above the accepted maximum of {max} mol/kg",
                dissolved[c], comp.name
            ));
        }
    }
    for (w, row) in sys.phases.iter().enumerate() {
        if matches!(row.kind, RowKind::Ph { .. }) && lambda.get(w).is_some_and(|l| l.abs() > max) {
            return Some(format!(
                "{:.4e} mol/kg of {}, above the accepted maximum of {max} mol/kg",
                lambda[w].abs(),
                if lambda[w] > 0.0 { "base" } else { "acid" }
            ));
        }
    }
    if sys.model != crate::activity::ActivityModel::Ideal && ionic > I_MAX {
        return Some(format!(
            "species of ionic strength {ionic:.4e} mol/kg, above the limit of {I_MAX} mol/kg"
        ));
    }
    None
}

/// The constraints held as equalities (fixed pH, fixed partial pressures, the ion closing the
/// charge balance), described for messages.
fn held_constraints(sys: &System) -> String {
    let out: Vec<String> = sys
        .phases
        .iter()
        .filter_map(|r| match r.kind {
            RowKind::Ph { ln_a_h } => Some(format!("the pH fixed at {}", crate::phase::fixed_ph_text(ln_a_h))),
            RowKind::Gas { fixed: Some(lp) } => Some(format!(
                "the partial pressure of {} fixed at {:.4e} atm",
                r.name,
                lp.exp() / crate::phase::BAR_PER_ATM
            )),
            RowKind::Closure => Some(format!("the charge balance closed on {}", r.name)),
            _ => None,
        })
        .collect();
    if out.is_empty() {
        "the amounts put in".into()
    } else {
        out.join(" and ")
    }
}

/// The joint Newton of the general path with the phase rows of `working` held as equalities:
/// unknowns (ln a of the active components, the amounts λ of the rows, ln I), equations
/// (the mass balances over aqueous + phases, H⁺'s included, the rows, the ionic strength),
/// with the analytic Jacobian. From the assemblage at the start's activity coefficients it
/// converges quadratically where the fixed point on I converges linearly. Returns `None`
/// when it does not converge (the caller falls back to the fixed point), else the
/// iterations used. Models whose γ depends on the composition use the fixed point.
#[allow(clippy::too_many_arguments)]
fn joint_phases(
    sys: &System,
    ev: &mut Evaluation,
    lay: &Layout,
    p: &mut Point,
    working: &[usize],
    lambda: &mut [f64],
    totals: &[f64],
    tol: f64,
) -> Option<usize> {
    let act = &lay.act;
    let n = act.len();
    let r = working.len();
    let m = n + r + 1;
    let mut pos = vec![usize::MAX; sys.components.len()];
    for (k, &c) in act.iter().enumerate() {
        pos[c] = k;
    }
    let mut nmat = DMatrix::<f64>::zeros(r, n);
    let mut rhs_c = vec![0.0; r];
    for (j, &w) in working.iter().enumerate() {
        for &(c, v) in &sys.phases[w].terms {
            nmat[(j, pos[c])] += v;
        }
        rhs_c[j] = sys.phases[w].rhs();
    }
    let mut lam: Vec<f64> = working.iter().map(|&w| lambda[w]).collect();
    let ln_i_max = I_MAX.ln();
    // Residual and scales at the current evaluation, written into `f` and `sc`.
    let residual = |ev: &Evaluation, y: &[f64], lam: &[f64], ln_i: f64, f: &mut [f64], sc: &mut [f64]| {
        for k in 0..n {
            f[k] = -totals[k];
            sc[k] = totals[k].abs();
        }
        let mut ionic = 0.0;
        for (idx, &s) in lay.species.iter().enumerate() {
            let c = ev.conc[s];
            for &(k, v) in &lay.cols[lay.col_start[idx]..lay.col_start[idx + 1]] {
                f[k] += v * c;
                sc[k] += v.abs() * c;
            }
            ionic += 0.5 * sys.charge_f[s] * sys.charge_f[s] * c;
        }
        for j in 0..r {
            let mut g = -rhs_c[j];
            for k in 0..n {
                let a = nmat[(j, k)];
                if a != 0.0 {
                    f[k] += lam[j] * a;
                    sc[k] += (lam[j] * a).abs();
                    g += a * y[act[k]];
                }
            }
            f[n + j] = g;
            sc[n + j] = 1.0;
        }
        let i = ln_i.exp();
        f[m - 1] = ionic - i;
        sc[m - 1] = i;
    };
    let merit = |f: &[f64], sc: &[f64]| -> f64 {
        f.iter()
            .zip(sc)
            .map(|(a, s)| if *s > 0.0 { (a / s) * (a / s) } else { 0.0 })
            .sum::<f64>()
    };
    let worst = |f: &[f64], sc: &[f64]| -> f64 {
        f.iter()
            .zip(sc)
            .map(|(a, s)| if *s > 0.0 { (a / s).abs() } else { 0.0 })
            .fold(0.0, f64::max)
    };
    evaluate(sys, ev, p);
    let (mut f, mut sc) = (vec![0.0; m], vec![0.0; m]);
    let (mut tf, mut ts) = (vec![0.0; m], vec![0.0; m]);
    residual(ev, &p.y, &lam, p.ln_i, &mut f, &mut sc);
    let mut phi = merit(&f, &sc);
    let mut last_step = f64::INFINITY;
    let mut trial = p.clone();
    let mut tlam = lam.clone();
    let mut jac = DMatrix::<f64>::zeros(m, m);
    let mut rhs = DVector::<f64>::zeros(m);
    for it in 0..40 {
        if worst(&f, &sc) <= tol && last_step <= 1e-9 {
            for (j, &w) in working.iter().enumerate() {
                lambda[w] = lam[j];
            }
            return Some(it);
        }
        let i = p.ln_i.exp();
        jac.fill(0.0);
        for (idx, &s) in lay.species.iter().enumerate() {
            let c = ev.conc[s];
            if c == 0.0 {
                continue;
            }
            let gi = -ev.dln_gamma_di[s] * i;
            let half_z2 = 0.5 * sys.charge_f[s] * sys.charge_f[s];
            let cols = &lay.cols[lay.col_start[idx]..lay.col_start[idx + 1]];
            for &(a, va) in cols {
                for &(b, vb) in cols {
                    jac[(a, b)] += va * vb * c;
                }
                jac[(a, m - 1)] += va * c * gi;
                jac[(m - 1, a)] += half_z2 * c * va;
            }
            jac[(m - 1, m - 1)] += half_z2 * c * gi;
        }
        jac[(m - 1, m - 1)] -= i;
        for j in 0..r {
            for k in 0..n {
                jac[(k, n + j)] = nmat[(j, k)];
                jac[(n + j, k)] = nmat[(j, k)];
            }
        }
        // Row scaling by the residual scales keeps trace components' digits.
        for row in 0..m {
            let s = if sc[row] > 0.0 { 1.0 / sc[row] } else { 1.0 };
            for col in 0..m {
                jac[(row, col)] *= s;
            }
            rhs[row] = -f[row] * s;
        }
        if !jac.clone().lu().solve_mut(&mut rhs) || rhs.iter().any(|v| !v.is_finite()) {
            return None;
        }
        let dx = &mut rhs;
        let big = (0..n).map(|k| dx[k].abs()).fold(dx[m - 1].abs(), f64::max);
        if big > MAX_STEP {
            *dx *= MAX_STEP / big;
        }
        let mut alpha = 1.0;
        let mut accepted = false;
        for _ in 0..30 {
            for (k, &c) in act.iter().enumerate() {
                trial.y[c] = p.y[c] + alpha * dx[k];
            }
            for j in 0..r {
                tlam[j] = lam[j] + alpha * dx[n + j];
            }
            trial.ln_i = (p.ln_i + alpha * dx[m - 1]).clamp(I_MIN.ln(), ln_i_max);
            evaluate(sys, ev, &trial);
            residual(ev, &trial.y, &tlam, trial.ln_i, &mut tf, &mut ts);
            let tphi = merit(&tf, &ts);
            if tphi.is_finite() && tphi <= (1.0 - 1e-4 * alpha) * phi {
                last_step = alpha * dx.amax();
                p.clone_from(&trial);
                lam.clone_from(&tlam);
                std::mem::swap(&mut f, &mut tf);
                std::mem::swap(&mut sc, &mut ts);
                phi = tphi;
                accepted = true;
                break;
            }
            alpha *= 0.5;
        }
        if !accepted {
            evaluate(sys, ev, p);
            if worst(&f, &sc) <= tol.max(1e-11) {
                for (j, &w) in working.iter().enumerate() {
                    lambda[w] = lam[j];
                }
                return Some(it);
            }
            return None;
        }
    }
    None
}

/// True when the working set is the assemblage: every solid held has a non-negative amount
/// and no allowed solid outside it is supersaturated.
fn assemblage_holds(
    sys: &System,
    p: &Point,
    working: &[usize],
    allowed: &[usize],
    lambda: &[f64],
    totals: &[f64],
) -> bool {
    let amount_scale = totals.iter().skip(1).fold(1e-30_f64, |a, t| a.max(t.abs()));
    working
        .iter()
        .all(|&w| !sys.phases[w].is_inequality() || lambda[w] >= -1e-13 * amount_scale)
        && allowed
            .iter()
            .filter(|w| !working.contains(w))
            .all(|&w| sys.phases[w].ln_q(&p.y) <= 1e-10)
}

/// The next ionic strength of the fixed point I ← g(I): the secant step on h = g − I through
/// the previous point when it stays within a factor of 2 of I and g, else g itself; bounded
/// to [I_MIN, I_MAX]. `prev` holds the previous (I, h) and is updated.
fn secant_on_ionic_strength(i: f64, g: f64, prev: &mut Option<(f64, f64)>) -> f64 {
    let h = g - i;
    let mut next = g;
    if let Some((ip, hp)) = *prev {
        let den = h - hp;
        if den != 0.0 && den.is_finite() {
            let sec = i - h * (i - ip) / den;
            if sec.is_finite() && sec > 0.5 * g.min(i) && sec < 2.0 * g.max(i) {
                next = sec;
            }
        }
    }
    *prev = Some((i, h));
    next.clamp(I_MIN, I_MAX)
}

#[cfg(test)]
mod tests {
    use crate::{ActivityModel, Amount, Catalog, Complex, ComplexPart, Conditions, Recipe, Temperature};

    /// The direct joint Newton (convex phase skipped where the start is close) gives the pH and
    /// ionic strength of the full route (fraction sweeps, convex phase, joint Newton) to
    /// 1e-12 on fixed pseudo-random mixtures with complexes that couple components, and on
    /// uncoupled ones, from cold starts and from perturbed neighbours' solutions.
    #[test]
    fn direct_route_equals_full_route() {
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
            "calcium chloride",
            "disodium edta dihydrate",
            "ammonia",
        ];
        let calcium = cat.ion("calcium").unwrap();
        // Complexes of our own choosing (constants of a plausible size, not data).
        let complexes = [
            Complex::new(
                "CaY2- (test)",
                vec![
                    (ComplexPart::Ion(calcium.clone()), 1),
                    (ComplexPart::Base(cat.protolyte("edta").unwrap()), 1),
                ],
                10.65,
            )
            .unwrap(),
            Complex::new(
                "CaAc+ (test)",
                vec![
                    (ComplexPart::Ion(calcium.clone()), 1),
                    (ComplexPart::Base(cat.protolyte("acetate").unwrap()), 1),
                ],
                1.2,
            )
            .unwrap(),
            Complex::new(
                "CaOH+ (test)",
                vec![(ComplexPart::Ion(calcium), 1), (ComplexPart::Proton, -1)],
                -12.7,
            )
            .unwrap(),
        ];
        let models = [
            ActivityModel::Davies,
            ActivityModel::ExtendedDebyeHuckel,
            ActivityModel::Ideal,
        ];
        let mut next = crate::testing::lcg(0x5851_f42d_4c95_7f2d);
        let (mut compared, mut coupled, mut direct_taken) = (0, 0, 0);
        for case in 0..300 {
            let mut r = Recipe::new();
            let k = 1 + (next() * 5.0) as usize;
            for _ in 0..k {
                let name = names[(next() * names.len() as f64) as usize % names.len()];
                let molar = 10f64.powf(-5.0 + 4.0 * next()).min(0.1);
                r.add(&cat.reagent(name).unwrap(), Amount::molar(molar)).unwrap();
            }
            if case % 4 != 3 {
                r.add(
                    &cat.reagent("calcium chloride").unwrap(),
                    Amount::molar(10f64.powf(-4.0 + 2.0 * next())),
                )
                .unwrap();
                r.add(
                    &cat.reagent("disodium edta dihydrate").unwrap(),
                    Amount::molar(10f64.powf(-4.0 + 2.0 * next())),
                )
                .unwrap();
                r.add_complexes(&complexes);
            }
            let model = models[case % models.len()];
            let cond = Conditions::new(Temperature::celsius(10.0 + 60.0 * next()), model);
            let Ok(sys) = r.compile(&cond) else { continue };
            if !sys.uncoupled() {
                coupled += 1;
            }
            let full = super::solve_in(&sys, None, 1e-12, 200, &mut super::Scratch::default(), false);
            // Every other case started from the full route's solution moved off by up to
            // 0.2 ln units in each unknown (a neighbour's solution, as in a titration).
            let moved = match &full {
                Ok((p, _, _)) if case % 2 == 1 => {
                    let y: Vec<f64> = p.y.iter().map(|v| v + 0.4 * (next() - 0.5)).collect();
                    Some((y, p.ln_i + 0.4 * (next() - 0.5)))
                }
                _ => None,
            };
            let start = moved.as_ref().map(|(y, li)| (y.as_slice(), *li));
            let reference = match start {
                None => full,
                Some(_) => super::solve_in(&sys, start, 1e-12, 200, &mut super::Scratch::default(), false),
            };
            let before = super::DIRECT_TAKEN.get();
            let direct = super::solve_in(&sys, start, 1e-12, 200, &mut super::Scratch::default(), true);
            direct_taken += super::DIRECT_TAKEN.get() - before;
            match (reference, direct) {
                (Ok((p0, _, _)), Ok((p1, _, _))) => {
                    let d = (p0.y[0] - p1.y[0]).abs() / std::f64::consts::LN_10;
                    assert!(d <= 1e-12, "case {case} ({model:?}): pH differs by {d:e}");
                    let di = (p0.ln_i - p1.ln_i).abs();
                    assert!(di <= 1e-10, "case {case} ({model:?}): ln I differs by {di:e}");
                    compared += 1;
                }
                (Err(_), Err(_)) => {}
                (a, b) => panic!(
                    "case {case} ({model:?}): one route failed: full {:?}, direct {:?}",
                    a.map(|x| -x.0.y[0] / std::f64::consts::LN_10),
                    b.map(|x| -x.0.y[0] / std::f64::consts::LN_10)
                ),
            }
        }
        assert!(compared >= 250, "only {compared} cases compared");
        assert!(coupled >= 150, "only {coupled} coupled systems");
        assert!(
            direct_taken >= 40,
            "the direct route was taken only {direct_taken} times"
        );
    }
}
