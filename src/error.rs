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
}
