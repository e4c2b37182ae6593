//! Who evaluates the log-density. A sampler decides which points to evaluate; a
//! [`LogDensityBatch`] evaluates them. [`ParallelDensity`] is a plain parallel loop; a program
//! that wants progress or Ctrl-C supplies its own (the run layer's executor) and may stop the
//! sampler with [`Halted`], keeping the reason itself.

use rayon::prelude::*;

/// The evaluations were stopped (the evaluator knows why: an interruption, a failed write).
#[derive(Debug, Clone, Copy, PartialEq, Eq, thiserror::Error)]
#[error("the log-density evaluations were stopped")]
pub struct Halted;

/// Evaluates the log-density at the points a sampler asks for.
pub trait LogDensityBatch {
    /// ln p(x) for every point of `points`, in the order of `points`. The evaluations are
    /// independent of each other (they may run in parallel). `stage` names the step of the
    /// run (`starting points`, `chain 2, step 10 of 400`, ...). A value that is NaN or +∞
    /// counts as −∞: the point is rejected.
    fn log_densities(&mut self, stage: &str, points: &[Vec<f64>]) -> Result<Vec<f64>, Halted>;
}

/// Every point evaluated by `F` in a parallel loop (rayon), outputs in order; never stops.
///
/// ```
/// use umbral::sampling::{LogDensityBatch, ParallelDensity};
/// let mut density = ParallelDensity(|x: &[f64]| -x[0] * x[0]);
/// let values = density.log_densities("grid", &[vec![1.0], vec![2.0]]).unwrap();
/// assert_eq!(values, vec![-1.0, -4.0]);
/// ```
#[derive(Debug, Clone, Copy)]
pub struct ParallelDensity<F: Fn(&[f64]) -> f64 + Sync>(pub F);

impl<F: Fn(&[f64]) -> f64 + Sync> LogDensityBatch for ParallelDensity<F> {
    fn log_densities(&mut self, _stage: &str, points: &[Vec<f64>]) -> Result<Vec<f64>, Halted> {
        Ok(points.par_iter().map(|x| (self.0)(x)).collect())
    }
}

/// A log-density as the samplers use it: NaN and +∞ become −∞.
pub(super) fn sanitise(value: f64) -> f64 {
    if value.is_nan() || value == f64::INFINITY {
        f64::NEG_INFINITY
    } else {
        value
    }
}
