//! Analytic sensitivities of an equilibrium by implicit differentiation.
//!
//! At a solution F(y, p) = 0 of the equations (charge balance, mass balances, ionic
//! strength) in the unknowns y = (ln a of the components, ln I), a change of a parameter p
//! (a total, a log K, an addition of strong base) moves the solution by
//! dy/dp = −J⁻¹ ∂F/∂p, with J the analytic Jacobian ∂F/∂y. One LU factorisation serves
//! every parameter. Buffer capacity, fitting Jacobians and uncertainty propagation are built
//! on these numbers.
//!
//! With phase rows (solids allowed to form, a fixed partial pressure, pH or alkalinity, an
//! ion closing the charge balance) the rows held at the solution join the equations as
//! equalities and their amounts as unknowns (see `Sensitivities::with_phases`), so the same
//! accessors give the derivatives of the open or saturated system, and
//! [`Sensitivities::dphase_amount_molal`] those of the amounts.

use nalgebra::{DMatrix, DVector};

use crate::equilibrium::Equilibrium;
use crate::error::{Error, Result};
use crate::phase::RowKind;
use crate::solve::newton::{Layout, jacobian_in};
use crate::solve::{Evaluation, Point};
use crate::system::System;

const LN10: f64 = std::f64::consts::LN_10;

/// A parameter of a system that a result can be differentiated by.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Parameter {
    /// The total (mol/kg) of the component with this index (not 0, which is H⁺).
    Total(usize),
    /// log₁₀ K of the species with this index, at the system's temperature.
    Log10K(usize),
    /// An addition of strong base, as mol/kg of a monovalent inert cation with OH⁻ (what
    /// buffer capacity is defined by).
    StrongBase,
}

/// Derivatives of pH and of every species' log₁₀ molality by the system's parameters.
///
/// # Example
///
/// ```
/// use protolyte::{ActivityModel, Amount, Catalog, Conditions, Recipe, Temperature};
///
/// let cat = Catalog::builtin();
/// let mut r = Recipe::new();
/// r.add(&cat.reagent("acetic acid")?, Amount::molal(0.1))?
///  .add(&cat.reagent("sodium acetate")?, Amount::molal(0.1))?;
/// let sys = r.compile(&Conditions::new(Default::default(), ActivityModel::Ideal))?;
/// let eq = sys.solve()?;
/// let s = eq.sensitivities(&sys)?;
/// // Buffer capacity of an equimolar acetate buffer: about 2.303·C/4 ≈ 0.115 mol/kg per pH.
/// assert!((s.buffer_capacity_molal() - 0.115).abs() < 0.003);
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone)]
pub struct Sensitivities {
    /// Rows: active unknowns (ln a of active components, then ln I); columns: parameters in
    /// the order totals (components 1..nc), log K (species 0..ns), strong base.
    dy: DMatrix<f64>,
    act: Vec<usize>,
    nc: usize,
    ns: usize,
    nu: Vec<f64>,
    dln_gamma_di: Vec<f64>,
    ionic_strength: f64,
    forms: Vec<Vec<usize>>,
    /// d(pH convention shift)/d ln I (0 with the model's own γ(H⁺)).
    ph_shift_dln_i: f64,
    /// Where γ depends on the composition (SIT): dm/dp for every species and parameter.
    dm: Option<DMatrix<f64>>,
    molal: Vec<f64>,
    /// (species, ε(Cl⁻, species)) for the Bates–Guggenheim convention under SIT.
    chloride_eps: Vec<(usize, f64)>,
    /// With phase rows: the names of the rows held as equalities at the solution (present
    /// solids, fixed partial pressures, a fixed pH) and d(amount)/dp for each, rows × parameters.
    phase_names: Vec<std::sync::Arc<str>>,
    damount: DMatrix<f64>,
    /// Every phase row's name, held or not (a row not held has no effect on the solution).
    all_phase_names: Vec<std::sync::Arc<str>>,
    /// Columns per held row j: d(unknowns, then amounts)/d log₁₀ K_j, (n + 1 + r) × r.
    dphase_k: DMatrix<f64>,
}

impl Sensitivities {
    /// The sensitivities of `eq`, a solution of `system`.
    pub fn of(system: &System, eq: &Equilibrium) -> Result<Self> {
        let sys = system;
        let nc = sys.components.len();
        let ns = sys.species.len();
        if eq.unknowns().len() != nc {
            return Err(Error::InconsistentDefinition {
                name: "sensitivities".into(),
                reason: "the equilibrium does not belong to this system".into(),
            });
        }
        if sys.has_phase_constraints() {
            return Self::with_phases(sys, eq);
        }
        let p: Point = eq.point();
        let i = p.ln_i.exp();
        let mut ev = Evaluation::new(sys);
        ev.hold(eq.molal().iter().copied());
        ev.set_gamma(sys, i);
        ev.set_conc(sys, &p);
        let layout = Layout::new(sys);
        let composition = Composition::at(sys, &ev, &layout.act, &p);
        let jac = match &composition {
            Some(c) => c.jacobian.clone(),
            None => jacobian_in(&ev, &layout, &p),
        };
        let act = layout.act;
        let m = act.len() + 1;
        let np = (nc - 1) + ns + 1;
        let mut dfdp = DMatrix::zeros(m, np);
        // Under SIT: the species-space part of ∂F/∂p (∂m/∂p at fixed γ), which the
        // composition operator then carries through to every γ.
        let mut species_part = DMatrix::zeros(if composition.is_some() { ns } else { 0 }, np);
        // Coefficient of species s in equation row k.
        let row = |s: usize, k: usize| -> f64 {
            let z = f64::from(sys.species[s].charge);
            if k == 0 {
                z
            } else if k == m - 1 {
                0.5 * z * z
            } else {
                sys.nu[s * nc + act[k]]
            }
        };
        for c in 1..nc {
            let col = c - 1;
            if let Some(k) = act.iter().position(|&a| a == c) {
                dfdp[(k, col)] = -1.0;
            } else {
                // A component with zero total: an infinitesimal amount enters as its species
                // with one unit of it, in proportion to exp(ln K + Σ ν ln a − ln γ).
                for (s, frac) in zero_total_entry(sys, &ev, &p, c, &act, |d| act.contains(&d)) {
                    for k in 0..m {
                        dfdp[(k, col)] += row(s, k) * frac;
                    }
                    if composition.is_some() {
                        species_part[(s, col)] += frac;
                    }
                }
            }
        }
        for s in 0..ns {
            let col = nc - 1 + s;
            let c = ev.conc[s];
            if c == 0.0 {
                continue;
            }
            for k in 0..m {
                dfdp[(k, col)] = row(s, k) * c * LN10;
            }
            if composition.is_some() {
                species_part[(s, col)] = c * LN10;
            }
        }
        // dm = P·(species part): add R·(P − 1)·(species part) to ∂F/∂p.
        let carried = composition.as_ref().map(|c| {
            let ps = c.lu.solve(&species_part).unwrap_or_else(|| species_part.clone());
            let extra = &ps - &species_part;
            for col in 0..np {
                for s in 0..ns {
                    let v = extra[(s, col)];
                    if v != 0.0 {
                        for k in 0..m {
                            dfdp[(k, col)] += row(s, k) * v;
                        }
                    }
                }
            }
            ps
        });
        dfdp[(0, np - 1)] = 1.0;
        dfdp[(m - 1, np - 1)] = 0.5;
        let lu = jac.lu();
        let dy = lu.solve(&(-dfdp)).ok_or_else(|| Error::NoConvergence {
            path: "sensitivity",
            iterations: 0,
            max_residual: f64::INFINITY,
            worst_equation: "singular Jacobian at the solution".into(),
            last_ph: eq.ph(),
        })?;
        if dy.iter().any(|v| !v.is_finite()) {
            return Err(Error::NoConvergence {
                path: "sensitivity",
                iterations: 0,
                max_residual: f64::INFINITY,
                worst_equation: "non-finite derivative".into(),
                last_ph: eq.ph(),
            });
        }
        // Under SIT, dm/dp = P·M·N·dy/dp + P·(species part), for d log m.
        let dm = match (&composition, carried) {
            (Some(c), Some(ps)) => Some(&c.pmn * &dy + ps),
            _ => None,
        };
        let molal: Vec<f64> = ev.conc.clone();
        // Bates–Guggenheim under SIT: the trace chloride's Σ ε(Cl⁻, j)·m_j moves the pH too.
        let chloride_eps = if sys.ph_convention == crate::activity::PhConvention::BatesGuggenheim && dm.is_some() {
            sys.species
                .iter()
                .enumerate()
                .filter(|(_, sp)| sp.charge > 0)
                .filter_map(|(s, sp)| {
                    crate::activity::interaction_coefficient("Cl-", &sp.name).map(|e| (s, e.epsilon_kg_per_mol))
                })
                .collect()
        } else {
            Vec::new()
        };
        Ok(Sensitivities {
            dm,
            molal,
            chloride_eps,
            dy,
            act,
            nc,
            ns,
            nu: sys.nu.clone(),
            dln_gamma_di: ev.dln_gamma_di.clone(),
            ionic_strength: i,
            forms: sys.families.iter().map(|f| f.forms.clone()).collect(),
            ph_shift_dln_i: crate::activity::ph_convention_shift_dln_i(sys.ph_convention, sys.model, i, &sys.dh),
            phase_names: Vec::new(),
            damount: DMatrix::zeros(0, np),
            all_phase_names: solid_and_gas_names(sys),
            dphase_k: DMatrix::zeros(m, 0),
        })
    }

    /// The sensitivities of a solution with phase rows: the unknowns are ln a of the active
    /// components (H⁺ first, its balance T_H = −Σ z_c·T_c, or Σ r_c·T_c − TA under a fixed
    /// alkalinity), the amount λ_j of every row held as an equality at the solution (each
    /// present solid, fixed partial pressure and fixed pH: ν_j·y = c_j), and ln I. The
    /// equations are the mass balances Σ_s ν_sk·m_s + Σ_j λ_j·ν_jk − T_k = 0, the rows
    /// ν_j·y − c_j = 0 and the ionic strength; their Jacobian is the KKT matrix
    /// [[H, Nᵀ, h_I], [N, 0, 0], [g, 0, g_I − I]] of the solver's joint Newton.
    fn with_phases(sys: &System, eq: &Equilibrium) -> Result<Self> {
        let nc = sys.components.len();
        let ns = sys.species.len();
        if !sys.interactions.known.is_empty() {
            return Err(Error::InconsistentDefinition {
                name: "sensitivities".into(),
                reason: "not available for a system with phase rows under an activity model whose coefficients depend on the composition (SIT)".into(),
            });
        }
        let p: Point = eq.point();
        let i = p.ln_i.exp();
        let mut ev = Evaluation::new(sys);
        ev.hold(eq.molal().iter().copied());
        ev.set_gamma(sys, i);
        ev.set_conc(sys, &p);
        let act = crate::solve::newton::active(sys);
        let n = act.len();
        let mut pos = vec![usize::MAX; nc];
        for (k, &c) in act.iter().enumerate() {
            pos[c] = k;
        }
        let usable = |w: usize| sys.phases[w].terms.iter().all(|&(c, _)| pos[c] != usize::MAX);
        let present = |w: usize| {
            let row = &sys.phases[w];
            row.is_equality() || (row.is_inequality() && eq.solid(&row.name).is_some_and(|st| st.amount_molal > 0.0))
        };
        let working: Vec<usize> = (0..sys.phases.len()).filter(|&w| usable(w) && present(w)).collect();
        let r = working.len();
        let m = n + r + 1;
        let alkalinity = sys.phases.iter().any(|r| matches!(r.kind, RowKind::Alkalinity { .. }));
        // An ion closing the charge balance: (its row, its component, its charge number).
        let closure = sys
            .phases
            .iter()
            .enumerate()
            .find(|(_, r)| matches!(r.kind, RowKind::Closure))
            .and_then(|(w, r)| r.terms.iter().find(|&&(c, _)| c != 0).map(|&(c, _)| (w, c)))
            .map(|(w, c)| (w, c, f64::from(sys.components[c].charge)));
        // With a fixed pH the closing ion's addition δ replaces the pH row's H⁺ (which the
        // solver brings to zero): its column puts z·δ into the H⁺ balance and δ into the ion's.
        let ph_closure = closure.filter(|_| !alkalinity).and_then(|(cw, ci, z)| {
            working
                .iter()
                .position(|&w| matches!(sys.phases[w].kind, RowKind::Ph { .. }))
                .map(|j| (j, cw, ci, z))
        });
        // ∂F_H/∂T_c: T_H = −Σ z_c·T_c, or Σ r_c·T_c − TA under a fixed alkalinity.
        let h_coef = |c: usize| {
            if alkalinity {
                -sys.alkalinity_reference[c]
            } else {
                f64::from(sys.components[c].charge)
            }
        };
        let mut jac = DMatrix::<f64>::zeros(m, m);
        let mut scale = vec![0.0f64; m];
        for s in 0..ns {
            let c = ev.conc[s];
            if c == 0.0 {
                continue;
            }
            let gi = -ev.dln_gamma_di[s] * i;
            let half_z2 = 0.5 * sys.charge_f[s] * sys.charge_f[s];
            let terms = &sys.terms[sys.term_start[s]..sys.term_start[s + 1]];
            for &(ca, va) in terms {
                let a = pos[ca];
                if a == usize::MAX {
                    continue;
                }
                for &(cb, vb) in terms {
                    let b = pos[cb];
                    if b != usize::MAX {
                        jac[(a, b)] += va * vb * c;
                    }
                }
                jac[(a, m - 1)] += va * c * gi;
                jac[(m - 1, a)] += half_z2 * c * va;
                scale[a] += va.abs() * c;
            }
            jac[(m - 1, m - 1)] += half_z2 * c * gi;
        }
        jac[(m - 1, m - 1)] -= i;
        scale[m - 1] = i;
        for (j, &w) in working.iter().enumerate() {
            for &(c, v) in &sys.phases[w].terms {
                let k = pos[c];
                jac[(k, n + j)] += v;
                jac[(n + j, k)] += v;
            }
            scale[n + j] = 1.0;
        }
        if let Some((j, _, ci, z)) = ph_closure {
            // T_H = −Σ z_c·T_c − z·δ and T_ion + δ: ∂F_H/∂δ = z, ∂F_ion/∂δ = −1.
            for k in 0..n {
                jac[(k, n + j)] = 0.0;
            }
            jac[(0, n + j)] = z;
            jac[(pos[ci], n + j)] = -1.0;
        }
        // Coefficient of species s in equation k (mass balances over y, then I).
        let row = |s: usize, k: usize| -> f64 {
            if k == m - 1 {
                0.5 * sys.charge_f[s] * sys.charge_f[s]
            } else if k < n {
                sys.nu[s * nc + act[k]]
            } else {
                0.0
            }
        };
        let np = (nc - 1) + ns + 1;
        let mut dfdp = DMatrix::<f64>::zeros(m, np);
        for c in 1..nc {
            let col = c - 1;
            dfdp[(0, col)] += h_coef(c);
            if let Some((_, ci, z)) = closure.filter(|_| alkalinity) {
                // δ = (−Σ z_c·T_c − Σ r_c·T_c + TA)/z joins the closing ion's total.
                let zc = f64::from(sys.components[c].charge);
                dfdp[(pos[ci], col)] += (zc + sys.alkalinity_reference[c]) / z;
            }
            if pos[c] != usize::MAX {
                dfdp[(pos[c], col)] -= 1.0;
                continue;
            }
            // A component with zero total enters as its species with one unit of it, in
            // proportion to exp(ln K + Σ ν ln a − ln γ) (as for the closed system).
            for (s, frac) in zero_total_entry(sys, &ev, &p, c, &act, |d| pos[d] != usize::MAX) {
                for k in (0..n).chain(std::iter::once(m - 1)) {
                    dfdp[(k, col)] += row(s, k) * frac;
                }
            }
        }
        for s in 0..ns {
            let col = nc - 1 + s;
            let c = ev.conc[s];
            if c == 0.0 {
                continue;
            }
            for k in (0..n).chain(std::iter::once(m - 1)) {
                dfdp[(k, col)] = row(s, k) * c * LN10;
            }
        }
        // Strong base: the OH⁻ lowers T_H by one (under a fixed alkalinity it raises the
        // alkalinity by as much: T_H = Σ r·T − TA falls by one too; an ion closing the balance
        // is left as it was), the inert cation adds ½ to I.
        dfdp[(0, np - 1)] = 1.0;
        dfdp[(m - 1, np - 1)] = 0.5;
        // Row scaling keeps trace components' digits through the LU.
        for k in 0..m {
            let sc = if scale[k] > 0.0 { 1.0 / scale[k] } else { 1.0 };
            for col in 0..m {
                jac[(k, col)] *= sc;
            }
            for col in 0..np {
                dfdp[(k, col)] *= -sc;
            }
        }
        // log₁₀ K of held row j: its equation ν·y − ln K − … = 0 moves by −ln 10 (row scale 1).
        let mut dfdk = DMatrix::<f64>::zeros(m, r);
        for j in 0..r {
            dfdk[(n + j, j)] = LN10;
        }
        let lu = jac.lu();
        let singular = || Error::NoConvergence {
            path: "sensitivity",
            iterations: 0,
            max_residual: f64::INFINITY,
            worst_equation: "singular Jacobian at the solution (phase rows)".into(),
            last_ph: eq.ph(),
        };
        let x = lu.solve(&dfdp).ok_or_else(singular)?;
        let xk = lu.solve(&dfdk).ok_or_else(singular)?;
        if x.iter().chain(xk.iter()).any(|v| !v.is_finite()) {
            return Err(Error::NoConvergence {
                path: "sensitivity",
                iterations: 0,
                max_residual: f64::INFINITY,
                worst_equation: "non-finite derivative (phase rows)".into(),
                last_ph: eq.ph(),
            });
        }
        let mut dy = DMatrix::zeros(n + 1, np);
        for col in 0..np {
            for k in 0..n {
                dy[(k, col)] = x[(k, col)];
            }
            dy[(n, col)] = x[(m - 1, col)];
        }
        let mut damount = x.rows(n, r).into_owned();
        let mut phase_names: Vec<std::sync::Arc<str>> = working.iter().map(|&w| sys.phases[w].name.clone()).collect();
        if let Some((j, cw, _, _)) = ph_closure {
            // The row's unknown is δ; the closing row's amount is −δ (the pH row takes none).
            phase_names[j] = sys.phases[cw].name.clone();
            damount.row_mut(j).neg_mut();
        }
        // Reordered as (ln a, ln I, amounts) for the accessors.
        let mut dphase_k = DMatrix::zeros(m, r);
        for j in 0..r {
            for k in 0..n {
                dphase_k[(k, j)] = xk[(k, j)];
            }
            dphase_k[(n, j)] = xk[(m - 1, j)];
            for i2 in 0..r {
                dphase_k[(n + 1 + i2, j)] = xk[(n + i2, j)];
            }
        }
        Ok(Sensitivities {
            dm: None,
            molal: ev.conc.clone(),
            chloride_eps: Vec::new(),
            dy,
            act,
            nc,
            ns,
            nu: sys.nu.clone(),
            dln_gamma_di: ev.dln_gamma_di.clone(),
            ionic_strength: i,
            forms: sys.families.iter().map(|f| f.forms.clone()).collect(),
            ph_shift_dln_i: crate::activity::ph_convention_shift_dln_i(sys.ph_convention, sys.model, i, &sys.dh),
            phase_names,
            damount,
            all_phase_names: solid_and_gas_names(sys),
            dphase_k,
        })
    }

    /// d(amount of a phase row, mol/kg)/dp for a row held at the solution: a present solid
    /// (its amount formed), a fixed partial pressure (the amount given off to the gas, the
    /// negative of [`crate::GasState::taken_up_molal`]) or a fixed pH (`"pH"`, the H⁺ it
    /// removes). `None` for a row not held (an absent solid, a closed system's gas) or a
    /// parameter out of range.
    ///
    /// # Example
    ///
    /// ```
    /// use protolyte::{ActivityModel, Amount, Catalog, Conditions, Parameter, Recipe};
    ///
    /// let cat = Catalog::builtin();
    /// let mut r = Recipe::new();
    /// r.add(&cat.reagent("calcium chloride")?, Amount::molal(0.01))?
    ///  .add(&cat.reagent("sodium carbonate")?, Amount::molal(0.01))?
    ///  .allow_solid(&cat.solid("calcite")?);
    /// let sys = r.compile(&Conditions::new(Default::default(), ActivityModel::Davies))?;
    /// let eq = sys.solve()?;
    /// let s = eq.sensitivities(&sys)?;
    /// let ca = sys.component_index("calcium").unwrap();
    /// // Almost every added calcium ion precipitates with the excess carbonate.
    /// let d = s.dphase_amount_molal("calcite", Parameter::Total(ca)).unwrap();
    /// assert!(d > 0.0 && d <= 1.0);
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn dphase_amount_molal(&self, name: &str, p: Parameter) -> Option<f64> {
        let col = self.column(p)?;
        let j = self.phase_names.iter().position(|n| &**n == name)?;
        Some(self.damount[(j, col)])
    }

    /// d pH / d log₁₀ K of a solid or gas of the system (its K_sp, or its Henry's-law
    /// constant K_H). A solid present, a fixed partial pressure: the derivative through its
    /// row; a solid absent or a gas not fixed: 0 (the row does not act on the solution).
    /// `None` for a name that is no phase row of the system.
    ///
    /// ```
    /// use protolyte::{ActivityModel, Amount, Catalog, Conditions, Recipe};
    ///
    /// let cat = Catalog::builtin();
    /// let mut r = Recipe::new();
    /// r.add(&cat.reagent("calcium carbonate")?, Amount::molal(0.01))?
    ///  .allow_solid(&cat.solid("calcite")?);
    /// let sys = r.compile(&Conditions::new(Default::default(), ActivityModel::Davies))?;
    /// let s = sys.solve()?.sensitivities(&sys)?;
    /// // A more soluble calcite dissolves more carbonate: the pH rises.
    /// assert!(s.dph_dphase_log10k("calcite").unwrap() > 0.0);
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn dph_dphase_log10k(&self, name: &str) -> Option<f64> {
        if !self.all_phase_names.iter().any(|n| &**n == name) {
            return None;
        }
        let Some(j) = self.phase_names.iter().position(|n| &**n == name) else {
            return Some(0.0);
        };
        let n = self.act.len();
        Some(-self.dphase_k[(0, j)] / LN10 + self.ph_shift_dln_i * self.dphase_k[(n, j)])
    }

    /// d(amount of held row `row`, mol/kg) / d log₁₀ K of the solid or gas `of` (both held at
    /// the solution: present solids, fixed gases, a fixed pH); `None` otherwise.
    pub fn dphase_amount_dphase_log10k(&self, row: &str, of: &str) -> Option<f64> {
        let i = self.phase_names.iter().position(|n| &**n == row)?;
        let j = self.phase_names.iter().position(|n| &**n == of)?;
        Some(self.dphase_k[(self.act.len() + 1 + i, j)])
    }
    fn column(&self, p: Parameter) -> Option<usize> {
        match p {
            Parameter::Total(c) if c >= 1 && c < self.nc => Some(c - 1),
            Parameter::Log10K(s) if s < self.ns => Some(self.nc - 1 + s),
            Parameter::StrongBase => Some(self.nc - 1 + self.ns),
            _ => None,
        }
    }

    /// d pH / d p; `None` for a parameter index out of range (a total of H⁺, index 0, is
    /// not a parameter).
    pub fn dph(&self, p: Parameter) -> Option<f64> {
        let m = self.act.len() + 1;
        self.column(p).map(|col| {
            let mut d = -self.dy[(0, col)] / LN10 + self.ph_shift_dln_i * self.dy[(m - 1, col)];
            if let Some(dm) = &self.dm {
                for &(s, e) in &self.chloride_eps {
                    d -= e * dm[(s, col)];
                }
            }
            d
        })
    }

    /// d log₁₀ m(species) / d p; `None` for an index out of range.
    pub fn dlog10_molal(&self, species: usize, p: Parameter) -> Option<f64> {
        let col = self.column(p)?;
        if species >= self.ns {
            return None;
        }
        if let Some(dm) = &self.dm
            && self.molal[species] > 0.0
        {
            return Some(dm[(species, col)] / self.molal[species] / LN10);
        }
        let m = self.act.len() + 1;
        let mut d = 0.0;
        for (k, &c) in self.act.iter().enumerate() {
            d += self.nu[species * self.nc + c] * self.dy[(k, col)];
        }
        d -= self.dln_gamma_di[species] * self.ionic_strength * self.dy[(m - 1, col)];
        let own = matches!(p, Parameter::Log10K(s) if s == species);
        Some(d / LN10 + if own { 1.0 } else { 0.0 })
    }

    /// d ln I / d p; `None` for a parameter index out of range.
    pub fn dln_ionic_strength(&self, p: Parameter) -> Option<f64> {
        let m = self.act.len() + 1;
        self.column(p).map(|col| self.dy[(m - 1, col)])
    }

    /// d pH / d(total of component `component`, mol/kg); `None` for H⁺ (index 0) or an
    /// index out of range.
    pub fn dph_dtotal_molal(&self, component: usize) -> Option<f64> {
        self.dph(Parameter::Total(component))
    }

    /// d pH / d log₁₀ K of species `species`; `None` for an index out of range.
    pub fn dph_dlog10k(&self, species: usize) -> Option<f64> {
        self.dph(Parameter::Log10K(species))
    }

    /// d pH / d(strong base added, mol/kg).
    pub fn dph_dstrong_base_molal(&self) -> f64 {
        let col = self.nc - 1 + self.ns;
        -self.dy[(0, col)] / LN10
    }

    /// Buffer capacity β = dC(strong base)/dpH, mol/kg per pH unit.
    pub fn buffer_capacity_molal(&self) -> f64 {
        let d = self.dph_dstrong_base_molal();
        if d > 0.0 { 1.0 / d } else { f64::INFINITY.min(f64::MAX) }
    }

    /// d pH / d pKa of step `step` (0-based, most protonated first) of family `family`;
    /// `None` when the family or the step does not exist.
    ///
    /// log β_j of the form with j protons is the sum of the last j stepwise pKa values, so
    /// d/dpKaᵢ sums d/d log β_j over the forms whose β contains pKaᵢ.
    pub fn dph_dpka(&self, family: usize, step: usize) -> Option<f64> {
        let forms = self.forms.get(family)?;
        let n = forms.len().checked_sub(1)?;
        if step >= n {
            return None;
        }
        (n - step..=n).map(|j| self.dph_dlog10k(forms[j])).sum()
    }
}

impl Equilibrium {
    /// The analytic sensitivities of this result (see [`Sensitivities`]).
    pub fn sensitivities(&self, system: &System) -> Result<Sensitivities> {
        Sensitivities::of(system, self)
    }
}

/// d pH along one direction of change of the totals (`dt[c]` = dT_c in mol/kg, entry 0
/// ignored): the implicit differentiation of [`Sensitivities::of`] with a single right-hand
/// side, for analyses that need one derivative per point. A direction that brings a component
/// in from a zero total goes through the full sensitivities, which handle that limit.
pub(crate) fn dph_along_totals(system: &System, eq: &Equilibrium, dt: &[f64]) -> Result<f64> {
    let sys = system;
    let nc = sys.components.len();
    // A component brought in from zero, or the Bates–Guggenheim pH under SIT (whose trace
    // chloride term needs every dm), go through the full sensitivities.
    let sit_bg =
        sys.ph_convention == crate::activity::PhConvention::BatesGuggenheim && !sys.interactions.known.is_empty();
    if sit_bg || sys.has_phase_constraints() || (1..nc).any(|c| dt[c] != 0.0 && sys.components[c].total_molal <= 0.0) {
        let sens = eq.sensitivities(sys)?;
        return Ok((1..nc)
            .filter(|&c| dt[c] != 0.0)
            .map(|c| sens.dph(Parameter::Total(c)).unwrap_or(0.0) * dt[c])
            .sum());
    }
    let p = eq.point();
    let mut ev = Evaluation::new(sys);
    ev.hold(eq.molal().iter().copied());
    ev.set_gamma(sys, p.ln_i.exp());
    ev.set_conc(sys, &p);
    let layout = Layout::new(sys);
    let jac = match Composition::at(sys, &ev, &layout.act, &p) {
        Some(c) => c.jacobian,
        None => jacobian_in(&ev, &layout, &p),
    };
    // ∂F/∂T_c = −1 in the mass balance of c, so J·dy = +dt there.
    let mut rhs = DVector::zeros(layout.act.len() + 1);
    for (k, &c) in layout.act.iter().enumerate().skip(1) {
        rhs[k] = dt[c];
    }
    let x = jac.lu().solve(&rhs).ok_or_else(|| Error::NoConvergence {
        path: "sensitivity",
        iterations: 0,
        max_residual: f64::INFINITY,
        worst_equation: "singular Jacobian at the solution".into(),
        last_ph: eq.ph(),
    })?;
    let shift = crate::activity::ph_convention_shift_dln_i(sys.ph_convention, sys.model, p.ln_i.exp(), &sys.dh);
    Ok(-x[0] / LN10 + shift * x[layout.act.len()])
}

/// Where γ depends on the composition (SIT: ln γ_s = ln γ_s(I) + Σ_t Γ_st m_t with
/// Γ = ln 10·ε), a change of the unknowns moves each molality directly and through every γ:
/// dm = M·(ν·dy − g·I·d ln I) − M·Γ·dm, so dm = P·M·N·dx with P = (1 + M·Γ)⁻¹ and N the
/// columns (ν of each active component, −I·d ln γ/dI). The Jacobian is then R·P·M·N (R: the
/// equations' coefficients z, ν, ½z²), minus I on the ionic-strength diagonal.
struct Composition {
    lu: nalgebra::LU<f64, nalgebra::Dyn, nalgebra::Dyn>,
    /// P·M·N, species × unknowns.
    pmn: DMatrix<f64>,
    jacobian: DMatrix<f64>,
}

impl Composition {
    fn at(sys: &System, ev: &Evaluation, act: &[usize], p: &Point) -> Option<Self> {
        if sys.interactions.known.is_empty() {
            return None;
        }
        let ns = sys.species.len();
        let nc = sys.components.len();
        let m = act.len() + 1;
        let i = p.ln_i.exp();
        let mut a = DMatrix::identity(ns, ns);
        for &(s, t, e) in &sys.interactions.known {
            a[(s, t)] += ev.conc[s] * e * LN10;
            a[(t, s)] += ev.conc[t] * e * LN10;
        }
        let mut mn = DMatrix::zeros(ns, m);
        for s in 0..ns {
            let c = ev.conc[s];
            if c == 0.0 {
                continue;
            }
            for (k, &comp) in act.iter().enumerate() {
                mn[(s, k)] = c * sys.nu[s * nc + comp];
            }
            mn[(s, m - 1)] = -c * ev.dln_gamma_di[s] * i;
        }
        let lu = a.lu();
        let pmn = lu.solve(&mn)?;
        let mut r = DMatrix::zeros(m, ns);
        for s in 0..ns {
            let z = sys.charge_f[s];
            r[(0, s)] = z;
            r[(m - 1, s)] = 0.5 * z * z;
            for (k, &comp) in act.iter().enumerate().skip(1) {
                r[(k, s)] = sys.nu[s * nc + comp];
            }
        }
        let mut jacobian = &r * &pmn;
        jacobian[(m - 1, m - 1)] -= i;
        Some(Composition { lu, pmn, jacobian })
    }
}

/// How an infinitesimal amount of component `c`, whose total is zero, enters the solution:
/// as its species with one unit of it and no other component that is not `active`, each in
/// proportion to exp(ln K + Σ ν ln a − ln γ) at the point `p` (the log-sum-exp weights,
/// summing to 1; none when no species qualifies). `act` lists the components whose ln a is
/// among the unknowns.
fn zero_total_entry(
    sys: &System,
    ev: &Evaluation,
    p: &Point,
    c: usize,
    act: &[usize],
    active: impl Fn(usize) -> bool,
) -> Vec<(usize, f64)> {
    let (ns, nc) = (sys.species.len(), sys.components.len());
    let mut w: Vec<(usize, f64)> = Vec::new();
    for s in 0..ns {
        if sys.nu[s * nc + c] != 1.0 || !(1..nc).all(|d| d == c || sys.nu[s * nc + d] == 0.0 || active(d)) {
            continue;
        }
        let mut u = sys.ln_k[s] - ev.ln_gamma[s];
        for &a in act {
            let v = sys.nu[s * nc + a];
            if v != 0.0 {
                u += v * p.y[a];
            }
        }
        w.push((s, u));
    }
    let umax = w.iter().map(|x| x.1).fold(f64::NEG_INFINITY, f64::max);
    let sum: f64 = w.iter().map(|x| (x.1 - umax).exp()).sum();
    if sum > 0.0 {
        for x in &mut w {
            x.1 = (x.1 - umax).exp() / sum;
        }
        w
    } else {
        Vec::new()
    }
}

/// The names of the system's solid and gas rows.
fn solid_and_gas_names(sys: &System) -> Vec<std::sync::Arc<str>> {
    sys.phases
        .iter()
        .filter(|r| matches!(r.kind, RowKind::Solid { .. } | RowKind::Gas { .. }))
        .map(|r| r.name.clone())
        .collect()
}
