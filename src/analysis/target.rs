//! Inverse problems: the titrant volume, or the amount of any reagent, that brings a
//! solution to a target pH.
//!
//! Both are one-dimensional roots of a monotone function: pH rises (or falls) monotonically
//! as a base (or an acid) is added. The root is bracketed first, then found by Newton steps
//! on the analytic derivative (dpH/dv or dpH/d amount, through the converged Jacobian) that
//! fall back to bisection whenever they would leave the bracket.

use std::collections::HashMap;

use crate::error::{Error, Result, check_parameter};
use crate::quantity::{Amount, Volume};
use crate::reagent::Reagent;
use crate::recipe::Recipe;
use crate::solve::Solver;
use crate::system::{Conditions, System};

use super::titration::{Cursor, Titration, dph_along};

/// pH agreement at which a root is accepted.
const PH_TOL: f64 = 1e-10;

/// Finds x in [lo, hi] with f(x) = target, where `f` returns (value, derivative) and is
/// monotone. `None` when the target lies outside [f(lo), f(hi)]. Safeguarded Newton: a step
/// that leaves the bracket, or a zero or non-finite derivative, is replaced by bisection.
pub(crate) fn monotone_root(
    mut f: impl FnMut(f64) -> Result<(f64, f64)>,
    target: f64,
    lo: f64,
    hi: f64,
) -> Result<Option<f64>> {
    let (flo, dlo) = f(lo)?;
    if (flo - target).abs() <= PH_TOL {
        return Ok(Some(lo));
    }
    let (fhi, dhi) = f(hi)?;
    if (fhi - target).abs() <= PH_TOL {
        return Ok(Some(hi));
    }
    let (glo, ghi) = (flo - target, fhi - target);
    if glo.signum() == ghi.signum() {
        return Ok(None);
    }
    // Keep a < b with g(a) and g(b) of opposite signs.
    let (mut a, mut b, mut ga) = (lo, hi, glo);
    // Start from the end nearer the target.
    let (mut x, mut g, mut d) = if glo.abs() < ghi.abs() {
        (lo, glo, dlo)
    } else {
        (hi, ghi, dhi)
    };
    for _ in 0..200 {
        let newton = x - g / d;
        let mut next = if d != 0.0 && newton.is_finite() && newton > a && newton < b {
            newton
        } else {
            0.5 * (a + b)
        };
        if next == x {
            next = 0.5 * (a + b);
        }
        let (fv, dv) = f(next)?;
        x = next;
        g = fv - target;
        d = dv;
        if g.abs() <= PH_TOL || (b - a) <= 4.0 * f64::EPSILON * b.abs().max(a.abs()).max(f64::MIN_POSITIVE) {
            return Ok(Some(x));
        }
        if g.signum() == ga.signum() {
            a = x;
            ga = g;
        } else {
            b = x;
        }
    }
    Ok(Some(x))
}

fn check_target(ph: f64) -> Result<f64> {
    check_parameter("target", "pH", ph, -4.0, 20.0, "must be finite and within -4..20")
}

fn not_reached(ph: f64, reason: &'static str) -> Error {
    Error::InvalidParameter {
        what: "target".into(),
        parameter: "pH",
        value: ph,
        reason,
    }
}

impl Titration {
    /// The titrant volume, between zero and `max_volume`, after which the pH equals
    /// `target_ph` (the curve is monotone for an acid titrated with a base or the reverse).
    ///
    /// Errors: a target outside −4..20 or not reached within `max_volume`.
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
    /// let v = t.volume_for_ph(8.0, Volume::milliliters(50.0))?;
    /// // pH 8 lies just before the equivalence point at 25 mL.
    /// assert!(v.milliliters_value() > 24.5 && v.milliliters_value() < 25.0);
    /// assert!((t.ph_at(v)? - 8.0).abs() < 1e-8);
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn volume_for_ph(&self, target_ph: f64, max_volume: Volume) -> Result<Volume> {
        let target = check_target(target_ph)?;
        let vmax = max_volume.positive("largest titrant volume")?;
        let mut c = Cursor::new(self);
        let mut last = None;
        let root = monotone_root(
            |v| {
                let eq = c.solve(v, last.as_ref())?;
                let d = c.dph_dv(&eq)?;
                let ph = eq.ph();
                last = Some(eq);
                Ok((ph, d))
            },
            target,
            0.0,
            vmax,
        )?;
        root.map(Volume::liters).ok_or_else(|| {
            not_reached(
                target_ph,
                "not reached between zero and the largest titrant volume given",
            )
        })
    }
}

/// The amount of `reagent`, between zero and `max_amount` (in the unit of `max_amount`), to
/// add to `recipe` so that its pH at `conditions` equals `target_ph`.
///
/// Errors: a target outside −4..20, a zero or invalid `max_amount`, or a target not reached
/// within it.
///
/// ```
/// use protolyte::analysis::amount_for_ph;
/// use protolyte::{Amount, Catalog, Conditions, Recipe};
///
/// let cat = Catalog::builtin();
/// let mut r = Recipe::new();
/// r.add(&cat.reagent("acetic acid")?, Amount::molar(0.1))?;
/// let naoh = cat.reagent("sodium hydroxide")?;
/// let a = amount_for_ph(&r, &naoh, &Conditions::default(), 4.6, Amount::molar(0.1))?;
/// // Close to half-neutralisation (pKa 4.76 less the activity correction).
/// assert!(a.value() > 0.04 && a.value() < 0.06);
/// let mut check = r.clone();
/// check.add(&naoh, a)?;
/// assert!((check.compile(&Conditions::default())?.solve()?.ph() - 4.6).abs() < 1e-8);
/// # Ok::<(), protolyte::Error>(())
/// ```
pub fn amount_for_ph(
    recipe: &Recipe,
    reagent: &Reagent,
    conditions: &Conditions,
    target_ph: f64,
    max_amount: Amount,
) -> Result<Amount> {
    let target = check_target(target_ph)?;
    let (amax, unit) = search_bound(reagent, max_amount)?;
    // A water entered with a fixed DIC or alkalinity: the dose raises those constraints (see
    // `Recipe::add_dose`), which the one-system search below would leave where they were. The
    // dose search also refuses a recipe that holds its pH.
    if recipe.constraints().iter().any(|c| {
        matches!(
            c,
            crate::Constraint::Dic(_) | crate::Constraint::Alkalinity(_) | crate::Constraint::Ph(_)
        )
    }) {
        return crate::analysis::water::dose_for_target(
            recipe,
            reagent,
            conditions,
            &crate::analysis::water::DoseTarget::Ph(target),
            max_amount,
        );
    }
    // One system with the components of both; totals = base + x · per-unit.
    let mut both = recipe.clone();
    both.add(reagent, max_amount)?;
    let mut sys = both.compile(conditions)?;
    let base = totals_by_name(&recipe.compile(conditions)?);
    let mut alone = Recipe::new();
    alone.add(reagent, max_amount)?;
    let per = totals_by_name(&alone.compile(conditions)?);
    let nc = sys.components().len();
    let mut t0 = vec![0.0; nc];
    let mut dt = vec![0.0; nc];
    for (c, comp) in sys.components().iter().enumerate().skip(1) {
        t0[c] = base.get(&*comp.name).copied().unwrap_or(0.0);
        dt[c] = per.get(&*comp.name).copied().unwrap_or(0.0) / amax;
    }
    let solver = Solver::default();
    let mut last = None;
    let root = monotone_root(
        |x| {
            retotal(&mut sys, &t0, &dt, x)?;
            let eq = match &last {
                Some(p) => solver.solve_from(&sys, p)?,
                None => solver.solve(&sys)?,
            };
            let d = dph_along(&sys, &eq, &dt)?;
            let ph = eq.ph();
            last = Some(eq);
            Ok((ph, d))
        },
        target,
        0.0,
        amax,
    )?;
    root.map(unit)
        .ok_or_else(|| not_reached(target_ph, "not reached between zero and the largest amount given"))
}

fn totals_by_name(sys: &System) -> HashMap<String, f64> {
    sys.components()
        .iter()
        .skip(1)
        .map(|c| (c.name.to_string(), c.total_molal))
        .collect()
}

fn retotal(sys: &mut System, t0: &[f64], dt: &[f64], x: f64) -> Result<()> {
    for c in 1..t0.len() {
        sys.set_total_molal(c, (t0[c] + x * dt[c]).max(0.0))?;
    }
    Ok(())
}

/// The upper end of a search for an amount of `reagent`: `max_amount` checked (valid and
/// positive), its value, and the constructor of an amount in the same unit.
pub(crate) fn search_bound(reagent: &Reagent, max_amount: Amount) -> Result<(f64, impl Fn(f64) -> Amount)> {
    max_amount.validate(reagent.name())?;
    let amax = max_amount.value();
    if amax <= 0.0 {
        return Err(Error::InvalidParameter {
            what: format!("largest amount of {}", reagent.name()),
            parameter: if matches!(max_amount, Amount::Molar(_)) {
                "amount (mol/L)"
            } else {
                "amount (mol/kg)"
            },
            value: amax,
            reason: "must be positive: the search runs from zero to it",
        });
    }
    let unit = move |x: f64| match max_amount {
        Amount::Molar(_) => Amount::molar(x),
        Amount::Molal(_) => Amount::molal(x),
    };
    Ok((amax, unit))
}
