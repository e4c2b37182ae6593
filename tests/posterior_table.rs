//! Posteriors from interpolated shadow tables (ray-traced metrics, or `--tabulate`): the
//! table against the exact solvers, its leave-one-out error estimate against the true error,
//! the refusals, the reuse of a table file, and an end-to-end Johannsen–Psaltis posterior.

mod common;

use rayon::prelude::*;
use std::path::Path;
use umbral::measurement::Measurement;
use umbral::metrics::MetricSource;
use umbral::posterior::{
    infer_on, InferError, InferSettings, InferenceRequest, ParallelEvaluator, PosteriorModel,
    ShadowTable,
};
use umbral::prelude::{shadow, ShadowRequest};
use umbral::run::{Controls, Observe, Status};
use umbral::sampling::Prior;
use umbral::scan::table::{build_tables, TableBuildError};

fn radius(mu: f64, sigma: f64) -> Measurement {
    Measurement::from_toml_str(&format!(
        "[size.shadow_radius]\nvalue = {mu}\nsigma = {sigma}\n"
    ))
    .unwrap()
}

fn request(metric: &str, priors: &[(&str, &str)], m: Measurement) -> InferenceRequest {
    let priors = priors
        .iter()
        .map(|(n, s)| (n.to_string(), Prior::parse(s).unwrap()))
        .collect();
    InferenceRequest::new(MetricSource::builtin(metric).unwrap(), priors, vec![m])
}

fn no_controls() -> Controls<'static> {
    Controls {
        observers: vec![],
        stop: None,
    }
}

/// Counts the items a run computes and keeps from its file.
#[derive(Default)]
struct Count {
    done: usize,
    kept: usize,
}

impl Observe for Count {
    fn finished(&mut self, status: &Status, _: umbral::run::Outcome) {
        self.done += status.done;
        self.kept += status.kept;
    }
}

/// The mean radius about the centroid by the exact solver, with the likelihood's settings.
fn exact_radius(metric: &str, params: &[(&str, f64)], inclination_deg: f64) -> f64 {
    let assignments: Vec<(String, f64)> = params.iter().map(|(n, v)| (n.to_string(), *v)).collect();
    let m = MetricSource::builtin(metric)
        .unwrap()
        .build(&assignments)
        .unwrap();
    let mut request = ShadowRequest::distant(inclination_deg.to_radians()).curve_only();
    request.settings.points = umbral::posterior::LIKELIHOOD_POINTS;
    let result = shadow(m.as_ref(), &request).unwrap();
    result.observables.unwrap().mean_radius
}

/// A Kerr–Newman table over (a, q) against the separable solver (itself checked against the
/// closed-form critical curve of de Vries 2000, Class. Quantum Grav. 17, 123, in
/// tests/shadow_exact.rs): between the nodes the interpolated size differs from the exact one
/// by less than the table's leave-one-out estimate, which is not absurdly loose either.
#[test]
fn kerr_newman_table_agrees_with_the_exact_solver_within_its_estimate() {
    let dir = common::scratch("posterior_table", "kn");
    let mut r = request(
        "kerr-newman",
        &[
            ("q", "uniform:0:0.6"),
            ("a", "uniform:0:0.7"),
            ("inclination", "fixed:60"),
        ],
        radius(4.9, 0.15),
    );
    r.tabulate = true;
    r.table_nodes = 9;
    let model = PosteriorModel::new(&r).unwrap();
    assert!(model.needs_tables());
    let tables = build_tables(&model, &dir, no_controls()).unwrap();
    let table: &ShadowTable = &tables[0];
    let names: Vec<&str> = table.axes().iter().map(|a| a.name.as_str()).collect();
    assert_eq!(names, ["a@1", "q"]);
    // Cell centres and a few other points between the nodes.
    let points: Vec<(f64, f64)> = (0..8)
        .flat_map(|i| [(i, 3), (i, 7), (3, i)])
        .map(|(i, j)| (0.7 * (i as f64 + 0.5) / 8.0, 0.6 * (j as f64 + 0.5) / 8.0))
        .collect();
    let errors: Vec<f64> = points
        .par_iter()
        .map(|&(a, q)| {
            let exact = exact_radius("kerr-newman", &[("a", a), ("q", q)], 60.0);
            (table.size(&[a, q]) - exact).abs()
        })
        .collect();
    let worst = errors.iter().copied().fold(0.0, f64::max);
    eprintln!(
        "Kerr-Newman table: true error {worst:e}, estimate {:e}",
        table.size_error()
    );
    assert!(
        worst > 0.0 && worst < table.size_error(),
        "{worst:e} vs {:e}",
        table.size_error()
    );
    assert!(
        table.size_error() < 100.0 * worst,
        "{:e} vs {worst:e}",
        table.size_error()
    );
    // The model with the table evaluates to the exact likelihood up to that error.
    let model = model.with_tables(tables.clone()).unwrap();
    let (a, q) = (0.33, 0.27);
    let exact = exact_radius("kerr-newman", &[("a", a), ("q", q)], 60.0);
    let want = -0.5 * ((exact - 4.9) / 0.15f64).powi(2)
        - (0.15f64).ln()
        - 0.5 * (2.0 * std::f64::consts::PI).ln();
    let got = model.evaluate(&[a, q]).log_likelihood;
    // |d lnL/dr| = |r − μ|/σ² is below 20 here, times the size error.
    assert!(
        (got - want).abs() < 20.0 * table.size_error(),
        "{got} vs {want}"
    );
    assert_eq!(model.table_reports()[0].nodes, 81);
}

/// A second build of the same table reads its file and computes nothing.
#[test]
fn a_table_file_is_read_again_instead_of_recomputed() {
    let dir = common::scratch("posterior_table", "reuse");
    let mut r = request(
        "kerr-newman",
        &[("q", "uniform:0:0.5"), ("inclination", "fixed:30")],
        radius(5.0, 0.2),
    );
    r.tabulate = true;
    r.table_nodes = 6;
    let model = PosteriorModel::new(&r).unwrap();
    let build = |count: &mut Count| {
        let controls = Controls {
            observers: vec![count as &mut dyn Observe],
            stop: None,
        };
        build_tables(&model, &dir, controls).unwrap()
    };
    let (mut first, mut second) = (Count::default(), Count::default());
    let a = build(&mut first);
    let b = build(&mut second);
    assert_eq!(a, b);
    assert_eq!((first.done, first.kept), (6, 0));
    assert_eq!((second.done, second.kept), (6, 6));
    let files: Vec<_> = std::fs::read_dir(&dir).unwrap().collect();
    assert_eq!(files.len(), 1, "one table file");
}

fn expect_layout(r: &InferenceRequest, needle: &str) {
    let model = PosteriorModel::new(r).unwrap();
    let e = model.table_plans().unwrap_err();
    assert!(
        matches!(e, InferError::TableLayout { number: 1, .. }),
        "{e}"
    );
    assert!(e.to_string().contains(needle), "{e}");
}

/// Tables need a fixed inclination, bounded priors and at most two axes; every node needs a
/// shadow; and a table whose error exceeds a tenth of the measurement's sigma is refused.
#[test]
fn tables_that_cannot_serve_are_refused() {
    let dir = common::scratch("posterior_table", "refused");
    let mut r = request(
        "kerr-newman",
        &[("q", "uniform:0:0.5"), ("a", "uniform:0:0.5")],
        radius(5.0, 0.2),
    );
    r.tabulate = true;
    expect_layout(&r, "inclination@1 is sampled");
    let mut r = request(
        "kerr-newman",
        &[("q", "normal:0.2:0.1"), ("inclination", "fixed:30")],
        radius(5.0, 0.2),
    );
    r.tabulate = true;
    expect_layout(&r, "unbounded prior");
    let mut r = request(
        "johannsen",
        &[
            ("alpha13", "uniform:0:1"),
            ("alpha22", "uniform:0:1"),
            ("a", "uniform:0:0.5"),
            ("inclination", "fixed:30"),
        ],
        radius(5.0, 0.2),
    );
    r.tabulate = true;
    expect_layout(&r, "at most two axes");

    // Reissner–Nordström beyond q = 1 has no horizon; with one required, the node q = 1.2
    // has no shadow to interpolate.
    let mut r = request(
        "reissner-nordstrom",
        &[("q", "uniform:0:1.2")],
        radius(5.0, 0.2),
    );
    r.tabulate = true;
    r.table_nodes = 5;
    r.require_horizon = true;
    let model = PosteriorModel::new(&r).unwrap();
    match build_tables(&model, &dir, no_controls()) {
        Err(TableBuildError::Layout(e @ InferError::Table { .. })) => {
            let text = e.to_string();
            assert!(
                text.contains("q=1.2") && text.contains("no horizon"),
                "{text}"
            );
        }
        other => panic!("{other:?}"),
    }

    // Five nodes over q in [0, 0.9]: an error near 1e-3 M, far above a tenth of sigma 1e-4.
    let mut r = request(
        "reissner-nordstrom",
        &[("q", "uniform:0:0.9")],
        radius(4.8, 1e-4),
    );
    r.tabulate = true;
    r.table_nodes = 5;
    let model = PosteriorModel::new(&r).unwrap();
    let tables = build_tables(&model, &dir, no_controls()).unwrap();
    let error = tables[0].size_error();
    match model.with_tables(tables) {
        Err(InferError::TableError {
            limit, error: e, ..
        }) => {
            assert_eq!(e, error);
            assert!((limit - 1e-5).abs() < 1e-18);
        }
        other => panic!("{other:?}"),
    }
}

/// Johannsen–Psaltis needs the ray tracer. At a = 0 it is static and spherical,
/// A = (1 + ε3/r³)(1 − 2/r), C = r² (Johannsen & Psaltis 2011, Phys. Rev. D 83, 124015), so
/// b_c = min √(C/A) is known independently: the ray-traced table interpolates it between the
/// nodes within its estimated error, and a posterior runs from the table.
#[test]
fn johannsen_psaltis_posterior_from_a_ray_traced_table() {
    let dir = common::scratch("posterior_table", "jp");
    let mut r = request(
        "johannsen-psaltis",
        &[
            ("eps3", "uniform:-1:1"),
            ("a", "fixed:0"),
            ("inclination", "fixed:50"),
        ],
        radius(5.1, 0.15),
    );
    r.table_nodes = 7;
    let model = PosteriorModel::new(&r).unwrap();
    assert!(model.needs_tables(), "ray traced");
    let tables = build_tables(&model, &dir, no_controls()).unwrap();
    let b_c = |eps3: f64| {
        let b2 = |r: f64| r * r / ((1.0 + eps3 / r.powi(3)) * (1.0 - 2.0 / r));
        let db2 = |r: f64| (b2(r + 1e-6) - b2(r - 1e-6)) / 2e-6;
        b2(common::brent_root(db2, 2.3, 4.0, 1e-12).unwrap()).sqrt()
    };
    let t = &tables[0];
    for eps3 in [-0.83, -0.1, 0.42, 0.95] {
        let err = (t.size(&[eps3]) - b_c(eps3)).abs();
        assert!(
            err < t.size_error() + 1e-7,
            "eps3 {eps3}: {err:e} vs {:e}",
            t.size_error()
        );
    }
    eprintln!("Johannsen-Psaltis table: estimate {:e}", t.size_error());
    assert!(t.size_error() < 1e-3, "{:e}", t.size_error());
    let model = model.with_tables(tables).unwrap();
    let settings = InferSettings {
        steps: 10_000,
        max_steps: 80_000,
        walkers: 4,
        seed: 5,
        ..Default::default()
    };
    let inference = infer_on(&model, &settings, &mut ParallelEvaluator).unwrap();
    assert!(
        inference.convergence.converged,
        "{:?}",
        inference.convergence
    );
    // The measured 5.1 lies below 3√3 = 5.196: the posterior leans to positive ε3 (b_c falls
    // as ε3 grows, by −ε3/54 relative to first order).
    let s = &inference.summaries[0];
    assert_eq!(s.name, "eps3");
    assert!(s.median > 0.0 && s.median < 1.0, "{}", s.median);
    // The exact posterior median, from the closed-form b_c by Simpson's rule on 2000
    // intervals: the table's quadrature median agrees to 1e-4, the ensemble's to its Monte
    // Carlo error (a few 1e-2 for about 4000 effective draws of a width-1 posterior).
    let density = |e: f64| (-0.5 * ((b_c(e) - 5.1) / 0.15f64).powi(2)).exp();
    let n = 2000;
    let h = 2.0 / n as f64;
    let weights = |i: usize| {
        if i == 0 || i == n {
            1.0
        } else if i % 2 == 1 {
            4.0
        } else {
            2.0
        }
    };
    let cumulative: Vec<f64> = (0..=n)
        .scan(0.0, |acc, i| {
            *acc += weights(i) * density(-1.0 + i as f64 * h) * h / 3.0;
            Some(*acc)
        })
        .collect();
    let total = cumulative[n];
    let i = cumulative.iter().position(|&c| c >= 0.5 * total).unwrap();
    let exact_median = -1.0 + i as f64 * h;
    let gr_tables = build_tables(&model.gr_model(), &dir, no_controls()).unwrap();
    let model = model.with_gr_tables(gr_tables).unwrap();
    let by_quadrature = infer_on(
        &model,
        &InferSettings {
            sampler: umbral::posterior::SamplerKind::Quadrature,
            samples: 200,
            ..Default::default()
        },
        &mut ParallelEvaluator,
    )
    .unwrap();
    let median = by_quadrature.summaries[0].median;
    eprintln!(
        "eps3 median: exact {exact_median}, table by quadrature {median}, ensemble {}",
        s.median
    );
    assert!(
        (median - exact_median).abs() < 1e-4 + h,
        "{median} vs {exact_median}"
    );
    assert!(
        (s.median - exact_median).abs() < 0.05,
        "{} vs {exact_median}",
        s.median
    );
    assert!(model
        .assumptions()
        .iter()
        .any(|a| a.contains("table for source 1: 7 nodes over eps3")));
}

/// The command line: a ray-traced metric's posterior prints the table's error beside the
/// result and in JSON; a table over a sampled inclination is a one-line error (exit 2).
#[test]
fn the_command_line_reports_the_table() {
    let dir = common::scratch("posterior_table", "cli");
    std::fs::write(
        dir.join("r.toml"),
        "[size.shadow_radius]\nvalue = 5.0\nsigma = 0.2\n",
    )
    .unwrap();
    let base = [
        "infer",
        "--metric",
        "kerr-newman",
        "--measurement",
        "r.toml",
        "--quiet",
        "--tabulate",
        "--table-nodes",
        "6",
        "--prior",
        "q=uniform:0:0.5",
    ];
    let args: Vec<&str> = base
        .iter()
        .copied()
        .chain(["--prior", "a=uniform:0:0.5"])
        .collect();
    common::Invocation::new(&dir, args)
        .run()
        .assert_usage_error("tables over the inclination are not available");
    let args: Vec<&str> = base
        .iter()
        .copied()
        .chain([
            "--prior",
            "inclination=fixed:40",
            "--steps",
            "4000",
            "--json",
        ])
        .collect();
    let mut run = common::Invocation::new(&dir, args);
    run.timeout = std::time::Duration::from_secs(120);
    let out = run.run();
    assert_eq!(out.code, Some(0), "{}", out.describe());
    let json: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let table = &json["tables"][0];
    assert_eq!(table["nodes"], 6);
    assert!(table["size_error"].as_f64().unwrap() < table["size_limit"].as_f64().unwrap());
    assert!(Path::new(&dir).read_dir().unwrap().any(|e| e
        .unwrap()
        .file_name()
        .to_string_lossy()
        .starts_with("umbral-table-")));
}

/// The Bayes factor against GR from tables equals the direct one: the GR limit gets its own
/// tables, also when GR (q = 0) lies outside the model's prior (q in [0.6, 0.9]) and when the
/// deviation parameter is held fixed (q = 0.8) rather than sampled; a point outside a table is
/// a failure, never an extrapolation.
#[test]
fn bayes_factors_from_tables_equal_the_direct_ones() {
    use umbral::posterior::SamplerKind;
    let dir = common::scratch("posterior_table", "bayes");
    let settings = InferSettings {
        sampler: SamplerKind::Quadrature,
        samples: 200,
        ..Default::default()
    };
    let cases: Vec<(&str, Vec<(&str, &str)>)> = vec![
        ("reissner-nordstrom", vec![("q", "uniform:0.6:0.9")]),
        (
            "kerr-newman",
            vec![
                ("q", "fixed:0.8"),
                ("a", "uniform:0:0.55"),
                ("inclination", "fixed:60"),
            ],
        ),
    ];
    for (metric, priors) in cases {
        let direct = PosteriorModel::new(&request(metric, &priors, radius(5.0, 0.2))).unwrap();
        let mut r = request(metric, &priors, radius(5.0, 0.2));
        r.tabulate = true;
        r.table_nodes = 13;
        let model = PosteriorModel::new(&r).unwrap();
        let tables = build_tables(&model, &dir, no_controls()).unwrap();
        let model = model.with_tables(tables).unwrap();
        // Without the GR limit's tables there is no Bayes factor.
        assert!(infer_on(&model, &settings, &mut ParallelEvaluator).is_err());
        assert!(model
            .gr_model()
            .evaluate(&vec![0.3; model.gr_model().names().len()])
            .failure
            .is_some());
        let gr_tables = build_tables(&model.gr_model(), &dir, no_controls()).unwrap();
        let model = model.with_gr_tables(gr_tables).unwrap();
        let ln_b = |m: &PosteriorModel| {
            infer_on(m, &settings, &mut ParallelEvaluator)
                .unwrap()
                .evidence
                .unwrap()
                .log_bayes_factor
        };
        let (want, got) = (ln_b(&direct), ln_b(&model));
        eprintln!("{metric}: ln B direct {want}, from tables {got}");
        assert!((got - want).abs() < 1e-3, "{metric}: {got} vs {want}");
    }
}
