//! Typed errors of the metric layer.

use crate::numfmt::Num;
use thiserror::Error;

/// What can go wrong when a metric is chosen, built or evaluated.
///
/// ```
/// use umbral::prelude::*;
///
/// let err = build_metric("kerr", &[("spin".to_string(), 0.5)]).err().unwrap();
/// assert!(matches!(err, MetricError::UnknownParameter { ref name, .. } if name == "spin"));
/// assert!(matches!(Kerr::new(f64::NAN), Err(MetricError::NonFinite { .. })));
/// ```
#[derive(Debug, Clone, PartialEq, Error)]
pub enum MetricError {
    /// No built-in metric has this name.
    #[error("unknown metric '{name}' (known: {known})")]
    UnknownMetric {
        /// The name asked for.
        name: String,
        /// The known names, comma-separated.
        known: String,
    },
    /// The metric has no parameter of this name.
    #[error("metric '{metric}' has no parameter '{name}' (its parameters: {known})")]
    UnknownParameter {
        /// The metric's name.
        metric: String,
        /// The parameter asked for.
        name: String,
        /// The metric's parameters, comma-separated.
        known: String,
    },
    /// The same parameter was given twice.
    #[error("parameter '{name}' of metric '{metric}' is given more than once")]
    RepeatedParameter {
        /// The metric's name.
        metric: String,
        /// The parameter.
        name: String,
    },
    /// A value is NaN or infinite.
    #[error("parameter '{name}' must be a finite number, got {}", Num(*.value))]
    NonFinite {
        /// The parameter.
        name: String,
        /// The value given.
        value: f64,
    },
    /// A value lies outside the parameter's declared domain.
    #[error("parameter '{name}' = {} is outside its domain {domain}", Num(*.value))]
    OutOfDomain {
        /// The parameter.
        name: String,
        /// The value given.
        value: f64,
        /// The domain, in interval notation.
        domain: String,
    },
    /// A text could not be read as a number or an assignment.
    #[error("cannot read '{text}' as {expected}")]
    BadNumber {
        /// The text given.
        text: String,
        /// What it should have been.
        expected: String,
    },
    /// The metric is singular or not finite at the requested point.
    #[error("the metric is singular or not finite at r = {}, theta = {}", Num(*.r), Num(*.theta))]
    SingularPoint {
        /// Radius of the point.
        r: f64,
        /// Polar angle of the point.
        theta: f64,
    },
    /// A point outside the coordinate range.
    #[error("{what}")]
    BadPoint {
        /// What is wrong with the point.
        what: String,
    },
    /// A metric was given the wrong number of parameter values.
    #[error("metric '{metric}' takes {expected} parameter values ({names}), got {got}")]
    ParameterCount {
        /// The metric's name.
        metric: String,
        /// How many parameters it has.
        expected: usize,
        /// Their names, comma-separated.
        names: String,
        /// How many values were given.
        got: usize,
    },
    /// A computation needs a structure (spherical symmetry, separation data) that the metric
    /// does not declare in its `Capabilities` (metric layer).
    #[error("metric '{metric}' does not declare {structure}")]
    NotDeclared {
        /// The metric's name.
        metric: String,
        /// `spherical symmetry` or `separation data`.
        structure: &'static str,
    },
    /// The metric declares a structure but the hook that provides it returns nothing: an
    /// inconsistent metric, never a silent fallback to another solver.
    #[error("metric '{metric}' declares {structure} but its {hook} returns nothing")]
    MissingHook {
        /// The metric's name.
        metric: String,
        /// `spherical symmetry` or `separation data`.
        structure: &'static str,
        /// The `Metric` method that returned `None`.
        hook: &'static str,
    },
    /// A metric file's closed-form horizon is not a zero of g^rr at these parameters.
    #[error(
        "metric file '{metric}': its horizon expression gives r = {radius}, where g^rr = \
         {g_rr_inverse:e} instead of 0"
    )]
    HorizonNotAZero {
        /// The metric file's declared name.
        metric: String,
        /// The radius its horizon expression gives.
        radius: f64,
        /// g^rr there.
        g_rr_inverse: f64,
    },
    /// A metric file's separation data do not belong to its line element at these parameters.
    #[error("metric file '{metric}'{at}: {problem}")]
    SeparationMismatch {
        /// The metric file's declared name.
        metric: String,
        /// ` at a = 0.5, …`, or empty at the defaults.
        at: String,
        /// What the separation check found.
        problem: String,
    },
}
