//! Observables of a critical curve: size, offset, circularity, Hioki–Maeda distortion.
//!
//! The curve is star-shaped and sampled uniformly, R_k = R(ψ_k), ψ_k = 2πk/N about its
//! `origin`. Everything here converges spectrally in N for a smooth curve:
//!
//! * integrals of smooth periodic integrands use the periodic trapezoid rule, summed with
//!   compensation (Kahan–Babuška–Neumaier), so large N loses no digits to rounding;
//! * points between samples (extremes in α and β, the curve's distance from a new centre) come
//!   from the trigonometric interpolant of R(ψ) ([`TrigInterpolant`]), refined by Newton's
//!   method on the interpolant; the many evaluations of the distances from a new centre use its
//!   tabulated form ([`crate::shadow::curve::InterpolantTable`], O(1) per point), so the work
//!   grows as N log N in the number of samples.
//!
//! About a centre c, R_c(φ) is the distance from c to the curve at polar angle φ about c.
//! Two centres are in use (physics notes §3): the area centroid of the region inside the
//! curve, and the midpoint ((α_max + α_min)/2, (β_max + β_min)/2) of Johannsen & Psaltis 2010
//! (ApJ 718, 446). They differ at the 1e-3 level for fast spins; the result says which.

// `!(x > 0.0)` is used on purpose: it also rejects NaN.
#![allow(clippy::neg_cmp_op_on_partial_ord)]

pub mod resolved;

use crate::metric::Spacetime;
use crate::numerics::compensated_sums;
use crate::numerics::{safeguarded_newton, NewtonEval};
use crate::shadow::curve::{InterpolantTable, TrigInterpolant};
use crate::shadow::observer::celestial_curve;
use crate::shadow::{
    CriticalCurve, Diagnostics, Observer, PhotonSphere, RingExponents, ShadowError, ShadowResult,
    ShadowSettings, ShadowStatus,
};
// Kahan–Babuška–Neumaier summation: the sums over 10⁵ samples keep full precision.
use compensated_summation::KahanBabuskaNeumaier as Compensated;
use rayon::prelude::*;
use serde::Serialize;
use std::collections::BTreeMap;
use std::f64::consts::{PI, TAU};
use std::sync::atomic::{AtomicBool, Ordering};

/// Fewest samples a curve must have.
pub const MIN_POINTS: usize = 4;
/// Fewest polar angles used for integrals about a new centre.
const MIN_CENTRE_SAMPLES: usize = 256;
/// The Schwarzschild shadow radius 3√3 (Synge 1966), the reference of fractional deviations.
pub const SCHWARZSCHILD_SHADOW_RADIUS: f64 = 5.196_152_422_706_632;

/// The centre about which radii are measured.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum CentreChoice {
    /// The area centroid of the region inside the curve.
    #[default]
    Centroid,
    /// ((α_max + α_min)/2, (β_max + β_min)/2) (Johannsen & Psaltis 2010).
    Midpoint,
}

impl CentreChoice {
    /// Lower-case name as on the command line.
    pub fn name(&self) -> &'static str {
        match self {
            CentreChoice::Centroid => "centroid",
            CentreChoice::Midpoint => "midpoint",
        }
    }
}

/// Which edge Hioki & Maeda's reference circle passes through.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum ReferenceSide {
    /// The α_max edge (the retrograde side of a Kerr shadow with a > 0 in Bardeen's convention).
    PositiveAlpha,
    /// The α_min edge.
    NegativeAlpha,
}

/// Why observables could not be computed.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ObservablesError {
    /// Too few samples, or non-finite or non-positive radii.
    #[error("bad critical curve: {0}")]
    BadCurve(String),
    /// A ray from the chosen centre meets the curve more than once.
    #[error("the curve is not star-shaped about ({alpha}, {beta})")]
    NotStarShaped {
        /// α of the centre, in M.
        alpha: f64,
        /// β of the centre, in M.
        beta: f64,
    },
    /// A Newton refinement failed.
    #[error("{0}")]
    NotConverged(String),
    /// The solver found no critical curve (the reason), so there is nothing to measure.
    #[error("no shadow: {0}")]
    NoShadow(String),
}

/// Observables of one critical curve (lengths in M, screen coordinates (α, β)).
///
/// ```
/// use umbral::prelude::*;
///
/// // Kerr, a = 0.9, seen edge-on: the curve is flattened on the prograde (α < 0) side and
/// // shifted towards +α (Bardeen 1973, in Black Holes, Les Houches; from memory).
/// let kerr = Kerr::new(0.9).unwrap();
/// let o = shadow(&kerr, &ShadowRequest::distant(90f64.to_radians())).unwrap().observables.unwrap();
/// assert!(o.centroid_offset > 0.0 && o.alpha_max > -o.alpha_min);
/// assert!(o.circularity_deviation > 0.0);
/// // Its size stays within a few per cent of 3√3 (Johannsen & Psaltis 2010, ApJ 718, 446;
/// // from memory).
/// assert!(o.fractional_deviation_mean.abs() < 0.04);
/// assert!((o.area_radius - (o.area / std::f64::consts::PI).sqrt()).abs() < 1e-12);
/// ```
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Observables {
    /// The centre radii are measured from.
    pub centre: CentreChoice,
    /// α of that centre.
    pub centre_alpha: f64,
    /// β of that centre.
    pub centre_beta: f64,
    /// α of the area centroid, i.e. its offset along α from the screen origin (0, 0).
    pub centroid_offset: f64,
    /// β of the area centroid.
    pub centroid_offset_beta: f64,
    /// (α_max + α_min)/2, the midpoint's offset along α from the screen origin.
    pub midpoint_offset: f64,
    /// (β_max + β_min)/2.
    pub midpoint_offset_beta: f64,
    /// R̄ = (1/2π)∮R_c(φ) dφ about the chosen centre.
    pub mean_radius: f64,
    /// Area enclosed, ½∮R(ψ)² dψ.
    pub area: f64,
    /// √(Area/π).
    pub area_radius: f64,
    /// ΔC = √((1/2π)∮(R_c − R̄)² dφ)/R̄ about the chosen centre.
    pub circularity_deviation: f64,
    /// α_max − α_min.
    pub width: f64,
    /// β_max − β_min.
    pub height: f64,
    /// height/width.
    pub axis_ratio: f64,
    /// Least α on the curve.
    pub alpha_min: f64,
    /// Greatest α on the curve.
    pub alpha_max: f64,
    /// Least β on the curve.
    pub beta_min: f64,
    /// Greatest β on the curve.
    pub beta_max: f64,
    /// Radius R_s of Hioki & Maeda's reference circle.
    pub hioki_maeda_radius: f64,
    /// Hioki & Maeda's distortion δ_s = D/R_s.
    pub hioki_maeda_distortion: f64,
    /// The edge the reference circle passes through (the least flattened one).
    pub hioki_maeda_reference_side: ReferenceSide,
    /// R̄/(3√3) − 1.
    pub fractional_deviation_mean: f64,
    /// √(Area/π)/(3√3) − 1.
    pub fractional_deviation_area: f64,
    /// Passed through from the solver.
    pub horizon_radius: Option<f64>,
    /// Passed through from the solver.
    pub photon_orbit_radii: Option<[f64; 2]>,
}

/// Declares [`Quantity`]: one line per numeric field of [`Observables`] (variant, field, the
/// label the command line prints, the unit), and from it the names, labels, units and values.
macro_rules! quantities {
    ($($variant:ident => $field:ident, $label:literal, $unit:literal;)*) => {
        /// A numeric observable of a critical curve, by name: the field of [`Observables`] it
        /// reads. Names are the field names (`mean_radius`), the same in checks files, scan
        /// lines and JSON output.
        ///
        /// ```
        /// use umbral::observables::Quantity;
        ///
        /// let q: Quantity = "mean_radius".parse().unwrap();
        /// assert_eq!(q, Quantity::MeanRadius);
        /// assert_eq!(q.to_string(), "mean_radius");
        /// assert!(Quantity::names().contains(&"hioki_maeda_distortion"));
        /// assert!("radius".parse::<Quantity>().is_err());
        /// ```
        #[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
        pub enum Quantity {
            $(
                #[doc = $label]
                $variant,
            )*
        }

        impl Quantity {
            /// Every quantity, in the order of the fields of [`Observables`].
            pub const ALL: &'static [Quantity] = &[$(Quantity::$variant),*];

            /// The name: the field of [`Observables`].
            pub fn name(self) -> &'static str {
                match self {
                    $(Quantity::$variant => stringify!($field),)*
                }
            }

            /// What the command line prints beside the value.
            pub fn label(self) -> &'static str {
                match self {
                    $(Quantity::$variant => $label,)*
                }
            }

            /// The unit: `M`, `M^2` or empty for a pure number.
            pub fn unit(self) -> &'static str {
                match self {
                    $(Quantity::$variant => $unit,)*
                }
            }

            /// Its value in a set of observables.
            pub fn of(self, observables: &Observables) -> f64 {
                match self {
                    $(Quantity::$variant => observables.$field,)*
                }
            }
        }
    };
}

quantities! {
    CentreAlpha => centre_alpha, "centre (alpha)", "M";
    CentreBeta => centre_beta, "centre (beta)", "M";
    CentroidOffset => centroid_offset, "centroid offset (alpha)", "M";
    CentroidOffsetBeta => centroid_offset_beta, "centroid offset (beta)", "M";
    MidpointOffset => midpoint_offset, "midpoint offset (alpha)", "M";
    MidpointOffsetBeta => midpoint_offset_beta, "midpoint offset (beta)", "M";
    MeanRadius => mean_radius, "mean radius", "M";
    Area => area, "area", "M^2";
    AreaRadius => area_radius, "area radius", "M";
    CircularityDeviation => circularity_deviation, "circularity deviation", "";
    Width => width, "width", "M";
    Height => height, "height", "M";
    AxisRatio => axis_ratio, "axis ratio", "";
    AlphaMin => alpha_min, "alpha min", "M";
    AlphaMax => alpha_max, "alpha max", "M";
    BetaMin => beta_min, "beta min", "M";
    BetaMax => beta_max, "beta max", "M";
    HiokiMaedaRadius => hioki_maeda_radius, "Hioki-Maeda radius", "M";
    HiokiMaedaDistortion => hioki_maeda_distortion, "Hioki-Maeda distortion", "";
    FractionalDeviationMean => fractional_deviation_mean, "fractional deviation (mean)", "";
    FractionalDeviationArea => fractional_deviation_area, "fractional deviation (area)", "";
}

impl Quantity {
    /// Every name, in the order of [`Quantity::ALL`].
    pub fn names() -> Vec<&'static str> {
        Quantity::ALL.iter().map(|q| q.name()).collect()
    }
}

/// A name that is not a [`Quantity`].
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("unknown observable '{0}' (known: {known})", known = Quantity::names().join(", "))]
pub struct UnknownQuantity(pub String);

impl std::str::FromStr for Quantity {
    type Err = UnknownQuantity;
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        Quantity::ALL
            .iter()
            .copied()
            .find(|q| q.name() == s)
            .ok_or_else(|| UnknownQuantity(s.to_string()))
    }
}

impl std::fmt::Display for Quantity {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.name())
    }
}

impl Serialize for Quantity {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(self.name())
    }
}

impl Observables {
    /// The value of one quantity (the same as reading its field).
    pub fn get(&self, quantity: Quantity) -> f64 {
        quantity.of(self)
    }
}

/// The extreme point of the curve in a screen direction.
#[derive(Debug, Clone, Copy)]
struct Extreme {
    point: [f64; 2],
}

/// The point of the interpolated curve that maximises `dir · P(ψ)`, refined by safeguarded
/// Newton iteration on d/dψ (dir · P) = 0 around the best sample (the samples' (α_k, β_k)).
fn extreme(
    interp: &TrigInterpolant,
    (alphas, betas): &(Vec<f64>, Vec<f64>),
    dir: [f64; 2],
) -> Result<Extreme, ObservablesError> {
    let n = alphas.len();
    let sample = |k: usize| [alphas[k], betas[k]];
    let project = |p: [f64; 2]| dir[0] * p[0] + dir[1] * p[1];
    let k = (0..n)
        .max_by(|&i, &j| project(sample(i)).total_cmp(&project(sample(j))))
        .unwrap_or(0);
    let h = TAU / n as f64;
    let psi_k = h * k as f64;
    // f(ψ) = dir · P(ψ) − dir · origin = R (d_x cos ψ + d_y sin ψ); derivatives below.
    let derivatives = |psi: f64| -> (f64, f64) {
        let [r, r1, r2] = interp.radius_derivatives(psi);
        let (s, c) = psi.sin_cos();
        let u = dir[0] * c + dir[1] * s; // dir · e_r
        let u1 = -dir[0] * s + dir[1] * c; // d/dψ
        (r1 * u + r * u1, r2 * u + 2.0 * r1 * u1 - r * u)
    };
    let (lo, hi) = (psi_k - h, psi_k + h);
    let (g_lo, g_hi) = (derivatives(lo).0, derivatives(hi).0);
    if !(g_lo >= 0.0 && g_hi <= 0.0) {
        // No bracket on the interpolant (e.g. a flat edge with ripples): keep the best sample.
        return Ok(Extreme { point: sample(k) });
    }
    let finish = |psi: f64| {
        let point = interp.point(psi);
        let point = if project(point) >= project(sample(k)) {
            point
        } else {
            sample(k)
        };
        Ok(Extreme { point })
    };
    let eval = |psi: f64| {
        let (g, g1) = derivatives(psi);
        if g == 0.0 {
            NewtonEval::Root
        } else {
            NewtonEval::Slope(g, g1)
        }
    };
    let settled = |previous: f64, psi: f64, lo: f64, hi: f64| {
        (psi - previous).abs() <= 4.0 * f64::EPSILON * (1.0 + previous.abs())
            || hi - lo <= 4.0 * f64::EPSILON * (1.0 + psi.abs())
    };
    match safeguarded_newton(eval, [lo, hi], psi_k, 100, settled) {
        Some(psi) => finish(psi),
        None => Err(ObservablesError::NotConverged(format!(
            "extreme of the curve in direction {dir:?} did not converge"
        ))),
    }
}

/// The distance R_c(φ_j) from `centre` to the curve at the polar angles φ_j = 2πj/`samples`
/// about `centre`, from the trigonometric interpolant of the curve (evaluated through its
/// table, [`crate::shadow::curve::InterpolantTable`]: O(N log N + samples) in all).
///
/// The ray-curve intersection solves F(ψ) = (P(ψ) − c) × e_φ = 0, i.e.
/// (o − c)_α sin φ − (o − c)_β cos φ + R(ψ) sin(φ − ψ) = 0, by safeguarded Newton iteration
/// inside the bracket given by the two samples whose polar angles about c straddle φ. Fails
/// with `NotStarShaped` if those angles do not increase monotonically once round.
///
/// ```
/// use umbral::shadow::CriticalCurve;
/// use umbral::observables::radii_about;
/// // A circle of radius 5 centred at (1, 0) but sampled about the screen origin.
/// let curve = CriticalCurve::from_polar([0.0, 0.0], 64, |p| p.cos() + (25.0 - p.sin().powi(2)).sqrt());
/// let radii = radii_about(&curve, [1.0, 0.0], 16).unwrap();
/// assert!(radii.iter().all(|r| (r - 5.0).abs() < 1e-12));
/// ```
pub fn radii_about(
    curve: &CriticalCurve,
    centre: [f64; 2],
    samples: usize,
) -> Result<Vec<f64>, ObservablesError> {
    curve
        .validate(MIN_POINTS)
        .map_err(ObservablesError::BadCurve)?;
    // R and R′ between samples in O(1) each, so the whole is O(N log N + samples).
    let alpha_beta = curve.alpha_beta();
    radii_about_with(
        curve,
        &alpha_beta,
        &curve.interpolant().table(),
        centre,
        samples,
    )
}

/// [`radii_about`] with the curve's sample points (α_k, β_k) and interpolant table already
/// built (a validated curve).
fn radii_about_with(
    curve: &CriticalCurve,
    (alphas, betas): &(Vec<f64>, Vec<f64>),
    table: &InterpolantTable,
    centre: [f64; 2],
    samples: usize,
) -> Result<Vec<f64>, ObservablesError> {
    if samples == 0 || !centre.iter().all(|x| x.is_finite()) {
        return Err(ObservablesError::BadCurve(format!(
            "need a finite centre and at least one angle, got {centre:?} and {samples}"
        )));
    }
    let n = curve.len();
    let not_star = || ObservablesError::NotStarShaped {
        alpha: centre[0],
        beta: centre[1],
    };
    let angles = unwrapped_angles(alphas, betas, centre).ok_or_else(not_star)?;
    let d = [curve.origin[0] - centre[0], curve.origin[1] - centre[1]];
    let distance_at = |j: usize| -> Result<f64, ObservablesError> {
        // Target angle in [angles[0], angles[0] + 2π).
        let mut phi = TAU * j as f64 / samples as f64;
        while phi < angles[0] {
            phi += TAU;
        }
        while phi >= angles[0] + TAU {
            phi -= TAU;
        }
        // The bracket: the last sample angle at or below φ (the angles increase).
        let k = angles.partition_point(|&a| a <= phi).saturating_sub(1);
        let k_bracket = k.min(n - 1);
        let (sp, cp) = phi.sin_cos();
        let Some(psi) = ray_crossing(table, d, &angles, k_bracket, phi) else {
            return Err(ObservablesError::NotConverged(format!(
                "ray from {centre:?} at angle {phi} did not meet the curve"
            )));
        };
        let r = table.radius(psi);
        let (s, c) = psi.sin_cos();
        let distance = (d[0] + r * c) * cp + (d[1] + r * s) * sp;
        if !(distance > 0.0 && distance.is_finite()) {
            return Err(not_star());
        }
        Ok(distance)
    };
    // Each angle alone, in parallel chunks. A failed angle is marked NaN (a distance is
    // otherwise positive and finite) and the first in angle order is solved again for its
    // error: the same error at any thread count, and no list of results to unpack.
    let failed = AtomicBool::new(false);
    let distances: Vec<f64> = (0..samples)
        .into_par_iter()
        .with_min_len(ANGLES_PER_TASK)
        .with_max_len(2 * ANGLES_PER_TASK)
        .map(|j| {
            distance_at(j).unwrap_or_else(|_| {
                failed.store(true, Ordering::Relaxed);
                f64::NAN
            })
        })
        .collect();
    if !failed.into_inner() {
        return Ok(distances);
    }
    let first = distances.iter().position(|d| d.is_nan()).unwrap_or(0);
    Err(distance_at(first).err().unwrap_or_else(not_star))
}

/// Angles per parallel task of [`radii_about`]: each takes well under a microsecond, so a task
/// of fewer would cost more to schedule than to compute.
const ANGLES_PER_TASK: usize = 2048;

/// Polar angles of the curve's samples about `centre`, unwrapped, then the first plus 2π:
/// `None` unless they increase by at most π per step and by 2π once round (a star-shaped
/// curve).
///
/// Unwrapping adds 2π·w_k to the raw angle (atan2) of sample k, w_k counting the steps
/// j ≤ k where the raw angle falls by π or more (+1) or rises by more than π (−1): each step
/// is then taken in (−π, π]. Every pass over the samples runs in parallel chunks. (A step
/// within rounding of π, the centre on the chord between two samples, may be decided either
/// way.)
fn unwrapped_angles(alphas: &[f64], betas: &[f64], centre: [f64; 2]) -> Option<Vec<f64>> {
    let n = alphas.len();
    let chunked = |range: std::ops::Range<usize>| {
        range
            .into_par_iter()
            .with_min_len(ANGLES_PER_TASK)
            .with_max_len(2 * ANGLES_PER_TASK)
    };
    // The raw angles (NaN at the centre itself).
    let raws: Vec<f64> = chunked(0..n)
        .map(|k| {
            let (x, y) = (alphas[k] - centre[0], betas[k] - centre[1]);
            if x == 0.0 && y == 0.0 {
                f64::NAN
            } else {
                y.atan2(x)
            }
        })
        .collect();
    // The steps across the branch cut of atan2, in order: (k, ±1); a NaN anywhere, (k, NaN).
    let wraps: Vec<(usize, f64)> = chunked(0..n)
        .filter_map(|k| {
            let step = if k == 0 { 0.0 } else { raws[k] - raws[k - 1] };
            if raws[k].is_nan() {
                Some((k, f64::NAN))
            } else if step <= -PI {
                Some((k, 1.0))
            } else if step > PI {
                Some((k, -1.0))
            } else {
                None
            }
        })
        .collect();
    if wraps.iter().any(|(_, dw)| dw.is_nan()) {
        return None;
    }
    // w after each wrap (a handful at most for a curve that winds once).
    let turns: Vec<f64> = wraps
        .iter()
        .scan(0.0, |w, &(_, dw)| {
            *w += dw;
            Some(*w)
        })
        .collect();
    let unwrapped = |k: usize| match wraps.partition_point(|&(j, _)| j <= k) {
        0 => raws[k],
        i => raws[k] + TAU * turns[i - 1],
    };
    // The angles, each checked against the one before (recomputed, the same value).
    let decreasing = AtomicBool::new(false);
    let mut angles = Vec::with_capacity(n + 1);
    angles.par_extend(chunked(0..n).map(|k| {
        let angle = unwrapped(k);
        if k > 0 && !(angle > unwrapped(k - 1)) {
            decreasing.store(true, Ordering::Relaxed);
        }
        angle
    }));
    if decreasing.into_inner() {
        return None;
    }
    let closing = angles[n - 1] + {
        let mut d = raws[0] - angles[n - 1];
        while d <= -PI {
            d += TAU;
        }
        while d > PI {
            d -= TAU;
        }
        d
    };
    if !(closing > angles[n - 1]) || (closing - angles[0] - TAU).abs() > 1e-9 {
        return None;
    }
    angles.push(angles[0] + TAU);
    Some(angles)
}

/// The curve parameter ψ where the ray from the centre at polar angle `phi` meets the curve,
/// between samples `k` and `k + 1` (`angles` from [`unwrapped_angles`]; `d` = origin −
/// centre): the root of F(ψ) = d × e_φ + R(ψ) sin(φ − ψ) by [`safeguarded_newton`] from the
/// linear interpolation of the angles. `None` if it does not converge.
fn ray_crossing(
    table: &InterpolantTable,
    d: [f64; 2],
    angles: &[f64],
    k: usize,
    phi: f64,
) -> Option<f64> {
    let h = TAU / (angles.len() - 1) as f64;
    let (lo, hi) = (h * k as f64, h * (k + 1) as f64);
    let (sp, cp) = phi.sin_cos();
    let offset = d[0] * sp - d[1] * cp;
    let f = |psi: f64| -> (f64, f64, f64) {
        let [r, r1] = table.radius_slope(psi);
        let (s, c) = (phi - psi).sin_cos();
        (offset + r * s, r1 * s - r * c, r)
    };
    let start = lo + h * (phi - angles[k]) / (angles[k + 1] - angles[k]);
    let eval = |psi: f64| {
        let (value, slope, r) = f(psi);
        // At the rounding level of F the root is placed to a few ulps: stop.
        if value.abs() <= 2.0 * f64::EPSILON * (offset.abs() + r) {
            NewtonEval::Root
        } else {
            // F > 0 before the intersection (the curve point is at a smaller angle), < 0
            // after.
            NewtonEval::Slope(value, slope)
        }
    };
    let settled = |previous: f64, psi: f64, lo: f64, hi: f64| {
        (psi - previous).abs() <= 2.0 * f64::EPSILON * (1.0 + psi.abs())
            || hi - lo <= 2.0 * f64::EPSILON * (1.0 + psi.abs())
    };
    safeguarded_newton(eval, [lo, hi], start, 100, settled)
}

/// The mean radius and circularity deviation about the area centroid (the
/// [`Observables::mean_radius`] and [`Observables::circularity_deviation`] of
/// [`CentreChoice::Centroid`]) from the curve's own samples, without tracing rays from the
/// centroid: for the curve P(ψ) = o + R(ψ)(cos ψ, sin ψ) and ρ, φ its polar coordinates about
/// the centroid c, dφ = ((P − c) × P′)/ρ² dψ, so
///
/// ⟨ρ^k⟩_φ = (1/2π) ∮ ρ^k dφ = (1/2π) ∮ ρ^(k−2) ((P − c) × P′) dψ,
///
/// a smooth periodic integrand in ψ summed by the trapezoid rule on the N samples, with R′ at
/// the samples from the trigonometric interpolant; it converges spectrally like the
/// uniform-φ average the observables take (Trefethen & Weideman 2014, SIAM Rev. 56, 385).
/// `None` when the curve is not star-shaped about its centroid as seen from the samples
/// ((P − c) × P′ ≤ 0 somewhere), or is degenerate; use [`Observables::from_curve`] then.
///
/// ```
/// use umbral::observables::{centroid_size, CentreChoice, Observables};
/// use umbral::shadow::CriticalCurve;
/// // A circle of radius 5 about (1, 0), sampled about the origin, is a circle about its centroid.
/// let curve = CriticalCurve::from_polar([0.0, 0.0], 64, |p| p.cos() + (25.0 - p.sin().powi(2)).sqrt());
/// let (mean, circularity) = centroid_size(&curve).unwrap();
/// assert!((mean - 5.0).abs() < 1e-12 && circularity < 1e-12);
/// ```
pub fn centroid_size(curve: &CriticalCurve) -> Option<(f64, f64)> {
    let n = curve.len();
    if n < MIN_POINTS || curve.validate(MIN_POINTS).is_err() {
        return None;
    }
    let interp = curve.interpolant();
    let (_, c) = area_and_centroid(curve);
    // Per sample: dφ/dψ and ρ.
    let mut nodes = Vec::with_capacity(n);
    for (k, &r) in curve.radii.iter().enumerate() {
        let psi = curve.angle(k);
        let (s, co) = psi.sin_cos();
        let dr = interp.radius_derivatives(psi)[1];
        let x = curve.origin[0] + r * co - c[0];
        let y = curve.origin[1] + r * s - c[1];
        let (dx, dy) = (dr * co - r * s, dr * s + r * co);
        let rho2 = x * x + y * y;
        let dphi = (x * dy - y * dx) / rho2;
        if !(dphi > 0.0 && dphi.is_finite()) {
            return None;
        }
        nodes.push((dphi, rho2.sqrt()));
    }
    // ∮ dφ = 2π exactly for a star-shaped curve; dividing by the sum of dφ instead of 2π
    // cancels the quadrature's error in it.
    let turn = nodes
        .iter()
        .map(|&(d, _)| d)
        .sum::<Compensated<f64>>()
        .total();
    let mean = nodes
        .iter()
        .map(|&(d, rho)| d * rho)
        .sum::<Compensated<f64>>()
        .total()
        / turn;
    let variance = nodes
        .iter()
        .map(|&(d, rho)| d * (rho - mean).powi(2))
        .sum::<Compensated<f64>>()
        .total()
        / turn;
    (mean.is_finite() && mean > 0.0).then(|| (mean, variance.sqrt() / mean))
}

/// The estimated sampling error of a quantity q computed from a curve's N samples: q on
/// every second and every fourth sample (the curves of N/2 and N/4 points about the same
/// origin) gives e₂ = |q_N − q_{N/2}| and e₄ = |q_N − q_{N/4}|, and the estimate is e₂²/e₄
/// when e₄ > e₂, else e₂. For a smooth closed curve the trapezoid rule's error falls
/// geometrically with N (Trefethen & Weideman 2014, SIAM Rev. 56, 385), e_M ≈ C ρ⁻ᴹ, so
/// e₂ ≈ e_{N/2}, e₄ ≈ e_{N/4}, and e₂²/e₄ ≈ e_{3N/4}: above e_N by the factor e₄/e₂ = ρ^{N/4},
/// a deliberate margin. While the errors do not yet fall that way the estimate is e₂, the
/// error of q_{N/2}. On Kerr's mean radius (separable curves of 32–256 points against 4096,
/// 17°–90°, a from 0.9 to 0.9999) it was never below the true error except at the level of
/// rounding (1e-13 M), and up to about 700 times above it (tests/sampling_error.rs). `None`
/// when N is not a multiple of 4 or q is not defined on a subset.
///
/// ```
/// use umbral::observables::{centroid_size, sampling_error};
/// use umbral::shadow::CriticalCurve;
/// // An ellipse with semi-axes 5 and 2 about its centre, on 32 points: the mean radius is
/// // 1.1e-6 off (against 4096 points), and estimated to be 3.3e-5 off.
/// let ellipse = |n| CriticalCurve::from_polar([0.0, 0.0], n, |p: f64| {
///     10.0 / (4.0 * p.cos().powi(2) + 25.0 * p.sin().powi(2)).sqrt()
/// });
/// let size = |c: &CriticalCurve| centroid_size(c).map(|s| s.0);
/// let estimate = sampling_error(&ellipse(32), size).unwrap();
/// let error = (size(&ellipse(32)).unwrap() - size(&ellipse(4096)).unwrap()).abs();
/// assert!(error <= estimate && estimate < 1e-4);
/// ```
pub fn sampling_error(
    curve: &CriticalCurve,
    quantity: impl Fn(&CriticalCurve) -> Option<f64>,
) -> Option<f64> {
    let n = curve.len();
    if n == 0 || !n.is_multiple_of(4) {
        return None;
    }
    let every = |k: usize| CriticalCurve {
        origin: curve.origin,
        radii: curve.radii.iter().step_by(k).copied().collect(),
    };
    let full = quantity(curve)?;
    let estimate = extrapolated_error(full, quantity(&every(2))?, quantity(&every(4))?);
    estimate.is_finite().then_some(estimate)
}

/// The error of `full` (a quantity on N points) estimated from the same quantity on N/2 and
/// N/4 points ([`sampling_error`]): e₂²/e₄ when e₄ > e₂, else e₂.
pub(crate) fn extrapolated_error(full: f64, half: f64, quarter: f64) -> f64 {
    let e2 = (half - full).abs();
    let e4 = (quarter - full).abs();
    if e4 > e2 {
        e2 * e2 / e4
    } else {
        e2
    }
}

/// Area ½∮R² dψ and area centroid ((1/3A)∮R³ cos ψ dψ, (1/3A)∮R³ sin ψ dψ) + origin, by the
/// periodic trapezoid rule on the samples.
fn area_and_centroid(curve: &CriticalCurve) -> (f64, [f64; 2]) {
    let n = curve.len();
    let h = TAU / n as f64;
    let [area, mx, my] = compensated_sums(n, |k| {
        let r = curve.radii[k];
        let (s, c) = curve.angle(k).sin_cos();
        [0.5 * r * r, r * r * r * c / 3.0, r * r * r * s / 3.0]
    });
    let area = area * h;
    (
        area,
        [
            curve.origin[0] + mx * h / area,
            curve.origin[1] + my * h / area,
        ],
    )
}

/// The circle through three points: (centre, radius); `None` if they are collinear.
fn circumcircle(p: [f64; 2], q: [f64; 2], r: [f64; 2]) -> Option<([f64; 2], f64)> {
    let (bx, by) = (q[0] - p[0], q[1] - p[1]);
    let (cx, cy) = (r[0] - p[0], r[1] - p[1]);
    let det = 2.0 * (bx * cy - by * cx);
    if det == 0.0 || !det.is_finite() {
        return None;
    }
    let (b2, c2) = (bx * bx + by * by, cx * cx + cy * cy);
    let ux = (cy * b2 - by * c2) / det;
    let uy = (bx * c2 - cx * b2) / det;
    Some(([p[0] + ux, p[1] + uy], (ux * ux + uy * uy).sqrt()))
}

/// Distance of `x` from the line through `a` and `b`.
fn distance_to_line(x: [f64; 2], a: [f64; 2], b: [f64; 2]) -> f64 {
    let (dx, dy) = (b[0] - a[0], b[1] - a[1]);
    ((x[0] - a[0]) * dy - (x[1] - a[1]) * dx).abs() / dx.hypot(dy)
}

impl Observables {
    /// All observables of `curve` about the chosen centre.
    ///
    /// Definitions (physics notes §3):
    /// * R̄ = (1/2π)∮R_c dφ and ΔC = √((1/2π)∮(R_c − R̄)² dφ)/R̄, the circularity deviation of
    ///   the horizon-scale tests of GR (Johannsen et al. 2016, Phys. Rev. Lett. 116, 031101;
    ///   EHT Collaboration 2019, ApJL 875, L6; definition recalled, from memory), by the
    ///   trapezoid rule over max(N, 256) angles about the centre;
    /// * area ½∮R² dψ and centroid by the trapezoid rule about the curve's origin;
    /// * α/β extremes from the interpolant, refined by Newton; width, height, axis ratio =
    ///   height/width;
    /// * Hioki & Maeda 2009 (Phys. Rev. D 80, 024042): the reference circle passes through
    ///   the top (β_max) and bottom (β_min) points and the α-extreme point on the least
    ///   flattened side, taken as the one farther from the line through top and bottom (the
    ///   retrograde side of a Kerr shadow). R_s is its radius, and δ_s = D/R_s with D the
    ///   distance between the circle's α-extreme and the curve's α-extreme on the other side
    ///   (positive when the curve lies inside the circle). For a curve symmetric about β = 0 this
    ///   is R_s = [(α_t − α_r)² + β_t²]/(2|α_r − α_t|);
    /// * fractional deviations R̄/(3√3) − 1 and √(A/π)/(3√3) − 1.
    ///
    /// ```
    /// use umbral::observables::{CentreChoice, Observables};
    /// use umbral::shadow::CriticalCurve;
    ///
    /// let circle = CriticalCurve::circle([0.5, 0.0], 27f64.sqrt(), 64);
    /// let obs = Observables::from_curve(&circle, CentreChoice::Centroid, None, None).unwrap();
    /// assert!(obs.circularity_deviation < 1e-14);
    /// assert!((obs.centroid_offset - 0.5).abs() < 1e-14);
    /// assert!(obs.fractional_deviation_mean.abs() < 1e-14);
    /// ```
    // Long: one formula after another for the observables (extremes, area, centroid, radii, circularity, Hioki–Maeda fit), each using those before, ending in the struct literal; the pieces are already helpers.
    pub fn from_curve(
        curve: &CriticalCurve,
        centre: CentreChoice,
        horizon_radius: Option<f64>,
        photon_orbit_radii: Option<[f64; 2]>,
    ) -> Result<Observables, ObservablesError> {
        curve
            .validate(MIN_POINTS)
            .map_err(ObservablesError::BadCurve)?;
        let interp = curve.interpolant();
        let alpha_beta = curve.alpha_beta();
        // The four extremes in parallel (each sums the interpolant's series, O(N) per step).
        let directions = [[1.0, 0.0], [-1.0, 0.0], [0.0, 1.0], [0.0, -1.0]];
        let found: Vec<Result<Extreme, ObservablesError>> = directions
            .par_iter()
            .map(|&dir| extreme(&interp, &alpha_beta, dir))
            .collect();
        let mut found = found.into_iter();
        let mut next = || -> Result<[f64; 2], ObservablesError> {
            Ok(found.next().expect("four directions")?.point)
        };
        let (right, left, top, bottom) = (next()?, next()?, next()?, next()?);
        let (alpha_min, alpha_max) = (left[0], right[0]);
        let (beta_min, beta_max) = (bottom[1], top[1]);
        let (area, centroid) = area_and_centroid(curve);
        let midpoint = [0.5 * (alpha_max + alpha_min), 0.5 * (beta_max + beta_min)];
        let centre_point = match centre {
            CentreChoice::Centroid => centroid,
            CentreChoice::Midpoint => midpoint,
        };
        let radii = radii_about_with(
            curve,
            &alpha_beta,
            &interp.table(),
            centre_point,
            curve.len().max(MIN_CENTRE_SAMPLES),
        )?;
        let m = radii.len() as f64;
        let [sum] = compensated_sums(radii.len(), |j| [radii[j]]);
        let mean_radius = sum / m;
        let [squares] = compensated_sums(radii.len(), |j| [(radii[j] - mean_radius).powi(2)]);
        let variance = squares / m;
        let circularity_deviation = variance.sqrt() / mean_radius;
        let width = alpha_max - alpha_min;
        let height = beta_max - beta_min;

        // Hioki–Maeda: reference circle through top, bottom and the less flattened edge.
        let (reference, flattened, side) =
            if distance_to_line(right, top, bottom) >= distance_to_line(left, top, bottom) {
                (right, left, ReferenceSide::PositiveAlpha)
            } else {
                (left, right, ReferenceSide::NegativeAlpha)
            };
        let (circle_centre, hioki_maeda_radius) =
            circumcircle(top, bottom, reference).ok_or_else(|| {
                ObservablesError::BadCurve(
                    "top, bottom and edge points are collinear: no Hioki-Maeda circle".into(),
                )
            })?;
        let gap = match side {
            ReferenceSide::PositiveAlpha => flattened[0] - (circle_centre[0] - hioki_maeda_radius),
            ReferenceSide::NegativeAlpha => (circle_centre[0] + hioki_maeda_radius) - flattened[0],
        };
        let area_radius = (area / PI).sqrt();
        Ok(Observables {
            centre,
            centre_alpha: centre_point[0],
            centre_beta: centre_point[1],
            centroid_offset: centroid[0],
            centroid_offset_beta: centroid[1],
            midpoint_offset: midpoint[0],
            midpoint_offset_beta: midpoint[1],
            mean_radius,
            area,
            area_radius,
            circularity_deviation,
            width,
            height,
            axis_ratio: height / width,
            alpha_min,
            alpha_max,
            beta_min,
            beta_max,
            hioki_maeda_radius,
            hioki_maeda_distortion: gap / hioki_maeda_radius,
            hioki_maeda_reference_side: side,
            fractional_deviation_mean: mean_radius / SCHWARZSCHILD_SHADOW_RADIUS - 1.0,
            fractional_deviation_area: area_radius / SCHWARZSCHILD_SHADOW_RADIUS - 1.0,
            horizon_radius,
            photon_orbit_radii,
        })
    }
}

/// One shadow to compute: who looks, how the curve is solved, and the centre observables are
/// measured about.
///
/// ```
/// use umbral::prelude::*;
///
/// let request = ShadowRequest::distant(30f64.to_radians()).with_solver("raytrace").unwrap();
/// assert_eq!(request.settings.solver.name(), "raytrace");
/// assert!(ShadowRequest::distant(1.0).with_solver("no-such-solver").is_err());
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ShadowRequest {
    /// The observer (distant or at a finite radius).
    pub observer: Observer,
    /// Points, boundary tolerance and solver.
    pub settings: ShadowSettings,
    /// The centre radii are measured about.
    pub centre: CentreChoice,
    /// Solve for the curve only ([`crate::shadow::solve_curve`]): the solver may skip the
    /// photon-ring exponents (`result.exponents` is then `None`); the curve and its
    /// observables are the same.
    pub curve_only: bool,
}

impl ShadowRequest {
    /// A distant observer at `inclination` (radians from the spin axis), the default settings
    /// (256 points, 1e-8 M, `auto` solver) and the area centroid.
    pub fn distant(inclination: f64) -> Self {
        ShadowRequest {
            observer: Observer::distant(inclination),
            settings: ShadowSettings::default(),
            centre: CentreChoice::Centroid,
            curve_only: false,
        }
    }

    /// The same request for the curve only: no photon-ring exponents, which the separable
    /// solver evaluates by a polar quadrature per orbit (several times the cost of the curve).
    /// The curve and its observables are those of the full solve.
    ///
    /// ```
    /// use umbral::prelude::*;
    ///
    /// let kerr = Kerr::new(0.9).unwrap();
    /// let request = ShadowRequest::distant(60f64.to_radians());
    /// let full = shadow(&kerr, &request).unwrap();
    /// let curve = shadow(&kerr, &request.curve_only()).unwrap();
    /// assert!(full.result.exponents.is_some());
    /// assert!(curve.result.exponents.is_none());
    /// assert_eq!(full.result.curve, curve.result.curve);
    /// assert_eq!(full.observables, curve.observables);
    /// ```
    pub fn curve_only(mut self) -> Self {
        self.curve_only = true;
        self
    }

    /// The same request with the solver of this name (`auto` or a registered one).
    pub fn with_solver(mut self, name: &str) -> Result<Self, ShadowError> {
        self.settings.solver = name.parse()?;
        Ok(self)
    }
}

/// A solved shadow: the solver's result and the observables of its curve.
///
/// ```
/// use umbral::prelude::*;
///
/// // Reissner–Nordström has photon spheres r = (3 ± √(9 − 8q²))/2 only for q² ≤ 9/8 (from
/// // d(A/r²)/dr = 0, A = 1 − 2/r + q²/r², Reissner 1916, Nordström 1918): beyond, no shadow,
/// // and the observables say why.
/// let rn = ReissnerNordstrom::new(1.2).unwrap();
/// let seen = shadow(&rn, &ShadowRequest::distant(1.0)).unwrap();
/// assert!(seen.observables.unwrap_err().to_string().contains("no photon sphere"));
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct Shadow {
    /// Everything the solver returned (curve, exponents, diagnostics).
    pub result: ShadowResult,
    /// The observables, or why there are none (no shadow, or a curve they cannot be read from).
    pub observables: Result<Observables, ObservablesError>,
}

/// Solve a metric's shadow and measure it: the entry point for a program.
///
/// Errors are those of [`crate::shadow::solve`] (a bad request, a solver that does not apply,
/// no convergence); a metric without a shadow is a result, with `observables` saying why.
/// With [`ShadowRequest::curve_only()`] it runs [`crate::shadow::solve_curve`] instead.
///
/// ```
/// use umbral::prelude::*;
///
/// let kerr = Kerr::new(0.9).unwrap();
/// let seen = shadow(&kerr, &ShadowRequest::distant(60f64.to_radians())).unwrap();
/// println!("mean radius {} M", seen.observables.unwrap().get(Quantity::MeanRadius));
///
/// // a = 0: the circle of radius 3√3 (Synge 1966).
/// let circle = shadow(&Schwarzschild, &ShadowRequest::distant(1.0)).unwrap();
/// assert!((circle.observables.unwrap().mean_radius - 27f64.sqrt()).abs() < 1e-12);
/// ```
pub fn shadow(spacetime: &dyn Spacetime, request: &ShadowRequest) -> Result<Shadow, ShadowError> {
    let solver = if request.curve_only {
        crate::shadow::solve_curve
    } else {
        crate::shadow::solve
    };
    let result = solver(spacetime, &request.observer, &request.settings)?;
    let observables = match (&result.status, &result.curve) {
        (ShadowStatus::NoShadow { reason }, _) => Err(ObservablesError::NoShadow(reason.clone())),
        (ShadowStatus::Shadow, None) => Err(ObservablesError::NoShadow(
            "the solver reported a shadow without a curve".into(),
        )),
        (ShadowStatus::Shadow, Some(curve)) => Observables::from_curve(
            curve,
            request.centre,
            spacetime.outer_horizon(),
            result.photon_orbit_radii,
        ),
    };
    Ok(Shadow {
        result,
        observables,
    })
}

/// The curve's screen coordinates (α, β) in M.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CurvePoints {
    /// α of each point.
    pub alpha: Vec<f64>,
    /// β of each point.
    pub beta: Vec<f64>,
}

/// Celestial coordinates of the curve for an observer at finite radius: the angle Θ from
/// the direction to the centre and the azimuth Ψ from +α towards +β, in radians.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CelestialCurve {
    /// Θ of each point.
    pub theta: Vec<f64>,
    /// Ψ of each point.
    pub psi: Vec<f64>,
}

/// One shadow as a report: what `umbral shadow --json` prints and the Python package returns.
#[derive(Debug, Clone, Serialize)]
pub struct ShadowReport {
    /// The metric's name.
    pub metric: String,
    /// Every metric parameter, by name.
    pub parameters: BTreeMap<String, f64>,
    /// The observer's inclination in degrees.
    pub inclination_deg: f64,
    /// The observer's radius in M, `None` for a distant observer.
    pub observer_radius: Option<f64>,
    /// The solver that ran.
    pub solver: &'static str,
    /// `shadow` or `no_shadow`.
    pub status: &'static str,
    /// Why there is no shadow.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub reason: Option<String>,
    /// The observables of the curve, when there is one.
    pub observables: Option<Observables>,
    /// Photon-ring exponents (Lyapunov exponent, demagnification γ per half orbit).
    pub exponents: Option<RingExponents>,
    /// Why the exponents are undefined for this shadow, when they are.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub exponents_undefined: Option<String>,
    /// Every photon sphere found (spherical solver).
    pub photon_spheres: Vec<PhotonSphere>,
    /// The curve, when there is one.
    pub curve: Option<CurvePoints>,
    /// Spherical metrics: the strong-deflection coefficient and the areal radii (see
    /// [`SphericalExtras`]).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub spherical: Option<SphericalExtras>,
    /// Each curve point's photon orbit (radius, and γ when computed), when the solver knows
    /// it.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub orbits: Option<Vec<crate::shadow::CurveOrbit>>,
    /// For an observer at finite radius: the curve in celestial angles (screen coordinates
    /// are √g_θθ(r_o, θ_o) sin Θ along the direction Ψ).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub celestial: Option<CelestialCurve>,
    /// The solver's diagnostics.
    pub diagnostics: Diagnostics,
}

/// What a spherical metric's shadow adds: Bozza's strong-deflection coefficient, and where
/// the areal radius √C differs from r, the areal radii of the horizon and photon sphere.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SphericalExtras {
    /// ā of the strong-deflection limit α(b) = −ā ln(b/b_c − 1) + b̄ (Bozza 2002, Phys. Rev. D
    /// 66, 103001), from the photon-ring exponent: ā = π/γ. Derivation: one more half orbit
    /// (Δα = π) multiplies b/b_c − 1 by e^(−π/ā), which is γ's definition (Johnson et al.
    /// 2020, Sci. Adv. 6, eaaz1310). Schwarzschild: ā = 1.
    pub strong_deflection_coefficient: f64,
    /// √C at the photon sphere that bounds capture, in M, when C ≠ r² there.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub areal_photon_sphere_radius: Option<f64>,
    /// √C at the outer horizon, in M, when C ≠ r² there.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub areal_horizon_radius: Option<f64>,
}

/// The spherical extras of a spherical solver's shadow with an exponent (`None` otherwise).
fn spherical_extras(metric: &dyn Spacetime, result: &ShadowResult) -> Option<SphericalExtras> {
    if result.solver != "spherical" {
        return None;
    }
    let gamma = result.exponents.as_ref()?.gamma_min;
    let [r_ph, _] = result.photon_orbit_radii?;
    metric.spherical_jet(r_ph).ok()?;
    let areal = |r: f64| -> Option<f64> {
        let c = metric.spherical_jet(r).ok()?.c[0];
        let root = c.sqrt();
        (c > 0.0 && (root - r).abs() > 1e-12 * r).then_some(root)
    };
    Some(SphericalExtras {
        strong_deflection_coefficient: std::f64::consts::PI / gamma,
        areal_photon_sphere_radius: areal(r_ph),
        areal_horizon_radius: metric.outer_horizon().and_then(areal),
    })
}

/// Why a shadow could not be reported.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ReportError {
    /// The solver could not run or failed.
    #[error(transparent)]
    Shadow(#[from] ShadowError),
    /// The curve's observables could not be read.
    #[error(transparent)]
    Observables(#[from] ObservablesError),
}

/// Solve one shadow with [`shadow`] and report it: the status, the observables (none without
/// a curve; a curve they cannot be read from is an error), the curve, and for an observer at
/// finite radius its celestial angles. `inclination_deg` is the observer's inclination as
/// given, for the report.
///
/// ```
/// use umbral::metrics::Kerr;
/// use umbral::observables::{shadow_report, CentreChoice};
/// use umbral::shadow::{Observer, ShadowSettings};
///
/// let kerr = Kerr::new(0.5).unwrap();
/// let observer = Observer::distant(30f64.to_radians());
/// let report =
///     shadow_report(&kerr, 30.0, &observer, &ShadowSettings::default(), CentreChoice::Centroid)
///         .unwrap();
/// assert_eq!((report.status, report.solver), ("shadow", "separable"));
/// assert_eq!(report.parameters["a"], 0.5);
/// assert_eq!(report.curve.unwrap().alpha.len(), 256);
/// ```
pub fn shadow_report(
    metric: &dyn Spacetime,
    inclination_deg: f64,
    observer: &Observer,
    settings: &ShadowSettings,
    centre: CentreChoice,
) -> Result<ShadowReport, ReportError> {
    let request = ShadowRequest {
        observer: *observer,
        settings: *settings,
        centre,
        curve_only: false,
    };
    let Shadow {
        result,
        observables,
    } = shadow(metric, &request)?;
    let (status, reason) = match &result.status {
        ShadowStatus::Shadow => ("shadow", None),
        ShadowStatus::NoShadow { reason } => ("no_shadow", Some(reason.clone())),
    };
    // No curve means no observables; a curve they cannot be read from is an error.
    let observables = match observables {
        Ok(o) => Some(o),
        Err(ObservablesError::NoShadow(_)) => None,
        Err(e) => return Err(e.into()),
    };
    let curve = result.curve.as_ref().map(|c| {
        let (alpha, beta) = c.alpha_beta();
        CurvePoints { alpha, beta }
    });
    Ok(ShadowReport {
        metric: metric.info().name.clone(),
        parameters: crate::metric::parameter_map(metric),
        inclination_deg,
        observer_radius: observer.radius,
        solver: result.solver,
        status,
        reason,
        observables,
        exponents: result.exponents.clone(),
        exponents_undefined: result.diagnostics.exponents_undefined.clone(),
        photon_spheres: result.photon_spheres.clone(),
        celestial: match (observer.radius, &curve) {
            (Some(_), Some(c)) => {
                let (theta, psi) = celestial_curve(metric, observer, &c.alpha, &c.beta)?;
                Some(CelestialCurve { theta, psi })
            }
            _ => None,
        },
        spherical: spherical_extras(metric, &result),
        curve,
        orbits: result.orbits.clone(),
        diagnostics: result.diagnostics,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The unwrapping as a single pass (the definition): each raw angle moved by 2π until it
    /// lies within π of the previous angle, and required to increase.
    fn unwrapped_in_order(alphas: &[f64], betas: &[f64], centre: [f64; 2]) -> Option<Vec<f64>> {
        let mut angles: Vec<f64> = Vec::new();
        for (&a, &b) in alphas.iter().zip(betas) {
            let mut angle = (b - centre[1]).atan2(a - centre[0]);
            if let Some(&prev) = angles.last() {
                while angle <= prev - PI {
                    angle += TAU;
                }
                while angle > prev + PI {
                    angle -= TAU;
                }
                if !(angle > prev) {
                    return None;
                }
            }
            angles.push(angle);
        }
        Some(angles)
    }

    fn points(n: usize, point: impl Fn(f64) -> [f64; 2]) -> (Vec<f64>, Vec<f64>) {
        (0..n)
            .map(|k| {
                let [a, b] = point(TAU * k as f64 / n as f64);
                (a, b)
            })
            .unzip()
    }

    #[test]
    fn parallel_unwrapping_equals_the_single_pass() {
        // Long enough to be split in parallel chunks; the raw angles start near −π/2 and
        // cross the branch cut of atan2 once, half-way.
        for n in [64, 20_000] {
            let (alphas, betas) = points(n, |t| {
                let r = 5.0 + 0.3 * (3.0 * t).cos();
                [r * (t - 1.5).cos(), r * (t - 1.5).sin()]
            });
            let centre = [0.2, -0.1];
            let parallel = unwrapped_angles(&alphas, &betas, centre).unwrap();
            let single = unwrapped_in_order(&alphas, &betas, centre).unwrap();
            assert_eq!(parallel.len(), n + 1);
            assert_eq!(&parallel[..n], &single[..]);
            assert_eq!(parallel[n], parallel[0] + TAU);
        }
    }

    #[test]
    fn unwrapping_refuses_what_is_not_star_shaped() {
        let n = 20_000;
        // Twice round: the steps increase, but the total is 4π.
        let (alphas, betas) = points(n, |t| [(2.0 * t).cos(), (2.0 * t).sin()]);
        assert!(unwrapped_angles(&alphas, &betas, [0.0, 0.0]).is_none());
        // One step back (sample 7000 swapped with 7001).
        let (mut alphas, mut betas) = points(n, |t| [t.cos(), t.sin()]);
        alphas.swap(7000, 7001);
        betas.swap(7000, 7001);
        assert!(unwrapped_angles(&alphas, &betas, [0.0, 0.0]).is_none());
        assert!(unwrapped_in_order(&alphas, &betas, [0.0, 0.0]).is_none());
        // A sample at the centre itself.
        let (alphas, betas) = points(n, |t| [t.cos(), t.sin()]);
        assert!(unwrapped_angles(&alphas, &betas, [alphas[12_345], betas[12_345]]).is_none());
        // Round the other way.
        let (alphas, betas) = points(n, |t| [t.cos(), -t.sin()]);
        assert!(unwrapped_angles(&alphas, &betas, [0.0, 0.0]).is_none());
    }

    #[test]
    fn unwrapping_starts_on_the_branch_cut() {
        // The first sample on the negative α axis, seen from a centre at (0, −0): atan2 gives
        // −π there, and every later angle is unwrapped from it.
        for n in [64, 20_000] {
            let (alphas, betas) = points(n, |t| {
                [-(3.0 + t.cos()) * t.cos(), -(3.0 + t.cos()) * t.sin()]
            });
            let centre = [0.0, -0.0];
            let parallel = unwrapped_angles(&alphas, &betas, centre).unwrap();
            let single = unwrapped_in_order(&alphas, &betas, centre).unwrap();
            assert_eq!(&parallel[..n], &single[..]);
            assert!((parallel[0].abs() - PI).abs() < 1e-15);
        }
    }

    #[test]
    fn a_failed_distance_is_the_same_error_at_any_thread_count() {
        // Star-shaped samples whose interpolant is not: one radius 400 times the others rings
        // below zero between samples, so rays from the centre between the samples (30 011
        // angles, not a multiple of the samples) do not meet it.
        let mut curve = CriticalCurve::circle([0.0, 0.0], 1.0, 20_000);
        curve.radii[7_000] = 400.0;
        let radii = |threads: usize| {
            rayon::ThreadPoolBuilder::new()
                .num_threads(threads)
                .build()
                .unwrap()
                .install(|| radii_about(&curve, [0.0, 0.0], 30_011))
        };
        let one = radii(1);
        assert!(one.is_err(), "{one:?}");
        assert_eq!(one, radii(2));
    }
}
