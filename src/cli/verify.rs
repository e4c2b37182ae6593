//! `umbral verify`: run checks files; exit 0 when every expectation passes, 1 when any fails,
//! 2 when a file is unusable.

use super::interrupt;
use super::progress::ProgressArgs;
use super::CliError;
use clap::Args;
use serde::Serialize;
use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use umbral::output::OutputTransaction;
use umbral::run::Controls;
use umbral::verify::{
    default_update_path, update_checks_file_with, ChecksFile, RowSelector, VerifyError,
    VerifyReport,
};

#[derive(Debug, Args)]
pub struct VerifyArgs {
    /// Checks files (TOML; see docs/regression-checks.md).
    #[arg(required = true, value_name = "FILE")]
    files: Vec<PathBuf>,
    /// Print JSON instead of a table.
    #[arg(long)]
    json: bool,
    /// Write the computed values into a copy of each file (FILE.updated.toml) as a new
    /// baseline, keeping comments and layout; the original is left alone. Only values whose
    /// source is umbral itself (source = "umbral" or "umbral: ...") are rewritten; drifted
    /// values with an outside source are reported and kept.
    #[arg(long)]
    update: bool,
    /// With --update and one FILE: where to write the updated copy.
    #[arg(long, value_name = "PATH", requires = "update")]
    output: Option<PathBuf>,
    /// With --update: also replace this row although its source is not umbral
    /// (CASE, CASE:QUANTITY or CASE:QUANTITY@CONFIDENCE; repeatable). Its source then says
    /// that umbral replaced it.
    #[arg(long = "force-row", value_name = "NAME", requires = "update")]
    force_row: Vec<String>,
}

#[derive(Serialize)]
struct JsonReport<'a> {
    files: Vec<String>,
    all_passed: bool,
    passed: usize,
    failed: usize,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    updated_files: Vec<String>,
    rows: &'a [umbral::verify::CheckRow],
}

fn usage(e: VerifyError) -> CliError {
    CliError::usage(e.to_string())
}

/// Run the subcommand.
pub fn run(args: &VerifyArgs, progress: &ProgressArgs) -> Result<ExitCode, CliError> {
    if args.output.is_some() && args.files.len() != 1 {
        return Err(CliError::usage("--output needs exactly one FILE"));
    }
    // Every file is validated before anything runs, so a bad file is exit 2 with no table.
    let checks: Vec<ChecksFile> = args
        .files
        .iter()
        .map(ChecksFile::load)
        .collect::<Result<_, _>>()
        .map_err(usage)?;
    let force = args
        .force_row
        .iter()
        .map(|t| RowSelector::parse(t).map_err(CliError::usage))
        .collect::<Result<Vec<_>, _>>()?;
    if let Some(s) = force
        .iter()
        .find(|s| !checks.iter().any(|c| s.names_a_row_of(c)))
    {
        return Err(CliError::usage(format!(
            "--force-row {}: no such row in the checks files given",
            s.text
        )));
    }
    // Updated copies appear only when the whole command succeeds.
    let mut outputs = OutputTransaction::new();
    let mut display = progress.display(None)?;
    let (report, updated_files, notes) = {
        let _graceful = interrupt::Graceful::enter("cases");
        let mut controls = Controls {
            observers: vec![display.as_mut()],
            stop: Some(interrupt::stop_flag()),
        };
        if args.update {
            update_all(args, &force, &mut outputs, &mut controls)?
        } else {
            (run_all(&checks, &mut controls)?, Vec::new(), Vec::new())
        }
    };
    drop(display);
    if args.json {
        let json = JsonReport {
            files: args.files.iter().map(|p| p.display().to_string()).collect(),
            all_passed: report.all_passed(),
            passed: report.passed(),
            failed: report.failed(),
            updated_files,
            rows: &report.rows,
        };
        let text = serde_json::to_string_pretty(&json)
            .map_err(|e| CliError::usage(format!("cannot write JSON: {e}")))?;
        outln!("{text}")?;
        for n in &notes {
            // Notes beside JSON go to standard error; nothing is left to report to if it fails.
            let _ = writeln!(std::io::stderr(), "{n}");
        }
    } else {
        super::out::write_text(&report.render_table())?;
        for n in &notes {
            outln!("{n}")?;
        }
    }
    outputs.commit()?;
    Ok(if report.all_passed() {
        ExitCode::SUCCESS
    } else {
        ExitCode::from(1)
    })
}

/// Run every file. On a stop request the finished cases' rows are printed before the note
/// that the run was interrupted.
fn run_all(checks: &[ChecksFile], controls: &mut Controls<'_>) -> Result<VerifyReport, CliError> {
    let mut report = VerifyReport::default();
    for c in checks {
        match c.run_with(controls.reborrow()) {
            Ok(r) => report.extend(r),
            Err(stopped) => {
                report.extend(stopped.report);
                super::out::write_text(&report.render_table())?;
                return Err(CliError::interrupted(format!(
                    "interrupted in {} after {} of its {} cases (the table shows every \
                     finished case); nothing is kept: a rerun starts over",
                    c.path.display(),
                    stopped.cases_done,
                    stopped.cases
                )));
            }
        }
    }
    Ok(report)
}

/// `--update`: run every file, writing each updated copy to a temporary staged in `outputs`;
/// the rows, the files written and notes for the user.
fn update_all(
    args: &VerifyArgs,
    force: &[RowSelector],
    outputs: &mut OutputTransaction,
    controls: &mut Controls<'_>,
) -> Result<(VerifyReport, Vec<String>, Vec<String>), CliError> {
    let mut report = VerifyReport::default();
    let mut updated_files = Vec::new();
    let mut notes = Vec::new();
    let destinations: Vec<PathBuf> = args
        .files
        .iter()
        .map(|path| {
            args.output
                .clone()
                .unwrap_or_else(|| default_update_path(path))
        })
        .collect();
    let staged = destinations
        .iter()
        .map(|dest| outputs.stage(dest))
        .collect::<Result<Vec<_>, _>>()?;
    for ((path, dest), temp) in args.files.iter().zip(&destinations).zip(&staged) {
        let outcome = update_checks_file_with(path, Some(temp), force, controls.reborrow())
            .map_err(|e| match e {
                VerifyError::Interrupted { .. } => {
                    CliError::interrupted(format!("{e}; no file was updated"))
                }
                e => usage(e),
            })?;
        notes.push(format!(
            "wrote {} ({} values updated{})",
            dest.display(),
            outcome.updated,
            if outcome.kept.is_empty() {
                String::new()
            } else {
                format!("; kept as written: {}", outcome.kept.join("; "))
            }
        ));
        for d in &outcome.outside_drifted {
            notes.push(format!(
                "drifted, left as written (outside source; replace with --force-row): {d}"
            ));
        }
        for f in &outcome.forced {
            notes.push(format!(
                "replaced although its source was not umbral (--force-row): {f}"
            ));
        }
        if same_file(path, dest) {
            notes.push(format!(
                "note: {} was overwritten (--output)",
                path.display()
            ));
        }
        updated_files.push(dest.display().to_string());
        report.extend(outcome.report);
    }
    Ok((report, updated_files, notes))
}

fn same_file(a: &Path, b: &Path) -> bool {
    match (a.canonicalize(), b.canonicalize()) {
        (Ok(x), Ok(y)) => x == y,
        _ => false,
    }
}
