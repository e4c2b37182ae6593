//! `umbral infer --plot`: the corner plot is written by a converged run only, all or nothing,
//! and a bad path is refused before any sampling.

mod common;

use std::path::Path;
use std::time::Duration;

const RADIUS: &str = "[size.shadow_radius]\nvalue = 5.0\nsigma = 0.2\n";

/// `umbral infer` of the RN charge from `r.toml` in `dir`, killed after `seconds`.
fn infer(dir: &Path, extra: &[&str], seconds: u64) -> common::Outcome {
    let args: Vec<&str> = [
        "--quiet",
        "infer",
        "--metric",
        "reissner-nordstrom",
        "--prior",
        "q=uniform:0:1",
        "--measurement",
        "r.toml",
    ]
    .into_iter()
    .chain(extra.iter().copied())
    .collect();
    let mut invocation = common::Invocation::new(dir, args);
    invocation.timeout = Duration::from_secs(seconds);
    let out = invocation.run();
    assert!(out.universal_problems().is_empty(), "{}", out.describe());
    out
}

/// A converged run (6000 steps at seed 1 converge: split R-hat 1.004, ESS about 1500) writes
/// an SVG with the parameter's axis label, the density axis and the key (the smoothed density
/// over the histogram), the smoothing rule and the prior edges it reflects at in the notes;
/// the samples and the plot appear together.
#[test]
fn a_converged_run_writes_the_corner_plot() {
    let dir = common::scratch("posterior_plot", "converged");
    std::fs::write(dir.join("r.toml"), RADIUS).unwrap();
    let out = infer(
        &dir,
        &[
            "--steps",
            "6000",
            "--seed",
            "1",
            "--plot",
            "corner.svg",
            "--out",
            "run",
        ],
        300,
    );
    assert_eq!(out.code, Some(0), "{}", out.describe());
    assert!(
        out.stdout_text().contains("converged"),
        "{}",
        out.describe()
    );
    let svg = std::fs::read_to_string(dir.join("corner.svg")).unwrap();
    assert!(svg.starts_with("<svg"), "{}", common::clip(&svg, 200));
    assert!(svg.trim_end().ends_with("</svg>"));
    // Text elements hold their text on a line of its own.
    let lines: Vec<&str> = svg.lines().map(str::trim).collect();
    for label in [
        "q",
        "posterior density",
        "median and 68% equal-tailed interval",
        "smoothed density",
        "histogram",
        "Densities reflected at the prior edges (Silverman 1986, §2.10): q at 0 and 1.",
    ] {
        assert!(lines.contains(&label), "no text '{label}' in the SVG");
    }
    assert!(svg.contains("(Silverman)") && svg.contains("(Scott)"));
    assert!(
        !svg.contains("highest-density region"),
        "one parameter has no pair to outline"
    );
    // The density's filled area (no outline: the renderer's default stroke is turned off)
    // and its curve, a blue polyline of many points (at least 200 cells).
    assert!(
        svg.contains("<polygon stroke=\"none\""),
        "the density is filled"
    );
    assert!(
        !svg.contains("<polygon fill="),
        "a polygon without stroke=\"none\""
    );
    let points = svg
        .lines()
        // The figure cycle's blue, 2 px wide (drawn at ten units per pixel).
        .filter(|l| l.contains("<polyline") && l.contains("stroke=\"#0072B2\" stroke-width=\"20\""))
        .map(|l| l.matches(',').count())
        .max();
    assert!(
        points >= Some(200),
        "the smoothed density's curve: {points:?} points"
    );
    assert_eq!(common::listing(&dir), ["corner.svg", "r.toml", "run"]);
    assert_eq!(common::listing(&dir.join("run")), ["samples.csv"]);
}

/// An unconverged run writes neither samples nor a plot, leaves no temporary and exits 3; an
/// existing plot of that name is kept as it was.
#[test]
fn an_unconverged_run_writes_no_plot() {
    let dir = common::scratch("posterior_plot", "unconverged");
    std::fs::write(dir.join("r.toml"), RADIUS).unwrap();
    let out = infer(
        &dir,
        &["--steps", "40", "--max-steps", "40", "--plot", "corner.svg"],
        60,
    );
    assert_eq!(out.code, Some(3), "{}", out.describe());
    assert!(out.stdout_text().starts_with("NOT CONVERGED"));
    assert_eq!(common::listing(&dir), ["r.toml"]);
    std::fs::write(dir.join("old.svg"), "<svg>old</svg>").unwrap();
    let out = infer(
        &dir,
        &["--steps", "40", "--max-steps", "40", "--plot", "old.svg"],
        60,
    );
    assert_eq!(out.code, Some(3), "{}", out.describe());
    assert_eq!(
        std::fs::read_to_string(dir.join("old.svg")).unwrap(),
        "<svg>old</svg>"
    );
    assert_eq!(common::listing(&dir), ["old.svg", "r.toml"]);
}

/// A path that is not an SVG file name, or in a folder that does not exist, is a one-line
/// error with exit code 2 before any sampling (ten million steps would take hours).
#[test]
fn a_bad_plot_path_fails_before_sampling() {
    let dir = common::scratch("posterior_plot", "bad");
    std::fs::write(dir.join("r.toml"), RADIUS).unwrap();
    for (path, needle) in [
        ("corner.jpg", "the extension must be .svg, .png or .pdf"),
        (
            "no-such-folder/corner.svg",
            "cannot write figure 'no-such-folder/corner.svg'",
        ),
    ] {
        // Killed (and failed) after 10 s if it started sampling.
        let out = infer(
            &dir,
            &[
                "--steps",
                "10000000",
                "--max-steps",
                "10000000",
                "--plot",
                path,
            ],
            10,
        );
        out.assert_usage_error(needle);
        assert_eq!(common::listing(&dir), ["r.toml"]);
    }
}
