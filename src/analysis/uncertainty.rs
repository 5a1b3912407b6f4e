//! Uncertainty propagation: standard deviations (optionally correlated) of pKa values,
//! formation constants and amounts → standard deviation of the pH and of every species'
//! log₁₀ molality, to first order through the analytic [`Sensitivities`].
//!
//! With g the gradient of a result by the inputs and Σ their covariance matrix
//! (Σᵢⱼ = σᵢ·σⱼ·rᵢⱼ), the variance of the result is gᵀΣg: the linear ("law of propagation
//! of uncertainty") approach of the *Guide to the Expression of Uncertainty in
//! Measurement* (JCGM 100:2008, sec. 5). It is good while the result is close to linear in
//! the inputs over a few standard deviations, which holds for pH in buffered solutions and
//! fails near a steep endpoint; check with a Monte Carlo run where in doubt.

use std::sync::Arc;

use nalgebra::{DMatrix, DVector};

use crate::equilibrium::Equilibrium;
use crate::error::{Error, Result, check_parameter};
use crate::sensitivity::{Parameter, Sensitivities};
use crate::system::System;

/// An uncertain input of a system.
///
/// # Example
///
/// ```
/// use protolyte::analysis::Input;
///
/// assert_eq!(Input::pka("phosphate", 1).describe(), "pKa2 of phosphate");
/// assert_eq!(Input::total("sodium"), Input::Total { component: "sodium".into() });
/// ```
#[derive(Debug, Clone, PartialEq)]
pub enum Input {
    /// The stepwise pKa of step `step` (0-based, most protonated first) of the family named
    /// `family`, at the system's temperature.
    Pka {
        /// Family name, as in [`System::families`].
        family: String,
        /// Dissociation step, 0-based.
        step: usize,
    },
    /// The total of the component named `component`, mol/kg.
    Total {
        /// Component name (a family or an ion), as in [`System::components`].
        component: String,
    },
    /// log₁₀ K of the species named `species` (for example a complex).
    Log10K {
        /// Species name, as in [`System::species`].
        species: String,
    },
    /// Strong base added (mol/kg of a monovalent inert cation with OH⁻; a negative change is
    /// strong acid): the uncertainty of the acid–base balance itself, for example of the
    /// titrant delivered.
    StrongBase,
}

impl Input {
    /// [`Input::Pka`] of `family`, step `step`.
    pub fn pka(family: &str, step: usize) -> Self {
        Input::Pka {
            family: family.to_string(),
            step,
        }
    }

    /// [`Input::Total`] of `component`.
    pub fn total(component: &str) -> Self {
        Input::Total {
            component: component.to_string(),
        }
    }

    /// [`Input::Log10K`] of `species`.
    pub fn log10_k(species: &str) -> Self {
        Input::Log10K {
            species: species.to_string(),
        }
    }

    /// A short description ("pKa1 of acetate", "total of sodium", ...).
    pub fn describe(&self) -> String {
        match self {
            Input::Pka { family, step } => format!("pKa{} of {family}", step + 1),
            Input::Total { component } => format!("total of {component}"),
            Input::Log10K { species } => format!("log K of {species}"),
            Input::StrongBase => "strong base added".into(),
        }
    }
}

/// Where an [`Input`] lives in a compiled system.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum Resolved {
    Pka { family: usize, step: usize },
    Param(Parameter),
}

impl Resolved {
    /// Resolves `input` in `system`, naming it in the error when it is absent.
    pub(crate) fn of(system: &System, input: &Input) -> Result<Self> {
        // The closest name of the system's own families, components or species, if close.
        let missing = |kind: &'static str, name: &str, names: &mut dyn Iterator<Item = &str>| Error::UnknownName {
            kind,
            name: name.to_string(),
            suggestion: crate::data::suggestion(name, names.map(|n| (n, n))),
        };
        match input {
            Input::Pka { family, step } => {
                let f = system
                    .families()
                    .iter()
                    .position(|f| f.protolyte.name() == family)
                    .ok_or_else(|| {
                        let names = &mut system.families().iter().map(|f| f.protolyte.name());
                        missing("family in this system", family, names)
                    })?;
                if system.pka(f, *step).is_none() {
                    return Err(Error::InconsistentDefinition {
                        name: family.clone(),
                        reason: format!("it has no dissociation step {} (steps are 0-based)", step),
                    });
                }
                Ok(Resolved::Pka { family: f, step: *step })
            }
            Input::Total { component } => match system.component_index(component) {
                Some(c) if c > 0 => Ok(Resolved::Param(Parameter::Total(c))),
                _ => Err(missing(
                    "component in this system",
                    component,
                    &mut system.components().iter().skip(1).map(|c| &*c.name),
                )),
            },
            Input::Log10K { species } => match system.species_index(species) {
                Some(s) if s > 0 => Ok(Resolved::Param(Parameter::Log10K(s))),
                _ => Err(missing(
                    "species in this system",
                    species,
                    &mut system.species().iter().skip(1).map(|s| &*s.name),
                )),
            },
            Input::StrongBase => Ok(Resolved::Param(Parameter::StrongBase)),
        }
    }

    /// d pH / d input.
    pub(crate) fn dph(self, sens: &Sensitivities) -> f64 {
        match self {
            Resolved::Pka { family, step } => sens.dph_dpka(family, step).unwrap_or(0.0),
            Resolved::Param(p) => sens.dph(p).unwrap_or(0.0),
        }
    }

    /// d log₁₀ m(species) / d input.
    pub(crate) fn dlog10_molal(self, system: &System, sens: &Sensitivities, species: usize) -> f64 {
        match self {
            Resolved::Pka { family, step } => {
                // pKa of step i enters log β_j of every form with j ≥ n − i protons.
                let forms = &system.families()[family].forms;
                let n = forms.len() - 1;
                (n - step..=n)
                    .map(|j| sens.dlog10_molal(species, Parameter::Log10K(forms[j])).unwrap_or(0.0))
                    .sum()
            }
            Resolved::Param(p) => sens.dlog10_molal(species, p).unwrap_or(0.0),
        }
    }
}

/// A set of uncertain inputs: standard deviations and, optionally, correlations.
///
/// # Example
///
/// ```
/// use protolyte::analysis::{Input, Propagation};
/// use protolyte::{Amount, Catalog, Conditions, Recipe};
///
/// let cat = Catalog::builtin();
/// let mut r = Recipe::new();
/// r.add(&cat.reagent("acetic acid")?, Amount::millimolar(50.0))?
///  .add(&cat.reagent("sodium acetate")?, Amount::millimolar(50.0))?;
/// let sys = r.compile(&Conditions::default())?;
/// let eq = sys.solve()?;
///
/// let mut p = Propagation::new();
/// p.add(Input::pka("acetate", 0), 0.01)?      // pKa known to ±0.01
///  .add(Input::total("sodium"), 0.5e-3)?;     // sodium acetate weighed to ±1 %
/// let u = p.propagate(&sys, &eq)?;
/// // An equimolar buffer follows its pKa one for one.
/// assert!((u.ph_gradient[0] - 1.0).abs() < 0.02);
/// assert!(u.ph_sd > 0.01 && u.ph_sd < 0.02);
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone, Default)]
pub struct Propagation {
    inputs: Vec<(Input, f64)>,
    /// Correlations set by [`Propagation::correlate`]: (i, j, r) with i < j.
    correlations: Vec<(usize, usize, f64)>,
}

/// The uncertainty of one species' log₁₀ molality.
#[derive(Debug, Clone, PartialEq)]
pub struct SpeciesUncertainty {
    /// Species name.
    pub name: Arc<str>,
    /// Index in the system's species.
    pub index: usize,
    /// log₁₀ of its molality (mol/kg) at the equilibrium.
    pub log10_molal: f64,
    /// Standard deviation of log₁₀ molality.
    pub log10_molal_sd: f64,
}

/// The result of [`Propagation::propagate`].
#[derive(Debug, Clone, PartialEq)]
pub struct PropagatedUncertainty {
    /// pH at the equilibrium.
    pub ph: f64,
    /// Standard deviation of the pH.
    pub ph_sd: f64,
    /// d pH / d input, in the order the inputs were added.
    pub ph_gradient: Vec<f64>,
    /// Each input's share of the pH variance, gᵢ(Σg)ᵢ / gᵀΣg, in input order. The shares sum
    /// to 1; a negative share means the input's correlations cancel part of the others'.
    /// All zero when the variance is zero.
    pub ph_variance_shares: Vec<f64>,
    /// Every species with a positive molality.
    pub species: Vec<SpeciesUncertainty>,
}

impl PropagatedUncertainty {
    /// The standard deviation of log₁₀ molality of the species named `name` (a name written
    /// in the former charge notation, "HPO42-" for "HPO4^2-", finds it too).
    pub fn log10_molal_sd(&self, name: &str) -> Option<f64> {
        (self.species.iter().find(|s| &*s.name == name))
            .or_else(|| (self.species.iter()).find(|s| crate::protolyte::species_name_eq(&s.name, name)))
            .map(|s| s.log10_molal_sd)
    }
}

impl Propagation {
    /// No inputs yet.
    pub fn new() -> Self {
        Propagation::default()
    }

    /// Adds `input` with standard deviation `sd` (in the input's own unit: pKa units, log K
    /// units or mol/kg). Refuses a negative or non-finite `sd`.
    pub fn add(&mut self, input: Input, sd: f64) -> Result<&mut Self> {
        check_parameter(
            &input.describe(),
            "standard deviation",
            sd,
            0.0,
            f64::MAX,
            "must be finite and not negative",
        )?;
        self.inputs.push((input, sd));
        Ok(self)
    }

    /// Sets the correlation coefficient of inputs `i` and `j` (0-based, in the order added).
    /// Refuses i = j, an index out of range and |r| > 1.
    pub fn correlate(&mut self, i: usize, j: usize, r: f64) -> Result<&mut Self> {
        let n = self.inputs.len();
        if i == j || i >= n || j >= n {
            return Err(Error::InconsistentDefinition {
                name: "correlation".into(),
                reason: format!("inputs {i} and {j} must be two different inputs among the {n} added"),
            });
        }
        check_parameter("correlation", "coefficient", r, -1.0, 1.0, "must lie within -1..1")?;
        let (a, b) = (i.min(j), i.max(j));
        self.correlations.retain(|&(x, y, _)| (x, y) != (a, b));
        self.correlations.push((a, b, r));
        Ok(self)
    }

    /// The inputs with their standard deviations, in the order added.
    pub fn inputs(&self) -> &[(Input, f64)] {
        &self.inputs
    }

    /// The covariance matrix of the inputs. Refuses a correlation structure that is not
    /// positive semi-definite (no set of real inputs could have it).
    pub fn covariance(&self) -> Result<DMatrix<f64>> {
        let n = self.inputs.len();
        let mut r = DMatrix::<f64>::identity(n, n);
        for &(i, j, c) in &self.correlations {
            r[(i, j)] = c;
            r[(j, i)] = c;
        }
        if !self.correlations.is_empty() {
            let min = r
                .clone()
                .symmetric_eigenvalues()
                .iter()
                .copied()
                .fold(f64::INFINITY, f64::min);
            if min.is_nan() || min < -1e-10 {
                return Err(Error::InconsistentDefinition {
                    name: "correlation".into(),
                    reason: format!(
                        "the correlation matrix is not positive semi-definite (smallest eigenvalue {min:.3e})"
                    ),
                });
            }
        }
        let sd = DVector::from_iterator(n, self.inputs.iter().map(|x| x.1));
        Ok(DMatrix::from_fn(n, n, |i, j| sd[i] * sd[j] * r[(i, j)]))
    }

    /// Propagates the input uncertainties to `eq`, a solution of `system`.
    pub fn propagate(&self, system: &System, eq: &Equilibrium) -> Result<PropagatedUncertainty> {
        let resolved: Vec<Resolved> = self
            .inputs
            .iter()
            .map(|(i, _)| Resolved::of(system, i))
            .collect::<Result<_>>()?;
        let sens = eq.sensitivities(system)?;
        let cov = self.covariance()?;
        let n = resolved.len();
        let g = DVector::from_iterator(n, resolved.iter().map(|r| r.dph(&sens)));
        let sg = &cov * &g;
        let var = g.dot(&sg).max(0.0);
        let shares = (0..n)
            .map(|i| if var > 0.0 { g[i] * sg[i] / var } else { 0.0 })
            .collect();
        let mut species = Vec::new();
        for (s, st) in eq.species().iter().enumerate() {
            if st.molal <= 0.0 || !st.molal.is_finite() {
                continue;
            }
            let gs = DVector::from_iterator(n, resolved.iter().map(|r| r.dlog10_molal(system, &sens, s)));
            let v = gs.dot(&(&cov * &gs)).max(0.0);
            species.push(SpeciesUncertainty {
                name: st.name.clone(),
                index: s,
                log10_molal: st.molal.log10(),
                log10_molal_sd: v.sqrt(),
            });
        }
        let out = PropagatedUncertainty {
            ph: eq.ph(),
            ph_sd: var.sqrt(),
            ph_gradient: g.iter().copied().collect(),
            ph_variance_shares: shares,
            species,
        };
        let finite = out.ph_sd.is_finite()
            && out.ph_gradient.iter().all(|v| v.is_finite())
            && out
                .species
                .iter()
                .all(|s| s.log10_molal_sd.is_finite() && s.log10_molal.is_finite());
        if finite {
            Ok(out)
        } else {
            Err(Error::NoConvergence {
                path: "uncertainty",
                iterations: 0,
                max_residual: f64::INFINITY,
                worst_equation: "a non-finite derivative".into(),
                last_ph: eq.ph(),
            })
        }
    }
}
