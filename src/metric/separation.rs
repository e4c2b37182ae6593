//! Do a metric's separation data belong to its line element?
//!
//! A metric that provides the potentials R(r; λ, η) and Θ(θ; λ, η) claims that its null
//! geodesics separate, with (Σ̃ dr/dτ)² = R and (Σ̃ dθ/dτ)² = Θ per unit energy squared,
//! λ = L/E and η = Carter's constant / E² ([`Metric::radial_potential`](super::Metric)). The
//! conformal factor Σ̃ is the one that makes g^θθ = 1/Σ̃, i.e. **Σ̃ = g_θθ** (Kerr: Σ = r² +
//! a² cos²θ; Johannsen 2013: Σ̃ = Σ + f(r); a spherical metric: C). With p_t = −1 and p_φ = λ,
//! dθ/dτ = g^θθ p_θ gives p_θ² = Θ and dr/dτ = g^rr p_r gives p_r² = R/(g_θθ g^rr)². The null
//! condition g^{μν} p_μ p_ν = 0, multiplied by g_θθ, then reads
//!
//! F(r, θ; λ, η) = g_θθ (g^tt − 2λ g^tφ + λ² g^φφ) + R/(g_θθ g^rr) + Θ = 0
//!
//! for every (r, θ, λ, η): that is what separability means (Carter 1968, Phys. Rev. 174,
//! 1559). For Kerr, g_θθ(g^tt − 2λg^tφ + λ²g^φφ) = −(r² + a² − aλ)²/Δ + (λ − a sin²θ)²/sin²θ
//! and g_θθ g^rr = Δ, and F vanishes term by term.
//!
//! [`check_separation`] evaluates F at 48 points outside the horizon (or, without one, outside
//! the outermost place where the metric stops being regular), off the axis and off the
//! equator, at four (λ, η) pairs, and compares |F| with the sum of the absolute values of its
//! terms: at most [`SEPARATION_TOLERANCE`] of it, or 100 ε κ where the inverse of the (t, φ)
//! block loses more digits than that to cancellation (κ = (|g_tt g_φφ| + g_tφ²)/|g_tt g_φφ −
//! g_tφ²|; with rounding alone the relative residual stays below ε κ, e.g. 2e-10 at κ = 2e6
//! for the Johannsen metric with deviations of ±30).
//!
//! ```
//! use umbral::metric::check_separation;
//! use umbral::metrics::Kerr;
//!
//! let report = check_separation(&Kerr::new(0.9).unwrap()).unwrap();
//! assert_eq!(report.points, 48);
//! assert!(report.worst.relative() < 1e-13);
//! ```

use super::{MetricComponents, Spacetime};
use crate::error::MetricError;
use std::fmt;

/// Largest accepted |F| relative to the sum of the absolute values of its terms (raised to
/// 100 ε κ at points where the (t, φ) block is ill-conditioned, see the module documentation).
/// Rounding leaves ~1e-15 for the built-in metrics at ordinary parameters
/// (tests/separation_check.rs); a wrong potential leaves a relative residual of order its
/// relative error.
pub const SEPARATION_TOLERANCE: f64 = 1e-9;

/// Factor on ε κ in the allowance for the conditioning of the (t, φ) block.
const CONDITIONING_FACTOR: f64 = 100.0;

/// Polar angles of the check points: off the axis, off the equator, in both hemispheres.
const THETAS: [f64; 3] = [0.43, 1.21, 2.36];
/// Check radii: r_in + c·max(r_in, 1) for each c, with r_in the horizon or the regular edge.
const RADIUS_STEPS: [f64; 4] = [0.37, 1.3, 3.7, 11.3];
/// (λ, η) pairs: both signs of λ, small and large η.
const CONSTANTS: [(f64, f64); 4] = [(-4.7, 23.0), (-0.6, 3.1), (1.9, 11.7), (5.3, 0.4)];
/// The regularity scan of a horizonless metric: from R_FAR inward to R_NEAR, log-spaced.
const R_FAR: f64 = 1.0e3;
const R_NEAR: f64 = 1.0e-3;
const SCAN_POINTS: usize = 241;

/// F at one point, with the size of its terms.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SeparationResidual {
    /// Radius of the point.
    pub r: f64,
    /// Polar angle of the point (radians).
    pub theta: f64,
    /// λ = L/E.
    pub lambda: f64,
    /// η = Carter's constant / E².
    pub eta: f64,
    /// F = g_θθ (g^tt − 2λ g^tφ + λ² g^φφ) + R/(g_θθ g^rr) + Θ.
    pub value: f64,
    /// |g_θθ g^tt| + |2λ g_θθ g^tφ| + |λ² g_θθ g^φφ| + |R/(g_θθ g^rr)| + |Θ|.
    pub scale: f64,
    /// κ = (|g_tt g_φφ| + g_tφ²)/|g_tt g_φφ − g_tφ²|, the cancellation in the (t, φ) block.
    pub conditioning: f64,
}

impl SeparationResidual {
    /// |F| relative to the size of its terms.
    pub fn relative(&self) -> f64 {
        if self.scale > 0.0 {
            self.value.abs() / self.scale
        } else {
            self.value.abs()
        }
    }
}

impl SeparationResidual {
    /// The largest |F| relative to its terms accepted at this point:
    /// max([`SEPARATION_TOLERANCE`], 100 ε κ).
    pub fn allowed(&self) -> f64 {
        SEPARATION_TOLERANCE.max(CONDITIONING_FACTOR * f64::EPSILON * self.conditioning)
    }

    /// |F| relative to what is allowed at this point (above 1: a mismatch; NaN counts as one).
    pub fn excess(&self) -> f64 {
        self.relative() / self.allowed()
    }
}

impl fmt::Display for SeparationResidual {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "at r = {}, theta = {}, lambda = {}, eta = {} it is {:.3e} ({:.1e} of the size \
             of its terms, {:.3e}; allowed {:.0e})",
            self.r,
            self.theta,
            self.lambda,
            self.eta,
            self.value,
            self.relative(),
            self.scale,
            self.allowed()
        )
    }
}

/// A passed check: how many points, and the worst of them.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SeparationReport {
    /// Number of points checked.
    pub points: usize,
    /// The point with the largest [`SeparationResidual::excess`].
    pub worst: SeparationResidual,
}

/// Why separation data fail the check.
#[derive(Debug, Clone, PartialEq)]
pub enum SeparationError {
    /// The metric does not declare separation data.
    NotSeparable,
    /// The metric declares separation data but a potential's hook returns nothing
    /// ([`MetricError::MissingHook`]).
    MissingHook(MetricError),
    /// The line element or its inverse is not finite at a check point, or (for a horizonless
    /// metric) not regular already at r = 10³, where the scan for its regular edge starts.
    Irregular {
        /// Radius of the point.
        r: f64,
        /// Polar angle of the point.
        theta: f64,
        /// What is not regular there.
        problem: String,
    },
    /// A potential is not a finite number at a check point.
    NonFinitePotential {
        /// `radial` or `polar`.
        which: &'static str,
        /// (r or θ, λ, η).
        at: [f64; 3],
        /// The potential's value there.
        value: f64,
    },
    /// F does not vanish: the worst point.
    Mismatch(SeparationResidual),
}

impl fmt::Display for SeparationError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            SeparationError::NotSeparable => f.write_str("the metric gives no separation data"),
            SeparationError::MissingHook(e) => write!(f, "{e}"),
            SeparationError::Irregular { r, theta, problem } => write!(
                f,
                "the line element is not regular at r = {r}, theta = {theta}, where the \
                 separation data are checked: {problem}"
            ),
            SeparationError::NonFinitePotential { which, at, value } => {
                let x = if *which == "radial" { "r" } else { "theta" };
                write!(
                    f,
                    "the {which} potential is {value} at {x} = {}, lambda = {}, eta = {}: \
                     expected a finite number",
                    at[0], at[1], at[2]
                )
            }
            SeparationError::Mismatch(worst) => write!(
                f,
                "the separation data do not match the line element: with p_t = -1, \
                 p_phi = lambda, p_theta^2 = Theta and p_r^2 = R/(g_thth g^rr)^2, \
                 g_thth g^{{mu nu}} p_mu p_nu must vanish, but {worst}"
            ),
        }
    }
}

impl std::error::Error for SeparationError {}

/// Why the components at a point are not regular, if they are not: a component or an
/// inverse component that is not finite, or g_rr, g_θθ or g_φφ not positive.
fn irregularity(c: &MetricComponents<f64>) -> Option<String> {
    if let Some(problem) = not_finite(c) {
        return Some(problem);
    }
    [("g_rr", c.g_rr), ("g_thth", c.g_thth), ("g_phph", c.g_phph)]
        .iter()
        .find(|(_, x)| *x <= 0.0)
        .map(|(name, x)| format!("{name} = {x:e}, expected a positive number"))
}

/// The first component or inverse component that is not a finite number, if any.
fn not_finite(c: &MetricComponents<f64>) -> Option<String> {
    let inv = c.inverse();
    let named = [
        ("g_tt", c.g_tt),
        ("g_tphi", c.g_tphi),
        ("g_rr", c.g_rr),
        ("g_thth", c.g_thth),
        ("g_phph", c.g_phph),
        ("g^tt", inv.g_tt),
        ("g^tphi", inv.g_tphi),
        ("g^rr", inv.g_rr),
        ("g^thth", inv.g_thth),
        ("g^phph", inv.g_phph),
    ];
    named
        .iter()
        .find(|(_, x)| !x.is_finite())
        .map(|(name, x)| format!("{name} = {x}"))
}

/// F and the size of its terms at one point; `None` for a metric without separation data.
pub fn separation_residual<S: Spacetime + ?Sized>(
    m: &S,
    r: f64,
    theta: f64,
    lambda: f64,
    eta: f64,
) -> Option<SeparationResidual> {
    match evaluate(m, r, theta, lambda, eta) {
        Err(SeparationError::NotSeparable) => None,
        Ok(res) => Some(res),
        // A potential that is not finite: F is not a number.
        Err(_) => Some(SeparationResidual {
            r,
            theta,
            lambda,
            eta,
            value: f64::NAN,
            scale: f64::NAN,
            conditioning: f64::NAN,
        }),
    }
}

/// F at one point, or why it cannot be formed (a potential that is not finite).
fn evaluate<S: Spacetime + ?Sized>(
    m: &S,
    r: f64,
    theta: f64,
    lambda: f64,
    eta: f64,
) -> Result<SeparationResidual, SeparationError> {
    let hook = |e: MetricError| match e {
        MetricError::NotDeclared { .. } => SeparationError::NotSeparable,
        other => SeparationError::MissingHook(other),
    };
    let radial = m.radial_potential_jet(r, lambda, eta).map_err(hook)?;
    let polar = m.polar_potential_jet(theta, lambda, eta).map_err(hook)?;
    for (which, x, value) in [("radial", r, radial.value), ("polar", theta, polar.value)] {
        if !value.is_finite() {
            return Err(SeparationError::NonFinitePotential {
                which,
                at: [x, lambda, eta],
                value,
            });
        }
    }
    let c = m.components_at(r, theta);
    let inv = c.inverse();
    let sigma = c.g_thth;
    let terms = [
        sigma * inv.g_tt,
        -2.0 * lambda * sigma * inv.g_tphi,
        lambda * lambda * sigma * inv.g_phph,
        radial.value / (sigma * inv.g_rr),
        polar.value,
    ];
    Ok(SeparationResidual {
        r,
        theta,
        lambda,
        eta,
        value: terms.iter().sum(),
        scale: terms.iter().map(|x| x.abs()).sum(),
        conditioning: ((c.g_tt * c.g_phph).abs() + c.g_tphi * c.g_tphi)
            / (c.g_tt * c.g_phph - c.g_tphi * c.g_tphi).abs(),
    })
}

/// The radius inside which check points are not placed: the outer horizon, or for a
/// horizonless metric the outermost radius of a log-spaced scan (10³ down to 10⁻³, at the
/// check angles) where the line element is not regular (0 if it is regular throughout).
fn inner_radius<S: Spacetime + ?Sized>(m: &S) -> Result<f64, SeparationError> {
    if let Some(h) = m.outer_horizon() {
        return Ok(h.max(0.0));
    }
    let ratio = (R_NEAR / R_FAR).powf(1.0 / (SCAN_POINTS - 1) as f64);
    for i in 0..SCAN_POINTS {
        let r = R_FAR * ratio.powi(i as i32);
        for theta in THETAS {
            if let Some(problem) = irregularity(&m.components_at(r, theta)) {
                if i == 0 {
                    return Err(SeparationError::Irregular { r, theta, problem });
                }
                return Ok(r);
            }
        }
    }
    Ok(0.0)
}

/// Check that the metric's separation data reproduce the null Hamiltonian of its line
/// element (see the module documentation): F = 0 to [`SeparationResidual::allowed`] relative
/// to the size of its terms at every check point, with the line element, its inverse and both
/// potentials finite there. Returns the worst point (largest [`SeparationResidual::excess`]);
/// errors name the failing point and by how much.
pub fn check_separation<S: Spacetime + ?Sized>(m: &S) -> Result<SeparationReport, SeparationError> {
    if !m.is_separable() {
        return Err(SeparationError::NotSeparable);
    }
    let r_in = inner_radius(m)?;
    let mut worst: Option<SeparationResidual> = None;
    let mut points = 0;
    for step in RADIUS_STEPS {
        let r = r_in + step * r_in.max(1.0);
        for theta in THETAS {
            if let Some(problem) = not_finite(&m.components_at(r, theta)) {
                return Err(SeparationError::Irregular { r, theta, problem });
            }
            for (lambda, eta) in CONSTANTS {
                let res = evaluate(m, r, theta, lambda, eta)?;
                points += 1;
                // NaN counts as the worst (it cannot occur once the inputs are finite).
                if worst.is_none_or(|w| res.excess().is_nan() || res.excess() > w.excess()) {
                    worst = Some(res);
                }
            }
        }
    }
    let worst = worst.ok_or(SeparationError::NotSeparable)?;
    if worst.excess().is_nan() || worst.excess() > 1.0 {
        return Err(SeparationError::Mismatch(worst));
    }
    Ok(SeparationReport { points, worst })
}
