//! `umbral verify` and the `umbral::verify` API: the project's own published-value checks
//! (tests/checks/*.toml, each expectation with its source in the file), the example CI
//! checks file, and the behaviour of failing, broken and updated files.

use std::path::{Path, PathBuf};
use std::process::Command;
use umbral::verify::{assert_checks_pass, run_checks_file, update_checks_file, VerifyError};

fn repo(path: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join(path)
}

/// A fresh scratch directory for one test.
fn scratch(name: &str) -> PathBuf {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join(format!("verify-{name}"));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
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

/// Every published value in tests/checks/*.toml (sources beside each expectation there:
/// Synge 1966, Bardeen 1973, Bardeen, Press & Teukolsky 1972, Cardoso et al. 2009,
/// Johnson et al. 2020, ...).
#[test]
fn published_values_hold() {
    let mut files: Vec<PathBuf> = std::fs::read_dir(repo("tests/checks"))
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "toml"))
        .collect();
    files.sort();
    assert!(
        files.len() >= 3,
        "expected the checks files, found {files:?}"
    );
    for f in &files {
        assert_checks_pass(f);
    }
}

#[test]
fn example_ci_checks_file_passes() {
    assert_checks_pass(repo("examples/ci-checks.toml"));
}

const GOOD_CASE: &str = r#"
# a comment that --update must keep
[[case]]
name = "schw"
metric = "schwarzschild"
inclination = 30.0
points = 16

[[case.expect]]
quantity = "mean_radius"
value = 5.2   # deliberately off: 3√3 = 5.19615...
abs = 1e-6
source = "deliberately wrong, for the test"

[[case.expect]]
quantity = "photon_sphere_radius"
value = 3.0   # right (Synge 1966)
rel = 1e-12
source = "Synge 1966, MNRAS 131, 463"

[[case.expect]]
quantity = "circularity_deviation"
max = 0.1
source = "common practice, no source"
"#;

#[test]
fn wrong_expectation_is_a_fail_row_and_exit_1() {
    let dir = scratch("wrong");
    let path = dir.join("wrong.toml");
    std::fs::write(&path, GOOD_CASE).unwrap();
    let report = run_checks_file(&path).unwrap();
    assert_eq!(report.rows.len(), 3);
    assert!(!report.rows[0].passed);
    assert!(report.rows[0].reason.is_none());
    assert!((report.rows[0].got.unwrap() - 27f64.sqrt()).abs() < 1e-12);
    assert!(report.rows[1].passed && report.rows[2].passed);

    let (code, out, _) = umbral(&["verify", path.to_str().unwrap()]);
    assert_eq!(code, 1, "{out}");
    let fail_line = out.lines().find(|l| l.contains("mean_radius")).unwrap();
    assert!(fail_line.contains("FAIL"), "{fail_line}");
    assert!(
        out.contains("summary: 3 expectations, 2 pass, 1 fail"),
        "{out}"
    );

    let (code, out, _) = umbral(&["verify", "--json", path.to_str().unwrap()]);
    assert_eq!(code, 1);
    let json: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(json["failed"], 1);
    assert_eq!(json["rows"][0]["quantity"], "mean_radius");
    assert_eq!(json["rows"][0]["passed"], false);
}

#[test]
fn passing_files_exit_0_together() {
    let (code, out, err) = umbral(&[
        "verify",
        repo("tests/checks/schwarzschild.toml").to_str().unwrap(),
        repo("tests/checks/reissner_nordstrom.toml")
            .to_str()
            .unwrap(),
    ]);
    assert_eq!(code, 0, "{out}{err}");
    assert!(out.contains("rn-extremal") && out.contains("schwarzschild-distant"));
    assert!(!out.contains("FAIL"));
}

#[test]
fn failed_computation_is_a_fail_row_not_a_crash() {
    let dir = scratch("computation");
    let path = dir.join("c.toml");
    // The spherical solver does not apply to Kerr with a != 0; Kerr's separable solver has
    // no Lyapunov exponent; JNW with nu = 0.4 has no photon sphere, hence no shadow
    // (Virbhadra 1997: a photon sphere only for nu > 1/2).
    std::fs::write(
        &path,
        r#"
[[case]]
name = "kerr-spherical"
metric = "kerr"
parameters = { a = 0.5 }
inclination = 45.0
solver = "spherical"
points = 16
[[case.expect]]
quantity = "mean_radius"
value = 5.0
rel = 0.1
source = "test"
[[case.expect]]
quantity = "horizon_radius"
value = 1.8660254037844386
rel = 1e-12
source = "Kerr 1963: r_+ = 1 + sqrt(1 - a^2)"

[[case]]
name = "kerr-lyapunov"
metric = "kerr"
parameters = { a = 0.5 }
inclination = 45.0
points = 16
[[case.expect]]
quantity = "lyapunov"
value = 0.2
rel = 0.5
source = "test"

[[case]]
name = "jnw-naked"
metric = "jnw"
parameters = { nu = 0.4 }
inclination = 45.0
points = 16
[[case.expect]]
quantity = "mean_radius"
min = 0.0
source = "test"
"#,
    )
    .unwrap();
    let report = run_checks_file(&path).unwrap();
    let rows = &report.rows;
    assert_eq!(rows.len(), 4);
    assert!(!rows[0].passed);
    assert!(
        rows[0].reason.as_deref().unwrap().contains("solver"),
        "{rows:?}"
    );
    // The horizon does not depend on the solver, so it is still checked.
    assert!(rows[1].passed, "{rows:?}");
    assert!(!rows[2].passed);
    assert!(rows[2].reason.as_deref().unwrap().contains("Lyapunov"));
    assert!(!rows[3].passed);
    assert!(
        rows[3].reason.as_deref().unwrap().contains("no shadow"),
        "{rows:?}"
    );
    let (code, out, _) = umbral(&["verify", path.to_str().unwrap()]);
    assert_eq!(code, 1);
    assert!(out.contains("FAIL (no shadow"), "{out}");
}

fn bad_file_message(tag: &str, text: &str) -> String {
    // One directory per calling test (`tag`); calls within a test run one after another.
    let path = scratch(&format!("bad-{tag}")).join("bad.toml");
    std::fs::write(&path, text).unwrap();
    let err = run_checks_file(&path).expect_err("a bad file");
    let VerifyError::Invalid { .. } = &err else {
        panic!("{err:?}")
    };
    let (code, out, stderr) = umbral(&["verify", path.to_str().unwrap()]);
    assert_eq!(code, 2, "{out}{stderr}");
    assert!(out.is_empty(), "no table for a bad file: {out}");
    assert_eq!(stderr.trim().lines().count(), 1, "{stderr}");
    assert!(stderr.contains("bad.toml"), "{stderr}");
    stderr
}

#[test]
fn broken_files_exit_2_with_one_line() {
    let unknown_key = GOOD_CASE.replace("points = 16", "points = 16\ncolour = \"red\"");
    let e = bad_file_message("broken", &unknown_key);
    assert!(e.contains("colour") && e.contains("line 8"), "{e}");

    let e = bad_file_message(
        "broken",
        &GOOD_CASE.replace("\"photon_sphere_radius\"", "\"radius\""),
    );
    assert!(e.contains("unknown quantity 'radius'"), "{e}");

    let e = bad_file_message("broken", &GOOD_CASE.replace("abs = 1e-6\n", ""));
    assert!(e.contains("needs a tolerance"), "{e}");

    let e = bad_file_message(
        "broken",
        &GOOD_CASE.replace("source = \"Synge 1966, MNRAS 131, 463\"", ""),
    );
    assert!(e.contains("source"), "{e}");

    let e = bad_file_message(
        "broken",
        &GOOD_CASE.replace("\"schwarzschild\"", "\"no-such-metric\""),
    );
    assert!(e.contains("no-such-metric"), "{e}");

    let e = bad_file_message(
        "broken",
        &GOOD_CASE.replace("inclination = 30.0", "inclination = 200.0"),
    );
    assert!(e.contains("inclination"), "{e}");

    let e = bad_file_message(
        "broken",
        &GOOD_CASE.replace(
            "metric = \"schwarzschild\"",
            "metric_file = \"no-such-metric.toml\"",
        ),
    );
    assert!(
        e.contains("metric file") && e.contains("no-such-metric.toml"),
        "{e}"
    );

    let e = bad_file_message(
        "broken",
        &GOOD_CASE.replace("max = 0.1\n", "max = 0.1\nconfidence = 0.68\n"),
    );
    assert!(e.contains("confidence belongs to [[bound]]"), "{e}");

    let e = bad_file_message("broken", "[[case]\nname = ");
    assert!(e.contains("line 1"), "{e}");

    let e = bad_file_message("broken", "description = \"nothing\"\n");
    assert!(e.contains("no cases"), "{e}");

    let (code, _, stderr) = umbral(&["verify", "/nonexistent/checks.toml"]);
    assert_eq!(code, 2);
    assert!(stderr.contains("cannot read"), "{stderr}");
}

/// GOOD_CASE with its deliberately-off row marked as a baseline from umbral itself, the only
/// kind of value `--update` rewrites on its own (docs/regression-checks.md).
fn good_case_with_umbral_baseline() -> String {
    let text = GOOD_CASE.replace(
        "source = \"deliberately wrong, for the test\"",
        "source = \"umbral: a baseline, deliberately off for the test\"",
    );
    assert_ne!(text, GOOD_CASE);
    text
}

#[test]
fn update_writes_a_copy_keeping_comments() {
    let dir = scratch("update");
    let path = dir.join("pinned.toml");
    let original = good_case_with_umbral_baseline();
    std::fs::write(&path, &original).unwrap();
    let (code, out, err) = umbral(&["verify", "--update", path.to_str().unwrap()]);
    // The run against the old baseline had a failure, so the exit code says so.
    assert_eq!(code, 1, "{out}{err}");
    assert_eq!(std::fs::read_to_string(&path).unwrap(), original);
    let copy = dir.join("pinned.updated.toml");
    let text = std::fs::read_to_string(&copy).unwrap();
    assert!(
        text.contains("# a comment that --update must keep"),
        "{text}"
    );
    assert!(text.contains("# deliberately off"), "{text}");
    assert!(text.contains("max = 0.1"), "{text}");
    assert!(!text.contains("value = 5.2 "), "{text}");
    // The Synge 1966 value has an outside source: written as it was.
    assert!(
        text.contains("value = 3.0   # right (Synge 1966)"),
        "{text}"
    );
    // The updated copy is a passing baseline.
    assert_checks_pass(&copy);
    let (code, _, _) = umbral(&["verify", copy.to_str().unwrap()]);
    assert_eq!(code, 0);

    // --output names the copy explicitly.
    let chosen = dir.join("chosen.toml");
    let outcome = update_checks_file(&path, Some(&chosen)).unwrap();
    assert_eq!(outcome.updated, 1);
    assert_eq!(outcome.outside_unchanged, 1);
    assert!(outcome.outside_drifted.is_empty() && outcome.forced.is_empty());
    assert_eq!(outcome.kept.len(), 1);
    assert_eq!(std::fs::read_to_string(&chosen).unwrap(), text);
}

/// An update that rewrote nothing and reported exactly these drifted rows (in order).
fn assert_nothing_updated(outcome: &umbral::verify::UpdateOutcome, drifted: &[&str]) {
    assert_eq!(outcome.updated, 0);
    let got = &outcome.outside_drifted;
    assert_eq!(got.len(), drifted.len(), "{got:?}");
    for (line, want) in got.iter().zip(drifted) {
        assert!(line.contains(want), "{line} lacks {want}");
    }
}

/// Issue 10 item 10: `verify --update` rewrote independently sourced values with umbral's
/// own numbers while keeping `source = "..."`, so the provenance became false. Now a value
/// with an outside source that drifted is reported and left as written; only naming its row
/// replaces it, and then its source says umbral replaced it.
#[test]
fn verify_update_keeps_outside_sources() {
    let dir = scratch("update-outside");
    let path = dir.join("outside.toml");
    // Both values are off and both name an outside source.
    let original = GOOD_CASE.replace("value = 3.0   # right", "value = 3.1   # drifted");
    std::fs::write(&path, &original).unwrap();
    let outcome = update_checks_file(&path, None).unwrap();
    assert_nothing_updated(
        &outcome,
        &["schw: mean_radius", "schw: photon_sphere_radius"],
    );
    assert!(outcome.outside_drifted[1].contains("Synge 1966"));
    let text = std::fs::read_to_string(&outcome.output).unwrap();
    assert_eq!(
        text, original,
        "nothing with an outside source is rewritten"
    );

    let (code, out, err) = umbral(&["verify", "--update", path.to_str().unwrap()]);
    assert_eq!(code, 1, "{out}{err}");
    assert!(
        out.contains("drifted, left as written")
            && out.contains("schw: photon_sphere_radius (written 3.1, computed 3"),
        "{out}"
    );

    // Named, the row is replaced and its source now says where the number came from.
    let (code, out, err) = umbral(&[
        "verify",
        "--update",
        "--force-row",
        "schw:photon_sphere_radius",
        path.to_str().unwrap(),
    ]);
    assert_eq!(code, 1, "{out}{err}");
    let text = std::fs::read_to_string(dir.join("outside.updated.toml")).unwrap();
    assert!(!text.contains("value = 3.1 "), "{text}");
    let parsed: toml::Value = toml::from_str(&text).unwrap();
    let source = parsed["case"][0]["expect"][1]["source"].as_str().unwrap();
    assert_eq!(
        source,
        "umbral: forced update, replacing a value from \"Synge 1966, MNRAS 131, 463\""
    );
    // The other drifted row was not named: still as written.
    assert!(text.contains("value = 5.2 "), "{text}");
    assert!(
        out.contains("replaced although its source was not umbral"),
        "{out}"
    );

    // A name that is no row of the file is refused before anything runs.
    let (code, _, err) = umbral(&[
        "verify",
        "--update",
        "--force-row",
        "schw:no_such_quantity",
        path.to_str().unwrap(),
    ]);
    assert_eq!(code, 2);
    assert!(err.contains("no such row"), "{err}");
}

#[test]
fn assertion_helper_panics_with_the_table() {
    let dir = scratch("assert");
    let path = dir.join("wrong.toml");
    std::fs::write(&path, GOOD_CASE).unwrap();
    let panic = std::panic::catch_unwind(|| assert_checks_pass(&path)).unwrap_err();
    let message = panic.downcast_ref::<String>().cloned().unwrap_or_default();
    assert!(message.contains("1 of 3 expectations"), "{message}");
    assert!(
        message.contains("mean_radius") && message.contains("FAIL"),
        "{message}"
    );
}

#[test]
fn bound_cases_update_and_reject_unknown_levels() {
    let dir = scratch("bound");
    let original = std::fs::read_to_string(repo("tests/checks/bounds.toml")).unwrap();
    let drifted = original.replace("value = 0.5\n", "value = 0.45\n");
    assert_ne!(drifted, original);
    let path = dir.join("bounds.toml");
    std::fs::write(&path, &drifted).unwrap();
    let report = run_checks_file(&path).unwrap();
    assert_eq!(report.failed(), 1, "{}", report.render_table());
    // Every value there has an outside source (closed forms): the drift is reported and
    // nothing is rewritten unless the row is named (issue 10 item 10).
    let outcome = update_checks_file(&path, None).unwrap();
    assert_nothing_updated(&outcome, &["upper_end @ 0.68"]);
    let force =
        [umbral::verify::RowSelector::parse("rn-charge-from-radius:upper_end@0.68").unwrap()];
    let outcome = umbral::verify::update_checks_file_forcing(&path, None, &force).unwrap();
    assert_eq!(outcome.updated, 1);
    assert_eq!(outcome.forced.len(), 1);
    assert_checks_pass(&outcome.output);
    let text = std::fs::read_to_string(&outcome.output).unwrap();
    assert!(
        text.contains("# Bound ends pinned by closed forms."),
        "{text}"
    );

    let e = bad_file_message(
        "bound",
        &original.replace(
            "confidence = 0.68\nvalue = 0.5",
            "confidence = 0.95\nvalue = 0.5",
        ),
    );
    assert!(e.contains("confidence 0.95 is not a level"), "{e}");
}

/// Issue 10 item 13: a `[[bound]]`'s `initial_grid` (and `points`) have upper limits like the
/// command line's, so a checks file cannot ask for 10⁸ grid nodes.
#[test]
fn checks_file_initial_grid_has_an_upper_limit() {
    let original = std::fs::read_to_string(repo("tests/checks/bounds.toml")).unwrap();
    let huge = original.replace("points = 16\n", "points = 16\ninitial_grid = 100000000\n");
    assert_ne!(huge, original);
    let e = bad_file_message("grid", &huge);
    assert!(e.contains("initial_grid from 3 to 1000"), "{e}");
    let e = bad_file_message(
        "grid",
        &original.replace("points = 16\n", "points = 2000000\n"),
    );
    assert!(e.contains("points from 8 to 1048576"), "{e}");
    let ok = original.replace("points = 16\n", "points = 16\ninitial_grid = 1000\n");
    let path = scratch("grid-ok").join("ok.toml");
    std::fs::write(&path, ok).unwrap();
    assert!(umbral::verify::ChecksFile::load(&path).is_ok());
}

/// `[[bound]]` accepts `metric_file` wherever it accepts `metric` (one metric source for cases,
/// bounds, scans and the command line): the shipped Reissner–Nordström file gives the bound of
/// the built-in metric (its twin to 1e-12, tests/metric_files.rs), and the file's errors are
/// reported like a case's.
#[test]
fn bound_cases_accept_metric_files() {
    let got = |file: &str| -> Vec<(String, Option<f64>)> {
        let report = run_checks_file(repo(file)).unwrap();
        assert!(report.all_passed(), "{}", report.render_table());
        report
            .rows
            .iter()
            .map(|r| (r.quantity.clone(), r.got))
            .collect()
    };
    let builtin = got("tests/checks/bounds.toml");
    let from_file = got("tests/checks/bounds_from_metric_files.toml");
    assert_eq!(builtin.len(), 3);
    for ((q, b), (q_file, f)) in builtin.iter().zip(&from_file) {
        assert_eq!(q, q_file);
        let (b, f) = (b.unwrap(), f.unwrap());
        assert!((b - f).abs() <= 1e-9, "{q}: built-in {b}, file {f}");
    }

    let original = std::fs::read_to_string(repo("tests/checks/bounds.toml")).unwrap();
    let metric = "metric = \"reissner-nordstrom\"";
    let file = format!(
        "metric_file = \"{}\"",
        repo("metrics/reissner-nordstrom.toml").display()
    );
    // The same file with the metric named by an absolute path works from anywhere.
    let path = scratch("bound-file").join("ok.toml");
    std::fs::write(&path, original.replace(metric, &file)).unwrap();
    assert_checks_pass(&path);

    let both = original.replace(metric, &format!("{metric}\n{file}"));
    let e = bad_file_message("bound-file", &both);
    assert!(e.contains("not both"), "{e}");
    let neither = original.replace(metric, "");
    let e = bad_file_message("bound-file", &neither);
    assert!(
        e.contains("missing metric") && e.contains("metric_file"),
        "{e}"
    );
    let missing = original.replace(metric, "metric_file = \"no-such-metric.toml\"");
    let e = bad_file_message("bound-file", &missing);
    assert!(
        e.contains("metric file") && e.contains("no-such-metric.toml"),
        "{e}"
    );
    let unknown = original
        .replace(metric, &file)
        .replace("name = \"q\"", "name = \"charge\"");
    let e = bad_file_message("bound-file", &unknown);
    assert!(
        e.contains("metric file") && e.contains("no parameter 'charge'"),
        "{e}"
    );
}

/// The table of quantities in docs/regression-checks.md names every quantity a case can pin
/// (every observable and every solver quantity) and nothing else, so a new observable cannot
/// be missing from the format's documentation.
#[test]
fn the_documented_quantities_are_the_known_ones() {
    let text = std::fs::read_to_string(repo("docs/regression-checks.md")).unwrap();
    let table = text
        .split("### Quantities of a `[[case]]`")
        .nth(1)
        .expect("the quantities section")
        .split("\n###")
        .next()
        .unwrap();
    let mut documented: Vec<&str> = table
        .lines()
        .filter(|l| l.starts_with("| `"))
        .filter_map(|l| l.split('|').nth(1))
        .flat_map(|cell| cell.split('`').skip(1).step_by(2))
        .collect();
    documented.sort_unstable();
    let mut known: Vec<&str> = umbral::verify::QUANTITIES.clone();
    known.sort_unstable();
    assert_eq!(documented, known);
}

/// A bound case of a spherically symmetric metric may omit the inclination (its shadow is a
/// circle of radius b_c at any inclination, Synge 1966): the Reissner–Nordström case passes
/// with the same ends without it; a rotating metric without one is refused, naming the keys.
#[test]
fn spherical_bound_cases_may_omit_the_inclination() {
    let original = std::fs::read_to_string(repo("tests/checks/bounds.toml")).unwrap();
    assert!(original.contains("inclination = 17.0\n"));
    let dir = scratch("bound-no-inclination");
    let path = dir.join("spherical.toml");
    std::fs::write(&path, original.replace("inclination = 17.0\n", "")).unwrap();
    let ends = |file: &Path| -> Vec<Option<f64>> {
        let report = run_checks_file(file).unwrap();
        assert!(report.all_passed(), "{}", report.render_table());
        report.rows.iter().map(|r| r.got).collect()
    };
    assert_eq!(ends(&path), ends(&repo("tests/checks/bounds.toml")));

    let rotating = dir.join("rotating.toml");
    let kerr_newman = original.replace("inclination = 17.0\n", "").replace(
        "metric = \"reissner-nordstrom\"",
        "metric = \"kerr-newman\"",
    );
    std::fs::write(&rotating, kerr_newman).unwrap();
    let e = run_checks_file(&rotating).unwrap_err().to_string();
    assert!(e.contains("give inclination"), "{e}");
}

/// An observer that asks the run to stop once `after` items of the run named `run` are done.
struct StopAfter<'a> {
    run: &'a str,
    after: usize,
    stop: &'a std::sync::atomic::AtomicBool,
    lines: Vec<String>,
}

impl umbral::run::Observe for StopAfter<'_> {
    fn item_done(&mut self, status: &umbral::run::Status) {
        self.lines.push(format!("{}: {}", status.name, status.done));
        if status.name.starts_with(self.run) && status.done >= self.after {
            self.stop.store(true, std::sync::atomic::Ordering::SeqCst);
        }
    }
}

/// A checks file runs on the run executor: observers see every `[[case]]` and every bound's
/// nuisance evaluations, the rows are those of a plain run, and a stop request ends the run
/// with the rows of every finished case (and of no unfinished one).
#[test]
fn checks_files_run_on_the_executor_and_keep_finished_cases_when_stopped() {
    use std::sync::atomic::AtomicBool;
    use umbral::run::Controls;
    use umbral::verify::ChecksFile;
    let checks = ChecksFile::load(repo("tests/checks/kerr.toml")).unwrap();
    let plain = checks.run();
    assert!(plain.all_passed() && plain.rows.len() >= 4);
    let never = AtomicBool::new(false);
    let mut watch = StopAfter {
        run: "nothing",
        after: 0,
        stop: &never,
        lines: Vec::new(),
    };
    let controls = Controls {
        observers: vec![&mut watch],
        stop: Some(&never),
    };
    let observed = checks.run_with(controls).unwrap();
    assert_eq!(observed, plain, "the executor changes no row");
    assert_eq!(
        watch.lines.len(),
        checks.cases.len(),
        "one item per case: {:?}",
        watch.lines
    );

    // Stopped after the first case (on one thread, so that no other case is in progress):
    // that case's rows, equal to the plain run's.
    let one = rayon::ThreadPoolBuilder::new()
        .num_threads(1)
        .build()
        .unwrap();
    let stop = AtomicBool::new(false);
    let mut first = StopAfter {
        run: "checks in",
        after: 1,
        stop: &stop,
        lines: Vec::new(),
    };
    let controls = Controls {
        observers: vec![&mut first],
        stop: Some(&stop),
    };
    let stopped = one.install(|| checks.run_with(controls)).unwrap_err();
    assert_eq!(stopped.cases_done, 1);
    assert_eq!(stopped.cases, checks.cases.len());
    let finished: Vec<&str> = {
        let mut names: Vec<&str> = stopped
            .report
            .rows
            .iter()
            .map(|r| r.case.as_str())
            .collect();
        names.dedup();
        names
    };
    assert_eq!(finished.len(), stopped.cases_done);
    for row in &stopped.report.rows {
        assert!(
            plain.rows.contains(row),
            "a kept row is a row of the plain run: {row:?}"
        );
    }

    // A bound case: its nuisance evaluations are the executor's items; stopped in the
    // middle, the bound gives no row (a partial bound is not a result).
    let bounds = ChecksFile::load(repo("tests/checks/bounds.toml")).unwrap();
    let stop = AtomicBool::new(false);
    let mut mid = StopAfter {
        run: "bound on",
        after: 3,
        stop: &stop,
        lines: Vec::new(),
    };
    let controls = Controls {
        observers: vec![&mut mid],
        stop: Some(&stop),
    };
    let stopped = one.install(|| bounds.run_with(controls)).unwrap_err();
    assert_eq!(stopped.cases_done, 0);
    assert!(stopped.report.rows.is_empty());
    assert!(mid.lines.iter().all(|l| l.starts_with("bound on ")));
    let ok = bounds.run();
    assert!(ok.all_passed(), "{}", ok.render_table());
}

/// `umbral verify` shows its progress off a terminal like every long run (a line per finished
/// case or nuisance evaluation at `--progress-every 0`), and nothing with `--quiet`; the table
/// is the same either way.
#[test]
fn verify_prints_progress_lines_off_a_terminal() {
    let bounds = repo("tests/checks/bounds.toml");
    let kerr = repo("tests/checks/kerr.toml");
    let files = [bounds.to_str().unwrap(), kerr.to_str().unwrap()];
    let (code, quiet_out, quiet_err) = umbral(&[&["verify", "--quiet"][..], &files].concat());
    assert_eq!(code, 0, "{quiet_err}");
    assert!(quiet_err.is_empty(), "--quiet: {quiet_err}");
    let (code, out, err) = umbral(&[&["verify", "--progress-every", "0"][..], &files].concat());
    assert_eq!(code, 0, "{err}");
    assert_eq!(out, quiet_out, "progress changed the table");
    assert!(
        err.lines().any(|l| l.starts_with("bound on q: "))
            && err
                .lines()
                .any(|l| l.contains("kerr.toml: 4/4 cases (100%)")),
        "progress of bounds and cases: {err}"
    );
    assert!(
        err.lines().all(|l| l.ends_with(" elapsed")),
        "only progress lines: {err}"
    );
}
