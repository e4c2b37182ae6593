//! `umbral shadow`: the critical curve and its observables for one metric and observer.

use super::args::{parse_finite, parse_set_family, MetricChoice};
use super::figure::{symbol, write_figure, FigureStyle, Theme};
use super::plot::{screen_curves, stage_plot, ScreenCurve, ScreenFigure};
use super::tables::{decimals_for, fixed, Column, Table};
use super::CliError;
use clap::{Args, ValueEnum};
use std::path::Path;
use umbral::metric::Spacetime;
use umbral::numfmt::{short, Num};
pub use umbral::observables::ShadowReport;
use umbral::observables::{shadow_report, CentreChoice, Observables, Quantity};
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
    /// Print JSON instead of a table: always a list, one element per parameter value.
    #[arg(long)]
    json: bool,
    /// Print the observables as a LaTeX (booktabs) table, one row per parameter value.
    #[arg(long, conflicts_with = "json")]
    latex: bool,
    /// Write the curve(s) as CSV: one row per curve point with the parameters, the point,
    /// its photon orbit where the solver knows it, and the curve's observables; a comment
    /// header names umbral's version, the command and the assumptions.
    #[arg(long, value_name = "FILE")]
    csv: Option<String>,
    /// Write a figure of the curve(s): SVG, PNG or PDF by the extension.
    #[arg(long, value_name = "FILE")]
    plot: Option<String>,
    /// Figure sizes: for a paper column or for a slide.
    #[arg(long, value_enum, default_value = "paper")]
    style: FigureStyle,
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
        Some(t) => format!("  ({} uas)", fixed(x * t, 4)),
        None => String::new(),
    };
    let row = |name: &str, x: f64, unit: &str, scaled: bool| {
        outln!(
            "  {name:<28}{:>20} {unit}{}",
            fixed(x, 12),
            if scaled { uas(x) } else { String::new() }
        )
    };
    if let Some(why) = rep.diagnostics.tolerance_shortfall() {
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
    let row = |name: &str, x: f64, unit: &str| outln!("  {name:<28}{:>20} {unit}", fixed(x, 12));
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
                "  {:<28}{:>20} .. {}",
                "ring exponent gamma",
                fixed(e.gamma_min, 12),
                fixed(e.gamma_max, 12)
            )?;
        }
    }
    if let Some(why) = &rep.exponents_undefined {
        println!("  {:<28}{:>20} ({why})", "ring exponent gamma", "undefined");
    }
    if let Some([lo, hi]) = o.photon_orbit_radii {
        outln!(
            "  {:<28}{:>20} .. {} M",
            "photon orbit radii",
            fixed(lo, 12),
            fixed(hi, 12)
        )?;
    }
    if let Some(x) = &rep.spherical {
        row(
            "strong deflection abar",
            x.strong_deflection_coefficient,
            "",
        )?;
        if let Some(r) = x.areal_photon_sphere_radius {
            row("photon sphere, areal", r, "M")?;
        }
        if let Some(r) = x.areal_horizon_radius {
            row("horizon, areal", r, "M")?;
        }
    }
    Ok(())
}

/// What every curve of a run assumed, in words.
fn assumptions(rep: &ShadowReport, settings: &ShadowSettings, centre: CentreChoice) -> String {
    format!(
        "inclination {} deg, {}, solver {} ({} points, boundary tolerance {} M), radii about the {}",
        short(rep.inclination_deg, 6),
        match rep.observer_radius {
            Some(r) => format!("observer at r = {} M", short(r, 6)),
            None => "distant observer".to_string(),
        },
        rep.solver,
        settings.points,
        Num(settings.tolerance),
        match centre {
            CentreChoice::Centroid => "area centroid",
            CentreChoice::Midpoint => "horizontal midpoint",
        }
    )
}

/// The parameters that differ between the members of a family (all of them for one member).
fn varying(reports: &[ShadowReport]) -> Vec<String> {
    let first = &reports[0].parameters;
    let names: Vec<String> = first
        .keys()
        .filter(|k| {
            reports
                .iter()
                .any(|r| r.parameters.get(*k) != first.get(*k))
        })
        .cloned()
        .collect();
    if names.is_empty() {
        first.keys().cloned().collect()
    } else {
        names
    }
}

/// One row per family member: the varied parameters, the solver, and the observables to the
/// decimals the boundary tolerance supports.
fn family_table(
    reports: &[ShadowReport],
    settings: &ShadowSettings,
    theta_g: Option<f64>,
) -> Table {
    let names = varying(reports);
    let d = decimals_for(settings.tolerance);
    let mut columns: Vec<Column> = names
        .iter()
        .map(|n| Column::new(n.clone(), format!("${}$", latex_symbol(n))))
        .collect();
    columns.extend([
        Column::new("solver", "solver"),
        Column::new("mean radius (M)", "$\\bar r/M$"),
        Column::new("area radius (M)", "$r_A/M$"),
        Column::new("circularity deviation", "$\\Delta C$"),
        Column::new("centroid offset (M)", "$\\delta\\alpha/M$"),
        Column::new("fractional deviation", "$\\delta$"),
        Column::new("gamma", "$\\gamma$"),
    ]);
    if theta_g.is_some() {
        columns.push(Column::new("mean diameter (uas)", "$2\\bar r$ ($\\mu$as)"));
    }
    let mut rows = Vec::new();
    for rep in reports {
        let mut row: Vec<String> = names
            .iter()
            .map(|n| short(rep.parameters.get(n).copied().unwrap_or(f64::NAN), 12))
            .collect();
        row.push(rep.solver.to_string());
        match &rep.observables {
            Some(o) => {
                row.push(fixed(o.mean_radius, d));
                row.push(fixed(o.area_radius, d));
                // Pure numbers of order r/M's relative accuracy, tolerance / 5 M.
                row.push(fixed(
                    o.circularity_deviation,
                    decimals_for(settings.tolerance / 5.0),
                ));
                row.push(fixed(o.centroid_offset, d));
                row.push(fixed(
                    o.fractional_deviation_mean,
                    decimals_for(settings.tolerance / 5.0),
                ));
                row.push(match &rep.exponents {
                    Some(e) if e.gamma_min == e.gamma_max => fixed(e.gamma_min, 6),
                    Some(e) => format!("{}..{}", fixed(e.gamma_min, 6), fixed(e.gamma_max, 6)),
                    None => "-".to_string(),
                });
                if let Some(t) = theta_g {
                    row.push(fixed(
                        2.0 * o.mean_radius * t,
                        decimals_for(settings.tolerance * t),
                    ));
                }
            }
            None => {
                let blanks = if theta_g.is_some() { 7 } else { 6 };
                row.extend(std::iter::repeat_n("-".to_string(), blanks));
                if let Some(cell) = row.get_mut(names.len() + 1) {
                    *cell = rep.status.to_string();
                }
            }
        }
        rows.push(row);
    }
    Table { columns, rows }
}

/// A parameter name in LaTeX math: Greek names as commands, trailing digits as a subscript.
fn latex_symbol(name: &str) -> String {
    let split = name.trim_end_matches(|c: char| c.is_ascii_digit()).len();
    let (stem, digits) = name.split_at(split);
    let greek = [
        "alpha", "beta", "gamma", "delta", "epsilon", "zeta", "eta", "theta", "kappa", "lambda",
        "mu", "nu", "xi", "rho", "sigma", "tau", "phi", "chi", "psi", "omega",
    ];
    let stem = match stem {
        "eps" => "\\epsilon".to_string(),
        s if greek.contains(&s) => format!("\\{s}"),
        s => s.replace('_', "\\_"),
    };
    if digits.is_empty() {
        stem
    } else {
        format!("{stem}_{{{digits}}}")
    }
}

/// The curves as CSV: a comment header (umbral's version, the command, the assumptions),
/// then one row per curve point with its family member's parameters, the point, its photon
/// orbit (radius and γ, empty where the solver does not know them) and the member's
/// observables.
fn csv_text(reports: &[ShadowReport], settings: &ShadowSettings, centre: CentreChoice) -> String {
    let command: Vec<String> = std::iter::once("umbral".to_string())
        .chain(std::env::args().skip(1))
        .map(|a| {
            if a.contains([' ', '"', '\'']) {
                format!("'{a}'")
            } else {
                a
            }
        })
        .collect();
    let mut text = format!(
        "# umbral {} critical curves\n# command: {}\n# assumptions: {}\n",
        env!("CARGO_PKG_VERSION"),
        command.join(" "),
        assumptions(&reports[0], settings, centre)
    );
    let names: Vec<String> = reports[0].parameters.keys().cloned().collect();
    let quantities = [
        Quantity::MeanRadius,
        Quantity::AreaRadius,
        Quantity::CircularityDeviation,
        Quantity::CentroidOffset,
        Quantity::FractionalDeviationMean,
    ];
    let mut head: Vec<String> = vec!["member".into()];
    head.extend(names.iter().cloned());
    head.extend(["point", "alpha", "beta", "orbit_radius", "gamma"].map(String::from));
    head.extend(quantities.iter().map(|q| q.name().to_string()));
    text.push_str(&head.join(","));
    text.push('\n');
    let num = |x: f64| format!("{x:.17e}");
    for (i, rep) in reports.iter().enumerate() {
        let Some(c) = &rep.curve else { continue };
        let observed: Vec<String> = quantities
            .iter()
            .map(|q| {
                rep.observables
                    .as_ref()
                    .map(|o| num(o.get(*q)))
                    .unwrap_or_default()
            })
            .collect();
        for (k, (a, b)) in c.alpha.iter().zip(&c.beta).enumerate() {
            let mut row = vec![i.to_string()];
            row.extend(names.iter().map(|n| umbral::numfmt::num(rep.parameters[n])));
            row.extend([k.to_string(), num(*a), num(*b)]);
            let orbit = rep.orbits.as_ref().and_then(|o| o.get(k));
            row.push(orbit.map(|o| num(o.radius)).unwrap_or_default());
            row.push(orbit.and_then(|o| o.gamma).map(num).unwrap_or_default());
            row.extend(observed.iter().cloned());
            text.push_str(&row.join(","));
            text.push('\n');
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
                    .map(|(k, v)| format!("{} = {}", symbol(k), umbral::numfmt::short(*v, 6)))
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
        let text = csv_text(&reports, &settings, centre);
        outputs.write(Path::new(path), text.as_bytes())?;
    }
    if let Some(path) = &args.plot {
        let curves = screen_curves_of(&reports);
        let title = format!(
            "{} critical curve{}, θₒ = {}°",
            metrics[0].info().title,
            if curves.len() > 1 { "s" } else { "" },
            umbral::numfmt::short(inclination_deg, 6)
        );
        let theme = Theme::new(args.style);
        let figure = ScreenFigure {
            title: &title,
            curves: &curves,
            theta_g_uas: theta_g,
        };
        let svg = screen_curves(path, &theme, &figure)?;
        write_figure(&mut outputs, path, &svg, &theme)?;
    }
    if args.json {
        let text = serde_json::to_string_pretty(&reports).expect("serialisable");
        outln!("{text}")?;
    } else if args.latex {
        let caption = format!(
            "{}: observables of the critical curve, {}",
            metrics[0].info().title,
            assumptions(&reports[0], &settings, centre)
        );
        super::out::write_text(&family_table(&reports, &settings, theta_g).latex(&caption))?;
    } else if reports.len() == 1 {
        print_table(&reports[0], theta_g)?;
    } else {
        outln!(
            "{}: {}",
            metrics[0].info().title,
            assumptions(&reports[0], &settings, centre)
        )?;
        super::out::write_text(&family_table(&reports, &settings, theta_g).terminal())?;
        for rep in reports.iter().filter(|r| r.reason.is_some()) {
            outln!(
                "  {}: {}",
                super::args::parameter_summary(&rep.parameters),
                rep.reason.as_deref().unwrap_or_default()
            )?;
        }
    }
    outputs.commit()?;
    Ok(())
}
