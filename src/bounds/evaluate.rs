//! Who does a bound's nuisance evaluations. The search decides which values x of the varied
//! parameter to evaluate; an [`Evaluate`] evaluates them. [`Parallel`] is a plain parallel
//! loop (what [`bound`](super::bound) uses); a program that wants progress, a checkpoint or
//! Ctrl-C supplies its own (the run layer's executor), and may stop the search with
//! [`Halted`], keeping the reason itself.

use super::nuisance::Aggregate;
use rayon::prelude::*;

/// The prediction at one value of the varied parameter: one work item of a bound.
#[derive(Debug, Clone, PartialEq)]
pub struct Node {
    /// The value of the varied parameter.
    pub x: f64,
    /// The extremes over the nuisance box there, or why there are none.
    pub value: Aggregate,
    /// Whether the full search of the nuisance extremes was asked for (the evaluations that
    /// refine a bound end), rather than as much as deciding the value needs: a program that
    /// keeps evaluations keys the two apart.
    pub full: bool,
}

/// The evaluations were stopped (the evaluator knows why: an interruption, a checkpoint
/// that could not be written).
#[derive(Debug, Clone, Copy, PartialEq, Eq, thiserror::Error)]
#[error("the nuisance evaluations were stopped")]
pub struct Halted;

/// Evaluates the values a bound's search asks for.
pub trait Evaluate {
    /// `node(x)` for every value of `xs`, in the order of `xs`. Each call is independent of
    /// the others (they may run in parallel, or be recalled from an earlier run). `stage`
    /// names the step of the search (`starting grid`, `bound ends`, ...); `full` says whether
    /// the nodes are asked for with the full search ([`Node::full`]).
    fn evaluate(
        &mut self,
        stage: &str,
        xs: &[f64],
        full: bool,
        node: &(dyn Fn(f64) -> Node + Sync),
    ) -> Result<Vec<Node>, Halted>;

    /// The search asks for nothing more.
    fn finish(&mut self) -> Result<(), Halted>;
}

/// Every value evaluated in a parallel loop (rayon), outputs in order; never stops.
///
/// ```
/// use umbral::bounds::{Evaluate, Node, Parallel};
/// use umbral::bounds::nuisance::Aggregate;
/// let nodes = Parallel
///     .evaluate("grid", &[0.5, 0.1], false, &|x| Node { x, value: Aggregate::NoHorizon, full: false })
///     .unwrap();
/// assert_eq!(nodes.iter().map(|n| n.x).collect::<Vec<_>>(), vec![0.5, 0.1]);
/// ```
#[derive(Debug, Clone, Copy, Default)]
pub struct Parallel;

impl Evaluate for Parallel {
    fn evaluate(
        &mut self,
        _stage: &str,
        xs: &[f64],
        _full: bool,
        node: &(dyn Fn(f64) -> Node + Sync),
    ) -> Result<Vec<Node>, Halted> {
        Ok(xs.par_iter().map(|&x| node(x)).collect())
    }

    fn finish(&mut self) -> Result<(), Halted> {
        Ok(())
    }
}
