//! `umbral bound`: allowed ranges of a metric parameter from a measured shadow or ring.

use super::args::{checkpoint_message, parse_assignments, parse_finite, SizeMeasureArg};
use super::figure::{write_figure, FigureStyle, Theme};
use super::interrupt;
use super::plot::stage_plot;
use super::plot_bounds::{bound_plot, bound_title};
use super::progress::ProgressArgs;
use super::tables::{fixed, Column, Table};
use super::CliError;
use clap::Args;
use std::io::Write;
use std::path::{Path, PathBuf};
use umbral::bounds::end_value;
use umbral::bounds::{
    BoundError, BoundRequest, BoundResult, BoundSettings, Failure, Inclination, ParameterRange,
};
use umbral::measurement::Measurement;
use umbral::numfmt::short;
use umbral::numfmt::Num;
use umbral::output::OutputTransaction;
use umbral::run::bound::{
    bound_with, checkpoint_name, open_checkpoint, BoundCheckpoint, BoundRunError,
};
use umbral::run::{CheckpointError, Controls};

#[derive(Debug, Args)]
pub struct BoundArgs {
    #[command(flatten)]
    metric: super::args::MetricChoice,
    /// The parameter to bound and its range, PARAM=LO:HI.
    #[arg(long, value_name = "PARAM=LO:HI", allow_hyphen_values = true)]
    vary: String,
    /// Fixed parameter NAME=VALUE (repeatable).
    #[arg(long = "set", value_name = "NAME=VALUE", allow_hyphen_values = true)]
    set: Vec<String>,
    /// Observer inclination in degrees (0 to 180).
    #[arg(long, allow_hyphen_values = true, conflicts_with = "inclination_range")]
    inclination: Option<String>,
    /// Inclination as a nuisance range in degrees, LO:HI.
    #[arg(
        long = "inclination-range",
        value_name = "LO:HI",
        allow_hyphen_values = true
    )]
    inclination_range: Option<String>,
    /// Nuisance parameter range PARAM=LO:HI (repeatable).
    #[arg(long, value_name = "PARAM=LO:HI", allow_hyphen_values = true)]
    nuisance: Vec<String>,
    /// Size of the critical curve compared with the measured radius.
    #[arg(long = "size-measure", value_enum, default_value = "mean")]
    size_measure: SizeMeasureArg,
    /// Measurement file (TOML).
    #[arg(long, value_name = "FILE")]
    measurement: String,
    /// Confidence levels, comma-separated (default: the file's, or 0.68,0.95).
    #[arg(long, value_name = "P,P,...")]
    levels: Option<String>,
    /// Print JSON instead of a table.
    #[arg(long)]
    json: bool,
    /// Print the bound as a LaTeX (booktabs) table, one row per confidence level, with its
    /// assumptions as comment lines above it.
    #[arg(long, conflicts_with = "json")]
    latex: bool,
    /// Write a figure: SVG, PNG or PDF by the extension.
    #[arg(long, value_name = "FILE")]
    plot: Option<String>,
    /// Figure sizes: for a paper column or for a slide.
    #[arg(long, value_enum, default_value = "paper")]
    style: FigureStyle,
    /// Evaluate only values with a horizon (by default a horizonless object counts when a
    /// photon sphere bounds capture by its centre, and is labelled horizonless).
    #[arg(long = "require-horizon")]
    require_horizon: bool,
    /// Keep every nuisance evaluation in FILE (JSON lines) as it finishes, and resume from
    /// it: an interrupted bound rerun with the same arguments continues where it stopped.
    /// The file is kept. Without this option the checkpoint is umbral-bound-HASH.jsonl in
    /// the current folder, removed when the bound completes.
    #[arg(long, value_name = "FILE.jsonl")]
    checkpoint: Option<String>,
    /// Keep no checkpoint (an interrupted bound starts over).
    #[arg(long = "no-checkpoint", conflicts_with = "checkpoint")]
    no_checkpoint: bool,
    /// Search the predicted size's min and max over the nuisance box at every value (the
    /// band of the JSON's `predicted` and of the figure; --plot implies it). By default a
    /// value is decided as soon as the nuisance points evaluated allow it at every level,
    /// and only values that may be excluded get the full search: every value decided alike,
    /// sooner (only --full-extremes looks for a narrow excluded sliver between two allowed
    /// grid values).
    #[arg(long = "full-extremes")]
    full_extremes: bool,
}

/// Read `LO:HI` with LO < HI, both finite.
pub fn parse_range(text: &str, what: &str) -> Result<(f64, f64), CliError> {
    let (lo, hi) = text
        .split_once(':')
        .ok_or_else(|| CliError::usage(format!("{what}: expected LO:HI, got '{text}'")))?;
    let (lo, hi) = (parse_finite(lo, what)?, parse_finite(hi, what)?);
    if lo >= hi {
        return Err(CliError::usage(format!(
            "{what}: need LO < HI, got {}:{}",
            Num(lo),
            Num(hi)
        )));
    }
    Ok((lo, hi))
}

/// Read `PARAM=LO:HI`.
pub fn parse_named_range(text: &str, flag: &str) -> Result<ParameterRange, CliError> {
    let (name, range) = text.split_once('=').ok_or_else(|| {
        CliError::usage(format!("cannot read '{flag} {text}': expected PARAM=LO:HI"))
    })?;
    let name = name.trim();
    let (low, high) = parse_range(range, &format!("{flag} {name}"))?;
    Ok(ParameterRange {
        name: name.to_string(),
        low,
        high,
    })
}

/// Read a comma list of confidence levels.
pub fn parse_levels(text: &str) -> Result<Vec<f64>, CliError> {
    text.split(',')
        .map(|t| {
            let p = parse_finite(t, "--levels")?;
            if p > 0.0 && p < 1.0 {
                Ok(p)
            } else {
                Err(CliError::usage(format!(
                    "--levels: each level must lie strictly between 0 and 1, got {}",
                    Num(p)
                )))
            }
        })
        .collect()
}

fn request_from(args: &BoundArgs, progress: &ProgressArgs) -> Result<BoundRequest, CliError> {
    let vary = parse_named_range(&args.vary, "--vary")?;
    let fixed = parse_assignments(&args.set)?;
    let nuisance = args
        .nuisance
        .iter()
        .map(|n| parse_named_range(n, "--nuisance"))
        .collect::<Result<Vec<_>, _>>()?;
    // Loaded when first needed, so errors keep their order (the arguments before the metric).
    let mut metric = None;
    let inclination = match (&args.inclination, &args.inclination_range) {
        (Some(i), None) => Inclination::Fixed {
            degrees: parse_finite(i, "--inclination")?,
        },
        (None, Some(r)) => {
            let (low_degrees, high_degrees) = parse_range(r, "--inclination-range")?;
            Inclination::Range {
                low_degrees,
                high_degrees,
            }
        }
        (None, None) => {
            // The library decides whether the inclination may be left out (a spherically
            // symmetric metric only); the metric source is loaded once and kept.
            let source = metric.insert(args.metric.resolve()?);
            match Inclination::unspecified(source, &fixed) {
                Ok(inclination) => inclination,
                Err(BoundError::InclinationNeeded) => {
                    return Err(CliError::usage(
                        "give --inclination DEG or --inclination-range LO:HI (the metric is not spherically symmetric)",
                    ))
                }
                Err(e) => return Err(CliError::usage(e.to_string())),
            }
        }
        (Some(_), Some(_)) => {
            return Err(CliError::usage(
                "give either --inclination or --inclination-range, not both",
            ))
        }
    };
    let levels = args.levels.as_deref().map(parse_levels).transpose()?;
    let mut measurement = Measurement::from_path(Path::new(&args.measurement))
        .map_err(|e| CliError::usage(e.to_string()))?;
    super::calibrate::resolve_measurement(&mut measurement, progress)?;
    let radii = measurement
        .derive(levels.as_deref())
        .map_err(|e| CliError::usage(e.to_string()))?;
    Ok(BoundRequest {
        metric: match metric {
            Some(source) => source,
            None => args.metric.resolve()?,
        },
        vary,
        fixed,
        inclination,
        nuisance,
        size_measure: args.size_measure.measure(),
        radii,
        circularity_max: measurement.circularity_max,
        settings: BoundSettings {
            require_horizon: args.require_horizon,
            // A figure draws the predicted band: every value's extremes searched.
            full_extremes: args.full_extremes || args.plot.is_some(),
            ..BoundSettings::default()
        },
    })
}

fn ranges(r: &[[f64; 2]]) -> String {
    if r.is_empty() {
        "none".into()
    } else {
        r.iter()
            .map(|[a, b]| format!("[{}, {}]", end_value(*a, 8), end_value(*b, 8)))
            .collect::<Vec<_>>()
            .join(" U ")
    }
}

pub fn run(args: &BoundArgs, progress: &ProgressArgs) -> Result<(), CliError> {
    let request = request_from(args, progress)?;
    // The figure appears only when the whole command succeeds; a bad path fails before work.
    let mut outputs = OutputTransaction::new();
    if let Some(path) = &args.plot {
        stage_plot(&mut outputs, path)?;
    }
    let mut display = progress.display(None)?;
    let result = run_bound(args, &request, display.as_mut())?;
    drop(display);
    if let Some(path) = &args.plot {
        let theme = Theme::new(args.style);
        let metric_title = request
            .metric
            .build(&request.fixed)
            .map(|m| m.info().title.clone())
            .unwrap_or_else(|_| request.metric.name().to_string());
        let title = bound_title(&metric_title, &result);
        let svg = bound_plot(path, &theme, &title, &result)?;
        write_figure(&mut outputs, path, &svg, &theme)?;
    }
    if args.json {
        let text = serde_json::to_string_pretty(&result)
            .map_err(|e| CliError::usage(format!("cannot serialise the result: {e}")))?;
        outln!("{text}")?;
    } else if args.latex {
        super::out::write_text(&latex_result(&result))?;
    } else {
        print_result(&result)?;
    }
    outputs.commit()?;
    Ok(())
}

/// The bound's checkpoint: the one `--checkpoint` names (kept), or one in the current
/// folder named after the request (removed when the bound ends, kept when it is
/// interrupted), or none.
struct Kept {
    file: Option<BoundCheckpoint>,
    shown: String,
    removable: bool,
}

impl Kept {
    fn open(args: &BoundArgs, request: &BoundRequest) -> Result<Kept, CliError> {
        let (shown, removable) = match &args.checkpoint {
            _ if args.no_checkpoint => {
                return Ok(Kept {
                    file: None,
                    shown: String::new(),
                    removable: false,
                })
            }
            Some(path) => (path.clone(), false),
            None => (checkpoint_name(request).map_err(bound_error)?, true),
        };
        let file = match open_checkpoint(request, &PathBuf::from(&shown)) {
            Ok(f) => Some(f),
            // A folder that cannot be written to (read-only): run without one, and say so.
            Err(BoundRunError::Checkpoint(CheckpointError::Io { message, .. })) if removable => {
                let _ = writeln!(
                    std::io::stderr(),
                    "note: no checkpoint ('{shown}': {message}); an interrupted bound will start \
                     over (give --checkpoint FILE to keep one elsewhere)"
                );
                None
            }
            Err(e) => return Err(bound_error(e)),
        };
        if let Some(f) = file.as_ref().filter(|f| f.kept() > 0) {
            let _ = writeln!(
                std::io::stderr(),
                "bound: resuming from '{shown}': {} nuisance evaluations kept",
                f.kept()
            );
        }
        Ok(Kept {
            file,
            shown,
            removable,
        })
    }

    /// The bound ended (completed or failed): a checkpoint of our own is removed.
    fn close(self) {
        if let (Some(file), true) = (self.file, self.removable) {
            let _ = file.remove();
        }
    }
}

/// Run the bound with its progress display and checkpoint; the first Ctrl-C stops it after
/// the evaluations in progress and says how far it got and how to resume.
fn run_bound(
    args: &BoundArgs,
    request: &BoundRequest,
    display: &mut dyn umbral::run::Observe,
) -> Result<BoundResult, CliError> {
    let mut kept = Kept::open(args, request)?;
    let result = {
        let _graceful = interrupt::Graceful::enter("nuisance evaluations");
        let controls = Controls {
            observers: vec![display],
            stop: Some(interrupt::stop_flag()),
        };
        bound_with(request, controls, kept.file.as_mut())
    };
    match result {
        Err(BoundRunError::Interrupted { done }) => Err(CliError::interrupted(match &kept.file {
            Some(_) => format!(
                "interrupted after {done} nuisance evaluations; they are kept in '{}': rerun \
                 the same command to resume",
                kept.shown
            ),
            None => format!(
                "interrupted after {done} nuisance evaluations; no checkpoint was kept, so a \
                 rerun starts over"
            ),
        })),
        other => {
            kept.close();
            other.map_err(bound_error)
        }
    }
}

/// A bound error as the command line says it.
fn bound_error(e: BoundRunError) -> CliError {
    match e {
        BoundRunError::Checkpoint(e) => CliError::usage(checkpoint_message(&e, "--checkpoint")),
        other => CliError::usage(other.to_string()),
    }
}

/// The bound as a booktabs table: confidence, the measured interval of the size, the allowed
/// ranges; the assumptions above it as comment lines.
fn latex_result(result: &BoundResult) -> String {
    let columns = vec![
        Column::new("confidence", "confidence"),
        Column::new("r_sh/M low", "$r_{\\rm sh}/M$ low"),
        Column::new("r_sh/M high", "$r_{\\rm sh}/M$ high"),
        Column::new(
            format!("allowed {}", result.vary.name),
            format!("allowed ${}$", result.vary.name),
        ),
    ];
    let rows = result
        .levels
        .iter()
        .map(|l| {
            vec![
                short(l.confidence, 6),
                fixed(l.radius_interval[0], 6),
                fixed(l.radius_interval[1], 6),
                result.describe_allowed(&l.allowed, 8),
            ]
        })
        .collect();
    let mut text = format!(
        "% bound on {} of {}; no horizon: {}; no shadow: {}\n",
        result.vary.name,
        result.metric,
        ranges(&result.no_horizon),
        ranges(&result.no_shadow)
    );
    for f in &result.failures {
        text.push_str(&format!(
            "% solver failure on [{:.9}, {:.9}] (neither allowed nor excluded): {}\n",
            f.low, f.high, f.error
        ));
        if let Some(gap) = failure_gaps(f, &result.failures) {
            text.push_str(&format!("%   {gap}\n"));
        }
    }
    text.push_str("% assumptions:\n");
    for a in &result.assumptions {
        text.push_str(&format!("% - {a}\n"));
    }
    text + &Table { columns, rows }.latex(&format!("bound on {}", result.vary.name))
}

/// The unevaluated gaps beside a failure, in words: below it when it is the first of a run
/// of failures (with different messages, listed separately) after a value that did not fail,
/// above it when it is the last; `None` when there is no such gap (a failure met inside a
/// cell between two values that did not fail is that whole cell).
fn failure_gaps(f: &Failure, all: &[Failure]) -> Option<String> {
    let other_between = |a: f64, b: f64| {
        all.iter()
            .any(|g| !std::ptr::eq(g, f) && g.low > a && g.high < b)
    };
    let mut gaps = Vec::new();
    if let Some(x) = f.evaluated_below.filter(|&x| x < f.low) {
        if !other_between(x, f.low) {
            gaps.push(format!(
                "between the last success at {x:.9} and the first failure at {:.9}",
                f.low
            ));
        }
    }
    if let Some(x) = f.evaluated_above.filter(|&x| x > f.high) {
        if !other_between(f.high, x) {
            gaps.push(format!(
                "between the last failure at {:.9} and the next success at {x:.9}",
                f.high
            ));
        }
    }
    (!gaps.is_empty()).then(|| {
        format!(
            "not evaluated (neither allowed nor excluded): {}",
            gaps.join("; ")
        )
    })
}

fn print_result(result: &BoundResult) -> Result<(), CliError> {
    outln!(
        "bound on {} for metric {} over [{}, {}]",
        result.vary.name,
        result.metric,
        result.vary.low,
        result.vary.high
    )?;
    for l in &result.levels {
        outln!(
            "  confidence {}: r_sh/M in [{:.6}, {:.6}] -> allowed {}",
            l.confidence,
            l.radius_interval[0],
            l.radius_interval[1],
            result.describe_allowed(&l.allowed, 8)
        )?;
    }
    if !result.horizonless.is_empty() {
        outln!(
            "  horizonless (no horizon; a photon sphere bounds capture, evaluated): {}",
            ranges(&result.horizonless)
        )?;
    }
    outln!("  no horizon: {}", ranges(&result.no_horizon))?;
    outln!("  no shadow:  {}", ranges(&result.no_shadow))?;
    if !result.refinement_cut.is_empty() {
        outln!(
            "  less precise: at {} value(s) of {} (first {}) a solver failure stopped the nuisance refinement; bound ends near them are less precise",
            result.refinement_cut.len(),
            result.vary.name,
            result.refinement_cut[0]
        )?;
    }
    if result.failures.is_empty() {
        outln!("  solver failures: none")?;
    } else {
        for f in &result.failures {
            outln!(
                "  solver failure on [{:.9}, {:.9}] (neither allowed nor excluded): {}",
                f.low,
                f.high,
                f.error
            )?;
            if let Some(gap) = failure_gaps(f, &result.failures) {
                outln!("    {gap}")?;
            }
        }
    }
    outln!("assumptions:")?;
    for a in &result.assumptions {
        outln!("  - {a}")?;
    }
    Ok(())
}
