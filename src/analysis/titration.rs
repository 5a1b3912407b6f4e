//! Titration simulation: an analyte solution of volume V₀ receives titrant volume v; every
//! total is diluted exactly, T(v) = (T_analyte·V₀ + T_titrant·v)/(V₀ + v) (volumes additive,
//! the dilute-solution assumption of [`Recipe::mix`]), and each point is solved warm-started
//! from the previous one. dpH/dv is analytic: Σ_c (∂pH/∂T_c)·(dT_c/dv) with
//! dT_c/dv = (T_titrant,c − T_c(v))/(V₀ + v), taken as one directional derivative through the
//! converged Jacobian (one small LU per point).
//!
//! Recipes that allow solids or fix a partial pressure or the pH titrate the same way: each
//! point is solved with its assemblage (a solid may appear or dissolve between two points; the
//! warm start hands the solver the previous activities and it re-derives the assemblage), and
//! dpH/dv differentiates the system with the rows held at that point (a present solid's
//! amount and a fixed gas's exchange move with v).
//!
//! A curve is computed either on volumes the caller gives ([`Titration::curve`],
//! [`Titration::curve_uniform`]) or by adaptive stepping ([`Titration::curve_adaptive`]):
//! the next volume step is chosen from the analytic slope so that the pH moves by at most a
//! set amount, so points fall densely where the pH moves fast (around each break) and
//! sparsely on the buffer plateaus.

use crate::equilibrium::Equilibrium;
use crate::error::{Error, Result};
use crate::quantity::Volume;
use crate::recipe::Recipe;
use crate::solve::{Solver, Workspace};
use crate::system::{Conditions, System};

const LN10: f64 = std::f64::consts::LN_10;

/// A titration: an analyte of known volume titrated with a titrant, at fixed conditions.
///
/// # Example
///
/// ```
/// use protolyte::analysis::Titration;
/// use protolyte::{Amount, Catalog, Conditions, Recipe, Volume};
///
/// let cat = Catalog::builtin();
/// let mut acid = Recipe::new();
/// acid.add(&cat.reagent("acetic acid")?, Amount::molar(0.1))?;
/// let mut base = Recipe::new();
/// base.add(&cat.reagent("sodium hydroxide")?, Amount::molar(0.1))?;
/// let t = Titration::new(&acid, Volume::milliliters(25.0), &base, &Conditions::default())?;
/// let half = t.point(Volume::milliliters(12.5), None)?;
/// assert!((half.ph - 4.6).abs() < 0.15);
/// assert!(half.dph_dv_per_ml > 0.0);
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone)]
pub struct Titration {
    system: System,
    analyte_volume_l: f64,
    /// Totals (mol/kg) of each component of `system` in the analyte and in the titrant.
    analyte_totals: Vec<f64>,
    titrant_totals: Vec<f64>,
    solver: Solver,
}

/// One point of a titration curve with its full equilibrium ([`Titration::curve`] and its
/// siblings). Where only pH, dpH/dv and the ionic strength are wanted, the lean curves
/// ([`Titration::ph_curve`], [`Titration::ph_curve_adaptive`]) give the same numbers without
/// building an [`Equilibrium`] per point.
#[derive(Debug, Clone)]
pub struct TitrationPoint {
    /// Titrant volume added, mL.
    pub volume_ml: f64,
    /// pH.
    pub ph: f64,
    /// dpH/dv, per mL of titrant (analytic).
    pub dph_dv_per_ml: f64,
    /// The full equilibrium at this point.
    pub equilibrium: Equilibrium,
}

/// One point of a lean titration curve ([`Titration::ph_curve`],
/// [`Titration::ph_curve_adaptive`]): the numbers of the [`TitrationPoint`] at the same
/// volume, without the full equilibrium (and so without its warnings).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CurveSample {
    /// Titrant volume added, mL.
    pub volume_ml: f64,
    /// pH.
    pub ph: f64,
    /// dpH/dv, per mL of titrant (analytic).
    pub dph_dv_per_ml: f64,
    /// Ionic strength, mol/kg.
    pub ionic_strength_molal: f64,
}

/// How [`Titration::curve_adaptive`] chooses its volume steps.
///
/// Each step is `max_ph_step / |dpH/dv|` (analytic slope at the last point), clamped to
/// `[min_step, max_step]`; a step whose pH change exceeds 1.5 × `max_ph_step` is halved and
/// retried (down to `min_step`). The curve stops at the end volume or after `max_points`.
///
/// # Example
///
/// ```
/// use protolyte::analysis::Stepping;
/// use protolyte::Volume;
///
/// let s = Stepping::new(Volume::milliliters(50.0)).max_ph_step(0.02)?;
/// assert_eq!(s.max_ph_step_value(), 0.02);
/// // Outside 1e-4..=2 the step is refused, not clamped.
/// assert!(Stepping::new(Volume::milliliters(50.0)).max_ph_step(5.0).is_err());
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Stepping {
    end_l: f64,
    max_ph_step: f64,
    min_step_l: f64,
    max_step_l: f64,
    max_points: usize,
}

impl Stepping {
    /// Steps from zero to `end`, with a pH change of at most 0.05 per step, steps between
    /// end/100 000 and end/50, and at most 20 000 points.
    pub fn new(end: Volume) -> Self {
        let e = end.liters_value();
        Stepping {
            end_l: e,
            max_ph_step: 0.05,
            min_step_l: e * 1e-5,
            max_step_l: e / 50.0,
            max_points: 20_000,
        }
    }

    /// The largest pH change per step. Refuses (`Error::InvalidParameter`) a value that is
    /// not finite or lies outside 1e-4..=2.
    pub fn max_ph_step(mut self, dph: f64) -> Result<Self> {
        self.max_ph_step = crate::error::check_parameter(
            "titration stepping",
            "largest pH step",
            dph,
            1e-4,
            2.0,
            "must be within 1e-4..=2",
        )?;
        Ok(self)
    }

    /// The smallest volume step. Refuses (`Error::InvalidParameter`) a volume that is not
    /// finite and positive.
    pub fn min_step(mut self, v: Volume) -> Result<Self> {
        self.min_step_l = positive_step("smallest volume step (L)", v)?;
        Ok(self)
    }

    /// The largest volume step. Refuses (`Error::InvalidParameter`) a volume that is not
    /// finite and positive.
    pub fn max_step(mut self, v: Volume) -> Result<Self> {
        self.max_step_l = positive_step("largest volume step (L)", v)?;
        Ok(self)
    }

    /// The largest number of points. Refuses fewer than 2 (`Error::InvalidParameter`) and
    /// more than [`MAX_CURVE_POINTS`](crate::limits::MAX_CURVE_POINTS)
    /// (`Error::TooManyPoints`).
    pub fn max_points(mut self, n: usize) -> Result<Self> {
        if n < 2 {
            return Err(Error::InvalidParameter {
                what: "titration stepping".into(),
                parameter: "largest number of points",
                value: n as f64,
                reason: "a curve needs at least 2 points",
            });
        }
        self.max_points = crate::error::check_points("adaptive titration curve", n)?;
        Ok(self)
    }

    /// The largest pH change per step.
    pub fn max_ph_step_value(&self) -> f64 {
        self.max_ph_step
    }
}

/// A volume step of [`Stepping`]: finite and positive, in litres.
fn positive_step(parameter: &'static str, v: Volume) -> Result<f64> {
    crate::error::check_parameter(
        "titration stepping",
        parameter,
        v.liters_value(),
        f64::MIN_POSITIVE,
        f64::MAX,
        "must be finite and positive",
    )
}

/// A mutable working copy of the system, re-totalled point by point (no clone per point).
pub(crate) struct Cursor<'a> {
    t: &'a Titration,
    pub(crate) sys: System,
    /// dT/dv of each component at the last volume (reused buffer).
    dt: Vec<f64>,
}

impl<'a> Cursor<'a> {
    pub(crate) fn new(t: &'a Titration) -> Self {
        Cursor {
            t,
            dt: vec![0.0; t.system.components.len()],
            sys: t.system.clone(),
        }
    }

    /// Re-totals the working system for titrant volume `v_l` (litres).
    pub(crate) fn set_volume(&mut self, v_l: f64) -> Result<()> {
        let v = crate::error::check_amount("titrant volume", v_l, "L")?;
        let v0 = self.t.analyte_volume_l;
        for c in 1..self.sys.components.len() {
            let (ta, tt) = (self.t.analyte_totals[c], self.t.titrant_totals[c]);
            let t = (ta * v0 + tt * v) / (v0 + v);
            if !(t.is_finite() && t >= 0.0) {
                // Not reachable from validated totals and volumes; the setter names the fault.
                self.sys.set_total_molal(c, t)?;
            }
            self.sys.components[c].total_molal = t;
            self.dt[c] = (tt - t) / (v0 + v);
        }
        Ok(())
    }

    /// Solves at `v_l`, warm-started from `previous` when given.
    pub(crate) fn solve(&mut self, v_l: f64, previous: Option<&Equilibrium>) -> Result<Equilibrium> {
        self.set_volume(v_l)?;
        match previous {
            Some(p) => self.t.solver.solve_from(&self.sys, p),
            None => self.t.solver.solve(&self.sys),
        }
    }

    /// dpH/dv (per litre) for `eq`, the solution at the last volume set.
    pub(crate) fn dph_dv(&self, eq: &Equilibrium) -> Result<f64> {
        dph_along(&self.sys, eq, &self.dt)
    }

    /// The full point at `v_l`.
    pub(crate) fn point(&mut self, v_l: f64, previous: Option<&Equilibrium>) -> Result<TitrationPoint> {
        let eq = self.solve(v_l, previous)?;
        let d = self.dph_dv(&eq)?;
        Ok(TitrationPoint {
            volume_ml: v_l * 1e3,
            ph: eq.ph(),
            dph_dv_per_ml: d * 1e-3,
            equilibrium: eq,
        })
    }
}

/// A cursor for lean curves: each point is solved in one [`Workspace`] warm-started from the
/// previous point (see [`LeanCursor::start`]), and dpH/dv read from the workspace's
/// molalities; a point the
/// workspace cannot solve (coupled species, other phases, composition-dependent γ) or whose
/// derivative needs the full implicit differentiation is solved in full as
/// [`Cursor::point`] solves it.
struct LeanCursor<'a> {
    c: Cursor<'a>,
    ws: Workspace,
    /// The unknowns (ln a of each component) and ln I of the last point solved.
    last_y: Vec<f64>,
    last_ln_i: f64,
    has_last: bool,
    /// Where the last point was solved in the workspace: its volume (L) and the tangent of
    /// the curve there, (d ln a(H⁺)/dv, d ln I/dv) per litre, from which the next point's
    /// start is predicted.
    tangent: Option<(f64, f64, f64)>,
}

/// The largest predicted move (ln units) of ln a(H⁺) or ln I taken as a start; beyond it the
/// last point itself is the start.
const PREDICT_MAX: f64 = 0.5;

impl<'a> LeanCursor<'a> {
    fn new(t: &'a Titration) -> Self {
        LeanCursor {
            c: Cursor::new(t),
            ws: Workspace::new(),
            last_y: Vec::new(),
            last_ln_i: 0.0,
            has_last: false,
            tangent: None,
        }
    }

    /// The start of the point at `v_l`: the last point, moved along the tangent there when
    /// the move is small.
    fn start(&self, v_l: f64) -> Option<(f64, f64)> {
        if !self.has_last {
            return None;
        }
        let (l, u) = (self.last_y[0], self.last_ln_i);
        if let Some((v0, dl, du)) = self.tangent {
            let (pl, pu) = (dl * (v_l - v0), du * (v_l - v0));
            if pl.abs() <= PREDICT_MAX && pu.abs() <= PREDICT_MAX {
                return Some((l + pl, u + pu));
            }
        }
        Some((l, u))
    }

    /// The point at `v_l`, warm-started from the last point solved (if any).
    fn sample(&mut self, v_l: f64) -> Result<CurveSample> {
        self.c.set_volume(v_l)?;
        let solver = self.c.t.solver;
        let sys = &self.c.sys;
        if solver.lean_applies(sys) {
            self.ws.set_start(self.start(v_l));
            if let Some(s) = solver.solve_lean(sys, &mut self.ws, false)?
                && let Some((dl, du)) = tangent_checked(sys, self.ws.molal(), s.ionic_strength_molal, &self.c.dt)
                && dl.is_finite()
            {
                let d = -dl / LN10;
                self.last_y.clear();
                self.last_y.extend_from_slice(self.ws.unknowns());
                self.last_ln_i = self.ws.start().map_or(0.0, |(_, li)| li);
                self.has_last = true;
                self.tangent = du.is_finite().then_some((v_l, dl, du));
                return Ok(CurveSample {
                    volume_ml: v_l * 1e3,
                    ph: s.ph,
                    dph_dv_per_ml: d * 1e-3,
                    ionic_strength_molal: s.ionic_strength_molal,
                });
            }
        }
        let eq = if self.has_last {
            solver.solve_from_unknowns(sys, &self.last_y, self.last_ln_i)?
        } else {
            solver.solve(sys)?
        };
        let d = self.c.dph_dv(&eq)?;
        self.last_y.clear();
        self.last_y.extend_from_slice(eq.unknowns());
        self.last_ln_i = eq.ln_ionic_strength();
        self.has_last = true;
        self.tangent = None;
        Ok(CurveSample {
            volume_ml: v_l * 1e3,
            ph: eq.ph(),
            dph_dv_per_ml: d * 1e-3,
            ionic_strength_molal: eq.ionic_strength_molal(),
        })
    }
}

impl Titration {
    /// A titration of `analyte_volume` of `analyte` with `titrant`, both at `conditions`.
    ///
    /// A fixed pH or alkalinity in either solution would hold what the titrant moves, and is
    /// refused ([`Error::ConflictingConstraints`]); a fixed partial pressure and allowed
    /// solids stay in force along the curve.
    pub fn new(analyte: &Recipe, analyte_volume: Volume, titrant: &Recipe, conditions: &Conditions) -> Result<Self> {
        for (which, recipe) in [("analyte", analyte), ("titrant", titrant)] {
            if let Some(c) = recipe
                .constraints()
                .iter()
                .find(|c| matches!(c, crate::Constraint::Ph(_) | crate::Constraint::Alkalinity(_)))
            {
                return Err(Error::ConflictingConstraints {
                    first: format!("{} of the {which}", c.describe()),
                    second: "the titrant added along the curve".into(),
                    reason: "the constraint holds the pH (or the alkalinity) that the titration moves".into(),
                });
            }
        }
        let v0 = analyte_volume.positive("analyte volume")?;
        // One system holding the components of both solutions.
        let both = Recipe::mix(&[(analyte, analyte_volume), (titrant, analyte_volume)])?;
        let system = both.compile(conditions)?;
        let a = analyte.compile(conditions)?;
        let t = titrant.compile(conditions)?;
        let totals = |part: &System| -> Vec<f64> {
            system
                .components()
                .iter()
                .map(|c| {
                    part.component_index(&c.name)
                        .map(|i| part.components()[i].total_molal)
                        .unwrap_or(0.0)
                })
                .collect()
        };
        let analyte_totals = totals(&a);
        let titrant_totals = totals(&t);
        let mut system = system;
        for (c, &t) in analyte_totals.iter().enumerate().skip(1) {
            system.set_total_molal(c, t)?;
        }
        Ok(Titration {
            titrant_totals,
            analyte_totals,
            system,
            analyte_volume_l: v0,
            solver: Solver::default(),
        })
    }

    /// Uses `solver` for every point.
    pub fn with_solver(mut self, solver: Solver) -> Self {
        self.solver = solver;
        self
    }

    /// The analyte volume, L.
    pub fn analyte_volume(&self) -> Volume {
        Volume::liters(self.analyte_volume_l)
    }

    /// Total (mol/kg) of every component of [`Titration::system`] in the analyte.
    pub fn analyte_totals_molal(&self) -> &[f64] {
        &self.analyte_totals
    }

    /// Total (mol/kg) of every component of [`Titration::system`] in the titrant.
    pub fn titrant_totals_molal(&self) -> &[f64] {
        &self.titrant_totals
    }

    /// The system (components of analyte and titrant together) at zero titrant.
    pub fn system(&self) -> &System {
        &self.system
    }

    /// The solver used for every point.
    pub fn solver(&self) -> &Solver {
        &self.solver
    }

    /// The system after `v` of titrant: every total diluted exactly.
    pub fn system_at(&self, v: Volume) -> Result<System> {
        let mut c = Cursor::new(self);
        c.set_volume(v.liters_value())?;
        Ok(c.sys)
    }

    /// The point after `v` of titrant, warm-started from `previous` when given.
    pub fn point(&self, v: Volume, previous: Option<&Equilibrium>) -> Result<TitrationPoint> {
        Cursor::new(self).point(v.liters_value(), previous)
    }

    /// pH after `v` of titrant (no derivative, no copy of the equilibrium kept).
    ///
    /// ```
    /// use protolyte::analysis::Titration;
    /// use protolyte::{ActivityModel, Amount, Catalog, Conditions, Recipe, Temperature, Volume};
    ///
    /// let cat = Catalog::builtin();
    /// let mut acid = Recipe::new();
    /// acid.add(&cat.reagent("hydrochloric acid")?, Amount::molar(0.1))?;
    /// let mut base = Recipe::new();
    /// base.add(&cat.reagent("sodium hydroxide")?, Amount::molar(0.1))?;
    /// let ideal = Conditions::new(Temperature::celsius(25.0), ActivityModel::Ideal);
    /// let t = Titration::new(&acid, Volume::milliliters(50.0), &base, &ideal)?;
    /// // Half the acid left in 75 mL: [H+] = 2.5 mmol / 75 mL (pH is on the molal scale,
    /// // which differs from the molar one by log₁₀ of the water density, 0.0013).
    /// let ph = t.ph_at(Volume::milliliters(25.0))?;
    /// assert!((ph - (-(2.5f64 / 75.0).log10())).abs() < 3e-3);
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn ph_at(&self, v: Volume) -> Result<f64> {
        Ok(Cursor::new(self).solve(v.liters_value(), None)?.ph())
    }

    /// The curve at the given volumes (any order; each point warm-starts from the previous).
    /// Refuses more than [`MAX_CURVE_POINTS`](crate::limits::MAX_CURVE_POINTS) volumes
    /// ([`Error::TooManyPoints`]).
    pub fn curve(&self, volumes: &[Volume]) -> Result<Vec<TitrationPoint>> {
        let mut c = Cursor::new(self);
        crate::error::check_points("titration curve", volumes.len())?;
        let mut out: Vec<TitrationPoint> = Vec::with_capacity(volumes.len());
        for v in volumes {
            let p = c.point(v.liters_value(), out.last().map(|p| &p.equilibrium))?;
            out.push(p);
        }
        Ok(out)
    }

    /// The lean curve at the given volumes: the pH, dpH/dv and ionic strength of
    /// [`Titration::curve`] at each volume (equal to round-off), without an
    /// [`Equilibrium`] per point. Each point is solved in one reused [`Workspace`], started
    /// from the previous point moved along the curve's tangent there (the analytic
    /// d ln a(H⁺)/dv and d ln I/dv) when that move is small. Refuses more than
    /// [`MAX_CURVE_POINTS`](crate::limits::MAX_CURVE_POINTS) volumes ([`Error::TooManyPoints`]).
    ///
    /// ```
    /// use protolyte::analysis::Titration;
    /// use protolyte::{Amount, Catalog, Conditions, Recipe, Volume};
    ///
    /// let cat = Catalog::builtin();
    /// let mut acid = Recipe::new();
    /// acid.add(&cat.reagent("acetic acid")?, Amount::molar(0.1))?;
    /// let mut base = Recipe::new();
    /// base.add(&cat.reagent("sodium hydroxide")?, Amount::molar(0.1))?;
    /// let t = Titration::new(&acid, Volume::milliliters(25.0), &base, &Conditions::default())?;
    /// let volumes: Vec<Volume> = (0..=50).map(|k| Volume::milliliters(k as f64)).collect();
    /// let lean = t.ph_curve(&volumes)?;
    /// let full = t.curve(&volumes)?;
    /// for (a, b) in lean.iter().zip(&full) {
    ///     assert!((a.ph - b.ph).abs() < 1e-12);
    ///     let i = b.equilibrium.ionic_strength_molal();
    ///     assert!((a.ionic_strength_molal - i).abs() < 1e-12 * i);
    /// }
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn ph_curve(&self, volumes: &[Volume]) -> Result<Vec<CurveSample>> {
        crate::error::check_points("titration curve", volumes.len())?;
        let mut c = LeanCursor::new(self);
        let mut out = Vec::with_capacity(volumes.len());
        for v in volumes {
            out.push(c.sample(v.liters_value())?);
        }
        Ok(out)
    }

    /// The curve at `points` evenly spaced volumes from 0 to `end` (both included; fewer
    /// than 2 points give 2). Refuses an end volume that is not positive or is below
    /// [`MIN_VOLUME_LITERS`](crate::limits::MIN_VOLUME_LITERS), and more than
    /// [`MAX_CURVE_POINTS`](crate::limits::MAX_CURVE_POINTS)
    /// ([`Error::TooManyPoints`]).
    ///
    /// ```
    /// use protolyte::analysis::Titration;
    /// use protolyte::{Amount, Catalog, Conditions, Recipe, Volume};
    ///
    /// let cat = Catalog::builtin();
    /// let mut acid = Recipe::new();
    /// acid.add(&cat.reagent("acetic acid")?, Amount::molar(0.05))?;
    /// let mut base = Recipe::new();
    /// base.add(&cat.reagent("sodium hydroxide")?, Amount::molar(0.1))?;
    /// let t = Titration::new(&acid, Volume::milliliters(20.0), &base, &Conditions::default())?;
    /// let curve = t.curve_uniform(Volume::milliliters(20.0), 101)?;
    /// assert_eq!(curve.len(), 101);
    /// assert!(curve.windows(2).all(|w| w[1].ph > w[0].ph));
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn curve_uniform(&self, end: Volume, points: usize) -> Result<Vec<TitrationPoint>> {
        crate::error::check_points("titration curve", points)?;
        let e = end.positive("end volume")?;
        let n = points.max(2);
        let volumes: Vec<Volume> = (0..n).map(|i| Volume::liters(e * i as f64 / (n - 1) as f64)).collect();
        self.curve(&volumes)
    }

    /// The curve from zero to the end volume of `stepping`, with adaptive steps: dense where
    /// the pH moves fast, sparse on the plateaus (see [`Stepping`]).
    ///
    /// ```
    /// use protolyte::analysis::{Stepping, Titration};
    /// use protolyte::{Amount, Catalog, Conditions, Recipe, Volume};
    ///
    /// let cat = Catalog::builtin();
    /// let mut acid = Recipe::new();
    /// acid.add(&cat.reagent("acetic acid")?, Amount::molar(0.1))?;
    /// let mut base = Recipe::new();
    /// base.add(&cat.reagent("sodium hydroxide")?, Amount::molar(0.1))?;
    /// let t = Titration::new(&acid, Volume::milliliters(25.0), &base, &Conditions::default())?;
    /// let curve = t.curve_adaptive(&Stepping::new(Volume::milliliters(40.0)).max_ph_step(0.1)?)?;
    /// // Every step moves the pH by at most 1.5 × 0.1 (or is a minimal step).
    /// assert!(curve.windows(2).all(|w| (w[1].ph - w[0].ph).abs() < 0.15 + 1e-9
    ///     || w[1].volume_ml - w[0].volume_ml < 1e-3));
    /// assert!((curve.last().unwrap().volume_ml - 40.0).abs() < 1e-9);
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn curve_adaptive(&self, stepping: &Stepping) -> Result<Vec<TitrationPoint>> {
        let mut c = Cursor::new(self);
        adaptive(stepping, |v, last: Option<&TitrationPoint>| {
            let p = c.point(v, last.map(|p| &p.equilibrium))?;
            Ok((p.ph, p.dph_dv_per_ml, p))
        })
    }

    /// The lean adaptive curve: the volumes, pH, dpH/dv and ionic strength of
    /// [`Titration::curve_adaptive`] (equal to round-off), without an [`Equilibrium`] per
    /// point (see [`Titration::ph_curve`]).
    ///
    /// ```
    /// use protolyte::analysis::{Stepping, Titration};
    /// use protolyte::{Amount, Catalog, Conditions, Recipe, Volume};
    ///
    /// let cat = Catalog::builtin();
    /// let mut acid = Recipe::new();
    /// acid.add(&cat.reagent("acetic acid")?, Amount::molar(0.1))?;
    /// let mut base = Recipe::new();
    /// base.add(&cat.reagent("sodium hydroxide")?, Amount::molar(0.1))?;
    /// let t = Titration::new(&acid, Volume::milliliters(25.0), &base, &Conditions::default())?;
    /// let stepping = Stepping::new(Volume::milliliters(40.0)).max_ph_step(0.1)?;
    /// let lean = t.ph_curve_adaptive(&stepping)?;
    /// let full = t.curve_adaptive(&stepping)?;
    /// assert_eq!(lean.len(), full.len());
    /// assert!(lean.iter().zip(&full).all(|(a, b)| a.volume_ml == b.volume_ml && (a.ph - b.ph).abs() < 1e-12));
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn ph_curve_adaptive(&self, stepping: &Stepping) -> Result<Vec<CurveSample>> {
        let mut c = LeanCursor::new(self);
        // Each accepted point keeps its unknowns: a rejected trial step is not the next
        // trial's start.
        // Each start is the last accepted point itself, as for the full curve (a predicted
        // start would change the steps at round-off, and with them the volumes).
        let out = adaptive(stepping, |v, last: Option<&(CurveSample, Vec<f64>, f64)>| {
            c.has_last = last.is_some();
            if let Some((_, y, ln_i)) = last {
                c.last_y.clone_from(y);
                c.last_ln_i = *ln_i;
            }
            c.tangent = None;
            let p = c.sample(v)?;
            Ok((p.ph, p.dph_dv_per_ml, (p, c.last_y.clone(), c.last_ln_i)))
        })?;
        Ok(out.into_iter().map(|(p, ..)| p).collect())
    }
}

/// The adaptive stepping of [`Titration::curve_adaptive`] over either kind of point:
/// `solve(v, last)` gives the pH, dpH/dv (per mL) and the point at volume `v` (L),
/// warm-started from `last`, the last point accepted.
fn adaptive<P>(stepping: &Stepping, mut solve: impl FnMut(f64, Option<&P>) -> Result<(f64, f64, P)>) -> Result<Vec<P>> {
    crate::error::check_points("adaptive titration curve", stepping.max_points)?;
    let end = crate::error::check_amount("end volume", stepping.end_l, "L")?;
    let min_step = stepping.min_step_l.min(end.max(f64::MIN_POSITIVE));
    let max_step = stepping.max_step_l.max(min_step);
    let target = stepping.max_ph_step;
    let (mut last_ph, mut last_dph, first) = solve(0.0, None)?;
    let mut out = vec![first];
    let mut v = 0.0;
    while v < end && out.len() < stepping.max_points {
        let slope = last_dph.abs() * 1e3;
        let mut dv = if slope > 0.0 { target / slope } else { max_step };
        dv = dv.clamp(min_step, max_step);
        let prev_ph = last_ph;
        loop {
            let next_v = if v + dv >= end * (1.0 - 1e-12) { end } else { v + dv };
            let (ph, dph, p) = solve(next_v, out.last())?;
            let moved = (ph - prev_ph).abs();
            if moved <= 1.5 * target || dv <= min_step * (1.0 + 1e-9) {
                v = next_v;
                (last_ph, last_dph) = (ph, dph);
                out.push(p);
                break;
            }
            dv = (0.5 * dv).max(min_step);
        }
    }
    Ok(out)
}

/// d pH along a direction of change of the totals: `dt[c]` is dT_c (mol/kg per unit of the
/// parameter) for every component c ≥ 1 (entry 0 is ignored). Uncoupled systems take an
/// allocation-free elimination here; the others the implicit differentiation of
/// [`crate::sensitivity`].
pub(crate) fn dph_along(sys: &System, eq: &Equilibrium, dt: &[f64]) -> Result<f64> {
    let nc = sys.components.len();
    let bad = |what: &str| Error::NoConvergence {
        path: "sensitivity",
        iterations: 0,
        max_residual: f64::INFINITY,
        worst_equation: what.into(),
        last_ph: eq.ph(),
    };
    if dt.len() != nc || eq.unknowns().len() != nc {
        return Err(Error::InconsistentDefinition {
            name: "dpH".into(),
            reason: "the direction or the equilibrium does not belong to this system".into(),
        });
    }
    let d = match dph_along_uncoupled(sys, eq.molal(), eq.ionic_strength_molal(), dt) {
        Some(d) => d,
        None => crate::sensitivity::dph_along_totals(sys, eq, dt)?,
    };
    if d.is_finite() {
        Ok(d)
    } else {
        Err(bad("dpH is not finite"))
    }
}

/// The same derivative for a system without coupling species, with nothing allocated: each
/// component's mass balance is eliminated by hand (its species share one free activity), which
/// leaves a 2 × 2 system in d ln a(H⁺) and d ln I from the charge balance and the
/// ionic-strength equation. `None` when the system is coupled or the direction brings in a
/// component from a zero total.
fn dph_along_uncoupled(sys: &System, molal: &[f64], i: f64, dt: &[f64]) -> Option<f64> {
    let (dl, _) = tangent_uncoupled(sys, molal, i, dt)?;
    let d = -dl / LN10;
    d.is_finite().then_some(d)
}

/// The derivatives of ln a(H⁺) and ln I along the direction `dt`, as
/// [`dph_along_uncoupled`] takes them.
fn tangent_uncoupled(sys: &System, molal: &[f64], i: f64, dt: &[f64]) -> Option<(f64, f64)> {
    // Phase rows (solids, fixed gases, a fixed pH) change the equations: the full implicit
    // differentiation with the rows held handles them.
    if !sys.uncoupled() || sys.has_phase_constraints() {
        return None;
    }
    tangent_checked(sys, molal, i, dt)
}

/// [`tangent_uncoupled`] for a system known to be uncoupled and without phase rows (a lean
/// curve's point, which [`Solver::lean_applies`] admitted).
fn tangent_checked(sys: &System, molal: &[f64], i: f64, dt: &[f64]) -> Option<(f64, f64)> {
    let nc = sys.components.len();
    if dt.len() != nc || molal.len() != sys.species.len() {
        return None;
    }
    let prof = crate::activity::GammaProfile::new(sys.model, i, &sys.dh);
    // d ln m_s = ν_s dL − (d ln γ_s/dI)·I du + d ln a_g, with L = ln a(H⁺), u = ln I.
    #[inline(always)]
    fn species_term(
        sys: &System,
        prof: &crate::activity::GammaProfile,
        molal: &[f64],
        i: f64,
        s: usize,
    ) -> (f64, f64, f64, f64) {
        let sp = &sys.species[s];
        let gi = prof.at(sp.charge, sp.ion_size_angstrom).1 * LN10 * i;
        (molal[s], sys.charge_f[s], f64::from(sys.nu_h[s]), gi)
    }
    // Rows: charge balance, ionic strength; columns: dL, du.
    let (mut a11, mut a12, mut a21, mut a22, mut r1, mut r2) = (0.0, 0.0, 0.0, 0.0, 0.0, 0.0);
    for &s in &sys.members[0] {
        let (m, z, nu, gi) = species_term(sys, &prof, molal, i, s);
        let q = 0.5 * z * z;
        a11 += z * m * nu;
        a12 -= z * m * gi;
        a21 += q * m * nu;
        a22 -= q * m * gi;
    }
    for (g, &dtg) in dt.iter().enumerate().take(nc).skip(1) {
        if sys.components[g].total_molal <= 0.0 {
            if dtg != 0.0 {
                return None;
            }
            continue;
        }
        let (mut mm, mut mn, mut mg, mut zm, mut zn, mut zg, mut qm, mut qn, mut qg) =
            (0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0);
        for &s in &sys.members[g] {
            let (m, z, nu, gi) = species_term(sys, &prof, molal, i, s);
            let q = 0.5 * z * z;
            mm += m;
            mn += m * nu;
            mg += m * gi;
            zm += z * m;
            zn += z * m * nu;
            zg += z * m * gi;
            qm += q * m;
            qn += q * m * nu;
            qg += q * m * gi;
        }
        if mm <= 0.0 {
            return None;
        }
        // M d ln a_g = dT_g − Mn dL + Mg du (mass balance of g).
        a11 += zn - zm * mn / mm;
        a12 += -zg + zm * mg / mm;
        a21 += qn - qm * mn / mm;
        a22 += -qg + qm * mg / mm;
        r1 -= zm * dtg / mm;
        r2 -= qm * dtg / mm;
    }
    a22 -= i;
    let det = a11 * a22 - a12 * a21;
    let dl = (r1 * a22 - a12 * r2) / det;
    let du = (a11 * r2 - a21 * r1) / det;
    Some((dl, du))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sensitivity::Parameter;
    use crate::{ActivityModel, Amount, Catalog, Temperature};

    /// The allocation-free derivative agrees with the one through the full Jacobian.
    #[test]
    fn uncoupled_derivative_matches_jacobian() {
        let cat = Catalog::builtin();
        for model in [
            ActivityModel::Ideal,
            ActivityModel::Davies,
            ActivityModel::ExtendedDebyeHuckel,
        ] {
            let mut r = Recipe::new();
            r.add(&cat.reagent("phosphoric acid").unwrap(), Amount::molar(0.02))
                .unwrap();
            r.add(&cat.reagent("acetic acid").unwrap(), Amount::molar(0.01))
                .unwrap();
            r.add(&cat.reagent("sodium hydroxide").unwrap(), Amount::molar(0.025))
                .unwrap();
            r.add(&cat.reagent("sodium chloride").unwrap(), Amount::molar(0.05))
                .unwrap();
            let sys = r.compile(&Conditions::new(Temperature::celsius(25.0), model)).unwrap();
            let eq = sys.solve().unwrap();
            let sens = eq.sensitivities(&sys).unwrap();
            let nc = sys.components().len();
            for c in 1..nc {
                let mut dt = vec![0.0; nc];
                dt[c] = 1.0;
                let fast = dph_along_uncoupled(&sys, eq.molal(), eq.ionic_strength_molal(), &dt).unwrap();
                let full = sens.dph(Parameter::Total(c)).unwrap_or(0.0);
                assert!(
                    (fast - full).abs() <= 1e-8 * full.abs().max(1e-3),
                    "{model:?} {c}: {fast} vs {full}"
                );
            }
        }
    }

    /// The lean curve gives the full curve's pH (to 1e-12), dpH/dv and ionic strength on a
    /// fixed pseudo-random set of titrations (an acid or acid mixture of our own choosing at
    /// 1–100 mM, titrated with sodium hydroxide past its equivalence volume, under each
    /// model whose γ depends on I only), so that the lean point's shortcuts (no p[H]
    /// logarithm, the tangent without the coupling check) change nothing.
    #[test]
    fn lean_curve_equals_full_curve_on_a_fixed_random_set() {
        let cat = Catalog::builtin();
        let acids = [
            "acetic acid",
            "phosphoric acid",
            "citric acid",
            "ammonium chloride",
            "boric acid",
            "sodium dihydrogen phosphate",
        ];
        let models = [
            ActivityModel::Ideal,
            ActivityModel::Davies,
            ActivityModel::ExtendedDebyeHuckel,
        ];
        let mut draw = crate::testing::lcg(0x5eed_1234);
        for k in 0..9 {
            let mut analyte = Recipe::new();
            let first = (draw() * acids.len() as f64) as usize % acids.len();
            let second = (draw() * acids.len() as f64) as usize % acids.len();
            let (m1, m2) = (1.0 + 99.0 * draw(), 1.0 + 99.0 * draw());
            analyte
                .add(&cat.reagent(acids[first]).unwrap(), Amount::millimolar(m1))
                .unwrap();
            if second != first {
                analyte
                    .add(&cat.reagent(acids[second]).unwrap(), Amount::millimolar(m2))
                    .unwrap();
            }
            let mut base = Recipe::new();
            base.add(&cat.reagent("sodium hydroxide").unwrap(), Amount::molar(0.1))
                .unwrap();
            let cond = Conditions::new(Temperature::celsius(25.0), models[k % 3]);
            let t = Titration::new(&analyte, Volume::milliliters(20.0), &base, &cond).unwrap();
            // Past three equivalents of the larger acid (20 mL × 100 mM × 3 / 0.1 M at most).
            let end_ml = 20.0 * 3.0 * m1.max(m2) / 100.0;
            let volumes: Vec<Volume> = (0..=30)
                .map(|j| Volume::milliliters(end_ml * j as f64 / 30.0))
                .collect();
            let full = t.curve(&volumes).unwrap();
            let lean = t.ph_curve(&volumes).unwrap();
            for (f, l) in full.iter().zip(&lean) {
                assert_same_numbers(k, f, l);
            }
        }
    }

    /// The lean curves give the numbers of the full ones: the same volumes, pH and dpH/dv to
    /// round-off, on titrations that take the workspace (one and several families, every
    /// model but SIT's pairs) and ones that fall back to the full solve (a solid allowed to
    /// form, SIT, a complex). The scenarios are demo recipes of our own.
    #[test]
    fn lean_curves_equal_full_curves() {
        let cat = Catalog::builtin();
        let recipe = |items: &[(&str, f64)]| {
            let mut r = Recipe::new();
            for &(name, molar) in items {
                r.add(&cat.reagent(name).unwrap(), Amount::molar(molar)).unwrap();
            }
            r
        };
        let base = recipe(&[("sodium hydroxide", 0.1)]);
        let mut hard = recipe(&[("calcium chloride", 0.002), ("sodium bicarbonate", 0.002)]);
        hard.allow_solid(&cat.solid("calcite").unwrap());
        let soda = recipe(&[("sodium carbonate", 0.05)]);
        let cases = [
            (
                recipe(&[("acetic acid", 0.1)]),
                base.clone(),
                ActivityModel::Davies,
                50.0,
            ),
            (
                recipe(&[
                    ("phosphoric acid", 0.02),
                    ("ammonium chloride", 0.01),
                    ("boric acid", 0.01),
                ]),
                base.clone(),
                ActivityModel::ExtendedDebyeHuckel,
                30.0,
            ),
            (
                recipe(&[("citric acid", 0.01)]),
                base.clone(),
                ActivityModel::Ideal,
                10.0,
            ),
            (
                recipe(&[("acetic acid", 0.05), ("sodium chloride", 0.5)]),
                base.clone(),
                ActivityModel::Sit,
                40.0,
            ),
            (
                recipe(&[("disodium edta dihydrate", 0.01), ("calcium chloride", 0.005)]),
                base,
                ActivityModel::Davies,
                5.0,
            ),
            (hard, soda, ActivityModel::Davies, 10.0),
        ];
        for (k, (analyte, titrant, model, end_ml)) in cases.into_iter().enumerate() {
            let cond = Conditions::new(Temperature::celsius(25.0), model);
            let t = Titration::new(&analyte, Volume::milliliters(25.0), &titrant, &cond).unwrap();
            let volumes: Vec<Volume> = (0..=40)
                .map(|j| Volume::milliliters(end_ml * j as f64 / 40.0))
                .collect();
            let full = t.curve(&volumes).unwrap();
            let lean = t.ph_curve(&volumes).unwrap();
            let stepping = Stepping::new(Volume::milliliters(end_ml)).max_ph_step(0.1).unwrap();
            let full_adaptive = t.curve_adaptive(&stepping).unwrap();
            let lean_adaptive = t.ph_curve_adaptive(&stepping).unwrap();
            assert_eq!(lean_adaptive.len(), full_adaptive.len(), "case {k}");
            let pairs = full.iter().zip(&lean).chain(full_adaptive.iter().zip(&lean_adaptive));
            for (f, l) in pairs {
                assert_same_numbers(k, f, l);
            }
        }
    }

    /// A lean sample gives its full point's numbers: the same volume, pH to 1e-12, dpH/dv to
    /// 1e-9 relative and the ionic strength to 1e-12 relative (case `k` named on failure).
    fn assert_same_numbers(k: usize, f: &TitrationPoint, l: &CurveSample) {
        assert_eq!(f.volume_ml, l.volume_ml, "case {k}");
        assert!(
            (f.ph - l.ph).abs() <= 1e-12,
            "case {k} at {} mL: {} vs {}",
            f.volume_ml,
            f.ph,
            l.ph
        );
        let d = (f.dph_dv_per_ml - l.dph_dv_per_ml).abs();
        assert!(
            d <= 1e-9 * f.dph_dv_per_ml.abs().max(1e-6),
            "case {k} at {} mL: dpH/dv {} vs {}",
            f.volume_ml,
            f.dph_dv_per_ml,
            l.dph_dv_per_ml
        );
        let i = f.equilibrium.ionic_strength_molal();
        assert!((i - l.ionic_strength_molal).abs() <= 1e-12 * i, "case {k}");
    }
}
