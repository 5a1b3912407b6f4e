//! Reagents: what a person weighs or pipettes, as constituents with counts.

use crate::error::{Error, Result, check_int, check_parameter};
use crate::ion::Ion;
use crate::limits::MAX_CONSTITUENT_COUNT;
use crate::protolyte::Protolyte;

/// One constituent of a reagent.
#[derive(Debug, Clone, PartialEq)]
pub enum Constituent {
    /// A family in one protonation state (`protons` bound, 0 = fully deprotonated).
    Form {
        /// The family.
        protolyte: Protolyte,
        /// Bound protons, 0..=n.
        protons: usize,
    },
    /// A simple ion.
    Ion(Ion),
    /// H⁺ (strong acids).
    Proton,
    /// OH⁻ (strong bases).
    Hydroxide,
}

impl Constituent {
    /// Charge of one unit of this constituent; `None` for a form with more protons than its
    /// family has (no such form exists).
    ///
    /// ```
    /// use protolyte::{Constituent, Protolyte};
    /// let p = Protolyte::new("phosphate", &[2.148, 7.198, 12.35], 0)?;
    /// let h2po4 = Constituent::Form { protolyte: p.clone(), protons: 2 };
    /// assert_eq!(h2po4.charge(), Some(-1));
    /// assert_eq!(Constituent::Form { protolyte: p, protons: 9 }.charge(), None);
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn charge(&self) -> Option<i32> {
        match self {
            Constituent::Form { protolyte, protons } => protolyte.charge_of_form(*protons),
            Constituent::Ion(i) => Some(i.charge()),
            Constituent::Proton => Some(1),
            Constituent::Hydroxide => Some(-1),
        }
    }
}

/// A reagent: an electroneutral set of constituents, with its molar mass when it is a solid
/// or pure liquid a person weighs.
///
/// # Example
///
/// ```
/// use protolyte::{Constituent, Ion, Protolyte, Reagent};
///
/// let phosphate = Protolyte::new("phosphate", &[2.148, 7.198, 12.35], 0)?;
/// let na = Ion::new("sodium", 1)?;
/// // NaH2PO4: one Na⁺ and one H₂PO₄⁻ (the form with 2 protons).
/// let salt = Reagent::new(
///     "sodium dihydrogen phosphate",
///     Some(119.977),
///     vec![(Constituent::Ion(na), 1), (Constituent::Form { protolyte: phosphate, protons: 2 }, 1)],
/// )?;
/// assert_eq!(salt.molar_mass_g_per_mol(), Some(119.977));
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct Reagent {
    name: String,
    formula: Option<String>,
    molar_mass_g_per_mol: Option<f64>,
    parts: Vec<(Constituent, u32)>,
}

impl Reagent {
    /// A reagent from its constituents. Refuses an empty name, no constituents, a form with
    /// more protons than its family has, a zero count or one above
    /// [`MAX_CONSTITUENT_COUNT`] ([`Error::IntegerOutOfRange`]), a net charge, and a molar
    /// mass that is not positive and finite.
    pub fn new(name: &str, molar_mass_g_per_mol: Option<f64>, parts: Vec<(Constituent, u32)>) -> Result<Self> {
        let name = name.trim();
        let bad = |reason: String| Error::InconsistentDefinition {
            name: if name.is_empty() {
                "(unnamed reagent)".into()
            } else {
                name.into()
            },
            reason,
        };
        if name.is_empty() {
            return Err(bad("a reagent needs a name".into()));
        }
        if parts.is_empty() {
            return Err(bad("a reagent needs at least one constituent".into()));
        }
        let mut charge: i64 = 0;
        for (k, (c, n)) in parts.iter().enumerate() {
            if *n == 0 {
                return Err(bad("a constituent with count 0".into()));
            }
            check_int(
                name,
                &format!("count of constituent {}", k + 1),
                i64::from(*n),
                1,
                i64::from(MAX_CONSTITUENT_COUNT),
            )?;
            if let Constituent::Form { protolyte, protons } = c
                && *protons > protolyte.proton_count()
            {
                return Err(bad(format!(
                    "{} has {} dissociable protons, a form with {} was given",
                    protolyte.name(),
                    protolyte.proton_count(),
                    protons
                )));
            }
            // Every form was checked to exist just above.
            charge += i64::from(c.charge().unwrap_or(0)) * i64::from(*n);
        }
        if charge != 0 {
            return Err(Error::NotElectroneutral {
                reagent: name.into(),
                charge,
            });
        }
        if let Some(m) = molar_mass_g_per_mol {
            check_parameter(name, "molar mass (g/mol)", m, 1e-3, 1e7, "must be positive and finite")?;
        }
        Ok(Reagent {
            name: name.to_string(),
            formula: None,
            molar_mass_g_per_mol,
            parts,
        })
    }

    /// The fully protonated family as a reagent, when that form is neutral (acetic acid,
    /// phosphoric acid, glycine's zwitterion is not: use [`Reagent::new`] for charged forms).
    ///
    /// ```
    /// use protolyte::{Protolyte, Reagent};
    /// let hx = Reagent::neutral_form(&Protolyte::new("acid HX", &[4.0], 0)?, None)?;
    /// assert_eq!(hx.name(), "acid HX");
    /// # Ok::<(), protolyte::Error>(())
    /// ```
    pub fn neutral_form(protolyte: &Protolyte, molar_mass_g_per_mol: Option<f64>) -> Result<Self> {
        let n = protolyte.proton_count();
        let protons = (0..=n)
            .rev()
            .find(|&j| protolyte.charge_of_form(j) == Some(0))
            .ok_or_else(|| Error::NotElectroneutral {
                reagent: protolyte.name().to_string(),
                charge: i64::from(protolyte.charge_most_protonated()),
            })?;
        Reagent::new(
            protolyte.name(),
            molar_mass_g_per_mol,
            vec![(
                Constituent::Form {
                    protolyte: protolyte.clone(),
                    protons,
                },
                1,
            )],
        )
    }

    /// Sets the formula shown for the reagent.
    pub fn with_formula(mut self, formula: &str) -> Self {
        self.formula = Some(formula.trim().to_string());
        self
    }

    /// The reagent's name.
    pub fn name(&self) -> &str {
        &self.name
    }

    /// The formula, if set.
    pub fn formula(&self) -> Option<&str> {
        self.formula.as_deref()
    }

    /// Molar mass in g/mol, if known.
    pub fn molar_mass_g_per_mol(&self) -> Option<f64> {
        self.molar_mass_g_per_mol
    }

    /// Constituents with counts.
    pub fn parts(&self) -> &[(Constituent, u32)] {
        &self.parts
    }
}
