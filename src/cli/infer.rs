//! `umbral infer`: posteriors on a metric's parameters from one or several measurements.

use super::args::{parse_finite, MetricChoice, SizeMeasureArg};
use super::interrupt;
use super::plot::{stage_plot, write_plot};
use super::plot_posterior::corner_plot;
use super::progress::ProgressArgs;
use super::CliError;
use clap::{Args, ValueEnum};
use serde::Serialize;
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use umbral::measurement::Measurement;
use umbral::output::OutputTransaction;
use umbral::posterior::table::MIN_NODES;
use umbral::posterior::{
    Evidence, InferRunError, InferSettings, Inference, InferenceRequest, PosteriorModel,
    QuadratureReport, SamplerKind, ShadowTable, TableReport,
};
use umbral::run::infer::{infer_with, InferStop};
use umbral::run::Controls;
use umbral::sampling::{Prior, QuadratureSettings};
use umbral::scan::table::{build_tables, TableBuildError};
use umbral::scan::ScanError;

/// The fewest ensemble steps: split-R-hat below 1.01 needs each half of the kept steps to
/// span about 50 autocorrelation times (R-hat - 1 is about (tau - 1)/(2 n) for halves of n
/// steps), and the stretch move's tau is some tens of steps.
const MIN_STEPS: usize = 10_000;

/// How far an unconverged run is continued by default: this many times its first steps.
const MAX_STEPS_FACTOR: usize = 16;

/// Exit code of a run whose sampler did not converge.
const NOT_CONVERGED: u8 = 3;

/// Solver failures above this fraction of the evaluations make the posterior untrustworthy.
const MAX_FAILURE_FRACTION: f64 = 0.01;

#[derive(Debug, Clone, Copy, ValueEnum)]
enum SamplerArg {
    /// The affine-invariant ensemble sampler (posterior).
    Ensemble,
    /// Nested sampling (posterior, evidence and the Bayes factor against GR).
    Nested,
    /// Quadrature of the posterior density, for one or two sampled parameters (posterior,
    /// evidence and the Bayes factor against GR; deterministic).
    Quadrature,
}

#[derive(Debug, Args)]
pub struct InferArgs {
    #[command(flatten)]
    metric: MetricChoice,
    /// A prior, NAME=SPEC (repeatable): uniform:LO:HI, log-uniform:LO:HI, normal:MU:SIGMA,
    /// isotropic:LO:HI or fixed:V. Inclinations in degrees. NAME@K applies to source K only
    /// (spin a, inclination and ring nuisances are each source's own). Metric parameters
    /// without a prior are held at their defaults; inclinations default to isotropic:0:90.
    #[arg(long = "prior", value_name = "NAME=SPEC", allow_hyphen_values = true)]
    priors: Vec<String>,
    /// A measurement file (TOML), one per source (repeatable).
    #[arg(long, value_name = "FILE", required = true)]
    measurement: Vec<String>,
    /// The sampler.
    #[arg(long, value_enum, default_value = "ensemble")]
    sampler: SamplerArg,
    /// The seed of every random number (the same seed gives the same samples).
    #[arg(long, default_value = "1")]
    seed: u64,
    /// Posterior samples to keep (ensemble sampler: sets the number of steps; half of the
    /// steps are burn-in; quadrature: independent draws from the tabulated posterior).
    #[arg(long, default_value = "20000")]
    samples: usize,
    /// Ensemble steps, overriding the number --samples implies (at least 10000 then).
    #[arg(long, value_name = "N")]
    steps: Option<usize>,
    /// Continue an unconverged ensemble run from its last positions, doubling its steps, up
    /// to N steps in all (default 16 times the first steps; the first half of all steps is
    /// the burn-in).
    #[arg(long = "max-steps", value_name = "N")]
    max_steps: Option<usize>,
    /// Live points of nested sampling.
    #[arg(long = "live-points", default_value = "400")]
    live_points: usize,
    /// Quadrature: panels per sampled parameter at most (the grid starts at 4 panels of 8
    /// Gauss-Legendre nodes and doubles until the results stop changing).
    #[arg(long = "max-panels", value_name = "N", default_value = "64")]
    max_panels: usize,
    /// Credible levels, comma-separated.
    #[arg(long, value_name = "P,P,...", default_value = "0.68,0.95")]
    levels: String,
    /// Size of the critical curve compared with the measured size.
    #[arg(long = "size-measure", value_enum, default_value = "mean")]
    size_measure: SizeMeasureArg,
    /// Give zero likelihood to objects without a horizon.
    #[arg(long = "require-horizon")]
    require_horizon: bool,
    /// Print JSON instead of text.
    #[arg(long)]
    json: bool,
    /// Write the posterior samples to DIR/samples.csv (the folder is created if needed).
    #[arg(long, value_name = "DIR")]
    out: Option<PathBuf>,
    /// Interpolate each source's shadow in a table over its sampled metric parameters even
    /// when an exact solver applies (always done for a metric whose shadow needs the ray
    /// tracer; the table's estimated error is printed and must stay within a tenth of the
    /// measurement's sigma).
    #[arg(long)]
    tabulate: bool,
    /// Nodes per table axis (5 to 201).
    #[arg(long = "table-nodes", value_name = "N", default_value_t = umbral::posterior::TABLE_NODES)]
    table_nodes: usize,
    /// Folder of the table files, umbral-table-HASH.jsonl (a later run with the same table
    /// reads it; an interrupted build resumes from it). Default: --out's folder, else the
    /// current folder.
    #[arg(long = "table-dir", value_name = "DIR")]
    table_dir: Option<PathBuf>,
    /// Write a corner plot of the posterior (SVG): every sampled parameter, or when there are
    /// more than 6 the shared ones and each source's spin and inclination. Like the samples,
    /// only a converged run writes it.
    #[arg(long, value_name = "FILE.svg")]
    plot: Option<String>,
    /// Trace only shard K of N of the tables' nodes (K from 0 to N-1: every N-th node from
    /// the K-th) into shard files in the table folder, and stop: `umbral merge` writes the
    /// tables, which a run without --shard then reads (docs/cluster.md).
    #[arg(long, value_name = "K/N")]
    shard: Option<String>,
}

/// Read `NAME=SPEC` priors.
fn priors(items: &[String]) -> Result<Vec<(String, Prior)>, CliError> {
    items
        .iter()
        .map(|item| {
            let (name, spec) = item.split_once('=').ok_or_else(|| {
                CliError::usage(format!("--prior: expected NAME=SPEC, got '{item}'"))
            })?;
            let prior =
                Prior::parse(spec.trim()).map_err(|e| CliError::usage(format!("--prior {e}")))?;
            Ok((name.trim().to_string(), prior))
        })
        .collect()
}

fn levels(text: &str) -> Result<Vec<f64>, CliError> {
    let levels = text
        .split(',')
        .map(|t| parse_finite(t, "--levels"))
        .collect::<Result<Vec<_>, _>>()?;
    if levels.iter().any(|&l| !(l > 0.0 && l < 1.0)) {
        return Err(CliError::usage(format!(
            "--levels: each level must lie strictly between 0 and 1, got '{text}'"
        )));
    }
    Ok(levels)
}

/// The walkers of each ensemble for `dim` sampled parameters: 2 dim + 2 (at least 4). Split
/// R-hat over the ensembles depends on the number of steps, not of walkers, so few walkers and
/// many steps reach a verdict for the fewest evaluations.
fn walkers(dim: usize) -> usize {
    (2 * dim + 2).max(4)
}

fn settings(args: &InferArgs, dim: usize) -> Result<InferSettings, CliError> {
    let chains = 4;
    if args.samples < 100 || args.samples > 10_000_000 {
        return Err(CliError::usage(format!(
            "--samples: give 100 to 10000000, got {}",
            args.samples
        )));
    }
    if !(8..=4096).contains(&args.max_panels) {
        return Err(CliError::usage(format!(
            "--max-panels: give 8 to 4096, got {}",
            args.max_panels
        )));
    }
    if !(20..=100_000).contains(&args.live_points) {
        return Err(CliError::usage(format!(
            "--live-points: give 20 to 100000, got {}",
            args.live_points
        )));
    }
    let per_step = chains * walkers(dim);
    let steps = match args.steps {
        Some(n) if (10..=10_000_000).contains(&n) => n,
        Some(n) => {
            return Err(CliError::usage(format!(
                "--steps: give 10 to 10000000, got {n}"
            )))
        }
        None => (2 * args.samples.div_ceil(per_step)).max(MIN_STEPS),
    };
    let max_steps = match args.max_steps {
        Some(n) if n >= steps && n <= 100_000_000 => n,
        Some(n) => {
            return Err(CliError::usage(format!(
                "--max-steps: give at least the first steps ({steps}) and at most 100000000, got \
                 {n}"
            )))
        }
        None => steps.saturating_mul(MAX_STEPS_FACTOR),
    };
    Ok(InferSettings {
        sampler: match args.sampler {
            SamplerArg::Ensemble => SamplerKind::Ensemble,
            SamplerArg::Nested => SamplerKind::Nested,
            SamplerArg::Quadrature => SamplerKind::Quadrature,
        },
        seed: args.seed,
        steps,
        max_steps,
        walkers: walkers(dim),
        chains,
        live_points: args.live_points,
        levels: levels(&args.levels)?,
        samples: args.samples,
        max_panels: args.max_panels,
        ..InferSettings::default()
    })
}

/// What the sampler did, in words.
fn sampler_assumption(s: &InferSettings, i: &Inference) -> String {
    let steps = i.steps;
    match s.sampler {
        SamplerKind::Ensemble => format!(
            "sampler: affine-invariant ensemble (Goodman & Weare 2010), {} independent ensembles \
             of {} walkers, {} steps (first {}, continued up to {} until converged) of which \
             the first half is burn-in, seed {}; converged \
             means split R-hat < 1.01 over the independent ensembles (each one's walker-mean \
             trajectory; Vehtari et al. 2021) and bulk ESS >= 400",
            s.chains, s.walkers, steps, s.steps, s.max_steps, s.seed
        ),
        SamplerKind::Nested => format!(
            "sampler: nested sampling (Skilling 2006), {} live points, seed {}; the GR model \
             holds the shared parameters at the metric's defaults; posterior samples are the \
             equal-weight resampling of the dead and live points",
            s.live_points, s.seed
        ),
        SamplerKind::Quadrature => {
            let (panels, nodes, grids) = i
                .quadrature
                .as_ref()
                .map_or((0, 0, 0), |q| (q.panels, q.nodes_per_panel, q.grids));
            let boundaries = match (&i.quadrature, i.names.first()) {
                (Some(q), Some(name)) if !q.boundaries.is_empty() => {
                    let at: Vec<String> = q.boundaries.iter().map(|b| format!("{b:.9}")).collect();
                    format!(
                        "; the likelihood changes between zero and non-zero inside the prior at \
                         {name} = {} (located by bisection; the panels are split there)",
                        at.join(", ")
                    )
                }
                _ => String::new(),
            };
            format!(
                "sampler: quadrature of the posterior density in the priors' cumulative \
                 probabilities (composite Gauss-Legendre, {nodes} nodes per panel), the panels \
                 doubled from {} up to {} per parameter until ln Z, the 0.16/0.5/0.84 quantiles \
                 and the intervals changed by at most {:e} (quantities in units of the prior's \
                 mass, and at most 1% of the 68% width): {grids} grids, {panels} panels per \
                 parameter at the end; the GR model holds the shared parameters at the \
                 metric's defaults, its evidence by the same quadrature (or, with nothing left to \
                 sample, its likelihood at that point); posterior samples are \
                 {} independent draws by inverse CDF, seed {}{boundaries}",
                QuadratureSettings::default().initial_panels,
                s.max_panels,
                s.tolerance,
                i.samples.len(),
                s.seed
            )
        }
    }
}

/// Everything a posterior assumed: the model's priors and likelihoods, the sampler, and the
/// solver failures given zero likelihood.
pub(super) fn assumptions(
    model: &PosteriorModel,
    settings: &InferSettings,
    inference: &Inference,
) -> Vec<String> {
    let mut assumptions = model.assumptions();
    assumptions.push(sampler_assumption(settings, inference));
    if inference.failures > 0 {
        assumptions.push(format!(
            "{} of {} model evaluations failed in the shadow solver and were given zero \
             likelihood (first: {})",
            inference.failures,
            inference.evaluations,
            inference.first_failure.as_deref().unwrap_or("no message")
        ));
    }
    assumptions
}

#[derive(Serialize)]
struct JsonInterval {
    confidence: f64,
    kind: &'static str,
    low: f64,
    high: f64,
}

#[derive(Serialize)]
struct JsonParameter {
    median: f64,
    mean: f64,
    intervals: Vec<JsonInterval>,
}

#[derive(Serialize)]
struct JsonDiagnostics {
    rhat: BTreeMap<String, Option<f64>>,
    ess: BTreeMap<String, f64>,
    acceptance: Option<f64>,
    converged: bool,
    evaluations: usize,
    solver_failures: usize,
    #[serde(skip_serializing_if = "Option::is_none")]
    quadrature: Option<QuadratureReport>,
}

#[derive(Serialize)]
struct JsonReport<'a> {
    metric: String,
    priors: BTreeMap<String, String>,
    measurements: &'a [String],
    parameters: Option<BTreeMap<String, JsonParameter>>,
    evidence: Option<Evidence>,
    diagnostics: JsonDiagnostics,
    /// The interpolation tables (ray-traced metrics or --tabulate), with their errors.
    tables: Vec<TableReport>,
    assumptions: &'a [String],
}

/// The samples' temporary and final paths, with `--out`.
type StagedCsv = Option<(PathBuf, PathBuf)>;

/// The command's files, staged before any sampling so that a bad path fails first (and before
/// `--out` creates its folder): the corner plot and `DIR/samples.csv`. Both appear only when
/// the run converged.
fn stage_outputs(args: &InferArgs) -> Result<(OutputTransaction, StagedCsv), CliError> {
    let mut outputs = OutputTransaction::new();
    if let Some(path) = &args.plot {
        stage_plot(&mut outputs, path)?;
    }
    let csv_path = match &args.out {
        Some(dir) => {
            std::fs::create_dir_all(dir).map_err(|e| {
                CliError::usage(format!("--out {}: cannot create: {e}", dir.display()))
            })?;
            let path = dir.join("samples.csv");
            Some((outputs.stage(&path)?, path))
        }
        None => None,
    };
    Ok((outputs, csv_path))
}

/// The posterior's model from the arguments and the (calibrated) measurements.
fn posterior_model(
    args: &InferArgs,
    metric: umbral::metrics::MetricSource,
    sources: Vec<Measurement>,
) -> Result<PosteriorModel, CliError> {
    let mut request = InferenceRequest::new(metric, priors(&args.priors)?, sources);
    request.size_measure = args.size_measure.measure();
    request.require_horizon = args.require_horizon;
    request.tabulate = args.tabulate;
    if !(MIN_NODES..=201).contains(&args.table_nodes) {
        return Err(CliError::usage(format!(
            "--table-nodes: give {MIN_NODES} to 201, got {}",
            args.table_nodes
        )));
    }
    request.table_nodes = args.table_nodes;
    PosteriorModel::new(&request).map_err(|e| CliError::usage(e.to_string()))
}

/// A worker rank of an MPI job: serve the grids of the tables the run builds (its own and,
/// for nested sampling and quadrature, the GR limit's) until rank 0 ends the program. A
/// measurement whose kappa is computed leaves the worker nothing to serve (rank 0 computes
/// the calibration and the tables alone).
#[cfg(feature = "mpi")]
pub fn serve(
    args: &InferArgs,
    link: &mut dyn umbral::run::cluster::WorkerLink,
) -> Result<usize, CliError> {
    use umbral::scan::shard::{served_tables, table_requests};
    let metric = args.metric.resolve()?;
    let sources = args
        .measurement
        .iter()
        .map(|m| Measurement::from_path(Path::new(m)).map_err(|e| CliError::usage(e.to_string())))
        .collect::<Result<Vec<_>, _>>()?;
    let model = posterior_model(args, metric, sources)?;
    let mut requests = Vec::new();
    if model.needs_tables() {
        let layout = |e: umbral::posterior::InferError| CliError::usage(e.to_string());
        requests = table_requests(&model).map_err(layout)?;
        if matches!(args.sampler, SamplerArg::Nested | SamplerArg::Quadrature) {
            requests.extend(table_requests(&model.gr_model()).map_err(layout)?);
        }
    }
    let grids = served_tables(&requests);
    let lists: Vec<&dyn umbral::run::cluster::Served> = grids.iter().map(|g| g.as_ref()).collect();
    Ok(umbral::run::cluster::serve(link, &lists))
}

pub fn run(args: &InferArgs, progress: &ProgressArgs) -> Result<ExitCode, CliError> {
    if let Some(path) = &args.plot {
        super::args::check_svg_path(path)?;
    }
    let metric = args.metric.resolve()?;
    let mut sources = args
        .measurement
        .iter()
        .map(|m| Measurement::from_path(Path::new(m)).map_err(|e| CliError::usage(e.to_string())))
        .collect::<Result<Vec<_>, _>>()?;
    for source in &mut sources {
        super::calibrate::resolve_measurement(source, progress)?;
    }
    let model = posterior_model(args, metric, sources)?;
    let dim = model.names().len();
    let settings = settings(args, dim)?;
    settings.check(&model.names()).map_err(|e| match e {
        InferRunError::Quadrature(e) => {
            CliError::usage(format!("--max-panels {}: {e}", args.max_panels))
        }
        e => CliError::usage(e.to_string()),
    })?;
    if model.needs_tables() {
        model
            .table_plans()
            .map_err(|e| CliError::usage(e.to_string()))?;
    }
    if let Some(shard) = &args.shard {
        return table_shards(&model, args, super::merge::parse_shard(shard)?, progress);
    }
    let (mut outputs, csv_path) = stage_outputs(args)?;
    let model = if model.needs_tables() {
        with_tables(model, args, progress)?
    } else {
        model
    };
    let mut display = progress.display(None)?;
    let result = {
        let _graceful = interrupt::Graceful::enter("model evaluations");
        let controls = Controls {
            observers: vec![display.as_mut()],
            stop: Some(interrupt::stop_flag()),
        };
        infer_with(&model, &settings, controls)
    };
    drop(display);
    let inference = match result {
        Ok(i) => i,
        Err(InferStop::Interrupted { done }) => {
            return Err(CliError::interrupted(format!(
                "interrupted after {done} model evaluations; an unfinished sampler has no \
                 posterior, so nothing was written: rerun to start over"
            )))
        }
        Err(InferStop::Run(InferRunError::Ensemble(e))) => {
            return Err(CliError::usage(format!("the sampler: {e}")))
        }
        Err(InferStop::Run(e)) => return Err(CliError::usage(e.to_string())),
    };
    let assumptions = assumptions(&model, &settings, &inference);
    let verdict = verdict(&inference);
    if let Some((temp, path)) = &csv_path {
        if verdict.is_none() {
            std::fs::write(temp, samples_csv(&inference, &assumptions))
                .map_err(|e| CliError::usage(format!("cannot write '{}': {e}", path.display())))?;
        }
    }
    if let (Some(path), None) = (&args.plot, &verdict) {
        write_corner_plot(&mut outputs, path, &model, &inference)?;
    }
    if args.json {
        let report = json_report(
            &args.measurement,
            &model,
            &inference,
            &assumptions,
            verdict.is_none(),
        )?;
        outln!("{report}")?;
    } else {
        print_text(&model, &inference, &assumptions, verdict.as_deref())?;
    }
    if verdict.is_some() {
        return Ok(ExitCode::from(NOT_CONVERGED));
    }
    outputs.commit()?;
    Ok(ExitCode::SUCCESS)
}

/// The folder of the table files: --table-dir, else --out, else the current folder.
fn table_dir(args: &InferArgs) -> Result<PathBuf, CliError> {
    let dir = match (&args.table_dir, &args.out) {
        (Some(dir), _) | (None, Some(dir)) => dir.clone(),
        (None, None) => PathBuf::from("."),
    };
    std::fs::create_dir_all(&dir).map_err(|e| {
        CliError::usage(format!("--table-dir {}: cannot create: {e}", dir.display()))
    })?;
    Ok(dir)
}

/// `--shard K/N`: shard K of every table the run needs (the GR limit's too, for nested
/// sampling and quadrature), one shard file per table in the table folder.
fn table_shards(
    model: &PosteriorModel,
    args: &InferArgs,
    shard: umbral::run::shard::Shard,
    progress: &ProgressArgs,
) -> Result<ExitCode, CliError> {
    if !model.needs_tables() {
        return Err(CliError::usage(
            "--shard shares out the tables infer builds, and this model needs none (an exact \
             solver applies; --tabulate tabulates it all the same)",
        ));
    }
    let dir = table_dir(args)?;
    let mut models = vec![model.clone()];
    if matches!(args.sampler, SamplerArg::Nested | SamplerArg::Quadrature) {
        models.push(model.gr_model());
    }
    for m in &models {
        let mut display = progress.display(None)?;
        let built = {
            let _graceful = interrupt::Graceful::enter("table nodes");
            let controls = Controls {
                observers: vec![display.as_mut()],
                stop: Some(interrupt::stop_flag()),
            };
            umbral::scan::shard::table_shards(m, shard, &dir, controls)
        };
        drop(display);
        let files = built.map_err(|e| match e {
            TableBuildError::Scan { error, .. } => super::merge::scan_error(error, "--table-dir"),
            other => CliError::usage(other.to_string()),
        })?;
        for (path, summary) in files {
            super::merge::report_shard("table", shard, "nodes", &path, &summary)?;
        }
    }
    Ok(ExitCode::SUCCESS)
}

/// The model with its tables, built (or read) on the executor with progress; Ctrl-C keeps
/// the finished nodes in the table file.
fn with_tables(
    model: PosteriorModel,
    args: &InferArgs,
    progress: &ProgressArgs,
) -> Result<PosteriorModel, CliError> {
    let dir = table_dir(args)?;
    let tables = build(&model, &dir, progress)?;
    let model = model
        .with_tables(tables)
        .map_err(|e| CliError::usage(e.to_string()))?;
    if !matches!(args.sampler, SamplerArg::Nested | SamplerArg::Quadrature) {
        return Ok(model);
    }
    // The Bayes factor's GR limit holds the shared parameters elsewhere: its own tables.
    let gr_tables = build(&model.gr_model(), &dir, progress)?;
    model
        .with_gr_tables(gr_tables)
        .map_err(|e| CliError::usage(format!("the GR limit's {e}")))
}

/// Build (or read) a model's tables with progress; Ctrl-C keeps the finished nodes.
fn build(
    model: &PosteriorModel,
    dir: &Path,
    progress: &ProgressArgs,
) -> Result<Vec<ShadowTable>, CliError> {
    let mut display = progress.display(None)?;
    let built = {
        let _graceful = interrupt::Graceful::enter("table nodes");
        let controls = Controls {
            observers: vec![display.as_mut()],
            stop: Some(interrupt::stop_flag()),
        };
        build_tables(model, dir, controls)
    };
    drop(display);
    match built {
        Ok(t) => Ok(t),
        Err(TableBuildError::Scan {
            error: e @ ScanError::Interrupted { .. },
            number,
        }) => Err(CliError::interrupted(format!(
            "table for source {number}: {e}"
        ))),
        Err(e) => Err(CliError::usage(e.to_string())),
    }
}

/// Write the corner plot of a converged run to its staged file.
pub(super) fn write_corner_plot(
    outputs: &mut OutputTransaction,
    path: &str,
    model: &PosteriorModel,
    inference: &Inference,
) -> Result<(), CliError> {
    let sources = match model.sources() {
        1 => "1 source".to_string(),
        k => format!("{k} sources"),
    };
    let title = format!("{}: posterior from {sources}", model.metric_info().name);
    let svg = corner_plot(path, &title, inference, &model.priors(), model.sources())?;
    write_plot(outputs, path, &svg)
}

/// Why the run is not a posterior to report (`None`: it is).
/// Whether the inference is nested sampling's: the only sampler with an evidence and no
/// quadrature report.
fn nested(i: &Inference) -> bool {
    i.evidence.is_some() && i.quadrature.is_none()
}

pub(super) fn verdict(i: &Inference) -> Option<String> {
    let c = &i.convergence;
    let mut why = Vec::new();
    if let (Some(q), false) = (&i.quadrature, c.converged) {
        why.push(format!(
            "the quadrature did not converge: at {} panels of {} nodes per parameter the \
             reported quantities still changed by {:.3} times their tolerance",
            q.panels, q.nodes_per_panel, q.change
        ));
    } else if !c.converged && nested(i) {
        why.push(format!(
            "the effective sample size of the nested-sampling weights is {:.0} (needs >= 400)",
            c.ess
        ));
    } else if !c.converged {
        why.push(format!(
            "split R-hat {:.4} (needs < 1.01) and effective sample size {:.0} (needs >= 400)",
            c.rhat, c.ess
        ));
    }
    if i.failures as f64 > MAX_FAILURE_FRACTION * i.evaluations as f64 {
        why.push(format!(
            "{} of {} evaluations failed in the shadow solver (more than {}%)",
            i.failures,
            i.evaluations,
            100.0 * MAX_FAILURE_FRACTION
        ));
    }
    (!why.is_empty()).then(|| why.join("; "))
}

fn print_text(
    model: &PosteriorModel,
    i: &Inference,
    assumptions: &[String],
    not_converged: Option<&str>,
) -> Result<(), CliError> {
    let c = &i.convergence;
    if let Some(why) = not_converged {
        outln!(
            "NOT CONVERGED: {why}; no intervals are reported (raise {}, or check the priors)",
            if i.quadrature.is_some() {
                "--max-panels"
            } else {
                "--max-steps"
            }
        )?;
    } else {
        if let Some(q) = &i.quadrature {
            outln!(
                "posterior of {} from {} source(s): converged (quadrature, {} panels of {} \
                 nodes per parameter after {} grids; largest change at the last doubling {:.3} \
                 of its tolerance)",
                model.metric_info().name,
                model.sources(),
                q.panels,
                q.nodes_per_panel,
                q.grids,
                q.change
            )?;
        } else if nested(i) {
            outln!(
                "posterior of {} from {} source(s): converged (nested sampling: effective \
                 sample size of the weights {:.0}, walk acceptance {:.3}; R-hat not applicable)",
                model.metric_info().name,
                model.sources(),
                c.ess,
                c.acceptance
            )?;
        } else {
            outln!(
                "posterior of {} from {} source(s): converged (max split R-hat {:.4}, min ESS \
                 {:.0}, acceptance {:.3})",
                model.metric_info().name,
                model.sources(),
                c.rhat,
                c.ess,
                c.acceptance
            )?;
        }
        for s in &i.summaries {
            let unit = if s.name.starts_with("inclination") {
                " deg"
            } else {
                ""
            };
            outln!(
                "{}: median {:.6}{unit}, mean {:.6}{unit}",
                s.name,
                s.median,
                s.mean
            )?;
            for iv in &s.intervals {
                outln!(
                    "  {:>4.1}% {:<15} [{:.6}, {:.6}]",
                    100.0 * iv.confidence,
                    iv.kind,
                    iv.low,
                    iv.high
                )?;
            }
        }
        for t in model
            .table_reports()
            .into_iter()
            .chain(model.gr_table_reports())
        {
            outln!(
                "{} ({} nodes): estimated interpolation error {:.2e} r_sh/M in the size \
                 (allowed {:.2e}){}",
                t.table,
                t.nodes,
                t.size_error,
                t.size_limit,
                match t.circularity_error {
                    Some(e) => format!(", {e:.2e} in the circularity deviation"),
                    None => String::new(),
                }
            )?;
        }
        if let Some(e) = &i.evidence {
            outln!(
                "evidence: ln Z = {:.4} +- {:.4}; GR (shared parameters at the metric's \
                 defaults): ln Z = {:.4} +- {:.4}; ln Bayes factor (deviation over GR) = \
                 {:.4} +- {:.4}",
                e.log_evidence,
                e.log_evidence_error,
                e.log_evidence_gr,
                e.log_evidence_gr_error,
                e.log_bayes_factor,
                e.log_bayes_factor_error
            )?;
        }
    }
    outln!("diagnostics:")?;
    if i.quadrature.is_some() {
        for s in &i.summaries {
            outln!(
                "  {}: split R-hat not applicable, ESS {:.0} (independent draws)",
                s.name,
                s.ess
            )?;
        }
        outln!(
            "  acceptance not applicable, {} model evaluations, {} solver failures",
            i.evaluations,
            i.failures
        )?;
    } else if nested(i) {
        for s in &i.summaries {
            outln!(
                "  {}: split R-hat not applicable, ESS {:.0} (of the weights)",
                s.name,
                s.ess
            )?;
        }
        outln!(
            "  walk acceptance {:.3}, {} model evaluations, {} solver failures",
            c.acceptance,
            i.evaluations,
            i.failures
        )?;
    } else {
        for s in &i.summaries {
            outln!("  {}: split R-hat {:.4}, ESS {:.0}", s.name, s.rhat, s.ess)?;
        }
        outln!(
            "  acceptance {:.3}, {} model evaluations, {} solver failures",
            c.acceptance,
            i.evaluations,
            i.failures
        )?;
    }
    outln!("assumptions:")?;
    for a in assumptions {
        outln!("  - {a}")?;
    }
    Ok(())
}

/// The JSON report of a run (`measurements`: the files as named): the summaries only when it
/// converged, the diagnostics and the assumptions always.
pub(super) fn json_report(
    measurements: &[String],
    model: &PosteriorModel,
    i: &Inference,
    assumptions: &[String],
    converged: bool,
) -> Result<String, CliError> {
    let parameters = converged.then(|| {
        i.summaries
            .iter()
            .map(|s| {
                let p = JsonParameter {
                    median: s.median,
                    mean: s.mean,
                    intervals: s
                        .intervals
                        .iter()
                        .map(|iv| JsonInterval {
                            confidence: iv.confidence,
                            kind: iv.kind,
                            low: iv.low,
                            high: iv.high,
                        })
                        .collect(),
                };
                (s.name.clone(), p)
            })
            .collect()
    });
    let report = JsonReport {
        metric: model.metric_info().name,
        priors: model
            .parameters()
            .iter()
            .map(|p| (p.name.clone(), p.prior.to_string()))
            .collect(),
        measurements,
        parameters,
        evidence: if converged { i.evidence } else { None },
        diagnostics: JsonDiagnostics {
            rhat: i
                .summaries
                .iter()
                .map(|s| (s.name.clone(), s.rhat.is_finite().then_some(s.rhat)))
                .collect(),
            ess: i
                .summaries
                .iter()
                .map(|s| (s.name.clone(), s.ess))
                .collect(),
            acceptance: i
                .convergence
                .acceptance
                .is_finite()
                .then_some(i.convergence.acceptance),
            converged,
            evaluations: i.evaluations,
            solver_failures: i.failures,
            quadrature: i.quadrature.clone(),
        },
        tables: model
            .table_reports()
            .into_iter()
            .chain(model.gr_table_reports())
            .collect(),
        assumptions,
    };
    serde_json::to_string_pretty(&report)
        .map_err(|e| CliError::usage(format!("cannot write JSON: {e}")))
}

/// The samples as CSV: `#` lines naming the assumptions, a header naming every column
/// (inclinations in degrees), one row per sample.
pub(super) fn samples_csv(i: &Inference, assumptions: &[String]) -> String {
    let mut text = String::from("# umbral infer: posterior samples (equally weighted)\n");
    for a in assumptions {
        text.push_str(&format!("# {a}\n"));
    }
    let degrees: Vec<bool> = i
        .names
        .iter()
        .map(|n| n.starts_with("inclination"))
        .collect();
    let header: Vec<String> = i
        .names
        .iter()
        .zip(&degrees)
        .map(|(n, &d)| if d { format!("{n}_deg") } else { n.clone() })
        .collect();
    text.push_str(&header.join(","));
    text.push('\n');
    for row in &i.samples {
        let cells: Vec<String> = row
            .iter()
            .zip(&degrees)
            .map(|(&x, &d)| format!("{}", if d { x.to_degrees() } else { x }))
            .collect();
        text.push_str(&cells.join(","));
        text.push('\n');
    }
    text
}
