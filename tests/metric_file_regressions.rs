//! Regressions of issue 10 for metric files, each test named after its case:
//! separation data that do not belong to the line element (item 2), expressions that used to
//! exhaust the stack (item 11), and error excerpts of huge lines or control characters
//! (item 18).

use std::path::{Path, PathBuf};
use std::process::{Command, Output};
use umbral::metric::{
    check_separation, Capabilities, Declared, DeclaredHorizon, Metric, MetricComponents, Spacetime,
};
use umbral::metric_file::{parse_metric_file, MetricFileError};
use umbral::metrics::Kerr;
use umbral::scalar::DualScalar;

fn crate_path(relative: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join(relative)
}

fn shipped(name: &str) -> String {
    std::fs::read_to_string(crate_path(&format!("metrics/{name}.toml"))).unwrap()
}

/// The shipped Kerr file with the line starting `key = ` replaced by `key = "value"`.
fn kerr_with(key: &str, value: &str) -> String {
    let text = shipped("kerr");
    let start = text
        .find(&format!("\n{key} = "))
        .unwrap_or_else(|| panic!("{key}"))
        + 1;
    let end = start + text[start..].find('\n').unwrap();
    format!("{}{key} = \"{value}\"{}", &text[..start], &text[end..])
}

/// The shipped Schwarzschild file with `C = "r^2"` replaced by `C = "value"`.
fn schwarzschild_with_c(value: &str) -> String {
    let text = shipped("schwarzschild");
    assert!(text.contains("C = \"r^2\""));
    text.replacen("C = \"r^2\"", &format!("C = \"{value}\""), 1)
}

fn error_of(text: &str) -> MetricFileError {
    match parse_metric_file(text, "case.toml") {
        Ok(_) => panic!("expected an error"),
        Err(e) => e,
    }
}

/// A separate folder per test, removed by the caller.
fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("umbral-mfr-{name}-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

fn umbral(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_umbral"))
        .args(args)
        .output()
        .expect("the binary runs")
}

/// `umbral COMMAND --metric-file CASE.toml ARGS...` with `text` written to CASE.toml in a
/// scratch folder (removed afterwards).
fn umbral_on_file(case: &str, text: &str, command: &str, args: &[&str]) -> Output {
    let dir = scratch(case);
    let path = dir.join(format!("{case}.toml"));
    std::fs::write(&path, text).unwrap();
    let mut all = vec![command, "--metric-file", path.to_str().unwrap()];
    all.extend_from_slice(args);
    let out = umbral(&all);
    std::fs::remove_dir_all(&dir).ok();
    out
}

/// At a unit point, the geometry command (which loads the file first).
const GEOMETRY_AT: [&str; 4] = ["--r", "3", "--theta", "1"];

// ---- item 2: separation data against the line element -------------------------------------

/// A separation error placed at the `[separation]` table, with the given text in its message.
fn assert_separation_error(text: &str, needle: &str) -> MetricFileError {
    let e = error_of(text);
    assert!(
        matches!(e, MetricFileError::Separation { .. }),
        "{e:?} is not a separation error"
    );
    let full = e.to_string();
    assert!(full.contains("| [separation]\n"), "{full}");
    assert!(full.contains(needle), "{full}");
    e
}

/// A file refused because its line element is not a metric far from the centre (checked for
/// every file, before the separation data), with the given text in its message.
fn assert_far_field_error(text: &str, needle: &str) {
    let e = error_of(text);
    assert!(
        matches!(e, MetricFileError::Invalid { .. }),
        "{e:?} is not a line-element error"
    );
    let full = e.to_string();
    assert!(full.contains("| [line_element]\n"), "{full}");
    assert!(
        full.contains("the line element is not a regular metric at r = 1000"),
        "{full}"
    );
    assert!(full.contains(needle), "{full}");
}

#[test]
fn separation_with_g_tt_zero_is_refused() {
    // At the default a = 0, g_tt = 0 makes the (t, phi) block singular: g^tt is infinite.
    assert_far_field_error(&kerr_with("g_tt", "0"), "g^tt = inf is not a finite number");
    // Where the block is invertible (default a = 0.5, g_tphi != 0) the separation data cannot
    // match the line element any more: refused with the worst point (the separable solver
    // used to return the Kerr shadow, mean radius 5.148 at 60 deg).
    let text = kerr_with("g_tt", "0").replacen("default = 0.0", "default = 0.5", 1);
    assert_separation_error(&text, "the separation data do not match the line element");
    // The separation check itself refuses the non-finite line element too.
    let e = check_separation(&KerrWithConstantGtt(f64::INFINITY)).unwrap_err();
    assert!(e.to_string().contains("g_tt = inf"), "{e}");
}

#[test]
fn separation_with_g_tt_plus_one_over_zero_is_refused() {
    assert_far_field_error(&kerr_with("g_tt", "+1/0"), "g_tt = inf");
}

#[test]
fn separation_with_g_tt_sqrt_minus_one_is_refused() {
    assert_far_field_error(&kerr_with("g_tt", "+sqrt(-1)"), "g_tt = NaN");
    let e = check_separation(&KerrWithConstantGtt(f64::NAN)).unwrap_err();
    assert!(e.to_string().contains("g_tt = NaN"), "{e}");
}

#[test]
fn file_without_separation_with_g_tt_plus_one_over_zero_is_refused() {
    // The ray tracer would be the solver here; the line element is refused all the same.
    let text = shipped("johannsen-psaltis");
    let start = text.find("\ng_tt = ").unwrap() + 1;
    let end = start + text[start..].find('\n').unwrap();
    let text = format!("{}g_tt = \"+1/0\"{}", &text[..start], &text[end..]);
    assert_far_field_error(&text, "g_tt = inf");
}

/// Kerr (a = 0.5) with its separation data but g_tt replaced by a constant: the same case
/// as a Rust metric, to run the library check on it directly.
struct KerrWithConstantGtt(f64);

impl Declared for KerrWithConstantGtt {
    fn declared_horizon(&self) -> DeclaredHorizon {
        DeclaredHorizon::Known(Kerr::new(0.5).unwrap().outer_horizon())
    }
}

impl Metric for KerrWithConstantGtt {
    fn components<D: DualScalar>(&self, r: D, theta: D) -> MetricComponents<D> {
        MetricComponents {
            g_tt: D::from(self.0),
            ..Kerr::new(0.5).unwrap().components(r, theta)
        }
    }
    fn capabilities(&self) -> Capabilities {
        Capabilities::NONE.with_separation()
    }
    fn radial_potential<D: DualScalar>(&self, r: D, lambda: D, eta: D) -> Option<D> {
        Kerr::new(0.5).unwrap().radial_potential(r, lambda, eta)
    }
    fn polar_potential<D: DualScalar>(&self, theta: D, lambda: D, eta: D) -> Option<D> {
        Kerr::new(0.5).unwrap().polar_potential(theta, lambda, eta)
    }
}

#[test]
fn radial_with_1_1_delta_is_refused_naming_the_worst_mismatch() {
    let text = kerr_with(
        "radial",
        "(r^2 + a^2 - a*lambda)^2 - 1.1*Delta*(eta + (lambda - a)^2)",
    );
    let e = assert_separation_error(&text, "the separation data do not match the line element");
    let message = e.message();
    // Where and by how much: a check point, the residual and its size relative to its terms.
    for part in [
        "at r = ",
        "theta = ",
        "lambda = ",
        "eta = ",
        "of the size of its terms",
    ] {
        assert!(message.contains(part), "{message}");
    }
    // The worst point: the residual -0.1 (eta + lambda^2) (a = 0) is largest at the check
    // point with the largest eta + lambda^2 relative to the other terms.
    assert!(message.contains("lambda = -4.7, eta = 23"), "{message}");
}

#[test]
fn a_mismatch_that_vanishes_at_the_defaults_is_refused_on_load() {
    // (lambda - 2a) instead of (lambda - a): invisible at the default a = 0, refused at the
    // second check point with every parameter moved off its default.
    let text = kerr_with(
        "radial",
        "(r^2 + a^2 - a*lambda)^2 - Delta*(eta + (lambda - 2*a)^2)",
    );
    assert_separation_error(&text, "(parameters: a = 0.1234)");
}

#[test]
fn a_mismatch_at_other_parameters_is_refused_on_instantiation() {
    // A factor that is 1 at both load-time check points (a = 0 and a = 0.1234) but not at
    // a = 0.9: the file loads, the metric at a = 0.9 is refused with the worst point named.
    let text = kerr_with(
        "radial",
        "(1 + (a*(a - 0.1234))^2)*((r^2 + a^2 - a*lambda)^2 - Delta*(eta + (lambda - a)^2))",
    );
    let spec = parse_metric_file(&text, "case.toml").unwrap();
    assert!(spec.instantiate(&[("a".into(), 0.1234)]).is_ok());
    let e = spec.instantiate(&[("a".into(), 0.9)]).unwrap_err();
    let message = e.to_string();
    assert!(
        message.starts_with("metric file 'kerr' at a = 0.9: the separation data do not match"),
        "{message}"
    );
    // The same through the command line: one line, exit code 2, no shadow printed.
    let out = umbral_on_file(
        "kerr-bad",
        &text,
        "shadow",
        &["--set", "a=0.9", "--inclination", "60"],
    );
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{stderr}");
    assert_eq!(stderr.lines().count(), 1, "{stderr}");
    assert!(stderr.contains("do not match the line element"), "{stderr}");
    assert!(out.stdout.is_empty());
}

#[test]
fn separation_mismatch_is_refused_by_the_command_line_with_the_caret_format() {
    let text = kerr_with(
        "radial",
        "(r^2 + a^2 - a*lambda)^2 - 1.1*Delta*(eta + (lambda - a)^2)",
    );
    let out = umbral_on_file(
        "kerr-11",
        &text,
        "shadow",
        &["--set", "a=0.5", "--inclination", "60"],
    );
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{stderr}");
    assert!(stderr.contains("kerr-11.toml, line "), "{stderr}");
    assert!(stderr.contains("| [separation]\n"), "{stderr}");
    assert!(stderr.contains("     | ^\n"), "{stderr}");
    assert!(out.stdout.is_empty());
}

#[test]
fn every_shipped_separable_file_passes_the_separation_check() {
    let mut separable = 0;
    for (path, spec) in umbral::metric_file::list_metric_dir(&crate_path("metrics")) {
        let spec = spec.unwrap_or_else(|e| panic!("{}: {e}", path.display()));
        if spec.is_separable() {
            separable += 1;
            let report = check_separation(&spec.instantiate_defaults()).unwrap();
            assert!(report.worst.relative() < 1e-13, "{}", path.display());
        } else {
            assert!(!spec.instantiate_defaults().is_separable());
        }
    }
    assert_eq!(separable, 6);
}

// ---- item 11: expressions that exhausted the stack ----------------------------------------

#[test]
fn left_chain_of_15000_operators_is_refused_not_a_stack_overflow() {
    let chain = format!("r{}", "+r".repeat(15_000));
    let e = error_of(&schwarzschild_with_c(&chain));
    assert!(
        e.message()
            .contains("expected an expression of at most 10000 bytes"),
        "{e}"
    );
    // Under the length limit, the chain depth is what is refused.
    let e = error_of(&schwarzschild_with_c(&format!("r{}", "+r".repeat(3_000))));
    assert!(
        e.message().contains("nested at most 200 levels deep"),
        "{e}"
    );
    assert!(
        e.message().contains("split long chains into helpers"),
        "{e}"
    );
    // The limit is exact: 199 operators (a tree 200 levels deep) are accepted and evaluate
    // to 200 r; 200 operators are not.
    let spec = parse_metric_file(
        &schwarzschild_with_c(&format!("r{}", "+r".repeat(199))),
        "case.toml",
    )
    .unwrap();
    let c = spec.instantiate_defaults().components_at(3.0, 1.0).g_thth;
    assert_eq!(c, 600.0);
    let e = error_of(&schwarzschild_with_c(&format!("r{}", "+r".repeat(200))));
    assert!(
        e.message().contains("nested at most 200 levels deep"),
        "{e}"
    );
    // The same for a unary chain and for a call around a chain at the limit.
    let e = error_of(&schwarzschild_with_c(&format!(
        "sqrt(r{})",
        "+r".repeat(199)
    )));
    assert!(
        e.message().contains("nested at most 200 levels deep"),
        "{e}"
    );
}

#[test]
fn chain_of_20000_helpers_compiles_without_recursing_through_them() {
    // Each helper uses the previous one: compiling used to recurse from each helper's tree
    // into the next (20000 levels), overflowing a 2 MB thread stack.
    let mut helpers = vec!["\"f = 1 - 2/r\"".to_string(), "\"h0 = r\"".to_string()];
    helpers.extend((1..20_000).map(|i| format!("\"h{i} = h{} + 1e-9\"", i - 1)));
    let text = shipped("schwarzschild")
        .replacen(
            "helpers = [\"f = 1 - 2/r\"]",
            &format!("helpers = [{}]", helpers.join(", ")),
            1,
        )
        .replacen("C = \"r^2\"", "C = \"(h19999 - 19999e-9)^2\"", 1);
    let handle = std::thread::Builder::new()
        .stack_size(2 << 20)
        .spawn(move || {
            let spec = parse_metric_file(&text, "helpers.toml").unwrap();
            spec.instantiate_defaults().components_at(3.0, 1.0).g_thth
        })
        .unwrap();
    let c = handle.join().expect("no stack overflow");
    assert!((c - 9.0).abs() < 1e-9, "{c}");
}

#[test]
fn metrics_listing_survives_a_file_with_a_15000_operator_chain() {
    let dir = scratch("listing");
    std::fs::write(
        dir.join("chain.toml"),
        schwarzschild_with_c(&format!("r{}", "+r".repeat(15_000))),
    )
    .unwrap();
    std::fs::write(dir.join("kerr.toml"), shipped("kerr")).unwrap();
    let out = umbral(&["metrics", "--metrics-dir", dir.to_str().unwrap()]);
    let stdout = String::from_utf8_lossy(&out.stdout);
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(out.status.code().is_some(), "killed by a signal: {stderr}");
    assert!(
        stdout.contains("from file") || stderr.contains("from file"),
        "{stdout}{stderr}"
    );
    assert!(
        format!("{stdout}{stderr}").contains("at most 10000 bytes"),
        "{stdout}{stderr}"
    );
    std::fs::remove_dir_all(&dir).ok();
}

// ---- item 18: excerpts of huge lines and control characters -------------------------------

#[test]
fn two_megabyte_line_error_shows_a_window_around_the_caret() {
    // A 2 MB expression: refused at its length limit, with 60 characters of context on
    // each side of the caret and ellipses where the line is cut.
    let e = error_of(&schwarzschild_with_c(&format!(
        "r^2 + {}",
        "x".repeat(2_000_000)
    )));
    let full = e.to_string();
    assert!(full.len() < 1_000, "{} bytes:\n{full}", full.len());
    assert!(full.starts_with("error in metric file case.toml, line 12, column 10006"));
    let at = e.location().unwrap();
    assert_eq!(at.source_line, format!("…{}…", "x".repeat(121)));
    assert_eq!((at.caret_column, at.width), (62, 1));
    // An unknown name of 9000 characters (under the limit): the line from its start (within
    // 60 characters of the caret), the marked text cut at 120 characters with an ellipsis,
    // the caret under the name, and the name cut in the message.
    let name = "x".repeat(9_000);
    let e = error_of(&schwarzschild_with_c(&format!("r^2 + {name}")));
    let full = e.to_string();
    assert!(full.len() < 1_000, "{} bytes:\n{full}", full.len());
    let at = e.location().unwrap();
    assert_eq!((at.line, at.column), (12, 12));
    let excerpt = format!("  12 | C = \"r^2 + {}…\n", "x".repeat(120));
    assert!(full.contains(&excerpt), "{full}");
    assert!(full.contains(&format!("     | {}{}\n", " ".repeat(11), "^".repeat(120))));
    assert!(e.message().contains('…'), "{}", e.message());
    // A caret far into a long line: context on both sides with ellipses.
    let long = format!("r{}+ rr +{}r", " ".repeat(4_000), " ".repeat(4_000));
    let e = error_of(&schwarzschild_with_c(&long));
    let at = e.location().unwrap();
    assert_eq!(at.column, 6 + 1 + 4_000 + 2);
    assert!(at.source_line.starts_with('…') && at.source_line.ends_with('…'));
    assert_eq!(at.source_line.chars().count(), 1 + 60 + 2 + 60 + 1);
    assert_eq!(at.caret_column, 62);
    let marked: String = at.source_line.chars().skip(61).take(at.width).collect();
    assert_eq!(marked, "rr");
    // Every error of a 900 KB line stays short through the command line too.
    let text = schwarzschild_with_c(&format!("r^2 + {}", "x".repeat(900_000)));
    let out = umbral_on_file("long-line", &text, "geometry", &GEOMETRY_AT);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        out.stderr.len() < 1_000,
        "{} bytes of stderr",
        out.stderr.len()
    );
}

#[test]
fn nul_in_a_metric_file_is_escaped_in_the_error() {
    // A NUL produced by a TOML escape inside an expression, and a raw NUL in the file.
    for (text, escaped) in [
        (schwarzschild_with_c("r^2 + \\u0000 + r"), "'\\u{0}'"),
        (schwarzschild_with_c("r^2 + \u{0}"), "\\u{0}"),
    ] {
        let e = error_of(&text);
        let full = e.to_string();
        assert!(!full.contains('\u{0}'), "raw NUL in: {full:?}");
        assert!(full.contains(escaped), "{full}");
        assert_eq!(e.location().unwrap().line, 12);
    }
    // The caret stays under the escaped character.
    let e = error_of(&schwarzschild_with_c("r^2 + \u{0}"));
    let at = e.location().unwrap();
    let shown: String = at.source_line.chars().skip(at.caret_column - 1).collect();
    assert!(shown.starts_with("\\u{0}"), "{}", at.source_line);
    // Other control characters too (bell, escape), and a bidirectional override.
    let e = error_of(&schwarzschild_with_c("r^2 + \u{7}\u{1b}\u{202e}"));
    assert!(e.to_string().contains("\\u{7}"), "{e}");
    assert!(!e.to_string().contains('\u{7}'), "{e}");
    assert!(e.to_string().contains("\\u{202e}"), "{e}");
    // Through the command line: no raw NUL on stderr.
    let text = schwarzschild_with_c("r^2 + \u{0}");
    let out = umbral_on_file("nul", &text, "geometry", &GEOMETRY_AT);
    assert_eq!(out.status.code(), Some(2));
    assert!(!out.stderr.contains(&0u8), "raw NUL on stderr");
}
