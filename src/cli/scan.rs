//! `umbral scan`: observables on a parameter grid, streamed to JSON lines and resumable.

use super::args::{checkpoint_message, parse_assignments, parse_finite, SizeMeasureArg};
use super::bound::parse_levels;
use super::interrupt;
use super::plot::{stage_plot, write_plot};
use super::plot_bounds::{allowed_polygons, exclusion_map, AllowedRegion};
use super::progress::ProgressArgs;
use super::CliError;
use clap::Args;
use std::path::Path;
use umbral::bounds::SizeMeasure;
use umbral::measurement::{DerivedRadii, Measurement};
use umbral::numfmt::Num;
use umbral::output::OutputTransaction;
use umbral::run::Controls;
use umbral::scan::{GridAxis, ScanError, ScanRequest, ScanSummary};
use umbral::shadow::ShadowSettings;

#[derive(Debug, Args)]
pub struct ScanArgs {
    #[command(flatten)]
    metric: super::args::MetricChoice,
    /// Grid axis PARAM=LO:HI:N (once or twice).
    #[arg(long, value_name = "PARAM=LO:HI:N", allow_hyphen_values = true)]
    grid: Vec<String>,
    /// Fixed parameter NAME=VALUE (repeatable).
    #[arg(long = "set", value_name = "NAME=VALUE", allow_hyphen_values = true)]
    set: Vec<String>,
    /// Observer inclination in degrees (0 to 180).
    #[arg(long, allow_hyphen_values = true)]
    inclination: String,
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
    /// Exclusion map SVG (needs --measurement and two grid axes).
    #[arg(long, value_name = "FILE.svg")]
    plot: Option<String>,
    /// Record every horizonless point as no horizon (by default a horizonless object counts
    /// when a photon sphere bounds capture by its centre, and is marked horizonless).
    #[arg(long = "require-horizon")]
    require_horizon: bool,
    /// Number of points of each critical curve (uniform in screen polar angle).
    #[arg(long, default_value_t = 256)]
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
    })
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
    Ok(ScanRequest {
        metric: args.metric.resolve()?,
        axes,
        fixed: parse_assignments(&args.set)?,
        inclination_deg: parse_finite(&args.inclination, "--inclination")?,
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
/// into `outputs`, its progress shown by `display`. The points file is the scan's checkpoint,
/// kept even if a later step fails; the figure appears only with the caller's commit.
pub fn run_in(
    args: &ScanArgs,
    points_file: &Path,
    outputs: &mut OutputTransaction,
    display: &mut dyn umbral::run::Observe,
) -> Result<(), CliError> {
    if let Some(path) = &args.plot {
        super::args::check_svg_path(path)?;
    }
    let shard = args
        .shard
        .as_deref()
        .map(super::merge::parse_shard)
        .transpose()?;
    if shard.is_some() && (args.plot.is_some() || args.measurement.is_some()) {
        return Err(CliError::usage(
            "--shard computes points only: draw the exclusion map from the merged file",
        ));
    }
    let measurement = args
        .measurement
        .as_deref()
        .map(|m| Measurement::from_path(Path::new(m)).map_err(|e| CliError::usage(e.to_string())))
        .transpose()?;
    if args.plot.is_some() && (measurement.is_none() || args.grid.len() != 2) {
        return Err(CliError::usage(
            "--plot draws an exclusion map: it needs --measurement and two --grid axes",
        ));
    }
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
        return super::merge::scan_shard(&request, shard, "scan", points_file, &args.out, display);
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
    if let (Some(path), Some(radii), Some(m)) = (&args.plot, &radii, &measurement) {
        let svg = exclusion_plot(
            path,
            args.size_measure.measure(),
            &request,
            &summary,
            radii,
            m,
        )?;
        write_plot(outputs, path, &svg)?;
        outln!("  exclusion map written to '{path}'")?;
    }
    Ok(())
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

/// The exclusion map of a finished two-axis scan, as SVG text.
fn exclusion_plot(
    path: &str,
    size_measure: SizeMeasure,
    request: &ScanRequest,
    summary: &ScanSummary,
    radii: &DerivedRadii,
    m: &Measurement,
) -> Result<String, CliError> {
    let (ax, ay) = (&request.axes[0], &request.axes[1]);
    let mut regions = Vec::new();
    for iv in &radii.intervals {
        let values =
            summary.allowed_margins([ax, ay], size_measure, [iv.low, iv.high], m.circularity_max);
        regions.push(AllowedRegion {
            confidence: iv.confidence,
            polygons: allowed_polygons(
                &values,
                ax.count,
                ay.count,
                ax.low,
                (ax.high - ax.low) / (ax.count - 1) as f64,
                ay.low,
                (ay.high - ay.low) / (ay.count - 1) as f64,
            )?,
        });
    }
    let no_horizon: Vec<(f64, f64)> = summary
        .points
        .iter()
        .filter(|p| p.status == "no_horizon")
        .map(|p| (ax.value(p.index[0]), ay.value(p.index[1])))
        .collect();
    exclusion_map(
        path,
        &format!("{}: allowed regions ({})", request.metric.name(), m.label),
        [
            (ax.name.as_str(), ax.low, ax.high),
            (ay.name.as_str(), ay.low, ay.high),
        ],
        &regions,
        &no_horizon,
    )
}
