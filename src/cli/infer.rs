//! `umbral infer`: posteriors on a metric's parameters from one or several measurements.

use super::args::{parse_finite, MetricChoice, SizeMeasureArg};
use super::figure::{write_figure, FigureStyle, Theme};
use super::interrupt;
use super::plot::stage_plot;
use super::plot_posterior::corner_plot;
use super::progress::ProgressArgs;
use super::tables::{fixed, Column, Table};
use super::CliError;
use clap::{Args, ValueEnum};
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use umbral::measurement::Measurement;
use umbral::numfmt::short;
use umbral::output::OutputTransaction;
pub(super) use umbral::posterior::report::{assumptions, verdict};
use umbral::posterior::report::{is_nested, sample_columns, Choice, Report};
use umbral::posterior::table::MIN_NODES;
use umbral::posterior::{
    InferRunError, InferSettings, Inference, InferenceRequest, PosteriorModel, SamplerKind,
};
use umbral::run::infer::{infer_with, InferStop};
use umbral::run::Controls;
use umbral::sampling::Prior;
use umbral::scan::table::{tabulated, TableBuildError, TabulateError};
use umbral::scan::ScanError;

/// Exit code of a run whose sampler did not converge.
const NOT_CONVERGED: u8 = 3;

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
    #[arg(long, value_name = "FILE")]
    plot: Option<String>,
    /// Print the posterior summary as a LaTeX (booktabs) table, one row per sampled
    /// parameter and interval, with the assumptions as comment lines above it.
    #[arg(long, conflicts_with = "json")]
    latex: bool,
    /// Figure sizes: for a paper column or for a slide.
    #[arg(long, value_enum, default_value = "paper")]
    style: FigureStyle,
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

fn settings(args: &InferArgs, dim: usize) -> Result<InferSettings, CliError> {
    let choice = Choice {
        sampler: match args.sampler {
            SamplerArg::Ensemble => SamplerKind::Ensemble,
            SamplerArg::Nested => SamplerKind::Nested,
            SamplerArg::Quadrature => SamplerKind::Quadrature,
        },
        seed: args.seed,
        samples: args.samples,
        steps: args.steps,
        max_steps: args.max_steps,
        live_points: args.live_points,
        max_panels: args.max_panels,
        levels: levels(&args.levels)?,
    };
    choice
        .settings(dim)
        .map_err(|e| CliError::usage(format!("--{}: {}", e.setting.replace('_', "-"), e.problem)))
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
        write_corner_plot(
            &mut outputs,
            path,
            &model,
            &inference,
            &Theme::new(args.style),
        )?;
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
    } else if let (true, None) = (args.latex, &verdict) {
        super::out::write_text(&latex_summary(&model, &inference, &assumptions))?;
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
    let gr_limit = matches!(args.sampler, SamplerArg::Nested | SamplerArg::Quadrature);
    let mut display = progress.display(None)?;
    let built = {
        let _graceful = interrupt::Graceful::enter("table nodes");
        let controls = Controls {
            observers: vec![display.as_mut()],
            stop: Some(interrupt::stop_flag()),
        };
        tabulated(model, &dir, gr_limit, controls)
    };
    drop(display);
    match built {
        Ok(model) => Ok(model),
        Err(TabulateError::Build(TableBuildError::Scan {
            error: e @ ScanError::Interrupted { .. },
            number,
        })) => Err(CliError::interrupted(format!(
            "table for source {number}: {e}"
        ))),
        Err(e) => Err(CliError::usage(e.to_string())),
    }
}

/// Write the corner plot of a converged run to its staged file; returns its SVG text.
pub(super) fn write_corner_plot(
    outputs: &mut OutputTransaction,
    path: &str,
    model: &PosteriorModel,
    inference: &Inference,
    theme: &Theme,
) -> Result<String, CliError> {
    let sources = match model.sources() {
        1 => "1 source".to_string(),
        k => format!("{k} sources"),
    };
    let title = format!("{}: posterior from {sources}", model.metric_info().title);
    let svg = corner_plot(path, &title, inference, &model.priors(), model.sources())?;
    write_figure(outputs, path, &svg, theme)?;
    Ok(svg)
}

/// A converged posterior's summary as a booktabs table (parameter, median, mean, each
/// credible interval), the assumptions above it as comment lines.
fn latex_summary(model: &PosteriorModel, i: &Inference, assumptions: &[String]) -> String {
    let mut columns = vec![
        Column::new("parameter", "parameter"),
        Column::new("median", "median"),
        Column::new("mean", "mean"),
    ];
    if let Some(first) = i.summaries.first() {
        for iv in &first.intervals {
            let head = format!("{}% {}", short(100.0 * iv.confidence, 4), iv.kind);
            columns.push(Column::new(
                head.clone(),
                format!("{}\\% {}", short(100.0 * iv.confidence, 4), iv.kind),
            ));
        }
    }
    let rows = i
        .summaries
        .iter()
        .map(|s| {
            let mut row = vec![s.name.clone(), fixed(s.median, 6), fixed(s.mean, 6)];
            row.extend(
                s.intervals
                    .iter()
                    .map(|iv| format!("[{}, {}]", fixed(iv.low, 6), fixed(iv.high, 6))),
            );
            row
        })
        .collect();
    let mut text = format!(
        "% posterior of {} from {} source(s) (inclinations in degrees)\n% assumptions:\n",
        model.metric_info().name,
        model.sources()
    );
    for a in assumptions {
        text.push_str(&format!("% - {a}\n"));
    }
    text + &Table { columns, rows }.latex("posterior summary")
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
        } else if is_nested(i) {
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
    } else if is_nested(i) {
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
    let report = Report::new(measurements, model, i, assumptions, converged);
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
    let (header, degrees): (Vec<String>, Vec<bool>) = sample_columns(i).into_iter().unzip();
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
