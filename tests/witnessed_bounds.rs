//! Values decided by witnesses: a bound evaluates a value's nuisance box only as far as
//! deciding it needs (`bounds::nuisance::decide`), and decides every value it evaluates as the
//! full search of its extremes would (`BoundSettings::full_extremes`).

use proptest::prelude::*;
use std::sync::atomic::{AtomicUsize, Ordering};
use umbral::bounds::nuisance::{
    decide, extremes, Aggregate, Effort, NuisanceSearch, PointModel, PointValue,
};
use umbral::bounds::{
    bound, BoundRequest, BoundSettings, Inclination, ParameterRange, SizeMeasure,
};
use umbral::measurement::{DerivedRadii, RadiusInterval};

const SEARCH: NuisanceSearch = NuisanceSearch {
    grid: 7,
    relative_tolerance: 1e-10,
};

/// A synthetic size over a 1-D or 2-D box, counting its solves; `fails` marks points whose
/// solve fails.
struct Synthetic<S: Fn(&[f64]) -> f64 + Sync, F: Fn(&[f64]) -> bool + Sync> {
    size: S,
    fails: F,
    horizonless: bool,
    solves: AtomicUsize,
}

impl<S: Fn(&[f64]) -> f64 + Sync, F: Fn(&[f64]) -> bool + Sync> Synthetic<S, F> {
    fn new(size: S, fails: F) -> Self {
        Synthetic {
            size,
            fails,
            horizonless: false,
            solves: AtomicUsize::new(0),
        }
    }

    fn solves(&self) -> usize {
        self.solves.swap(0, Ordering::Relaxed)
    }
}

impl<S: Fn(&[f64]) -> f64 + Sync, F: Fn(&[f64]) -> bool + Sync> PointModel for Synthetic<S, F> {
    fn value(&self, n: &[f64]) -> PointValue {
        self.solves.fetch_add(1, Ordering::Relaxed);
        if (self.fails)(n) {
            return PointValue::Failed("synthetic solver failure".into());
        }
        PointValue::Valid {
            size: (self.size)(n),
            circularity: 0.0,
            horizon: true,
        }
    }

    fn passes_horizon_test(&self, _: &[f64]) -> bool {
        true
    }

    fn counts_horizonless(&self) -> bool {
        self.horizonless
    }
}

/// [`decide`] over the box [0, 1] with the default grid.
fn on_unit_box(
    model: &dyn PointModel,
    levels: &[[f64; 2]],
    circularity_limit: Option<f64>,
    effort: Effort,
) -> Aggregate {
    decide(
        model,
        &[(0.0, 1.0)],
        levels,
        circularity_limit,
        &SEARCH,
        effort,
    )
}

fn never(_: &[f64]) -> bool {
    false
}

/// Whether every margin of the extremes passes at every level: the definition of allowed
/// (`bounds` module docs).
fn allowed_at_every_level(a: &Aggregate, levels: &[[f64; 2]]) -> bool {
    match a {
        Aggregate::Ok(e) => levels
            .iter()
            .all(|[lo, hi]| e.size_min <= *hi && e.size_max >= *lo),
        _ => false,
    }
}

#[test]
fn a_value_the_corners_show_allowed_costs_two_solves() {
    // Falling from 5.3 to 4.9 across the box: [5.0, 5.1] lies between the corners' sizes.
    let model = Synthetic::new(|n: &[f64]| 5.3 - 0.4 * n[0], never);
    let a = on_unit_box(&model, &[[5.0, 5.1]], None, Effort::Decide);
    let Aggregate::Ok(e) = &a else {
        panic!("{a:?}")
    };
    assert!(e.witnessed);
    assert_eq!((e.size_min, e.size_max), (5.3 - 0.4, 5.3));
    assert_eq!(model.solves(), 2);
    // The full search: the 7 grid points (the extremes are at the edges, accepted there).
    let full = on_unit_box(&model, &[[5.0, 5.1]], None, Effort::FullSearch);
    assert_eq!(model.solves(), 7);
    assert_eq!(full, extremes(&model, &[(0.0, 1.0)], None, &SEARCH));
    let Aggregate::Ok(f) = full else { panic!() };
    assert!(!f.witnessed);
}

#[test]
fn the_grid_is_walked_from_coarse_to_fine_until_it_decides() {
    // A bump: 5.0 at both corners, 5.36 at the middle. [5.2, 5.4] needs the middle point.
    let model = Synthetic::new(|n: &[f64]| 5.36 - 1.44 * (n[0] - 0.5).powi(2), never);
    let a = on_unit_box(&model, &[[5.2, 5.4]], None, Effort::Decide);
    assert!(matches!(&a, Aggregate::Ok(e) if e.witnessed), "{a:?}");
    assert_eq!(model.solves(), 3, "the corners, then the middle");
    // [5.355, 5.4]: the grid's largest (the middle, 5.36) already reaches into it.
    let b = on_unit_box(&model, &[[5.355, 5.4]], None, Effort::Decide);
    assert!(matches!(&b, Aggregate::Ok(e) if e.witnessed), "{b:?}");
    assert_eq!(model.solves(), 3);
    // [5.37, 5.4] is above every size: excluded, after the whole grid and the search, whose
    // maximum is the true one.
    let c = on_unit_box(&model, &[[5.37, 5.4]], None, Effort::Decide);
    let Aggregate::Ok(e) = &c else {
        panic!("{c:?}")
    };
    assert!(!e.witnessed);
    assert!((e.size_max - 5.36).abs() < 1e-9, "{e:?}");
    assert!(model.solves() > 7);
    assert!(!allowed_at_every_level(&c, &[[5.37, 5.4]]));
}

#[test]
fn a_failure_beside_a_witness_does_not_matter_and_is_kept() {
    // The solver fails at the upper corner; the lower corner and the middle show [5.0, 5.2].
    let model = Synthetic::new(|n: &[f64]| 5.3 - 0.4 * n[0], |n: &[f64]| n[0] == 1.0);
    let box_ = [(0.0, 1.0)];
    let levels = [[5.0, 5.2]];
    let a = decide(&model, &box_, &levels, None, &SEARCH, Effort::Decide);
    let Aggregate::Ok(e) = &a else {
        panic!("{a:?}")
    };
    assert!(e.witnessed);
    assert_eq!(
        e.failure_passed_over.as_deref(),
        Some("synthetic solver failure")
    );
    assert_eq!((e.size_min, e.size_max), (5.1, 5.3));
    assert_eq!(model.solves(), 3);
    // The full search alone fails on the failed grid point; with the full effort the value
    // is decided alike (the failure is still passed over).
    assert!(matches!(
        extremes(&model, &box_, None, &SEARCH),
        Aggregate::Failed(_)
    ));
    let full = decide(&model, &box_, &levels, None, &SEARCH, Effort::FullSearch);
    assert!(matches!(&full, Aggregate::Ok(e) if e.witnessed && e.failure_passed_over.is_some()));
    // A level the evaluated points do not decide: the failure is fatal, as before.
    let b = decide(&model, &box_, &[[5.5, 5.6]], None, &SEARCH, Effort::Decide);
    assert!(matches!(b, Aggregate::Failed(_)), "{b:?}");
}

#[test]
fn a_model_that_counts_horizonless_points_starts_from_the_whole_grid() {
    let mut model = Synthetic::new(|n: &[f64]| 5.3 - 0.4 * n[0], never);
    model.horizonless = true;
    let a = on_unit_box(&model, &[[5.0, 5.1]], None, Effort::Decide);
    assert!(matches!(&a, Aggregate::Ok(e) if e.witnessed));
    assert_eq!(model.solves(), 7);
}

#[test]
fn a_circularity_limit_is_part_of_the_decision() {
    // ΔC = 0.1 n: under the limit 0.05 only on the lower half of the box.
    struct Oblate;
    impl PointModel for Oblate {
        fn value(&self, n: &[f64]) -> PointValue {
            PointValue::Valid {
                size: 5.3 - 0.4 * n[0],
                circularity: 0.1 * n[0],
                horizon: true,
            }
        }
        fn passes_horizon_test(&self, _: &[f64]) -> bool {
            true
        }
        fn counts_horizonless(&self) -> bool {
            false
        }
    }
    // Sizes 5.1 to 5.3 count (n ≤ 0.5): [4.9, 5.0] is reached only by points over the limit.
    let a = on_unit_box(&Oblate, &[[4.9, 5.0]], Some(0.05), Effort::Decide);
    let Aggregate::Ok(e) = &a else {
        panic!("{a:?}")
    };
    assert!(!e.witnessed, "{e:?}");
    assert!(e.size_min > 5.0);
    let b = on_unit_box(&Oblate, &[[5.0, 5.2]], Some(0.05), Effort::Decide);
    assert!(matches!(&b, Aggregate::Ok(e) if e.witnessed), "{b:?}");
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(200))]

    /// Witnessed only where the full search allows too; otherwise the full search itself.
    #[test]
    fn a_witness_never_allows_what_the_full_search_excludes(
        c0 in 4.5f64..5.5, c1 in -0.5f64..0.5, c2 in -0.5f64..0.5, k in 0.5f64..6.0,
        d in -0.3f64..0.3, lo in 4.5f64..5.5, width in 0.01f64..0.4, two_d in any::<bool>(),
    ) {
        let size = move |n: &[f64]| {
            let y = n.get(1).copied().unwrap_or(0.0);
            c0 + c1 * n[0] + c2 * (k * n[0]).sin() + d * y * n[0]
        };
        let model = Synthetic::new(size, never);
        let box_: Vec<(f64, f64)> = if two_d {
            vec![(0.0, 1.0), (-1.0, 1.0)]
        } else {
            vec![(0.0, 1.0)]
        };
        let levels = [[lo, lo + width], [lo - width, lo + 2.0 * width]];
        let decided = decide(&model, &box_, &levels, None, &SEARCH, Effort::Decide);
        let full = extremes(&model, &box_, None, &SEARCH);
        match &decided {
            Aggregate::Ok(e) if e.witnessed => {
                prop_assert!(allowed_at_every_level(&full, &levels), "{decided:?} {full:?}");
                let Aggregate::Ok(f) = &full else { unreachable!() };
                prop_assert!(f.size_min <= e.size_min && f.size_max >= e.size_max);
            }
            _ => prop_assert_eq!(&decided, &full),
        }
        prop_assert_eq!(
            decide(&model, &box_, &levels, None, &SEARCH, Effort::FullSearch),
            full
        );
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(200))]

    /// With solver failures at random grid points: a value the witnesses decide is decided
    /// alike by the full effort, and a value fails with one effort exactly when it fails with
    /// the other.
    #[test]
    fn failures_beside_witnesses_are_passed_over_alike(
        c0 in 4.5f64..5.5, c1 in -0.5f64..0.5, lo in 4.5f64..5.5, width in 0.01f64..0.4,
        failing in proptest::collection::vec(any::<bool>(), 7),
    ) {
        let grid: Vec<f64> = (0..7).map(|i| i as f64 / 6.0).collect();
        let fails = move |n: &[f64]| {
            grid.iter().zip(&failing).any(|(g, f)| *f && (g - n[0]).abs() < 1e-12)
        };
        let model = Synthetic::new(move |n: &[f64]| c0 + c1 * n[0], fails);
        let levels = [[lo, lo + width]];
        let decided = decide(&model, &[(0.0, 1.0)], &levels, None, &SEARCH, Effort::Decide);
        let full = decide(&model, &[(0.0, 1.0)], &levels, None, &SEARCH, Effort::FullSearch);
        prop_assert_eq!(
            matches!(decided, Aggregate::Failed(_)),
            matches!(full, Aggregate::Failed(_)),
            "{:?} {:?}", decided, full
        );
        if let Aggregate::Ok(e) = &decided {
            if e.witnessed {
                prop_assert!(allowed_at_every_level(&full, &levels), "{:?} {:?}", decided, full);
            }
        }
    }
}

fn kerr_newman_request(full_extremes: bool) -> BoundRequest {
    // Invented intervals on the mean radius.
    let interval = |confidence, low, high| RadiusInterval {
        confidence,
        low,
        high,
    };
    BoundRequest {
        metric: umbral::metrics::MetricSource::builtin("kerr-newman").unwrap(),
        vary: ParameterRange {
            name: "q".into(),
            low: 0.0,
            high: 0.9,
        },
        fixed: vec![],
        inclination: Inclination::Range {
            low_degrees: 20.0,
            high_degrees: 80.0,
        },
        nuisance: vec![ParameterRange {
            name: "a".into(),
            low: 0.0,
            high: 0.99,
        }],
        size_measure: SizeMeasure::Mean,
        radii: DerivedRadii {
            intervals: vec![interval(0.68, 5.0, 5.15), interval(0.95, 4.95, 5.2)],
            ring: None,
            assumptions: vec![],
        },
        circularity_max: None,
        settings: BoundSettings {
            full_extremes,
            ..BoundSettings::default()
        },
    }
}

/// Kerr–Newman with spin and an inclination range as nuisances (separable curves, Carter
/// 1968), whose size falls monotonically with the charge (no narrow excluded band for the
/// full search alone to find): the same allowed sets, decided by witnesses or searched in
/// full, and every witnessed value allowed at every level by the full search's extremes.
#[test]
fn witnessed_and_fully_searched_kerr_newman_bounds_allow_the_same_values() {
    let decided = bound(&kerr_newman_request(false)).unwrap();
    let full = bound(&kerr_newman_request(true)).unwrap();
    for (d, f) in decided.levels.iter().zip(&full.levels) {
        assert_eq!(d.allowed.len(), f.allowed.len(), "{d:?} {f:?}");
        for (a, b) in d.allowed.iter().zip(&f.allowed) {
            // The ends are refined by the same full evaluations, from other bracket values.
            assert!(
                (a[0] - b[0]).abs() < 1e-6 && (a[1] - b[1]).abs() < 1e-6,
                "{a:?} {b:?}"
            );
        }
    }
    let witnessed: Vec<_> = decided.predicted.iter().filter(|p| p.witnessed).collect();
    assert!(witnessed.len() > 10, "{:?}", decided.predicted);
    assert!(full
        .predicted
        .iter()
        .all(|p| !p.witnessed && p.size_min.is_some()));
    for p in witnessed {
        assert!(p.size_min.is_none() && p.size_max.is_none());
        let [lo, hi] = p.witnessed_sizes.unwrap();
        // The full search at that value: its extremes reach at least as far.
        let mut one = kerr_newman_request(true);
        one.vary = ParameterRange {
            name: "q".into(),
            low: p.value,
            high: p.value + 1e-9,
        };
        one.settings.initial_grid = 3;
        let at = bound(&one).unwrap();
        let q = &at.predicted[0];
        assert!(q.size_min.unwrap() <= lo + 1e-12 && q.size_max.unwrap() >= hi - 1e-12);
        for level in &decided.radii_levels() {
            assert!(q.size_min.unwrap() <= level[1] && q.size_max.unwrap() >= level[0]);
        }
    }
    assert!(decided
        .assumptions
        .iter()
        .any(|a| a.contains("were decided allowed at every level by the nuisance points")));
    assert!(!full
        .assumptions
        .iter()
        .any(|a| a.contains("were decided allowed")));
}

trait Levels {
    fn radii_levels(&self) -> Vec<[f64; 2]>;
}

impl Levels for umbral::bounds::BoundResult {
    fn radii_levels(&self) -> Vec<[f64; 2]> {
        self.levels.iter().map(|l| l.radius_interval).collect()
    }
}

fn umbral_json(args: &[&str]) -> serde_json::Value {
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_umbral"))
        .args(args)
        .output()
        .expect("run umbral");
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).expect("JSON")
}

/// The command line: witnessed values by default (no band, their sizes apart), every value
/// searched with --full-extremes and with --plot (whose band needs it), the same allowed sets.
#[test]
fn the_command_line_searches_every_value_for_a_figure() {
    let dir = Scratch::new("cli");
    let figure = dir.0.join("band.svg");
    let measurement = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/examples/measurement_radius.toml"
    );
    let args = [
        "bound",
        "--metric",
        "kerr-newman",
        "--vary",
        "q=0:1",
        "--nuisance",
        "a=0:0.9",
        "--inclination",
        "30",
        "--measurement",
        measurement,
        "--no-checkpoint",
        "--quiet",
        "--json",
    ];
    let decided = umbral_json(&args);
    let full = umbral_json(&[&args[..], &["--full-extremes"]].concat());
    let plotted = umbral_json(&[&args[..], &["--plot", figure.to_str().unwrap()]].concat());
    assert!(figure.exists());
    let witnessed = |v: &serde_json::Value| {
        v["predicted"]
            .as_array()
            .unwrap()
            .iter()
            .filter(|p| p["witnessed"] == true)
            .count()
    };
    assert!(witnessed(&decided) > 5, "{}", decided["predicted"]);
    assert_eq!(witnessed(&full), 0);
    assert_eq!(plotted, full);
    for p in decided["predicted"].as_array().unwrap() {
        if p["witnessed"] == true {
            assert!(p["size_min"].is_null() && p["size_max"].is_null(), "{p}");
            let sizes = p["witnessed_sizes"].as_array().unwrap();
            assert!(sizes[0].as_f64().unwrap() <= sizes[1].as_f64().unwrap());
        } else {
            assert!(p.get("witnessed_sizes").is_none(), "{p}");
        }
    }
    // The same allowed ranges; the ends' root searches start from other bracket values.
    let ends = |v: &serde_json::Value| -> Vec<f64> {
        v["levels"]
            .as_array()
            .unwrap()
            .iter()
            .flat_map(|l| l["allowed"].as_array().unwrap().clone())
            .flat_map(|r| r.as_array().unwrap().clone())
            .map(|x| x.as_f64().unwrap())
            .collect()
    };
    let (a, b) = (ends(&decided), ends(&full));
    assert_eq!(a.len(), b.len(), "{a:?} {b:?}");
    assert!(
        a.iter().zip(&b).all(|(x, y)| (x - y).abs() < 1e-7),
        "{a:?} {b:?}"
    );
}

/// A folder removed when dropped, also when an assertion fails.
struct Scratch(std::path::PathBuf);

impl Scratch {
    fn new(name: &str) -> Scratch {
        let dir =
            std::env::temp_dir().join(format!("umbral-witnessed-{name}-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(&dir).unwrap();
        Scratch(dir)
    }
}

impl Drop for Scratch {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.0);
    }
}

fn umbral_in(dir: &std::path::Path, args: &[&str]) -> std::process::Output {
    std::process::Command::new(env!("CARGO_BIN_EXE_umbral"))
        .current_dir(dir)
        .args(args)
        .output()
        .expect("run umbral")
}

const JP_INTERVALS: &str = "label = \"invented intervals\"\n[size.shadow_radius]\nintervals = [ { confidence = 0.68, low = 5.0, high = 5.15 }, { confidence = 0.95, low = 4.95, high = 5.2 } ]\n";

/// The ray-traced Johannsen–Psaltis bound of docs/performance.md, decided by witnesses: the
/// values ε₃ ≥ 0.875, where the full search meets curves the tracer refuses beside the
/// horizon's edge (not formed by photon orbits), are allowed from a = 0 alone. The checkpoint
/// keeps the bound end's full evaluations apart; a rerun recalls everything and prints the
/// same; other intervals are refused.
#[test]
fn a_traced_bound_decides_from_witnesses_and_keeps_full_evaluations_apart() {
    let dir = Scratch::new("traced");
    std::fs::write(dir.0.join("m.toml"), JP_INTERVALS).unwrap();
    let args = [
        "bound",
        "--metric",
        "johannsen-psaltis",
        "--vary",
        "eps3=-1:1",
        "--nuisance",
        "a=0:0.95",
        "--inclination",
        "60",
        "--measurement",
        "m.toml",
        "--checkpoint",
        "c.jsonl",
        "--quiet",
        "--json",
    ];
    let first = umbral_in(&dir.0, &args);
    assert_eq!(
        first.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&first.stderr)
    );
    let v: serde_json::Value = serde_json::from_slice(&first.stdout).unwrap();
    assert!(
        v["failures"].as_array().unwrap().is_empty(),
        "{}",
        v["failures"]
    );
    let assumptions = v["assumptions"].to_string();
    assert!(assumptions.contains("were decided allowed at every level by the nuisance points"));
    assert!(
        !assumptions.contains("  "),
        "no runs of spaces: {assumptions}"
    );
    // 0.68: only ε₃ near −1 is excluded (the size exceeds 5.15 at every spin).
    let allowed = &v["levels"][0]["allowed"];
    assert_eq!(allowed.as_array().unwrap().len(), 1, "{allowed}");
    assert!(
        (allowed[0][0].as_f64().unwrap() + 0.987).abs() < 1e-3,
        "{allowed}"
    );
    assert_eq!(allowed[0][1].as_f64().unwrap(), 1.0);
    let kept = std::fs::read_to_string(dir.0.join("c.jsonl")).unwrap();
    assert!(kept.lines().any(|l| l.contains("\"full\":true")), "{kept}");
    let again = umbral_in(&dir.0, &args);
    assert_eq!(again.status.code(), Some(0));
    assert_eq!(again.stdout, first.stdout);
    let other: Vec<&str> = args.iter().copied().chain(["--levels", "0.68"]).collect();
    let refused = umbral_in(&dir.0, &other);
    assert_eq!(refused.status.code(), Some(2));
    let err = String::from_utf8_lossy(&refused.stderr);
    assert!(
        err.contains("different arguments") && err.contains("intervals"),
        "{err}"
    );
}

/// The same bound searched in full over ε₃ ∈ [0.9, 0.95] (3 starting values): the tracer
/// refuses a curve at some grid spin of each value, and a = 0 decides it allowed. The
/// failure is passed over, listed with the value and in the assumptions; before witnesses
/// these values were solver failures, neither allowed nor excluded.
#[test]
fn a_traced_bound_searched_in_full_passes_over_failures_beside_witnesses() {
    let radii = DerivedRadii {
        intervals: vec![
            RadiusInterval {
                confidence: 0.68,
                low: 5.0,
                high: 5.15,
            },
            RadiusInterval {
                confidence: 0.95,
                low: 4.95,
                high: 5.2,
            },
        ],
        ring: None,
        assumptions: vec![],
    };
    let request = BoundRequest {
        metric: umbral::metrics::MetricSource::builtin("johannsen-psaltis").unwrap(),
        vary: ParameterRange {
            name: "eps3".into(),
            low: 0.9,
            high: 0.95,
        },
        fixed: vec![],
        inclination: Inclination::Fixed { degrees: 60.0 },
        nuisance: vec![ParameterRange {
            name: "a".into(),
            low: 0.0,
            high: 0.95,
        }],
        size_measure: SizeMeasure::Mean,
        radii,
        circularity_max: None,
        settings: BoundSettings {
            initial_grid: 3,
            full_extremes: true,
            ..BoundSettings::default()
        },
    };
    let result = bound(&request).unwrap();
    assert!(result.failures.is_empty(), "{:?}", result.failures);
    for level in &result.levels {
        assert_eq!(level.allowed, vec![[0.9, 0.95]]);
    }
    let passed: Vec<_> = result
        .predicted
        .iter()
        .filter(|p| p.witnessed && p.failure_passed_over.is_some())
        .collect();
    assert!(!passed.is_empty(), "{:?}", result.predicted);
    for p in &passed {
        let m = p.failure_passed_over.as_deref().unwrap();
        assert!(m.contains("not formed by photon orbits"), "{m}");
        assert!(p.size_min.is_none() && p.witnessed_sizes.is_some());
    }
    assert!(result
        .assumptions
        .iter()
        .any(|a| a.contains("which other points decided allowed at every level")));
    assert!(!result.assumptions.iter().any(|a| a.contains("  ")));
}
