//! Repeated solves without allocation: a [`Workspace`] keeps the fast path's buffers, the
//! species concentrations and the last solution (the next solve's start) between solves, and
//! [`Solver::solve_ph`] gives the numbers a screen, a fit or a Monte Carlo loop reads (pH,
//! p\[H\], ionic strength, the largest residual) without building the full
//! [`Equilibrium`](crate::Equilibrium).

use super::fast::{self, Buffers};
use super::{Evaluation, PathChoice, Solver, SolverPath};
use crate::activity::{ActivityModel, PhConvention};
use crate::error::{Error, Result};
use crate::system::System;

const LN10: f64 = std::f64::consts::LN_10;

/// Buffers for repeated solves with [`Solver::solve_ph`]: once they have grown to the
/// largest system solved in them, a solve on the fast path allocates nothing. Each solve
/// starts from the previous solution held here (a titration point from the last one, a
/// screen's recipe from its neighbour); [`Workspace::forget_start`] makes the next one start
/// cold.
///
/// A workspace belongs to one thread at a time (make one per thread).
///
/// # Example
///
/// ```
/// use protolyte::solve::Workspace;
/// use protolyte::{Amount, Catalog, Conditions, Recipe, Solver};
///
/// let cat = Catalog::builtin();
/// let mut r = Recipe::new();
/// r.add(&cat.reagent("acetic acid")?, Amount::millimolar(10.0))?;
/// let mut sys = r.compile(&Conditions::default())?;
/// let solver = Solver::default();
/// let mut ws = Workspace::new();
/// let mut previous = 0.0;
/// for k in 1..=5 {
///     sys.set_total_molal(1, 0.002 * k as f64)?;
///     let s = solver.solve_ph(&sys, &mut ws)?;
///     // The same pH as the full result.
///     assert!((s.ph - solver.solve(&sys)?.ph()).abs() < 1e-12);
///     assert!(k == 1 || s.ph < previous);
///     previous = s.ph;
/// }
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Default, Clone)]
pub struct Workspace {
    bufs: Buffers,
    conc: Vec<f64>,
    ln_gamma: Vec<f64>,
    /// The last solution: (ln a(H⁺), ln I).
    start: Option<(f64, f64)>,
}

impl Workspace {
    /// An empty workspace (its buffers grow on the first solve).
    pub fn new() -> Self {
        Workspace::default()
    }

    /// Forgets the last solution: the next solve starts cold.
    pub fn forget_start(&mut self) {
        self.start = None;
    }

    /// The start of the next solve: (ln a(H⁺), ln I), or `None` for a cold start.
    pub(crate) fn set_start(&mut self, start: Option<(f64, f64)>) {
        self.start = start;
    }

    /// The last solution held: (ln a(H⁺), ln I).
    pub(crate) fn start(&self) -> Option<(f64, f64)> {
        self.start
    }

    /// The molality of each species at the last fast-path solution.
    pub(crate) fn molal(&self) -> &[f64] {
        &self.conc
    }

    /// ln a of each component at the last fast-path solution.
    pub(crate) fn unknowns(&self) -> &[f64] {
        self.bufs.y()
    }

    /// The evaluation for `sys` in the workspace's buffers (all zero).
    fn take_evaluation(&mut self, sys: &System) -> Evaluation {
        let n = sys.species.len();
        let zeroed = |mut v: Vec<f64>| {
            if v.len() == n {
                v.fill(0.0);
            } else {
                v.clear();
                v.resize(n, 0.0);
            }
            v
        };
        let conc = zeroed(std::mem::take(&mut self.conc));
        let ln_gamma = zeroed(std::mem::take(&mut self.ln_gamma));
        Evaluation {
            conc,
            ln_gamma,
            dln_gamma_di: Vec::new(),
            held: Vec::new(),
            phase_amounts: Vec::new(),
        }
    }
}

/// What [`Solver::solve_ph`] gives: the numbers of the full [`Equilibrium`](crate::Equilibrium)
/// a screen reads, equal to them.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PhSolution {
    /// pH under the system's [`PhConvention`], as [`Equilibrium::ph`](crate::Equilibrium::ph).
    pub ph: f64,
    /// p\[H\] = −log₁₀ of the H⁺ molality.
    pub p_h_molal: f64,
    /// Ionic strength, mol/kg.
    pub ionic_strength_molal: f64,
    /// The largest relative residual over every equation solved, as
    /// [`Residuals::max_relative`](crate::Residuals::max_relative); above
    /// [`RESIDUAL_PROMISE`](crate::limits::RESIDUAL_PROMISE) (or the solver's tolerance, if
    /// looser) the full result would carry
    /// [`Warning::ResidualAbovePromise`](crate::Warning::ResidualAbovePromise).
    pub max_residual: f64,
    /// The path that solved it.
    pub path: SolverPath,
}

impl Solver {
    /// Solves `system` in `workspace`, starting from the workspace's last solution, and
    /// returns pH, p\[H\], ionic strength and the largest residual: the same numbers as
    /// [`Solver::solve`] gives (to round-off of the start), without building the full result.
    /// On the fast path (no coupling species, no solid, gas or fixed pH, an activity model
    /// whose γ depends on the ionic strength only, or SIT without tabulated pairs in the
    /// system) nothing is allocated once
    /// the workspace has grown to the system; otherwise this solves in full and reads the
    /// result. Warnings are not produced: use [`Solver::solve`] where they are wanted.
    ///
    /// Errors as [`Solver::solve`].
    pub fn solve_ph(&self, system: &System, workspace: &mut Workspace) -> Result<PhSolution> {
        let sys = system;
        if self.lean_applies(sys)
            && let Some(s) = self.solve_lean(sys, workspace, true)?
        {
            return Ok(s);
        }
        // Not the fast path, or it did not give a finite result: the full solve decides
        // (the general path, or the error).
        let eq = self.solve(sys)?;
        workspace.start = Some((eq.unknowns()[0], eq.ln_ionic_strength()));
        Ok(PhSolution {
            ph: eq.ph(),
            p_h_molal: eq.p_h_molal(),
            ionic_strength_molal: eq.ionic_strength_molal(),
            max_residual: eq.max_residual(),
            path: eq.path(),
        })
    }
}

impl Solver {
    /// Whether [`Solver::solve_ph`] solves `sys` on the fast path in the workspace: no phase
    /// relation (a solid allowed to form, a fixed partial pressure or pH; solids that are only
    /// reported are read after the solve), the fast path chosen, and γ that depend on the
    /// ionic strength only.
    pub(crate) fn lean_applies(&self, sys: &System) -> bool {
        self.path == PathChoice::Auto
            && !sys.has_phase_constraints()
            && sys.open.iter().all(|o| !o)
            && sys.uncoupled()
            && sys.interactions.known.is_empty()
            && !(sys.ph_convention == PhConvention::BatesGuggenheim && sys.model == ActivityModel::Sit)
    }

    /// The fast path in the workspace; `None` where it gives no finite result in the solver's
    /// range (the full solve then decides). Starts from the workspace's last solution, then
    /// cold. Without `p_h` the solution's p\[H\] is left 0 (a caller that does not read it
    /// saves its logarithm; whether it is finite is decided all the same).
    pub(crate) fn solve_lean(&self, sys: &System, workspace: &mut Workspace, p_h: bool) -> Result<Option<PhSolution>> {
        for start in [workspace.start, None] {
            let mut ev = workspace.take_evaluation(sys);
            let r = fast::solve_in(sys, start, self.tolerance, &mut workspace.bufs, &mut ev);
            let out = match r {
                Ok((point, _)) => {
                    let s = read(sys, &ev, point.y[0], point.ln_i, p_h);
                    let at = (point.y[0], point.ln_i);
                    workspace.bufs.keep_y(point.y);
                    s.map(|s| (s, at))
                }
                Err(e @ Error::IonicStrengthBeyondLimit { .. }) => {
                    workspace.conc = ev.conc;
                    workspace.ln_gamma = ev.ln_gamma;
                    return Err(e);
                }
                Err(_) => None,
            };
            workspace.conc = ev.conc;
            workspace.ln_gamma = ev.ln_gamma;
            if let Some((s, at)) = out {
                workspace.start = Some(at);
                return Ok(Some(s));
            }
            if start.is_none() {
                break;
            }
        }
        Ok(None)
    }

    /// [`Solver::solve_ph`] where the full result would carry no [`Warning`](crate::Warning)
    /// (`Ok(None)` where it might: the caller then solves in full). The conditions are those
    /// under which `Equilibrium::build` adds a warning: a compilation warning, a total below
    /// the floor or beyond the tested domain, a residual above the promise, an ionic strength
    /// beyond the model's or the pH convention's range, an SIT pair without a coefficient, a
    /// supersaturated solid (systems with other phases always go to the full solve).
    #[cfg(feature = "batch")]
    pub(crate) fn solve_ph_unwarned(&self, sys: &System, workspace: &mut Workspace) -> Result<Option<PhSolution>> {
        let rho = sys.water_density;
        let quiet_system = sys.compile_warnings.is_empty()
            && sys.interactions.unknown.is_empty()
            && sys.below_floor.iter().all(Option::is_none)
            && sys
                .components
                .iter()
                .skip(1)
                .all(|c| c.total_molal * rho <= crate::limits::TESTED_MAX_TOTAL_MOLAR * (1.0 + 1e-12));
        if !quiet_system || !self.lean_applies(sys) {
            return Ok(None);
        }
        let Some(s) = self.solve_lean(sys, workspace, true)? else {
            return Ok(None);
        };
        let i = s.ionic_strength_molal;
        let y = workspace.bufs.y();
        let supersaturated = sys.phases.iter().any(|row| {
            let ln_q = row.ln_q(y);
            matches!(row.kind, crate::phase::RowKind::Solid { .. })
                && ln_q.is_finite()
                && ln_q / LN10 > crate::phase::SUPERSATURATION_TOLERANCE
        });
        let quiet = !supersaturated
            && s.max_residual <= crate::limits::RESIDUAL_PROMISE.max(self.tolerance)
            && i <= sys.model.validity_limit_molal()
            && sys.ph_convention.validity_limit_molal().is_none_or(|limit| i <= limit);
        Ok(quiet.then_some(s))
    }
}

/// The numbers of a fast-path solution, computed as the full result computes them; `None`
/// where any is not finite or the pH is outside the solver's range (the full solve then
/// gives the error). p\[H\] only with `p_h` (else 0); it is finite exactly where the H⁺
/// molality is positive, which is checked either way.
fn read(sys: &System, ev: &Evaluation, l: f64, ln_i: f64, p_h: bool) -> Option<PhSolution> {
    let (mut charge, mut scale, mut ionic) = (0.0, 0.0, 0.0);
    let mut conc_finite = true;
    for (&m, &z) in ev.conc.iter().zip(&sys.charge_f) {
        charge += z * m;
        scale += z.abs() * m;
        ionic += 0.5 * z * z * m;
        conc_finite &= m.is_finite();
    }
    let ideal = sys.model == ActivityModel::Ideal;
    let i = if ideal { ionic } else { ln_i.exp() };
    let p_h_activity = -l / LN10;
    if !(-4.0 - 1e-9..=20.0 + 1e-9).contains(&p_h_activity) {
        return None;
    }
    let ph = p_h_activity + crate::activity::ph_convention_shift(sys.ph_convention, sys.model, i, &sys.dh, 0.0);
    let mut worst = if scale > 0.0 { (charge / scale).abs() } else { 0.0 };
    let nc = sys.components.len();
    for (ci, c) in sys.components.iter().enumerate().skip(1) {
        if c.total_molal > 0.0 {
            let mut held: f64 = sys.members[ci].iter().map(|&s| ev.conc[s]).sum();
            for &s in &sys.coupled_species {
                held += sys.nu[s * nc + ci] * ev.conc[s];
            }
            worst = worst.max(((held - c.total_molal) / c.total_molal).abs());
        }
    }
    if !ideal {
        worst = worst.max(((ionic - i) / i).abs());
    }
    let s = PhSolution {
        ph,
        p_h_molal: if p_h { -ev.conc[0].log10() } else { 0.0 },
        ionic_strength_molal: i,
        max_residual: worst,
        path: SolverPath::Fast,
    };
    let finite = [s.ph, s.p_h_molal, s.ionic_strength_molal, s.max_residual]
        .iter()
        .all(|v| v.is_finite())
        && conc_finite
        && ev.conc[0] > 0.0;
    finite.then_some(s)
}
