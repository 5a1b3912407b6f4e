//! SVG plots (feature `plot`): a titration curve with its equivalence points and dpH/dV, a
//! distribution diagram (fraction of each form of each family against pH), buffer capacity
//! against pH, and the saturation index of each solid against pH.
//!
//! Every plot is a function of data the library computed; nothing here re-derives chemistry.
//! The distribution diagram is computed by [`distribution`], which brings the solution to each
//! pH with strong acid or base (an inert monovalent ion with H⁺ or OH⁻, as
//! [`CapacityCurve`] does) and reads the alpha fractions of the solved
//! [`Equilibrium`](crate::Equilibrium).
//!
//! The SVG is drawn with the `plotters` crate's SVG backend, without its font features: text is
//! written as SVG `<text>` in a generic sans-serif family and shaped by whatever renders the
//! SVG, so no font is needed to make a plot. Points with a non-finite value are left out; a plot
//! with nothing finite to show is an error, never a panic.
//!
//! # Example
//!
//! ```
//! use protolyte::analysis::Titration;
//! use protolyte::plot::{PlotOptions, titration_svg};
//! use protolyte::{Amount, Catalog, Conditions, Recipe, Volume};
//!
//! let cat = Catalog::builtin();
//! let mut acid = Recipe::new();
//! acid.add(&cat.reagent("acetic acid")?, Amount::molar(0.1))?;
//! let mut base = Recipe::new();
//! base.add(&cat.reagent("sodium hydroxide")?, Amount::molar(0.1))?;
//! let t = Titration::new(&acid, Volume::milliliters(25.0), &base, &Conditions::default())?;
//! let curve = t.curve_uniform(Volume::milliliters(40.0), 161)?;
//! let eps = t.equivalence_points()?;
//! let svg = titration_svg(&curve, &eps, &PlotOptions::new().title("Acetic acid with NaOH"))?;
//! assert!(svg.starts_with("<svg") && svg.contains("titrant volume / mL"));
//! # Ok::<(), Box<dyn std::error::Error>>(())
//! ```

use std::fmt::Write as _;
use std::path::Path;

use plotters::coord::Shift;
use plotters::prelude::*;

use crate::analysis::{
    CapacityCurve, CapacityPeak, CapacityPoint, EquivalencePoint, Stepping, Titration, TitrationPoint,
};
use crate::{Amount, Conditions, Constituent, Ion, Reagent, Recipe, Solver, System, Volume};

/// Why a plot could not be made or written.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum PlotError {
    /// There was nothing (finite) to plot.
    #[error("nothing to plot: {0}")]
    NoData(&'static str),
    /// An option was out of range.
    #[error("invalid plot option {option}: {reason}")]
    InvalidOption {
        /// The option.
        option: &'static str,
        /// Why it was refused.
        reason: &'static str,
    },
    /// The library failed while computing the data of the plot.
    #[error(transparent)]
    Compute(#[from] crate::Error),
    /// The drawing backend failed.
    #[error("drawing failed: {0}")]
    Drawing(String),
    /// The SVG file could not be written.
    #[error("cannot write {path}: {message}")]
    Write {
        /// The file.
        path: String,
        /// The system's message.
        message: String,
    },
}

/// `Result` with [`PlotError`].
pub type PlotResult<T> = std::result::Result<T, PlotError>;

fn drawing<E: std::fmt::Debug>(e: E) -> PlotError {
    PlotError::Drawing(format!("{e:?}"))
}

/// Size, title and marks shared by every plot.
///
/// ```
/// use protolyte::plot::PlotOptions;
///
/// let o = PlotOptions::new().size(800, 500).title("Run 3").mark_ph(7.2);
/// assert_eq!((o.width, o.height), (800, 500));
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct PlotOptions {
    /// Width in pixels (SVG user units), 320..=4000.
    pub width: u32,
    /// Height in pixels of one panel, 240..=4000 (a distribution diagram stacks one panel per
    /// family).
    pub height: u32,
    /// Title drawn above the plot.
    pub title: Option<String>,
    /// A pH to mark with a vertical line on the distribution and capacity plots (e.g. the
    /// solution's own pH).
    pub mark_ph: Option<f64>,
}

impl Default for PlotOptions {
    fn default() -> Self {
        PlotOptions {
            width: 900,
            height: 560,
            title: None,
            mark_ph: None,
        }
    }
}

impl PlotOptions {
    /// 900 × 560, no title, no mark.
    pub fn new() -> Self {
        Self::default()
    }

    /// Sets the size in pixels.
    pub fn size(mut self, width: u32, height: u32) -> Self {
        self.width = width;
        self.height = height;
        self
    }

    /// Sets the title.
    pub fn title(mut self, title: impl Into<String>) -> Self {
        self.title = Some(title.into());
        self
    }

    /// Marks a pH on the distribution and capacity plots (a pH outside the plotted range is
    /// not drawn; a pH that is not finite is refused when plotting).
    pub fn mark_ph(mut self, ph: f64) -> Self {
        self.mark_ph = Some(ph);
        self
    }

    fn check(&self) -> PlotResult<()> {
        if !(320..=4000).contains(&self.width) {
            return Err(PlotError::InvalidOption {
                option: "width",
                reason: "must be within 320..=4000 pixels",
            });
        }
        if !(240..=4000).contains(&self.height) {
            return Err(PlotError::InvalidOption {
                option: "height",
                reason: "must be within 240..=4000 pixels",
            });
        }
        if self.mark_ph.is_some_and(|p| !p.is_finite()) {
            return Err(PlotError::InvalidOption {
                option: "mark_ph",
                reason: "must be a finite pH",
            });
        }
        Ok(())
    }
}

/// Writes an SVG document to a file.
///
/// ```no_run
/// # let svg = String::new();
/// protolyte::plot::write_svg("curve.svg", &svg)?;
/// # Ok::<(), protolyte::plot::PlotError>(())
/// ```
pub fn write_svg(path: impl AsRef<Path>, svg: &str) -> PlotResult<()> {
    let path = path.as_ref();
    std::fs::write(path, svg).map_err(|e| PlotError::Write {
        path: path.display().to_string(),
        message: e.to_string(),
    })
}

// ---------------------------------------------------------------------------------------
// Style: our own neutral palette and type sizes.

const FONT: &str = "sans-serif";
// Nominal sizes: the SVG backend writes text at these / 1.24.
const TITLE_PX: u32 = 23;
const AXIS_PX: u32 = 19;
const TICK_PX: u32 = 16;
const NOTE_PX: u32 = 16;
const INK: RGBColor = RGBColor(40, 40, 46);
const GRID: RGBColor = RGBColor(226, 228, 232);
const GRID_MINOR: RGBColor = RGBColor(243, 244, 246);
/// Series colours, chosen to stay apart in hue and lightness.
const PALETTE: [RGBColor; 8] = [
    RGBColor(31, 92, 153),
    RGBColor(214, 111, 38),
    RGBColor(52, 140, 93),
    RGBColor(150, 62, 130),
    RGBColor(170, 140, 20),
    RGBColor(64, 160, 190),
    RGBColor(160, 60, 50),
    RGBColor(90, 90, 100),
];
const MARK: RGBColor = RGBColor(110, 110, 120);
const SLOPE: RGBColor = RGBColor(214, 111, 38);

fn colour(i: usize) -> RGBColor {
    PALETTE[i % PALETTE.len()]
}

fn text_width(s: &str, px: u32) -> i32 {
    (s.chars().count() as f64 * px as f64 * 0.47).ceil() as i32
}

/// One legend entry: a line (solid or dashed) or a marker, and its text.
struct LegendEntry {
    text: String,
    colour: RGBColor,
    kind: LegendKind,
}

impl LegendEntry {
    /// Room for the icon before the text.
    fn icon_width(&self) -> i32 {
        if matches!(self.kind, LegendKind::Note) { 0 } else { 30 }
    }
}

#[derive(Clone, Copy)]
enum LegendKind {
    Line,
    Dashed,
    Dot,
    Ring,
    Triangle,
    /// Text only.
    Note,
}

/// Draws the title (if any) and the legend entries into `area`, left to right, wrapping to a
/// new row when the width runs out (as [`header_height`] counts).
fn header(
    area: &DrawingArea<SVGBackend<'_>, Shift>,
    title: Option<&str>,
    entries: &[LegendEntry],
    left: i32,
) -> PlotResult<()> {
    let (w, _) = area.dim_in_pixel();
    let mut y = 6;
    if let Some(t) = title {
        let style = TextStyle::from((FONT, TITLE_PX).into_font()).color(&INK);
        area.draw(&Text::new(t.to_string(), (left, y), style))
            .map_err(drawing)?;
        y += TITLE_PX as i32 + 10;
    }
    let style = TextStyle::from((FONT, NOTE_PX).into_font()).color(&INK);
    let mut x = left;
    for e in entries {
        let width = e.icon_width() + text_width(&e.text, NOTE_PX) + 18;
        if x + width > w as i32 - 8 && x > left {
            x = left;
            y += NOTE_PX as i32 + 8;
        }
        let cy = y + NOTE_PX as i32 / 2 + 1;
        let stroke = ShapeStyle::from(&e.colour).stroke_width(2);
        match e.kind {
            LegendKind::Line => area
                .draw(&PathElement::new(vec![(x, cy), (x + 24, cy)], stroke))
                .map_err(drawing)?,
            LegendKind::Dashed => {
                for k in 0..3 {
                    area.draw(&PathElement::new(vec![(x + k * 9, cy), (x + k * 9 + 6, cy)], stroke))
                        .map_err(drawing)?;
                }
            }
            LegendKind::Dot => area
                .draw(&Circle::new((x + 12, cy), 5, e.colour.filled()))
                .map_err(drawing)?,
            LegendKind::Ring => area
                .draw(&Circle::new(
                    (x + 12, cy),
                    5,
                    ShapeStyle::from(&e.colour).stroke_width(2),
                ))
                .map_err(drawing)?,
            LegendKind::Note => {}
            LegendKind::Triangle => area
                .draw(&Polygon::new(
                    vec![(x + 12, cy - 6), (x + 6, cy + 4), (x + 18, cy + 4)],
                    e.colour.filled(),
                ))
                .map_err(drawing)?,
        }
        area.draw(&Text::new(e.text.clone(), (x + e.icon_width(), y), style.clone()))
            .map_err(drawing)?;
        x += width;
    }
    Ok(())
}

fn header_height(title: bool, entries: &[LegendEntry], width: u32, left: i32) -> u32 {
    let mut h = 6 + if title { TITLE_PX + 10 } else { 0 };
    let mut x = left;
    let mut rows = 1;
    for e in entries {
        let w = e.icon_width() + text_width(&e.text, NOTE_PX) + 18;
        if x + w > width as i32 - 8 && x > left {
            x = left;
            rows += 1;
        }
        x += w;
    }
    if !entries.is_empty() {
        h += rows * (NOTE_PX + 8);
    }
    h + 6
}

/// A padded axis range around finite data; never empty.
fn span(lo: f64, hi: f64, pad: f64) -> (f64, f64) {
    if !(lo.is_finite() && hi.is_finite()) {
        return (0.0, 1.0);
    }
    let (lo, hi) = if lo <= hi { (lo, hi) } else { (hi, lo) };
    let d = hi - lo;
    if d <= f64::EPSILON * hi.abs().max(1.0) {
        let h = if lo == 0.0 { 1.0 } else { 0.1 * lo.abs() };
        (lo - h, hi + h)
    } else {
        (lo - pad * d, hi + pad * d)
    }
}

/// `span` with its ends rounded to 10⁻⁶, so that a sweep from 0 to 14 gets ticks at 0 and 14.
fn snapped(lo: f64, hi: f64, pad: f64) -> (f64, f64) {
    let (a, b) = span(lo, hi, pad);
    let r = |v: f64| (v * 1e6).round() / 1e6;
    let (ra, rb) = (r(a), r(b));
    if ra < rb { (ra, rb) } else { (a, b) }
}

/// Decimals enough to tell ticks apart over a range of `d`.
fn decimals(d: f64) -> usize {
    if !(d.is_finite() && d > 0.0) {
        return 1;
    }
    let step = d / 8.0;
    (-step.log10().floor()).clamp(0.0, 8.0) as usize
}

fn tick(v: f64, dec: usize) -> String {
    if !v.is_finite() {
        return String::new();
    }
    let s = format!("{v:.dec$}");
    // No "-0" or "-0.00".
    if s.starts_with('-') && s[1..].chars().all(|c| c == '0' || c == '.') {
        s[1..].to_string()
    } else {
        s
    }
}

fn axis_desc(px: u32) -> TextStyle<'static> {
    TextStyle::from((FONT, px).into_font()).color(&INK)
}

fn note_style() -> TextStyle<'static> {
    TextStyle::from((FONT, NOTE_PX).into_font()).color(&INK)
}

/// A label box already placed, in pixels: (x0, y0, x1, y1).
type Placed = (i32, i32, i32, i32);

fn overlaps(a: Placed, b: Placed) -> bool {
    a.0 < b.2 && b.0 < a.2 && a.1 < b.3 && b.1 < a.3
}

/// Places a multi-line label of `lines` near anchor (ax, ay), preferring `dy_sign` (+1 below,
/// −1 above) and the right side, moving it away until it overlaps no placed label, covers no
/// point of `curves` (pixels) and stays inside `bounds`. Returns the top-left corner.
fn place_label(
    lines: &[String],
    (ax, ay): (i32, i32),
    dy_sign: i32,
    bounds: Placed,
    curves: &[(i32, i32)],
    placed: &mut Vec<Placed>,
) -> (i32, i32) {
    let w = lines.iter().map(|l| text_width(l, NOTE_PX)).max().unwrap_or(0) + 8;
    let h = lines.len() as i32 * (NOTE_PX as i32 + 3) + 4;
    let mut best = None;
    'search: for shift in 0..24 {
        for side in [1, -1] {
            for vert in [dy_sign, -dy_sign] {
                let x0 = if side > 0 { ax + 8 } else { ax - 8 - w };
                let y0 = if vert > 0 {
                    ay + 10 + shift * (h / 2 + 2)
                } else {
                    ay - 10 - h - shift * (h / 2 + 2)
                };
                let bx = (x0, y0, x0 + w, y0 + h);
                if bx.0 < bounds.0 || bx.2 > bounds.2 || bx.1 < bounds.1 || bx.3 > bounds.3 {
                    continue;
                }
                let covers = |p: &(i32, i32)| p.0 >= bx.0 && p.0 <= bx.2 && p.1 >= bx.1 && p.1 <= bx.3;
                if placed.iter().all(|p| !overlaps(*p, bx)) && !curves.iter().any(covers) {
                    best = Some(bx);
                    break 'search;
                }
            }
        }
    }
    let bx = best.unwrap_or_else(|| {
        let x0 = (ax + 8).min(bounds.2 - w).max(bounds.0);
        let y0 = (ay + 10).min(bounds.3 - h).max(bounds.1);
        (x0, y0, x0 + w, y0 + h)
    });
    placed.push(bx);
    (bx.0, bx.1)
}

fn draw_label(area: &DrawingArea<SVGBackend<'_>, Shift>, lines: &[String], at: (i32, i32)) -> PlotResult<()> {
    let w = lines.iter().map(|l| text_width(l, NOTE_PX)).max().unwrap_or(0) + 8;
    let h = lines.len() as i32 * (NOTE_PX as i32 + 3) + 4;
    area.draw(&Rectangle::new(
        [(at.0, at.1), (at.0 + w, at.1 + h)],
        ShapeStyle::from(&WHITE.mix(0.9)).filled(),
    ))
    .map_err(drawing)?;
    for (k, l) in lines.iter().enumerate() {
        area.draw(&Text::new(
            l.clone(),
            (at.0 + 4, at.1 + 3 + k as i32 * (NOTE_PX as i32 + 3)),
            note_style(),
        ))
        .map_err(drawing)?;
    }
    Ok(())
}

/// Refuses a document with a non-finite number in an attribute (a coordinate or a size). Text
/// is not searched: a title such as "NaNO₃ buffer" is the caller's, and every number the plot
/// writes as text comes from a finite value.
/// A chart of the given size under a header (title and legend `entries`): the SVG text of
/// what `draw` puts in the body area (it also gets the whole area, for labels that may
/// cross the frame).
fn framed(
    options: &PlotOptions,
    entries: &[LegendEntry],
    left: i32,
    draw: impl FnOnce(&DrawingArea<SVGBackend<'_>, Shift>, &DrawingArea<SVGBackend<'_>, Shift>) -> PlotResult<()>,
) -> PlotResult<String> {
    let head = header_height(options.title.is_some(), entries, options.width, left);
    let mut buf = String::new();
    {
        let root = SVGBackend::with_string(&mut buf, (options.width, options.height + head)).into_drawing_area();
        root.fill(&WHITE).map_err(drawing)?;
        let (top, body) = root.split_vertically(head);
        header(&top, options.title.as_deref(), entries, left)?;
        draw(&root, &body)?;
        root.present().map_err(drawing)?;
    }
    finish(buf)
}

fn finish(buf: String) -> PlotResult<String> {
    let mut rest = buf.as_str();
    while let Some(i) = rest.find("=\"") {
        let value = &rest[i + 2..];
        let end = value.find('"').unwrap_or(value.len());
        let v = &value[..end];
        if v.contains("NaN") || v.contains("inf") {
            return Err(PlotError::Drawing("a non-finite coordinate reached the SVG".into()));
        }
        rest = &value[end..];
    }
    Ok(buf)
}

// ---------------------------------------------------------------------------------------
// Titration curve.

/// A titration curve: pH against titrant volume (left axis), dpH/dV (dashed, right axis), and
/// each equivalence point inside the volume range marked with a dot on the curve, a dotted
/// vertical line and a label "EP*n*: *v* mL, pH *x*". The dot is filled when the endpoint's
/// verdict ([`EquivalencePoint::usable`], read from the curve by
/// [`EndpointCriterion`](crate::analysis::EndpointCriterion)) says it is usable and hollow,
/// with "not usable" in its label, when it is not: the same field the text and JSON outputs
/// read.
///
/// Points with a non-finite volume, pH or slope are left out. Errors: fewer than two finite
/// points, or options out of range.
///
/// ```
/// use protolyte::analysis::Titration;
/// use protolyte::plot::{PlotOptions, titration_svg};
/// use protolyte::{Amount, Catalog, Conditions, Recipe, Volume};
///
/// let cat = Catalog::builtin();
/// let mut acid = Recipe::new();
/// acid.add(&cat.reagent("phosphoric acid")?, Amount::molar(0.05))?;
/// let mut base = Recipe::new();
/// base.add(&cat.reagent("sodium hydroxide")?, Amount::molar(0.1))?;
/// let t = Titration::new(&acid, Volume::milliliters(20.0), &base, &Conditions::default())?;
/// let curve = t.curve_uniform(Volume::milliliters(30.0), 121)?;
/// let eps = t.equivalence_points()?;
/// let svg = titration_svg(&curve, &eps, &PlotOptions::new())?;
/// assert!(svg.contains("EP1") && svg.contains("dpH/dV / mL⁻¹"));
/// assert!(titration_svg(&[], &eps, &PlotOptions::new()).is_err());
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn titration_svg(
    curve: &[TitrationPoint],
    equivalence: &[EquivalencePoint],
    options: &PlotOptions,
) -> PlotResult<String> {
    options.check()?;
    let pts: Vec<(f64, f64, f64)> = curve
        .iter()
        .filter(|p| p.volume_ml.is_finite() && p.ph.is_finite() && p.dph_dv_per_ml.is_finite())
        .map(|p| (p.volume_ml, p.ph, p.dph_dv_per_ml))
        .collect();
    if pts.len() < 2 {
        return Err(PlotError::NoData("a titration curve needs at least two finite points"));
    }
    let (vmin, vmax) = pts
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), p| (a.min(p.0), b.max(p.0)));
    let (pmin, pmax) = pts
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), p| (a.min(p.1), b.max(p.1)));
    let (smin, smax) = pts
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), p| (a.min(p.2), b.max(p.2)));
    let (x0, x1) = snapped(vmin, vmax, 0.0);
    let (y0, y1) = span(pmin.min(0.0_f64.max(pmin.floor() - 0.5)), pmax, 0.06);
    let (s0, s1) = span(smin.min(0.0), smax.max(0.0), 0.06);
    let rising = pts[pts.len() - 1].1 >= pts[0].1;
    let eps: Vec<&EquivalencePoint> = equivalence
        .iter()
        .filter(|e| e.volume_ml.is_finite() && e.ph.is_finite() && e.volume_ml >= x0 && e.volume_ml <= x1)
        .collect();

    let mut entries = vec![
        LegendEntry {
            text: "pH".into(),
            colour: colour(0),
            kind: LegendKind::Line,
        },
        LegendEntry {
            text: "dpH/dV (right axis)".into(),
            colour: SLOPE,
            kind: LegendKind::Dashed,
        },
    ];
    if eps.iter().any(|e| e.usable()) {
        entries.push(LegendEntry {
            text: "equivalence point".into(),
            colour: INK,
            kind: LegendKind::Dot,
        });
    }
    if eps.iter().any(|e| !e.usable()) {
        entries.push(LegendEntry {
            text: "equivalence point, not usable".into(),
            colour: INK,
            kind: LegendKind::Ring,
        });
    }
    let left = 78;
    framed(options, &entries, left, |root, body| {
        let (root, body) = (root.clone(), body.clone());
        let mut chart = ChartBuilder::on(&body)
            .margin_top(6)
            .margin_bottom(10)
            .margin_left(12)
            .margin_right(12)
            .x_label_area_size(52)
            .y_label_area_size(left - 12)
            .right_y_label_area_size(84)
            .build_cartesian_2d(x0..x1, y0..y1)
            .map_err(drawing)?
            .set_secondary_coord(x0..x1, s0..s1);
        let (dx, dy, ds) = (decimals(x1 - x0), decimals(y1 - y0), decimals(s1 - s0));
        chart
            .configure_mesh()
            .x_desc("titrant volume / mL")
            .y_desc("pH")
            .axis_desc_style(axis_desc(AXIS_PX))
            .label_style(axis_desc(TICK_PX))
            .x_label_formatter(&|v| tick(*v, dx))
            .y_label_formatter(&|v| tick(*v, dy))
            .bold_line_style(GRID)
            .light_line_style(GRID_MINOR)
            .axis_style(INK)
            .draw()
            .map_err(drawing)?;
        chart
            .configure_secondary_axes()
            .y_desc("dpH/dV / mL⁻¹")
            .axis_desc_style(axis_desc(AXIS_PX))
            .label_style(axis_desc(TICK_PX).color(&SLOPE))
            .y_label_formatter(&|v| tick(*v, ds))
            .axis_style(INK)
            .draw()
            .map_err(drawing)?;
        // Equivalence lines under the curves.
        for e in &eps {
            chart
                .draw_series(DashedLineSeries::new(
                    vec![(e.volume_ml, y0), (e.volume_ml, y1)],
                    3,
                    4,
                    ShapeStyle::from(&MARK).stroke_width(1),
                ))
                .map_err(drawing)?;
        }
        chart
            .draw_secondary_series(DashedLineSeries::new(
                pts.iter().map(|p| (p.0, p.2)),
                7,
                4,
                ShapeStyle::from(&SLOPE).stroke_width(2),
            ))
            .map_err(drawing)?;
        chart
            .draw_series(LineSeries::new(
                pts.iter().map(|p| (p.0, p.1)),
                ShapeStyle::from(&colour(0)).stroke_width(3),
            ))
            .map_err(drawing)?;
        // Markers and labels.
        let area = chart.plotting_area();
        let (px_x, px_y) = area.get_pixel_range();
        let bounds = (px_x.start + 2, px_y.start + 2, px_x.end - 2, px_y.end - 2);
        let mut placed: Vec<Placed> = Vec::new();
        let mut labels = Vec::new();
        for (k, e) in eps.iter().enumerate() {
            let ph = e.ph.clamp(y0, y1);
            let c = area.map_coordinate(&(e.volume_ml, ph));
            placed.push((c.0 - 7, c.1 - 7, c.0 + 7, c.1 + 7));
            let style = if e.usable() {
                ShapeStyle::from(&INK).filled()
            } else {
                ShapeStyle::from(&INK).stroke_width(2)
            };
            area.draw(&Circle::new((e.volume_ml, ph), 5, style)).map_err(drawing)?;
            let first = format!("EP{}: {:.2} mL", k + 1, e.volume_ml);
            let mut lines = vec![first, format!("pH {:.2}", e.ph)];
            if !e.usable() {
                lines.push("not usable".into());
            }
            labels.push((lines, c));
        }
        // Below-right of the point for a rising curve (the curve has jumped up), above-right
        // for a falling one.
        let dir = if rising { 1 } else { -1 };
        let sec = chart.borrow_secondary();
        let sec_area = sec.plotting_area();
        let mut curves: Vec<(i32, i32)> = pts.iter().map(|p| area.map_coordinate(&(p.0, p.1))).collect();
        curves.extend(pts.iter().map(|p| sec_area.map_coordinate(&(p.0, p.2))));
        densify(&mut curves);
        for (lines, c) in labels {
            let at = place_label(&lines, c, dir, bounds, &curves, &mut placed);
            draw_label(&root, &lines, at)?;
        }
        Ok(())
    })
}

// ---------------------------------------------------------------------------------------
// Distribution diagram.

/// The fractions of every form of one family along a pH sweep.
#[derive(Debug, Clone, PartialEq)]
pub struct FamilyDistribution {
    /// Family name.
    pub family: String,
    /// Label of each form, most protonated first (formulas with sub- and superscripts).
    pub forms: Vec<String>,
    /// `fractions[f][i]`: fraction of the family's total in form `f` at the sweep's `i`-th pH.
    pub fractions: Vec<Vec<f64>>,
    /// Fraction bound in complexes at each pH, when any complex holds more than 10⁻⁶ of it.
    pub complexed: Option<Vec<f64>>,
}

/// A distribution diagram's data: the pH of each point and each family's fractions there.
#[derive(Debug, Clone, PartialEq)]
pub struct Distribution {
    /// pH of each point (as solved).
    pub ph: Vec<f64>,
    /// One entry per acid–base family of the recipe.
    pub families: Vec<FamilyDistribution>,
}

const SWEEP_CATION: &str = "inert cation (plot sweep)";
const SWEEP_ANION: &str = "inert anion (plot sweep)";

/// The system of a pH sweep: `recipe` with an inert strong base and strong acid added at
/// zero amount, so that setting the totals of their ions moves the pH.
struct SweepSystem {
    sys: System,
    /// Component index of the sweep's cation and anion.
    cation: usize,
    anion: usize,
    /// Their totals in the recipe itself (mol/kg).
    c0: f64,
    a0: f64,
}

/// Compiles the sweep system of `recipe` for `points` points (2..=2000); `name` names the
/// sweep in an error.
fn sweep_system(recipe: &Recipe, conditions: &Conditions, points: usize, name: &str) -> PlotResult<SweepSystem> {
    if !(2..=2000).contains(&points) {
        return Err(PlotError::InvalidOption {
            option: "points",
            reason: "must be within 2..=2000",
        });
    }
    let base = Reagent::new(
        "strong base (plot sweep)",
        None,
        vec![
            (Constituent::Ion(Ion::new(SWEEP_CATION, 1)?), 1),
            (Constituent::Hydroxide, 1),
        ],
    )?;
    let acid = Reagent::new(
        "strong acid (plot sweep)",
        None,
        vec![
            (Constituent::Proton, 1),
            (Constituent::Ion(Ion::new(SWEEP_ANION, -1)?), 1),
        ],
    )?;
    let mut r = recipe.clone();
    r.add(&base, Amount::molal(0.0))?.add(&acid, Amount::molal(0.0))?;
    let sys = r.compile(conditions)?;
    let missing = || crate::Error::InconsistentDefinition {
        name: name.into(),
        reason: "an inert sweep ion did not enter the system".into(),
    };
    let cation = sys.component_index(SWEEP_CATION).ok_or_else(missing)?;
    let anion = sys.component_index(SWEEP_ANION).ok_or_else(missing)?;
    let (c0, a0) = (
        sys.components()[cation].total_molal,
        sys.components()[anion].total_molal,
    );
    Ok(SweepSystem {
        sys,
        cation,
        anion,
        c0,
        a0,
    })
}

/// Brings `recipe` to `points` evenly spaced pH values from `from` to `to` with strong base or
/// strong acid (inert monovalent counter-ions), and records the fraction of each family's
/// total in each of its forms, as solved at `conditions` (so with activity corrections the
/// diagram includes the ionic strength that the added acid or base brings).
///
/// Errors: no acid–base family in the recipe, fewer than 2 or more than 2000 points, a pH
/// outside −4..20 or one not reachable, or a failed solve.
///
/// ```
/// use protolyte::plot::distribution;
/// use protolyte::{ActivityModel, Amount, Catalog, Conditions, Recipe, Temperature};
///
/// let cat = Catalog::builtin();
/// let mut r = Recipe::new();
/// r.add(&cat.reagent("acetic acid")?, Amount::millimolar(10.0))?;
/// let ideal = Conditions::new(Temperature::celsius(25.0), ActivityModel::Ideal);
/// // Three points: one pH unit either side of the pKa (4.756), and the pKa itself.
/// let d = distribution(&r, &ideal, 3.756, 5.756, 3)?;
/// let acetate = &d.families[0];
/// assert_eq!(acetate.forms.len(), 2);
/// // At pH = pKa the two forms are equal; one unit away, 10 : 1.
/// assert!((acetate.fractions[0][1] - 0.5).abs() < 1e-3);
/// assert!((acetate.fractions[0][0] / acetate.fractions[1][0] - 10.0).abs() < 0.05);
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn distribution(
    recipe: &Recipe,
    conditions: &Conditions,
    from: f64,
    to: f64,
    points: usize,
) -> PlotResult<Distribution> {
    let SweepSystem {
        mut sys,
        cation,
        anion,
        c0,
        a0,
    } = sweep_system(recipe, conditions, points, "distribution sweep")?;
    if sys.families().is_empty() {
        return Err(PlotError::NoData("the recipe holds no acid–base family"));
    }
    let capacity = CapacityCurve::new(recipe, conditions)?;
    let solver = Solver::default();
    let mut families: Vec<FamilyDistribution> = sys
        .families()
        .iter()
        .map(|f| {
            let n = f.protolyte.proton_count();
            FamilyDistribution {
                family: f.protolyte.name().to_string(),
                forms: (0..=n)
                    .rev()
                    .map(|j| pretty_formula(&f.protolyte.form_name(j), f.protolyte.form_charge(j)))
                    .collect(),
                fractions: vec![Vec::with_capacity(points); n + 1],
                complexed: None,
            }
        })
        .collect();
    let mut complexed: Vec<Vec<f64>> = vec![Vec::with_capacity(points); families.len()];
    let mut phs = Vec::with_capacity(points);
    let mut last = None;
    for i in 0..points {
        let target = from + (to - from) * i as f64 / (points - 1) as f64;
        // The strong base (negative: acid) that brings the solution to the target pH.
        let b = capacity.at_ph(target)?.strong_base_molal;
        sys.set_total_molal(cation, c0 + b.max(0.0))?;
        sys.set_total_molal(anion, a0 + (-b).max(0.0))?;
        let eq = match &last {
            Some(p) => solver.solve_from(&sys, p)?,
            None => solver.solve(&sys)?,
        };
        if !eq.ph().is_finite() {
            return Err(PlotError::NoData("a solve returned a non-finite pH"));
        }
        phs.push(eq.ph());
        for ((fd, st), cx) in families.iter_mut().zip(eq.families()).zip(complexed.iter_mut()) {
            let n = st.fractions.len();
            for (k, series) in fd.fractions.iter_mut().enumerate() {
                // Forms are stored most protonated first; `fractions` is indexed by protons.
                let j = n.saturating_sub(1 + k);
                series.push(st.fractions.get(j).copied().filter(|v| v.is_finite()).unwrap_or(0.0));
            }
            cx.push(if st.complexed_fraction.is_finite() {
                st.complexed_fraction
            } else {
                0.0
            });
        }
        last = Some(eq);
    }
    for (fd, cx) in families.iter_mut().zip(complexed) {
        if cx.iter().any(|&v| v > 1e-6) {
            fd.complexed = Some(cx);
        }
    }
    Ok(Distribution { ph: phs, families })
}

/// "HPO4^2-" (or "HPO42-") with charge −2 → "HPO₄²⁻": the known charge suffix as superscript, and digits
/// after an element or a bracket as subscripts when the rest looks like a formula.
fn pretty_formula(name: &str, charge: i32) -> String {
    let suffix = match charge {
        0 => String::new(),
        1 => "+".into(),
        -1 => "-".into(),
        z if z > 0 => format!("{z}+"),
        z => format!("{}-", -z),
    };
    let core = if charge != 0 {
        match name.strip_suffix(suffix.as_str()) {
            // The caret of the charge notation ("CO3^2-") gives way to the superscript.
            Some(c) => c.strip_suffix('^').unwrap_or(c),
            None => return name.to_string(),
        }
    } else {
        name
    };
    let formula_like = core.starts_with(|c: char| c.is_ascii_uppercase())
        && core.chars().all(|c| c.is_ascii_alphanumeric() || c == '(' || c == ')');
    let mut out = String::with_capacity(name.len() + 8);
    let mut prev = ' ';
    for c in core.chars() {
        if formula_like && c.is_ascii_digit() && (prev.is_ascii_alphabetic() || prev == ')' || is_sub(prev)) {
            out.push(sub(c));
        } else {
            out.push(c);
        }
        prev = if out.ends_with(|x: char| is_sub(x)) { '₀' } else { c };
    }
    for c in suffix.chars() {
        out.push(sup(c));
    }
    out
}

fn is_sub(c: char) -> bool {
    ('₀'..='₉').contains(&c)
}

fn sub(c: char) -> char {
    char::from_u32('₀' as u32 + (c as u32 - '0' as u32)).unwrap_or(c)
}

fn sup(c: char) -> char {
    match c {
        '0' => '⁰',
        '1' => '¹',
        '2' => '²',
        '3' => '³',
        '4' => '⁴',
        '5' => '⁵',
        '6' => '⁶',
        '7' => '⁷',
        '8' => '⁸',
        '9' => '⁹',
        '+' => '⁺',
        '-' => '⁻',
        c => c,
    }
}

/// A distribution diagram: one panel per family (stacked, each `options.height` tall less a
/// little), the fraction of the family's total in each form against pH, with the forms named
/// in the panel's legend; the fraction in complexes too when there is one. `options.mark_ph`
/// draws a vertical line (e.g. at the solution's own pH).
///
/// Errors: no family or fewer than two finite points, or options out of range.
///
/// ```
/// use protolyte::plot::{PlotOptions, distribution, distribution_svg};
/// use protolyte::{Amount, Catalog, Conditions, Recipe};
///
/// let cat = Catalog::builtin();
/// let mut r = Recipe::new();
/// r.add(&cat.reagent("phosphoric acid")?, Amount::millimolar(10.0))?;
/// let d = distribution(&r, &Conditions::default(), 0.0, 14.0, 57)?;
/// let svg = distribution_svg(&d, &PlotOptions::new().mark_ph(7.0))?;
/// assert!(svg.contains("fraction of total") && svg.contains("HPO₄²⁻"));
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn distribution_svg(dist: &Distribution, options: &PlotOptions) -> PlotResult<String> {
    options.check()?;
    if dist.families.is_empty() {
        return Err(PlotError::NoData("a distribution diagram needs at least one family"));
    }
    let keep: Vec<usize> = (0..dist.ph.len()).filter(|&i| dist.ph[i].is_finite()).collect();
    if keep.len() < 2 {
        return Err(PlotError::NoData(
            "a distribution diagram needs at least two finite points",
        ));
    }
    let (pmin, pmax) = keep.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &i| {
        (a.min(dist.ph[i]), b.max(dist.ph[i]))
    });
    let (x0, x1) = snapped(pmin, pmax, 0.0);
    let n = dist.families.len() as u32;
    let panel = if n == 1 {
        options.height
    } else {
        (options.height * 3 / 4).max(240)
    };
    let title_h = if options.title.is_some() { TITLE_PX + 16 } else { 0 };
    let left = 78;
    let panels: Vec<(Vec<LegendEntry>, u32)> = dist
        .families
        .iter()
        .map(|f| {
            let mut e: Vec<LegendEntry> = f
                .forms
                .iter()
                .enumerate()
                .map(|(k, name)| LegendEntry {
                    text: name.clone(),
                    colour: colour(k),
                    kind: LegendKind::Line,
                })
                .collect();
            if f.complexed.is_some() {
                e.push(LegendEntry {
                    text: "in complexes".into(),
                    colour: INK,
                    kind: LegendKind::Dashed,
                });
            }
            let h = header_height(false, &e, options.width, left + text_width(&f.family, NOTE_PX) + 16);
            (e, h)
        })
        .collect();
    let total_h = title_h + panels.iter().map(|(_, h)| h + panel).sum::<u32>();
    let mut buf = String::new();
    {
        let root = SVGBackend::with_string(&mut buf, (options.width, total_h)).into_drawing_area();
        root.fill(&WHITE).map_err(drawing)?;
        let mut rest = root.clone();
        if let Some(t) = &options.title {
            let (top, below) = rest.split_vertically(title_h);
            header(&top, Some(t), &[], left)?;
            rest = below;
        }
        for (f, (entries, head)) in dist.families.iter().zip(&panels) {
            let (top, below) = rest.split_vertically(head + panel);
            rest = below;
            let (hd, body) = top.split_vertically(*head);
            hd.draw(&Text::new(
                f.family.clone(),
                (left, 6),
                TextStyle::from((FONT, NOTE_PX).into_font().style(FontStyle::Bold)).color(&INK),
            ))
            .map_err(drawing)?;
            header(&hd, None, entries, left + text_width(&f.family, NOTE_PX) + 16)?;
            let mut chart = ChartBuilder::on(&body)
                .margin_top(6)
                .margin_bottom(10)
                .margin_left(12)
                .margin_right(28)
                .x_label_area_size(52)
                .y_label_area_size(left - 12)
                .build_cartesian_2d(x0..x1, 0.0..1.02)
                .map_err(drawing)?;
            let dx = decimals(x1 - x0);
            chart
                .configure_mesh()
                .x_desc("pH")
                .y_desc("fraction of total")
                .axis_desc_style(axis_desc(AXIS_PX))
                .label_style(axis_desc(TICK_PX))
                .x_label_formatter(&|v| tick(*v, dx))
                .y_label_formatter(&|v| tick(*v, 1))
                .bold_line_style(GRID)
                .light_line_style(GRID_MINOR)
                .axis_style(INK)
                .draw()
                .map_err(drawing)?;
            for (k, series) in f.fractions.iter().enumerate() {
                chart
                    .draw_series(LineSeries::new(
                        keep.iter()
                            .filter_map(|&i| series.get(i).map(|&v| (dist.ph[i], v)))
                            .filter(|p| p.1.is_finite()),
                        ShapeStyle::from(&colour(k)).stroke_width(3),
                    ))
                    .map_err(drawing)?;
            }
            if let Some(cx) = &f.complexed {
                chart
                    .draw_series(DashedLineSeries::new(
                        keep.iter()
                            .filter_map(|&i| cx.get(i).map(|&v| (dist.ph[i], v)))
                            .filter(|p| p.1.is_finite()),
                        7,
                        4,
                        ShapeStyle::from(&INK).stroke_width(2),
                    ))
                    .map_err(drawing)?;
            }
            if let Some(m) = options.mark_ph.filter(|m| m.is_finite() && *m >= x0 && *m <= x1) {
                let mut series: Vec<(f64, f64)> = Vec::new();
                for s in f.fractions.iter().chain(f.complexed.iter()) {
                    series.extend(keep.iter().filter_map(|&i| s.get(i).map(|&v| (dist.ph[i], v))));
                }
                series.retain(|p| p.1.is_finite());
                mark_line(&mut chart, m, 0.0, 1.02, &series)?;
            }
        }
        root.present().map_err(drawing)?;
    }
    finish(buf)
}

fn mark_line<DB: DrawingBackend>(
    chart: &mut ChartContext<
        '_,
        DB,
        Cartesian2d<plotters::coord::types::RangedCoordf64, plotters::coord::types::RangedCoordf64>,
    >,
    ph: f64,
    y0: f64,
    y1: f64,
    series: &[(f64, f64)],
) -> PlotResult<()> {
    chart
        .draw_series(DashedLineSeries::new(
            vec![(ph, y0), (ph, y1)],
            3,
            4,
            ShapeStyle::from(&MARK).stroke_width(2),
        ))
        .map_err(drawing)?;
    let area = chart.plotting_area();
    let c = area.map_coordinate(&(ph, y1));
    let label = format!("pH {ph:.2}");
    let (px_x, px_y) = area.get_pixel_range();
    let w = text_width(&label, NOTE_PX) + 8;
    let h = NOTE_PX as i32 + 6;
    let mut curves: Vec<(i32, i32)> = series.iter().map(|p| area.map_coordinate(p)).collect();
    densify(&mut curves);
    // Right of the line then left of it, at the top, the bottom, then half-way: the first box
    // that covers no curve, else the first that fits.
    let tops = [px_y.start + 4, px_y.end - 4 - h, (px_y.start + px_y.end - h) / 2];
    let sides = [c.0 + 4, c.0 - 4 - w];
    let fits = |x: i32| x >= px_x.start && x + w <= px_x.end;
    let candidates: Vec<(i32, i32)> = tops
        .iter()
        .flat_map(|&y| sides.iter().map(move |&x| (x, y)))
        .filter(|&(x, _)| fits(x))
        .collect();
    let clear = |&(x, y): &(i32, i32)| {
        !curves
            .iter()
            .any(|p| p.0 >= x && p.0 <= x + w && p.1 >= y && p.1 <= y + h)
    };
    let (x, y) = candidates
        .iter()
        .copied()
        .find(clear)
        .or_else(|| candidates.first().copied())
        .unwrap_or((c.0 + 4, px_y.start + 4));
    let plain = area.strip_coord_spec();
    let (x, y) = (x - px_x.start, y - px_y.start);
    plain
        .draw(&Rectangle::new(
            [(x, y), (x + w, y + h)],
            ShapeStyle::from(&WHITE.mix(0.9)).filled(),
        ))
        .map_err(drawing)?;
    let style = TextStyle::from((FONT, NOTE_PX).into_font()).color(&MARK);
    plain.draw(&Text::new(label, (x + 4, y + 3), style)).map_err(drawing)?;
    Ok(())
}

// ---------------------------------------------------------------------------------------
// Buffer capacity.

/// Buffer capacity β against pH, with each peak in the range marked by a triangle and
/// labelled with its pH and β. β is shown in mol kg⁻¹ pH⁻¹, or in mmol kg⁻¹ pH⁻¹ when its
/// largest value is below 0.1 mol kg⁻¹ pH⁻¹. `options.mark_ph` draws a vertical line.
///
/// Errors: fewer than two finite points, or options out of range.
///
/// ```
/// use protolyte::analysis::CapacityCurve;
/// use protolyte::plot::{PlotOptions, capacity_svg};
/// use protolyte::{Amount, Catalog, Conditions, Recipe};
///
/// let cat = Catalog::builtin();
/// let mut r = Recipe::new();
/// r.add(&cat.reagent("acetic acid")?, Amount::millimolar(50.0))?;
/// let c = CapacityCurve::new(&r, &Conditions::default())?;
/// let sweep = c.sweep(2.0, 12.0, 101)?;
/// let peaks = c.peaks(2.0, 12.0)?;
/// let svg = capacity_svg(&sweep, &peaks, &PlotOptions::new())?;
/// assert!(svg.contains("β / (mmol kg⁻¹ pH⁻¹)"));
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn capacity_svg(points: &[CapacityPoint], peaks: &[CapacityPeak], options: &PlotOptions) -> PlotResult<String> {
    options.check()?;
    let pts: Vec<(f64, f64)> = points
        .iter()
        .filter(|p| p.ph.is_finite() && p.beta_molal.is_finite())
        .map(|p| (p.ph, p.beta_molal))
        .collect();
    if pts.len() < 2 {
        return Err(PlotError::NoData(
            "a buffer capacity plot needs at least two finite points",
        ));
    }
    let (pmin, pmax) = pts
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), p| (a.min(p.0), b.max(p.0)));
    let (x0, x1) = snapped(pmin, pmax, 0.0);
    let pk: Vec<&CapacityPeak> = peaks
        .iter()
        .filter(|p| p.ph.is_finite() && p.beta_molal.is_finite() && p.ph >= x0 && p.ph <= x1)
        .collect();
    let data_max = pts.iter().fold(0.0_f64, |a, p| a.max(p.1));
    // When water's (or a strong acid's or base's) β at the ends dwarfs the buffer peaks, the
    // axis stops at 2.5 × the highest peak and the curve leaves it there.
    let peak_max = pk.iter().fold(0.0_f64, |a, p| a.max(p.beta_molal));
    let clipped = peak_max > 0.0 && data_max > 4.0 * peak_max;
    let bmax = if clipped { 2.5 * peak_max } else { data_max };
    let (scale, unit) = if bmax < 0.1 {
        (1e3, "β / (mmol kg⁻¹ pH⁻¹)")
    } else {
        (1.0, "β / (mol kg⁻¹ pH⁻¹)")
    };
    let (_, y1) = if clipped {
        (0.0, bmax * scale)
    } else {
        span(0.0, bmax * scale, 0.08)
    };
    let y0 = 0.0;
    let mut entries = vec![LegendEntry {
        text: "buffer capacity β".into(),
        colour: colour(2),
        kind: LegendKind::Line,
    }];
    if !pk.is_empty() {
        entries.push(LegendEntry {
            text: "local maximum".into(),
            colour: INK,
            kind: LegendKind::Triangle,
        });
    }
    if clipped {
        entries.push(LegendEntry {
            text: format!(
                "leaves the axis above {} (largest β {})",
                sig3(y1),
                sig3(data_max * scale)
            ),
            colour: colour(2),
            kind: LegendKind::Note,
        });
    }
    let left = 86;
    framed(options, &entries, left, |root, body| {
        let (root, body) = (root.clone(), body.clone());
        let mut chart = ChartBuilder::on(&body)
            .margin_top(6)
            .margin_bottom(10)
            .margin_left(12)
            .margin_right(28)
            .x_label_area_size(52)
            .y_label_area_size(left - 12)
            .build_cartesian_2d(x0..x1, y0..y1)
            .map_err(drawing)?;
        let (dx, dy) = (decimals(x1 - x0), decimals(y1 - y0));
        chart
            .configure_mesh()
            .x_desc("pH")
            .y_desc(unit)
            .axis_desc_style(axis_desc(AXIS_PX))
            .label_style(axis_desc(TICK_PX))
            .x_label_formatter(&|v| tick(*v, dx))
            .y_label_formatter(&|v| tick(*v, dy))
            .bold_line_style(GRID)
            .light_line_style(GRID_MINOR)
            .axis_style(INK)
            .draw()
            .map_err(drawing)?;
        let scaled: Vec<(f64, f64)> = pts.iter().map(|p| (p.0, p.1 * scale)).collect();
        for run in clip_below(&scaled, y1) {
            chart
                .draw_series(LineSeries::new(run, ShapeStyle::from(&colour(2)).stroke_width(3)))
                .map_err(drawing)?;
        }
        if let Some(m) = options.mark_ph.filter(|m| m.is_finite() && *m >= x0 && *m <= x1) {
            let inside: Vec<(f64, f64)> = scaled.iter().copied().filter(|p| p.1 <= y1).collect();
            mark_line(&mut chart, m, y0, y1, &inside)?;
        }
        let area = chart.plotting_area();
        let (px_x, px_y) = area.get_pixel_range();
        let bounds = (px_x.start + 2, px_y.start + 2, px_x.end - 2, px_y.end - 2);
        let mut placed: Vec<Placed> = Vec::new();
        let mut labels = Vec::new();
        for p in &pk {
            let y = (p.beta_molal * scale).clamp(y0, y1);
            let c = area.map_coordinate(&(p.ph, y));
            placed.push((c.0 - 7, c.1 - 8, c.0 + 7, c.1 + 6));
            root.draw(&Polygon::new(
                vec![(c.0, c.1 - 7), (c.0 - 6, c.1 + 4), (c.0 + 6, c.1 + 4)],
                INK.filled(),
            ))
            .map_err(drawing)?;
            let mut s = String::new();
            let _ = write!(s, "β {}", sig3(p.beta_molal * scale));
            labels.push((vec![format!("pH {:.2}", p.ph), s], c));
        }
        let mut curves: Vec<(i32, i32)> = scaled
            .iter()
            .filter(|p| p.1 <= y1)
            .map(|p| area.map_coordinate(p))
            .collect();
        densify(&mut curves);
        for (lines, c) in labels {
            let at = place_label(&lines, c, -1, bounds, &curves, &mut placed);
            draw_label(&root, &lines, at)?;
        }
        Ok(())
    })
}

/// The runs of a polyline that lie at or below `top`, each cut where it crosses `top`.
fn clip_below(pts: &[(f64, f64)], top: f64) -> Vec<Vec<(f64, f64)>> {
    let mut runs = Vec::new();
    let mut run: Vec<(f64, f64)> = Vec::new();
    for (k, &p) in pts.iter().enumerate() {
        let inside = p.1 <= top;
        if k > 0 {
            let q = pts[k - 1];
            let was = q.1 <= top;
            if inside != was && p.1 != q.1 {
                let t = (top - q.1) / (p.1 - q.1);
                let cut = (q.0 + t * (p.0 - q.0), top);
                run.push(cut);
                if was {
                    runs.push(std::mem::take(&mut run));
                }
            }
        }
        if inside {
            run.push(p);
        }
    }
    if run.len() > 1 {
        runs.push(run);
    }
    runs.retain(|r| r.len() > 1);
    runs
}

/// Adds points along each jump of more than 6 pixels in a pixel polyline (so that a label box
/// that a steep segment crosses is seen to cover it).
fn densify(pts: &mut Vec<(i32, i32)>) {
    let mut out = Vec::with_capacity(pts.len() * 2);
    for w in pts.windows(2) {
        let (a, b) = (w[0], w[1]);
        out.push(a);
        let d = (b.0 - a.0).abs().max((b.1 - a.1).abs());
        if d > 6 && d < 4000 {
            let n = d / 6;
            for k in 1..n {
                out.push((a.0 + (b.0 - a.0) * k / n, a.1 + (b.1 - a.1) * k / n));
            }
        }
    }
    if let Some(&l) = pts.last() {
        out.push(l);
    }
    *pts = out;
}

/// Three significant digits, without exponent for everyday magnitudes.
fn sig3(v: f64) -> String {
    if !v.is_finite() {
        return "–".into();
    }
    if v == 0.0 {
        return "0".into();
    }
    let mag = v.abs().log10().floor() as i32;
    if !(-4..=6).contains(&mag) {
        return format!("{v:.2e}");
    }
    let dec = (2 - mag).max(0) as usize;
    format!("{v:.dec$}")
}

// ---------------------------------------------------------------------------------------
// One call from a titration or a recipe to a finished plot (for front-ends).

/// Computes and draws a titration: an adaptive curve from zero to `end` (pH steps of at most
/// 0.05, so the breaks are drawn densely) and the stoichiometric equivalence points.
///
/// ```
/// use protolyte::analysis::Titration;
/// use protolyte::plot::{PlotOptions, titration_plot};
/// use protolyte::{Amount, Catalog, Conditions, Recipe, Volume};
///
/// let cat = Catalog::builtin();
/// let mut base = Recipe::new();
/// base.add(&cat.reagent("ammonia")?, Amount::molar(0.05))?;
/// let mut acid = Recipe::new();
/// acid.add(&cat.reagent("hydrochloric acid")?, Amount::molar(0.1))?;
/// let t = Titration::new(&base, Volume::milliliters(20.0), &acid, &Conditions::default())?;
/// let svg = titration_plot(&t, Volume::milliliters(15.0), &PlotOptions::new())?;
/// assert!(svg.contains("EP1: 10.00 mL"));
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn titration_plot(titration: &Titration, end: Volume, options: &PlotOptions) -> PlotResult<String> {
    let curve = titration.curve_adaptive(&Stepping::new(end).max_ph_step(0.05)?)?;
    let eps = titration.equivalence_points()?;
    titration_svg(&curve, &eps, options)
}

/// Computes and draws the distribution diagram of a recipe from pH 0 to 14 (141 points),
/// marking the solution's own pH unless `options.mark_ph` is set.
///
/// ```
/// use protolyte::plot::{PlotOptions, distribution_plot};
/// use protolyte::{Amount, Catalog, Conditions, Recipe};
///
/// let cat = Catalog::builtin();
/// let mut r = Recipe::new();
/// r.add(&cat.reagent("sodium bicarbonate")?, Amount::millimolar(2.0))?;
/// let svg = distribution_plot(&r, &Conditions::default(), &PlotOptions::new())?;
/// assert!(svg.contains("HCO₃⁻") && svg.contains("pH 8."));
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn distribution_plot(recipe: &Recipe, conditions: &Conditions, options: &PlotOptions) -> PlotResult<String> {
    let mut options = options.clone();
    if options.mark_ph.is_none() {
        options.mark_ph = Some(recipe.compile(conditions)?.solve()?.ph());
    }
    let d = distribution(recipe, conditions, 0.0, 14.0, 141)?;
    distribution_svg(&d, &options)
}

/// Computes and draws the buffer capacity of a recipe from pH 1 to 13 (241 points) with its
/// local maxima, marking the solution's own pH unless `options.mark_ph` is set.
///
/// ```
/// use protolyte::plot::{PlotOptions, capacity_plot};
/// use protolyte::{Amount, Catalog, Conditions, Recipe};
///
/// let cat = Catalog::builtin();
/// let mut r = Recipe::new();
/// r.add(&cat.reagent("acetic acid")?, Amount::millimolar(20.0))?;
/// let svg = capacity_plot(&r, &Conditions::default(), &PlotOptions::new())?;
/// assert!(svg.contains("local maximum"));
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn capacity_plot(recipe: &Recipe, conditions: &Conditions, options: &PlotOptions) -> PlotResult<String> {
    let mut options = options.clone();
    if options.mark_ph.is_none() {
        options.mark_ph = Some(recipe.compile(conditions)?.solve()?.ph());
    }
    let c = CapacityCurve::new(recipe, conditions)?;
    let sweep = c.sweep(1.0, 13.0, 241)?;
    let peaks = c.peaks(1.0, 13.0)?;
    capacity_svg(&sweep, &peaks, &options)
}

// ---------------------------------------------------------------------------------------
// Saturation indices against pH.

/// The saturation index of each solid along a pH sweep.
#[derive(Debug, Clone, PartialEq)]
pub struct SaturationSweep {
    /// pH of each point (as solved).
    pub ph: Vec<f64>,
    /// (solid name, saturation index at each point); a solid is listed when its parts are
    /// present in the recipe.
    pub solids: Vec<(String, Vec<f64>)>,
}

/// Brings `recipe` to `points` evenly spaced pH values from `from` to `to` with strong base or
/// strong acid (inert monovalent counter-ions, as [`distribution`] does), and records the
/// saturation index of every solid the results report, as solved at `conditions`. The
/// solution stays closed and no solid forms along the sweep: the indices say where each
/// solid would precipitate (SI > 0) or dissolve (SI < 0), not what an equilibrium with it
/// would be.
///
/// Errors: no solid with its parts present, fewer than 2 or more than 2000 points, a pH
/// outside −4..20 or one not reachable, or a failed solve.
///
/// ```
/// use protolyte::plot::saturation;
/// use protolyte::{Amount, Catalog, Conditions, Recipe};
///
/// let cat = Catalog::builtin();
/// let mut r = Recipe::new();
/// r.add(&cat.reagent("calcium chloride")?, Amount::millimolar(2.0))?
///  .add(&cat.reagent("sodium bicarbonate")?, Amount::millimolar(2.0))?;
/// let s = saturation(&r, &Conditions::default(), 6.0, 10.0, 5)?;
/// let calcite = &s.solids.iter().find(|(n, _)| n == "calcite").unwrap().1;
/// // Calcite saturation rises with pH as carbonate takes over from bicarbonate.
/// assert!(calcite[0] < 0.0 && calcite[4] > 0.0);
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn saturation(
    recipe: &Recipe,
    conditions: &Conditions,
    from: f64,
    to: f64,
    points: usize,
) -> PlotResult<SaturationSweep> {
    let SweepSystem {
        mut sys,
        cation,
        anion,
        c0,
        a0,
    } = sweep_system(recipe, conditions, points, "saturation sweep")?;
    let capacity = CapacityCurve::new(recipe, conditions)?;
    let solver = Solver::default();
    let mut phs = Vec::with_capacity(points);
    let mut solids: Vec<(String, Vec<f64>)> = Vec::new();
    let mut last = None;
    for i in 0..points {
        let target = from + (to - from) * i as f64 / (points - 1) as f64;
        let b = capacity.at_ph(target)?.strong_base_molal;
        sys.set_total_molal(cation, c0 + b.max(0.0))?;
        sys.set_total_molal(anion, a0 + (-b).max(0.0))?;
        let eq = match &last {
            Some(p) => solver.solve_from(&sys, p)?,
            None => solver.solve(&sys)?,
        };
        if !eq.ph().is_finite() {
            return Err(PlotError::NoData("a solve returned a non-finite pH"));
        }
        if i == 0 {
            solids = eq
                .solids()
                .iter()
                .map(|s| (s.name.to_string(), Vec::with_capacity(points)))
                .collect();
            if solids.is_empty() {
                return Err(PlotError::NoData("no solid has its parts present in the recipe"));
            }
        }
        phs.push(eq.ph());
        for (name, series) in solids.iter_mut() {
            series.push(eq.saturation_index(name).unwrap_or(f64::NAN));
        }
        last = Some(eq);
    }
    Ok(SaturationSweep { ph: phs, solids })
}

/// Draws the saturation indices of a [`SaturationSweep`] against pH, with the line SI = 0
/// (saturation) and the solution's pH marked when `options.mark_ph` is set. Indices below
/// −10 are left out (the solid is far from forming there); a solid whose index stays below
/// −10 everywhere is not drawn. Errors: no solid with a finite index above −10, fewer than two
/// finite points, or options out of range.
///
/// ```
/// use protolyte::plot::{PlotOptions, saturation, saturation_svg};
/// use protolyte::{Amount, Catalog, Conditions, Recipe};
///
/// let cat = Catalog::builtin();
/// let mut r = Recipe::new();
/// r.add(&cat.reagent("calcium chloride")?, Amount::millimolar(2.0))?
///  .add(&cat.reagent("sodium bicarbonate")?, Amount::millimolar(2.0))?;
/// let s = saturation(&r, &Conditions::default(), 4.0, 12.0, 33)?;
/// let svg = saturation_svg(&s, &PlotOptions::new().mark_ph(8.2))?;
/// assert!(svg.contains("saturation index") && svg.contains("calcite"));
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn saturation_svg(sweep: &SaturationSweep, options: &PlotOptions) -> PlotResult<String> {
    options.check()?;
    const FLOOR: f64 = -10.0;
    let keep: Vec<usize> = (0..sweep.ph.len()).filter(|&i| sweep.ph[i].is_finite()).collect();
    if keep.len() < 2 {
        return Err(PlotError::NoData("a saturation plot needs at least two finite points"));
    }
    let shown: Vec<&(String, Vec<f64>)> = sweep
        .solids
        .iter()
        .filter(|(_, v)| {
            keep.iter()
                .any(|&i| v.get(i).is_some_and(|x| x.is_finite() && *x >= FLOOR))
        })
        .collect();
    if shown.is_empty() {
        return Err(PlotError::NoData(
            "no solid comes within 10 units of saturation over the sweep",
        ));
    }
    let (pmin, pmax) = keep.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &i| {
        (a.min(sweep.ph[i]), b.max(sweep.ph[i]))
    });
    let (x0, x1) = snapped(pmin, pmax, 0.0);
    let top = shown
        .iter()
        .flat_map(|(_, v)| keep.iter().filter_map(|&i| v.get(i).copied()))
        .filter(|x| x.is_finite())
        .fold(1.0_f64, f64::max);
    let (y0, y1) = (FLOOR, top.ceil() + 0.5);
    let left = 78;
    let entries: Vec<LegendEntry> = shown
        .iter()
        .enumerate()
        .map(|(k, (name, _))| LegendEntry {
            text: name.clone(),
            colour: colour(k),
            kind: LegendKind::Line,
        })
        .collect();
    let head = header_height(options.title.is_some(), &entries, options.width, left);
    let mut buf = String::new();
    {
        let root = SVGBackend::with_string(&mut buf, (options.width, options.height + head)).into_drawing_area();
        root.fill(&WHITE).map_err(drawing)?;
        let (hd, body) = root.split_vertically(head);
        header(&hd, options.title.as_deref(), &entries, left)?;
        let mut chart = ChartBuilder::on(&body)
            .margin_top(6)
            .margin_bottom(10)
            .margin_left(12)
            .margin_right(28)
            .x_label_area_size(52)
            .y_label_area_size(left - 12)
            .build_cartesian_2d(x0..x1, y0..y1)
            .map_err(drawing)?;
        let dx = decimals(x1 - x0);
        chart
            .configure_mesh()
            .x_desc("pH")
            .y_desc("saturation index")
            .axis_desc_style(axis_desc(AXIS_PX))
            .label_style(axis_desc(TICK_PX))
            .x_label_formatter(&|v| tick(*v, dx))
            .y_label_formatter(&|v| tick(*v, 0))
            .bold_line_style(GRID)
            .light_line_style(GRID_MINOR)
            .axis_style(INK)
            .draw()
            .map_err(drawing)?;
        chart
            .draw_series(DashedLineSeries::new(
                [(x0, 0.0), (x1, 0.0)],
                7,
                4,
                ShapeStyle::from(&INK).stroke_width(2),
            ))
            .map_err(drawing)?;
        for (k, (_, series)) in shown.iter().enumerate() {
            // Runs of points at or above the floor, drawn as separate lines.
            let mut run: Vec<(f64, f64)> = Vec::new();
            let mut runs: Vec<Vec<(f64, f64)>> = Vec::new();
            for &i in &keep {
                match series.get(i) {
                    Some(&v) if v.is_finite() && v >= y0 => run.push((sweep.ph[i], v)),
                    _ => {
                        if run.len() > 1 {
                            runs.push(std::mem::take(&mut run));
                        }
                        run.clear();
                    }
                }
            }
            if run.len() > 1 {
                runs.push(run);
            }
            for r in runs {
                chart
                    .draw_series(LineSeries::new(r, ShapeStyle::from(&colour(k)).stroke_width(3)))
                    .map_err(drawing)?;
            }
        }
        if let Some(m) = options.mark_ph.filter(|m| m.is_finite() && *m >= x0 && *m <= x1) {
            let mut pts: Vec<(f64, f64)> = Vec::new();
            for (_, s) in &shown {
                pts.extend(keep.iter().filter_map(|&i| s.get(i).map(|&v| (sweep.ph[i], v))));
            }
            pts.retain(|p| p.1.is_finite() && p.1 >= y0);
            mark_line(&mut chart, m, y0, y1, &pts)?;
        }
        root.present().map_err(drawing)?;
    }
    finish(buf)
}

/// Computes and draws the saturation indices of a recipe's solids from pH 2 to 12 (101
/// points), marking the solution's own pH unless `options.mark_ph` is set.
///
/// ```
/// use protolyte::plot::{PlotOptions, saturation_plot};
/// use protolyte::{Amount, Catalog, Conditions, Recipe};
///
/// let cat = Catalog::builtin();
/// let mut r = Recipe::new();
/// r.add(&cat.reagent("calcium chloride")?, Amount::millimolar(5.0))?
///  .add(&cat.reagent("sodium sulfate")?, Amount::millimolar(5.0))?
///  .add(&cat.reagent("sodium bicarbonate")?, Amount::millimolar(2.0))?;
/// let svg = saturation_plot(&r, &Conditions::default(), &PlotOptions::new())?;
/// assert!(svg.contains("gypsum") && svg.contains("calcite"));
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn saturation_plot(recipe: &Recipe, conditions: &Conditions, options: &PlotOptions) -> PlotResult<String> {
    let mut options = options.clone();
    if options.mark_ph.is_none() {
        options.mark_ph = Some(recipe.compile(conditions)?.solve()?.ph());
    }
    let s = saturation(recipe, conditions, 2.0, 12.0, 101)?;
    saturation_svg(&s, &options)
}

// ---------------------------------------------------------------------------------------
// Measured titration.

/// A measured titration: the data as dots, the model (when a fit was made) as a line, each
/// endpoint as a dotted vertical line with its label, and, below, the residuals
/// (measured − model pH) when there is a model.
///
/// `points` are (volume mL, pH); `model_ph`, when given, holds the model's pH at each point;
/// `endpoints` are (label, volume mL). Points with a non-finite value are left out. Errors:
/// fewer than two finite points, a model of another length, or options out of range.
///
/// ```
/// use protolyte::plot::{PlotOptions, measured_svg};
/// let pts: Vec<(f64, f64)> = (0..40).map(|i| {
///     let v = 0.5 * i as f64;
///     (v, 7.0 + 2.0 * (2.0 * (v - 10.0)).atan())
/// }).collect();
/// let model: Vec<f64> = pts.iter().map(|p| p.1 + 0.01).collect();
/// let svg = measured_svg(&pts, Some(&model), &[("Gran".into(), 10.0)], &PlotOptions::new())?;
/// assert!(svg.contains("residual") && svg.contains("Gran: 10.00 mL"));
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn measured_svg(
    points: &[(f64, f64)],
    model_ph: Option<&[f64]>,
    endpoints: &[(String, f64)],
    options: &PlotOptions,
) -> PlotResult<String> {
    options.check()?;
    if let Some(m) = model_ph
        && m.len() != points.len()
    {
        return Err(PlotError::NoData("the model needs one pH for each measured point"));
    }
    let rows: Vec<(f64, f64, Option<f64>)> = points
        .iter()
        .enumerate()
        .filter(|(_, p)| p.0.is_finite() && p.1.is_finite())
        .map(|(i, p)| (p.0, p.1, model_ph.map(|m| m[i]).filter(|x| x.is_finite())))
        .collect();
    if rows.len() < 2 {
        return Err(PlotError::NoData("a measured curve needs at least two finite points"));
    }
    let (vmin, vmax) = rows
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), p| (a.min(p.0), b.max(p.0)));
    let (pmin, pmax) = rows.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), p| {
        let m = p.2.unwrap_or(p.1);
        (a.min(p.1).min(m), b.max(p.1).max(m))
    });
    let (x0, x1) = snapped(vmin, vmax, 0.0);
    let (y0, y1) = span(pmin, pmax, 0.06);
    let residuals: Vec<(f64, f64)> = rows.iter().filter_map(|p| p.2.map(|m| (p.0, p.1 - m))).collect();
    let rmax = residuals.iter().map(|r| r.1.abs()).fold(0.0, f64::max).max(1e-3);
    let eps: Vec<&(String, f64)> = endpoints
        .iter()
        .filter(|e| e.1.is_finite() && e.1 >= x0 && e.1 <= x1)
        .collect();
    let mut entries = vec![LegendEntry {
        text: "measured".into(),
        colour: colour(0),
        kind: LegendKind::Dot,
    }];
    if !residuals.is_empty() {
        entries.push(LegendEntry {
            text: "model fit".into(),
            colour: colour(1),
            kind: LegendKind::Line,
        });
    }
    if !eps.is_empty() {
        entries.push(LegendEntry {
            text: "endpoint".into(),
            colour: MARK,
            kind: LegendKind::Dashed,
        });
    }
    let left = 78;
    framed(options, &entries, left, |root, body| {
        let (top, bottom) = if residuals.is_empty() {
            (body.clone(), None)
        } else {
            let h = body.dim_in_pixel().1;
            let (a, b) = body.split_vertically((h as f64 * 0.7) as u32);
            (a, Some(b))
        };
        let mut chart = ChartBuilder::on(&top)
            .margin_top(6)
            .margin_bottom(6)
            .margin_left(12)
            .margin_right(24)
            .x_label_area_size(if bottom.is_some() { 30 } else { 52 })
            .y_label_area_size(left - 12)
            .build_cartesian_2d(x0..x1, y0..y1)
            .map_err(drawing)?;
        let (dx, dy) = (decimals(x1 - x0), decimals(y1 - y0));
        chart
            .configure_mesh()
            .x_desc(if bottom.is_some() { "" } else { "titrant volume / mL" })
            .y_desc("pH")
            .axis_desc_style(axis_desc(AXIS_PX))
            .label_style(axis_desc(TICK_PX))
            .x_label_formatter(&|v| tick(*v, dx))
            .y_label_formatter(&|v| tick(*v, dy))
            .bold_line_style(GRID)
            .light_line_style(GRID_MINOR)
            .axis_style(INK)
            .draw()
            .map_err(drawing)?;
        for e in &eps {
            chart
                .draw_series(DashedLineSeries::new(
                    vec![(e.1, y0), (e.1, y1)],
                    3,
                    4,
                    ShapeStyle::from(&MARK).stroke_width(1),
                ))
                .map_err(drawing)?;
        }
        if !residuals.is_empty() {
            chart
                .draw_series(LineSeries::new(
                    rows.iter().filter_map(|p| p.2.map(|m| (p.0, m))),
                    ShapeStyle::from(&colour(1)).stroke_width(2),
                ))
                .map_err(drawing)?;
        }
        chart
            .draw_series(
                rows.iter()
                    .map(|p| Circle::new((p.0, p.1), 3, ShapeStyle::from(&colour(0)).filled())),
            )
            .map_err(drawing)?;
        let area = chart.plotting_area();
        let (px_x, px_y) = area.get_pixel_range();
        let bounds = (px_x.start + 2, px_y.start + 2, px_x.end - 2, px_y.end - 2);
        let mut placed: Vec<Placed> = Vec::new();
        let mut curves: Vec<(i32, i32)> = rows.iter().map(|p| area.map_coordinate(&(p.0, p.1))).collect();
        densify(&mut curves);
        for (k, e) in eps.iter().enumerate() {
            // Labels stacked from the top, one row each, beside their line.
            let at = area.map_coordinate(&(e.1, y1 - (y1 - y0) * (0.06 + 0.1 * k as f64)));
            let lines = vec![format!("{}: {:.2} mL", e.0, e.1)];
            let at = place_label(&lines, at, 1, bounds, &curves, &mut placed);
            draw_label(root, &lines, at)?;
        }
        if let Some(b) = bottom {
            let mut rc = ChartBuilder::on(&b)
                .margin_top(4)
                .margin_bottom(10)
                .margin_left(12)
                .margin_right(24)
                .x_label_area_size(52)
                .y_label_area_size(left - 12)
                .build_cartesian_2d(x0..x1, -1.15 * rmax..1.15 * rmax)
                .map_err(drawing)?;
            let dr = decimals(2.3 * rmax);
            rc.configure_mesh()
                .x_desc("titrant volume / mL")
                .y_desc("residual pH")
                .axis_desc_style(axis_desc(AXIS_PX))
                .label_style(axis_desc(TICK_PX))
                .x_label_formatter(&|v| tick(*v, dx))
                .y_label_formatter(&|v| tick(*v, dr))
                .y_labels(5)
                .bold_line_style(GRID)
                .light_line_style(GRID_MINOR)
                .axis_style(INK)
                .draw()
                .map_err(drawing)?;
            rc.draw_series(LineSeries::new(vec![(x0, 0.0), (x1, 0.0)], ShapeStyle::from(&MARK)))
                .map_err(drawing)?;
            rc.draw_series(
                residuals
                    .iter()
                    .map(|r| Circle::new(*r, 3, ShapeStyle::from(&colour(0)).filled())),
            )
            .map_err(drawing)?;
        }
        Ok(())
    })
}
