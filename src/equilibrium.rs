//! The result of a solve: pH, every species with its activity, family distributions,
//! residuals and warnings.

use std::sync::{Arc, OnceLock};

use crate::activity::sit::Interactions;
use crate::activity::{ActivityModel, PhConvention};
use crate::error::{Error, Result};
use crate::limits::{MAX_TOTAL_MOLAL, MIN_TOTAL_MOLAL, RESIDUAL_PROMISE, TESTED_MAX_TOTAL_MOLAR};
use crate::phase::{GasState, Pressure, RowKind, SUPERSATURATION_TOLERANCE, SolidState};
use crate::quantity::Temperature;
use crate::solve::{Evaluation, Point, Solver, SolverPath};
use crate::system::System;
use crate::system::layout::ResultLayout;
use crate::warning::Warning;

const LN10: f64 = std::f64::consts::LN_10;

/// One species at equilibrium.
#[derive(Debug, Clone, PartialEq)]
pub struct SpeciesState {
    /// Display name.
    pub name: Arc<str>,
    /// Charge number.
    pub charge: i32,
    /// Concentration, mol/kg of water.
    pub molal: f64,
    /// Concentration, mol/L (molal × water density; dilute-solution approximation).
    pub molar: f64,
    /// Activity coefficient γ (molal scale).
    pub gamma: f64,
    /// Activity, γ·m/(1 mol/kg).
    pub activity: f64,
}

/// The distribution of one acid–base family.
#[derive(Debug, Clone, PartialEq)]
pub struct FamilyState {
    /// Family name.
    pub name: Arc<str>,
    /// Total, mol/kg.
    pub total_molal: f64,
    /// Fraction of the total in each free form, indexed by bound protons (alpha fractions).
    /// For a family with zero total, the fractions it would have at this pH and ionic
    /// strength.
    pub fractions: Vec<f64>,
    /// Fraction of the total bound in complexes (0 without complexes).
    pub complexed_fraction: f64,
    /// Mean number of protons bound per free (uncomplexed) family unit.
    pub mean_bound_protons: f64,
}

/// Residuals of the equations at the returned point.
#[derive(Debug, Clone, PartialEq)]
pub struct Residuals {
    /// Σ z·m, mol/kg.
    pub charge_molal: f64,
    /// Σ z·m divided by Σ |z|·m.
    pub charge_relative: f64,
    /// (Σ ν·m − total)/total for each component with a positive total: (name, value).
    pub mass_relative: Vec<(Arc<str>, f64)>,
    /// (½ Σ z²·m − I)/I.
    pub ionic_strength_relative: f64,
    /// The residual of the activity-coefficient iteration where γ depends on the composition
    /// (SIT): the largest change of any ln γ between the composition γ was taken at and the
    /// returned one. 0 for models whose γ depends on I only.
    pub activity_coefficients_ln: f64,
    /// The residual of each phase relation the solve held as an equality, by relation:
    /// `partial pressure of G` (ln of the partial pressure over the fixed one, the relative
    /// error for small values), `pH` (ln a(H⁺) minus the fixed value's), `saturation of S` for
    /// each solid present (ln of its saturation ratio, SI·ln 10) and, where an ion closes the
    /// charge balance beside a fixed pH, `charge balance closed on X` (the H⁺ still taken to
    /// hold the pH, relative to Σ |z|·m). Empty without phase constraints.
    pub phases: Vec<(Arc<str>, f64)>,
}

impl Residuals {
    /// The largest relative residual of the charge and mass balances (the ionic-strength
    /// equation left out; see [`Residuals::max_relative`] for every equation).
    pub fn max_balance_relative(&self) -> f64 {
        self.mass_relative
            .iter()
            .map(|(_, v)| v.abs())
            .fold(self.charge_relative.abs(), f64::max)
    }

    /// The largest relative residual over every equation solved: the charge balance, each
    /// mass balance, the ionic-strength equation (0 under the ideal model, where the
    /// ionic strength is reported as the species give it) and, for a model whose γ depends
    /// on the composition (SIT), the activity-coefficient iteration, and each phase relation
    /// held as an equality ([`phases`](Self::phases)). This is the number the residual
    /// promise is about: at most [`RESIDUAL_PROMISE`](crate::limits::RESIDUAL_PROMISE) (or
    /// the solver's tolerance, if set looser) for every returned result, else the result
    /// carries [`Warning::ResidualAbovePromise`].
    pub fn max_relative(&self) -> f64 {
        self.phases.iter().fold(
            self.max_balance_relative()
                .max(self.ionic_strength_relative.abs())
                .max(self.activity_coefficients_ln.abs()),
            |m, (_, v)| m.max(v.abs()),
        )
    }
}

/// One of the equations whose residual is reported.
#[derive(Debug, Clone, Copy)]
enum Equation {
    Charge,
    Mass(usize),
    IonicStrength,
    ActivityCoefficients,
    /// A phase relation held as an equality (index into the result's phase residuals).
    Phase(usize),
}

impl Equation {
    /// The equation's name, as the residual warning gives it.
    fn name(self, components: &[Arc<str>], phases: &[(Arc<str>, f64)]) -> String {
        match self {
            Equation::Phase(k) => phases[k].0.to_string(),
            Equation::Charge => "charge balance".to_string(),
            Equation::Mass(c) => format!("mass balance of {}", components[c]),
            Equation::IonicStrength => "ionic-strength equation".into(),
            Equation::ActivityCoefficients => "activity-coefficient iteration".into(),
        }
    }
}

/// The equilibrium state of a solution.
///
/// A solve keeps the species molalities and activity coefficients and the numbers derived
/// from them (family fractions, balances); the per-species and per-family records
/// ([`species`](Self::species), [`families`](Self::families), [`free_molal`](Self::free_molal),
/// [`residuals`](Self::residuals), [`dissolved_totals`](Self::dissolved_totals)) are
/// assembled from them on first access and kept, so a caller that reads only the pH does not
/// pay for them.
///
/// # Example
///
/// ```
/// use protolyte::{ActivityModel, Amount, Catalog, Conditions, Recipe, Temperature};
///
/// let cat = Catalog::builtin();
/// let mut r = Recipe::new();
/// r.add(&cat.reagent("acetic acid")?, Amount::molar(0.1))?;
/// let eq = r.compile(&Conditions::new(Temperature::celsius(25.0), ActivityModel::Ideal))?.solve()?;
/// assert!((eq.ph() - 2.88).abs() < 0.01);
/// let acetate = eq.family("acetate").unwrap();
/// assert!((acetate.fractions.iter().sum::<f64>() - 1.0).abs() < 1e-12);
/// assert!(eq.residuals().max_relative() < 1e-10);
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Clone)]
pub struct Equilibrium {
    ph: f64,
    ionic_strength_molal: f64,
    temperature: Temperature,
    model: ActivityModel,
    ph_convention: PhConvention,
    /// The names and shapes shared with the system (one reference count per result).
    layout: Arc<ResultLayout>,
    water_density: f64,
    /// Every number of the result in one buffer: the molality of each species, then ln γ of
    /// each species, then the derived numbers (the
    /// fractions of every family's forms, family after family as
    /// [`ResultLayout::family_start`]; per family (total, complexed fraction, mean bound
    /// protons); per component (active: 1 or 0, dissolved total, free molality, relative mass
    /// residual)), then the unknowns (ln a of each component).
    data: Vec<f64>,
    charge_molal: f64,
    charge_relative: f64,
    ionic_strength_relative: f64,
    activity_coefficients_ln: f64,
    iterations: usize,
    path: SolverPath,
    warnings: Vec<Warning>,
    ln_i: f64,
    /// What the result says about the other phases and the measured quantities.
    phases: PhaseReport,
    /// Whether the system held phase constraints (then the saturation and gas states are in
    /// `phases`, else in the records).
    phased: bool,
    /// The records assembled from the numbers on first access.
    records: OnceLock<Box<Records>>,
    /// The saturation and gas states of a system without phase constraints (its rows are
    /// only reported), made on first access (with phase constraints they are in `phases`).
    reported: OnceLock<Box<PhaseStates>>,
}

/// The records of a result, assembled on first access.
#[derive(Debug, Clone, PartialEq)]
struct Records {
    species: Vec<SpeciesState>,
    families: Vec<FamilyState>,
    free_molal: Vec<(Arc<str>, f64)>,
    dissolved_totals: Vec<(Arc<str>, f64)>,
    residuals: Residuals,
    total_alkalinity_molal: f64,
    carbonate_alkalinity_molal: f64,
    dic_molal: f64,
}

/// The phase part of a result.
#[derive(Debug, Clone, PartialEq)]
struct PhaseReport {
    solids: Vec<SolidState>,
    gases: Vec<GasState>,
    proton_uptake_molal: f64,
    charge_balance_ion: Option<(Arc<str>, f64)>,
    /// The residual of each phase relation held as an equality (see [`Residuals::phases`]).
    residuals: Vec<(Arc<str>, f64)>,
}

/// The records of a system's phase rows at a solution: saturation states, gas states, the H⁺
/// taken up to hold a fixed pH or alkalinity and the ion closing the charge balance.
#[derive(Debug, Clone, PartialEq, Default)]
struct PhaseStates {
    solids: Vec<SolidState>,
    gases: Vec<GasState>,
    proton_uptake_molal: f64,
    charge_balance_ion: Option<(Arc<str>, f64)>,
}

impl PhaseStates {
    /// The records of `rows` at the component log activities `y`, with `amount(w)` in row w.
    fn of(rows: &[crate::phase::PhaseRow], y: &[f64], amount: &dyn Fn(usize) -> f64) -> Self {
        let mut out = PhaseStates::default();
        for (w, row) in rows.iter().enumerate() {
            let lambda = amount(w);
            let ln_q = row.ln_q(y);
            if !ln_q.is_finite() && !row.is_amount() {
                continue;
            }
            match row.kind {
                RowKind::Solid { allowed } => out.solids.push(SolidState {
                    name: row.name.clone(),
                    saturation_index: ln_q / LN10,
                    log10_iap: (ln_q + row.ln_k) / LN10,
                    log10_k: row.ln_k / LN10,
                    allowed,
                    amount_molal: lambda,
                }),
                RowKind::Gas { fixed } => out.gases.push(GasState {
                    name: row.name.clone(),
                    partial_pressure: Pressure::bar_value(ln_q.exp()),
                    fixed: fixed.is_some(),
                    taken_up_molal: -lambda,
                }),
                RowKind::Ph { .. } | RowKind::Alkalinity { .. } => out.proton_uptake_molal = -lambda,
                RowKind::Closure => out.charge_balance_ion = Some((row.name.clone(), -lambda)),
            }
        }
        out
    }
}

impl Equilibrium {
    pub(crate) fn build(
        sys: &System,
        point: Point,
        ev: Evaluation,
        iterations: usize,
        path: SolverPath,
        tolerance: f64,
    ) -> Result<Self> {
        // Charge balance, its scale and the ionic strength, over every species; in the same
        // pass, whether each species' molality, γ and activity are finite (γ only computed
        // where it might overflow).
        let (mut charge, mut charge_scale, mut ionic) = (0.0, 0.0, 0.0);
        let mut species_finite = true;
        for ((&m, &lg), &z) in ev.conc.iter().zip(&ev.ln_gamma).zip(&sys.charge_f) {
            charge += z * m;
            charge_scale += z.abs() * m;
            ionic += 0.5 * z * z * m;
            species_finite &= (m.is_finite() && m.abs() <= 1e150 && lg.abs() <= 300.0) || {
                let g = lg.exp();
                m.is_finite() && g.is_finite() && (g * m).is_finite()
            };
        }
        // Under the ideal model I is a by-product: reported as the species give it.
        let ideal = sys.model == ActivityModel::Ideal;
        let i = if ideal { ionic } else { point.ln_i.exp() };
        let rho = sys.water_density;
        let p_h_activity = -point.y[0] / LN10;
        // The solver's pH range (both paths bracket ln a(H⁺) there): a solution outside it
        // is refused rather than returned from one path and not the other.
        if p_h_activity.is_finite() && !(-4.0 - 1e-9..=20.0 + 1e-9).contains(&p_h_activity) {
            return Err(Error::OutOfDomain {
                what: "pH of the solution",
                value: p_h_activity,
                domain: "-4..20 (the solver's range)",
            });
        }
        let sit_chloride = if sys.ph_convention == PhConvention::BatesGuggenheim && sys.model == ActivityModel::Sit {
            Interactions::trace_log10_term(
                "Cl-",
                -1,
                sys.species
                    .iter()
                    .zip(&ev.conc)
                    .map(|(sp, &m)| (&*sp.name, sp.charge, m)),
            )
        } else {
            0.0
        };
        let ph =
            p_h_activity + crate::activity::ph_convention_shift(sys.ph_convention, sys.model, i, &sys.dh, sit_chloride);
        let h = ev.conc[0];
        let oh = ev.ln_gamma[1].exp() * ev.conc[1];
        let nc = sys.components.len();
        let layout = &sys.layout;
        let (fam_at, comp_at) = (layout.family_numbers(), layout.component_numbers());
        let ns = sys.species.len();
        let mut data = Vec::with_capacity(2 * ns + layout.numbers_len() + nc);
        data.extend_from_slice(&ev.conc);
        data.extend_from_slice(&ev.ln_gamma);
        data.resize(2 * ns + layout.numbers_len(), 0.0);
        let numbers = &mut data[2 * ns..];
        // What a result must decide here is decided here (the refusal of a bad solution, the
        // residuals of every equation, the warnings); the numbers only read from it (dissolved
        // totals without phases, alkalinities, the fractions of families with a positive
        // total) are derived on first access (`Equilibrium::assemble`), each in one pass over
        // the species.
        let aqueous = |c: usize| comp_at + 4 * c + 1;
        let phased = sys.has_phase_constraints();
        // With phases the dissolved totals are outputs that the checks below bound.
        if phased {
            layout.add_dissolved_totals(&ev.conc, numbers);
        }
        // Σ ν·m over the complexes (coupling species) of each component, summed in species
        // order, for the mass balances below.
        let mut coupled = vec![0.0; if sys.coupled_species.is_empty() { 0 } else { nc }];
        for &s in &sys.coupled_species {
            let m = ev.conc[s];
            for &(c, v) in &sys.terms[sys.term_start[s]..sys.term_start[s + 1]] {
                coupled[c] += v * m;
            }
        }
        // The amount in each phase row (none solved for: all zero).
        let solved = ev.phase_amounts.len() == sys.phases.len();
        let amount = |w: usize| if solved { ev.phase_amounts[w] } else { 0.0 };
        let mut families_finite = true;
        for (fi, fam) in sys.families.iter().enumerate() {
            // With phases the total in solution is an output (gas exchange, solids).
            let total = if phased {
                numbers[aqueous(fam.component)]
            } else {
                sys.components[fam.component].total_molal
            };
            numbers[fam_at + 3 * fi] = total;
            // A positive total: the fractions m/total, the complexed fraction and the mean
            // bound protons are derived on first access; they are finite where the molalities
            // and the family's mass balance are (each form's fraction is at most 1 plus the
            // relative residual), which the refusal below checks.
            if total > 0.0 {
                continue;
            }
            // The distribution this family would have: weights exp(ln K + j L − ln γ).
            let fr = &mut numbers[layout.family_start[fi]..layout.family_start[fi + 1]];
            for (&s, f) in fam.forms.iter().zip(fr.iter_mut()) {
                *f = sys.ln_k[s] + sys.nu[s * nc] * point.y[0] - ev.ln_gamma[s];
            }
            let umax = fr.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
            for f in fr.iter_mut() {
                *f = (*f - umax).exp();
            }
            let sum: f64 = fr.iter().sum();
            for f in fr.iter_mut() {
                *f /= sum;
            }
            let mean = fr.iter().enumerate().map(|(j, a)| j as f64 * a).sum();
            families_finite &= fr.iter().all(|v| v.is_finite()) && f64::is_finite(mean);
            numbers[fam_at + 3 * fi + 1..fam_at + 3 * fi + 3].copy_from_slice(&[0.0, mean]);
        }
        // Mass in the other phases (solids formed, gas exchanged, acid or base of a fixed pH).
        let kept = if solved && !sys.phases.is_empty() { nc } else { 0 };
        let mut elsewhere = vec![0.0; kept];
        let mut elsewhere_scale = vec![0.0; kept];
        let mut charge_elsewhere = 0.0;
        for (w, row) in sys.phases.iter().enumerate() {
            let lambda = amount(w);
            if lambda != 0.0 {
                for &(c, v) in &row.terms {
                    elsewhere[c] += lambda * v;
                    elsewhere_scale[c] += (lambda * v).abs();
                }
                charge_elsewhere += lambda * row.charge;
            }
        }
        // The worst mass balance (component, |residual|), the first of equal ones.
        let mut worst_mass: Option<(usize, f64)> = None;
        let mut mass_finite = true;
        for (ci, c) in sys.components.iter().enumerate().skip(1) {
            if sys.component_active(ci) {
                let at = comp_at + 4 * ci;
                numbers[at] = 1.0;
                numbers[at + 2] = sys.free_species[ci].map(|s| ev.conc[s]).unwrap_or(0.0);
                // Σ ν·m over the species holding component ci: its uncoupled members and
                // any complex that contains it.
                let held: f64 =
                    sys.members[ci].iter().map(|&s| ev.conc[s]).sum::<f64>() + coupled.get(ci).copied().unwrap_or(0.0);
                let scale = if c.total_molal > 0.0 {
                    c.total_molal
                } else {
                    sys.members[ci].iter().map(|&s| ev.conc[s]).sum::<f64>()
                        + elsewhere_scale.get(ci).copied().unwrap_or(0.0)
                };
                let r = (held + elsewhere.get(ci).copied().unwrap_or(0.0) - c.total_molal) / scale;
                let r = if r.is_nan() { 0.0 } else { r };
                numbers[at + 3] = r;
                mass_finite &= r.is_finite();
                if worst_mass.is_none_or(|(_, w)| r.abs() > w) {
                    worst_mass = Some((ci, r.abs()));
                }
            }
        }
        let charge = charge + charge_elsewhere;
        // What a phase brings in is bounded like what is put in: a dissolved total above
        // MAX_TOTAL_MOLAL (a gas or a closing ion supplying it without end), or acid or base
        // beyond it taken to hold a fixed pH, is refused, naming the constraints.
        if phased && solved {
            for (ci, comp) in sys.components.iter().enumerate().skip(1) {
                let dissolved = numbers[aqueous(ci)];
                if dissolved > MAX_TOTAL_MOLAL {
                    return Err(Error::AmountTooLarge {
                        what: format!("dissolved {} from {}", comp.name, sources(sys, ci, &amount)),
                        value: dissolved,
                        unit: "mol/kg",
                        limit: MAX_TOTAL_MOLAL,
                    });
                }
            }
            for (w, row) in sys.phases.iter().enumerate() {
                if let RowKind::Ph { ln_a_h } = row.kind
                    && amount(w).abs() > MAX_TOTAL_MOLAL
                {
                    return Err(Error::AmountTooLarge {
                        what: format!(
                            "{} taken to hold the pH fixed at {}",
                            if amount(w) > 0.0 { "base" } else { "acid" },
                            crate::phase::fixed_ph_text(ln_a_h)
                        ),
                        value: amount(w).abs(),
                        unit: "mol/kg",
                        limit: MAX_TOTAL_MOLAL,
                    });
                }
            }
        }
        // Saturation indices, partial pressures, the acid or base of a fixed pH; a solid
        // beyond the supersaturation tolerance warns (in the order of the rows). Without
        // phase constraints the rows are only reported (no amounts): their records are
        // assembled on first access, and only the warning is decided here.
        let mut warnings = sys.compile_warnings.clone();
        let report = if phased {
            PhaseStates::of(&sys.phases, &point.y, &amount)
        } else {
            PhaseStates::default()
        };
        for row in &sys.phases {
            if let RowKind::Solid { .. } = row.kind {
                let ln_q = row.ln_q(&point.y);
                let saturation_index = ln_q / LN10;
                if ln_q.is_finite() && saturation_index > SUPERSATURATION_TOLERANCE {
                    warnings.push(Warning::Supersaturated {
                        solid: row.name.to_string(),
                        saturation_index,
                        tolerance: SUPERSATURATION_TOLERANCE,
                    });
                }
            }
        }
        let PhaseStates {
            solids,
            gases,
            proton_uptake_molal,
            charge_balance_ion,
        } = report;
        let charge_relative = if charge_scale > 0.0 { charge / charge_scale } else { 0.0 };
        // The phase relations held as equalities: a fixed partial pressure or pH, each solid
        // present, and the closing ion's condition (no H⁺ taken beside a fixed pH).
        let mut phase_residuals: Vec<(Arc<str>, f64)> = Vec::new();
        if solved {
            let closed_on = sys
                .phases
                .iter()
                .find(|r| matches!(r.kind, RowKind::Closure))
                .map(|r| r.name.clone());
            for (w, row) in sys.phases.iter().enumerate() {
                let (label, r): (Arc<str>, f64) = match row.kind {
                    RowKind::Gas { fixed: Some(lp) } => (
                        format!("partial pressure of {}", row.name).into(),
                        row.ln_q(&point.y) - lp,
                    ),
                    RowKind::Ph { ln_a_h } => {
                        if let Some(ion) = &closed_on {
                            let r = if charge_scale > 0.0 {
                                amount(w) / charge_scale
                            } else {
                                0.0
                            };
                            phase_residuals.push((format!("charge balance closed on {ion}").into(), r));
                        }
                        ("pH".into(), point.y[0] - ln_a_h)
                    }
                    RowKind::Solid { allowed: true } if amount(w) > 0.0 => {
                        (format!("saturation of {}", row.name).into(), row.ln_q(&point.y))
                    }
                    _ => continue,
                };
                phase_residuals.push((label, if r.is_nan() { f64::INFINITY } else { r }));
            }
        }
        let ionic_strength_relative = if ideal { 0.0 } else { (ionic - i) / i };
        let activity_coefficients_ln = ev.composition_change(sys);
        for (c, comp) in sys.components.iter().enumerate().skip(1) {
            if let Some(given) = sys.below_floor[c] {
                warnings.push(Warning::TotalBelowFloor {
                    component: comp.name.to_string(),
                    total_molal: given,
                    floor_molal: MIN_TOTAL_MOLAL,
                });
            }
            // With phases the dissolved total counts too (a gas or a closing ion can bring in
            // more than was put in).
            let dissolved = if phased && sys.component_active(c) {
                numbers[aqueous(c)]
            } else {
                0.0
            };
            let molar = comp.total_molal.max(dissolved) * rho;
            if molar > TESTED_MAX_TOTAL_MOLAR * (1.0 + 1e-12) {
                warnings.push(Warning::BeyondTestedDomain {
                    component: comp.name.to_string(),
                    total_molar: molar,
                    tested_molar: TESTED_MAX_TOTAL_MOLAR,
                });
            }
        }
        let promise = RESIDUAL_PROMISE.max(tolerance);
        // The equation with the largest relative residual (the first of equal ones, in the
        // order charge, mass balances, ionic strength, activity coefficients).
        let mut worst = (Equation::Charge, charge_relative.abs());
        if let Some((ci, r)) = worst_mass
            && r > worst.1
        {
            worst = (Equation::Mass(ci), r);
        }
        if ionic_strength_relative.abs() > worst.1 {
            worst = (Equation::IonicStrength, ionic_strength_relative.abs());
        }
        if activity_coefficients_ln.abs() > worst.1 {
            worst = (Equation::ActivityCoefficients, activity_coefficients_ln.abs());
        }
        for (k, (_, r)) in phase_residuals.iter().enumerate() {
            if r.abs() > worst.1 {
                worst = (Equation::Phase(k), r.abs());
            }
        }
        if worst.1 > promise {
            warnings.push(Warning::ResidualAbovePromise {
                equation: worst.0.name(&layout.component_names, &phase_residuals),
                residual: worst.1,
                promise,
            });
        }
        let limit = sys.model.validity_limit_molal();
        if i > limit {
            warnings.push(Warning::IonicStrengthBeyondModel {
                ionic_strength_molal: i,
                limit_molal: limit,
                model: sys.model,
            });
        }
        if let Some(limit) = sys.ph_convention.validity_limit_molal()
            && i > limit
        {
            warnings.push(Warning::PhConventionBeyondRange {
                convention: sys.ph_convention,
                ionic_strength_molal: i,
                limit_molal: limit,
            });
        }
        // SIT pairs without a tabulated ε, where the partner is abundant enough that a typical
        // ε (±0.1 kg/mol) would move log γ by 0.001 or more.
        for &(a, b) in &sys.interactions.unknown {
            let partner = ev.conc[a].max(ev.conc[b]);
            if partner >= 0.01 && ev.conc[a].min(ev.conc[b]) > 0.0 {
                warnings.push(Warning::UnknownInteraction {
                    cation: sys.species[a].name.to_string(),
                    anion: sys.species[b].name.to_string(),
                    partner_molal: partner,
                });
            }
        }
        // A NaN or infinity anywhere a caller would read it refuses the result: the species'
        // molality, γ and activity (checked in the first pass), the families' numbers and the
        // residuals.
        // p[H] and pOH (computed on access from the molalities and γ kept) are finite
        // exactly where m(H⁺) and a(OH⁻), finite by the check of the species, are positive.
        let finite = [ph, i].iter().all(|v| v.is_finite())
            && h > 0.0
            && oh > 0.0
            && species_finite
            && families_finite
            && charge_relative.is_finite()
            && ionic_strength_relative.is_finite()
            && mass_finite;
        if !finite {
            return Err(Error::NoConvergence {
                path: path.name(),
                iterations,
                max_residual: f64::INFINITY,
                worst_equation: "a non-finite value in the result".into(),
                last_ph: if ph.is_finite() { ph } else { 0.0 },
            });
        }
        data.extend_from_slice(&point.y);
        let Evaluation { conc, ln_gamma, .. } = ev;
        crate::solve::fast::recycle(conc, ln_gamma, point.y);
        Ok(Equilibrium {
            ph,
            ionic_strength_molal: i,
            temperature: sys.temperature,
            model: sys.model,
            ph_convention: sys.ph_convention,
            layout: Arc::clone(layout),
            water_density: rho,
            data,
            charge_molal: charge,
            charge_relative,
            ionic_strength_relative,
            activity_coefficients_ln,
            iterations,
            path,
            warnings,
            ln_i: point.ln_i,
            phased,
            phases: PhaseReport {
                solids,
                gases,
                proton_uptake_molal,
                charge_balance_ion,
                residuals: phase_residuals,
            },
            records: OnceLock::new(),
            reported: OnceLock::new(),
        })
    }

    /// The saturation and gas states of the rows a system without phase constraints reports
    /// (no amounts), made on first access.
    fn reported(&self) -> &PhaseStates {
        self.reported
            .get_or_init(|| Box::new(PhaseStates::of(&self.layout.phase_rows, self.unknowns(), &|_| 0.0)))
    }

    /// The per-species and per-family records, assembled on first access.
    fn records(&self) -> &Records {
        self.records.get_or_init(|| Box::new(self.assemble()))
    }

    fn assemble(&self) -> Records {
        let lay = &*self.layout;
        let rho = self.water_density;

        let species = (self.molal().iter().zip(self.ln_gamma()))
            .enumerate()
            .map(|(s, (&m, &lg))| {
                let g = lg.exp();
                SpeciesState {
                    name: lay.species_names[s].clone(),
                    charge: lay.species_charges[s],
                    molal: m,
                    molar: m * rho,
                    gamma: g,
                    activity: g * m,
                }
            })
            .collect();
        // The numbers `build` left to first access: the dissolved totals (recomputed with
        // phases, to the same values), the alkalinities and the fractions of the families
        // with a positive total.
        let molal = self.molal();
        let mut numbers = self.numbers().to_vec();
        let (fam_at, comp_at) = (lay.family_numbers(), lay.component_numbers());
        for n in numbers[comp_at..].chunks_exact_mut(4) {
            n[1] = 0.0;
        }
        lay.add_dissolved_totals(molal, &mut numbers);
        let total_alkalinity_molal = (lay.alkalinity.iter().zip(molal)).fold(0.0, |a, (&k, &m)| a + k * m);
        let carbonate_alkalinity_molal = (lay.carbonate_alkalinity.iter()).fold(0.0, |a, &(s, k)| a + k * molal[s]);
        for f in 0..lay.families() {
            let total = numbers[fam_at + 3 * f];
            if total > 0.0 {
                let (mut free, mut bound) = (0.0, 0.0);
                let (from, to) = (lay.family_start[f], lay.family_start[f + 1]);
                for (j, (&s, fr)) in (lay.family_forms[from..to].iter().zip(&mut numbers[from..to])).enumerate() {
                    free += molal[s];
                    bound += j as f64 * molal[s];
                    *fr = molal[s] / total;
                }
                let complexed = (1.0 - free / total).max(0.0);
                let mean = if free > 0.0 { bound / free } else { 0.0 };
                numbers[fam_at + 3 * f + 1..fam_at + 3 * f + 3].copy_from_slice(&[complexed, mean]);
            }
        }
        let numbers = &numbers[..];
        let families = (0..lay.families())
            .map(|f| {
                let n = &numbers[fam_at + 3 * f..fam_at + 3 * f + 3];
                FamilyState {
                    name: lay.family_names[f].clone(),
                    total_molal: n[0],
                    fractions: numbers[lay.family_start[f]..lay.family_start[f + 1]].to_vec(),
                    complexed_fraction: n[1],
                    mean_bound_protons: n[2],
                }
            })
            .collect();
        let active: Vec<(usize, &[f64])> = (1..lay.component_names.len())
            .map(|c| (c, &numbers[comp_at + 4 * c..comp_at + 4 * c + 4]))
            .filter(|(_, n)| n[0] != 0.0)
            .collect();
        let pick = |k: usize| -> Vec<(Arc<str>, f64)> {
            active
                .iter()
                .map(|&(c, n)| (lay.component_names[c].clone(), n[k]))
                .collect()
        };
        Records {
            species,
            families,
            dissolved_totals: pick(1),
            free_molal: pick(2),
            residuals: Residuals {
                charge_molal: self.charge_molal,
                charge_relative: self.charge_relative,
                mass_relative: pick(3),
                ionic_strength_relative: self.ionic_strength_relative,
                activity_coefficients_ln: self.activity_coefficients_ln,
                phases: self.phases.residuals.clone(),
            },
            total_alkalinity_molal,
            carbonate_alkalinity_molal,
            dic_molal: lay.carbonate.map_or(0.0, |c| numbers[comp_at + 4 * c + 1]),
        }
    }

    /// Molality of each species, in the system's species order (no records assembled).
    pub(crate) fn molal(&self) -> &[f64] {
        &self.data[..self.layout.species_names.len()]
    }

    /// ln γ of each species.
    fn ln_gamma(&self) -> &[f64] {
        let ns = self.layout.species_names.len();
        &self.data[ns..2 * ns]
    }

    /// The derived numbers (see [`Equilibrium::data`]).
    fn numbers(&self) -> &[f64] {
        let ns = self.layout.species_names.len();
        &self.data[2 * ns..2 * ns + self.layout.numbers_len()]
    }

    /// The largest relative residual over every equation solved, as
    /// [`Residuals::max_relative`] gives it (no records assembled).
    pub(crate) fn max_residual(&self) -> f64 {
        let comp_at = self.layout.component_numbers();
        (self.numbers()[comp_at..].chunks_exact(4).skip(1))
            .filter(|n| n[0] != 0.0)
            .map(|n| n[3].abs())
            .fold(self.charge_relative.abs(), f64::max)
            .max(self.ionic_strength_relative.abs())
            .max(self.activity_coefficients_ln.abs())
            .max(self.phases.residuals.iter().fold(0.0, |m, (_, v)| m.max(v.abs())))
    }

    /// pH on the molal scale under the system's [`PhConvention`] (see
    /// [`ph_convention`](Self::ph_convention)): by default −log₁₀ a(H⁺) with the activity
    /// model's own γ(H⁺); under the Bates–Guggenheim convention the pH comparable with the
    /// pH(S) of reference buffers.
    pub fn ph(&self) -> f64 {
        self.ph
    }

    /// The convention that produced [`ph`](Self::ph).
    pub fn ph_convention(&self) -> PhConvention {
        self.ph_convention
    }

    /// p\[H\] = −log₁₀ of the H⁺ molality (mol/kg): the pH of concentration, without γ.
    pub fn p_h_molal(&self) -> f64 {
        -self.molal()[0].log10()
    }

    /// pOH = −log₁₀ a(OH⁻).
    pub fn poh(&self) -> f64 {
        -(self.ln_gamma()[1].exp() * self.molal()[1]).log10()
    }

    /// Ionic strength, mol/kg (solved self-consistently with the activity coefficients).
    pub fn ionic_strength_molal(&self) -> f64 {
        self.ionic_strength_molal
    }

    /// The temperature of the system.
    pub fn temperature(&self) -> Temperature {
        self.temperature
    }

    /// The activity model used.
    pub fn activity_model(&self) -> ActivityModel {
        self.model
    }

    /// Every species, in the system's species order (H⁺ and OH⁻ first).
    pub fn species(&self) -> &[SpeciesState] {
        &self.records().species
    }

    /// The species named `name`. A name written without the caret of the charge notation
    /// ("CO32-" for "CO3^2-", "CaHCO3^+" for "CaHCO3+") finds the species too.
    pub fn species_named(&self, name: &str) -> Option<&SpeciesState> {
        (self.records().species.iter().find(|s| &*s.name == name))
            .or_else(|| (self.records().species.iter()).find(|s| crate::protolyte::species_name_eq(&s.name, name)))
    }

    /// The distribution of every acid–base family.
    pub fn families(&self) -> &[FamilyState] {
        &self.records().families
    }

    /// The family named `name`.
    pub fn family(&self, name: &str) -> Option<&FamilyState> {
        self.records().families.iter().find(|f| &*f.name == name)
    }

    /// Free (uncomplexed, fully deprotonated) molality of each component with a positive total.
    pub fn free_molal(&self) -> &[(Arc<str>, f64)] {
        &self.records().free_molal
    }

    /// Residuals of the charge, mass and ionic-strength equations at this result.
    pub fn residuals(&self) -> &Residuals {
        &self.records().residuals
    }

    /// Iterations spent (pH-equation evaluations on the fast path, Newton steps on the
    /// general path).
    pub fn iterations(&self) -> usize {
        self.iterations
    }

    /// Which path solved it.
    pub fn path(&self) -> SolverPath {
        self.path
    }

    /// Warnings about the result.
    pub fn warnings(&self) -> &[Warning] {
        &self.warnings
    }

    /// The saturation state of every solid the system reports whose parts are all present
    /// (the built-in catalogue's by default, see [`Recipe::report_solids`](crate::Recipe::report_solids)),
    /// with the amount of each allowed solid present.
    ///
    /// ```
    /// use protolyte::{Amount, Catalog, Conditions, Recipe, Warning};
    /// let cat = Catalog::builtin();
    /// let mut r = Recipe::new();
    /// r.add(&cat.reagent("calcium chloride")?, Amount::millimolar(5.0))?
    ///  .add(&cat.reagent("sodium carbonate")?, Amount::millimolar(5.0))?;
    /// let eq = r.compile(&Conditions::default())?.solve()?;
    /// let calcite = eq.solid("calcite").unwrap();
    /// assert!(calcite.saturation_index > 1.0);
    /// assert!(eq.warnings().iter().any(|w| matches!(w, Warning::Supersaturated { solid, .. } if solid == "calcite")));
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn solids(&self) -> &[SolidState] {
        if self.phased {
            &self.phases.solids
        } else {
            &self.reported().solids
        }
    }

    /// The saturation state of the solid named `name`.
    pub fn solid(&self, name: &str) -> Option<&SolidState> {
        self.solids().iter().find(|s| &*s.name == name)
    }

    /// The saturation index of the solid named `name`.
    pub fn saturation_index(&self, name: &str) -> Option<f64> {
        self.solid(name).map(|s| s.saturation_index)
    }

    /// The state of every gas the system reports whose family is present: its equilibrium
    /// partial pressure (closed system) or the one imposed, with the amount taken up.
    ///
    /// ```
    /// use protolyte::{Amount, Catalog, Conditions, Recipe};
    /// let cat = Catalog::builtin();
    /// let mut r = Recipe::new();
    /// r.add(&cat.reagent("sodium bicarbonate")?, Amount::millimolar(2.0))?;
    /// let eq = r.compile(&Conditions::default())?.solve()?;
    /// let co2 = eq.gas("CO2(g)").unwrap();
    /// assert!(!co2.fixed && co2.partial_pressure.as_atm() > 1e-4);
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn gases(&self) -> &[GasState] {
        if self.phased {
            &self.phases.gases
        } else {
            &self.reported().gases
        }
    }

    /// The state of the gas named `name`.
    pub fn gas(&self, name: &str) -> Option<&GasState> {
        self.gases().iter().find(|g| &*g.name == name)
    }

    /// H⁺ taken up into the solution to hold a fixed pH, mol/kg (negative: the base that was
    /// needed); 0 without a fixed pH.
    pub fn proton_uptake_molal(&self) -> f64 {
        self.phases.proton_uptake_molal
    }

    /// The ion that closes the charge balance and the amount of it added to do so, mol/kg
    /// (negative: removed), when the recipe closes the balance on an ion.
    pub fn charge_balance_ion_added_molal(&self) -> Option<(&str, f64)> {
        self.phases.charge_balance_ion.as_ref().map(|(n, v)| (&**n, *v))
    }

    /// The dissolved total of each active component (mol/kg): the recipe's total less what
    /// went into solids or the gas phase.
    pub fn dissolved_totals(&self) -> &[(Arc<str>, f64)] {
        &self.records().dissolved_totals
    }

    /// The dissolved total of the component named `name`, mol/kg.
    pub fn dissolved_total_molal(&self, name: &str) -> Option<f64> {
        self.records()
            .dissolved_totals
            .iter()
            .find(|(n, _)| &**n == name)
            .map(|(_, v)| *v)
    }

    /// Dissolved inorganic carbon, mol/kg: the dissolved total of the carbonate family (0
    /// without it).
    pub fn dic_molal(&self) -> f64 {
        self.records().dic_molal
    }

    /// Total alkalinity, mol/kg: the excess of proton acceptors over proton donors relative
    /// to the zero level of protons (A. G. Dickson, Deep-Sea Res. 28A (1981) 609–623): each
    /// family's form at the level of its acids with pKa ≥ 4.5 (25 °C, I = 0; see
    /// [`ALKALINITY_REFERENCE_PKA`](crate::phase::ALKALINITY_REFERENCE_PKA)), H₂O for H⁺ and
    /// OH⁻. For a carbonate water: m(HCO₃⁻) + 2m(CO₃²⁻) + m(OH⁻) − m(H⁺) plus the other
    /// bases present, ion pairs counted with their ligand. The titration end point it
    /// corresponds to is near pH 4.5.
    ///
    /// ```
    /// use protolyte::{ActivityModel, Amount, Catalog, Conditions, Recipe, Temperature};
    /// let cat = Catalog::builtin();
    /// let mut r = Recipe::new();
    /// r.add(&cat.reagent("sodium bicarbonate")?, Amount::molal(0.002))?;
    /// let eq = r.compile(&Conditions::new(Temperature::celsius(25.0), ActivityModel::Ideal))?.solve()?;
    /// // Proton condition of NaHCO3: alkalinity equals the sodium added (common practice).
    /// assert!((eq.total_alkalinity_molal() - 0.002).abs() < 1e-12);
    /// assert!((eq.dic_molal() - 0.002).abs() < 1e-15);
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn total_alkalinity_molal(&self) -> f64 {
        self.records().total_alkalinity_molal
    }

    /// Carbonate alkalinity, mol/kg: m(HCO₃⁻) + 2m(CO₃²⁻), with carbonate ion pairs counted by
    /// the protons their carbonate lacks relative to H₂CO₃.
    pub fn carbonate_alkalinity_molal(&self) -> f64 {
        self.records().carbonate_alkalinity_molal
    }

    /// ln a of each component (−∞ for components with zero total), H⁺ first.
    pub(crate) fn unknowns(&self) -> &[f64] {
        let ns = self.layout.species_names.len();
        &self.data[2 * ns + self.layout.numbers_len()..]
    }

    /// ln I.
    pub(crate) fn ln_ionic_strength(&self) -> f64 {
        self.ln_i
    }

    /// The solver's point, for warm starts and sensitivities.
    pub(crate) fn point(&self) -> Point {
        Point {
            y: self.unknowns().to_vec(),
            ln_i: self.ln_i,
        }
    }
}

impl std::fmt::Debug for Equilibrium {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Equilibrium")
            .field("ph", &self.ph)
            .field("p_h_molal", &self.p_h_molal())
            .field("poh", &self.poh())
            .field("ionic_strength_molal", &self.ionic_strength_molal)
            .field("temperature", &self.temperature)
            .field("model", &self.model)
            .field("ph_convention", &self.ph_convention)
            .field("species", &self.species())
            .field("families", &self.families())
            .field("free_molal", &self.free_molal())
            .field("residuals", self.residuals())
            .field("iterations", &self.iterations)
            .field("path", &self.path)
            .field("warnings", &self.warnings)
            .field("solids", &self.solids())
            .field("gases", &self.gases())
            .field("dissolved_totals", &self.dissolved_totals())
            .finish_non_exhaustive()
    }
}

/// Two results are equal when everything a caller can read from them is (the records are
/// compared whether or not they have been assembled).
impl PartialEq for Equilibrium {
    fn eq(&self, other: &Self) -> bool {
        self.ph == other.ph
            && self.p_h_molal() == other.p_h_molal()
            && self.poh() == other.poh()
            && self.ionic_strength_molal == other.ionic_strength_molal
            && self.temperature == other.temperature
            && self.model == other.model
            && self.ph_convention == other.ph_convention
            && self.iterations == other.iterations
            && self.path == other.path
            && self.warnings == other.warnings
            && self.unknowns() == other.unknowns()
            && self.ln_i == other.ln_i
            && self.phases == other.phases
            && self.solids() == other.solids()
            && self.gases() == other.gases()
            && self.records() == other.records()
    }
}

impl Solver {
    /// Solves from a cold start.
    pub fn solve(&self, system: &System) -> Result<Equilibrium> {
        let (point, ev, iters, path) = self.run(system, None)?;
        Equilibrium::build(system, point, ev, iters, path, self.tolerance_value())
    }

    /// Solves starting from a previous equilibrium of a similar system (same components,
    /// e.g. the previous point of a titration). Falls back to a cold start if the warm start
    /// does not converge.
    pub fn solve_from(&self, system: &System, previous: &Equilibrium) -> Result<Equilibrium> {
        self.solve_from_unknowns(system, previous.unknowns(), previous.ln_ionic_strength())
    }

    /// [`Solver::solve_from`] a previous solution's unknowns (ln a of each component) and
    /// ln I.
    pub(crate) fn solve_from_unknowns(&self, system: &System, y: &[f64], ln_i: f64) -> Result<Equilibrium> {
        if y.len() == system.components.len()
            && let Ok((point, ev, iters, path)) = self.run(system, Some((y, ln_i)))
            && let Ok(eq) = Equilibrium::build(system, point, ev, iters, path, self.tolerance_value())
        {
            return Ok(eq);
        }
        self.solve(system)
    }
}

impl System {
    /// Solves the system with the default [`Solver`].
    pub fn solve(&self) -> Result<Equilibrium> {
        Solver::default().solve(self)
    }
}

/// The constraints that brought component `c` into solution (the rows whose amount moved it
/// from another phase into the solution), in short for messages ("CO2(g) at 4.1600e-4 atm
/// with pH 15.74"); a fixed pH beside them is named too.
fn sources(sys: &System, c: usize, amount: &dyn Fn(usize) -> f64) -> String {
    let mut out: Vec<String> = Vec::new();
    for (w, row) in sys.phases.iter().enumerate() {
        let nu = row.terms.iter().find(|&&(k, _)| k == c).map_or(0.0, |&(_, v)| v);
        let into_solution = amount(w) * nu < 0.0;
        match row.kind {
            RowKind::Gas { fixed: Some(lp) } if into_solution => out.push(format!(
                "{} at {:.4e} atm",
                row.name,
                lp.exp() / crate::phase::BAR_PER_ATM
            )),
            RowKind::Closure if into_solution => out.push(format!("closing the charge balance on {}", row.name)),
            _ => {}
        }
    }
    if out.is_empty() {
        out.push("what was put in".into());
    }
    if let Some(ph) = sys.phases.iter().find_map(|r| match r.kind {
        RowKind::Ph { ln_a_h } => Some(crate::phase::fixed_ph_text(ln_a_h)),
        _ => None,
    }) {
        out.push(format!("pH {ph}"));
    }
    out.join(" with ")
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::{Amount, Catalog, Conditions, Recipe};

    /// The numbers a result derives on first access (dissolved totals, alkalinities, DIC,
    /// family fractions, complexed fractions and mean bound protons) equal those of one eager
    /// pass over the species as `build` made them before they were deferred (the reference
    /// below is that pass, written against the system's own tables), bit for bit, whatever
    /// is read first. The scenarios are demo recipes of our own: one and several families
    /// (fast path), a complex (general path), a family with zero total, a solid allowed to
    /// form and an open CO₂ system (phases).
    #[test]
    fn deferred_records_equal_the_eager_pass() {
        let cat = Catalog::builtin();
        let recipe = |items: &[(&str, f64)]| {
            let mut r = Recipe::new();
            for &(name, mm) in items {
                r.add(&cat.reagent(name).unwrap(), Amount::millimolar(mm)).unwrap();
            }
            r
        };
        let mut systems = Vec::new();
        for model in [
            ActivityModel::Davies,
            ActivityModel::Ideal,
            ActivityModel::ExtendedDebyeHuckel,
        ] {
            let cond = Conditions::new(Temperature::celsius(25.0), model);
            systems.push(recipe(&[("acetic acid", 10.0)]).compile(&cond).unwrap());
            systems.push(
                recipe(&[
                    ("acetic acid", 5.0),
                    ("sodium dihydrogen phosphate", 3.0),
                    ("ammonium chloride", 2.0),
                    ("sodium hydroxide", 4.0),
                    ("sodium bicarbonate", 2.0),
                ])
                .compile(&cond)
                .unwrap(),
            );
            systems.push(
                recipe(&[("disodium edta dihydrate", 10.0), ("calcium chloride", 5.0)])
                    .compile(&cond)
                    .unwrap(),
            );
            // A family with zero total beside one with a positive total.
            let mut zero = recipe(&[("acetic acid", 10.0), ("sodium hydroxide", 5.0)])
                .compile(&cond)
                .unwrap();
            let acetate = zero.component_index("acetate").unwrap();
            zero.set_total_molal(acetate, 0.0).unwrap();
            systems.push(zero);
            let mut hard = recipe(&[("calcium chloride", 3.0), ("sodium carbonate", 3.0)]);
            hard.allow_solid(&cat.solid("calcite").unwrap());
            systems.push(hard.compile(&cond).unwrap());
            // Calcite and CO₂(g) only reported (no phase constraint): their states are
            // assembled on first access, the supersaturation warning decided in `build`.
            systems.push(
                recipe(&[("calcium chloride", 5.0), ("sodium carbonate", 5.0)])
                    .compile(&cond)
                    .unwrap(),
            );
            let mut open = recipe(&[("sodium bicarbonate", 2.0)]);
            open.fix_partial_pressure(&cat.gas("CO2(g)").unwrap(), Pressure::atm(4.2e-4))
                .unwrap();
            systems.push(open.compile(&cond).unwrap());
        }
        for (k, sys) in systems.iter().enumerate() {
            let eq = sys.solve().unwrap();
            let m = eq.molal().to_vec();
            let nc = sys.components.len();
            // The eager pass: dissolved totals and alkalinities over every species.
            let mut aqueous = vec![0.0; nc];
            let (mut alkalinity, mut carbonate_alkalinity) = (0.0, 0.0);
            for (s, &ms) in m.iter().enumerate() {
                let (mut level, mut nu_h, mut nu_carb) = (0.0, 0.0, 0.0);
                for &(c, v) in &sys.terms[sys.term_start[s]..sys.term_start[s + 1]] {
                    aqueous[c] += v * ms;
                    if c == 0 {
                        nu_h = v;
                    } else {
                        level += v * sys.alkalinity_reference[c];
                        if Some(c) == sys.carbonate {
                            nu_carb = v;
                        }
                    }
                }
                alkalinity += (level - nu_h) * ms;
                if nu_carb > 0.0 {
                    carbonate_alkalinity += (2.0 * nu_carb - nu_h) * ms;
                }
            }
            // Read in two orders: the alkalinity first, and the species first.
            let late = eq.clone();
            assert_eq!(eq.total_alkalinity_molal(), alkalinity, "system {k}");
            assert_eq!(eq.carbonate_alkalinity_molal(), carbonate_alkalinity, "system {k}");
            assert_eq!(eq.dic_molal(), sys.carbonate.map_or(0.0, |c| aqueous[c]), "system {k}");
            assert!(!late.species().is_empty());
            assert_eq!(late, eq, "system {k}");
            assert_eq!(late.total_alkalinity_molal(), alkalinity, "system {k}");
            let phased = sys.has_phase_constraints();
            // Each supersaturation warning names a solid whose record gives the same index,
            // and every supersaturated solid warns.
            let warned: Vec<(&str, f64)> = (eq.warnings().iter())
                .filter_map(|w| match w {
                    Warning::Supersaturated {
                        solid,
                        saturation_index,
                        ..
                    } => Some((solid.as_str(), *saturation_index)),
                    _ => None,
                })
                .collect();
            let supersaturated: Vec<(&str, f64)> = (eq.solids().iter())
                .filter(|st| st.supersaturated())
                .map(|st| (&*st.name, st.saturation_index))
                .collect();
            assert_eq!(warned, supersaturated, "system {k}");
            // The reported calcite of 5 mM CaCl2 + 5 mM Na2CO3 is supersaturated (SI > 1, as
            // the example of `Equilibrium::solids` shows).
            assert!(k % 7 != 5 || warned.iter().any(|(n, _)| *n == "calcite"), "system {k}");
            for (c, (name, v)) in eq.dissolved_totals().iter().enumerate() {
                let ci = sys.component_index(name).unwrap();
                assert!(c < nc);
                assert_eq!(*v, aqueous[ci], "system {k}: {name}");
            }
            for (fi, fam) in sys.families.iter().enumerate() {
                let st = &eq.families()[fi];
                let total = if phased {
                    aqueous[fam.component]
                } else {
                    sys.components[fam.component].total_molal
                };
                assert_eq!(st.total_molal, total, "system {k}");
                if total > 0.0 {
                    let (mut free, mut bound) = (0.0, 0.0);
                    for (j, &s) in fam.forms.iter().enumerate() {
                        free += m[s];
                        bound += j as f64 * m[s];
                        assert_eq!(st.fractions[j], m[s] / total, "system {k}");
                    }
                    assert_eq!(st.complexed_fraction, (1.0 - free / total).max(0.0), "system {k}");
                    let mean = if free > 0.0 { bound / free } else { 0.0 };
                    assert_eq!(st.mean_bound_protons, mean, "system {k}");
                } else {
                    // The distribution at this pH: weights exp(ln K + j L − ln γ), summing to 1.
                    assert_eq!(st.complexed_fraction, 0.0, "system {k}");
                    assert!((st.fractions.iter().sum::<f64>() - 1.0).abs() < 1e-12, "system {k}");
                    assert!(st.fractions.iter().all(|f| f.is_finite() && *f >= 0.0), "system {k}");
                }
            }
        }
    }
}
