//! Endpoints by Gran functions on both sides of an endpoint (G. Gran, *Analyst* **77**
//! (1952) 661), with the window chosen automatically and reported.
//!
//! Before the endpoint the buffer function (v·10^∓pH, a weak acid or base) and the excess
//! function ((V₀ + v)·10^∓pH, a strong one) are both tried; after it, the excess-titrant
//! function. Each candidate window lies inside fixed fractions of the estimated endpoint
//! volume (before: its inner edge at 0.90, 0.95 or 0.97 and its outer edge at 0.3 or 0.5 of
//! it; after: 1.03, 1.05 or 1.1 and 1.3, 1.5 or 2.0), and holds at least four points. The
//! window and function chosen are those whose extrapolated endpoint has the smallest
//! standard error, s_x₀ = (s/|b|)·√(1/n + (x̄ − x₀)²/Σ(x − x̄)²) (the usual error of an
//! x-intercept of a straight line, J. N. Miller and J. C. Miller, *Statistics and
//! Chemometrics for Analytical Chemistry*, Pearson, 2010, ch. 5; from memory): curvature
//! near the endpoint inflates s, a short window far from it inflates the leverage term, so
//! the choice balances the two.

use super::{MeasuredError, MeasuredResult};
use crate::analysis::endpoints::{GranFit, GranFunction, gran_fit};

/// The Gran line on one side.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GranSide {
    /// The line (function, endpoint, slope, intercept, r², points).
    pub fit: GranFit,
    /// The window used, mL (from, to).
    pub window_ml: (f64, f64),
    /// Standard error of the endpoint from the regression, mL.
    pub endpoint_standard_error_ml: f64,
}

/// Gran lines before and after an endpoint.
#[derive(Debug, Clone, PartialEq)]
pub struct GranAnalysis {
    /// The endpoint estimate the windows were placed around, mL.
    pub estimate_ml: f64,
    /// True when the pH rises (a base titrant).
    pub rising: bool,
    /// The line before the endpoint, when a window holds enough points.
    pub before: Option<GranSide>,
    /// The line after the endpoint, when a window holds enough points.
    pub after: Option<GranSide>,
}

fn side(
    data: &[(f64, f64)],
    v0: f64,
    functions: &[GranFunction],
    inner: &[f64],
    outer: &[f64],
    estimate: f64,
) -> Option<GranSide> {
    let mut best: Option<GranSide> = None;
    for &f in functions {
        for &a in inner {
            for &b in outer {
                let (lo, hi) = if a < b {
                    (a * estimate, b * estimate)
                } else {
                    (b * estimate, a * estimate)
                };
                let pts: Vec<(f64, f64)> = data.iter().filter(|p| p.0 >= lo && p.0 <= hi).copied().collect();
                if pts.len() < 4 {
                    continue;
                }
                let Ok(fit) = gran_fit(&pts, v0, f, lo, hi) else {
                    continue;
                };
                let Some(se) = intercept_error(&pts, v0, &fit) else {
                    continue;
                };
                if best.is_none_or(|b| se < b.endpoint_standard_error_ml) {
                    best = Some(GranSide {
                        fit,
                        window_ml: (pts[0].0, pts[pts.len() - 1].0),
                        endpoint_standard_error_ml: se,
                    });
                }
            }
        }
    }
    best
}

/// The standard error of the x-intercept of `fit` over `pts`.
fn intercept_error(pts: &[(f64, f64)], v0: f64, fit: &GranFit) -> Option<f64> {
    let n = pts.len() as f64;
    let ys: Vec<(f64, f64)> = pts.iter().map(|&(v, ph)| (v, fit.function.value(v, ph, v0))).collect();
    let mx = ys.iter().map(|p| p.0).sum::<f64>() / n;
    let sxx: f64 = ys.iter().map(|p| (p.0 - mx).powi(2)).sum();
    let ss: f64 = ys
        .iter()
        .map(|p| (p.1 - (fit.intercept + fit.slope * p.0)).powi(2))
        .sum();
    let s = (ss / (n - 2.0)).sqrt();
    let se = (s / fit.slope.abs()) * (1.0 / n + (mx - fit.endpoint_ml).powi(2) / sxx).sqrt();
    (se.is_finite() && sxx > 0.0).then_some(se)
}

/// Gran lines on both sides of the endpoint estimated at `estimate_ml` (from the derivative
/// method, say), for measured (volume mL, pH) data and analyte volume `analyte_volume_ml`.
/// Errors when neither side has a window of four points.
///
/// ```
/// use protolyte::analysis::GranFunction;
/// use protolyte::analysis::measured::gran::gran_both_sides;
/// // An invented weak acid (Ka 1e-5) titrated with 0.1 mol/L base, ideal: 25 mL, endpoint at
/// // 10 mL; before it pH = pKa + log(v/(10 − v)), after it the excess base.
/// let data: Vec<(f64, f64)> = (1..=40).filter(|&i| i != 20).map(|i| {
///     let v = 0.5 * i as f64;
///     let ph = if v < 10.0 { 5.0 + (v / (10.0 - v)).log10() }
///              else { 14.0 + (0.1 * (v - 10.0) / (25.0 + v)).log10() };
///     (v, ph)
/// }).collect();
/// let g = gran_both_sides(&data, 25.0, 10.2)?;
/// let before = g.before.unwrap();
/// assert_eq!(before.fit.function, GranFunction::WeakAcidBuffer);
/// assert!((before.fit.endpoint_ml - 10.0).abs() < 1e-6);
/// assert!((g.after.unwrap().fit.endpoint_ml - 10.0).abs() < 1e-6);
/// # Ok::<(), protolyte::analysis::measured::MeasuredError>(())
/// ```
pub fn gran_both_sides(data: &[(f64, f64)], analyte_volume_ml: f64, estimate_ml: f64) -> MeasuredResult<GranAnalysis> {
    super::check("analyte volume (mL)", analyte_volume_ml, 1e-6, 1e7)?;
    super::check("endpoint estimate (mL)", estimate_ml, 1e-9, 1e7)?;
    super::check_curve(data, "Gran")?;
    if data.len() < 4 {
        return Err(MeasuredError::Method {
            method: "Gran".into(),
            reason: format!("at least 4 points are needed, {} given", data.len()),
        });
    }
    let rising = data[data.len() - 1].1 >= data[0].1;
    let (buffer, excess_before, excess_after) = if rising {
        (
            GranFunction::WeakAcidBuffer,
            GranFunction::ExcessAcid,
            GranFunction::ExcessBase,
        )
    } else {
        (
            GranFunction::WeakBaseBuffer,
            GranFunction::ExcessBase,
            GranFunction::ExcessAcid,
        )
    };
    let before = side(
        data,
        analyte_volume_ml,
        &[buffer, excess_before],
        &[0.90, 0.95, 0.97],
        &[0.3, 0.5],
        estimate_ml,
    );
    let after = side(
        data,
        analyte_volume_ml,
        &[excess_after],
        &[1.03, 1.05, 1.1],
        &[1.3, 1.5, 2.0],
        estimate_ml,
    );
    if before.is_none() && after.is_none() {
        return Err(MeasuredError::Method {
            method: "Gran".into(),
            reason: format!(
                "no window of 4 points on either side of {estimate_ml} mL (before: 0.3–0.97, after: 1.03–2.0 of it)"
            ),
        });
    }
    Ok(GranAnalysis {
        estimate_ml,
        rising,
        before,
        after,
    })
}
