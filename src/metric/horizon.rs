//! The default horizon finder: the outermost root of g^rr = 0 on the equator.

use super::{Metric, MetricComponents};
use crate::numerics::brent_root;
use num_dual::{Dual64, DualNum};
use std::f64::consts::FRAC_PI_2;

/// Outermost radius scanned.
const R_FAR: f64 = 1.0e3;
/// Innermost radius scanned.
const R_NEAR: f64 = 1.0e-4;
/// Grid points of the logarithmic scan.
const SCAN_POINTS: usize = 4000;
/// A minimum of g^rr at or below this counts as a degenerate (extremal) horizon.
const DEGENERATE: f64 = 1.0e-14;

fn regular(c: &MetricComponents<f64>) -> bool {
    c.is_finite() && c.g_thth > 0.0 && c.g_phph > 0.0
}

/// The outermost horizon of a metric, found numerically; `None` when there is none.
///
/// Scans r inward on a logarithmic grid from 10³ to 10⁻⁴ on the equator (θ = π/2). The
/// horizon is the first place where g^rr = 1/g_rr reaches zero: a sign change refined by
/// Brent's method, or a local minimum of g^rr that touches zero (an extremal, degenerate
/// horizon), located as the root of d g^rr/dr, with the derivative taken by a dual number.
/// If the metric stops being regular (non-finite components, g_θθ ≤ 0 or g_φφ ≤ 0) before
/// any such root, the spacetime is horizonless there and `None` is returned.
pub fn numerical_outer_horizon<M: Metric + ?Sized>(metric: &M) -> Option<f64> {
    let theta = Dual64::from(FRAC_PI_2);
    let g_rr_inv = |r: f64| -> (f64, f64, bool) {
        let c = metric.components(Dual64::from_re(r).derivative(), theta);
        let inv = c.g_rr.recip();
        // Where g_rr overflows (Δ rounds to zero at an extremal horizon) the dual reciprocal
        // has a NaN slope; d g^rr/dr = −g_rr′/g_rr² then tends to zero from the sign of g_rr′.
        let slope = if inv.eps.is_finite() {
            inv.eps
        } else if c.g_rr.eps.is_nan() {
            0.0
        } else {
            -c.g_rr.eps.signum()
        };
        (inv.re, slope, regular(&c.map(|x| x.re)))
    };
    let value = |r: f64| g_rr_inv(r).0;
    let slope = |r: f64| g_rr_inv(r).1;
    let ratio = (R_NEAR / R_FAR).powf(1.0 / (SCAN_POINTS - 1) as f64);

    let (mut r_prev, mut f_prev, mut d_prev, ok) = {
        let (f, d, ok) = g_rr_inv(R_FAR);
        (R_FAR, f, d, ok)
    };
    if !ok || f_prev.is_nan() || f_prev <= 0.0 {
        return None;
    }
    for i in 1..SCAN_POINTS {
        let r = R_FAR * ratio.powi(i as i32);
        let (f, d, ok) = g_rr_inv(r);
        if !ok || !f.is_finite() {
            return None;
        }
        if f == 0.0 {
            return Some(r);
        }
        if f < 0.0 {
            return brent_root(value, r, r_prev, 0.0).ok();
        }
        // A local minimum of g^rr between r and r_prev (slope changes from + outside to −
        // inside): it may dip to zero or below without a sign change on the grid.
        if d_prev > 0.0 && d <= 0.0 {
            if let Ok(r_min) = brent_root(slope, r, r_prev, 0.0) {
                let f_min = value(r_min);
                if f_min < 0.0 {
                    return brent_root(value, r_min, r_prev, 0.0).ok();
                }
                if f_min <= DEGENERATE {
                    return Some(r_min);
                }
            }
        }
        r_prev = r;
        f_prev = f;
        d_prev = d;
    }
    let _ = f_prev;
    None
}
