//! Convergence diagnostics of Markov chains: rank-normalised split-R̂ and bulk effective
//! sample size (Vehtari, Gelman, Simpson, Carpenter & Bürkner 2021, Bayesian Analysis 16,
//! 667), with autocovariances by FFT and Geyer's initial monotone sequence estimator
//! (Geyer 1992, Statistical Science 7, 473).
//!
//! Each chain is split in halves (the middle draw of an odd chain is dropped), so M chains
//! of N draws become 2M chains of n = ⌊N/2⌋. With chain means θ̄ₘ, chain variances sₘ²,
//! W = mean sₘ², B = n/(2M − 1) Σ (θ̄ₘ − θ̄)² and var⁺ = (n − 1)/n W + B/n:
//! R̂ = √(var⁺/W). Rank normalisation replaces every draw by Φ⁻¹((r − 3/8)/(S + 1/4)), r its
//! rank among all S draws (ties share their average rank); R̂ is the larger of the R̂ of the
//! rank-normalised draws (bulk) and of the rank-normalised distances from the median (tail).
//! The bulk ESS is S/τ̂ on the rank-normalised split chains, with
//! ρ̂ₜ = 1 − (W − mean(sₘ² ρ̂ₜ,ₘ))/var⁺ and τ̂ = −1 + 2 Σₖ Pₖ, Pₖ = ρ̂₂ₖ + ρ̂₂ₖ₊₁ summed up to
//! the first negative Pₖ and made non-increasing (Geyer's initial monotone sequence).
//!
//! ```
//! use umbral::sampling::diagnostics::{bulk_ess, rhat};
//! // Four chains that each stay on their own level have not mixed.
//! let chains: Vec<Vec<f64>> = (0..4)
//!     .map(|c| (0..100).map(|i| c as f64 * 10.0 + (i as f64 * 0.7).sin()).collect())
//!     .collect();
//! assert!(rhat(&chains).unwrap() > 1.5);
//! assert!(bulk_ess(&chains).unwrap() < 50.0);
//! ```

use super::normal;
use rustfft::num_complex::Complex;
use rustfft::FftPlanner;

/// R̂ below which chains count as mixed (Vehtari et al. 2021 recommend 1.01).
pub const RHAT_LIMIT: f64 = 1.01;

/// The bulk effective sample size a converged run needs: Vehtari et al. (2021) recommend
/// 100 per chain with four chains, i.e. 400 in all.
pub const MIN_ESS: f64 = 400.0;

/// Why the diagnostics could not be computed.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum DiagnosticsError {
    /// No chain was given.
    #[error("no chains to diagnose")]
    NoChains,
    /// A chain is too short to split (at least 4 draws are needed).
    #[error("chains of {0} draws are too short to diagnose (at least 4 are needed)")]
    TooShort(usize),
    /// The chains have different lengths.
    #[error("chains of different lengths ({0} and {1} draws)")]
    UnequalLengths(usize, usize),
    /// A draw is NaN or infinite.
    #[error("a draw is not a finite number")]
    NotFinite,
    /// Every draw is the same number: there is no variance to compare.
    #[error("every draw is the same number")]
    Constant,
}

/// The verdict on a run: R̂, effective sample size, acceptance fraction, and whether
/// R̂ < [`RHAT_LIMIT`] and ESS ≥ [`MIN_ESS`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Convergence {
    /// The largest rank-normalised split-R̂ over the parameters.
    pub rhat: f64,
    /// The smallest bulk effective sample size over the parameters.
    pub ess: f64,
    /// The fraction of proposals accepted.
    pub acceptance: f64,
    /// `rhat < RHAT_LIMIT && ess >= MIN_ESS`.
    pub converged: bool,
}

impl Convergence {
    /// The verdict from the worst R̂ and ESS over the parameters (NaN R̂ never converges).
    ///
    /// ```
    /// use umbral::sampling::Convergence;
    /// assert!(Convergence::new(1.003, 1200.0, 0.4).converged);
    /// assert!(!Convergence::new(1.02, 1200.0, 0.4).converged);
    /// assert!(!Convergence::new(1.003, 150.0, 0.4).converged);
    /// ```
    pub fn new(rhat: f64, ess: f64, acceptance: f64) -> Convergence {
        Convergence {
            rhat,
            ess,
            acceptance,
            converged: rhat < RHAT_LIMIT && ess >= MIN_ESS,
        }
    }
}

/// The chains split in halves, after checking they can be.
fn split(chains: &[Vec<f64>]) -> Result<Vec<Vec<f64>>, DiagnosticsError> {
    let first = chains.first().ok_or(DiagnosticsError::NoChains)?;
    let n = first.len();
    if let Some(c) = chains.iter().find(|c| c.len() != n) {
        return Err(DiagnosticsError::UnequalLengths(n, c.len()));
    }
    if n < 4 {
        return Err(DiagnosticsError::TooShort(n));
    }
    if chains.iter().flatten().any(|x| !x.is_finite()) {
        return Err(DiagnosticsError::NotFinite);
    }
    let half = n / 2;
    let mut halves = Vec::with_capacity(2 * chains.len());
    for c in chains {
        halves.push(c[..half].to_vec());
        halves.push(c[n - half..].to_vec());
    }
    Ok(halves)
}

/// Every draw replaced by Φ⁻¹((r − 3/8)/(S + 1/4)), r its average rank among all S draws
/// (Vehtari et al. 2021, eq. 14, after Blom 1958); the chains keep their shape.
///
/// ```
/// let z = umbral::sampling::diagnostics::rank_normalize(&[vec![3.0, 1.0], vec![2.0, 2.0]]);
/// assert!(z[0][1] < 0.0 && z[1][0] == 0.0 && z[1][1] == 0.0);
/// assert!((z[0][0] + z[0][1]).abs() < 1e-15);
/// ```
pub fn rank_normalize(chains: &[Vec<f64>]) -> Vec<Vec<f64>> {
    let mut all: Vec<(f64, usize, usize)> = chains
        .iter()
        .enumerate()
        .flat_map(|(c, chain)| chain.iter().enumerate().map(move |(i, &x)| (x, c, i)))
        .collect();
    all.sort_by(|a, b| a.0.total_cmp(&b.0));
    let s = all.len() as f64;
    let mut out: Vec<Vec<f64>> = chains.iter().map(|c| vec![0.0; c.len()]).collect();
    let mut start = 0;
    while start < all.len() {
        let mut end = start + 1;
        while end < all.len() && all[end].0 == all[start].0 {
            end += 1;
        }
        // Ranks are 1-based: the tie block start..end shares (start + 1 + end)/2.
        let rank = 0.5 * (start + 1 + end) as f64;
        let z = normal::quantile((rank - 0.375) / (s + 0.25));
        for &(_, c, i) in &all[start..end] {
            out[c][i] = z;
        }
        start = end;
    }
    out
}

/// Mean and variance (n − 1 denominator) of each chain.
fn moments(chains: &[Vec<f64>]) -> Vec<(f64, f64)> {
    chains
        .iter()
        .map(|c| {
            let n = c.len() as f64;
            let mean = c.iter().sum::<f64>() / n;
            let var = c.iter().map(|x| (x - mean) * (x - mean)).sum::<f64>() / (n - 1.0);
            (mean, var)
        })
        .collect()
}

/// (W, var⁺) of chains of equal length.
fn variances(chains: &[Vec<f64>]) -> (f64, f64) {
    let n = chains[0].len() as f64;
    let m = chains.len() as f64;
    let stats = moments(chains);
    let w = stats.iter().map(|s| s.1).sum::<f64>() / m;
    let grand = stats.iter().map(|s| s.0).sum::<f64>() / m;
    let b_over_n = stats.iter().map(|s| (s.0 - grand).powi(2)).sum::<f64>() / (m - 1.0);
    (w, (n - 1.0) / n * w + b_over_n)
}

/// √(var⁺/W) of chains that are already split.
fn rhat_of_split(chains: &[Vec<f64>]) -> Result<f64, DiagnosticsError> {
    let (w, var_plus) = variances(chains);
    if var_plus == 0.0 {
        return Err(DiagnosticsError::Constant);
    }
    Ok((var_plus / w).sqrt())
}

/// The classic split-R̂ of the draws as they are (no rank normalisation). Chains that each
/// stay constant at different values give +∞.
///
/// ```
/// let chains = vec![vec![1.0, 2.0, 1.0, 2.0], vec![2.0, 1.0, 2.0, 1.0]];
/// // Every half has mean 1.5 and variance 1/2: R̂ = √((n − 1)/n) = √(1/2).
/// let r = umbral::sampling::diagnostics::split_rhat(&chains).unwrap();
/// assert!((r - 0.5f64.sqrt()).abs() < 1e-15);
/// ```
pub fn split_rhat(chains: &[Vec<f64>]) -> Result<f64, DiagnosticsError> {
    rhat_of_split(&split(chains)?)
}

/// The rank-normalised split-R̂: the larger of the bulk R̂ (of the rank-normalised draws)
/// and the tail R̂ (of the rank-normalised distances from the median of all draws).
pub fn rhat(chains: &[Vec<f64>]) -> Result<f64, DiagnosticsError> {
    let halves = split(chains)?;
    let bulk = rhat_of_split(&rank_normalize(&halves))?;
    let mut all: Vec<f64> = halves.iter().flatten().copied().collect();
    all.sort_by(f64::total_cmp);
    let k = all.len();
    let median = 0.5 * (all[(k - 1) / 2] + all[k / 2]);
    let folded: Vec<Vec<f64>> = halves
        .iter()
        .map(|c| c.iter().map(|x| (x - median).abs()).collect())
        .collect();
    let tail = rhat_of_split(&rank_normalize(&folded))?;
    Ok(bulk.max(tail))
}

/// The autocovariances ĉₜ = (1/n) Σᵢ (xᵢ − x̄)(xᵢ₊ₜ − x̄), t = 0..n−1, by FFT of the series
/// zero-padded to at least 2n (so the circular correlation is the linear one).
///
/// ```
/// let c = umbral::sampling::diagnostics::autocovariance(&[1.0, -1.0, 1.0, -1.0]);
/// let expected = [1.0, -0.75, 0.5, -0.25];
/// assert!(c.iter().zip(expected).all(|(a, b)| (a - b).abs() < 1e-15));
/// ```
pub fn autocovariance(series: &[f64]) -> Vec<f64> {
    let n = series.len();
    if n == 0 {
        return Vec::new();
    }
    let mean = series.iter().sum::<f64>() / n as f64;
    let size = (2 * n).next_power_of_two();
    let mut buffer: Vec<Complex<f64>> = series
        .iter()
        .map(|&x| Complex::new(x - mean, 0.0))
        .chain(std::iter::repeat(Complex::new(0.0, 0.0)))
        .take(size)
        .collect();
    let mut planner = FftPlanner::new();
    planner.plan_fft_forward(size).process(&mut buffer);
    for c in &mut buffer {
        *c = Complex::new(c.norm_sqr(), 0.0);
    }
    planner.plan_fft_inverse(size).process(&mut buffer);
    // The inverse transform is unnormalised: divide by the size as well as by n.
    let scale = 1.0 / (size as f64 * n as f64);
    buffer[..n].iter().map(|c| c.re * scale).collect()
}

/// τ̂ = −1 + 2 Σ Pₖ from the autocorrelations ρ̂ₜ (ρ̂₀ = 1), Geyer's initial monotone
/// sequence: pairs Pₖ = ρ̂₂ₖ + ρ̂₂ₖ₊₁ up to the first negative one, each capped by the one
/// before.
fn geyer_time(rho: &[f64]) -> f64 {
    let mut sum = 0.0;
    let mut previous = f64::INFINITY;
    for pair in rho.chunks_exact(2) {
        let p = pair[0] + pair[1];
        if p < 0.0 {
            break;
        }
        previous = p.min(previous);
        sum += previous;
    }
    -1.0 + 2.0 * sum
}

/// The bulk effective sample size of the chains: S/τ̂ on the rank-normalised split chains.
/// τ̂ is kept at or above 1/log₁₀ S, so strongly antithetic chains report at most S log₁₀ S
/// (Vehtari et al. 2021, from memory).
pub fn bulk_ess(chains: &[Vec<f64>]) -> Result<f64, DiagnosticsError> {
    let z = rank_normalize(&split(chains)?);
    let (w, var_plus) = variances(&z);
    if var_plus == 0.0 {
        return Err(DiagnosticsError::Constant);
    }
    let n = z[0].len();
    let m = z.len() as f64;
    let mut mean_acov = vec![0.0; n];
    for chain in &z {
        for (sum, c) in mean_acov.iter_mut().zip(autocovariance(chain)) {
            // sₘ² ρ̂ₜ,ₘ = ĉₜ n/(n − 1)
            *sum += c * n as f64 / (n as f64 - 1.0) / m;
        }
    }
    let rho: Vec<f64> = mean_acov.iter().map(|c| 1.0 - (w - c) / var_plus).collect();
    let total = m * n as f64;
    let tau = geyer_time(&rho).max(1.0 / total.log10());
    Ok(total / tau)
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand_chacha::{rand_core::SeedableRng, ChaCha8Rng};
    use rand_distr::{Distribution, StandardNormal};

    fn normal_chains(seed: u64, chains: usize, n: usize) -> Vec<Vec<f64>> {
        let mut rng = ChaCha8Rng::seed_from_u64(seed);
        (0..chains)
            .map(|_| (0..n).map(|_| StandardNormal.sample(&mut rng)).collect())
            .collect()
    }

    #[test]
    fn iid_normal_chains_have_rhat_near_one_and_ess_near_n() {
        let chains = normal_chains(11, 4, 5000);
        let r = rhat(&chains).unwrap();
        assert!(r < 1.01, "R̂ = {r}");
        let ess = bulk_ess(&chains).unwrap();
        // Independent draws: ESS = N = 20 000; allow 10 %.
        assert!((ess / 20_000.0 - 1.0).abs() < 0.1, "ESS = {ess}");
    }

    #[test]
    fn chains_with_shifted_means_have_large_rhat() {
        let mut chains = normal_chains(12, 4, 1000);
        for (c, chain) in chains.iter_mut().enumerate() {
            for x in chain.iter_mut() {
                *x += 3.0 * c as f64;
            }
        }
        assert!(rhat(&chains).unwrap() > 1.1);
        assert!(split_rhat(&chains).unwrap() > 1.1);
    }

    #[test]
    fn ar1_chains_have_the_closed_form_ess() {
        // xₜ = ρ xₜ₋₁ + εₜ has ρₜ = ρᵗ and τ = (1 + ρ)/(1 − ρ) (Box & Jenkins 1976, "Time
        // Series Analysis", ch. 3): ESS/N = (1 − ρ)/(1 + ρ) = 1/19 at ρ = 0.9.
        let rho = 0.9;
        let mut rng = ChaCha8Rng::seed_from_u64(13);
        let n = 20_000;
        let chains: Vec<Vec<f64>> = (0..4)
            .map(|_| {
                let mut x: f64 = StandardNormal.sample(&mut rng);
                x /= (1.0f64 - rho * rho).sqrt(); // start in the stationary law
                (0..n)
                    .map(|_| {
                        let e: f64 = StandardNormal.sample(&mut rng);
                        x = rho * x + e;
                        x
                    })
                    .collect()
            })
            .collect();
        let ratio = bulk_ess(&chains).unwrap() / (4 * n) as f64;
        let expected = (1.0 - rho) / (1.0 + rho);
        assert!(
            (ratio / expected - 1.0).abs() < 0.2,
            "ESS/N = {ratio}, expected {expected}"
        );
    }

    #[test]
    fn bad_chains_are_refused() {
        assert_eq!(rhat(&[]), Err(DiagnosticsError::NoChains));
        assert_eq!(
            rhat(&[vec![1.0, 2.0, 3.0]]),
            Err(DiagnosticsError::TooShort(3))
        );
        assert_eq!(
            bulk_ess(&[vec![1.0; 4], vec![1.0; 5]]),
            Err(DiagnosticsError::UnequalLengths(4, 5))
        );
        assert_eq!(
            rhat(&[vec![1.0; 6], vec![1.0; 6]]),
            Err(DiagnosticsError::Constant)
        );
        assert_eq!(
            rhat(&[vec![1.0, f64::NAN, 1.0, 2.0]]),
            Err(DiagnosticsError::NotFinite)
        );
        // Chains stuck at different values never mixed.
        assert_eq!(split_rhat(&[vec![1.0; 6], vec![2.0; 6]]), Ok(f64::INFINITY));
    }
}
