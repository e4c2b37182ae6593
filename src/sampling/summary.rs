//! One-parameter summaries of (optionally weighted) samples: mean, median, quantiles,
//! equal-tailed and highest-density intervals.
//!
//! Quantiles interpolate linearly between the sorted samples placed at the weighted Hazen
//! plotting positions pᵢ = (Sᵢ − wᵢ/2)/W, Sᵢ the cumulative weight up to and including the
//! i-th smallest sample and W the total (with equal weights pᵢ = (i − 1/2)/n, definition 5
//! of Hyndman & Fan 1996, The American Statistician 50, 361); below p₁ and above pₙ a
//! quantile is the smallest and largest sample. The highest-density interval is the shortest
//! interval [xᵢ, xⱼ] between two samples holding at least the fraction of the weight; for a
//! multimodal distribution it is the shortest single interval, not a union of intervals
//! around each mode.
//!
//! ```
//! use umbral::sampling::summary::Marginal;
//! let m = Marginal::new(&[4.0, 1.0, 3.0, 2.0]).unwrap();
//! assert_eq!(m.median(), 2.5);
//! assert_eq!(m.quantile(0.25), 1.5);
//! assert_eq!(m.mean(), 2.5);
//! ```

/// Why samples cannot be summarised.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SummaryError {
    /// No sample (or no sample with positive weight).
    #[error("no samples to summarise")]
    Empty,
    /// A sample or weight is NaN or infinite, or a weight is negative.
    #[error("samples and weights must be finite numbers and weights non-negative")]
    NotFinite,
    /// Samples and weights of different lengths.
    #[error("{samples} samples but {weights} weights")]
    Lengths {
        /// Samples.
        samples: usize,
        /// Weights.
        weights: usize,
    },
    /// A level outside (0, 1].
    #[error("interval level {0} is not in (0, 1]")]
    Level(f64),
}

/// The samples of one parameter, sorted, with their weights.
#[derive(Debug, Clone, PartialEq)]
pub struct Marginal {
    /// (value, weight), sorted by value; weights positive.
    points: Vec<(f64, f64)>,
    /// Σ wᵢ.
    total: f64,
    /// pᵢ = (Sᵢ − wᵢ/2)/W.
    positions: Vec<f64>,
}

impl Marginal {
    /// Equally weighted samples.
    pub fn new(samples: &[f64]) -> Result<Marginal, SummaryError> {
        Marginal::weighted(samples, &vec![1.0; samples.len()])
    }

    /// Weighted samples (weights need not be normalised; zero weights are dropped).
    ///
    /// ```
    /// use umbral::sampling::summary::Marginal;
    /// let m = Marginal::weighted(&[0.0, 10.0], &[3.0, 1.0]).unwrap();
    /// assert_eq!(m.mean(), 2.5);
    /// ```
    pub fn weighted(samples: &[f64], weights: &[f64]) -> Result<Marginal, SummaryError> {
        if samples.len() != weights.len() {
            return Err(SummaryError::Lengths {
                samples: samples.len(),
                weights: weights.len(),
            });
        }
        let finite = samples.iter().all(|x| x.is_finite())
            && weights.iter().all(|w| w.is_finite() && *w >= 0.0);
        if !finite {
            return Err(SummaryError::NotFinite);
        }
        let mut points: Vec<(f64, f64)> = samples
            .iter()
            .zip(weights)
            .filter(|(_, &w)| w > 0.0)
            .map(|(&x, &w)| (x, w))
            .collect();
        if points.is_empty() {
            return Err(SummaryError::Empty);
        }
        points.sort_by(|a, b| a.0.total_cmp(&b.0));
        let total: f64 = points.iter().map(|p| p.1).sum();
        let mut cumulative = 0.0;
        let positions = points
            .iter()
            .map(|&(_, w)| {
                cumulative += w;
                (cumulative - 0.5 * w) / total
            })
            .collect();
        Ok(Marginal {
            points,
            total,
            positions,
        })
    }

    /// The weighted mean.
    pub fn mean(&self) -> f64 {
        self.points.iter().map(|(x, w)| x * w).sum::<f64>() / self.total
    }

    /// The weighted standard deviation √(Σ wᵢ (xᵢ − x̄)² / W) (the population form).
    ///
    /// ```
    /// use umbral::sampling::summary::Marginal;
    /// assert_eq!(Marginal::new(&[1.0, 3.0]).unwrap().standard_deviation(), 1.0);
    /// ```
    pub fn standard_deviation(&self) -> f64 {
        let mean = self.mean();
        let sum: f64 = self
            .points
            .iter()
            .map(|(x, w)| w * (x - mean).powi(2))
            .sum();
        (sum / self.total).sqrt()
    }

    /// The quantile at `q` ∈ [0, 1] (see the module documentation); NaN for a NaN `q`.
    pub fn quantile(&self, q: f64) -> f64 {
        if q.is_nan() {
            return f64::NAN;
        }
        let p = &self.positions;
        let last = p.len() - 1;
        if q <= p[0] {
            return self.points[0].0;
        }
        if q >= p[last] {
            return self.points[last].0;
        }
        // The first position above q; the one before it is at or below q.
        let j = p.partition_point(|&pi| pi <= q);
        let t = (q - p[j - 1]) / (p[j] - p[j - 1]);
        let (a, b) = (self.points[j - 1].0, self.points[j].0);
        a + t * (b - a)
    }

    /// The median, the quantile at 1/2.
    pub fn median(&self) -> f64 {
        self.quantile(0.5)
    }

    /// The equal-tailed interval at `level`: [Q((1 − level)/2), Q((1 + level)/2)].
    ///
    /// ```
    /// use umbral::sampling::summary::Marginal;
    /// let xs: Vec<f64> = (0..=100).map(f64::from).collect();
    /// let [lo, hi] = Marginal::new(&xs).unwrap().equal_tailed(0.9).unwrap();
    /// assert!((lo - 4.55).abs() < 1e-12 && (hi - 95.45).abs() < 1e-12);
    /// ```
    pub fn equal_tailed(&self, level: f64) -> Result<[f64; 2], SummaryError> {
        check_level(level)?;
        Ok([
            self.quantile(0.5 * (1.0 - level)),
            self.quantile(0.5 * (1.0 + level)),
        ])
    }

    /// The shortest interval between two samples holding at least the fraction `level` of
    /// the weight (a weight within 10⁻¹² of the target counts as reaching it, so that
    /// 0.68 · 100 samples asks for 68, not 69).
    ///
    /// ```
    /// use umbral::sampling::summary::Marginal;
    /// let m = Marginal::new(&[0.0, 1.0, 1.5, 2.0, 10.0]).unwrap();
    /// assert_eq!(m.highest_density(0.6).unwrap(), [1.0, 2.0]);
    /// ```
    pub fn highest_density(&self, level: f64) -> Result<[f64; 2], SummaryError> {
        check_level(level)?;
        let target = level * self.total * (1.0 - 1e-12);
        let mut best = [self.points[0].0, self.points[self.points.len() - 1].0];
        let (mut j, mut inside) = (0, 0.0);
        for i in 0..self.points.len() {
            // Widen to the right until [xᵢ, xⱼ₋₁] holds the target.
            while inside < target && j < self.points.len() {
                inside += self.points[j].1;
                j += 1;
            }
            if inside < target {
                break;
            }
            let (lo, hi) = (self.points[i].0, self.points[j - 1].0);
            if hi - lo < best[1] - best[0] {
                best = [lo, hi];
            }
            inside -= self.points[i].1;
        }
        Ok(best)
    }
}

fn check_level(level: f64) -> Result<(), SummaryError> {
    if level > 0.0 && level <= 1.0 {
        Ok(())
    } else {
        Err(SummaryError::Level(level))
    }
}

/// What a one-parameter posterior summary needs of a marginal: [`Marginal`] (from samples)
/// and the quadrature's tabulated marginal both answer it.
pub trait MarginalSummary {
    /// The median.
    fn median(&self) -> f64;
    /// The mean.
    fn mean(&self) -> f64;
    /// The equal-tailed interval at `level`.
    fn equal_tailed(&self, level: f64) -> Result<[f64; 2], SummaryError>;
    /// The highest-density interval at `level`.
    fn highest_density(&self, level: f64) -> Result<[f64; 2], SummaryError>;
}

impl MarginalSummary for Marginal {
    fn median(&self) -> f64 {
        Marginal::median(self)
    }
    fn mean(&self) -> f64 {
        Marginal::mean(self)
    }
    fn equal_tailed(&self, level: f64) -> Result<[f64; 2], SummaryError> {
        Marginal::equal_tailed(self, level)
    }
    fn highest_density(&self, level: f64) -> Result<[f64; 2], SummaryError> {
        Marginal::highest_density(self, level)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quantiles_of_a_known_array() {
        // Hazen positions of 10, 20, 30, 40, 50 are 0.1, 0.3, 0.5, 0.7, 0.9.
        let m = Marginal::new(&[50.0, 10.0, 40.0, 20.0, 30.0]).unwrap();
        assert_eq!(m.quantile(0.5), 30.0);
        assert_eq!(m.quantile(0.2), 15.0);
        assert_eq!(m.quantile(0.05), 10.0);
        assert_eq!(m.quantile(0.95), 50.0);
        assert_eq!(m.quantile(0.8), 45.0);
        assert_eq!(m.equal_tailed(0.6).unwrap(), [15.0, 45.0]);
        assert_eq!(m.mean(), 30.0);
    }

    #[test]
    fn equal_weights_and_repeated_samples_agree() {
        // Weights 1 and 3 (total 4): positions (1 − 1/2)/4 = 1/8 and (4 − 3/2)/4 = 5/8.
        let w = Marginal::weighted(&[1.0, 2.0], &[1.0, 3.0]).unwrap();
        assert_eq!(w.quantile(0.125), 1.0);
        assert_eq!(w.quantile(0.375), 1.5);
        assert_eq!(w.mean(), 1.75);
        let zeros = Marginal::weighted(&[1.0, 5.0, 2.0], &[1.0, 0.0, 1.0]).unwrap();
        assert_eq!(zeros.median(), 1.5);
    }

    #[test]
    fn highest_density_interval_of_known_arrays() {
        // 100 samples 0..99 and a far outlier: 68 % of 101 is 68.68, so 69 samples.
        let mut xs: Vec<f64> = (0..100).map(f64::from).collect();
        xs.push(1000.0);
        let m = Marginal::new(&xs).unwrap();
        assert_eq!(m.highest_density(0.68).unwrap(), [0.0, 68.0]);
        // Exactly 68 of 100 (0.68 · 100 is 68.00000000000001 in doubles).
        let m = Marginal::new(&xs[..100]).unwrap();
        assert_eq!(m.highest_density(0.68).unwrap(), [0.0, 67.0]);
        // A skewed array: the shortest interval with 3 of 6 samples is [5, 5.5].
        let m = Marginal::new(&[0.0, 2.0, 5.0, 5.2, 5.5, 9.0]).unwrap();
        assert_eq!(m.highest_density(0.5).unwrap(), [5.0, 5.5]);
        // Weighted: the sample 3 carries 60 % alone.
        let m = Marginal::weighted(&[1.0, 2.0, 3.0, 3.5], &[0.1, 0.2, 0.6, 0.1]).unwrap();
        assert_eq!(m.highest_density(0.6).unwrap(), [3.0, 3.0]);
        assert_eq!(m.highest_density(0.7).unwrap(), [3.0, 3.5]);
        assert_eq!(m.highest_density(1.0).unwrap(), [1.0, 3.5]);
    }

    #[test]
    fn bad_input_is_refused() {
        assert_eq!(Marginal::new(&[]), Err(SummaryError::Empty));
        assert_eq!(Marginal::new(&[f64::NAN]), Err(SummaryError::NotFinite));
        assert_eq!(
            Marginal::weighted(&[1.0], &[-1.0]),
            Err(SummaryError::NotFinite)
        );
        assert_eq!(
            Marginal::weighted(&[1.0], &[]),
            Err(SummaryError::Lengths {
                samples: 1,
                weights: 0
            })
        );
        let m = Marginal::new(&[1.0, 2.0]).unwrap();
        assert!(m.quantile(f64::NAN).is_nan());
        assert_eq!(m.equal_tailed(0.0), Err(SummaryError::Level(0.0)));
        assert_eq!(m.highest_density(1.5), Err(SummaryError::Level(1.5)));
    }
}
