//! The solver: turns a [`System`] into an [`Equilibrium`](crate::Equilibrium).
//!
//! Unknowns are the natural logarithms of the component activities (ln a(H⁺) first) and
//! ln I; equations are the charge balance, one mass balance per component with a positive
//! total, and the definition of ionic strength, I = ½ Σ z²·m. Two paths solve them:
//!
//! - the **fast path**, when no species couples two components: each family's
//!   speciation is closed-form in a(H⁺) (alpha fractions), so the charge balance is one
//!   monotone equation in ln a(H⁺), bracketed and solved by safeguarded Newton; the ionic
//!   strength is iterated to self-consistency around it;
//! - the **general path**: damped Newton–Raphson on all unknowns with the
//!   analytic Jacobian and an LU step (nalgebra), from a start given by the fast path on the
//!   uncoupled part of the system and a few positive-continued-fraction sweeps.
//!
//! Both paths report the same residuals, computed by the same code.

pub(crate) mod fast;
pub(crate) mod newton;
mod workspace;

pub use workspace::{PhSolution, Workspace};

use crate::error::Result;
use crate::system::System;

const LN10: f64 = std::f64::consts::LN_10;
/// ln a(H⁺) bounds: pH from −4 to 20.
pub(crate) const LN_AH_MIN: f64 = -20.0 * LN10;
pub(crate) const LN_AH_MAX: f64 = 4.0 * LN10;
/// Ionic-strength bounds (mol/kg) kept by the iterations. The upper one is the documented
/// limit of results under an activity model: a solution whose species give more is refused
/// ([`Error::IonicStrengthBeyondLimit`](crate::Error::IonicStrengthBeyondLimit)), never
/// capped. The lower one never binds (water's own ions give more than 1e-8 mol/kg).
pub(crate) const I_MIN: f64 = 1e-14;
pub(crate) const I_MAX: f64 = crate::limits::MAX_IONIC_STRENGTH_MOLAL;

/// Which algorithm produced an equilibrium.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum SolverPath {
    /// One monotone equation in pH with alpha fractions (no coupling species).
    Fast,
    /// Newton–Raphson on all log activities and the ionic strength.
    General,
}

impl SolverPath {
    /// "fast" or "general".
    pub fn name(self) -> &'static str {
        match self {
            SolverPath::Fast => "fast",
            SolverPath::General => "general",
        }
    }
}

/// Which path to use.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default)]
pub enum PathChoice {
    /// The fast path when it applies, else the general path.
    #[default]
    Auto,
    /// Always the general Newton path (useful to cross-check the fast path).
    General,
}

/// Solver settings.
///
/// # Example
///
/// ```
/// use protolyte::{Amount, Catalog, Conditions, PathChoice, Recipe, Solver, SolverPath};
///
/// let cat = Catalog::builtin();
/// let mut r = Recipe::new();
/// r.add(&cat.reagent("acetic acid")?, Amount::millimolar(1.0))?;
/// let sys = r.compile(&Conditions::default())?;
/// let fast = Solver::default().solve(&sys)?;
/// let general = Solver::default().path(PathChoice::General).solve(&sys)?;
/// assert_eq!(fast.path(), SolverPath::Fast);
/// assert!((fast.ph() - general.ph()).abs() < 1e-9);
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Solver {
    tolerance: f64,
    max_iterations: usize,
    path: PathChoice,
}

impl Default for Solver {
    fn default() -> Self {
        Solver {
            tolerance: 1e-12,
            max_iterations: 200,
            path: PathChoice::Auto,
        }
    }
}

impl Solver {
    /// The default solver: scaled residual tolerance 1e-12, 200 iterations, automatic path.
    pub fn new() -> Self {
        Solver::default()
    }

    /// Sets the largest accepted scaled residual (each balance divided by its own scale:
    /// a mass balance by its total, the charge balance by Σ|z|·m). Refuses a tolerance that
    /// is not within 1e-15..1e-6.
    pub fn tolerance(mut self, tol: f64) -> crate::error::Result<Self> {
        self.tolerance =
            crate::error::check_parameter("solver", "tolerance", tol, 1e-15, 1e-6, "must be within 1e-15..1e-6")?;
        Ok(self)
    }

    /// The largest accepted scaled residual.
    pub fn tolerance_value(&self) -> f64 {
        self.tolerance
    }

    /// Sets the iteration budget of the general path (default 200). Refuses
    /// (`Error::InvalidParameter`) a budget outside 10..=100 000.
    ///
    /// ```
    /// use protolyte::Solver;
    /// assert!(Solver::new().max_iterations(500).is_ok());
    /// assert!(Solver::new().max_iterations(3).is_err());
    /// ```
    pub fn max_iterations(mut self, n: usize) -> crate::error::Result<Self> {
        crate::error::check_parameter(
            "solver",
            "iteration budget",
            n as f64,
            10.0,
            100_000.0,
            "must be within 10..=100000",
        )?;
        self.max_iterations = n;
        Ok(self)
    }

    /// Chooses the path.
    pub fn path(mut self, path: PathChoice) -> Self {
        self.path = path;
        self
    }

    /// Runs the chosen path from a cold start (`start` = `None`) or from a previous point
    /// (ln a of each component, ln I): the solved point, its evaluation, the iterations spent
    /// and the path taken. [`Solver::solve`] wraps this into an
    /// [`Equilibrium`](crate::Equilibrium).
    pub(crate) fn run(
        &self,
        system: &System,
        start: Option<(&[f64], f64)>,
    ) -> Result<(Point, Evaluation, usize, SolverPath)> {
        if system.has_phase_constraints() {
            let (point, ev, iters) = newton::solve_phases(system, start, self.tolerance, self.max_iterations)?;
            return Ok((point, ev, iters, SolverPath::General));
        }
        if self.path == PathChoice::Auto && system.uncoupled() {
            match fast::solve(system, start.map(|(y, li)| (y[0], li)), self.tolerance) {
                Ok((point, ev, iters)) => return Ok((point, ev, iters, SolverPath::Fast)),
                Err(e @ crate::error::Error::IonicStrengthBeyondLimit { .. }) => return Err(e),
                Err(_) => {
                    // The ionic-strength iteration can stall at very high I; the general
                    // path solves I inside Newton and is the fallback.
                }
            }
        }
        let (point, ev, iters) = newton::solve(system, start, self.tolerance, self.max_iterations)?;
        Ok((point, ev, iters, SolverPath::General))
    }
}

/// A point in the unknowns: ln a for every component (−∞ for components with zero total)
/// and ln I.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Point {
    pub y: Vec<f64>,
    pub ln_i: f64,
}

/// Species concentrations and activity terms at a point.
///
/// The activity model is seen through one interface, [`Evaluation::set_gamma`]: ln γ of
/// every species and d ln γ/dI at a fixed composition. Where γ also depends on the
/// composition (SIT), that part is evaluated at the molalities `held`, which the paths move
/// to the latest concentrations between solves at fixed γ ([`Evaluation::hold_composition`])
/// until they agree; [`Evaluation::composition_change`] is the residual of that iteration.
pub(crate) struct Evaluation {
    /// Molality of each species.
    pub conc: Vec<f64>,
    /// ln γ of each species.
    pub ln_gamma: Vec<f64>,
    /// d ln γ / dI of each species (at fixed composition).
    pub dln_gamma_di: Vec<f64>,
    /// The molalities at which the composition-dependent part of ln γ is evaluated (empty
    /// when the model has none).
    pub held: Vec<f64>,
    /// The amount in each phase row of the system (solid formed, gas given off, H⁺ removed
    /// to hold a fixed pH), mol/kg; empty when the system has no phase constraints.
    pub phase_amounts: Vec<f64>,
}

impl Evaluation {
    pub(crate) fn new(sys: &System) -> Self {
        let n = sys.species.len();
        Evaluation {
            conc: vec![0.0; n],
            ln_gamma: vec![0.0; n],
            dln_gamma_di: vec![0.0; n],
            held: Self::first_composition(sys),
            phase_amounts: Vec::new(),
        }
    }

    /// An evaluation that does not keep d ln γ/dI (the fast path does not need it), in the
    /// given buffers (resized and zeroed).
    pub(crate) fn without_slopes_in(sys: &System, mut conc: Vec<f64>, mut ln_gamma: Vec<f64>) -> Self {
        let n = sys.species.len();
        conc.clear();
        conc.resize(n, 0.0);
        ln_gamma.clear();
        ln_gamma.resize(n, 0.0);
        Evaluation {
            conc,
            ln_gamma,
            dln_gamma_di: Vec::new(),
            held: Self::first_composition(sys),
            phase_amounts: Vec::new(),
        }
    }

    /// The first guess at the composition for composition-dependent γ: each simple ion at
    /// its total (strong electrolytes dominate where SIT matters), everything else 0.
    fn first_composition(sys: &System) -> Vec<f64> {
        if sys.interactions.known.is_empty() {
            return Vec::new();
        }
        sys.species
            .iter()
            .map(|sp| match sp.kind {
                crate::system::SpeciesKind::FreeIon { component } => sys.components[component].total_molal,
                _ => 0.0,
            })
            .collect()
    }

    /// Fills ln γ and its slope at ionic strength `i` (the slope only where it is kept), the
    /// composition-dependent part at the held molalities.
    pub(crate) fn set_gamma(&mut self, sys: &System, i: f64) {
        let profile = crate::activity::GammaProfile::new(sys.model, i, &sys.dh);
        for (s, sp) in sys.species.iter().enumerate() {
            let (lg, d) = profile.at(sp.charge, sp.ion_size_angstrom);
            self.ln_gamma[s] = lg * LN10;
            if let Some(slot) = self.dln_gamma_di.get_mut(s) {
                *slot = d * LN10;
            }
        }
        if !self.held.is_empty() {
            sys.interactions.add_ln_terms(&self.held, &mut self.ln_gamma);
        }
    }

    /// The largest change of any ln γ between the held composition and the current
    /// concentrations: the residual of the activity-coefficient iteration (0 where γ does not
    /// depend on the composition).
    pub(crate) fn composition_change(&self, sys: &System) -> f64 {
        if self.held.is_empty() {
            0.0
        } else {
            sys.interactions.max_change(sys.species.len(), &self.held, &self.conc)
        }
    }

    /// Moves the held composition to the current concentrations (γ is then reset by the next
    /// [`set_gamma`](Self::set_gamma)).
    pub(crate) fn hold_composition(&mut self) {
        if !self.held.is_empty() {
            self.held.copy_from_slice(&self.conc);
        }
    }

    /// Holds the given molalities (a solution's own, for the sensitivities at it).
    pub(crate) fn hold(&mut self, molal: impl Iterator<Item = f64>) {
        for (h, m) in self.held.iter_mut().zip(molal) {
            *h = m;
        }
    }

    /// Fills concentrations at `p` (γ must be set for exp(p.ln_i)).
    pub(crate) fn set_conc(&mut self, sys: &System, p: &Point) {
        for s in 0..sys.species.len() {
            let mut ln_c = sys.ln_k[s] - self.ln_gamma[s];
            for &(c, v) in &sys.terms[sys.term_start[s]..sys.term_start[s + 1]] {
                ln_c += v * p.y[c];
            }
            // −∞ (inactive component) gives exactly 0.
            self.conc[s] = if ln_c.is_nan() { 0.0 } else { ln_c.min(700.0).exp() };
        }
    }

    /// Scaled residuals: (charge balance / Σ|z|m, mass balances / totals (active only, in
    /// component order), ionic-strength equation / I).
    pub(crate) fn scaled_residuals(&self, sys: &System, p: &Point) -> Residuals {
        let nc = sys.components.len();
        let mut charge = 0.0;
        let mut scale = 0.0;
        let mut ionic = 0.0;
        let mut mass = vec![0.0; nc];
        for s in 0..sys.species.len() {
            let c = self.conc[s];
            let z = sys.charge_f[s];
            charge += z * c;
            scale += z.abs() * c;
            ionic += 0.5 * z * z * c;
            for &(comp, v) in &sys.terms[sys.term_start[s]..sys.term_start[s + 1]] {
                mass[comp] += v * c;
            }
        }
        for (c, comp) in sys.components.iter().enumerate() {
            mass[c] = if c > 0 && comp.total_molal > 0.0 {
                (mass[c] - comp.total_molal) / comp.total_molal
            } else {
                0.0
            };
        }
        let i = p.ln_i.exp();
        Residuals {
            charge_molal: charge,
            charge_scale: scale,
            mass,
            ionic_strength: (ionic - i) / i,
            activity: self.composition_change(sys),
        }
    }
}

/// Residuals of one point (see [`Evaluation::scaled_residuals`]).
#[derive(Debug, Clone)]
pub(crate) struct Residuals {
    pub charge_molal: f64,
    pub charge_scale: f64,
    pub mass: Vec<f64>,
    pub ionic_strength: f64,
    /// Largest change of ln γ between the held and the current composition.
    pub activity: f64,
}

impl Residuals {
    pub(crate) fn charge_relative(&self) -> f64 {
        if self.charge_scale > 0.0 {
            self.charge_molal / self.charge_scale
        } else {
            0.0
        }
    }

    /// The largest |scaled residual| and the equation it belongs to.
    pub(crate) fn worst(&self, sys: &System) -> (f64, String) {
        let mut worst = (self.charge_relative().abs(), "charge balance".to_string());
        for (c, &m) in self.mass.iter().enumerate() {
            if m.abs() > worst.0 {
                worst = (m.abs(), format!("mass balance of {}", sys.components[c].name));
            }
        }
        if sys.model != crate::activity::ActivityModel::Ideal && self.ionic_strength.abs() > worst.0 {
            worst = (self.ionic_strength.abs(), "ionic-strength equation".into());
        }
        if self.activity > worst.0 {
            worst = (self.activity, "activity-coefficient iteration".into());
        }
        if worst.0.is_nan() {
            worst.0 = f64::INFINITY;
        }
        worst
    }
}
