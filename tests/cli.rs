//! The command line as a user meets it: output keys, exit codes and one-line errors.

use serde_json::Value;
use std::process::{Command, Output};

fn umbral(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_umbral"))
        .args(args)
        .output()
        .expect("the binary runs")
}

/// Exit code 2 and exactly one line on stderr that contains `needle`.
fn assert_one_line_error(args: &[&str], needle: &str) {
    let out = umbral(args);
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{args:?}: {stderr}");
    assert_eq!(stderr.lines().count(), 1, "{args:?}: {stderr}");
    assert!(stderr.contains(needle), "{args:?}: {stderr}");
    assert!(out.stdout.is_empty(), "{args:?} printed to stdout");
}

#[test]
fn metrics_json_lists_the_core_metrics_with_their_parameters() {
    let out = umbral(&["metrics", "--json"]);
    assert!(out.status.success());
    let listing: Value = serde_json::from_slice(&out.stdout).unwrap();
    let v = listing["metrics"].clone();
    let names: Vec<&str> = v
        .as_array()
        .unwrap()
        .iter()
        .map(|m| m["name"].as_str().unwrap())
        .collect();
    for n in ["schwarzschild", "kerr", "reissner-nordstrom", "kerr-newman"] {
        assert!(names.contains(&n), "{n} missing from {names:?}");
    }
    let kn = v
        .as_array()
        .unwrap()
        .iter()
        .find(|m| m["name"] == "kerr-newman")
        .unwrap();
    let params: Vec<&str> = kn["parameters"]
        .as_array()
        .unwrap()
        .iter()
        .map(|p| p["name"].as_str().unwrap())
        .collect();
    assert_eq!(params, ["a", "q"]);
    for p in kn["parameters"].as_array().unwrap() {
        for key in ["default", "domain", "meaning"] {
            assert!(!p[key].is_null(), "parameter {p} lacks {key}");
        }
    }
    assert_eq!(kn["symmetry"], "stationary_axisymmetric");
    let rn = v
        .as_array()
        .unwrap()
        .iter()
        .find(|m| m["name"] == "reissner-nordstrom")
        .unwrap();
    assert_eq!(rn["symmetry"], "spherical");
    assert!(rn["reference"].as_str().unwrap().contains("Reissner"));
}

#[test]
fn geometry_json_has_the_documented_keys_and_values() {
    let out = umbral(&[
        "geometry", "--metric", "kerr", "--set", "a=0.6", "--r", "6", "--theta", "1.2", "--json",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["metric"], "kerr");
    assert_eq!(v["parameters"]["a"], 0.6);
    assert_eq!(v["point"]["r"], 6.0);
    assert_eq!(v["point"]["theta"], 1.2);
    // r₊ = 1 + √(1 − a²) = 1.8 (Boyer & Lindquist 1967).
    assert!((v["horizon_radius"].as_f64().unwrap() - 1.8).abs() < 1e-14);
    let g = v["g"].as_array().unwrap();
    assert_eq!(g.len(), 4);
    // g_θθ = Σ = r² + a² cos²θ.
    let sigma = 36.0 + 0.36 * 1.2f64.cos().powi(2);
    assert!((g[2][2].as_f64().unwrap() - sigma).abs() < 1e-12);
    assert_eq!(v["g_inverse"].as_array().unwrap().len(), 4);
    let gamma = v["christoffel"].as_array().unwrap();
    assert_eq!(gamma.len(), 4);
    assert_eq!(gamma[1].as_array().unwrap().len(), 4);
    assert_eq!(gamma[1][2].as_array().unwrap().len(), 4);
    // Γ^θ_{rθ} = r/Σ in Kerr (Chandrasekhar 1983, §58).
    assert!((gamma[2][1][2].as_f64().unwrap() - 6.0 / sigma).abs() < 1e-13);
}

#[test]
fn geometry_reports_no_horizon_for_a_naked_singularity() {
    let out = umbral(&[
        "geometry", "--metric", "kerr", "--set", "a=1.2", "--r", "3", "--theta", "1", "--json",
    ]);
    assert!(out.status.success());
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    assert!(v["horizon_radius"].is_null());
    let out = umbral(&[
        "geometry", "--metric", "kerr", "--set", "a=1.2", "--r", "3", "--theta", "1",
    ]);
    assert!(String::from_utf8_lossy(&out.stdout).contains("none (horizonless)"));
}

#[test]
fn bad_input_gives_one_line_and_exit_code_two() {
    assert_one_line_error(
        &["geometry", "--metric", "kerrr", "--r", "6", "--theta", "1"],
        "unknown metric 'kerrr' (known: schwarzschild, kerr",
    );
    assert_one_line_error(
        &[
            "geometry", "--metric", "kerr", "--set", "spin=0.5", "--r", "6", "--theta", "1",
        ],
        "no parameter 'spin'",
    );
    assert_one_line_error(
        &[
            "geometry", "--metric", "kerr", "--set", "a=abc", "--r", "6", "--theta", "1",
        ],
        "cannot read 'abc'",
    );
    assert_one_line_error(
        &[
            "geometry", "--metric", "kerr", "--set", "a=nan", "--r", "6", "--theta", "1",
        ],
        "must be a finite number",
    );
    assert_one_line_error(
        &[
            "geometry", "--metric", "kerr", "--set", "a=inf", "--r", "6", "--theta", "1",
        ],
        "must be a finite number",
    );
    assert_one_line_error(
        &["geometry", "--metric", "kerr", "--r", "six", "--theta", "1"],
        "cannot read 'six'",
    );
    assert_one_line_error(
        &["geometry", "--metric", "kerr", "--r", "NaN", "--theta", "1"],
        "finite",
    );
    assert_one_line_error(
        &["geometry", "--metric", "kerr", "--r", "6", "--theta", "0"],
        "strictly between 0 and pi",
    );
    assert_one_line_error(
        &[
            "geometry",
            "--metric",
            "schwarzschild",
            "--r",
            "0",
            "--theta",
            "1",
        ],
        "singular",
    );
    assert_one_line_error(&["geometry", "--metric", "kerr", "--r", "6"], "--theta");
    assert_one_line_error(
        &[
            "geometry", "--metric", "kerr", "--set", "a=0.1", "--set", "a=0.2", "--r", "6",
            "--theta", "1",
        ],
        "more than once",
    );
    assert_one_line_error(&["frobnicate"], "frobnicate");
    assert_one_line_error(&[], "subcommand");
}

#[test]
fn shadow_json_has_the_documented_keys() {
    let out = umbral(&[
        "shadow",
        "--metric",
        "reissner-nordstrom",
        "--set",
        "q=1",
        "--inclination",
        "45",
        "--points",
        "64",
        "--json",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    // Always a list, one element per parameter value.
    let list: Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(list.as_array().map(Vec::len), Some(1));
    let v = &list[0];
    for key in [
        "metric",
        "parameters",
        "inclination_deg",
        "observer_radius",
        "solver",
        "status",
        "observables",
        "curve",
        "diagnostics",
    ] {
        assert!(v.get(key).is_some(), "missing {key}");
    }
    assert_eq!(v["status"], "shadow");
    assert_eq!(v["solver"], "spherical");
    assert_eq!(v["inclination_deg"], 45.0);
    assert!(v["observer_radius"].is_null());
    // Extremal Reissner–Nordström: b_c = 4 exactly (r_ph = 2; e.g. Perlick & Tsupko 2022).
    assert!((v["observables"]["mean_radius"].as_f64().unwrap() - 4.0).abs() < 1e-12);
    assert_eq!(v["curve"]["alpha"].as_array().unwrap().len(), 64);
    // Extremal Reissner–Nordström photon ring: γ = π/√2 from Cardoso et al. 2009's formula with
    // f = (1 − 1/r)², r_c = 2 (worked by hand: f″ = −1/8, λ = 1/(4√2), Ω = 1/4, so πλ/Ω = π/√2).
    let gamma = v["exponents"]["gamma_min"].as_f64().unwrap();
    assert!(
        (gamma - std::f64::consts::PI / 2f64.sqrt()).abs() < 1e-10,
        "{gamma}"
    );
    assert!(v.get("celestial").is_none());
    // A static observer at r_o = 10: sin Θ = b_c √(A/C) (Synge 1966), here 4 · √(0.81)/10.
    let out = umbral(&[
        "shadow",
        "--metric",
        "reissner-nordstrom",
        "--set",
        "q=1",
        "--inclination",
        "45",
        "--points",
        "16",
        "--observer-radius",
        "10",
        "--json",
    ]);
    let w: Value = serde_json::from_slice::<Value>(&out.stdout).unwrap()[0].clone();
    let theta = w["celestial"]["theta"][0].as_f64().unwrap();
    assert!(
        (theta - (4.0f64 * 0.9 / 10.0).asin()).abs() < 1e-12,
        "{theta}"
    );
    for key in ["rays_traced", "failed_rays", "star_shaped", "wall_seconds"] {
        assert!(
            v["diagnostics"].get(key).is_some(),
            "missing diagnostics.{key}"
        );
    }
}

#[test]
fn shadow_family_writes_csv_and_plot() {
    let dir = std::env::temp_dir().join(format!("umbral-cli-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let csv = dir.join("k.csv");
    let svg = dir.join("k.svg");
    let out = umbral(&[
        "shadow",
        "--metric",
        "kerr",
        "--set",
        "a=0,0.5,0.9",
        "--inclination",
        "60",
        "--points",
        "32",
        "--csv",
        csv.to_str().unwrap(),
        "--plot",
        svg.to_str().unwrap(),
        "--json",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v.as_array().unwrap().len(), 3);
    let text = std::fs::read_to_string(&csv).unwrap();
    // Three comment lines (version, command, assumptions), the heading, a row per point.
    assert_eq!(text.lines().count(), 4 + 3 * 32);
    assert!(text.starts_with("# umbral "), "{text}");
    let heading = text.lines().nth(3).unwrap();
    assert!(
        heading.contains("alpha,beta,orbit_radius,gamma,mean_radius"),
        "{heading}"
    );
    let svg_text = std::fs::read_to_string(&svg).unwrap();
    assert!(svg_text.starts_with("<svg") && svg_text.contains("α / M"));
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn shadow_bad_input_is_one_line() {
    assert_one_line_error(
        &["shadow", "--metric", "kerr", "--inclination", "200"],
        "between 0 and 180",
    );
    assert_one_line_error(
        &["shadow", "--metric", "kerr", "--inclination", "nan"],
        "finite",
    );
    assert_one_line_error(
        &[
            "shadow",
            "--metric",
            "kerr",
            "--inclination",
            "30",
            "--solver",
            "magic",
        ],
        "magic",
    );
    assert_one_line_error(
        &[
            "shadow",
            "--metric",
            "kerr",
            "--set",
            "a=0.5",
            "--inclination",
            "30",
            "--solver",
            "spherical",
        ],
        "does not apply",
    );
    assert_one_line_error(
        &[
            "shadow",
            "--metric",
            "kerr",
            "--inclination",
            "30",
            "--csv",
            "/nonexistent-dir/x.csv",
        ],
        "cannot write",
    );
    assert_one_line_error(
        &[
            "shadow",
            "--metric",
            "kerr",
            "--inclination",
            "30",
            "--plot",
            "/nonexistent-dir/x.svg",
        ],
        "cannot write figure",
    );
    assert_one_line_error(
        &[
            "shadow",
            "--metric",
            "kerr",
            "--inclination",
            "30",
            "--set",
            "a=0.1,0.2",
            "--set",
            "q=1,2",
        ],
        "only one parameter",
    );
}

/// The demo writes its figures, report and results, and sets a posterior beside the bound of
/// the same parameter from the same measurement: the comparison is printed with the verdict
/// (the seeded run converges: split R-hat 1.0081, ESS 3544 after 20 000 steps), each side
/// says what it assumed, and the posterior's files are written and listed.
#[test]
fn demo_writes_its_figures_report_and_results() {
    let dir = std::env::temp_dir().join(format!("umbral-demo-{}", std::process::id()));
    let out = umbral(&["demo", "--out", dir.to_str().unwrap()]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    for f in [
        "kerr-family.svg",
        "reissner-nordstrom-family.svg",
        "results.json",
        "report.md",
        "posterior-reissner-nordstrom.json",
        "samples-reissner-nordstrom.csv",
        "corner-reissner-nordstrom.svg",
        "calibration.json",
        "image-kerr.png",
        "image-kerr-blurred.png",
    ] {
        assert!(dir.join(f).exists(), "{f} missing");
    }
    // Every figure also as PNG and PDF.
    for stem in [
        "kerr-family",
        "reissner-nordstrom-family",
        "bound-reissner-nordstrom",
        "bound-johannsen",
        "exclusion-kerr-newman",
        "corner-reissner-nordstrom",
    ] {
        for ext in ["svg", "png", "pdf"] {
            assert!(
                dir.join(format!("{stem}.{ext}")).exists(),
                "{stem}.{ext} missing"
            );
        }
    }
    // κ comes from the demo's own calibration, and the measurement it writes says so.
    let calibration: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("calibration.json")).unwrap())
            .unwrap();
    let kappa = calibration["kappa"]["mean"].as_f64().unwrap();
    let measurement = std::fs::read_to_string(dir.join("measurement.toml")).unwrap();
    assert!(
        measurement.contains(&format!("ring_to_shadow = {{ value = {kappa:.4}")),
        "{measurement}"
    );
    let report = std::fs::read_to_string(dir.join("report.md")).unwrap();
    assert!(report.contains("invented"));
    assert!(report.contains("ring-to-shadow calibration"));
    assert!(report.contains("## Emission ring and calibration"));
    assert!(report.contains("![image](image-kerr.png)"));
    assert!(report.contains("## Bound and posterior from the same measurement"));
    assert!(report.contains("Posterior assumptions:"));
    assert!(report.contains("![corner plot](corner-reissner-nordstrom.svg)"));
    // The comparison on standard output: both answers at both levels, the verdict, and what
    // each assumed.
    let stdout = String::from_utf8_lossy(&out.stdout);
    let section: Vec<&str> = stdout
        .lines()
        .skip_while(|l| !l.starts_with("bound and posterior of q of reissner-nordstrom"))
        .take(8)
        .collect();
    assert_eq!(section.len(), 8, "no comparison in:\n{stdout}");
    // The invented ring (6.9 ± 0.3 μas) allows small charges at both levels.
    assert!(
        section[2].starts_with("  68%   [0 (range edge), 0."),
        "{section:?}"
    );
    assert!(
        section[3].starts_with("  95%   [0 (range edge), "),
        "{section:?}"
    );
    assert!(
        section[4].starts_with("  posterior median 0."),
        "{section:?}"
    );
    assert!(
        section[5].starts_with("  posterior converged: split R-hat 1.00"),
        "{section:?}"
    );
    assert!(section[6].starts_with("  the bound assumes: "));
    assert!(section[7].starts_with("  the posterior assumes: priors q uniform:0:1"));
    assert!(!stdout.contains("NOT CONVERGED"));
    for f in [
        "posterior-reissner-nordstrom.json",
        "samples-reissner-nordstrom.csv",
        "corner-reissner-nordstrom.svg",
    ] {
        let listed = dir.join(f).display().to_string();
        assert!(stdout.lines().any(|l| l.trim() == listed), "{f} not listed");
    }
    // The posterior's report is the one `umbral infer --json` prints; results.json carries it.
    let posterior: Value = serde_json::from_str(
        &std::fs::read_to_string(dir.join("posterior-reissner-nordstrom.json")).unwrap(),
    )
    .unwrap();
    assert_eq!(posterior["diagnostics"]["converged"], Value::Bool(true));
    let q = &posterior["parameters"]["q"];
    let median = q["median"].as_f64().unwrap();
    assert!(median > 0.0 && median < 1.0, "{q}");
    assert_eq!(q["intervals"].as_array().unwrap().len(), 4);
    let results: Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("results.json")).unwrap()).unwrap();
    assert_eq!(results["posterior"], posterior);
    // The samples: the assumptions as comments, a header naming the columns, one row per
    // sample.
    let csv = std::fs::read_to_string(dir.join("samples-reissner-nordstrom.csv")).unwrap();
    assert!(csv
        .lines()
        .any(|l| l == "q,kappa@1,mass_msun@1,distance_mpc@1"));
    assert!(csv.lines().any(|l| l.starts_with("# prior q: uniform:0:1")));
    let svg = std::fs::read_to_string(dir.join("corner-reissner-nordstrom.svg")).unwrap();
    assert!(svg.contains("68% highest-density region (smoothed)"));
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn metric_files_work_wherever_a_metric_name_does() {
    let file = concat!(env!("CARGO_MANIFEST_DIR"), "/metrics/kerr.toml");
    let by_file = umbral(&[
        "geometry",
        "--metric-file",
        file,
        "--set",
        "a=0.6",
        "--r",
        "6",
        "--theta",
        "1.2",
        "--json",
    ]);
    let by_name = umbral(&[
        "geometry", "--metric", "kerr", "--set", "a=0.6", "--r", "6", "--theta", "1.2", "--json",
    ]);
    assert!(
        by_file.status.success(),
        "{}",
        String::from_utf8_lossy(&by_file.stderr)
    );
    let (f, n): (Value, Value) = (
        serde_json::from_slice(&by_file.stdout).unwrap(),
        serde_json::from_slice(&by_name.stdout).unwrap(),
    );
    for key in ["g", "g_inverse", "christoffel"] {
        let (a, b) = (f[key].to_string(), n[key].to_string());
        let (a, b): (Vec<f64>, Vec<f64>) = (numbers(&a), numbers(&b));
        assert_eq!(a.len(), b.len());
        for (x, y) in a.iter().zip(&b) {
            assert!(
                (x - y).abs() <= 1e-12 * x.abs().max(1.0),
                "{key}: {x} vs {y}"
            );
        }
    }
    let shadow = umbral(&[
        "shadow",
        "--metric-file",
        file,
        "--set",
        "a=0.9",
        "--inclination",
        "60",
        "--points",
        "32",
        "--json",
    ]);
    assert!(
        shadow.status.success(),
        "{}",
        String::from_utf8_lossy(&shadow.stderr)
    );
    let listing = umbral(&[
        "metrics",
        "--metrics-dir",
        concat!(env!("CARGO_MANIFEST_DIR"), "/metrics"),
        "--json",
    ]);
    let v: Value = serde_json::from_slice(&listing.stdout).unwrap();
    assert!(v["metrics"]
        .as_array()
        .unwrap()
        .iter()
        .any(|m| m["source"].as_str().unwrap().ends_with("kerr.toml")));
}

fn numbers(text: &str) -> Vec<f64> {
    text.split(['[', ']', ','])
        .filter(|t| !t.is_empty())
        .map(|t| t.parse().unwrap())
        .collect()
}

#[test]
fn metric_choice_errors() {
    assert_one_line_error(&["geometry", "--r", "6", "--theta", "1"], "--metric");
    assert_one_line_error(
        &[
            "geometry",
            "--metric",
            "kerr",
            "--metric-file",
            "x.toml",
            "--r",
            "6",
            "--theta",
            "1",
        ],
        "cannot be used with",
    );
    // A broken file: the message names file, line and column and puts a caret under the token.
    let dir = std::env::temp_dir().join(format!("umbral-mf-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("broken.toml");
    let text = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/metrics/schwarzschild.toml"
    ))
    .unwrap();
    std::fs::write(&path, text.replacen("2/r", "2/rr", 1)).unwrap();
    let out = umbral(&[
        "geometry",
        "--metric-file",
        path.to_str().unwrap(),
        "--r",
        "6",
        "--theta",
        "1",
    ]);
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.contains("broken.toml")
            && stderr.contains("line 6, column 23")
            && stderr.contains("^^"),
        "{stderr}"
    );
    assert!(out.stdout.is_empty());
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn sizes_and_paths_are_checked_before_work() {
    assert_one_line_error(
        &[
            "shadow",
            "--metric",
            "kerr",
            "--inclination",
            "30",
            "--points",
            "100000000000",
        ],
        "--points must lie between 8 and",
    );
    assert_one_line_error(
        &[
            "scan",
            "--metric",
            "kerr",
            "--grid",
            "a=0:0.99:99999999999",
            "--grid",
            "q=0:1:99999999999",
            "--inclination",
            "30",
            "--out",
            "/tmp/never.jsonl",
        ],
        "at most",
    );
    assert_one_line_error(
        &[
            "shadow",
            "--metric",
            "kerr",
            "--inclination",
            "30",
            "--mass-distance-uas",
            "-5",
        ],
        "must be positive",
    );
    assert_one_line_error(&["demo", "--out", ""], "empty");
    // A metric file whose closed-form horizon is not a zero of g^rr is refused.
    let dir = std::env::temp_dir().join(format!("umbral-hz-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("bad-horizon.toml");
    let text = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/metrics/schwarzschild.toml"
    ))
    .unwrap();
    let text = match text.find("horizon = ") {
        Some(i) => {
            let end = i + text[i..].find('\n').unwrap();
            format!("{}horizon = \"-1\"{}", &text[..i], &text[end..])
        }
        None => text.replacen("symmetry", "horizon = \"-1\"\nsymmetry", 1),
    };
    std::fs::write(&path, text).unwrap();
    assert_one_line_error(
        &[
            "geometry",
            "--metric-file",
            path.to_str().unwrap(),
            "--r",
            "6",
            "--theta",
            "1",
        ],
        "horizon expression gives r = -1",
    );
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn shadow_family_prints_one_row_per_member_and_latex() {
    let args = [
        "shadow",
        "--metric",
        "kerr",
        "--set",
        "a=0,0.5,0.9",
        "--inclination",
        "60",
        "--points",
        "32",
    ];
    let out = umbral(&args);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8_lossy(&out.stdout);
    let lines: Vec<&str> = text.lines().collect();
    // The assumptions, the heading, one row per member.
    assert_eq!(lines.len(), 5, "{text}");
    assert!(lines[0].contains("boundary tolerance 1e-8 M"), "{text}");
    assert!(
        lines[1].starts_with("a ") && lines[1].contains("mean radius (M)"),
        "{text}"
    );
    // Kerr a = 0 is Schwarzschild: 3√3 M to the tolerance's 8 decimals, no negative zero.
    assert!(lines[2].contains("5.19615242"), "{text}");
    assert!(!text.contains("-0.0000"), "{text}");
    let mut latex_args = args.to_vec();
    latex_args.push("--latex");
    let out = umbral(&latex_args);
    let latex = String::from_utf8_lossy(&out.stdout);
    assert!(
        latex.contains("\\toprule") && latex.contains("\\bottomrule"),
        "{latex}"
    );
    assert_eq!(
        latex.lines().filter(|l| l.starts_with("$0.")).count(),
        2,
        "{latex}"
    );
}

#[test]
fn figures_are_written_as_svg_png_and_pdf_by_extension() {
    let dir = std::env::temp_dir().join(format!("umbral-cli-fig-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    for (name, magic) in [
        ("k.svg", &b"<svg"[..]),
        ("k.png", &b"\x89PNG"[..]),
        ("k.pdf", &b"%PDF-"[..]),
    ] {
        let path = dir.join(name);
        let out = umbral(&[
            "shadow",
            "--metric",
            "kerr",
            "--set",
            "a=0.5",
            "--inclination",
            "30",
            "--points",
            "32",
            "--style",
            "slide",
            "--plot",
            path.to_str().unwrap(),
        ]);
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        let bytes = std::fs::read(&path).unwrap();
        assert!(bytes.starts_with(magic), "{name}");
    }
    assert_one_line_error(
        &[
            "shadow",
            "--metric",
            "kerr",
            "--inclination",
            "30",
            "--plot",
            dir.join("k.jpg").to_str().unwrap(),
        ],
        ".svg, .png or .pdf",
    );
    std::fs::remove_dir_all(&dir).ok();
}
