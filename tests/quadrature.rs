//! The quadrature sampler (`--sampler quadrature`): the Reissner–Nordström posterior and
//! evidence against mpmath, a correlated 2-D Gaussian posterior with its closed form, the
//! calibration of its intervals over simulated measurements, and the command line.

mod common;

use rand_chacha::rand_core::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, StandardNormal, StandardUniform};
use umbral::measurement::Measurement;
use umbral::metrics::MetricSource;
use umbral::posterior::{
    infer_on, InferSettings, Inference, InferenceRequest, ParallelEvaluator, PosteriorModel,
    SamplerKind,
};
use umbral::sampling::quadrature::{quadrature, QuadratureSettings};
use umbral::sampling::{ParallelDensity, Prior};

fn radius(mu: f64, sigma: f64) -> Measurement {
    Measurement::from_toml_str(&format!(
        "[size.shadow_radius]\nvalue = {mu}\nsigma = {sigma}\n"
    ))
    .unwrap()
}

fn rn_model(mu: f64, sigma: f64) -> PosteriorModel {
    let request = InferenceRequest::new(
        MetricSource::builtin("reissner-nordstrom").unwrap(),
        vec![("q".into(), Prior::parse("uniform:0:1").unwrap())],
        vec![radius(mu, sigma)],
    );
    PosteriorModel::new(&request).unwrap()
}

fn by_quadrature(model: &PosteriorModel, samples: usize) -> Inference {
    let settings = InferSettings {
        sampler: SamplerKind::Quadrature,
        samples,
        seed: 9,
        ..Default::default()
    };
    infer_on(model, &settings, &mut ParallelEvaluator).unwrap()
}

/// The critical impact parameter of Reissner–Nordström, b_c = r²/√(r² − 2r + q²) at the
/// photon sphere r = (3 + √(9 − 8q²))/2 (Zakharov et al. 2005, Phys. Rev. D 72, 084020).
fn rn_shadow_radius(q: f64) -> f64 {
    let r = 0.5 * (3.0 + (9.0 - 8.0 * q * q).sqrt());
    r * r / (r * r - 2.0 * r + q * q).sqrt()
}

/// The 0.16, 0.5 and 0.84 quantiles and the mean of the Reissner–Nordström charge, and the
/// evidence, against mpmath quadrature of the exact posterior at 30 digits
/// (tests/generate_rn_posterior.py, tanh-sinh quadrature and root finding on the CDF to
/// 1e-20; b_c(q) from Zakharov et al. 2005, Phys. Rev. D 72, 084020). The quantiles and the
/// mean must agree to 1e-6, well inside the 1e-3 the issue asks and the refinement's
/// tolerance of 1e-4 (measured: about 1e-10; the bound leaves room for the shadow's own
/// tolerance, 1e-8 M in r_sh, about 1e-8 in q). ln Z must agree within its stated error (the
/// change between the last two grids). The GR model (q = 0, nothing left to sample) has the
/// likelihood at q = 0 as its evidence, exactly.
#[test]
fn reissner_nordstrom_quantiles_and_evidence_match_mpmath() {
    let table: serde_json::Value =
        serde_json::from_str(include_str!("data/rn_posterior.json")).unwrap();
    for case in table["cases"].as_array().unwrap() {
        let (mu, sigma) = (
            case["mu"].as_f64().unwrap(),
            case["sigma"].as_f64().unwrap(),
        );
        let run = by_quadrature(&rn_model(mu, sigma), 1000);
        assert!(run.convergence.converged, "{:?}", run.quadrature);
        assert_eq!(run.failures, 0);
        let s = &run.summaries[0];
        let reference = |p: &str| case["quantiles"][p].as_f64().unwrap();
        let et68 = s.intervals[0];
        assert_eq!((et68.confidence, et68.kind), (0.68, "equal-tailed"));
        for (got, key) in [(et68.low, "0.16"), (s.median, "0.5"), (et68.high, "0.84")] {
            let error = (got - reference(key)).abs();
            println!(
                "mu {mu} sigma {sigma}: q_{key} = {got:.12}, mpmath {:.12}, error {error:.1e}",
                reference(key)
            );
            assert!(error < 1e-6, "quantile {key}: {got} vs {}", reference(key));
        }
        let mean = case["mean"].as_f64().unwrap();
        assert!((s.mean - mean).abs() < 1e-6, "mean {} vs {mean}", s.mean);
        let e = run.evidence.unwrap();
        let exact = case["log_evidence"].as_f64().unwrap();
        println!(
            "mu {mu}: ln Z = {:.12} (change at the last doubling {:.1e}), mpmath {exact:.12}, \
             error {:.1e}; {} evaluations",
            e.log_evidence,
            e.log_evidence_error,
            (e.log_evidence - exact).abs(),
            run.evaluations
        );
        assert!((e.log_evidence - exact).abs() <= e.log_evidence_error);
        assert!(e.log_evidence_error < 1e-4);
        let gr = case["log_likelihood_at_q0"].as_f64().unwrap();
        assert!((e.log_evidence_gr - gr).abs() < 1e-9 && e.log_evidence_gr_error == 0.0);
    }
}

/// A prior past the extremal charge, uniform:0:1.2: the model's likelihood is zero for
/// q > 1 (no horizon and no capture; tests/generate_rn_posterior.py gives the argument), a
/// jump from the posterior's largest value to zero for a measurement below b_c(1) = 4. The
/// quadrature locates the jump by bisection, splits its panels there, and must match the
/// mpmath posterior (truncated at q = 1) as the smooth cases do.
#[test]
fn a_jump_to_zero_likelihood_is_located_and_integrated_exactly() {
    let table: serde_json::Value =
        serde_json::from_str(include_str!("data/rn_posterior.json")).unwrap();
    for case in table["boundary_cases"].as_array().unwrap() {
        let (mu, sigma) = (
            case["mu"].as_f64().unwrap(),
            case["sigma"].as_f64().unwrap(),
        );
        let prior = case["prior"].as_str().unwrap();
        let request = InferenceRequest::new(
            MetricSource::builtin("reissner-nordstrom").unwrap(),
            vec![("q".into(), Prior::parse(prior).unwrap())],
            vec![radius(mu, sigma)],
        );
        let model = PosteriorModel::new(&request).unwrap();
        // The premise: zero likelihood just past q = 1, finite just below.
        assert!(model.evaluate(&[0.999]).log_likelihood.is_finite());
        for q in [1.001, 1.03, 1.1] {
            assert_eq!(
                model.evaluate(&[q]).log_likelihood,
                f64::NEG_INFINITY,
                "{q}"
            );
        }
        let run = by_quadrature(&model, 0);
        let report = run.quadrature.clone().unwrap();
        assert!(run.convergence.converged, "{report:?}");
        assert_eq!(report.boundaries.len(), 1, "{report:?}");
        assert!((report.boundaries[0] - 1.0).abs() < 1e-9, "{report:?}");
        let s = &run.summaries[0];
        let reference = |p: &str| case["quantiles"][p].as_f64().unwrap();
        let et68 = s.intervals[0];
        for (got, key) in [(et68.low, "0.16"), (s.median, "0.5"), (et68.high, "0.84")] {
            let error = (got - reference(key)).abs();
            println!(
                "{prior}, mu {mu}: q_{key} = {got:.12}, mpmath {:.12}, error {error:.1e}",
                reference(key)
            );
            assert!(error < 1e-6, "quantile {key}: {got} vs {}", reference(key));
        }
        assert!((s.mean - case["mean"].as_f64().unwrap()).abs() < 1e-6);
        // The 68 % highest-density interval ends at the jump.
        let hd68 = s.intervals[1];
        assert_eq!(hd68.kind, "highest-density");
        assert!((hd68.high - 1.0).abs() < 1e-9, "{hd68:?}");
        let e = run.evidence.unwrap();
        let exact = case["log_evidence"].as_f64().unwrap();
        println!(
            "{prior}: ln Z = {:.14} (+- {:.1e}), mpmath {exact:.14}; {} evaluations, {} grids",
            e.log_evidence, e.log_evidence_error, run.evaluations, report.grids
        );
        assert!(
            (e.log_evidence - exact).abs() <= e.log_evidence_error,
            "{}",
            (e.log_evidence - exact).abs()
        );
        assert!(e.log_evidence_error < 1e-4);
    }
}

/// Φ(z) = erfc(−z/√2)/2, with libm's erfc.
fn normal_cdf(z: f64) -> f64 {
    0.5 * libm::erfc(-z / std::f64::consts::SQRT_2)
}

/// Φ⁻¹(p) by Brent's method (the `roots` crate) on Φ(z) − p.
fn normal_quantile(p: f64) -> f64 {
    common::brent_root(|z| normal_cdf(z) - p, -10.0, 10.0, 1e-15).unwrap()
}

/// A two-parameter linear-Gaussian model: normal priors N(m₀, S₀) (independent) and three
/// measurements yₖ = Bₖ·x + N(0, σₖ²). The posterior is normal with precision
/// Λ = S₀⁻¹ + Bᵀ N⁻¹ B and mean Λ⁻¹(S₀⁻¹ m₀ + Bᵀ N⁻¹ y), and the evidence is
/// N(y; B m₀, N + B S₀ Bᵀ) (Bishop 2006, "Pattern Recognition and Machine Learning",
/// §2.3.3, eqs. 2.113–2.117). Everything the quadrature reports must match to 1e-4: each
/// marginal's mean, quantiles, equal-tailed and highest-density intervals (equal for a normal
/// marginal), and ln Z; the draws' means and correlation within four standard errors.
#[test]
fn a_correlated_gaussian_posterior_matches_its_closed_form() {
    use nalgebra::{Matrix2, Matrix2x3, Matrix3, Matrix3x2, Vector2, Vector3};
    let (m0, s0): ([f64; 2], [f64; 2]) = ([0.5, -1.0], [2.0, 1.5]);
    let b = Matrix3x2::new(1.0, 0.5, 0.3, -1.0, 1.0, 1.0);
    let sigma = Vector3::new(0.6, 0.8, 1.0);
    let y = Vector3::new(1.2, 0.4, -0.3);
    let log_likelihood = move |x: &[f64]| {
        (0..3)
            .map(|k| {
                let r = (y[k] - b[(k, 0)] * x[0] - b[(k, 1)] * x[1]) / sigma[k];
                -0.5 * r * r - sigma[k].ln() - 0.5 * (2.0 * std::f64::consts::PI).ln()
            })
            .sum::<f64>()
    };
    let s0_inv = Matrix2::from_diagonal(&Vector2::new(s0[0].powi(-2), s0[1].powi(-2)));
    let n_inv = Matrix3::from_diagonal(&sigma.map(|s| s.powi(-2)));
    let bt: Matrix2x3<f64> = b.transpose();
    let covariance = (s0_inv + bt * n_inv * b).try_inverse().unwrap();
    let mean = covariance * (s0_inv * Vector2::new(m0[0], m0[1]) + bt * n_inv * y);
    let s0_matrix = Matrix2::from_diagonal(&Vector2::new(s0[0].powi(2), s0[1].powi(2)));
    let marginal_cov = Matrix3::from_diagonal(&sigma.map(|s| s * s)) + b * s0_matrix * bt;
    let residual = y - b * Vector2::new(m0[0], m0[1]);
    let log_z = -0.5 * (residual.transpose() * marginal_cov.try_inverse().unwrap() * residual)[0]
        - 0.5 * marginal_cov.determinant().ln()
        - 1.5 * (2.0 * std::f64::consts::PI).ln();

    let priors = vec![
        Prior::Normal {
            mean: m0[0],
            sigma: s0[0],
        },
        Prior::Normal {
            mean: m0[1],
            sigma: s0[1],
        },
    ];
    let settings = QuadratureSettings {
        samples: 20_000,
        seed: 17,
        ..Default::default()
    };
    let run = quadrature(&mut ParallelDensity(log_likelihood), &priors, &settings).unwrap();
    assert!(run.converged, "change {}", run.change);
    println!(
        "2-D Gaussian: {} grids, {} panels of {} nodes, {} evaluations; ln Z {:.10} vs {:.10}",
        run.grids, run.panels, run.nodes, run.evaluations, run.log_evidence, log_z
    );
    assert!((run.log_evidence - log_z).abs() < 1e-4);
    for (i, m) in run.marginals.iter().enumerate() {
        let sd = covariance[(i, i)].sqrt();
        assert!(
            (m.mean() - mean[i]).abs() < 1e-4,
            "{i}: {} vs {}",
            m.mean(),
            mean[i]
        );
        for p in [0.16, 0.5, 0.84, 0.025, 0.975] {
            let exact = mean[i] + sd * normal_quantile(p);
            assert!((m.quantile(p) - exact).abs() < 1e-4, "{i} at {p}");
        }
        for level in [0.68, 0.95] {
            let half = sd * normal_quantile(0.5 * (1.0 + level));
            let exact = [mean[i] - half, mean[i] + half];
            let et = m.equal_tailed(level).unwrap();
            let hd = m.highest_density(level).unwrap();
            for (got, want) in et.iter().chain(&hd).zip(exact.iter().chain(&exact)) {
                assert!((got - want).abs() < 1e-4, "{i} at {level}: {got} vs {want}");
            }
        }
    }
    // The draws: independent, so the standard errors are σ/√n for a mean and (1 − ρ²)/√n
    // for the correlation (Anderson 2003, "An Introduction to Multivariate Statistical
    // Analysis", 3rd ed., §4.2.3, its large-sample variance).
    let n = run.samples.len() as f64;
    let avg = [0, 1].map(|i| run.samples.iter().map(|s| s[i]).sum::<f64>() / n);
    let cov = |i: usize, j: usize| {
        run.samples
            .iter()
            .map(|s| (s[i] - avg[i]) * (s[j] - avg[j]))
            .sum::<f64>()
            / (n - 1.0)
    };
    let rho = covariance[(0, 1)] / (covariance[(0, 0)] * covariance[(1, 1)]).sqrt();
    let drawn_rho = cov(0, 1) / (cov(0, 0) * cov(1, 1)).sqrt();
    println!("correlation: drawn {drawn_rho:.4}, exact {rho:.4}");
    assert!(
        rho.abs() > 0.3,
        "the test needs a correlated posterior: {rho}"
    );
    assert!((drawn_rho - rho).abs() < 4.0 * (1.0 - rho * rho) / n.sqrt());
    for i in 0..2 {
        let sd = covariance[(i, i)].sqrt();
        assert!((avg[i] - mean[i]).abs() < 4.0 * sd / n.sqrt(), "{i}");
    }
}

/// Simulation-based calibration on a real metric (Cook, Gelman & Rubin 2006, J. Comput.
/// Graph. Stat. 15, 675; Talts et al. 2018, arXiv:1804.06788): the true Reissner–Nordström
/// charge is drawn from the prior uniform:0:1, its shadow radius b_c(q) computed in closed
/// form, and a measurement r = b_c + σ N(0, 1) invented with a fixed seed; an exact 68 %
/// credible interval then covers the truth with probability 0.68, so the number covering
/// out of n replicates is Binomial(n, 0.68), and it must lie in that distribution's central
/// 99 % band (computed exactly above; [119, 153] for n = 200).
#[test]
fn quadrature_intervals_cover_the_truth_at_their_nominal_rate() {
    let (n, sigma) = (200, 0.2);
    let mut rng = ChaCha8Rng::seed_from_u64(2006);
    let mut covered = 0;
    for _ in 0..n {
        let q: f64 = StandardUniform.sample(&mut rng);
        let noise: f64 = StandardNormal.sample(&mut rng);
        let measured = rn_shadow_radius(q) + sigma * noise;
        let run = by_quadrature(&rn_model(measured, sigma), 0);
        assert!(
            run.convergence.converged && run.failures == 0,
            "r = {measured}"
        );
        let et68 = run.summaries[0].intervals[0];
        assert_eq!((et68.confidence, et68.kind), (0.68, "equal-tailed"));
        covered += usize::from(et68.low <= q && q <= et68.high);
    }
    let (lo, hi) = common::binomial_band(n, 0.68);
    assert_eq!((lo, hi), (119, 153));
    println!("coverage: {covered} of {n} (99 % binomial band [{lo}, {hi}])");
    assert!(
        (lo..=hi).contains(&covered),
        "{covered} of {n} covered; 99 % band [{lo}, {hi}]"
    );
}

/// Quadrature on the command line: more than two sampled parameters is a one-line error
/// (exit 2); a converged run prints its intervals and writes its samples, with R-hat and the
/// acceptance not applicable (null in JSON); a posterior the grid cannot resolve is NOT
/// CONVERGED (exit 3) and writes nothing.
#[test]
fn the_command_line_runs_and_refuses_quadrature() {
    let dir = common::scratch("quadrature", "cli");
    std::fs::write(
        dir.join("r.toml"),
        "[size.shadow_radius]\nvalue = 5.0\nsigma = 0.2\n",
    )
    .unwrap();
    std::fs::write(
        dir.join("sharp.toml"),
        "[size.shadow_radius]\nvalue = 5.0\nsigma = 0.00001\n",
    )
    .unwrap();
    let three = [
        "infer",
        "--metric",
        "kerr-newman",
        "--prior",
        "q=uniform:0:0.7",
        "--prior",
        "a=uniform:0:0.7",
        "--measurement",
        "r.toml",
        "--sampler",
        "quadrature",
        "--out",
        "three",
        "--quiet",
    ];
    let out = common::Invocation::new(&dir, three).run();
    out.assert_usage_error("samples 3 (a@1, q, inclination@1)");
    assert!(out.stderr_text().contains("ensemble"));
    assert!(!dir.join("three").exists(), "refused before any output");

    let base = [
        "infer",
        "--metric",
        "reissner-nordstrom",
        "--prior",
        "q=uniform:0:1",
        "--sampler",
        "quadrature",
        "--samples",
        "500",
        "--quiet",
    ];
    let args: Vec<&str> = base
        .iter()
        .copied()
        .chain(["--measurement", "r.toml", "--json", "--out", "ok"])
        .collect();
    let out = common::Invocation::new(&dir, args).run();
    assert_eq!(out.code, Some(0), "{}", out.describe());
    let json: serde_json::Value = serde_json::from_str(&out.stdout_text()).unwrap();
    let d = &json["diagnostics"];
    assert!(d["rhat"]["q"].is_null() && d["acceptance"].is_null());
    assert_eq!(d["ess"]["q"], 500.0);
    assert_eq!(d["converged"], true);
    assert_eq!(d["quadrature"]["nodes_per_panel"], 8);
    assert!(json["evidence"]["log_bayes_factor"].is_f64());
    let median = json["parameters"]["q"]["median"].as_f64().unwrap();
    assert!((median - 0.3853567031946697).abs() < 1e-4, "{median}");
    let csv = std::fs::read_to_string(dir.join("ok/samples.csv")).unwrap();
    assert_eq!(csv.lines().filter(|l| !l.starts_with('#')).count(), 501);

    let args: Vec<&str> = base
        .iter()
        .copied()
        .chain(["--measurement", "r.toml"])
        .collect();
    let out = common::Invocation::new(&dir, args).run();
    assert_eq!(out.code, Some(0), "{}", out.describe());
    let text = out.stdout_text();
    assert!(text.contains("converged (quadrature"), "{text}");
    assert!(text.contains("split R-hat not applicable") && text.contains("68.0% equal-tailed"));

    let args: Vec<&str> = base
        .iter()
        .copied()
        .chain([
            "--measurement",
            "sharp.toml",
            "--max-panels",
            "8",
            "--out",
            "no",
        ])
        .collect();
    let out = common::Invocation::new(&dir, args).run();
    assert_eq!(out.code, Some(3), "{}", out.describe());
    let text = out.stdout_text();
    assert!(
        text.starts_with("NOT CONVERGED: the quadrature did not converge"),
        "{text}"
    );
    assert!(!text.contains("equal-tailed"), "no intervals: {text}");
    assert!(!dir.join("no/samples.csv").exists());
}

/// A stop request (Ctrl-C sets it) ends a quadrature run with no posterior: on the run
/// executor it is an interruption naming the evaluations done, and an evaluator that halts
/// stops the library call with a typed error.
#[test]
fn a_stopped_quadrature_has_no_posterior() {
    use std::sync::atomic::AtomicBool;
    use umbral::posterior::{Evaluation, Evaluator, InferRunError};
    use umbral::run::infer::{infer_with, InferStop};
    use umbral::run::Controls;
    use umbral::sampling::{Halted, QuadratureError};
    let model = rn_model(5.0, 0.2);
    let settings = InferSettings {
        sampler: SamplerKind::Quadrature,
        ..Default::default()
    };
    let stop = AtomicBool::new(true);
    let controls = Controls {
        observers: Vec::new(),
        stop: Some(&stop),
    };
    let result = infer_with(&model, &settings, controls);
    assert!(
        matches!(result, Err(InferStop::Interrupted { .. })),
        "{result:?}"
    );

    /// Evaluates the first batch (the first grid), then halts.
    struct OneBatch(usize);
    impl Evaluator for OneBatch {
        fn evaluate(
            &mut self,
            stage: &str,
            model: &PosteriorModel,
            points: &[Vec<f64>],
        ) -> Result<Vec<Evaluation>, Halted> {
            self.0 += 1;
            if self.0 > 1 {
                return Err(Halted);
            }
            ParallelEvaluator.evaluate(stage, model, points)
        }
    }
    let e = infer_on(&model, &settings, &mut OneBatch(0)).unwrap_err();
    assert_eq!(
        e,
        InferRunError::Quadrature(QuadratureError::Halted(Halted))
    );
}

/// Kerr–Newman's charge q against Kerr (q = 0), the spin marginalised, by quadrature in (q, a)
/// with the GR model's evidence by quadrature in a. A measured size that Kerr itself predicts
/// (a = 0.5 seen at 60°, ±0.1 M) gives a Bayes factor that does not favour a charge (common
/// practice, no source: the Occam penalty of the wider model); a size no Kerr black hole of
/// the prior casts (4.6 M, below Kerr's smallest mean radius at a = 0.9) favours it strongly,
/// so the check can fail.
#[test]
fn kerr_consistent_measurements_do_not_favour_a_charge() {
    use umbral::prelude::{shadow, Kerr, ShadowRequest};
    let mut request = ShadowRequest::distant(60f64.to_radians()).curve_only();
    request.settings.points = umbral::posterior::LIKELIHOOD_POINTS;
    let kerr_size = |a: f64| {
        let result = shadow(&Kerr::new(a).unwrap(), &request).unwrap();
        result.observables.unwrap().mean_radius
    };
    let log_bayes_factor = |mu: f64| {
        let request = InferenceRequest::new(
            MetricSource::builtin("kerr-newman").unwrap(),
            vec![
                ("q".into(), Prior::parse("uniform:0:0.8").unwrap()),
                ("a".into(), Prior::parse("uniform:0:0.6").unwrap()),
                ("inclination".into(), Prior::parse("fixed:60").unwrap()),
            ],
            vec![radius(mu, 0.1)],
        );
        let model = PosteriorModel::new(&request).unwrap();
        let e = by_quadrature(&model, 1000).evidence.unwrap();
        (e.log_bayes_factor, e.log_bayes_factor_error)
    };
    let (gr_consistent, error) = log_bayes_factor(kerr_size(0.5));
    assert!(
        gr_consistent + 3.0 * error < 0.0,
        "ln B = {gr_consistent} +- {error}"
    );
    assert!(kerr_size(0.9) > 4.9);
    let (charged, error2) = log_bayes_factor(4.6);
    eprintln!("ln B: {gr_consistent} +- {error} (Kerr-consistent), {charged} +- {error2} (4.6 M)");
    let error = error2;
    assert!(charged - 3.0 * error > 2.0, "ln B = {charged} +- {error}");
}
