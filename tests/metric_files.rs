//! Declarative metric files: each shipped file equals its built-in Rust twin, and a metric
//! that exists only as a file (Ayon-Beato-Garcia) reproduces an independent mpmath computation.

mod common;

use common::brent_root;
use proptest::prelude::*;
use std::path::{Path, PathBuf};
use umbral::metric::{numerical_outer_horizon, Spacetime, Symmetry};
use umbral::metric_file::{list_metric_dir, load_metric_file, FileMetric, FileMetricSpec};
use umbral::metrics::{build_metric, JohannsenPsaltis};
use umbral::observables::{CentreChoice, Observables};
use umbral::shadow::{spherical, Observer, ShadowSettings, SolverChoice};

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

/// How the outer horizon of a file relates to its built-in twin's.
#[derive(Clone, Copy)]
enum HorizonAgreement {
    /// The same radius (to 1e-14) or both none.
    Same,
    /// The built-in reports the largest radius of a θ-dependent surface g^rr = 0, which a
    /// closed form cannot express; the file gives the default equatorial root. The file must
    /// equal the equatorial finder applied to the given Rust metric and not exceed the
    /// built-in's radius.
    Equatorial(fn(&[f64]) -> Option<f64>),
}

/// A file metric and its built-in twin at one parameter point.
struct TwinPair<'a> {
    file: &'a dyn Spacetime,
    rust: &'a dyn Spacetime,
    horizon: HorizonAgreement,
}

/// A comparison of a file metric with its built-in twin at one parameter point. The list below
/// is where further twin checks go (e.g. shadow observables from every solver).
type TwinCheck = fn(&TwinPair) -> Result<(), String>;

fn twin_checks() -> Vec<(&'static str, TwinCheck)> {
    vec![
        ("info and parameters", |p| {
            let (fi, ri) = (p.file.info(), p.rust.info());
            // Name, title, reference and every parameter's name, default, domain and meaning.
            (fi == ri && p.file.parameter_values() == p.rust.parameter_values())
                .then_some(())
                .ok_or_else(|| format!("{fi:?} vs {ri:?}"))
        }),
        ("symmetry flags", |p| {
            let (file, rust) = (p.file, p.rust);
            (file.symmetry() == rust.symmetry()
                && file.is_equatorially_symmetric() == rust.is_equatorially_symmetric()
                && file.is_separable() == rust.is_separable())
            .then_some(())
            .ok_or_else(|| "symmetry, equatorial symmetry or separability differ".into())
        }),
        ("outer horizon", |p| {
            let (file, rust) = (p.file.outer_horizon(), p.rust.outer_horizon());
            let same = |x: Option<f64>, y: Option<f64>| match (x, y) {
                (None, None) => true,
                (Some(x), Some(y)) => close(x, y, 1e-14, 0.0),
                _ => false,
            };
            match p.horizon {
                HorizonAgreement::Same if same(file, rust) => Ok(()),
                HorizonAgreement::Equatorial(equatorial) => {
                    let reference = equatorial(&p.rust.parameter_values());
                    let inside = match (file, rust) {
                        (Some(x), Some(y)) => x <= y * (1.0 + 1e-14),
                        (None, None) => true,
                        _ => false,
                    };
                    (same(file, reference) && inside)
                        .then_some(())
                        .ok_or_else(|| {
                            format!("file {file:?}, equatorial {reference:?}, built-in {rust:?}")
                        })
                }
                HorizonAgreement::Same => Err(format!("file {file:?}, built-in {rust:?}")),
            }
        }),
        ("spherical shadow", |p| {
            let (file, rust) = (p.file, p.rust);
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
    match (file.spherical_jet(r).ok(), rust.spherical_jet(r).ok()) {
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
            file.radial_potential_jet(r, lambda, eta).ok(),
            rust.radial_potential_jet(r, lambda, eta).ok(),
        ),
        (
            file.polar_potential_jet(theta, lambda, eta).ok(),
            rust.polar_potential_jet(theta, lambda, eta).ok(),
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

/// One file, its built-in twin and the parameter point to compare them at.
struct Twin<'a> {
    file: &'a str,
    builtin: &'a str,
    names: &'a [&'a str],
    values: &'a [f64],
    horizon: HorizonAgreement,
    /// Sample radii lie beyond this too (e.g. the JNW singularity r = 2/ν).
    r_floor: f64,
}

impl<'a> Twin<'a> {
    fn new(file: &'a str, builtin: &'a str, names: &'a [&'a str], values: &'a [f64]) -> Self {
        Twin {
            file,
            builtin,
            names,
            values,
            horizon: HorizonAgreement::Same,
            r_floor: 0.0,
        }
    }

    /// Runs every check at the parameter point and at a few random points.
    fn check(&self, points: &[[f64; 4]]) {
        let (file, values) = (self.file, self.values);
        let spec = spec(file);
        let a = assignments(self.names, values);
        let file_metric = spec.instantiate(&a).unwrap();
        let rust = build_metric(self.builtin, &a).unwrap();
        let pair = TwinPair {
            file: &file_metric,
            rust: rust.as_ref(),
            horizon: self.horizon,
        };
        for (name, check) in twin_checks() {
            if let Err(e) = check(&pair) {
                panic!("{file} {values:?}: {name}: {e}");
            }
        }
        // Points outside both horizons (or outside r = 2 when there is none) and the floor,
        // off the poles.
        let horizon = file_metric
            .outer_horizon()
            .into_iter()
            .chain(rust.outer_horizon())
            .fold(f64::NAN, f64::max);
        let r_min = if horizon.is_nan() { 2.0 } else { horizon }.max(self.r_floor) + 0.1;
        for [u, v, lambda, eta] in points {
            let r = r_min + u * 40.0;
            let theta = 0.05 + v * (std::f64::consts::PI - 0.1);
            if let Err(e) = compare_at(&file_metric, rust.as_ref(), r, theta, *lambda, *eta) {
                panic!("{file} {values:?}: {e}");
            }
        }
    }
}

/// Runs every check for one file at one parameter point and a few random points.
fn twin(file: &str, builtin: &str, names: &[&str], values: &[f64], points: &[[f64; 4]]) {
    Twin::new(file, builtin, names, values).check(points);
}

/// The random points of the twin tests: (u, v, λ, η) with r and θ from u and v.
fn points() -> impl Strategy<Value = Vec<[f64; 4]>> {
    prop::collection::vec((0.0..1.0f64, 0.0..1.0f64, -6.0..6.0f64, 0.0..30.0f64), 4)
        .prop_map(|v| v.into_iter().map(|(a, b, c, d)| [a, b, c, d]).collect())
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

proptest! {
    #![proptest_config(ProptestConfig::with_cases(48))]

    /// Tidal charge file = built-in (Dadhich et al. 2000), including q2 > 1 (no horizon).
    #[test]
    fn tidal_charge_file_equals_builtin(q2 in -2.0..1.5f64, points in points()) {
        twin("metrics/tidal-charge.toml", "tidal-charge", &["q2"], &[q2], &points);
    }

    /// Bardeen file = built-in (Bardeen 1968; Ayon-Beato & Garcia 2000), with and without a
    /// horizon (g > 4/√27).
    #[test]
    fn bardeen_file_equals_builtin(g in 0.0..1.0f64, points in points()) {
        twin("metrics/bardeen.toml", "bardeen", &["g"], &[g], &points);
    }

    /// Hayward file = built-in (Hayward 2006), with and without a horizon.
    #[test]
    fn hayward_file_equals_builtin(l in 0.0..1.0f64, points in points()) {
        twin("metrics/hayward.toml", "hayward", &["l"], &[l], &points);
    }

    /// Dilaton file = built-in (Garfinkle, Horowitz & Strominger 1991), including q² > 2.
    #[test]
    fn dilaton_file_equals_builtin(q in -1.8..1.8f64, points in points()) {
        twin("metrics/dilaton.toml", "dilaton", &["q"], &[q], &points);
    }

    /// Simpson–Visser file = built-in (Simpson & Visser 2019), black holes and wormholes.
    #[test]
    fn simpson_visser_file_equals_builtin(l in 0.0..3.0f64, points in points()) {
        twin("metrics/simpson-visser.toml", "simpson-visser", &["l"], &[l], &points);
    }

    /// JNW file = built-in (Janis, Newman & Winicour 1968; Virbhadra 1997), outside the
    /// singularity r = 2/ν.
    #[test]
    fn jnw_file_equals_builtin(nu in 0.3..1.0f64, points in points()) {
        let values = [nu];
        Twin { r_floor: 2.0 / nu, ..Twin::new("metrics/jnw.toml", "jnw", &["nu"], &values) }
            .check(&points);
    }

    /// Rezzolla–Zhidenko file = built-in (Rezzolla & Zhidenko 2014).
    #[test]
    fn rezzolla_zhidenko_file_equals_builtin(
        epsilon in -0.3..0.5f64,
        rest in prop::array::uniform6(-0.5..0.5f64),
        points in points()
    ) {
        let [a0, b0, a1, a2, b1, b2] = rest;
        twin(
            "metrics/rezzolla-zhidenko.toml",
            "rezzolla-zhidenko",
            &["epsilon", "a0", "b0", "a1", "a2", "b1", "b2"],
            &[epsilon, a0, b0, a1, a2, b1, b2],
            &points,
        );
    }

    /// Johannsen–Psaltis file = built-in (Johannsen & Psaltis 2011); the horizon is the
    /// equatorial one (see the file).
    #[test]
    fn johannsen_psaltis_file_equals_builtin(
        a in -1.0..1.0f64,
        eps3 in -2.0..2.0f64,
        points in points()
    ) {
        let values = [a, eps3];
        let equatorial: fn(&[f64]) -> Option<f64> = |v| {
            numerical_outer_horizon(&JohannsenPsaltis::new(v[0], v[1]).ok()?)
        };
        let twin = Twin {
            horizon: HorizonAgreement::Equatorial(equatorial),
            ..Twin::new("metrics/johannsen-psaltis.toml", "johannsen-psaltis", &["a", "eps3"], &values)
        };
        twin.check(&points);
    }

    /// Johannsen file = built-in (Johannsen 2013), separation potentials included.
    #[test]
    fn johannsen_file_equals_builtin(
        a in -1.0..1.0f64,
        deviations in prop::array::uniform4(-1.0..1.0f64),
        points in points()
    ) {
        let [alpha13, alpha22, alpha52, eps3] = deviations;
        twin(
            "metrics/johannsen.toml",
            "johannsen",
            &["a", "alpha13", "alpha22", "alpha52", "eps3"],
            &[a, alpha13, alpha22, alpha52, eps3],
            &points,
        );
    }

    /// KRZ file = built-in (Konoplya, Rezzolla & Zhidenko 2016).
    #[test]
    fn krz_file_equals_builtin(
        a in -0.99..0.99f64,
        deviations in prop::array::uniform6(-0.3..0.3f64),
        points in points()
    ) {
        let [d1, d2, d3, d4, d5, d6] = deviations;
        twin(
            "metrics/krz.toml",
            "krz",
            &["a", "delta1", "delta2", "delta3", "delta4", "delta5", "delta6"],
            &[a, d1, d2, d3, d4, d5, d6],
            &points,
        );
    }

    /// Kerr–Sen file = built-in (Sen 1992), including b > 1 and |a| > 1 − b (no horizon).
    #[test]
    fn kerr_sen_file_equals_builtin(a in -1.2..1.2f64, b in 0.0..1.5f64, points in points()) {
        twin("metrics/kerr-sen.toml", "kerr-sen", &["a", "b"], &[a, b], &points);
    }

    /// Rotating Bardeen file = built-in (Bambi & Modesto 2013).
    #[test]
    fn rotating_bardeen_file_equals_builtin(
        a in -1.1..1.1f64,
        g in 0.0..0.8f64,
        points in points()
    ) {
        twin("metrics/rotating-bardeen.toml", "rotating-bardeen", &["a", "g"], &[a, g], &points);
    }

    /// Rotating Hayward file = built-in (Bambi & Modesto 2013).
    #[test]
    fn rotating_hayward_file_equals_builtin(
        a in -1.1..1.1f64,
        l in 0.0..0.8f64,
        points in points()
    ) {
        twin("metrics/rotating-hayward.toml", "rotating-hayward", &["a", "l"], &[a, l], &points);
    }
}

/// The edges of the horizon rules, where a closed form must say "no horizon" exactly when
/// the built-in does: Simpson–Visser l = 2 (an extremal null throat, not a horizon), JNW ν = 1
/// (Schwarzschild) against ν < 1, the dilaton q = 0, tidal charge q2 = 1 (extremal), Kerr–Sen
/// b = 1 with a = 0 (the built-in's r+ = 0) and b > 1.
#[test]
fn horizon_rules_match_at_their_edges() {
    let fixed: [(&str, &[&str], &[f64]); 12] = [
        ("simpson-visser", &["l"], &[2.0]),
        ("simpson-visser", &["l"], &[0.0]),
        ("simpson-visser", &["l"], &[1.9999999999]),
        ("jnw", &["nu"], &[1.0]),
        ("jnw", &["nu"], &[0.999999]),
        ("dilaton", &["q"], &[0.0]),
        ("dilaton", &["q"], &[2.0]),
        ("tidal-charge", &["q2"], &[1.0]),
        ("kerr-sen", &["a", "b"], &[0.0, 1.0]),
        ("kerr-sen", &["a", "b"], &[0.0, 1.5]),
        ("kerr-sen", &["a", "b"], &[0.5, 0.5]),
        ("johannsen", &["a"], &[1.0]),
    ];
    let point = [[0.3, 0.4, 1.5, 7.0]];
    for (file, names, values) in fixed {
        let path = format!("metrics/{file}.toml");
        let twin = Twin::new(&path, file, names, values);
        let rust = build_metric(file, &assignments(names, values)).unwrap();
        // When the built-in metric has a horizon (its own rule, restated).
        let expected_some = match (file, values[0]) {
            ("simpson-visser", l) => l < 2.0,
            ("jnw", nu) => nu == 1.0,
            ("dilaton", q) => q * q < 2.0,
            ("kerr-sen", _) => values[1] < 1.0 && values[0].abs() <= 1.0 - values[1],
            _ => true,
        };
        assert_eq!(
            rust.outer_horizon().is_some(),
            expected_some,
            "{file} {values:?}"
        );
        twin.check(&point);
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
    // The four core metrics and every catalogue metric of `umbral metrics`.
    for want in [
        "kerr",
        "kerr-newman",
        "reissner-nordstrom",
        "schwarzschild",
        "tidal-charge",
        "bardeen",
        "hayward",
        "dilaton",
        "simpson-visser",
        "jnw",
        "rezzolla-zhidenko",
        "johannsen-psaltis",
        "johannsen",
        "krz",
        "kerr-sen",
        "rotating-bardeen",
        "rotating-hayward",
    ] {
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

/// The mpmath table tests/data/file_metric_reference.json
/// (tests/generate_file_metric_reference.py).
struct FileMetricReference {
    /// The charge at which the two horizons merge.
    extremal_charge: f64,
    /// (q, outer horizon, photon sphere, b_c) per charge.
    entries: Vec<[f64; 4]>,
}

fn ayon_beato_garcia_reference() -> FileMetricReference {
    let text = std::fs::read_to_string(crate_path("tests/data/file_metric_reference.json"))
        .expect("the committed reference table");
    let json: serde_json::Value = serde_json::from_str(&text).unwrap();
    let number = |v: &serde_json::Value| v.as_str().unwrap().parse::<f64>().unwrap();
    let entries = json["entries"]
        .as_array()
        .unwrap()
        .iter()
        .map(|e| {
            [
                number(&e["q"]),
                number(&e["outer_horizon"]),
                number(&e["photon_sphere_radius"]),
                number(&e["critical_impact_parameter"]),
            ]
        })
        .collect();
    FileMetricReference {
        extremal_charge: number(&json["extremal_charge"]),
        entries,
    }
}

/// The Ayon-Beato-Garcia regular black hole (Ayon-Beato & Garcia 1998, Phys. Rev. Lett. 80,
/// 5056; A = 1/B = 1 − 2r²/(r² + q²)^{3/2} + q²r²/(r² + q²)², C = r², form from memory) is not
/// built in: it exists only as tests/data/ayon-beato-garcia.toml. Its horizon (the default
/// numerical finder), photon sphere and b_c = √(C/A) at the minimum of C/A (Synge 1966,
/// Mon. Not. R. Astron. Soc. 131, 463) match mpmath to 1e-12.
#[test]
fn ayon_beato_garcia_file_metric_matches_mpmath() {
    assert!(
        build_metric("ayon-beato-garcia", &[]).is_err(),
        "the file-only test metric must not be built in"
    );
    let spec = spec("tests/data/ayon-beato-garcia.toml");
    assert!(!spec.has_closed_form_horizon());
    let reference = ayon_beato_garcia_reference();
    assert_eq!(reference.entries.len(), 2);
    for [q, horizon, photon, b_c] in reference.entries {
        let m = spec.instantiate(&[("q".to_string(), q)]).unwrap();
        assert_eq!(m.symmetry(), Symmetry::Spherical);
        let h = m.outer_horizon().unwrap();
        assert!(
            (h - horizon).abs() < 1e-12 * horizon,
            "q={q}: {h} vs {horizon}"
        );
        // (C/A)' = (C'A − CA')/A² from the file metric's exact jet.
        let slope = |r: f64| {
            let j = m.spherical_jet(r).unwrap();
            j.c[1] * j.a[0] - j.c[0] * j.a[1]
        };
        let r_ph = brent_root(slope, h + 0.05, 6.0, 0.0).unwrap();
        assert!(
            (r_ph - photon).abs() < 1e-12 * photon,
            "q={q}: {r_ph} vs {photon}"
        );
        let j = m.spherical_jet(r_ph).unwrap();
        let b = (j.c[0] / j.a[0]).sqrt();
        assert!((b - b_c).abs() < 1e-12 * b_c, "q={q}: {b} vs {b_c}");
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
    // Either side of the extremal charge (mpmath, same script): a horizon, then none.
    let q_ext = reference.extremal_charge;
    let below = spec
        .instantiate(&[("q".to_string(), q_ext - 1e-3)])
        .unwrap();
    assert!(below.outer_horizon().is_some(), "q = {}", q_ext - 1e-3);
    let above = spec
        .instantiate(&[("q".to_string(), q_ext + 1e-3)])
        .unwrap();
    assert!(above.outer_horizon().is_none(), "q = {}", q_ext + 1e-3);
}

#[test]
fn parameters_are_checked_against_the_file_domains() {
    let spec = spec("tests/data/ayon-beato-garcia.toml");
    let err = spec.instantiate(&[("q".to_string(), -0.1)]).unwrap_err();
    assert_eq!(
        err.to_string(),
        "parameter 'q' = -0.1 is outside its domain [0, inf)"
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

/// Whether the JSON path ends in an observable that is a ratio (dimensionless, some of order
/// 1e-3: an empty unit in `Quantity`); every other number of a shadow is a length in M (or
/// an area in M²).
fn dimensionless(path: &str) -> bool {
    umbral::observables::Quantity::ALL
        .iter()
        .filter(|q| q.unit().is_empty())
        .any(|q| path.ends_with(&format!(".{q}")))
}

/// The largest relative difference between two JSON trees of numbers; other leaves must be
/// equal. The floor of the relative difference is 1 M for lengths, whose typical size is the
/// shadow radius ≈ 5 M, so that offsets that vanish by symmetry (β of the centroid, ~1e-16)
/// compare at the curve's scale, and 1e-3 for the dimensionless observables (common
/// practice, no source).
fn json_difference(
    x: &serde_json::Value,
    y: &serde_json::Value,
    path: &str,
) -> Result<f64, String> {
    use serde_json::Value;
    match (x, y) {
        (Value::Number(p), Value::Number(q)) => {
            let (p, q) = (p.as_f64().unwrap(), q.as_f64().unwrap());
            let floor = if dimensionless(path) { 1e-3 } else { 1.0 };
            Ok(if p == q {
                0.0
            } else {
                (p - q).abs() / p.abs().max(q.abs()).max(floor)
            })
        }
        (Value::Array(p), Value::Array(q)) if p.len() == q.len() => p
            .iter()
            .zip(q)
            .enumerate()
            .try_fold(0.0f64, |m, (i, (p, q))| {
                Ok(m.max(json_difference(p, q, &format!("{path}[{i}]"))?))
            }),
        (Value::Object(p), Value::Object(q)) if p.len() == q.len() => {
            p.iter().try_fold(0.0f64, |m, (k, v)| {
                let w = q.get(k).ok_or_else(|| format!("{path}.{k} missing"))?;
                Ok(m.max(json_difference(v, w, &format!("{path}.{k}"))?))
            })
        }
        (p, q) if p == q => Ok(0.0),
        (p, q) => Err(format!("{path}: {p} vs {q}")),
    }
}

/// Solves the shadow of a file metric and of its built-in twin with the same solver and
/// settings and returns the largest relative difference of the curve radii, the photon-orbit
/// radii and every observable (centroid centre).
fn shadow_difference(
    file: &dyn Spacetime,
    rust: &dyn Spacetime,
    inclination_deg: f64,
    solver: SolverChoice,
) -> f64 {
    let settings = ShadowSettings {
        points: 64,
        // The separable solver places each point to 1% of the tolerance; 1e-8 M would leave
        // the last digits to where Brent's method stops, so ask for 1e-12 M.
        tolerance: 1e-12,
        solver,
    };
    let observer = Observer::distant(inclination_deg.to_radians());
    let label = format!(
        "{} {:?} at {inclination_deg} deg",
        rust.info().name,
        rust.parameter_values()
    );
    let solve = |m: &dyn Spacetime| {
        let result = umbral::shadow::solve(m, &observer, &settings)
            .unwrap_or_else(|e| panic!("{label}: {e}"));
        let curve = result
            .curve
            .clone()
            .unwrap_or_else(|| panic!("{label}: no curve: {:?}", result.status));
        let observables = Observables::from_curve(
            &curve,
            CentreChoice::Centroid,
            m.outer_horizon(),
            result.photon_orbit_radii,
        )
        .unwrap_or_else(|e| panic!("{label}: {e}"));
        let json = serde_json::json!({
            "solver": result.solver,
            "origin": curve.origin,
            "radii": curve.radii,
            "photon_orbit_radii": result.photon_orbit_radii,
            "observables": observables,
        });
        (json, observables.hioki_maeda_reference_side)
    };
    let (f, f_side) = solve(file);
    let (r, r_side) = solve(rust);
    if f_side != r_side {
        // At a = 0 the two sides are equally flattened and rounding picks one; every number
        // must still agree, so compare them without the side.
        let strip = |mut v: serde_json::Value| {
            v["observables"]
                .as_object_mut()
                .unwrap()
                .remove("hioki_maeda_reference_side");
            v
        };
        return json_difference(&strip(f), &strip(r), &label).unwrap_or_else(|e| panic!("{e}"));
    }
    json_difference(&f, &r, &label).unwrap_or_else(|e| panic!("{e}"))
}

/// The separable shadows of the Kerr file equal those of the built-in Kerr (Bardeen 1973's
/// curve from Carter's potentials in both; the file's potentials are compiled formulas), for
/// the standard cases a ∈ {0, 0.5, 0.9, 0.99} at 17°, 60° and 90°: the curve, the photon-orbit
/// radii and every observable to 1e-12 relative.
#[test]
fn kerr_file_shadow_observables_equal_builtin() {
    let spec = spec("metrics/kerr.toml");
    let mut worst = 0.0f64;
    for a in [0.0, 0.5, 0.9, 0.99] {
        let assigned = assignments(&["a"], &[a]);
        let file = spec.instantiate(&assigned).unwrap();
        let rust = build_metric("kerr", &assigned).unwrap();
        for inclination in [17.0, 60.0, 90.0] {
            let d = shadow_difference(&file, rust.as_ref(), inclination, solver("separable"));
            assert!(d <= 1e-12, "a = {a}, {inclination} deg: {d:e}");
            worst = worst.max(d);
        }
    }
    eprintln!("kerr.toml vs Kerr, separable shadows: worst relative difference {worst:e}");
}

/// The same for two catalogue files: the spherical Simpson–Visser (spherical solver) and the
/// separable Kerr–Sen and Johannsen (separable solver).
#[test]
fn catalogue_file_shadow_observables_equal_builtin() {
    let cases: [(&str, &[&str], &[f64], SolverChoice); 4] = [
        ("simpson-visser", &["l"], &[0.8], solver("spherical")),
        ("tidal-charge", &["q2"], &[-0.6], solver("spherical")),
        ("kerr-sen", &["a", "b"], &[0.7, 0.2], solver("separable")),
        (
            "johannsen",
            &["a", "alpha13", "alpha22"],
            &[0.6, 0.5, 0.3],
            solver("separable"),
        ),
    ];
    let mut worst = 0.0f64;
    for (name, names, values, solver) in cases {
        let assigned = assignments(names, values);
        let file = spec(&format!("metrics/{name}.toml"))
            .instantiate(&assigned)
            .unwrap();
        let rust = build_metric(name, &assigned).unwrap();
        for inclination in [17.0, 60.0, 90.0] {
            let d = shadow_difference(&file, rust.as_ref(), inclination, solver);
            assert!(d <= 1e-12, "{name} {values:?}, {inclination} deg: {d:e}");
            worst = worst.max(d);
        }
    }
    eprintln!("catalogue files vs built-ins, shadows: worst relative difference {worst:e}");
}

/// A registered solver by name.
fn solver(name: &str) -> SolverChoice {
    name.parse().expect("a registered solver")
}
