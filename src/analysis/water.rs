//! Water analyses as a water laboratory reports them and as water treatment uses them: the
//! ion balance of an analysis, the Langelier saturation index, the calcium carbonate
//! precipitation potential, and the dose of a reagent that reaches a target.
//!
//! - **Ion balance.** The sums of the cations and of the anions in meq/L, and the balance
//!   error 100·(Σcations − Σanions)/(Σcations + Σanions) in %. The acceptance rule is the
//!   one of *Standard Methods for the Examination of Water and Wastewater*, method 1030 E
//!   (APHA, AWWA, WEF), common practice: for an anion sum up to 3.0 meq/L the two sums may
//!   differ by 0.2 meq/L, from 3.0 to 10.0 meq/L by 2 %, from 10 to 800 meq/L by 5 %.
//! - **Langelier saturation index** (W. F. Langelier, *J. Am. Water Works Assoc.* 28 (1936)
//!   1500–1521): LSI = pH − pHs, where pHs is the pH at which the water, with its measured
//!   calcium and alkalinity, would be saturated with calcite. pHs is computed here as in
//!   *Standard Methods* method 2330 B: pHs = pK₂ − pKs − log₁₀(γ₂[Ca²⁺]) − log₁₀(γ₁[HCO₃⁻]),
//!   with [HCO₃⁻] taken from the total alkalinity at pH = pHs (so pHs is found as the root of
//!   one monotone equation), γ from the Davies equation, pK₂ and pKs from the catalogue at
//!   the water's temperature. As in the method, calcium and alkalinity are the analytical
//!   totals: ion pairs (CaHCO₃⁺, CaSO₄⁰ …) are not subtracted, which is why the LSI of a water
//!   can differ by some hundredths to tenths from the calcite saturation index of a full
//!   speciation.
//!
//! - **Calcium carbonate precipitation potential** (CCPP; J. R. Rossum, D. T. Merrill, "An
//!   evaluation of the calcium carbonate saturation indexes", *J. Am. Water Works Assoc.* 75
//!   (1983) 95; *Standard Methods* 2330): the amount of calcium carbonate that must precipitate
//!   (positive) or dissolve (negative) for the water to reach equilibrium with it, here in a
//!   closed system, computed by the solver with calcite allowed to form
//!   ([`precipitation_potential`]). The sign convention is the one *Standard Methods* gives
//!   (APHA/AWWA/WEF 2005, as quoted in a stored copy of the abstract of a paper in *J. Water
//!   Supply Res. Technol.–Aqua* 67 (2018) 1).
//! - **Dose search** ([`dose_for_target`]): the amount of a reagent that brings a water to a
//!   target pH, saturation index or hardness, with the recipe's allowed solids and gases in
//!   force (lime softening to a hardness, acid to a saturation index).
//!
//! A positive LSI or CCPP means the water tends to deposit calcium carbonate; a negative one
//! that it tends to dissolve it (and calcium carbonate scale already there). Neither says
//! how fast. Dosing chemicals into drinking or pool water is regulated: local codes govern.

use crate::activity::{ActivityModel, DebyeHuckelConstants};
use crate::conditions::Conditions;
use crate::data::{Catalog, molar_mass_from_formula};
use crate::error::{Error, Result, check_parameter};
use crate::quantity::{Amount, Temperature};
use crate::reagent::Reagent;
use crate::recipe::Recipe;
use crate::water;

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

/// What the Langelier index needs of a water: temperature, measured pH, total calcium, total
/// alkalinity and ionic strength.
///
/// ```
/// use protolyte::analysis::water::CarbonateWater;
/// use protolyte::Temperature;
///
/// // 100 mg/L calcium hardness and 100 mg/L alkalinity (both as CaCO3), 300 mg/L dissolved
/// // solids: I = 2.5e-5 × 300 = 0.0075 mol/L (Langelier 1936).
/// let w = CarbonateWater::from_lab_units(Temperature::celsius(25.0), 8.0, 100.0, 100.0, 300.0)?;
/// assert!((w.calcium_mol_per_l() - 0.999_13e-3).abs() < 1e-8);
/// assert!((w.alkalinity_eq_per_l() - 1.998_26e-3).abs() < 1e-8);
/// assert!((w.ionic_strength_mol_per_l() - 0.0075).abs() < 1e-12);
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CarbonateWater {
    temperature: Temperature,
    ph: f64,
    calcium_mol_per_l: f64,
    alkalinity_eq_per_l: f64,
    ionic_strength_mol_per_l: f64,
}

impl CarbonateWater {
    /// A water from its temperature (0–100 °C), measured pH (0–14), total calcium (mol/L,
    /// positive), total alkalinity (eq/L, positive) and ionic strength (mol/L, 0–0.5: the
    /// Davies equation's range).
    pub fn new(
        temperature: Temperature,
        ph: f64,
        calcium_mol_per_l: f64,
        alkalinity_eq_per_l: f64,
        ionic_strength_mol_per_l: f64,
    ) -> Result<Self> {
        let t = temperature.as_celsius();
        if !(t.is_finite() && (0.0..=100.0).contains(&t)) {
            return Err(Error::OutOfDomain {
                what: "temperature (°C) of a water for the Langelier index",
                value: t,
                domain: "0..100 °C",
            });
        }
        check_parameter("water", "pH", ph, 0.0, 14.0, "must be finite and within 0..14")?;
        for (v, parameter, reason) in [
            (
                calcium_mol_per_l,
                "calcium (mol/L)",
                "must be positive and at most 10 mol/L (a water without calcium has no calcite saturation)",
            ),
            (
                alkalinity_eq_per_l,
                "total alkalinity (eq/L)",
                "must be positive and at most 10 eq/L (a water without alkalinity has no calcite saturation)",
            ),
        ] {
            check_parameter("water", parameter, v, f64::MIN_POSITIVE, 10.0, reason)?;
        }
        check_parameter(
            "water",
            "ionic strength (mol/L)",
            ionic_strength_mol_per_l,
            0.0,
            0.5,
            "must be finite and within 0..0.5 mol/L, the range of the Davies equation",
        )?;
        Ok(Self {
            temperature,
            ph,
            calcium_mol_per_l,
            alkalinity_eq_per_l,
            ionic_strength_mol_per_l,
        })
    }

    /// A water from the units of a water laboratory: calcium hardness and total alkalinity in
    /// mg/L as CaCO₃, and total dissolved solids in mg/L, from which the ionic strength is
    /// estimated as I = 2.5·10⁻⁵ × TDS (Langelier 1936; common practice).
    pub fn from_lab_units(
        temperature: Temperature,
        ph: f64,
        calcium_hardness_mg_per_l_as_caco3: f64,
        alkalinity_mg_per_l_as_caco3: f64,
        tds_mg_per_l: f64,
    ) -> Result<Self> {
        if !(tds_mg_per_l.is_finite() && tds_mg_per_l >= 0.0) {
            return Err(Error::InvalidAmount {
                what: "total dissolved solids".into(),
                value: tds_mg_per_l,
                unit: "mg/L",
            });
        }
        Self::new(
            temperature,
            ph,
            calcium_hardness_mg_per_l_as_caco3 / (CACO3_G_PER_MOL * 1000.0),
            alkalinity_mg_per_l_as_caco3 / (CACO3_G_PER_MOL * 500.0),
            2.5e-5 * tds_mg_per_l,
        )
    }

    /// Temperature.
    pub fn temperature(&self) -> Temperature {
        self.temperature
    }

    /// Measured pH.
    pub fn ph(&self) -> f64 {
        self.ph
    }

    /// Total calcium, mol/L.
    pub fn calcium_mol_per_l(&self) -> f64 {
        self.calcium_mol_per_l
    }

    /// Total alkalinity, eq/L.
    pub fn alkalinity_eq_per_l(&self) -> f64 {
        self.alkalinity_eq_per_l
    }

    /// Ionic strength, mol/L.
    pub fn ionic_strength_mol_per_l(&self) -> f64 {
        self.ionic_strength_mol_per_l
    }
}

/// The Langelier saturation index of a water and the pH of saturation it rests on.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Langelier {
    /// The measured pH.
    pub ph: f64,
    /// pHs: the pH at which the water, with its calcium and alkalinity, is saturated with
    /// calcite.
    pub ph_saturation: f64,
    /// LSI = pH − pHs.
    pub index: f64,
}

/// The Langelier saturation index of `water`, with pK₂ of carbonic acid (the `carbonate`
/// family) and pKs of calcite (the `calcite` solid) taken from `catalog` at the water's
/// temperature.
///
/// Errors: a catalogue without those entries, and a water that would not reach calcite
/// saturation at any pH (too little calcium and alkalinity; `Error::OutOfDomain`).
///
/// ```
/// use protolyte::analysis::water::{CarbonateWater, langelier};
/// use protolyte::{Catalog, Temperature};
///
/// let cat = Catalog::builtin();
/// let w = CarbonateWater::from_lab_units(Temperature::celsius(25.0), 8.0, 100.0, 100.0, 300.0)?;
/// let l = langelier(&w, &cat)?;
/// assert!((l.index - (l.ph - l.ph_saturation)).abs() < 1e-12);
/// // pHs = pK2 - pKs + p[Ca] + p[Alk] without corrections is 10.33 - 8.48 + 3.0 + 2.7 = 7.55;
/// // the activity corrections raise it by some tenths.
/// assert!(l.ph_saturation > 7.55 && l.ph_saturation < 8.0);
/// # Ok::<(), protolyte::Error>(())
/// ```
pub fn langelier(water: &CarbonateWater, catalog: &Catalog) -> Result<Langelier> {
    let t = water.temperature;
    let carbonate = catalog.protolyte("carbonate")?;
    let pk2 = carbonate.pka_at(1, t)?;
    let pks = -calcite_log10_k(catalog, t)?;
    let log_kw = water::log10_kw(t)?;
    let dh = DebyeHuckelConstants::at(t)?;
    let i = water.ionic_strength_mol_per_l;
    let lg1 = ActivityModel::Davies.log10_gamma(1, 4.0, i, &dh)?;
    let lg2 = ActivityModel::Davies.log10_gamma(2, 4.0, i, &dh)?;
    let (g1, g2) = (10f64.powf(lg1), 10f64.powf(lg2));
    let k2 = 10f64.powf(-pk2);
    let kw = 10f64.powf(log_kw);
    let ca = water.calcium_mol_per_l;
    let alk = water.alkalinity_eq_per_l;
    // Bicarbonate from the alkalinity at a trial pH p: Alk = [HCO3-](1 + 2[CO3 2-]/[HCO3-])
    // + [OH-] - [H+], concentrations from activities through γ.
    let hco3 = |p: f64| {
        let ah = 10f64.powf(-p);
        let free = alk - kw / (g1 * ah) + ah / g1;
        free / (1.0 + 2.0 * k2 * g1 / (g2 * ah))
    };
    // g(p) = p - pHs(p); non-decreasing in p wherever [HCO3-] > 0.
    let g = |p: f64| {
        let h = hco3(p);
        if h > 0.0 {
            Some(p - (pk2 - pks - (g2 * ca).log10() - (g1 * h).log10()))
        } else {
            None
        }
    };
    // g is negative at low pH and rises with p while the alkalinity is mostly carbonate
    // species; at high pH hydroxide takes the alkalinity over, [HCO3-] falls to zero and g
    // falls again. pHs is the first crossing of zero from below: scan upward in steps of
    // 0.25 for it.
    let unreachable = || Error::OutOfDomain {
        what: "pH of calcite saturation of a water (its calcium and alkalinity are too low to reach saturation at any pH)",
        value: water.ph,
        domain: "waters whose calcium and alkalinity can saturate calcite",
    };
    let mut lo = 0.0;
    match g(lo) {
        Some(v) if v < 0.0 => {}
        _ => return Err(unreachable()),
    }
    let mut hi = lo;
    loop {
        hi += 0.25;
        match g(hi) {
            Some(v) if v >= 0.0 => break,
            Some(_) => lo = hi,
            None => return Err(unreachable()),
        }
        if hi >= 14.0 {
            return Err(unreachable());
        }
    }
    // Bisection inside the step: 100 halvings are more than enough for 1e-13.
    let (mut a, mut b) = (lo, hi);
    for _ in 0..100 {
        let m = 0.5 * (a + b);
        match g(m) {
            Some(v) if v < 0.0 => a = m,
            Some(_) => b = m,
            None => b = m,
        }
        if b - a < 1e-13 {
            break;
        }
    }
    let phs = 0.5 * (a + b);
    Ok(Langelier {
        ph: water.ph,
        ph_saturation: phs,
        index: water.ph - phs,
    })
}

/// log₁₀ K of calcite dissolution at `t`, from the catalogue's `calcite` entry.
fn calcite_log10_k(catalog: &Catalog, t: Temperature) -> Result<f64> {
    Ok(catalog.solid("calcite")?.log10_k_at(t))
}

/// The calcium carbonate precipitation potential of a water (CCPP; J. R. Rossum, D. T. Merrill,
/// J. Am. Water Works Assoc. 75 (1983) 95): the amount of calcium carbonate that would
/// precipitate (positive) or dissolve (negative) for the water to come to equilibrium with
/// calcite in a closed system, in mg/L as CaCO₃ and mol/kg.
#[derive(Debug, Clone, PartialEq)]
pub struct PrecipitationPotential {
    /// Calcite precipitated (positive) or dissolved (negative), mol per kg of water.
    pub mol_per_kg: f64,
    /// The same in mg/L as CaCO₃ (through the density of water at the temperature).
    pub mg_per_l_as_caco3: f64,
    /// pH of the water as given.
    pub ph_before: f64,
    /// pH after it has come to equilibrium with calcite.
    pub ph_after: f64,
    /// Calcite saturation index of the water as given.
    pub saturation_index_before: f64,
    /// The warnings of the solves it rests on (the water as given and at equilibrium with
    /// calcite), each once; the supersaturation of the water as given is not repeated here,
    /// `saturation_index_before` says it.
    pub warnings: Vec<crate::Warning>,
}

/// The calcium carbonate precipitation potential of the water `recipe` at `conditions`: the
/// recipe is solved as given (with no solid allowed to form, whatever the recipe allows) and
/// again with calcite allowed to form beside the solids the recipe allows; where the water is
/// undersaturated, the second solve starts from an excess of calcium carbonate
/// (`calcium carbonate` reagent), of which the part that stays undissolved is subtracted.
/// Calcite and the reagent come from `catalog`. The system stays closed: CO₂ neither escapes
/// nor enters (the definition of the CCPP); a recipe with a fixed partial pressure is
/// computed as given, open.
///
/// ```
/// use protolyte::analysis::water::precipitation_potential;
/// use protolyte::{Amount, Catalog, Conditions, Recipe};
///
/// let cat = Catalog::builtin();
/// let mut hard = Recipe::new();
/// hard.add(&cat.reagent("calcium chloride")?, Amount::millimolar(3.0))?
///     .add(&cat.reagent("sodium bicarbonate")?, Amount::millimolar(4.0))?
///     .add(&cat.reagent("sodium hydroxide")?, Amount::millimolar(1.0))?;
/// let p = precipitation_potential(&hard, &Conditions::default(), &cat)?;
/// assert!(p.saturation_index_before > 0.0 && p.mg_per_l_as_caco3 > 0.0);
/// assert!(p.ph_after < p.ph_before); // precipitation releases acid
/// # Ok::<(), protolyte::Error>(())
/// ```
pub fn precipitation_potential(
    recipe: &Recipe,
    conditions: &Conditions,
    catalog: &Catalog,
) -> Result<PrecipitationPotential> {
    let calcite = catalog.solid("calcite")?;
    // The water as given: nothing precipitated yet, even where the recipe lets solids form.
    let before = recipe.without_allowed_solids().compile(conditions)?.solve()?;
    let si_before =
        before
            .solid("calcite")
            .map(|s| s.saturation_index)
            .ok_or_else(|| Error::InconsistentDefinition {
                name: "calcium carbonate precipitation potential".into(),
                reason: "the water holds no calcium or no carbonate, so calcite has no saturation index".into(),
            })?;
    let rho = water::density_kg_per_l(conditions.temperature)?;
    let to_mg = |molal: f64| molal * rho * CACO3_G_PER_MOL * 1000.0;
    let result = |mol_per_kg: f64, after: &crate::Equilibrium| {
        let mut warnings: Vec<crate::Warning> = Vec::new();
        let before_warnings = before
            .warnings()
            .iter()
            .filter(|w| !matches!(w, crate::Warning::Supersaturated { .. }));
        for w in before_warnings.chain(after.warnings()) {
            if !warnings.contains(w) {
                warnings.push(w.clone());
            }
        }
        PrecipitationPotential {
            mol_per_kg,
            mg_per_l_as_caco3: to_mg(mol_per_kg),
            ph_before: before.ph(),
            ph_after: after.ph(),
            saturation_index_before: si_before,
            warnings,
        }
    };
    let mut with = recipe.clone();
    with.allow_solid(&calcite);
    if si_before >= 0.0 {
        let after = with.compile(conditions)?.solve()?;
        let formed = after.solid("calcite").map_or(0.0, |s| s.amount_molal);
        return Ok(result(formed, &after));
    }
    // Undersaturated: offer an excess of calcium carbonate and see how much dissolves. The
    // excess starts at 1 mmol/kg and grows tenfold until some stays undissolved.
    let caco3 = catalog.reagent("calcium carbonate")?;
    let mut excess = 1e-3;
    for _ in 0..6 {
        let mut offered = with.clone();
        // As a dose: a water entered with a fixed DIC and alkalinity gets the carbon and
        // the alkalinity of the offered calcium carbonate too.
        offered.add_dose(&caco3, Amount::molal(excess), conditions)?;
        let after = offered.compile(conditions)?.solve()?;
        let left = after.solid("calcite").map_or(0.0, |s| s.amount_molal);
        if left > 0.0 {
            return Ok(result(-(excess - left), &after));
        }
        excess *= 10.0;
    }
    Err(Error::OutOfDomain {
        what: "calcium carbonate a water would dissolve (mol/kg)",
        value: excess,
        domain: "below 100 mol/kg",
    })
}

/// What a dose search aims at.
#[derive(Debug, Clone, PartialEq)]
pub enum DoseTarget {
    /// A pH.
    Ph(f64),
    /// A saturation index of the named solid (of the recipe's reported solids).
    SaturationIndex {
        /// The solid's name, as the result reports it.
        solid: String,
        /// The saturation index to reach.
        value: f64,
    },
    /// Total hardness, dissolved calcium plus magnesium, in mg/L as CaCO₃ (what stays
    /// dissolved once the solids the recipe allows have formed).
    HardnessMgPerLAsCaco3(f64),
}

impl DoseTarget {
    fn describe(&self) -> String {
        match self {
            DoseTarget::Ph(v) => format!("pH {v}"),
            DoseTarget::SaturationIndex { solid, value } => format!("saturation index {value} of {solid}"),
            DoseTarget::HardnessMgPerLAsCaco3(v) => format!("hardness {v} mg/L as CaCO3"),
        }
    }
}

/// The amount of `reagent`, between zero and `max_amount` (in its unit), that brings the water
/// `recipe` to `target` at `conditions`, with the recipe's gases, constraints and allowed
/// solids in force at every dose (lime softening: allow calcite and ask for a hardness).
///
/// Where the target is not crossed between zero and `max_amount` (the quantity need not
/// change monotonically: lime softening lowers the hardness until the carbonate is spent,
/// then raises it), the range is searched in 16 equal steps for the first crossing. The root is then found by safeguarded regula falsi
/// (Illinois) to 1e-9 of the target's scale. A solid whose parts are absent at some dose (no
/// carbonate before sodium carbonate is dosed) has a saturation index of −∞ there.
/// Errors: a target not crossed at any of those doses, a solid the recipe neither reports nor
/// allows, an invalid amount.
///
/// ```
/// use protolyte::analysis::water::{DoseTarget, dose_for_target};
/// use protolyte::{Amount, Catalog, Conditions, Recipe};
///
/// let cat = Catalog::builtin();
/// let mut water = Recipe::new();
/// water.add(&cat.reagent("calcium chloride")?, Amount::millimolar(2.0))?
///      .add(&cat.reagent("sodium bicarbonate")?, Amount::millimolar(2.0))?;
/// // Supersaturated in calcite (SI about +0.6): the acid dose that brings it to saturation.
/// assert!(water.compile(&Conditions::default())?.solve()?.saturation_index("calcite").unwrap() > 0.3);
/// let hcl = cat.reagent("hydrochloric acid")?;
/// let target = DoseTarget::SaturationIndex { solid: "calcite".into(), value: 0.0 };
/// let dose = dose_for_target(&water, &hcl, &Conditions::default(), &target, Amount::millimolar(2.0))?;
/// let mut dosed = water.clone();
/// dosed.add(&hcl, dose)?;
/// let eq = dosed.compile(&Conditions::default())?.solve()?;
/// assert!(eq.solid("calcite").unwrap().saturation_index.abs() < 1e-6);
/// # Ok::<(), protolyte::Error>(())
/// ```
pub fn dose_for_target(
    recipe: &Recipe,
    reagent: &Reagent,
    conditions: &Conditions,
    target: &DoseTarget,
    max_amount: Amount,
) -> Result<Amount> {
    max_amount.validate(reagent.name())?;
    let (goal, tol) = match target {
        DoseTarget::Ph(v) => (
            check_parameter("dose target", "pH", *v, -4.0, 20.0, "must be within -4..20")?,
            1e-9,
        ),
        DoseTarget::SaturationIndex { value, .. } => (
            check_parameter(
                "dose target",
                "saturation index",
                *value,
                -50.0,
                50.0,
                "must be within -50..50",
            )?,
            1e-9,
        ),
        DoseTarget::HardnessMgPerLAsCaco3(v) => {
            let v = check_parameter(
                "dose target",
                "hardness (mg/L as CaCO3)",
                *v,
                0.0,
                1e6,
                "must be within 0..1e6",
            )?;
            (v, 1e-9 * v.max(1.0))
        }
    };
    let (amax, unit) = crate::analysis::target::search_bound(reagent, max_amount)?;
    if let (DoseTarget::Ph(_), Some(c)) = (
        target,
        recipe
            .constraints()
            .iter()
            .find(|c| matches!(c, crate::Constraint::Ph(_))),
    ) {
        return Err(Error::ConflictingConstraints {
            first: c.describe(),
            second: format!("a dose of {} for {}", reagent.name(), target.describe()),
            reason: "the recipe holds the pH that the dose would move".into(),
        });
    }
    let value_at = |x: f64| -> Result<f64> {
        let mut r = recipe.clone();
        if x > 0.0 {
            r.add_dose(reagent, unit(x), conditions)?;
        }
        let sys = r.compile(conditions)?;
        let eq = sys.solve()?;
        match target {
            DoseTarget::Ph(_) => Ok(eq.ph()),
            DoseTarget::SaturationIndex { solid, .. } => match eq.solid(solid) {
                Some(s) => Ok(s.saturation_index),
                // A solid of the recipe's that one of whose parts is absent at this dose:
                // the limit of its saturation index as that part goes to zero.
                None if recipe
                    .reported_solids()
                    .iter()
                    .chain(recipe.allowed_solids())
                    .any(|s| s.name() == solid) =>
                {
                    Ok(f64::NEG_INFINITY)
                }
                None => Err(Error::UnknownName {
                    kind: "solid reported or allowed by the recipe",
                    name: solid.clone(),
                    suggestion: None,
                }),
            },
            DoseTarget::HardnessMgPerLAsCaco3(_) => {
                let rho = water::density_kg_per_l(conditions.temperature)?;
                let molal: f64 = ["calcium", "magnesium"]
                    .iter()
                    .filter_map(|n| eq.dissolved_total_molal(n))
                    .sum();
                Ok(molal * rho * CACO3_G_PER_MOL * 1000.0)
            }
        }
    };
    let (mut a, mut b) = (0.0, amax);
    let (mut fa, mut fb) = (value_at(a)? - goal, value_at(b)? - goal);
    let not_reached = || Error::InvalidParameter {
        what: format!("dose of {} for {}", reagent.name(), target.describe()),
        parameter: "target",
        value: goal,
        reason: "not reached at zero, at the largest amount given, nor at 15 doses between",
    };
    if fa.abs() <= tol {
        return Ok(unit(0.0));
    }
    if fb.abs() <= tol {
        return Ok(unit(amax));
    }
    if fa.signum() == fb.signum() {
        // Not crossed between the ends: look for the first crossing inside.
        const STEPS: usize = 16;
        let mut crossing = None;
        for k in 1..STEPS {
            let x = amax * k as f64 / STEPS as f64;
            let fx = value_at(x)? - goal;
            if fx.abs() <= tol {
                return Ok(unit(x));
            }
            if fx.signum() != fa.signum() {
                crossing = Some((x, fx));
                break;
            }
            (a, fa) = (x, fx);
        }
        let Some((x, fx)) = crossing else {
            return Err(not_reached());
        };
        (b, fb) = (x, fx);
    }
    // Illinois regula falsi: a secant step inside the bracket, halving the weight of an end
    // kept twice; falls back to bisection when the step would not move.
    let mut side = 0i8;
    for _ in 0..200 {
        let mut x = (a * fb - b * fa) / (fb - fa);
        if !(x > a && x < b) {
            x = 0.5 * (a + b);
        }
        let fx = value_at(x)? - goal;
        if fx.abs() <= tol || (b - a) <= 1e-15 * amax {
            return Ok(unit(x));
        }
        if fx.signum() == fa.signum() {
            a = x;
            fa = fx;
            if side == -1 {
                fb *= 0.5;
            }
            side = -1;
        } else {
            b = x;
            fb = fx;
            if side == 1 {
                fa *= 0.5;
            }
            side = 1;
        }
    }
    Ok(unit(0.5 * (a + b)))
}
