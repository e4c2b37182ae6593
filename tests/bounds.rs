//! Bounds on deviation parameters from shadow-radius intervals (library and CLI).

use serde_json::Value;
use std::process::Command;
use umbral::bounds::nuisance::{
    extremes, Aggregate, Extremes, NuisanceSearch, PointModel, PointValue,
};
use umbral::bounds::{
    bound, bound_on, BoundError, BoundRequest, BoundSettings, Evaluate, Halted, Inclination, Node,
    ParameterRange, SizeMeasure,
};
use umbral::measurement::{DerivedRadii, Measurement, RadiusInterval};

fn radii(intervals: &[(f64, f64, f64)]) -> DerivedRadii {
    DerivedRadii {
        intervals: intervals
            .iter()
            .map(|&(confidence, low, high)| RadiusInterval {
                confidence,
                low,
                high,
            })
            .collect(),
        ring: None,
        assumptions: vec![],
    }
}

fn request(metric: &str, vary: (&str, f64, f64), intervals: &[(f64, f64, f64)]) -> BoundRequest {
    BoundRequest {
        metric: umbral::metrics::MetricSource::builtin(metric).unwrap(),
        vary: ParameterRange {
            name: vary.0.into(),
            low: vary.1,
            high: vary.2,
        },
        fixed: vec![],
        inclination: Inclination::Fixed { degrees: 17.0 },
        nuisance: vec![],
        size_measure: SizeMeasure::Mean,
        radii: radii(intervals),
        circularity_max: None,
        settings: BoundSettings::default(),
    }
}

/// Reissner-Nordstrom: the allowed charges equal the exact inversion of
/// b_c(q) = r²/√(r² − 2r + q²), r = (3 + √(9 − 8q²))/2 (photon sphere of f = 1 − 2/r + q²/r²;
/// Zakharov et al. 2005, Phys. Rev. D 72, 084020), computed with mpmath by
/// tests/generate_rn_bound.py, to 1e-8 in q.
#[test]
fn reissner_nordstrom_bound_matches_mpmath_inversion() {
    let data: Value =
        serde_json::from_str(include_str!("data/rn_bound.json")).expect("reference table");
    for case in data["cases"].as_array().unwrap() {
        let vary = case["vary"].as_array().unwrap();
        let (lo, hi) = (vary[0].as_f64().unwrap(), vary[1].as_f64().unwrap());
        let levels: Vec<(f64, f64, f64)> = case["levels"]
            .as_array()
            .unwrap()
            .iter()
            .map(|l| {
                (
                    l["confidence"].as_f64().unwrap(),
                    l["low"].as_f64().unwrap(),
                    l["high"].as_f64().unwrap(),
                )
            })
            .collect();
        let result = bound(&request("reissner-nordstrom", ("q", lo, hi), &levels)).unwrap();
        assert!(result.failures.is_empty(), "{:?}", result.failures);
        for (got, want) in result.levels.iter().zip(case["levels"].as_array().unwrap()) {
            let want: Vec<[f64; 2]> = want["allowed"]
                .as_array()
                .unwrap()
                .iter()
                .map(|p| [p[0].as_f64().unwrap(), p[1].as_f64().unwrap()])
                .collect();
            assert_eq!(
                got.allowed.len(),
                want.len(),
                "{:?} vs {want:?}",
                got.allowed
            );
            for (g, w) in got.allowed.iter().zip(&want) {
                assert!(
                    (g[0] - w[0]).abs() <= 1e-8 && (g[1] - w[1]).abs() <= 1e-8,
                    "allowed {g:?}, mpmath {w:?}"
                );
            }
        }
        // |q| > 1 has no horizon: reported as such, its ends at ±1 to 1e-8.
        let ends: Vec<f64> = result
            .no_horizon
            .iter()
            .flat_map(|r| [r[0], r[1]])
            .collect();
        assert!(
            ends.iter().any(|&e| (e - 1.0).abs() <= 1e-8),
            "{:?}",
            result.no_horizon
        );
        assert!(ends.contains(&hi));
    }
}

/// Schwarzschild's shadow radius is 3√3 (Synge 1966, MNRAS 131, 463): a GR-centred
/// fractional-deviation measurement allows q = 0 (Reissner-Nordstrom reduces to Schwarzschild),
/// and the predicted size there is 3√3 to rounding, i.e. delta = 0.
#[test]
fn schwarzschild_point_has_zero_fractional_deviation() {
    let m = Measurement::from_toml_str(
        "[size.fractional_deviation]\nvalue = 0.0\nminus = 1e-6\nplus = 1e-6\n",
    )
    .unwrap();
    let mut r = request("reissner-nordstrom", ("q", -0.5, 0.5), &[]);
    r.radii = m.derive(Some(&[0.68])).unwrap();
    let result = bound(&r).unwrap();
    let allowed = &result.levels[0].allowed;
    assert_eq!(allowed.len(), 1, "{allowed:?}");
    assert!(allowed[0][0] < 0.0 && allowed[0][1] > 0.0);
    // Symmetric in q to the tolerance.
    assert!((allowed[0][0] + allowed[0][1]).abs() < 2e-8, "{allowed:?}");
    let at_zero = result.predicted.iter().find(|p| p.value == 0.0).unwrap();
    let delta = at_zero.size_min.unwrap() / (3.0 * 3f64.sqrt()) - 1.0;
    assert!(delta.abs() < 4.0 * f64::EPSILON, "delta = {delta}");
    // The Schwarzschild metric itself.
    let s = umbral::metrics::build_metric("schwarzschild", &[]).unwrap();
    let shadow = umbral::shadow::solve(
        s.as_ref(),
        &umbral::shadow::Observer::distant(1.0),
        &umbral::shadow::ShadowSettings::default(),
    )
    .unwrap();
    let b = shadow.curve.unwrap().radii[0];
    assert!((b / (3.0 * 3f64.sqrt()) - 1.0).abs() < 4.0 * f64::EPSILON);
}

/// Kerr has no deviation parameter: with an interval containing every Kerr shadow radius
/// (between about 4.83 and 3√3 for a distant observer; Bardeen 1973), every spin is allowed.
#[test]
fn kerr_with_gr_consistent_interval_allows_every_spin() {
    let mut r = request(
        "kerr",
        ("a", 0.0, 0.99),
        &[(0.68, 4.7, 5.3), (0.95, 4.5, 5.5)],
    );
    r.inclination = Inclination::Fixed { degrees: 60.0 };
    let result = bound(&r).unwrap();
    for level in &result.levels {
        assert_eq!(level.allowed, vec![[0.0, 0.99]]);
    }
    assert!(result.no_horizon.is_empty() && result.failures.is_empty());
}

/// Kerr-Newman with spin as a nuisance over [0, 0.99]: a charge is allowed if some spin puts
/// the size inside the interval. The band edge at zero spin is Reissner-Nordstrom, so the
/// largest allowed charge at an interval [L, H] with L above the extremal value is the RN
/// inversion of L (mpmath table above); the spin nuisance only widens the allowed set at
/// small charge.
#[test]
fn kerr_newman_with_spin_nuisance_contains_the_rn_bound() {
    let mut r = request("kerr-newman", ("q", 0.0, 0.9), &[(0.68, 4.5, 5.0)]);
    r.inclination = Inclination::Fixed { degrees: 60.0 };
    r.nuisance = vec![ParameterRange {
        name: "a".into(),
        low: 0.0,
        high: 0.99,
    }];
    r.settings.initial_grid = 11;
    let result = bound(&r).unwrap();
    assert!(result.failures.is_empty(), "{:?}", result.failures);
    let allowed = &result.levels[0].allowed;
    assert_eq!(allowed.len(), 1, "{allowed:?}");
    // Upper end: zero spin (the largest size) reaches L = 4.5 at the RN value.
    assert!(
        (allowed[0][1] - 0.822_649_256_777_426_1).abs() < 1e-7,
        "{allowed:?}"
    );
    // Lower end: below the RN value 0.4653, since spin shrinks the shadow.
    assert!(
        allowed[0][0] < 0.465_291_653_413_349_8 - 1e-3,
        "{allowed:?}"
    );
    assert!(result
        .assumptions
        .iter()
        .any(|a| a.contains("nuisance extremes")));
}

/// A hidden allowed window between grid points is found: a narrow interval around the
/// size at one charge.
#[test]
fn narrow_window_between_grid_points_is_found() {
    // b_c(0.5) from the mpmath generator's formula: r = (3 + √7)/2.
    let q: f64 = 0.5;
    let rp = (3.0 + (9.0 - 8.0 * q * q).sqrt()) / 2.0;
    let b = rp * rp / (rp * rp - 2.0 * rp + q * q).sqrt();
    let mut r = request(
        "reissner-nordstrom",
        ("q", -0.9, 0.9),
        &[(0.68, b - 1e-4, b + 1e-4)],
    );
    r.settings.initial_grid = 7;
    let result = bound(&r).unwrap();
    let allowed = &result.levels[0].allowed;
    assert_eq!(allowed.len(), 2, "{allowed:?}");
    assert!(allowed[1][0] < 0.5 && allowed[1][1] > 0.5);
}

/// A circularity limit below every shadow's ΔC excludes everything; a generous one changes
/// nothing.
#[test]
fn circularity_limit_excludes() {
    let mut r = request("kerr", ("a", 0.5, 0.99), &[(0.68, 4.7, 5.3)]);
    r.inclination = Inclination::Fixed { degrees: 80.0 };
    r.circularity_max = Some(1e-4);
    let tight = bound(&r).unwrap();
    // ΔC of Kerr at a = 0.5, 80 deg is well above 1e-4 (it grows like a²; Johannsen 2013).
    assert!(tight.levels[0].allowed.is_empty(), "{:?}", tight.levels);
    r.circularity_max = Some(0.5);
    let loose = bound(&r).unwrap();
    assert_eq!(loose.levels[0].allowed, vec![[0.5, 0.99]]);
}

fn umbral(args: &[&str]) -> (i32, String, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_umbral"))
        .args(args)
        .output()
        .expect("run umbral");
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// Published comparison, FROM MEMORY (not verified against the paper): Kocherlakota et al.
/// 2021 (Phys. Rev. D 103, 104047) turned the EHT 2017 M87* size into a 68 % interval
/// 4.31 ≲ r_sh/M ≲ 6.08 and quoted for Reissner-Nordstrom a charge bound of about
/// |q| ≲ 0.90. Both numbers are recalled, not checked; the test only asserts that our bound
/// from the recalled interval rounds to the recalled bound at the quoted two decimals.
#[test]
fn reissner_nordstrom_bound_from_recalled_published_interval() {
    let result = bound(&request(
        "reissner-nordstrom",
        ("q", 0.0, 1.2),
        &[(0.68, 4.31, 6.08)],
    ))
    .unwrap();
    let allowed = &result.levels[0].allowed;
    assert_eq!(allowed.len(), 1);
    assert_eq!(allowed[0][0], 0.0);
    assert!((allowed[0][1] - 0.90).abs() < 0.005, "{allowed:?}");
}

fn write_measurement(name: &str, text: &str) -> std::path::PathBuf {
    let dir = std::env::temp_dir().join(format!("umbral-bounds-test-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join(name);
    std::fs::write(&path, text).unwrap();
    path
}

#[test]
fn cli_bound_json_has_the_documented_keys() {
    let file = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/examples/measurement_radius.toml"
    );
    let plot = std::env::temp_dir().join(format!("umbral-bound-{}.svg", std::process::id()));
    let (code, out, err) = umbral(&[
        "bound",
        "--metric",
        "reissner-nordstrom",
        "--vary",
        "q=0:1.2",
        "--inclination",
        "17",
        "--measurement",
        file,
        "--json",
        "--plot",
        plot.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{err}");
    let v: Value = serde_json::from_str(&out).unwrap();
    for key in [
        "metric",
        "vary",
        "fixed",
        "nuisance",
        "size_measure",
        "levels",
        "circularity_max",
        "no_horizon",
        "assumptions",
    ] {
        assert!(v.get(key).is_some(), "missing key {key}");
    }
    let level = &v["levels"][0];
    assert!(level["confidence"].is_number());
    assert_eq!(level["radius_interval"].as_array().unwrap().len(), 2);
    assert!(level["allowed"][0].as_array().unwrap().len() == 2);
    let svg = std::fs::read_to_string(&plot).unwrap();
    assert!(
        svg.contains("<svg") && svg.contains("measured at 68 %"),
        "{svg}"
    );
    assert!(svg.contains("predicted mean radius / M"), "{svg}");
    let _ = std::fs::remove_file(plot);
}

#[test]
fn cli_bound_bad_input_is_one_line_exit_2() {
    let good = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/examples/measurement_radius.toml"
    );
    let unknown_key = write_measurement(
        "unknown.toml",
        "[size.shadow_radius]\nintervals = [ { confidence = 0.68, low = 4.6, high = 5.2 } ]\nwidth = 3\n",
    );
    let two_forms = write_measurement(
        "two.toml",
        "[size.fractional_deviation]\nvalue = 0.0\nminus = 0.1\nplus = 0.1\n\
         [size.shadow_radius]\nintervals = [ { confidence = 0.68, low = 4.6, high = 5.2 } ]\n",
    );
    let base = |m: &str, vary: &str| -> Vec<String> {
        [
            "bound",
            "--metric",
            "reissner-nordstrom",
            "--vary",
            vary,
            "--inclination",
            "17",
            "--measurement",
            m,
        ]
        .iter()
        .map(|s| s.to_string())
        .collect()
    };
    let cases: Vec<(Vec<String>, &str)> = vec![
        (
            base(unknown_key.to_str().unwrap(), "q=0:1"),
            "unknown field",
        ),
        (
            base(two_forms.to_str().unwrap(), "q=0:1"),
            "exactly one size form",
        ),
        (base("no/such/file.toml", "q=0:1"), "cannot read"),
        (base(good, "q=nan:1"), "finite"),
        (base(good, "q=1:0"), "LO < HI"),
        (base(good, "charge=0:1"), "no parameter 'charge'"),
        (base(good, "q=0"), "LO:HI"),
        (
            {
                let mut a = base(good, "q=0:1");
                a.push("--levels".into());
                a.push("0.5".into());
                a
            },
            "no shadow-radius interval",
        ),
    ];
    for (args, needle) in cases {
        let refs: Vec<&str> = args.iter().map(String::as_str).collect();
        let (code, out, err) = umbral(&refs);
        assert_eq!(code, 2, "{args:?}: {out} {err}");
        assert_eq!(err.trim().lines().count(), 1, "{err}");
        assert!(err.contains(needle), "'{err}' lacks '{needle}'");
    }
    let (code, _, err) = umbral(&[
        "bound",
        "--metric",
        "kerr",
        "--vary",
        "a=0:0.9",
        "--measurement",
        good,
    ]);
    assert_eq!(code, 2);
    assert!(err.contains("--inclination"), "{err}");
}

/// An inclination range is a nuisance: the allowed set over [17, 90] deg contains the allowed
/// sets at the two fixed ends (the definition of "some nuisance point fits"; no source needed).
#[test]
fn inclination_range_contains_the_fixed_inclination_bounds() {
    let mut r = request("kerr-newman", ("q", 0.0, 0.4), &[(0.68, 4.6, 4.9)]);
    r.fixed = vec![("a".into(), 0.9)];
    r.settings.initial_grid = 9;
    let upper_end = |result: &umbral::bounds::BoundResult| {
        assert!(result.failures.is_empty(), "{:?}", result.failures);
        let a = &result.levels[0].allowed;
        assert_eq!(a.len(), 1, "{a:?}");
        a[0]
    };
    r.inclination = Inclination::Fixed { degrees: 17.0 };
    let at_17 = upper_end(&bound(&r).unwrap());
    r.inclination = Inclination::Fixed { degrees: 90.0 };
    let at_90 = upper_end(&bound(&r).unwrap());
    r.inclination = Inclination::Range {
        low_degrees: 17.0,
        high_degrees: 90.0,
    };
    let range = bound(&r).unwrap();
    let both = upper_end(&range);
    assert!(
        both[0] <= at_17[0].min(at_90[0]) + 1e-8,
        "{both:?} {at_17:?} {at_90:?}"
    );
    assert!(
        both[1] >= at_17[1].max(at_90[1]) - 1e-8,
        "{both:?} {at_17:?} {at_90:?}"
    );
    assert!(range
        .assumptions
        .iter()
        .any(|a| a.contains("inclination: nuisance")));
}

#[test]
fn cli_bound_from_a_ring_prints_the_chain() {
    let file = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/examples/measurement_ring.toml"
    );
    let (code, out, err) = umbral(&[
        "bound",
        "--metric",
        "reissner-nordstrom",
        "--vary",
        "q=0:1.1",
        "--inclination",
        "25",
        "--measurement",
        file,
        "--levels",
        "0.68",
    ]);
    assert_eq!(code, 0, "{err}");
    assert!(
        out.contains("Monte Carlo") && out.contains("first-order propagation"),
        "{out}"
    );
    assert!(
        out.contains("confidence 0.68") && !out.contains("confidence 0.95:"),
        "{out}"
    );
}

/// Ends of allowed ranges that are not crossings of the measured interval are labelled: the
/// varied range's own edge, and the horizon edge of Reissner–Nordström at |q| = 1 (r± merge,
/// Reissner 1916; Nordström 1918), where b_c = 4 lies inside a wide interval.
#[test]
fn allowed_range_ends_say_what_they_stand_on() {
    let result = bound(&request(
        "reissner-nordstrom",
        ("q", 0.0, 1.2),
        &[(0.95, 3.5, 6.0)],
    ))
    .unwrap();
    let allowed = &result.levels[0].allowed;
    assert_eq!(allowed.len(), 1);
    assert_eq!(result.end_kind(allowed[0][0]), Some("range edge"));
    assert_eq!(result.end_kind(allowed[0][1]), Some("horizon edge"));
    // A crossing of the measured interval is not labelled.
    let result = bound(&request(
        "reissner-nordstrom",
        ("q", 0.0, 1.2),
        &[(0.68, 4.6, 5.2)],
    ))
    .unwrap();
    let end = result.levels[0].allowed[0][1];
    assert_eq!(result.end_kind(end), None, "{end}");
    assert!(result
        .describe_allowed(&result.levels[0].allowed, 4)
        .contains("(range edge)"));
}

/// Issue 10 item 7: the Janis–Newman–Winicour bound on ν gave `allowed [[1.0, 1.0]]` because
/// every ν < 1 (no horizon) was left out, though a photon sphere bounds capture by the naked
/// singularity for ν > 1/2. Values are now classified by whether a shadow exists: the allowed
/// ranges match the mpmath inversion of b_c(ν) = r_ph x^((1 − 2ν)/2) (Virbhadra, Narasimha &
/// Chitre 1998; tests/generate_jnw_bound.py) to 1e-7, the horizonless part is labelled, ν ≤ 1/2
/// (no photon sphere, no shadow) stays unclassified, and a range reaching ν = 1/2 ends at the
/// no-shadow edge. `require_horizon` keeps the old policy, whose answer is then said to be
/// only the end of the range.
#[test]
fn jnw_bound_counts_horizonless_shadows() {
    let data: Value =
        serde_json::from_str(include_str!("data/jnw_bound.json")).expect("reference table");
    for case in data["cases"].as_array().unwrap() {
        let vary = case["vary"].as_array().unwrap();
        let (lo, hi) = (vary[0].as_f64().unwrap(), vary[1].as_f64().unwrap());
        let levels = case["levels"].as_array().unwrap();
        let intervals: Vec<(f64, f64, f64)> = levels
            .iter()
            .map(|l| {
                let f = |k: &str| l[k].as_f64().unwrap();
                (f("confidence"), f("low"), f("high"))
            })
            .collect();
        let result = bound(&request("jnw", ("nu", lo, hi), &intervals)).unwrap();
        assert!(result.failures.is_empty(), "{:?}", result.failures);
        assert!(!result.require_horizon);
        for (level, want) in result.levels.iter().zip(levels) {
            let want = want["allowed"].as_array().unwrap();
            assert_eq!(level.allowed.len(), want.len(), "{:?}", level.allowed);
            for (got, want) in level.allowed.iter().zip(want) {
                let w: Vec<f64> = want
                    .as_array()
                    .unwrap()
                    .iter()
                    .map(|x| x.as_f64().unwrap())
                    .collect();
                assert!(
                    (got[0] - w[0]).abs() < 1e-7 && (got[1] - w[1]).abs() < 1e-7,
                    "{got:?} vs {w:?}"
                );
                if w[0] == 0.5 {
                    assert_eq!(result.end_kind(got[0]), Some("no-shadow edge"));
                }
                let text = result.describe_allowed(&level.allowed, 6);
                assert!(text.contains("horizonless on"), "{text}");
            }
            assert!(!level.only_range_ends);
        }
        // Horizonless from just above 1/2 (or the range's start) to just below 1; nothing
        // below 1/2 is evaluated.
        let [h0, h1] = result.horizonless[0];
        assert!((h0 - lo.max(0.5)).abs() < 1e-7 && (h1 - hi.min(1.0)).abs() < 1e-7);
        for p in &result.predicted {
            assert_eq!(p.status == "ok", p.value > 0.5, "{p:?}");
            assert_eq!(p.horizonless, p.status == "ok" && p.value < 1.0, "{p:?}");
        }
        assert!(result
            .assumptions
            .iter()
            .any(|a| a.starts_with("horizonless objects")));
    }

    // The old policy, on request: only ν = 1 has a horizon, so the answer is the range end.
    let mut strict = request("jnw", ("nu", 0.3, 1.0), &[(0.68, 4.6, 5.2)]);
    strict.settings.require_horizon = true;
    let result = bound(&strict).unwrap();
    assert_eq!(result.levels[0].allowed, vec![[1.0, 1.0]]);
    assert!(result.levels[0].only_range_ends);
    assert!(result.horizonless.is_empty());
    let text = result.describe_allowed(&result.levels[0].allowed, 6);
    assert!(text.contains("only the end of the varied range"), "{text}");
    assert!(result
        .assumptions
        .iter()
        .any(|a| a.starts_with("horizon required")));

    // Reissner–Nordström beyond |q| = 1 has no shadow (C/A falls to zero at the centre: rays
    // are turned back), so nothing changes there: still no horizon, unclassified.
    let rn = bound(&request(
        "reissner-nordstrom",
        ("q", 0.0, 1.2),
        &[(0.68, 3.0, 5.3)],
    ))
    .unwrap();
    assert!(rn.horizonless.is_empty() && !rn.no_horizon.is_empty());

    // The command line: labels in the table, fields in the JSON, the flag.
    let dir = std::env::temp_dir().join(format!("umbral-jnw-bound-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let m = dir.join("m.toml");
    std::fs::write(
        &m,
        "[size.shadow_radius]\nintervals = [ { confidence = 0.68, low = 4.6, high = 5.2 } ]\n",
    )
    .unwrap();
    let run = |extra: &[&str]| {
        let mut args = vec![
            "bound",
            "--metric",
            "jnw",
            "--vary",
            "nu=0.3:1",
            "--measurement",
        ];
        args.push(m.to_str().unwrap());
        args.extend(extra);
        Command::new(env!("CARGO_BIN_EXE_umbral"))
            .args(&args)
            .output()
            .unwrap()
    };
    let table = String::from_utf8(run(&[]).stdout).unwrap();
    assert!(
        table.contains("allowed [0.583479") && table.contains("horizonless"),
        "{table}"
    );
    let json: Value = serde_json::from_slice(&run(&["--json"]).stdout).unwrap();
    assert_eq!(json["horizonless"].as_array().unwrap().len(), 1);
    assert_eq!(json["levels"][0]["only_range_ends"], false);
    let strict = String::from_utf8(run(&["--require-horizon"]).stdout).unwrap();
    assert!(
        strict.contains("only the end of the varied range"),
        "{strict}"
    );
}

/// A horizon edge with a short decimal form is printed as that edge: Reissner–Nordström has a
/// horizon exactly for |q| ≤ 1 (r± = 1 ± √(1 − q²); e.g. Wald 1984, General Relativity, §12.2),
/// so the no-horizon range starts at 1 exactly, not at a bisection's 0.999999998.
#[test]
fn a_horizon_edge_on_a_short_decimal_is_exact() {
    let file = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/examples/measurement_deviation.toml"
    );
    let (code, out, err) = umbral(&[
        "bound",
        "--metric",
        "reissner-nordstrom",
        "--vary",
        "q=0:1.2",
        "--inclination",
        "17",
        "--measurement",
        file,
        "--json",
    ]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["no_horizon"][0][0].as_f64(), Some(1.0), "{out}");
    // The same bound as a booktabs table, its assumptions as comment lines above it.
    let (code, latex, err) = umbral(&[
        "bound",
        "--metric",
        "reissner-nordstrom",
        "--vary",
        "q=0:1.2",
        "--inclination",
        "17",
        "--measurement",
        file,
        "--latex",
    ]);
    assert_eq!(code, 0, "{err}");
    assert!(
        latex.contains("% bound on q of reissner-nordstrom; no horizon: [1, 1.2]"),
        "{latex}"
    );
    assert!(latex.contains("% - size measure:"), "{latex}");
    assert!(
        latex.contains("\\toprule") && latex.contains("$0.68$ &"),
        "{latex}"
    );
}

/// An evaluator that stands in for the metric: every value asked for is answered by
/// `model` (the request's metric only passes the request checks), and every request is
/// recorded with its stage.
struct Synthetic {
    model: fn(f64) -> Aggregate,
    asked: Vec<(String, f64)>,
}

impl Evaluate for Synthetic {
    fn evaluate(
        &mut self,
        stage: &str,
        xs: &[f64],
        full: bool,
        _node: &(dyn Fn(f64) -> Node + Sync),
    ) -> Result<Vec<Node>, Halted> {
        Ok(xs
            .iter()
            .map(|&x| {
                self.asked.push((stage.to_string(), x));
                Node {
                    x,
                    value: (self.model)(x),
                    full,
                }
            })
            .collect())
    }

    fn finish(&mut self) -> Result<(), Halted> {
        Ok(())
    }
}

/// A prediction of size 5 + 0.2 x (no nuisance spread).
fn linear_size(x: f64) -> Aggregate {
    let size = 5.0 + 0.2 * x;
    Aggregate::Ok(Extremes {
        size_min: size,
        size_max: size,
        circularity_min: 0.0,
        partial: false,
        horizonless: false,
        wall_backoff: 0.0,
        refinement_cut: None,
        witnessed: false,
        failure_passed_over: None,
    })
}

/// No horizon below 0.2161 (a physical edge), a solver failure above 0.8659.
fn horizon_then_failure(x: f64) -> Aggregate {
    if x < 0.2161 {
        Aggregate::NoHorizon
    } else if x > 0.8659 {
        Aggregate::Failed("synthetic solver failure".into())
    } else {
        linear_size(x)
    }
}

/// A synthetic bound over [0, 1] (the metric and its parameter only pass the checks).
fn synthetic_request(intervals: &[(f64, f64, f64)]) -> BoundRequest {
    request("reissner-nordstrom", ("q", 0.0, 1.0), intervals)
}

/// Where the solver fails is located only to the failure-edge tolerance (1e-3 of the range),
/// the physical horizon edge still to 1e-8; the unevaluated gap is reported with the failure,
/// the allowed range stops at the last success beside it, and the assumptions say so.
#[test]
fn failure_edges_are_located_coarsely_and_the_gap_is_reported() {
    let r = synthetic_request(&[(0.95, 4.9, 5.5)]);
    assert_eq!(r.settings.failure_edge_relative_tolerance, 1e-3);
    let mut eval = Synthetic {
        model: horizon_then_failure,
        asked: Vec::new(),
    };
    let result = bound_on(&r, &mut eval).unwrap();
    // The failure edge lies between grid nodes 0.85 and 0.9: bisected from 0.05 down to
    // 0.05/64 < 1e-3 in 6 steps (1e-8 would take 23); the horizon edge between 0.2 and 0.25
    // still takes 23 steps.
    let edge_steps = |lo: f64, hi: f64| {
        eval.asked
            .iter()
            .filter(|(stage, x)| stage == "category edges" && *x > lo && *x < hi)
            .count()
    };
    assert_eq!(edge_steps(0.85, 0.9), 6, "{:?}", eval.asked);
    assert_eq!(edge_steps(0.2, 0.25), 23, "{:?}", eval.asked);
    assert_eq!(result.no_horizon.len(), 1);
    let horizon_edge = result.no_horizon[0][1];
    assert!(horizon_edge < 0.2161, "{horizon_edge}");
    assert!(0.2161 - horizon_edge <= 1e-8, "{horizon_edge}");

    assert_eq!(result.failures.len(), 1, "{:?}", result.failures);
    let f = &result.failures[0];
    assert_eq!(f.high, 1.0);
    assert_eq!(f.evaluated_above, None);
    let last_success = f.evaluated_below.expect("a success below the failure");
    assert!(last_success <= 0.8659 && f.low > 0.8659, "{f:?}");
    let gap = f.low - last_success;
    assert!(gap <= 1e-3 && gap > 1e-8, "gap {gap}");
    assert_eq!(f.unknown(&r.vary), [last_success, 1.0]);

    // The allowed range stops at the last success: nothing in the gap is claimed.
    let allowed = &result.levels[0].allowed;
    assert_eq!(allowed.len(), 1, "{allowed:?}");
    assert_eq!(allowed[0][1], last_success);
    assert_eq!(result.end_kind(last_success), Some("solver-failure edge"));
    assert_eq!(result.end_kind(allowed[0][0]), Some("horizon edge"));
    let said = |text: &str| result.assumptions.iter().any(|a| a.contains(text));
    assert!(
        said("solver-failure edges (a failed evaluation next to one that did not fail) located by bisection only to 1e-3"),
        "{:#?}",
        result.assumptions
    );
    assert!(
        said("category changes (no horizon, no shadow) located"),
        "{:#?}",
        result.assumptions
    );

    // Asked to locate failure edges as finely as physical ones, the search does as before.
    let mut fine = r.clone();
    fine.settings.failure_edge_relative_tolerance = 1e-8;
    let mut again = Synthetic {
        model: horizon_then_failure,
        asked: Vec::new(),
    };
    let result = bound_on(&fine, &mut again).unwrap();
    let f = &result.failures[0];
    assert!(f.low - f.evaluated_below.unwrap() <= 1e-8, "{f:?}");
}

/// Linear size with a failure in a narrow window around x = 0.3731, where a bound end of the
/// interval [4.9, 5.07462] lies and no grid node does (they are 0.05 apart).
fn failure_at_a_bound_end(x: f64) -> Aggregate {
    if (0.372..=0.374).contains(&x) {
        Aggregate::Failed("synthetic solver failure".into())
    } else {
        linear_size(x)
    }
}

/// A failure met while a bound end is refined is reported as the whole cell, as before, and
/// ends the refinement: nothing more is evaluated there (once the cell's fate is known, the
/// root search used to go on asking for values, the not-a-number among them).
#[test]
fn a_failure_inside_a_bound_end_refinement_stops_it() {
    let r = synthetic_request(&[(0.68, 4.9, 5.07462)]);
    let mut eval = Synthetic {
        model: failure_at_a_bound_end,
        asked: Vec::new(),
    };
    let result = bound_on(&r, &mut eval).unwrap();
    assert_eq!(result.failures.len(), 1, "{:?}", result.failures);
    let f = &result.failures[0];
    // The cell between the grid nodes 7/20 and 8/20.
    assert_eq!([f.low, f.high], [7.0 / 20.0, 8.0 / 20.0]);
    assert_eq!(
        [f.evaluated_below, f.evaluated_above],
        [Some(f.low), Some(f.high)]
    );
    assert!(f.error.contains("synthetic solver failure"), "{f:?}");
    assert_eq!(result.levels[0].allowed, vec![[0.0, 7.0 / 20.0]]);
    let refinement: Vec<f64> = eval
        .asked
        .iter()
        .filter(|(stage, _)| stage == "bound ends")
        .map(|&(_, x)| x)
        .collect();
    assert!(refinement.iter().all(|x| x.is_finite()), "{refinement:?}");
    // Only the first step, which meets the failure: the bracket's two ends are grid nodes
    // whose margins are known, and they are not evaluated again.
    assert_eq!(refinement.len(), 1, "{refinement:?}");
}

/// A metric file whose shadow solver fails beyond k = 0.7317 (the horizon 2m moves past the
/// photon-sphere scan, whose radius is finite); below that a Schwarzschild metric of mass
/// m = 1 + 0.05 k, b_c = 3√3 m (Synge 1966). The failure edge is reported with its gap.
#[test]
fn cli_bound_reports_the_gap_before_a_solver_failure() {
    let metric = write_measurement(
        "failing-mass.toml",
        r#"name = "failing-mass"
title = "Schwarzschild with a mass that jumps past k = 0.7317 (test only)"
reference = "Schwarzschild 1916, Sitzungsber. Preuss. Akad. Wiss., 189"
symmetry = "spherical"
helpers = ["d = k - 0.7317", "m = 1 + 0.05*k + 1e12*(d + abs(d))/2", "f = 1 - 2*m/r"]
horizon = "2*m"

[[parameters]]
name = "k"
default = 0.0
meaning = "test parameter"

[line_element]
A = "f"
B = "1/f"
C = "r^2"
"#,
    );
    let measurement = write_measurement(
        "failing-mass-measurement.toml",
        "[size.shadow_radius]\nintervals = [ { confidence = 0.95, low = 4.9, high = 5.5 } ]\n",
    );
    let args = |json: bool| {
        let mut a = vec![
            "bound",
            "--metric-file",
            metric.to_str().unwrap(),
            "--vary",
            "k=-1:1",
            "--measurement",
            measurement.to_str().unwrap(),
            "--no-checkpoint",
        ];
        if json {
            a.push("--json");
        }
        umbral(&a)
    };
    let (code, out, err) = args(true);
    assert_eq!(code, 0, "{err}");
    let v: Value = serde_json::from_str(&out).unwrap();
    let failures = v["failures"].as_array().unwrap();
    let first = &failures[0];
    let last_success = first["evaluated_below"].as_f64().unwrap();
    let low = first["low"].as_f64().unwrap();
    assert!(last_success < 0.7317 && low > 0.7317, "{first}");
    // 1e-3 of the range's width 2.
    assert!(
        low - last_success <= 2e-3 && low - last_success > 1e-8,
        "{first}"
    );
    assert_eq!(
        v["levels"][0]["allowed"][0][1].as_f64(),
        Some(last_success),
        "{out}"
    );
    for f in failures {
        assert_eq!(f["evaluated_below"].as_f64(), Some(last_success), "{f}");
        assert!(f["evaluated_above"].is_null(), "{f}");
    }
    // Fewer than 10 evaluations beyond the starting grid: 6 bisection steps (1e-8 took 24).
    assert!(v["predicted"].as_array().unwrap().len() <= 21 + 10, "{out}");

    let (code, text, err) = args(false);
    assert_eq!(code, 0, "{err}");
    let gap = format!(
        "not evaluated (neither allowed nor excluded): between the last success at {last_success:.9} and the first failure at {low:.9}"
    );
    assert_eq!(text.matches(&gap).count(), 1, "{text}");
    assert!(text.contains("(solver-failure edge)]"), "{text}");
    assert!(
        text.contains("solver-failure edges (a failed evaluation next to one that did not fail) located by bisection only to 2e-3 (1e-3 of the range of k)"),
        "{text}"
    );
}

/// A one-dimensional nuisance model, size 5 + (n − 0.4)², whose solver fails on
/// (0.39, 0.41) around the minimum; every point asked for is recorded.
struct FailingNearMinimum {
    asked: std::sync::Mutex<Vec<f64>>,
}

impl PointModel for FailingNearMinimum {
    fn value(&self, n: &[f64]) -> PointValue {
        self.asked.lock().unwrap().push(n[0]);
        if n[0] > 0.39 && n[0] < 0.41 {
            PointValue::Failed("synthetic solver failure".into())
        } else {
            PointValue::Valid {
                size: 5.0 + (n[0] - 0.4).powi(2),
                circularity: 0.0,
                horizon: true,
            }
        }
    }

    fn passes_horizon_test(&self, _: &[f64]) -> bool {
        true
    }
}

/// A failure met by the Brent minimisation of a nuisance extreme ends that refinement (the
/// best grid value is kept and the cut reported, as before) without further solves.
#[test]
fn a_failure_inside_a_nuisance_minimisation_stops_it() {
    let model = FailingNearMinimum {
        asked: std::sync::Mutex::new(Vec::new()),
    };
    let search = NuisanceSearch {
        grid: 7,
        relative_tolerance: 1e-10,
    };
    let Aggregate::Ok(e) = extremes(&model, &[(0.0, 1.0)], None, &search) else {
        panic!("expected extremes");
    };
    // The grid minimum at n = 1/3 (the grid is 0, 1/6, ..., 1), the maximum at n = 1.
    assert_eq!(e.size_min, 5.0 + (1.0f64 / 3.0 - 0.4).powi(2));
    assert_eq!(e.size_max, 5.0 + 0.36);
    assert_eq!(
        e.refinement_cut.as_deref(),
        Some("synthetic solver failure")
    );
    let asked = model.asked.into_inner().unwrap();
    // The 7 grid points, then the minimisation's steps up to its first failure, which is
    // its last solve.
    let last = asked.last().copied().unwrap();
    assert!(last > 0.39 && last < 0.41, "{asked:?}");
    assert_eq!(
        asked.iter().filter(|&&n| n > 0.39 && n < 0.41).count(),
        1,
        "{asked:?}"
    );
}

/// Records each "bound ends" batch and halts at batch `halt_at` (counted from 1) if set;
/// `inner` answers.
struct EndBatches {
    inner: Synthetic,
    batches: Vec<Vec<f64>>,
    halt_at: Option<usize>,
}

impl Evaluate for EndBatches {
    fn evaluate(
        &mut self,
        stage: &str,
        xs: &[f64],
        full: bool,
        node: &(dyn Fn(f64) -> Node + Sync),
    ) -> Result<Vec<Node>, Halted> {
        if stage == "bound ends" {
            self.batches.push(xs.to_vec());
            if Some(self.batches.len()) == self.halt_at {
                return Err(Halted);
            }
        }
        self.inner.evaluate(stage, xs, full, node)
    }

    fn finish(&mut self) -> Result<(), Halted> {
        Ok(())
    }
}

/// A prediction of size 5 + 0.2 x + 0.05 x² (no nuisance spread: Brent's method needs a few
/// rounds for its ends).
fn curved_size(x: f64) -> Aggregate {
    let Aggregate::Ok(mut e) = linear_size(x) else {
        unreachable!()
    };
    e.size_min += 0.05 * x * x;
    e.size_max = e.size_min;
    Aggregate::Ok(e)
}

/// The four bound ends of two levels (the size 5 + 0.2 x + 0.05 x² crosses 5.021, 5.051,
/// 5.149 and 5.179 between grid values) are searched in lockstep: every round of Brent steps is one batch
/// with a value of each search still running, and the ends are the exact crossings. A halt
/// in the second round stops the bound there, with nothing more asked.
#[test]
fn bound_ends_are_searched_in_lockstep_and_a_halt_stops_them() {
    let r = synthetic_request(&[(0.68, 5.051, 5.149), (0.95, 5.021, 5.179)]);
    let curved = || Synthetic {
        model: curved_size,
        asked: Vec::new(),
    };
    let mut eval = EndBatches {
        inner: curved(),
        batches: Vec::new(),
        halt_at: None,
    };
    let result = bound_on(&r, &mut eval).unwrap();
    assert_eq!(eval.batches[0].len(), 4, "{:?}", eval.batches);
    assert!(eval.batches.len() >= 3, "{:?}", eval.batches);
    assert!(eval.batches.iter().all(|b| !b.is_empty() && b.len() <= 4));
    let allowed: Vec<Vec<[f64; 2]>> = result.levels.iter().map(|l| l.allowed.clone()).collect();
    // Exact crossings x = (√(0.04 + 0.2 (s − 5)) − 0.2)/0.1, within the parameter tolerance
    // (1e-8).
    let x = |s: f64| ((0.04 + 0.2 * (s - 5.0)).sqrt() - 0.2) / 0.1;
    let expected = [[x(5.051), x(5.149)], [x(5.021), x(5.179)]];
    for (got, want) in allowed.iter().zip(expected) {
        assert_eq!(got.len(), 1, "{allowed:?}");
        assert!(
            (got[0][0] - want[0]).abs() < 1e-8 && (got[0][1] - want[1]).abs() < 1e-8,
            "{allowed:?}"
        );
    }

    let mut halting = EndBatches {
        inner: curved(),
        batches: Vec::new(),
        halt_at: Some(2),
    };
    let stopped = bound_on(&r, &mut halting);
    assert!(matches!(stopped, Err(BoundError::Halted(_))), "{stopped:?}");
    assert_eq!(halting.batches.len(), 2, "{:?}", halting.batches);
}
