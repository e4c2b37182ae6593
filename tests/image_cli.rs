//! `umbral image` and `umbral calibrate` as a user runs them: the JSON keys, the files, the
//! measurement files that take κ from a calibration, and one-line errors for bad input.

mod common;

use common::{scratch, Invocation};
use std::time::Duration;

fn umbral(dir: &std::path::Path, args: &[&str]) -> common::Outcome {
    let mut run = Invocation::new(dir, args.iter().copied());
    run.timeout = Duration::from_secs(120);
    let outcome = run.run();
    let problems = outcome.universal_problems();
    assert!(problems.is_empty(), "{problems:?}: {}", outcome.describe());
    outcome
}

/// `umbral bound` of the Reissner–Nordström charge at 25° from `measurement` in `dir`, JSON.
fn bound_q(dir: &std::path::Path, measurement: &str) -> common::Outcome {
    umbral(
        dir,
        &[
            "bound",
            "--metric",
            "reissner-nordstrom",
            "--vary",
            "q=0:1",
            "--inclination",
            "25",
            "--measurement",
            measurement,
            "--json",
        ],
    )
}

#[test]
fn image_json_has_the_documented_keys_and_writes_every_file_kind() {
    let dir = scratch("image_cli", "keys");
    for (file, magic) in [
        ("disk.npy", &b"\x93NUMPY"[..]),
        ("disk.fits", &b"SIMPLE  ="[..]),
        ("disk.png", &b"\x89PNG"[..]),
    ] {
        let out = umbral(
            &dir,
            &[
                "image",
                "--metric",
                "kerr",
                "--set",
                "a=0.5",
                "--inclination",
                "40",
                "--emission",
                "disk-horizon",
                "--pixels",
                "32",
                "--field",
                "20",
                "--blur-uas",
                "10",
                "--theta-g-uas",
                "5",
                "--out",
                file,
                "--json",
            ],
        );
        assert_eq!(out.code, Some(0), "{}", out.describe());
        let bytes = std::fs::read(dir.join(file)).unwrap();
        assert!(bytes.starts_with(magic), "{file}");
        let json: serde_json::Value = serde_json::from_str(&out.stdout_text()).unwrap();
        for key in [
            "metric",
            "parameters",
            "inclination_deg",
            "emission",
            "pixels",
            "field_m",
            "ring",
            "inner_shadow",
            "critical_curve",
            "calibration_ratio",
            "diagnostics",
        ] {
            assert!(json.get(key).is_some(), "missing {key}");
        }
        for key in [
            "diameter",
            "width",
            "asymmetry_angle_deg",
            "asymmetry_contrast",
        ] {
            assert!(json["ring"].get(key).is_some(), "missing ring.{key}");
        }
        assert!(json["inner_shadow"]["mean_radius"].as_f64().unwrap() > 2.0);
        let critical = json["critical_curve"]["mean_radius"].as_f64().unwrap();
        let ratio = json["calibration_ratio"].as_f64().unwrap();
        let diameter = json["ring"]["diameter"].as_f64().unwrap();
        assert!((ratio - diameter / (2.0 * critical)).abs() < 1e-12);
        assert_eq!(json["diagnostics"]["failed_rays"], 0);
    }
    // Infall has no inner edge at the horizon: the inner shadow is null.
    let out = umbral(
        &dir,
        &[
            "image",
            "--metric",
            "schwarzschild",
            "--inclination",
            "0",
            "--emission",
            "infall",
            "--pixels",
            "24",
            "--json",
        ],
    );
    assert_eq!(out.code, Some(0), "{}", out.describe());
    let json: serde_json::Value = serde_json::from_str(&out.stdout_text()).unwrap();
    assert!(json["inner_shadow"].is_null());
}

#[test]
fn bad_image_and_calibration_requests_are_one_line_errors() {
    let dir = scratch("image_cli", "errors");
    let cases: &[(&[&str], &str)] = &[
        (
            &[
                "image",
                "--metric",
                "kerr",
                "--set",
                "a=0.5",
                "--inclination",
                "40",
                "--out",
                "x.jpg",
            ],
            ".npy, .fits or .png",
        ),
        (
            &["image", "--metric", "kerr", "--inclination", "200"],
            "between 0 and 180",
        ),
        (
            &[
                "image",
                "--metric",
                "kerr",
                "--inclination",
                "30",
                "--emission",
                "jet",
            ],
            "unknown emission model",
        ),
        (
            &[
                "image",
                "--metric",
                "kerr",
                "--inclination",
                "30",
                "--blur-uas",
                "10",
            ],
            "needs --theta-g-uas",
        ),
        (
            &[
                "image",
                "--metric",
                "kerr",
                "--inclination",
                "30",
                "--pixels",
                "0",
            ],
            "--pixels",
        ),
        (
            &[
                "image",
                "--metric",
                "kerr",
                "--inclination",
                "30",
                "--field",
                "-3",
            ],
            "--field",
        ),
        (
            &[
                "image",
                "--metric",
                "kerr",
                "--inclination",
                "30",
                "--blur-m",
                "-1",
            ],
            "--blur-m",
        ),
        (
            &[
                "image",
                "--metric",
                "kerr",
                "--inclination",
                "30",
                "--observer-radius",
                "1.5",
            ],
            "observer radius",
        ),
        (
            &[
                "image",
                "--metric",
                "schwarzschild",
                "--inclination",
                "30",
                "--emission",
                "infall",
                "--order",
                "1",
            ],
            "thin-disk",
        ),
        (
            &[
                "image",
                "--metric",
                "jnw",
                "--set",
                "nu=0.4",
                "--inclination",
                "30",
                "--emission",
                "disk-horizon",
            ],
            "no horizon",
        ),
        (
            &[
                "calibrate",
                "--metric",
                "kerr",
                "--inclination",
                "30",
                "--resolution-uas",
                "0",
                "--theta-g-uas",
                "5",
            ],
            "--resolution-uas",
        ),
        (
            &[
                "calibrate",
                "--metric",
                "kerr",
                "--inclination",
                "30",
                "--resolution-uas",
                "20",
                "--theta-g-uas",
                "5",
                "--out",
                "k.txt",
            ],
            ".json",
        ),
        (
            &[
                "calibrate",
                "--metric",
                "kerr",
                "--inclination",
                "30",
                "--resolution-uas",
                "20",
                "--theta-g-uas",
                "5",
                "--models",
                "missing.toml",
            ],
            "cannot read model list",
        ),
    ];
    for (args, needle) in cases {
        let out = umbral(&dir, args);
        out.assert_usage_error(needle);
    }
}

#[test]
fn a_calibration_file_feeds_kappa_to_a_bound_and_says_so() {
    let dir = scratch("image_cli", "calibrated");
    let models = "[[model]]\nname = \"disk-isco\"\n[[model]]\nname = \"infall\"\n";
    std::fs::write(dir.join("models.toml"), models).unwrap();
    let out = umbral(
        &dir,
        &[
            "calibrate",
            "--metric",
            "kerr",
            "--set",
            "a=0.6",
            "--inclination",
            "25",
            "--resolution-uas",
            "10",
            "--theta-g-uas",
            "2.9134",
            "--pixels",
            "48",
            "--models",
            "models.toml",
            "--out",
            "calibration.json",
        ],
    );
    assert_eq!(out.code, Some(0), "{}", out.describe());
    let calibration: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("calibration.json")).unwrap())
            .unwrap();
    let kappa = calibration["kappa"]["mean"].as_f64().unwrap();
    let spread = calibration["kappa"]["spread"].as_f64().unwrap();
    assert_eq!(calibration["kappa"]["models"], 2);
    assert!(kappa > 0.5 && kappa < 2.0 && spread >= 0.0);
    std::fs::write(
        dir.join("measurement.toml"),
        common::repo_file("examples/measurement_ring_calibrated.toml"),
    )
    .unwrap();
    let out = bound_q(&dir, "measurement.toml");
    assert_eq!(out.code, Some(0), "{}", out.describe());
    let text = out.stdout_text();
    assert!(
        text.contains("computed by umbral (calibration file 'calibration.json')"),
        "{text}"
    );
    assert!(
        text.contains(&format!("kappa = {kappa:.4} +- {spread:.4}")),
        "{text}"
    );
}

#[test]
fn a_computed_kappa_is_calibrated_before_the_bound() {
    let dir = scratch("image_cli", "computed");
    let text = common::edited(
        &common::repo_file("examples/measurement_ring_computed.toml"),
        &[("pixels = 64", "pixels = 32\nmodels = \"models.toml\"")],
    );
    std::fs::write(dir.join("measurement.toml"), text).unwrap();
    std::fs::write(
        dir.join("models.toml"),
        "[[model]]\nname = \"disk-horizon\"\n[[model]]\nname = \"infall\"\n",
    )
    .unwrap();
    let out = bound_q(&dir, "measurement.toml");
    assert_eq!(out.code, Some(0), "{}", out.describe());
    assert!(out
        .stdout_text()
        .contains("computed by umbral (computed for this run)"));
    // Without the calibration table, a one-line error naming it.
    let full = common::repo_file("examples/measurement_ring_computed.toml");
    let cut = full
        .find("[size.ring.calibration]")
        .expect("the example has the table");
    std::fs::write(dir.join("bad.toml"), &full[..cut]).unwrap();
    bound_q(&dir, "bad.toml").assert_usage_error("needs a [size.ring.calibration] table");
}
