//! `umbral demo`: the whole job on the built-in invented scenario.

use super::CliError;
use clap::Args;

#[derive(Debug, Args)]
pub struct DemoArgs {
    /// Output folder.
    #[arg(long, default_value = "umbral-demo")]
    out: String,
}

pub fn run(_args: &DemoArgs) -> Result<(), CliError> {
    Ok(())
}
