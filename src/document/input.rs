//! Input documents: recipes, titration, design and fit requests, and user definitions.

use std::borrow::Cow;
use std::collections::HashMap;

use serde::{Deserialize, Serialize};

use super::limits::{MAX_CURVES, MAX_ENTRIES, MAX_NAME_CHARS, MAX_PARTS, MAX_POINTS};
use super::{DESIGN_FORMAT, DocumentError, FIT_FORMAT, RECIPE_FORMAT, TITRATION_FORMAT, check_format, field_error};
use crate::analysis::{BufferSpec, Ingredients, Scope, Stepping, Stock, Titration, TitrationFit, Unknown};
use crate::{
    ActivityModel, Amount, Catalog, Complex, ComplexPart, Conditions, Constituent, DataKind, Error, Ion, Mass,
    PhConvention, Pressure, Protolyte, Reagent, Recipe, Temperature, Volume,
};

/// Refuses a name, synonym or formula longer than [`MAX_NAME_CHARS`] (before any look-up, so
/// that the "did you mean" search stays bounded).
fn check_name(path: impl FnOnce() -> String, name: &str) -> Result<(), DocumentError> {
    // Counting stops just past the limit.
    if name.chars().nth(MAX_NAME_CHARS).is_some() {
        return Err(field_error(
            path(),
            format!(
                "`{}`: a name may hold at most {MAX_NAME_CHARS} characters",
                super::shorten(name)
            ),
        ));
    }
    Ok(())
}

/// Refuses a list longer than `max`.
fn check_count(path: impl FnOnce() -> String, len: usize, max: usize, what: &str) -> Result<(), DocumentError> {
    if len > max {
        return Err(field_error(
            path(),
            format!("{len} {what}: a document may give at most {max}"),
        ));
    }
    Ok(())
}

/// The activity-coefficient model, as written in a document: `"ideal"`, `"davies"`,
/// `"extended-debye-huckel"` or `"sit"`.
///
/// ```
/// use protolyte::ActivityModel;
/// use protolyte::document::ActivityDoc;
/// assert_eq!(ActivityModel::from(ActivityDoc::Davies), ActivityModel::Davies);
/// assert_eq!(ActivityDoc::from(ActivityModel::Ideal), ActivityDoc::Ideal);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum ActivityDoc {
    /// No activity correction (γ = 1).
    Ideal,
    /// Davies (the default).
    #[default]
    Davies,
    /// Extended Debye–Hückel with per-ion sizes.
    ExtendedDebyeHuckel,
    /// Specific ion interaction theory (to about 3.5 mol/kg).
    Sit,
}

impl From<ActivityDoc> for ActivityModel {
    fn from(a: ActivityDoc) -> Self {
        match a {
            ActivityDoc::Ideal => ActivityModel::Ideal,
            ActivityDoc::Davies => ActivityModel::Davies,
            ActivityDoc::ExtendedDebyeHuckel => ActivityModel::ExtendedDebyeHuckel,
            ActivityDoc::Sit => ActivityModel::Sit,
        }
    }
}

impl From<ActivityModel> for ActivityDoc {
    fn from(a: ActivityModel) -> Self {
        match a {
            ActivityModel::Ideal => ActivityDoc::Ideal,
            ActivityModel::Davies => ActivityDoc::Davies,
            ActivityModel::ExtendedDebyeHuckel => ActivityDoc::ExtendedDebyeHuckel,
            ActivityModel::Sit => ActivityDoc::Sit,
        }
    }
}

/// The pH convention, as written in a document: `"model"` (the default: pH = −log₁₀ a(H⁺)
/// with the activity model's own γ(H⁺)) or `"bates-guggenheim"` (the convention of the
/// pH(S) values of reference buffers, see [`PhConvention::BatesGuggenheim`]).
///
/// Any other value is refused with a message that names the field `ph_convention`, the
/// values it takes and, where one is close, the value meant.
///
/// ```
/// use protolyte::PhConvention;
/// use protolyte::document::{PhConventionDoc, RecipeDoc, parse};
/// assert_eq!(PhConvention::from(PhConventionDoc::BatesGuggenheim), PhConvention::BatesGuggenheim);
/// let doc: RecipeDoc = parse(r#"{ "ph_convention": "bates-guggenheim" }"#, "r.json")?;
/// assert_eq!(doc.conditions()?.ph_convention, PhConvention::BatesGuggenheim);
/// let err = parse::<RecipeDoc>(r#"{ "ph_convention": "bates_guggenheim" }"#, "r.json").unwrap_err();
/// assert!(err.to_string().contains("did you mean `bates-guggenheim`"));
/// # Ok::<(), protolyte::document::DocumentError>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case", try_from = "String")]
pub enum PhConventionDoc {
    /// pH = −log₁₀ a(H⁺) with the activity model's own γ(H⁺) (the default).
    #[default]
    Model,
    /// The Bates–Guggenheim convention of the pH(S) values of reference buffers.
    BatesGuggenheim,
}

impl PhConventionDoc {
    /// The values a document may write, with their meaning.
    const VALUES: [(&'static str, PhConventionDoc); 2] = [
        ("model", PhConventionDoc::Model),
        ("bates-guggenheim", PhConventionDoc::BatesGuggenheim),
    ];
}

impl TryFrom<String> for PhConventionDoc {
    type Error = String;

    fn try_from(value: String) -> Result<Self, String> {
        if let Some((_, v)) = Self::VALUES.iter().find(|(n, _)| *n == value) {
            return Ok(*v);
        }
        // A value meant as one of ours but spelt another way (case, `_`, a space or a dash
        // of another kind between the names, an umlaut): compare the letters alone.
        let letters = |s: &str| -> String {
            s.chars()
                .filter(|c| c.is_alphanumeric())
                .flat_map(char::to_lowercase)
                .collect()
        };
        let key = letters(&value);
        let suggestion = Self::VALUES
            .iter()
            .find(|(n, _)| !key.is_empty() && (letters(n) == key || (key.len() >= 3 && letters(n).starts_with(&key))))
            .map(|(n, _)| format!(" (did you mean `{n}`?)"))
            .unwrap_or_default();
        Err(format!(
            "field `ph_convention`: unknown value `{}`; expected `model` or `bates-guggenheim`{suggestion}",
            super::shorten(&value)
        ))
    }
}

impl From<PhConventionDoc> for PhConvention {
    fn from(c: PhConventionDoc) -> Self {
        match c {
            PhConventionDoc::Model => PhConvention::Model,
            PhConventionDoc::BatesGuggenheim => PhConvention::BatesGuggenheim,
        }
    }
}

impl From<PhConvention> for PhConventionDoc {
    fn from(c: PhConvention) -> Self {
        match c {
            PhConvention::Model => PhConventionDoc::Model,
            PhConvention::BatesGuggenheim => PhConventionDoc::BatesGuggenheim,
        }
    }
}

/// One line of a recipe: a reagent and exactly one way of giving its amount.
///
/// The amount forms: `molar` (mol/L of the final solution), `millimolar` (mmol/L), `molal`
/// (mol/kg of water), `grams` with `final_volume_ml` (weighed and made up to volume), or
/// `stock_molar` with `aliquot_ml` and `final_volume_ml` (a pipetted stock solution).
///
/// ```
/// use protolyte::document::AmountLine;
/// let line = AmountLine::millimolar("sodium acetate", 10.0);
/// assert_eq!(line.millimolar, Some(10.0));
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct AmountLine {
    /// The reagent's name or a synonym (catalogue or user definitions).
    pub reagent: String,
    /// mol/L of the final solution.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub molar: Option<f64>,
    /// mmol/L of the final solution.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub millimolar: Option<f64>,
    /// mol/kg of water.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub molal: Option<f64>,
    /// Grams weighed (with `final_volume_ml`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub grams: Option<f64>,
    /// Concentration of a stock solution, mol/L (with `aliquot_ml` and `final_volume_ml`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub stock_molar: Option<f64>,
    /// Volume of stock solution pipetted, mL.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub aliquot_ml: Option<f64>,
    /// Volume the weighed mass or the aliquot is made up to, mL.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub final_volume_ml: Option<f64>,
}

/// The amount form of a line, once checked.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum AmountForm {
    Plain(Amount),
    Mass { grams: f64, final_l: f64 },
    Stock { molar: f64, aliquot_l: f64, final_l: f64 },
}

impl AmountLine {
    /// A line of `millimolar` mmol/L of `reagent`.
    pub fn millimolar(reagent: &str, millimolar: f64) -> Self {
        AmountLine {
            reagent: reagent.into(),
            millimolar: Some(millimolar),
            ..Default::default()
        }
    }

    /// Which amount form was given; `path` names the line in errors.
    pub(crate) fn form(&self, path: &str) -> Result<AmountForm, DocumentError> {
        let given = [
            self.molar.is_some(),
            self.millimolar.is_some(),
            self.molal.is_some(),
            self.grams.is_some(),
            self.stock_molar.is_some(),
        ]
        .iter()
        .filter(|b| **b)
        .count();
        if given != 1 {
            return Err(field_error(
                path,
                format!(
                    "`{}`: give exactly one amount: `molar`, `millimolar`, `molal`, `grams` (with `final_volume_ml`) or `stock_molar` (with `aliquot_ml` and `final_volume_ml`); {given} given",
                    self.reagent
                ),
            ));
        }
        let need = |v: Option<f64>, name: &str| {
            v.ok_or_else(|| field_error(format!("{path}.{name}"), format!("`{}`: missing", self.reagent)))
        };
        let stray = |v: Option<f64>, name: &str, why: &str| match v {
            Some(_) => Err(field_error(format!("{path}.{name}"), format!("only used {why}"))),
            None => Ok(()),
        };
        if let Some(g) = self.grams {
            stray(self.aliquot_ml, "aliquot_ml", "with `stock_molar`")?;
            let v = need(self.final_volume_ml, "final_volume_ml")?;
            return Ok(AmountForm::Mass {
                grams: g,
                final_l: v * 1e-3,
            });
        }
        if let Some(c) = self.stock_molar {
            let a = need(self.aliquot_ml, "aliquot_ml")?;
            let v = need(self.final_volume_ml, "final_volume_ml")?;
            return Ok(AmountForm::Stock {
                molar: c,
                aliquot_l: a * 1e-3,
                final_l: v * 1e-3,
            });
        }
        stray(self.aliquot_ml, "aliquot_ml", "with `stock_molar`")?;
        stray(self.final_volume_ml, "final_volume_ml", "with `grams` or `stock_molar`")?;
        let a = match (self.molar, self.millimolar, self.molal) {
            (Some(m), _, _) => Amount::molar(m),
            (_, Some(m), _) => Amount::millimolar(m),
            (_, _, Some(m)) => Amount::molal(m),
            _ => unreachable_amount(),
        };
        Ok(AmountForm::Plain(a))
    }

    /// Adds the line to `recipe`, `reagent` being the resolved reagent.
    pub(crate) fn add_to(&self, recipe: &mut Recipe, reagent: &Reagent, path: &str) -> Result<(), DocumentError> {
        let amount = amount_of(self.form(path)?, reagent).map_err(|(f, e)| self.amount_error(path, f, e))?;
        recipe
            .add(reagent, amount)
            .map_err(|e| field_error(format!("{path}.{}", self.amount_field()), e))?;
        Ok(())
    }

    /// An error about field `field` of the line at `path` (the amount's own field when
    /// `field` is empty).
    pub(crate) fn amount_error(&self, path: &str, field: &str, e: Error) -> DocumentError {
        let field = if field.is_empty() { self.amount_field() } else { field };
        field_error(format!("{path}.{field}"), e)
    }

    /// The field that gives the amount (`molar`, `millimolar`, `molal`, `grams` or
    /// `stock_molar`).
    pub(crate) fn amount_field(&self) -> &'static str {
        if self.molar.is_some() {
            "molar"
        } else if self.millimolar.is_some() {
            "millimolar"
        } else if self.molal.is_some() {
            "molal"
        } else if self.grams.is_some() {
            "grams"
        } else {
            "stock_molar"
        }
    }
}

/// The amount of `reagent` a checked line gives, in the final solution (the checks of
/// [`Recipe::add_mass`] and [`Recipe::add_stock`]); an error comes with the field it is about.
pub(crate) fn amount_of(form: AmountForm, reagent: &Reagent) -> Result<Amount, (&'static str, Error)> {
    let name = reagent.name();
    match form {
        // The field (`molar`, `millimolar` or `molal`) is filled in by the caller.
        AmountForm::Plain(a) => a.validate(name).map_err(|e| ("", e)),
        AmountForm::Mass { grams, final_l } => {
            let m = reagent.molar_mass_g_per_mol().ok_or_else(|| {
                (
                    "grams",
                    Error::InconsistentDefinition {
                        name: name.to_string(),
                        reason: "a mass was given but the reagent has no molar mass".into(),
                    },
                )
            })?;
            crate::error::check_amount(&format!("mass of {name}"), grams, "g").map_err(|e| ("grams", e))?;
            Volume::liters(final_l)
                .positive("final volume")
                .map_err(|e| ("final_volume_ml", e))?;
            Amount::from_mass(Mass::grams(grams), m, Volume::liters(final_l)).map_err(|e| ("grams", e))
        }
        AmountForm::Stock {
            molar,
            aliquot_l,
            final_l,
        } => {
            Amount::molar(molar).validate(name).map_err(|e| ("stock_molar", e))?;
            let v = crate::error::check_amount(&format!("aliquot of {name}"), aliquot_l, "L")
                .map_err(|e| ("aliquot_ml", e))?;
            let vf = Volume::liters(final_l)
                .positive("final volume")
                .map_err(|e| ("final_volume_ml", e))?;
            if v > vf {
                return Err((
                    "aliquot_ml",
                    Error::InconsistentDefinition {
                        name: name.to_string(),
                        reason: format!("aliquot {} mL is larger than the final volume {} mL", v * 1e3, vf * 1e3),
                    },
                ));
            }
            Ok(Amount::molar(molar).scaled(v / vf))
        }
    }
}

/// Exactly one form was counted above, so this is never reached; kept total for safety.
fn unreachable_amount() -> Amount {
    Amount::molar(0.0)
}

/// A user's acid–base family.
///
/// ```
/// use protolyte::document::ProtolyteDef;
/// let d: ProtolyteDef = serde_json::from_str(r#"{"name": "dye X", "pka": [6.8], "charge_most_protonated": 0}"#)?;
/// assert_eq!(d.pka, vec![6.8]);
/// # Ok::<(), serde_json::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ProtolyteDef {
    /// Name (also the name of its neutral most protonated form as a reagent, when that form
    /// is neutral).
    pub name: String,
    /// Stepwise pKa values at 25 °C, infinite dilution, most protonated first.
    pub pka: Vec<f64>,
    /// Charge of the most protonated form.
    pub charge_most_protonated: i32,
    /// ΔH° of each step, kJ/mol.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub enthalpies_kj_per_mol: Option<Vec<f64>>,
    /// Ion-size parameter, ångström.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ion_size_angstrom: Option<f64>,
    /// Molar mass of the neutral most protonated form, g/mol (lets you weigh it).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub molar_mass_g_per_mol: Option<f64>,
    /// Other names.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub synonyms: Vec<String>,
    /// Where the numbers come from.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub source: Option<String>,
}

/// A user's simple ion.
///
/// ```
/// use protolyte::document::IonDef;
/// let d: IonDef = serde_json::from_str(r#"{"name": "lanthanum", "charge": 3}"#)?;
/// assert_eq!(d.charge, 3);
/// # Ok::<(), serde_json::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct IonDef {
    /// Name.
    pub name: String,
    /// Charge number.
    pub charge: i32,
    /// Ion-size parameter, ångström.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ion_size_angstrom: Option<f64>,
    /// Formula with charge, e.g. `"La+3"`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub formula: Option<String>,
    /// Other names.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub synonyms: Vec<String>,
}

/// One constituent of a user's reagent: a family form (`protolyte` with `protons` bound), an
/// `ion`, or `proton` / `hydroxide` (strong acids and bases); `count` per formula unit.
///
/// ```
/// use protolyte::document::ReagentPartDef;
/// let p: ReagentPartDef = serde_json::from_str(r#"{"ion": "sodium", "count": 2}"#)?;
/// assert_eq!(p.count, 2);
/// # Ok::<(), serde_json::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ReagentPartDef {
    /// A family, in the form with `protons` bound protons.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub protolyte: Option<String>,
    /// Bound protons of the family form.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub protons: Option<usize>,
    /// A simple ion.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ion: Option<String>,
    /// A hydrogen ion (strong acid).
    #[serde(default, skip_serializing_if = "std::ops::Not::not")]
    pub proton: bool,
    /// A hydroxide ion (strong base).
    #[serde(default, skip_serializing_if = "std::ops::Not::not")]
    pub hydroxide: bool,
    /// How many per formula unit (default 1).
    #[serde(default = "one_u32")]
    pub count: u32,
}

fn one_u32() -> u32 {
    1
}

fn one_i32() -> i32 {
    1
}

/// A user's reagent: constituents that add up to zero charge.
///
/// ```
/// use protolyte::document::ReagentDef;
/// let d: ReagentDef = serde_json::from_str(r#"{"name": "sodium dye X",
///   "parts": [{"ion": "sodium"}, {"protolyte": "dye X", "protons": 0}]}"#)?;
/// assert_eq!(d.parts.len(), 2);
/// # Ok::<(), serde_json::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ReagentDef {
    /// Name.
    pub name: String,
    /// Molar mass, g/mol (needed to weigh it).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub molar_mass_g_per_mol: Option<f64>,
    /// Formula as on the bottle.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub formula: Option<String>,
    /// Constituents.
    pub parts: Vec<ReagentPartDef>,
    /// Other names.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub synonyms: Vec<String>,
}

/// One part of a user's complex: the fully deprotonated `base` of a family, an `ion`, or
/// `protons` gained (negative: lost, for hydroxo complexes); `count` per complex.
///
/// ```
/// use protolyte::document::ComplexPartDef;
/// let p: ComplexPartDef = serde_json::from_str(r#"{"base": "edta"}"#)?;
/// assert_eq!(p.count, 1);
/// # Ok::<(), serde_json::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ComplexPartDef {
    /// A family's fully deprotonated form.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub base: Option<String>,
    /// A simple ion.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ion: Option<String>,
    /// Protons gained (negative: lost). Used alone, without `count`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub protons: Option<i32>,
    /// How many (default 1).
    #[serde(default = "one_i32")]
    pub count: i32,
}

/// A user's complex or ion pair.
///
/// ```
/// use protolyte::document::ComplexDef;
/// let d: ComplexDef = serde_json::from_str(r#"{"name": "LaY-", "log_beta": 15.5,
///   "parts": [{"ion": "lanthanum"}, {"base": "edta"}]}"#)?;
/// assert_eq!(d.log_beta, 15.5);
/// # Ok::<(), serde_json::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ComplexDef {
    /// Name.
    pub name: String,
    /// log₁₀ β from the parts at 25 °C, infinite dilution.
    pub log_beta: f64,
    /// Parts.
    pub parts: Vec<ComplexPartDef>,
    /// ΔH° of formation, kJ/mol.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub enthalpy_kj_per_mol: Option<f64>,
    /// Ion-size parameter, ångström.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ion_size_angstrom: Option<f64>,
    /// Where the number comes from.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub source: Option<String>,
}

/// User definitions that go beside the built-in catalogue for one document.
///
/// ```
/// use protolyte::document::DefinitionsDoc;
/// assert!(DefinitionsDoc::default().is_empty());
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DefinitionsDoc {
    /// Acid–base families.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub protolytes: Vec<ProtolyteDef>,
    /// Simple ions.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub ions: Vec<IonDef>,
    /// Reagents.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub reagents: Vec<ReagentDef>,
    /// Complexes (always considered where their parts are present).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub complexes: Vec<ComplexDef>,
}

impl DefinitionsDoc {
    /// True when nothing is defined.
    pub fn is_empty(&self) -> bool {
        self.protolytes.is_empty() && self.ions.is_empty() && self.reagents.is_empty() && self.complexes.is_empty()
    }

    /// Refuses lists, names and synonyms over the limits.
    fn check_limits(&self) -> Result<(), DocumentError> {
        let lists = [
            ("protolytes", self.protolytes.len()),
            ("ions", self.ions.len()),
            ("reagents", self.reagents.len()),
            ("complexes", self.complexes.len()),
        ];
        for (kind, len) in lists {
            check_count(|| format!("definitions.{kind}"), len, MAX_ENTRIES, "definitions")?;
        }
        let names = |path: &str, name: &str, synonyms: &[String], formula: Option<&String>| {
            check_name(|| format!("{path}.name"), name)?;
            check_count(|| format!("{path}.synonyms"), synonyms.len(), MAX_PARTS, "synonyms")?;
            for (k, syn) in synonyms.iter().enumerate() {
                check_name(|| format!("{path}.synonyms[{k}]"), syn)?;
            }
            if let Some(f) = formula {
                check_name(|| format!("{path}.formula"), f)?;
            }
            Ok::<(), DocumentError>(())
        };
        for (i, d) in self.protolytes.iter().enumerate() {
            let path = format!("definitions.protolytes[{i}]");
            names(&path, &d.name, &d.synonyms, None)?;
            check_count(|| format!("{path}.pka"), d.pka.len(), MAX_PARTS, "pKa values")?;
        }
        for (i, d) in self.ions.iter().enumerate() {
            names(
                &format!("definitions.ions[{i}]"),
                &d.name,
                &d.synonyms,
                d.formula.as_ref(),
            )?;
        }
        for (i, d) in self.reagents.iter().enumerate() {
            let path = format!("definitions.reagents[{i}]");
            names(&path, &d.name, &d.synonyms, d.formula.as_ref())?;
            check_count(|| format!("{path}.parts"), d.parts.len(), MAX_PARTS, "parts")?;
            for (k, p) in d.parts.iter().enumerate() {
                for (field, n) in [("protolyte", &p.protolyte), ("ion", &p.ion)] {
                    if let Some(n) = n {
                        check_name(|| format!("{path}.parts[{k}].{field}"), n)?;
                    }
                }
            }
        }
        for (i, d) in self.complexes.iter().enumerate() {
            let path = format!("definitions.complexes[{i}]");
            names(&path, &d.name, &[], None)?;
            check_count(|| format!("{path}.parts"), d.parts.len(), MAX_PARTS, "parts")?;
            for (k, p) in d.parts.iter().enumerate() {
                for (field, n) in [("base", &p.base), ("ion", &p.ion)] {
                    if let Some(n) = n {
                        check_name(|| format!("{path}.parts[{k}].{field}"), n)?;
                    }
                }
            }
        }
        Ok(())
    }

    /// Adds the definitions to `cat`; returns the user's complexes.
    fn apply(&self, cat: &mut Catalog) -> Result<Vec<Complex>, DocumentError> {
        self.check_limits()?;
        let mut names = Names::of(cat);
        for (i, d) in self.protolytes.iter().enumerate() {
            let path = format!("definitions.protolytes[{i}]");
            names.claim(DataKind::Protolyte, &d.name, &d.synonyms, &path)?;
            let p = (|| -> Result<Protolyte, Error> {
                let mut p = Protolyte::new(&d.name, &d.pka, d.charge_most_protonated)?;
                if let Some(h) = &d.enthalpies_kj_per_mol {
                    p = p.with_enthalpies_kj_per_mol(h)?;
                }
                if let Some(a) = d.ion_size_angstrom {
                    p = p.with_ion_size_angstrom(a)?;
                }
                if let Some(s) = &d.source {
                    p = p.with_source(s);
                }
                Ok(p)
            })()
            .map_err(|e| field_error(&path, e))?;
            let syn: Vec<&str> = d.synonyms.iter().map(String::as_str).collect();
            cat.add_protolyte(p.clone(), &syn).map_err(|e| field_error(&path, e))?;
            // Its neutral form as a reagent of the same name, when there is one.
            if let Ok(r) = Reagent::neutral_form(&p, d.molar_mass_g_per_mol) {
                let _ = cat.add_reagent(r, &syn);
            }
        }
        for (i, d) in self.ions.iter().enumerate() {
            let path = format!("definitions.ions[{i}]");
            names.claim(DataKind::Ion, &d.name, &d.synonyms, &path)?;
            let ion = (|| -> Result<Ion, Error> {
                let mut ion = Ion::new(&d.name, d.charge)?;
                if let Some(a) = d.ion_size_angstrom {
                    ion = ion.with_ion_size_angstrom(a)?;
                }
                if let Some(f) = &d.formula {
                    ion = ion.with_formula(f);
                }
                Ok(ion)
            })()
            .map_err(|e| field_error(&path, e))?;
            let syn: Vec<&str> = d.synonyms.iter().map(String::as_str).collect();
            cat.add_ion(ion, &syn).map_err(|e| field_error(&path, e))?;
        }
        for (i, d) in self.reagents.iter().enumerate() {
            let path = format!("definitions.reagents[{i}]");
            names.claim(DataKind::Reagent, &d.name, &d.synonyms, &path)?;
            let mut parts = Vec::with_capacity(d.parts.len());
            for (k, p) in d.parts.iter().enumerate() {
                let ppath = format!("{path}.parts[{k}]");
                let c = match (&p.protolyte, &p.ion, p.proton, p.hydroxide) {
                    (Some(f), None, false, false) => Constituent::Form {
                        protolyte: cat
                            .protolyte(f)
                            .map_err(|e| field_error(format!("{ppath}.protolyte"), e))?,
                        protons: p.protons.ok_or_else(|| {
                            field_error(format!("{ppath}.protons"), "missing: how many protons the form holds")
                        })?,
                    },
                    (None, Some(n), false, false) => {
                        Constituent::Ion(cat.ion(n).map_err(|e| field_error(format!("{ppath}.ion"), e))?)
                    }
                    (None, None, true, false) => Constituent::Proton,
                    (None, None, false, true) => Constituent::Hydroxide,
                    _ => {
                        return Err(field_error(
                            ppath,
                            "give exactly one of `protolyte` (with `protons`), `ion`, `proton: true` or `hydroxide: true`",
                        ));
                    }
                };
                parts.push((c, p.count));
            }
            let mut r = Reagent::new(&d.name, d.molar_mass_g_per_mol, parts).map_err(|e| field_error(&path, e))?;
            if let Some(f) = &d.formula {
                r = r.with_formula(f);
            }
            let syn: Vec<&str> = d.synonyms.iter().map(String::as_str).collect();
            cat.add_reagent(r, &syn).map_err(|e| field_error(&path, e))?;
        }
        let mut out = Vec::new();
        for (i, d) in self.complexes.iter().enumerate() {
            let path = format!("definitions.complexes[{i}]");
            names.claim(DataKind::Complex, &d.name, &[], &path)?;
            let mut parts = Vec::with_capacity(d.parts.len());
            for (k, p) in d.parts.iter().enumerate() {
                let ppath = format!("{path}.parts[{k}]");
                let part = match (&p.base, &p.ion, p.protons) {
                    (Some(b), None, None) => (
                        ComplexPart::Base(cat.protolyte(b).map_err(|e| field_error(format!("{ppath}.base"), e))?),
                        p.count,
                    ),
                    (None, Some(n), None) => (
                        ComplexPart::Ion(cat.ion(n).map_err(|e| field_error(format!("{ppath}.ion"), e))?),
                        p.count,
                    ),
                    (None, None, Some(h)) => (ComplexPart::Proton, h),
                    _ => {
                        return Err(field_error(
                            ppath,
                            "give exactly one of `base`, `ion` or `protons` (signed)",
                        ));
                    }
                };
                parts.push(part);
            }
            let c = (|| -> Result<Complex, Error> {
                let mut c = Complex::new(&d.name, parts, d.log_beta)?;
                if let Some(h) = d.enthalpy_kj_per_mol {
                    c = c.with_enthalpy_kj_per_mol(h)?;
                }
                if let Some(a) = d.ion_size_angstrom {
                    c = c.with_ion_size_angstrom(a)?;
                }
                if let Some(s) = &d.source {
                    c = c.with_source(s);
                }
                Ok(c)
            })()
            .map_err(|e| field_error(&path, e))?;
            cat.add_complex(c.clone(), &[]).map_err(|e| field_error(&path, e))?;
            out.push(c);
        }
        Ok(out)
    }
}

/// The names already taken, for the collision checks of a document's definitions.
///
/// Families, ions and complexes share one set of names (they name the components and species
/// of a solution, so an ion named like a family would be taken for it); reagents have their
/// own (a neutral family's reagent carries the family's name). A definition whose name or
/// synonym is taken by another kind, or by an earlier definition of the same document, is
/// refused with both named, and so is a definition that would replace a catalogue entry of the
/// same kind (the library's `Catalog::replace_*` calls do that on purpose; a document does not).
struct Names {
    /// Normalised name → (kind, where it comes from, as quoted in a message, from the document).
    species: HashMap<String, (DataKind, String, bool)>,
    /// Normalised reagent name → (where it comes from, from the document).
    reagents: HashMap<String, (String, bool)>,
}

impl Names {
    fn of(cat: &Catalog) -> Self {
        let mut names = Names {
            species: HashMap::new(),
            reagents: HashMap::new(),
        };
        for e in cat.entries() {
            let origin = format!("the catalogue's {} `{}`", e.kind.name(), e.name);
            for n in std::iter::once(&e.name).chain(&e.synonyms) {
                let key = crate::data::normalize(n);
                if e.kind == DataKind::Reagent {
                    names.reagents.entry(key).or_insert_with(|| (origin.clone(), false));
                } else {
                    names
                        .species
                        .entry(key)
                        .or_insert_with(|| (e.kind, origin.clone(), false));
                }
            }
        }
        names
    }

    /// Takes `name` and `synonyms` for a definition of `kind` at `path`, or says what already
    /// holds one of them.
    fn claim(&mut self, kind: DataKind, name: &str, synonyms: &[String], path: &str) -> Result<(), DocumentError> {
        let all = || std::iter::once(name).chain(synonyms.iter().map(String::as_str));
        let this = format!("{path} (`{}`)", super::shorten(name));
        for n in all() {
            let key = crate::data::normalize(n);
            let clash = if kind == DataKind::Reagent {
                match self.reagents.get(&key) {
                    Some((origin, true)) => Some(format!("reagent {origin}")),
                    Some((origin, false)) => Some(format!(
                        "{origin} (a document's definitions do not replace the catalogue's entries: give yours a name of its own)"
                    )),
                    None => None,
                }
            } else {
                match self.species.get(&key) {
                    Some((k, origin, _)) if *k != kind => Some(origin.clone()),
                    Some((_, origin, true)) => Some(format!("{} {origin}", kind.name())),
                    Some((_, origin, false)) => Some(format!(
                        "{origin} (a document's definitions do not replace the catalogue's entries: give yours a name of its own)"
                    )),
                    _ => None,
                }
            };
            if let Some(other) = clash {
                let field = if n == name {
                    format!("{path}.name")
                } else {
                    format!("{path}.synonyms")
                };
                let mut message = format!(
                    "the {} name `{}` is already taken by {other}",
                    kind.name(),
                    super::shorten(n)
                );
                let cross_kind =
                    kind != DataKind::Reagent && self.species.get(&key).is_some_and(|(k, _, _)| *k != kind);
                if cross_kind {
                    message.push_str(
                        "; protolytes, ions and complexes need names of their own (they name the species of a solution)",
                    );
                }
                return Err(field_error(field, message));
            }
        }
        for n in all() {
            let key = crate::data::normalize(n);
            if kind == DataKind::Reagent {
                self.reagents.insert(key, (this.clone(), true));
            } else {
                self.species.insert(key, (kind, this.clone(), true));
            }
        }
        Ok(())
    }
}

/// The catalogue a document is read against: `base` plus the document's definitions.
fn catalog_with<'a>(
    base: &'a Catalog,
    defs: Option<&DefinitionsDoc>,
) -> Result<(Cow<'a, Catalog>, Vec<Complex>), DocumentError> {
    match defs {
        Some(d) if !d.is_empty() => {
            let mut cat = base.clone();
            let complexes = d.apply(&mut cat)?;
            Ok((Cow::Owned(cat), complexes))
        }
        _ => Ok((Cow::Borrowed(base), Vec::new())),
    }
}

/// The conditions of a document.
fn conditions_of(
    temperature_celsius: Option<f64>,
    activity: Option<ActivityDoc>,
    ph_convention: Option<PhConventionDoc>,
) -> Result<Conditions, DocumentError> {
    let t = temperature_celsius.unwrap_or(25.0);
    if !(t.is_finite() && (0.0..=100.0).contains(&t)) {
        return Err(field_error(
            "temperature_celsius",
            format!("{t} °C is outside the supported domain 0..100 °C"),
        ));
    }
    Ok(
        Conditions::new(Temperature::celsius(t), activity.unwrap_or_default().into())
            .with_ph_convention(ph_convention.unwrap_or_default().into()),
    )
}

/// The complexes a document asks for: named ones, the user's, and optionally the whole
/// catalogue's.
fn complexes_of(
    cat: &Catalog,
    names: &[String],
    include_catalog: bool,
    user: &[Complex],
) -> Result<Vec<Complex>, DocumentError> {
    check_count(|| "complexes".into(), names.len(), MAX_ENTRIES, "complexes")?;
    let mut out: Vec<Complex> = user.to_vec();
    for (i, n) in names.iter().enumerate() {
        check_name(|| format!("complexes[{i}]"), n)?;
        out.push(cat.complex(n).map_err(|e| field_error(format!("complexes[{i}]"), e))?);
    }
    if include_catalog {
        out.extend(cat.complexes().iter().cloned());
    }
    Ok(out)
}

/// Builds a recipe from lines; `prefix` is the path of the line list.
fn recipe_of(
    cat: &Catalog,
    lines: &[AmountLine],
    complexes: &[Complex],
    prefix: &str,
) -> Result<Recipe, DocumentError> {
    check_count(|| prefix.to_string(), lines.len(), MAX_ENTRIES, "reagent lines")?;
    let mut recipe = Recipe::new();
    for (i, line) in lines.iter().enumerate() {
        let path = format!("{prefix}[{i}]");
        check_name(|| format!("{path}.reagent"), &line.reagent)?;
        let reagent = cat
            .reagent(&line.reagent)
            .map_err(|e| field_error(format!("{path}.reagent"), e))?;
        line.add_to(&mut recipe, &reagent, &path)?;
    }
    recipe.add_complexes(complexes);
    Ok(recipe)
}

/// A fixed partial pressure of a gas (an open system): the gas by name and its pressure in
/// exactly one unit, `atm`, `bar`, `pascal` or `microatm`.
///
/// ```
/// use protolyte::document::PartialPressureDoc;
/// let p: PartialPressureDoc = serde_json::from_str(r#"{ "gas": "CO2(g)", "microatm": 420 }"#)?;
/// assert!((p.pressure("partial_pressures[0]").unwrap().as_atm() - 4.2e-4).abs() < 1e-12);
/// # Ok::<(), serde_json::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PartialPressureDoc {
    /// The gas's name or a synonym (catalogue, e.g. `"CO2(g)"`).
    pub gas: String,
    /// Partial pressure in atm.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub atm: Option<f64>,
    /// Partial pressure in bar.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub bar: Option<f64>,
    /// Partial pressure in Pa.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub pascal: Option<f64>,
    /// Partial pressure in µatm.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub microatm: Option<f64>,
}

impl PartialPressureDoc {
    /// The pressure given, checked: exactly one unit, a finite positive value. `path` names
    /// the entry in messages.
    pub fn pressure(&self, path: &str) -> Result<Pressure, DocumentError> {
        let given: Vec<(&str, f64)> = [
            ("atm", self.atm),
            ("bar", self.bar),
            ("pascal", self.pascal),
            ("microatm", self.microatm),
        ]
        .into_iter()
        .filter_map(|(n, v)| v.map(|v| (n, v)))
        .collect();
        let (unit, v) = match given.as_slice() {
            [one] => *one,
            [] => {
                return Err(field_error(
                    path.to_string(),
                    "give the partial pressure in one of `atm`, `bar`, `pascal` or `microatm`",
                ));
            }
            _ => {
                return Err(field_error(
                    path.to_string(),
                    "give the partial pressure in exactly one of `atm`, `bar`, `pascal` or `microatm`",
                ));
            }
        };
        if !(v.is_finite() && v > 0.0) {
            return Err(field_error(
                format!("{path}.{unit}"),
                format!(
                    "{} is not a partial pressure (finite and positive)",
                    crate::error::number(v)
                ),
            ));
        }
        let p = match unit {
            "atm" => Pressure::atm(v),
            "bar" => Pressure::bar_value(v),
            "pascal" => Pressure::pascal(v),
            _ => Pressure::microatm(v),
        };
        // The library's range (1000 bar), said in the unit written.
        if p.bar() > 1000.0 {
            return Err(field_error(
                format!("{path}.{unit}"),
                format!(
                    "{} {unit} is {} bar, above the 1000 bar accepted (Henry's law with an ideal gas is far outside its use there)",
                    crate::error::number(v),
                    crate::error::number(p.bar())
                ),
            ));
        }
        Ok(p)
    }
}

/// Which solids may form at equilibrium: the word `"all"` (every solid the catalogue knows
/// whose parts are present) or a list of names.
///
/// ```
/// use protolyte::document::AllowSolidsDoc;
/// let all: AllowSolidsDoc = serde_json::from_str(r#""all""#)?;
/// assert_eq!(all, AllowSolidsDoc::All);
/// let some: AllowSolidsDoc = serde_json::from_str(r#"["calcite", "gypsum"]"#)?;
/// assert_eq!(some, AllowSolidsDoc::Named(vec!["calcite".into(), "gypsum".into()]));
/// assert!(serde_json::from_str::<AllowSolidsDoc>(r#""any""#).is_err());
/// # Ok::<(), serde_json::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq)]
pub enum AllowSolidsDoc {
    /// Every solid of the catalogue.
    All,
    /// The solids named.
    Named(Vec<String>),
}

impl Serialize for AllowSolidsDoc {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        match self {
            AllowSolidsDoc::All => s.serialize_str("all"),
            AllowSolidsDoc::Named(v) => v.serialize(s),
        }
    }
}

impl<'de> Deserialize<'de> for AllowSolidsDoc {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl<'de> serde::de::Visitor<'de> for V {
            type Value = AllowSolidsDoc;
            fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
                f.write_str("the word \"all\" or a list of solid names")
            }
            fn visit_str<E: serde::de::Error>(self, v: &str) -> Result<AllowSolidsDoc, E> {
                if v == "all" {
                    Ok(AllowSolidsDoc::All)
                } else {
                    Err(E::custom(format!(
                        "field `allow_solids`: `{}` is neither the word \"all\" nor a list of solid names",
                        super::shorten(v)
                    )))
                }
            }
            fn visit_seq<A: serde::de::SeqAccess<'de>>(self, mut seq: A) -> Result<AllowSolidsDoc, A::Error> {
                let mut names = Vec::new();
                while let Some(n) = seq.next_element::<String>()? {
                    if names.len() >= MAX_ENTRIES {
                        return Err(serde::de::Error::custom(format!(
                            "field `allow_solids`: a document may name at most {MAX_ENTRIES} solids"
                        )));
                    }
                    names.push(n);
                }
                Ok(AllowSolidsDoc::Named(names))
            }
        }
        d.deserialize_any(V)
    }
}

/// Adds a document's phase requests to `recipe`: the catalogue's solids and gases reported,
/// the solids allowed to form, the fixed partial pressures and the fixed pH.
fn apply_phases(recipe: &mut Recipe, cat: &Catalog, doc: &RecipeDoc) -> Result<(), DocumentError> {
    let (fixed_ph, pressures, allow) = (doc.fixed_ph, &doc.partial_pressures, doc.allow_solids.as_ref());
    recipe.report_solids(cat.solids()).report_gases(cat.gases());
    match allow {
        None => {}
        Some(AllowSolidsDoc::All) => {
            recipe.allow_all_solids();
        }
        Some(AllowSolidsDoc::Named(names)) => {
            check_count(|| "allow_solids".into(), names.len(), MAX_ENTRIES, "solids")?;
            for (i, n) in names.iter().enumerate() {
                check_name(|| format!("allow_solids[{i}]"), n)?;
                let solid = cat.solid(n).map_err(|e| field_error(format!("allow_solids[{i}]"), e))?;
                recipe.allow_solid(&solid);
            }
        }
    }
    check_count(
        || "partial_pressures".into(),
        pressures.len(),
        MAX_ENTRIES,
        "partial pressures",
    )?;
    for (i, p) in pressures.iter().enumerate() {
        let path = format!("partial_pressures[{i}]");
        check_name(|| format!("{path}.gas"), &p.gas)?;
        let gas = cat.gas(&p.gas).map_err(|e| field_error(format!("{path}.gas"), e))?;
        let pressure = p.pressure(&path)?;
        recipe
            .fix_partial_pressure(&gas, pressure)
            .map_err(|e| field_error(path.clone(), e))?;
    }
    if let Some(ph) = fixed_ph {
        recipe.fix_ph(ph).map_err(|e| field_error("fixed_ph", e))?;
    }
    // The ranges are checked in the document's own units first, so that a refused value is
    // quoted as written.
    if let Some(a) = doc.fixed_alkalinity_meq_per_kg {
        crate::error::check_parameter(
            "total alkalinity",
            "meq/kg",
            a,
            -1e5,
            1e5,
            "must be finite and within ±100000 meq/kg",
        )
        .and_then(|a| recipe.fix_alkalinity(a * 1e-3))
        .map_err(|e| field_error("fixed_alkalinity_meq_per_kg", e))?;
    }
    if let Some(d) = doc.fixed_dic_mmol_per_kg {
        crate::error::check_amount_max("DIC", d * 1e-3, "mol/kg")
            .map_err(|e| match e {
                crate::Error::AmountTooLarge { what, limit, .. } => crate::Error::AmountTooLarge {
                    what,
                    value: d,
                    unit: "mmol/kg",
                    limit: limit * 1e3,
                },
                _ => crate::Error::InvalidAmount {
                    what: "DIC".into(),
                    value: d,
                    unit: "mmol/kg",
                },
            })
            .and_then(|d| recipe.fix_dic(d))
            .map_err(|e| field_error("fixed_dic_mmol_per_kg", e))?;
    }
    if let Some(n) = &doc.charge_balance_on {
        check_name(|| "charge_balance_on".into(), n)?;
        let ion = cat.ion(n).map_err(|e| field_error("charge_balance_on", e))?;
        recipe
            .close_charge_balance_on(&ion)
            .map_err(|e| field_error("charge_balance_on", e))?;
    }
    Ok(())
}

/// A recipe document: what was put into one solution, and the conditions.
///
/// ```
/// use protolyte::{Catalog, Conditions};
/// use protolyte::document::{AmountLine, RecipeDoc};
///
/// let mut doc = RecipeDoc::new();
/// doc.reagents.push(AmountLine::millimolar("acetic acid", 10.0));
/// let (recipe, conditions) = doc.to_recipe(&Catalog::builtin())?;
/// assert_eq!(recipe.entries().len(), 1);
/// assert_eq!(conditions, Conditions::default());
/// let back = RecipeDoc::from_recipe(&recipe, &conditions);
/// assert_eq!(back.to_recipe(&Catalog::builtin())?.0, recipe);
/// # Ok::<(), protolyte::document::DocumentError>(())
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RecipeDoc {
    /// `"protolyte-recipe/1"`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub format: Option<String>,
    /// A label of your own, echoed in the result.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub name: Option<String>,
    /// Temperature, °C (default 25).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub temperature_celsius: Option<f64>,
    /// Activity model (default Davies).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub activity: Option<ActivityDoc>,
    /// pH convention (default `"model"`: the activity model's own γ(H⁺)).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ph_convention: Option<PhConventionDoc>,
    /// The recipe's lines.
    #[serde(default)]
    pub reagents: Vec<AmountLine>,
    /// Complexes to consider, by name (catalogue or user definitions).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub complexes: Vec<String>,
    /// Consider every complex of the catalogue whose parts are present (default false).
    #[serde(default, skip_serializing_if = "std::ops::Not::not")]
    pub include_catalog_complexes: bool,
    /// Your own protolytes, ions, reagents and complexes.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub definitions: Option<DefinitionsDoc>,
    /// A fixed pH: replaces the charge balance; the acid or base that holds it is reported.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub fixed_ph: Option<f64>,
    /// Fixed partial pressures of gases (an open system): each gas's family total becomes an
    /// output, with the amount taken up from the gas or given off.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub partial_pressures: Vec<PartialPressureDoc>,
    /// Solids allowed to form (or dissolve) at equilibrium: `"all"` or a list of names.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub allow_solids: Option<AllowSolidsDoc>,
    /// A measured total alkalinity, meq per kg of water: replaces the charge balance (the
    /// water's proton content follows from it).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub fixed_alkalinity_meq_per_kg: Option<f64>,
    /// A measured dissolved inorganic carbon, mmol per kg of water: replaces the carbonate
    /// total.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub fixed_dic_mmol_per_kg: Option<f64>,
    /// The ion whose total closes the charge balance (with a fixed pH or alkalinity).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub charge_balance_on: Option<String>,
}

impl RecipeDoc {
    /// An empty recipe document with the current format tag.
    pub fn new() -> Self {
        RecipeDoc {
            format: Some(RECIPE_FORMAT.into()),
            ..Default::default()
        }
    }

    /// Checks the format tag (`required`: refuse a document without one).
    pub fn check_format(&self, required: bool) -> Result<(), DocumentError> {
        check_format(self.format.as_deref(), RECIPE_FORMAT, required)
    }

    /// The conditions (temperature, activity model and pH convention).
    pub fn conditions(&self) -> Result<Conditions, DocumentError> {
        conditions_of(self.temperature_celsius, self.activity, self.ph_convention)
    }

    /// The recipe and its conditions, names resolved in `catalog` plus the document's own
    /// definitions.
    pub fn to_recipe(&self, catalog: &Catalog) -> Result<(Recipe, Conditions), DocumentError> {
        check_format(self.format.as_deref(), RECIPE_FORMAT, false)?;
        let conditions = self.conditions()?;
        let (cat, user) = catalog_with(catalog, self.definitions.as_ref())?;
        let complexes = complexes_of(&cat, &self.complexes, self.include_catalog_complexes, &user)?;
        let mut recipe = recipe_of(&cat, &self.reagents, &complexes, "reagents")?;
        apply_phases(&mut recipe, &cat, self)?;
        Ok((recipe, conditions))
    }

    /// True when the document asks for more than a closed solution: a fixed pH, partial
    /// pressure, alkalinity or DIC, a charge balance closed on an ion, or solids allowed to
    /// form.
    pub fn has_phase_requests(&self) -> bool {
        self.fixed_ph.is_some()
            || !self.partial_pressures.is_empty()
            || self.allow_solids.is_some()
            || self.fixed_alkalinity_meq_per_kg.is_some()
            || self.fixed_dic_mmol_per_kg.is_some()
            || self.charge_balance_on.is_some()
    }

    /// A document for `recipe` at `conditions`: one line per entry (molar or molal), the
    /// complexes by name. Reagents and complexes are named, not defined: the document reads
    /// back against a catalogue that knows them.
    pub fn from_recipe(recipe: &Recipe, conditions: &Conditions) -> Self {
        RecipeDoc {
            format: Some(RECIPE_FORMAT.into()),
            name: None,
            temperature_celsius: Some(conditions.temperature.as_celsius()),
            activity: Some(conditions.activity.into()),
            ph_convention: match conditions.ph_convention {
                PhConvention::Model => None,
                c => Some(c.into()),
            },
            reagents: lines_of(recipe),
            complexes: recipe.complexes().iter().map(|c| c.name().to_string()).collect(),
            include_catalog_complexes: false,
            definitions: None,
            fixed_ph: recipe.constraints().iter().find_map(|c| match c {
                crate::Constraint::Ph(ph) => Some(*ph),
                _ => None,
            }),
            partial_pressures: recipe
                .constraints()
                .iter()
                .filter_map(|c| match c {
                    crate::Constraint::PartialPressure { gas, pressure } => Some(PartialPressureDoc {
                        gas: gas.name().to_string(),
                        atm: Some(pressure.as_atm()),
                        ..Default::default()
                    }),
                    _ => None,
                })
                .collect(),
            fixed_alkalinity_meq_per_kg: recipe.constraints().iter().find_map(|c| match c {
                crate::Constraint::Alkalinity(a) => Some(a * 1e3),
                _ => None,
            }),
            fixed_dic_mmol_per_kg: recipe.constraints().iter().find_map(|c| match c {
                crate::Constraint::Dic(d) => Some(d * 1e3),
                _ => None,
            }),
            charge_balance_on: recipe.constraints().iter().find_map(|c| match c {
                crate::Constraint::ChargeBalanceOn(ion) => Some(ion.name().to_string()),
                _ => None,
            }),
            allow_solids: if recipe.allows_all_solids() {
                Some(AllowSolidsDoc::All)
            } else if recipe.allowed_solids().is_empty() {
                None
            } else {
                Some(AllowSolidsDoc::Named(
                    recipe.allowed_solids().iter().map(|s| s.name().to_string()).collect(),
                ))
            },
        }
    }
}

fn lines_of(recipe: &Recipe) -> Vec<AmountLine> {
    recipe
        .entries()
        .iter()
        .map(|e| {
            let mut l = AmountLine {
                reagent: e.reagent.name().to_string(),
                ..Default::default()
            };
            match e.amount {
                Amount::Molar(v) => l.molar = Some(v),
                Amount::Molal(v) => l.molal = Some(v),
            }
            l
        })
        .collect()
}

/// A solution in a titration: its lines and, for the analyte, its volume.
///
/// ```
/// use protolyte::document::{AmountLine, SolutionDoc};
/// let s = SolutionDoc { volume_ml: Some(25.0), reagents: vec![AmountLine::millimolar("acetic acid", 100.0)] };
/// assert_eq!(s.reagents.len(), 1);
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SolutionDoc {
    /// Volume, mL (the analyte's volume before titration; unused for the titrant).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub volume_ml: Option<f64>,
    /// What is in it.
    pub reagents: Vec<AmountLine>,
}

/// A titration request: analyte, titrant, conditions and how far to titrate.
///
/// ```
/// use protolyte::Catalog;
/// use protolyte::document::{TitrationDoc, parse};
/// let doc: TitrationDoc = parse(r#"{
///   "format": "protolyte-titration/1",
///   "analyte": { "volume_ml": 25, "reagents": [{ "reagent": "acetic acid", "molar": 0.1 }] },
///   "titrant": { "reagents": [{ "reagent": "sodium hydroxide", "molar": 0.1 }] },
///   "end_volume_ml": 40
/// }"#, "t.json")?;
/// let t = doc.to_titration(&Catalog::builtin())?;
/// assert!((t.analyte_volume().milliliters_value() - 25.0).abs() < 1e-12);
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TitrationDoc {
    /// `"protolyte-titration/1"`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub format: Option<String>,
    /// A label of your own.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub name: Option<String>,
    /// Temperature, °C (default 25).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub temperature_celsius: Option<f64>,
    /// Activity model (default Davies).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub activity: Option<ActivityDoc>,
    /// pH convention (default `"model"`: the activity model's own γ(H⁺)).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ph_convention: Option<PhConventionDoc>,
    /// The solution titrated (with `volume_ml`).
    pub analyte: SolutionDoc,
    /// The solution added from the burette.
    pub titrant: SolutionDoc,
    /// Titrate from 0 to this volume of titrant, mL.
    pub end_volume_ml: f64,
    /// Evenly spaced points (with the ends); without it the steps adapt to the curve.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub points: Option<usize>,
    /// Largest pH change per adaptive step (default 0.05).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub max_ph_step: Option<f64>,
    /// The pH-reading precision (±) with which endpoints are judged (default 0.2; see
    /// [`EndpointCriterion`](crate::analysis::EndpointCriterion)).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub endpoint_ph_window: Option<f64>,
    /// The relative volume precision (±, fraction) an endpoint must reach to be usable
    /// (default 0.005).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub endpoint_relative_precision: Option<f64>,
    /// Complexes to consider, by name.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub complexes: Vec<String>,
    /// Consider every complex of the catalogue whose parts are present.
    #[serde(default, skip_serializing_if = "std::ops::Not::not")]
    pub include_catalog_complexes: bool,
    /// Your own definitions.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub definitions: Option<DefinitionsDoc>,
}

/// Builds a titration from two solution documents.
fn titration_of(
    cat: &Catalog,
    analyte: &SolutionDoc,
    titrant: &SolutionDoc,
    complexes: &[Complex],
    conditions: &Conditions,
    prefix: &str,
) -> Result<Titration, DocumentError> {
    let a = recipe_of(cat, &analyte.reagents, complexes, &format!("{prefix}analyte.reagents"))?;
    let t = recipe_of(cat, &titrant.reagents, complexes, &format!("{prefix}titrant.reagents"))?;
    let v = analyte
        .volume_ml
        .ok_or_else(|| field_error(format!("{prefix}analyte.volume_ml"), "missing: the analyte's volume"))?;
    if !(v.is_finite() && v > 0.0) {
        return Err(field_error(
            format!("{prefix}analyte.volume_ml"),
            format!("{v} mL: must be positive"),
        ));
    }
    Titration::new(&a, Volume::milliliters(v), &t, conditions).map_err(|e| field_error(format!("{prefix}analyte"), e))
}

impl TitrationDoc {
    /// Checks the format tag (`required`: refuse a document without one).
    pub fn check_format(&self, required: bool) -> Result<(), DocumentError> {
        check_format(self.format.as_deref(), TITRATION_FORMAT, required)
    }

    /// The conditions (temperature, activity model and pH convention).
    pub fn conditions(&self) -> Result<Conditions, DocumentError> {
        conditions_of(self.temperature_celsius, self.activity, self.ph_convention)
    }

    /// The titration, names resolved in `catalog` plus the document's definitions.
    pub fn to_titration(&self, catalog: &Catalog) -> Result<Titration, DocumentError> {
        check_format(self.format.as_deref(), TITRATION_FORMAT, false)?;
        let conditions = self.conditions()?;
        let (cat, user) = catalog_with(catalog, self.definitions.as_ref())?;
        let complexes = complexes_of(&cat, &self.complexes, self.include_catalog_complexes, &user)?;
        titration_of(&cat, &self.analyte, &self.titrant, &complexes, &conditions, "")
    }

    /// The end volume, checked.
    pub fn end_volume(&self) -> Result<Volume, DocumentError> {
        let v = self.end_volume_ml;
        if v.is_finite() && v > 0.0 && v <= 1e7 {
            Ok(Volume::milliliters(v))
        } else {
            Err(field_error(
                "end_volume_ml",
                format!("{v} mL: must be positive and at most 1e7 mL"),
            ))
        }
    }

    /// The adaptive stepping asked for (used when `points` is absent).
    pub fn stepping(&self) -> Result<Stepping, DocumentError> {
        let mut s = Stepping::new(self.end_volume()?);
        if let Some(d) = self.max_ph_step {
            if !(d.is_finite() && d > 0.0) {
                return Err(field_error("max_ph_step", format!("{d}: must be positive")));
            }
            s = s
                .max_ph_step(d)
                .map_err(|e| field_error("max_ph_step", e.to_string()))?;
        }
        Ok(s)
    }

    /// The endpoint criterion asked for (defaults where a field is absent).
    pub fn endpoint_criterion(&self) -> Result<crate::analysis::EndpointCriterion, DocumentError> {
        let mut c = crate::analysis::EndpointCriterion::default();
        if let Some(w) = self.endpoint_ph_window {
            c = c
                .ph_window(w)
                .map_err(|e| field_error("endpoint_ph_window", e.to_string()))?;
        }
        if let Some(f) = self.endpoint_relative_precision {
            c = c
                .relative_volume(f)
                .map_err(|e| field_error("endpoint_relative_precision", e.to_string()))?;
        }
        Ok(c)
    }

    /// The number of evenly spaced points, checked (2..=[`MAX_POINTS`]).
    pub fn uniform_points(&self) -> Result<Option<usize>, DocumentError> {
        match self.points {
            Some(n) if !(2..=MAX_POINTS).contains(&n) => {
                Err(field_error("points", format!("{n}: must be 2..{MAX_POINTS}")))
            }
            p => Ok(p),
        }
    }
}

/// A stock as a design request gives it: a solid (no `stock_molar`) or a stock solution.
///
/// ```
/// use protolyte::document::StockDoc;
/// let s: StockDoc = serde_json::from_str(r#"{"reagent": "hydrochloric acid", "stock_molar": 1.0}"#)?;
/// assert_eq!(s.stock_molar, Some(1.0));
/// # Ok::<(), serde_json::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct StockDoc {
    /// The reagent.
    pub reagent: String,
    /// Concentration of the stock solution, mol/L; absent for a solid to weigh.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub stock_molar: Option<f64>,
}

impl StockDoc {
    fn to_stock(&self, cat: &Catalog, path: &str) -> Result<Stock, DocumentError> {
        check_name(|| format!("{path}.reagent"), &self.reagent)?;
        let r = cat
            .reagent(&self.reagent)
            .map_err(|e| field_error(format!("{path}.reagent"), e))?;
        Ok(match self.stock_molar {
            Some(c) => Stock::solution_molar(&r, c),
            None => Stock::solid(&r),
        })
    }
}

/// A target ionic strength, made up with a neutral salt.
///
/// ```
/// use protolyte::document::IonicStrengthDoc;
/// let i: IonicStrengthDoc = serde_json::from_str(r#"{"molar": 0.15, "salt": {"reagent": "sodium chloride"}}"#)?;
/// assert_eq!(i.molar, Some(0.15));
/// # Ok::<(), serde_json::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct IonicStrengthDoc {
    /// Target, mol/L.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub molar: Option<f64>,
    /// Target, mol/kg.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub molal: Option<f64>,
    /// The salt.
    pub salt: StockDoc,
}

/// A buffer design request: the buffer system, target pH, concentration, volume and stocks.
///
/// Give either `acid` and `base` (both forms at hand), or `buffer` substances and an
/// `adjuster` (a strong acid or base that brings them to the target pH).
///
/// ```
/// use protolyte::Catalog;
/// use protolyte::document::{DesignDoc, parse};
/// let doc: DesignDoc = parse(r#"{
///   "format": "protolyte-design/1",
///   "target_ph": 7.0, "buffer_millimolar": 100, "final_volume_ml": 1000,
///   "acid": { "reagent": "sodium dihydrogen phosphate" },
///   "base": { "reagent": "disodium hydrogen phosphate" }
/// }"#, "d.json")?;
/// let r = doc.to_spec(&Catalog::builtin())?.design()?;
/// assert!(r.ph_residual.abs() < 1e-6);
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DesignDoc {
    /// `"protolyte-design/1"`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub format: Option<String>,
    /// A label of your own.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub name: Option<String>,
    /// Temperature of preparation, °C (default 25).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub temperature_celsius: Option<f64>,
    /// Activity model (default Davies).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub activity: Option<ActivityDoc>,
    /// pH convention (default `"model"`: the activity model's own γ(H⁺)).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ph_convention: Option<PhConventionDoc>,
    /// The pH to reach.
    pub target_ph: f64,
    /// Buffer concentration, mol/L.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub buffer_molar: Option<f64>,
    /// Buffer concentration, mmol/L.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub buffer_millimolar: Option<f64>,
    /// Buffer concentration, mol/kg.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub buffer_molal: Option<f64>,
    /// Make up to this volume, mL.
    pub final_volume_ml: f64,
    /// The acidic form (with `base`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub acid: Option<StockDoc>,
    /// The basic form (with `acid`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub base: Option<StockDoc>,
    /// Buffer substances (with `adjuster`).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub buffer: Vec<StockDoc>,
    /// The strong acid or base (with `buffer`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub adjuster: Option<StockDoc>,
    /// Make the ionic strength up to a target with a neutral salt.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ionic_strength: Option<IonicStrengthDoc>,
    /// Also report the pH at these temperatures, °C.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub compare_at_celsius: Vec<f64>,
    /// Your own definitions.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub definitions: Option<DefinitionsDoc>,
}

impl DesignDoc {
    /// Checks the format tag (`required`: refuse a document without one).
    pub fn check_format(&self, required: bool) -> Result<(), DocumentError> {
        check_format(self.format.as_deref(), DESIGN_FORMAT, required)
    }

    /// The conditions (temperature, activity model and pH convention).
    pub fn conditions(&self) -> Result<Conditions, DocumentError> {
        conditions_of(self.temperature_celsius, self.activity, self.ph_convention)
    }

    /// The design specification, names resolved in `catalog` plus the document's definitions.
    pub fn to_spec(&self, catalog: &Catalog) -> Result<BufferSpec, DocumentError> {
        check_format(self.format.as_deref(), DESIGN_FORMAT, false)?;
        let conditions = self.conditions()?;
        let (cat, _) = catalog_with(catalog, self.definitions.as_ref())?;
        check_count(|| "buffer".into(), self.buffer.len(), MAX_ENTRIES, "buffer substances")?;
        check_count(
            || "compare_at_celsius".into(),
            self.compare_at_celsius.len(),
            MAX_ENTRIES,
            "temperatures",
        )?;
        let ingredients = match (&self.acid, &self.base, self.buffer.is_empty(), &self.adjuster) {
            (Some(a), Some(b), true, None) => Ingredients::AcidAndBase {
                acid: a.to_stock(&cat, "acid")?,
                base: b.to_stock(&cat, "base")?,
            },
            (None, None, false, Some(adj)) => Ingredients::Adjusted {
                buffer: self
                    .buffer
                    .iter()
                    .enumerate()
                    .map(|(i, s)| s.to_stock(&cat, &format!("buffer[{i}]")))
                    .collect::<Result<_, _>>()?,
                adjuster: adj.to_stock(&cat, "adjuster")?,
            },
            _ => {
                return Err(field_error(
                    "acid",
                    "give either `acid` and `base`, or `buffer` (a list) and `adjuster`",
                ));
            }
        };
        let buffer = match (self.buffer_molar, self.buffer_millimolar, self.buffer_molal) {
            (Some(m), None, None) => Amount::molar(m),
            (None, Some(m), None) => Amount::millimolar(m),
            (None, None, Some(m)) => Amount::molal(m),
            _ => {
                return Err(field_error(
                    "buffer_molar",
                    "give exactly one of `buffer_molar`, `buffer_millimolar` or `buffer_molal`",
                ));
            }
        };
        let v = self.final_volume_ml;
        if !(v.is_finite() && v > 0.0) {
            return Err(field_error("final_volume_ml", format!("{v} mL: must be positive")));
        }
        let mut spec = BufferSpec::new(ingredients, self.target_ph, buffer, conditions, Volume::milliliters(v));
        if let Some(i) = &self.ionic_strength {
            let target = match (i.molar, i.molal) {
                (Some(m), None) => Amount::molar(m),
                (None, Some(m)) => Amount::molal(m),
                _ => return Err(field_error("ionic_strength", "give exactly one of `molar` or `molal`")),
            };
            spec = spec.ionic_strength(target, i.salt.to_stock(&cat, "ionic_strength.salt")?);
        }
        if !self.compare_at_celsius.is_empty() {
            let mut ts = Vec::with_capacity(self.compare_at_celsius.len());
            for (k, &t) in self.compare_at_celsius.iter().enumerate() {
                if !(t.is_finite() && (0.0..=100.0).contains(&t)) {
                    return Err(field_error(
                        format!("compare_at_celsius[{k}]"),
                        format!("{t} °C: outside 0..100 °C"),
                    ));
                }
                ts.push(Temperature::celsius(t));
            }
            spec = spec.compare_at(&ts);
        }
        Ok(spec)
    }
}

/// One measured point of a titration: titrant volume and pH read.
///
/// ```
/// use protolyte::document::MeasuredPoint;
/// let p: MeasuredPoint = serde_json::from_str(r#"{"volume_ml": 5.0, "ph": 4.1}"#)?;
/// assert_eq!(p.ph, 4.1);
/// # Ok::<(), serde_json::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct MeasuredPoint {
    /// Titrant added, mL.
    pub volume_ml: f64,
    /// pH read.
    pub ph: f64,
}

/// One measured titration curve of a fit request: the model's solutions and the data.
///
/// ```
/// use protolyte::document::FitCurveDoc;
/// let c = FitCurveDoc::default();
/// assert!(c.measured.is_empty());
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct FitCurveDoc {
    /// The analyte as believed (its values start the fit), with `volume_ml`.
    pub analyte: SolutionDoc,
    /// The titrant as believed.
    pub titrant: SolutionDoc,
    /// The measured points.
    pub measured: Vec<MeasuredPoint>,
}

/// Something to estimate: exactly one of `analyte_total` (a component name, mol/L),
/// `titrant_total`, `pka_of` (a family, with `step`, 1 = pKa1) or `electrode_offset: true`;
/// `curve` (1-based) makes it belong to one curve, otherwise it is shared; `start` sets the
/// starting value.
///
/// ```
/// use protolyte::document::UnknownDoc;
/// let u: UnknownDoc = serde_json::from_str(r#"{"pka_of": "acetate", "step": 1}"#)?;
/// assert_eq!(u.step, Some(1));
/// # Ok::<(), serde_json::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct UnknownDoc {
    /// A component's total in the analyte, mol/L.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub analyte_total: Option<String>,
    /// A component's total in the titrant, mol/L.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub titrant_total: Option<String>,
    /// A family whose pKa is estimated (with `step`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub pka_of: Option<String>,
    /// Which pKa, 1-based (1 = pKa1).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub step: Option<usize>,
    /// The electrode's offset (measured = model + offset).
    #[serde(default, skip_serializing_if = "std::ops::Not::not")]
    pub electrode_offset: bool,
    /// The curve it belongs to, 1-based; absent: shared by all curves.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub curve: Option<usize>,
    /// Starting value (default: the model's own value).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub start: Option<f64>,
}

impl UnknownDoc {
    fn to_unknown(&self, path: &str) -> Result<(Unknown, Scope), DocumentError> {
        for (field, name) in [
            ("analyte_total", &self.analyte_total),
            ("titrant_total", &self.titrant_total),
            ("pka_of", &self.pka_of),
        ] {
            if let Some(n) = name {
                check_name(|| format!("{path}.{field}"), n)?;
            }
        }
        let u = match (
            &self.analyte_total,
            &self.titrant_total,
            &self.pka_of,
            self.electrode_offset,
        ) {
            (Some(c), None, None, false) => Unknown::AnalyteTotal(c.clone()),
            (None, Some(c), None, false) => Unknown::TitrantTotal(c.clone()),
            (None, None, Some(f), false) => {
                let s = self
                    .step
                    .filter(|&s| s >= 1)
                    .ok_or_else(|| field_error(format!("{path}.step"), "missing or 0: which pKa, 1 = pKa1"))?;
                Unknown::pka(f, s - 1)
            }
            (None, None, None, true) => Unknown::ElectrodeOffset,
            _ => {
                return Err(field_error(
                    path,
                    "give exactly one of `analyte_total`, `titrant_total`, `pka_of` (with `step`) or `electrode_offset: true`",
                ));
            }
        };
        let scope = match self.curve {
            None => Scope::Shared,
            Some(k) if k >= 1 => Scope::Curve(k - 1),
            Some(_) => return Err(field_error(format!("{path}.curve"), "curves are numbered from 1")),
        };
        Ok((u, scope))
    }
}

/// A fit request: measured titrations, the model, and the unknowns to estimate.
///
/// ```
/// use protolyte::document::FitDoc;
/// let d = FitDoc::default();
/// assert!(d.curves.is_empty());
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct FitDoc {
    /// `"protolyte-fit/1"`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub format: Option<String>,
    /// A label of your own.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub name: Option<String>,
    /// Temperature, °C (default 25).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub temperature_celsius: Option<f64>,
    /// Activity model (default Davies).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub activity: Option<ActivityDoc>,
    /// pH convention (default `"model"`: the activity model's own γ(H⁺)).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ph_convention: Option<PhConventionDoc>,
    /// The measured curves.
    pub curves: Vec<FitCurveDoc>,
    /// What to estimate.
    pub estimate: Vec<UnknownDoc>,
    /// Iteration budget (default 100).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub max_iterations: Option<usize>,
    /// Complexes to consider, by name.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub complexes: Vec<String>,
    /// Consider every complex of the catalogue whose parts are present.
    #[serde(default, skip_serializing_if = "std::ops::Not::not")]
    pub include_catalog_complexes: bool,
    /// Your own definitions.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub definitions: Option<DefinitionsDoc>,
}

impl FitDoc {
    /// Checks the format tag (`required`: refuse a document without one).
    pub fn check_format(&self, required: bool) -> Result<(), DocumentError> {
        check_format(self.format.as_deref(), FIT_FORMAT, required)
    }

    /// The fit, ready to run, names resolved in `catalog` plus the document's definitions.
    pub fn to_fit(&self, catalog: &Catalog) -> Result<TitrationFit, DocumentError> {
        check_format(self.format.as_deref(), FIT_FORMAT, false)?;
        let conditions = conditions_of(self.temperature_celsius, self.activity, self.ph_convention)?;
        let (cat, user) = catalog_with(catalog, self.definitions.as_ref())?;
        let complexes = complexes_of(&cat, &self.complexes, self.include_catalog_complexes, &user)?;
        let mut fit = TitrationFit::new();
        if let Some(n) = self.max_iterations {
            let max = crate::limits::MAX_FIT_ITERATIONS;
            if !(1..=max).contains(&n) {
                return Err(field_error("max_iterations", format!("{n}: must be 1..{max}")));
            }
            fit = fit
                .max_iterations(n)
                .map_err(|e| field_error("max_iterations", e.to_string()))?;
        }
        if self.curves.is_empty() {
            return Err(field_error("curves", "at least one measured curve is needed"));
        }
        check_count(|| "curves".into(), self.curves.len(), MAX_CURVES, "curves")?;
        check_count(|| "estimate".into(), self.estimate.len(), MAX_ENTRIES, "unknowns")?;
        for (k, c) in self.curves.iter().enumerate() {
            let prefix = format!("curves[{k}].");
            check_count(
                || format!("{prefix}measured"),
                c.measured.len(),
                MAX_POINTS,
                "measured points",
            )?;
            let t = titration_of(&cat, &c.analyte, &c.titrant, &complexes, &conditions, &prefix)?;
            let data: Vec<(Volume, f64)> = c
                .measured
                .iter()
                .map(|p| (Volume::milliliters(p.volume_ml), p.ph))
                .collect();
            fit.add_curve(t, &data)
                .map_err(|e| field_error(format!("{prefix}measured"), e))?;
        }
        if self.estimate.is_empty() {
            return Err(field_error("estimate", "name at least one unknown to estimate"));
        }
        for (i, u) in self.estimate.iter().enumerate() {
            let path = format!("estimate[{i}]");
            let (unknown, scope) = u.to_unknown(&path)?;
            let r = match u.start {
                Some(s) => fit.estimate_from(unknown, scope, s).map(|_| ()),
                None => fit.estimate(unknown, scope).map(|_| ()),
            };
            r.map_err(|e| field_error(&path, e))?;
        }
        Ok(fit)
    }
}
