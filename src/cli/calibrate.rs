//! `umbral calibrate`: the ring-to-shadow factor κ over a list of emission models, and the
//! computed κ of measurement files (`ring_to_shadow = "computed"`).

use super::args::{metric_from_args, parse_assignments, parse_finite, MetricChoice};
use super::interrupt;
use super::merge::{check_metric, parse_shard, report_shard, rows_job, shard_file, Rows};
use super::progress::ProgressArgs;
use super::CliError;
use clap::Args;
use std::collections::BTreeMap;
use std::ffi::OsString;
use std::path::{Path, PathBuf};
use umbral::image::models::ModelList;
use umbral::measurement::Measurement;
use umbral::numfmt::Num;
use umbral::output::OutputTransaction;
use umbral::run::calibrate::{
    calibrate_from, calibrate_shard, CalibrateError, Calibration, CalibrationSettings,
    ResolveError, DEFAULT_PIXELS,
};
use umbral::run::image::RowSource;
use umbral::run::shard::Shard;
use umbral::run::{Controls, RunError};

#[derive(Debug, Args)]
pub struct CalibrateArgs {
    #[command(flatten)]
    metric: MetricChoice,
    /// Parameter assignment NAME=VALUE (repeatable).
    #[arg(long = "set", value_name = "NAME=VALUE", allow_hyphen_values = true)]
    set: Vec<String>,
    /// Observer inclination from the spin axis, in degrees (0 to 180).
    #[arg(long, allow_hyphen_values = true)]
    inclination: String,
    /// The observation's resolution: the blur FWHM in micro-arcseconds.
    #[arg(long = "resolution-uas", allow_hyphen_values = true)]
    resolution_uas: String,
    /// theta_g = GM/(c^2 D) in micro-arcseconds.
    #[arg(long = "theta-g-uas", allow_hyphen_values = true)]
    theta_g_uas: String,
    /// A model list (TOML; default: the built-in list of eight models).
    #[arg(long, value_name = "FILE")]
    models: Option<PathBuf>,
    /// Pixels per side of each image.
    #[arg(long, default_value_t = DEFAULT_PIXELS)]
    pixels: usize,
    /// Field of view in M (default: max(24, 12 + 4 FWHM)).
    #[arg(long, allow_hyphen_values = true)]
    field: Option<String>,
    /// Write the calibration (JSON) for measurement files (`ring_to_shadow = "FILE"`).
    #[arg(long, value_name = "FILE.json")]
    out: Option<PathBuf>,
    /// Print JSON instead of text.
    #[arg(long)]
    json: bool,
    /// Trace only shard K of N of the image rows of every model (K from 0 to N-1: every N-th
    /// row from the K-th) into --out, a shard file (.jsonl) for `umbral merge`, which writes
    /// the calibration (docs/cluster.md).
    #[arg(long, value_name = "K/N")]
    shard: Option<String>,
}

/// Read a model list, or the built-in one.
pub fn model_list(path: Option<&Path>) -> Result<ModelList, CliError> {
    umbral::run::calibrate::model_list(path).map_err(|e| CliError::usage(e.to_string()))
}

fn calibrate_error(e: CalibrateError) -> CliError {
    match e {
        CalibrateError::Run(RunError::Interrupted { done, .. }) => CliError::interrupted(format!(
            "calibration interrupted after {done} image rows; no kappa"
        )),
        other => CliError::usage(format!("calibration: {other}")),
    }
}

/// Run a calibration with progress and Ctrl-C, its image rows from `source`.
fn run_calibration(
    spacetime: &dyn umbral::metric::Spacetime,
    metric: &str,
    parameters: &BTreeMap<String, f64>,
    settings: &CalibrationSettings,
    models: &ModelList,
    progress: &ProgressArgs,
    source: RowSource<'_>,
) -> Result<Calibration, CliError> {
    let mut display = progress.display(Some("calibrate"))?;
    let _graceful = interrupt::Graceful::enter("image rows");
    calibrate_from(
        spacetime,
        metric,
        parameters,
        settings,
        models,
        Controls {
            observers: vec![display.as_mut()],
            stop: Some(interrupt::stop_flag()),
        },
        source,
    )
    .map_err(calibrate_error)
}

/// `umbral calibrate` as the command line gives it (`argv`: the words, for a shard file).
pub fn run(
    args: &CalibrateArgs,
    progress: &ProgressArgs,
    argv: &[OsString],
) -> Result<(), CliError> {
    let rows = match &args.shard {
        Some(s) => Rows::Shard {
            shard: parse_shard(s)?,
            argv,
        },
        None => Rows::Trace,
    };
    run_from(args, progress, rows)
}

/// A shard's run: trace its rows of every model's image into the shard file.
fn run_shard(
    args: &CalibrateArgs,
    progress: &ProgressArgs,
    spacetime: &dyn umbral::metric::Spacetime,
    settings: &CalibrationSettings,
    models: &ModelList,
    (shard, argv): (Shard, &[OsString]),
) -> Result<(), CliError> {
    let path = shard_file(args.out.as_deref(), "calibration")?;
    let job = rows_job("calibrate", shard, argv, &args.metric.resolve()?)?;
    let mut display = progress.display(Some("calibrate"))?;
    let result = {
        let _graceful = interrupt::Graceful::enter("image rows");
        let controls = Controls {
            observers: vec![display.as_mut()],
            stop: Some(interrupt::stop_flag()),
        };
        calibrate_shard(spacetime, settings, models, &job, path, controls)
    };
    drop(display);
    let summary = result.map_err(|e| match e {
        CalibrateError::Run(e) => super::image::shard_error(e, path),
        other => CliError::usage(format!("calibration: {other}")),
    })?;
    report_shard("calibration", shard, "image rows", path, &summary)
}

/// The calibration's settings from the arguments.
fn settings(args: &CalibrateArgs) -> Result<CalibrationSettings, CliError> {
    let inclination = parse_finite(&args.inclination, "--inclination")?;
    if !(0.0..=180.0).contains(&inclination) {
        return Err(CliError::usage(format!(
            "--inclination must lie between 0 and 180 degrees, got {}",
            Num(inclination)
        )));
    }
    let resolution_uas = parse_finite(&args.resolution_uas, "--resolution-uas")?;
    let theta_g_uas = parse_finite(&args.theta_g_uas, "--theta-g-uas")?;
    for (name, v) in [
        ("--resolution-uas", resolution_uas),
        ("--theta-g-uas", theta_g_uas),
    ] {
        if v <= 0.0 {
            return Err(CliError::usage(format!(
                "{name} must be positive, got {}",
                Num(v)
            )));
        }
    }
    let field = args
        .field
        .as_deref()
        .map(|f| parse_finite(f, "--field"))
        .transpose()?;
    if let Some(f) = field {
        if f <= 0.0 {
            return Err(CliError::usage(format!(
                "--field must be positive, got {}",
                Num(f)
            )));
        }
    }
    if args.pixels < 16 || args.pixels > 4096 {
        return Err(CliError::usage(format!(
            "--pixels must lie between 16 and 4096, got {}",
            args.pixels
        )));
    }
    Ok(CalibrationSettings {
        inclination: inclination.to_radians(),
        resolution_uas,
        theta_g_uas,
        pixels: args.pixels,
        field,
    })
}

/// A worker rank of an MPI job: serve the calibration's image rows until rank 0 ends the
/// program.
#[cfg(feature = "mpi")]
pub fn serve(
    args: &CalibrateArgs,
    link: &mut dyn umbral::run::cluster::WorkerLink,
) -> Result<usize, CliError> {
    let settings = settings(args)?;
    let models = model_list(args.models.as_deref())?;
    let spacetime = metric_from_args(&args.metric, &args.set)?;
    umbral::run::calibrate::serve_calibration(spacetime.as_ref(), &settings, &models, link)
        .map_err(|e| CliError::usage(e.to_string()))
}

/// `umbral calibrate` with its image rows from `rows`.
pub fn run_from(
    args: &CalibrateArgs,
    progress: &ProgressArgs,
    rows: Rows<'_>,
) -> Result<(), CliError> {
    let settings = settings(args)?;
    if let Rows::Shard { .. } = rows {
        shard_file(args.out.as_deref(), "calibration")?;
    } else if let Some(out) = &args.out {
        if out.extension().and_then(|e| e.to_str()) != Some("json") {
            return Err(CliError::usage(format!(
                "--out writes JSON: give a file name ending in .json, got '{}'",
                out.display()
            )));
        }
    }
    let models = model_list(args.models.as_deref())?;
    let spacetime = metric_from_args(&args.metric, &args.set)?;
    let parameters: BTreeMap<String, f64> = parse_assignments(&args.set)?.into_iter().collect();
    let source = match rows {
        Rows::Shard { shard, argv } => {
            let shard = (shard, argv);
            return run_shard(
                args,
                progress,
                spacetime.as_ref(),
                &settings,
                &models,
                shard,
            );
        }
        Rows::Merged(merged) => {
            check_metric(merged, &args.metric.resolve()?)?;
            RowSource::Merged(merged)
        }
        Rows::Trace => RowSource::Trace,
    };
    let metric = spacetime.info().name.to_string();
    let calibration = run_calibration(
        spacetime.as_ref(),
        &metric,
        &parameters,
        &settings,
        &models,
        progress,
        source,
    )?;
    let text = serde_json::to_string_pretty(&calibration).expect("serialisable");
    if let Some(out) = &args.out {
        let mut outputs = OutputTransaction::new();
        outputs.write(out, format!("{text}\n").as_bytes())?;
        outputs.commit()?;
    }
    if args.json {
        outln!("{text}")?;
    } else {
        print_calibration(&calibration)?;
        if let Some(out) = &args.out {
            outln!("wrote {}", out.display())?;
        }
    }
    Ok(())
}

fn print_calibration(c: &Calibration) -> Result<(), CliError> {
    let s = &c.summary;
    outln!(
        "ring-to-shadow calibration: {} ({}) at inclination {} deg, resolution {} uas at \
         theta_g = {} uas ({:.4} M)",
        s.metric,
        super::args::parameter_summary(&s.parameters),
        Num(s.inclination_deg),
        Num(s.resolution_uas),
        Num(s.theta_g_uas),
        c.fwhm_m
    )?;
    outln!(
        "critical curve mean radius {:.6} M ({} solver); images {} x {} over {:.4} M",
        c.critical_curve_mean_radius,
        c.critical_curve_solver,
        c.pixels,
        c.pixels,
        c.field_m
    )?;
    outln!(
        "{:<26} {:>13} {:>13} {:>9} {:>9} {:>13}",
        "model",
        "ring d (M)",
        "blurred d (M)",
        "kappa",
        "native",
        "inner shadow"
    )?;
    for m in &c.models {
        let inner = m
            .inner_shadow
            .as_ref()
            .map_or("-".to_string(), |s| format!("{:.4} M", s.mean_radius));
        let cell = |x: Option<f64>, width: usize| match x {
            Some(v) => format!("{v:>width$.5}"),
            None => format!("{:>width$}", "no ring"),
        };
        outln!(
            "{:<26} {} {} {} {} {:>13}",
            m.name,
            cell(m.native.as_ref().map(|r| r.diameter), 13),
            cell(m.blurred.as_ref().map(|r| r.diameter), 13),
            cell(m.kappa, 9),
            cell(m.kappa_native, 9),
            inner
        )?;
    }
    outln!(
        "kappa = {:.4} +- {:.4} (mean and standard deviation over {} models; range {:.4} to {:.4})",
        s.kappa.mean,
        s.kappa.spread,
        s.kappa.models,
        s.kappa.min,
        s.kappa.max
    )?;
    outln!("assumptions:")?;
    for a in &c.assumptions {
        outln!("  - {a}")?;
    }
    Ok(())
}

/// Compute the κ calibration a measurement file asks for (`ring_to_shadow = "computed"`),
/// with progress and Ctrl-C.
pub fn resolve_measurement(m: &mut Measurement, progress: &ProgressArgs) -> Result<(), CliError> {
    if m.pending_calibration().is_none() {
        return Ok(());
    }
    let mut display = progress.display(Some("calibrate"))?;
    let _graceful = interrupt::Graceful::enter("image rows");
    let controls = Controls {
        observers: vec![display.as_mut()],
        stop: Some(interrupt::stop_flag()),
    };
    umbral::run::calibrate::resolve_measurement(m, controls).map_err(|e| match e {
        ResolveError::Calibration(e) => calibrate_error(e),
        other => CliError::usage(other.to_string()),
    })
}
