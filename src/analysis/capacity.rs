//! Buffer capacity β = dC(strong base)/dpH (D. D. Van Slyke, *J. Biol. Chem.* **52** (1922)
//! 525–570), analytic for any system through the sensitivities (implicit differentiation of
//! the equilibrium equations; [`Sensitivities::buffer_capacity_molal`](crate::Sensitivities::buffer_capacity_molal)).
//!
//! As a function of pH: the solution is brought to each pH by adding strong base (an inert
//! monovalent cation with OH⁻, the meaning of `Parameter::StrongBase`) or strong acid (H⁺
//! with an inert monovalent anion), found by a bracketed root on the analytic dpH/d(amount);
//! β is read there. Along a titration curve: β at each point of the diluted mixture. The
//! peaks (local maxima of β in pH) are refined by golden-section search.

use crate::equilibrium::Equilibrium;
use crate::error::{Error, Result, check_parameter};
use crate::ion::Ion;
use crate::quantity::Amount;
use crate::reagent::{Constituent, Reagent};
use crate::recipe::Recipe;
use crate::solve::Solver;
use crate::system::{Conditions, System};

use super::target::monotone_root;
use super::titration::{Cursor, Titration, TitrationPoint, dph_along};

/// Names of the inert ions the sweep adds (chosen not to clash with catalog names).
const BASE_CATION: &str = "inert cation (strong base added)";
const ACID_ANION: &str = "inert anion (strong acid added)";
/// Largest strong acid or base the sweep adds, mol/kg.
const MAX_ADDITION: f64 = 20.0;

/// Buffer capacity at one pH.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CapacityPoint {
    /// pH.
    pub ph: f64,
    /// Strong base added to reach this pH, mol/kg (negative: strong acid added); zero along a
    /// titration curve, where the titrant moves the pH.
    pub strong_base_molal: f64,
    /// β = dC(strong base)/dpH, mol/kg per pH unit.
    pub beta_molal: f64,
}

/// A local maximum of β as a function of pH.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CapacityPeak {
    /// pH of the maximum.
    pub ph: f64,
    /// β there, mol/kg per pH unit.
    pub beta_molal: f64,
    /// Strong base added to reach it, mol/kg (negative: strong acid).
    pub strong_base_molal: f64,
}

/// A solution whose pH is moved by strong acid or base, to read its buffer capacity at any
/// pH.
///
/// # Example
///
/// ```
/// use protolyte::analysis::CapacityCurve;
/// use protolyte::{ActivityModel, Amount, Catalog, Conditions, Recipe, Temperature};
///
/// let cat = Catalog::builtin();
/// let mut r = Recipe::new();
/// r.add(&cat.reagent("acetic acid")?, Amount::molal(0.1))?;
/// let ideal = Conditions::new(Temperature::celsius(25.0), ActivityModel::Ideal);
/// let curve = CapacityCurve::new(&r, &ideal)?;
/// let p = curve.at_ph(4.756)?;
/// // At pH = pKa, β ≈ 2.303·C/4 (plus a small water term).
/// assert!((p.beta_molal - 2.302585 * 0.1 / 4.0).abs() < 1e-3);
/// let peaks = curve.peaks(3.0, 7.0)?;
/// assert_eq!(peaks.len(), 1);
/// assert!((peaks[0].ph - 4.756).abs() < 0.01);
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone)]
pub struct CapacityCurve {
    system: System,
    cation: usize,
    anion: usize,
    base_totals: Vec<f64>,
    solver: Solver,
}

impl CapacityCurve {
    /// The solution of `recipe` at `conditions`, ready to be moved in pH. A fixed pCO₂ or
    /// allowed solids stay in force (the capacity of the open system, or with the solids);
    /// a fixed pH or alkalinity would hold what the strong acid or base moves, and is refused
    /// ([`Error::ConflictingConstraints`]).
    pub fn new(recipe: &Recipe, conditions: &Conditions) -> Result<Self> {
        if let Some(c) = recipe
            .constraints()
            .iter()
            .find(|c| matches!(c, crate::Constraint::Ph(_) | crate::Constraint::Alkalinity(_)))
        {
            return Err(Error::ConflictingConstraints {
                first: c.describe(),
                second: "the strong acid or base a buffer capacity adds".into(),
                reason: "the constraint holds the pH (or the alkalinity) that the acid or base would move".into(),
            });
        }
        let base = Reagent::new(
            "strong base (inert cation)",
            None,
            vec![
                (Constituent::Ion(Ion::new(BASE_CATION, 1)?), 1),
                (Constituent::Hydroxide, 1),
            ],
        )?;
        let acid = Reagent::new(
            "strong acid (inert anion)",
            None,
            vec![
                (Constituent::Proton, 1),
                (Constituent::Ion(Ion::new(ACID_ANION, -1)?), 1),
            ],
        )?;
        let mut r = recipe.clone();
        r.add(&base, Amount::molal(0.0))?.add(&acid, Amount::molal(0.0))?;
        let system = r.compile(conditions)?;
        let find = |name: &str| {
            system
                .component_index(name)
                .ok_or_else(|| Error::InconsistentDefinition {
                    name: name.into(),
                    reason: "the inert ion did not enter the system".into(),
                })
        };
        let cation = find(BASE_CATION)?;
        let anion = find(ACID_ANION)?;
        let base_totals = system.components().iter().map(|c| c.total_molal).collect();
        Ok(CapacityCurve {
            system,
            cation,
            anion,
            base_totals,
            solver: Solver::default(),
        })
    }

    fn set(&self, sys: &mut System, b: f64) -> Result<()> {
        sys.set_total_molal(self.cation, self.base_totals[self.cation] + b.max(0.0))?;
        sys.set_total_molal(self.anion, self.base_totals[self.anion] + (-b).max(0.0))
    }

    /// pH and dpH/db at strong base b (negative: acid).
    fn ph_and_slope(&self, sys: &mut System, b: f64, last: &mut Option<Equilibrium>) -> Result<(f64, f64)> {
        self.set(sys, b)?;
        let eq = match last.as_ref() {
            Some(p) => self.solver.solve_from(sys, p)?,
            None => self.solver.solve(sys)?,
        };
        let mut dt = vec![0.0; sys.components().len()];
        if b >= 0.0 {
            dt[self.cation] = 1.0;
        } else {
            dt[self.anion] = -1.0;
        }
        let d = dph_along(sys, &eq, &dt)?;
        let ph = eq.ph();
        *last = Some(eq);
        Ok((ph, d))
    }

    /// The solution brought to `ph` and its buffer capacity.
    ///
    /// Errors: a pH outside −4..20 or one that strong acid or base up to 20 mol/kg does not
    /// reach.
    pub fn at_ph(&self, ph: f64) -> Result<CapacityPoint> {
        let target = check_parameter(
            "buffer capacity",
            "pH",
            ph,
            -4.0,
            20.0,
            "must be finite and within -4..20",
        )?;
        let mut sys = self.system.clone();
        let mut last = None;
        let (ph0, _) = self.ph_and_slope(&mut sys, 0.0, &mut last)?;
        let up = target >= ph0;
        // Widen the bracket until it holds the target.
        let mut span = 1e-4;
        let mut reached = false;
        while span <= MAX_ADDITION {
            let b = if up { span } else { -span };
            let (p, _) = self.ph_and_slope(&mut sys, b, &mut last)?;
            if (up && p >= target) || (!up && p <= target) {
                reached = true;
                break;
            }
            span *= 8.0;
        }
        if !reached {
            return Err(Error::InvalidParameter {
                what: "buffer capacity".into(),
                parameter: "pH",
                value: ph,
                reason: "not reached with up to 20 mol/kg of strong acid or base",
            });
        }
        let (lo, hi) = if up { (0.0, span) } else { (-span, 0.0) };
        let mut last_root = None;
        let b = monotone_root(|b| self.ph_and_slope(&mut sys, b, &mut last_root), target, lo, hi)?.ok_or(
            Error::InvalidParameter {
                what: "buffer capacity".into(),
                parameter: "pH",
                value: ph,
                reason: "not bracketed by strong acid or base",
            },
        )?;
        self.set(&mut sys, b)?;
        let eq = match last_root.as_ref() {
            Some(p) => self.solver.solve_from(&sys, p)?,
            None => self.solver.solve(&sys)?,
        };
        Ok(CapacityPoint {
            ph: eq.ph(),
            strong_base_molal: b,
            beta_molal: beta(&sys, &eq)?,
        })
    }

    /// β at `points` evenly spaced pH values from `from` to `to` (both included; fewer than 2
    /// points give 2). Refuses more than [`MAX_CURVE_POINTS`](crate::limits::MAX_CURVE_POINTS)
    /// ([`Error::TooManyPoints`]).
    ///
    /// ```
    /// use protolyte::analysis::CapacityCurve;
    /// use protolyte::{Amount, Catalog, Conditions, Recipe};
    ///
    /// let cat = Catalog::builtin();
    /// let mut r = Recipe::new();
    /// r.add(&cat.reagent("phosphoric acid")?, Amount::millimolar(50.0))?;
    /// let sweep = CapacityCurve::new(&r, &Conditions::default())?.sweep(2.0, 12.0, 41)?;
    /// assert_eq!(sweep.len(), 41);
    /// assert!(sweep.iter().all(|p| p.beta_molal > 0.0));
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn sweep(&self, from: f64, to: f64, points: usize) -> Result<Vec<CapacityPoint>> {
        check_parameter(
            "buffer capacity sweep",
            "pH",
            from,
            -4.0,
            20.0,
            "must be finite and within -4..20",
        )?;
        check_parameter(
            "buffer capacity sweep",
            "pH",
            to,
            -4.0,
            20.0,
            "must be finite and within -4..20",
        )?;
        crate::error::check_points("buffer capacity sweep", points)?;
        let n = points.max(2);
        (0..n)
            .map(|i| self.at_ph(from + (to - from) * i as f64 / (n - 1) as f64))
            .collect()
    }

    /// The local maxima of β between pH `from` and `to` (interior maxima only: β also rises
    /// towards the ends of the pH scale from water alone), located on a 0.05-pH grid and
    /// refined by golden-section search to 1e-6 pH.
    pub fn peaks(&self, from: f64, to: f64) -> Result<Vec<CapacityPeak>> {
        let (lo, hi) = if from <= to { (from, to) } else { (to, from) };
        let n = (((hi - lo) / 0.05).ceil() as usize).clamp(4, 2000) + 1;
        let grid = self.sweep(lo, hi, n)?;
        let mut out = Vec::new();
        for i in 1..grid.len() - 1 {
            if grid[i].beta_molal > grid[i - 1].beta_molal && grid[i].beta_molal >= grid[i + 1].beta_molal {
                let (x, _) = golden_max(|p| Ok(self.at_ph(p)?.beta_molal), grid[i - 1].ph, grid[i + 1].ph, 1e-6)?;
                let p = self.at_ph(x)?;
                out.push(CapacityPeak {
                    ph: p.ph,
                    beta_molal: p.beta_molal,
                    strong_base_molal: p.strong_base_molal,
                });
            }
        }
        Ok(out)
    }
}

/// β of `eq`, a solution of `sys`, mol/kg per pH (an error rather than an infinite value
/// when the pH does not respond to base).
pub(crate) fn beta(sys: &System, eq: &Equilibrium) -> Result<f64> {
    let d = eq.sensitivities(sys)?.dph_dstrong_base_molal();
    if d > 0.0 && (1.0 / d).is_finite() {
        Ok(1.0 / d)
    } else {
        Err(Error::NoConvergence {
            path: "sensitivity",
            iterations: 0,
            max_residual: f64::INFINITY,
            worst_equation: "dpH/d(strong base) is not positive".into(),
            last_ph: eq.ph(),
        })
    }
}

/// Golden-section search for the maximum of a unimodal `f` on [a, b], to width `tol`.
/// Returns (x, f(x)).
pub(crate) fn golden_max(mut f: impl FnMut(f64) -> Result<f64>, a: f64, b: f64, tol: f64) -> Result<(f64, f64)> {
    const R: f64 = 0.618_033_988_749_894_9;
    let (mut a, mut b) = (a.min(b), a.max(b));
    let mut x1 = b - R * (b - a);
    let mut x2 = a + R * (b - a);
    let mut f1 = f(x1)?;
    let mut f2 = f(x2)?;
    for _ in 0..200 {
        if (b - a) <= tol {
            break;
        }
        if f1 < f2 {
            a = x1;
            x1 = x2;
            f1 = f2;
            x2 = a + R * (b - a);
            f2 = f(x2)?;
        } else {
            b = x2;
            x2 = x1;
            f2 = f1;
            x1 = b - R * (b - a);
            f1 = f(x1)?;
        }
    }
    Ok(if f1 >= f2 { (x1, f1) } else { (x2, f2) })
}

/// Buffer capacity along a titration curve: β of the diluted mixture at each point.
///
/// # Example
///
/// ```
/// use protolyte::analysis::{capacity_along, Titration};
/// use protolyte::{Amount, Catalog, Conditions, Recipe, Volume};
///
/// let cat = Catalog::builtin();
/// let mut acid = Recipe::new();
/// acid.add(&cat.reagent("acetic acid")?, Amount::molar(0.1))?;
/// let mut base = Recipe::new();
/// base.add(&cat.reagent("sodium hydroxide")?, Amount::molar(0.1))?;
/// let t = Titration::new(&acid, Volume::milliliters(25.0), &base, &Conditions::default())?;
/// let curve = t.curve_uniform(Volume::milliliters(50.0), 51)?;
/// let beta = capacity_along(&t, &curve)?;
/// // β is largest near half-neutralisation (12.5 mL), smallest near equivalence (25 mL).
/// assert!(beta[12].beta_molal > 10.0 * beta[25].beta_molal);
/// # Ok::<(), protolyte::Error>(())
/// ```
pub fn capacity_along(titration: &Titration, curve: &[TitrationPoint]) -> Result<Vec<CapacityPoint>> {
    let mut c = Cursor::new(titration);
    curve
        .iter()
        .map(|p| {
            c.set_volume(p.volume_ml * 1e-3)?;
            Ok(CapacityPoint {
                ph: p.ph,
                strong_base_molal: 0.0,
                beta_molal: beta(&c.sys, &p.equilibrium)?,
            })
        })
        .collect()
}
