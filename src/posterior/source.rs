//! One measured source's log-likelihood, given the shadow the model predicts for it.
//!
//! With r the predicted size (mean radius about the area centroid, or the area radius) and ΔC
//! the predicted circularity deviation:
//! * `[size.shadow_radius]` value with errors: ln L = ln SN(r; value, minus, plus), the split
//!   normal of [`crate::measurement::likelihood::ValueErrors`];
//! * `[size.fractional_deviation]`: the same in δ = r/(3√3) − 1;
//! * `[size.ring]`: ln L = ln N(d; κ · 2 r · θ_g, σ_d), the measured ring diameter d against the
//!   one predicted from the sampled calibration κ and angular scale θ_g (or mass and distance,
//!   θ_g = GM/(c²D));
//! * `[size.samples]`: ln L = ln p̂(r) (or p̂(δ)), the Gaussian kernel density estimate of the
//!   user's posterior samples (Silverman's bandwidth; [`crate::sampling::kde`]);
//! * `[circularity]`: a hard cut or a soft upper limit on ΔC
//!   ([`crate::measurement::likelihood::CircularityLimit`]).
//!
//! Intervals alone (`[size.shadow_radius] intervals`) define no likelihood and are refused.

use super::InferError;
use crate::measurement::constants::theta_g_uas;
use crate::measurement::likelihood::{gaussian_log_density, CircularityLimit, ValueErrors};
use crate::measurement::{Gaussian, Measurement, SamplesQuantity, SizeMeasurement};
use crate::observables::SCHWARZSCHILD_SHADOW_RADIUS;
use crate::sampling::kde::Kde;

/// How the size enters one source's likelihood.
#[derive(Debug, Clone)]
pub enum SizeTerm {
    /// A split normal in r_sh/M.
    Radius(ValueErrors),
    /// A split normal in δ = r_sh/(3√3) − 1.
    Deviation(ValueErrors),
    /// A Gaussian ring diameter in micro-arcseconds against κ · 2 r_sh · θ_g.
    Ring {
        /// The measured diameter.
        diameter_uas: Gaussian,
        /// Whether θ_g comes from mass and distance (else it is sampled directly).
        mass_distance: bool,
    },
    /// A kernel density estimate of the user's samples of r_sh/M or δ.
    Samples {
        /// The estimate.
        kde: Kde,
        /// Of which quantity.
        quantity: SamplesQuantity,
        /// The samples' standard deviation.
        spread: f64,
    },
}

/// One source's likelihood.
#[derive(Debug, Clone)]
pub struct SourceTerm {
    /// The size term.
    pub size: SizeTerm,
    /// The circularity limit, if any.
    pub circularity: Option<CircularityLimit>,
}

/// The ring chain's sampled nuisances of one source (absent for other size forms).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct RingValues {
    /// κ, the ring-to-shadow diameter ratio.
    pub kappa: f64,
    /// Mass in solar masses (mass-and-distance form).
    pub mass_msun: f64,
    /// Distance in Mpc (mass-and-distance form).
    pub distance_mpc: f64,
    /// θ_g in micro-arcseconds (direct form).
    pub theta_g_uas: f64,
}

impl SourceTerm {
    /// The likelihood a measurement defines (source `k`, from 0, in messages).
    pub fn new(m: &Measurement, k: usize) -> Result<SourceTerm, InferError> {
        let size = match &m.size {
            SizeMeasurement::ShadowRadius(_) => {
                return Err(InferError::Measurement {
                    number: k + 1,
                    problem: "[size.shadow_radius] gives intervals only, which define no \
                              likelihood: give value with sigma (or minus and plus) for \
                              inference (intervals serve `umbral bound`)"
                        .into(),
                })
            }
            SizeMeasurement::ShadowRadiusValue(v) => SizeTerm::Radius(*v),
            SizeMeasurement::FractionalDeviation(v) => SizeTerm::Deviation(*v),
            SizeMeasurement::Ring(chain) => SizeTerm::Ring {
                diameter_uas: chain.diameter_uas,
                mass_distance: matches!(
                    chain.scale,
                    crate::measurement::ring::AngularScale::MassDistance { .. }
                ),
            },
            SizeMeasurement::Samples(s) => SizeTerm::Samples {
                kde: Kde::new(&s.values).map_err(|e| InferError::Measurement {
                    number: k + 1,
                    problem: format!("[size.samples]: {e}"),
                })?,
                quantity: s.quantity,
                spread: standard_deviation(&s.values),
            },
        };
        if let SizeTerm::Ring { diameter_uas, .. } = &size {
            if diameter_uas.sigma.is_nan() || diameter_uas.sigma <= 0.0 {
                return Err(InferError::Measurement {
                    number: k + 1,
                    problem: "[size.ring] diameter_uas needs a positive sigma for a likelihood"
                        .into(),
                });
            }
        }
        Ok(SourceTerm {
            size,
            circularity: m.circularity,
        })
    }

    /// ln L for a predicted size `r` (r_sh/M), circularity deviation `delta_c` (NaN when not
    /// computed) and the ring chain's sampled nuisances.
    pub fn log_likelihood(&self, r: f64, delta_c: f64, ring: &RingValues) -> f64 {
        let size = match &self.size {
            SizeTerm::Radius(v) => v.log_density(r),
            SizeTerm::Deviation(v) => v.log_density(r / SCHWARZSCHILD_SHADOW_RADIUS - 1.0),
            SizeTerm::Ring {
                diameter_uas,
                mass_distance,
            } => {
                let theta_g = if *mass_distance {
                    theta_g_uas(ring.mass_msun, ring.distance_mpc)
                } else {
                    ring.theta_g_uas
                };
                let positive = ring.kappa > 0.0
                    && theta_g > 0.0
                    && (!*mass_distance || (ring.mass_msun > 0.0 && ring.distance_mpc > 0.0));
                if !positive {
                    return f64::NEG_INFINITY;
                }
                gaussian_log_density(diameter_uas, ring.kappa * 2.0 * r * theta_g)
            }
            SizeTerm::Samples { kde, quantity, .. } => kde.log_density(match quantity {
                SamplesQuantity::ShadowRadius => r,
                SamplesQuantity::FractionalDeviation => r / SCHWARZSCHILD_SHADOW_RADIUS - 1.0,
            }),
        };
        match &self.circularity {
            Some(c) => size + c.log_likelihood(delta_c),
            None => size,
        }
    }

    /// What this likelihood assumes, in words (source `k`, from 0).
    pub fn describe(&self, k: usize) -> Vec<String> {
        let n = k + 1;
        let mut out = vec![match &self.size {
            SizeTerm::Radius(v) => format!(
                "source {n}: r_sh/M = {} -{} +{} as a split normal (Gaussian if the errors are \
                 equal)",
                v.value, v.minus, v.plus
            ),
            SizeTerm::Deviation(v) => format!(
                "source {n}: delta = r_sh/(3 sqrt 3) - 1 = {} -{} +{} as a split normal \
                 (Gaussian if the errors are equal)",
                v.value, v.minus, v.plus
            ),
            SizeTerm::Ring {
                diameter_uas,
                mass_distance,
            } => format!(
                "source {n}: ring diameter {} +- {} uas (Gaussian) against kappa 2 r_sh \
                 theta_g, with kappa and {} sampled from their priors",
                diameter_uas.value,
                diameter_uas.sigma,
                if *mass_distance {
                    "mass and distance (theta_g = GM/(c^2 D))"
                } else {
                    "theta_g"
                }
            ),
            SizeTerm::Samples { kde, quantity, .. } => format!(
                "source {n}: the Gaussian kernel density estimate of the measurement's samples \
                 of {} (Silverman's rule, bandwidth {:.6})",
                match quantity {
                    SamplesQuantity::ShadowRadius => "r_sh/M",
                    SamplesQuantity::FractionalDeviation => "delta",
                },
                kde.bandwidth()
            ),
        }];
        match self.circularity {
            Some(CircularityLimit::Max(max)) => out.push(format!(
                "source {n}: circularity deviation at most {max} (a hard cut)"
            )),
            Some(CircularityLimit::Soft { value, sigma }) => out.push(format!(
                "source {n}: circularity deviation flat up to {value}, a half-Gaussian of width \
                 {sigma} above (a soft upper limit)"
            )),
            None => {}
        }
        out
    }

    /// The size measurement's sigma in r_sh/M: the smaller error of a value (δ's times 3√3);
    /// for a ring, the diameter's relative error times `smallest_size`, the smallest predicted
    /// size (d ∝ r_sh, so δd/d = δr/r); for samples, their standard deviation.
    pub fn size_sigma(&self, smallest_size: f64) -> f64 {
        match &self.size {
            SizeTerm::Radius(v) => v.minus.min(v.plus),
            SizeTerm::Deviation(v) => v.minus.min(v.plus) * SCHWARZSCHILD_SHADOW_RADIUS,
            SizeTerm::Ring { diameter_uas, .. } => {
                diameter_uas.sigma / diameter_uas.value.abs() * smallest_size
            }
            SizeTerm::Samples {
                quantity, spread, ..
            } => match quantity {
                SamplesQuantity::ShadowRadius => *spread,
                SamplesQuantity::FractionalDeviation => spread * SCHWARZSCHILD_SHADOW_RADIUS,
            },
        }
    }

    /// The circularity limit's sigma (a soft limit's; none for a hard cut or no limit).
    pub fn circularity_sigma(&self) -> Option<f64> {
        match self.circularity {
            Some(CircularityLimit::Soft { sigma, .. }) => Some(sigma),
            _ => None,
        }
    }

    /// Whether the likelihood needs the circularity deviation.
    pub fn needs_circularity(&self) -> bool {
        self.circularity.is_some()
    }
}

/// The sample standard deviation (n − 1 in the denominator).
fn standard_deviation(values: &[f64]) -> f64 {
    let n = values.len() as f64;
    let mean = values.iter().sum::<f64>() / n;
    (values.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (n - 1.0)).sqrt()
}
