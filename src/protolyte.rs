//! An acid–base family (a protolyte): HₙA and its n stepwise dissociations.

use crate::error::{Error, Result, check_ion_size, check_parameter};
use crate::quantity::Temperature;
use crate::vant_hoff::{LogKEquation, TemperatureBasis, TemperatureGap};

/// One stepwise dissociation Hₖ A → Hₖ₋₁A + H⁺, with optional thermodynamic data.
#[derive(Debug, Clone, PartialEq)]
pub struct Step {
    /// Thermodynamic pKa at 25 °C, infinite dilution.
    pub pka: f64,
    /// Standard enthalpy of dissociation ΔH°, kJ/mol.
    pub dh_kj_per_mol: Option<f64>,
    /// Standard heat-capacity change of dissociation ΔCp°, J/(mol·K).
    pub dcp_j_per_mol_k: Option<f64>,
}

/// An acid–base family: a name, its stepwise pKa values (most protonated first) and the
/// charge of its most protonated form.
///
/// The family's forms are indexed by the number of bound protons `j`, from 0 (fully
/// deprotonated) to n (the most protonated form). Form `j` carries charge
/// `charge_most_protonated − (n − j)`; so ammonium is `Protolyte::new("ammonia", &[9.245], 1)`
/// and glycine (H₂Gly⁺ ⇌ HGly ⇌ Gly⁻) is `Protolyte::new("glycine", &[2.35, 9.78], 1)`.
///
/// # Example
///
/// ```
/// use protolyte::Protolyte;
///
/// let acid = Protolyte::new("lab acid X", &[3.1, 6.2], 0)?
///     .with_enthalpies_kj_per_mol(&[-2.0, 1.5])?;
/// assert_eq!(acid.steps().len(), 2);
/// assert_eq!(acid.charge_of_form(0), Some(-2));
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct Protolyte {
    name: String,
    formula: Option<String>,
    charge_most_protonated: i32,
    steps: Vec<Step>,
    ion_size_angstrom: Option<f64>,
    /// Per-form ion sizes, indexed by the number of bound protons (0 = fully deprotonated).
    form_ion_sizes: Option<Vec<Option<f64>>>,
    source: Option<String>,
    /// An analytic log K(T) equation per step, where its source gives one.
    equations: Vec<Option<LogKEquation>>,
    /// Display names of the forms, most protonated first, where they are given.
    form_names: Option<Vec<String>>,
}

/// Range accepted for a pKa (wider than the declared test domain −2..16).
const PKA_RANGE: (f64, f64) = (-10.0, 25.0);

impl Protolyte {
    /// A family with stepwise `pkas` (most protonated first) at 25 °C, infinite dilution.
    ///
    /// Refuses an empty name, no steps or more than 12, a pKa outside −10..25 or not finite,
    /// pKa values out of order (each step's pKa is at least the one before), and a charge
    /// outside −10..10.
    pub fn new(name: &str, pkas: &[f64], charge_most_protonated: i32) -> Result<Self> {
        let name = name.trim();
        if name.is_empty() {
            return Err(Error::InconsistentDefinition {
                name: "(unnamed protolyte)".into(),
                reason: "a protolyte needs a name".into(),
            });
        }
        if pkas.is_empty() || pkas.len() > 12 {
            return Err(Error::InconsistentDefinition {
                name: name.into(),
                reason: format!("a protolyte needs 1 to 12 dissociation steps, got {}", pkas.len()),
            });
        }
        if !(-10..=10).contains(&charge_most_protonated) {
            return Err(Error::InconsistentDefinition {
                name: name.into(),
                reason: format!("charge of the most protonated form {charge_most_protonated} is outside −10..10"),
            });
        }
        if let Some(k) = pkas.windows(2).position(|w| w[1] < w[0]) {
            return Err(Error::InconsistentDefinition {
                name: name.into(),
                reason: format!(
                    "pKa values ascend, most protonated form first: pKa{} = {} follows pKa{} = {}",
                    k + 2,
                    pkas[k + 1],
                    k + 1,
                    pkas[k]
                ),
            });
        }
        let mut steps = Vec::with_capacity(pkas.len());
        for &p in pkas {
            check_parameter(
                name,
                "pKa",
                p,
                PKA_RANGE.0,
                PKA_RANGE.1,
                "must be finite and within -10..25",
            )?;
            steps.push(Step {
                pka: p,
                dh_kj_per_mol: None,
                dcp_j_per_mol_k: None,
            });
        }
        Ok(Protolyte {
            name: name.to_string(),
            formula: None,
            charge_most_protonated,
            equations: vec![None; steps.len()],
            steps,
            ion_size_angstrom: None,
            form_ion_sizes: None,
            source: None,
            form_names: None,
        })
    }

    /// Sets the dissociation enthalpies ΔH° (kJ/mol), one per step.
    pub fn with_enthalpies_kj_per_mol(mut self, dh: &[f64]) -> Result<Self> {
        self.check_len(dh.len(), "enthalpies")?;
        for (s, &h) in self.steps.iter_mut().zip(dh) {
            s.dh_kj_per_mol = Some(check_enthalpy(&self.name, h)?);
        }
        Ok(self)
    }

    /// Sets the dissociation heat-capacity changes ΔCp° (J/(mol·K)), one per step.
    pub fn with_heat_capacities_j_per_mol_k(mut self, dcp: &[f64]) -> Result<Self> {
        self.check_len(dcp.len(), "heat capacities")?;
        for (s, &c) in self.steps.iter_mut().zip(dcp) {
            s.dcp_j_per_mol_k = Some(check_heat_capacity(&self.name, c)?);
        }
        Ok(self)
    }

    /// Sets ΔH° (kJ/mol) and ΔCp° (J/(mol·K)) of one step `step` (0-based, most protonated
    /// first); `None` leaves that datum unknown. Refuses a step index beyond the steps and
    /// values outside ±500 kJ/mol or ±2000 J/(mol·K).
    ///
    /// ```
    /// use protolyte::Protolyte;
    /// let p = Protolyte::new("x", &[3.0, 6.0], 0)?.with_step_thermodynamics(1, Some(4.0), None)?;
    /// assert_eq!(p.steps()[0].dh_kj_per_mol, None);
    /// assert_eq!(p.steps()[1].dh_kj_per_mol, Some(4.0));
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn with_step_thermodynamics(
        mut self,
        step: usize,
        dh_kj_per_mol: Option<f64>,
        dcp_j_per_mol_k: Option<f64>,
    ) -> Result<Self> {
        if step >= self.steps.len() {
            return Err(Error::InconsistentDefinition {
                name: self.name.clone(),
                reason: format!(
                    "ΔH°/ΔCp° for step {} of a family with {} steps",
                    step + 1,
                    self.steps.len()
                ),
            });
        }
        if let Some(h) = dh_kj_per_mol {
            check_enthalpy(&self.name, h)?;
        }
        if let Some(c) = dcp_j_per_mol_k {
            check_heat_capacity(&self.name, c)?;
        }
        self.steps[step].dh_kj_per_mol = dh_kj_per_mol;
        self.steps[step].dcp_j_per_mol_k = dcp_j_per_mol_k;
        Ok(self)
    }

    /// Sets an analytic equation for log₁₀ Ka(T) of step `step` (0-based, most protonated
    /// first), used instead of ΔH° and ΔCp° for that step. The equation gives the change of
    /// log Ka from 25 °C; the step's pKa at 25 °C stays as given.
    ///
    /// Refuses a step index beyond the steps and an equation whose pKa at 25 °C differs from
    /// the step's by more than 0.03 (the two would describe different data).
    ///
    /// ```
    /// use protolyte::{Protolyte, Temperature, vant_hoff::{LogKEquation, ValidityRange}};
    ///
    /// // Acetic acid, Harned & Ehlers (1933): pKa = 1170.48/T − 3.1649 + 0.013399·T, 0–60 °C
    /// // (from memory).
    /// let eq = LogKEquation::new([3.1649, -0.013399, -1170.48, 0.0, 0.0], ValidityRange::celsius(0.0, 60.0)?)?;
    /// let acetic = Protolyte::new("acetic", &[4.756], 0)?.with_log_k_equation(0, eq)?;
    /// assert!((acetic.pka_at(0, Temperature::celsius(50.0))? - 4.787).abs() < 0.001);
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn with_log_k_equation(mut self, step: usize, equation: LogKEquation) -> Result<Self> {
        let Some(s) = self.steps.get(step) else {
            return Err(Error::InconsistentDefinition {
                name: self.name.clone(),
                reason: format!(
                    "a log K equation for step {} of a family with {} steps",
                    step + 1,
                    self.steps.len()
                ),
            });
        };
        let pka_eq = -equation.log10_k(Temperature::STANDARD);
        if (pka_eq - s.pka).abs() > 0.03 {
            return Err(Error::InconsistentDefinition {
                name: self.name.clone(),
                reason: format!(
                    "the log K equation of step {} gives pKa {pka_eq:.3} at 25 °C, the step has {}",
                    step + 1,
                    s.pka
                ),
            });
        }
        self.equations[step] = Some(equation);
        Ok(self)
    }

    /// The analytic log K(T) equation of step `step` (0-based), if one is set.
    pub fn log_k_equation(&self, step: usize) -> Option<LogKEquation> {
        self.equations.get(step).copied().flatten()
    }

    /// Sets the steps directly (used by the built-in data, which may lack some enthalpies).
    pub(crate) fn with_steps(mut self, steps: Vec<Step>) -> Result<Self> {
        self.check_len(steps.len(), "steps")?;
        for s in &steps {
            check_parameter(
                &self.name,
                "pKa",
                s.pka,
                PKA_RANGE.0,
                PKA_RANGE.1,
                "must be finite and within -10..25",
            )?;
            if let Some(h) = s.dh_kj_per_mol {
                check_enthalpy(&self.name, h)?;
            }
            if let Some(c) = s.dcp_j_per_mol_k {
                check_heat_capacity(&self.name, c)?;
            }
        }
        self.steps = steps;
        Ok(self)
    }

    /// Sets the ion-size parameter å (ångström) for the extended Debye–Hückel model.
    pub fn with_ion_size_angstrom(mut self, a: f64) -> Result<Self> {
        self.ion_size_angstrom = Some(check_ion_size(&self.name, a)?);
        Ok(self)
    }

    /// Sets one ion-size parameter å (ångström) per form, most protonated first (so
    /// `sizes_angstrom.len()` is the number of steps + 1), as tabulated per ion by
    /// J. Kielland, *J. Am. Chem. Soc.* **59** (1937) 1675. The extended Debye–Hückel model
    /// then uses each form's own size; forms without one fall back to the family's single
    /// size ([`with_ion_size_angstrom`](Self::with_ion_size_angstrom)).
    ///
    /// Each charged form's size must lie within 0.5..20 Å. A neutral form's value is accepted
    /// whatever it is (tables often print 0 or leave it blank), because no model uses it; a
    /// value outside 0.5..20 Å or not finite is not stored.
    ///
    /// ```
    /// use protolyte::Protolyte;
    ///
    /// // Phosphate: H3PO4 (neutral), H2PO4⁻ 4 Å, HPO4²⁻ 4 Å, PO4³⁻ 4 Å (Kielland 1937).
    /// let p = Protolyte::new("phosphate", &[2.148, 7.198, 12.35], 0)?
    ///     .with_form_ion_sizes(&[0.0, 4.0, 4.0, 4.0])?;
    /// assert_eq!(p.form_ion_size_angstrom(1), Some(4.0)); // HPO4²⁻ (one bound proton)
    /// assert_eq!(p.form_ion_size_angstrom(3), None); // neutral, no family size set
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn with_form_ion_sizes(mut self, sizes_angstrom: &[f64]) -> Result<Self> {
        let n = self.steps.len();
        if sizes_angstrom.len() != n + 1 {
            return Err(Error::InconsistentDefinition {
                name: self.name.clone(),
                reason: format!(
                    "{} form ion sizes given for {} forms (one per form, most protonated first)",
                    sizes_angstrom.len(),
                    n + 1
                ),
            });
        }
        let mut by_protons = vec![None; n + 1];
        for (k, &a) in sizes_angstrom.iter().enumerate() {
            let protons = n - k;
            if self.form_charge(protons) == 0 {
                by_protons[protons] = (a.is_finite() && (0.5..=20.0).contains(&a)).then_some(a);
            } else {
                let what = format!("{} (form {})", self.name, self.form_name(protons));
                by_protons[protons] = Some(check_ion_size(&what, a)?);
            }
        }
        self.form_ion_sizes = Some(by_protons);
        Ok(self)
    }

    /// Sets the formula of the most protonated form, e.g. `"H3PO4"` (used for species names).
    pub fn with_formula(mut self, formula: &str) -> Self {
        self.formula = Some(formula.trim().to_string());
        self
    }

    /// Sets the display name of every form, most protonated first (one more name than
    /// steps), for a family whose formula does not show where its protons sit.
    ///
    /// Each name ends with its form's charge in the notation [`form_name`](Self::form_name)
    /// uses: nothing for 0, a bare sign for ±1 (`B(OH)4-`), a caret, the magnitude and the
    /// sign otherwise (`H2en^2+`). Refuses the wrong number of names, an empty name, a name
    /// used twice and a name whose written charge is not its form's.
    ///
    /// ```
    /// use protolyte::Protolyte;
    /// let en = Protolyte::new("ethylenediamine", &[6.85, 9.93], 2)?
    ///     .with_form_names(&["H2en^2+", "Hen+", "en"])?;
    /// assert_eq!(en.form_name(1), "Hen+");
    /// assert!(Protolyte::new("x", &[4.0], 0)?.with_form_names(&["HX", "X"]).is_err());
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn with_form_names(mut self, names: &[&str]) -> Result<Self> {
        let n = self.steps.len();
        let refuse = |reason: String| Error::InconsistentDefinition {
            name: self.name.clone(),
            reason,
        };
        if names.len() != n + 1 {
            return Err(refuse(format!(
                "{} form names given for {} forms (one per form, most protonated first)",
                names.len(),
                n + 1
            )));
        }
        let mut out = Vec::with_capacity(n + 1);
        for (k, raw) in names.iter().enumerate() {
            let name = raw.trim();
            let charge = self.charge_most_protonated - k as i32;
            if name.is_empty() {
                return Err(refuse(format!("form name {} is empty", k + 1)));
            }
            if written_charge(name) != Some(charge) {
                let ending = match charge {
                    0 => "no charge sign".to_string(),
                    z => format!("\"{}\"", charge_suffix(z)),
                };
                return Err(refuse(format!(
                    "form name {} \"{name}\" (form with {} protons, charge {charge}) must end with {ending}",
                    k + 1,
                    n - k
                )));
            }
            if out.iter().any(|o: &String| species_name_eq(o, name)) {
                return Err(refuse(format!("form name \"{name}\" is given twice")));
            }
            out.push(name.to_string());
        }
        self.form_names = Some(out);
        Ok(self)
    }

    /// The display names of the forms given with [`with_form_names`](Self::with_form_names),
    /// most protonated first.
    pub fn form_names(&self) -> Option<&[String]> {
        self.form_names.as_deref()
    }

    /// Records where the numbers come from.
    pub fn with_source(mut self, source: &str) -> Self {
        self.source = Some(source.to_string());
        self
    }

    fn check_len(&self, len: usize, what: &str) -> Result<()> {
        if len == self.steps.len() {
            Ok(())
        } else {
            Err(Error::InconsistentDefinition {
                name: self.name.clone(),
                reason: format!("{len} {what} given for {} dissociation steps", self.steps.len()),
            })
        }
    }

    /// The family's name.
    pub fn name(&self) -> &str {
        &self.name
    }

    /// The formula of the most protonated form, if known.
    pub fn formula(&self) -> Option<&str> {
        self.formula.as_deref()
    }

    /// The stepwise dissociations, most protonated first.
    pub fn steps(&self) -> &[Step] {
        &self.steps
    }

    /// The number of dissociable protons n.
    pub fn proton_count(&self) -> usize {
        self.steps.len()
    }

    /// Charge of the most protonated form.
    pub fn charge_most_protonated(&self) -> i32 {
        self.charge_most_protonated
    }

    /// Charge of the form with `protons` bound protons, or `None` when the family has no
    /// such form (`protons` above [`proton_count`](Self::proton_count)).
    ///
    /// ```
    /// use protolyte::Protolyte;
    /// let glycine = Protolyte::new("glycine", &[2.35, 9.78], 1)?;
    /// assert_eq!(glycine.charge_of_form(2), Some(1));
    /// assert_eq!(glycine.charge_of_form(0), Some(-1));
    /// assert_eq!(glycine.charge_of_form(3), None);
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn charge_of_form(&self, protons: usize) -> Option<i32> {
        // n ≤ 12 and |charge| ≤ 10 (checked by `new`), so the sum cannot overflow.
        let lost = i32::try_from(self.steps.len().checked_sub(protons)?).ok()?;
        self.charge_most_protonated.checked_sub(lost)
    }

    /// Charge of form `protons` for the crate's own loops over the forms (`protons` ≤ n
    /// there; a larger value is taken as the most protonated form).
    pub(crate) fn form_charge(&self, protons: usize) -> i32 {
        debug_assert!(protons <= self.steps.len());
        let lost = self.steps.len() - protons.min(self.steps.len());
        // lost ≤ 12 (checked by `new`).
        self.charge_most_protonated - lost as i32
    }

    /// The family's single ion-size parameter, if set.
    pub fn ion_size_angstrom(&self) -> Option<f64> {
        self.ion_size_angstrom
    }

    /// The ion size (Å) of the form with `protons` bound protons: its own size where
    /// [`with_form_ion_sizes`](Self::with_form_ion_sizes) gave one, else the family's single
    /// size, else `None` (the system then uses
    /// [`DEFAULT_ION_SIZE_ANGSTROM`](crate::activity::DEFAULT_ION_SIZE_ANGSTROM)).
    pub fn form_ion_size_angstrom(&self, protons: usize) -> Option<f64> {
        self.form_ion_sizes
            .as_ref()
            .and_then(|v| v.get(protons).copied().flatten())
            .or(self.ion_size_angstrom)
    }

    /// The per-form ion sizes (Å) as given, most protonated first (`None` for a form without
    /// one), or `None` when none were given.
    pub fn form_ion_sizes(&self) -> Option<Vec<Option<f64>>> {
        self.form_ion_sizes.as_ref().map(|v| v.iter().rev().copied().collect())
    }

    /// The published source of the numbers, if recorded.
    pub fn source(&self) -> Option<&str> {
        self.source.as_deref()
    }

    /// pKa of step `step` (0-based, most protonated first) at temperature `t`: from the
    /// step's analytic equation where it has one, else by van't Hoff from ΔH° and ΔCp° where
    /// known; without either the 25 °C value is returned unchanged. See [`crate::vant_hoff`]
    /// for the range each way is trusted over; a solve says in its warnings where a step
    /// falls short.
    ///
    /// Refuses a `step` the family does not have (`Error::InconsistentDefinition`) and a temperature
    /// at which van't Hoff gives no finite value (see [`crate::vant_hoff::log10_k_at`]).
    ///
    /// ```
    /// use protolyte::{Protolyte, Temperature};
    /// let p = Protolyte::new("x", &[7.0], 0)?.with_enthalpies_kj_per_mol(&[20.0])?;
    /// assert!(p.pka_at(0, Temperature::celsius(37.0))? < 7.0);
    /// assert!(p.pka_at(1, Temperature::celsius(37.0)).is_err());
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn pka_at(&self, step: usize, t: Temperature) -> Result<f64> {
        if step >= self.steps.len() {
            return Err(Error::InconsistentDefinition {
                name: self.name.clone(),
                reason: format!("has no dissociation step {step} (steps 0..{} exist)", self.steps.len()),
            });
        }
        if !(t.kelvin().is_finite() && t.kelvin() > 0.0) {
            return Err(Error::OutOfDomain {
                what: "temperature (K) for a pKa",
                value: t.kelvin(),
                domain: "above 0 K",
            });
        }
        let pka = self.pka_and_gap_at(step, t).0;
        if pka.is_finite() {
            Ok(pka)
        } else {
            Err(Error::OutOfDomain {
                what: "temperature (K) for a pKa (its temperature data give no finite value)",
                value: t.kelvin(),
                domain: "a temperature at which the step's data give a finite pKa",
            })
        }
    }

    /// pKa of step `step` at `t` and what falls short in its temperature data at `t`
    /// (for the crate's own loops over the steps: `step` < n there).
    pub(crate) fn pka_and_gap_at(&self, step: usize, t: Temperature) -> (f64, Option<TemperatureGap>) {
        let i = step.min(self.steps.len() - 1);
        let s = &self.steps[i];
        let basis = TemperatureBasis::from_data(self.equations[i], s.dh_kj_per_mol, s.dcp_j_per_mol_k);
        let (lk, gap) = basis.log10_k(-s.pka, t);
        (-lk, gap)
    }

    /// A display name for the form with `protons` bound protons: the name given with
    /// [`with_form_names`](Self::with_form_names), else one built from the formula of the
    /// most protonated form where it shows where the protons sit: a leading Hₙ
    /// ("H3PO4" → "H2PO4-") or a trailing ammonium NHₖ ("NH4+" → "NH3"). Otherwise
    /// "name(Hj)" with the charge; for a `protons` above n (no such form) "name(Hj)" without
    /// one.
    ///
    /// The charge is written as a bare sign for ±1 ("H2PO4-") and as a caret, the magnitude
    /// and the sign otherwise ("HPO4^2-", "PO4^3-").
    ///
    /// ```
    /// use protolyte::Protolyte;
    /// let p = Protolyte::new("phosphate", &[2.1, 7.2, 12.3], 0)?.with_formula("H3PO4");
    /// assert_eq!(p.form_name(1), "HPO4^2-");
    /// let a = Protolyte::new("ammonia", &[9.2], 1)?.with_formula("NH4+");
    /// assert_eq!(a.form_name(0), "NH3");
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn form_name(&self, protons: usize) -> String {
        let n = self.steps.len();
        let Some(charge) = self.charge_of_form(protons) else {
            return format!("{}(H{protons})", self.name);
        };
        if let Some(names) = &self.form_names {
            return names[n - protons].clone();
        }
        let suffix = charge_suffix(charge);
        if let Some(core) = self
            .formula
            .as_deref()
            .and_then(|f| strip_charge(f, self.charge_most_protonated))
        {
            let lost = n - protons.min(n);
            if let Some(stem) = ammonium_stem(core, n) {
                let (stem, d) = stem;
                let k = d - lost;
                let h = match k {
                    0 => String::new(),
                    1 => "H".to_string(),
                    k => format!("H{k}"),
                };
                return format!("{stem}N{h}{suffix}");
            }
            let prefix = if n == 1 { "H".to_string() } else { format!("H{n}") };
            if let Some(rest) = core.strip_prefix(&prefix)
                && rest.starts_with(|c: char| c.is_ascii_uppercase() || c == '(')
            {
                let h = match protons {
                    0 => String::new(),
                    1 => "H".to_string(),
                    k => format!("H{k}"),
                };
                return format!("{h}{rest}{suffix}");
            }
        }
        format!("{}(H{protons}){suffix}", self.name)
    }
}

/// The formula without its charge ("H6Y^2+" or "H6Y2+" with charge +2 → "H6Y"), or `None`
/// when the written charge does not match.
fn strip_charge(formula: &str, charge: i32) -> Option<&str> {
    let f = formula.trim();
    if charge == 0 {
        return (!f.ends_with(['+', '-'])).then_some(f);
    }
    let sign = if charge > 0 { '+' } else { '-' };
    let f = f.strip_suffix(sign)?;
    let mag = charge.unsigned_abs();
    if mag == 1 {
        Some(f)
    } else {
        let f = f.strip_suffix(mag.to_string().as_str())?;
        Some(f.strip_suffix('^').unwrap_or(f))
    }
}

/// The charge a species name writes in the library's notation: 0 without a final sign, ±1
/// for a bare final sign, ±m for "^m" and the sign; `None` for a caret without a magnitude.
fn written_charge(name: &str) -> Option<i32> {
    let sign = match name.chars().last() {
        Some('+') => 1,
        Some('-') => -1,
        _ => return Some(0),
    };
    let body = &name[..name.len() - 1];
    let digits = body.len() - body.trim_end_matches(|c: char| c.is_ascii_digit()).len();
    let (head, mag) = body.split_at(body.len() - digits);
    if head.ends_with('^') {
        let m: i32 = mag.parse().ok().filter(|&m: &i32| m > 0)?;
        Some(sign * m)
    } else if body.ends_with('^') {
        None
    } else {
        Some(sign)
    }
}

/// Whether `query` names the species shown as `shown`: the same text, or `shown` as it was
/// written before the library used one charge notation: a charge above 1 without the caret
/// ("CO32-" for "CO3^2-", "Ca2+" for "Ca^2+") or a charge of 1 with one ("CaHCO3^+" for
/// "CaHCO3+"). Case counts ("Co" is not "CO"). Every lookup of a species by name uses this
/// rule; it is public so that the bindings find labels the same way.
///
/// ```
/// use protolyte::species_name_eq;
/// assert!(species_name_eq("CO3^2-", "CO32-"));
/// assert!(species_name_eq("CaHCO3+", "CaHCO3^+"));
/// assert!(!species_name_eq("AlF2+", "AlF^2+"));
/// assert!(!species_name_eq("CO3^2-", "co32-"));
/// ```
pub fn species_name_eq(shown: &str, query: &str) -> bool {
    if shown == query {
        return true;
    }
    let Some(sign) = shown.chars().last().filter(|c| matches!(c, '+' | '-')) else {
        return false;
    };
    let body = &shown[..shown.len() - 1];
    let digits = body.len() - body.trim_end_matches(|c: char| c.is_ascii_digit()).len();
    let (head, mag) = body.split_at(body.len() - digits);
    let rest_is = |rest: Option<&str>, tail: &str| rest.is_some_and(|r| r.strip_suffix(sign) == Some(tail));
    match head.strip_suffix('^') {
        // "CO3^2-" was "CO32-".
        Some(core) if digits > 0 => rest_is(query.strip_prefix(core), mag),
        Some(_) => false,
        // "CaHCO3+" was "CaHCO3^+".
        None => rest_is(query.strip_prefix(body), "^"),
    }
}

/// For "...NHₖ" with k ≥ n, the text before "N" and k.
fn ammonium_stem(core: &str, n: usize) -> Option<(&str, usize)> {
    let digits = core.len() - core.trim_end_matches(|c: char| c.is_ascii_digit()).len();
    let (head, num) = core.split_at(core.len() - digits);
    let stem = head.strip_suffix("NH")?;
    let k: usize = if num.is_empty() { 1 } else { num.parse().ok()? };
    (k >= n).then_some((stem, k))
}

fn check_enthalpy(name: &str, dh_kj_per_mol: f64) -> Result<f64> {
    check_parameter(
        name,
        "ΔH° (kJ/mol)",
        dh_kj_per_mol,
        -500.0,
        500.0,
        "must be finite and within ±500",
    )
}

fn check_heat_capacity(name: &str, dcp: f64) -> Result<f64> {
    check_parameter(
        name,
        "ΔCp° (J/(mol·K))",
        dcp,
        -2000.0,
        2000.0,
        "must be finite and within ±2000",
    )
}

/// "", "+", "^2+", "-", "^3-": a bare sign for ±1, a caret, the magnitude and the sign
/// otherwise.
pub(crate) fn charge_suffix(z: i32) -> String {
    match z {
        0 => String::new(),
        1 => "+".into(),
        -1 => "-".into(),
        z if z > 0 => format!("^{z}+"),
        z => format!("^{}-", -z),
    }
}
