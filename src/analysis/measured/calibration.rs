//! A glass electrode calibrated from buffer readings.
//!
//! The electrode follows E = E₇ − k·S(T)·(pH − 7), where S(T) = ln 10·R·T/F is the Nernst
//! slope (59.16 mV per pH at 25 °C), k the electrode's slope as a fraction of it, and E₇ the
//! offset, the potential at pH 7 (taken as the isopotential point, where a glass electrode's
//! potential hardly changes with temperature: common practice). Two or more buffers give E₇
//! and k by least squares; a reading at another temperature is converted with the slope
//! k·S(T) of that temperature (temperature compensation). With three or more buffers the
//! residuals and the standard errors of slope and offset are reported as well.
//!
//! The usual acceptance limits of a calibration, a slope of 95–102 % and an offset within
//! ±30 mV, are common practice (from memory); outside them the calibration carries a
//! warning, since the electrode may need cleaning or replacing.
//!
//! R = 8.314462618 J/(mol·K) and F = 96485.33212 C/mol are exact in the SI since 2019
//! (CODATA 2018).

use super::csv::{MeasuredCurve, Signal};
use super::{MeasuredError, MeasuredResult, check};
use crate::quantity::Temperature;

/// Molar gas constant, J/(mol·K) (CODATA 2018, exact).
pub const GAS_CONSTANT: f64 = 8.314_462_618;
/// Faraday constant, C/mol (CODATA 2018, exact).
pub const FARADAY: f64 = 96_485.332_12;
/// The pH at which the electrode's potential is taken as independent of temperature.
pub const ISOPOTENTIAL_PH: f64 = 7.0;
/// Slopes outside this range (% of Nernst) carry a warning (common practice, from memory).
pub const SLOPE_ACCEPTANCE_PERCENT: (f64, f64) = (95.0, 102.0);
/// Offsets beyond ± this (mV) carry a warning (common practice, from memory).
pub const OFFSET_ACCEPTANCE_MV: f64 = 30.0;

/// The Nernst slope ln 10·R·T/F at `t`, mV per pH unit.
///
/// ```
/// use protolyte::analysis::measured::calibration::nernst_slope_mv;
/// use protolyte::Temperature;
/// // 59.16 mV at 25 °C (from R and F, CODATA 2018).
/// assert!((nernst_slope_mv(Temperature::celsius(25.0)) - 59.159).abs() < 1e-3);
/// ```
pub fn nernst_slope_mv(t: Temperature) -> f64 {
    1e3 * std::f64::consts::LN_10 * GAS_CONSTANT * t.kelvin() / FARADAY
}

/// One buffer reading.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BufferReading {
    /// The buffer's pH at the calibration temperature (from its certificate).
    pub ph: f64,
    /// The potential read in it, mV.
    pub millivolts: f64,
}

/// A calibrated electrode.
#[derive(Debug, Clone, PartialEq)]
pub struct ElectrodeCalibration {
    /// The calibration temperature.
    pub temperature: Temperature,
    /// The slope, mV per pH (positive: the potential falls as the pH rises).
    pub slope_mv_per_ph: f64,
    /// The slope as a percentage of the Nernst slope at the calibration temperature.
    pub slope_percent: f64,
    /// The offset: the potential at pH 7, mV.
    pub offset_mv: f64,
    /// Measured − fitted potential of each buffer, mV (all zero with two buffers).
    pub residuals_mv: Vec<f64>,
    /// Standard errors of the slope (% of Nernst) and the offset (mV), with three or more
    /// buffers.
    pub standard_errors: Option<(f64, f64)>,
    /// Sentences about a slope or offset outside the usual acceptance limits.
    pub warnings: Vec<String>,
}

impl ElectrodeCalibration {
    /// Calibrates from two or more buffer readings at `temperature` (0–100 °C). Refuses fewer
    /// than two buffers, buffers less than 0.5 pH apart (the slope would not be defined), a
    /// pH outside 0..14, a potential beyond ±2000 mV and a slope that is not negative.
    ///
    /// ```
    /// use protolyte::analysis::measured::calibration::{BufferReading, ElectrodeCalibration};
    /// use protolyte::Temperature;
    /// // Two buffers of the IUPAC primary set at 25 °C (pH 4.005 and 9.180; Buck et al., Pure
    /// // Appl. Chem. 74 (2002) 2169, from memory) read with an electrode of 98 % slope and
    /// // +4 mV offset (invented readings).
    /// let s = 0.98 * 59.159;
    /// let b = [4.005, 9.180].map(|ph| BufferReading { ph, millivolts: 4.0 - s * (ph - 7.0) });
    /// let cal = ElectrodeCalibration::from_buffers(&b, Temperature::celsius(25.0))?;
    /// assert!((cal.slope_percent - 98.0).abs() < 0.01);
    /// assert!((cal.offset_mv - 4.0).abs() < 1e-9);
    /// assert!((cal.ph(4.0, Temperature::celsius(25.0))? - 7.0).abs() < 1e-12);
    /// # Ok::<(), protolyte::analysis::measured::MeasuredError>(())
    /// ```
    pub fn from_buffers(readings: &[BufferReading], temperature: Temperature) -> MeasuredResult<Self> {
        crate::error::check_temperature(temperature)?;
        if readings.len() < 2 {
            return Err(MeasuredError::Method {
                method: "electrode calibration".into(),
                reason: format!("at least 2 buffers are needed, {} given", readings.len()),
            });
        }
        for (i, b) in readings.iter().enumerate() {
            check(&format!("buffer {} pH", i + 1), b.ph, 0.0, 14.0)?;
            check(
                &format!("buffer {} potential (mV)", i + 1),
                b.millivolts,
                -2000.0,
                2000.0,
            )?;
        }
        let n = readings.len() as f64;
        let mx = readings.iter().map(|b| b.ph).sum::<f64>() / n;
        let my = readings.iter().map(|b| b.millivolts).sum::<f64>() / n;
        let sxx: f64 = readings.iter().map(|b| (b.ph - mx).powi(2)).sum();
        let sxy: f64 = readings.iter().map(|b| (b.ph - mx) * (b.millivolts - my)).sum();
        let span = readings.iter().map(|b| b.ph).fold(f64::NEG_INFINITY, f64::max)
            - readings.iter().map(|b| b.ph).fold(f64::INFINITY, f64::min);
        if span < 0.5 {
            return Err(MeasuredError::Method {
                method: "electrode calibration".into(),
                reason: format!("the buffers span only {span} pH; at least 0.5 is needed for a slope"),
            });
        }
        let b = sxy / sxx;
        // The readings are finite (checked above), so b is a number.
        if b >= 0.0 {
            return Err(MeasuredError::Method {
                method: "electrode calibration".into(),
                reason: format!(
                    "the potential rises with pH ({b:.2} mV per pH): check the buffers and the sign of the readings"
                ),
            });
        }
        let a = my - b * mx;
        let nernst = nernst_slope_mv(temperature);
        let slope = -b;
        let offset = a + b * ISOPOTENTIAL_PH;
        let residuals: Vec<f64> = readings.iter().map(|r| r.millivolts - (a + b * r.ph)).collect();
        let standard_errors = (readings.len() > 2).then(|| {
            let s2 = residuals.iter().map(|r| r * r).sum::<f64>() / (n - 2.0);
            let se_b = (s2 / sxx).sqrt();
            let se_offset = (s2 * (1.0 / n + (ISOPOTENTIAL_PH - mx).powi(2) / sxx)).sqrt();
            (100.0 * se_b / nernst, se_offset)
        });
        let slope_percent = 100.0 * slope / nernst;
        let mut warnings = Vec::new();
        let (lo, hi) = SLOPE_ACCEPTANCE_PERCENT;
        if !(lo..=hi).contains(&slope_percent) {
            warnings.push(format!(
                "the slope is {slope_percent:.1} % of the Nernst slope, outside the usual {lo}–{hi} %: clean, recondition or replace the electrode"
            ));
        }
        if offset.abs() > OFFSET_ACCEPTANCE_MV {
            warnings.push(format!(
                "the offset is {offset:.1} mV, beyond the usual ±{OFFSET_ACCEPTANCE_MV} mV: check the reference electrode and its junction"
            ));
        }
        Ok(ElectrodeCalibration {
            temperature,
            slope_mv_per_ph: slope,
            slope_percent,
            offset_mv: offset,
            residuals_mv: residuals,
            standard_errors,
            warnings,
        })
    }

    /// The slope (mV per pH) at `t`: the calibrated fraction of the Nernst slope there.
    pub fn slope_at(&self, t: Temperature) -> f64 {
        self.slope_percent / 100.0 * nernst_slope_mv(t)
    }

    /// The pH of a reading of `millivolts` at `t` (0–100 °C), temperature-compensated.
    pub fn ph(&self, millivolts: f64, t: Temperature) -> MeasuredResult<f64> {
        crate::error::check_temperature(t)?;
        let mv = check("potential (mV)", millivolts, -2000.0, 2000.0)?;
        Ok(ISOPOTENTIAL_PH - (mv - self.offset_mv) / self.slope_at(t))
    }

    /// A curve of potentials converted to pH at `t`; a curve that is already pH is returned as
    /// it is.
    pub fn curve_to_ph(&self, curve: &MeasuredCurve, t: Temperature) -> MeasuredResult<MeasuredCurve> {
        if curve.signal == Signal::Ph {
            return Ok(curve.clone());
        }
        let points = curve
            .points
            .iter()
            .zip(&curve.lines)
            .map(|(&(v, mv), &line)| {
                self.ph(mv, t).map(|ph| (v, ph)).map_err(|e| MeasuredError::Line {
                    line,
                    reason: e.to_string(),
                })
            })
            .collect::<MeasuredResult<Vec<_>>>()?;
        Ok(MeasuredCurve {
            signal: Signal::Ph,
            points,
            lines: curve.lines.clone(),
        })
    }
}
