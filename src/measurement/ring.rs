//! From a measured emission ring to the shadow radius in units of M.
//!
//! r_sh/M = d_ring / (κ · 2 θ_g), with κ = ring diameter / shadow diameter (from the user's
//! emission modelling) and θ_g = GM/(c²D) (see [`super::constants`]). Inputs are independent
//! Gaussians; the distribution of r_sh/M is found by a seeded Monte Carlo and cross-checked
//! against first-order error propagation, σ_r/r = √Σ(σ_i/x_i)² for a product of powers ±1.

use super::calibration::{CalibrationRequest, KappaOrigin};
use super::constants::theta_g_uas;
use super::gaussian::two_sided_z;
use super::{Gaussian, MeasurementError, RadiusInterval};
use crate::numfmt::Num;
use rand_chacha::rand_core::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, StandardNormal};
use serde::Serialize;

/// Monte Carlo sample count.
pub const MONTE_CARLO_SAMPLES: usize = 200_000;
/// Seed of the ChaCha8 generator (fixed: the result is the same on every run).
pub const MONTE_CARLO_SEED: u64 = 0x756d_6272_616c;
/// Give up on an input whose Gaussian puts more than this fraction of draws at or below zero.
const MAX_REJECTED_FRACTION: f64 = 0.05;

/// How the angular scale is given.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum AngularScale {
    /// Mass in solar masses and distance in Mpc.
    MassDistance {
        /// The mass, in solar masses.
        mass_msun: Gaussian,
        /// The distance, in Mpc.
        distance_mpc: Gaussian,
    },
    /// θ_g = GM/(c²D) in micro-arcseconds directly.
    ThetaG {
        /// θ_g, in micro-arcseconds.
        theta_g_uas: Gaussian,
    },
}

/// The measured ring and its calibration.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RingChain {
    /// Emission-ring diameter in micro-arcseconds.
    pub diameter_uas: Gaussian,
    /// Ring diameter / shadow diameter.
    pub ring_to_shadow: Gaussian,
    /// The angular scale θ_g, given directly or through mass and distance.
    pub scale: AngularScale,
    /// Where κ comes from.
    pub kappa_origin: KappaOrigin,
}

/// Both propagations of the ring chain.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RingPropagation {
    /// r_sh/M at the central values.
    pub central_value: f64,
    /// Monte Carlo sample count used.
    pub samples: usize,
    /// Seed of the ChaCha8 generator used.
    pub seed: u64,
    /// Draws at or below zero that were redrawn, per input, in the order
    /// diameter, ring_to_shadow, mass or theta_g, distance.
    pub redrawn: Vec<usize>,
    /// Central (equal-tail) Monte Carlo intervals.
    pub monte_carlo: Vec<RadiusInterval>,
    /// r ± z σ_r from first-order propagation.
    pub linear: Vec<RadiusInterval>,
}

impl RingChain {
    /// The inputs as (name, Gaussian, exponent in r_sh/M).
    fn inputs(&self) -> Vec<(&'static str, Gaussian, i32)> {
        let mut v = vec![
            ("diameter_uas", self.diameter_uas, 1),
            ("ring_to_shadow", self.ring_to_shadow, -1),
        ];
        match self.scale {
            AngularScale::MassDistance {
                mass_msun,
                distance_mpc,
            } => {
                v.push(("mass_msun", mass_msun, -1));
                v.push(("distance_mpc", distance_mpc, 1));
            }
            AngularScale::ThetaG { theta_g_uas } => v.push(("theta_g_uas", theta_g_uas, -1)),
        }
        v
    }

    /// r_sh/M for one set of input values (same order as the inputs).
    fn radius(&self, x: &[f64]) -> f64 {
        let theta_g = match self.scale {
            AngularScale::MassDistance { .. } => theta_g_uas(x[2], x[3]),
            AngularScale::ThetaG { .. } => x[2],
        };
        x[0] / (x[1] * 2.0 * theta_g)
    }

    /// The κ calibration still to be computed, if any.
    pub fn pending_calibration(&self) -> Option<&CalibrationRequest> {
        match &self.kappa_origin {
            KappaOrigin::Pending(request) => Some(request),
            _ => None,
        }
    }

    /// θ_g at the central values, in μas.
    pub fn central_theta_g_uas(&self) -> f64 {
        match self.scale {
            AngularScale::MassDistance {
                mass_msun,
                distance_mpc,
            } => theta_g_uas(mass_msun.value, distance_mpc.value),
            AngularScale::ThetaG { theta_g_uas } => theta_g_uas.value,
        }
    }

    /// Check that every value is positive and finite and every sigma non-negative and finite.
    pub fn validate(&self) -> Result<(), MeasurementError> {
        if self.pending_calibration().is_some() {
            return Err(MeasurementError::Invalid(
                "ring_to_shadow = \"computed\": kappa has not been computed yet (the command \
                 line computes it before a bound or posterior)"
                    .into(),
            ));
        }
        for (name, g, _) in self.inputs() {
            if !(g.value.is_finite() && g.value > 0.0) {
                return Err(MeasurementError::Invalid(format!(
                    "size.ring.{name}.value must be a positive finite number, got {}",
                    Num(g.value)
                )));
            }
            if !(g.sigma.is_finite() && g.sigma >= 0.0) {
                return Err(MeasurementError::Invalid(format!(
                    "size.ring.{name}.sigma must be a non-negative finite number, got {}",
                    Num(g.sigma)
                )));
            }
        }
        Ok(())
    }

    /// Propagate to r_sh/M at each confidence level.
    ///
    /// Monte Carlo: [`MONTE_CARLO_SAMPLES`] draws from ChaCha8 seeded with
    /// [`MONTE_CARLO_SEED`]; each input is a Gaussian truncated to positive values (a draw at or
    /// below zero is redrawn; more than 5 % redrawn for an input is an error, since the
    /// truncation would then shape the answer). Intervals are the equal-tail quantiles
    /// (linear interpolation between order statistics).
    pub fn propagate(&self, levels: &[f64]) -> Result<RingPropagation, MeasurementError> {
        self.validate()?;
        let inputs = self.inputs();
        let values: Vec<f64> = inputs.iter().map(|(_, g, _)| g.value).collect();
        let central_value = self.radius(&values);
        let mut rng = ChaCha8Rng::seed_from_u64(MONTE_CARLO_SEED);
        let mut redrawn = vec![0usize; inputs.len()];
        let mut draws = Vec::with_capacity(MONTE_CARLO_SAMPLES);
        let mut x = values.clone();
        let limit = (MAX_REJECTED_FRACTION * MONTE_CARLO_SAMPLES as f64) as usize;
        for _ in 0..MONTE_CARLO_SAMPLES {
            for (i, (name, g, _)) in inputs.iter().enumerate() {
                loop {
                    let z: f64 = StandardNormal.sample(&mut rng);
                    let v = g.value + g.sigma * z;
                    if v > 0.0 {
                        x[i] = v;
                        break;
                    }
                    redrawn[i] += 1;
                    if redrawn[i] > limit {
                        return Err(MeasurementError::Invalid(format!(
                            "size.ring.{name}: sigma {} is too large for value {}: over 5% of \
                             Gaussian draws are at or below zero",
                            g.sigma, g.value
                        )));
                    }
                }
            }
            draws.push(self.radius(&x));
        }
        draws.sort_by(f64::total_cmp);
        let relative: f64 = inputs
            .iter()
            .map(|(_, g, p)| (*p as f64 * g.sigma / g.value).powi(2))
            .sum::<f64>()
            .sqrt();
        let sigma = relative * central_value;
        let mut monte_carlo = Vec::new();
        let mut linear = Vec::new();
        for &confidence in levels {
            let z = two_sided_z(confidence).ok_or_else(|| {
                MeasurementError::Invalid(format!(
                    "confidence levels must lie strictly between 0 and 1, got {}",
                    Num(confidence)
                ))
            })?;
            monte_carlo.push(RadiusInterval {
                confidence,
                low: quantile(&draws, 0.5 * (1.0 - confidence)),
                high: quantile(&draws, 0.5 * (1.0 + confidence)),
            });
            linear.push(RadiusInterval {
                confidence,
                low: central_value - z * sigma,
                high: central_value + z * sigma,
            });
        }
        Ok(RingPropagation {
            central_value,
            samples: MONTE_CARLO_SAMPLES,
            seed: MONTE_CARLO_SEED,
            redrawn,
            monte_carlo,
            linear,
        })
    }
}

/// The p-quantile of sorted data, interpolating linearly between order statistics
/// (Hyndman & Fan 1996, Am. Stat. 50, 361, definition 7).
pub(crate) fn quantile(sorted: &[f64], p: f64) -> f64 {
    let h = (sorted.len() - 1) as f64 * p;
    let i = h.floor() as usize;
    let j = (i + 1).min(sorted.len() - 1);
    let w = h - i as f64;
    if w == 0.0 || sorted[i] == sorted[j] {
        sorted[i]
    } else {
        sorted[i] + w * (sorted[j] - sorted[i])
    }
}
