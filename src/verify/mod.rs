//! Regression checks for published numbers: a TOML checks file pins shadow sizes, photon-orbit
//! radii, ring exponents and other quantities of given metrics, each with a tolerance (or a
//! `min`/`max` range) and a source, and [`run_checks_file`] recomputes them.
//!
//! The same file runs from the command line (`umbral verify FILE...`) and inside a user's
//! `cargo test` through [`assert_checks_pass`]. The format is documented in
//! `docs/regression-checks.md`.
//!
//! ```
//! let dir = std::env::temp_dir().join(format!("umbral-verify-doc-{}", std::process::id()));
//! std::fs::create_dir_all(&dir).unwrap();
//! let path = dir.join("schwarzschild.toml");
//! std::fs::write(&path, r#"
//! [[case]]
//! name = "schwarzschild"
//! metric = "schwarzschild"
//! inclination = 60.0
//! points = 16
//!
//! [[case.expect]]
//! quantity = "mean_radius"
//! value = 5.196152422706632  # 3√3
//! rel = 1e-12
//! source = "Synge 1966, MNRAS 131, 463"
//! "#).unwrap();
//! let report = umbral::verify::run_checks_file(&path).unwrap();
//! assert!(report.all_passed());
//! println!("{}", report.render_table());
//! umbral::verify::assert_checks_pass(&path);
//! ```

mod bound_case;
mod quantity;
mod report;
mod schema;
mod update;

pub use bound_case::{BoundCase, BOUND_QUANTITIES};
pub use quantity::{CheckQuantity, SolverQuantity, QUANTITIES};
pub use report::{CheckRow, VerifyReport};
pub use schema::{Case, ChecksFile, Expectation, Expected, Tolerance};
pub use update::{
    default_update_path, is_umbral_source, update_checks_file, update_checks_file_forcing,
    update_checks_file_with, RowSelector, UpdateOutcome,
};

use crate::run::{Checkpoint, CheckpointError, Controls, Executor, Selection, WorkList};
use crate::shadow::{solve, solve_curve};
use quantity::Solved;
use std::collections::HashMap;
use std::path::{Path, PathBuf};

/// A checks file that cannot be used (as opposed to a failing check, which is a report row).
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum VerifyError {
    /// Unreadable, not TOML, or not a valid checks file.
    #[error("{}: {message}", path.display())]
    Invalid {
        /// The checks file.
        path: PathBuf,
        /// What is wrong with it.
        message: String,
    },
    /// A stop request ended the run before every case finished (nothing was written).
    #[error("{}: interrupted after {cases_done} of {cases} cases", path.display())]
    Interrupted {
        /// The checks file.
        path: PathBuf,
        /// Cases finished.
        cases_done: usize,
        /// Cases in the file.
        cases: usize,
    },
    /// An output file could not be written.
    #[error("{}: cannot write: {message}", path.display())]
    Write {
        /// The file.
        path: PathBuf,
        /// Why not.
        message: String,
    },
}

impl Case {
    /// Whether an expectation pins a photon-ring exponent ([`CheckQuantity::needs_exponents`]):
    /// only then does the case need the full solve.
    pub fn needs_exponents(&self) -> bool {
        self.expectations
            .iter()
            .any(|e| e.quantity.needs_exponents())
    }

    /// Solve this case and judge each of its expectations. Never fails: a solver error or a
    /// missing shadow becomes failing rows carrying the reason. A case that pins no
    /// photon-ring exponent is solved for the curve only ([`solve_curve`]: the same curve,
    /// photon-orbit radii and metric quantities, without the exponents' cost); the others in
    /// full.
    pub fn run(&self, file: &str, case_index: usize) -> Vec<CheckRow> {
        let solver = if self.needs_exponents() {
            solve
        } else {
            solve_curve
        };
        let result =
            solver(self.metric.as_ref(), &self.observer, &self.settings).map_err(|e| e.to_string());
        let solved = Solved::new(self.metric.as_ref(), result, self.centre);
        self.expectations
            .iter()
            .enumerate()
            .map(|(j, e)| {
                CheckRow::judge(
                    file.to_string(),
                    (case_index, &self.name),
                    j,
                    e.quantity.name(),
                    e.expected,
                    &e.source,
                    solved.quantity(e.quantity),
                )
            })
            .collect()
    }
}

impl ChecksFile {
    /// Run every case, one row per expectation.
    pub fn run(&self) -> VerifyReport {
        // Without a stop flag nothing ends the run early.
        self.run_with(Controls::default())
            .unwrap_or_else(|stopped| stopped.report)
    }

    /// [`ChecksFile::run`] on the run executor, with `controls`' observers and stop flag: the
    /// `[[case]]` cases as one parallel run (one work item per case), then each `[[bound]]` as
    /// a run of nuisance evaluations. A stop request ends it with the rows of every case that
    /// finished.
    pub fn run_with(&self, mut controls: Controls<'_>) -> Result<VerifyReport, VerifyInterrupted> {
        let file = self.path.display().to_string();
        let total = self.cases.len() + self.bounds.len();
        let list = CaseList {
            cases: &self.cases,
            file: &file,
        };
        let mut finished = FinishedCases::default();
        let name = format!("checks in {file}");
        let run = Executor::new(&name, "cases")
            .with(controls.reborrow())
            .checkpoint(&mut finished)
            .run(&list, &Selection::All);
        let mut rows: Vec<CheckRow> = match run {
            Ok(batch) => batch.outputs.into_iter().flatten().collect(),
            Err(_) => {
                // Interrupted (the memory checkpoint cannot fail): the cases that finished.
                let done: Vec<Vec<CheckRow>> = (0..list.len())
                    .filter_map(|i| finished.0.remove(&list.key(i)))
                    .collect();
                return Err(VerifyInterrupted {
                    cases_done: done.len(),
                    cases: total,
                    report: VerifyReport {
                        rows: done.into_iter().flatten().collect(),
                    },
                });
            }
        };
        for (i, b) in self.bounds.iter().enumerate() {
            match b.run_with(&file, i, controls.reborrow()) {
                Some(r) => rows.extend(r),
                None => {
                    return Err(VerifyInterrupted {
                        cases_done: self.cases.len() + i,
                        cases: total,
                        report: VerifyReport { rows },
                    })
                }
            }
        }
        Ok(VerifyReport { rows })
    }
}

/// A checks file's run that a stop request ended: the rows of the cases that finished.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("interrupted after {cases_done} of {cases} cases")]
pub struct VerifyInterrupted {
    /// Rows of the finished cases (`[[case]]` in file order, then finished `[[bound]]`s).
    pub report: VerifyReport,
    /// Cases finished.
    pub cases_done: usize,
    /// Cases in the file.
    pub cases: usize,
}

/// A checks file's `[[case]]` cases as work items (key: the case's name, unique in its file).
struct CaseList<'a> {
    cases: &'a [Case],
    file: &'a str,
}

impl WorkList for CaseList<'_> {
    type Output = Vec<CheckRow>;

    fn len(&self) -> usize {
        self.cases.len()
    }

    fn key(&self, index: usize) -> String {
        self.cases[index].name.clone()
    }

    fn run(&self, index: usize) -> Vec<CheckRow> {
        self.cases[index].run(self.file, index)
    }
}

/// The rows of cases finished in this run, so that an interrupted run still reports them.
#[derive(Default)]
struct FinishedCases(HashMap<String, Vec<CheckRow>>);

impl Checkpoint<Vec<CheckRow>> for FinishedCases {
    fn recall(&self, _key: &str) -> Option<Vec<CheckRow>> {
        // Nothing is kept between runs: a checks file is always computed afresh.
        None
    }

    fn record(&mut self, key: &str, rows: &Vec<CheckRow>) -> Result<(), CheckpointError> {
        self.0.insert(key.to_string(), rows.clone());
        Ok(())
    }

    fn complete(&mut self) -> Result<(), CheckpointError> {
        Ok(())
    }
}

/// Load a checks file and run it. `Err` only when the file itself is unusable; failing
/// expectations are rows of the report.
pub fn run_checks_file(path: impl AsRef<Path>) -> Result<VerifyReport, VerifyError> {
    Ok(ChecksFile::load(path)?.run())
}

/// For tests: run a checks file and panic, printing the whole table, if the file is unusable
/// or any expectation fails.
///
/// ```no_run
/// #[test]
/// fn published_numbers() {
///     umbral::verify::assert_checks_pass("checks/my-paper.toml");
/// }
/// ```
#[track_caller]
pub fn assert_checks_pass(path: impl AsRef<Path>) {
    let path = path.as_ref();
    let report = match run_checks_file(path) {
        Ok(r) => r,
        Err(e) => panic!("checks file unusable: {e}"),
    };
    if !report.all_passed() {
        panic!(
            "{} of {} expectations in {} failed:\n{}",
            report.failed(),
            report.rows.len(),
            path.display(),
            report.render_table()
        );
    }
}
