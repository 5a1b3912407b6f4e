//! Measured-data documents: an electrode calibration (`protolyte-calibration/1`) and a
//! measured titration to analyse (`protolyte-measured/1`), with their result documents.

use serde::{Deserialize, Serialize};

use super::input::{ActivityDoc, DefinitionsDoc, FitCurveDoc, FitDoc, MeasuredPoint, SolutionDoc, UnknownDoc};
use super::output::FitResult;
use super::{
    CALIBRATION_FORMAT, DocumentError, FIT_FORMAT, MEASURED_FORMAT, RESULT_FORMAT, check_format, field_error, finite,
};
use crate::Catalog;
use crate::analysis::measured::calibration::{BufferReading, ElectrodeCalibration, nernst_slope_mv};
use crate::analysis::measured::content::{
    ContentInputs, GlassClass, Sample, burette_tolerance_ml, content, flask_tolerance_ml, pipette_tolerance_ml,
};
use crate::analysis::measured::csv::{Column, CsvLayout, Signal, VolumeUnit, read_csv};
use crate::analysis::measured::derivative::{DEFAULT_HALF_WINDOW, smoothed_endpoints};
use crate::analysis::measured::gran::{GranSide, gran_both_sides};
use crate::analysis::{DerivativeEndpoint, GranFunction};
use crate::quantity::Temperature;

fn result_format() -> String {
    RESULT_FORMAT.into()
}

fn default_celsius() -> f64 {
    25.0
}

/// One buffer reading of a calibration.
///
/// ```
/// use protolyte::document::BufferDoc;
/// let b: BufferDoc = serde_json::from_str(r#"{"ph": 4.005, "millivolts": 172.3}"#)?;
/// assert_eq!(b.ph, 4.005);
/// # Ok::<(), serde_json::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct BufferDoc {
    /// The buffer's pH at the calibration temperature.
    pub ph: f64,
    /// The potential read, mV.
    pub millivolts: f64,
}

/// An electrode calibration request (`protolyte-calibration/1`), also the `calibration` part
/// of a measured-titration request.
///
/// ```
/// use protolyte::document::{CalibrationDoc, parse};
/// let doc: CalibrationDoc = parse(r#"{"format": "protolyte-calibration/1", "temperature_celsius": 25,
///   "buffers": [{"ph": 4.005, "millivolts": 173.0}, {"ph": 9.180, "millivolts": -127.0}]}"#, "c.json")?;
/// let cal = doc.to_calibration()?;
/// assert!(cal.slope_percent > 97.0 && cal.slope_percent < 99.0);
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CalibrationDoc {
    /// `"protolyte-calibration/1"` (may be left out inside a measured-titration request).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub format: Option<String>,
    /// A label of your own.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub name: Option<String>,
    /// The temperature of the buffers, °C (default 25).
    #[serde(default = "default_celsius")]
    pub temperature_celsius: f64,
    /// Two or more buffer readings.
    pub buffers: Vec<BufferDoc>,
}

impl CalibrationDoc {
    /// Checks the format tag (`required`: refuse a document without one).
    pub fn check_format(&self, required: bool) -> Result<(), DocumentError> {
        check_format(self.format.as_deref(), CALIBRATION_FORMAT, required)
    }

    /// The calibration.
    pub fn to_calibration(&self) -> Result<ElectrodeCalibration, DocumentError> {
        let readings: Vec<BufferReading> = self
            .buffers
            .iter()
            .map(|b| BufferReading {
                ph: b.ph,
                millivolts: b.millivolts,
            })
            .collect();
        ElectrodeCalibration::from_buffers(&readings, Temperature::celsius(self.temperature_celsius))
            .map_err(|e| field_error("buffers", e))
    }
}

/// The result of a calibration.
///
/// ```
/// use protolyte::document::CalibrationResult;
/// assert!(CalibrationResult::default().warnings.is_empty());
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct CalibrationResult {
    /// `"protolyte-result/1"`.
    #[serde(default = "result_format")]
    pub format: String,
    /// The request's label.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub name: Option<String>,
    /// Calibration temperature, °C.
    pub temperature_celsius: f64,
    /// The Nernst slope there, mV per pH.
    pub nernst_slope_mv_per_ph: f64,
    /// The electrode's slope, mV per pH.
    pub slope_mv_per_ph: f64,
    /// The slope as % of the Nernst slope.
    pub slope_percent: f64,
    /// The potential at pH 7, mV.
    pub offset_mv: f64,
    /// Standard error of the slope (% of Nernst), with three or more buffers.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub slope_standard_error_percent: Option<f64>,
    /// Standard error of the offset (mV), with three or more buffers.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub offset_standard_error_mv: Option<f64>,
    /// Measured − fitted potential of each buffer, mV.
    pub residuals_mv: Vec<f64>,
    /// Warnings (a slope or offset outside the usual acceptance limits).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub warnings: Vec<String>,
}

impl From<&ElectrodeCalibration> for CalibrationResult {
    fn from(c: &ElectrodeCalibration) -> Self {
        CalibrationResult {
            format: result_format(),
            name: None,
            temperature_celsius: c.temperature.as_celsius(),
            nernst_slope_mv_per_ph: nernst_slope_mv(c.temperature),
            slope_mv_per_ph: c.slope_mv_per_ph,
            slope_percent: c.slope_percent,
            offset_mv: c.offset_mv,
            slope_standard_error_percent: c.standard_errors.and_then(|s| finite(s.0)),
            offset_standard_error_mv: c.standard_errors.and_then(|s| finite(s.1)),
            residuals_mv: c.residuals_mv.clone(),
            warnings: c.warnings.clone(),
        }
    }
}

/// A column of the data file: its header name or its 1-based number.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
#[serde(untagged)]
pub enum ColumnDoc {
    /// By 1-based number.
    Number(usize),
    /// By header name.
    Name(String),
}

/// Where and how the measured data are stored.
///
/// ```
/// use protolyte::document::DataDoc;
/// let d: DataDoc = serde_json::from_str(r#"{"file": "run1.csv", "volume_column": "V/mL",
///   "signal_column": 3, "signal": "millivolts"}"#)?;
/// assert_eq!(d.signal.as_deref(), Some("millivolts"));
/// # Ok::<(), serde_json::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DataDoc {
    /// The CSV file, relative to the request's folder.
    pub file: String,
    /// The volume column (default 1).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub volume_column: Option<ColumnDoc>,
    /// The signal column (default 2).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub signal_column: Option<ColumnDoc>,
    /// `"ph"` (default) or `"millivolts"`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub signal: Option<String>,
    /// `"ml"` (default), `"l"` or `"ul"`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub volume_unit: Option<String>,
    /// The field delimiter, one character (default `,`; `"tab"` for a tab).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub delimiter: Option<String>,
    /// The comment character (default `#`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub comment: Option<String>,
}

impl DataDoc {
    /// The CSV layout.
    pub fn layout(&self) -> Result<CsvLayout, DocumentError> {
        let col = |c: &Option<ColumnDoc>, default: usize| match c {
            None => Column::Number(default),
            Some(ColumnDoc::Number(k)) => Column::Number(*k),
            Some(ColumnDoc::Name(n)) => Column::Name(n.clone()),
        };
        let signal = match self.signal.as_deref().map(str::to_ascii_lowercase).as_deref() {
            None | Some("ph") => Signal::Ph,
            Some("millivolts") | Some("mv") => Signal::Millivolts,
            Some(other) => {
                return Err(field_error(
                    "data.signal",
                    format!("`{other}`: must be \"ph\" or \"millivolts\""),
                ));
            }
        };
        let unit = match self.volume_unit.as_deref().map(str::to_ascii_lowercase).as_deref() {
            None | Some("ml") => VolumeUnit::Milliliters,
            Some("l") => VolumeUnit::Liters,
            Some("ul") | Some("µl") => VolumeUnit::Microliters,
            Some(other) => {
                return Err(field_error(
                    "data.volume_unit",
                    format!("`{other}`: must be \"ml\", \"l\" or \"ul\""),
                ));
            }
        };
        let one_char = |field: &str, v: &Option<String>, default: char| -> Result<char, DocumentError> {
            match v.as_deref() {
                None => Ok(default),
                Some("tab") => Ok('\t'),
                Some(s) if s.chars().count() == 1 => Ok(s.chars().next().unwrap_or(default)),
                Some(s) => Err(field_error(field, format!("`{s}`: must be one character (or \"tab\")"))),
            }
        };
        Ok(CsvLayout {
            volume: col(&self.volume_column, 1),
            signal: col(&self.signal_column, 2),
            signal_kind: signal,
            volume_unit: unit,
            delimiter: one_char("data.delimiter", &self.delimiter, ',')?,
            comment: one_char("data.comment", &self.comment, '#')?,
        })
    }
}

/// The analyte: what the content is reported as.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct AnalyteDoc {
    /// Its name as reported (a catalogue reagent gives its molar mass).
    pub name: String,
    /// Molar mass, g/mol (default: the catalogue reagent's).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub molar_mass_g_per_mol: Option<f64>,
    /// Moles of analyte per mole of titrant at the endpoint used (default 1).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub per_titrant: Option<f64>,
}

/// A weighed sample made up to volume.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SampleDoc {
    /// Sample mass, g.
    pub mass_g: f64,
    /// Standard uncertainty of the mass from the balance, g (default 0.0001).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub balance_standard_uncertainty_g: Option<f64>,
    /// The volumetric flask it was made up in, mL.
    pub made_up_to_ml: f64,
}

/// The model fit on the same data: the solutions as believed and what to estimate.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ModelDoc {
    /// Activity model (default Davies).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub activity: Option<ActivityDoc>,
    /// The analyte as believed (its `volume_ml` defaults to the aliquot).
    pub analyte: SolutionDoc,
    /// The titrant as believed.
    pub titrant: SolutionDoc,
    /// What to estimate.
    pub estimate: Vec<UnknownDoc>,
    /// Your own definitions.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub definitions: Option<DefinitionsDoc>,
}

/// A measured titration to analyse (`protolyte-measured/1`).
///
/// ```
/// use protolyte::document::{MeasuredDoc, parse};
/// let doc: MeasuredDoc = parse(r#"{"format": "protolyte-measured/1",
///   "data": {"file": "run.csv"}, "aliquot_ml": 25, "titrant_molar": 0.1,
///   "titrant_standard_uncertainty_molar": 0.0002,
///   "analyte": {"name": "acetic acid"}}"#, "m.json")?;
/// assert_eq!(doc.burette_ml, None);
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct MeasuredDoc {
    /// `"protolyte-measured/1"`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub format: Option<String>,
    /// A label of your own.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub name: Option<String>,
    /// The data file and its layout.
    pub data: DataDoc,
    /// Temperature of the titration, °C (default 25).
    #[serde(default = "default_celsius")]
    pub temperature_celsius: f64,
    /// The electrode calibration (needed when the signal is in mV).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub calibration: Option<CalibrationDoc>,
    /// The aliquot titrated, mL (a one-mark pipette).
    pub aliquot_ml: f64,
    /// The titrant's concentration, mol/L.
    pub titrant_molar: f64,
    /// Its standard uncertainty from the standardisation, mol/L.
    pub titrant_standard_uncertainty_molar: f64,
    /// The burette's capacity, mL (default 50).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub burette_ml: Option<f64>,
    /// Glassware class, `"A"` (default) or `"B"`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub glass_class: Option<String>,
    /// The analyte.
    pub analyte: AnalyteDoc,
    /// The weighed sample the aliquot came from, for % w/w.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub sample: Option<SampleDoc>,
    /// Which derivative endpoint to report (1-based, by volume; default the steepest).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub endpoint: Option<usize>,
    /// The method the content is computed from: `"gran-after"` (default), `"gran-before"` or
    /// `"derivative"`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub report: Option<String>,
    /// Half-width k of the derivative smoothing window (2k + 1 points; default 2, 0 for none).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub smoothing_half_window: Option<usize>,
    /// The model fit on the same data.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub model: Option<ModelDoc>,
}

/// A Gran line in a result.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct GranResult {
    /// The function: "v·10^-pH", "(V0+v)·10^-pH", "(V0+v)·10^pH" or "v·10^pH".
    pub function: String,
    /// The window used (automatic), mL.
    pub window_ml: [f64; 2],
    /// Points in it.
    pub points: usize,
    /// The endpoint, mL.
    pub endpoint_ml: f64,
    /// Its standard error from the regression, mL.
    pub endpoint_standard_error_ml: f64,
    /// r² of the line.
    pub r_squared: f64,
}

fn gran_result(s: &GranSide) -> GranResult {
    GranResult {
        function: match s.fit.function {
            GranFunction::WeakAcidBuffer => "v·10^-pH",
            GranFunction::ExcessAcid => "(V0+v)·10^-pH",
            GranFunction::ExcessBase => "(V0+v)·10^pH",
            GranFunction::WeakBaseBuffer => "v·10^pH",
        }
        .into(),
        window_ml: [s.window_ml.0, s.window_ml.1],
        points: s.fit.points,
        endpoint_ml: s.fit.endpoint_ml,
        endpoint_standard_error_ml: s.endpoint_standard_error_ml,
        r_squared: s.fit.r_squared,
    }
}

/// A derivative endpoint in a result.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct DerivativeResult {
    /// Where the second derivative crosses zero, mL.
    pub volume_ml: f64,
    /// The point of the largest first derivative, mL.
    pub first_derivative_volume_ml: f64,
    /// pH there.
    pub ph: f64,
    /// |dpH/dV| there, per mL.
    pub slope_per_ml: f64,
}

impl From<&DerivativeEndpoint> for DerivativeResult {
    fn from(e: &DerivativeEndpoint) -> Self {
        DerivativeResult {
            volume_ml: e.volume_ml,
            first_derivative_volume_ml: e.first_derivative_volume_ml,
            ph: e.ph,
            slope_per_ml: e.slope_per_ml,
        }
    }
}

/// One line of the uncertainty budget.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct BudgetResult {
    /// The input.
    pub source: String,
    /// Its value.
    pub value: f64,
    /// Its standard uncertainty.
    pub standard_uncertainty: f64,
    /// Relative standard uncertainty.
    pub relative: f64,
    /// Share of the combined variance.
    pub share: f64,
    /// Where the uncertainty comes from.
    pub basis: String,
}

/// A content value with its expanded uncertainty.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct ValueResult {
    /// The value.
    pub value: f64,
    /// Expanded uncertainty (k = 2).
    pub expanded_uncertainty: f64,
}

/// The analysis of a measured titration.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct MeasuredResult {
    /// `"protolyte-result/1"`.
    #[serde(default = "result_format")]
    pub format: String,
    /// The request's label.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub name: Option<String>,
    /// The calibration, when the data were potentials.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub calibration: Option<CalibrationResult>,
    /// The measured curve as pH: [volume mL, pH] pairs.
    pub points: Vec<[f64; 2]>,
    /// The smoothing of the derivative method: "local quadratic over N points" or "none".
    pub smoothing: String,
    /// Endpoints by the derivative method.
    pub derivative_endpoints: Vec<DerivativeResult>,
    /// The Gran line before the endpoint reported.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub gran_before: Option<GranResult>,
    /// The Gran line after it.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub gran_after: Option<GranResult>,
    /// The method the content was computed from.
    pub reported_method: String,
    /// The endpoint used, mL.
    pub endpoint_ml: f64,
    /// The analyte's name.
    pub analyte: String,
    /// Content in the aliquot, mol/L.
    pub mol_per_l: ValueResult,
    /// g/L.
    pub g_per_l: ValueResult,
    /// g/100 mL.
    pub g_per_100_ml: ValueResult,
    /// % w/w of the weighed sample.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub percent_w_w: Option<ValueResult>,
    /// Relative combined standard uncertainty.
    pub relative_standard_uncertainty: f64,
    /// The budget, largest share first.
    pub budget: Vec<BudgetResult>,
    /// The model fit on the same data.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub fit: Option<FitResult>,
    /// Warnings, as sentences.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub warnings: Vec<String>,
}

impl MeasuredDoc {
    /// Checks the format tag (`required`: refuse a document without one).
    pub fn check_format(&self, required: bool) -> Result<(), DocumentError> {
        check_format(self.format.as_deref(), MEASURED_FORMAT, required)
    }

    /// Analyses the CSV `text` of the data file as this request says: calibration, derivative
    /// and Gran endpoints, the content with its uncertainty budget and, when asked, the model
    /// fit. `catalog` supplies a catalogue reagent's molar mass and the model's names.
    ///
    /// ```
    /// use protolyte::Catalog;
    /// use protolyte::document::{MeasuredDoc, parse};
    /// // An invented strong acid (HCl) check: 25 mL with 0.1 mol/L NaOH, endpoint at 12.5 mL.
    /// let mut csv = String::from("v,ph\n");
    /// for i in 1..=50 {
    ///     let v = 0.5 * i as f64;
    ///     if v == 12.5 { continue; }
    ///     let x = 0.1 * (v - 12.5) / (25.0 + v);
    ///     csv += &format!("{v},{}\n", if x < 0.0 { -(-x).log10() } else { 14.0 + x.log10() });
    /// }
    /// let doc: MeasuredDoc = parse(r#"{"format": "protolyte-measured/1", "data": {"file": "x.csv"},
    ///   "aliquot_ml": 25, "titrant_molar": 0.1, "titrant_standard_uncertainty_molar": 0.0001,
    ///   "analyte": {"name": "hydrochloric acid", "molar_mass_g_per_mol": 36.46}}"#, "m.json")?;
    /// let r = doc.analyze(&csv, &Catalog::builtin())?;
    /// assert!((r.endpoint_ml - 12.5).abs() < 1e-6);
    /// assert!((r.mol_per_l.value - 0.05).abs() < 1e-8);
    /// # Ok::<(), Box<dyn std::error::Error>>(())
    /// ```
    pub fn analyze(&self, text: &str, catalog: &Catalog) -> Result<MeasuredResult, DocumentError> {
        let t = Temperature::celsius(self.temperature_celsius);
        crate::error::check_temperature(t).map_err(|e| field_error("temperature_celsius", e))?;
        let layout = self.data.layout()?;
        let file = &self.data.file;
        let raw = read_csv(text, &layout).map_err(|e| DocumentError::Read {
            file: file.clone(),
            message: e.to_string(),
        })?;
        let mut warnings = Vec::new();
        let (curve, calibration) = match (raw.signal, &self.calibration) {
            (Signal::Ph, _) => (raw, None),
            (Signal::Millivolts, None) => {
                return Err(field_error(
                    "calibration",
                    "missing: the data are potentials (mV); give the buffer readings to convert them to pH",
                ));
            }
            (Signal::Millivolts, Some(c)) => {
                let cal = c.to_calibration().map_err(|e| match e {
                    DocumentError::Field { field, message, .. } => field_error(format!("calibration.{field}"), message),
                    other => other,
                })?;
                warnings.extend(cal.warnings.iter().map(|w| format!("calibration: {w}")));
                let ph = cal.curve_to_ph(&raw, t).map_err(|e| DocumentError::Read {
                    file: file.clone(),
                    message: e.to_string(),
                })?;
                (ph, Some(CalibrationResult::from(&cal)))
            }
        };
        let data = curve.points.clone();
        let k = self.smoothing_half_window.unwrap_or(DEFAULT_HALF_WINDOW);
        if k > 10 {
            return Err(field_error("smoothing_half_window", format!("{k}: must be 0..=10")));
        }
        let method_error = |field: &str, e: crate::analysis::measured::MeasuredError| field_error(field, e);
        let derivative = smoothed_endpoints(&data, k, 0.2).map_err(|e| method_error("data", e))?;
        if derivative.is_empty() {
            return Err(field_error(
                "data",
                "the derivative method finds no endpoint in the data",
            ));
        }
        let chosen = match self.endpoint {
            Some(n) if n >= 1 && n <= derivative.len() => derivative[n - 1],
            Some(n) => {
                return Err(field_error(
                    "endpoint",
                    format!("{n}: the derivative method finds {} endpoint(s)", derivative.len()),
                ));
            }
            None => *derivative
                .iter()
                .max_by(|a, b| a.slope_per_ml.total_cmp(&b.slope_per_ml))
                .unwrap_or(&derivative[0]),
        };
        let v0 = self.aliquot_ml;
        if !(v0.is_finite() && v0 > 0.0) {
            return Err(field_error("aliquot_ml", format!("{v0}: must be positive")));
        }
        let gran = gran_both_sides(&data, v0, chosen.volume_ml).ok();
        let (before, after) = match &gran {
            Some(g) => (g.before, g.after),
            None => (None, None),
        };
        // The derivative endpoint's uncertainty: the spacing of the points around it, as
        // a rectangular half-width (GUM 4.3.7).
        let spacing = data
            .windows(2)
            .find(|w| chosen.volume_ml >= w[0].0 && chosen.volume_ml <= w[1].0)
            .map(|w| w[1].0 - w[0].0)
            .unwrap_or(0.0);
        let method = self.report.as_deref().unwrap_or("gran-after");
        let (endpoint, u_endpoint, basis) = match method {
            "gran-after" | "gran-before" => {
                let side = if method == "gran-after" { after } else { before };
                let s = side.ok_or_else(|| {
                    field_error(
                        "report",
                        format!(
                            "`{method}`: no Gran window of 4 points on that side of {:.3} mL",
                            chosen.volume_ml
                        ),
                    )
                })?;
                (
                    s.fit.endpoint_ml,
                    s.endpoint_standard_error_ml,
                    "standard error of the Gran line's intercept".to_string(),
                )
            }
            "derivative" => (
                chosen.volume_ml,
                0.5 * spacing / 3f64.sqrt(),
                "half the point spacing at the endpoint, rectangular (GUM 4.3.7)".to_string(),
            ),
            other => {
                return Err(field_error(
                    "report",
                    format!("`{other}`: must be \"gran-after\", \"gran-before\" or \"derivative\""),
                ));
            }
        };
        if let (Some(b), Some(a)) = (before, after) {
            let d = (a.fit.endpoint_ml - b.fit.endpoint_ml).abs();
            let u = (a.endpoint_standard_error_ml.powi(2) + b.endpoint_standard_error_ml.powi(2)).sqrt();
            if d > 3.0 * u && d > 0.002 * endpoint {
                warnings.push(format!(
                    "the Gran endpoints before and after differ by {d:.3} mL, more than their standard errors allow: check for carbonate in the titrant, drift of the electrode or a second acid"
                ));
            }
        }
        let class = match self.glass_class.as_deref() {
            None | Some("A") | Some("a") => GlassClass::A,
            Some("B") | Some("b") => GlassClass::B,
            Some(other) => return Err(field_error("glass_class", format!("`{other}`: must be \"A\" or \"B\""))),
        };
        let class_name = if class == GlassClass::A { "A" } else { "B" };
        let burette = self.burette_ml.unwrap_or(50.0);
        let tb = burette_tolerance_ml(burette, class).ok_or_else(|| {
            field_error(
                "burette_ml",
                format!("{burette} mL: no tolerance in ISO 385 for this size (5, 10, 25, 50 or 100 mL)"),
            )
        })?;
        let tp = pipette_tolerance_ml(v0, class).ok_or_else(|| {
            field_error(
                "aliquot_ml",
                format!("{v0} mL: no one-mark pipette of this size in ISO 648 (1, 2, 5, 10, 20, 25, 50, 100, 200 mL)"),
            )
        })?;
        let molar_mass = match self.analyte.molar_mass_g_per_mol {
            Some(m) => m,
            None => catalog
                .reagent(&self.analyte.name)
                .ok()
                .and_then(|r| r.molar_mass_g_per_mol())
                .ok_or_else(|| {
                    field_error(
                        "analyte.molar_mass_g_per_mol",
                        format!(
                            "missing: `{}` is not a catalogue reagent with a molar mass",
                            self.analyte.name
                        ),
                    )
                })?,
        };
        let mut bases = vec![
            ("endpoint (method)", basis),
            (
                "burette",
                format!("ISO 385 class {class_name}, {burette} mL: ±{tb} mL, rectangular"),
            ),
            ("titrant concentration", "standardisation, as given".to_string()),
            (
                "aliquot (pipette)",
                format!("ISO 648 class {class_name}, {v0} mL: ±{tp} mL, rectangular"),
            ),
        ];
        let sample = match &self.sample {
            None => None,
            Some(s) => {
                let tf = flask_tolerance_ml(s.made_up_to_ml, class).ok_or_else(|| {
                    field_error(
                        "sample.made_up_to_ml",
                        format!("{} mL: no one-mark flask of this size in ISO 1042", s.made_up_to_ml),
                    )
                })?;
                let ub = s.balance_standard_uncertainty_g.unwrap_or(1e-4);
                bases.push((
                    "sample mass (balance)",
                    format!("balance, ±{ub} g standard uncertainty"),
                ));
                bases.push((
                    "made-up volume (flask)",
                    format!(
                        "ISO 1042 class {class_name}, {} mL: ±{tf} mL, rectangular",
                        s.made_up_to_ml
                    ),
                ));
                Some(Sample {
                    mass_g: s.mass_g,
                    mass_standard_uncertainty_g: ub,
                    made_up_to_ml: s.made_up_to_ml,
                    made_up_standard_uncertainty_ml: tf / 3f64.sqrt(),
                })
            }
        };
        let c = content(&ContentInputs {
            endpoint_ml: endpoint,
            endpoint_standard_uncertainty_ml: u_endpoint,
            burette_standard_uncertainty_ml: tb / 3f64.sqrt(),
            titrant_molar: self.titrant_molar,
            titrant_standard_uncertainty_molar: self.titrant_standard_uncertainty_molar,
            aliquot_ml: v0,
            aliquot_standard_uncertainty_ml: tp / 3f64.sqrt(),
            analyte_per_titrant: self.analyte.per_titrant.unwrap_or(1.0),
            molar_mass_g_per_mol: molar_mass,
            sample,
        })
        .map_err(|e| field_error("titrant_molar", e))?;
        let value = |x: f64| ValueResult {
            value: x,
            expanded_uncertainty: c.expanded(x),
        };
        let fit = match &self.model {
            None => None,
            Some(m) => {
                let mut analyte = m.analyte.clone();
                analyte.volume_ml = analyte.volume_ml.or(Some(v0));
                let doc = FitDoc {
                    format: Some(FIT_FORMAT.into()),
                    name: None,
                    temperature_celsius: Some(self.temperature_celsius),
                    activity: m.activity,
                    ph_convention: None,
                    curves: vec![FitCurveDoc {
                        analyte,
                        titrant: m.titrant.clone(),
                        measured: data.iter().map(|&(v, ph)| MeasuredPoint { volume_ml: v, ph }).collect(),
                    }],
                    estimate: m.estimate.clone(),
                    max_iterations: None,
                    complexes: Vec::new(),
                    include_catalog_complexes: false,
                    definitions: m.definitions.clone(),
                };
                let f = doc.to_fit(catalog).map_err(|e| match e {
                    DocumentError::Field { field, message, .. } => {
                        let field = field.replace("curves[0].", "");
                        field_error(format!("model.{field}"), message)
                    }
                    other => other,
                })?;
                let report = f.run().map_err(|e| field_error("model", e))?;
                warnings.extend(report.warnings().into_iter().map(|w| format!("model fit: {w}")));
                Some(FitResult::from(&report))
            }
        };
        Ok(MeasuredResult {
            format: result_format(),
            name: self.name.clone(),
            calibration,
            points: data.iter().map(|&(v, ph)| [v, ph]).collect(),
            smoothing: if k == 0 {
                "none (plain differences)".into()
            } else {
                format!(
                    "local quadratic least squares over {} points (Savitzky–Golay)",
                    2 * k + 1
                )
            },
            derivative_endpoints: derivative.iter().map(Into::into).collect(),
            gran_before: before.as_ref().map(gran_result),
            gran_after: after.as_ref().map(gran_result),
            reported_method: method.into(),
            endpoint_ml: endpoint,
            analyte: self.analyte.name.clone(),
            mol_per_l: value(c.mol_per_l),
            g_per_l: value(c.g_per_l),
            g_per_100_ml: value(c.g_per_100_ml),
            percent_w_w: c.percent_w_w.map(value),
            relative_standard_uncertainty: c.relative_standard_uncertainty,
            budget: c
                .budget
                .iter()
                .map(|b| BudgetResult {
                    source: b.source.clone(),
                    value: b.value,
                    standard_uncertainty: b.standard_uncertainty,
                    relative: b.relative,
                    share: b.share,
                    basis: bases
                        .iter()
                        .find(|x| x.0 == b.source)
                        .map(|x| x.1.clone())
                        .unwrap_or_default(),
                })
                .collect(),
            fit,
            warnings,
        })
    }
}
