//! Titration simulation: an analyte solution of volume V₀ receives titrant volume v; every
//! total is diluted exactly, T(v) = (T_analyte·V₀ + T_titrant·v)/(V₀ + v) (volumes additive,
//! the dilute-solution assumption of [`Recipe::mix`]), and each point is solved warm-started
//! from the previous one. dpH/dv is analytic: Σ_c (∂pH/∂T_c)·(dT_c/dv) with
//! dT_c/dv = (T_titrant,c − T_c(v))/(V₀ + v).

use crate::equilibrium::Equilibrium;
use crate::error::{Error, Result};
use crate::quantity::Volume;
use crate::recipe::Recipe;
use crate::sensitivity::Parameter;
use crate::solve::Solver;
use crate::system::{Conditions, System};

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

/// One point of a titration curve.
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

impl Titration {
    /// A titration of `analyte_volume` of `analyte` with `titrant`, both at `conditions`.
    pub fn new(analyte: &Recipe, analyte_volume: Volume, titrant: &Recipe, conditions: &Conditions) -> Result<Self> {
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
                .map(|c| part.component_index(&c.name).map(|i| part.components()[i].total_molal).unwrap_or(0.0))
                .collect()
        };
        Ok(Titration {
            analyte_totals: totals(&a),
            titrant_totals: totals(&t),
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

    /// The system after `v` of titrant: every total diluted exactly.
    pub fn system_at(&self, v: Volume) -> Result<System> {
        let v = crate::error::check_amount("titrant volume", v.liters_value(), "L")?;
        let mut sys = self.system.clone();
        let v0 = self.analyte_volume_l;
        for c in 1..sys.components().len() {
            let t = (self.analyte_totals[c] * v0 + self.titrant_totals[c] * v) / (v0 + v);
            sys.set_total_molal(c, t)?;
        }
        Ok(sys)
    }

    /// The point after `v` of titrant, warm-started from `previous` when given.
    pub fn point(&self, v: Volume, previous: Option<&Equilibrium>) -> Result<TitrationPoint> {
        let sys = self.system_at(v)?;
        let eq = match previous {
            Some(p) => self.solver.solve_from(&sys, p)?,
            None => self.solver.solve(&sys)?,
        };
        let dph_dv_per_l = self.dph_dv(&sys, &eq, v.liters_value())?;
        Ok(TitrationPoint {
            volume_ml: v.milliliters_value(),
            ph: eq.ph(),
            dph_dv_per_ml: dph_dv_per_l * 1e-3,
            equilibrium: eq,
        })
    }

    /// dpH/dv (per litre of titrant) at volume `v_l` litres, from the sensitivities.
    pub(crate) fn dph_dv(&self, sys: &System, eq: &Equilibrium, v_l: f64) -> Result<f64> {
        let sens = eq.sensitivities(sys)?;
        let v0 = self.analyte_volume_l;
        let mut d = 0.0;
        for c in 1..sys.components().len() {
            let t = sys.components()[c].total_molal;
            let dt = (self.titrant_totals[c] - t) / (v0 + v_l);
            if dt != 0.0 {
                d += sens.dph(Parameter::Total(c)) * dt;
            }
        }
        if d.is_finite() {
            Ok(d)
        } else {
            Err(Error::NoConvergence {
                path: "sensitivity",
                iterations: 0,
                max_residual: f64::INFINITY,
                worst_equation: "dpH/dv is not finite".into(),
                last_ph: eq.ph(),
            })
        }
    }

    /// The curve at the given volumes (any order; each point warm-starts from the previous).
    pub fn curve(&self, volumes: &[Volume]) -> Result<Vec<TitrationPoint>> {
        let mut out: Vec<TitrationPoint> = Vec::with_capacity(volumes.len());
        for &v in volumes {
            let p = self.point(v, out.last().map(|p| &p.equilibrium))?;
            out.push(p);
        }
        Ok(out)
    }
}
