//! The adaptive search over the varied parameter: a uniform starting grid, category changes
//! (no horizon, no shadow, failure) located by bisection, crossings hidden between grid
//! points looked for with parabolas, and the ends of the allowed ranges refined by Brent's
//! method. The nuisance evaluations are asked of an [`Evaluate`], in batches (the starting
//! grid, each round of candidates, each round of the bound ends' Brent searches, run in
//! lockstep) or one at a time (bisection), so a program can report, checkpoint and interrupt
//! them like any other run's items.

pub(super) use super::nuisance::margins;
use super::nuisance::Aggregate;
use super::{describe, BoundError, BoundResult, Failure, LevelBound, PredictedPoint, Prepared};
use super::{Evaluate, Node};
use crate::numerics::brent_root_within;
use crate::numerics::lockstep::{in_lockstep, LockstepSearch};

/// Whether a node's prediction includes horizonless objects.
fn horizonless(a: &Aggregate) -> bool {
    matches!(a, Aggregate::Ok(e) if e.horizonless)
}

/// Whether a node's evaluation failed.
fn is_failed(a: &Aggregate) -> bool {
    matches!(a, Aggregate::Failed(_))
}

fn category(a: &Aggregate) -> u8 {
    match a {
        Aggregate::Ok(_) => 0,
        Aggregate::NoHorizon => 1,
        Aggregate::NoShadow(_) => 2,
        Aggregate::Failed(_) => 3,
    }
}

/// Which margins belong to level `l`.
fn level_margins(l: usize, count: usize, has_circularity: bool) -> Vec<usize> {
    let mut v = vec![2 * l, 2 * l + 1];
    if has_circularity {
        v.push(count - 1);
    }
    v
}

fn passes(m: f64) -> bool {
    m >= 0.0
}

/// The search: the prepared request and who evaluates it.
pub(super) struct Search<'p, 'e> {
    pub(super) prep: &'p Prepared<'p>,
    pub(super) evaluator: &'e mut dyn Evaluate,
    pub(super) levels: Vec<[f64; 2]>,
    pub(super) cmax: Option<f64>,
}

/// Roots of the margins between adjacent nodes, and cells where the prediction changed.
pub(super) struct Cells {
    /// `roots[i][j]`: where margin j crosses zero in (nodes[i], nodes[i+1]).
    roots: Vec<Vec<Option<f64>>>,
    failures: Vec<Failure>,
    /// How far a size-margin root may sit from the true end when the search stopped at the
    /// curves' resolution: the resolution over the size's slope across the root's grid cell,
    /// the largest over the roots (0 for exact solvers).
    end_spread: f64,
}

impl Search<'_, '_> {
    /// Evaluate at every value of `xs` (in parallel), in order: as far as deciding each value
    /// needs, or (`full`) with the full search of the nuisance extremes.
    fn nodes(&mut self, xs: &[f64], stage: &str, full: bool) -> Result<Vec<Node>, BoundError> {
        let prep = self.prep;
        let node = |x| Node {
            x,
            value: prep.evaluate(x, full),
            full,
        };
        Ok(self.evaluator.evaluate(stage, xs, full, &node)?)
    }

    /// Evaluate at `x`.
    fn value(&mut self, x: f64, stage: &str, full: bool) -> Result<Aggregate, BoundError> {
        let mut nodes = self.nodes(&[x], stage, full)?;
        Ok(nodes.remove(0).value)
    }

    /// The starting grid, refined at category changes and hidden crossings.
    pub(super) fn refined_nodes(&mut self) -> Result<Vec<Node>, BoundError> {
        let request = self.prep.request;
        let s = &request.settings;
        let (lo, hi) = (request.vary.low, request.vary.high);
        let n0 = s.initial_grid;
        let xs: Vec<f64> = (0..n0)
            .map(|i| {
                if i == n0 - 1 {
                    hi
                } else {
                    lo + (hi - lo) * i as f64 / (n0 - 1) as f64
                }
            })
            .collect();
        let mut nodes = self.nodes(&xs, "starting grid", false)?;
        self.locate_category_boundaries(&mut nodes)?;
        for _ in 0..s.refinement_rounds {
            let extra = hidden_crossing_candidates(&nodes, &self.levels, self.cmax);
            if extra.is_empty() {
                break;
            }
            let mut new = self.nodes(&extra, "hidden crossings", false)?;
            nodes.append(&mut new);
            nodes.sort_by(|a, b| a.x.total_cmp(&b.x));
            nodes.dedup_by(|a, b| a.x == b.x);
            self.locate_category_boundaries(&mut nodes)?;
        }
        Ok(nodes)
    }

    /// Bisect every pair of adjacent nodes of different categories, inserting the evaluated
    /// midpoints: down to the parameter tolerance at a physical edge (no horizon, no shadow,
    /// horizonless), down to the coarser failure-edge tolerance where one side failed
    /// ([`super::BoundSettings::failure_edge_relative_tolerance`]).
    fn locate_category_boundaries(&mut self, nodes: &mut Vec<Node>) -> Result<(), BoundError> {
        let tol = self.prep.request.settings.parameter_tolerance;
        let failure_tol = self.prep.failure_edge_tolerance();
        loop {
            let pair = (0..nodes.len().saturating_sub(1)).find(|&i| {
                let (a, b) = (&nodes[i].value, &nodes[i + 1].value);
                let edge_tol = if is_failed(a) || is_failed(b) {
                    failure_tol
                } else {
                    tol
                };
                (category(a) != category(b) || horizonless(a) != horizonless(b))
                    && nodes[i + 1].x - nodes[i].x > edge_tol
                    && 0.5 * (nodes[i].x + nodes[i + 1].x) != nodes[i].x
            });
            let Some(i) = pair else {
                return Ok(());
            };
            let x = 0.5 * (nodes[i].x + nodes[i + 1].x);
            let value = self.value(x, "category edges", false)?;
            nodes.insert(
                i + 1,
                Node {
                    x,
                    value,
                    full: false,
                },
            );
        }
    }

    /// Roots of every margin that changes sign between adjacent Ok nodes, by Brent's method,
    /// the searches run in lockstep (each round's values evaluated as one parallel batch);
    /// a cell where the prediction changes category on the way is a failure of that cell.
    /// Every search runs to its end; a stop of the evaluator comes first, then the first
    /// search in cell order that did not converge.
    pub(super) fn bound_ends(&mut self, nodes: &[Node]) -> Result<Cells, BoundError> {
        let tol = self.prep.request.settings.parameter_tolerance;
        let count = margin_count(&self.levels, self.cmax);
        let mut cells = Cells {
            roots: vec![vec![None; count]; nodes.len().saturating_sub(1)],
            failures: Vec::new(),
            end_spread: 0.0,
        };
        // Every sign change of a margin between adjacent nodes: (cell, margin, the two ends
        // with their margins).
        let mut crossings = Vec::new();
        for i in 0..nodes.len().saturating_sub(1) {
            let (Aggregate::Ok(ea), Aggregate::Ok(eb)) = (&nodes[i].value, &nodes[i + 1].value)
            else {
                continue;
            };
            let (ma, mb) = (
                margins(ea, &self.levels, self.cmax),
                margins(eb, &self.levels, self.cmax),
            );
            for j in 0..count {
                if ma[j].is_finite() && mb[j].is_finite() && passes(ma[j]) != passes(mb[j]) {
                    crossings.push((i, j, (nodes[i].x, ma[j]), (nodes[i + 1].x, mb[j])));
                }
            }
        }
        let (levels, cmax) = (&self.levels, self.cmax);
        let size_resolution = self.prep.size_resolution;
        let searches: Vec<LockstepSearch<f64, Option<Aggregate>, MarginRoot>> = crossings
            .iter()
            .map(|&(_, j, a, b)| {
                // A size within the curves' resolution of the interval's end is at it
                // (stopping at the noise level: common practice, no source); the circularity
                // margin, last, is searched to the tolerance.
                let ftol = if j < 2 * levels.len() {
                    size_resolution
                } else {
                    0.0
                };
                Box::new(move |ask: &mut dyn FnMut(f64) -> Option<Aggregate>| {
                    margin_root(ask, |e| margins(e, levels, cmax)[j], a, b, 0.25 * tol, ftol)
                }) as LockstepSearch<f64, Option<Aggregate>, MarginRoot>
            })
            .collect();
        let prep = self.prep;
        let evaluator = &mut *self.evaluator;
        let mut stopped = None;
        let node = |x| Node {
            x,
            value: prep.evaluate(x, true),
            full: true,
        };
        let outcomes = in_lockstep(searches, |xs| {
            if stopped.is_some() {
                return vec![None; xs.len()];
            }
            // Two searches may ask for the same value: it is evaluated once.
            let mut distinct: Vec<f64> = Vec::with_capacity(xs.len());
            for &x in xs {
                if !distinct.iter().any(|d| d.to_bits() == x.to_bits()) {
                    distinct.push(x);
                }
            }
            match evaluator.evaluate("bound ends", &distinct, true, &node) {
                Ok(evaluated) => xs
                    .iter()
                    .map(|x| {
                        let k = distinct.iter().position(|d| d.to_bits() == x.to_bits());
                        k.map(|k| evaluated[k].value.clone())
                    })
                    .collect(),
                Err(e) => {
                    stopped = Some(e);
                    vec![None; xs.len()]
                }
            }
        });
        if let Some(e) = stopped {
            return Err(e.into());
        }
        for (&(i, j, a, b), outcome) in crossings.iter().zip(outcomes) {
            match outcome {
                MarginRoot::Root(r) => {
                    cells.roots[i][j] = Some(r);
                    if j < 2 * self.levels.len() {
                        // With a witnessed node, whose passing margin is a lower bound,
                        // the slope is underestimated and the spread overstated.
                        let slope = (b.1 - a.1).abs() / (b.0 - a.0);
                        let spread = self.prep.size_resolution / slope;
                        cells.end_spread = cells.end_spread.max(spread);
                    }
                }
                MarginRoot::Met(other) => cells.failures.push(Failure {
                    low: a.0,
                    high: b.0,
                    evaluated_below: Some(a.0),
                    evaluated_above: Some(b.0),
                    error: format!(
                        "the prediction changed to '{}' between grid points while refining a \
                         bound end",
                        match other {
                            Aggregate::Failed(m) => m,
                            Aggregate::NoShadow(r) => format!("no shadow: {r}"),
                            Aggregate::NoHorizon => "no horizon".into(),
                            Aggregate::Ok(_) => unreachable!(),
                        }
                    ),
                }),
                MarginRoot::NotConverged(e) => {
                    return Err(BoundError::NotConverged(format!(
                        "refining a bound end of '{}' failed: {e}",
                        self.prep.request.vary.name
                    )))
                }
                // Only a stopped evaluator leaves a search without answers, handled above.
                MarginRoot::Stopped => unreachable!("the evaluator stopped without a reason"),
            }
        }
        Ok(cells)
    }
}

/// How the search for a margin's root between two nodes ended.
enum MarginRoot {
    /// The margin crosses zero here.
    Root(f64),
    /// Another category was met on the way (the cell is reported whole).
    Met(Aggregate),
    /// The root search did not converge.
    NotConverged(crate::numerics::RootError),
    /// The evaluator stopped.
    Stopped,
}

/// Where `margin` crosses zero between the nodes `a` and `b` (each with its margin), by
/// Brent's method, the full search asked of `ask` at each value (`None`: the evaluator
/// stopped); the search stops at a margin within `ftol` of zero.
fn margin_root(
    ask: &mut dyn FnMut(f64) -> Option<Aggregate>,
    margin: impl Fn(&super::nuisance::Extremes) -> f64,
    (a, margin_a): (f64, f64),
    (b, margin_b): (f64, f64),
    xtol: f64,
    ftol: f64,
) -> MarginRoot {
    let mut met = None;
    let mut stopped = false;
    let root = brent_root_within(
        // Once another category was met (the cell is then reported whole) or the evaluator
        // stopped, the root is not used: nothing more is evaluated.
        |x| {
            if met.is_some() || stopped {
                return f64::NAN;
            }
            // The full search: the margin's value, not only its sign, steers the search and
            // ends it within the curves' resolution. A value witnessed despite a failed grid
            // point has no full search: a failure met on the way.
            match ask(x) {
                Some(Aggregate::Ok(e)) if e.witnessed => {
                    let m = e
                        .failure_passed_over
                        .unwrap_or_else(|| "the nuisance extremes were not searched".to_string());
                    met = Some(Aggregate::Failed(m));
                    f64::NAN
                }
                Some(Aggregate::Ok(e)) => margin(&e),
                Some(other) => {
                    met = Some(other);
                    f64::NAN
                }
                None => {
                    stopped = true;
                    f64::NAN
                }
            }
        },
        // The nodes' margins are known: neither is evaluated again. A witnessed node's is a
        // lower bound of a passing margin: its sign is exact, and only the first
        // interpolation steps are less direct.
        (a, Some(margin_a)),
        (b, Some(margin_b)),
        xtol,
        ftol,
    );
    match (stopped, met, root) {
        (true, _, _) => MarginRoot::Stopped,
        (false, Some(other), _) => MarginRoot::Met(other),
        (false, None, Ok(r)) => MarginRoot::Root(r),
        (false, None, Err(e)) => MarginRoot::NotConverged(e),
    }
}

fn margin_count(levels: &[[f64; 2]], cmax: Option<f64>) -> usize {
    2 * levels.len() + usize::from(cmax.is_some())
}

/// Points to add where a parabola through three adjacent Ok nodes suggests a margin crosses
/// zero and back between them.
fn hidden_crossing_candidates(nodes: &[Node], levels: &[[f64; 2]], cmax: Option<f64>) -> Vec<f64> {
    let mut out = Vec::new();
    for w in nodes.windows(3) {
        let (Aggregate::Ok(a), Aggregate::Ok(b), Aggregate::Ok(c)) =
            (&w[0].value, &w[1].value, &w[2].value)
        else {
            continue;
        };
        // A witnessed value's margins are lower bounds from some of its nuisance points, not
        // the function the parabola would interpolate.
        if a.witnessed || b.witnessed || c.witnessed {
            continue;
        }
        let (ma, mb, mc) = (
            margins(a, levels, cmax),
            margins(b, levels, cmax),
            margins(c, levels, cmax),
        );
        let (x0, x1, x2) = (w[0].x, w[1].x, w[2].x);
        for j in 0..ma.len() {
            let (y0, y1, y2) = (ma[j], mb[j], mc[j]);
            if !(y0.is_finite() && y1.is_finite() && y2.is_finite()) {
                continue;
            }
            if !(passes(y0) == passes(y1) && passes(y1) == passes(y2)) {
                continue;
            }
            // Divided differences of the interpolating parabola.
            let d01 = (y1 - y0) / (x1 - x0);
            let d12 = (y2 - y1) / (x2 - x1);
            let curvature = (d12 - d01) / (x2 - x0);
            if curvature == 0.0 {
                continue;
            }
            let slope_at_x1 = d01 + curvature * (x1 - x0);
            let xv = x1 - slope_at_x1 / (2.0 * curvature);
            if !(xv > x0 && xv < x2) {
                continue;
            }
            let yv = y1 - slope_at_x1 * slope_at_x1 / (4.0 * curvature);
            if passes(yv) != passes(y1) {
                out.push(xv);
                out.push(0.5 * (x0 + x1));
                out.push(0.5 * (x1 + x2));
            }
        }
    }
    out.sort_by(f64::total_cmp);
    out.dedup();
    out.retain(|x| !nodes.iter().any(|n| n.x == *x));
    out
}

/// The refined nodes with the margins' roots between them.
struct Frame<'f> {
    nodes: &'f [Node],
    cells: &'f Cells,
    /// Cells where the prediction changed category while a root was refined.
    failed_cells: Vec<bool>,
    levels: &'f [[f64; 2]],
    cmax: Option<f64>,
}

impl Frame<'_> {
    /// The allowed set at level `l` (r_sh/M in `interval`).
    fn level_bound(&self, l: usize, interval: [f64; 2], confidence: f64) -> LevelBound {
        let Frame {
            nodes,
            cells,
            ref failed_cells,
            levels,
            cmax,
        } = *self;
        let ids = level_margins(l, margin_count(levels, cmax), cmax.is_some());
        let mut segments: Vec<[f64; 2]> = Vec::new();
        for i in 0..cells.roots.len() {
            let (Aggregate::Ok(ea), Aggregate::Ok(eb)) = (&nodes[i].value, &nodes[i + 1].value)
            else {
                continue;
            };
            if failed_cells[i] {
                continue;
            }
            let (ma, mb) = (margins(ea, levels, cmax), margins(eb, levels, cmax));
            let mut cuts: Vec<f64> = ids.iter().filter_map(|&j| cells.roots[i][j]).collect();
            cuts.push(nodes[i].x);
            cuts.push(nodes[i + 1].x);
            cuts.sort_by(f64::total_cmp);
            cuts.dedup();
            for w in cuts.windows(2) {
                let mid = 0.5 * (w[0] + w[1]);
                let ok = ids.iter().all(|&j| {
                    let status = |m: f64| m.is_finite() && passes(m);
                    match cells.roots[i][j] {
                        Some(r) if mid < r => status(ma[j]),
                        Some(_) => status(mb[j]),
                        None if ma[j].is_finite() => status(ma[j]),
                        None => status(mb[j]),
                    }
                });
                if ok {
                    match segments.last_mut() {
                        Some(last) if last[1] == w[0] => last[1] = w[1],
                        _ => segments.push([w[0], w[1]]),
                    }
                }
            }
        }
        // An allowed Ok node isolated between other categories.
        for (i, n) in nodes.iter().enumerate() {
            if let Aggregate::Ok(e) = &n.value {
                let isolated = (i == 0 || category(&nodes[i - 1].value) != 0)
                    && (i + 1 == nodes.len() || category(&nodes[i + 1].value) != 0);
                let m = margins(e, levels, cmax);
                if isolated && ids.iter().all(|&j| passes(m[j])) {
                    segments.push([n.x, n.x]);
                }
            }
        }
        segments.sort_by(|a, b| a[0].total_cmp(&b[0]));
        LevelBound {
            confidence,
            radius_interval: interval,
            allowed: segments,
            only_range_ends: false, // set once the range edges are known
        }
    }
}

/// Runs of adjacent nodes where `pick` holds, as ranges of the varied parameter.
fn runs_of(nodes: &[Node], pick: &dyn Fn(&Aggregate) -> bool) -> Vec<[f64; 2]> {
    let mut out: Vec<[f64; 2]> = Vec::new();
    let mut prev = false;
    for n in nodes {
        let this = pick(&n.value);
        if this {
            if prev {
                if let Some(last) = out.last_mut() {
                    last[1] = n.x;
                }
            } else {
                out.push([n.x, n.x]);
            }
        }
        prev = this;
    }
    out
}

/// The cells' failures and the failed nodes, adjacent failed nodes with the same message
/// joined, each with the nearest values around it whose evaluation did not fail, in
/// increasing order.
fn all_failures(nodes: &[Node], mut failures: Vec<Failure>) -> Vec<Failure> {
    let evaluated = |i: usize| (!is_failed(&nodes[i].value)).then_some(nodes[i].x);
    let below = |i: usize| (0..i).rev().find_map(evaluated);
    let above = |i: usize| (i + 1..nodes.len()).find_map(evaluated);
    let mut prev_failed = false;
    for (i, n) in nodes.iter().enumerate() {
        if let Aggregate::Failed(m) = &n.value {
            match failures.last_mut() {
                Some(f) if prev_failed && f.error == *m => {
                    f.high = n.x;
                    f.evaluated_above = above(i);
                }
                _ => failures.push(Failure {
                    low: n.x,
                    high: n.x,
                    error: m.clone(),
                    evaluated_below: below(i),
                    evaluated_above: above(i),
                }),
            }
            prev_failed = true;
        } else {
            prev_failed = false;
        }
    }
    failures.sort_by(|a, b| a.low.total_cmp(&b.low));
    failures
}

/// The assumptions, with what the nodes add (a partial nuisance box, refinements cut short
/// by a solver failure, steps back from a horizon boundary), and the values where a failure
/// cut a refinement short.
fn assumptions(prep: &Prepared, nodes: &[Node]) -> (Vec<String>, Vec<f64>) {
    let partial = nodes
        .iter()
        .any(|n| matches!(&n.value, Aggregate::Ok(e) if e.partial));
    let backoff = nodes
        .iter()
        .map(|n| match &n.value {
            Aggregate::Ok(e) => e.wall_backoff,
            _ => 0.0,
        })
        .fold(0.0, f64::max);
    let failure_edge = nodes
        .windows(2)
        .any(|w| is_failed(&w[0].value) != is_failed(&w[1].value));
    let mut assumptions = describe(prep, partial, nodes.len(), failure_edge);
    let cut: Vec<(f64, &str)> = nodes
        .iter()
        .filter_map(|n| match &n.value {
            Aggregate::Ok(e) => e.refinement_cut.as_deref().map(|m| (n.x, m)),
            _ => None,
        })
        .collect();
    if let Some(&(x, m)) = cut.first() {
        assumptions.push(format!(
            "the shadow solver failed at off-grid nuisance refinement points for {} grid \
             value(s) of {} (first at {x}: {m}); there the extremes are the best found before \
             the failure, so those bound ends are less precise",
            cut.len(),
            prep.request.vary.name
        ));
    }
    let witnessed: Vec<&Node> = nodes
        .iter()
        .filter(|n| matches!(&n.value, Aggregate::Ok(e) if e.witnessed))
        .collect();
    let name = &prep.request.vary.name;
    if !witnessed.is_empty() && !prep.request.settings.full_extremes {
        assumptions.push(format!(
            "{} of {} values of {name} were decided allowed at every level by the nuisance \
             points evaluated first (coarse to fine through the grid, stopping at a size \
             inside each interval, or sizes on both sides of it, with ΔC under its limit): \
             their extremes were not searched (the JSON's `predicted` lists them as \
             witnessed), and no double crossing was looked for next to them; --full-extremes \
             searches every value",
            witnessed.len(),
            nodes.len(),
        ));
    }
    let passed_over: Vec<(f64, &str)> = witnessed
        .iter()
        .filter_map(|n| match &n.value {
            Aggregate::Ok(e) => e.failure_passed_over.as_deref().map(|m| (n.x, m)),
            _ => None,
        })
        .collect();
    if let Some(&(x, m)) = passed_over.first() {
        assumptions.push(format!(
            "the shadow solver failed at some nuisance grid points of {} value(s) of {name}, \
             which other points decided allowed at every level (their extremes were not \
             searched; the JSON's `predicted` lists them as witnessed, with the failure; first \
             at {x}: {m})",
            passed_over.len(),
        ));
    }
    if backoff > 0.0 {
        assumptions.push(format!(
            "the shadow solver failed right at a horizon boundary inside the nuisance box; the \
             closest successful point was used, at most {backoff:.3e} inside"
        ));
    }
    (assumptions, cut.iter().map(|(x, _)| *x).collect())
}

/// Every node as reported.
fn predicted(nodes: &[Node]) -> Vec<PredictedPoint> {
    nodes
        .iter()
        .map(|n| {
            let (status, e) = match &n.value {
                Aggregate::Ok(e) => ("ok", Some(e)),
                Aggregate::NoHorizon => ("no_horizon", None),
                Aggregate::NoShadow(_) => ("no_shadow", None),
                Aggregate::Failed(_) => ("failed", None),
            };
            let finite = |v: f64| v.is_finite().then_some(v);
            let witnessed = e.is_some_and(|e| e.witnessed);
            let searched = e.filter(|_| !witnessed);
            PredictedPoint {
                value: n.x,
                status,
                horizonless: horizonless(&n.value),
                size_min: searched.and_then(|e| finite(e.size_min)),
                size_max: searched.and_then(|e| finite(e.size_max)),
                circularity_min: searched.and_then(|e| finite(e.circularity_min)),
                witnessed,
                witnessed_sizes: e.filter(|_| witnessed).map(|e| [e.size_min, e.size_max]),
                failure_passed_over: e.and_then(|e| e.failure_passed_over.clone()),
            }
        })
        .collect()
}

/// The bound from the refined nodes and the roots between them.
pub(super) fn result(
    prep: &Prepared,
    nodes: &[Node],
    cells: Cells,
    levels: &[[f64; 2]],
    cmax: Option<f64>,
) -> BoundResult {
    let request = prep.request;
    let frame = Frame {
        nodes,
        cells: &cells,
        failed_cells: (0..cells.roots.len())
            .map(|i| {
                cells
                    .failures
                    .iter()
                    .any(|f| f.low == nodes[i].x && f.high == nodes[i + 1].x)
            })
            .collect(),
        levels,
        cmax,
    };
    let level_bounds = request
        .radii
        .intervals
        .iter()
        .enumerate()
        .map(|(l, iv)| frame.level_bound(l, [iv.low, iv.high], iv.confidence))
        .collect();
    let (mut assumptions, refinement_cut) = assumptions(prep, nodes);
    if cells.end_spread > 0.0 {
        assumptions.push(format!(
            "bound ends of {} from a size margin: known to about ±{:.1e} (the curves' \
             resolution {:e} M over the smallest slope of the size at such an end, estimated \
             across its grid cell, and underestimated where a witnessed value bounds the \
             cell), whatever the number of decimals printed",
            request.vary.name, cells.end_spread, prep.size_resolution
        ));
    }
    let mut result = BoundResult {
        metric: request.metric.name(),
        vary: request.vary.clone(),
        fixed: request.fixed.iter().cloned().collect(),
        nuisance: request.nuisance.clone(),
        inclination: request.inclination,
        size_measure: request.size_measure,
        levels: level_bounds,
        circularity_max: cmax,
        require_horizon: request.settings.require_horizon,
        horizonless: runs_of(nodes, &horizonless),
        no_horizon: runs_of(nodes, &|a| category(a) == 1),
        no_shadow: runs_of(nodes, &|a| category(a) == 2),
        failures: all_failures(nodes, cells.failures),
        refinement_cut,
        assumptions,
        predicted: predicted(nodes),
    };
    let ends: Vec<bool> = result
        .levels
        .iter()
        .map(|l| result.only_range_ends(&l.allowed))
        .collect();
    for (level, only) in result.levels.iter_mut().zip(ends) {
        level.only_range_ends = only;
    }
    snap_horizon_edges(prep, &mut result);
    result
}

/// A horizon edge found by bisection (to about 1e-8) that sits on a short decimal (7
/// significant digits, e.g. the extremal q = 1 of Reissner–Nordström) is moved onto it when
/// the metric confirms it there: a horizon at the decimal and none just past it (1e-10
/// further). Ends of allowed ranges on that edge move with it. Only without nuisance
/// parameters, where the edge is the metric's own and not the edge of a nuisance box.
fn snap_horizon_edges(prep: &Prepared, result: &mut BoundResult) {
    let request = prep.request;
    if !request.nuisance.is_empty() {
        return;
    }
    let has_horizon = |x: f64| {
        let mut assignments = request.fixed.clone();
        assignments.push((request.vary.name.clone(), x));
        request
            .metric
            .build(&assignments)
            .map(|m| {
                matches!(
                    m.classify(),
                    crate::metric::Classification::BlackHole { .. }
                )
            })
            .unwrap_or(false)
    };
    let (lo, hi) = (request.vary.low, request.vary.high);
    let mut moved: Vec<(f64, f64)> = Vec::new();
    for range in result.no_horizon.iter_mut() {
        for (k, outward) in [(0usize, 1.0f64), (1, -1.0)] {
            let y = range[k];
            if y == lo || y == hi {
                continue;
            }
            let Ok(c) = format!("{y:.6e}").parse::<f64>() else {
                continue;
            };
            // `outward` points into the range without a horizon.
            let step = 1e-10 * (1.0 + c.abs());
            if c != y
                && (c - y).abs() <= 1e-7 * (1.0 + y.abs())
                && has_horizon(c)
                && !has_horizon(c + outward * step)
            {
                range[k] = c;
                moved.push((y, c));
            }
        }
    }
    for level in result.levels.iter_mut() {
        for range in level.allowed.iter_mut() {
            for end in range.iter_mut() {
                // The same nearness as `BoundResult::end_kind` uses for a horizon edge.
                let near = |y: f64| (*end - y).abs() <= 1e-6 * (1.0 + y.abs());
                if let Some(&(_, c)) = moved.iter().find(|(y, _)| near(*y)) {
                    *end = c;
                }
            }
        }
    }
}
