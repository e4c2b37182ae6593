//! Posteriors on metric parameters (`umbral::posterior`, `umbral infer`): the sampler's
//! quantiles against quadrature of the exact posterior, the curve resolution a likelihood
//! uses, the additive structure over sources, determinism, and what the command line refuses.

mod common;

use umbral::measurement::Measurement;
use umbral::metrics::MetricSource;
use umbral::posterior::{
    infer_on, InferSettings, InferenceRequest, ParallelEvaluator, PosteriorModel, SamplerKind,
};
use umbral::sampling::summary::Marginal;
use umbral::sampling::Prior;

fn radius(mu: f64, sigma: f64) -> Measurement {
    Measurement::from_toml_str(&format!(
        "[size.shadow_radius]\nvalue = {mu}\nsigma = {sigma}\n"
    ))
    .unwrap()
}

/// The cases of tests/generate_rn_posterior.py, each with its measured radius and sigma.
fn reference_cases() -> Vec<(serde_json::Value, f64, f64)> {
    let table: serde_json::Value =
        serde_json::from_str(include_str!("data/rn_posterior.json")).unwrap();
    let cases = table["cases"].as_array().unwrap();
    cases
        .iter()
        .map(|c| {
            let (mu, sigma) = (c["mu"].as_f64().unwrap(), c["sigma"].as_f64().unwrap());
            (c.clone(), mu, sigma)
        })
        .collect()
}

fn rn_model(sources: Vec<Measurement>) -> PosteriorModel {
    let request = InferenceRequest::new(
        MetricSource::builtin("reissner-nordstrom").unwrap(),
        vec![("q".into(), Prior::parse("uniform:0:1").unwrap())],
        sources,
    );
    PosteriorModel::new(&request).unwrap()
}

/// The ensemble sampler's 0.16, 0.5 and 0.84 quantiles of the Reissner–Nordström charge
/// against mpmath quadrature of the exact posterior (tests/generate_rn_posterior.py, from the
/// closed-form b_c(q); Zakharov et al. 2005, Phys. Rev. D 72, 084020). The allowed error is
/// four Monte Carlo standard errors of a quantile, √(p(1 − p)/ESS)/f(q_p), with the density
/// f(q_p) estimated from the reference quantiles' spacing.
#[test]
fn reissner_nordstrom_quantiles_match_quadrature() {
    for (case, mu, sigma) in reference_cases() {
        let model = rn_model(vec![radius(mu, sigma)]);
        let settings = InferSettings {
            steps: 10_000,
            walkers: 4,
            seed: 3,
            ..Default::default()
        };
        let run = infer_on(&model, &settings, &mut ParallelEvaluator).unwrap();
        assert!(run.convergence.converged, "{:?}", run.convergence);
        assert_eq!(run.failures, 0);
        let q: Vec<f64> = run.samples.iter().map(|s| s[0]).collect();
        let m = Marginal::new(&q).unwrap();
        let reference = |p: &str| case["quantiles"][p].as_f64().unwrap();
        // f(q_0.5) ≈ 0.68 / (q_0.84 − q_0.16); the same scale serves the outer quantiles
        // (their density is lower, so this under-estimates their error: conservative).
        let density = 0.68 / (reference("0.84") - reference("0.16"));
        for (p, key) in [(0.16, "0.16"), (0.5, "0.5"), (0.84, "0.84")] {
            let se = (p * (1.0 - p) / run.convergence.ess).sqrt() / density;
            let got = m.quantile(p);
            println!(
                "mu {mu} sigma {sigma}: q_{p} = {got:.5}, quadrature {:.5}, se {se:.4}",
                reference(key)
            );
            assert!(
                (got - reference(key)).abs() < 4.0 * se,
                "quantile {p}: {got} vs {}",
                reference(key)
            );
        }
        let mean_se = m.quantile(0.84).max(1e-3) / run.convergence.ess.sqrt();
        assert!((m.mean() - case["mean"].as_f64().unwrap()).abs() < 4.0 * mean_se);
    }
}

/// Nested sampling's evidence of the Reissner–Nordström model against mpmath quadrature of
/// ∫ L(q) dq (tests/generate_rn_posterior.py), within three times its reported error √(H/N)
/// (Skilling 2006, Bayesian Analysis 1, 833); the GR model (q = 0, nothing left to sample) has
/// the likelihood at q = 0 as its evidence, exactly. For a measurement centred on 3√3 the
/// Bayes factor does not favour a charge (common practice, no source).
#[test]
fn nested_evidence_and_bayes_factor_match_quadrature() {
    for (case, mu, sigma) in reference_cases() {
        let model = rn_model(vec![radius(mu, sigma)]);
        let settings = InferSettings {
            sampler: SamplerKind::Nested,
            live_points: 400,
            seed: 5,
            ..Default::default()
        };
        let run = infer_on(&model, &settings, &mut ParallelEvaluator).unwrap();
        let e = run.evidence.unwrap();
        let exact = case["log_evidence"].as_f64().unwrap();
        println!(
            "mu {mu}: ln Z = {:.4} +- {:.4}, quadrature {exact:.4}; ln B = {:.4}",
            e.log_evidence, e.log_evidence_error, e.log_bayes_factor
        );
        assert!((e.log_evidence - exact).abs() < 3.0 * e.log_evidence_error);
        let gr = case["log_likelihood_at_q0"].as_f64().unwrap();
        assert!((e.log_evidence_gr - gr).abs() < 1e-9 && e.log_evidence_gr_error == 0.0);
        if (mu - 5.196).abs() < 1e-9 {
            assert!(
                e.log_bayes_factor + 2.0 * e.log_bayes_factor_error < 0.0,
                "{e:?}"
            );
        }
    }
}

/// Several sources share the deviation parameters: the log-posterior of two sources is the
/// prior plus the sum of each source's log-likelihood (independent measurements).
#[test]
fn sources_add_their_log_likelihoods() {
    let one = rn_model(vec![radius(5.0, 0.2)]);
    let other = rn_model(vec![radius(4.8, 0.3)]);
    let both = rn_model(vec![radius(5.0, 0.2), radius(4.8, 0.3)]);
    assert_eq!(both.names(), vec!["q"]);
    for q in [0.0, 0.3, 0.7, 0.95] {
        let sum = one.evaluate(&[q]).log_likelihood + other.evaluate(&[q]).log_likelihood;
        let joint = both.evaluate(&[q]);
        assert!((joint.log_likelihood - sum).abs() < 1e-12, "q = {q}");
        assert!(
            (joint.log_posterior - (sum + 0.0)).abs() < 1e-12,
            "uniform:0:1 has ln p = 0"
        );
    }
    // Outside the prior the posterior is zero and nothing is computed.
    assert_eq!(both.evaluate(&[1.5]).log_posterior, f64::NEG_INFINITY);
}

/// 64 points per curve (what a likelihood evaluation uses) give the mean radius of 256 to
/// below 1e-9 M for Kerr up to a = 0.99 at every inclination tried: the trapezoid rule on a
/// smooth periodic function converges geometrically (Trefethen & Weideman 2014, SIAM Rev. 56,
/// 385).
#[test]
fn sixty_four_curve_points_suffice_for_the_size() {
    use umbral::prelude::*;
    for a in [0.5, 0.9, 0.99] {
        let kerr = Kerr::new(a).unwrap();
        for degrees in [5.0f64, 30.0, 60.0, 90.0] {
            let mut request = ShadowRequest::distant(degrees.to_radians()).curve_only();
            let fine = shadow(&kerr, &request).unwrap().observables.unwrap();
            request.settings.points = umbral::posterior::LIKELIHOOD_POINTS;
            let coarse = shadow(&kerr, &request).unwrap().observables.unwrap();
            let diff = (fine.mean_radius - coarse.mean_radius).abs();
            assert!(diff < 1e-9, "a = {a}, {degrees} deg: {diff:e}");
        }
    }
}

/// The same seed gives bit-identical samples at 1 and 2 threads, for every sampler.
#[test]
fn samples_are_bit_identical_at_one_and_two_threads() {
    let model = rn_model(vec![radius(5.0, 0.2)]);
    for sampler in [
        SamplerKind::Ensemble,
        SamplerKind::Nested,
        SamplerKind::Quadrature,
    ] {
        let settings = InferSettings {
            sampler,
            steps: 100,
            walkers: 4,
            live_points: 40,
            seed: 11,
            ..Default::default()
        };
        let run = |threads: usize| {
            rayon::ThreadPoolBuilder::new()
                .num_threads(threads)
                .build()
                .unwrap()
                .install(|| infer_on(&model, &settings, &mut ParallelEvaluator).unwrap())
        };
        let (a, b) = (run(1), run(2));
        let bits = |r: &umbral::posterior::Inference| -> Vec<u64> {
            r.samples.iter().flatten().map(|x| x.to_bits()).collect()
        };
        assert_eq!(bits(&a), bits(&b), "{sampler:?}");
        assert!(!a.samples.is_empty());
    }
}

/// Bad requests are one-line errors with exit code 2; an unconverged run says so on its first
/// line, prints no interval and exits 3.
#[test]
fn the_command_line_refuses_bad_requests_and_unconverged_runs() {
    let dir = common::scratch("posterior", "cli");
    std::fs::write(
        dir.join("r.toml"),
        "[size.shadow_radius]\nvalue = 5.0\nsigma = 0.2\n",
    )
    .unwrap();
    std::fs::write(
        dir.join("iv.toml"),
        "[size.shadow_radius]\nintervals = [ { confidence = 0.68, low = 4.8, high = 5.2 } ]\n",
    )
    .unwrap();
    let base = ["infer", "--metric", "reissner-nordstrom", "--quiet"];
    for (extra, needle) in [
        (
            vec!["--prior", "x=uniform:0:1", "--measurement", "r.toml"],
            "no such parameter",
        ),
        (
            vec!["--prior", "q=uniform:1:0", "--measurement", "r.toml"],
            "needs LO < HI",
        ),
        (
            vec!["--prior", "q=uniform:0:1", "--measurement", "iv.toml"],
            "intervals only",
        ),
        (vec!["--measurement", "r.toml"], "every parameter is fixed"),
        (
            vec!["--prior", "q@2=uniform:0:1", "--measurement", "r.toml"],
            "source number",
        ),
    ] {
        let args: Vec<&str> = base.iter().copied().chain(extra).collect();
        let out = common::Invocation::new(&dir, args).run();
        out.assert_usage_error(needle);
    }
    let args: Vec<&str> = base
        .iter()
        .copied()
        .chain([
            "--prior",
            "q=uniform:0:1",
            "--measurement",
            "r.toml",
            "--steps",
            "40",
        ])
        .collect();
    let out = common::Invocation::new(&dir, args).run();
    assert_eq!(out.code, Some(3), "{}", out.describe());
    let text = String::from_utf8_lossy(&out.stdout).to_string();
    assert!(text.starts_with("NOT CONVERGED"), "{text}");
    assert!(!text.contains("equal-tailed"), "no intervals: {text}");
}
