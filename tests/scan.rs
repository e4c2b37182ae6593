//! `umbral scan`: streamed, resumable grid scans.

use std::path::PathBuf;
use std::process::Command;
use umbral::metrics::MetricSource;
use umbral::scan::{run_scan, GridAxis, ScanRequest};

fn temp(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("umbral-scan-test-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let p = dir.join(name);
    let _ = std::fs::remove_file(&p);
    p
}

fn request() -> ScanRequest {
    ScanRequest {
        metric: MetricSource::builtin("kerr-newman").unwrap(),
        axes: vec![
            GridAxis::new("a", 0.0, 0.9, 4),
            GridAxis::new("q", 0.0, 0.8, 3),
        ],
        fixed: vec![],
        inclination_deg: Some(60.0),
        settings: Default::default(),
        require_horizon: false,
    }
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

/// Kerr-Newman at a = 0.9, q = 0.8 has a² + q² > 1: no horizon (Newman et al. 1965); the
/// Schwarzschild corner has mean radius 3√3 (Synge 1966).
#[test]
fn scan_points_are_classified_and_measured() {
    let path = temp("classified.jsonl");
    let s = run_scan(&request(), &path, &|_, _| {}).unwrap();
    assert_eq!((s.computed, s.reused, s.points.len()), (12, 0, 12));
    let last = s.points.last().unwrap();
    assert_eq!(last.index, vec![3, 2]);
    assert_eq!(last.status, "no_horizon");
    let first = &s.points[0];
    assert!((first.observable("mean_radius").unwrap() - 27f64.sqrt()).abs() < 1e-9);
    // One header plus one line per point.
    assert_eq!(std::fs::read_to_string(&path).unwrap().lines().count(), 13);
}

#[test]
fn interrupted_scan_resumes_to_the_same_file() {
    let path = temp("resume.jsonl");
    run_scan(&request(), &path, &|_, _| {}).unwrap();
    let complete = std::fs::read_to_string(&path).unwrap();
    let text = complete.clone();
    let lines: Vec<&str> = text.lines().collect();
    // Keep the header, the first 5 points and half of the 6th line, in shuffled order as
    // parallel appends would leave them.
    let mut kept: Vec<&str> = lines[1..6].to_vec();
    kept.reverse();
    let mut truncated = format!("{}\n{}\n", lines[0], kept.join("\n"));
    truncated.push_str(&lines[6][..lines[6].len() / 2]);
    std::fs::write(&path, truncated).unwrap();
    let s = run_scan(&request(), &path, &|_, _| {}).unwrap();
    assert_eq!((s.reused, s.computed), (5, 7));
    assert!(std::fs::read_to_string(&path).unwrap() == complete);
    // A finished file is reused whole.
    let again = run_scan(&request(), &path, &|_, _| {}).unwrap();
    assert_eq!((again.reused, again.computed), (12, 0));
    assert!(std::fs::read_to_string(&path).unwrap() == complete);
    // A header cut mid-write starts afresh.
    std::fs::write(&path, &lines[0][..10]).unwrap();
    let fresh = run_scan(&request(), &path, &|_, _| {}).unwrap();
    assert_eq!(fresh.computed, 12);
    assert!(std::fs::read_to_string(&path).unwrap() == complete);
}

#[test]
fn a_file_from_other_arguments_is_refused() {
    let path = temp("mismatch.jsonl");
    run_scan(&request(), &path, &|_, _| {}).unwrap();
    let before = std::fs::read(&path).unwrap();
    let mut other = request();
    other.inclination_deg = Some(30.0);
    let e = run_scan(&other, &path, &|_, _| {}).unwrap_err();
    assert!(e.to_string().contains("different arguments"), "{e}");
    assert_eq!(
        std::fs::read(&path).unwrap(),
        before,
        "the file must be left alone"
    );
    std::fs::write(&path, "not a scan\n").unwrap();
    assert!(run_scan(&request(), &path, &|_, _| {}).is_err());
}

#[test]
fn cli_scan_with_exclusion_map() {
    let out = temp("cli.jsonl");
    let svg = temp("map.svg");
    let m = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/examples/measurement_radius.toml"
    );
    let (code, stdout, err) = umbral(&[
        "scan",
        "--metric",
        "kerr-newman",
        "--grid",
        "a=0:0.9:6",
        "--grid",
        "q=0:0.9:6",
        "--inclination",
        "60",
        "--out",
        out.to_str().unwrap(),
        "--measurement",
        m,
        "--plot",
        svg.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{err}");
    assert!(stdout.contains("36 points"), "{stdout}");
    assert!(err.is_empty(), "no progress bar off a terminal: {err}");
    let map = std::fs::read_to_string(&svg).unwrap();
    assert!(
        map.contains("allowed at 68 %") && map.contains("<polygon"),
        "{map}"
    );
}

#[test]
fn cli_scan_bad_input_is_one_line_exit_2() {
    let out = temp("bad.jsonl");
    let o = out.to_str().unwrap();
    let cases: Vec<(Vec<&str>, &str)> = vec![
        (vec!["--grid", "a=0:1"], "PARAM=LO:HI:N"),
        (vec!["--grid", "a=1:0:5"], "LO < HI"),
        (vec!["--grid", "a=nan:1:5"], "finite"),
        (vec!["--grid", "spin=0:0.5:5"], "no parameter 'spin'"),
        (vec!["--grid", "a=0:0.5:x"], "whole number"),
    ];
    for (extra, needle) in cases {
        let mut args = vec![
            "scan",
            "--metric",
            "kerr",
            "--inclination",
            "30",
            "--out",
            o,
        ];
        args.extend(extra);
        let (code, _, err) = umbral(&args);
        assert_eq!(code, 2, "{args:?}");
        assert_eq!(err.trim().lines().count(), 1, "{err}");
        assert!(err.contains(needle), "'{err}' lacks '{needle}'");
    }
    let (code, _, err) = umbral(&[
        "scan",
        "--metric",
        "kerr",
        "--grid",
        "a=0:0.5:3",
        "--inclination",
        "30",
        "--out",
        "/no/such/dir/out.jsonl",
    ]);
    assert_eq!(code, 2);
    assert!(err.contains("cannot write"), "{err}");
}

// ---------------------------------------------------------------------------------------------
// Resumed scans trust nothing on disk: every kept line is checked, and the header carries a
// hash of the metric.

/// A fresh empty folder.
fn temp_dir(name: &str) -> PathBuf {
    let dir = temp(name);
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

/// A finished scan of `request()` in a fresh file, as its lines (header first).
fn finished(name: &str) -> (PathBuf, Vec<String>) {
    let path = temp(name);
    run_scan(&request(), &path, &|_, _| {}).unwrap();
    let lines = std::fs::read_to_string(&path)
        .unwrap()
        .lines()
        .map(str::to_string)
        .collect();
    (path, lines)
}

/// Write `lines` (each with its newline) and resume: the error, which must leave the file
/// as it was.
fn resume_refused(path: &PathBuf, lines: &[String]) -> String {
    let text: String = lines.iter().map(|l| format!("{l}\n")).collect();
    std::fs::write(path, &text).unwrap();
    let e = run_scan(&request(), path, &|_, _| {}).unwrap_err();
    assert_eq!(
        std::fs::read_to_string(path).unwrap(),
        text,
        "a refused file is left alone"
    );
    e.to_string()
}

/// Replace the first match of `from` in `line` by `to` (which must occur).
fn edit(line: &str, from: &str, to: &str) -> String {
    assert!(line.contains(from), "'{from}' not in {line}");
    line.replacen(from, to, 1)
}

#[test]
fn edited_metric_file_is_refused_on_resume() {
    let dir = temp_dir("metric-file-dir");
    let file = dir.join("tidal.toml");
    let text = r#"
name = "tidal"
title = "Braneworld tidal charge"
reference = "Dadhich, Maartens, Papadopoulos & Rezania 2000, Phys. Lett. B 487, 1"
symmetry = "spherical"
helpers = ["f = 1 - 2/r + q2/r^2"]

[[parameters]]
name = "q2"
default = 0.0
domain = "(-inf, 1]"
meaning = "tidal charge"

[line_element]
A = "f"
B = "1/f"
C = "r^2"
"#;
    std::fs::write(&file, text).unwrap();
    let scan_of = |file: &std::path::Path| ScanRequest {
        metric: umbral::metrics::MetricSource::File(std::sync::Arc::new(
            umbral::metric_file::load_metric_file(file).unwrap(),
        )),
        axes: vec![GridAxis::new("q2", -0.5, 0.5, 3)],
        fixed: vec![],
        inclination_deg: Some(30.0),
        settings: Default::default(),
        require_horizon: false,
    };
    let out = temp("metric-file.jsonl");
    run_scan(&scan_of(&file), &out, &|_, _| {}).unwrap();
    let before = std::fs::read(&out).unwrap();
    // Same name, same path, other formulas: the stale points must not be kept.
    std::fs::write(&file, text.replace("q2/r^2", "1.1*q2/r^2")).unwrap();
    let e = run_scan(&scan_of(&file), &out, &|_, _| {}).unwrap_err();
    assert!(e.to_string().contains("metric_sha256"), "{e}");
    assert!(e.to_string().contains("metric's content changed"), "{e}");
    assert_eq!(std::fs::read(&out).unwrap(), before);
    // The original file again: resumed in full.
    std::fs::write(&file, text).unwrap();
    let s = run_scan(&scan_of(&file), &out, &|_, _| {}).unwrap();
    assert_eq!((s.reused, s.computed), (3, 0));
}

#[test]
fn builtin_metric_hash_and_version_are_checked() {
    let (path, lines) = finished("hash.jsonl");
    let mut bad = lines.clone();
    let at = bad[0].find("\"metric_sha256\":\"").unwrap() + "\"metric_sha256\":\"".len();
    bad[0].replace_range(at..at + 4, "0000");
    let e = resume_refused(&path, &bad);
    assert!(e.contains("metric_sha256"), "{e}");
    let mut bad = lines.clone();
    bad[0] = edit(
        &bad[0],
        "\"umbral_version\":\"",
        "\"umbral_version\":\"0.0.0-",
    );
    let e = resume_refused(&path, &bad);
    assert!(e.contains("umbral_version"), "{e}");
    // A file from an earlier scan format (3: every curve had exactly the points asked for)
    // is refused, naming the format.
    let mut bad = lines;
    bad[0] = edit(&bad[0], "\"umbral_scan\":4", "\"umbral_scan\":3");
    let e = resume_refused(&path, &bad);
    assert!(e.contains("scan format 3"), "{e}");
}

#[test]
fn hand_edited_mean_radius_is_refused() {
    let (path, lines) = finished("edited-mean.jsonl");
    let mut bad = lines;
    let line = &bad[2];
    let at = line.find("\"mean_radius\":").unwrap() + "\"mean_radius\":".len();
    bad[2] = format!("{}4.954{}", &line[..at], &line[at + 5..]);
    let e = resume_refused(&path, &bad);
    assert!(e.contains("line 3") && e.contains("checksum"), "{e}");
}

#[test]
fn parameters_that_disagree_with_the_index_are_refused() {
    let (path, lines) = finished("params.jsonl");
    // Line 2 is index [0, 0] with a = 0; claim a = 0.3 there.
    let mut bad = lines;
    bad[1] = edit(&bad[1], "\"a\":0.0", "\"a\":0.3");
    let e = resume_refused(&path, &bad);
    assert!(
        e.contains("line 2") && e.contains("parameter 'a'") && e.contains("grid point"),
        "{e}"
    );
}

#[test]
fn parameter_off_by_one_bit_is_refused() {
    let (path, lines) = finished("bits.jsonl");
    // Index [1, 0]: a = 0.3 on the grid 0..0.9 in 4 steps; one unit in the last place off.
    let mut bad = lines;
    let a = 0.9f64 / 3.0;
    let next = f64::from_bits(a.to_bits() + 1);
    assert!(bad[4].contains(&format!("\"a\":{a}")), "{}", bad[4]);
    bad[4] = edit(&bad[4], &format!("\"a\":{a}"), &format!("\"a\":{next}"));
    let e = resume_refused(&path, &bad);
    assert!(e.contains("line 5") && e.contains("parameter 'a'"), "{e}");
}

#[test]
fn unknown_status_banana_is_refused() {
    let (path, lines) = finished("banana.jsonl");
    let mut bad = lines;
    bad[3] = edit(&bad[3], "\"status\":\"shadow\"", "\"status\":\"banana\"");
    let e = resume_refused(&path, &bad);
    assert!(
        e.contains("line 4") && e.contains("unknown status 'banana'"),
        "{e}"
    );
}

#[test]
fn shadow_status_without_observables_is_refused() {
    let (path, lines) = finished("no-observables.jsonl");
    let mut bad = lines;
    let line = &bad[2];
    let start = line.find(",\"observables\":").unwrap();
    let end = line.find(",\"checksum\"").unwrap();
    bad[2] = format!("{}{}", &line[..start], &line[end..]);
    let e = resume_refused(&path, &bad);
    assert!(
        e.contains("line 3") && e.contains("needs a observables"),
        "{e}"
    );
}

#[test]
fn extra_field_is_refused() {
    let (path, lines) = finished("extra.jsonl");
    let mut bad = lines;
    bad[2] = edit(&bad[2], "{\"index\"", "{\"note\":\"hand-made\",\"index\"");
    let e = resume_refused(&path, &bad);
    assert!(
        e.contains("line 3") && e.contains("unknown field `note`"),
        "{e}"
    );
}

#[test]
fn duplicated_index_with_other_numbers_is_refused() {
    let (path, lines) = finished("duplicate.jsonl");
    // Line 3 (index [0, 1]) again with the index of line 2.
    let mut bad = lines;
    let copy = edit(&bad[2], "\"index\":[0,1]", "\"index\":[0,0]");
    bad.insert(2, copy);
    let e = resume_refused(&path, &bad);
    assert!(
        e.contains("line 3") && e.contains("appears a second time"),
        "{e}"
    );
}

// Damaged files name the line and the problem instead of "different arguments".

#[test]
fn malformed_line_in_scan_file_is_named() {
    let (path, lines) = finished("malformed.jsonl");
    let mut bad = lines;
    bad[5] = bad[5][..40].to_string();
    let e = resume_refused(&path, &bad);
    assert!(
        e.contains("line 6") && e.contains("not a scan point"),
        "{e}"
    );
    assert!(!e.contains("different arguments"), "{e}");
}

#[test]
fn blank_line_in_scan_file_is_named() {
    let (path, lines) = finished("blank.jsonl");
    let mut bad = lines;
    bad.insert(4, String::new());
    let e = resume_refused(&path, &bad);
    assert!(e.contains("line 5 is blank"), "{e}");
}

#[test]
fn byte_order_mark_in_scan_file_is_named() {
    let (path, lines) = finished("bom.jsonl");
    let mut bad = lines;
    bad[0].insert(0, '\u{feff}');
    let e = resume_refused(&path, &bad);
    assert!(e.contains("line 1") && e.contains("byte-order mark"), "{e}");
}

#[test]
fn off_grid_index_in_scan_file_is_named() {
    let (path, lines) = finished("off-grid.jsonl");
    let mut bad = lines;
    bad[1] = edit(&bad[1], "\"index\":[0,0]", "\"index\":[9,0]");
    let e = resume_refused(&path, &bad);
    assert!(
        e.contains("line 2") && e.contains("[9, 0] is off the grid") && e.contains("axis 'a'"),
        "{e}"
    );
}

#[test]
fn binary_scan_file_is_named_not_a_write_error() {
    let path = temp("binary.jsonl");
    let bytes: Vec<u8> = (0..=255u8).cycle().take(4096).collect();
    std::fs::write(&path, &bytes).unwrap();
    let e = run_scan(&request(), &path, &|_, _| {})
        .unwrap_err()
        .to_string();
    assert!(e.contains("line 1") && e.contains("binary data"), "{e}");
    assert!(!e.contains("cannot write"), "{e}");
    assert_eq!(std::fs::read(&path).unwrap(), bytes);
    // Bytes that are not UTF-8 at all.
    std::fs::write(&path, b"\xff\xfe scan?\n").unwrap();
    let e = run_scan(&request(), &path, &|_, _| {})
        .unwrap_err()
        .to_string();
    assert!(e.contains("line 1") && e.contains("not UTF-8"), "{e}");
}

// One output, one scan at a time; temporaries are unique and never left behind.

/// Files in `dir` that look like temporaries.
fn temporaries(dir: &std::path::Path) -> Vec<String> {
    std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n.starts_with('.') || n.ends_with(".tmp") || n.ends_with(".partial"))
        .collect()
}

#[test]
fn second_scan_on_the_same_output_is_refused_while_the_first_runs() {
    let dir = temp_dir("lock-dir");
    let path = dir.join("shared.jsonl");
    let (started_tx, started_rx) = std::sync::mpsc::channel::<()>();
    let (release_tx, release_rx) = std::sync::mpsc::channel::<()>();
    let started_tx = std::sync::Mutex::new(Some(started_tx));
    let release_rx = std::sync::Mutex::new(release_rx);
    std::thread::scope(|s| {
        let first = s.spawn(|| {
            run_scan(&request(), &path, &|done, _| {
                // Hold the first scan at its start, holding the output.
                if done == 0 {
                    if let Some(tx) = started_tx.lock().unwrap().take() {
                        tx.send(()).unwrap();
                        release_rx.lock().unwrap().recv().unwrap();
                    }
                }
            })
        });
        started_rx.recv().unwrap();
        let e = run_scan(&request(), &path, &|_, _| {}).unwrap_err();
        assert!(e.to_string().contains("is in use by another scan"), "{e}");
        release_tx.send(()).unwrap();
        let s = first.join().unwrap().unwrap();
        assert_eq!(s.computed, 12);
    });
    // Free again once the first has finished.
    let s = run_scan(&request(), &path, &|_, _| {}).unwrap();
    assert_eq!(s.reused, 12);
    assert!(temporaries(&dir).is_empty(), "{:?}", temporaries(&dir));
}

#[test]
fn concurrent_scans_to_c_txt_and_c_jsonl_do_not_share_a_temporary() {
    let dir = temp_dir("clash-dir");
    let (a, b) = (dir.join("c.txt"), dir.join("c.jsonl"));
    let (ra, rb) = std::thread::scope(|s| {
        let ta = s.spawn(|| run_scan(&request(), &a, &|_, _| {}));
        let tb = s.spawn(|| run_scan(&request(), &b, &|_, _| {}));
        (ta.join().unwrap(), tb.join().unwrap())
    });
    ra.unwrap();
    rb.unwrap();
    assert_eq!(std::fs::read(&a).unwrap(), std::fs::read(&b).unwrap());
    assert!(temporaries(&dir).is_empty(), "{:?}", temporaries(&dir));
}

#[test]
fn scan_into_a_folder_or_device_is_refused_without_leftovers() {
    let dir = temp_dir("folder-out");
    let e = run_scan(&request(), &dir, &|_, _| {}).unwrap_err();
    assert!(e.to_string().contains("a folder"), "{e}");
    assert!(temporaries(&dir).is_empty());
    let e = run_scan(&request(), std::path::Path::new("/dev/full"), &|_, _| {}).unwrap_err();
    assert!(e.to_string().contains("character device"), "{e}");
}

#[test]
fn stop_flag_interrupts_and_the_rerun_resumes_byte_identical() {
    let (_, complete) = finished("stop-reference.jsonl");
    let path = temp("stop.jsonl");
    let stop = std::sync::atomic::AtomicBool::new(false);
    let stop_after_four = |done: usize, _| {
        if done >= 4 {
            stop.store(true, std::sync::atomic::Ordering::Relaxed);
        }
    };
    let mut progress = umbral::run::ProgressFn(&stop_after_four);
    let controls = umbral::run::Controls {
        observers: vec![&mut progress],
        stop: Some(&stop),
    };
    let e = umbral::scan::scan(&request(), &path, controls).unwrap_err();
    let text = e.to_string();
    assert!(
        text.contains("interrupted after") && text.contains("of 12 points"),
        "{e}"
    );
    assert!(text.contains("rerun the same command to resume"), "{e}");
    let umbral::scan::ScanError::Interrupted { done, .. } = e else {
        panic!("{e}")
    };
    let kept = std::fs::read_to_string(&path).unwrap().lines().count();
    assert_eq!(kept, done + 1, "every finished point is on disk");
    let s = run_scan(&request(), &path, &|_, _| {}).unwrap();
    assert_eq!((s.reused, s.computed), (done, 12 - done));
    let lines: Vec<String> = std::fs::read_to_string(&path)
        .unwrap()
        .lines()
        .map(str::to_string)
        .collect();
    assert_eq!(lines, complete);
}

/// JNW (b = 2/ν): photon sphere r = (1 + 2ν)/ν (Virbhadra, Narasimha & Chitre 1998), where
/// 1 − b/r = (2ν − 1)/(2ν + 1) and b_c = √(C/A) = r (1 − b/r)^{(1 − 2ν)/2}; only for ν > 1/2.
fn jnw_shadow(nu: f64) -> f64 {
    let r = (1.0 + 2.0 * nu) / nu;
    r * ((2.0 * nu - 1.0) / (2.0 * nu + 1.0)).powf((1.0 - 2.0 * nu) / 2.0)
}

fn jnw_request(require_horizon: bool) -> ScanRequest {
    ScanRequest {
        metric: MetricSource::builtin("jnw").unwrap(),
        axes: vec![GridAxis::new("nu", 0.3, 1.0, 5)],
        fixed: vec![],
        inclination_deg: Some(30.0),
        settings: Default::default(),
        require_horizon,
    }
}

/// Issue 10, item 7 for scans: a horizonless JNW naked singularity with ν > 1/2 casts a
/// shadow (a photon sphere around the absorbing singularity) and is evaluated, marked
/// horizonless, as `bound` does; ν ≤ 1/2 has no photon sphere (no horizon, no shadow); ν = 1 is
/// Schwarzschild (3√3, Synge 1966). `require_horizon` keeps the old policy.
#[test]
fn scan_jnw_evaluates_horizonless_shadows_unless_a_horizon_is_required() {
    let path = temp("jnw.jsonl");
    let s = run_scan(&jnw_request(false), &path, &|_, _| {}).unwrap();
    let nus: Vec<f64> = (0..5)
        .map(|i| jnw_request(false).axes[0].value(i))
        .collect();
    for (p, &nu) in s.points.iter().zip(&nus) {
        if nu <= 0.5 {
            assert_eq!(p.status, "no_horizon", "nu = {nu}: {p:?}");
            assert!(!p.horizonless);
        } else {
            assert_eq!(p.status, "shadow", "nu = {nu}: {p:?}");
            assert_eq!(p.solver.as_deref(), Some("spherical"));
            assert_eq!(p.horizonless, nu < 1.0, "nu = {nu}");
            let r = p.observable("mean_radius").unwrap();
            assert!((r - jnw_shadow(nu)).abs() < 1e-9, "nu = {nu}: {r}");
        }
    }
    assert_eq!(s.points.iter().filter(|p| p.horizonless).count(), 2);
    let text = std::fs::read_to_string(&path).unwrap();
    assert_eq!(text.matches("\"horizonless\":true").count(), 2, "{text}");
    // Resuming with the other policy mixes nothing: the header records it.
    let refused = run_scan(&jnw_request(true), &path, &|_, _| {}).unwrap_err();
    assert!(refused.to_string().contains("require_horizon"), "{refused}");

    let strict = temp("jnw-strict.jsonl");
    let s = run_scan(&jnw_request(true), &strict, &|_, _| {}).unwrap();
    let statuses: Vec<&str> = s.points.iter().map(|p| p.status.as_str()).collect();
    assert_eq!(
        statuses,
        [
            "no_horizon",
            "no_horizon",
            "no_horizon",
            "no_horizon",
            "shadow"
        ]
    );
    assert!(s.points.iter().all(|p| !p.horizonless));
}

/// The CLI flag and the summary line; a kept line marked horizonless with another status is
/// refused, naming the line.
#[test]
fn scan_cli_require_horizon_and_horizonless_lines_are_checked() {
    let path = temp("jnw-cli.jsonl");
    let p = path.to_str().unwrap();
    let args = [
        "scan",
        "--metric",
        "jnw",
        "--grid",
        "nu=0.3:1:5",
        "--inclination",
        "30",
        "--out",
        p,
    ];
    let (code, out, err) = umbral(&args);
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("shadow 3 (of which horizonless 2"), "{out}");
    assert!(out.contains("no horizon 2"), "{out}");
    let strict = temp("jnw-cli-strict.jsonl");
    let mut with_flag = args.to_vec();
    with_flag[8] = strict.to_str().unwrap();
    with_flag.push("--require-horizon");
    let (code, out, err) = umbral(&with_flag);
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("shadow 1 (of which horizonless 0"), "{out}");
    assert!(out.contains("no horizon 4"), "{out}");
    // A no_horizon line claiming to be horizonless: refused, naming line 2 (ν = 0.3).
    let text = std::fs::read_to_string(&path).unwrap();
    let edited = text.replacen(
        "\"status\":\"no_horizon\"",
        "\"status\":\"no_horizon\",\"horizonless\":true",
        1,
    );
    assert_ne!(edited, text);
    std::fs::write(&path, edited).unwrap();
    let (code, _, err) = umbral(&args);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("line 2") && err.contains("horizonless"),
        "{err}"
    );
}

/// Issue 14: the inclination as a grid axis. Kerr a = 0.9 over four inclinations: every point
/// equals, to the bit, the point of a scan at that one inclination; the file records the axis
/// in its header (no fixed inclination) and each point's inclination, and resumes.
#[test]
fn an_inclination_axis_gives_the_points_of_fixed_inclinations() {
    use umbral::scan::scan_in_memory;
    let axis = GridAxis::new("inclination", 0.0, 90.0, 4);
    let request = ScanRequest {
        metric: MetricSource::builtin("kerr").unwrap(),
        axes: vec![axis.clone()],
        fixed: vec![("a".into(), 0.9)],
        inclination_deg: None,
        settings: Default::default(),
        require_horizon: false,
    };
    let path = temp("inclination-axis.jsonl");
    let s = run_scan(&request, &path, &|_, _| {}).unwrap();
    assert_eq!(s.points.len(), 4);
    for (i, p) in s.points.iter().enumerate() {
        let at = ScanRequest {
            axes: vec![GridAxis::new("a", 0.0, 0.9, 2)],
            fixed: vec![],
            inclination_deg: Some(axis.value(i)),
            ..request.clone()
        };
        let fixed = scan_in_memory(&at, Default::default()).unwrap();
        let q = &fixed.points[1];
        assert_eq!(p.inclination_deg, Some(axis.value(i)));
        assert_eq!(q.inclination_deg, None);
        assert_eq!(
            (p.status.as_str(), &p.parameters),
            (q.status.as_str(), &q.parameters)
        );
        assert_eq!(
            p.observables,
            q.observables,
            "inclination {}",
            axis.value(i)
        );
    }
    // Face-on the curve is a circle (axisymmetry); edge-on a = 0.9 flattens it.
    let circ = |k: usize| s.points[k].observable("circularity_deviation").unwrap();
    assert!(circ(0) < 1e-6 && circ(3) > 1e-3, "{} {}", circ(0), circ(3));
    let text = std::fs::read_to_string(&path).unwrap();
    let header: serde_json::Value = serde_json::from_str(text.lines().next().unwrap()).unwrap();
    assert_eq!(header["inclination_deg"], serde_json::Value::Null);
    assert_eq!(header["axes"][0]["name"], "inclination");
    assert!(header["axes"][0].get("values").is_none(), "{header}");
    let line: serde_json::Value = serde_json::from_str(text.lines().nth(3).unwrap()).unwrap();
    assert_eq!(line["inclination_deg"], 60.0);
    let again = run_scan(&request, &path, &|_, _| {}).unwrap();
    assert_eq!((again.reused, again.computed), (4, 0));
    // An edited inclination is refused, naming the line.
    std::fs::write(
        &path,
        text.replacen("\"inclination_deg\":60.0", "\"inclination_deg\":61.0", 1),
    )
    .unwrap();
    let e = run_scan(&request, &path, &|_, _| {}).unwrap_err();
    assert!(e.to_string().contains("line 4"), "{e}");
}

/// Axis values given one by one: the same points as evenly spaced ones when they are the same
/// numbers, recorded in the header; values that do not increase, or both a fixed and a grid
/// inclination, are refused with one line.
#[test]
fn axis_values_given_one_by_one() {
    use umbral::scan::{scan_in_memory, ScanError};
    let even = GridAxis::new("q", 0.0, 0.9, 4);
    let given = GridAxis::from_values("q", even.all_values());
    let of = |axis: GridAxis| ScanRequest {
        axes: vec![axis],
        ..umbral_scan_request()
    };
    let a = scan_in_memory(&of(even), Default::default()).unwrap();
    let b = scan_in_memory(&of(given.clone()), Default::default()).unwrap();
    assert_eq!(a.points, b.points);
    let path = temp("given-values.jsonl");
    run_scan(&of(given), &path, &|_, _| {}).unwrap();
    let text = std::fs::read_to_string(&path).unwrap();
    let header: serde_json::Value = serde_json::from_str(text.lines().next().unwrap()).unwrap();
    assert_eq!(
        header["axes"][0]["values"],
        serde_json::json!([0.0, 0.3, 0.6, 0.9])
    );
    let refused = |request: ScanRequest| scan_in_memory(&request, Default::default()).unwrap_err();
    let e = refused(of(GridAxis::from_values("q", vec![0.0, 0.5, 0.5])));
    assert_eq!(
        e.to_string(),
        "grid axis q: the values must increase, got 0.5 then 0.5"
    );
    let e = refused(of(GridAxis::from_values("q", vec![0.2])));
    assert_eq!(e.to_string(), "grid axis q: need at least 2 values, got 1");
    let both = ScanRequest {
        axes: vec![GridAxis::new("inclination", 0.0, 90.0, 3)],
        ..umbral_scan_request()
    };
    assert!(matches!(
        refused(both.clone()),
        ScanError::InclinationChoice(_)
    ));
    let e = refused(ScanRequest {
        axes: vec![GridAxis::new("inclination", 0.0, 190.0, 3)],
        inclination_deg: None,
        ..both
    });
    assert_eq!(
        e.to_string(),
        "the inclination must lie between 0 and 180 degrees, got 190"
    );
}

fn umbral_scan_request() -> ScanRequest {
    ScanRequest {
        metric: MetricSource::builtin("reissner-nordstrom").unwrap(),
        axes: vec![],
        fixed: vec![],
        inclination_deg: Some(30.0),
        settings: Default::default(),
        require_horizon: false,
    }
}

/// `umbral scan --grid inclination=LO:HI:N`: without --inclination, and with a second axis.
#[test]
fn cli_scan_takes_an_inclination_axis() {
    let out = temp("cli-inclination.jsonl");
    let o = out.to_str().unwrap();
    let (code, stdout, err) = umbral(&[
        "scan",
        "--metric",
        "kerr",
        "--grid",
        "inclination=0:90:3",
        "--grid",
        "a=0:0.9:2",
        "--out",
        o,
    ]);
    assert_eq!(code, 0, "{err}");
    assert!(stdout.contains("6 points"), "{stdout}");
    let text = std::fs::read_to_string(&out).unwrap();
    let line: serde_json::Value = serde_json::from_str(text.lines().nth(4).unwrap()).unwrap();
    assert_eq!(
        (line["index"].clone(), line["inclination_deg"].clone()),
        (serde_json::json!([1, 1]), serde_json::json!(45.0))
    );
    assert_eq!(line["parameters"]["a"], 0.9);
    for (extra, needle) in [
        (vec!["--inclination", "30"], "not both"),
        (
            vec![],
            "give --inclination DEG, or --grid inclination=LO:HI:N",
        ),
    ] {
        let mut args = vec!["scan", "--metric", "kerr", "--out", o];
        if needle == "not both" {
            args.extend(["--grid", "inclination=0:90:3"]);
        } else {
            args.extend(["--grid", "a=0:0.9:2"]);
        }
        args.extend(extra);
        let (code, _, err) = umbral(&args);
        assert_eq!(code, 2, "{args:?}");
        assert_eq!(err.trim().lines().count(), 1, "{err}");
        assert!(err.contains(needle), "'{err}' lacks '{needle}'");
    }
}

/// An exclusion map's refinement: the traced edge of the horizon's existence lies on the
/// Kerr–Newman extremal curve a² + q² = 1 (horizons at r± = 1 ± √(1 − a² − q²): Newman et al.
/// 1965, J. Math. Phys. 6, 918), and the refined allowed region of a measured mean radius
/// ends where the shadow's mean radius crosses the interval's edge, to well within a fine step.
#[test]
fn refinement_traces_the_horizon_edge_and_the_allowed_edge() {
    use umbral::bounds::SizeMeasure;
    use umbral::run::Controls;
    use umbral::scan::refine::{refine, RefineRequest};
    let request = ScanRequest {
        metric: MetricSource::builtin("kerr-newman").unwrap(),
        axes: vec![
            GridAxis::new("a", 0.0, 0.98, 8),
            GridAxis::new("q", 0.0, 1.0, 8),
        ],
        fixed: vec![],
        inclination_deg: Some(17.0),
        settings: Default::default(),
        require_horizon: false,
    };
    let path = temp("refine.jsonl");
    let summary = run_scan(&request, &path, &|_, _| {}).unwrap();
    let interval = [4.9, 6.0];
    let map = refine(
        &request,
        &summary.points,
        &RefineRequest {
            factor: 4,
            measure: SizeMeasure::Mean,
            intervals: vec![interval],
            circularity_max: None,
        },
        Controls::default(),
    )
    .unwrap();
    assert_eq!((map.x.len(), map.y.len()), (29, 29));
    assert!(map.computed > 0);
    let edge: Vec<(f64, f64)> = map.horizon_edge.iter().flatten().copied().collect();
    assert!(edge.len() > 20, "{edge:?}");
    for (a, q) in &edge {
        assert!((a * a + q * q - 1.0).abs() < 1e-9, "({a}, {q})");
    }
    // Along q at a = x[i]: where the allowed field changes sign between computed nodes, the
    // linear crossing matches the mean radius's crossing of 4.9 to a small part of a step.
    let nx = map.x.len();
    let field = map.allowed_field(0);
    let mut checked = 0;
    for i in (0..nx).step_by(4) {
        for j in 0..map.y.len() - 1 {
            let (f0, f1) = (field[j * nx + i], field[(j + 1) * nx + i]);
            let computed = |k: usize| matches!(map.nodes[k], umbral::scan::refine::FineNode::Point(ref p) if p.status == "shadow");
            if f0 >= 0.0 && f1 < 0.0 && computed(j * nx + i) && computed((j + 1) * nx + i) {
                let t = f0 / (f0 - f1);
                let q = map.y[j] + t * (map.y[j + 1] - map.y[j]);
                let metric = umbral::metrics::KerrNewman::new(map.x[i], q).unwrap();
                let observer = umbral::shadow::Observer::distant(17f64.to_radians());
                let r = umbral::observables::shadow(
                    &metric,
                    &umbral::observables::ShadowRequest {
                        observer,
                        settings: Default::default(),
                        centre: umbral::observables::CentreChoice::Centroid,
                        curve_only: false,
                    },
                )
                .unwrap()
                .observables
                .unwrap()
                .mean_radius;
                let step = map.y[j + 1] - map.y[j];
                // The mean radius changes by about 0.02 M per fine step here: 1e-3 M is a
                // twentieth of a step.
                assert!(
                    (r - interval[0]).abs() < 1e-3,
                    "a = {}, q = {q}: {r} (step {step})",
                    map.x[i]
                );
                checked += 1;
            }
        }
    }
    assert!(checked >= 3, "{checked}");
    std::fs::remove_file(&path).ok();
}

/// A scan's curves start from a multiple of 4 points, at least 64 (the fewest the
/// observables' sampling error is estimated from): fewer is refused with exit code 2, naming
/// the rule; each shadow line records the points it was measured on.
#[test]
fn cli_scan_refuses_too_few_curve_points_and_records_those_used() {
    let out = temp("cli-points.jsonl");
    let o = out.to_str().unwrap();
    let scan = |points: &[&str]| {
        let mut args = vec![
            "scan",
            "--metric",
            "kerr",
            "--grid",
            "a=0:0.5:2",
            "--inclination",
            "60",
            "--out",
            o,
            "--quiet",
        ];
        args.extend_from_slice(points);
        umbral(&args)
    };
    for bad in ["32", "66"] {
        let (code, _, err) = scan(&["--points", bad]);
        assert_eq!(code, 2, "{err}");
        assert!(err.contains("multiple of 4") && err.contains(bad), "{err}");
        assert_eq!(err.trim().lines().count(), 1, "{err}");
    }
    let (code, _, err) = scan(&[]);
    assert_eq!(code, 0, "{err}");
    let text = std::fs::read_to_string(&out).unwrap();
    assert!(
        text.lines().next().unwrap().contains("\"points\":64"),
        "{text}"
    );
    for line in text.lines().skip(1) {
        assert!(line.contains("\"points\":64"), "{line}");
    }
}

#[test]
fn curve_points_that_are_not_the_headers_doubled_are_refused() {
    let (path, lines) = finished("points.jsonl");
    let mut bad = lines;
    let at = bad[1]
        .find("\"points\":")
        .expect("a shadow line records its points");
    let start = at + "\"points\":".len();
    let end = start + bad[1][start..].find(',').unwrap();
    let header_points = bad[1][start..end].to_string();
    let odd = (3 * header_points.parse::<usize>().unwrap()).to_string();
    bad[1] = format!("{}{odd}{}", &bad[1][..start], &bad[1][end..]);
    let e = resume_refused(&path, &bad);
    assert!(
        e.contains("line 2")
            && e.contains(&format!(
                "{odd} curve points are not the header's {header_points} doubled"
            )),
        "{e}"
    );
}
