//! Over every built-in metric's declared parameter domain (from `builtin_metrics()` and each
//! `ParameterSpec`'s `Domain`), `shadow::solve` with the `auto` solver returns finite
//! observables, a labelled status (`no_shadow` with a reason) or a typed error: never a panic,
//! never a NaN or infinity.
//!
//! Values are drawn inside each domain, with its edges (closed ends exactly, open ends a hair
//! inside, unbounded ends at ±1000) drawn often; every edge is also visited deterministically.
//! Curves use 16 points (8 for the ray-traced edges) and a 1e-6 M tolerance: the property is
//! about outcomes, not accuracy.

mod common;

use proptest::prelude::*;
use umbral::metric::{Bound, Domain, Spacetime};
use umbral::metrics::{builtin_metrics, MetricEntry};
use umbral::observables::{CentreChoice, Observables};
use umbral::shadow::{solve, Observer, ShadowSettings, ShadowStatus};

/// Stand-in for an unbounded end of a domain.
const FAR: f64 = 1e3;

/// The finite interval values are drawn from: the domain clipped to [−3, 3] (parameters are in
/// units of M, where the physics happens), open ends moved a hair inside.
fn window(d: &Domain) -> (f64, f64) {
    let lo = match d.lower {
        Bound::Unbounded => -3.0,
        Bound::Inclusive(x) => x,
        Bound::Exclusive(x) => inside(x, 1.0),
    };
    let hi = match d.upper {
        Bound::Unbounded => 3.0,
        Bound::Inclusive(x) => x,
        Bound::Exclusive(x) => inside(x, -1.0),
    };
    (lo, hi.max(lo))
}

/// A value a hair from `x` in direction `sign`.
fn inside(x: f64, sign: f64) -> f64 {
    x + sign * 1e-9 * x.abs().max(1.0)
}

/// The ends of a domain as values inside it.
fn edges(d: &Domain) -> [f64; 2] {
    let lo = match d.lower {
        Bound::Unbounded => -FAR,
        Bound::Inclusive(x) => x,
        Bound::Exclusive(x) => inside(x, 1.0),
    };
    let hi = match d.upper {
        Bound::Unbounded => FAR,
        Bound::Inclusive(x) => x,
        Bound::Exclusive(x) => inside(x, -1.0),
    };
    [lo, hi]
}

/// A value of the parameter from a selector and a uniform number in [0, 1).
fn pick(d: &Domain, default: f64, selector: u8, u: f64) -> f64 {
    let value = match selector {
        0 => default,
        1 => edges(d)[0],
        2 => edges(d)[1],
        _ => {
            let (lo, hi) = window(d);
            lo + (hi - lo) * u
        }
    };
    assert!(d.contains(value), "{value} is not in {d}");
    value
}

/// Everything wrong with one outcome (empty when it is honest).
fn judge(metric: &dyn Spacetime, inclination: f64, points: usize) -> Vec<String> {
    let settings = ShadowSettings {
        points,
        tolerance: 1e-6,
        ..ShadowSettings::default()
    };
    let observer = Observer::distant(inclination);
    let mut problems = Vec::new();
    let result = match solve(metric, &observer, &settings) {
        Err(e) => {
            if e.to_string().trim().is_empty() {
                problems.push("an error without a message".into());
            }
            return problems;
        }
        Ok(r) => r,
    };
    if !result.diagnostics.wall_seconds.is_finite() {
        problems.push("wall_seconds is not finite".into());
    }
    match (&result.status, &result.curve) {
        (ShadowStatus::NoShadow { reason }, _) => {
            if reason.trim().is_empty() {
                problems.push("no_shadow without a reason".into());
            }
        }
        (ShadowStatus::Shadow, None) => problems.push("a shadow without a curve".into()),
        (ShadowStatus::Shadow, Some(curve)) => {
            let finite = curve
                .origin
                .iter()
                .chain(&curve.radii)
                .all(|x| x.is_finite());
            if !finite || curve.radii.iter().any(|r| *r <= 0.0) {
                problems.push(format!(
                    "curve radii not finite and positive: {:?}",
                    curve.radii
                ));
            }
            match Observables::from_curve(
                curve,
                CentreChoice::Centroid,
                metric.outer_horizon(),
                result.photon_orbit_radii,
            ) {
                Err(e) if e.to_string().trim().is_empty() => {
                    problems.push("an observables error without a message".into())
                }
                Err(_) => {}
                Ok(o) => {
                    let json = serde_json::to_value(&o).expect("serialisable");
                    numbers_finite(&json, "observables", &mut problems);
                }
            }
        }
    }
    if let Some([a, b]) = result.photon_orbit_radii {
        if !(a.is_finite() && b.is_finite()) {
            problems.push(format!("photon orbit radii {a}, {b}"));
        }
    }
    if let Some(e) = &result.exponents {
        let lyapunov_ok = e.lyapunov.is_none_or(f64::is_finite);
        if !(e.gamma_min.is_finite() && e.gamma_max.is_finite() && lyapunov_ok) {
            problems.push(format!("ring exponents not finite: {e:?}"));
        }
    }
    for s in &result.photon_spheres {
        if !(s.radius.is_finite() && s.impact_parameter.is_finite()) {
            problems.push(format!("photon sphere not finite: {s:?}"));
        }
    }
    problems
}

/// Every number in the JSON is finite; a null (serde's NaN) is allowed only for the optional
/// horizon radius and photon-orbit radii.
fn numbers_finite(v: &serde_json::Value, path: &str, problems: &mut Vec<String>) {
    match v {
        serde_json::Value::Null
            if !(path.ends_with("horizon_radius") || path.ends_with("photon_orbit_radii")) =>
        {
            problems.push(format!("{path} is null (NaN)"))
        }
        serde_json::Value::Number(n) if !n.as_f64().is_some_and(f64::is_finite) => {
            problems.push(format!("{path} = {n}"))
        }
        serde_json::Value::Object(m) => m
            .iter()
            .for_each(|(k, x)| numbers_finite(x, &format!("{path}.{k}"), problems)),
        serde_json::Value::Array(a) => a
            .iter()
            .enumerate()
            .for_each(|(i, x)| numbers_finite(x, &format!("{path}[{i}]"), problems)),
        _ => {}
    }
}

/// Build the metric at the assignments and judge it; the description of any problem.
fn check(
    entry: &MetricEntry,
    assignments: &[(String, f64)],
    inclination: f64,
    points: usize,
) -> Result<(), String> {
    let name = entry.info().name;
    let metric = match entry.build(assignments) {
        // A typed error is an honest outcome (the values are inside the domains, so this
        // should be rare: e.g. a point where the metric cannot be evaluated).
        Err(e) if !e.to_string().trim().is_empty() => return Ok(()),
        Err(_) => {
            return Err(format!(
                "{name} {assignments:?}: an error without a message"
            ))
        }
        Ok(m) => m,
    };
    let problems = judge(metric.as_ref(), inclination, points);
    if problems.is_empty() {
        Ok(())
    } else {
        Err(format!(
            "{name} {assignments:?} at inclination {:.6} deg: {}",
            inclination.to_degrees(),
            problems.join("; ")
        ))
    }
}

fn inclination_strategy() -> impl Strategy<Value = f64> {
    prop_oneof![
        1 => Just(0.0),
        1 => Just(std::f64::consts::FRAC_PI_2),
        1 => Just(std::f64::consts::PI),
        5 => 0.0..=std::f64::consts::PI,
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(common::proptest_cases(96)))]

    #[test]
    fn auto_solver_is_honest_over_every_declared_domain(
        which in 0usize..64,
        draws in proptest::collection::vec((0u8..8, 0.0f64..1.0), 8),
        inclination in inclination_strategy(),
    ) {
        let entries = builtin_metrics();
        let entry = &entries[which % entries.len()];
        let info = entry.info();
        let assignments: Vec<(String, f64)> = info
            .parameters
            .iter()
            .zip(&draws)
            .map(|(p, (selector, u))| (p.name.clone(), pick(&p.domain, p.default, *selector, *u)))
            .collect();
        if let Err(e) = check(entry, &assignments, inclination, 16) {
            prop_assert!(false, "{}", e);
        }
    }
}

/// Every end of every declared domain, one parameter at a time (the others at their
/// defaults), seen from the pole and the equator (one oblique inclination, and 8 curve points,
/// for the metrics the ray tracer serves, which cost more).
#[test]
fn every_domain_edge_is_honest() {
    let mut failures = Vec::new();
    let mut runs = 0;
    for entry in builtin_metrics() {
        let info = entry.info();
        let probe = entry.build(&[]).expect("defaults build");
        let raytraced = umbral::shadow::auto_solver(probe.as_ref()).name() == "raytrace";
        let (inclinations, points): (&[f64], usize) = if raytraced {
            (&[1.0], 8)
        } else {
            (&[0.0, std::f64::consts::FRAC_PI_2], 16)
        };
        for p in &info.parameters {
            for value in edges(&p.domain) {
                for &i in inclinations {
                    runs += 1;
                    if let Err(e) = check(entry, &[(p.name.clone(), value)], i, points) {
                        failures.push(e);
                    }
                }
            }
        }
    }
    eprintln!("{runs} edge runs, {} failed", failures.len());
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn sampling_stays_inside_the_domains() {
    for entry in builtin_metrics() {
        for p in entry.info().parameters {
            for selector in 0..8 {
                for u in [0.0, 0.5, 0.999_999] {
                    let v = pick(&p.domain, p.default, selector, u);
                    assert!(p.domain.contains(v), "{} = {v}", p.name);
                }
            }
        }
    }
}
