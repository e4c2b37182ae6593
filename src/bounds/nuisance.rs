//! Extremes of the predicted size over a box of nuisance parameters.
//!
//! A coarse grid over the box (evaluated in parallel, results in grid order), then, for each
//! extreme, cyclic line refinements through the best point: an interior extreme is refined by
//! Brent minimisation between its grid neighbours; a horizon boundary inside the box is
//! located by bisection on the horizon test and its value taken as a candidate (if the solver
//! fails right at the boundary, at the closest point inside where it succeeds); an extreme at
//! an edge of the box (or at a horizon boundary) is accepted when the adjacent grid value is
//! less extreme.
//!
//! [`decide`] makes only as much of that search as deciding a value needs: a value some
//! points already show allowed at every level is not searched further (its extremes are
//! marked [`Extremes::witnessed`]).

use crate::numerics::{bisect_predicate, brent_minimise};
use rayon::prelude::*;
use serde::{Deserialize, Serialize};
use std::sync::Mutex;

/// The prediction at one point of parameter space.
#[derive(Debug, Clone, PartialEq)]
pub enum PointValue {
    /// Predicted size (r_sh/M) and circularity deviation ΔC; `horizon` is false for a
    /// horizonless object whose shadow is bounded by a photon sphere around an absorbing
    /// centre.
    Valid {
        /// Predicted size, r_sh/M.
        size: f64,
        /// Circularity deviation ΔC (dimensionless).
        circularity: f64,
        /// Whether the point has a horizon.
        horizon: bool,
    },
    /// No horizon, and not evaluated: no shadow either, or a horizon is required.
    NoHorizon,
    /// A horizon but no shadow; the solver's reason.
    NoShadow(String),
    /// A solver error (never turned into allowed or excluded).
    Failed(String),
}

/// The model being bounded, as seen by the nuisance search.
pub trait PointModel: Sync {
    /// Full prediction at nuisance point `n` (the varied parameter is fixed by the model).
    fn value(&self, n: &[f64]) -> PointValue;
    /// Cheap test at `n` of a horizon requirement that decides, alone, whether `n` can be
    /// evaluated; a model that also evaluates horizonless objects returns `true` everywhere
    /// (the edge of what it can evaluate is then found by evaluating).
    fn passes_horizon_test(&self, n: &[f64]) -> bool;
    /// Whether some point of the box may count as a horizonless object with a shadow. Such a
    /// model's values are not decided on the box's corners alone ([`decide`]): whether a
    /// value's prediction includes horizonless objects is a property of the whole grid.
    fn counts_horizonless(&self) -> bool {
        true
    }
}

/// Extremes of the prediction over the feasible part of the box (as a bound's checkpoint
/// stores them: a number that is not finite as the string `nan`, `inf` or `-inf`).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Extremes {
    /// Min of the size (r_sh/M) over points with ΔC ≤ the limit (NaN if there are none).
    #[serde(with = "number")]
    pub size_min: f64,
    /// Max of the size over the same points (NaN if there are none).
    #[serde(with = "number")]
    pub size_max: f64,
    /// Min of ΔC over the box.
    #[serde(with = "number")]
    pub circularity_min: f64,
    /// Whether some grid points had no horizon or no shadow (skipped).
    pub partial: bool,
    /// Whether some grid point that counts is a horizonless object (with a shadow).
    pub horizonless: bool,
    /// The largest step back from a horizon boundary inside the box needed for the solver
    /// to succeed (0 if none); `horizon_backoff` in a checkpoint (a distance in the
    /// parameter, not a wall-clock time).
    #[serde(with = "number", rename = "horizon_backoff")]
    pub wall_backoff: f64,
    /// A solver failure at an off-grid refinement point that stopped the refinement (the
    /// extreme is then the best value found before it; grid-point failures are fatal).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub refinement_cut: Option<String>,
    /// The extremes are those of the nuisance points evaluated, which already decided the
    /// value allowed at every level ([`decide`]); the full search was not made, so the true
    /// min is at most `size_min` and the true max at least `size_max`.
    #[serde(default, skip_serializing_if = "std::ops::Not::not")]
    pub witnessed: bool,
    /// A solver failure at some nuisance point of a witnessed value: other points decided it,
    /// so the failure did not matter (a failure is fatal only where the full search is made).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub failure_passed_over: Option<String>,
}

/// The prediction at one value of the varied parameter.
#[derive(Debug, Clone, PartialEq)]
pub enum Aggregate {
    /// No nuisance point has a horizon.
    NoHorizon,
    /// Some have a horizon, none a shadow.
    NoShadow(String),
    /// A solver error somewhere in the box.
    Failed(String),
    /// Extremes over the feasible part of the box.
    Ok(Extremes),
}

/// Search settings.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct NuisanceSearch {
    /// Grid points per nuisance dimension.
    pub grid: usize,
    /// Absolute tolerance of refinements, as a fraction of each dimension's range.
    pub relative_tolerance: f64,
}

fn linspace(lo: f64, hi: f64, n: usize) -> Vec<f64> {
    if n <= 1 || lo == hi {
        return vec![lo];
    }
    (0..n)
        .map(|i| {
            if i == n - 1 {
                hi
            } else {
                lo + (hi - lo) * i as f64 / (n - 1) as f64
            }
        })
        .collect()
}

/// Which extreme to refine.
#[derive(Clone, Copy)]
enum Goal {
    SizeMin,
    SizeMax,
    CircularityMin,
}

impl Goal {
    /// The objective to minimise (+inf where undefined or infeasible).
    fn objective(self, v: &PointValue, limit: Option<f64>) -> f64 {
        match (self, v) {
            (
                Goal::SizeMin | Goal::SizeMax,
                PointValue::Valid {
                    size, circularity, ..
                },
            ) => {
                if limit.is_some_and(|c| *circularity > c) {
                    f64::INFINITY
                } else if matches!(self, Goal::SizeMin) {
                    *size
                } else {
                    -*size
                }
            }
            (Goal::CircularityMin, PointValue::Valid { circularity, .. }) => *circularity,
            _ => f64::INFINITY,
        }
    }
}

/// Every point of the product grid of `axes` (the last axis fastest).
fn grid_points(axes: &[Vec<f64>]) -> Vec<Vec<f64>> {
    let mut points: Vec<Vec<f64>> = vec![Vec::new()];
    for axis in axes {
        points = points
            .into_iter()
            .flat_map(|p| {
                axis.iter().map(move |&t| {
                    let mut q = p.clone();
                    q.push(t);
                    q
                })
            })
            .collect();
    }
    points
}

/// The outcome when the grid has no usable value: a failure (the first), no horizon
/// anywhere, or no shadow anywhere (the first reason); `None` when some point is valid.
fn without_valid_point(values: &[PointValue]) -> Option<Aggregate> {
    if let Some(PointValue::Failed(m)) = values.iter().find(|v| matches!(v, PointValue::Failed(_)))
    {
        return Some(Aggregate::Failed(m.clone()));
    }
    if values.iter().all(|v| matches!(v, PointValue::NoHorizon)) {
        return Some(Aggregate::NoHorizon);
    }
    if !values.iter().any(|v| matches!(v, PointValue::Valid { .. })) {
        let reason = values
            .iter()
            .find_map(|v| match v {
                PointValue::NoShadow(r) => Some(r.clone()),
                _ => None,
            })
            .unwrap_or_default();
        return Some(Aggregate::NoShadow(reason));
    }
    None
}

/// Min and max of the size, and min of ΔC, over the box `dims` (may be empty).
pub fn extremes(
    model: &dyn PointModel,
    dims: &[(f64, f64)],
    circularity_limit: Option<f64>,
    search: &NuisanceSearch,
) -> Aggregate {
    let axes = grid_axes(dims, search);
    let points = grid_points(&axes);
    let values: Vec<PointValue> = points.par_iter().map(|p| model.value(p)).collect();
    search_from_grid(
        model,
        dims,
        &axes,
        &points,
        &values,
        circularity_limit,
        search,
    )
}

/// The margins whose signs decide allowedness: per level (H − s₋, s₊ − L), then the
/// circularity margin (limit − min ΔC) if a limit is set. Non-negative means "passes".
pub(super) fn margins(e: &Extremes, levels: &[[f64; 2]], circularity_max: Option<f64>) -> Vec<f64> {
    let mut m = Vec::with_capacity(2 * levels.len() + 1);
    for [lo, hi] in levels {
        m.push(hi - e.size_min);
        m.push(e.size_max - lo);
    }
    if let Some(c) = circularity_max {
        m.push(c - e.circularity_min);
    }
    m
}

/// The extremes of the points evaluated when they already decide the value allowed at every
/// level: for each interval [L, H] some counted size at most H and some at least L (then, the
/// size taking every value in between, one inside it), and, with a circularity limit, some ΔC
/// under it. Counted are the valid points with ΔC under the limit. `None` when they do not.
fn witness_of(
    values: &[PointValue],
    levels: &[[f64; 2]],
    circularity_limit: Option<f64>,
) -> Option<Extremes> {
    let best = |goal: Goal| {
        values
            .iter()
            .map(|v| goal.objective(v, circularity_limit))
            .fold(f64::INFINITY, f64::min)
    };
    let size_min = best(Goal::SizeMin);
    if !size_min.is_finite() {
        return None;
    }
    let extremes = Extremes {
        size_min,
        size_max: -best(Goal::SizeMax),
        circularity_min: best(Goal::CircularityMin),
        partial: values
            .iter()
            .any(|v| !matches!(v, PointValue::Valid { .. })),
        horizonless: values
            .iter()
            .any(|v| matches!(v, PointValue::Valid { horizon: false, .. })),
        wall_backoff: 0.0,
        refinement_cut: None,
        witnessed: true,
        failure_passed_over: values.iter().find_map(|v| match v {
            PointValue::Failed(m) => Some(m.clone()),
            _ => None,
        }),
    };
    margins(&extremes, levels, circularity_limit)
        .iter()
        .all(|m| *m >= 0.0)
        .then_some(extremes)
}

/// How much of the nuisance search [`decide`] makes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Effort {
    /// Stop as soon as the points evaluated decide the value allowed at every level.
    Decide,
    /// The full search (the predicted band a figure draws), except where a grid point
    /// failed and the others decide the value allowed.
    FullSearch,
}

/// The prediction at one value as far as deciding it needs. With [`Effort::Decide`]: the
/// grid from coarse to fine (the box's corners, then the middle, then the rest; the batches of
/// `coarse_to_fine`), stopping after any batch whose points, with those before, decide the
/// value allowed at every level of `levels` (r_sh/M intervals) and the circularity limit ([`Extremes::witnessed`]: allowed needs one point inside each interval,
/// or points on both sides of it, whatever the other points give, even a solver failure);
/// only a value not decided so, which may be excluded, gets the full search of [`extremes`],
/// with the grid already evaluated. A model that may count horizonless objects starts from
/// the whole grid ([`PointModel::counts_horizonless`]). With [`Effort::FullSearch`], the
/// full search, unless a grid point failed: then the value is witnessed as above, or failed.
/// Both efforts decide every value alike. Without nuisance dimensions the one point is its
/// own full search.
///
/// ```
/// use umbral::bounds::nuisance::{decide, extremes, Aggregate, Effort, NuisanceSearch, PointModel, PointValue};
/// // The size falls from 5.3 to 4.9 across the box.
/// struct Falling;
/// impl PointModel for Falling {
///     fn value(&self, n: &[f64]) -> PointValue {
///         PointValue::Valid { size: 5.3 - 0.4 * n[0], circularity: 0.0, horizon: true }
///     }
///     fn passes_horizon_test(&self, _: &[f64]) -> bool { true }
///     fn counts_horizonless(&self) -> bool { false }
/// }
/// let search = NuisanceSearch { grid: 7, relative_tolerance: 1e-10 };
/// let box_ = [(0.0, 1.0)];
/// // [5.0, 5.1] lies between the corners' sizes: allowed, from two points.
/// let Aggregate::Ok(e) = decide(&Falling, &box_, &[[5.0, 5.1]], None, &search, Effort::Decide)
/// else { panic!() };
/// assert!(e.witnessed && e.size_min == 5.3 - 0.4 && e.size_max == 5.3);
/// // Nothing reaches 5.4: the full search.
/// let full = decide(&Falling, &box_, &[[5.4, 5.5]], None, &search, Effort::Decide);
/// assert_eq!(full, extremes(&Falling, &box_, None, &search));
/// ```
pub fn decide(
    model: &dyn PointModel,
    dims: &[(f64, f64)],
    levels: &[[f64; 2]],
    circularity_limit: Option<f64>,
    search: &NuisanceSearch,
    effort: Effort,
) -> Aggregate {
    let axes = grid_axes(dims, search);
    let points = grid_points(&axes);
    let batches = if effort == Effort::Decide && !model.counts_horizonless() {
        coarse_to_fine(axes.iter().map(Vec::len).collect())
    } else {
        vec![(0..points.len()).collect()]
    };
    let mut values: Vec<Option<PointValue>> = vec![None; points.len()];
    for batch in batches {
        let batch_values: Vec<PointValue> =
            batch.par_iter().map(|&i| model.value(&points[i])).collect();
        for (i, v) in batch.into_iter().zip(batch_values) {
            values[i] = Some(v);
        }
        let evaluated: Vec<PointValue> = values.iter().flatten().cloned().collect();
        let failed = evaluated.iter().any(|v| matches!(v, PointValue::Failed(_)));
        if !dims.is_empty() && (effort == Effort::Decide || failed) {
            if let Some(e) = witness_of(&evaluated, levels, circularity_limit) {
                return Aggregate::Ok(e);
            }
        }
    }
    let values: Vec<PointValue> = values.into_iter().flatten().collect();
    search_from_grid(
        model,
        dims,
        &axes,
        &points,
        &values,
        circularity_limit,
        search,
    )
}

/// The indices of a product grid (`sizes` points per axis, the last axis fastest) in
/// batches from coarse to fine: the corners (stride n − 1 on every axis), then the points of
/// the grids of half that stride while it halves evenly, then the rest. With 7 points per
/// axis: the 2 ends, the middle, the other 4.
fn coarse_to_fine(sizes: Vec<usize>) -> Vec<Vec<usize>> {
    let total: usize = sizes.iter().product();
    let n = sizes.iter().copied().max().unwrap_or(1);
    let on_stride = |mut i: usize, stride: usize| {
        sizes.iter().rev().all(|&len| {
            let k = i % len;
            i /= len;
            // An axis of one point, or its last point, is on every stride.
            len == 1 || k == len - 1 || k.is_multiple_of(stride)
        })
    };
    let mut strides = vec![(n - 1).max(1)];
    while let Some(&s) = strides.last() {
        if s > 1 && s.is_multiple_of(2) {
            strides.push(s / 2);
        } else {
            break;
        }
    }
    if strides.last() != Some(&1) {
        strides.push(1);
    }
    let mut done = vec![false; total];
    let mut batches = Vec::new();
    for stride in strides {
        let batch: Vec<usize> = (0..total)
            .filter(|&i| !done[i] && on_stride(i, stride))
            .collect();
        for &i in &batch {
            done[i] = true;
        }
        if !batch.is_empty() {
            batches.push(batch);
        }
    }
    batches
}

fn grid_axes(dims: &[(f64, f64)], search: &NuisanceSearch) -> Vec<Vec<f64>> {
    dims.iter()
        .map(|&(lo, hi)| linspace(lo, hi, search.grid))
        .collect()
}

/// [`extremes`] from the grid's values.
#[allow(clippy::too_many_arguments)]
// Long: the full search's inputs (the box, its grid and values, the limit, the settings).
fn search_from_grid(
    model: &dyn PointModel,
    dims: &[(f64, f64)],
    axes: &[Vec<f64>],
    points: &[Vec<f64>],
    values: &[PointValue],
    circularity_limit: Option<f64>,
    search: &NuisanceSearch,
) -> Aggregate {
    if let Some(outcome) = without_valid_point(values) {
        return outcome;
    }
    let partial = values
        .iter()
        .any(|v| !matches!(v, PointValue::Valid { .. }));
    let horizonless = values
        .iter()
        .any(|v| matches!(v, PointValue::Valid { horizon: false, .. }));
    // Each goal is refined alone, the three at once (their line searches are sequential, so
    // this is where a box's search finds its parallelism); each keeps its own back-off and
    // cut, combined below in goal order, as one goal after the other would have recorded them.
    let refine = |goal: Goal| -> (Result<f64, String>, f64, Option<String>) {
        let (backoff, cut) = (Mutex::new(0.0f64), Mutex::new(None::<String>));
        let value = refine_goal(
            model,
            dims,
            axes,
            points,
            values,
            goal,
            circularity_limit,
            search,
            &backoff,
            &cut,
        );
        let backoff = backoff.into_inner().unwrap_or_else(|e| e.into_inner());
        (
            value,
            backoff,
            cut.into_inner().unwrap_or_else(|e| e.into_inner()),
        )
    };
    let (min, (max, circularity)) = rayon::join(
        || refine(Goal::SizeMin),
        || {
            rayon::join(
                || refine(Goal::SizeMax),
                || circularity_limit.map(|_| refine(Goal::CircularityMin)),
            )
        },
    );
    let mut wall_backoff = 0.0f64;
    let mut refinement_cut = None;
    let mut outcome = |(value, backoff, cut): (Result<f64, String>, f64, Option<String>)| {
        wall_backoff = wall_backoff.max(backoff);
        refinement_cut = refinement_cut.take().or(cut);
        value
    };
    let size_min = match outcome(min) {
        Ok(v) => v,
        Err(m) => return Aggregate::Failed(m),
    };
    let size_max = match outcome(max) {
        Ok(v) => -v,
        Err(m) => return Aggregate::Failed(m),
    };
    let circularity_min = match circularity.map(&mut outcome) {
        Some(Ok(v)) => v,
        Some(Err(m)) => return Aggregate::Failed(m),
        None => values
            .iter()
            .map(|v| Goal::CircularityMin.objective(v, None))
            .fold(f64::INFINITY, f64::min),
    };
    let (size_min, size_max) = if size_min.is_finite() {
        (size_min, size_max)
    } else {
        (f64::NAN, f64::NAN)
    };
    Aggregate::Ok(Extremes {
        size_min,
        size_max,
        circularity_min,
        partial,
        horizonless,
        wall_backoff,
        refinement_cut,
        witnessed: false,
        failure_passed_over: None,
    })
}

#[allow(clippy::too_many_arguments)]
// Long: coordinate sweeps of one goal over the box, each line refined in place of the running best point; the sweep state (best point, value, axes, locks) is shared by every step.
fn refine_goal(
    model: &dyn PointModel,
    dims: &[(f64, f64)],
    axes: &[Vec<f64>],
    points: &[Vec<f64>],
    values: &[PointValue],
    goal: Goal,
    limit: Option<f64>,
    search: &NuisanceSearch,
    backoff: &Mutex<f64>,
    cut: &Mutex<Option<String>>,
) -> Result<f64, String> {
    let objective: Vec<f64> = values.iter().map(|v| goal.objective(v, limit)).collect();
    let k = (0..objective.len())
        .min_by(|&i, &j| objective[i].total_cmp(&objective[j]))
        .unwrap_or(0);
    let mut best = points[k].clone();
    let mut best_value = objective[k];
    if dims.is_empty() || !best_value.is_finite() {
        return Ok(best_value);
    }
    let sweeps = if dims.len() == 1 { 1 } else { 2 };
    for sweep in 0..sweeps {
        for j in 0..dims.len() {
            let nodes = &axes[j];
            // The line through `best` along dimension j: reuse the grid on the first sweep
            // when `best` is a grid point, else evaluate it. Results in node order, so the
            // failure reported is the same at any thread count.
            let line: Vec<Result<f64, String>> = nodes
                .par_iter()
                .map(|&t| {
                    let mut p = best.clone();
                    p[j] = t;
                    if sweep == 0 {
                        if let Some(i) = points.iter().position(|q| *q == p) {
                            return Ok(objective[i]);
                        }
                    }
                    match model.value(&p) {
                        PointValue::Failed(m) => Err(m),
                        v => Ok(goal.objective(&v, limit)),
                    }
                })
                .collect();
            if let Some(m) = line.iter().find_map(|r| r.as_ref().err()) {
                // Off-grid refinement points only: keep the best value so far, and say so.
                cut.lock()
                    .unwrap_or_else(|e| e.into_inner())
                    .get_or_insert_with(|| m.clone());
                return Ok(best_value);
            }
            let line_values: Vec<f64> = line
                .into_iter()
                .map(|r| r.unwrap_or(f64::INFINITY))
                .collect();
            let tol = search.relative_tolerance * (dims[j].1 - dims[j].0).abs();
            let mut eval = |t: f64| -> Result<f64, String> {
                let mut p = best.clone();
                p[j] = t;
                match model.value(&p) {
                    PointValue::Failed(m) => Err(m),
                    v => Ok(goal.objective(&v, limit)),
                }
            };
            let horizon = |t: f64| {
                let mut p = best.clone();
                p[j] = t;
                model.passes_horizon_test(&p)
            };
            let (t, v) = match refine_line(nodes, &line_values, &mut eval, &horizon, tol, backoff) {
                Ok(r) => r,
                Err(m) => {
                    cut.lock()
                        .unwrap_or_else(|e| e.into_inner())
                        .get_or_insert(m);
                    return Ok(best_value);
                }
            };
            if v < best_value {
                best_value = v;
                best[j] = t;
            }
        }
    }
    Ok(best_value)
}

/// Refine the minimum of a function sampled at `nodes` with values `f` (+inf = undefined).
// Long: one 1-D refinement: the wall search beside the grid minimum and the Brent minimisation share the `wall` closure, the running best point and the backoff.
fn refine_line(
    nodes: &[f64],
    f: &[f64],
    eval: &mut dyn FnMut(f64) -> Result<f64, String>,
    horizon: &dyn Fn(f64) -> bool,
    tol: f64,
    backoff: &Mutex<f64>,
) -> Result<(f64, f64), String> {
    let n = nodes.len();
    let k = (0..n).min_by(|&i, &j| f[i].total_cmp(&f[j])).unwrap_or(0);
    if !f[k].is_finite() {
        return Ok((nodes[k], f[k]));
    }
    let mut best = (nodes[k], f[k]);
    // A neighbour where the function is undefined: find the boundary of definition.
    let mut wall = |inside: f64, outside: f64| -> Result<Option<(f64, f64)>, String> {
        let (good, _) = if !horizon(outside) && horizon(inside) {
            bisect_predicate(horizon, inside, outside, tol)
        } else {
            // Bisection on whether the value is defined; a failed solve ends the search (it
            // would end the refinement anyway), so no further solves are spent on it.
            let (mut defined, mut undefined) = (inside, outside);
            while (undefined - defined).abs() > tol {
                let mid = 0.5 * (defined + undefined);
                if eval(mid)?.is_finite() {
                    defined = mid;
                } else {
                    undefined = mid;
                }
            }
            (defined, undefined)
        };
        // Solvers may fail very close to an extremal horizon: the closest point inside that
        // succeeds is located to within a factor of two in its distance d from the boundary,
        // by bisection of ln d between the tolerance and half the way to the grid node (about
        // eight solves, where a fourfold ladder out from the tolerance took up to fifteen for
        // a ray-traced metric that fails over a few per cent near its extremal horizon).
        let toward = (inside - good).signum();
        let record = |d: f64, v: f64| {
            let mut worst = backoff.lock().unwrap_or_else(|e| e.into_inner());
            *worst = worst.max(d);
            Ok(v.is_finite().then_some((good + d * toward, v)))
        };
        let failure = match eval(good) {
            Ok(v) => return record(0.0, v),
            Err(m) => m,
        };
        let (mut failed, mut succeeded) = (tol, 0.5 * (inside - good).abs());
        let Ok(mut value) = eval(good + succeeded * toward) else {
            return Err(failure);
        };
        while succeeded > 2.0 * failed {
            let d = (failed * succeeded).sqrt();
            match eval(good + d * toward) {
                Ok(v) => (succeeded, value) = (d, v),
                Err(_) => failed = d,
            }
        }
        record(succeeded, value)
    };
    let mut lo = if k > 0 { Some(nodes[k - 1]) } else { None };
    let mut hi = if k + 1 < n { Some(nodes[k + 1]) } else { None };
    let mut interior = lo.is_some() && hi.is_some();
    if k > 0 && !f[k - 1].is_finite() {
        if let Some((t, v)) = wall(nodes[k], nodes[k - 1])? {
            lo = Some(t);
            if v < best.1 {
                best = (t, v);
                interior = false;
            }
        }
    }
    if k + 1 < n && !f[k + 1].is_finite() {
        if let Some((t, v)) = wall(nodes[k], nodes[k + 1])? {
            hi = Some(t);
            if v < best.1 {
                best = (t, v);
                interior = false;
            }
        }
    }
    // A bracket flat to rounding: on equally spaced nodes (the grid's), the parabola through
    // its three values dips below the middle one by at most (d₋ + d₊)/8 for rises d₋, d₊ ≥ 0
    // to the neighbours, so for a function the grid resolves (what a local refinement
    // assumes) Brent's method could gain only rounding noise, and it takes some forty steps
    // chasing it (the size along the inclination at zero spin is such a line). Relative to
    // the value, absolute (about 4e-15) for values below 1 such as a circularity near 0.
    let rounding = 16.0 * f64::EPSILON * f[k].abs().max(1.0);
    let flat = |i: usize| (f[i] - f[k]).abs() <= rounding;
    if interior && flat(k - 1) && flat(k + 1) {
        interior = false;
    }
    if interior {
        if let (Some(a), Some(b)) = (lo, hi) {
            // A failure inside the bracket must be reported, not skipped. It ends the
            // refinement (the minimum found is not used), so after it no further solves are
            // spent: the minimisation runs out on +inf, as where the function is undefined.
            let mut err = None;
            let (t, v) = brent_minimise(
                |t| {
                    if err.is_some() {
                        return f64::INFINITY;
                    }
                    match eval(t) {
                        Ok(v) => v,
                        Err(m) => {
                            err.get_or_insert(m);
                            f64::INFINITY
                        }
                    }
                },
                a,
                b,
                nodes[k],
                f[k],
                tol,
            )
            .map_err(|e| e.to_string())?;
            if let Some(m) = err {
                return Err(m);
            }
            if v < best.1 {
                best = (t, v);
            }
        }
    }
    Ok(best)
}

/// A number that may be NaN or infinite: JSON numbers for finite values, strings otherwise.
mod number {
    use serde::{Deserialize, Deserializer, Serialize, Serializer};

    #[derive(Serialize, Deserialize)]
    #[serde(untagged)]
    enum Stored {
        Finite(f64),
        Other(String),
    }

    pub fn serialize<S: Serializer>(x: &f64, s: S) -> Result<S::Ok, S::Error> {
        match *x {
            x if x.is_finite() => Stored::Finite(x),
            x if x.is_nan() => Stored::Other("nan".into()),
            x if x > 0.0 => Stored::Other("inf".into()),
            _ => Stored::Other("-inf".into()),
        }
        .serialize(s)
    }

    pub fn deserialize<'de, D: Deserializer<'de>>(d: D) -> Result<f64, D::Error> {
        match Stored::deserialize(d)? {
            Stored::Finite(x) => Ok(x),
            Stored::Other(s) => match s.as_str() {
                "nan" => Ok(f64::NAN),
                "inf" => Ok(f64::INFINITY),
                "-inf" => Ok(f64::NEG_INFINITY),
                _ => Err(serde::de::Error::custom(format!(
                    "'{s}' is not a number (nan, inf and -inf are the only words)"
                ))),
            },
        }
    }
}

#[cfg(test)]
mod tests {
    use super::{coarse_to_fine, refine_line};
    use std::sync::Mutex;

    /// A line whose bracket about the grid minimum is flat to rounding is not refined (no
    /// solve); one whose neighbours rise by 40 ε·|f| (2.5 times the threshold) is, and a curved
    /// one is, Brent's method finding the parabola's vertex.
    #[test]
    fn a_bracket_flat_to_rounding_is_not_refined() {
        let nodes: Vec<f64> = (0..7).map(|i| i as f64 / 6.0).collect();
        let backoff = Mutex::new(0.0);
        let horizon = |_: f64| true;
        let mut solves = 0;
        let flat = [5.0, 5.0, 5.0, 5.0 - 8.9e-16, 5.0, 5.0, 5.0];
        let mut eval = |_: f64| {
            solves += 1;
            Ok(5.0)
        };
        let best = refine_line(&nodes, &flat, &mut eval, &horizon, 1e-10, &backoff).unwrap();
        assert_eq!(best, (0.5, 5.0 - 8.9e-16));
        assert_eq!(solves, 0);
        let ulps = 40.0 * f64::EPSILON * 5.0;
        let barely = [5.1, 5.1, 5.0 + ulps, 5.0, 5.0 + ulps, 5.1, 5.1];
        let mut solves = 0;
        let mut eval = |_: f64| {
            solves += 1;
            Ok(5.0 + ulps)
        };
        refine_line(&nodes, &barely, &mut eval, &horizon, 1e-10, &backoff).unwrap();
        assert!(solves > 0);
        // A parabola with its vertex off the grid, 9e-5 below the grid minimum.
        let curved = |t: f64| 5.0 + 0.036 * (t - 0.45) * (t - 0.45);
        let values: Vec<f64> = nodes.iter().map(|&t| curved(t)).collect();
        let mut solves = 0;
        let mut eval = |t: f64| {
            solves += 1;
            Ok(curved(t))
        };
        let (t, v) = refine_line(&nodes, &values, &mut eval, &horizon, 1e-10, &backoff).unwrap();
        assert!(solves > 0);
        assert!((t - 0.45).abs() < 1e-6 && v < values[3] - 8e-5, "{t} {v}");
    }

    #[test]
    fn grid_batches_run_from_the_corners_to_every_point_once() {
        assert_eq!(
            coarse_to_fine(vec![7]),
            vec![vec![0, 6], vec![3], vec![1, 2, 4, 5]]
        );
        assert_eq!(
            coarse_to_fine(vec![9]),
            vec![vec![0, 8], vec![4], vec![2, 6], vec![1, 3, 5, 7]]
        );
        // 3 × 3, the last axis fastest: corners, then the rest.
        assert_eq!(
            coarse_to_fine(vec![3, 3]),
            vec![vec![0, 2, 6, 8], vec![1, 3, 4, 5, 7]]
        );
        assert_eq!(coarse_to_fine(vec![]), vec![vec![0]]);
        let mut all: Vec<usize> = coarse_to_fine(vec![7, 7, 7]).concat();
        all.sort_unstable();
        assert_eq!(all, (0..343).collect::<Vec<_>>());
    }
}
