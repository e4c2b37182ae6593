//! Extremes of the predicted size over a box of nuisance parameters.
//!
//! A coarse grid over the box (evaluated in parallel, results in grid order), then, for each
//! extreme, cyclic line refinements through the best point: an interior extreme is refined by
//! Brent minimisation between its grid neighbours; a horizon boundary inside the box is
//! located by bisection on the horizon test and its value taken as a candidate (if the solver
//! fails right at the boundary, at the closest point inside where it succeeds); an extreme at
//! an edge of the box (or at a horizon boundary) is accepted when the adjacent grid value is
//! less extreme.

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
    let axes: Vec<Vec<f64>> = dims
        .iter()
        .map(|&(lo, hi)| linspace(lo, hi, search.grid))
        .collect();
    let points = grid_points(&axes);
    let values: Vec<PointValue> = points.par_iter().map(|p| model.value(p)).collect();
    if let Some(outcome) = without_valid_point(&values) {
        return outcome;
    }
    let partial = values
        .iter()
        .any(|v| !matches!(v, PointValue::Valid { .. }));
    let horizonless = values
        .iter()
        .any(|v| matches!(v, PointValue::Valid { horizon: false, .. }));
    let backoff = Mutex::new(0.0f64);
    let cut = Mutex::new(None::<String>);
    let refine = |goal: Goal| -> Result<f64, String> {
        refine_goal(
            model,
            dims,
            &axes,
            &points,
            &values,
            goal,
            circularity_limit,
            search,
            &backoff,
            &cut,
        )
    };
    let size_min = match refine(Goal::SizeMin) {
        Ok(v) => v,
        Err(m) => return Aggregate::Failed(m),
    };
    let size_max = match refine(Goal::SizeMax) {
        Ok(v) => -v,
        Err(m) => return Aggregate::Failed(m),
    };
    let circularity_min = if circularity_limit.is_some() {
        match refine(Goal::CircularityMin) {
            Ok(v) => v,
            Err(m) => return Aggregate::Failed(m),
        }
    } else {
        values
            .iter()
            .map(|v| Goal::CircularityMin.objective(v, None))
            .fold(f64::INFINITY, f64::min)
    };
    let (size_min, size_max) = if size_min.is_finite() {
        (size_min, size_max)
    } else {
        (f64::NAN, f64::NAN)
    };
    let wall_backoff = backoff.into_inner().unwrap_or_else(|e| e.into_inner());
    let refinement_cut = cut.into_inner().unwrap_or_else(|e| e.into_inner());
    Aggregate::Ok(Extremes {
        size_min,
        size_max,
        circularity_min,
        partial,
        horizonless,
        wall_backoff,
        refinement_cut,
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
