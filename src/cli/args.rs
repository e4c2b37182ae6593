//! Shared argument types and the command-line error.

use clap::{Args, ValueEnum};
use std::fmt;
use std::path::PathBuf;
use umbral::bounds::SizeMeasure;
use umbral::error::MetricError;
use umbral::metric::Spacetime;
use umbral::metrics::MetricSource;

/// Exit code of a run stopped by Ctrl-C (128 + SIGINT, as shells report it).
pub const INTERRUPTED: u8 = 130;

/// An error to print on one line, with its exit code.
#[derive(Debug)]
pub struct CliError {
    message: String,
    code: u8,
}

impl CliError {
    /// Bad input: exit code 2.
    pub fn usage(message: impl Into<String>) -> Self {
        CliError {
            message: message.into().replace('\n', " "),
            code: 2,
        }
    }

    /// A run stopped by Ctrl-C: exit code [`INTERRUPTED`], printed without `error:`.
    pub fn interrupted(message: impl Into<String>) -> Self {
        CliError {
            message: message.into(),
            code: INTERRUPTED,
        }
    }

    /// Bad input whose message spans several lines on purpose (a metric-file error with the
    /// offending line and a caret under it): exit code 2.
    pub fn detailed(message: impl Into<String>) -> Self {
        CliError {
            message: message.into(),
            code: 2,
        }
    }

    /// The process exit code.
    pub fn exit_code(&self) -> u8 {
        self.code
    }
}

impl fmt::Display for CliError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.message)
    }
}

impl From<umbral::output::OutputError> for CliError {
    fn from(e: umbral::output::OutputError) -> Self {
        CliError::usage(e.to_string())
    }
}

impl From<MetricError> for CliError {
    fn from(e: MetricError) -> Self {
        CliError::usage(e.to_string())
    }
}

/// Read a finite number, naming what it is for in the error.
pub fn parse_finite(text: &str, what: &str) -> Result<f64, CliError> {
    let value: f64 = text.trim().parse().map_err(|_| MetricError::BadNumber {
        text: text.to_string(),
        expected: format!("a number for {what}"),
    })?;
    if !value.is_finite() {
        return Err(CliError::usage(format!(
            "{what} must be a finite number, got '{text}'"
        )));
    }
    Ok(value)
}

/// Read `NAME=VALUE` assignments (one value each).
pub fn parse_assignments(items: &[String]) -> Result<Vec<(String, f64)>, CliError> {
    let mut family = parse_set_family(items)?;
    if family.len() != 1 {
        return Err(CliError::usage(
            "this command takes one value per parameter, not a comma list",
        ));
    }
    Ok(family.remove(0))
}

/// The metric: a built-in one by name, or a declarative metric file.
#[derive(Debug, Clone, Args)]
#[group(required = true, multiple = false)]
pub struct MetricChoice {
    /// Built-in metric name (see `umbral metrics`).
    #[arg(long)]
    pub metric: Option<String>,
    /// A declarative metric file (see docs/metric-files.md).
    #[arg(long = "metric-file", value_name = "PATH")]
    pub metric_file: Option<PathBuf>,
}

impl MetricChoice {
    /// The metric source: a built-in metric looked up by name, or the file loaded (its errors
    /// point at the place, over several lines).
    pub fn resolve(&self) -> Result<MetricSource, CliError> {
        match (&self.metric, &self.metric_file) {
            (Some(name), _) => Ok(MetricSource::builtin(name)?),
            (None, Some(path)) => MetricSource::load(path)
                .map_err(|e| CliError::detailed(e.to_string().trim_end().to_string())),
            (None, None) => Err(CliError::usage("give --metric NAME or --metric-file PATH")),
        }
    }
}

/// Build the metric chosen on the command line with its `--set` assignments.
pub fn metric_from_args(
    choice: &MetricChoice,
    sets: &[String],
) -> Result<Box<dyn Spacetime>, CliError> {
    let assignments = parse_assignments(sets)?;
    Ok(choice.resolve()?.build(&assignments)?)
}

/// Read `--set` items where at most one parameter carries a comma list of values, giving one
/// assignment list per family member.
pub fn parse_set_family(items: &[String]) -> Result<Vec<Vec<(String, f64)>>, CliError> {
    let mut fixed = Vec::new();
    let mut varied: Option<(String, Vec<f64>)> = None;
    for item in items {
        let (name, values) = item.split_once('=').ok_or_else(|| {
            CliError::usage(format!("cannot read '--set {item}': expected NAME=VALUE"))
        })?;
        let name = name.trim().to_string();
        let values: Vec<f64> = values
            .split(',')
            .map(|v| {
                v.trim().parse::<f64>().map_err(|_| {
                    CliError::from(MetricError::BadNumber {
                        text: v.to_string(),
                        expected: format!("a number for parameter '{name}'"),
                    })
                })
            })
            .collect::<Result<_, _>>()?;
        if values.len() == 1 {
            fixed.push((name, values[0]));
        } else if varied.is_some() {
            return Err(CliError::usage(
                "only one parameter may take a comma list of values",
            ));
        } else {
            varied = Some((name, values));
        }
    }
    Ok(match varied {
        None => vec![fixed],
        Some((name, values)) => values
            .into_iter()
            .map(|v| {
                let mut member = fixed.clone();
                member.push((name.clone(), v));
                member
            })
            .collect(),
    })
}

/// `a = 0.9, q = 0.1`, or `no parameters`.
pub fn parameter_summary(parameters: &std::collections::BTreeMap<String, f64>) -> String {
    if parameters.is_empty() {
        return "no parameters".to_string();
    }
    parameters
        .iter()
        .map(|(k, v)| format!("{k} = {v}"))
        .collect::<Vec<_>>()
        .join(", ")
}

/// A checkpoint error as the command line says it: the library's message with what to do
/// about it on the command line (`flag` names the file's option, `--out`).
pub fn checkpoint_message(e: &umbral::run::CheckpointError, flag: &str) -> String {
    use umbral::run::{remedy, CheckpointError};
    match e {
        CheckpointError::Mismatch { .. } => {
            format!("{e} (use another {flag} or delete the file)")
        }
        CheckpointError::BadLine {
            path,
            line,
            problem,
            item,
        } => {
            let or = if *line == 1 { " or" } else { ", or" };
            format!(
                "'{path}' line {line} {problem}; refusing to resume from it ({}{or} use another {flag})",
                remedy(*line, item)
            )
        }
        CheckpointError::InUse { .. } => format!("{e} or use another {flag}"),
        CheckpointError::Io { .. } | CheckpointError::Read { .. } => e.to_string(),
    }
}

/// `--size-measure`: the command-line spelling of [`SizeMeasure`].
#[derive(Debug, Clone, Copy, ValueEnum)]
pub enum SizeMeasureArg {
    Mean,
    Area,
}

impl SizeMeasureArg {
    /// The library's size measure.
    pub fn measure(self) -> SizeMeasure {
        match self {
            SizeMeasureArg::Mean => SizeMeasure::Mean,
            SizeMeasureArg::Area => SizeMeasure::Area,
        }
    }
}
