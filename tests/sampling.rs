//! The samplers against closed forms: a correlated Gaussian, the conjugate linear-Gaussian
//! model, Gaussian evidences, bit-identical output at any thread count, and the coverage of
//! posterior intervals over simulated measurements.

mod common;

use rand_chacha::rand_core::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, StandardNormal};
use std::f64::consts::PI;
use umbral::sampling::summary::Marginal;
use umbral::sampling::{
    ensemble, nested, EnsembleError, EnsembleRun, EnsembleSettings, Halted, LogDensityBatch,
    NestedError, NestedRun, NestedSettings, ParallelDensity, Prior, Start,
};

/// Sample mean and (n − 1) covariance matrix of 2-D points.
fn moments(points: &[Vec<f64>]) -> ([f64; 2], [[f64; 2]; 2]) {
    let n = points.len() as f64;
    let mean = [0, 1].map(|i| points.iter().map(|p| p[i]).sum::<f64>() / n);
    let cov = [0, 1].map(|i| {
        [0, 1].map(|j| {
            points
                .iter()
                .map(|p| (p[i] - mean[i]) * (p[j] - mean[j]))
                .sum::<f64>()
                / (n - 1.0)
        })
    });
    (mean, cov)
}

/// Mean and variance of coordinate 0.
fn mean_var(points: &[Vec<f64>]) -> (f64, f64) {
    let n = points.len() as f64;
    let mean = points.iter().map(|p| p[0]).sum::<f64>() / n;
    let var = points.iter().map(|p| (p[0] - mean).powi(2)).sum::<f64>() / (n - 1.0);
    (mean, var)
}

/// Allowed Monte Carlo error: k standard errors with the run's effective sample size
/// (common practice, no source).
const K: f64 = 4.0;

#[test]
fn ensemble_recovers_a_correlated_gaussian() {
    // Target N(μ, Σ) with μ = (1, −2), σ = (1, 2), correlation ρ = 0.7. The sample mean
    // has standard error σ/√ESS; the sample variance 2^{1/2} σ²/√ESS and the sample
    // covariance σₓσᵧ √((1 + ρ²)/ESS) (Anderson 2003, "An Introduction to Multivariate
    // Statistical Analysis", 3rd ed., §3.4, Gaussian moments).
    let (mu, sigma, rho) = ([1.0, -2.0], [1.0, 2.0], 0.7);
    let target = |p: &[f64]| {
        let (u, v) = ((p[0] - mu[0]) / sigma[0], (p[1] - mu[1]) / sigma[1]);
        -(u * u - 2.0 * rho * u * v + v * v) / (2.0 * (1.0 - rho * rho))
    };
    let priors = vec![Prior::parse("uniform:-30:30").unwrap(); 2];
    // R̂ < 1.01 with every walker as a chain needs each half of a walker's kept trajectory
    // to span about 50 autocorrelation times (τ ≈ 30 steps here).
    let settings = EnsembleSettings {
        steps: 7000,
        burn_in: Some(1000),
        seed: 42,
        ..Default::default()
    };
    let run = ensemble(
        &mut ParallelDensity(target),
        &Start::Priors(priors),
        &settings,
    )
    .unwrap();
    let c = run.convergence;
    let ess = c.ess;
    let (mean, cov) = moments(&run.samples);
    let exact_cov = [
        [sigma[0] * sigma[0], rho * sigma[0] * sigma[1]],
        [rho * sigma[0] * sigma[1], sigma[1] * sigma[1]],
    ];
    for i in 0..2 {
        let se = sigma[i] / ess.sqrt();
        assert!(
            (mean[i] - mu[i]).abs() < K * se,
            "mean {i}: {} (se {se})",
            mean[i]
        );
        let se_var = 2f64.sqrt() * exact_cov[i][i] / ess.sqrt();
        assert!(
            (cov[i][i] - exact_cov[i][i]).abs() < K * se_var,
            "var {i}: {}",
            cov[i][i]
        );
    }
    let se_cov = sigma[0] * sigma[1] * ((1.0 + rho * rho) / ess).sqrt();
    assert!(
        (cov[0][1] - exact_cov[0][1]).abs() < K * se_cov,
        "cov: {}",
        cov[0][1]
    );
    assert!(c.converged, "{c:?}");
    eprintln!(
        "correlated Gaussian: {c:?}, mean {mean:?}, cov {cov:?}, {:?}",
        run.coordinates
    );
}

/// The linear-Gaussian model: x ~ N(μ₀, s₀²), yₖ = aₖ + bₖ x + N(0, σₖ²).
struct Linear {
    mu0: f64,
    s0: f64,
    /// (a, b, σ, y) of each measurement.
    data: Vec<(f64, f64, f64, f64)>,
}

impl Linear {
    fn log_likelihood(&self, x: f64) -> f64 {
        self.data
            .iter()
            .map(|&(a, b, s, y)| {
                let r = (y - a - b * x) / s;
                -0.5 * r * r - s.ln() - 0.5 * (2.0 * PI).ln()
            })
            .sum()
    }

    fn prior(&self) -> Prior {
        Prior::Normal {
            mean: self.mu0,
            sigma: self.s0,
        }
    }

    /// Conjugate normal posterior: precision 1/s₀² + Σ bₖ²/σₖ², mean
    /// (μ₀/s₀² + Σ bₖ(yₖ − aₖ)/σₖ²)/precision (Gelman et al. 2013, "Bayesian Data
    /// Analysis", 3rd ed., §2.5).
    fn posterior(&self) -> (f64, f64) {
        let precision = 1.0 / self.s0.powi(2)
            + self
                .data
                .iter()
                .map(|&(_, b, s, _)| (b / s).powi(2))
                .sum::<f64>();
        let weighted = self.mu0 / self.s0.powi(2)
            + self
                .data
                .iter()
                .map(|&(a, b, s, y)| b * (y - a) / (s * s))
                .sum::<f64>();
        (weighted / precision, 1.0 / precision)
    }

    fn sample(&self, settings: &EnsembleSettings) -> EnsembleRun {
        let prior = self.prior();
        let mut density =
            ParallelDensity(|p: &[f64]| prior.log_density(p[0]) + self.log_likelihood(p[0]));
        ensemble(&mut density, &Start::Priors(vec![prior]), settings).unwrap()
    }
}

#[test]
fn ensemble_matches_the_conjugate_linear_gaussian_posterior() {
    let one = Linear {
        mu0: 1.0,
        s0: 2.0,
        data: vec![(0.5, 2.0, 0.8, 3.7)],
    };
    // By hand: precision 1/4 + 4/0.64 = 6.5, mean (0.25 + 2 · 3.2/0.64)/6.5 = 10.25/6.5.
    let (m1, v1) = one.posterior();
    assert!((v1 - 1.0 / 6.5).abs() < 1e-15 && (m1 - 10.25 / 6.5).abs() < 1e-15);
    let mut two = Linear {
        data: one.data.clone(),
        ..one
    };
    two.data.push((-1.0, 0.5, 0.3, -0.2));
    let (m2, v2) = two.posterior();
    // Precisions add: 1/v₂ = 1/v₁ + b₂²/σ₂² (harmonic sum of variances).
    assert!((1.0 / v2 - (1.0 / v1 + (0.5f64 / 0.3).powi(2))).abs() < 1e-12);
    let settings = EnsembleSettings {
        steps: 7000,
        burn_in: Some(1000),
        seed: 9,
        ..Default::default()
    };
    for (model, (m, v)) in [(&one, (m1, v1)), (&two, (m2, v2))] {
        let run = model.sample(&settings);
        let ess = run.convergence.ess;
        let (mean, var) = mean_var(&run.samples);
        let (se_mean, se_var) = ((v / ess).sqrt(), v * (2.0 / ess).sqrt());
        assert!(
            (mean - m).abs() < K * se_mean,
            "mean {mean} vs {m} (se {se_mean})"
        );
        assert!(
            (var - v).abs() < K * se_var,
            "variance {var} vs {v} (se {se_var})"
        );
        assert!(run.convergence.converged, "{:?}", run.convergence);
        eprintln!("linear-Gaussian: mean {mean} (exact {m}, se {se_mean:.2e}), var {var} (exact {v}, se {se_var:.2e}), ESS {ess:.0}");
    }
}

#[test]
fn nested_sampling_gives_the_conjugate_evidence_and_posterior() {
    // The evidence of the linear-Gaussian model is the density of y under
    // N(a + b μ₀, σ² + b² s₀²) (Gelman et al. 2013, §2.5, the prior predictive).
    let model = Linear {
        mu0: 1.0,
        s0: 2.0,
        data: vec![(0.5, 2.0, 0.8, 3.7)],
    };
    let (a, b, s, y) = model.data[0];
    let var = s * s + b * b * model.s0 * model.s0;
    let exact = -0.5 * (y - a - b * model.mu0).powi(2) / var - 0.5 * (2.0 * PI * var).ln();
    let mut likelihood = ParallelDensity(|p: &[f64]| model.log_likelihood(p[0]));
    let settings = NestedSettings {
        seed: 4,
        ..Default::default()
    };
    let run = nested(&mut likelihood, &[model.prior()], &settings).unwrap();
    let err = run.log_evidence_error;
    assert!(
        (run.log_evidence - exact).abs() < 3.0 * err,
        "ln Z {} vs {exact} (error {err})",
        run.log_evidence
    );
    let (m, v) = model.posterior();
    let (mean, _) = mean_var(&run.equal_weight);
    let n = run.equal_weight.len() as f64;
    assert!(
        (mean - m).abs() < K * (v / n).sqrt(),
        "posterior mean {mean} vs {m}"
    );
    eprintln!(
        "nested linear-Gaussian: ln Z {} ± {err} (exact {exact}), mean {mean} (exact {m})",
        run.log_evidence
    );
}

/// ln Z of an unnormalised Gaussian likelihood exp(−Σ (xᵢ − cᵢ)²/2σᵢ²) under a uniform
/// prior on a box whose sides Wᵢ are much wider than σᵢ: Z = Πᵢ σᵢ√(2π)/Wᵢ (the Gaussian
/// integral; the mass outside the box is below e^{−40}).
fn gaussian_evidence(
    centre: &[f64],
    sigma: &[f64],
    boxes: &[(f64, f64)],
    seed: u64,
) -> (NestedRun, f64) {
    let exact: f64 = sigma
        .iter()
        .zip(boxes)
        .map(|(s, (lo, hi))| (s * (2.0 * PI).sqrt() / (hi - lo)).ln())
        .sum();
    let priors: Vec<Prior> = boxes
        .iter()
        .map(|&(low, high)| Prior::Uniform { low, high })
        .collect();
    let mut likelihood = ParallelDensity(|p: &[f64]| {
        p.iter()
            .zip(centre.iter().zip(sigma))
            .map(|(x, (c, s))| -0.5 * ((x - c) / s).powi(2))
            .sum::<f64>()
    });
    let settings = NestedSettings {
        seed,
        ..Default::default()
    };
    (nested(&mut likelihood, &priors, &settings).unwrap(), exact)
}

#[test]
fn nested_sampling_gives_gaussian_evidences_in_one_and_two_dimensions() {
    /// A Gaussian's centre and widths, and the prior box, per dimension.
    type Case<'a> = (&'a [f64], &'a [f64], &'a [(f64, f64)]);
    let cases: [Case; 2] = [
        (&[0.3], &[0.05], &[(-5.0, 5.0)]),
        (&[0.5, 1.0], &[0.1, 0.2], &[(-5.0, 5.0), (-3.0, 7.0)]),
    ];
    for (seed, (centre, sigma, boxes)) in cases.into_iter().enumerate() {
        let (run, exact) = gaussian_evidence(centre, sigma, boxes, 100 + seed as u64);
        let err = run.log_evidence_error;
        assert!(
            (run.log_evidence - exact).abs() < 3.0 * err,
            "{}-D: ln Z {} vs {exact} (error {err})",
            centre.len(),
            run.log_evidence
        );
        // H ≈ ln(W/(σ√(2πe))) per dimension for a narrow Gaussian under a wide box
        // (the Kullback–Leibler divergence of the posterior from the prior).
        let h: f64 = sigma
            .iter()
            .zip(boxes)
            .map(|(s, (lo, hi))| ((hi - lo) / (s * (2.0 * PI * std::f64::consts::E).sqrt())).ln())
            .sum();
        assert!(
            (run.information - h).abs() < 0.3,
            "H {} vs {h}",
            run.information
        );
        let n = run.equal_weight.len() as f64;
        for (i, (c, s)) in centre.iter().zip(sigma.iter()).enumerate() {
            let mean = run.equal_weight.iter().map(|p| p[i]).sum::<f64>() / n;
            assert!(
                (mean - c).abs() < K * s / n.sqrt(),
                "posterior mean {mean} vs {c}"
            );
        }
        eprintln!(
            "{}-D Gaussian evidence: ln Z {} ± {err} (exact {exact}), H {} (≈ {h}), {} evaluations, acceptance {:.2}",
            centre.len(),
            run.log_evidence,
            run.information,
            run.evaluations,
            run.acceptance
        );
    }
}

/// Every number of an ensemble run, as bits.
fn ensemble_bits(run: &EnsembleRun) -> Vec<u64> {
    let mut bits: Vec<u64> = run.samples.iter().flatten().map(|x| x.to_bits()).collect();
    for c in &run.chains {
        bits.extend(c.log_densities.iter().flatten().map(|x| x.to_bits()));
        bits.extend(c.acceptance.iter().map(|x| x.to_bits()));
    }
    bits.extend([
        run.convergence.rhat.to_bits(),
        run.convergence.ess.to_bits(),
    ]);
    bits
}

/// Every number of a nested-sampling run, as bits.
fn nested_bits(run: &NestedRun) -> Vec<u64> {
    let mut bits: Vec<u64> = run.samples.iter().flatten().map(|x| x.to_bits()).collect();
    bits.extend(run.log_weights.iter().map(|x| x.to_bits()));
    bits.extend(run.equal_weight.iter().flatten().map(|x| x.to_bits()));
    bits.extend([run.log_evidence.to_bits(), run.information.to_bits()]);
    bits
}

fn in_pool<T: Send>(threads: usize, f: impl FnOnce() -> T + Send) -> T {
    rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .unwrap()
        .install(f)
}

#[test]
fn same_seed_gives_identical_output_at_any_thread_count() {
    let target = |p: &[f64]| -0.5 * (p[0] * p[0] + 4.0 * p[1] * p[1]);
    let priors = vec![
        Prior::parse("uniform:-5:5").unwrap(),
        Prior::parse("normal:0:3").unwrap(),
    ];
    let run_ensemble = |seed| {
        let settings = EnsembleSettings {
            steps: 200,
            seed,
            ..Default::default()
        };
        ensemble_bits(
            &ensemble(
                &mut ParallelDensity(target),
                &Start::Priors(priors.clone()),
                &settings,
            )
            .unwrap(),
        )
    };
    let run_nested = |seed| {
        let settings = NestedSettings {
            live_points: 100,
            seed,
            ..Default::default()
        };
        nested_bits(&nested(&mut ParallelDensity(target), &priors, &settings).unwrap())
    };
    let one = in_pool(1, || (run_ensemble(5), run_nested(5)));
    let two = in_pool(2, || (run_ensemble(5), run_nested(5)));
    assert!(
        one.0 == two.0,
        "ensemble output differs between 1 and 2 threads"
    );
    assert!(
        one.1 == two.1,
        "nested output differs between 1 and 2 threads"
    );
    // The comparison can fail: another seed gives other numbers.
    let other = in_pool(2, || (run_ensemble(6), run_nested(6)));
    assert!(other.0 != one.0 && other.1 != one.1);
}

#[test]
fn posterior_intervals_cover_the_truth_at_their_nominal_rate() {
    // Coverage check (common practice, no source): with the truth drawn from the prior,
    // an exact 68 % credible interval covers it with probability 0.68, so the number of
    // covering intervals out of n simulated measurements is Binomial(n, 0.68).
    let (n, mu0, s0, a, b, sigma) = (240, 1.0, 2.0, 0.5, 2.0, 0.8);
    let mut rng = ChaCha8Rng::seed_from_u64(2024);
    let settings = |seed| EnsembleSettings {
        walkers: Some(8),
        steps: 300,
        burn_in: Some(100),
        chains: 1,
        seed,
        ..Default::default()
    };
    let mut covered = 0;
    for i in 0..n {
        let e: [f64; 2] = [
            StandardNormal.sample(&mut rng),
            StandardNormal.sample(&mut rng),
        ];
        let truth = mu0 + s0 * e[0];
        let y = a + b * truth + sigma * e[1];
        let model = Linear {
            mu0,
            s0,
            data: vec![(a, b, sigma, y)],
        };
        let run = model.sample(&settings(i as u64));
        let x: Vec<f64> = run.samples.iter().map(|p| p[0]).collect();
        let [lo, hi] = Marginal::new(&x).unwrap().equal_tailed(0.68).unwrap();
        covered += usize::from(lo <= truth && truth <= hi);
    }
    let (lo, hi) = common::binomial_band(n, 0.68);
    assert!(
        (lo..=hi).contains(&covered),
        "{covered} of {n} covered; 99 % band [{lo}, {hi}]"
    );
    eprintln!("coverage: {covered} of {n} (99 % binomial band [{lo}, {hi}])");
}

#[test]
fn binomial_band_matches_a_hand_computed_case() {
    // Binomial(10, 1/2): P(X ≤ 0) = 1/1024 ≤ 0.005 < P(X ≤ 1) = 11/1024, so the band is [1, 9].
    assert_eq!(common::binomial_band(10, 0.5), (1, 9));
}

#[test]
fn impossible_runs_are_typed_errors() {
    let nowhere = |_: &[f64]| f64::NEG_INFINITY;
    let priors = vec![Prior::parse("uniform:0:1").unwrap()];
    let settings = EnsembleSettings {
        walkers: Some(4),
        steps: 10,
        chains: 1,
        ..Default::default()
    };
    let e = ensemble(
        &mut ParallelDensity(nowhere),
        &Start::Priors(priors.clone()),
        &settings,
    )
    .unwrap_err();
    assert_eq!(e, EnsembleError::NoStart { draws: 400 });
    assert_eq!(
        e.to_string(),
        "no starting point with finite posterior density after 400 draws"
    );
    // Only x < 0.01 has finite density: each of the 4 walkers is found within 100 rounds
    // with probability 1 − 0.99¹⁰⁰ ≈ 0.63; with this seed 2 are.
    let narrow = |p: &[f64]| if p[0] < 0.01 { 0.0 } else { f64::NEG_INFINITY };
    let e = ensemble(
        &mut ParallelDensity(narrow),
        &Start::Priors(priors.clone()),
        &settings,
    )
    .unwrap_err();
    assert!(
        matches!(
            e,
            EnsembleError::FewStarts {
                found: 1..=3,
                needed: 4,
                ..
            }
        ),
        "{e}"
    );
    assert!(e
        .to_string()
        .starts_with("only 2 of 4 starting points with finite posterior density after "));
    let odd = EnsembleSettings {
        walkers: Some(5),
        ..settings
    };
    let e = ensemble(
        &mut ParallelDensity(|_: &[f64]| 0.0),
        &Start::Priors(priors.clone()),
        &odd,
    )
    .unwrap_err();
    assert_eq!(e.to_string(), "the ensemble needs an even number of walkers, at least twice the 1 sampled parameters; got 5");
    let fixed = vec![Prior::Fixed(1.0)];
    let e = ensemble(
        &mut ParallelDensity(|_: &[f64]| 0.0),
        &Start::Priors(fixed.clone()),
        &settings,
    )
    .unwrap_err();
    assert_eq!(e, EnsembleError::NothingToSample);
    let bad = Start::Points(vec![vec![vec![0.5], vec![2.0], vec![0.1], vec![0.2]]]);
    let unit = |p: &[f64]| {
        if (0.0..=1.0).contains(&p[0]) {
            0.0
        } else {
            f64::NEG_INFINITY
        }
    };
    let e = ensemble(&mut ParallelDensity(unit), &bad, &settings).unwrap_err();
    assert_eq!(
        e.to_string(),
        "starting point 1 of chain 0 has no finite log-density"
    );
    let e = nested(
        &mut ParallelDensity(nowhere),
        &priors,
        &NestedSettings::default(),
    )
    .unwrap_err();
    assert_eq!(e, NestedError::NoFiniteLikelihood(400));
    let e = nested(
        &mut ParallelDensity(|_: &[f64]| 0.0),
        &fixed,
        &NestedSettings::default(),
    )
    .unwrap_err();
    assert_eq!(e, NestedError::NothingToSample);
}

#[test]
fn a_fixed_parameter_stays_fixed_and_the_others_are_sampled() {
    // A fixed coordinate is shared by all walkers: the stretch move keeps it, and the
    // move's volume factor uses the one sampled coordinate (z^{d−1} with d = 1), so the
    // standard normal in x is still recovered (σ/√ESS as above).
    let priors = vec![Prior::parse("uniform:-10:10").unwrap(), Prior::Fixed(0.7)];
    let target = |p: &[f64]| -0.5 * p[0] * p[0];
    let settings = EnsembleSettings {
        steps: 2000,
        seed: 3,
        ..Default::default()
    };
    let run = ensemble(
        &mut ParallelDensity(target),
        &Start::Priors(priors.clone()),
        &settings,
    )
    .unwrap();
    assert!(run.samples.iter().all(|p| p[1] == 0.7));
    assert!(run.coordinates[1].is_none());
    let (mean, var) = mean_var(&run.samples);
    let ess = run.convergence.ess;
    assert!(
        mean.abs() < K / ess.sqrt() && (var - 1.0).abs() < K * (2.0 / ess).sqrt(),
        "{mean} {var}"
    );
    let nested_run = nested(
        &mut ParallelDensity(target),
        &priors,
        &NestedSettings {
            seed: 1,
            ..Default::default()
        },
    )
    .unwrap();
    assert!(nested_run.samples.iter().all(|p| p[1] == 0.7));
    // Z = √(2π)/20 for the sampled coordinate.
    let exact = ((2.0 * PI).sqrt() / 20.0).ln();
    assert!((nested_run.log_evidence - exact).abs() < 3.0 * nested_run.log_evidence_error);
}

/// An evaluator that answers `batches` batches, records their stages and sizes, then stops
/// (what the run layer's executor does on Ctrl-C).
struct StopAfter {
    batches: usize,
    seen: Vec<(String, usize)>,
}

impl LogDensityBatch for StopAfter {
    fn log_densities(&mut self, stage: &str, points: &[Vec<f64>]) -> Result<Vec<f64>, Halted> {
        if self.seen.len() == self.batches {
            return Err(Halted);
        }
        self.seen.push((stage.to_string(), points.len()));
        Ok(points.iter().map(|p| -0.5 * p[0] * p[0]).collect())
    }
}

#[test]
fn an_evaluator_can_stop_the_samplers_and_sees_batches() {
    let priors = vec![Prior::parse("normal:0:1").unwrap()];
    let settings = EnsembleSettings {
        walkers: Some(6),
        steps: 50,
        chains: 2,
        ..Default::default()
    };
    let mut stop = StopAfter {
        batches: 3,
        seen: Vec::new(),
    };
    let e = ensemble(&mut stop, &Start::Priors(priors.clone()), &settings).unwrap_err();
    assert_eq!(e, EnsembleError::Halted(Halted));
    // The starting points of both chains in one batch, then half of each ensemble's
    // walkers per batch.
    let expected = [
        ("starting points", 12),
        ("step 1 of 50", 6),
        ("step 1 of 50", 6),
    ];
    let seen: Vec<(&str, usize)> = stop.seen.iter().map(|(s, n)| (s.as_str(), *n)).collect();
    assert_eq!(seen, expected);
    let mut stop = StopAfter {
        batches: 2,
        seen: Vec::new(),
    };
    let e = nested(&mut stop, &priors, &NestedSettings::default()).unwrap_err();
    assert_eq!(e, NestedError::Halted(Halted));
    assert_eq!(stop.seen[0], ("live points".to_string(), 400));
    assert_eq!(stop.seen[1].0, "iteration 1, walk step 1 of 25");
    assert!(stop.seen[1].1 <= 8);
}
