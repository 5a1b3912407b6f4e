//! A recipe: what was put into the solution (reagents and amounts), plus the complexes the
//! chemist wants considered. Mixing and dilution make new recipes.

use crate::complex::Complex;
use crate::error::{Error, Result};
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
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Recipe {
    entries: Vec<Entry>,
    complexes: Vec<Complex>,
}

impl Recipe {
    /// An empty recipe: pure water.
    pub fn new() -> Self {
        Recipe::default()
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

    /// The recipe diluted `factor`-fold with water (factor ≥ 1).
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
        Ok(out)
    }

    /// Mixes solutions by volume. Volumes are taken as additive (no volume change on mixing),
    /// the dilute-solution assumption: each amount is scaled by its solution's share of the
    /// total volume; molal amounts are scaled the same way (water mass taken proportional to
    /// volume). Complexes of all parts are kept. Refuses volumes that are negative or not
    /// finite, a zero total volume and one that overflows.
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
        for (r, v) in parts {
            let share = v.liters_value() / total;
            for e in &r.entries {
                out.entries.push(Entry {
                    reagent: e.reagent.clone(),
                    amount: e.amount.scaled(share),
                });
            }
            out.add_complexes(&r.complexes);
        }
        Ok(out)
    }
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
