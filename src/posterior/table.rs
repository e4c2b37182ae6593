//! Interpolated shadow tables: the likelihood of a metric whose shadow needs the ray tracer.
//!
//! Ray tracing one critical curve takes about a second, so a posterior that needs hundreds of
//! thousands of likelihood evaluations cannot trace at every sample. Instead the size (and the
//! circularity deviation, if a source needs it) is tabulated on a uniform grid over the box of
//! the sampled parameters that determine a source's shadow (the shared deviation parameters, its
//! spin), built once by the run executor as a scan (the `table` module of `scan`), and
//! interpolated.
//!
//! **Interpolation.** Tensor-product piecewise-cubic Lagrange interpolation on the 4 nearest
//! nodes of each axis (the stencil shifted inwards at the edges), error O(h⁴) for a smooth
//! function (Press et al. 2007, *Numerical Recipes*, 3rd ed., §3.6, "Interpolation on a Grid in
//! Multidimensions"). The interpolant passes through every node.
//!
//! **Error estimate.** Leave-one-out along each axis: every node with at least one neighbour on
//! each side along an axis is predicted by the cubic through the 4 nearest *other* nodes of that
//! axis, and the table's error is the largest sum over the axes of these prediction errors at a
//! node. For a cubic the error constant |ω(x)| = |Π(x − x_j)| of the left-out node's stencil
//! (2h, h, h, 2h away: 4h⁴) is about seven times that of the interpolant between nodes
//! (at most 0.5625 h⁴ on an interior cell), so the estimate is conservative for a smooth
//! function; tests/posterior_table.rs checks it against the true error on Kerr–Newman.
//! A posterior from a table prints this error beside its result and is refused when it exceeds a
//! tenth of a measurement's sigma (expressed in r_sh/M, see [`super::source::SourceTerm`]).
//!
//! Every node must hold a shadow: a box that reaches a region without a shadow (or without a
//! horizon, when one is required) has no smooth size to interpolate, and is refused naming the
//! first such node.
//!
//! ```
//! use umbral::posterior::table::{ShadowTable, TableAxis};
//! let axis = TableAxis { name: "x".into(), low: 0.0, high: 1.0, count: 6 };
//! // A cubic is reproduced exactly.
//! let f = |x: f64| 1.0 + x - 2.0 * x * x + 0.5 * x * x * x;
//! let values: Vec<f64> = (0..6).map(|i| f(axis.value(i))).collect();
//! let table = ShadowTable::new(0, vec![axis], values, None).unwrap();
//! assert!((table.size(&[0.37]) - f(0.37)).abs() < 1e-14);
//! assert!(table.size_error() < 1e-14);
//! ```

use crate::numfmt::Num;

/// One table axis: `count` nodes from `low` to `high` inclusive, uniformly spaced.
#[derive(Debug, Clone, PartialEq)]
pub struct TableAxis {
    /// The model's name of the parameter on this axis (`eps3`, `a@1`).
    pub name: String,
    /// First node.
    pub low: f64,
    /// Last node.
    pub high: f64,
    /// Number of nodes (at least [`MIN_NODES`]).
    pub count: usize,
}

/// The fewest nodes per axis: the cubic stencil (4) plus one, so that every interior node can
/// be left out and predicted by interpolation (not extrapolation).
pub const MIN_NODES: usize = 5;

impl TableAxis {
    /// The i-th node (the same arithmetic as a scan's grid axis, so the nodes are the scan's).
    pub fn value(&self, i: usize) -> f64 {
        if i + 1 == self.count {
            self.high
        } else {
            self.low + (self.high - self.low) * i as f64 / (self.count - 1) as f64
        }
    }

    /// The 4-node stencil (first index) and its Lagrange weights at `x`.
    fn stencil(&self, x: f64) -> (usize, [f64; 4]) {
        let n = self.count;
        let s = (x - self.low) / (self.high - self.low) * (n - 1) as f64;
        let cell = (s.floor().max(0.0) as usize).min(n - 2);
        let first = cell.saturating_sub(1).min(n - 4);
        let t = s - first as f64;
        (first, lagrange_weights(t, [0.0, 1.0, 2.0, 3.0]))
    }
}

/// Lagrange basis weights at `t` for the nodes `nodes` (in units of the spacing).
fn lagrange_weights(t: f64, nodes: [f64; 4]) -> [f64; 4] {
    let mut w = [1.0; 4];
    for (j, wj) in w.iter_mut().enumerate() {
        for (m, &xm) in nodes.iter().enumerate() {
            if m != j {
                *wj *= (t - xm) / (nodes[j] - xm);
            }
        }
    }
    w
}

/// Why a table cannot be used.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum TableError {
    /// Too few nodes, or bad ends.
    #[error("table axis {name}: need finite ends with low < high and at least {MIN_NODES} nodes, got {}:{}:{count}", Num(*.low), Num(*.high))]
    Axis {
        /// The axis.
        name: String,
        /// Its low end.
        low: f64,
        /// Its high end.
        high: f64,
        /// Its node count.
        count: usize,
    },
    /// The number of values is not the product of the node counts.
    #[error("a table of {expected} nodes was given {got} values")]
    Size {
        /// Nodes.
        expected: usize,
        /// Values.
        got: usize,
    },
    /// A node without a finite value.
    #[error("table node {at}: {what}")]
    Node {
        /// The node, as `name=value, ...`.
        at: String,
        /// What it has instead of a shadow.
        what: String,
    },
}

/// A source's tabulated shadow: size (and circularity deviation) on a grid, interpolated.
#[derive(Debug, Clone, PartialEq)]
pub struct ShadowTable {
    source: usize,
    axes: Vec<TableAxis>,
    size: Vec<f64>,
    circularity: Option<Vec<f64>>,
    size_error: f64,
    circularity_error: f64,
}

impl ShadowTable {
    /// A table for source `source` (from 0) with `size` (and optionally `circularity`) at the
    /// nodes in grid order, the last axis fastest; no axis means one constant value.
    pub fn new(
        source: usize,
        axes: Vec<TableAxis>,
        size: Vec<f64>,
        circularity: Option<Vec<f64>>,
    ) -> Result<ShadowTable, TableError> {
        for a in &axes {
            let ok = a.low.is_finite() && a.high.is_finite() && a.low < a.high;
            if !ok || a.count < MIN_NODES {
                return Err(TableError::Axis {
                    name: a.name.clone(),
                    low: a.low,
                    high: a.high,
                    count: a.count,
                });
            }
        }
        let expected: usize = axes.iter().map(|a| a.count).product();
        for values in std::iter::once(&size).chain(circularity.as_ref()) {
            if values.len() != expected {
                return Err(TableError::Size {
                    expected,
                    got: values.len(),
                });
            }
        }
        let mut table = ShadowTable {
            source,
            axes,
            size,
            circularity,
            size_error: 0.0,
            circularity_error: 0.0,
        };
        table.size_error = table.leave_one_out(&table.size);
        if let Some(c) = &table.circularity {
            table.circularity_error = table.leave_one_out(c);
        }
        Ok(table)
    }

    /// The source (from 0).
    pub fn source(&self) -> usize {
        self.source
    }

    /// The axes.
    pub fn axes(&self) -> &[TableAxis] {
        &self.axes
    }

    /// The number of nodes.
    pub fn nodes(&self) -> usize {
        self.size.len()
    }

    /// The smallest tabulated size.
    pub fn smallest_size(&self) -> f64 {
        self.size.iter().copied().fold(f64::INFINITY, f64::min)
    }

    /// Whether `x` (one coordinate per axis) lies in the table's box, to within 1e-12 of each
    /// axis's span (outside it the cubic would extrapolate).
    pub fn contains(&self, x: &[f64]) -> bool {
        x.len() == self.axes.len()
            && self.axes.iter().zip(x).all(|(a, &xi)| {
                let slack = 1e-12 * (a.high - a.low);
                xi >= a.low - slack && xi <= a.high + slack
            })
    }

    /// The interpolated size at `x` (one coordinate per axis, inside the box: see
    /// [`ShadowTable::contains`]).
    pub fn size(&self, x: &[f64]) -> f64 {
        self.interpolate(&self.size, x)
    }

    /// The interpolated circularity deviation at `x` (NaN if not tabulated).
    pub fn circularity(&self, x: &[f64]) -> f64 {
        match &self.circularity {
            Some(c) => self.interpolate(c, x),
            None => f64::NAN,
        }
    }

    /// The leave-one-out estimate of the size's interpolation error (module doc).
    pub fn size_error(&self) -> f64 {
        self.size_error
    }

    /// The leave-one-out estimate of the circularity deviation's error (0 if not tabulated).
    pub fn circularity_error(&self) -> f64 {
        self.circularity_error
    }

    /// Whether the circularity deviation is tabulated.
    pub fn has_circularity(&self) -> bool {
        self.circularity.is_some()
    }

    /// The flat index of a multi-index (last axis fastest).
    fn flat(&self, index: &[usize]) -> usize {
        index
            .iter()
            .zip(&self.axes)
            .fold(0, |acc, (&i, a)| acc * a.count + i)
    }

    fn interpolate(&self, values: &[f64], x: &[f64]) -> f64 {
        let stencils: Vec<(usize, [f64; 4])> = self
            .axes
            .iter()
            .zip(x)
            .map(|(a, &xi)| a.stencil(xi))
            .collect();
        let d = self.axes.len();
        let mut total = 0.0;
        let mut offset = vec![0usize; d];
        // Every combination of stencil offsets (4^d terms).
        for combo in 0..4usize.pow(d as u32) {
            let mut rest = combo;
            let mut weight = 1.0;
            for k in (0..d).rev() {
                offset[k] = stencils[k].0 + rest % 4;
                weight *= stencils[k].1[rest % 4];
                rest /= 4;
            }
            total += weight * values[self.flat(&offset)];
        }
        total
    }

    /// The largest over nodes of the summed per-axis leave-one-out prediction errors.
    fn leave_one_out(&self, values: &[f64]) -> f64 {
        let d = self.axes.len();
        let mut worst: f64 = 0.0;
        let mut index = vec![0usize; d];
        for flat in 0..values.len() {
            let mut rest = flat;
            for k in (0..d).rev() {
                index[k] = rest % self.axes[k].count;
                rest /= self.axes[k].count;
            }
            let mut sum = 0.0;
            for k in 0..d {
                let n = self.axes[k].count;
                let i = index[k];
                if i == 0 || i + 1 == n {
                    continue;
                }
                // The 4 nearest other nodes: two on each side where there are, else shifted.
                let mut others: Vec<usize> = (0..n).filter(|&j| j != i).collect();
                others.sort_by_key(|&j| (j as isize - i as isize).unsigned_abs());
                let mut stencil: Vec<usize> = others.into_iter().take(4).collect();
                stencil.sort_unstable();
                let nodes = [0, 1, 2, 3].map(|m| stencil[m] as f64 - i as f64);
                let w = lagrange_weights(0.0, nodes);
                let mut at = index.clone();
                let mut predicted = 0.0;
                for (m, &j) in stencil.iter().enumerate() {
                    at[k] = j;
                    predicted += w[m] * values[self.flat(&at)];
                }
                sum += (predicted - values[flat]).abs();
            }
            worst = worst.max(sum);
        }
        worst
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn axis(name: &str, low: f64, high: f64, count: usize) -> TableAxis {
        TableAxis {
            name: name.into(),
            low,
            high,
            count,
        }
    }

    #[test]
    fn bicubic_polynomials_are_reproduced_and_have_no_leave_one_out_error() {
        let (ax, ay) = (axis("x", -1.0, 2.0, 7), axis("y", 0.0, 0.5, 5));
        let f = |x: f64, y: f64| 0.3 + x * x * x - 2.0 * x * y * y + y * y * y * x * x;
        let mut values = Vec::new();
        for i in 0..ax.count {
            for j in 0..ay.count {
                values.push(f(ax.value(i), ay.value(j)));
            }
        }
        let t = ShadowTable::new(0, vec![ax, ay], values.clone(), Some(values)).unwrap();
        for (x, y) in [(-1.0, 0.0), (0.123, 0.456), (1.99, 0.01), (2.0, 0.5)] {
            assert!((t.size(&[x, y]) - f(x, y)).abs() < 1e-12);
            assert!((t.circularity(&[x, y]) - f(x, y)).abs() < 1e-12);
        }
        assert!(t.size_error() < 1e-12 && t.circularity_error() < 1e-12);
    }

    #[test]
    fn leave_one_out_bounds_the_error_between_nodes_of_a_smooth_function() {
        // exp(2x) on 9 nodes of [0, 2]: the true error of the interpolant at cell midpoints
        // against the leave-one-out estimate.
        let a = axis("x", 0.0, 2.0, 9);
        let values: Vec<f64> = (0..9).map(|i| (2.0 * a.value(i)).exp()).collect();
        let t = ShadowTable::new(0, vec![a.clone()], values, None).unwrap();
        let true_error = (0..8)
            .map(|i| 0.5 * (a.value(i) + a.value(i + 1)))
            .map(|x| (t.size(&[x]) - (2.0 * x).exp()).abs())
            .fold(0.0, f64::max);
        assert!(
            true_error > 0.0 && true_error < t.size_error(),
            "{true_error} vs {}",
            t.size_error()
        );
        assert!(t.size_error() < 20.0 * true_error, "estimate far too loose");
    }

    #[test]
    fn bad_tables_are_refused() {
        assert!(matches!(
            ShadowTable::new(0, vec![axis("x", 0.0, 1.0, 4)], vec![0.0; 4], None),
            Err(TableError::Axis { .. })
        ));
        assert!(matches!(
            ShadowTable::new(0, vec![axis("x", 0.0, 1.0, 5)], vec![0.0; 4], None),
            Err(TableError::Size { .. })
        ));
        let t = ShadowTable::new(3, vec![], vec![5.0], None).unwrap();
        assert_eq!((t.size(&[]), t.nodes(), t.source()), (5.0, 1, 3));
    }
}
