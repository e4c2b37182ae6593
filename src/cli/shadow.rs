//! `umbral shadow`: the critical curve and its observables for one metric and observer.

use super::args::{parse_finite, parse_set_family, MetricChoice};
use super::plot::{screen_curves, stage_plot, write_plot, ScreenCurve};
use super::CliError;
use clap::{Args, ValueEnum};
use std::path::Path;
use umbral::metric::Spacetime;
use umbral::numfmt::Num;
use umbral::observables::{shadow_report, CentreChoice, Observables, Quantity, ShadowReport};
use umbral::output::OutputTransaction;
use umbral::shadow::{self, Observer, ShadowSettings, SolverChoice};

#[derive(Debug, Clone, Copy, ValueEnum)]
enum CentreArg {
    Centroid,
    Midpoint,
}

#[derive(Debug, Args)]
pub struct ShadowArgs {
    #[command(flatten)]
    metric: MetricChoice,
    /// Parameter assignment NAME=VALUE (repeatable); one parameter may take a comma list
    /// (`--set a=0,0.5,0.9`) to draw a family.
    #[arg(long = "set", value_name = "NAME=VALUE")]
    set: Vec<String>,
    /// Observer inclination from the spin axis, in degrees (0 to 180).
    #[arg(long, allow_hyphen_values = true)]
    inclination: String,
    /// Observer radius in M (default: a distant observer).
    #[arg(long = "observer-radius", allow_hyphen_values = true)]
    observer_radius: Option<String>,
    /// Number of curve points, uniform in screen polar angle.
    #[arg(long, default_value_t = 256)]
    points: usize,
    /// Solver: auto (the first that applies) or a registered solver's name.
    #[arg(long, default_value = "auto", value_parser = clap::builder::PossibleValuesParser::new(SolverChoice::names()))]
    solver: String,
    /// Boundary tolerance in M, from 1e-12 to 1e-3.
    #[arg(long, default_value = "1e-8", allow_hyphen_values = true)]
    tolerance: String,
    /// Centre the radius observables are measured about.
    #[arg(long, value_enum, default_value = "centroid")]
    centre: CentreArg,
    /// Angular gravitational radius theta_g = GM/(c^2 D) in micro-arcseconds, to print sizes in uas.
    #[arg(long = "mass-distance-uas", allow_hyphen_values = true)]
    mass_distance_uas: Option<String>,
    /// Print JSON instead of a table.
    #[arg(long)]
    json: bool,
    /// Write the curve(s) as CSV.
    #[arg(long, value_name = "FILE")]
    csv: Option<String>,
    /// Write an SVG figure of the curve(s).
    #[arg(long, value_name = "FILE.svg")]
    plot: Option<String>,
}

fn settings_from(args: &ShadowArgs) -> Result<(f64, Observer, ShadowSettings), CliError> {
    let inclination = parse_finite(&args.inclination, "--inclination")?;
    if !(0.0..=180.0).contains(&inclination) {
        return Err(CliError::usage(format!(
            "--inclination must lie between 0 and 180 degrees, got {}",
            Num(inclination)
        )));
    }
    let observer = match &args.observer_radius {
        None => Observer::distant(inclination.to_radians()),
        Some(text) => {
            let r = parse_finite(text, "--observer-radius")?;
            if r <= 0.0 {
                return Err(CliError::usage(format!(
                    "--observer-radius must be positive, got {}",
                    Num(r)
                )));
            }
            Observer::at_radius(inclination.to_radians(), r)
        }
    };
    let tolerance = parse_finite(&args.tolerance, "--tolerance")?;
    if tolerance <= 0.0 {
        return Err(CliError::usage(format!(
            "--tolerance must be positive, got {}",
            Num(tolerance)
        )));
    }
    if shadow::check_points(args.points).is_err() {
        return Err(CliError::usage(format!(
            "--points must lie between {} and {}, got {}",
            shadow::MIN_POINTS,
            shadow::MAX_POINTS,
            args.points
        )));
    }
    let solver: SolverChoice = args
        .solver
        .parse()
        .map_err(|e: shadow::ShadowError| CliError::usage(format!("--solver: {e}")))?;
    Ok((
        inclination,
        observer,
        ShadowSettings {
            points: args.points,
            tolerance,
            solver,
        },
    ))
}

fn print_table(rep: &ShadowReport, theta_g: Option<f64>) -> Result<(), CliError> {
    outln!(
        "{} ({}), inclination {} deg, {} observer, solver {}",
        rep.metric,
        super::args::parameter_summary(&rep.parameters),
        rep.inclination_deg,
        match rep.observer_radius {
            Some(r) => format!("r_o = {r} M"),
            None => "distant".into(),
        },
        rep.solver
    )?;
    let Some(o) = &rep.observables else {
        outln!(
            "  no shadow: {}",
            rep.reason.as_deref().unwrap_or("no critical curve")
        )?;
        return Ok(());
    };
    let uas = |x: f64| match theta_g {
        Some(t) => format!("  ({:.4} uas)", x * t),
        None => String::new(),
    };
    let row = |name: &str, x: f64, unit: &str, scaled: bool| {
        outln!(
            "  {name:<28}{x:>20.12} {unit}{}",
            if scaled { uas(x) } else { String::new() }
        )
    };
    if let Some(checks) = rep
        .diagnostics
        .raytrace
        .as_ref()
        .filter(|c| !c.tolerance_met)
    {
        let why = checks.accuracy_note.as_deref().unwrap_or("no estimate");
        outln!("  TOLERANCE NOT MET: {why}")?;
    }
    outln!("  centre: {}", o.centre.name())?;
    let quantity = |q: Quantity| row(q.label(), o.get(q), q.unit(), q.unit() == "M");
    quantity(Quantity::MeanRadius)?;
    quantity(Quantity::AreaRadius)?;
    row("mean diameter", 2.0 * o.mean_radius, "M", true)?;
    for q in [
        Quantity::CircularityDeviation,
        Quantity::CentroidOffset,
        Quantity::MidpointOffset,
        Quantity::Width,
        Quantity::Height,
        Quantity::AxisRatio,
        Quantity::HiokiMaedaRadius,
        Quantity::HiokiMaedaDistortion,
        Quantity::FractionalDeviationMean,
        Quantity::FractionalDeviationArea,
    ] {
        quantity(q)?;
    }
    print_orbit_rows(rep, o)
}

/// The rows about the horizon and the photon orbits: horizon radius, Lyapunov and ring
/// exponents (or why γ is undefined), photon orbit radii.
fn print_orbit_rows(rep: &ShadowReport, o: &Observables) -> Result<(), CliError> {
    let row = |name: &str, x: f64, unit: &str| outln!("  {name:<28}{x:>20.12} {unit}");
    if let Some(h) = o.horizon_radius {
        row("horizon radius", h, "M")?;
    }
    if let Some(e) = &rep.exponents {
        if let Some(l) = e.lyapunov {
            row("Lyapunov exponent", l, "1/M")?;
        }
        if e.gamma_min == e.gamma_max {
            row("ring exponent gamma", e.gamma_min, "")?;
        } else {
            outln!(
                "  {:<28}{:>20.12} .. {:.12}",
                "ring exponent gamma",
                e.gamma_min,
                e.gamma_max
            )?;
        }
    }
    if let Some(why) = &rep.exponents_undefined {
        println!("  {:<28}{:>20} ({why})", "ring exponent gamma", "undefined");
    }
    if let Some([lo, hi]) = o.photon_orbit_radii {
        outln!("  {:<28}{lo:>20.12} .. {hi:.12} M", "photon orbit radii")?;
    }
    Ok(())
}

/// The curves as CSV text.
fn csv_text(reports: &[ShadowReport]) -> String {
    let mut text = String::from("curve,alpha,beta\n");
    for (i, rep) in reports.iter().enumerate() {
        if let Some(c) = &rep.curve {
            for (a, b) in c.alpha.iter().zip(&c.beta) {
                text.push_str(&format!("{i},{a:.17e},{b:.17e}\n"));
            }
        }
    }
    text
}

/// The solved curves for the plot, each labelled by its parameters.
fn screen_curves_of(reports: &[ShadowReport]) -> Vec<ScreenCurve> {
    reports
        .iter()
        .filter_map(|rep| {
            rep.curve.as_ref().map(|c| ScreenCurve {
                label: rep
                    .parameters
                    .iter()
                    .map(|(k, v)| format!("{k} = {v}"))
                    .collect::<Vec<_>>()
                    .join(", "),
                alpha: c.alpha.clone(),
                beta: c.beta.clone(),
            })
        })
        .collect()
}

/// `--mass-distance-uas`: θ_g in micro-arcseconds, positive.
fn theta_g_from(text: Option<&str>) -> Result<Option<f64>, CliError> {
    Ok(match text {
        Some(t) => {
            let theta_g = parse_finite(t, "--mass-distance-uas")?;
            if theta_g <= 0.0 {
                return Err(CliError::usage(format!(
                    "--mass-distance-uas must be positive, got {}",
                    Num(theta_g)
                )));
            }
            Some(theta_g)
        }
        None => None,
    })
}

pub fn run(args: &ShadowArgs) -> Result<(), CliError> {
    if let Some(path) = &args.plot {
        super::args::check_svg_path(path)?;
    }
    let (inclination_deg, observer, settings) = settings_from(args)?;
    let theta_g = theta_g_from(args.mass_distance_uas.as_deref())?;
    let centre = match args.centre {
        CentreArg::Centroid => CentreChoice::Centroid,
        CentreArg::Midpoint => CentreChoice::Midpoint,
    };
    let family = parse_set_family(&args.set)?;
    let source = args.metric.resolve()?;
    // Build every member first, so a bad value fails before any work.
    let metrics: Vec<Box<dyn Spacetime>> = family
        .iter()
        .map(|assignments| source.build(assignments))
        .collect::<Result<_, _>>()?;
    // Files appear only when the whole command succeeds; a bad path fails before any work.
    let mut outputs = OutputTransaction::new();
    if let Some(path) = &args.csv {
        outputs.stage(Path::new(path))?;
    }
    if let Some(path) = &args.plot {
        stage_plot(&mut outputs, path)?;
    }
    let reports: Vec<ShadowReport> = metrics
        .iter()
        .map(|m| {
            shadow_report(m.as_ref(), inclination_deg, &observer, &settings, centre)
                .map_err(|e| CliError::usage(e.to_string()))
        })
        .collect::<Result<_, _>>()?;
    if let Some(path) = &args.csv {
        outputs.write(Path::new(path), csv_text(&reports).as_bytes())?;
    }
    if let Some(path) = &args.plot {
        let curves = screen_curves_of(&reports);
        let title = format!(
            "{} shadow, inclination {inclination_deg} deg",
            source.name()
        );
        write_plot(&mut outputs, path, &screen_curves(path, &title, &curves)?)?;
    }
    if args.json {
        let text = if reports.len() == 1 {
            serde_json::to_string_pretty(&reports[0])
        } else {
            serde_json::to_string_pretty(&reports)
        };
        outln!("{}", text.expect("serialisable"))?;
    } else {
        for rep in &reports {
            print_table(rep, theta_g)?;
        }
    }
    outputs.commit()?;
    Ok(())
}
