//! Adaptive refinement of a finished two-axis scan for exclusion maps: every grid cell where
//! an allowed region ends (the allowed margin changes sign at some level) or where the point
//! status changes (shadow, no horizon, no shadow, failed) is split `factor` × `factor` and its
//! new points computed; cells whose corners agree are filled by bilinear interpolation of the
//! corner margins, which keeps their sign. The edge of the horizon's existence is traced on
//! the same fine grid by bisection of the metric's own classification along every fine grid
//! line that crosses it, so it is exact to the bisection's tolerance at every crossing
//! (a method of our own).
//!
//! The fine grid's fields are ready for marching squares: [`RefinedMap::allowed_field`] is
//! the allowed margin (non-negative allowed), [`RefinedMap::horizon_field`] the signed
//! distance to the horizon edge along the grid lines, in fine steps (positive with a horizon).

use super::{compute_point, grid_point, GridAxis, ScanPoint, ScanRequest};
use crate::bounds::{allowed_margin, SizeMeasure};
use crate::metric::Classification;
use crate::observables::Quantity;
use crate::run::{Controls, Executor, RunError, Selection, WorkList};
use std::collections::HashMap;

/// What to refine for.
#[derive(Debug, Clone, PartialEq)]
pub struct RefineRequest {
    /// Fine steps per coarse step (1 refines nothing).
    pub factor: usize,
    /// The size compared with the measured intervals.
    pub measure: SizeMeasure,
    /// The measured intervals of r_sh/M, one per level.
    pub intervals: Vec<[f64; 2]>,
    /// The upper limit on the circularity deviation, if any.
    pub circularity_max: Option<f64>,
}

/// One node of the fine grid.
#[derive(Debug, Clone, PartialEq)]
pub enum FineNode {
    /// A computed point (a coarse grid point or a refined one); boxed, as most nodes are
    /// interpolated.
    Point(Box<ScanPoint>),
    /// Inside a cell whose corners agree: interpolated.
    Interpolated,
}

/// A two-axis scan refined near the edges of its regions.
#[derive(Debug, Clone, PartialEq)]
pub struct RefinedMap {
    /// The fine grid's first-axis values.
    pub x: Vec<f64>,
    /// The fine grid's second-axis values.
    pub y: Vec<f64>,
    /// The fine nodes, row-major with the first axis fastest.
    pub nodes: Vec<FineNode>,
    /// The allowed margin at each level on the fine grid (row-major, first axis fastest);
    /// non-negative is allowed. Beside the horizon edge (nodes of no horizon, and nodes with
    /// one within a fine step) the field follows the edge's distance instead, so that its
    /// zero crossing there is the traced edge; other nodes without a shadow are −1.
    pub allowed: Vec<Vec<f64>>,
    /// The signed distance to the horizon edge along the grid lines, in fine steps, capped at
    /// ±1: positive where the metric has a horizon.
    pub horizon: Vec<f64>,
    /// The horizon edge as polylines in parameter space (bisected crossings of fine grid
    /// lines, joined cell by cell).
    pub horizon_edge: Vec<Vec<(f64, f64)>>,
    /// Points computed by the refinement.
    pub computed: usize,
}

impl RefinedMap {
    /// The allowed field of level `k` ([`RefinedMap::allowed`]).
    pub fn allowed_field(&self, k: usize) -> &[f64] {
        &self.allowed[k]
    }

    /// The horizon field ([`RefinedMap::horizon`]).
    pub fn horizon_field(&self) -> &[f64] {
        &self.horizon
    }

    /// Nodes with a computed point of `status`, as parameter-space positions.
    pub fn points_with_status(&self, status: &str) -> Vec<(f64, f64)> {
        let nx = self.x.len();
        self.nodes
            .iter()
            .enumerate()
            .filter_map(|(k, n)| match n {
                FineNode::Point(p) if p.status == status => Some((self.x[k % nx], self.y[k / nx])),
                _ => None,
            })
            .collect()
    }
}

/// Why a refinement could not finish.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum RefineError {
    /// Not a two-axis scan, or points missing.
    #[error("an exclusion map needs the finished points of a two-axis scan")]
    NotTwoAxes,
    /// Stopped by the stop flag.
    #[error("stopped after {done} of {total} refinement points")]
    Interrupted {
        /// Points finished.
        done: usize,
        /// Points in the refinement.
        total: usize,
    },
}

/// The fine-grid values of one coarse axis, `factor` steps per coarse step.
fn fine_axis(axis: &GridAxis, factor: usize) -> Vec<f64> {
    let mut out = Vec::with_capacity((axis.count - 1) * factor + 1);
    for c in 0..axis.count - 1 {
        let (a, b) = (axis.value(c), axis.value(c + 1));
        for l in 0..factor {
            out.push(if l == 0 {
                a
            } else {
                a + (b - a) * l as f64 / factor as f64
            });
        }
    }
    out.push(axis.value(axis.count - 1));
    out
}

/// The coarse cell of fine index `f` and its local index (a node on a cell edge belongs to
/// the cell above it, except at the last node).
fn cell_of(f: usize, factor: usize, count: usize) -> (usize, usize) {
    let c = (f / factor).min(count - 2);
    (c, f - c * factor)
}

/// A request for the one cell `(ci, cj)` split `factor` times: its points are the fine nodes.
fn cell_request(request: &ScanRequest, (ci, cj): (usize, usize), factor: usize) -> ScanRequest {
    let (ax, ay) = (&request.axes[0], &request.axes[1]);
    let mut cell = request.clone();
    cell.axes = vec![
        GridAxis::new(&ax.name, ax.value(ci), ax.value(ci + 1), factor + 1),
        GridAxis::new(&ay.name, ay.value(cj), ay.value(cj + 1), factor + 1),
    ];
    cell
}

/// Whether the metric at the fine node has a horizon (false when it does not build).
fn has_horizon_at(request: &ScanRequest, (x, y): (f64, f64)) -> bool {
    let mut single = request.clone();
    single.axes = vec![
        GridAxis::new(&request.axes[0].name, x, x, 1),
        GridAxis::new(&request.axes[1].name, y, y, 1),
    ];
    match grid_point(&single, &[0, 0]).1 {
        Ok(m) => matches!(m.classify(), Classification::BlackHole { .. }),
        Err(_) => false,
    }
}

/// A fine node to compute: its fine index, its coarse cell and its index in the cell.
type FineTask = (usize, (usize, usize), (usize, usize));

/// The fine nodes to compute.
struct Refinement<'r> {
    request: &'r ScanRequest,
    factor: usize,
    nodes: Vec<FineTask>,
}

impl WorkList for Refinement<'_> {
    type Output = ScanPoint;
    fn len(&self) -> usize {
        self.nodes.len()
    }
    fn key(&self, index: usize) -> String {
        self.nodes[index].0.to_string()
    }
    fn run(&self, index: usize) -> ScanPoint {
        let (_, cell, local) = self.nodes[index];
        compute_point(
            &cell_request(self.request, cell, self.factor),
            &[local.0, local.1],
        )
    }
}

/// The allowed margin of a point at one level (−1 without a shadow or size).
fn margin(p: &ScanPoint, refine: &RefineRequest, interval: [f64; 2]) -> f64 {
    match p.quantity(refine.measure.quantity()) {
        Some(s) if p.status == "shadow" => allowed_margin(
            s,
            p.quantity(Quantity::CircularityDeviation),
            interval,
            refine.circularity_max,
        ),
        _ => -1.0,
    }
}

/// Refine the finished `points` of the two-axis scan `request` (grid order, last axis
/// fastest), running the new points on an executor with `controls`.
pub fn refine(
    request: &ScanRequest,
    points: &[ScanPoint],
    refine: &RefineRequest,
    controls: Controls<'_>,
) -> Result<RefinedMap, RefineError> {
    if request.axes.len() != 2 {
        return Err(RefineError::NotTwoAxes);
    }
    let (ax, ay) = (&request.axes[0], &request.axes[1]);
    if points.len() != ax.count * ay.count || ax.count < 2 || ay.count < 2 {
        return Err(RefineError::NotTwoAxes);
    }
    let r = refine.factor.max(1);
    let (x, y) = (fine_axis(ax, r), fine_axis(ay, r));
    let (nx, ny) = (x.len(), y.len());
    let coarse = |i: usize, j: usize| &points[i * ay.count + j];
    let levels = refine.intervals.len();
    // Cells to split: any level's margin changes sign, or the status changes.
    let mut split = vec![false; (ax.count - 1) * (ay.count - 1)];
    for cj in 0..ay.count - 1 {
        for ci in 0..ax.count - 1 {
            let corners = [
                coarse(ci, cj),
                coarse(ci + 1, cj),
                coarse(ci, cj + 1),
                coarse(ci + 1, cj + 1),
            ];
            let status_changes = corners.iter().any(|p| p.status != corners[0].status);
            let sign_changes = refine.intervals.iter().any(|&iv| {
                let allowed: Vec<bool> = corners
                    .iter()
                    .map(|p| margin(p, refine, iv) >= 0.0)
                    .collect();
                allowed.iter().any(|&a| a != allowed[0])
            });
            split[cj * (ax.count - 1) + ci] = r > 1 && (status_changes || sign_changes);
        }
    }
    let is_split = |ci: usize, cj: usize| split[cj * (ax.count - 1) + ci];
    // Every fine node of a split cell that is not a coarse node, once.
    let mut todo = Vec::new();
    for fj in 0..ny {
        for fi in 0..nx {
            if fi.is_multiple_of(r) && fj.is_multiple_of(r) {
                continue;
            }
            let touching = cells_touching(fi, fj, r, (ax.count, ay.count));
            if touching.iter().any(|&(ci, cj)| is_split(ci, cj)) {
                let (ci, li) = cell_of(fi, r, ax.count);
                let (cj, lj) = cell_of(fj, r, ay.count);
                todo.push((fj * nx + fi, (ci, cj), (li, lj)));
            }
        }
    }
    let work = Refinement {
        request,
        factor: r,
        nodes: todo,
    };
    let total = work.len();
    let batch = Executor::new("refinement", "points")
        .with(controls)
        .run(&work, &Selection::All)
        .map_err(|e| match e {
            RunError::Interrupted { done, .. } => RefineError::Interrupted { done, total },
            RunError::Checkpoint(_) => RefineError::Interrupted { done: 0, total },
        })?;
    let mut nodes = vec![FineNode::Interpolated; nx * ny];
    for cj in 0..ay.count {
        for ci in 0..ax.count {
            nodes[cj * r * nx + ci * r] = FineNode::Point(Box::new(coarse(ci, cj).clone()));
        }
    }
    for (&(k, _, _), p) in work.nodes.iter().zip(batch.outputs) {
        nodes[k] = FineNode::Point(Box::new(p));
    }
    let horizon_trace = trace_horizon(request, (&x, &y), r, (ax.count, ay.count));
    let scale = margin_scale(&nodes, refine, (nx, ny));
    let mut allowed = Vec::with_capacity(levels);
    for &iv in &refine.intervals {
        let mut field = vec![0.0; nx * ny];
        for fj in 0..ny {
            for fi in 0..nx {
                let k = fj * nx + fi;
                let h = horizon_trace.field[k];
                field[k] = match &nodes[k] {
                    FineNode::Point(p) if p.status == "no_horizon" => (scale * h).min(-1e-12),
                    // Beside the horizon edge: the edge's own distance, so the allowed
                    // region ends where the horizon does, not at the next node.
                    FineNode::Point(p) if h > 0.0 && h < 1.0 => {
                        margin(p, refine, iv).min(scale * h)
                    }
                    FineNode::Point(p) => margin(p, refine, iv),
                    FineNode::Interpolated => {
                        let (ci, li) = cell_of(fi, r, ax.count);
                        let (cj, lj) = cell_of(fj, r, ay.count);
                        let (u, v) = (li as f64 / r as f64, lj as f64 / r as f64);
                        let m = |i: usize, j: usize| margin(coarse(i, j), refine, iv);
                        (1.0 - u) * (1.0 - v) * m(ci, cj)
                            + u * (1.0 - v) * m(ci + 1, cj)
                            + (1.0 - u) * v * m(ci, cj + 1)
                            + u * v * m(ci + 1, cj + 1)
                    }
                };
            }
        }
        allowed.push(field);
    }
    Ok(RefinedMap {
        x,
        y,
        nodes,
        allowed,
        horizon: horizon_trace.field,
        horizon_edge: horizon_trace.edge,
        computed: total,
    })
}

/// The coarse cells a fine node touches.
fn cells_touching(fi: usize, fj: usize, r: usize, (cx, cy): (usize, usize)) -> Vec<(usize, usize)> {
    let range = |f: usize, count: usize| -> Vec<usize> {
        let c = f / r;
        if f.is_multiple_of(r) {
            [c.checked_sub(1), (c < count - 1).then_some(c)]
                .into_iter()
                .flatten()
                .collect()
        } else {
            vec![c]
        }
    };
    let mut out = Vec::new();
    for cj in range(fj, cy) {
        for ci in range(fi, cx) {
            out.push((ci, cj));
        }
    }
    out
}

/// The typical change of the allowed margin over one fine step, so that the horizon field
/// continues it across the horizon edge on the same scale (the median over neighbouring
/// computed shadow points; 1 if there are none).
fn margin_scale(nodes: &[FineNode], refine: &RefineRequest, (nx, ny): (usize, usize)) -> f64 {
    let Some(&iv) = refine.intervals.first() else {
        return 1.0;
    };
    let value = |k: usize| match &nodes[k] {
        FineNode::Point(p) if p.status == "shadow" => Some(margin(p, refine, iv)),
        _ => None,
    };
    let mut steps = Vec::new();
    for fj in 0..ny {
        for fi in 0..nx {
            let k = fj * nx + fi;
            let Some(a) = value(k) else { continue };
            if fi + 1 < nx {
                if let Some(b) = value(k + 1) {
                    steps.push((a - b).abs());
                }
            }
            if fj + 1 < ny {
                if let Some(b) = value(k + nx) {
                    steps.push((a - b).abs());
                }
            }
        }
    }
    steps.retain(|s| *s > 0.0);
    if steps.is_empty() {
        return 1.0;
    }
    steps.sort_by(f64::total_cmp);
    steps[steps.len() / 2]
}

struct HorizonTrace {
    field: Vec<f64>,
    edge: Vec<Vec<(f64, f64)>>,
}

/// Bisection of the classification between two nodes; the crossing's fraction from `a`.
fn bisect(request: &ScanRequest, a: (f64, f64), b: (f64, f64), at_a: bool) -> f64 {
    let (mut lo, mut hi) = (0.0f64, 1.0f64);
    for _ in 0..48 {
        let mid = 0.5 * (lo + hi);
        let p = (a.0 + (b.0 - a.0) * mid, a.1 + (b.1 - a.1) * mid);
        if has_horizon_at(request, p) == at_a {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    0.5 * (lo + hi)
}

/// The horizon's existence on the fine grid, its signed distance field and its edge.
fn trace_horizon(
    request: &ScanRequest,
    (x, y): (&[f64], &[f64]),
    r: usize,
    (cx, cy): (usize, usize),
) -> HorizonTrace {
    let (nx, ny) = (x.len(), y.len());
    // Classify the coarse nodes; refine only the cells whose corners disagree.
    let coarse: Vec<bool> = (0..cx * cy)
        .map(|k| has_horizon_at(request, (x[(k % cx) * r], y[(k / cx) * r])))
        .collect();
    let mut has: Vec<Option<bool>> = vec![None; nx * ny];
    for cj in 0..cy - 1 {
        for ci in 0..cx - 1 {
            let c = |i: usize, j: usize| coarse[j * cx + i];
            let corners = [c(ci, cj), c(ci + 1, cj), c(ci, cj + 1), c(ci + 1, cj + 1)];
            let mixed = corners.iter().any(|&h| h != corners[0]);
            for lj in 0..=r {
                for li in 0..=r {
                    let k = (cj * r + lj) * nx + ci * r + li;
                    if has[k].is_some() {
                        continue;
                    }
                    has[k] = Some(if !mixed {
                        corners[0]
                    } else if li.is_multiple_of(r) && lj.is_multiple_of(r) {
                        c(ci + li / r, cj + lj / r)
                    } else {
                        has_horizon_at(request, (x[ci * r + li], y[cj * r + lj]))
                    });
                }
            }
        }
    }
    let has: Vec<bool> = has.into_iter().map(|h| h.unwrap_or(false)).collect();
    // Crossings on every fine grid line segment between nodes that disagree.
    let mut crossing: HashMap<(usize, usize), f64> = HashMap::new(); // (node, 0 = +x / 1 = +y)
    let mut distance = vec![1.0f64; nx * ny];
    for fj in 0..ny {
        for fi in 0..nx {
            let k = fj * nx + fi;
            for (dir, next) in [
                (0usize, (fi + 1 < nx).then(|| k + 1)),
                (1, (fj + 1 < ny).then(|| k + nx)),
            ] {
                let Some(n) = next else { continue };
                if has[k] == has[n] {
                    continue;
                }
                let a = (x[fi], y[fj]);
                let b = (x[n % nx], y[n / nx]);
                let t = bisect(request, a, b, has[k]);
                crossing.insert((k, dir), t);
                distance[k] = distance[k].min(t);
                distance[n] = distance[n].min(1.0 - t);
            }
        }
    }
    let field: Vec<f64> = (0..nx * ny)
        .map(|k| if has[k] { distance[k] } else { -distance[k] })
        .collect();
    // The edge: per fine cell, join its crossings (a saddle pairs by the centre's side).
    let point = |&(k, dir): &(usize, usize)| -> (f64, f64) {
        let t = crossing[&(k, dir)];
        let (fi, fj) = (k % nx, k / nx);
        if dir == 0 {
            (x[fi] + (x[fi + 1] - x[fi]) * t, y[fj])
        } else {
            (x[fi], y[fj] + (y[fj + 1] - y[fj]) * t)
        }
    };
    let mut segments: Vec<[(usize, usize); 2]> = Vec::new();
    for fj in 0..ny.saturating_sub(1) {
        for fi in 0..nx.saturating_sub(1) {
            let k = fj * nx + fi;
            // Edges in order around the cell: bottom, right, top, left.
            let edges = [(k, 0), (k + 1, 1), (k + nx, 0), (k, 1)];
            let hits: Vec<(usize, usize)> = edges
                .iter()
                .copied()
                .filter(|e| crossing.contains_key(e))
                .collect();
            match hits.len() {
                2 => segments.push([hits[0], hits[1]]),
                4 => {
                    let centre = (0.5 * (x[fi] + x[fi + 1]), 0.5 * (y[fj] + y[fj + 1]));
                    // The centre on the bottom-left corner's side: cut off the other two
                    // corners (bottom-right, top-left): join bottom-right and top-left pairs.
                    if has_horizon_at(request, centre) == has[k] {
                        segments.push([hits[0], hits[1]]);
                        segments.push([hits[2], hits[3]]);
                    } else {
                        segments.push([hits[3], hits[0]]);
                        segments.push([hits[1], hits[2]]);
                    }
                }
                _ => {}
            }
        }
    }
    let edge = chain(&segments)
        .iter()
        .map(|line| line.iter().map(point).collect())
        .collect();
    HorizonTrace { field, edge }
}

/// Join segments that share ends into polylines.
fn chain(segments: &[[(usize, usize); 2]]) -> Vec<Vec<(usize, usize)>> {
    let mut at: HashMap<(usize, usize), Vec<usize>> = HashMap::new();
    for (s, seg) in segments.iter().enumerate() {
        for e in seg {
            at.entry(*e).or_default().push(s);
        }
    }
    let mut used = vec![false; segments.len()];
    let mut lines = Vec::new();
    // Start from open ends first, then close the remaining loops.
    let mut starts: Vec<usize> = (0..segments.len())
        .filter(|&s| segments[s].iter().any(|e| at[e].len() == 1))
        .collect();
    starts.extend(0..segments.len());
    for s in starts {
        if used[s] {
            continue;
        }
        used[s] = true;
        let [a, b] = segments[s];
        let (first, mut end) = if at[&a].len() == 1 { (a, b) } else { (b, a) };
        let mut line = vec![first, end];
        while let Some(&next) = at[&end].iter().find(|&&t| !used[t]) {
            used[next] = true;
            let [p, q] = segments[next];
            end = if p == end { q } else { p };
            line.push(end);
        }
        lines.push(line);
    }
    lines
}
