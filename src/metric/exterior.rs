//! Singular surfaces outside the horizon: is the exterior a regular spacetime?
//!
//! A deformed metric can be singular on a surface outside its horizon, where a denominator
//! vanishes: Johannsen's metric (Johannsen 2013, Phys. Rev. D 88, 044002) has g_tt, g_tφ and
//! g_φφ over [(r² + a²) A1 − a² A2 sin²θ]², which on the equator with α22 = 0 vanishes where
//! r⁵ + α13 (r² + a²) = 0, outside r₊ for α13 < −r₊⁴/2. A shadow computed there is not the
//! shadow of a black hole: rays cross a curvature singularity on their way to the observer.
//!
//! [`exterior_singularity`] looks for such surfaces between the outer horizon (or, without a
//! horizon, the innermost closed surface where the metric stops being a regular Lorentzian
//! metric at every sampled angle: the absorbing centre of a naked singularity such as
//! Janis–Newman–Winicour's) and an outer radius, on a grid of 96 radii uniform in
//! ln(r − r₊) from r₊ + 10⁻⁶ max(r₊, 1) (uniform in ln r from 10⁻³ without a horizon) and of
//! polar angles jπ/16 (j = 1..15; 1..8 for an equatorially symmetric metric; the equator alone
//! for a metric declared spherically symmetric, whose singular surfaces are spheres). Along every
//! angle it examines:
//! 1. **Poles.** The relative sensitivity q(r) ([`relative_sensitivity`]: how much det g and
//!    the five components of g change, relative to max(|value|, 1), when r and θ move by their
//!    own size; the components of g⁻¹ = adj g/det g have poles only where g has one or det g
//!    vanishes) grows like 1/|r − r_pole| towards a pole. Every interior local maximum of q on
//!    the grid is refined by golden-section search; one that keeps growing is followed down
//!    to adjacent doubles and confirmed by [`check_point`] (the point is singular to within
//!    rounding). A smooth maximum of q stops growing and is dropped.
//! 2. **Changes of signature.** A change of sign of det g, or a change between regular
//!    Lorentzian (finite, g_rr > 0, g_θθ > 0, det g < 0) and not, between neighbouring radii
//!    is located by bisection to adjacent doubles and reported with what [`check_point`] says
//!    there (or the change itself).
//!
//! The outermost point found is returned. Surfaces thinner than the grid in θ (narrower than
//! about π/16), poles closer than 10⁻⁶ max(r_in, 1) to r_in, and surfaces where the sign of
//! det g is lost in rounding (within about 10⁻³ M of a degenerate horizon such as extremal
//! Kerr's) are not resolved.
//!
//! ```
//! use umbral::metric::exterior_singularity;
//! use umbral::metrics::Kerr;
//!
//! assert!(exterior_singularity(&Kerr::new(0.9).unwrap(), 1.0e3).is_none());
//! ```

use super::{check_point, PointProblem, Spacetime, Symmetry, POINT_SENSITIVITY_LIMIT};
use crate::numerics::{bisect_predicate_steps, GoldenBracket};
use crate::numfmt::Num;
use std::convert::Infallible;
use std::f64::consts::PI;
use std::fmt;

/// Radii of the grid along each angle.
const RADII: usize = 96;
/// The grid starts this far outside the horizon, times max(r₊, 1).
const NEAR: f64 = 1.0e-6;
/// Innermost radius of the grid of a horizonless metric.
const HORIZONLESS_NEAR: f64 = 1.0e-3;
/// Angles per quadrant: θ = jπ/(2 ANGLES).
const ANGLES: usize = 8;
/// A refined maximum of q that has not grown by this factor once its bracket has shrunk by
/// [`SMOOTH_SHRINK`] is a smooth maximum, not a pole (a pole's q grows by the same factor).
const POLE_GROWTH: f64 = 10.0;
const SMOOTH_SHRINK: f64 = 1.0e-2;

/// A point of a singular surface outside the horizon.
#[derive(Debug, Clone, PartialEq)]
pub struct SingularSurface {
    /// Radius of the point, in M.
    pub r: f64,
    /// Polar angle of the point, in radians.
    pub theta: f64,
    /// What is singular there.
    pub problem: String,
    /// The outer horizon, if any.
    pub horizon: Option<f64>,
}

impl fmt::Display for SingularSurface {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let outside = match self.horizon {
            Some(h) => format!("outside the outer horizon r+ = {}", Num(h)),
            None => "outside the metric's central region".to_string(),
        };
        write!(
            f,
            "the metric is singular at r = {}, theta = {} deg, {outside}: {}",
            Num(self.r),
            Num(self.theta.to_degrees()),
            self.problem
        )
    }
}

/// The largest first-order change of ln|det g| and of g_tt, g_tφ, g_rr, g_θθ, g_φφ (each
/// relative to max(|value|, 1), as in [`check_point`]) when r and θ move by their own size,
/// |dr| = |r| and |dθ| = |θ|: scale-free, bounded where the metric is smooth (a component's
/// zero included), growing like 1/|x − x_pole| towards a pole of g or a zero of det g.
/// Infinite where the metric is not finite.
pub fn relative_sensitivity<S: Spacetime + ?Sized>(m: &S, r: f64, theta: f64) -> f64 {
    let c = m.components_at(r, theta);
    let d = m.metric_derivatives(r, theta);
    let (dr, dth) = (&d[1], &d[2]);
    let block = c.g_tt * c.g_phph - c.g_tphi * c.g_tphi;
    // ∂ ln|det g| = ∂g_rr/g_rr + ∂g_θθ/g_θθ + ∂D/D, D = g_tt g_φφ − g_tφ².
    let log_det = |k: &nalgebra::Matrix4<f64>| {
        k[(1, 1)] / c.g_rr
            + k[(2, 2)] / c.g_thth
            + (k[(0, 0)] * c.g_phph + c.g_tt * k[(3, 3)] - 2.0 * c.g_tphi * k[(0, 3)]) / block
    };
    let mut worst = r.abs() * log_det(dr).abs() + theta.abs() * log_det(dth).abs();
    for (i, j, value) in [
        (0, 0, c.g_tt),
        (0, 3, c.g_tphi),
        (1, 1, c.g_rr),
        (2, 2, c.g_thth),
        (3, 3, c.g_phph),
    ] {
        let scale = value.abs().max(1.0);
        worst = worst.max((r.abs() * dr[(i, j)].abs() + theta.abs() * dth[(i, j)].abs()) / scale);
    }
    if worst.is_nan() || !c.is_finite() {
        f64::INFINITY
    } else {
        worst
    }
}

/// One grid sample.
#[derive(Clone, Copy)]
struct Sample {
    r: f64,
    q: f64,
    det: f64,
    lorentzian: bool,
    /// Whether the sign of det g is known: false where the (t, φ) block's determinant is lost
    /// in the rounding of its terms (as [`check_point`] judges it), as right beside an
    /// extremal horizon, where it vanishes like (r − r₊)².
    determined: bool,
}

fn sample<S: Spacetime + ?Sized>(m: &S, r: f64, theta: f64) -> Sample {
    let c = m.components_at(r, theta);
    let block = c.g_tt * c.g_phph - c.g_tphi * c.g_tphi;
    let det = c.g_rr * c.g_thth * block;
    let rounding = f64::EPSILON * ((c.g_tt * c.g_phph).abs() + c.g_tphi * c.g_tphi);
    let finite = c.is_finite();
    Sample {
        r,
        q: relative_sensitivity(m, r, theta),
        det,
        lorentzian: finite && c.g_rr > 0.0 && c.g_thth > 0.0 && det < 0.0,
        determined: !finite || rounding <= POINT_SENSITIVITY_LIMIT * block.abs(),
    }
}

/// The outermost point of a singular surface of `m` between its outer horizon (or, without
/// one, its central region) and `r_out`, if any (module documentation).
pub fn exterior_singularity<S: Spacetime + ?Sized>(m: &S, r_out: f64) -> Option<SingularSurface> {
    let horizon = m.outer_horizon().filter(|h| h.is_finite() && *h > 0.0);
    let radii: Vec<f64> = match horizon {
        Some(h) => {
            let near = NEAR * h.max(1.0);
            let far = r_out - h;
            if far.partial_cmp(&near) != Some(std::cmp::Ordering::Greater) {
                return None;
            }
            (0..RADII)
                .map(|k| h + near * (far / near).powf(k as f64 / (RADII - 1) as f64))
                .collect()
        }
        None => (0..RADII)
            .map(|k| {
                HORIZONLESS_NEAR * (r_out / HORIZONLESS_NEAR).powf(k as f64 / (RADII - 1) as f64)
            })
            .collect(),
    };
    // A metric declared spherically symmetric depends on θ only through g_φφ = C(r) sin²θ:
    // its singular surfaces are spheres, seen on the equator alone.
    let thetas: Vec<f64> = if m.symmetry() == Symmetry::Spherical {
        vec![PI / 2.0]
    } else {
        let count = if m.is_equatorially_symmetric() {
            ANGLES
        } else {
            2 * ANGLES - 1
        };
        (1..=count)
            .map(|j| j as f64 * PI / (2 * ANGLES) as f64)
            .collect()
    };
    let grid: Vec<Vec<Sample>> = thetas
        .iter()
        .map(|&theta| radii.iter().map(|&r| sample(m, r, theta)).collect())
        .collect();
    // Without a horizon, start outside the outermost radius that is irregular at every angle.
    let first = if horizon.is_some() {
        0
    } else {
        (0..radii.len())
            .rev()
            .find(|&k| grid.iter().all(|line| !line[k].lorentzian))
            .map_or(0, |k| k + 1)
    };
    let mut found: Option<SingularSurface> = None;
    let mut keep = |r: f64, theta: f64, problem: String| {
        if found.as_ref().is_none_or(|f| r > f.r) {
            found = Some(SingularSurface {
                r,
                theta,
                problem,
                horizon,
            });
        }
    };
    for (line, &theta) in grid.iter().zip(&thetas) {
        for k in first + 1..line.len() {
            let (a, b) = (line[k - 1], line[k]);
            if !(a.determined && b.determined) {
                continue;
            }
            if a.lorentzian != b.lorentzian || (a.det < 0.0) != (b.det < 0.0) {
                let (r, problem) = signature_change(m, theta, a, b);
                keep(r, theta, problem);
            }
            let interior = k + 1 < line.len() && line[k + 1].determined;
            if interior && b.q > a.q && b.q >= line[k + 1].q && a.lorentzian {
                if let Some((r, problem)) = pole(m, theta, a.r, line[k + 1].r, b.q) {
                    keep(r, theta, problem);
                }
            }
        }
    }
    found
}

/// Locate a change of signature between samples `a` and `b` (same θ) by bisection to
/// adjacent doubles; the radius and what is wrong there.
fn signature_change<S: Spacetime + ?Sized>(
    m: &S,
    theta: f64,
    a: Sample,
    b: Sample,
) -> (f64, String) {
    let key = |s: &Sample| (s.lorentzian, s.det < 0.0);
    let (lo, hi) =
        bisect_predicate_steps(|r| key(&sample(m, r, theta)) == key(&a), a.r, b.r, 0.0, 200);
    let (lo, hi) = (sample(m, lo, theta), sample(m, hi, theta));
    for s in [lo, hi] {
        if let Err(p) = check_point(m, s.r, theta) {
            return (s.r, describe(&p));
        }
    }
    (
        hi.r,
        format!(
            "the metric stops being a regular Lorentzian metric between r = {} and {} (det g \
             goes from {} to {})",
            Num(lo.r),
            Num(hi.r),
            Num(lo.det),
            Num(hi.det)
        ),
    )
}

/// Refine a local maximum of q in [lo, hi] by golden-section search: `Some` if it is a pole
/// confirmed by [`check_point`], `None` if it is a smooth maximum.
fn pole<S: Spacetime + ?Sized>(
    m: &S,
    theta: f64,
    lo: f64,
    hi: f64,
    q_grid: f64,
) -> Option<(f64, String)> {
    let width = hi - lo;
    let q = |r: f64| {
        let v = relative_sensitivity(m, r, theta);
        if v.is_nan() {
            f64::INFINITY
        } else {
            v
        }
    };
    let mut g =
        GoldenBracket::new(lo, hi, |r| Ok::<f64, Infallible>(q(r))).unwrap_or_else(|e| match e {});
    let mut checked_growth = false;
    for _ in 0..200 {
        if !checked_growth && g.hi - g.lo < SMOOTH_SHRINK * width {
            checked_growth = true;
            if g.f1.max(g.f2) < POLE_GROWTH * q_grid {
                return None;
            }
        }
        let x = g.shrink();
        if !g.new_point_inside() {
            break;
        }
        g.accept(q(x));
    }
    if !checked_growth && g.f1.max(g.f2) < POLE_GROWTH * q_grid {
        return None;
    }
    let best = g.best().0;
    // The pole lies within a few doubles of `best`.
    let mut r = best;
    for _ in 0..4 {
        if let Err(p) = check_point(m, r, theta) {
            if p.is_singular() {
                return Some((r, describe(&p)));
            }
        }
        r = r.next_up();
    }
    let mut r = best.next_down();
    for _ in 0..3 {
        if let Err(p) = check_point(m, r, theta) {
            if p.is_singular() {
                return Some((r, describe(&p)));
            }
        }
        r = r.next_down();
    }
    None
}

/// What [`check_point`] found, in words that print no non-finite number (an infinite
/// component "diverges").
fn describe(p: &PointProblem) -> String {
    match p {
        PointProblem::NotFinite { quantity, value } if value.is_nan() => {
            format!("{quantity} is not a number")
        }
        PointProblem::NotFinite { quantity, .. } => {
            format!("{quantity} diverges (it is not a finite number)")
        }
        other => other.to_string(),
    }
}
