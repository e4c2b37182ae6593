//! Points of a metric's chart (issue 10, item 20): `umbral geometry` and
//! `umbral::metric::check_point` refuse r ≤ 0 (the rule for every metric, which declares no
//! radial range of its own) and points where the metric is singular to within rounding, and
//! accept ordinary points, including ones close to (but not within rounding of) a horizon and
//! an ergosurface, where g_tt merely passes through zero.

use std::f64::consts::{FRAC_PI_2, PI};
use std::process::{Command, Output};
use umbral::metric::{check_point, PointProblem, Spacetime};
use umbral::metrics::{build_metric, builtin_metrics, Kerr, Schwarzschild};

fn umbral(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_umbral"))
        .args(args)
        .output()
        .expect("the binary runs")
}

/// Exit code 2, one line on stderr containing every needle, nothing on stdout.
fn assert_refused(args: &[&str], needles: &[&str]) {
    let out = umbral(args);
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{args:?}: {stderr}");
    assert_eq!(stderr.lines().count(), 1, "{args:?}: {stderr}");
    for needle in needles {
        assert!(stderr.contains(needle), "{args:?}: {stderr}");
    }
    assert!(out.stdout.is_empty(), "{args:?} printed to stdout");
}

#[test]
fn geometry_refuses_negative_r_for_schwarzschild() {
    // Used to print a finite metric at r = -1 (f = 1 + 2/|r|), a point of no chart umbral uses.
    assert_refused(
        &[
            "geometry",
            "--metric",
            "schwarzschild",
            "--r",
            "-1",
            "--theta",
            "1",
        ],
        &["r = -1", "outside the coordinate range r > 0"],
    );
    assert!(matches!(
        check_point(&Schwarzschild, -1.0, 1.0),
        Err(PointProblem::OutsideChart {
            coordinate: "r",
            ..
        })
    ));
    // Kerr's disk r = 0 off the equator is regular, but outside the chart all the same.
    let kerr = Kerr::new(0.9).unwrap();
    assert!(matches!(
        check_point(&kerr, 0.0, 1.0),
        Err(PointProblem::OutsideChart {
            coordinate: "r",
            ..
        })
    ));
    assert!(matches!(
        check_point(&kerr, 6.0, PI),
        Err(PointProblem::OutsideChart {
            coordinate: "theta",
            ..
        })
    ));
}

#[test]
fn geometry_refuses_the_kerr_ring_singularity_in_floating_point() {
    // The ring Σ = r² + a² cos²θ = 0 (Boyer & Lindquist 1967, J. Math. Phys. 8, 265): at
    // r = 0, θ = fl(π/2) the components used to come out finite, of size 1e32.
    assert_refused(
        &[
            "geometry",
            "--metric",
            "kerr",
            "--set",
            "a=0.9",
            "--r",
            "0",
            "--theta",
            "1.5707963267948966",
        ],
        &[
            "the metric is singular at r = 0, theta = 1.5707963267948966 rad (90 deg)",
            "det g",
            "rounding",
        ],
    );
    let kerr = Kerr::new(0.9).unwrap();
    let Err(PointProblem::Sensitive { change, .. }) = check_point(&kerr, 0.0, FRAC_PI_2) else {
        panic!("the ring passed");
    };
    // ln|det g| = ln(Σ² sin²θ) moves by 4 tanθ ε θ ≈ 22 under θ's rounding error.
    assert!((10.0..50.0).contains(&change), "{change}");
    // 1e-10 M from the ring the (t, φ) block's determinant −Δ sin²θ ≈ −a² is lost in the
    // cancellation of terms of size 1e20: refused. At 1e-5 M it is resolved: accepted.
    assert!(matches!(
        check_point(&kerr, 1e-10, FRAC_PI_2),
        Err(PointProblem::DegenerateBlock { .. })
    ));
    assert!(check_point(&kerr, 1e-5, FRAC_PI_2).is_ok());
}

#[test]
fn points_within_rounding_of_a_horizon_are_refused_and_near_ones_accepted() {
    // Schwarzschild (1916): g_rr = 1/(1 − 2/r) diverges at r = 2.
    let s = Schwarzschild;
    assert!(matches!(
        check_point(&s, 2.0, 1.0),
        Err(PointProblem::NotFinite { .. })
    ));
    let next = f64::from_bits(2.0f64.to_bits() + 1);
    assert!(matches!(
        check_point(&s, next, 1.0),
        Err(PointProblem::Sensitive { .. })
    ));
    assert!(check_point(&s, 2.0 + 1e-10, 1.0).is_ok());
    assert!(check_point(&s, 2.0 - 1e-10, 1.0).is_ok());
    // Kerr: r₊ = 1 + √(1 − a²) (Boyer & Lindquist 1967).
    let kerr = Kerr::new(0.9).unwrap();
    let r_plus = 1.0 + (1.0f64 - 0.81).sqrt();
    let within = f64::from_bits(r_plus.to_bits() + 2);
    assert!(check_point(&kerr, within, 1.0).is_err());
    assert!(check_point(&kerr, r_plus + 1e-9, 1.0).is_ok());
    // CLI: the same point next to the Schwarzschild horizon, named with its reason.
    assert_refused(
        &[
            "geometry",
            "--metric",
            "schwarzschild",
            "--r",
            "2.0000000000000004",
            "--theta",
            "1",
        ],
        &["singular", "g_rr", "rounding errors"],
    );
}

#[test]
fn an_ergosurface_is_not_a_singularity() {
    // g_tt = 0 where r² − 2r + a² cos²θ = 0 (from the Kerr g_tt = −(1 − 2r/Σ)): a component
    // passing through zero, with every other component regular.
    let a: f64 = 0.9;
    let kerr = Kerr::new(a).unwrap();
    for theta in [0.4, 1.0, FRAC_PI_2] {
        let r_e = 1.0 + (1.0 - a * a * theta.cos().powi(2)).sqrt();
        let g_tt = kerr.components_at(r_e, theta).g_tt;
        assert!(g_tt.abs() < 1e-15, "{g_tt}");
        assert!(check_point(&kerr, r_e, theta).is_ok(), "theta = {theta}");
    }
}

#[test]
fn every_builtin_metric_is_regular_at_ordinary_points() {
    for entry in builtin_metrics() {
        let m = entry.build(&[]).unwrap();
        let name = entry.info().name;
        let r0 = m.outer_horizon().unwrap_or(2.0);
        for r in [r0 + 0.5, r0 + 3.0, 30.0 * r0, 1e4] {
            for theta in [0.05, 0.7, FRAC_PI_2, 2.2, 3.1] {
                if let Err(e) = check_point(m.as_ref(), r, theta) {
                    panic!("{name} at r = {r}, theta = {theta}: {e}");
                }
            }
        }
    }
}

#[test]
fn a_metric_that_is_not_real_at_a_point_is_refused() {
    // Janis–Newman–Winicour (1968): (1 − b/r)^ν with b = 2/ν is not real for r < b.
    let jnw = build_metric("jnw", &[("nu".into(), 0.6)]).unwrap();
    let b = 2.0 / 0.6;
    let problem = check_point(jnw.as_ref(), 0.9 * b, 1.0).unwrap_err();
    assert!(problem.is_singular(), "{problem}");
    assert!(
        problem.to_string().contains("not a finite number"),
        "{problem}"
    );
    assert!(check_point(jnw.as_ref(), 1.5 * b, 1.0).is_ok());
}
