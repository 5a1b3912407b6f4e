//! Measured titrations, from the instrument's file to a reported content with its
//! uncertainty: one module a step.
//!
//! - [`csv`]: a measured curve from CSV text (volume with pH or with electrode potential in
//!   mV), with column mapping, units and comment lines; a bad line is refused by its number.
//! - [`calibration`]: a glass electrode calibrated from two or more buffers (slope as a
//!   percentage of the Nernst slope, offset), temperature compensation, potentials to pH.
//! - [`derivative`]: endpoints by the first and second derivative after a stated smoothing.
//! - [`gran`]: endpoints by Gran functions on both sides, the window chosen automatically
//!   and reported.
//! - [`content`]: the analyte content (mol/L, g/L, g/100 mL, % w/w) with an uncertainty
//!   budget from the endpoint, the titrant's standardisation, the burette, the pipette, the
//!   flask and the balance (glassware tolerances of ISO 385, ISO 648 and ISO 1042; combined
//!   by the GUM, JCGM 100:2008).
//!
//! The model fit on the same data is [`TitrationFit`](crate::analysis::TitrationFit).
//!
//! ```
//! use protolyte::analysis::measured::csv::{CsvLayout, read_csv};
//! use protolyte::analysis::measured::gran::gran_both_sides;
//!
//! // An invented strong acid titrated with 0.1 mol/L base: 25 mL, endpoint at 10 mL.
//! let mut text = String::from("volume_ml,ph\n");
//! for i in 1..=30 {
//!     let v = 0.5 * i as f64;
//!     let excess = 0.1 * (v - 10.0) / (25.0 + v);
//!     let ph = if excess < 0.0 { -(-excess).log10() } else { 14.0 + excess.log10() };
//!     if v != 10.0 { text += &format!("{v},{ph}\n"); }
//! }
//! let curve = read_csv(&text, &CsvLayout::default())?;
//! let g = gran_both_sides(&curve.ph_pairs()?, 25.0, 10.0)?;
//! assert!((g.after.unwrap().fit.endpoint_ml - 10.0).abs() < 1e-6);
//! # Ok::<(), protolyte::analysis::measured::MeasuredError>(())
//! ```

pub mod calibration;
pub mod content;
pub mod csv;
pub mod derivative;
pub mod gran;

/// What went wrong with measured data or its analysis; each variant says what and where.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum MeasuredError {
    /// A line of the data file cannot be read.
    #[error("line {line}: {reason}")]
    Line {
        /// Line number, 1-based, as an editor shows it.
        line: usize,
        /// What is wrong.
        reason: String,
    },
    /// A column asked for is not in the file.
    #[error("column {column}: {reason}")]
    Column {
        /// The column as asked for (name or 1-based number).
        column: String,
        /// What is wrong.
        reason: String,
    },
    /// The data are not enough or not suitable for a method.
    #[error("{method}: {reason}")]
    Method {
        /// The method (for example "Gran, after the endpoint").
        method: String,
        /// What is wrong.
        reason: String,
    },
    /// A parameter is outside its accepted range.
    #[error("{what} = {} is refused: {reason}", crate::error::number(*value))]
    Parameter {
        /// The parameter.
        what: String,
        /// Its value.
        value: f64,
        /// The accepted range or reason.
        reason: String,
    },
    /// An error of the underlying library call.
    #[error(transparent)]
    Library(#[from] crate::Error),
}

/// The result type of this module.
pub type MeasuredResult<T> = std::result::Result<T, MeasuredError>;

/// `x` when finite and within `lo..=hi`, otherwise a [`MeasuredError::Parameter`].
pub(crate) fn check(what: &str, x: f64, lo: f64, hi: f64) -> MeasuredResult<f64> {
    if x.is_finite() && x >= lo && x <= hi {
        Ok(x)
    } else {
        Err(MeasuredError::Parameter {
            what: what.into(),
            value: x,
            reason: format!("must be finite and within {lo}..={hi}"),
        })
    }
}

/// Refuses (volume, pH) data with a value that is not finite or volumes that do not increase
/// strictly, naming the point.
pub(crate) fn check_curve(data: &[(f64, f64)], method: &str) -> MeasuredResult<()> {
    if let Some((i, p)) = data
        .iter()
        .enumerate()
        .find(|(_, p)| !(p.0.is_finite() && p.1.is_finite()))
    {
        return Err(MeasuredError::Method {
            method: method.into(),
            reason: format!("point {} ({} mL, pH {}) is not finite", i + 1, p.0, p.1),
        });
    }
    if let Some((i, w)) = data.windows(2).enumerate().find(|(_, w)| w[1].0 <= w[0].0) {
        return Err(MeasuredError::Method {
            method: method.into(),
            reason: format!(
                "volumes must increase strictly (point {}: {} mL after {} mL)",
                i + 2,
                w[1].0,
                w[0].0
            ),
        });
    }
    Ok(())
}
