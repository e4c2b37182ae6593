//! `umbral merge`: the shard files of a job array joined into what one process writes, and
//! the `--shard K/N` runs of `scan`, `infer` (its tables), `image` and `calibrate` that make
//! them (docs/cluster.md).

use super::interrupt;
use super::progress::ProgressArgs;
use super::CliError;
use clap::{Args, Parser};
use serde_json::json;
use std::ffi::OsString;
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use umbral::metrics::MetricSource;
use umbral::output::OutputTransaction;
use umbral::run::shard::{read_header, read_shards, Merged, Shard, ShardJob, ShardSummary};
use umbral::run::{metric_sha256, Controls, Observe};
use umbral::scan::shard::{merged_scan_file, merged_table_file};
use umbral::scan::{ScanError, ScanRequest};

#[derive(Debug, Args)]
pub struct MergeArgs {
    /// The shard files (every shard K/N of one run exactly once; for the tables of `infer`,
    /// the shards of every table).
    #[arg(required = true, value_name = "FILE")]
    files: Vec<PathBuf>,
    /// The result: a scan file (scan), the folder of the table files (infer's tables), the
    /// image file (.npy, .fits or .png) or the calibration file (.json), as the command that
    /// made the shards writes it.
    #[arg(long, value_name = "FILE|DIR")]
    out: PathBuf,
}

/// Where a run that can be sharded gets its items.
#[derive(Debug, Clone, Copy)]
pub enum Rows<'a> {
    /// Computed here (or by the ranks of an MPI job).
    Trace,
    /// Shard `shard` only, into the file of `--out`; `argv` is the command line, recorded in
    /// the shard file for the merge.
    Shard { shard: Shard, argv: &'a [OsString] },
    /// Recalled from merged shard files.
    Merged(&'a Merged),
}

/// Read `--shard K/N`.
pub fn parse_shard(text: &str) -> Result<Shard, CliError> {
    text.parse()
        .map_err(|e: String| CliError::usage(format!("--shard: {e}")))
}

/// The words of a command line as a shard file records them for its merge: the subcommand
/// and its options, without `--shard`, `--out` and the progress options.
pub fn command_words(argv: &[OsString]) -> Result<Vec<String>, CliError> {
    let mut words = Vec::new();
    let mut skip = false;
    for (i, word) in argv.iter().enumerate().skip(1) {
        let word = word.to_str().ok_or_else(|| {
            CliError::usage(format!(
                "argument {i} is not UTF-8 text: a shard file records the arguments as text"
            ))
        })?;
        if std::mem::take(&mut skip) {
            continue;
        }
        let name = word.split_once('=').map_or(word, |(n, _)| n);
        match name {
            "--shard" | "--out" | "--progress-every" => skip = !word.contains('='),
            "--quiet" => {}
            _ => words.push(word.to_string()),
        }
    }
    Ok(words)
}

/// What a shard of a command records for its merge: the command's words and the metric's
/// content hash.
pub fn command_run(
    argv: &[OsString],
    metric: &MetricSource,
) -> Result<serde_json::Value, CliError> {
    let hash = metric_sha256(metric).map_err(|e| CliError::usage(e.to_string()))?;
    Ok(json!({ "arguments": command_words(argv)?, "metric_sha256": hash }))
}

/// Check that merged shards of a command were computed with this metric.
pub fn check_metric(merged: &Merged, metric: &MetricSource) -> Result<(), CliError> {
    let hash = metric_sha256(metric).map_err(|e| CliError::usage(e.to_string()))?;
    if merged.run["metric_sha256"].as_str() != Some(hash.as_str()) {
        return Err(CliError::usage(
            "the shards were computed with another metric (its content changed since)",
        ));
    }
    Ok(())
}

/// The shard file of a command (its `--out`, which must end in `.jsonl`).
pub fn shard_file<'p>(out: Option<&'p Path>, command: &str) -> Result<&'p Path, CliError> {
    match out {
        Some(p) if p.extension().is_some_and(|e| e == "jsonl") => Ok(p),
        Some(p) => Err(CliError::usage(format!(
            "with --shard, --out names the shard file (.jsonl), got '{}'; the merge writes the \
             {command}'s own file",
            p.display()
        ))),
        None => Err(CliError::usage(
            "--shard needs --out FILE.jsonl, the shard file",
        )),
    }
}

/// Tell what a finished shard holds.
pub fn report_shard(
    what: &str,
    shard: Shard,
    unit: &str,
    path: &Path,
    s: &ShardSummary,
) -> Result<(), CliError> {
    outln!(
        "{what} shard {shard}: {} {unit} in '{}' ({} computed, {} kept from an earlier run); \
         merge the {} shard files with umbral merge",
        s.items,
        path.display(),
        s.computed,
        s.kept,
        shard.count
    )
}

/// A shard of a scan (`kind` `scan`, or `table` for one of infer's), with its progress and
/// Ctrl-C; `shown` names the file in messages.
pub fn scan_shard(
    request: &ScanRequest,
    shard: Shard,
    kind: &str,
    path: &Path,
    shown: &str,
    display: &mut dyn Observe,
) -> Result<(), CliError> {
    let result = {
        let _graceful = interrupt::Graceful::enter("points");
        let controls = Controls {
            observers: vec![display],
            stop: Some(interrupt::stop_flag()),
        };
        umbral::scan::shard::scan_shard(request, shard, kind, path, controls)
    };
    let summary = result.map_err(|e| scan_error(e, shown))?;
    report_shard("scan", shard, "points", Path::new(shown), &summary)
}

/// A scan's error on the command line (Ctrl-C exits 130).
pub fn scan_error(e: ScanError, shown: &str) -> CliError {
    match e {
        ScanError::Interrupted { done, total, .. } => CliError::interrupted(
            ScanError::Interrupted {
                path: shown.to_string(),
                done,
                total,
            }
            .to_string(),
        ),
        ScanError::Checkpoint(e) => CliError::usage(super::args::checkpoint_message(&e, "--out")),
        other => CliError::usage(other.to_string()),
    }
}

pub fn run(args: &MergeArgs, progress: &ProgressArgs) -> Result<ExitCode, CliError> {
    let bad = |e: umbral::run::shard::MergeError| CliError::usage(e.to_string());
    let out = &args.out;
    for f in &args.files {
        if same_file(f, out) {
            return Err(CliError::usage(format!(
                "--out '{}' is one of the shard files: give another name",
                out.display()
            )));
        }
    }
    let kind = read_header(&args.files[0]).map_err(bad)?.kind;
    let runs = read_shards(&args.files, kind != "table").map_err(bad)?;
    if let Some(other) = runs.iter().find(|m| m.kind != kind) {
        return Err(CliError::usage(format!(
            "the files mix shards of a {kind} and of a {}",
            other.kind
        )));
    }
    match kind.as_str() {
        "scan" => {
            let text = merged_scan_file(&runs[0]).map_err(CliError::usage)?;
            let mut outputs = OutputTransaction::new();
            outputs.write(out, text.as_bytes())?;
            outputs.commit()?;
            outln!(
                "merged {} shards of a scan: {} points into '{}'",
                runs[0].shards,
                runs[0].outputs.len(),
                out.display()
            )?;
            Ok(ExitCode::SUCCESS)
        }
        "table" => {
            std::fs::create_dir_all(out).map_err(|e| {
                CliError::usage(format!(
                    "--out {}: cannot create the folder: {e}",
                    out.display()
                ))
            })?;
            let mut outputs = OutputTransaction::new();
            let mut written = Vec::new();
            for merged in &runs {
                let (name, text) = merged_table_file(merged).map_err(CliError::usage)?;
                outputs.write(&out.join(&name), text.as_bytes())?;
                written.push((name, merged.shards, merged.outputs.len()));
            }
            outputs.commit()?;
            for (name, shards, nodes) in written {
                outln!(
                    "merged {shards} shards of a table: {nodes} nodes into '{}'",
                    out.join(name).display()
                )?;
            }
            Ok(ExitCode::SUCCESS)
        }
        "image" | "calibrate" => rerun(&runs[0], out, progress),
        other => Err(CliError::usage(format!(
            "shards of a {other} cannot be merged by this umbral"
        ))),
    }
}

/// Whether `a` and `b` name the same file (or the same path, when `b` does not exist yet).
fn same_file(a: &Path, b: &Path) -> bool {
    match (a.canonicalize(), b.canonicalize()) {
        (Ok(x), Ok(y)) => x == y,
        _ => a == b,
    }
}

/// Run the command that made the shards again, from the arguments they record, with every
/// row recalled from them and `out` as its output.
fn rerun(merged: &Merged, out: &Path, progress: &ProgressArgs) -> Result<ExitCode, CliError> {
    let words: Vec<String> = match merged.run["arguments"].as_array() {
        Some(words) => words
            .iter()
            .map(|w| w.as_str().map(str::to_string))
            .collect::<Option<_>>()
            .unwrap_or_default(),
        None => Vec::new(),
    };
    let mut argv: Vec<OsString> = vec!["umbral".into()];
    argv.extend(words.iter().map(OsString::from));
    argv.push("--out".into());
    argv.push(out.as_os_str().to_os_string());
    let cli = super::Cli::try_parse_from(&argv).map_err(|e| {
        CliError::usage(format!(
            "the shards' arguments cannot be read again ({}); merge in the folder the shards \
             were computed in, with the same umbral",
            e.to_string().lines().next().unwrap_or_default()
        ))
    })?;
    match (cli.command, merged.kind.as_str()) {
        (super::Command::Image(a), "image") => {
            super::image::run_from(&a, progress, Rows::Merged(merged))
        }
        (super::Command::Calibrate(a), "calibrate") => {
            super::calibrate::run_from(&a, progress, Rows::Merged(merged))
                .map(|_| ExitCode::SUCCESS)
        }
        _ => Err(CliError::usage(format!(
            "the shards' arguments are not those of a {}",
            merged.kind
        ))),
    }
}

/// A shard of a command whose items are image rows: its job.
pub fn rows_job(
    kind: &str,
    shard: Shard,
    argv: &[OsString],
    metric: &MetricSource,
) -> Result<ShardJob, CliError> {
    Ok(ShardJob {
        kind: kind.to_string(),
        run: command_run(argv, metric)?,
        shard,
    })
}
