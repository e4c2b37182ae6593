//! `umbral metrics`: the built-in metrics and their parameters.

use super::CliError;
use clap::Args;
use serde::Serialize;
use std::path::{Path, PathBuf};
use umbral::metric_file::list_metric_dir;
use umbral::shadow::catalogue::{builtin_catalogue, CatalogueEntry as MetricRow};

#[derive(Debug, Args)]
pub struct MetricsArgs {
    /// Print JSON instead of a table.
    #[arg(long)]
    json: bool,
    /// Also list the metric files in this folder (repeatable). Default: ./metrics when it
    /// exists (the project's own folder when run from the repository).
    #[arg(long = "metrics-dir", value_name = "DIR")]
    metrics_dir: Vec<PathBuf>,
}

/// A metric file that could not be read: listed with its error, not fatal for the listing.
#[derive(Serialize)]
struct BrokenFile {
    source: String,
    error: String,
}

fn file_rows(dirs: &[PathBuf]) -> Result<(Vec<MetricRow>, Vec<BrokenFile>), CliError> {
    let mut good = Vec::new();
    let mut bad = Vec::new();
    for dir in dirs {
        if !dir.is_dir() {
            return Err(CliError::usage(format!(
                "--metrics-dir '{}' is not a readable folder",
                dir.display()
            )));
        }
        for (path, spec) in list_metric_dir(dir) {
            let source = path.display().to_string();
            match spec {
                Ok(spec) => good.push(MetricRow::describe(source, &spec.instantiate_defaults())),
                Err(e) => bad.push(BrokenFile {
                    source,
                    error: e.summary(),
                }),
            }
        }
    }
    Ok((good, bad))
}

pub fn run(args: &MetricsArgs) -> Result<(), CliError> {
    let mut rows = builtin_catalogue()?;
    let dirs = if args.metrics_dir.is_empty() && Path::new("metrics").is_dir() {
        vec![PathBuf::from("metrics")]
    } else {
        args.metrics_dir.clone()
    };
    let (files, broken) = file_rows(&dirs)?;
    rows.extend(files);
    if args.json {
        #[derive(Serialize)]
        struct Listing<'a> {
            metrics: &'a [MetricRow],
            unreadable_files: &'a [BrokenFile],
        }
        let listing = Listing {
            metrics: &rows,
            unreadable_files: &broken,
        };
        outln!(
            "{}",
            serde_json::to_string_pretty(&listing).expect("serialisable")
        )?;
        return Ok(());
    }
    for m in &rows {
        if m.source == "builtin" {
            outln!("{} ({})", m.name, m.title)?;
        } else {
            outln!("{} ({}) from file {}", m.name, m.title, m.source)?;
        }
        outln!(
            "  symmetry: {}; separable: {}; auto solver: {}",
            m.symmetry,
            if m.separable { "yes" } else { "no" },
            m.auto_solver
        )?;
        outln!("  reference: {}", m.reference)?;
        if m.parameters.is_empty() {
            outln!("  parameters: none")?;
        }
        for p in &m.parameters {
            outln!(
                "  --set {}=VALUE  default {}, domain {}: {}",
                p.name,
                p.default,
                p.domain,
                p.meaning
            )?;
        }
    }
    for b in &broken {
        outln!("unreadable metric file {}: {}", b.source, b.error)?;
    }
    Ok(())
}
