//! A recipe: what was put into the solution (reagents and amounts), plus the complexes the
//! chemist wants considered, the solids and gases reported or allowed to form, and the
//! constraints that replace a total. Mixing and dilution make new recipes.

use std::sync::Arc;

use crate::complex::Complex;
use crate::error::{Error, Result};
use crate::phase::{Constraint, Gas, Pressure, Solid};
use crate::quantity::{Amount, Mass, Volume};
use crate::reagent::Reagent;

/// One line of a recipe.
#[derive(Debug, Clone, PartialEq)]
pub struct Entry {
    /// The reagent.
    pub reagent: Reagent,
    /// How much of it, per litre of solution or per kilogram of water.
    pub amount: Amount,
}

/// What was put in: reagents with amounts, and the complexes to consider.
///
/// Amounts are concentrations in the final solution. Use [`Recipe::add_mass`] and
/// [`Recipe::add_stock`] to enter weighed masses and pipetted stock volumes.
///
/// # Example
///
/// ```
/// use protolyte::{Amount, Catalog, Conditions, Recipe};
///
/// let cat = Catalog::builtin();
/// let mut r = Recipe::new();
/// r.add(&cat.reagent("acetic acid")?, Amount::millimolar(10.0))?
///  .add(&cat.reagent("sodium acetate")?, Amount::millimolar(10.0))?;
/// let eq = r.compile(&Conditions::default())?.solve()?;
/// assert!((eq.ph() - 4.68).abs() < 0.05);
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct Recipe {
    entries: Vec<Entry>,
    complexes: Vec<Complex>,
    /// Solids whose saturation index results report (the built-in catalogue's by default).
    solids: Arc<[Solid]>,
    /// Gases whose partial pressure results report (the built-in catalogue's by default).
    gases: Arc<[Gas]>,
    /// Solids allowed to form (beside every reported one when `allow_all_solids`).
    allowed: Vec<Solid>,
    allow_all: bool,
    constraints: Vec<Constraint>,
}

impl Default for Recipe {
    /// Pure water; results report the saturation index of every built-in solid and the
    /// partial pressure of every built-in gas whose parts are present.
    fn default() -> Self {
        let (solids, gases) = crate::data::builtin_phases();
        Recipe {
            entries: Vec::new(),
            complexes: Vec::new(),
            solids,
            gases,
            allowed: Vec::new(),
            allow_all: false,
            constraints: Vec::new(),
        }
    }
}

impl Recipe {
    /// An empty recipe: pure water.
    pub fn new() -> Self {
        Recipe::default()
    }

    /// Reports the saturation indices of `solids` (instead of the built-in catalogue's), for
    /// instance a catalogue with your own solids: `recipe.report_solids(cat.solids())`.
    pub fn report_solids<'a>(&mut self, solids: impl IntoIterator<Item = &'a Solid>) -> &mut Self {
        self.solids = solids.into_iter().cloned().collect::<Vec<_>>().into();
        self
    }

    /// Reports the partial pressures of `gases` (instead of the built-in catalogue's).
    pub fn report_gases<'a>(&mut self, gases: impl IntoIterator<Item = &'a Gas>) -> &mut Self {
        self.gases = gases.into_iter().cloned().collect::<Vec<_>>().into();
        self
    }

    /// Lets `solid` form (or dissolve) at equilibrium: the solver finds whether it is
    /// present and how much of it. Its saturation index is reported too. A solid allowed
    /// under a name already allowed replaces the earlier definition.
    ///
    /// ```
    /// use protolyte::{Amount, Catalog, Conditions, Recipe};
    /// let cat = Catalog::builtin();
    /// let mut r = Recipe::new();
    /// // 0.05 mol/kg calcium sulfate, more than gypsum's solubility (about 0.015 mol/kg).
    /// r.add(&cat.reagent("calcium chloride")?, Amount::molal(0.05))?
    ///  .add(&cat.reagent("sodium sulfate")?, Amount::molal(0.05))?
    ///  .allow_solid(&cat.solid("gypsum")?);
    /// let eq = r.compile(&Conditions::default())?.solve()?;
    /// let gypsum = eq.solid("gypsum").unwrap();
    /// assert!(gypsum.amount_molal > 0.0 && gypsum.saturation_index.abs() < 1e-8);
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn allow_solid(&mut self, solid: &Solid) -> &mut Self {
        // One solid a name: a later definition under a name already allowed replaces the
        // earlier one (before, it was dropped without a word).
        match self.allowed.iter_mut().find(|s| s.name() == solid.name()) {
            Some(s) => *s = solid.clone(),
            None => self.allowed.push(solid.clone()),
        }
        self
    }

    /// Lets every solid in `solids` form (see [`Recipe::allow_solid`]).
    pub fn allow_solids<'a>(&mut self, solids: impl IntoIterator<Item = &'a Solid>) -> &mut Self {
        for s in solids {
            self.allow_solid(s);
        }
        self
    }

    /// The same recipe with no solid allowed to form (the water as given).
    pub(crate) fn without_allowed_solids(&self) -> Recipe {
        let mut r = self.clone();
        r.allowed.clear();
        r.allow_all = false;
        r
    }

    /// Lets every reported solid form (the built-in catalogue's unless
    /// [`Recipe::report_solids`] chose others).
    pub fn allow_all_solids(&mut self) -> &mut Self {
        self.allow_all = true;
        self
    }

    /// Fixes the pH (on the model's own activity scale, −log₁₀ a(H⁺)): the charge balance is
    /// replaced and the acid or base that holds the pH is reported. Refuses a pH outside
    /// −4..20 and a second pH ([`Error::ConflictingConstraints`]).
    ///
    /// ```
    /// use protolyte::{Amount, Catalog, Conditions, Recipe};
    /// let cat = Catalog::builtin();
    /// let mut r = Recipe::new();
    /// r.add(&cat.reagent("acetic acid")?, Amount::molal(0.01))?.fix_ph(4.76)?;
    /// let eq = r.compile(&Conditions::default())?.solve()?;
    /// assert!((eq.ph() - 4.76).abs() < 1e-9);
    /// assert!(eq.proton_uptake_molal() < 0.0); // base was needed
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn fix_ph(&mut self, ph: f64) -> Result<&mut Self> {
        crate::error::check_parameter("fixed pH", "pH", ph, -4.0, 20.0, "must be within -4..20")?;
        let new = Constraint::Ph(ph);
        self.check_new_constraint(&new)?;
        self.constraints.push(new);
        Ok(self)
    }

    /// Fixes the partial pressure of `gas` (an open system): the total of its family becomes
    /// an output, with the amount taken up from the gas or given off. Refuses a pressure that
    /// is not positive and finite or above 1000 bar, and a second pressure for the same gas
    /// or for another gas of the same family ([`Error::ConflictingConstraints`]).
    ///
    /// ```
    /// use protolyte::{Catalog, Conditions, Pressure, Recipe};
    /// let cat = Catalog::builtin();
    /// let mut r = Recipe::new();
    /// r.fix_partial_pressure(&cat.gas("CO2(g)")?, Pressure::microatm(420.0))?;
    /// let eq = r.compile(&Conditions::default())?.solve()?;
    /// assert!((eq.ph() - 5.6).abs() < 0.05); // rain water (common practice)
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn fix_partial_pressure(&mut self, gas: &Gas, pressure: Pressure) -> Result<&mut Self> {
        pressure.checked(gas.name())?;
        let new = Constraint::PartialPressure {
            gas: gas.clone(),
            pressure,
        };
        self.check_new_constraint(&new)?;
        self.constraints.push(new);
        Ok(self)
    }

    /// Refuses `new` beside an existing constraint it conflicts with.
    fn check_new_constraint(&self, new: &Constraint) -> Result<()> {
        let same_slot = |a: &Constraint, b: &Constraint| -> Option<&'static str> {
            use Constraint::*;
            match (a, b) {
                (Ph(_) | Alkalinity(_), Ph(_) | Alkalinity(_)) => {
                    Some("each replaces the charge balance, which can be replaced once")
                }
                (Dic(_), Dic(_)) => Some("DIC can be fixed once"),
                (ChargeBalanceOn(_), ChargeBalanceOn(_)) => Some("the charge balance can be closed on one ion"),
                (Dic(_), PartialPressure { gas, .. }) | (PartialPressure { gas, .. }, Dic(_))
                    if gas.family().name() == "carbonate" =>
                {
                    Some("both set the carbonate total")
                }
                (PartialPressure { gas: g1, .. }, PartialPressure { gas: g2, .. })
                    if g1.family().name() == g2.family().name() =>
                {
                    Some("both fix the activity of one family")
                }
                _ => None,
            }
        };
        for old in &self.constraints {
            if let Some(reason) = same_slot(old, new) {
                return Err(Error::ConflictingConstraints {
                    first: old.describe(),
                    second: new.describe(),
                    reason: reason.into(),
                });
            }
        }
        Ok(())
    }

    /// Fixes the total alkalinity (mol/kg; see
    /// [`Equilibrium::total_alkalinity_molal`](crate::Equilibrium::total_alkalinity_molal) for
    /// the definition): it replaces the charge balance; the charge the given ions leave
    /// unbalanced is reported as H⁺ taken up (or, with
    /// [`Recipe::close_charge_balance_on`], goes to that ion). Refuses a value that is not
    /// finite or beyond ±100 mol/kg and a second constraint on the charge balance.
    ///
    /// ```
    /// use protolyte::{ActivityModel, Catalog, Conditions, Recipe, Temperature};
    /// let cat = Catalog::builtin();
    /// let mut r = Recipe::new();
    /// // A water analysis: DIC 2.2 mmol/kg and alkalinity 2.0 mmol/kg, sodium closing the balance.
    /// r.fix_dic(2.2e-3)?.fix_alkalinity(2.0e-3)?.close_charge_balance_on(&cat.ion("sodium")?)?;
    /// let eq = r.compile(&Conditions::new(Temperature::celsius(25.0), ActivityModel::Ideal))?.solve()?;
    /// assert!((eq.total_alkalinity_molal() - 2.0e-3).abs() < 1e-15);
    /// assert!((eq.dissolved_total_molal("sodium").unwrap() - 2.0e-3).abs() < 1e-15);
    /// assert!(eq.ph() > 7.0 && eq.ph() < 7.6);
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn fix_alkalinity(&mut self, molal: f64) -> Result<&mut Self> {
        crate::error::check_parameter(
            "total alkalinity",
            "mol/kg",
            molal,
            -100.0,
            100.0,
            "must be finite and within ±100",
        )?;
        let new = Constraint::Alkalinity(molal);
        self.check_new_constraint(&new)?;
        self.constraints.push(new);
        Ok(self)
    }

    /// Fixes the dissolved inorganic carbon (mol/kg): the carbonate total is this (carbon
    /// put in as CO₂; the counter-ions of any carbonate reagent stay). Refuses a negative or
    /// non-finite value, one above [`MAX_TOTAL_MOLAL`](crate::limits::MAX_TOTAL_MOLAL), a
    /// second DIC and a fixed partial pressure of CO₂ beside it.
    pub fn fix_dic(&mut self, molal: f64) -> Result<&mut Self> {
        crate::error::check_amount_max("DIC", molal, "mol/kg")?;
        let new = Constraint::Dic(molal);
        self.check_new_constraint(&new)?;
        self.constraints.push(new);
        Ok(self)
    }

    /// Closes the charge balance on `ion`: with a fixed pH or alkalinity, the ion's total is
    /// what makes the solution electroneutral (the amount added is reported by
    /// [`Equilibrium::charge_balance_ion_added_molal`](crate::Equilibrium::charge_balance_ion_added_molal)).
    /// Refuses a neutral ion and a second closing ion; compiling refuses it without a fixed
    /// pH or alkalinity.
    pub fn close_charge_balance_on(&mut self, ion: &crate::Ion) -> Result<&mut Self> {
        if ion.charge() == 0 {
            return Err(Error::InconsistentDefinition {
                name: ion.name().to_string(),
                reason: "a neutral ion cannot close the charge balance".into(),
            });
        }
        let new = Constraint::ChargeBalanceOn(ion.clone());
        self.check_new_constraint(&new)?;
        self.constraints.push(new);
        Ok(self)
    }

    /// The solids whose saturation indices are reported.
    pub fn reported_solids(&self) -> &[Solid] {
        &self.solids
    }

    /// The gases whose partial pressures are reported.
    pub fn reported_gases(&self) -> &[Gas] {
        &self.gases
    }

    /// The solids allowed to form (all reported ones too when
    /// [`Recipe::allows_all_solids`]).
    pub fn allowed_solids(&self) -> &[Solid] {
        &self.allowed
    }

    /// True when every reported solid may form.
    pub fn allows_all_solids(&self) -> bool {
        self.allow_all
    }

    /// The constraints.
    pub fn constraints(&self) -> &[Constraint] {
        &self.constraints
    }

    /// Adds `amount` of `reagent`. Refuses a negative, NaN or infinite amount, and one above
    /// [`MAX_TOTAL_MOLAL`](crate::limits::MAX_TOTAL_MOLAL) in its own unit
    /// ([`Error::AmountTooLarge`]), naming the reagent.
    pub fn add(&mut self, reagent: &Reagent, amount: Amount) -> Result<&mut Self> {
        amount.validate(reagent.name())?;
        let unit = match amount {
            Amount::Molar(_) => "mol/L",
            Amount::Molal(_) => "mol/kg",
        };
        crate::error::check_amount_max(reagent.name(), amount.value(), unit)?;
        self.entries.push(Entry {
            reagent: reagent.clone(),
            amount,
        });
        Ok(self)
    }

    /// Adds `amount` of `reagent` as a dose to a water: as [`Recipe::add`], and where the
    /// recipe fixes its DIC or its total alkalinity (a water analysis entered as measured),
    /// those are raised by what the dose brings, so that it counts: per mole of reagent, its
    /// carbonate units for the DIC, and for the alkalinity its family forms' protons below the
    /// reference level ([`ALKALINITY_REFERENCE_PKA`](crate::phase::ALKALINITY_REFERENCE_PKA))
    /// and its OH⁻, less the protons above it and its H⁺. `conditions` gives the density of
    /// water that turns a molar amount into mol/kg. Refuses what [`Recipe::add`] refuses and
    /// a DIC or alkalinity the dose would take out of its range.
    ///
    /// ```
    /// use protolyte::{ActivityModel, Amount, Catalog, Conditions, Recipe, Temperature};
    /// let cat = Catalog::builtin();
    /// let ideal = Conditions::new(Temperature::celsius(25.0), ActivityModel::Ideal);
    /// let mut water = Recipe::new();
    /// water.fix_dic(2.2e-3)?.fix_alkalinity(2.0e-3)?.close_charge_balance_on(&cat.ion("sodium")?)?;
    /// let mut dosed = water.clone();
    /// dosed.add_dose(&cat.reagent("hydrochloric acid")?, Amount::molal(1e-3), &ideal)?;
    /// let eq = dosed.compile(&ideal)?.solve()?;
    /// // 1 mmol/kg of a strong acid takes 1 meq/kg of alkalinity (by definition).
    /// assert!((eq.total_alkalinity_molal() - 1.0e-3).abs() < 1e-12);
    /// assert!(eq.ph() < water.compile(&ideal)?.solve()?.ph());
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn add_dose(
        &mut self,
        reagent: &Reagent,
        amount: Amount,
        conditions: &crate::conditions::Conditions,
    ) -> Result<&mut Self> {
        use crate::reagent::Constituent;
        amount.validate(reagent.name())?;
        let fixes = self
            .constraints
            .iter()
            .any(|c| matches!(c, Constraint::Dic(_) | Constraint::Alkalinity(_)));
        if !fixes {
            return self.add(reagent, amount);
        }
        let molal = amount.molal_value(crate::water::density_kg_per_l(conditions.temperature)?);
        let (mut carbon, mut alkalinity) = (0.0, 0.0);
        for (c, n) in reagent.parts() {
            let n = f64::from(*n);
            match c {
                Constituent::Form { protolyte, protons } => {
                    if protolyte.name() == "carbonate" {
                        carbon += n;
                    }
                    alkalinity += n * (crate::phase::reference_protons(protolyte) as f64 - *protons as f64);
                }
                Constituent::Proton => alkalinity -= n,
                Constituent::Hydroxide => alkalinity += n,
                Constituent::Ion(_) => {}
            }
        }
        let mut raised = self.constraints.clone();
        for c in &mut raised {
            match c {
                Constraint::Dic(d) => {
                    *d = crate::error::check_amount_max("DIC after the dose", *d + carbon * molal, "mol/kg")?;
                }
                Constraint::Alkalinity(a) => {
                    *a = crate::error::check_parameter(
                        "total alkalinity after the dose",
                        "mol/kg",
                        *a + alkalinity * molal,
                        -100.0,
                        100.0,
                        "must be finite and within ±100",
                    )?;
                }
                _ => {}
            }
        }
        self.add(reagent, amount)?;
        self.constraints = raised;
        Ok(self)
    }

    /// Adds `mass` of `reagent` dissolved and made up to `final_volume`. The reagent needs a
    /// molar mass.
    ///
    /// ```
    /// use protolyte::{Catalog, Mass, Recipe, Volume};
    /// let cat = Catalog::builtin();
    /// let mut r = Recipe::new();
    /// r.add_mass(&cat.reagent("sodium chloride")?, Mass::grams(0.5844), Volume::liters(0.1))?;
    /// assert!((r.entries()[0].amount.value() - 0.1).abs() < 1e-4);
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn add_mass(&mut self, reagent: &Reagent, mass: Mass, final_volume: Volume) -> Result<&mut Self> {
        let m = reagent
            .molar_mass_g_per_mol()
            .ok_or_else(|| Error::InconsistentDefinition {
                name: reagent.name().to_string(),
                reason: "a mass was given but the reagent has no molar mass".into(),
            })?;
        let amount = Amount::from_mass(mass, m, final_volume).map_err(|e| rename(e, reagent.name()))?;
        self.add(reagent, amount)
    }

    /// Adds `aliquot` of a stock solution of `reagent` at `stock` concentration, made up to
    /// `final_volume`.
    ///
    /// ```
    /// use protolyte::{Amount, Catalog, Recipe, Volume};
    /// let cat = Catalog::builtin();
    /// let mut r = Recipe::new();
    /// // 10 mL of 1 mol/L HCl made up to 100 mL: 0.1 mol/L.
    /// r.add_stock(&cat.reagent("hydrochloric acid")?, Amount::molar(1.0),
    ///             Volume::milliliters(10.0), Volume::milliliters(100.0))?;
    /// assert!((r.entries()[0].amount.value() - 0.1).abs() < 1e-12);
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn add_stock(
        &mut self,
        reagent: &Reagent,
        stock: Amount,
        aliquot: Volume,
        final_volume: Volume,
    ) -> Result<&mut Self> {
        stock.validate(reagent.name())?;
        let v = crate::error::check_amount(reagent.name(), aliquot.liters_value(), "L")?;
        let vf = final_volume.positive("final volume")?;
        if v > vf {
            return Err(Error::InconsistentDefinition {
                name: reagent.name().to_string(),
                reason: format!("aliquot {v} L is larger than the final volume {vf} L"),
            });
        }
        self.add(reagent, stock.scaled(v / vf))
    }

    /// Considers `complex` when the recipe is compiled (it is left out if one of its parts
    /// is absent from the recipe).
    pub fn add_complex(&mut self, complex: &Complex) -> &mut Self {
        if !self.complexes.iter().any(|c| c == complex) {
            self.complexes.push(complex.clone());
        }
        self
    }

    /// Considers every complex in `complexes` (see [`Recipe::add_complex`]).
    pub fn add_complexes<'a>(&mut self, complexes: impl IntoIterator<Item = &'a Complex>) -> &mut Self {
        for c in complexes {
            self.add_complex(c);
        }
        self
    }

    /// The recipe's lines.
    pub fn entries(&self) -> &[Entry] {
        &self.entries
    }

    /// The complexes to consider.
    pub fn complexes(&self) -> &[Complex] {
        &self.complexes
    }

    /// The recipe diluted `factor`-fold with water (factor ≥ 1). A fixed DIC and a fixed
    /// alkalinity are amounts and are diluted with the reagents; a fixed pH, a fixed partial
    /// pressure and the ion closing the charge balance are conditions and stay.
    ///
    /// ```
    /// use protolyte::{Amount, Catalog, Recipe};
    /// let cat = Catalog::builtin();
    /// let mut r = Recipe::new();
    /// r.add(&cat.reagent("hydrochloric acid")?, Amount::molar(0.1))?;
    /// let d = r.diluted(10.0)?;
    /// assert!((d.entries()[0].amount.value() - 0.01).abs() < 1e-15);
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn diluted(&self, factor: f64) -> Result<Recipe> {
        crate::error::check_parameter("dilution", "factor", factor, 1.0, 1e15, "must be ≥ 1 and finite")?;
        let mut out = self.clone();
        for e in &mut out.entries {
            e.amount = e.amount.scaled(1.0 / factor);
        }
        for c in &mut out.constraints {
            match c {
                Constraint::Dic(d) => *d /= factor,
                Constraint::Alkalinity(a) => *a /= factor,
                _ => {}
            }
        }
        Ok(out)
    }

    /// Mixes solutions by volume. Volumes are taken as additive (no volume change on mixing),
    /// the dilute-solution assumption: each amount is scaled by its solution's share of the
    /// total volume; molal amounts are scaled the same way (water mass taken proportional to
    /// volume). Complexes of all parts are kept. A fixed DIC or alkalinity is an amount and is
    /// mixed the same way (the volume-weighted mean of the parts'); a fixed pH, partial
    /// pressure or closing ion is a condition and holds for the mixture. Refuses volumes that
    /// are negative or not finite, a zero total volume and one that overflows, two parts whose
    /// conditions conflict, and a fixed DIC (or alkalinity) beside a part whose carbon (or
    /// alkalinity) is not known without solving it: one with carbonate reagents but no fixed
    /// DIC (or one with acids, bases or a fixed pH but no fixed alkalinity)
    /// ([`Error::ConflictingConstraints`]).
    ///
    /// ```
    /// use protolyte::{Amount, Catalog, Recipe, Volume};
    /// let cat = Catalog::builtin();
    /// let mut acid = Recipe::new();
    /// acid.add(&cat.reagent("hydrochloric acid")?, Amount::molar(0.1))?;
    /// let mut base = Recipe::new();
    /// base.add(&cat.reagent("sodium hydroxide")?, Amount::molar(0.1))?;
    /// let m = Recipe::mix(&[(&acid, Volume::milliliters(50.0)), (&base, Volume::milliliters(25.0))])?;
    /// assert!((m.entries()[0].amount.value() - 0.1 * 50.0 / 75.0).abs() < 1e-15);
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn mix(parts: &[(&Recipe, Volume)]) -> Result<Recipe> {
        let mut total = 0.0;
        for (_, v) in parts {
            total += crate::error::check_amount("mixed volume", v.liters_value(), "L")?;
        }
        if !total.is_finite() {
            return Err(Error::AmountTooLarge {
                what: "total mixed volume".into(),
                value: total,
                unit: "L",
                limit: f64::MAX,
            });
        }
        if total <= 0.0 {
            return Err(Error::InvalidAmount {
                what: "total mixed volume".into(),
                value: total,
                unit: "L",
            });
        }
        let mut out = Recipe::new();
        if let Some((first, _)) = parts.first() {
            out.solids = first.solids.clone();
            out.gases = first.gases.clone();
        }
        for (r, v) in parts {
            let share = v.liters_value() / total;
            for e in &r.entries {
                out.entries.push(Entry {
                    reagent: e.reagent.clone(),
                    amount: e.amount.scaled(share),
                });
            }
            out.add_complexes(&r.complexes);
            out.allow_solids(&r.allowed);
            out.allow_all |= r.allow_all;
            for c in &r.constraints {
                if !out.constraints.contains(c) {
                    match c {
                        Constraint::Ph(ph) => out.fix_ph(*ph)?,
                        Constraint::PartialPressure { gas, pressure } => out.fix_partial_pressure(gas, *pressure)?,
                        // Amounts: mixed below.
                        Constraint::Alkalinity(_) | Constraint::Dic(_) => &mut out,
                        Constraint::ChargeBalanceOn(ion) => out.close_charge_balance_on(ion)?,
                    };
                }
            }
        }
        if let Some(dic) = mixed_amount(
            parts,
            total,
            "DIC",
            |c| match c {
                Constraint::Dic(d) => Some(*d),
                _ => None,
            },
            carbon_unknown,
        )? {
            out.fix_dic(dic)?;
        }
        if let Some(alk) = mixed_amount(
            parts,
            total,
            "total alkalinity",
            |c| match c {
                Constraint::Alkalinity(a) => Some(*a),
                _ => None,
            },
            alkalinity_unknown,
        )? {
            out.fix_alkalinity(alk)?;
        }
        Ok(out)
    }
}

/// The volume-weighted mean of an amount fixed by a constraint (`fixed` reads it) over the
/// parts of a mixture, `None` when no part fixes it. A part that does not fix it counts as
/// zero when `unknown` finds nothing in it that would make it non-zero; otherwise the
/// mixture's amount is not known without solving that part, and it is refused.
fn mixed_amount(
    parts: &[(&Recipe, Volume)],
    total_l: f64,
    what: &str,
    fixed: impl Fn(&Constraint) -> Option<f64>,
    unknown: fn(&Recipe) -> Option<String>,
) -> Result<Option<f64>> {
    let Some((i, value)) = parts
        .iter()
        .enumerate()
        .find_map(|(i, (r, _))| r.constraints.iter().find_map(&fixed).map(|v| (i, v)))
    else {
        return Ok(None);
    };
    let mut sum = 0.0;
    for (j, (r, v)) in parts.iter().enumerate() {
        match r.constraints.iter().find_map(&fixed) {
            Some(x) => sum += x * v.liters_value() / total_l,
            None => {
                if let Some(source) = unknown(r) {
                    return Err(Error::ConflictingConstraints {
                        first: format!("{what} fixed at {value} mol/kg in mixed solution {}", i + 1),
                        second: format!("{source} in mixed solution {}", j + 1),
                        reason: format!(
                            "the mixture's {what} is known only when each solution's is: fix it in each, or in none"
                        ),
                    });
                }
            }
        }
    }
    Ok(Some(sum))
}

/// What puts carbon into a recipe that does not fix its DIC, if anything.
fn carbon_unknown(r: &Recipe) -> Option<String> {
    for e in r.entries.iter().filter(|e| e.amount.value() != 0.0) {
        for (c, _) in e.reagent.parts() {
            if let crate::reagent::Constituent::Form { protolyte, .. } = c
                && protolyte.name() == "carbonate"
            {
                return Some(format!("carbonate put in by `{}`", e.reagent.name()));
            }
        }
    }
    r.constraints.iter().find_map(|c| match c {
        Constraint::PartialPressure { gas, .. } if gas.family().name() == "carbonate" => {
            Some(format!("carbonate set by {}", c.describe()))
        }
        _ => None,
    })
}

/// What gives a recipe that does not fix its alkalinity a non-zero total alkalinity, if
/// anything: an acid, a base or a family form away from its zero level, or a fixed pH. A
/// recipe of neutral salts of strong acids and bases (or pure water) has none.
fn alkalinity_unknown(r: &Recipe) -> Option<String> {
    use crate::reagent::Constituent;
    for e in r.entries.iter().filter(|e| e.amount.value() != 0.0) {
        for (c, _) in e.reagent.parts() {
            let off = match c {
                Constituent::Form { protolyte, protons } => crate::phase::reference_protons(protolyte) != *protons,
                Constituent::Proton | Constituent::Hydroxide => true,
                Constituent::Ion(_) => false,
            };
            if off {
                return Some(format!("the alkalinity of `{}`", e.reagent.name()));
            }
        }
    }
    r.constraints.iter().find_map(|c| match c {
        Constraint::Ph(_) => Some(c.describe()),
        _ => None,
    })
}

fn rename(e: Error, name: &str) -> Error {
    match e {
        Error::InvalidAmount { value, unit, what } => Error::InvalidAmount {
            what: format!("{what} of {name}"),
            value,
            unit,
        },
        other => other,
    }
}
