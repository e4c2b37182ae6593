//! Typed errors of the metric layer.

use crate::numfmt::Num;
use thiserror::Error;

/// What can go wrong when a metric is chosen, built or evaluated.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum MetricError {
    /// No built-in metric has this name.
    #[error("unknown metric '{name}' (known: {known})")]
    UnknownMetric { name: String, known: String },
    /// The metric has no parameter of this name.
    #[error("metric '{metric}' has no parameter '{name}' (its parameters: {known})")]
    UnknownParameter {
        metric: String,
        name: String,
        known: String,
    },
    /// The same parameter was given twice.
    #[error("parameter '{name}' of metric '{metric}' is given more than once")]
    RepeatedParameter { metric: String, name: String },
    /// A value is NaN or infinite.
    #[error("parameter '{name}' must be a finite number, got {}", Num(*.value))]
    NonFinite { name: String, value: f64 },
    /// A value lies outside the parameter's declared domain.
    #[error("parameter '{name}' = {} is outside its domain {domain}", Num(*.value))]
    OutOfDomain {
        name: String,
        value: f64,
        domain: String,
    },
    /// A text could not be read as a number or an assignment.
    #[error("cannot read '{text}' as {expected}")]
    BadNumber { text: String, expected: String },
    /// The metric is singular or not finite at the requested point.
    #[error("the metric is singular or not finite at r = {}, theta = {}", Num(*.r), Num(*.theta))]
    SingularPoint { r: f64, theta: f64 },
    /// A point outside the coordinate range.
    #[error("{what}")]
    BadPoint { what: String },
    /// A metric was given the wrong number of parameter values.
    #[error("metric '{metric}' takes {expected} parameter values ({names}), got {got}")]
    ParameterCount {
        metric: String,
        expected: usize,
        names: String,
        got: usize,
    },
    /// A computation needs a structure (spherical symmetry, separation data) that the metric
    /// does not declare in its [`Capabilities`](crate::metric::Capabilities).
    #[error("metric '{metric}' does not declare {structure}")]
    NotDeclared {
        metric: String,
        structure: &'static str,
    },
    /// The metric declares a structure but the hook that provides it returns nothing: an
    /// inconsistent metric, never a silent fallback to another solver.
    #[error("metric '{metric}' declares {structure} but its {hook} returns nothing")]
    MissingHook {
        metric: String,
        structure: &'static str,
        hook: &'static str,
    },
    /// A metric file's closed-form horizon is not a zero of g^rr at these parameters.
    #[error(
        "metric file '{metric}': its horizon expression gives r = {radius}, where g^rr = \
         {g_rr_inverse:e} instead of 0"
    )]
    HorizonNotAZero {
        metric: String,
        radius: f64,
        g_rr_inverse: f64,
    },
    /// A metric file's separation data do not belong to its line element at these parameters.
    #[error("metric file '{metric}'{at}: {problem}")]
    SeparationMismatch {
        metric: String,
        /// ` at a = 0.5, …`, or empty at the defaults.
        at: String,
        problem: String,
    },
}
