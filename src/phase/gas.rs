//! Gases: a gas dissolves to one neutral form of an acid–base family (CO₂ to H₂CO₃*, NH₃ to
//! NH₃, H₂S to H₂S, SO₂ to H₂SO₃*) by Henry's law, a(form) = K_H · p.

use crate::error::{Error, Result, check_parameter};
use crate::protolyte::Protolyte;
use crate::quantity::Temperature;
use crate::vant_hoff::{
    LogKEquation, TemperatureBasis, TemperatureGap, checked_enthalpy, checked_equation, checked_heat_capacity,
};

/// A partial pressure, stored in bar. Henry's-law constants here refer to 1 bar; the gas is
/// taken as ideal, so its fugacity equals its partial pressure (within about 0.5 % for CO₂ at
/// 1 bar and 25 °C, less at atmospheric partial pressures).
///
/// ```
/// use protolyte::Pressure;
/// let p = Pressure::microatm(420.0);
/// assert!((p.bar() - 420e-6 * 1.01325).abs() < 1e-15);
/// assert_eq!(Pressure::pascal(1e5).bar(), 1.0);
/// assert!((Pressure::atm(1.0).bar() - 1.01325).abs() < 1e-15);
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Pressure {
    bar: f64,
}

/// One standard atmosphere in bar (exact by definition, 101 325 Pa; common practice).
pub const BAR_PER_ATM: f64 = 1.01325;

impl Pressure {
    /// A pressure in bar.
    pub fn bar_value(bar: f64) -> Self {
        Pressure { bar }
    }
    /// A pressure in standard atmospheres.
    pub fn atm(atm: f64) -> Self {
        Pressure { bar: atm * BAR_PER_ATM }
    }
    /// A pressure in pascal.
    pub fn pascal(pa: f64) -> Self {
        Pressure { bar: pa * 1e-5 }
    }
    /// A pressure in micro-atmospheres (µatm, the unit of atmospheric CO₂ records).
    pub fn microatm(uatm: f64) -> Self {
        Pressure {
            bar: uatm * 1e-6 * BAR_PER_ATM,
        }
    }
    /// The pressure in bar.
    pub fn bar(self) -> f64 {
        self.bar
    }
    /// The pressure in standard atmospheres.
    pub fn as_atm(self) -> f64 {
        self.bar / BAR_PER_ATM
    }
    /// The pressure in pascal.
    pub fn as_pascal(self) -> f64 {
        self.bar * 1e5
    }
    /// The pressure in micro-atmospheres.
    pub fn as_microatm(self) -> f64 {
        self.bar / BAR_PER_ATM * 1e6
    }

    /// Refuses a pressure that is not finite and positive, or above 1000 bar (the ideal-gas
    /// reading of Henry's law is far outside its use there), naming `what`.
    pub(crate) fn checked(self, what: &str) -> Result<f64> {
        check_parameter(
            what,
            "partial pressure (bar)",
            self.bar,
            f64::MIN_POSITIVE,
            1000.0,
            "must be positive and at most 1000 bar",
        )
    }
}

/// A gas and its Henry's-law equilibrium with one neutral form of an acid–base family:
/// `gas = form`, log₁₀ K_H in mol/(kg·bar) at 25 °C, with ΔH° of dissolution or an
/// analytic log K_H(T).
///
/// # Example
///
/// ```
/// use protolyte::{Catalog, Gas, Temperature};
///
/// let cat = Catalog::builtin();
/// // CO2(g) = H2CO3*, log K_H = -1.468 (L. N. Plummer, E. Busenberg, Geochim. Cosmochim.
/// // Acta 46 (1982) 1011; from memory).
/// let co2 = Gas::new("my CO2", &cat.protolyte("carbonate")?, 2, -1.468)?
///     .with_enthalpy_kj_per_mol(-19.98)?;
/// assert!(co2.log10_kh_at(Temperature::celsius(5.0)) > -1.468); // more soluble when cold
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct Gas {
    name: String,
    formula: Option<String>,
    family: Protolyte,
    protons: usize,
    log10_kh: f64,
    dh_kj_per_mol: Option<f64>,
    dcp_j_per_mol_k: Option<f64>,
    equation: Option<LogKEquation>,
    source: Option<String>,
}

impl Gas {
    /// A gas that dissolves to the form of `family` with `protons` bound protons, with
    /// log₁₀ K_H (mol/(kg·bar)) at 25 °C. Refuses an empty name, a form the family does not
    /// have, a charged form (a gas dissolves to a neutral species) and a log K_H that is not
    /// finite or beyond ±30.
    pub fn new(name: &str, family: &Protolyte, protons: usize, log10_kh: f64) -> Result<Self> {
        let name = name.trim();
        let bad = |reason: String| Error::InconsistentDefinition {
            name: if name.is_empty() {
                "(unnamed gas)".into()
            } else {
                name.into()
            },
            reason,
        };
        if name.is_empty() {
            return Err(bad("a gas needs a name".into()));
        }
        if protons > family.proton_count() {
            return Err(bad(format!(
                "the family `{}` has no form with {protons} protons (at most {})",
                family.name(),
                family.proton_count()
            )));
        }
        if family.form_charge(protons) != 0 {
            return Err(bad(format!(
                "it dissolves to {}, a charged form; a gas dissolves to a neutral species",
                family.form_name(protons)
            )));
        }
        check_parameter(name, "log K_H", log10_kh, -30.0, 30.0, "must be finite and within ±30")?;
        Ok(Gas {
            name: name.to_string(),
            formula: None,
            family: family.clone(),
            protons,
            log10_kh,
            dh_kj_per_mol: None,
            dcp_j_per_mol_k: None,
            equation: None,
            source: None,
        })
    }

    /// Sets ΔH° of dissolution (gas → aqueous form), kJ/mol.
    pub fn with_enthalpy_kj_per_mol(mut self, dh: f64) -> Result<Self> {
        self.dh_kj_per_mol = Some(checked_enthalpy(&self.name, dh)?);
        Ok(self)
    }

    /// Sets ΔCp° of dissolution, J/(mol·K).
    pub fn with_heat_capacity_j_per_mol_k(mut self, dcp: f64) -> Result<Self> {
        self.dcp_j_per_mol_k = Some(checked_heat_capacity(
            &self.name,
            dcp,
            5000.0,
            "must be finite and within ±5000",
        )?);
        Ok(self)
    }

    /// Sets an analytic log₁₀ K_H(T); refuses one that differs from log K_H at 25 °C by
    /// more than 0.03.
    pub fn with_log_k_equation(mut self, equation: LogKEquation) -> Result<Self> {
        self.equation = Some(checked_equation(&self.name, "", "gas", self.log10_kh, equation)?);
        Ok(self)
    }

    /// Sets the formula.
    pub fn with_formula(mut self, formula: &str) -> Self {
        self.formula = Some(formula.to_string());
        self
    }

    /// Records where the numbers come from.
    pub fn with_source(mut self, source: &str) -> Self {
        self.source = Some(source.to_string());
        self
    }

    /// The name.
    pub fn name(&self) -> &str {
        &self.name
    }

    /// The formula, if given.
    pub fn formula(&self) -> Option<&str> {
        self.formula.as_deref()
    }

    /// The family of the aqueous form.
    pub fn family(&self) -> &Protolyte {
        &self.family
    }

    /// Bound protons of the aqueous form.
    pub fn protons(&self) -> usize {
        self.protons
    }

    /// log₁₀ K_H at 25 °C, mol/(kg·bar).
    pub fn log10_kh(&self) -> f64 {
        self.log10_kh
    }

    /// ΔH° of dissolution, kJ/mol, if known.
    pub fn dh_kj_per_mol(&self) -> Option<f64> {
        self.dh_kj_per_mol
    }

    /// The analytic log K_H(T), if set.
    pub fn log_k_equation(&self) -> Option<LogKEquation> {
        self.equation
    }

    /// The published source, if recorded.
    pub fn source(&self) -> Option<&str> {
        self.source.as_deref()
    }

    /// log₁₀ K_H at `t` (see [`crate::vant_hoff`]).
    pub fn log10_kh_at(&self, t: Temperature) -> f64 {
        self.log10_kh_and_gap_at(t).0
    }

    /// The same gas on a replaced family, every other datum kept.
    pub(crate) fn rebuilt_with(&self, family: &Protolyte) -> Result<Self> {
        let mut g = Gas::new(&self.name, family, self.protons, self.log10_kh)?;
        g.formula.clone_from(&self.formula);
        g.dh_kj_per_mol = self.dh_kj_per_mol;
        g.dcp_j_per_mol_k = self.dcp_j_per_mol_k;
        g.equation = self.equation;
        g.source.clone_from(&self.source);
        Ok(g)
    }

    pub(crate) fn log10_kh_and_gap_at(&self, t: Temperature) -> (f64, Option<TemperatureGap>) {
        TemperatureBasis::from_data(self.equation, self.dh_kj_per_mol, self.dcp_j_per_mol_k).log10_k(self.log10_kh, t)
    }
}
