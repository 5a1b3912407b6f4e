//! Buffer design: from a buffer system, a target pH, a buffer concentration, the
//! conditions, a final volume and the stocks at hand, the masses and volumes to use.
//!
//! The composition has one free variable that moves the pH monotonically: the fraction of
//! the buffer taken as its basic form (when both forms are at hand, as solids or stock
//! solutions), or the amount of strong acid or base added to a buffer substance (when one
//! form is titrated to the target). That variable is found by a bracketed root (Brent's
//! method, `roots` crate) on the solved pH. A target ionic strength is made up with a
//! neutral salt by a second bracketed root around the first: the ionic strength rises with
//! the salt, and at each salt amount the composition is solved again.
//!
//! Every design is checked by a forward solve of the finished recipe, built the way a
//! person would make it (masses weighed, aliquots made up to volume): the report gives the
//! check pH and its difference from the target, and how far the pH moves at other
//! temperatures and on ten-fold dilution.
//!
//! **Caution.** The recipe is a model result. Buffers for medical, food or pharmaceutical
//! use must be made by validated procedures, under local rules and licensed practice, and
//! their pH measured with a calibrated electrode at the temperature of use.

use roots::{Convergency, find_root_brent};

use crate::equilibrium::Equilibrium;
use crate::error::{Error, Result, check_parameter};
use crate::quantity::{Amount, Mass, Temperature, Volume};
use crate::reagent::Reagent;
use crate::recipe::Recipe;
use crate::solve::Solver;
use crate::system::{Conditions, System};
use crate::warning::Warning;

/// A reagent as the person has it: a solid to weigh, or a stock solution to pipette.
///
/// # Example
///
/// ```
/// use protolyte::analysis::Stock;
/// use protolyte::Catalog;
///
/// let cat = Catalog::builtin();
/// let solid = Stock::solid(&cat.reagent("tris base")?);
/// let acid = Stock::solution_molar(&cat.reagent("hydrochloric acid")?, 1.0);
/// assert_eq!(solid.reagent().name(), "tris base");
/// assert!(matches!(acid, Stock::Solution { mol_per_l, .. } if mol_per_l == 1.0));
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq)]
pub enum Stock {
    /// A solid (or pure liquid) weighed out; the reagent needs a molar mass.
    Solid(Reagent),
    /// A stock solution of the reagent.
    Solution {
        /// The reagent dissolved.
        reagent: Reagent,
        /// Its concentration in the stock, mol/L.
        mol_per_l: f64,
    },
}

impl Stock {
    /// A solid to weigh.
    pub fn solid(reagent: &Reagent) -> Self {
        Stock::Solid(reagent.clone())
    }

    /// A stock solution of `reagent` at `mol_per_l` mol/L.
    pub fn solution_molar(reagent: &Reagent, mol_per_l: f64) -> Self {
        Stock::Solution {
            reagent: reagent.clone(),
            mol_per_l,
        }
    }

    /// The reagent.
    pub fn reagent(&self) -> &Reagent {
        match self {
            Stock::Solid(r) | Stock::Solution { reagent: r, .. } => r,
        }
    }

    fn validate(&self) -> Result<()> {
        match self {
            Stock::Solid(r) => {
                if r.molar_mass_g_per_mol().is_none() {
                    return Err(Error::InconsistentDefinition {
                        name: r.name().to_string(),
                        reason: "a solid stock needs a molar mass to be weighed".into(),
                    });
                }
                Ok(())
            }
            Stock::Solution { reagent, mol_per_l } => {
                check_parameter(
                    reagent.name(),
                    "stock concentration (mol/L)",
                    *mol_per_l,
                    1e-12,
                    100.0,
                    "must be positive and finite",
                )?;
                Ok(())
            }
        }
    }
}

/// The stocks a buffer is made from.
///
/// # Example
///
/// ```
/// use protolyte::analysis::{BufferSpec, Ingredients, Measure, Role, Stock};
/// use protolyte::{Amount, Catalog, Conditions, Volume};
///
/// let cat = Catalog::builtin();
/// // Tris base titrated to pH 8.0 with 1 mol/L HCl: 50 mmol/L, 200 mL.
/// let ingredients = Ingredients::Adjusted {
///     buffer: vec![Stock::solid(&cat.reagent("tris base")?)],
///     adjuster: Stock::solution_molar(&cat.reagent("hydrochloric acid")?, 1.0),
/// };
/// let r = BufferSpec::new(ingredients, 8.0, Amount::millimolar(50.0), Conditions::default(), Volume::milliliters(200.0))
///     .design()?;
/// let hcl = r.lines.iter().find(|l| l.role == Role::Adjuster).unwrap();
/// let Measure::Volume(v) = hcl.measure else { unreachable!() };
/// // Somewhat over half the tris is protonated at pH 8.0 (pKa 8.07, with activities).
/// assert!(v.milliliters_value() > 5.0 && v.milliliters_value() < 8.0);
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq)]
pub enum Ingredients {
    /// The acidic and the basic form of the buffer (for example NaH₂PO₄ and Na₂HPO₄, or
    /// citric acid and Na₂HPO₄ for a two-family buffer), each a solid or a stock solution.
    /// The buffer concentration is the sum of the two; the design finds the basic form's
    /// share.
    AcidAndBase {
        /// The acidic form.
        acid: Stock,
        /// The basic form.
        base: Stock,
    },
    /// Buffer substances, each at the buffer concentration, brought to the target pH with a
    /// strong acid or base (for example tris hydrochloride with sodium hydroxide, or tris
    /// base with hydrochloric acid). The design finds the amount of the adjuster.
    Adjusted {
        /// The buffer substances (one or several families).
        buffer: Vec<Stock>,
        /// The strong acid or base.
        adjuster: Stock,
    },
}

/// What a line of a designed recipe is for.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Role {
    /// The acidic form of [`Ingredients::AcidAndBase`].
    Acid,
    /// The basic form of [`Ingredients::AcidAndBase`].
    Base,
    /// A buffer substance of [`Ingredients::Adjusted`].
    Buffer,
    /// The strong acid or base of [`Ingredients::Adjusted`].
    Adjuster,
    /// The neutral salt that makes up the ionic strength.
    Salt,
}

/// How much of a stock to take.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Measure {
    /// A mass to weigh.
    Mass(Mass),
    /// A volume of stock solution to pipette.
    Volume(Volume),
}

/// One line of a designed recipe.
#[derive(Debug, Clone, PartialEq)]
pub struct Line {
    /// The reagent's name.
    pub reagent: String,
    /// What it is for.
    pub role: Role,
    /// Its concentration in the finished buffer, mol/L.
    pub mol_per_l: f64,
    /// How much to take.
    pub measure: Measure,
}

/// The pH of the finished buffer under other conditions.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PhShift {
    /// Temperature of use.
    pub temperature: Temperature,
    /// Dilution factor with water (1 = as made).
    pub dilution_factor: f64,
    /// pH there.
    pub ph: f64,
    /// pH there minus the check pH at the design conditions.
    pub shift: f64,
}

/// A designed buffer recipe, checked by a forward solve.
#[derive(Debug, Clone, PartialEq)]
pub struct BufferRecipe {
    /// What to take, in the order acid/base (or buffer substances, adjuster), then salt.
    pub lines: Vec<Line>,
    /// Make up to this volume with water.
    pub final_volume: Volume,
    /// The finished recipe, as it would be entered by hand.
    pub recipe: Recipe,
    /// The target pH.
    pub target_ph: f64,
    /// pH of the forward solve of [`BufferRecipe::recipe`] at the design conditions.
    pub check_ph: f64,
    /// check pH − target pH.
    pub ph_residual: f64,
    /// The largest relative residual of the check solve over every equation solved (charge,
    /// mass balances, ionic strength): [`Residuals::max_relative`](crate::Residuals::max_relative).
    pub balance_residual: f64,
    /// Ionic strength of the check solve, mol/kg.
    pub ionic_strength_molal: f64,
    /// Buffer capacity β of the finished buffer, mol/L per pH unit.
    pub buffer_capacity_mol_per_l: f64,
    /// The pH at each temperature asked for with [`BufferSpec::compare_at`].
    pub temperature_shifts: Vec<PhShift>,
    /// The pH after ten-fold dilution with water at the design temperature.
    pub dilution_shift: PhShift,
    /// Warnings of the check solve (for example constants used without enthalpy data).
    pub warnings: Vec<Warning>,
}

/// What to design: see the [module documentation](self).
///
/// # Example
///
/// ```
/// use protolyte::analysis::{BufferSpec, Ingredients, Measure, Stock};
/// use protolyte::{Amount, Catalog, Conditions, Volume};
///
/// let cat = Catalog::builtin();
/// // 1 L of 0.1 mol/L phosphate buffer, pH 7.0 at 25 °C, from the two solid sodium salts.
/// let spec = BufferSpec::new(
///     Ingredients::AcidAndBase {
///         acid: Stock::solid(&cat.reagent("sodium dihydrogen phosphate")?),
///         base: Stock::solid(&cat.reagent("disodium hydrogen phosphate")?),
///     },
///     7.0,
///     Amount::molar(0.1),
///     Conditions::default(),
///     Volume::liters(1.0),
/// );
/// let recipe = spec.design()?;
/// assert!(recipe.ph_residual.abs() < 1e-6);
/// let Measure::Mass(m) = recipe.lines[1].measure else { unreachable!() };
/// println!("weigh {:.3} g Na2HPO4", m.grams_value());
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct BufferSpec {
    ingredients: Ingredients,
    target_ph: f64,
    buffer: Amount,
    conditions: Conditions,
    final_volume: Volume,
    ionic: Option<(Amount, Stock)>,
    compare_at: Vec<Temperature>,
}

/// Brent's stopping rule: |f| below `ytol` or the bracket narrower than `xtol`.
struct Stop {
    ytol: f64,
    xtol: f64,
}

impl Convergency<f64> for Stop {
    fn is_root_found(&mut self, y: f64) -> bool {
        y.abs() < self.ytol
    }
    fn is_converged(&mut self, x1: f64, x2: f64) -> bool {
        (x1 - x2).abs() < self.xtol
    }
    fn is_iteration_limit_reached(&mut self, iter: usize) -> bool {
        iter >= 200
    }
}

/// A bracketed root of `f` on [lo, hi]; an error inside `f` is returned as it is.
fn root(lo: f64, hi: f64, ytol: f64, mut f: impl FnMut(f64) -> Result<f64>) -> Result<f64> {
    let mut err = None;
    let mut stop = Stop {
        ytol,
        xtol: 1e-15 * hi.abs().max(lo.abs()).max(1e-300),
    };
    let x = find_root_brent(
        lo,
        hi,
        |x| match f(x) {
            Ok(v) => v,
            Err(e) => {
                err.get_or_insert(e);
                0.0
            }
        },
        &mut stop,
    );
    if let Some(e) = err {
        return Err(e);
    }
    x.map_err(|e| Error::NoConvergence {
        path: "buffer design",
        iterations: 200,
        max_residual: f64::INFINITY,
        worst_equation: format!("bracketed root ({e:?})"),
        last_ph: 7.0,
    })
}

fn design_error(reason: String) -> Error {
    Error::InconsistentDefinition {
        name: "buffer design".into(),
        reason,
    }
}

/// The stocks as slots with unit totals in one joint system.
struct Model {
    sys: System,
    /// Totals (mol/kg) per 1 mol/L of each slot's reagent.
    units: Vec<Vec<f64>>,
    warm: Option<Equilibrium>,
    solver: Solver,
}

impl Model {
    fn new(slots: &[&Reagent], conditions: &Conditions) -> Result<Self> {
        let mut all = Recipe::new();
        for r in slots {
            all.add(r, Amount::molar(1.0))?;
        }
        let sys = all.compile(conditions)?;
        let mut units = Vec::with_capacity(slots.len());
        for r in slots {
            let mut one = Recipe::new();
            one.add(r, Amount::molar(1.0))?;
            let s = one.compile(conditions)?;
            units.push(
                sys.components()
                    .iter()
                    .map(|c| {
                        s.component_index(&c.name)
                            .map(|i| s.components()[i].total_molal)
                            .unwrap_or(0.0)
                    })
                    .collect(),
            );
        }
        Ok(Model {
            sys,
            units,
            warm: None,
            solver: Solver::default(),
        })
    }

    /// Solves with slot concentrations `conc` (mol/L); returns (pH, I in mol/kg).
    fn solve(&mut self, conc: &[f64]) -> Result<(f64, f64)> {
        for c in 1..self.sys.components().len() {
            let t: f64 = conc.iter().zip(&self.units).map(|(x, u)| x * u[c]).sum();
            self.sys.set_total_molal(c, t.max(0.0))?;
        }
        let eq = match &self.warm {
            Some(w) => self.solver.solve_from(&self.sys, w)?,
            None => self.solver.solve(&self.sys)?,
        };
        let out = (eq.ph(), eq.ionic_strength_molal());
        self.warm = Some(eq);
        Ok(out)
    }
}

impl BufferSpec {
    /// A buffer of `ingredients` at `target_ph` with buffer concentration `buffer` (mol/L
    /// or mol/kg; for [`Ingredients::Adjusted`] each buffer substance is at this
    /// concentration), at `conditions`, made up to `final_volume`.
    pub fn new(
        ingredients: Ingredients,
        target_ph: f64,
        buffer: Amount,
        conditions: Conditions,
        final_volume: Volume,
    ) -> Self {
        BufferSpec {
            ingredients,
            target_ph,
            buffer,
            conditions,
            final_volume,
            ionic: None,
            compare_at: Vec::new(),
        }
    }

    /// Makes the ionic strength up to `target` (mol/kg, or mol/L converted with the density
    /// of water) with the neutral salt `salt`.
    pub fn ionic_strength(mut self, target: Amount, salt: Stock) -> Self {
        self.ionic = Some((target, salt));
        self
    }

    /// Reports the pH of the finished buffer at these temperatures too.
    pub fn compare_at(mut self, temperatures: &[Temperature]) -> Self {
        self.compare_at = temperatures.to_vec();
        self
    }

    /// The slots: (stock, role).
    fn slots(&self) -> Vec<(&Stock, Role)> {
        let mut out = Vec::new();
        match &self.ingredients {
            Ingredients::AcidAndBase { acid, base } => {
                out.push((acid, Role::Acid));
                out.push((base, Role::Base));
            }
            Ingredients::Adjusted { buffer, adjuster } => {
                out.extend(buffer.iter().map(|b| (b, Role::Buffer)));
                out.push((adjuster, Role::Adjuster));
            }
        }
        if let Some((_, salt)) = &self.ionic {
            out.push((salt, Role::Salt));
        }
        out
    }

    /// Designs the recipe.
    pub fn design(&self) -> Result<BufferRecipe> {
        check_parameter(
            "buffer design",
            "target pH",
            self.target_ph,
            0.0,
            14.5,
            "must be finite and within 0..14.5",
        )?;
        let vf = self.final_volume.positive("final volume")?;
        self.buffer.validate("buffer concentration")?;
        let rho = crate::water::density_kg_per_l(self.conditions.temperature)?;
        let c_buf = self.buffer.molal_value(rho) * rho;
        if c_buf <= 0.0 {
            return Err(design_error("the buffer concentration must be positive".into()));
        }
        if let Ingredients::Adjusted { buffer, .. } = &self.ingredients
            && buffer.is_empty()
        {
            return Err(design_error("no buffer substance was given".into()));
        }
        let slots = self.slots();
        for (s, _) in &slots {
            s.validate()?;
        }
        let i_target = match &self.ionic {
            Some((a, _)) => {
                a.validate("target ionic strength")?;
                let v = a.molal_value(rho);
                check_parameter(
                    "buffer design",
                    "target ionic strength (mol/kg)",
                    v,
                    1e-9,
                    5.0,
                    "must lie within 1e-9..5 mol/kg",
                )?;
                Some(v)
            }
            None => None,
        };
        let reagents: Vec<&Reagent> = slots.iter().map(|(s, _)| s.reagent()).collect();
        let mut model = Model::new(&reagents, &self.conditions)?;
        let adjusted = matches!(self.ingredients, Ingredients::Adjusted { .. });
        let n = slots.len();
        let salt_slot = i_target.map(|_| n - 1);
        // Slot concentrations (mol/L) at composition x and salt s.
        let conc = |x: f64, s: f64| -> Vec<f64> {
            slots
                .iter()
                .map(|(_, role)| match role {
                    Role::Acid => (1.0 - x) * c_buf,
                    Role::Base => x * c_buf,
                    Role::Buffer => c_buf,
                    Role::Adjuster => x,
                    Role::Salt => s,
                })
                .collect()
        };
        let target = self.target_ph;
        // The composition for salt s: a bracketed root of pH(x) − target.
        let compose = |model: &mut Model, s: f64| -> Result<f64> {
            let f0 = model.solve(&conc(0.0, s))?.0 - target;
            if f0 == 0.0 {
                return Ok(0.0);
            }
            let hi = if adjusted {
                let mut h = c_buf.max(1e-3);
                let mut found = None;
                for _ in 0..30 {
                    let fh = model.solve(&conc(h, s))?.0 - target;
                    if fh == 0.0 || fh.signum() != f0.signum() {
                        found = Some(h);
                        break;
                    }
                    h *= 2.0;
                    if h > 50.0 {
                        break;
                    }
                }
                found.ok_or_else(|| {
                    design_error(format!(
                        "the adjuster `{}` cannot bring the buffer from pH {:.3} to {target} (it moves the pH the other way, or not far enough)",
                        slots[n - 1 - usize::from(salt_slot.is_some())].0.reagent().name(),
                        f0 + target
                    ))
                })?
            } else {
                let f1 = model.solve(&conc(1.0, s))?.0 - target;
                if f1 != 0.0 && f1.signum() == f0.signum() {
                    return Err(design_error(format!(
                        "target pH {target} lies outside the range these two forms reach: pH {:.3} with the acidic form alone, {:.3} with the basic form alone",
                        f0 + target,
                        f1 + target
                    )));
                }
                1.0
            };
            root(0.0, hi, 1e-11, |x| Ok(model.solve(&conc(x, s))?.0 - target))
        };
        let (x, s) = match i_target {
            None => (compose(&mut model, 0.0)?, 0.0),
            Some(it) => {
                let ionic_at = |model: &mut Model, s: f64| -> Result<(f64, f64)> {
                    let x = compose(model, s)?;
                    Ok((x, model.solve(&conc(x, s))?.1 - it))
                };
                let (x0, g0) = ionic_at(&mut model, 0.0)?;
                if g0 >= 0.0 {
                    if g0 < 1e-10 * it {
                        (x0, 0.0)
                    } else {
                        return Err(design_error(format!(
                            "the buffer alone has ionic strength {:.4} mol/kg, above the target {it} mol/kg",
                            g0 + it
                        )));
                    }
                } else {
                    let mut hi = it;
                    let mut ok = false;
                    for _ in 0..20 {
                        if ionic_at(&mut model, hi)?.1 >= 0.0 {
                            ok = true;
                            break;
                        }
                        hi *= 2.0;
                    }
                    if !ok {
                        return Err(design_error(format!(
                            "no amount of salt up to {hi} mol/L reaches the target ionic strength"
                        )));
                    }
                    let s = root(0.0, hi, 1e-11 * it, |s| Ok(ionic_at(&mut model, s)?.1))?;
                    (compose(&mut model, s)?, s)
                }
            }
        };
        self.finish(&slots, &conc(x, s), vf)
    }

    /// Builds the recipe from slot concentrations and checks it by a forward solve.
    fn finish(&self, slots: &[(&Stock, Role)], conc: &[f64], vf: f64) -> Result<BufferRecipe> {
        let final_volume = Volume::liters(vf);
        let mut recipe = Recipe::new();
        let mut lines = Vec::new();
        let mut pipetted = 0.0;
        for ((stock, role), &c) in slots.iter().zip(conc) {
            let c = c.max(0.0);
            let measure = match stock {
                Stock::Solid(r) => {
                    let m = Mass::grams(c * vf * r.molar_mass_g_per_mol().unwrap_or(0.0));
                    recipe.add_mass(r, m, final_volume)?;
                    Measure::Mass(m)
                }
                Stock::Solution { reagent, mol_per_l } => {
                    let v = Volume::liters(c * vf / mol_per_l);
                    pipetted += v.liters_value();
                    if pipetted > vf {
                        return Err(design_error(format!(
                            "the stock solutions would take {:.1} mL or more, more than the final volume {:.1} mL: use more concentrated stocks",
                            pipetted * 1e3,
                            vf * 1e3
                        )));
                    }
                    recipe.add_stock(reagent, Amount::molar(*mol_per_l), v, final_volume)?;
                    Measure::Volume(v)
                }
            };
            lines.push(Line {
                reagent: stock.reagent().name().to_string(),
                role: *role,
                mol_per_l: c,
                measure,
            });
        }
        let sys = recipe.compile(&self.conditions)?;
        let eq = sys.solve()?;
        let beta = eq.sensitivities(&sys)?.buffer_capacity_molal() * sys.water_density_kg_per_l();
        let ph = eq.ph();
        let shift_at = |conditions: Conditions, r: &Recipe, factor: f64| -> Result<PhShift> {
            let p = r.compile(&conditions)?.solve()?.ph();
            Ok(PhShift {
                temperature: conditions.temperature,
                dilution_factor: factor,
                ph: p,
                shift: p - ph,
            })
        };
        let temperature_shifts = self
            .compare_at
            .iter()
            .map(|&t| {
                let at_t = Conditions {
                    temperature: t,
                    ..self.conditions
                };
                shift_at(at_t, &recipe, 1.0)
            })
            .collect::<Result<Vec<_>>>()?;
        let dilution_shift = shift_at(self.conditions, &recipe.diluted(10.0)?, 10.0)?;
        Ok(BufferRecipe {
            lines,
            final_volume,
            target_ph: self.target_ph,
            check_ph: ph,
            ph_residual: ph - self.target_ph,
            balance_residual: eq.residuals().max_relative(),
            ionic_strength_molal: eq.ionic_strength_molal(),
            buffer_capacity_mol_per_l: if beta.is_finite() { beta } else { f64::MAX },
            temperature_shifts,
            dilution_shift,
            warnings: eq.warnings().to_vec(),
            recipe,
        })
    }
}
