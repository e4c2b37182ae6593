//! `umbral verify`: run checks files; exit 0 when every expectation passes, 1 when any fails,
//! 2 when a file is unusable.

use super::CliError;
use clap::Args;
use serde::Serialize;
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use umbral::verify::{
    update_checks_file_forcing, ChecksFile, RowSelector, VerifyError, VerifyReport,
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
pub fn run(args: &VerifyArgs) -> Result<ExitCode, CliError> {
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
    let mut report = VerifyReport::default();
    let mut updated_files = Vec::new();
    let mut notes = Vec::new();
    if args.update {
        for path in &args.files {
            let outcome =
                update_checks_file_forcing(path, args.output.as_deref(), &force).map_err(usage)?;
            notes.push(format!(
                "wrote {} ({} values updated{})",
                outcome.output.display(),
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
            if same_file(path, &outcome.output) {
                notes.push(format!(
                    "note: {} was overwritten (--output)",
                    path.display()
                ));
            }
            updated_files.push(outcome.output.display().to_string());
            report.extend(outcome.report);
        }
    } else {
        for c in &checks {
            report.extend(c.run());
        }
    }
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
        println!("{text}");
        for n in &notes {
            eprintln!("{n}");
        }
    } else {
        print!("{}", report.render_table());
        for n in &notes {
            println!("{n}");
        }
    }
    Ok(if report.all_passed() {
        ExitCode::SUCCESS
    } else {
        ExitCode::from(1)
    })
}

fn same_file(a: &Path, b: &Path) -> bool {
    match (a.canonicalize(), b.canonicalize()) {
        (Ok(x), Ok(y)) => x == y,
        _ => false,
    }
}
