//! Fitting measured titrations: from (volume, pH) pairs, estimate chosen unknowns — analyte
//! and titrant concentrations, pKa values, an electrode offset — by least squares.
//!
//! The minimiser is Levenberg–Marquardt (K. Levenberg, *Q. Appl. Math.* 2 (1944) 164;
//! D. W. Marquardt, *J. SIAM* 11 (1963) 431): each step solves
//! (JᵀJ + λ·diag JᵀJ) δ = Jᵀr with nalgebra's Cholesky factorisation, and λ falls after a
//! step that lowers the sum of squares and rises after one that does not. The Jacobian is
//! analytic: ∂pH/∂total and ∂pH/∂pKa come from the [`Sensitivities`](crate::Sensitivities) of each point, and
//! the chain rule through the exact dilution gives ∂T_c(v)/∂(analyte total) = V₀/(V₀ + v)
//! and ∂T_c(v)/∂(titrant total) = v/(V₀ + v).
//!
//! Standard errors and correlations come from s²·(JᵀJ)⁻¹ at the minimum, with
//! s² = Σr²/(N − p): the usual linearised estimate, good when the residuals are independent
//! with one common spread and the model is close to linear over a few standard errors.
//!
//! Several curves can be fitted together: an unknown is either shared by every curve (a
//! pKa, the titrant concentration of one bottle) or belongs to one curve (the analyte of
//! that sample).

use nalgebra::{DMatrix, DVector};

use crate::analysis::titration::Titration;
use crate::equilibrium::Equilibrium;
use crate::error::{Error, Result};
use crate::quantity::Volume;
use crate::sensitivity::Parameter;
use crate::solve::Solver;
use crate::system::System;

/// Something to estimate.
///
/// # Example
///
/// ```
/// use protolyte::analysis::Unknown;
///
/// assert_eq!(Unknown::pka("acetate", 0).describe(), "pKa1 of acetate");
/// assert_eq!(Unknown::AnalyteTotal("acetate".into()).describe(), "analyte total of acetate (mol/L)");
/// ```
#[derive(Debug, Clone, PartialEq)]
pub enum Unknown {
    /// The analyte's total of the component named here (a family such as "acetate", or an
    /// ion such as "chloride" for a strong acid), mol/L.
    AnalyteTotal(String),
    /// The titrant's total of the component named here (for example "sodium" for a sodium
    /// hydroxide titrant), mol/L.
    TitrantTotal(String),
    /// Stepwise pKa `step` (0-based, most protonated first) of the family named `family`, at
    /// the titration's temperature (thermodynamic, on the activity model's scale).
    Pka {
        /// Family name.
        family: String,
        /// Dissociation step, 0-based.
        step: usize,
    },
    /// An offset added to the model pH (measured = model + offset): the electrode's
    /// calibration error.
    ElectrodeOffset,
}

impl Unknown {
    /// [`Unknown::Pka`] of `family`, step `step`.
    pub fn pka(family: &str, step: usize) -> Self {
        Unknown::Pka {
            family: family.to_string(),
            step,
        }
    }

    /// A short description.
    pub fn describe(&self) -> String {
        match self {
            Unknown::AnalyteTotal(c) => format!("analyte total of {c} (mol/L)"),
            Unknown::TitrantTotal(c) => format!("titrant total of {c} (mol/L)"),
            Unknown::Pka { family, step } => format!("pKa{} of {family}", step + 1),
            Unknown::ElectrodeOffset => "electrode offset (pH)".into(),
        }
    }
}

/// Which curves an unknown belongs to.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Scope {
    /// One value shared by every curve that has the thing (a curve without it is left alone).
    Shared,
    /// A value of its own for the curve with this index (as returned by
    /// [`TitrationFit::add_curve`]).
    Curve(usize),
}

/// One estimated unknown.
#[derive(Debug, Clone, PartialEq)]
pub struct Estimate {
    /// What was estimated.
    pub unknown: Unknown,
    /// Which curves it belongs to.
    pub scope: Scope,
    /// The starting value.
    pub start: f64,
    /// The estimate.
    pub value: f64,
    /// Its standard error, s·√((JᵀJ)⁻¹)ᵢᵢ.
    pub standard_error: f64,
}

/// The result of [`TitrationFit::run`].
#[derive(Debug, Clone, PartialEq)]
pub struct FitReport {
    /// The estimates, in the order the unknowns were declared.
    pub estimates: Vec<Estimate>,
    /// Correlation matrix of the estimates (same order).
    pub correlation: DMatrix<f64>,
    /// measured − model pH, per curve and point.
    pub residuals: Vec<Vec<f64>>,
    /// s = √(Σr²/(N − p)), pH units.
    pub residual_sd: f64,
    /// N − p.
    pub degrees_of_freedom: usize,
    /// Levenberg–Marquardt iterations (accepted steps).
    pub iterations: usize,
    /// True when the iteration stopped on a small step or a vanishing gradient rather than
    /// on the iteration budget.
    pub converged: bool,
}

/// Two estimates whose correlation exceeds this in magnitude carry a warning: their standard
/// errors then mean little, since the data fix only a combination of the two (common
/// practice).
pub const CORRELATION_WARNING: f64 = 0.99;

impl FitReport {
    /// The pairs of estimates (indices in declaration order, i < j) whose correlation
    /// exceeds `threshold` in magnitude, with the correlation.
    ///
    /// ```
    /// use nalgebra::DMatrix;
    /// use protolyte::analysis::{Estimate, FitReport, Scope, Unknown};
    /// use protolyte::analysis::fit::CORRELATION_WARNING;
    ///
    /// let e = |u: Unknown| Estimate { unknown: u, scope: Scope::Shared, start: 0.0, value: 0.0, standard_error: 0.1 };
    /// let report = FitReport {
    ///     estimates: vec![e(Unknown::pka("acetate", 0)), e(Unknown::ElectrodeOffset)],
    ///     correlation: DMatrix::from_row_slice(2, 2, &[1.0, -0.995, -0.995, 1.0]),
    ///     residuals: vec![], residual_sd: 0.005, degrees_of_freedom: 10, iterations: 4, converged: true,
    /// };
    /// assert_eq!(report.correlated_pairs(CORRELATION_WARNING), vec![(0, 1, -0.995)]);
    /// assert_eq!(report.warnings().len(), 1);
    /// ```
    pub fn correlated_pairs(&self, threshold: f64) -> Vec<(usize, usize, f64)> {
        let p = self
            .estimates
            .len()
            .min(self.correlation.nrows())
            .min(self.correlation.ncols());
        let mut out = Vec::new();
        for i in 0..p {
            for j in i + 1..p {
                let r = self.correlation[(i, j)];
                if r.is_finite() && r.abs() > threshold {
                    out.push((i, j, r));
                }
            }
        }
        out
    }

    /// Sentences about the fit a reader must know: each pair of estimates correlated beyond
    /// [`CORRELATION_WARNING`].
    pub fn warnings(&self) -> Vec<String> {
        self.correlated_pairs(CORRELATION_WARNING)
            .into_iter()
            .map(|(i, j, r)| {
                format!(
                    "{} and {} correlate (r = {r:+.4}): the data fix only a combination of the two, so their standard errors mean little; fix one of them or add data that separate them",
                    self.estimates[i].unknown.describe(),
                    self.estimates[j].unknown.describe()
                )
            })
            .collect()
    }

    /// The estimate of `unknown` (the first one declared, whatever its scope).
    pub fn estimate(&self, unknown: &Unknown) -> Option<&Estimate> {
        self.estimates.iter().find(|e| &e.unknown == unknown)
    }

    /// The covariance matrix of the estimates, s²·(JᵀJ)⁻¹ (standard errors times
    /// correlations), in declaration order: what to hand on to an uncertainty propagation.
    ///
    /// ```
    /// use nalgebra::DMatrix;
    /// use protolyte::analysis::{Estimate, FitReport, Scope, Unknown};
    ///
    /// let e = |u: Unknown, se: f64| Estimate { unknown: u, scope: Scope::Shared, start: 0.0, value: 0.0, standard_error: se };
    /// let report = FitReport {
    ///     estimates: vec![e(Unknown::pka("acetate", 0), 0.01), e(Unknown::ElectrodeOffset, 0.002)],
    ///     correlation: DMatrix::from_row_slice(2, 2, &[1.0, -0.5, -0.5, 1.0]),
    ///     residuals: vec![],
    ///     residual_sd: 0.005,
    ///     degrees_of_freedom: 10,
    ///     iterations: 4,
    ///     converged: true,
    /// };
    /// let cov = report.covariance();
    /// assert!((cov[(0, 1)] + 0.5 * 0.01 * 0.002).abs() < 1e-15);
    /// ```
    pub fn covariance(&self) -> DMatrix<f64> {
        let p = self.estimates.len();
        DMatrix::from_fn(p, p, |i, j| {
            let c = self
                .correlation
                .get((i, j))
                .copied()
                .unwrap_or(if i == j { 1.0 } else { 0.0 });
            c * self.estimates[i].standard_error * self.estimates[j].standard_error
        })
    }
}

#[derive(Debug, Clone)]
struct Curve {
    base: System,
    v0: f64,
    analyte: Vec<f64>,
    titrant: Vec<f64>,
    rho: f64,
    volumes_l: Vec<f64>,
    ph: Vec<f64>,
}

/// How an unknown acts on one curve.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Action {
    Analyte(usize),
    Titrant(usize),
    Pka(usize, usize),
    Offset,
}

/// A least-squares fit of one or more measured titration curves.
///
/// # Example
///
/// ```
/// use protolyte::analysis::{Scope, Titration, TitrationFit, Unknown};
/// use protolyte::{Amount, Catalog, Conditions, Recipe, Volume};
///
/// let cat = Catalog::builtin();
/// // The model as the analyst believes it: 0.01 mol/L acetic acid, 0.1 mol/L NaOH.
/// let mut acid = Recipe::new();
/// acid.add(&cat.reagent("acetic acid")?, Amount::molar(0.010))?;
/// let mut base = Recipe::new();
/// base.add(&cat.reagent("sodium hydroxide")?, Amount::molar(0.1))?;
/// let model = Titration::new(&acid, Volume::milliliters(20.0), &base, &Conditions::default())?;
///
/// // "Measured" data: the same titration with 0.012 mol/L acid.
/// let mut truth_acid = Recipe::new();
/// truth_acid.add(&cat.reagent("acetic acid")?, Amount::molar(0.012))?;
/// let truth = Titration::new(&truth_acid, Volume::milliliters(20.0), &base, &Conditions::default())?;
/// let data: Vec<(Volume, f64)> = (1..=20)
///     .map(|i| Volume::milliliters(0.2 * i as f64))
///     .map(|v| truth.point(v, None).map(|p| (v, p.ph)))
///     .collect::<Result<_, _>>()?;
///
/// let mut fit = TitrationFit::new();
/// let k = fit.add_curve(model, &data)?;
/// fit.estimate(Unknown::AnalyteTotal("acetate".into()), Scope::Curve(k))?;
/// let report = fit.run()?;
/// assert!(report.converged);
/// assert!((report.estimates[0].value - 0.012).abs() < 1e-8);
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone)]
pub struct TitrationFit {
    curves: Vec<Curve>,
    unknowns: Vec<(Unknown, Scope, Option<f64>)>,
    max_iterations: usize,
    solver: Solver,
}

impl Default for TitrationFit {
    fn default() -> Self {
        TitrationFit {
            curves: Vec::new(),
            unknowns: Vec::new(),
            max_iterations: 100,
            solver: Solver::default(),
        }
    }
}

fn bad(reason: String) -> Error {
    Error::InconsistentDefinition {
        name: "titration fit".into(),
        reason,
    }
}

impl TitrationFit {
    /// An empty fit.
    pub fn new() -> Self {
        TitrationFit::default()
    }

    /// Sets the iteration budget (default 100). Refuses (`Error::InvalidParameter`) 0 and a
    /// budget above [`MAX_FIT_ITERATIONS`](crate::limits::MAX_FIT_ITERATIONS).
    ///
    /// ```
    /// use protolyte::analysis::TitrationFit;
    /// assert!(TitrationFit::new().max_iterations(500).is_ok());
    /// assert!(TitrationFit::new().max_iterations(0).is_err());
    /// assert!(TitrationFit::new().max_iterations(usize::MAX).is_err());
    /// ```
    pub fn max_iterations(mut self, n: usize) -> Result<Self> {
        crate::error::check_parameter(
            "titration fit",
            "iteration budget",
            n as f64,
            1.0,
            crate::limits::MAX_FIT_ITERATIONS as f64,
            "must be within 1..=MAX_FIT_ITERATIONS (10,000)",
        )?;
        self.max_iterations = n;
        Ok(self)
    }

    /// Adds a measured curve: `titration` is the model (its recipes give the starting values
    /// and every quantity that is not estimated), `measured` the (titrant volume, pH) pairs.
    /// Returns the curve's index. Refuses an empty curve, a negative or non-finite volume and
    /// a non-finite pH.
    pub fn add_curve(&mut self, titration: Titration, measured: &[(Volume, f64)]) -> Result<usize> {
        if measured.is_empty() {
            return Err(bad("a curve needs at least one measured point".into()));
        }
        let mut volumes_l = Vec::with_capacity(measured.len());
        let mut ph = Vec::with_capacity(measured.len());
        for (i, (v, p)) in measured.iter().enumerate() {
            volumes_l.push(crate::error::check_amount(
                &format!("measured volume {i}"),
                v.liters_value(),
                "L",
            )?);
            crate::error::check_parameter(
                &format!("measured point {i}"),
                "pH",
                *p,
                -5.0,
                20.0,
                "must be finite, within -5..20",
            )?;
            ph.push(*p);
        }
        let base = titration.system().clone();
        self.curves.push(Curve {
            rho: base.water_density_kg_per_l(),
            v0: titration.analyte_volume().liters_value(),
            analyte: titration.analyte_totals_molal().to_vec(),
            titrant: titration.titrant_totals_molal().to_vec(),
            base,
            volumes_l,
            ph,
        });
        Ok(self.curves.len() - 1)
    }

    /// Declares an unknown, started from the model's own value (0 for the electrode offset).
    pub fn estimate(&mut self, unknown: Unknown, scope: Scope) -> Result<&mut Self> {
        self.declare(unknown, scope, None)
    }

    /// Declares an unknown with a starting value of your own.
    pub fn estimate_from(&mut self, unknown: Unknown, scope: Scope, start: f64) -> Result<&mut Self> {
        crate::error::check_parameter(
            &unknown.describe(),
            "starting value",
            start,
            -1e6,
            1e6,
            "must be finite",
        )?;
        self.declare(unknown, scope, Some(start))
    }

    fn declare(&mut self, unknown: Unknown, scope: Scope, start: Option<f64>) -> Result<&mut Self> {
        if let Scope::Curve(k) = scope
            && k >= self.curves.len()
        {
            return Err(bad(format!("curve {k} does not exist (add the curve first)")));
        }
        if self
            .unknowns
            .iter()
            .any(|(u, s, _)| u == &unknown && (*s == scope || *s == Scope::Shared || scope == Scope::Shared))
        {
            return Err(bad(format!(
                "{} is declared twice for the same curve",
                unknown.describe()
            )));
        }
        self.unknowns.push((unknown, scope, start));
        Ok(self)
    }

    /// The action of `unknown` on curve `k`, or None when the curve lacks it.
    fn action(&self, unknown: &Unknown, k: usize) -> Option<Action> {
        let c = &self.curves[k];
        match unknown {
            Unknown::AnalyteTotal(name) => c.base.component_index(name).filter(|&i| i > 0).map(Action::Analyte),
            Unknown::TitrantTotal(name) => c.base.component_index(name).filter(|&i| i > 0).map(Action::Titrant),
            Unknown::Pka { family, step } => {
                let f = c.base.families().iter().position(|f| f.protolyte.name() == family)?;
                c.base.pka(f, *step).map(|_| Action::Pka(f, *step))
            }
            Unknown::ElectrodeOffset => Some(Action::Offset),
        }
    }

    /// For an unknown that none of `curves` has, the one they do have whose name is closest
    /// to its name (by the library's one "did you mean" search), described as the unknown
    /// would be. None when the name itself is there (a pKa step the family lacks) or nothing
    /// is close.
    fn suggestion(&self, unknown: &Unknown, curves: &[usize]) -> Option<String> {
        let (name, rebuilt): (&str, fn(String) -> Unknown) = match unknown {
            Unknown::AnalyteTotal(c) => (c, Unknown::AnalyteTotal),
            Unknown::TitrantTotal(c) => (c, Unknown::TitrantTotal),
            Unknown::Pka { family, .. } => (family, |f| Unknown::Pka { family: f, step: 0 }),
            Unknown::ElectrodeOffset => return None,
        };
        let names: Vec<&str> = curves
            .iter()
            .flat_map(|&k| {
                let sys = &self.curves[k].base;
                let names: Box<dyn Iterator<Item = &str>> = match unknown {
                    // Every component but H⁺ (component 0), which no total can be fitted for.
                    Unknown::AnalyteTotal(_) | Unknown::TitrantTotal(_) => {
                        Box::new(sys.components().iter().skip(1).map(|c| &*c.name))
                    }
                    _ => Box::new(sys.families().iter().map(|f| f.protolyte.name())),
                };
                names
            })
            .collect();
        if names.contains(&name) {
            return None;
        }
        let found = crate::data::suggestion(name, names.iter().map(|&n| (n, n)))?;
        let mut suggested = rebuilt(found);
        if let (Unknown::Pka { step, .. }, Unknown::Pka { step: s, .. }) = (unknown, &mut suggested) {
            *s = *step;
        }
        Some(suggested.describe())
    }

    fn model_value(&self, a: Action, k: usize) -> f64 {
        let c = &self.curves[k];
        match a {
            Action::Analyte(i) => c.analyte[i] * c.rho,
            Action::Titrant(i) => c.titrant[i] * c.rho,
            Action::Pka(f, s) => c.base.pka(f, s).unwrap_or(0.0),
            Action::Offset => 0.0,
        }
    }

    /// Runs the fit.
    pub fn run(&self) -> Result<FitReport> {
        crate::error::check_parameter(
            "titration fit",
            "iteration budget",
            self.max_iterations as f64,
            1.0,
            crate::limits::MAX_FIT_ITERATIONS as f64,
            "must be at most MAX_FIT_ITERATIONS (10,000)",
        )?;
        if self.curves.is_empty() {
            return Err(bad("no measured curve was added".into()));
        }
        if self.unknowns.is_empty() {
            return Err(bad("no unknown was declared".into()));
        }
        // Bindings: for every unknown, the curves it acts on and how.
        let mut bindings: Vec<Vec<(usize, Action)>> = Vec::new();
        let mut start = Vec::new();
        for (u, scope, s0) in &self.unknowns {
            let curves: Vec<usize> = match scope {
                Scope::Shared => (0..self.curves.len()).collect(),
                Scope::Curve(k) => vec![*k],
            };
            let b: Vec<(usize, Action)> = curves
                .iter()
                .filter_map(|&k| self.action(u, k).map(|a| (k, a)))
                .collect();
            let Some(&(k0, a0)) = b.first() else {
                return Err(Error::UnknownName {
                    kind: "fit unknown (no curve has it)",
                    name: u.describe(),
                    suggestion: self.suggestion(u, &curves),
                });
            };
            start.push(s0.unwrap_or_else(|| self.model_value(a0, k0)));
            bindings.push(b);
        }
        let n_points: usize = self.curves.iter().map(|c| c.ph.len()).sum();
        let p = start.len();
        if n_points <= p {
            return Err(bad(format!(
                "{n_points} measured points cannot determine {p} unknowns (more points than unknowns are needed)"
            )));
        }
        let mut work = Work {
            fit: self,
            bindings: &bindings,
            warm: self.curves.iter().map(|c| vec![None; c.ph.len()]).collect(),
        };
        let theta0 = DVector::from_vec(start.clone());
        if let Some(j) = work.invalid(&theta0) {
            return Err(bad(format!(
                "the starting value {} of {} is out of range",
                theta0[j],
                self.unknowns[j].0.describe()
            )));
        }
        let (mut r, mut jac) = work.evaluate(&theta0)?;
        let mut theta = theta0;
        let mut ssr = r.norm_squared();
        let mut iterations = 0;
        let mut converged = false;
        // Damping D = diag(JᵀJ), each entry the largest met so far (J. J. Moré, "The
        // Levenberg–Marquardt algorithm: implementation and theory", Lecture Notes in
        // Mathematics 630 (1978) 105, eq. 6.3): where a point on the steep part of the curve
        // falls onto a plateau, its column of J shrinks and a damping that followed it would
        // let the step in that unknown leap across the break and back.
        let mut damping: Vec<f64> = vec![0.0; p];
        // λ relative to D, raised and lowered by the gain ratio ρ = actual / predicted drop
        // of the sum of squares (K. Madsen, H. B. Nielsen and O. Tingleff, *Methods for
        // Non-linear Least Squares Problems*, 2nd ed., IMM DTU 2004, sec. 3.2, eq. 3.15 and
        // algorithm 3.16): after a step with ρ near 0 λ rises, so a step that only just
        // lowered the sum is not followed by the same over-long one.
        let mut lambda = 1e-3;
        let mut nu = 2.0;
        while iterations < self.max_iterations {
            let a = jac.transpose() * &jac;
            let g = jac.transpose() * &r;
            // Gradient test, scale-invariant: the cosine between r and each column of J.
            let small_gradient = (0..p).all(|i| g[i].abs() <= 1e-10 * (a[(i, i)] * ssr).sqrt() + 1e-300);
            if small_gradient || ssr == 0.0 {
                converged = true;
                break;
            }
            for (i, d) in damping.iter_mut().enumerate() {
                *d = d.max(a[(i, i)]);
            }
            let dmax = damping.iter().copied().fold(0.0, f64::max);
            let mut accepted = false;
            while lambda < 1e12 {
                let mut m = a.clone();
                for i in 0..p {
                    m[(i, i)] += lambda * damping[i].max(1e-12 * dmax).max(1e-300);
                }
                let Some(ch) = m.cholesky() else {
                    lambda *= nu;
                    nu *= 2.0;
                    continue;
                };
                let delta = ch.solve(&g);
                let trial = &theta + &delta;
                let reject = |lambda: &mut f64, nu: &mut f64| {
                    *lambda *= *nu;
                    *nu *= 2.0;
                };
                if delta.iter().any(|d| !d.is_finite()) || work.invalid(&trial).is_some() {
                    reject(&mut lambda, &mut nu);
                    continue;
                }
                // Predicted drop of the linear model: |r|² − |r − Jδ|² = 2δᵀg − |Jδ|².
                let predicted = 2.0 * delta.dot(&g) - (&jac * &delta).norm_squared();
                match work.evaluate(&trial) {
                    Ok((r2, j2)) if r2.norm_squared() < ssr => {
                        let s2 = r2.norm_squared();
                        let rho = (ssr - s2) / predicted.max(f64::MIN_POSITIVE);
                        // Step test in the scaled unknowns (Moré 1978, sec. 8): |D½δ| against |D½θ|.
                        let scaled = |v: &DVector<f64>| (0..p).map(|i| damping[i] * v[i] * v[i]).sum::<f64>().sqrt();
                        let small_step = scaled(&delta) <= 1e-9 * scaled(&theta);
                        // Relative drop test (Moré 1978, sec. 8): both the actual and the
                        // predicted drop below 1e-14 of the sum of squares.
                        let small_drop = ssr - s2 <= 1e-14 * ssr && predicted <= 1e-14 * ssr;
                        theta = trial;
                        r = r2;
                        jac = j2;
                        ssr = s2;
                        lambda = (lambda * (1.0f64 / 3.0).max(1.0 - (2.0 * rho - 1.0).powi(3))).max(1e-12);
                        nu = 2.0;
                        accepted = true;
                        if small_step || small_drop {
                            converged = true;
                        }
                        break;
                    }
                    _ => reject(&mut lambda, &mut nu),
                }
            }
            if !accepted {
                // No step lowers the sum of squares: a minimum to working precision.
                converged = true;
                break;
            }
            iterations += 1;
            if converged {
                break;
            }
        }
        self.report(&work, theta, start, r, &jac, iterations, converged)
    }

    #[allow(clippy::too_many_arguments)]
    fn report(
        &self,
        work: &Work,
        theta: DVector<f64>,
        start: Vec<f64>,
        r: DVector<f64>,
        jac: &DMatrix<f64>,
        iterations: usize,
        converged: bool,
    ) -> Result<FitReport> {
        let p = theta.len();
        let n = r.len();
        let a = jac.transpose() * jac;
        for j in 0..p {
            if a[(j, j)] <= 0.0 {
                return Err(bad(format!(
                    "the data do not depend on {}: it cannot be estimated",
                    self.unknowns[j].0.describe()
                )));
            }
        }
        // Scale to unit diagonal before inverting (the unknowns differ by orders of magnitude).
        let d: Vec<f64> = (0..p).map(|j| a[(j, j)].sqrt()).collect();
        let scaled = DMatrix::from_fn(p, p, |i, j| a[(i, j)] / (d[i] * d[j]));
        let inv_scaled = scaled
            .cholesky()
            .map(|c| c.inverse())
            .filter(|m| m.iter().all(|v| v.is_finite()) && (0..p).all(|i| m[(i, i)] > 0.0 && m[(i, i)] < 1e12))
            .ok_or_else(|| {
                bad(format!(
                    "the unknowns {} cannot be told apart by these data (their Jacobian columns are collinear)",
                    self.unknowns
                        .iter()
                        .map(|u| u.0.describe())
                        .collect::<Vec<_>>()
                        .join(", ")
                ))
            })?;
        let dof = n - p;
        let s2 = r.norm_squared() / dof as f64;
        let estimates = (0..p)
            .map(|j| Estimate {
                unknown: self.unknowns[j].0.clone(),
                scope: self.unknowns[j].1,
                start: start[j],
                value: theta[j],
                standard_error: (s2 * inv_scaled[(j, j)]).sqrt() / d[j],
            })
            .collect();
        let correlation = DMatrix::from_fn(p, p, |i, j| {
            inv_scaled[(i, j)] / (inv_scaled[(i, i)] * inv_scaled[(j, j)]).sqrt()
        });
        let mut residuals = Vec::new();
        let mut at = 0;
        for c in &work.fit.curves {
            residuals.push(r.as_slice()[at..at + c.ph.len()].to_vec());
            at += c.ph.len();
        }
        Ok(FitReport {
            estimates,
            correlation,
            residuals,
            residual_sd: s2.sqrt(),
            degrees_of_freedom: dof,
            iterations,
            converged,
        })
    }
}

/// The state of one run: bindings and warm starts.
struct Work<'a> {
    fit: &'a TitrationFit,
    bindings: &'a [Vec<(usize, Action)>],
    warm: Vec<Vec<Option<Equilibrium>>>,
}

impl Work<'_> {
    /// The first unknown whose value is out of its range.
    fn invalid(&self, theta: &DVector<f64>) -> Option<usize> {
        (0..theta.len()).find(|&j| {
            let v = theta[j];
            !v.is_finite()
                || self.bindings[j].iter().any(|&(_, a)| match a {
                    Action::Analyte(_) | Action::Titrant(_) => v <= 0.0 || v >= 100.0,
                    Action::Pka(..) => !(-10.0..=25.0).contains(&v),
                    Action::Offset => v.abs() > 5.0,
                })
        })
    }

    /// Residuals (measured − model) and the Jacobian of the model pH by the unknowns.
    fn evaluate(&mut self, theta: &DVector<f64>) -> Result<(DVector<f64>, DMatrix<f64>)> {
        let fit = self.fit;
        let n: usize = fit.curves.iter().map(|c| c.ph.len()).sum();
        let p = theta.len();
        let mut r = DVector::zeros(n);
        let mut jac = DMatrix::zeros(n, p);
        let mut row = 0;
        for (k, c) in fit.curves.iter().enumerate() {
            let mut sys = c.base.clone();
            let mut analyte = c.analyte.clone();
            let mut titrant = c.titrant.clone();
            let mut offset = 0.0;
            // The unknowns acting on this curve: (unknown index, action).
            let mut acts: Vec<(usize, Action)> = Vec::new();
            for (j, b) in self.bindings.iter().enumerate() {
                for &(kk, a) in b {
                    if kk != k {
                        continue;
                    }
                    acts.push((j, a));
                    match a {
                        Action::Analyte(i) => analyte[i] = theta[j] / c.rho,
                        Action::Titrant(i) => titrant[i] = theta[j] / c.rho,
                        Action::Pka(f, s) => sys.set_pka(f, s, theta[j])?,
                        Action::Offset => offset += theta[j],
                    }
                }
            }
            for (pt, (&v, &measured)) in c.volumes_l.iter().zip(&c.ph).enumerate() {
                let w = v / (c.v0 + v);
                for i in 1..sys.components().len() {
                    sys.set_total_molal(i, (1.0 - w) * analyte[i] + w * titrant[i])?;
                }
                let before = if pt > 0 { self.warm[k][pt - 1].as_ref() } else { None };
                let warm = self.warm[k][pt].as_ref().or(before);
                let eq = match warm {
                    Some(e) => fit.solver.solve_from(&sys, e)?,
                    None => fit.solver.solve(&sys)?,
                };
                let sens = eq.sensitivities(&sys)?;
                r[row] = measured - (eq.ph() + offset);
                for &(j, a) in &acts {
                    let d = match a {
                        Action::Analyte(i) => sens.dph(Parameter::Total(i)).unwrap_or(0.0) * (1.0 - w) / c.rho,
                        Action::Titrant(i) => sens.dph(Parameter::Total(i)).unwrap_or(0.0) * w / c.rho,
                        Action::Pka(f, s) => sens.dph_dpka(f, s).unwrap_or(0.0),
                        Action::Offset => 1.0,
                    };
                    jac[(row, j)] += d;
                }
                row += 1;
                self.warm[k][pt] = Some(eq);
            }
        }
        if r.iter().chain(jac.iter()).all(|v| v.is_finite()) {
            Ok((r, jac))
        } else {
            Err(Error::NoConvergence {
                path: "fit",
                iterations: 0,
                max_residual: f64::INFINITY,
                worst_equation: "a non-finite model pH or derivative".into(),
                last_ph: 7.0,
            })
        }
    }
}
