//! Progress of long runs on standard error: a bar (indicatif) on a terminal, plain lines at
//! most every few seconds elsewhere (logs, notebooks), nothing with `--quiet`.

use super::args::parse_finite;
use super::interrupt;
use super::CliError;
use clap::Args;
use std::io::IsTerminal;
use std::time::Duration;
use umbral::run::{LineProgress, Observe, Outcome, Status};

/// How long runs show their progress (global options).
#[derive(Debug, Clone, Args)]
pub struct ProgressArgs {
    /// Show no progress on standard error.
    #[arg(long, global = true)]
    quiet: bool,
    /// Off a terminal, print a progress line at most every SECONDS (a run shorter than that
    /// prints none).
    #[arg(
        long = "progress-every",
        global = true,
        value_name = "SECONDS",
        default_value = "5"
    )]
    progress_every: String,
}

impl Default for ProgressArgs {
    fn default() -> Self {
        ProgressArgs {
            quiet: false,
            progress_every: "5".into(),
        }
    }
}

impl ProgressArgs {
    /// The progress display of a run; `prefix` names the program that runs it (`demo`).
    pub fn display(&self, prefix: Option<&str>) -> Result<Box<dyn Observe>, CliError> {
        let seconds = parse_finite(&self.progress_every, "--progress-every")?;
        if !(0.0..=1e6).contains(&seconds) {
            return Err(CliError::usage(format!(
                "--progress-every: give a number of seconds from 0 to 1000000, got '{}'",
                self.progress_every
            )));
        }
        if self.quiet {
            return Ok(Box::new(Silent));
        }
        if std::io::stderr().is_terminal() {
            return Ok(Box::new(TerminalProgress {
                prefix: prefix.map(|p| format!("{p}: ")),
                bar: None,
            }));
        }
        let lines = LineProgress::stderr(Duration::from_secs_f64(seconds));
        Ok(Box::new(match prefix {
            Some(p) => lines.with_prefix(p),
            None => lines,
        }))
    }
}

/// No progress display.
struct Silent;

impl Observe for Silent {}

/// A progress bar (a spinner while the total is unknown), cleared when the run ends or when
/// Ctrl-C ends the process.
struct TerminalProgress {
    prefix: Option<String>,
    bar: Option<interrupt::Bar>,
}

impl TerminalProgress {
    fn message(status: &Status) -> String {
        match (&status.stage, status.total) {
            (Some(stage), None) => format!("{} ({stage})", status.unit),
            _ => status.unit.clone(),
        }
    }
}

impl Observe for TerminalProgress {
    fn started(&mut self, status: &Status) {
        // Drawn only once its style, name, message and position are set (setting any of them
        // on a visible bar draws a frame).
        let hidden = indicatif::ProgressDrawTarget::hidden();
        let (bar, template) = match status.total {
            Some(total) => (
                indicatif::ProgressBar::with_draw_target(Some(total as u64), hidden),
                "{prefix}{bar:40} {pos}/{len} {msg}, {per_sec}, {eta} left",
            ),
            None => (
                indicatif::ProgressBar::with_draw_target(None, hidden),
                "{prefix}{spinner} {pos} {msg}, {elapsed} elapsed",
            ),
        };
        if let Ok(style) = indicatif::ProgressStyle::with_template(template) {
            bar.set_style(style);
        }
        let name = match &self.prefix {
            Some(p) => format!("{p}{}: ", status.name),
            None if status.total.is_none() => format!("{}: ", status.name),
            None => String::new(),
        };
        bar.set_prefix(name);
        bar.set_message(Self::message(status));
        bar.set_position(status.done as u64);
        bar.set_draw_target(indicatif::ProgressDrawTarget::stderr());
        if status.total.is_none() {
            bar.enable_steady_tick(Duration::from_millis(120));
        }
        self.bar = Some(interrupt::Bar::new(bar));
    }

    fn item_done(&mut self, status: &Status) {
        if let Some(bar) = &self.bar {
            bar.0.set_message(Self::message(status));
            bar.0.set_position(status.done as u64);
        }
    }

    fn finished(&mut self, _status: &Status, _outcome: Outcome) {
        self.bar = None; // cleared from the screen before anything else is printed
    }
}
