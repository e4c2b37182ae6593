//! Declarative metric files: each shipped file equals its built-in Rust twin, and a metric
//! that exists only as a file (Bardeen) reproduces an independent mpmath computation.

use proptest::prelude::*;
use std::path::{Path, PathBuf};
use umbral::metric::{Spacetime, Symmetry};
use umbral::metric_file::{list_metric_dir, load_metric_file, FileMetric, FileMetricSpec};
use umbral::metrics::build_metric;
use umbral::numerics::brent_root;
use umbral::shadow::{spherical, Observer, ShadowSettings};

fn crate_path(relative: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join(relative)
}

fn spec(file: &str) -> FileMetricSpec {
    load_metric_file(&crate_path(file)).unwrap_or_else(|e| panic!("{e}"))
}

fn assignments(names: &[&str], values: &[f64]) -> Vec<(String, f64)> {
    names
        .iter()
        .zip(values)
        .map(|(n, v)| (n.to_string(), *v))
        .collect()
}

/// Relative agreement with a floor: |x − y| ≤ tol · max(|x|, |y|, scale).
fn close(x: f64, y: f64, tol: f64, scale: f64) -> bool {
    x == y || (x - y).abs() <= tol * x.abs().max(y.abs()).max(scale)
}

/// A comparison of a file metric with its built-in twin at one parameter point. The list below
/// is where further twin checks go (e.g. shadow observables from every solver).
type TwinCheck = fn(&dyn Spacetime, &dyn Spacetime) -> Result<(), String>;

fn twin_checks() -> Vec<(&'static str, TwinCheck)> {
    vec![
        ("info and parameters", |file, rust| {
            let (fi, ri) = (file.info(), rust.info());
            (fi.name == ri.name
                && fi.reference == ri.reference
                && fi.parameter_names() == ri.parameter_names()
                && file.parameter_values() == rust.parameter_values())
            .then_some(())
            .ok_or_else(|| format!("{fi:?} vs {ri:?}"))
        }),
        ("symmetry flags", |file, rust| {
            (file.symmetry() == rust.symmetry()
                && file.is_equatorially_symmetric() == rust.is_equatorially_symmetric()
                && file.is_separable() == rust.is_separable())
            .then_some(())
            .ok_or_else(|| "symmetry, equatorial symmetry or separability differ".into())
        }),
        ("outer horizon", |file, rust| {
            match (file.outer_horizon(), rust.outer_horizon()) {
                (None, None) => Ok(()),
                (Some(x), Some(y)) if close(x, y, 1e-14, 0.0) => Ok(()),
                (x, y) => Err(format!("file {x:?}, built-in {y:?}")),
            }
        }),
        ("spherical shadow", |file, rust| {
            if rust.symmetry() != Symmetry::Spherical {
                return Ok(());
            }
            let settings = ShadowSettings::default();
            let f = spherical::solve(file, &Observer::distant(1.0), &settings);
            let r = spherical::solve(rust, &Observer::distant(1.0), &settings);
            match (f, r) {
                (Ok(f), Ok(r)) => {
                    let (fc, rc) = (f.curve.map(|c| c.radii), r.curve.map(|c| c.radii));
                    match (fc, rc) {
                        (Some(a), Some(b)) if close(a[0], b[0], 1e-12, 0.0) => Ok(()),
                        (None, None) => Ok(()),
                        (a, b) => Err(format!("curves differ: {a:?} vs {b:?}")),
                    }
                }
                (Err(f), Err(r)) if f.to_string() == r.to_string() => Ok(()),
                (f, r) => Err(format!("file {f:?}, built-in {r:?}")),
            }
        }),
    ]
}

/// Components, Christoffel symbols, spherical jets and separation potentials at one point.
fn compare_at(
    file: &FileMetric,
    rust: &dyn Spacetime,
    r: f64,
    theta: f64,
    lambda: f64,
    eta: f64,
) -> Result<(), String> {
    let (f, b) = (file.components_at(r, theta), rust.components_at(r, theta));
    let fc = [f.g_tt, f.g_tphi, f.g_rr, f.g_thth, f.g_phph];
    let bc = [b.g_tt, b.g_tphi, b.g_rr, b.g_thth, b.g_phph];
    let scale = bc.iter().fold(0.0f64, |m, x| m.max(x.abs()));
    for (i, (x, y)) in fc.iter().zip(&bc).enumerate() {
        if !close(*x, *y, 1e-12, 1e-3 * scale) {
            return Err(format!("component {i}: {x} vs {y} at r={r}, theta={theta}"));
        }
    }
    let (gf, gb) = (file.christoffel(r, theta), rust.christoffel(r, theta));
    // Entries much smaller than the table's largest come from cancellations; the floor is
    // 1e-3 of the largest entry (common practice, no source).
    let scale = gb
        .iter()
        .flatten()
        .flatten()
        .fold(0.0f64, |m, x| m.max(x.abs()));
    for mu in 0..4 {
        for a in 0..4 {
            for c in 0..4 {
                let (x, y) = (gf[mu][a][c], gb[mu][a][c]);
                if !close(x, y, 1e-12, 1e-3 * scale) {
                    return Err(format!(
                        "Gamma^{mu}_{a}{c}: {x} vs {y} at r={r}, theta={theta}"
                    ));
                }
            }
        }
    }
    match (file.spherical_jet(r), rust.spherical_jet(r)) {
        (None, None) => {}
        (Some(x), Some(y)) => {
            for (p, q) in [(x.a, y.a), (x.b, y.b), (x.c, y.c)] {
                for k in 0..3 {
                    if !close(p[k], q[k], 1e-12, 1e-3 * q[0].abs()) {
                        return Err(format!("spherical jet {p:?} vs {q:?} at r={r}"));
                    }
                }
            }
        }
        _ => return Err("only one declares spherical functions".into()),
    }
    let pairs = [
        (
            file.radial_potential_jet(r, lambda, eta),
            rust.radial_potential_jet(r, lambda, eta),
        ),
        (
            file.polar_potential_jet(theta, lambda, eta),
            rust.polar_potential_jet(theta, lambda, eta),
        ),
    ];
    for (x, y) in pairs {
        match (x, y) {
            (None, None) => {}
            (Some(x), Some(y)) => {
                let mut values = vec![(x.value, y.value)];
                values.extend(x.gradient.iter().copied().zip(y.gradient));
                values.extend(
                    x.hessian
                        .iter()
                        .flatten()
                        .copied()
                        .zip(y.hessian.iter().flatten().copied()),
                );
                let scale = values.iter().fold(0.0f64, |m, v| m.max(v.1.abs()));
                for (p, q) in values {
                    if !close(p, q, 1e-12, 1e-3 * scale) {
                        return Err(format!("potential {p} vs {q} at r={r}, theta={theta}"));
                    }
                }
            }
            _ => return Err("only one provides separation data".into()),
        }
    }
    Ok(())
}

/// Runs every check for one file at one parameter point and a few random points.
fn twin(file: &str, builtin: &str, names: &[&str], values: &[f64], points: &[[f64; 4]]) {
    let spec = spec(file);
    let a = assignments(names, values);
    let file_metric = spec.instantiate(&a).unwrap();
    let rust = build_metric(builtin, &a).unwrap();
    for (name, check) in twin_checks() {
        if let Err(e) = check(&file_metric, rust.as_ref()) {
            panic!("{file} {values:?}: {name}: {e}");
        }
    }
    // Points outside the horizon (or outside r = 2.1 when there is none), off the poles.
    let r_min = file_metric.outer_horizon().unwrap_or(2.0) + 0.1;
    for [u, v, lambda, eta] in points {
        let r = r_min + u * 40.0;
        let theta = 0.05 + v * (std::f64::consts::PI - 0.1);
        if let Err(e) = compare_at(&file_metric, rust.as_ref(), r, theta, *lambda, *eta) {
            panic!("{file} {values:?}: {e}");
        }
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(48))]

    /// Schwarzschild file = built-in (Schwarzschild 1916).
    #[test]
    fn schwarzschild_file_equals_builtin(
        points in prop::collection::vec((0.0..1.0f64, 0.0..1.0f64, -6.0..6.0f64, 0.0..30.0f64), 4)
    ) {
        let points: Vec<[f64; 4]> = points.into_iter().map(|(a, b, c, d)| [a, b, c, d]).collect();
        twin("metrics/schwarzschild.toml", "schwarzschild", &[], &[], &points);
    }

    /// Reissner–Nordström file = built-in, including |q| > 1 (no horizon).
    #[test]
    fn reissner_nordstrom_file_equals_builtin(
        q in -1.3..1.3f64,
        points in prop::collection::vec((0.0..1.0f64, 0.0..1.0f64, -6.0..6.0f64, 0.0..30.0f64), 4)
    ) {
        let points: Vec<[f64; 4]> = points.into_iter().map(|(a, b, c, d)| [a, b, c, d]).collect();
        twin("metrics/reissner-nordstrom.toml", "reissner-nordstrom", &["q"], &[q], &points);
    }

    /// Kerr file = built-in (Kerr 1963; Boyer & Lindquist 1967), including |a| > 1.
    #[test]
    fn kerr_file_equals_builtin(
        a in -1.2..1.2f64,
        points in prop::collection::vec((0.0..1.0f64, 0.0..1.0f64, -6.0..6.0f64, 0.0..30.0f64), 4)
    ) {
        let points: Vec<[f64; 4]> = points.into_iter().map(|(a, b, c, d)| [a, b, c, d]).collect();
        twin("metrics/kerr.toml", "kerr", &["a"], &[a], &points);
    }

    /// Kerr–Newman file = built-in (Newman et al. 1965).
    #[test]
    fn kerr_newman_file_equals_builtin(
        a in -1.0..1.0f64,
        q in -1.0..1.0f64,
        points in prop::collection::vec((0.0..1.0f64, 0.0..1.0f64, -6.0..6.0f64, 0.0..30.0f64), 4)
    ) {
        let points: Vec<[f64; 4]> = points.into_iter().map(|(a, b, c, d)| [a, b, c, d]).collect();
        twin("metrics/kerr-newman.toml", "kerr-newman", &["a", "q"], &[a, q], &points);
    }
}

#[test]
fn every_shipped_file_loads_and_lists() {
    let listed = list_metric_dir(&crate_path("metrics"));
    let names: Vec<String> = listed
        .iter()
        .map(|(p, s)| match s {
            Ok(s) => s.info().name.clone(),
            Err(e) => panic!("{}: {e}", p.display()),
        })
        .collect();
    for want in ["kerr", "kerr-newman", "reissner-nordstrom", "schwarzschild"] {
        assert!(names.contains(&want.to_string()), "{names:?}");
    }
    let kerr = spec("metrics/kerr.toml");
    assert!(kerr.is_separable() && kerr.has_closed_form_horizon());
    assert_eq!(kerr.helper_names(), ["Sigma", "Delta", "s2"]);
    assert_eq!(kerr.path(), Some(crate_path("metrics/kerr.toml").as_path()));
    // A directory that does not exist gives one read error, not a panic.
    let missing = list_metric_dir(&crate_path("no-such-directory"));
    assert_eq!(missing.len(), 1);
    assert!(missing[0].1.is_err());
}

/// The published check values stated in the shipped files hold for the file metrics
/// (each file names its source beside the value).
#[test]
fn stated_check_values_are_parsed_and_hold() {
    let schwarzschild = spec("metrics/schwarzschild.toml");
    let checks = schwarzschild.checks();
    assert_eq!(checks.len(), 2);
    assert_eq!(checks[0].quantity, "photon_sphere_radius");
    assert_eq!(checks[1].value, 5.196152422706632);
    assert!(checks[1].source.contains("Synge 1966"));

    for file in [
        "metrics/schwarzschild.toml",
        "metrics/reissner-nordstrom.toml",
    ] {
        let spec = spec(file);
        for check in spec.checks() {
            let m = spec.instantiate(&check.parameters).unwrap();
            let analysis = spherical::photon_sphere_analysis(&m).unwrap();
            let capture = analysis.capture.unwrap();
            let got = match check.quantity.as_str() {
                "photon_sphere_radius" => capture.radius,
                "critical_impact_parameter" => capture.impact_parameter,
                other => panic!("no rule for {other}"),
            };
            assert!(
                (got - check.value).abs() <= check.tolerance,
                "{file}: {}: {got} vs {}",
                check.quantity,
                check.value
            );
        }
    }
    let kerr = spec("metrics/kerr.toml");
    assert_eq!(kerr.checks()[0].quantity, "mean_radius");
    assert_eq!(kerr.checks()[0].inclination, Some(0.0));
    let prograde = &kerr.checks()[1];
    assert_eq!(prograde.parameters, vec![("a".to_string(), 0.5)]);
    assert_eq!(prograde.inclination, Some(90.0));
    // The prograde equatorial photon orbit (Bardeen, Press & Teukolsky 1972) is the spherical
    // orbit with eta = 0: lambda(r) = (Delta' P - 2 Delta P')/(Delta' a) with P = r^2 + a^2
    // (Bardeen 1973), and there the file's radial potential has a double root, R = R' = 0.
    let m = kerr.instantiate(&prograde.parameters).unwrap();
    let a = 0.5;
    let lambda_of = |r: f64| {
        let delta = r * r - 2.0 * r + a * a;
        let (p, dp, dd) = (r * r + a * a, 2.0 * r, 2.0 * r - 2.0);
        (dd * p - 2.0 * delta * dp) / (dd * a)
    };
    let eta_of = |r: f64| {
        let delta = r * r - 2.0 * r + a * a;
        let l = lambda_of(r);
        (r * r + a * a - a * l).powi(2) / delta - (l - a).powi(2)
    };
    let r_pro = brent_root(eta_of, 1.9, 2.9, 0.0).unwrap();
    assert!((r_pro - prograde.value).abs() < prograde.tolerance);
    let jet = m
        .radial_potential_jet(r_pro, lambda_of(r_pro), 0.0)
        .unwrap();
    assert!(
        jet.value.abs() < 1e-10 && jet.gradient[0].abs() < 1e-10,
        "{jet:?}"
    );
}

/// Reads tests/data/file_metric_reference.json (tests/generate_file_metric_reference.py,
/// mpmath) into (g, horizon, photon sphere, b_c).
fn bardeen_reference() -> Vec<[f64; 4]> {
    let text = std::fs::read_to_string(crate_path("tests/data/file_metric_reference.json"))
        .expect("the committed reference table");
    let json: serde_json::Value = serde_json::from_str(&text).unwrap();
    json["entries"]
        .as_array()
        .unwrap()
        .iter()
        .map(|e| {
            let f = |k: &str| e[k].as_str().unwrap().parse::<f64>().unwrap();
            [
                f("g"),
                f("outer_horizon"),
                f("photon_sphere_radius"),
                f("critical_impact_parameter"),
            ]
        })
        .collect()
}

/// The Bardeen regular black hole exists only as tests/data/bardeen.toml. Its horizon (the
/// default numerical finder), photon sphere and b_c = √(C/A) at the minimum of C/A (Synge
/// 1966) match mpmath to 1e-12 (A = 1 − 2r²/(r² + g²)^{3/2}, Ayon-Beato & Garcia 2000,
/// Phys. Lett. B 493, 149).
#[test]
fn bardeen_file_metric_matches_mpmath() {
    let spec = spec("tests/data/bardeen.toml");
    assert!(!spec.has_closed_form_horizon());
    let reference = bardeen_reference();
    assert_eq!(reference.len(), 2);
    for [g, horizon, photon, b_c] in reference {
        let m = spec.instantiate(&[("g".to_string(), g)]).unwrap();
        assert_eq!(m.symmetry(), Symmetry::Spherical);
        let h = m.outer_horizon().unwrap();
        assert!(
            (h - horizon).abs() < 1e-12 * horizon,
            "g={g}: {h} vs {horizon}"
        );
        // (C/A)' = (C'A − CA')/A² from the file metric's exact jet.
        let slope = |r: f64| {
            let j = m.spherical_jet(r).unwrap();
            j.c[1] * j.a[0] - j.c[0] * j.a[1]
        };
        let r_ph = brent_root(slope, h + 0.05, 6.0, 0.0).unwrap();
        assert!(
            (r_ph - photon).abs() < 1e-12 * photon,
            "g={g}: {r_ph} vs {photon}"
        );
        let j = m.spherical_jet(r_ph).unwrap();
        let b = (j.c[0] / j.a[0]).sqrt();
        assert!((b - b_c).abs() < 1e-12 * b_c, "g={g}: {b} vs {b_c}");
        // The spherical shadow solver on the file metric: the same photon sphere and b_c.
        let result =
            spherical::solve(&m, &Observer::distant(0.3), &ShadowSettings::default()).unwrap();
        let curve = result.curve.unwrap();
        assert!(curve.radii.iter().all(|x| (x - b_c).abs() < 1e-12 * b_c));
        let capture = spherical::photon_sphere_analysis(&m)
            .unwrap()
            .capture
            .unwrap();
        assert!((capture.radius - photon).abs() < 1e-12 * photon);
    }
}

#[test]
fn parameters_are_checked_against_the_file_domains() {
    let spec = spec("tests/data/bardeen.toml");
    let err = spec.instantiate(&[("g".to_string(), 0.9)]).unwrap_err();
    assert_eq!(
        err.to_string(),
        "parameter 'g' = 0.9 is outside its domain [0, 0.7698]"
    );
    let err = spec
        .instantiate(&[("charge".to_string(), 0.1)])
        .unwrap_err();
    assert!(err.to_string().contains("no parameter 'charge'"), "{err}");
    assert_eq!(spec.instantiate_defaults().parameter_values(), vec![0.3]);
}

/// A file metric is as exact as the formulas: the Hamiltonian gradient of the Kerr file
/// matches the gradient written out by hand (Carter 1968) to 1e-12.
#[test]
fn kerr_file_hamiltonian_gradient_matches_hand_written_one() {
    let m = spec("metrics/kerr.toml")
        .instantiate(&[("a".to_string(), 0.9)])
        .unwrap();
    let kerr = umbral::metrics::Kerr::new(0.9).unwrap();
    let p = [-1.0, 0.3, 2.0, 3.0];
    let g = m.hamiltonian_gradient(6.0, 1.1, &p);
    let h = kerr.analytic_hamiltonian_gradient(6.0, 1.1, &p);
    for (x, y) in g
        .dh_dx
        .iter()
        .chain(&g.dh_dp)
        .zip(h.dh_dx.iter().chain(&h.dh_dp))
    {
        assert!(close(*x, *y, 1e-12, 1e-3), "{x} vs {y}");
    }
    assert!(
        m.line_element_registers() <= 32,
        "{}",
        m.line_element_registers()
    );
}
