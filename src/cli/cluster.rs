//! `mpirun -np N umbral COMMAND ...` (the `mpi` feature): rank 0 runs the command as one
//! process would, with the executor handing the items of scans, tables, images and
//! calibrations out to the other ranks ([`umbral::run::cluster`]); every other rank reads the
//! same arguments, builds the same work lists and serves chunks of them until rank 0 ends
//! the program. Workers print nothing and write no file.

use super::{Cli, CliError, Command};
use clap::Parser;
use std::ffi::OsString;
use std::process::ExitCode;
use umbral::run::cluster::WorkerLink;
use umbral::run::mpi::Job;

/// Run the command line `argv` as rank `job.rank()` of `job`.
pub fn run(job: Job, argv: &[OsString]) -> Result<ExitCode, CliError> {
    if job.size() < 2 {
        let code = super::dispatch(argv)?;
        super::out::flush()?;
        return Ok(code);
    }
    if job.rank() == 0 {
        umbral::run::cluster::install(job.master());
        let result = super::dispatch(argv).and_then(|code| {
            super::out::flush()?;
            Ok(code)
        });
        // Every worker is idle between batches: told to stop, each returns.
        umbral::run::cluster::shutdown();
        return result;
    }
    let mut link = job.link();
    if serve(argv, &mut link).is_err() {
        // Nothing to serve (rank 0 reports the arguments' error, or runs the lists itself):
        // answer every chunk as unknown until the end.
        umbral::run::cluster::serve(&mut link, &[]);
    }
    Ok(ExitCode::SUCCESS)
}

/// Serve the work lists of the command `argv` runs.
fn serve(argv: &[OsString], link: &mut dyn WorkerLink) -> Result<usize, CliError> {
    let cli = Cli::try_parse_from(argv).map_err(|e| CliError::usage(e.to_string()))?;
    match cli.command {
        Command::Scan(a) => super::scan::serve(&a, link),
        Command::Image(a) => super::image::serve(&a, link),
        Command::Calibrate(a) => super::calibrate::serve(&a, link),
        Command::Infer(a) => super::infer::serve(&a, link),
        _ => Err(CliError::usage("this command runs on rank 0 alone")),
    }
}
