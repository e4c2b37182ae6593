//! `umbral demo`: the job on the built-in invented scenario.
//!
//! The scenario is fiction: the nucleus of an invented giant elliptical galaxy, "Harrow's Reach",
//! with a made-up black-hole mass, distance and viewing angle. No real source or data is used.

use super::plot::{screen_curves, ScreenCurve};
use super::shadow::{shadow_report, ShadowReport};
use super::CliError;
use clap::Args;
use serde::Serialize;
use std::path::{Path, PathBuf};
use umbral::metric::Classification;
use umbral::metrics::build_metric;
use umbral::observables::CentreChoice;
use umbral::shadow::{Observer, ShadowSettings};

#[derive(Debug, Args)]
pub struct DemoArgs {
    /// Output folder.
    #[arg(long, default_value = "umbral-demo")]
    out: String,
}

/// The invented scenario.
#[derive(Debug, Serialize)]
struct Scenario {
    name: &'static str,
    mass_msun: f64,
    distance_mpc: f64,
    inclination_deg: f64,
    theta_g_uas: f64,
    note: &'static str,
}

/// GM☉/c² in metres from the IAU 2015 nominal solar mass parameter GM☉ = 1.3271244e20 m³ s⁻²
/// (IAU 2015 Resolution B3) and the exact c = 299 792 458 m s⁻¹ (SI).
const GM_SUN_OVER_C2_M: f64 = 1.327_124_4e20 / (299_792_458.0 * 299_792_458.0);
/// One megaparsec in metres (IAU 2012 Resolution B2: 1 au = 149 597 870 700 m; pc = au/tan(1″)).
const MPC_M: f64 = 3.085_677_581_491_367e22;
/// One micro-arcsecond in radians.
const UAS_RAD: f64 = std::f64::consts::PI / (180.0 * 3600.0 * 1e6);

/// θ_g = GM/(c²D) in micro-arcseconds.
fn theta_g_uas(mass_msun: f64, distance_mpc: f64) -> f64 {
    mass_msun * GM_SUN_OVER_C2_M / (distance_mpc * MPC_M) / UAS_RAD
}

fn scenario() -> Scenario {
    let (mass_msun, distance_mpc) = (5.4e9, 18.3);
    Scenario {
        name: "Harrow's Reach nucleus (an invented galaxy)",
        mass_msun,
        distance_mpc,
        inclination_deg: 25.0,
        theta_g_uas: theta_g_uas(mass_msun, distance_mpc),
        note: "all numbers are invented for this demonstration",
    }
}

fn write(path: &Path, text: &str) -> Result<(), CliError> {
    std::fs::write(path, text)
        .map_err(|e| CliError::usage(format!("cannot write '{}': {e}", path.display())))
}

fn family(
    inclination_deg: f64,
    metric: &str,
    parameter: &str,
    values: &[f64],
    observer: &Observer,
    settings: &ShadowSettings,
) -> Result<Vec<ShadowReport>, CliError> {
    values
        .iter()
        .map(|v| {
            let m = build_metric(metric, &[(parameter.to_string(), *v)])?;
            shadow_report(
                m.as_ref(),
                inclination_deg,
                observer,
                settings,
                CentreChoice::Centroid,
            )
        })
        .collect()
}

fn curves(reports: &[ShadowReport], parameter: &str) -> Vec<ScreenCurve> {
    reports
        .iter()
        .filter_map(|r| {
            r.curve.as_ref().map(|c| ScreenCurve {
                label: format!("{} = {}", parameter, r.parameters[parameter]),
                alpha: c.alpha.clone(),
                beta: c.beta.clone(),
            })
        })
        .collect()
}

fn table(reports: &[ShadowReport], parameter: &str, theta_g: f64) -> String {
    let mut t = format!(
        "| {parameter} | solver | mean diameter (M) | mean diameter (uas) | circularity deviation | centroid offset (M) | fractional deviation |\n|---|---|---|---|---|---|---|\n"
    );
    for r in reports {
        match &r.observables {
            Some(o) => t.push_str(&format!(
                "| {} | {} | {:.6} | {:.3} | {:.5} | {:.5} | {:+.5} |\n",
                r.parameters[parameter],
                r.solver,
                2.0 * o.mean_radius,
                2.0 * o.mean_radius * theta_g,
                o.circularity_deviation,
                o.centroid_offset,
                o.fractional_deviation_mean
            )),
            None => t.push_str(&format!(
                "| {} | {} | no shadow: {} | | | | |\n",
                r.parameters[parameter],
                r.solver,
                r.reason.as_deref().unwrap_or("")
            )),
        }
    }
    t
}

pub fn run(args: &DemoArgs) -> Result<(), CliError> {
    let out = PathBuf::from(&args.out);
    std::fs::create_dir_all(&out)
        .map_err(|e| CliError::usage(format!("cannot create '{}': {e}", out.display())))?;
    let sc = scenario();
    println!("umbral demo: {}", sc.name);
    println!(
        "  invented mass {:.2e} Msun, distance {} Mpc, inclination {} deg -> theta_g = {:.4} uas",
        sc.mass_msun, sc.distance_mpc, sc.inclination_deg, sc.theta_g_uas
    );

    // 1. The scenario's reference metric: Kerr at a moderate spin.
    let kerr = build_metric("kerr", &[("a".to_string(), 0.6)])?;
    let horizon = match kerr.classify() {
        Classification::BlackHole { outer_horizon } => outer_horizon,
        Classification::Horizonless => {
            return Err(CliError::usage(
                "internal: Kerr a = 0.6 reported no horizon",
            ))
        }
    };
    println!("  Kerr a = 0.6: outer horizon r+ = {horizon:.12} M");

    // 2. Shadows: the Kerr family and a charged spherical alternative.
    let observer = Observer::distant(sc.inclination_deg.to_radians());
    let settings = ShadowSettings::default();
    let kerr_family = family(
        sc.inclination_deg,
        "kerr",
        "a",
        &[0.0, 0.5, 0.9, 0.99],
        &observer,
        &settings,
    )?;
    let rn_family = family(
        sc.inclination_deg,
        "reissner-nordstrom",
        "q",
        &[0.0, 0.5, 0.8, 1.0],
        &observer,
        &settings,
    )?;
    let kerr_svg = out.join("kerr-family.svg");
    screen_curves(
        &kerr_svg.to_string_lossy(),
        &format!("Kerr shadows at {} deg", sc.inclination_deg),
        &curves(&kerr_family, "a"),
    )?;
    let rn_svg = out.join("reissner-nordstrom-family.svg");
    screen_curves(
        &rn_svg.to_string_lossy(),
        "Reissner-Nordstrom shadows",
        &curves(&rn_family, "q"),
    )?;

    #[derive(Serialize)]
    struct DemoJson<'a> {
        scenario: &'a Scenario,
        kerr_family: &'a [ShadowReport],
        reissner_nordstrom_family: &'a [ShadowReport],
    }
    let json = serde_json::to_string_pretty(&DemoJson {
        scenario: &sc,
        kerr_family: &kerr_family,
        reissner_nordstrom_family: &rn_family,
    })
    .expect("serialisable");
    let json_path = out.join("results.json");
    write(&json_path, &json)?;

    let report = format!(
        "# umbral demo: {name}\n\n\
         The job: predict the shadow (critical curve) of a black-hole metric as a distant observer sees it, and reduce \
         it to the numbers an image constrains. Everything here is set in an invented scenario: {note}.\n\n\
         * mass {mass:.2e} Msun, distance {dist} Mpc, so theta_g = GM/(c^2 D) = {tg:.4} uas \
         (IAU 2015 nominal GM_sun, IAU 2012 astronomical unit);\n\
         * inclination {inc} deg, distant observer; observables about the area centroid; \
         curves with {points} points, boundary tolerance {tol:e} M.\n\n\
         ## Kerr family\n\n![Kerr shadows](kerr-family.svg)\n\n{kt}\n\
         General relativity predicts a diameter near 2*3*sqrt(3) M = {gr:.4} M for any spin, and a nearly circular curve.\n\n\
         ## Reissner-Nordstrom family\n\n![Reissner-Nordstrom shadows](reissner-nordstrom-family.svg)\n\n{rt}\n\
         ## Caution\n\nA measured ring constrains the shadow only through the ring-to-shadow calibration (from emission \
         modelling) and the mass-to-distance prior, both from outside this tool: any bound is only as good as those.\n",
        name = sc.name,
        note = sc.note,
        mass = sc.mass_msun,
        dist = sc.distance_mpc,
        tg = sc.theta_g_uas,
        inc = sc.inclination_deg,
        points = settings.points,
        tol = settings.tolerance,
        kt = table(&kerr_family, "a", sc.theta_g_uas),
        rt = table(&rn_family, "q", sc.theta_g_uas),
        gr = 6.0 * 3f64.sqrt(),
    );
    let report_path = out.join("report.md");
    write(&report_path, &report)?;
    println!("{}", table(&kerr_family, "a", sc.theta_g_uas));
    println!("wrote:");
    for p in [&kerr_svg, &rn_svg, &json_path, &report_path] {
        println!("  {}", p.display());
    }
    Ok(())
}
