//! Endpoints by the first and second derivative of a measured curve, after smoothing.
//!
//! The smoothing is a local least-squares quadratic through 2k + 1 neighbouring points
//! (A. Savitzky and M. J. E. Golay, *Anal. Chem.* **36** (1964) 1627), fitted on the actual
//! volumes so that uneven steps (small near the endpoint, as a careful analyst adds them) are
//! handled; at the ends the window is shifted inwards, never shortened. The fit at each point
//! gives the smoothed pH, the first derivative (its linear term) and the second derivative
//! (twice its quadratic term). An endpoint is a local maximum of |dpH/dV| at least a given
//! fraction of the largest, located between points by the zero crossing of the second
//! derivative (linear interpolation). With k = 0 the plain differences of
//! [`derivative_endpoints`] are used.
//!
//! The default k = 2 (five points) is the smallest window that smooths at all with a
//! quadratic; a wider one lowers the noise but flattens a sharp break more.

use super::{MeasuredError, MeasuredResult};
use crate::analysis::endpoints::{DerivativeEndpoint, derivative_endpoints};

/// Default half-width k of the smoothing window (2k + 1 = 5 points).
pub const DEFAULT_HALF_WINDOW: usize = 2;
/// The largest half-width accepted.
pub const MAX_HALF_WINDOW: usize = 50;

/// The smoothed value, first and second derivative at each point (local quadratic through
/// 2·`half_window` + 1 points).
///
/// ```
/// use protolyte::analysis::measured::derivative::smoothed_derivatives;
/// // A parabola is reproduced exactly, on uneven volumes.
/// let data: Vec<(f64, f64)> = [0.0, 0.5, 1.5, 2.0, 3.5, 4.0, 5.0]
///     .iter().map(|&v| (v, 2.0 + 0.3 * v - 0.1 * v * v)).collect();
/// let d = smoothed_derivatives(&data, 2)?;
/// assert!((d[3].1 - (2.0 + 0.6 - 0.4)).abs() < 1e-12);
/// assert!((d[3].2 - (0.3 - 0.4)).abs() < 1e-12);
/// assert!((d[3].3 + 0.2).abs() < 1e-12);
/// # Ok::<(), protolyte::analysis::measured::MeasuredError>(())
/// ```
pub fn smoothed_derivatives(data: &[(f64, f64)], half_window: usize) -> MeasuredResult<Vec<(f64, f64, f64, f64)>> {
    super::check_curve(data, "smoothed derivative")?;
    if half_window > MAX_HALF_WINDOW {
        return Err(MeasuredError::Parameter {
            what: "smoothing half-width".into(),
            value: half_window as f64,
            reason: format!("must be at most {MAX_HALF_WINDOW}"),
        });
    }
    let w = 2 * half_window + 1;
    if half_window == 0 || data.len() < w.max(3) {
        return Err(MeasuredError::Method {
            method: "smoothed derivative".into(),
            reason: format!(
                "a window of {} points needs at least that many points (and a half-width of at least 1), {} given",
                w.max(3),
                data.len()
            ),
        });
    }
    let n = data.len();
    let mut out = Vec::with_capacity(n);
    for i in 0..n {
        let start = i.saturating_sub(half_window).min(n - w);
        let win = &data[start..start + w];
        let x0 = data[i].0;
        // Normal equations of y = c0 + c1·u + c2·u², u = x − x0, scaled by the window width.
        let scale = (win[w - 1].0 - win[0].0).max(f64::MIN_POSITIVE);
        let mut m = nalgebra::Matrix3::<f64>::zeros();
        let mut r = nalgebra::Vector3::<f64>::zeros();
        for &(x, y) in win {
            let u = (x - x0) / scale;
            let p = [1.0, u, u * u];
            for a in 0..3 {
                for b in 0..3 {
                    m[(a, b)] += p[a] * p[b];
                }
                r[a] += p[a] * y;
            }
        }
        let c = m.lu().solve(&r).ok_or_else(|| MeasuredError::Method {
            method: "smoothed derivative".into(),
            reason: format!("the points around {x0} mL do not determine a quadratic"),
        })?;
        out.push((x0, c[0], c[1] / scale, 2.0 * c[2] / (scale * scale)));
    }
    Ok(out)
}

/// Endpoints of measured (volume mL, pH) data by the derivative method after local
/// quadratic smoothing over 2·`half_window` + 1 points (0: no smoothing, plain differences).
/// Peaks of |dpH/dV| below `min_fraction` (0..1) of the largest are left out.
///
/// ```
/// use protolyte::analysis::measured::derivative::smoothed_endpoints;
/// // An invented steep break at 10 mL: pH = 7 + 2·atan(20·(v − 10)) on 0.1 mL steps.
/// let data: Vec<(f64, f64)> = (0..=200).map(|i| {
///     let v = 0.1 * i as f64;
///     (v, 7.0 + 2.0 * (20.0 * (v - 10.0)).atan())
/// }).collect();
/// let e = smoothed_endpoints(&data, 2, 0.5)?;
/// assert_eq!(e.len(), 1);
/// assert!((e[0].volume_ml - 10.0).abs() < 1e-3);
/// # Ok::<(), protolyte::analysis::measured::MeasuredError>(())
/// ```
pub fn smoothed_endpoints(
    data: &[(f64, f64)],
    half_window: usize,
    min_fraction: f64,
) -> MeasuredResult<Vec<DerivativeEndpoint>> {
    if half_window == 0 {
        return Ok(derivative_endpoints(data, min_fraction)?);
    }
    super::check("minimum fraction", min_fraction, 0.0, 1.0)?;
    super::check_curve(data, "smoothed derivative")?;
    let d = smoothed_derivatives(data, half_window)?;
    let sign = if data[data.len() - 1].1 >= data[0].1 { 1.0 } else { -1.0 };
    let top = d.iter().map(|p| sign * p.2).fold(f64::NEG_INFINITY, f64::max);
    let mut out = Vec::new();
    for i in 1..d.len().saturating_sub(1) {
        let s = sign * d[i].2;
        if !(s > sign * d[i - 1].2 && s >= sign * d[i + 1].2 && s >= min_fraction * top && s > 0.0) {
            continue;
        }
        // The second derivative changes sign from + to − (for a rising curve) around the
        // peak: interpolate its zero on whichever side it crosses.
        let second = |k: usize| sign * d[k].3;
        let v = if second(i) >= 0.0 && second(i + 1) < 0.0 {
            d[i].0 + second(i) * (d[i + 1].0 - d[i].0) / (second(i) - second(i + 1))
        } else if second(i - 1) > 0.0 && second(i) <= 0.0 {
            d[i - 1].0 + second(i - 1) * (d[i].0 - d[i - 1].0) / (second(i - 1) - second(i))
        } else {
            d[i].0
        };
        let ph = interpolate(&d, v);
        out.push(DerivativeEndpoint {
            volume_ml: v,
            first_derivative_volume_ml: d[i].0,
            ph,
            slope_per_ml: s,
        });
    }
    Ok(out)
}

fn interpolate(d: &[(f64, f64, f64, f64)], v: f64) -> f64 {
    match d.windows(2).find(|w| v >= w[0].0 && v <= w[1].0) {
        Some(w) => w[0].1 + (w[1].1 - w[0].1) * (v - w[0].0) / (w[1].0 - w[0].0),
        None if v < d[0].0 => d[0].1,
        None => d[d.len() - 1].1,
    }
}
