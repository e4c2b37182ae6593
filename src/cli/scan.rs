//! `umbral scan`: observables on a parameter grid, streamed to JSON lines and resumable.

use super::args::{checkpoint_message, parse_assignments, parse_finite, SizeMeasureArg};
use super::bound::parse_levels;
use super::figure::{write_figure, FigureStyle, Theme};
use super::interrupt;
use super::plot::stage_plot;
use super::plot_bounds::{exclusion_map, ExclusionMap};
use super::plot_scan::{observable_plot, ObservablePlot};
use super::progress::ProgressArgs;
use super::CliError;
use clap::Args;
use std::path::Path;
use umbral::measurement::Measurement;
use umbral::numfmt::{short, Num};
use umbral::observables::Quantity;
use umbral::output::OutputTransaction;
use umbral::run::Controls;
use umbral::scan::refine::{RefineError, RefineRequest, RefinedMap};
use umbral::scan::{GridAxis, ScanError, ScanRequest, ScanSummary};
use umbral::shadow::ShadowSettings;

#[derive(Debug, Args)]
pub struct ScanArgs {
    #[command(flatten)]
    metric: super::args::MetricChoice,
    /// Grid axis PARAM=LO:HI:N (once or twice); PARAM `inclination` varies the observer's
    /// inclination in degrees.
    #[arg(long, value_name = "PARAM=LO:HI:N", allow_hyphen_values = true)]
    grid: Vec<String>,
    /// Fixed parameter NAME=VALUE (repeatable).
    #[arg(long = "set", value_name = "NAME=VALUE", allow_hyphen_values = true)]
    set: Vec<String>,
    /// Observer inclination in degrees (0 to 180); leave it out when a grid axis is the
    /// inclination (`--grid inclination=LO:HI:N`).
    #[arg(long, allow_hyphen_values = true)]
    inclination: Option<String>,
    /// Output file, one JSON line per grid point (resumed if it exists).
    #[arg(long, value_name = "FILE.jsonl")]
    out: String,
    /// Measurement file (TOML), for the exclusion map.
    #[arg(long, value_name = "FILE")]
    measurement: Option<String>,
    /// Confidence levels of the exclusion map (default: the file's, or 0.68,0.95).
    #[arg(long, value_name = "P,P,...")]
    levels: Option<String>,
    /// Size of the critical curve compared with the measured radius.
    #[arg(long = "size-measure", value_enum, default_value = "mean")]
    size_measure: SizeMeasureArg,
    /// Figure (SVG, PNG or PDF by the extension): with one grid axis the observables against
    /// the parameter; with two, an exclusion map (needs --measurement).
    #[arg(long, value_name = "FILE")]
    plot: Option<String>,
    /// Observables drawn by a one-axis plot, by name, one panel each.
    #[arg(
        long,
        value_name = "NAME,NAME",
        default_value = "mean_radius,circularity_deviation"
    )]
    observables: String,
    /// Fine steps per grid step where an exclusion map's regions end (1: no refinement).
    #[arg(long, default_value_t = 4)]
    refine: usize,
    /// Figure sizes: for a paper column or for a slide.
    #[arg(long, value_enum, default_value = "paper")]
    style: FigureStyle,
    /// Record every horizonless point as no horizon (by default a horizonless object counts
    /// when a photon sphere bounds capture by its centre, and is marked horizonless).
    #[arg(long = "require-horizon")]
    require_horizon: bool,
    /// Curve points to start each critical curve from (uniform in screen polar angle):
    /// doubled, up to 1024, while the sampling error of any observable, estimated from every
    /// second and fourth point, exceeds the tolerance. A multiple of 4, at least 64 (the
    /// fewest the estimate is made from).
    #[arg(long, default_value_t = umbral::scan::DEFAULT_SCAN_POINTS)]
    points: usize,
    /// Boundary tolerance of each critical curve in M, from 1e-12 to 1e-3.
    #[arg(long, default_value = "1e-8", allow_hyphen_values = true)]
    tolerance: String,
    /// Compute only shard K of N (K from 0 to N-1: every N-th point from the K-th) into
    /// --out, a shard file for `umbral merge` (resumed if it exists; docs/cluster.md).
    #[arg(long, value_name = "K/N")]
    shard: Option<String>,
}

fn parse_axis(text: &str) -> Result<GridAxis, CliError> {
    let bad = || {
        CliError::usage(format!(
            "cannot read '--grid {text}': expected PARAM=LO:HI:N"
        ))
    };
    let (name, rest) = text.split_once('=').ok_or_else(bad)?;
    let parts: Vec<&str> = rest.split(':').collect();
    if parts.len() != 3 {
        return Err(bad());
    }
    let name = name.trim().to_string();
    let what = format!("--grid {name}");
    let (low, high) = (
        parse_finite(parts[0], &what)?,
        parse_finite(parts[1], &what)?,
    );
    let count: usize = parts[2].trim().parse().map_err(|_| {
        CliError::usage(format!(
            "{what}: N must be a whole number, got '{}'",
            parts[2]
        ))
    })?;
    if low >= high || count < 2 {
        return Err(CliError::usage(format!(
            "{what}: need LO < HI and N >= 2, got {}:{}:{count}",
            Num(low),
            Num(high)
        )));
    }
    Ok(GridAxis {
        name,
        low,
        high,
        count,
        values: None,
    })
}

/// `--inclination`, given unless a grid axis is the inclination.
fn inclination(text: Option<&str>, axes: &[GridAxis]) -> Result<Option<f64>, CliError> {
    match (text, axes.iter().any(GridAxis::is_inclination)) {
        (Some(text), false) => Ok(Some(parse_finite(text, "--inclination")?)),
        (None, true) => Ok(None),
        (Some(_), true) => Err(CliError::usage(
            "give either --inclination or --grid inclination=LO:HI:N, not both",
        )),
        (None, false) => Err(CliError::usage(
            "give --inclination DEG, or --grid inclination=LO:HI:N to scan it",
        )),
    }
}

/// The scan the arguments ask for.
fn scan_request(args: &ScanArgs) -> Result<ScanRequest, CliError> {
    let axes = args
        .grid
        .iter()
        .map(|g| parse_axis(g))
        .collect::<Result<Vec<_>, _>>()?;
    if axes.is_empty() || axes.len() > 2 {
        return Err(CliError::usage("give --grid once or twice"));
    }
    let tolerance = parse_finite(&args.tolerance, "--tolerance")?;
    let [low, high] = umbral::shadow::TOLERANCE_RANGE;
    if !(low..=high).contains(&tolerance) {
        return Err(CliError::usage(format!(
            "--tolerance must lie between {} and {} M, got {}",
            Num(low),
            Num(high),
            Num(tolerance)
        )));
    }
    if umbral::shadow::check_points(args.points).is_err() {
        return Err(CliError::usage(format!(
            "--points must lie between {} and {}, got {}",
            umbral::shadow::MIN_POINTS,
            umbral::shadow::MAX_POINTS,
            args.points
        )));
    }
    let inclination_deg = inclination(args.inclination.as_deref(), &axes)?;
    Ok(ScanRequest {
        metric: args.metric.resolve()?,
        axes,
        fixed: parse_assignments(&args.set)?,
        inclination_deg,
        settings: ShadowSettings {
            points: args.points,
            tolerance,
            ..ShadowSettings::default()
        },
        require_horizon: args.require_horizon,
    })
}

/// A worker rank of an MPI job: serve the scan's grid until rank 0 ends the program.
#[cfg(feature = "mpi")]
pub fn serve(
    args: &ScanArgs,
    link: &mut dyn umbral::run::cluster::WorkerLink,
) -> Result<usize, CliError> {
    let request = scan_request(args)?;
    let grid = umbral::scan::shard::served_scan(&request);
    let lists: Vec<&dyn umbral::run::cluster::Served> = grid.iter().map(|g| g.as_ref()).collect();
    Ok(umbral::run::cluster::serve(link, &lists))
}

/// Parse `umbral scan` arguments given as words (for the demo, which runs a scan itself).
pub fn parse_args(words: &[std::ffi::OsString]) -> Result<ScanArgs, CliError> {
    use clap::FromArgMatches;
    let command = ScanArgs::augment_args(clap::Command::new("scan"));
    let matches = command
        .try_get_matches_from(words)
        .map_err(|e| CliError::usage(e.to_string()))?;
    ScanArgs::from_arg_matches(&matches).map_err(|e| CliError::usage(e.to_string()))
}

pub fn run(args: &ScanArgs, progress: &ProgressArgs) -> Result<(), CliError> {
    let mut outputs = OutputTransaction::new();
    let mut display = progress.display(None)?;
    run_in(args, Path::new(&args.out), &mut outputs, display.as_mut())?;
    outputs.commit()?;
    Ok(())
}

/// The scan, writing its points to `points_file` (named `--out` in messages) and its figure
/// into `outputs`, its progress shown by `display`; returns the figure's SVG text, if any.
/// The points file is the scan's checkpoint, kept even if a later step fails; the figure
/// appears only with the caller's commit.
pub fn run_in(
    args: &ScanArgs,
    points_file: &Path,
    outputs: &mut OutputTransaction,
    display: &mut dyn umbral::run::Observe,
) -> Result<Option<String>, CliError> {
    let shard = args
        .shard
        .as_deref()
        .map(super::merge::parse_shard)
        .transpose()?;
    if shard.is_some() && (args.plot.is_some() || args.measurement.is_some()) {
        return Err(CliError::usage(
            "--shard computes points only: draw the figure from the merged file",
        ));
    }
    let measurement = args
        .measurement
        .as_deref()
        .map(|m| Measurement::from_path(Path::new(m)).map_err(|e| CliError::usage(e.to_string())))
        .transpose()?;
    if args.plot.is_some() && measurement.is_none() && args.grid.len() == 2 {
        return Err(CliError::usage(
            "--plot with two --grid axes draws an exclusion map: it needs --measurement",
        ));
    }
    if !(1..=16).contains(&args.refine) {
        return Err(CliError::usage(format!(
            "--refine must be from 1 to 16, got {}",
            args.refine
        )));
    }
    let observables = parse_observables(&args.observables)?;
    let levels = args.levels.as_deref().map(parse_levels).transpose()?;
    let radii = measurement
        .as_ref()
        .map(|m| {
            m.derive(levels.as_deref())
                .map_err(|e| CliError::usage(e.to_string()))
        })
        .transpose()?;
    let request = scan_request(args)?;
    if let Some(shard) = shard {
        super::merge::scan_shard(&request, shard, "scan", points_file, &args.out, display)?;
        return Ok(None);
    }
    if let Some(path) = &args.plot {
        stage_plot(outputs, path)?;
    }
    let summary = scan_with_progress(&request, points_file, &args.out, display)?;
    outln!(
        "scan of {}: {} points in '{}' ({} computed, {} kept from an earlier run)",
        request.metric.name(),
        summary.points.len(),
        args.out,
        summary.computed,
        summary.reused
    )?;
    let count = |s: &str| summary.points.iter().filter(|p| p.status == s).count();
    let horizonless = summary.points.iter().filter(|p| p.horizonless).count();
    outln!(
        "  shadow {} (of which horizonless {horizonless}: no horizon, a photon sphere bounds \
         capture, evaluated), no shadow {}, no horizon {}, failed {}",
        count("shadow"),
        count("no_shadow"),
        count("no_horizon"),
        count("failed")
    )?;
    let theme = Theme::new(args.style);
    let title_of = |request: &ScanRequest| -> Result<String, CliError> {
        let metric = request.metric.build(&request.fixed)?;
        Ok(metric.info().title.clone())
    };
    match (&args.plot, &radii, &measurement) {
        (Some(path), Some(radii), Some(m)) if request.axes.len() == 2 => {
            let refine = RefineRequest {
                factor: args.refine,
                measure: args.size_measure.measure(),
                intervals: radii.intervals.iter().map(|iv| [iv.low, iv.high]).collect(),
                circularity_max: m.circularity_max,
            };
            let map = refine_with_progress(&request, &summary, &refine, display)?;
            outln!(
                "  exclusion map: {} more points where regions end ({}x finer there)",
                map.computed,
                args.refine
            )?;
            let title = format!(
                "{}{}: {}",
                title_of(&request)?,
                inclination_words(&request),
                m.label
            );
            let confidences: Vec<f64> = radii.intervals.iter().map(|iv| iv.confidence).collect();
            let figure = ExclusionMap {
                title: &title,
                names: [&request.axes[0].name, &request.axes[1].name],
                map: &map,
                confidences: &confidences,
            };
            let svg = exclusion_map(path, &theme, &figure)?;
            write_figure(outputs, path, &svg, &theme)?;
            outln!("  exclusion map written to '{path}'")?;
            Ok(Some(svg))
        }
        (Some(path), _, _) => {
            let title = format!("{}{}", title_of(&request)?, inclination_words(&request));
            let figure = ObservablePlot {
                title: &title,
                axis: &request.axes[0],
                points: &summary.points,
                observables: &observables,
            };
            let svg = observable_plot(path, &theme, &figure)?;
            write_figure(outputs, path, &svg, &theme)?;
            outln!("  figure written to '{path}'")?;
            Ok(Some(svg))
        }
        _ => Ok(None),
    }
}

/// `, θₒ = 17°` for a fixed inclination; nothing when the inclination is a grid axis.
fn inclination_words(request: &ScanRequest) -> String {
    request
        .inclination_deg
        .map(|d| format!(", θₒ = {}°", short(d, 6)))
        .unwrap_or_default()
}

/// `--observables`: names of observables, each known.
fn parse_observables(text: &str) -> Result<Vec<Quantity>, CliError> {
    text.split(',')
        .map(|name| {
            name.trim().parse::<Quantity>().map_err(|_| {
                CliError::usage(format!(
                    "unknown observable '{}' in --observables; known: {}",
                    name.trim(),
                    Quantity::names().join(", ")
                ))
            })
        })
        .collect()
}

/// Refine a finished two-axis scan for its exclusion map, with progress and Ctrl-C.
fn refine_with_progress(
    request: &ScanRequest,
    summary: &ScanSummary,
    refine: &RefineRequest,
    display: &mut dyn umbral::run::Observe,
) -> Result<RefinedMap, CliError> {
    let result = {
        let _graceful = interrupt::Graceful::enter("points");
        let controls = Controls {
            observers: vec![display],
            stop: Some(interrupt::stop_flag()),
        };
        umbral::scan::refine::refine(request, &summary.points, refine, controls)
    };
    result.map_err(|e| match e {
        RefineError::Interrupted { .. } => CliError::interrupted(format!(
            "{e}; the scan's points are kept, the exclusion map was not drawn"
        )),
        RefineError::NotTwoAxes => CliError::usage(e.to_string()),
    })
}

/// Run the scan with its progress display; the first Ctrl-C stops it after the points in
/// progress and says how far it got (`shown` names the output).
fn scan_with_progress(
    request: &ScanRequest,
    points_file: &Path,
    shown: &str,
    display: &mut dyn umbral::run::Observe,
) -> Result<ScanSummary, CliError> {
    let result = {
        let _graceful = interrupt::Graceful::enter("points");
        let controls = Controls {
            observers: vec![display],
            stop: Some(interrupt::stop_flag()),
        };
        umbral::scan::scan(request, points_file, controls)
    };
    result.map_err(|e| match e {
        ScanError::Interrupted { done, total, .. } => CliError::interrupted(
            ScanError::Interrupted {
                path: shown.to_string(),
                done,
                total,
            }
            .to_string(),
        ),
        ScanError::Checkpoint(e) => CliError::usage(checkpoint_message(&e, "--out")),
        other => CliError::usage(other.to_string()),
    })
}
