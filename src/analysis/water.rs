//! Water analyses as a water laboratory reports them: the ion balance of an analysis.
//!
//! - **Ion balance.** The sums of the cations and of the anions in meq/L, and the balance
//!   error 100·(Σcations − Σanions)/(Σcations + Σanions) in %. The acceptance rule is the
//!   one of *Standard Methods for the Examination of Water and Wastewater*, method 1030 E
//!   (APHA, AWWA, WEF), common practice: for an anion sum up to 3.0 meq/L the two sums may
//!   differ by 0.2 meq/L, from 3.0 to 10.0 meq/L by 2 %, from 10 to 800 meq/L by 5 %.

use crate::data::{Catalog, molar_mass_from_formula};
use crate::error::{Error, Result, check_parameter};

/// Molar mass of CaCO₃ in g/mol (IUPAC 2021 standard atomic weights), the basis of
/// hardness and alkalinity reported "as CaCO₃".
pub const CACO3_G_PER_MOL: f64 = 100.0869;

/// One measured ion of a water analysis: its name, charge number and concentration.
///
/// ```
/// use protolyte::analysis::water::MeasuredIon;
/// use protolyte::Catalog;
///
/// let cat = Catalog::builtin();
/// let ca = MeasuredIon::from_catalog_mg_per_l(&cat, "calcium", 40.08)?;
/// assert!((ca.meq_per_l() - 2.0).abs() < 1e-3);
/// let hco3 = MeasuredIon::species_mg_per_l("HCO3", -1, 61.02)?;
/// assert!((hco3.meq_per_l() - 1.0).abs() < 1e-3);
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct MeasuredIon {
    name: String,
    charge: i32,
    mmol_per_l: f64,
}

impl MeasuredIon {
    /// An ion given in mmol/L. Refuses a charge of zero or beyond ±12 and an amount that is
    /// negative or not finite.
    pub fn mmol_per_l(name: &str, charge: i32, mmol_per_l: f64) -> Result<Self> {
        if charge == 0 || charge.abs() > 12 {
            return Err(Error::InvalidParameter {
                what: name.to_string(),
                parameter: "charge number",
                value: f64::from(charge),
                reason: "an ion of an ion balance has a charge number from -12 to 12, not 0",
            });
        }
        if !(mmol_per_l.is_finite() && mmol_per_l >= 0.0) {
            return Err(Error::InvalidAmount {
                what: name.to_string(),
                value: mmol_per_l,
                unit: "mmol/L",
            });
        }
        Ok(Self {
            name: name.to_string(),
            charge,
            mmol_per_l,
        })
    }

    /// An ion given in mg/L with its molar mass in g/mol (finite and positive).
    pub fn mg_per_l(name: &str, charge: i32, mg_per_l: f64, molar_mass_g_per_mol: f64) -> Result<Self> {
        check_parameter(
            name,
            "molar mass (g/mol)",
            molar_mass_g_per_mol,
            f64::MIN_POSITIVE,
            f64::MAX,
            "must be finite and positive",
        )?;
        if !(mg_per_l.is_finite() && mg_per_l >= 0.0) {
            return Err(Error::InvalidAmount {
                what: name.to_string(),
                value: mg_per_l,
                unit: "mg/L",
            });
        }
        Self::mmol_per_l(name, charge, mg_per_l / molar_mass_g_per_mol)
    }

    /// An ion given in mg/L by its formula, with or without the charge written at its end
    /// (`"HCO3-"` or `"HCO3"`, `"SO4^2-"` or `"SO4"`), and its charge; the molar mass comes
    /// from the formula (IUPAC standard atomic weights).
    pub fn species_mg_per_l(formula: &str, charge: i32, mg_per_l: f64) -> Result<Self> {
        let m = molar_mass_from_formula(formula, charge).or_else(|_| molar_mass_from_formula(formula, 0))?;
        Self::mg_per_l(formula, charge, mg_per_l, m)
    }

    /// A simple ion of the catalogue (`"calcium"`, `"chloride"` …) given in mg/L; its charge
    /// and molar mass come from the catalogue entry.
    pub fn from_catalog_mg_per_l(catalog: &Catalog, name: &str, mg_per_l: f64) -> Result<Self> {
        let ion = catalog.ion(name)?;
        let m = molar_mass_from_formula(ion.display_name(), ion.charge())?;
        Self::mg_per_l(ion.name(), ion.charge(), mg_per_l, m)
    }

    /// Total alkalinity reported in mg/L as CaCO₃, entered as the equivalent amount of a
    /// singly charged anion ("alkalinity as HCO₃⁻"): 1 meq/L per 50.04 mg/L as CaCO₃, which
    /// is the convention of an ion balance (common practice).
    pub fn alkalinity_mg_per_l_as_caco3(mg_per_l: f64) -> Result<Self> {
        if !(mg_per_l.is_finite() && mg_per_l >= 0.0) {
            return Err(Error::InvalidAmount {
                what: "alkalinity".into(),
                value: mg_per_l,
                unit: "mg/L as CaCO3",
            });
        }
        Self::mmol_per_l("alkalinity (as HCO3-)", -1, mg_per_l / (CACO3_G_PER_MOL / 2.0))
    }

    /// The name given.
    pub fn name(&self) -> &str {
        &self.name
    }

    /// The charge number.
    pub fn charge(&self) -> i32 {
        self.charge
    }

    /// Concentration in mmol/L.
    pub fn mmol(&self) -> f64 {
        self.mmol_per_l
    }

    /// Equivalent concentration |z|·c in meq/L.
    pub fn meq_per_l(&self) -> f64 {
        f64::from(self.charge.abs()) * self.mmol_per_l
    }
}

/// The ion balance of a water analysis.
///
/// ```
/// use protolyte::analysis::water::{MeasuredIon, ion_balance};
///
/// let ions = [
///     MeasuredIon::mmol_per_l("Na+", 1, 1.0)?,
///     MeasuredIon::mmol_per_l("Ca2+", 2, 1.0)?,
///     MeasuredIon::mmol_per_l("Cl-", -1, 2.9)?,
/// ];
/// let b = ion_balance(&ions)?;
/// assert!((b.cations_meq_per_l - 3.0).abs() < 1e-12);
/// assert!((b.error_percent - 100.0 * 0.1 / 5.9).abs() < 1e-12);
/// // An anion sum below 3.0 meq/L may differ by 0.2 meq/L (Standard Methods 1030 E).
/// assert_eq!(b.within_acceptance(), Some(true));
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct IonBalance {
    /// Σ |z|·c of the cations, meq/L.
    pub cations_meq_per_l: f64,
    /// Σ |z|·c of the anions, meq/L.
    pub anions_meq_per_l: f64,
    /// 100·(Σcations − Σanions)/(Σcations + Σanions), %.
    pub error_percent: f64,
}

/// The acceptance limit of an ion balance (Standard Methods 1030 E, common practice).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum BalanceLimit {
    /// The two sums may differ by this much, meq/L (anion sums up to 3.0 meq/L).
    DifferenceMeqPerL(f64),
    /// The balance error may be this large in %, either sign.
    ErrorPercent(f64),
}

impl IonBalance {
    /// The limit that applies to this analysis, by its anion sum: 0.2 meq/L up to 3.0 meq/L,
    /// 2 % from 3.0 to 10.0 meq/L, 5 % from 10 to 800 meq/L; `None` above 800 meq/L, where the
    /// rule gives none.
    pub fn acceptance_limit(&self) -> Option<BalanceLimit> {
        let a = self.anions_meq_per_l;
        if a <= 3.0 {
            Some(BalanceLimit::DifferenceMeqPerL(0.2))
        } else if a <= 10.0 {
            Some(BalanceLimit::ErrorPercent(2.0))
        } else if a <= 800.0 {
            Some(BalanceLimit::ErrorPercent(5.0))
        } else {
            None
        }
    }

    /// True when the balance is within the acceptance limit; `None` when no limit applies.
    pub fn within_acceptance(&self) -> Option<bool> {
        Some(match self.acceptance_limit()? {
            BalanceLimit::DifferenceMeqPerL(d) => (self.cations_meq_per_l - self.anions_meq_per_l).abs() <= d,
            BalanceLimit::ErrorPercent(p) => self.error_percent.abs() <= p,
        })
    }
}

/// The ion balance of the ions of an analysis. Refuses an analysis with no cation or no
/// anion of positive concentration (the error would be ±100 % or undefined).
pub fn ion_balance(ions: &[MeasuredIon]) -> Result<IonBalance> {
    let cations: f64 = ions.iter().filter(|i| i.charge > 0).map(MeasuredIon::meq_per_l).sum();
    let anions: f64 = ions.iter().filter(|i| i.charge < 0).map(MeasuredIon::meq_per_l).sum();
    for (sum, what) in [(cations, "cations"), (anions, "anions")] {
        if !(sum > 0.0 && sum.is_finite()) {
            return Err(Error::InvalidParameter {
                what: "ion balance".into(),
                parameter: if what == "cations" {
                    "sum of cations (meq/L)"
                } else {
                    "sum of anions (meq/L)"
                },
                value: sum,
                reason: "an ion balance needs at least one cation and one anion of finite, positive concentration",
            });
        }
    }
    Ok(IonBalance {
        cations_meq_per_l: cations,
        anions_meq_per_l: anions,
        error_percent: 100.0 * (cations - anions) / (cations + anions),
    })
}
