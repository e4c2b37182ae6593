//! The affine-invariant ensemble sampler with the stretch move (Goodman & Weare 2010,
//! Comm. App. Math. Comp. Sci. 5, 65), one half of the walkers moved against the other half
//! so that each half-step is one batch of independent evaluations (Foreman-Mackey, Hogg,
//! Lang & Goodman 2013, PASP 125, 306).
//!
//! For walker Xₖ of the moving half: a partner Xⱼ drawn uniformly from the other half,
//! z drawn from g(z) ∝ 1/√z on [1/a, a] (z = ((a − 1)u + 1)²/a for u uniform),
//! Y = Xⱼ + z (Xₖ − Xⱼ), accepted with probability min(1, z^{d−1} p(Y)/p(Xₖ)). Here d
//! counts the coordinates in which the ensemble's walkers differ at the start: a coordinate
//! all walkers share (a fixed parameter) stays put under the move, so the move lives in the
//! d-dimensional subspace and its volume factor is z^{d−1}. The walkers must span that
//! subspace; drawn from the priors they do.
//!
//! Several independent ensembles ("chains") run side by side, their moves in one batch.
//! Convergence is judged two ways, both with the rank-normalised split-R̂ of
//! [`super::diagnostics`] (Vehtari et al. 2021):
//! - walker R̂: every walker of every ensemble is one chain. A single walker's trajectory is
//!   not a Markov chain by itself, but at stationarity each walker is distributed as the
//!   target (the ensemble's stationary law is the product of one copy of the target per
//!   walker; Goodman & Weare 2010), so walkers that disagree, or halves of one walker that
//!   disagree, have not mixed. For stationary chains R̂ − 1 ≈ (τ − 1)/(2n), n the length
//!   of a split half and τ the integrated autocorrelation time, so R̂ < 1.01 asks every
//!   half of every walker's kept trajectory to span about 50 τ: the run length of at least
//!   50 τ that the emcee documentation recommends (from memory).
//! - ensemble R̂: each independent ensemble is a Markov chain on the walkers' joint
//!   positions, and its walker mean is a function of that state, so the split-R̂ of the
//!   ensembles' walker-mean trajectories is R̂ in its textbook sense (Gelman & Rubin 1992,
//!   Statistical Science 7, 457; Vehtari et al. 2021) and catches ensembles stuck apart.
//!
//! The reported R̂ is the larger of the two over all sampled coordinates. The bulk ESS is
//! Vehtari et al.'s multi-chain estimate with every walker as a chain (it averages the
//! walkers' autocorrelations, as Foreman-Mackey et al. 2013 and Goodman & Weare 2010
//! advise for the integrated autocorrelation time of an ensemble); like theirs it neglects
//! the lagged correlation between different walkers.
//!
//! ```
//! use umbral::sampling::{ensemble, EnsembleSettings, ParallelDensity, Prior, Start};
//! // A correlated 2-D normal: ln p = −(x² − 1.6xy + y²)/(2 · 0.36) (correlation 0.8).
//! let mut target = ParallelDensity(|p: &[f64]| {
//!     -(p[0] * p[0] - 1.6 * p[0] * p[1] + p[1] * p[1]) / 0.72
//! });
//! let priors = vec![Prior::parse("uniform:-20:20").unwrap(); 2];
//! let settings = EnsembleSettings { steps: 600, seed: 1, ..Default::default() };
//! let run = ensemble(&mut target, &Start::Priors(priors), &settings).unwrap();
//! assert_eq!(run.walkers, 32);
//! assert!(run.acceptance > 0.3 && run.acceptance < 0.9);
//! let n = run.samples.len() as f64;
//! let xy = run.samples.iter().map(|p| p[0] * p[1]).sum::<f64>() / n;
//! assert!((xy - 0.8).abs() < 0.15);
//! ```

use super::batch::sanitise;
use super::diagnostics::{bulk_ess, rhat, Convergence, DiagnosticsError};
use super::{index, stream, Halted, LogDensityBatch, Prior, PriorError};
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Open01, StandardUniform};

/// Rounds of redraws from the priors for starting points with finite density.
pub const START_ROUNDS: usize = 100;

/// Stream purposes of [`super::stream`].
const START_STREAM: u64 = 1;
const MOVE_STREAM: u64 = 2;

/// How to run the ensembles.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct EnsembleSettings {
    /// Walkers per ensemble: even and at least twice the number of sampled parameters.
    /// `None`: max(32, 4 d), d the number of sampled parameters.
    pub walkers: Option<usize>,
    /// Steps (each moves every walker once).
    pub steps: usize,
    /// Steps discarded at the start. `None`: half of `steps`.
    pub burn_in: Option<usize>,
    /// Keep every `thin`-th step after the burn-in.
    pub thin: usize,
    /// The stretch scale a > 1 (Goodman & Weare 2010 use a = 2).
    pub stretch: f64,
    /// Independent ensembles, each from its own starting points and random stream.
    pub chains: usize,
    /// The seed every random number derives from.
    pub seed: u64,
}

impl Default for EnsembleSettings {
    fn default() -> Self {
        EnsembleSettings {
            walkers: None,
            steps: 2000,
            burn_in: None,
            thin: 1,
            stretch: 2.0,
            chains: 4,
            seed: 0,
        }
    }
}

/// Where the walkers start.
#[derive(Debug, Clone, PartialEq)]
pub enum Start {
    /// Drawn from these priors (one per parameter), redrawn where the density is −∞.
    Priors(Vec<Prior>),
    /// Given: one list of walker positions per chain (every one with finite density).
    Points(Vec<Vec<Vec<f64>>>),
}

/// Why an ensemble run could not be made.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum EnsembleError {
    /// A prior is not valid.
    #[error(transparent)]
    Prior(#[from] PriorError),
    /// Every parameter is fixed (or the walkers all start at one point).
    #[error("every parameter is fixed: there is nothing to sample")]
    NothingToSample,
    /// Too few walkers, or an odd number.
    #[error("the ensemble needs an even number of walkers, at least twice the {dim} sampled parameters; got {walkers}")]
    Walkers {
        /// Walkers asked for.
        walkers: usize,
        /// Sampled parameters.
        dim: usize,
    },
    /// The steps, burn-in and thinning leave fewer than 4 kept steps.
    #[error("steps {steps}, burn-in {burn_in} and thin {thin} keep fewer than 4 steps")]
    Steps {
        /// Steps.
        steps: usize,
        /// Burn-in.
        burn_in: usize,
        /// Thinning.
        thin: usize,
    },
    /// The stretch scale is not a finite number above 1.
    #[error("the stretch scale must be a finite number above 1, got {0}")]
    Stretch(f64),
    /// No chain asked for.
    #[error("at least one chain is needed")]
    NoChains,
    /// Given starting points of the wrong shape.
    #[error(
        "the starting points must be {chains} chains of equally many walkers of equal dimension"
    )]
    Shape {
        /// Chains asked for.
        chains: usize,
    },
    /// A given starting point has no finite density.
    #[error("starting point {walker} of chain {chain} has no finite log-density")]
    BadStart {
        /// Chain (from 0).
        chain: usize,
        /// Walker (from 0).
        walker: usize,
    },
    /// No draw from the priors had a finite density.
    #[error("no starting point with finite posterior density after {draws} draws")]
    NoStart {
        /// Draws made.
        draws: usize,
    },
    /// Too few draws from the priors had a finite density.
    #[error("only {found} of {needed} starting points with finite posterior density after {draws} draws")]
    FewStarts {
        /// Starting points found.
        found: usize,
        /// Starting points needed.
        needed: usize,
        /// Draws made.
        draws: usize,
    },
    /// The evaluator stopped the run.
    #[error(transparent)]
    Halted(#[from] Halted),
    /// The diagnostics failed.
    #[error(transparent)]
    Diagnostics(#[from] DiagnosticsError),
}

/// One ensemble's record after the burn-in.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct EnsembleChain {
    /// Positions, `draws[kept step][walker][coordinate]`.
    pub draws: Vec<Vec<Vec<f64>>>,
    /// Log-densities, `log_densities[kept step][walker]`.
    pub log_densities: Vec<Vec<f64>>,
    /// Each walker's fraction of accepted moves over all steps (burn-in included).
    pub acceptance: Vec<f64>,
}

/// The diagnostics of one sampled coordinate.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CoordinateDiagnostics {
    /// Rank-normalised split-R̂ with every walker as a chain.
    pub walker_rhat: f64,
    /// Rank-normalised split-R̂ of the ensembles' walker-mean trajectories.
    pub ensemble_rhat: f64,
    /// Bulk effective sample size with every walker as a chain.
    pub ess: f64,
}

/// The outcome of [`ensemble`].
#[derive(Debug, Clone, PartialEq)]
pub struct EnsembleRun {
    /// Parameters per point (fixed ones included).
    pub dim: usize,
    /// Walkers per ensemble.
    pub walkers: usize,
    /// Steps discarded at the start.
    pub burn_in: usize,
    /// Every kept position: chain by chain, kept step by kept step, walker by walker.
    pub samples: Vec<Vec<f64>>,
    /// The record of each independent ensemble.
    pub chains: Vec<EnsembleChain>,
    /// The fraction of all moves accepted.
    pub acceptance: f64,
    /// Per coordinate; `None` for a coordinate that never varies (a fixed parameter).
    pub coordinates: Vec<Option<CoordinateDiagnostics>>,
    /// The verdict over the sampled coordinates.
    pub convergence: Convergence,
}

/// One ensemble's current state.
struct Walkers {
    points: Vec<Vec<f64>>,
    log_p: Vec<f64>,
    accepted: Vec<usize>,
    /// Coordinates in which the walkers differ (the d of the stretch move).
    free: usize,
}

impl Walkers {
    fn new(points: Vec<Vec<f64>>, log_p: Vec<f64>) -> Walkers {
        let dim = points[0].len();
        let free = (0..dim)
            .filter(|&i| points.iter().any(|p| p[i] != points[0][i]))
            .count();
        let accepted = vec![0; points.len()];
        Walkers {
            points,
            log_p,
            accepted,
            free,
        }
    }
}

/// Run the ensembles on `density` (a log-posterior) from `start`.
pub fn ensemble(
    density: &mut dyn LogDensityBatch,
    start: &Start,
    settings: &EnsembleSettings,
) -> Result<EnsembleRun, EnsembleError> {
    check_settings(settings)?;
    let mut states = match start {
        Start::Priors(priors) => from_priors(density, priors, settings)?,
        Start::Points(points) => from_points(density, points, settings)?,
    };
    let walkers = states[0].points.len();
    let free = states.iter().map(|s| s.free).max().unwrap_or(0);
    if free == 0 {
        return Err(EnsembleError::NothingToSample);
    }
    if walkers % 2 == 1 || walkers < 2 * free {
        return Err(EnsembleError::Walkers { walkers, dim: free });
    }
    let burn_in = settings.burn_in.unwrap_or(settings.steps / 2);
    let mut rngs: Vec<ChaCha8Rng> = (0..states.len() as u64)
        .map(|c| stream(settings.seed, MOVE_STREAM, c))
        .collect();
    let mut chains = vec![EnsembleChain::default(); states.len()];
    for step in 0..settings.steps {
        let stage = format!("step {} of {}", step + 1, settings.steps);
        for half in 0..2 {
            half_step(
                density,
                &stage,
                &mut states,
                &mut rngs,
                half,
                settings.stretch,
            )?;
        }
        if step >= burn_in && (step - burn_in).is_multiple_of(settings.thin) {
            for (record, state) in chains.iter_mut().zip(&states) {
                record.draws.push(state.points.clone());
                record.log_densities.push(state.log_p.clone());
            }
        }
    }
    for (record, state) in chains.iter_mut().zip(&states) {
        let steps = settings.steps as f64;
        record.acceptance = state.accepted.iter().map(|&a| a as f64 / steps).collect();
    }
    finish(chains, walkers, burn_in)
}

fn check_settings(settings: &EnsembleSettings) -> Result<(), EnsembleError> {
    let &EnsembleSettings {
        steps,
        burn_in,
        thin,
        stretch,
        chains,
        ..
    } = settings;
    if chains == 0 {
        return Err(EnsembleError::NoChains);
    }
    if !(stretch.is_finite() && stretch > 1.0) {
        return Err(EnsembleError::Stretch(stretch));
    }
    let burn_in = burn_in.unwrap_or(steps / 2);
    let kept = if thin == 0 || burn_in >= steps {
        0
    } else {
        (steps - burn_in).div_ceil(thin)
    };
    if kept < 4 {
        return Err(EnsembleError::Steps {
            steps,
            burn_in,
            thin,
        });
    }
    Ok(())
}

/// Move half `half` (0: the first half of the walkers, 1: the second) of every ensemble:
/// all random numbers drawn first, the proposals evaluated as one batch.
fn half_step(
    density: &mut dyn LogDensityBatch,
    stage: &str,
    states: &mut [Walkers],
    rngs: &mut [ChaCha8Rng],
    half: usize,
    a: f64,
) -> Result<(), Halted> {
    let h = states[0].points.len() / 2;
    let (moving, partners) = if half == 0 { (0, h) } else { (h, 0) };
    let mut proposals = Vec::with_capacity(states.len() * h);
    let mut moves = Vec::with_capacity(states.len() * h);
    for (state, rng) in states.iter().zip(rngs.iter_mut()) {
        for k in moving..moving + h {
            let j = partners + index(rng, h);
            let u: f64 = StandardUniform.sample(rng);
            let z = ((a - 1.0) * u + 1.0).powi(2) / a;
            let r: f64 = Open01.sample(rng);
            let ln_r = r.ln();
            let (xk, xj) = (&state.points[k], &state.points[j]);
            proposals.push(xj.iter().zip(xk).map(|(j, k)| j + z * (k - j)).collect());
            moves.push((k, z, ln_r));
        }
    }
    let values = density.log_densities(stage, &proposals)?;
    let mut items = proposals.into_iter().zip(values).zip(moves);
    for state in states.iter_mut() {
        let d = state.free as f64;
        for ((y, ln_py), (k, z, ln_r)) in items.by_ref().take(h) {
            let ln_py = sanitise(ln_py);
            if ln_r < (d - 1.0) * z.ln() + ln_py - state.log_p[k] {
                state.points[k] = y;
                state.log_p[k] = ln_py;
                state.accepted[k] += 1;
            }
        }
    }
    Ok(())
}

/// The default number of walkers for `free` sampled parameters: max(32, 4 d).
fn default_walkers(free: usize) -> usize {
    (4 * free).max(32)
}

/// Starting walkers drawn from the priors, redrawing those with −∞ density for up to
/// [`START_ROUNDS`] rounds.
fn from_priors(
    density: &mut dyn LogDensityBatch,
    priors: &[Prior],
    settings: &EnsembleSettings,
) -> Result<Vec<Walkers>, EnsembleError> {
    for p in priors {
        p.validate()?;
    }
    let free = priors.iter().filter(|p| !p.is_fixed()).count();
    if free == 0 {
        return Err(EnsembleError::NothingToSample);
    }
    let walkers = settings.walkers.unwrap_or_else(|| default_walkers(free));
    if walkers % 2 == 1 || walkers < 2 * free {
        return Err(EnsembleError::Walkers { walkers, dim: free });
    }
    let needed = walkers * settings.chains;
    let mut rngs: Vec<ChaCha8Rng> = (0..settings.chains as u64)
        .map(|c| stream(settings.seed, START_STREAM, c))
        .collect();
    let mut found: Vec<Option<(Vec<f64>, f64)>> = vec![None; needed];
    let mut draws = 0;
    for _ in 0..START_ROUNDS {
        let missing: Vec<usize> = (0..needed).filter(|&i| found[i].is_none()).collect();
        if missing.is_empty() {
            break;
        }
        let points: Vec<Vec<f64>> = missing
            .iter()
            .map(|&i| {
                priors
                    .iter()
                    .map(|p| p.sample(&mut rngs[i / walkers]))
                    .collect()
            })
            .collect();
        draws += points.len();
        let values = density.log_densities("starting points", &points)?;
        for ((i, x), v) in missing.into_iter().zip(points).zip(values) {
            let v = sanitise(v);
            if v.is_finite() {
                found[i] = Some((x, v));
            }
        }
    }
    let found: Vec<(Vec<f64>, f64)> = found.into_iter().flatten().collect();
    match found.len() {
        0 => Err(EnsembleError::NoStart { draws }),
        n if n < needed => Err(EnsembleError::FewStarts {
            found: n,
            needed,
            draws,
        }),
        _ => Ok(found
            .chunks(walkers)
            .map(|c| {
                Walkers::new(
                    c.iter().map(|p| p.0.clone()).collect(),
                    c.iter().map(|p| p.1).collect(),
                )
            })
            .collect()),
    }
}

/// Starting walkers given by the caller, checked and evaluated.
fn from_points(
    density: &mut dyn LogDensityBatch,
    chains: &[Vec<Vec<f64>>],
    settings: &EnsembleSettings,
) -> Result<Vec<Walkers>, EnsembleError> {
    let shape = EnsembleError::Shape {
        chains: settings.chains,
    };
    let walkers = chains.first().map_or(0, |c| c.len());
    let dim = chains
        .first()
        .and_then(|c| c.first())
        .map_or(0, |p| p.len());
    let regular = chains.len() == settings.chains
        && settings.walkers.is_none_or(|w| w == walkers)
        && chains.iter().all(|c| c.len() == walkers)
        && chains.iter().flatten().all(|p| p.len() == dim);
    if !regular || walkers == 0 || dim == 0 {
        return Err(shape);
    }
    let points: Vec<Vec<f64>> = chains.iter().flatten().cloned().collect();
    let values = density.log_densities("starting points", &points)?;
    if let Some(i) = values.iter().position(|&v| !sanitise(v).is_finite()) {
        return Err(EnsembleError::BadStart {
            chain: i / walkers,
            walker: i % walkers,
        });
    }
    Ok(chains
        .iter()
        .zip(values.chunks(walkers))
        .map(|(c, v)| Walkers::new(c.clone(), v.to_vec()))
        .collect())
}

/// The pooled samples, the diagnostics and the verdict.
fn finish(
    chains: Vec<EnsembleChain>,
    walkers: usize,
    burn_in: usize,
) -> Result<EnsembleRun, EnsembleError> {
    EnsembleRun::from_chains(chains, walkers, burn_in)
}

impl EnsembleRun {
    /// A run from kept chains (equally many kept steps each, every step with `walkers`
    /// positions): its samples and diagnostics. For runs continued from their last positions
    /// and joined.
    pub fn from_chains(
        chains: Vec<EnsembleChain>,
        walkers: usize,
        burn_in: usize,
    ) -> Result<EnsembleRun, EnsembleError> {
        from_chains(chains, walkers, burn_in)
    }
}

fn from_chains(
    chains: Vec<EnsembleChain>,
    walkers: usize,
    burn_in: usize,
) -> Result<EnsembleRun, EnsembleError> {
    let dim = chains[0].draws[0][0].len();
    let samples: Vec<Vec<f64>> = chains
        .iter()
        .flat_map(|c| c.draws.iter().flatten().cloned())
        .collect();
    let mut coordinates = Vec::with_capacity(dim);
    for i in 0..dim {
        coordinates.push(coordinate_diagnostics(&chains, i)?);
    }
    let accepted: f64 = chains.iter().flat_map(|c| &c.acceptance).sum();
    let acceptance = accepted / (chains.len() * walkers) as f64;
    let sampled = coordinates.iter().flatten();
    let worst_rhat = sampled
        .clone()
        .map(|c| c.walker_rhat.max(c.ensemble_rhat))
        .fold(f64::NEG_INFINITY, f64::max);
    let least_ess = sampled.map(|c| c.ess).fold(f64::INFINITY, f64::min);
    Ok(EnsembleRun {
        dim,
        walkers,
        burn_in,
        samples,
        chains,
        acceptance,
        coordinates,
        convergence: Convergence::new(worst_rhat, least_ess, acceptance),
    })
}

/// R̂ and ESS of coordinate `i`, or `None` if every kept draw has the same value there.
fn coordinate_diagnostics(
    chains: &[EnsembleChain],
    i: usize,
) -> Result<Option<CoordinateDiagnostics>, EnsembleError> {
    let first = chains[0].draws[0][0][i];
    let all = || chains.iter().flat_map(|c| c.draws.iter().flatten());
    if all().all(|p| p[i] == first) {
        return Ok(None);
    }
    let walkers = chains[0].draws[0].len();
    let per_walker: Vec<Vec<f64>> = chains
        .iter()
        .flat_map(|c| (0..walkers).map(move |w| c.draws.iter().map(|s| s[w][i]).collect()))
        .collect();
    let means: Vec<Vec<f64>> = chains
        .iter()
        .map(|c| {
            c.draws
                .iter()
                .map(|s| s.iter().map(|p| p[i]).sum::<f64>() / walkers as f64)
                .collect()
        })
        .collect();
    Ok(Some(CoordinateDiagnostics {
        walker_rhat: rhat(&per_walker)?,
        ensemble_rhat: rhat(&means)?,
        ess: bulk_ess(&per_walker)?,
    }))
}
