//! `umbral image`: an image of an emission model around a metric, its ring features, and the
//! files (`.npy`, `.fits`, `.png`).

use super::args::{metric_from_args, parse_assignments, parse_finite, MetricChoice};
use super::interrupt;
use super::merge::{check_metric, parse_shard, report_shard, rows_job, shard_file, Rows};
use super::progress::ProgressArgs;
use super::CliError;
use clap::{Args, ValueEnum};
use serde::Serialize;
use std::collections::BTreeMap;
use std::ffi::OsString;
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::time::Instant;
use umbral::image::blur::{gaussian_blur, uas_to_m};
use umbral::image::emission::EmissionModel;
use umbral::image::features::{ring_features, FeatureSettings, RingFeatures};
use umbral::image::files::{write_fits, write_npy, write_png, FitsCard, FitsHeader, FitsValue};
use umbral::image::inner_shadow::inner_shadow;
use umbral::image::trace::{ImageSettings, ImageTracer};
use umbral::image::Image;
use umbral::numfmt::Num;
use umbral::output::OutputTransaction;
use umbral::run::calibrate::critical_mean_radius;
use umbral::run::image::{render_from, render_shard, RenderError, RowSource};
use umbral::run::shard::Shard;
use umbral::run::{Controls, RunError};
use umbral::shadow::Observer;

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
enum OrderArg {
    All,
    #[value(name = "0")]
    Direct,
    #[value(name = "1")]
    Lensed,
    #[value(name = "2")]
    PhotonRing,
}

#[derive(Debug, Args)]
pub struct ImageArgs {
    #[command(flatten)]
    metric: MetricChoice,
    /// Parameter assignment NAME=VALUE (repeatable).
    #[arg(long = "set", value_name = "NAME=VALUE", allow_hyphen_values = true)]
    set: Vec<String>,
    /// Observer inclination from the spin axis, in degrees (0 to 180; 0 is face-on).
    #[arg(long, allow_hyphen_values = true)]
    inclination: String,
    /// Observer radius in M (default: a distant observer).
    #[arg(long = "observer-radius", allow_hyphen_values = true)]
    observer_radius: Option<String>,
    /// Emission model: disk-isco, disk-horizon, infall, or a name from --models.
    #[arg(long, default_value = "disk-isco")]
    emission: String,
    /// A model list (TOML) to take --emission from (default: the built-in list).
    #[arg(long, value_name = "FILE")]
    models: Option<PathBuf>,
    /// Pixels per side.
    #[arg(long, default_value_t = 128)]
    pixels: usize,
    /// Field of view in M.
    #[arg(long, default_value = "24", allow_hyphen_values = true)]
    field: String,
    /// Blur to this FWHM in micro-arcseconds (needs --theta-g-uas).
    #[arg(long = "blur-uas", allow_hyphen_values = true)]
    blur_uas: Option<String>,
    /// Blur to this FWHM in M (instead of --blur-uas).
    #[arg(
        long = "blur-m",
        allow_hyphen_values = true,
        conflicts_with = "blur_uas"
    )]
    blur_m: Option<String>,
    /// theta_g = GM/(c^2 D) in micro-arcseconds (for --blur-uas and the FITS sky scale).
    #[arg(long = "theta-g-uas", allow_hyphen_values = true)]
    theta_g_uas: Option<String>,
    /// Which light: all, or the equatorial crossing 0 (direct), 1 (lensed), 2 (n >= 2).
    #[arg(long, value_enum, default_value = "all")]
    order: OrderArg,
    /// Write the image: .npy, .fits or .png by the extension.
    #[arg(long, value_name = "FILE")]
    out: Option<PathBuf>,
    /// Print JSON instead of text.
    #[arg(long)]
    json: bool,
    /// Trace only shard K of N of the rows (K from 0 to N-1: every N-th row from the K-th)
    /// into --out, a shard file (.jsonl) for `umbral merge`, which writes the image
    /// (docs/cluster.md).
    #[arg(long, value_name = "K/N")]
    shard: Option<String>,
}

/// The ring as the JSON reports it.
#[derive(Debug, Serialize)]
struct RingJson {
    diameter: f64,
    width: Option<f64>,
    dark_radius: Option<f64>,
    /// `None` when the contrast is below [`MIN_CONTRAST`]: the angle then means nothing.
    asymmetry_angle_deg: Option<f64>,
    asymmetry_contrast: f64,
    centroid: [f64; 2],
}

impl From<&RingFeatures> for RingJson {
    fn from(f: &RingFeatures) -> Self {
        RingJson {
            diameter: f.diameter,
            width: f.width,
            dark_radius: f.dark_radius,
            asymmetry_angle_deg: (f.asymmetry_contrast >= MIN_CONTRAST)
                .then_some(f.asymmetry_angle_deg),
            asymmetry_contrast: f.asymmetry_contrast,
            centroid: f.centroid,
        }
    }
}

/// Below this contrast the asymmetry has no direction: the pixel grid alone leaves a few 1e-4
/// (tests/image_products.rs).
const MIN_CONTRAST: f64 = 1e-3;

#[derive(Debug, Serialize)]
struct MeanRadius {
    mean_radius: f64,
}

#[derive(Debug, Serialize)]
struct Diagnostics {
    rays: usize,
    failed_rays: usize,
    first_failure: Option<String>,
    unphysical_points: usize,
    integrator_steps: usize,
    seconds: f64,
    rays_per_second: f64,
    disk_inner_edge: Option<f64>,
    blur_fwhm_m: Option<f64>,
    ring_measured_on: &'static str,
    ring_native: Option<RingJson>,
    critical_curve_solver: Option<String>,
    critical_curve_note: Option<String>,
    ring_note: Option<String>,
}

#[derive(Debug, Serialize)]
struct ImageJson {
    metric: String,
    parameters: BTreeMap<String, f64>,
    inclination_deg: f64,
    emission: String,
    order: &'static str,
    pixels: usize,
    field_m: f64,
    ring: Option<RingJson>,
    inner_shadow: Option<MeanRadius>,
    critical_curve: Option<MeanRadius>,
    calibration_ratio: Option<f64>,
    diagnostics: Diagnostics,
}

fn order_name(order: OrderArg) -> &'static str {
    match order {
        OrderArg::All => "all",
        OrderArg::Direct => "0",
        OrderArg::Lensed => "1",
        OrderArg::PhotonRing => "2",
    }
}

/// Find `name` in the model list (`--models`, else the built-in list), then among the
/// built-in names.
pub fn model_named(name: &str, list: Option<&Path>) -> Result<EmissionModel, CliError> {
    umbral::run::calibrate::emission_model(name, list).map_err(|e| CliError::usage(e.to_string()))
}

/// A run error on the command line (Ctrl-C exits 130).
pub fn render_error(e: RenderError) -> CliError {
    match e {
        RenderError::Run(RunError::Interrupted { done, total }) => CliError::interrupted(format!(
            "interrupted after {done} of {} image rows; nothing written",
            total.unwrap_or(0)
        )),
        other => CliError::usage(other.to_string()),
    }
}

/// `umbral image` as the command line gives it (`argv`: the words, for a shard file).
pub fn run(
    args: &ImageArgs,
    progress: &ProgressArgs,
    argv: &[OsString],
) -> Result<ExitCode, CliError> {
    let rows = match &args.shard {
        Some(s) => Rows::Shard {
            shard: parse_shard(s)?,
            argv,
        },
        None => Rows::Trace,
    };
    run_from(args, progress, rows)
}

/// A shard's run: trace its rows into the shard file.
fn run_shard(
    args: &ImageArgs,
    progress: &ProgressArgs,
    tracer: &ImageTracer,
    shard: Shard,
    argv: &[OsString],
) -> Result<ExitCode, CliError> {
    let path = shard_file(args.out.as_deref(), "image")?;
    let job = rows_job("image", shard, argv, &args.metric.resolve()?)?;
    let mut display = progress.display(None)?;
    let result = {
        let _graceful = interrupt::Graceful::enter("image rows");
        let controls = Controls {
            observers: vec![display.as_mut()],
            stop: Some(interrupt::stop_flag()),
        };
        render_shard(tracer, &job, path, controls)
    };
    drop(display);
    let summary = result.map_err(|e| shard_error(e, path))?;
    report_shard("image", shard, "rows", path, &summary)?;
    Ok(ExitCode::SUCCESS)
}

/// A shard's run error on the command line (Ctrl-C exits 130; the finished rows are kept).
pub fn shard_error(e: RunError, path: &Path) -> CliError {
    match e {
        RunError::Interrupted { done, total } => CliError::interrupted(format!(
            "interrupted after {done} of {} image rows; the finished rows are kept in '{}': \
             rerun the same command to resume",
            total.unwrap_or(0),
            path.display()
        )),
        RunError::Checkpoint(e) => CliError::usage(super::args::checkpoint_message(&e, "--out")),
    }
}

/// The inclination in degrees and the field of view in M, checked with the pixel count.
fn geometry(args: &ImageArgs) -> Result<(f64, f64), CliError> {
    let inclination = parse_finite(&args.inclination, "--inclination")?;
    if !(0.0..=180.0).contains(&inclination) {
        return Err(CliError::usage(format!(
            "--inclination must lie between 0 and 180 degrees, got {}",
            Num(inclination)
        )));
    }
    let field = parse_finite(&args.field, "--field")?;
    if field <= 0.0 {
        return Err(CliError::usage(format!(
            "--field must be a positive number of M, got {}",
            Num(field)
        )));
    }
    if args.pixels == 0 || args.pixels > 8192 {
        return Err(CliError::usage(format!(
            "--pixels must lie between 1 and 8192, got {}",
            args.pixels
        )));
    }
    Ok((inclination, field))
}

/// How the image is traced.
fn image_settings(
    args: &ImageArgs,
    inclination: f64,
    field: f64,
) -> Result<ImageSettings, CliError> {
    let observer = match &args.observer_radius {
        None => Observer::distant(inclination.to_radians()),
        Some(r) => Observer::at_radius(
            inclination.to_radians(),
            parse_finite(r, "--observer-radius")?,
        ),
    };
    Ok(ImageSettings::new(observer, args.pixels, field))
}

/// A worker rank of an MPI job: serve the image's rows until rank 0 ends the program.
#[cfg(feature = "mpi")]
pub fn serve(
    args: &ImageArgs,
    link: &mut dyn umbral::run::cluster::WorkerLink,
) -> Result<usize, CliError> {
    let (inclination, field) = geometry(args)?;
    let spacetime = metric_from_args(&args.metric, &args.set)?;
    let model = model_named(&args.emission, args.models.as_deref())?;
    let settings = image_settings(args, inclination, field)?;
    let tracer = ImageTracer::new(spacetime.as_ref(), &model, &settings)
        .map_err(|e| CliError::usage(e.to_string()))?;
    Ok(umbral::run::image::serve_image(&tracer, link))
}

/// `umbral image` with its rows from `rows`.
// Long: reads the options, renders, measures and reports in one pass; each step is a call.
pub fn run_from(
    args: &ImageArgs,
    progress: &ProgressArgs,
    rows: Rows<'_>,
) -> Result<ExitCode, CliError> {
    let (inclination, field) = geometry(args)?;
    let theta_g = args
        .theta_g_uas
        .as_deref()
        .map(|t| parse_finite(t, "--theta-g-uas"))
        .transpose()?;
    let blur_uas = args
        .blur_uas
        .as_deref()
        .map(|t| parse_finite(t, "--blur-uas"))
        .transpose()?;
    let blur_m = args
        .blur_m
        .as_deref()
        .map(|t| parse_finite(t, "--blur-m"))
        .transpose()?;
    let fwhm_m = match (blur_uas, theta_g, blur_m) {
        (Some(b), Some(t), _) => Some(uas_to_m(b, t).map_err(|e| CliError::usage(e.to_string()))?),
        (Some(_), None, _) => {
            return Err(CliError::usage(
                "--blur-uas needs --theta-g-uas to convert micro-arcseconds to M",
            ))
        }
        (None, _, Some(m)) if m <= 0.0 => {
            return Err(CliError::usage(format!(
                "--blur-m must be a positive FWHM in M, got {}",
                Num(m)
            )))
        }
        (None, _, m) => m,
    };
    if let Some(t) = theta_g {
        if t <= 0.0 {
            return Err(CliError::usage(format!(
                "--theta-g-uas must be positive, got {}",
                Num(t)
            )));
        }
    }
    match (&rows, &args.out) {
        (Rows::Shard { .. }, out) => {
            shard_file(out.as_deref(), "image")?;
        }
        (_, Some(path)) => {
            file_kind(path)?;
        }
        (_, None) => {}
    }
    let spacetime = metric_from_args(&args.metric, &args.set)?;
    let model = model_named(&args.emission, args.models.as_deref())?;
    let settings = image_settings(args, inclination, field)?;
    let observer = settings.observer;
    let tracer = ImageTracer::new(spacetime.as_ref(), &model, &settings)
        .map_err(|e| CliError::usage(e.to_string()))?;
    if args.order != OrderArg::All && !tracer.has_orders() {
        return Err(CliError::usage(format!(
            "--order {} needs a thin-disk model; '{}' has no equatorial crossings",
            order_name(args.order),
            args.emission
        )));
    }
    let source = match rows {
        Rows::Shard { shard, argv } => return run_shard(args, progress, &tracer, shard, argv),
        Rows::Merged(merged) => {
            check_metric(merged, &args.metric.resolve()?)?;
            RowSource::Merged(merged)
        }
        Rows::Trace => RowSource::Trace,
    };
    let started = Instant::now();
    let rendered = {
        let mut display = progress.display(None)?;
        let _graceful = interrupt::Graceful::enter("image rows");
        render_from(
            &tracer,
            Controls {
                observers: vec![display.as_mut()],
                stop: Some(interrupt::stop_flag()),
            },
            source,
        )
        .map_err(render_error)?
    };
    let seconds = started.elapsed().as_secs_f64();
    let native = match args.order {
        OrderArg::All => rendered.total.clone(),
        OrderArg::Direct => rendered.orders[0].clone(),
        OrderArg::Lensed => rendered.orders[1].clone(),
        OrderArg::PhotonRing => rendered.orders[2].clone(),
    };
    let shown = match fwhm_m {
        Some(f) if rendered.failed == 0 => {
            gaussian_blur(&native, f).map_err(|e| CliError::usage(e.to_string()))?
        }
        _ => native.clone(),
    };
    let features = FeatureSettings::default();
    let (ring, ring_native, ring_note) = if rendered.failed > 0 {
        (
            None,
            None,
            Some(format!(
                "not measured: {} rays failed (first: {})",
                rendered.failed,
                rendered
                    .first_failure
                    .as_deref()
                    .unwrap_or("no reason given")
            )),
        )
    } else {
        let measured = ring_features(&shown, &features);
        let native_measured = fwhm_m.map(|_| ring_features(&native, &features));
        match measured {
            Ok(r) => (Some(r), native_measured.and_then(|r| r.ok()), None),
            Err(e) => (None, None, Some(format!("not measured: {e}"))),
        }
    };
    let inner = (tracer.reaches_horizon() && rendered.failed == 0)
        .then(|| inner_shadow(&tracer, &rendered))
        .flatten();
    let (critical, critical_solver, critical_note) =
        match critical_mean_radius(spacetime.as_ref(), &observer) {
            Ok((r, solver)) => (Some(r), Some(solver), None),
            Err(e) => (None, None, Some(e)),
        };
    let calibration_ratio = match (&ring, critical) {
        (Some(r), Some(c)) => Some(r.diameter / (2.0 * c)),
        _ => None,
    };
    let parameters: BTreeMap<String, f64> = parse_assignments(&args.set)?.into_iter().collect();
    let report = ImageJson {
        metric: spacetime.info().name.to_string(),
        parameters,
        inclination_deg: inclination,
        emission: args.emission.clone(),
        order: order_name(args.order),
        pixels: args.pixels,
        field_m: field,
        ring: ring.as_ref().map(RingJson::from),
        inner_shadow: inner.as_ref().map(|s| MeanRadius {
            mean_radius: s.mean_radius,
        }),
        critical_curve: critical.map(|mean_radius| MeanRadius { mean_radius }),
        calibration_ratio,
        diagnostics: Diagnostics {
            rays: args.pixels * args.pixels,
            failed_rays: rendered.failed,
            first_failure: rendered.first_failure.clone(),
            unphysical_points: rendered.unphysical,
            integrator_steps: rendered.steps,
            seconds,
            rays_per_second: (args.pixels * args.pixels) as f64 / seconds.max(1e-9),
            disk_inner_edge: tracer.disk_inner_edge(),
            blur_fwhm_m: fwhm_m,
            ring_measured_on: if fwhm_m.is_some() {
                "blurred image"
            } else {
                "native image"
            },
            ring_native: ring_native.as_ref().map(RingJson::from),
            critical_curve_solver: critical_solver,
            critical_curve_note: critical_note,
            ring_note,
        },
    };
    if let Some(path) = &args.out {
        let mut outputs = OutputTransaction::new();
        let bytes = encode(&shown, path, &report, theta_g)?;
        outputs.write(path, &bytes)?;
        outputs.commit()?;
    }
    if args.json {
        let text = serde_json::to_string_pretty(&report).expect("serialisable");
        outln!("{text}")?;
    } else {
        print_report(&report, args.out.as_deref())?;
    }
    if rendered.failed > 0 {
        eprintln!(
            "FAILED: {} of {} rays failed (first: {}); their pixels are NaN and the ring was \
             not measured",
            rendered.failed,
            args.pixels * args.pixels,
            rendered
                .first_failure
                .as_deref()
                .unwrap_or("no reason given")
        );
        return Ok(ExitCode::from(FAILED_RAYS));
    }
    Ok(ExitCode::SUCCESS)
}

/// Exit code of an image with failed rays (written, but not measured).
const FAILED_RAYS: u8 = 3;

enum FileKind {
    Npy,
    Fits,
    Png,
}

fn file_kind(path: &Path) -> Result<FileKind, CliError> {
    let ext = path
        .extension()
        .and_then(|e| e.to_str())
        .map(|e| e.to_ascii_lowercase());
    match ext.as_deref() {
        Some("npy") => Ok(FileKind::Npy),
        Some("fits") | Some("fit") => Ok(FileKind::Fits),
        Some("png") => Ok(FileKind::Png),
        _ => Err(CliError::usage(format!(
            "--out writes .npy, .fits or .png (by the extension), got '{}'",
            path.display()
        ))),
    }
}

/// The image file's bytes.
fn encode(
    image: &Image,
    path: &Path,
    report: &ImageJson,
    theta_g: Option<f64>,
) -> Result<Vec<u8>, CliError> {
    let mut bytes = Vec::new();
    let failed = |e: umbral::image::ImageError| CliError::usage(e.to_string());
    match file_kind(path)? {
        FileKind::Npy => write_npy(image, &mut bytes).map_err(failed)?,
        FileKind::Png => write_png(image, 1.0, &mut bytes).map_err(failed)?,
        FileKind::Fits => {
            let text = |key: &str, value: String, comment: &str| FitsCard {
                key: key.to_string(),
                value: FitsValue::Text(value.chars().take(68).collect()),
                comment: comment.to_string(),
            };
            let real = |key: &str, value: f64, comment: &str| FitsCard {
                key: key.to_string(),
                value: FitsValue::Real(value),
                comment: comment.to_string(),
            };
            let mut cards = vec![
                text("METRIC", report.metric.clone(), "metric"),
                real(
                    "INCLIN",
                    report.inclination_deg,
                    "observer inclination, deg",
                ),
                text("EMISSION", report.emission.clone(), "emission model"),
                text(
                    "ORDER",
                    report.order.to_string(),
                    "equatorial crossings shown",
                ),
            ];
            for (k, (name, value)) in report.parameters.iter().enumerate().take(9) {
                cards.push(real(&format!("PARVAL{}", k + 1), *value, name));
            }
            if let Some(f) = report.diagnostics.blur_fwhm_m {
                cards.push(real("BLURM", f, "Gaussian blur FWHM, M"));
            }
            let header = FitsHeader {
                theta_g_uas: theta_g,
                bunit: "arbitrary".into(),
                cards,
            };
            write_fits(image, &header, &mut bytes).map_err(failed)?
        }
    }
    Ok(bytes)
}

fn print_report(r: &ImageJson, out: Option<&Path>) -> Result<(), CliError> {
    let d = &r.diagnostics;
    outln!(
        "image of {} ({}) at inclination {} deg, emission {}, order {}",
        r.metric,
        super::args::parameter_summary(&r.parameters),
        Num(r.inclination_deg),
        r.emission,
        r.order
    )?;
    outln!(
        "  {} x {} pixels over {} M; {} rays in {:.2} s ({:.0} rays/s), {} failed",
        r.pixels,
        r.pixels,
        Num(r.field_m),
        d.rays,
        d.seconds,
        d.rays_per_second,
        d.failed_rays
    )?;
    if let Some(edge) = d.disk_inner_edge {
        outln!("  disk inner edge                  {edge:.6} M")?;
    }
    if let Some(f) = d.blur_fwhm_m {
        outln!("  blurred to FWHM                  {f:.6} M")?;
    }
    match &r.ring {
        Some(ring) => {
            outln!("  ring ({})", d.ring_measured_on)?;
            outln!("    diameter                       {:.6} M", ring.diameter)?;
            match ring.width {
                Some(w) => outln!("    width (FWHM)                   {w:.6} M")?,
                None => outln!("    width (FWHM)                   not measured")?,
            }
            match ring.dark_radius {
                Some(d) => outln!("    dark centre radius (half max)  {d:.6} M")?,
                None => outln!("    dark centre radius (half max)  not measured")?,
            }
            match ring.asymmetry_angle_deg {
                Some(angle) => outln!(
                    "    brightness asymmetry           {angle:.1} deg from +alpha, contrast {:.4}",
                    ring.asymmetry_contrast
                )?,
                None => outln!(
                    "    brightness asymmetry           none (contrast {:.1e}, below {MIN_CONTRAST})",
                    ring.asymmetry_contrast
                )?,
            }
        }
        None => outln!(
            "  ring                             {}",
            d.ring_note.as_deref().unwrap_or("not measured")
        )?,
    }
    if let Some(native) = &d.ring_native {
        outln!(
            "    native-resolution diameter     {:.6} M",
            native.diameter
        )?;
    }
    match &r.inner_shadow {
        Some(s) => outln!("  inner shadow mean radius         {:.6} M", s.mean_radius)?,
        None => {
            outln!("  inner shadow                     none (emission does not reach the horizon)")?
        }
    }
    match (&r.critical_curve, &d.critical_curve_solver) {
        (Some(c), Some(solver)) => outln!(
            "  critical curve mean radius       {:.6} M ({solver} solver)",
            c.mean_radius
        )?,
        _ => outln!(
            "  critical curve                   not available: {}",
            d.critical_curve_note
                .as_deref()
                .unwrap_or("no reason given")
        )?,
    }
    if let Some(k) = r.calibration_ratio {
        outln!("  ring / critical-curve diameter   {k:.6}")?;
    }
    if let Some(path) = out {
        outln!("  wrote {}", path.display())?;
    }
    Ok(())
}
