//! Typed physical quantities: temperature, amount of substance per volume or per mass of
//! water, volume and mass. The unit is in the constructor's name, so a number never travels
//! without its unit.

use crate::error::{Result, check_amount};

/// A temperature. Stored in kelvin.
///
/// # Example
///
/// ```
/// use protolyte::Temperature;
///
/// let t = Temperature::celsius(25.0);
/// assert!((t.kelvin() - 298.15).abs() < 1e-12);
/// assert_eq!(Temperature::kelvin_value(310.15).as_celsius(), 37.0);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd)]
pub struct Temperature {
    kelvin: f64,
}

impl Temperature {
    /// 25 °C, the reference temperature of the built-in constants.
    pub const STANDARD: Temperature = Temperature { kelvin: 298.15 };

    /// A temperature in degrees Celsius.
    pub fn celsius(degrees: f64) -> Self {
        Temperature {
            kelvin: degrees + 273.15,
        }
    }

    /// A temperature in kelvin.
    pub fn kelvin_value(kelvin: f64) -> Self {
        Temperature { kelvin }
    }

    /// The temperature in kelvin.
    pub fn kelvin(self) -> f64 {
        self.kelvin
    }

    /// The temperature in degrees Celsius.
    pub fn as_celsius(self) -> f64 {
        self.kelvin - 273.15
    }
}

impl Default for Temperature {
    fn default() -> Self {
        Temperature::STANDARD
    }
}

/// An amount of a reagent in a solution: per litre of solution or per kilogram of water.
///
/// Molar amounts are turned into molal ones at the solution's temperature by dividing by
/// the density of pure water at that temperature (kg/L). That is the dilute-solution
/// approximation: it neglects the volume and mass of the solutes themselves, which is good
/// to a few tenths of a percent below about 0.1 mol/L and grows with concentration.
///
/// # Example
///
/// ```
/// use protolyte::Amount;
///
/// let a = Amount::millimolar(2.5);
/// assert_eq!(a, Amount::molar(0.0025));
/// assert!(Amount::molal(f64::NAN).validate("sample").is_err());
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Amount {
    /// Moles per litre of solution.
    Molar(f64),
    /// Moles per kilogram of water.
    Molal(f64),
}

impl Amount {
    /// Moles per litre of solution.
    pub fn molar(mol_per_l: f64) -> Self {
        Amount::Molar(mol_per_l)
    }

    /// Millimoles per litre of solution.
    pub fn millimolar(mmol_per_l: f64) -> Self {
        Amount::Molar(mmol_per_l * 1e-3)
    }

    /// Moles per kilogram of water.
    pub fn molal(mol_per_kg: f64) -> Self {
        Amount::Molal(mol_per_kg)
    }

    /// The amount of `mass` of a substance of molar mass `molar_mass_g_per_mol` made up
    /// to `volume` of solution, in mol/L.
    ///
    /// ```
    /// use protolyte::{Amount, Mass, Volume};
    ///
    /// // 5.844 g of NaCl (58.44 g/mol) made up to 1 L is 0.1 mol/L.
    /// let a = Amount::from_mass(Mass::grams(5.844), 58.44, Volume::liters(1.0)).unwrap();
    /// assert!((a.value() - 0.1).abs() < 1e-12);
    /// ```
    pub fn from_mass(mass: Mass, molar_mass_g_per_mol: f64, volume: Volume) -> Result<Self> {
        let g = check_amount("mass", mass.grams_value(), "g")?;
        let m = crate::error::check_parameter(
            "reagent",
            "molar mass (g/mol)",
            molar_mass_g_per_mol,
            1e-3,
            1e7,
            "must be positive and finite",
        )?;
        let v = volume.positive("final volume")?;
        // A huge mass in a tiny volume overflows: refused rather than returned as infinity.
        Ok(Amount::Molar(check_amount(
            "amount from mass and volume",
            g / m / v,
            "mol/L",
        )?))
    }

    /// The numeric value in its own unit.
    pub fn value(self) -> f64 {
        match self {
            Amount::Molar(v) | Amount::Molal(v) => v,
        }
    }

    /// The same kind of amount scaled by `factor`.
    pub(crate) fn scaled(self, factor: f64) -> Self {
        match self {
            Amount::Molar(v) => Amount::Molar(v * factor),
            Amount::Molal(v) => Amount::Molal(v * factor),
        }
    }

    /// The amount in mol/kg of water, given the density of water in kg/L.
    pub(crate) fn molal_value(self, water_density_kg_per_l: f64) -> f64 {
        match self {
            Amount::Molar(v) => v / water_density_kg_per_l,
            Amount::Molal(v) => v,
        }
    }

    /// Refuses a negative, NaN or infinite amount; `what` names it in the error.
    pub fn validate(self, what: &str) -> Result<Self> {
        let unit = match self {
            Amount::Molar(_) => "mol/L",
            Amount::Molal(_) => "mol/kg",
        };
        check_amount(what, self.value(), unit)?;
        Ok(self)
    }
}

/// A volume of solution. Stored in litres.
///
/// ```
/// use protolyte::Volume;
/// assert_eq!(Volume::milliliters(250.0).liters_value(), 0.25);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd)]
pub struct Volume {
    liters: f64,
}

impl Volume {
    /// A volume in litres.
    pub fn liters(liters: f64) -> Self {
        Volume { liters }
    }

    /// A volume in millilitres.
    pub fn milliliters(ml: f64) -> Self {
        Volume { liters: ml * 1e-3 }
    }

    /// The volume in litres.
    pub fn liters_value(self) -> f64 {
        self.liters
    }

    /// The volume in millilitres.
    pub fn milliliters_value(self) -> f64 {
        self.liters * 1e3
    }

    /// The volume in litres, refusing zero, negative and non-finite volumes, and volumes
    /// below [`MIN_VOLUME_LITERS`](crate::limits::MIN_VOLUME_LITERS).
    pub(crate) fn positive(self, what: &str) -> Result<f64> {
        let v = check_amount(what, self.liters, "L")?;
        if v <= 0.0 {
            Err(crate::Error::InvalidAmount {
                what: what.to_string(),
                value: v,
                unit: "L",
            })
        } else if v < crate::limits::MIN_VOLUME_LITERS {
            Err(crate::Error::VolumeTooSmall {
                what: what.to_string(),
                liters: v,
                min_liters: crate::limits::MIN_VOLUME_LITERS,
            })
        } else {
            Ok(v)
        }
    }
}

/// A mass. Stored in grams.
///
/// ```
/// use protolyte::Mass;
/// assert_eq!(Mass::milligrams(1500.0).grams_value(), 1.5);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd)]
pub struct Mass {
    grams: f64,
}

impl Mass {
    /// A mass in grams.
    pub fn grams(grams: f64) -> Self {
        Mass { grams }
    }

    /// A mass in milligrams.
    pub fn milligrams(mg: f64) -> Self {
        Mass { grams: mg * 1e-3 }
    }

    /// The mass in grams.
    pub fn grams_value(self) -> f64 {
        self.grams
    }
}
