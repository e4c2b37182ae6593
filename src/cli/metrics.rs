//! `umbral metrics`: the built-in metrics and their parameters.

use super::CliError;
use clap::Args;
use serde::Serialize;
use umbral::metric::{ParameterSpec, Symmetry};
use umbral::metrics::builtin_metrics;
use umbral::shadow::auto_solver;

#[derive(Debug, Args)]
pub struct MetricsArgs {
    /// Print JSON instead of a table.
    #[arg(long)]
    json: bool,
}

#[derive(Serialize)]
struct ParameterRow {
    name: String,
    default: f64,
    domain: String,
    meaning: String,
}

#[derive(Serialize)]
struct MetricRow {
    name: String,
    title: String,
    symmetry: Symmetry,
    separable: bool,
    auto_solver: &'static str,
    reference: String,
    parameters: Vec<ParameterRow>,
}

fn row(p: &ParameterSpec) -> ParameterRow {
    ParameterRow {
        name: p.name.clone(),
        default: p.default,
        domain: p.domain.to_string(),
        meaning: p.meaning.clone(),
    }
}

/// Every built-in metric, described by its default instance.
fn rows() -> Result<Vec<MetricRow>, CliError> {
    builtin_metrics()
        .iter()
        .map(|entry| {
            let info = (entry.describe)();
            let metric = entry.build(&[])?;
            Ok(MetricRow {
                name: info.name.clone(),
                title: info.title.clone(),
                symmetry: metric.symmetry(),
                separable: metric.is_separable(),
                auto_solver: auto_solver(metric.as_ref()).name(),
                reference: info.reference.clone(),
                parameters: info.parameters.iter().map(row).collect(),
            })
        })
        .collect()
}

pub fn run(args: &MetricsArgs) -> Result<(), CliError> {
    let rows = rows()?;
    if args.json {
        println!(
            "{}",
            serde_json::to_string_pretty(&rows).expect("serialisable")
        );
        return Ok(());
    }
    for m in &rows {
        println!("{} ({})", m.name, m.title);
        println!(
            "  symmetry: {}; separable: {}; auto solver: {}",
            m.symmetry,
            if m.separable { "yes" } else { "no" },
            m.auto_solver
        );
        println!("  reference: {}", m.reference);
        if m.parameters.is_empty() {
            println!("  parameters: none");
        }
        for p in &m.parameters {
            println!(
                "  --set {}=VALUE  default {}, domain {}: {}",
                p.name, p.default, p.domain, p.meaning
            );
        }
    }
    Ok(())
}
