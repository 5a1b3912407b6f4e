//! A simple ion: a spectator (Na⁺, Cl⁻, NO₃⁻, ...) or a metal ion that reacts only through
//! the complexes given to a recipe.

use crate::error::{Error, Result, check_ion_size};

/// A simple ion with a fixed charge.
///
/// # Example
///
/// ```
/// use protolyte::Ion;
///
/// let na = Ion::new("sodium", 1)?.with_ion_size_angstrom(4.0)?;
/// assert_eq!(na.charge(), 1);
/// # Ok::<(), protolyte::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct Ion {
    name: String,
    formula: Option<String>,
    charge: i32,
    ion_size_angstrom: Option<f64>,
}

impl Ion {
    /// An ion named `name` with charge number `charge` (−6..6, not zero).
    pub fn new(name: &str, charge: i32) -> Result<Self> {
        let name = name.trim();
        if name.is_empty() || charge == 0 || !(-6..=6).contains(&charge) {
            return Err(Error::InconsistentDefinition {
                name: if name.is_empty() {
                    "(unnamed ion)".into()
                } else {
                    name.into()
                },
                reason: format!("an ion needs a name and a charge in −6..6 other than 0 (got {charge})"),
            });
        }
        Ok(Ion {
            name: name.to_string(),
            formula: None,
            charge,
            ion_size_angstrom: None,
        })
    }

    /// Sets the ion-size parameter å (ångström).
    pub fn with_ion_size_angstrom(mut self, a: f64) -> Result<Self> {
        self.ion_size_angstrom = Some(check_ion_size(&self.name, a)?);
        Ok(self)
    }

    /// Sets the formula shown for the ion, e.g. `"Na+"`.
    pub fn with_formula(mut self, formula: &str) -> Self {
        self.formula = Some(formula.trim().to_string());
        self
    }

    /// The ion's name.
    pub fn name(&self) -> &str {
        &self.name
    }

    /// The formula, or the name when none is set.
    pub fn display_name(&self) -> &str {
        self.formula.as_deref().unwrap_or(&self.name)
    }

    /// Charge number.
    pub fn charge(&self) -> i32 {
        self.charge
    }

    /// Ion-size parameter, if set.
    pub fn ion_size_angstrom(&self) -> Option<f64> {
        self.ion_size_angstrom
    }
}
