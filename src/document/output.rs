//! Result documents: plain serde structures built from the library's results. No field ever
//! holds NaN or infinity: a value that is not finite is written as `null`.

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

use super::input::{ActivityDoc, RecipeDoc};
use super::{RESULT_FORMAT, finite};
use crate::analysis::{
    BreakFlag, BufferRecipe, DeviationCause, EndpointVerdict, EquivalencePoint, FitReport, HalfEquivalencePoint,
    Measure, PhShift, Role, Scope, TitrationPoint,
};
use crate::{Conditions, Equilibrium, Warning};

fn result_format() -> String {
    RESULT_FORMAT.into()
}

/// One species at equilibrium.
///
/// ```
/// use protolyte::document::SpeciesResult;
/// let s: SpeciesResult = serde_json::from_str(
///     r#"{"name":"H+","charge":1,"mol_per_kg":1e-7,"mol_per_l":1e-7,"gamma":1.0,"activity":1e-7}"#)?;
/// assert_eq!(s.charge, 1);
/// # Ok::<(), serde_json::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SpeciesResult {
    /// Name.
    pub name: String,
    /// Charge number.
    pub charge: i32,
    /// Concentration, mol/kg of water.
    pub mol_per_kg: f64,
    /// Concentration, mol/L.
    pub mol_per_l: f64,
    /// Activity coefficient.
    pub gamma: f64,
    /// Activity.
    pub activity: f64,
}

/// The distribution of one acid–base family.
///
/// ```
/// use protolyte::document::FamilyResult;
/// let f = FamilyResult { name: "acetate".into(), total_mol_per_kg: 0.01, fractions: vec![0.5, 0.5],
///     complexed_fraction: 0.0, mean_bound_protons: 0.5 };
/// assert_eq!(f.fractions.len(), 2);
/// ```
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FamilyResult {
    /// Family name.
    pub name: String,
    /// Total, mol/kg.
    pub total_mol_per_kg: f64,
    /// Alpha fractions by bound protons (0 = fully deprotonated first).
    pub fractions: Vec<f64>,
    /// Fraction bound in complexes.
    pub complexed_fraction: f64,
    /// Mean bound protons per free family unit.
    pub mean_bound_protons: f64,
}

/// Residuals of the balances at the result.
///
/// ```
/// use protolyte::document::ResidualsResult;
/// let r = ResidualsResult::default();
/// assert_eq!(r.max_balance_relative, 0.0);
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct ResidualsResult {
    /// Charge balance, relative to Σ|z|·m.
    pub charge_relative: f64,
    /// Each mass balance, relative to its total, by component.
    pub mass_relative: BTreeMap<String, f64>,
    /// Ionic-strength equation, relative.
    pub ionic_strength_relative: f64,
    /// The largest relative charge or mass-balance residual.
    pub max_balance_relative: f64,
    /// The largest relative residual of every equation solved (charge, mass balances and
    /// ionic strength): the one to check against the residual promise.
    #[serde(default)]
    pub max_relative: f64,
}

/// The saturation state of one solid in a result.
///
/// ```
/// use protolyte::document::SolidResult;
/// let s: SolidResult = serde_json::from_str(
///     r#"{"name":"calcite","saturation_index":0.4,"log10_iap":-8.1,"log10_k":-8.5,"allowed":false,"amount_mol_per_kg":0.0}"#)?;
/// assert!(s.saturation_index.unwrap() > 0.0);
/// # Ok::<(), serde_json::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SolidResult {
    /// The solid's name.
    pub name: String,
    /// SI = log₁₀ IAP − log₁₀ K(T): above 0 supersaturated, below 0 undersaturated.
    pub saturation_index: Option<f64>,
    /// log₁₀ of the ion activity product.
    pub log10_iap: Option<f64>,
    /// log₁₀ K of the dissolution reaction at the temperature.
    pub log10_k: Option<f64>,
    /// True when the solid was allowed to form.
    pub allowed: bool,
    /// Amount present at equilibrium, mol per kg of water (0 unless allowed and stable).
    pub amount_mol_per_kg: f64,
}

/// The ion balance of a water analysis entered with its charge balance closed on an ion: the
/// sums of the cations and anions as entered (the equilibrium's species, less what the closing
/// ion added), the balance error 100·(Σcations − Σanions)/(Σcations + Σanions), and whether it
/// is within the acceptance rule of Standard Methods 1030 E (common practice; `None` above an
/// anion sum of 800 meq/kg, where the rule gives none).
///
/// ```
/// use protolyte::document::IonBalanceResult;
/// let b = IonBalanceResult { cations_meq_per_kg: 5.0, anions_meq_per_kg: 4.9, error_percent: 1.01, within_acceptance: Some(true) };
/// assert_eq!(b.within_acceptance, Some(true));
/// ```
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct IonBalanceResult {
    /// Σ |z|·m of the cations as entered, meq per kg of water.
    pub cations_meq_per_kg: f64,
    /// Σ |z|·m of the anions as entered, meq per kg of water.
    pub anions_meq_per_kg: f64,
    /// 100·(Σcations − Σanions)/(Σcations + Σanions), %.
    pub error_percent: f64,
    /// Within the Standard Methods 1030 E limit for this anion sum.
    pub within_acceptance: Option<bool>,
}

/// The ion that closed the charge balance and how much of it the balance took.
///
/// ```
/// use protolyte::document::ChargeBalanceIonResult;
/// let c = ChargeBalanceIonResult { ion: "sodium".into(), added_mol_per_kg: 2e-3 };
/// assert_eq!(c.ion, "sodium");
/// ```
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ChargeBalanceIonResult {
    /// The ion's name.
    pub ion: String,
    /// The amount of it the charge balance added, mol per kg of water (negative: removed).
    pub added_mol_per_kg: f64,
}

/// The state of one gas in a result.
///
/// ```
/// use protolyte::document::GasResult;
/// let g: GasResult = serde_json::from_str(
///     r#"{"name":"CO2(g)","partial_pressure_atm":4.2e-4,"fixed":true,"taken_up_mol_per_kg":1e-5}"#)?;
/// assert!(g.fixed);
/// # Ok::<(), serde_json::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct GasResult {
    /// The gas's name.
    pub name: String,
    /// Partial pressure in equilibrium with the solution (the one imposed when `fixed`), atm.
    pub partial_pressure_atm: Option<f64>,
    /// True when the partial pressure was imposed (an open system).
    pub fixed: bool,
    /// Amount taken up from the gas phase, mol per kg of water (negative: given off).
    pub taken_up_mol_per_kg: f64,
}

/// The result of solving one recipe.
///
/// ```
/// use protolyte::{Amount, Catalog, Conditions, Recipe};
/// use protolyte::document::SolveResult;
/// let mut r = Recipe::new();
/// r.add(&Catalog::builtin().reagent("acetic acid")?, Amount::millimolar(10.0))?;
/// let eq = r.compile(&Conditions::default())?.solve()?;
/// let doc = SolveResult::from_equilibrium(&eq);
/// let json = serde_json::to_string(&doc).unwrap();
/// let back: SolveResult = serde_json::from_str(&json).unwrap();
/// assert_eq!(back, doc);
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SolveResult {
    /// `"protolyte-result/1"`.
    #[serde(default = "result_format")]
    pub format: String,
    /// The recipe's label, when it had one.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub name: Option<String>,
    /// Temperature, °C.
    pub temperature_celsius: f64,
    /// Activity model.
    pub activity: ActivityDoc,
    /// The pH convention, when it is not the model's own γ(H⁺): `"bates-guggenheim"`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ph_convention: Option<String>,
    /// pH = −log₁₀ a(H⁺) (under `ph_convention` when given).
    pub ph: f64,
    /// −log₁₀ of the H⁺ molality.
    pub p_h_molal: f64,
    /// pOH = −log₁₀ a(OH⁻).
    pub poh: f64,
    /// Ionic strength, mol/kg.
    pub ionic_strength_mol_per_kg: f64,
    /// Solver path (`"fast"` or `"general"`).
    pub path: String,
    /// Iterations.
    pub iterations: usize,
    /// Every species.
    pub species: Vec<SpeciesResult>,
    /// Every family's distribution.
    pub families: Vec<FamilyResult>,
    /// Balance residuals.
    pub residuals: ResidualsResult,
    /// Total alkalinity, eq per kg of water (the proton condition relative to H2CO3,
    /// H2PO4-, ... : acids with pKa ≥ 4.5; an end point near pH 4.5).
    #[serde(default)]
    pub total_alkalinity_eq_per_kg: f64,
    /// Carbonate alkalinity, eq per kg of water: HCO3- + 2 CO3^2- (ion pairs counted).
    #[serde(default)]
    pub carbonate_alkalinity_eq_per_kg: f64,
    /// Dissolved inorganic carbon, mol per kg of water.
    #[serde(default)]
    pub dic_mol_per_kg: f64,
    /// With a fixed pH or alkalinity: the H+ taken up to hold it, mol per kg of water
    /// (negative: base); left out when zero (no fixed pH) and when an ion closes the charge
    /// balance (which takes that charge instead).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub proton_uptake_mol_per_kg: Option<f64>,
    /// With the charge balance closed on an ion: that ion and the amount of it the balance
    /// added, mol per kg of water.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub charge_balance_ion: Option<ChargeBalanceIonResult>,
    /// With the charge balance closed on an ion: the ion balance of the water as entered
    /// (see [`SolveResult::with_ion_balance`]).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ion_balance: Option<IonBalanceResult>,
    /// Every reported gas whose family is present.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub gases: Vec<GasResult>,
    /// Every reported solid whose parts are present, with its saturation index.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub solids: Vec<SolidResult>,
    /// Warnings, as sentences.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub warnings: Vec<String>,
}

fn warnings(w: &[Warning]) -> Vec<String> {
    w.iter().map(|w| w.to_string()).collect()
}

impl SolveResult {
    /// The document of `eq`.
    pub fn from_equilibrium(eq: &Equilibrium) -> Self {
        let r = eq.residuals();
        SolveResult {
            format: result_format(),
            name: None,
            temperature_celsius: eq.temperature().as_celsius(),
            activity: eq.activity_model().into(),
            ph_convention: match eq.ph_convention() {
                crate::PhConvention::Model => None,
                crate::PhConvention::BatesGuggenheim => Some("bates-guggenheim".into()),
            },
            ph: eq.ph(),
            p_h_molal: eq.p_h_molal(),
            poh: eq.poh(),
            ionic_strength_mol_per_kg: eq.ionic_strength_molal(),
            path: eq.path().name().into(),
            iterations: eq.iterations(),
            species: eq
                .species()
                .iter()
                .map(|s| SpeciesResult {
                    name: s.name.to_string(),
                    charge: s.charge,
                    mol_per_kg: s.molal,
                    mol_per_l: s.molar,
                    gamma: s.gamma,
                    activity: s.activity,
                })
                .collect(),
            families: eq
                .families()
                .iter()
                .map(|f| FamilyResult {
                    name: f.name.to_string(),
                    total_mol_per_kg: f.total_molal,
                    fractions: f.fractions.clone(),
                    complexed_fraction: f.complexed_fraction,
                    mean_bound_protons: f.mean_bound_protons,
                })
                .collect(),
            residuals: ResidualsResult {
                charge_relative: r.charge_relative,
                mass_relative: r.mass_relative.iter().map(|(n, v)| (n.to_string(), *v)).collect(),
                ionic_strength_relative: finite(r.ionic_strength_relative).unwrap_or(0.0),
                max_balance_relative: r.max_balance_relative(),
                max_relative: finite(r.max_relative()).unwrap_or(f64::MAX),
            },
            total_alkalinity_eq_per_kg: eq.total_alkalinity_molal(),
            carbonate_alkalinity_eq_per_kg: eq.carbonate_alkalinity_molal(),
            dic_mol_per_kg: eq.dic_molal(),
            // With an ion closing the charge balance, the H+ a fixed pH or alkalinity takes is
            // zero by construction (the closing ion takes the charge): what the solver leaves
            // there is round-off, not an acid or base to report.
            proton_uptake_mol_per_kg: (eq.proton_uptake_molal() != 0.0
                && eq.charge_balance_ion_added_molal().is_none())
            .then(|| eq.proton_uptake_molal()),
            charge_balance_ion: eq
                .charge_balance_ion_added_molal()
                .map(|(ion, v)| ChargeBalanceIonResult {
                    ion: ion.to_string(),
                    added_mol_per_kg: v,
                }),
            ion_balance: None,
            gases: eq
                .gases()
                .iter()
                .map(|g| GasResult {
                    name: g.name.to_string(),
                    partial_pressure_atm: finite(g.partial_pressure.as_atm()),
                    fixed: g.fixed,
                    taken_up_mol_per_kg: g.taken_up_molal,
                })
                .collect(),
            solids: eq
                .solids()
                .iter()
                .map(|s| SolidResult {
                    name: s.name.to_string(),
                    saturation_index: finite(s.saturation_index),
                    log10_iap: finite(s.log10_iap),
                    log10_k: finite(s.log10_k),
                    allowed: s.allowed,
                    amount_mol_per_kg: s.amount_molal,
                })
                .collect(),
            warnings: warnings(eq.warnings()),
        }
    }

    /// The same result with the recipe's label.
    pub fn named(mut self, name: Option<String>) -> Self {
        self.name = name;
        self
    }

    /// The same result with the ion balance of the water as entered, when its charge balance
    /// was closed on an ion of charge number `charge`: the equilibrium balances exactly, so the
    /// analysis as entered lacked (or had in excess) what the closing ion added. Sums over the
    /// species of the result (complexes with their own charge, H⁺ and OH⁻ included), less
    /// the closing ion's addition; left unset without a closing ion or for a charge of 0.
    ///
    /// A solid present in the result holds ions of the water as entered that this result's
    /// species no longer show; without the solid's definition the balance cannot be judged,
    /// so it is left unset then: use [`SolveResult::with_ion_balance_of`], which reads the
    /// solids from the recipe.
    ///
    /// ```
    /// use protolyte::document::{RecipeDoc, SolveResult, parse};
    /// use protolyte::Catalog;
    /// let doc: RecipeDoc = parse(r#"{ "reagents": [
    ///     { "reagent": "calcium chloride", "millimolar": 1.0 },
    ///     { "reagent": "sodium bicarbonate", "millimolar": 1.9 } ],
    ///   "fixed_alkalinity_meq_per_kg": 2.0, "charge_balance_on": "sodium" }"#, "a.json")?;
    /// let cat = Catalog::builtin();
    /// let (recipe, conditions) = doc.to_recipe(&cat)?;
    /// let eq = recipe.compile(&conditions)?.solve()?;
    /// let r = SolveResult::from_equilibrium(&eq).with_ion_balance(1);
    /// let b = r.ion_balance.unwrap();
    /// // The sodium entered (1.9 mmol/kg) falls short of the 2.0 meq/kg of alkalinity by about
    /// // 0.1 meq/kg: the cations come out low.
    /// assert!(b.error_percent < -1.0 && b.error_percent > -3.0, "{b:?}");
    /// # Ok::<(), Box<dyn std::error::Error>>(())
    /// ```
    pub fn with_ion_balance(self, charge: i32) -> Self {
        if self.solids.iter().any(|s| s.amount_mol_per_kg > 0.0) {
            return self;
        }
        self.ion_balance_adding(charge, 0.0, 0.0)
    }

    /// The same result with the ion balance of the water as entered (see
    /// [`SolveResult::with_ion_balance`]), the closing ion and its charge read from `recipe`'s
    /// constraints, and what each solid present holds added back at the charges of its
    /// dissolution parts (a solid's cations to the cations, its anions to the anions): the
    /// water as entered, before anything precipitated. Left unset when the recipe closes the
    /// charge balance on no ion, or when a solid present is not among the recipe's solids.
    ///
    /// ```
    /// use protolyte::document::{RecipeDoc, SolveResult, parse};
    /// use protolyte::Catalog;
    /// // 5 mmol/kg calcium chloride (10 meq/kg of each sign) and 8 meq/kg of alkalinity, closed
    /// // on sodium: as entered, 10 meq/kg of cations against 18 meq/kg of anions, −28.6 %,
    /// // whether or not calcite precipitates from it.
    /// let doc: RecipeDoc = parse(r#"{ "reagents": [ { "reagent": "calcium chloride", "molal": 0.005 } ],
    ///   "fixed_alkalinity_meq_per_kg": 8.0, "fixed_dic_mmol_per_kg": 5.0,
    ///   "charge_balance_on": "sodium", "allow_solids": ["calcite"] }"#, "a.json")?;
    /// let (recipe, conditions) = doc.to_recipe(&Catalog::builtin())?;
    /// let eq = recipe.compile(&conditions)?.solve()?;
    /// assert!(eq.solid("calcite").unwrap().amount_molal > 1e-3);
    /// let b = SolveResult::from_equilibrium(&eq).with_ion_balance_of(&recipe).ion_balance.unwrap();
    /// assert!((b.error_percent - 100.0 * (10.0 - 18.0) / 28.0).abs() < 0.05, "{b:?}");
    /// # Ok::<(), Box<dyn std::error::Error>>(())
    /// ```
    pub fn with_ion_balance_of(self, recipe: &crate::Recipe) -> Self {
        let Some(charge) = recipe.constraints().iter().find_map(|c| match c {
            crate::Constraint::ChargeBalanceOn(ion) => Some(ion.charge()),
            _ => None,
        }) else {
            return self;
        };
        let (mut cations, mut anions) = (0.0, 0.0);
        for s in self.solids.iter().filter(|s| s.amount_mol_per_kg > 0.0) {
            // The allowed solid's own definition wins over a reported one of the same name,
            // as in the solve.
            let Some(solid) = recipe
                .allowed_solids()
                .iter()
                .chain(recipe.reported_solids())
                .find(|d| d.name() == s.name)
            else {
                return self;
            };
            for (part, n) in solid.parts() {
                let q = f64::from(crate::phase::part_charge(part)) * f64::from(*n) * s.amount_mol_per_kg;
                if q > 0.0 {
                    cations += q;
                } else {
                    anions -= q;
                }
            }
        }
        self.ion_balance_adding(charge, cations, anions)
    }

    /// The same result with what its `recipe` adds to it: the ion balance as entered
    /// ([`SolveResult::with_ion_balance_of`]), a warning for each solid allowed by name whose
    /// parts the solution lacks (left out of the solve) and, where the recipe fixes the pH and the
    /// result reports it under another convention (Bates–Guggenheim), a warning that says so:
    /// a fixed pH is held on the activity model's own scale, −log₁₀ a(H⁺), so the pH reported
    /// differs from it.
    ///
    /// ```
    /// use protolyte::document::{RecipeDoc, SolveResult, parse};
    /// use protolyte::Catalog;
    /// let doc: RecipeDoc = parse(r#"{ "ph_convention": "bates-guggenheim",
    ///   "reagents": [ { "reagent": "sodium chloride", "molal": 0.05 } ], "fixed_ph": 8.0 }"#, "a.json")?;
    /// let (recipe, conditions) = doc.to_recipe(&Catalog::builtin())?;
    /// let eq = recipe.compile(&conditions)?.solve()?;
    /// let r = SolveResult::from_equilibrium(&eq).with_recipe(&recipe);
    /// assert!(r.ph != 8.0);
    /// assert!(r.warnings.iter().any(|w| w.contains("fixed at 8")), "{:?}", r.warnings);
    /// # Ok::<(), Box<dyn std::error::Error>>(())
    /// ```
    pub fn with_recipe(self, recipe: &crate::Recipe) -> Self {
        let mut r = self.with_ion_balance_of(recipe);
        let fixed = recipe.constraints().iter().find_map(|c| match c {
            crate::Constraint::Ph(ph) => Some(*ph),
            _ => None,
        });
        // A solid named to form whose parts the solution lacks is left out of the solve:
        // say so, rather than leave the request unanswered.
        for solid in recipe.allowed_solids() {
            if !r.solids.iter().any(|s| s.name == solid.name()) {
                r.warnings.push(format!(
                    "{} was allowed to form, but the solution lacks one of its parts, so it is left out",
                    solid.name()
                ));
            }
        }
        if let (Some(ph), Some(convention)) = (fixed, r.ph_convention.as_deref())
            && (r.ph - ph).abs() > 1e-9
        {
            r.warnings.push(format!(
                "the pH was fixed at {ph} on the activity model's own scale (−log a(H+)); under the {convention} convention it reads {:.4}",
                r.ph
            ));
        }
        r
    }

    /// The ion balance of the species, less the closing ion's addition, plus `cations` and
    /// `anions` (mol/kg of charge) held elsewhere.
    fn ion_balance_adding(mut self, charge: i32, extra_cations: f64, extra_anions: f64) -> Self {
        let Some(added) = self.charge_balance_ion.as_ref().map(|c| c.added_mol_per_kg) else {
            return self;
        };
        if charge == 0 {
            return self;
        }
        let z = f64::from(charge);
        let (mut cations, mut anions) = (extra_cations, extra_anions);
        for s in &self.species {
            let q = f64::from(s.charge) * s.mol_per_kg;
            if q > 0.0 {
                cations += q;
            } else {
                anions -= q;
            }
        }
        if z > 0.0 {
            cations -= z * added;
        } else {
            anions -= -z * added;
        }
        let (c, a) = (1e3 * cations, 1e3 * anions);
        let error = 100.0 * (c - a) / (c + a);
        if !(c > 0.0 && a > 0.0 && error.is_finite()) {
            return self;
        }
        let rule = crate::analysis::water::IonBalance {
            cations_meq_per_l: c,
            anions_meq_per_l: a,
            error_percent: error,
        };
        self.ion_balance = Some(IonBalanceResult {
            cations_meq_per_kg: c,
            anions_meq_per_kg: a,
            error_percent: error,
            within_acceptance: rule.within_acceptance(),
        });
        self
    }
}

/// A buffer should lie within one pH unit of its pKa (common practice): beyond, its capacity
/// is less than a third of its peak.
pub const BUFFER_PKA_DISTANCE: f64 = 1.0;

/// A warning when the design's target pH lies more than [`BUFFER_PKA_DISTANCE`] from every
/// pKa (at the temperature) of the families in its recipe.
fn far_from_pka(r: &BufferRecipe, conditions: &Conditions) -> Option<String> {
    let sys = r.recipe.compile(conditions).ok()?;
    let nearest = sys
        .families()
        .iter()
        .enumerate()
        .flat_map(|(fi, f)| {
            let sys = &sys;
            (0..f.protolyte.proton_count())
                .filter_map(move |k| sys.pka(fi, k).map(|p| (p, f.protolyte.name().to_string())))
        })
        .min_by(|a, b| (a.0 - r.target_ph).abs().total_cmp(&(b.0 - r.target_ph).abs()))?;
    let d = (nearest.0 - r.target_ph).abs();
    (d > BUFFER_PKA_DISTANCE).then(|| {
        format!(
            "the target pH {:.2} lies {d:.2} pH units from the nearest pKa ({:.2}, {}): the buffer capacity is low there; a buffer whose pKa lies within ±1 of the target holds its pH better (common practice)",
            r.target_ph, nearest.0, nearest.1
        )
    })
}

/// One point of a titration curve.
///
/// ```
/// use protolyte::document::TitrationPointResult;
/// let p = TitrationPointResult { volume_ml: 1.0, ph: 3.0, dph_dv_per_ml: 0.1, ionic_strength_mol_per_kg: 0.01 };
/// assert_eq!(p.ph, 3.0);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct TitrationPointResult {
    /// Titrant added, mL.
    pub volume_ml: f64,
    /// pH.
    pub ph: f64,
    /// dpH/dV, per mL.
    pub dph_dv_per_ml: f64,
    /// Ionic strength, mol/kg.
    pub ionic_strength_mol_per_kg: f64,
}

impl From<&TitrationPoint> for TitrationPointResult {
    fn from(p: &TitrationPoint) -> Self {
        TitrationPointResult {
            volume_ml: p.volume_ml,
            ph: p.ph,
            dph_dv_per_ml: finite(p.dph_dv_per_ml).unwrap_or(0.0),
            ionic_strength_mol_per_kg: p.equilibrium.ionic_strength_molal(),
        }
    }
}

/// A stoichiometric equivalence point.
///
/// ```
/// use protolyte::document::EquivalenceResult;
/// let e = EquivalenceResult::default();
/// assert!(e.flags.is_empty());
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct EquivalenceResult {
    /// Titrant volume, mL.
    pub volume_ml: f64,
    /// pH there.
    pub ph: f64,
    /// The step completed there, as "family pKaN".
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub completed_step: Option<String>,
    /// pH at the start and the end of the steep part.
    pub steep_ph: [f64; 2],
    /// The verdict from the curve: whether the endpoint can be located. The text output and
    /// the plot read the same field.
    #[serde(default)]
    pub verdict: VerdictResult,
    /// Rules of thumb that explain a weak or absent break (empty when none applies); the
    /// verdict does not depend on them.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub flags: Vec<String>,
    /// Indicators whose range lies inside the steep part.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub indicators: Vec<String>,
    /// The indicator whose range middle is nearest the equivalence pH.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub nearest_indicator: Option<String>,
    /// Its titration error, relative.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub nearest_indicator_error: Option<f64>,
}

/// The verdict on one endpoint, from the computed curve (see
/// [`EndpointCriterion`](crate::analysis::EndpointCriterion)).
///
/// ```
/// use protolyte::document::VerdictResult;
/// let v = VerdictResult::default();
/// assert!(!v.usable);
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct VerdictResult {
    /// True when reading the pH to ±`ph_window` locates the endpoint within ±`tolerance_ml`.
    pub usable: bool,
    /// The pH-reading precision (±).
    pub ph_window: f64,
    /// The volume tolerance (±, mL).
    pub tolerance_ml: f64,
    /// How far from the equivalence volume the curve reaches pH_eq ± `ph_window` (the larger
    /// side, mL); absent when the curve does not move that far before the neighbouring
    /// equivalence point.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub locating_error_ml: Option<f64>,
    /// The pH change across the equivalence volume ± `tolerance_ml`.
    pub break_ph: f64,
    /// |dpH/dV| at the equivalence volume, per mL.
    pub slope_per_ml: f64,
}

impl From<&EndpointVerdict> for VerdictResult {
    fn from(v: &EndpointVerdict) -> Self {
        VerdictResult {
            usable: v.usable,
            ph_window: v.ph_window,
            tolerance_ml: v.tolerance_ml,
            locating_error_ml: v.locating_error_ml.and_then(finite),
            break_ph: finite(v.break_ph).unwrap_or(0.0),
            slope_per_ml: finite(v.slope_per_ml).unwrap_or(0.0),
        }
    }
}

fn flag_text(f: &BreakFlag) -> String {
    match f {
        BreakFlag::StepsMerge { delta_pka } => format!("steps merge (ΔpKa {delta_pka:.2})"),
        BreakFlag::StepsClose { delta_pka } => format!("steps close (ΔpKa {delta_pka:.2}): weak break"),
        BreakFlag::WeakStep { c_k } => format!("weak step (C·K {c_k:.1e}): no sharp endpoint"),
    }
}

impl From<&EquivalencePoint> for EquivalenceResult {
    fn from(e: &EquivalencePoint) -> Self {
        EquivalenceResult {
            volume_ml: e.volume_ml,
            ph: e.ph,
            completed_step: e.completed.as_ref().map(|s| format!("{} pKa{}", s.family, s.step + 1)),
            steep_ph: [e.steep_ph.0, e.steep_ph.1],
            verdict: (&e.verdict).into(),
            flags: e.flags.iter().map(flag_text).collect(),
            indicators: e.indicators.iter().map(|i| i.name.to_string()).collect(),
            nearest_indicator: e.nearest_indicator.as_ref().map(|(i, _)| i.name.to_string()),
            nearest_indicator_error: e.nearest_indicator.as_ref().and_then(|(_, x)| finite(*x)),
        }
    }
}

/// A half-equivalence point and why its pH differs from pKa.
///
/// ```
/// use protolyte::document::HalfEquivalenceResult;
/// let h = HalfEquivalenceResult::default();
/// assert_eq!(h.step, 0);
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct HalfEquivalenceResult {
    /// Family.
    pub family: String,
    /// Step, 1-based (1 = pKa1).
    pub step: usize,
    /// pKa at the temperature (infinite dilution).
    pub pka: f64,
    /// Titrant volume, mL.
    pub volume_ml: f64,
    /// pH there.
    pub ph: f64,
    /// pH − pKa.
    pub deviation: f64,
    /// Share from activity coefficients.
    pub activity_part: f64,
    /// Share from overlapping steps.
    pub overlap_part: f64,
    /// Share from the acid form's dissociation (free H⁺).
    #[serde(default)]
    pub dissociation_part: f64,
    /// Share from the base form's protonation by water (free OH⁻).
    #[serde(default)]
    pub protonation_part: f64,
    /// Share from water autoprotolysis beyond those two.
    pub water_part: f64,
    /// The largest share: "activity", "overlapping steps", "the acid's own dissociation",
    /// "the base's own protonation" or "water autoprotolysis".
    pub main_cause: String,
}

impl From<&HalfEquivalencePoint> for HalfEquivalenceResult {
    fn from(h: &HalfEquivalencePoint) -> Self {
        HalfEquivalenceResult {
            family: h.step.family.clone(),
            step: h.step.step + 1,
            pka: h.step.pka,
            volume_ml: h.volume_ml,
            ph: h.ph,
            deviation: h.deviation,
            activity_part: h.activity_part,
            overlap_part: h.overlap_part,
            dissociation_part: h.dissociation_part,
            protonation_part: h.protonation_part,
            water_part: h.water_part,
            main_cause: match h.main_cause {
                DeviationCause::Activity => "activity",
                DeviationCause::OverlappingSteps => "overlapping steps",
                DeviationCause::AcidDissociation => "the acid's own dissociation",
                DeviationCause::BaseProtonation => "the base's own protonation",
                DeviationCause::Water => "water autoprotolysis",
            }
            .into(),
        }
    }
}

/// A titration curve with its endpoints.
///
/// ```
/// use protolyte::document::TitrationResult;
/// let t = TitrationResult::default();
/// assert!(t.points.is_empty());
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct TitrationResult {
    /// `"protolyte-result/1"`.
    #[serde(default = "result_format")]
    pub format: String,
    /// The request's label.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub name: Option<String>,
    /// The pH convention of every pH in the result, when it is not the model's own γ(H⁺):
    /// `"bates-guggenheim"`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ph_convention: Option<String>,
    /// Analyte volume, mL.
    pub analyte_volume_ml: f64,
    /// The curve.
    pub points: Vec<TitrationPointResult>,
    /// Stoichiometric equivalence points.
    pub equivalence_points: Vec<EquivalenceResult>,
    /// Half-equivalence points.
    pub half_equivalence_points: Vec<HalfEquivalenceResult>,
    /// What the reader should know about the curve as asked for (for example that it stops
    /// before its first equivalence point), as sentences.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub notes: Vec<String>,
}

/// One line of a designed buffer recipe.
///
/// ```
/// use protolyte::document::DesignLineResult;
/// let l = DesignLineResult::default();
/// assert!(l.grams.is_none());
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct DesignLineResult {
    /// Reagent.
    pub reagent: String,
    /// "acid", "base", "buffer", "adjuster" or "salt".
    pub role: String,
    /// Concentration in the finished buffer, mol/L.
    pub mol_per_l: f64,
    /// Grams to weigh (a solid).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub grams: Option<f64>,
    /// Millilitres of stock to pipette (a solution).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub milliliters: Option<f64>,
}

/// The pH of the finished buffer under other conditions.
///
/// ```
/// use protolyte::document::PhShiftResult;
/// assert_eq!(PhShiftResult::default().shift, 0.0);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct PhShiftResult {
    /// Temperature, °C.
    pub temperature_celsius: f64,
    /// Dilution factor (1 = as made).
    pub dilution_factor: f64,
    /// pH there.
    pub ph: f64,
    /// Change from the check pH.
    pub shift: f64,
}

impl From<&PhShift> for PhShiftResult {
    fn from(s: &PhShift) -> Self {
        PhShiftResult {
            temperature_celsius: s.temperature.as_celsius(),
            dilution_factor: s.dilution_factor,
            ph: s.ph,
            shift: s.shift,
        }
    }
}

/// A designed buffer: what to take, and the check solve of the finished recipe.
///
/// ```
/// use protolyte::document::DesignResult;
/// let d = DesignResult::default();
/// assert!(d.lines.is_empty());
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct DesignResult {
    /// `"protolyte-result/1"`.
    #[serde(default = "result_format")]
    pub format: String,
    /// The request's label.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub name: Option<String>,
    /// What to take.
    pub lines: Vec<DesignLineResult>,
    /// Make up to this volume with water, mL.
    pub final_volume_ml: f64,
    /// Target pH.
    pub target_ph: f64,
    /// pH of the check solve.
    pub check_ph: f64,
    /// check − target.
    pub ph_residual: f64,
    /// Largest relative residual of the check solve over every equation solved (charge,
    /// mass balances, ionic strength).
    pub balance_residual: f64,
    /// Ionic strength, mol/kg.
    pub ionic_strength_mol_per_kg: f64,
    /// Buffer capacity, mol/L per pH.
    pub buffer_capacity_mol_per_l: f64,
    /// pH at other temperatures.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub temperature_shifts: Vec<PhShiftResult>,
    /// pH after ten-fold dilution.
    pub dilution_shift: PhShiftResult,
    /// Warnings of the check solve.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub warnings: Vec<String>,
    /// The finished recipe as a recipe document (feed it to `solve`).
    pub recipe: RecipeDoc,
    /// The check solve in full, when it was run.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub check: Option<SolveResult>,
}

impl DesignResult {
    /// The document of `r`, designed at `conditions`; the check solve is re-run to report
    /// every species.
    pub fn from_recipe(r: &BufferRecipe, conditions: &Conditions) -> Self {
        let check = r
            .recipe
            .compile(conditions)
            .and_then(|s| s.solve())
            .ok()
            .map(|eq| SolveResult::from_equilibrium(&eq));
        DesignResult {
            format: result_format(),
            name: None,
            lines: r
                .lines
                .iter()
                .map(|l| {
                    let (grams, milliliters) = match l.measure {
                        Measure::Mass(m) => (Some(m.grams_value()), None),
                        Measure::Volume(v) => (None, Some(v.milliliters_value())),
                    };
                    DesignLineResult {
                        reagent: l.reagent.clone(),
                        role: match l.role {
                            Role::Acid => "acid",
                            Role::Base => "base",
                            Role::Buffer => "buffer",
                            Role::Adjuster => "adjuster",
                            Role::Salt => "salt",
                        }
                        .into(),
                        mol_per_l: l.mol_per_l,
                        grams,
                        milliliters,
                    }
                })
                .collect(),
            final_volume_ml: r.final_volume.milliliters_value(),
            target_ph: r.target_ph,
            check_ph: r.check_ph,
            ph_residual: r.ph_residual,
            balance_residual: r.balance_residual,
            ionic_strength_mol_per_kg: r.ionic_strength_molal,
            buffer_capacity_mol_per_l: finite(r.buffer_capacity_mol_per_l).unwrap_or(0.0),
            temperature_shifts: r.temperature_shifts.iter().map(PhShiftResult::from).collect(),
            dilution_shift: (&r.dilution_shift).into(),
            warnings: {
                let mut w = warnings(&r.warnings);
                w.extend(far_from_pka(r, conditions));
                w
            },
            recipe: RecipeDoc::from_recipe(&r.recipe, conditions),
            check,
        }
    }
}

/// One estimated unknown.
///
/// ```
/// use protolyte::document::EstimateResult;
/// assert!(EstimateResult::default().standard_error.is_none());
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct EstimateResult {
    /// What was estimated.
    pub unknown: String,
    /// Its curve (1-based), absent when shared.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub curve: Option<usize>,
    /// Starting value.
    pub start: f64,
    /// Estimate.
    pub value: f64,
    /// Standard error (absent when it could not be computed).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub standard_error: Option<f64>,
}

/// A fit report.
///
/// ```
/// use protolyte::document::FitResult;
/// assert!(FitResult::default().estimates.is_empty());
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct FitResult {
    /// `"protolyte-result/1"`.
    #[serde(default = "result_format")]
    pub format: String,
    /// The request's label.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub name: Option<String>,
    /// Estimates, in the order asked for.
    pub estimates: Vec<EstimateResult>,
    /// Correlation matrix of the estimates (rows in the same order; `null` where undefined).
    pub correlation: Vec<Vec<Option<f64>>>,
    /// measured − model pH, per curve and point.
    pub residuals: Vec<Vec<f64>>,
    /// Residual standard deviation, pH (absent without degrees of freedom).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub residual_sd: Option<f64>,
    /// Degrees of freedom.
    pub degrees_of_freedom: usize,
    /// Iterations.
    pub iterations: usize,
    /// True when the fit stopped on convergence rather than the iteration budget.
    pub converged: bool,
    /// Warnings about the fit (estimates correlated beyond |r| = 0.99), as sentences.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub warnings: Vec<String>,
}

impl From<&FitReport> for FitResult {
    fn from(f: &FitReport) -> Self {
        let n = f.correlation.nrows();
        FitResult {
            format: result_format(),
            name: None,
            estimates: f
                .estimates
                .iter()
                .map(|e| EstimateResult {
                    unknown: e.unknown.describe(),
                    curve: match e.scope {
                        Scope::Shared => None,
                        Scope::Curve(k) => Some(k + 1),
                    },
                    start: e.start,
                    value: e.value,
                    standard_error: finite(e.standard_error),
                })
                .collect(),
            correlation: (0..n)
                .map(|i| {
                    (0..f.correlation.ncols())
                        .map(|j| finite(f.correlation[(i, j)]))
                        .collect()
                })
                .collect(),
            residuals: f
                .residuals
                .iter()
                .map(|c| c.iter().map(|r| finite(*r).unwrap_or(0.0)).collect())
                .collect(),
            residual_sd: finite(f.residual_sd),
            degrees_of_freedom: f.degrees_of_freedom,
            iterations: f.iterations,
            converged: f.converged,
            warnings: f.warnings(),
        }
    }
}
