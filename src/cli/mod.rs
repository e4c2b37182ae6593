//! Command-line front end: argument parsing (clap) and the subcommands.

#[macro_use]
mod out;
mod args;
mod bound;
mod calibrate;
#[cfg(feature = "mpi")]
mod cluster;
mod demo;
mod figure;
mod geometry;
mod image;
mod infer;
mod interrupt;
mod merge;
mod metrics;
mod plot;
mod plot_bounds;
mod plot_posterior;
mod plot_scan;
mod progress;
mod scan;
mod shadow;
mod tables;
mod verify;

use clap::{Parser, Subcommand};
use std::ffi::OsString;
use std::process::ExitCode;

pub use args::{CliError, INTERRUPTED};

/// Black-hole shadows for tests of general relativity.
#[derive(Debug, Parser)]
#[command(name = "umbral", version, about, long_about = None)]
struct Cli {
    #[command(subcommand)]
    command: Command,
    #[command(flatten)]
    progress: progress::ProgressArgs,
}

#[derive(Debug, Subcommand)]
enum Command {
    /// List the built-in metrics with their parameters, symmetry and reference.
    Metrics(metrics::MetricsArgs),
    /// Metric, inverse metric, Christoffel symbols and horizon at a point.
    Geometry(geometry::GeometryArgs),
    /// The critical curve ("shadow") and its observables.
    Shadow(shadow::ShadowArgs),
    /// Run the whole chain on the built-in invented scenario.
    Demo(demo::DemoArgs),
    /// Allowed ranges of a metric parameter from a measured shadow size or ring.
    Bound(bound::BoundArgs),
    /// Posteriors on a metric's parameters from one or several measurements.
    Infer(infer::InferArgs),
    /// Observables on a parameter grid, streamed to JSON lines (resumable).
    Scan(scan::ScanArgs),
    /// An image of an emission model around a metric, and its ring.
    Image(image::ImageArgs),
    /// The ring-to-shadow factor kappa over a list of emission models.
    Calibrate(calibrate::CalibrateArgs),
    /// Join the shard files of a job array (--shard K/N) into what one process writes.
    Merge(merge::MergeArgs),
    /// Recompute pinned numbers from checks files; exit 1 if any drifted.
    Verify(verify::VerifyArgs),
}

/// Parse the arguments and run a subcommand.
pub fn run(args: impl IntoIterator<Item = OsString>) -> Result<ExitCode, CliError> {
    interrupt::install();
    let argv: Vec<OsString> = args.into_iter().collect();
    #[cfg(feature = "mpi")]
    if let Some(job) = umbral::run::mpi::join() {
        return cluster::run(job, &argv);
    }
    let code = dispatch(&argv)?;
    out::flush()?;
    Ok(code)
}

fn dispatch(argv: &[OsString]) -> Result<ExitCode, CliError> {
    let cli = match Cli::try_parse_from(argv) {
        Ok(cli) => cli,
        Err(e) => {
            use clap::error::ErrorKind;
            if matches!(e.kind(), ErrorKind::DisplayHelp | ErrorKind::DisplayVersion) {
                out::write_text(&e.to_string())?;
                return Ok(ExitCode::SUCCESS);
            }
            if e.kind() == ErrorKind::DisplayHelpOnMissingArgumentOrSubcommand {
                return Err(CliError::usage("a subcommand is required (try --help)"));
            }
            // clap's first paragraph carries the message; the rest is usage boilerplate.
            let text = e.to_string();
            let message: Vec<&str> = text
                .lines()
                .take_while(|l| !l.trim().is_empty())
                .map(str::trim)
                .collect();
            let message = message.join(" ");
            return Err(CliError::usage(message.trim_start_matches("error: ")));
        }
    };
    match cli.command {
        Command::Metrics(a) => metrics::run(&a),
        Command::Geometry(a) => geometry::run(&a),
        Command::Shadow(a) => shadow::run(&a),
        Command::Demo(a) => demo::run(&a, &cli.progress),
        Command::Bound(a) => bound::run(&a, &cli.progress),
        Command::Scan(a) => scan::run(&a, &cli.progress),
        Command::Verify(a) => return verify::run(&a, &cli.progress),
        Command::Infer(a) => return infer::run(&a, &cli.progress),
        Command::Image(a) => return image::run(&a, &cli.progress, argv),
        Command::Calibrate(a) => calibrate::run(&a, &cli.progress, argv),
        Command::Merge(a) => return merge::run(&a, &cli.progress),
    }?;
    Ok(ExitCode::SUCCESS)
}
