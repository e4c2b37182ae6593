//! Failures as the Python package raises them: the classes live in `umbral.errors`
//! (`InputError(UmbralError, ValueError)` for bad input, the command line's exit code 2;
//! `ComputationError(UmbralError, RuntimeError)` for a computation that failed or did not
//! converge, exit code 3), the messages are the command line's one-line messages.

use pyo3::prelude::*;
use pyo3::types::PyType;

/// A failure of a call, raised in Python by [`Fail::into_py_err`].
#[derive(Debug)]
pub enum Fail {
    /// Bad input (`InputError`).
    Input(String),
    /// A computation that failed (`ComputationError`).
    Computation(String),
    /// A posterior that did not converge (`NotConvergedError`, with the report as JSON).
    NotConverged {
        /// Why, in words.
        message: String,
        /// The report (`umbral infer --json`), without summaries.
        report: String,
    },
    /// Stopped by Ctrl-C: the `KeyboardInterrupt` to raise again.
    Interrupted(PyErr),
}

/// Bad input, with the library's message.
pub fn input(e: impl std::fmt::Display) -> Fail {
    Fail::Input(e.to_string())
}

impl Fail {
    /// The Python exception.
    pub fn into_py_err(self, py: Python<'_>) -> PyErr {
        let (class, message, report) = match self {
            Fail::Interrupted(e) => return e,
            Fail::Input(m) => ("InputError", m, None),
            Fail::Computation(m) => ("ComputationError", m, None),
            Fail::NotConverged { message, report } => ("NotConvergedError", message, Some(report)),
        };
        let class = py
            .import("umbral.errors")
            .and_then(|m| m.getattr(class))
            .and_then(|c| Ok(c.cast_into::<PyType>()?));
        let class = match class {
            Ok(c) => c,
            Err(e) => return e,
        };
        match report {
            None => PyErr::from_type(class, (message,)),
            Some(report) => PyErr::from_type(class, (message, report)),
        }
    }
}

/// A result whose failure becomes a Python exception.
pub trait OrRaise<T> {
    /// `Ok`, or the exception.
    fn or_raise(self, py: Python<'_>) -> PyResult<T>;
}

impl<T> OrRaise<T> for Result<T, Fail> {
    fn or_raise(self, py: Python<'_>) -> PyResult<T> {
        self.map_err(|e| e.into_py_err(py))
    }
}
