//! Nested sampling (Skilling 2006, Bayesian Analysis 1, 833) of a log-likelihood under
//! priors, in the unit hypercube of the sampled parameters mapped by the priors' quantile
//! functions ([`Prior::from_unit`]).
//!
//! N live points are drawn from the prior. Each iteration removes the k lowest-likelihood
//! live points (k = [`NestedSettings::batch`]) and replaces them with k new points of
//! likelihood above the highest removed one, L*. Removing the k lowest of N one by one is
//! nested sampling with n = N, N − 1, …, N − k + 1 live points at the successive deaths, each
//! shrinking the prior volume by E[ln t] = −1/n (the variable live-point bookkeeping of
//! Higson, Handley, Hobson & Lasenby 2019, Statistics and Computing 29, 891); the N − k
//! survivors are uniform in the region L > L*, as are the k new points, so the count is back
//! to N. So ln Xᵢ = ln Xᵢ₋₁ − 1/nᵢ and the dead point i has weight wᵢ = Xᵢ₋₁ − Xᵢ (simple
//! weights); Z = Σ Lᵢ wᵢ, accumulated in logarithms.
//!
//! A new point comes from a constrained random walk started at a copy of a random survivor:
//! [`NestedSettings::walk_steps`] Gaussian steps in the unit cube, with the covariance of
//! the survivors scaled by a step size, each accepted if it stays in the cube with L > L*
//! (a Metropolis walk whose invariant law is the prior restricted to L > L*). The k walks
//! advance together, so each walk step is one batch of k evaluations. After each iteration
//! the step size is multiplied by exp(f − 1/2), f the fraction of accepted steps, to keep the
//! acceptance near one half (common practice, no source).
//!
//! The run stops when the live points can add little: max L_live · X < `stop_fraction` · Z
//! (default 10⁻³, so the neglected remainder changes ln Z by less than 10⁻³, well below the
//! statistical error). The live points are then added, each with weight X/N (Skilling 2006).
//! The information is H = Σ pᵢ ln(Lᵢ/Z) with posterior weights pᵢ = Lᵢwᵢ/Z, and the error
//! of ln Z is √(H/N) (Skilling 2006).
//!
//! ```
//! use umbral::sampling::{nested, NestedSettings, ParallelDensity, Prior};
//! // A unit normal likelihood under a uniform prior on [−10, 10]: Z = 1/20.
//! let mut likelihood = ParallelDensity(|x: &[f64]| {
//!     -0.5 * x[0] * x[0] - 0.5 * (2.0 * std::f64::consts::PI).ln()
//! });
//! let priors = vec![Prior::Uniform { low: -10.0, high: 10.0 }];
//! let settings = NestedSettings { live_points: 200, seed: 5, ..Default::default() };
//! let run = nested(&mut likelihood, &priors, &settings).unwrap();
//! assert!((run.log_evidence - (1.0f64 / 20.0).ln()).abs() < 3.0 * run.log_evidence_error);
//! ```

use super::batch::sanitise;
use super::prior::Transform;
use super::{index, log_add, stream, Halted, LogDensityBatch, Prior, PriorError};
use nalgebra::{DMatrix, DVector};
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, StandardNormal, StandardUniform};

/// Stream purposes of [`super::stream`].
const LIVE_STREAM: u64 = 11;
const WALK_STREAM: u64 = 12;
const RESAMPLE_STREAM: u64 = 13;

/// How to run nested sampling.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct NestedSettings {
    /// Live points N.
    pub live_points: usize,
    /// Points replaced per iteration k (1 ≤ k ≤ N/2): the batch size of the walks.
    pub batch: usize,
    /// Steps of each constrained random walk.
    pub walk_steps: usize,
    /// Stop when max L_live · X < `stop_fraction` · Z.
    pub stop_fraction: f64,
    /// Iterations (of `batch` replacements each) allowed before giving up.
    pub max_iterations: usize,
    /// The seed every random number derives from.
    pub seed: u64,
}

impl Default for NestedSettings {
    fn default() -> Self {
        NestedSettings {
            live_points: 400,
            batch: 8,
            walk_steps: 25,
            stop_fraction: 1e-3,
            max_iterations: 100_000,
            seed: 0,
        }
    }
}

/// Why a nested-sampling run could not be made.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum NestedError {
    /// A prior is not valid.
    #[error(transparent)]
    Prior(#[from] PriorError),
    /// Every parameter is fixed.
    #[error("every parameter is fixed: there is nothing to sample")]
    NothingToSample,
    /// The settings do not make a run.
    #[error("nested sampling needs 1 <= batch <= live points / 2, walk steps >= 1 and 0 < stop fraction < 1; got {live_points} live points, batch {batch}, {walk_steps} walk steps, stop fraction {stop_fraction}")]
    Settings {
        /// Live points.
        live_points: usize,
        /// Batch.
        batch: usize,
        /// Walk steps.
        walk_steps: usize,
        /// Stop fraction.
        stop_fraction: f64,
    },
    /// No live point drawn from the prior has a finite likelihood.
    #[error("no live point with finite likelihood among {0} draws from the priors")]
    NoFiniteLikelihood(usize),
    /// Every survivor has the likelihood of the removed points: a plateau the walks cannot
    /// climb.
    #[error("the likelihood is flat at ln L = {0} over all live points")]
    Plateau(f64),
    /// The stopping criterion was not reached.
    #[error("nested sampling did not stop within {iterations} iterations (the live points could still add {remaining:.3e} of Z)")]
    IterationLimit {
        /// Iterations made.
        iterations: usize,
        /// max L_live · X / Z when it gave up.
        remaining: f64,
    },
    /// The evaluator stopped the run.
    #[error(transparent)]
    Halted(#[from] Halted),
}

/// The outcome of [`nested`].
#[derive(Debug, Clone, PartialEq)]
pub struct NestedRun {
    /// ln Z.
    pub log_evidence: f64,
    /// The error of ln Z, √(H/N).
    pub log_evidence_error: f64,
    /// The information H = Σ pᵢ ln(Lᵢ/Z) (nats).
    pub information: f64,
    /// The dead points then the final live points, in order of increasing likelihood.
    pub samples: Vec<Vec<f64>>,
    /// ln pᵢ, the normalised posterior weight of each sample.
    pub log_weights: Vec<f64>,
    /// ln L of each sample.
    pub log_likelihoods: Vec<f64>,
    /// Equally weighted posterior draws: systematic resampling of the weighted samples into
    /// ⌊1/Σ pᵢ²⌋ points (Kish's effective sample size).
    pub equal_weight: Vec<Vec<f64>>,
    /// Iterations made.
    pub iterations: usize,
    /// Likelihood evaluations made.
    pub evaluations: usize,
    /// The fraction of walk steps accepted.
    pub acceptance: f64,
}

/// The live points: unit-cube coordinates of the sampled parameters, parameters, ln L.
struct Live {
    unit: Vec<Vec<f64>>,
    theta: Vec<Vec<f64>>,
    log_l: Vec<f64>,
}

/// One dead point.
struct Dead {
    theta: Vec<f64>,
    log_l: f64,
    log_width: f64,
}

fn check_settings(s: &NestedSettings) -> Result<(), NestedError> {
    let ok = s.batch >= 1
        && 2 * s.batch <= s.live_points
        && s.walk_steps >= 1
        && s.stop_fraction > 0.0
        && s.stop_fraction < 1.0;
    if ok {
        return Ok(());
    }
    Err(NestedError::Settings {
        live_points: s.live_points,
        batch: s.batch,
        walk_steps: s.walk_steps,
        stop_fraction: s.stop_fraction,
    })
}

/// The dead points with the running ln X and ln Z.
struct Shells {
    dead: Vec<Dead>,
    ln_x: f64,
    ln_z: f64,
}

impl Shells {
    /// Retire the live points `worst` (lowest first), the j-th with N − j live points:
    /// ln X drops by 1/(N − j), the weight is X_before − X_after.
    fn retire(&mut self, live: &Live, worst: &[usize]) {
        let n = live.log_l.len();
        for (j, &i) in worst.iter().enumerate() {
            let shrink = 1.0 / (n - j) as f64;
            let log_width = self.ln_x + (-(-shrink).exp_m1()).ln();
            self.ln_z = log_add(self.ln_z, live.log_l[i] + log_width);
            self.ln_x -= shrink;
            self.dead.push(Dead {
                theta: live.theta[i].clone(),
                log_l: live.log_l[i],
                log_width,
            });
        }
    }
}

/// What a run counted.
#[derive(Default)]
struct Counts {
    iterations: usize,
    evaluations: usize,
    accepted: usize,
    proposed: usize,
}

/// Run nested sampling of `likelihood` (a log-likelihood) under `priors`.
pub fn nested(
    likelihood: &mut dyn LogDensityBatch,
    priors: &[Prior],
    settings: &NestedSettings,
) -> Result<NestedRun, NestedError> {
    check_settings(settings)?;
    for p in priors {
        p.validate()?;
    }
    let transform = Transform::new(priors);
    if transform.free.is_empty() {
        return Err(NestedError::NothingToSample);
    }
    let mut live = initial_live(likelihood, &transform, settings)?;
    let mut rng = stream(settings.seed, WALK_STREAM, 0);
    let mut shells = Shells {
        dead: Vec::new(),
        ln_x: 0.0,
        ln_z: f64::NEG_INFINITY,
    };
    let mut counts = Counts {
        evaluations: settings.live_points,
        ..Counts::default()
    };
    let mut step = 1.0;
    loop {
        let max_live = live.log_l.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        let remaining = max_live + shells.ln_x - shells.ln_z;
        if remaining < settings.stop_fraction.ln() {
            break;
        }
        if counts.iterations == settings.max_iterations {
            return Err(NestedError::IterationLimit {
                iterations: counts.iterations,
                remaining: remaining.exp(),
            });
        }
        counts.iterations += 1;
        let mut order: Vec<usize> = (0..live.log_l.len()).collect();
        order.sort_by(|&a, &b| live.log_l[a].total_cmp(&live.log_l[b]).then(a.cmp(&b)));
        let (worst, rest) = order.split_at(settings.batch);
        shells.retire(&live, worst);
        let threshold = live.log_l[worst[settings.batch - 1]];
        let survivors: Vec<usize> = rest
            .iter()
            .copied()
            .filter(|&i| live.log_l[i] > threshold)
            .collect();
        if survivors.is_empty() {
            return Err(NestedError::Plateau(threshold));
        }
        let walk = Walk {
            transform: &transform,
            threshold,
            step,
            steps: settings.walk_steps,
            stage: format!("iteration {}", counts.iterations),
        };
        let outcome = walk.run(likelihood, &live, &survivors, settings.batch, &mut rng)?;
        for (&i, (u, theta, log_l)) in worst.iter().zip(outcome.points) {
            (live.unit[i], live.theta[i], live.log_l[i]) = (u, theta, log_l);
        }
        counts.evaluations += outcome.evaluations;
        counts.accepted += outcome.accepted;
        counts.proposed += outcome.proposed;
        step *= (outcome.accepted as f64 / outcome.proposed as f64 - 0.5).exp();
    }
    Ok(summarise(shells, live, settings, &counts))
}

/// N points drawn uniformly in the unit cube, mapped and evaluated.
fn initial_live(
    likelihood: &mut dyn LogDensityBatch,
    transform: &Transform,
    settings: &NestedSettings,
) -> Result<Live, NestedError> {
    let mut rng = stream(settings.seed, LIVE_STREAM, 0);
    let d = transform.free.len();
    let unit: Vec<Vec<f64>> = (0..settings.live_points)
        .map(|_| (0..d).map(|_| unit_draw(&mut rng)).collect())
        .collect();
    let theta: Vec<Vec<f64>> = unit.iter().map(|u| transform.parameters(u)).collect();
    let log_l: Vec<f64> = likelihood
        .log_densities("live points", &theta)?
        .into_iter()
        .map(sanitise)
        .collect();
    if log_l.iter().all(|l| *l == f64::NEG_INFINITY) {
        return Err(NestedError::NoFiniteLikelihood(settings.live_points));
    }
    Ok(Live { unit, theta, log_l })
}

/// A uniform number in (0, 1).
fn unit_draw(rng: &mut ChaCha8Rng) -> f64 {
    rand_distr::Open01.sample(rng)
}

/// The k constrained random walks of one iteration.
struct Walk<'a> {
    transform: &'a Transform<'a>,
    threshold: f64,
    step: f64,
    steps: usize,
    stage: String,
}

/// What the walks found: (unit point, parameters, ln L) per walk, and their counts.
struct WalkOutcome {
    points: Vec<(Vec<f64>, Vec<f64>, f64)>,
    evaluations: usize,
    accepted: usize,
    proposed: usize,
}

impl Walk<'_> {
    fn run(
        &self,
        likelihood: &mut dyn LogDensityBatch,
        live: &Live,
        survivors: &[usize],
        k: usize,
        rng: &mut ChaCha8Rng,
    ) -> Result<WalkOutcome, Halted> {
        let chol = proposal_matrix(survivors.iter().map(|&i| &live.unit[i]));
        let d = chol.nrows();
        let mut points: Vec<(Vec<f64>, Vec<f64>, f64)> = (0..k)
            .map(|_| {
                let i = survivors[index(rng, survivors.len())];
                (live.unit[i].clone(), live.theta[i].clone(), live.log_l[i])
            })
            .collect();
        let (mut evaluations, mut accepted) = (0, 0);
        for s in 0..self.steps {
            let mut candidates = Vec::with_capacity(k);
            for (w, point) in points.iter().enumerate() {
                let e = DVector::from_iterator(d, (0..d).map(|_| StandardNormal.sample(rng)));
                let delta = &chol * e * self.step;
                let u: Vec<f64> = point
                    .0
                    .iter()
                    .zip(delta.iter())
                    .map(|(a, b)| a + b)
                    .collect();
                if u.iter().all(|x| *x > 0.0 && *x < 1.0) {
                    candidates.push((w, u));
                }
            }
            let theta: Vec<Vec<f64>> = candidates
                .iter()
                .map(|(_, u)| self.transform.parameters(u))
                .collect();
            let stage = format!("{}, walk step {} of {}", self.stage, s + 1, self.steps);
            let values = likelihood.log_densities(&stage, &theta)?;
            evaluations += theta.len();
            for (((w, u), th), v) in candidates.into_iter().zip(theta).zip(values) {
                let v = sanitise(v);
                if v > self.threshold {
                    points[w] = (u, th, v);
                    accepted += 1;
                }
            }
        }
        let proposed = k * self.steps;
        Ok(WalkOutcome {
            points,
            evaluations,
            accepted,
            proposed,
        })
    }
}

/// A lower-triangular L with L Lᵀ the covariance of `points` (Cholesky), or the diagonal of
/// standard deviations where the covariance is singular.
fn proposal_matrix<'a>(points: impl Iterator<Item = &'a Vec<f64>> + Clone) -> DMatrix<f64> {
    let n = points.clone().count() as f64;
    let d = points.clone().next().map_or(0, |p| p.len());
    let mut mean = DVector::zeros(d);
    for p in points.clone() {
        mean += DVector::from_column_slice(p) / n;
    }
    let mut cov = DMatrix::zeros(d, d);
    for p in points {
        let x = DVector::from_column_slice(p) - &mean;
        cov += &x * x.transpose() / (n - 1.0).max(1.0);
    }
    match cov.clone().cholesky() {
        Some(c) => c.l(),
        None => DMatrix::from_diagonal(&cov.diagonal().map(|v| v.max(1e-18).sqrt())),
    }
}

/// ln Z, H, the weighted and the equally weighted samples.
fn summarise(shells: Shells, live: Live, settings: &NestedSettings, counts: &Counts) -> NestedRun {
    let Shells { mut dead, ln_x, .. } = shells;
    let n = settings.live_points;
    let mut order: Vec<usize> = (0..n).collect();
    order.sort_by(|&a, &b| live.log_l[a].total_cmp(&live.log_l[b]).then(a.cmp(&b)));
    let log_width = ln_x - (n as f64).ln();
    for i in order {
        let (theta, log_l) = (live.theta[i].clone(), live.log_l[i]);
        dead.push(Dead {
            theta,
            log_l,
            log_width,
        });
    }
    let ln_z = dead
        .iter()
        .fold(f64::NEG_INFINITY, |z, p| log_add(z, p.log_l + p.log_width));
    let log_weights: Vec<f64> = dead.iter().map(|p| p.log_l + p.log_width - ln_z).collect();
    let information: f64 = dead
        .iter()
        .zip(&log_weights)
        .filter(|(_, w)| w.is_finite())
        .map(|(p, w)| w.exp() * (p.log_l - ln_z))
        .sum();
    let information = information.max(0.0);
    let equal_weight = resample(&dead, &log_weights, settings.seed);
    NestedRun {
        log_evidence: ln_z,
        log_evidence_error: (information / n as f64).sqrt(),
        information,
        samples: dead.iter().map(|p| p.theta.clone()).collect(),
        log_weights,
        log_likelihoods: dead.iter().map(|p| p.log_l).collect(),
        equal_weight,
        iterations: counts.iterations,
        evaluations: counts.evaluations,
        acceptance: counts.accepted as f64 / counts.proposed.max(1) as f64,
    }
}

/// Systematic resampling (one uniform offset, evenly spaced positions on the cumulative
/// weights) into ⌊1/Σ pᵢ²⌋ equally weighted points.
fn resample(dead: &[Dead], log_weights: &[f64], seed: u64) -> Vec<Vec<f64>> {
    let weights: Vec<f64> = log_weights.iter().map(|w| w.exp()).collect();
    let count = (1.0 / weights.iter().map(|w| w * w).sum::<f64>()).floor() as usize;
    let mut rng = stream(seed, RESAMPLE_STREAM, 0);
    let offset: f64 = StandardUniform.sample(&mut rng);
    let total: f64 = weights.iter().sum();
    let mut out = Vec::with_capacity(count);
    let (mut i, mut cumulative) = (0, weights[0]);
    for j in 0..count {
        let target = (j as f64 + offset) / count as f64 * total;
        while cumulative < target && i + 1 < weights.len() {
            i += 1;
            cumulative += weights[i];
        }
        out.push(dead[i].theta.clone());
    }
    out
}
