//! `umbral scan`: streamed, resumable grid scans.

use std::path::PathBuf;
use std::process::Command;
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
        metric: "kerr-newman".into(),
        axes: vec![
            GridAxis {
                name: "a".into(),
                low: 0.0,
                high: 0.9,
                count: 4,
            },
            GridAxis {
                name: "q".into(),
                low: 0.0,
                high: 0.8,
                count: 3,
            },
        ],
        fixed: vec![],
        inclination_deg: 60.0,
        settings: Default::default(),
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
    other.inclination_deg = 30.0;
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
    assert!(map.contains("allowed at 0.68") && map.contains("<polygon"));
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
