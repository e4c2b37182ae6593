//! One-dimensional Gaussian kernel density estimate:
//! p̂(x) = (1/(n h)) Σᵢ φ((x − xᵢ)/h), with Silverman's rule of thumb for the bandwidth,
//! h = 0.9 min(σ, IQR/1.34) n^(−1/5) (Silverman 1986, "Density Estimation for Statistics
//! and Data Analysis", Chapman & Hall, eq. 3.31). σ is the sample standard deviation and IQR
//! the interquartile range ([`super::summary::Marginal::quantile`]); where the IQR is zero
//! (over half the samples equal) σ alone is used (common practice, no source).
//!
//! ```
//! use umbral::sampling::kde::Kde;
//! let xs: Vec<f64> = (0..100).map(|i| (i as f64 - 49.5) / 20.0).collect();
//! let kde = Kde::new(&xs).unwrap();
//! assert!(kde.log_density(0.0) > kde.log_density(3.0));
//! assert!(Kde::new(&[1.0; 20]).is_err());
//! ```

use super::summary::Marginal;
use std::f64::consts::PI;

/// Fewest samples a density estimate is made from.
pub const MIN_SAMPLES: usize = 10;

/// Why no density estimate can be made.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum KdeError {
    /// Fewer than [`MIN_SAMPLES`] samples.
    #[error("a density estimate needs at least {MIN_SAMPLES} samples, got {0}")]
    TooFew(usize),
    /// A sample is NaN or infinite.
    #[error("a sample is not a finite number")]
    NotFinite,
    /// All samples are equal.
    #[error("the samples have no spread (all equal)")]
    NoSpread,
}

/// A Gaussian kernel density estimate.
#[derive(Debug, Clone, PartialEq)]
pub struct Kde {
    samples: Vec<f64>,
    bandwidth: f64,
}

impl Kde {
    /// The estimate from `samples`, with Silverman's bandwidth.
    pub fn new(samples: &[f64]) -> Result<Kde, KdeError> {
        if samples.len() < MIN_SAMPLES {
            return Err(KdeError::TooFew(samples.len()));
        }
        if samples.iter().any(|x| !x.is_finite()) {
            return Err(KdeError::NotFinite);
        }
        let n = samples.len() as f64;
        let mean = samples.iter().sum::<f64>() / n;
        let sigma = (samples.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (n - 1.0)).sqrt();
        if sigma == 0.0 {
            return Err(KdeError::NoSpread);
        }
        let marginal = Marginal::new(samples).map_err(|_| KdeError::NotFinite)?;
        let iqr = marginal.quantile(0.75) - marginal.quantile(0.25);
        let spread = if iqr > 0.0 {
            sigma.min(iqr / 1.34)
        } else {
            sigma
        };
        Ok(Kde {
            samples: samples.to_vec(),
            bandwidth: 0.9 * spread * n.powf(-0.2),
        })
    }

    /// The bandwidth h.
    pub fn bandwidth(&self) -> f64 {
        self.bandwidth
    }

    /// ln p̂(x), summed in logarithms so that far tails do not underflow to −∞ early.
    pub fn log_density(&self, x: f64) -> f64 {
        let h = self.bandwidth;
        let exponents = self.samples.iter().map(|xi| -0.5 * ((x - xi) / h).powi(2));
        let top = exponents.clone().fold(f64::NEG_INFINITY, f64::max);
        let sum: f64 = exponents.map(|e| (e - top).exp()).sum();
        top + sum.ln() - (self.samples.len() as f64 * h).ln() - 0.5 * (2.0 * PI).ln()
    }

    /// p̂(x).
    pub fn density(&self, x: f64) -> f64 {
        self.log_density(x).exp()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand_chacha::{rand_core::SeedableRng, ChaCha8Rng};
    use rand_distr::{Distribution, StandardNormal};

    #[test]
    fn density_of_normal_draws_at_zero() {
        // The standard normal density at 0 is 1/√(2π); with n = 20 000 the estimate's
        // smoothing bias (−h²/2 · φ(0), h ≈ 0.12) is 0.7 % and its noise about 0.6 %.
        let mut rng = ChaCha8Rng::seed_from_u64(21);
        let xs: Vec<f64> = (0..20_000)
            .map(|_| StandardNormal.sample(&mut rng))
            .collect();
        let kde = Kde::new(&xs).unwrap();
        let exact = 1.0 / (2.0 * PI).sqrt();
        assert!(
            (kde.density(0.0) / exact - 1.0).abs() < 0.02,
            "{}",
            kde.density(0.0)
        );
        // Far in the tail the logarithm stays finite.
        assert!(kde.log_density(100.0).is_finite());
    }

    #[test]
    fn bad_samples_are_refused() {
        assert_eq!(Kde::new(&[1.0; 9]), Err(KdeError::TooFew(9)));
        assert_eq!(Kde::new(&[2.0; 10]), Err(KdeError::NoSpread));
        let mut xs = vec![1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0, 10.0];
        xs[3] = f64::INFINITY;
        assert_eq!(Kde::new(&xs), Err(KdeError::NotFinite));
        // Over half equal: the IQR is zero and σ sets the bandwidth.
        let mut xs = vec![0.0; 12];
        xs.extend([1.0, -1.0, 2.0]);
        assert!(Kde::new(&xs).unwrap().bandwidth() > 0.0);
    }
}
