//! Properties of liquid water at 1 atm, 0–100 °C: density, relative permittivity
//! (dielectric constant) and the ion product Kw.
//!
//! Sources (equations entered from memory of the papers; the tests in `tests/water.rs`
//! check them against published table values):
//! - density: G. S. Kell, *J. Chem. Eng. Data* **20** (1975) 97–105, eq. for 0–150 °C at 1 atm;
//! - relative permittivity: C. G. Malmberg and A. A. Maryott, *J. Res. Natl. Bur. Stand.*
//!   **56** (1956) 1–8, 0–100 °C;
//! - Kw: W. L. Marshall and E. U. Franck, *J. Phys. Chem. Ref. Data* **10** (1981) 295–304,
//!   log Kw as a function of temperature and the density of water (molal scale).
//!
//! Each function states the range its source covers ([`DENSITY_RANGE`],
//! [`DIELECTRIC_RANGE`], [`KW_RANGE`]). The functions compute only within the library's
//! temperature domain, 0–100 °C, which lies inside every one of these ranges, and refuse a
//! temperature outside it; so no result uses them outside their sources' range.

use crate::error::{Result, check_temperature};
use crate::quantity::Temperature;
use crate::vant_hoff::ValidityRange;

/// The range of Kell's (1975) 1-atm density equation: 0–150 °C.
pub const DENSITY_RANGE: ValidityRange = ValidityRange {
    min_celsius: 0.0,
    max_celsius: 150.0,
};

/// The range of Malmberg and Maryott's (1956) measurements and equation: 0–100 °C.
pub const DIELECTRIC_RANGE: ValidityRange = ValidityRange {
    min_celsius: 0.0,
    max_celsius: 100.0,
};

/// The range of Marshall and Franck's (1981) Kw equation as used here: the equation covers
/// 0–1000 °C (to 1000 MPa), but here it is evaluated at the 1-atm density of
/// [`density_kg_per_l`], so the density equation's range (0–150 °C) is the one that binds.
pub const KW_RANGE: ValidityRange = ValidityRange {
    min_celsius: 0.0,
    max_celsius: 150.0,
};

/// Density of pure liquid water at 1 atm, in kg/L (Kell 1975). Refuses a temperature
/// outside 0–100 °C with [`Error::OutOfDomain`](crate::Error::OutOfDomain).
///
/// # Example
///
/// ```
/// use protolyte::{Temperature, water};
///
/// let rho = water::density_kg_per_l(Temperature::celsius(25.0))?;
/// assert!((rho - 0.99705).abs() < 5e-5);
/// assert!(water::density_kg_per_l(Temperature::celsius(500.0)).is_err());
/// # Ok::<(), protolyte::Error>(())
/// ```
pub fn density_kg_per_l(t: Temperature) -> Result<f64> {
    let c = check_temperature(t)?;
    let num = 999.83952
        + c * (16.945176 + c * (-7.9870401e-3 + c * (-46.170461e-6 + c * (105.56302e-9 + c * -280.54253e-12))));
    Ok(num / (1.0 + 16.879850e-3 * c) / 1000.0)
}

/// Relative permittivity (dielectric constant) of water (Malmberg & Maryott 1956). Refuses
/// a temperature outside 0–100 °C with [`Error::OutOfDomain`](crate::Error::OutOfDomain).
///
/// # Example
///
/// ```
/// use protolyte::{Temperature, water};
///
/// let eps = water::dielectric_constant(Temperature::celsius(25.0))?;
/// assert!((eps - 78.30).abs() < 0.01);
/// # Ok::<(), protolyte::Error>(())
/// ```
pub fn dielectric_constant(t: Temperature) -> Result<f64> {
    let c = check_temperature(t)?;
    Ok(87.740 - 0.40008 * c + 9.398e-4 * c * c - 1.410e-6 * c * c * c)
}

/// log₁₀ Kw, the ion product of water on the molal scale (Marshall & Franck 1981). Refuses
/// a temperature outside 0–100 °C with [`Error::OutOfDomain`](crate::Error::OutOfDomain)
/// (the equation itself reaches further, but only with the density of liquid water at
/// 1 atm, which this module gives for 0–100 °C).
///
/// # Example
///
/// ```
/// use protolyte::{Temperature, water};
///
/// let pkw = -water::log10_kw(Temperature::celsius(25.0))?;
/// assert!((pkw - 13.995).abs() < 0.002);
/// # Ok::<(), protolyte::Error>(())
/// ```
pub fn log10_kw(t: Temperature) -> Result<f64> {
    let tk = t.kelvin();
    let rho = density_kg_per_l(t)?; // g/cm³ equals kg/L
    Ok(-4.098 - 3245.2 / tk + 2.2362e5 / (tk * tk) - 3.984e7 / (tk * tk * tk)
        + (13.957 - 1262.3 / tk + 8.5641e5 / (tk * tk)) * rho.log10())
}
