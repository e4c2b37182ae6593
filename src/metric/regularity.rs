//! Is a point a regular point of the metric's coordinate chart, to within rounding?
//!
//! **Coordinate range.** Every metric in umbral is written in (t, r, θ, φ) with r > 0 and
//! 0 < θ < π: the horizon finder scans r > 0, and the solvers and the ray tracer work there.
//! Metrics do not declare a radial range of their own, so this is the rule for all of them:
//! points with r ≤ 0 (e.g. the r < 0 continuation of Kerr through its disk, or the other
//! side of a Simpson–Visser throat) or θ outside (0, π) are outside the chart.
//!
//! **Singular to within rounding.** The point is a pair of doubles, known only to its
//! rounding error u_r = ε|r|, u_θ = ε|θ| (ε = 2.2e-16). It is refused when
//! 1. a component of g, g⁻¹ or Γ is not a finite number;
//! 2. the determinant of the (t, φ) block, D = g_tt g_φφ − g_tφ², is zero to within the
//!    rounding of its own cancellation: ε(|g_tt g_φφ| + g_tφ²)/|D| > [`POINT_SENSITIVITY_LIMIT`];
//! 3. moving the point by its rounding error changes, to first order (exact dual-number
//!    derivatives), det g by more than the limit (relative), or a component c of g or g⁻¹ by more
//!    than the limit times max(|c|, 1) — a component that merely passes through zero (g_tt
//!    on an ergosurface) moves by rounding-sized amounts and is not flagged, while one near a
//!    pole changes by u/|x − x_pole| of itself.
//!
//! So Kerr at r = 0, θ = π/2 in floating point (cos θ = 6e-17, Σ = a² cos²θ ≈ 1e-33,
//! components of size 1e32) is refused: ln|det g| = ln(Σ² sin²θ) moves by about 22 under a
//! rounding-sized change of θ. A point 1e-10 M from a horizon is accepted (its components
//! are good to about 1e-6 relative); one within about 100 rounding units of it is refused.
//!
//! ```
//! use umbral::metric::check_point;
//! use umbral::metrics::{Kerr, Schwarzschild};
//!
//! assert!(check_point(&Kerr::new(0.9).unwrap(), 6.0, 1.2).is_ok());
//! // The ring singularity, as close as doubles get to it.
//! assert!(check_point(&Kerr::new(0.9).unwrap(), 0.0, std::f64::consts::FRAC_PI_2).is_err());
//! // Outside the chart r > 0.
//! assert!(check_point(&Schwarzschild, -1.0, 1.0).is_err());
//! ```

use super::Spacetime;
use crate::numfmt::Num;
use nalgebra::Matrix4;
use std::fmt;

/// Largest relative change allowed under a rounding-sized move of the point (1%).
pub const POINT_SENSITIVITY_LIMIT: f64 = 1e-2;

/// Why a point is not a regular point of the chart.
#[derive(Debug, Clone, PartialEq)]
pub enum PointProblem {
    /// r ≤ 0 or θ outside (0, π).
    OutsideChart {
        /// `r` or `theta`.
        coordinate: &'static str,
        /// Its value.
        value: f64,
    },
    /// A component of g, g⁻¹ or Γ is not finite.
    NotFinite {
        /// Which component.
        quantity: String,
        /// Its value.
        value: f64,
    },
    /// The (t, φ) block is degenerate to within rounding.
    DegenerateBlock {
        /// g_tt g_φφ − g_tφ².
        determinant: f64,
        /// Its size relative to the rounding of its terms.
        relative_rounding: f64,
    },
    /// A quantity changes by more than the limit under a rounding-sized move.
    Sensitive {
        /// Which quantity.
        quantity: String,
        /// Its value at the point.
        value: f64,
        /// Its largest relative change under the moves.
        change: f64,
        /// The moves of (r, θ) tried.
        moves: [f64; 2],
    },
}

impl PointProblem {
    /// Whether the problem is a singularity (as opposed to a point outside the chart).
    pub fn is_singular(&self) -> bool {
        !matches!(self, PointProblem::OutsideChart { .. })
    }
}

impl fmt::Display for PointProblem {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            PointProblem::OutsideChart { coordinate, value } => {
                let value = Num(*value);
                let range = if *coordinate == "r" {
                    "r > 0 (metrics declare no range of their own; umbral's horizon finder and \
                     solvers work at r > 0)"
                } else {
                    "0 < theta < pi (the axis is a coordinate singularity)"
                };
                write!(
                    f,
                    "{coordinate} = {value} is outside the coordinate range {range}"
                )
            }
            PointProblem::NotFinite { quantity, value } => {
                write!(f, "{quantity} = {value} is not a finite number")
            }
            PointProblem::DegenerateBlock {
                determinant,
                relative_rounding,
            } => write!(
                f,
                "det g vanishes to within rounding: g_tt g_phph - g_tphi^2 = {determinant:.3e} \
                 is lost in the rounding of its terms (relative error {relative_rounding:.1e})"
            ),
            PointProblem::Sensitive {
                quantity,
                value,
                change,
                moves,
            } => write!(
                f,
                "{quantity} = {value:.3e} changes by {change:.1e} of its size when r and theta \
                 move by their rounding errors |dr| = {:.1e}, |dtheta| = {:.1e} (more than the \
                 {:.0e} allowed)",
                moves[0], moves[1], POINT_SENSITIVITY_LIMIT
            ),
        }
    }
}

impl std::error::Error for PointProblem {}

/// Whether (r, θ) is a regular point of the metric's chart to within rounding (see the
/// module documentation); the first problem found otherwise. The singularity tests come
/// before the r > 0 rule, so r = 0 of a metric singular there is named as a singularity.
pub fn check_point<S: Spacetime + ?Sized>(m: &S, r: f64, theta: f64) -> Result<(), PointProblem> {
    if !(theta > 0.0 && theta < std::f64::consts::PI) {
        return Err(PointProblem::OutsideChart {
            coordinate: "theta",
            value: theta,
        });
    }
    let g = m.metric(r, theta);
    let g_inv = m.inverse_metric(r, theta);
    not_finite(&g, "g", "_")?;
    not_finite(&g_inv, "g", "^")?;
    let gamma = m.christoffel(r, theta);
    const NAMES: [&str; 4] = ["t", "r", "theta", "phi"];
    for (mu, block) in gamma.iter().enumerate() {
        for (a, row) in block.iter().enumerate() {
            for (b, x) in row.iter().enumerate() {
                if !x.is_finite() {
                    return Err(PointProblem::NotFinite {
                        quantity: format!("Gamma^{}_{{{} {}}}", NAMES[mu], NAMES[a], NAMES[b]),
                        value: *x,
                    });
                }
            }
        }
    }
    degenerate_block(&g)?;
    sensitivity(m, r, theta, &g, &g_inv)?;
    if r <= 0.0 {
        return Err(PointProblem::OutsideChart {
            coordinate: "r",
            value: r,
        });
    }
    Ok(())
}

const SLOTS: [(usize, usize, &str); 5] = [
    (0, 0, "tt"),
    (0, 3, "tphi"),
    (1, 1, "rr"),
    (2, 2, "thth"),
    (3, 3, "phph"),
];

fn not_finite(m: &Matrix4<f64>, symbol: &str, position: &str) -> Result<(), PointProblem> {
    match SLOTS.iter().find(|(i, j, _)| !m[(*i, *j)].is_finite()) {
        Some((i, j, name)) => Err(PointProblem::NotFinite {
            quantity: format!("{symbol}{position}{name}"),
            value: m[(*i, *j)],
        }),
        None => Ok(()),
    }
}

fn degenerate_block(g: &Matrix4<f64>) -> Result<(), PointProblem> {
    let (tt, tphi, phph) = (g[(0, 0)], g[(0, 3)], g[(3, 3)]);
    let determinant = tt * phph - tphi * tphi;
    let relative_rounding = f64::EPSILON * ((tt * phph).abs() + tphi * tphi) / determinant.abs();
    if relative_rounding <= POINT_SENSITIVITY_LIMIT {
        Ok(())
    } else {
        Err(PointProblem::DegenerateBlock {
            determinant,
            relative_rounding,
        })
    }
}

/// Test 3 of the module documentation.
fn sensitivity<S: Spacetime + ?Sized>(
    m: &S,
    r: f64,
    theta: f64,
    g: &Matrix4<f64>,
    g_inv: &Matrix4<f64>,
) -> Result<(), PointProblem> {
    let moves = [f64::EPSILON * r.abs(), f64::EPSILON * theta.abs()];
    let dg = m.metric_derivatives(r, theta);
    let d = [dg[1], dg[2]];
    // ∂ ln|det g| = tr(g⁻¹ ∂g).
    let log_det = moves[0] * (g_inv * d[0]).trace().abs() + moves[1] * (g_inv * d[1]).trace().abs();
    let flagged = |change: f64| change.is_nan() || change > POINT_SENSITIVITY_LIMIT;
    if flagged(log_det) {
        return Err(PointProblem::Sensitive {
            quantity: "det g".into(),
            value: g.determinant(),
            change: log_det,
            moves,
        });
    }
    for inverse in [false, true] {
        let (matrix, position) = if inverse { (g_inv, "^") } else { (g, "_") };
        for (i, j, name) in SLOTS {
            let c = matrix[(i, j)];
            let scale = c.abs().max(1.0);
            let change: f64 = (0..2)
                .map(|k| {
                    let derivative = if inverse {
                        // ∂g^{ij} = −g^{ik} ∂g_{kl} g^{lj}, divided by the scale before the
                        // last product so that huge entries (near the axis) do not overflow.
                        let mut sum = 0.0;
                        for a in 0..4 {
                            for b in 0..4 {
                                sum -= g_inv[(i, a)] * d[k][(a, b)] * (g_inv[(b, j)] / scale);
                            }
                        }
                        sum
                    } else {
                        d[k][(i, j)] / scale
                    };
                    moves[k] * derivative.abs()
                })
                .sum();
            if flagged(change) {
                return Err(PointProblem::Sensitive {
                    quantity: format!("g{position}{name}"),
                    value: c,
                    change,
                    moves,
                });
            }
        }
    }
    Ok(())
}
