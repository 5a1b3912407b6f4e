//! A measured titration curve from CSV text.
//!
//! The text holds one point a line: a titrant volume and a signal (pH, or the electrode's
//! potential in mV). Lines starting with the comment character (after blanks) and blank
//! lines are skipped; the first line read may be a header naming the columns. Fields may be
//! quoted with `"`. With a delimiter other than `,` (`;` or a tab), a decimal comma is read
//! as a decimal point.

use super::{MeasuredError, MeasuredResult};

/// What the signal column holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Signal {
    /// pH as the meter shows it.
    Ph,
    /// Electrode potential, mV (converted to pH by a [calibration](super::calibration)).
    Millivolts,
}

/// The unit of the volume column.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum VolumeUnit {
    /// Millilitres.
    Milliliters,
    /// Litres.
    Liters,
    /// Microlitres.
    Microliters,
}

impl VolumeUnit {
    /// Millilitres per unit.
    pub fn to_ml(self) -> f64 {
        match self {
            VolumeUnit::Milliliters => 1.0,
            VolumeUnit::Liters => 1000.0,
            VolumeUnit::Microliters => 1e-3,
        }
    }
}

/// A column: by its header name (compared without regard to case and surrounding blanks) or
/// by its 1-based number.
#[derive(Debug, Clone, PartialEq, Eq, Hash)]
pub enum Column {
    /// By header name.
    Name(String),
    /// By 1-based number.
    Number(usize),
}

impl std::fmt::Display for Column {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Column::Name(n) => write!(f, "`{n}`"),
            Column::Number(k) => write!(f, "{k}"),
        }
    }
}

/// How to read the CSV text.
///
/// ```
/// use protolyte::analysis::measured::csv::{Column, CsvLayout, Signal, VolumeUnit};
/// let l = CsvLayout::default();
/// assert_eq!(l.volume, Column::Number(1));
/// assert_eq!(l.signal_kind, Signal::Ph);
/// assert_eq!(l.volume_unit, VolumeUnit::Milliliters);
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct CsvLayout {
    /// The volume column (default: the first).
    pub volume: Column,
    /// The signal column (default: the second).
    pub signal: Column,
    /// What the signal is (default pH).
    pub signal_kind: Signal,
    /// The volume unit (default mL).
    pub volume_unit: VolumeUnit,
    /// The field delimiter (default `,`).
    pub delimiter: char,
    /// The comment character (default `#`).
    pub comment: char,
}

impl Default for CsvLayout {
    fn default() -> Self {
        CsvLayout {
            volume: Column::Number(1),
            signal: Column::Number(2),
            signal_kind: Signal::Ph,
            volume_unit: VolumeUnit::Milliliters,
            delimiter: ',',
            comment: '#',
        }
    }
}

/// A measured curve: volumes (mL, increasing) and signals, with the line each came from.
#[derive(Debug, Clone, PartialEq)]
pub struct MeasuredCurve {
    /// What the signal is.
    pub signal: Signal,
    /// (volume mL, signal) in file order; volumes increase strictly.
    pub points: Vec<(f64, f64)>,
    /// The 1-based line of each point.
    pub lines: Vec<usize>,
}

impl MeasuredCurve {
    /// The (volume mL, pH) pairs; refused when the signal is a potential (convert it with
    /// [`ElectrodeCalibration::curve_to_ph`](super::calibration::ElectrodeCalibration::curve_to_ph)
    /// first).
    pub fn ph_pairs(&self) -> MeasuredResult<Vec<(f64, f64)>> {
        match self.signal {
            Signal::Ph => Ok(self.points.clone()),
            Signal::Millivolts => Err(MeasuredError::Method {
                method: "measured curve".into(),
                reason: "the signal is a potential in mV: calibrate the electrode to read it as pH".into(),
            }),
        }
    }
}

/// Splits one line into fields (double quotes group a field; `""` inside quotes is a quote).
fn fields(line: &str, delimiter: char) -> Result<Vec<String>, String> {
    let mut out = Vec::new();
    let mut cur = String::new();
    let mut quoted = false;
    let mut chars = line.chars().peekable();
    while let Some(c) = chars.next() {
        if quoted {
            if c == '"' {
                if chars.peek() == Some(&'"') {
                    cur.push('"');
                    chars.next();
                } else {
                    quoted = false;
                }
            } else {
                cur.push(c);
            }
        } else if c == '"' {
            quoted = true;
        } else if c == delimiter {
            out.push(std::mem::take(&mut cur));
        } else {
            cur.push(c);
        }
    }
    if quoted {
        return Err("a quoted field is not closed".into());
    }
    out.push(cur);
    Ok(out.into_iter().map(|f| f.trim().to_string()).collect())
}

fn number(field: &str, delimiter: char) -> Option<f64> {
    let f = if delimiter != ',' {
        field.replace(',', ".")
    } else {
        field.to_string()
    };
    f.parse::<f64>().ok().filter(|x| x.is_finite())
}

/// Reads a measured curve from CSV `text` laid out as `layout`.
///
/// Errors name the line: a field that is not a number, a missing column, a negative volume,
/// a volume that does not increase; a column asked for by name needs a header line. At
/// least two points are needed.
///
/// ```
/// use protolyte::analysis::measured::csv::{Column, CsvLayout, Signal, read_csv};
/// let text = "# burette readings, invented\n\"V (mL)\";\"E (mV)\";T\n0,00;210,4;25\n1,00;190,2;25\n2,00;171,9;25\n";
/// let layout = CsvLayout {
///     volume: Column::Name("V (mL)".into()),
///     signal: Column::Name("E (mV)".into()),
///     signal_kind: Signal::Millivolts,
///     delimiter: ';',
///     ..CsvLayout::default()
/// };
/// let c = read_csv(text, &layout)?;
/// assert_eq!(c.points, vec![(0.0, 210.4), (1.0, 190.2), (2.0, 171.9)]);
/// assert_eq!(c.lines, vec![3, 4, 5]);
/// let bad = read_csv("v,ph\n1,4.0\n2,x\n", &CsvLayout::default()).unwrap_err();
/// assert!(bad.to_string().starts_with("line 3:"));
/// # Ok::<(), protolyte::analysis::measured::MeasuredError>(())
/// ```
pub fn read_csv(text: &str, layout: &CsvLayout) -> MeasuredResult<MeasuredCurve> {
    let d = layout.delimiter;
    let mut header: Option<Vec<String>> = None;
    let mut first = true;
    let mut points: Vec<(f64, f64)> = Vec::new();
    let mut lines = Vec::new();
    let index_of = |col: &Column, header: &Option<Vec<String>>| -> MeasuredResult<usize> {
        match col {
            Column::Number(0) => Err(MeasuredError::Column {
                column: "0".into(),
                reason: "columns are numbered from 1".into(),
            }),
            Column::Number(k) => Ok(k - 1),
            Column::Name(n) => match header {
                Some(h) => h
                    .iter()
                    .position(|x| x.trim().eq_ignore_ascii_case(n.trim()))
                    .ok_or_else(|| MeasuredError::Column {
                        column: format!("`{n}`"),
                        reason: format!("not in the header ({})", h.join(", ")),
                    }),
                None => Err(MeasuredError::Column {
                    column: format!("`{n}`"),
                    reason: "a column named needs a header line, and the first line read holds numbers".into(),
                }),
            },
        }
    };
    for (i, raw) in text.lines().enumerate() {
        let line_no = i + 1;
        let line = raw.trim_start_matches('\u{feff}').trim();
        if line.is_empty() || line.starts_with(layout.comment) {
            continue;
        }
        let f = fields(line, d).map_err(|reason| MeasuredError::Line { line: line_no, reason })?;
        if first {
            first = false;
            // A header when any field of the line is not a number.
            if f.iter().any(|x| number(x, d).is_none()) {
                header = Some(f);
                continue;
            }
        }
        let (vi, si) = (index_of(&layout.volume, &header)?, index_of(&layout.signal, &header)?);
        let get = |k: usize, what: &str| -> MeasuredResult<f64> {
            let field = f.get(k).ok_or_else(|| MeasuredError::Line {
                line: line_no,
                reason: format!("no column {} for the {what} ({} fields on the line)", k + 1, f.len()),
            })?;
            number(field, d).ok_or_else(|| MeasuredError::Line {
                line: line_no,
                reason: format!("the {what} `{}` is not a number", crate::error::quote(field)),
            })
        };
        let v = get(vi, "volume")? * layout.volume_unit.to_ml();
        let s = get(si, "signal")?;
        if v < 0.0 {
            return Err(MeasuredError::Line {
                line: line_no,
                reason: format!("the volume {v} mL is negative"),
            });
        }
        if let Some(&(prev, _)) = points.last()
            && v <= prev
        {
            return Err(MeasuredError::Line {
                line: line_no,
                reason: format!("the volume {v} mL does not increase (the line before has {prev} mL)"),
            });
        }
        if layout.signal_kind == Signal::Ph && !(-4.0..=20.0).contains(&s) {
            return Err(MeasuredError::Line {
                line: line_no,
                reason: format!("the pH {s} is outside −4..20"),
            });
        }
        points.push((v, s));
        lines.push(line_no);
    }
    if points.len() < 2 {
        return Err(MeasuredError::Method {
            method: "measured curve".into(),
            reason: format!("at least 2 points are needed, the text holds {}", points.len()),
        });
    }
    Ok(MeasuredCurve {
        signal: layout.signal_kind,
        points,
        lines,
    })
}
