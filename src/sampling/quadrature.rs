//! Deterministic quadrature of a posterior with one or two sampled parameters: the evidence,
//! each parameter's marginal distribution (quantiles, mean, intervals) and independent draws,
//! with no Monte Carlo error in anything but the draws.
//!
//! Method. Each sampled parameter is mapped from the unit interval by its prior's quantile
//! function x = F⁻¹(u) ([`Prior::from_unit`]; the prior transform of nested sampling,
//! Skilling 2006, Bayesian Analysis 1, 833), so the posterior in u is p(u) = L(x(u))/Z with
//! Z = ∫ L dπ = ∫ L(x(u)) du over the unit square or interval. The integrals are composite
//! Gauss–Legendre rules: P panels of n nodes each per parameter (n = 8 by default, exact for
//! polynomials of degree 2n − 1 on each panel; Abramowitz & Stegun 1964, 25.4.29), as a
//! tensor product in two dimensions (Davis & Rabinowitz 1984, "Methods of Numerical
//! Integration", 2nd ed., §2.4 on compound rules and §5.6 on product rules). A marginal is
//! the inner sum of the product rule at each outer node. Within a panel the marginal density
//! is the polynomial through its n node values (barycentric Lagrange interpolation, Berrut &
//! Trefethen 2004, SIAM Review 46, 501), and its integral from the panel's start to any
//! point is the same n-node rule on the shorter interval (exact for that polynomial); so the
//! cumulative distribution is continuous, equals the quadrature sums at panel ends, and is
//! inverted by Newton's method safeguarded by bisection. Quantiles, the median and the
//! equal-tailed intervals follow; the mean is the quadrature of x(u) p(u); a highest-density
//! interval is the shortest interval [Q(α), Q(α + level)] (in the parameter's own units),
//! found by scanning α then refining with Brent's minimiser; when several intervals lie
//! within 10⁻⁹ (relative) of the shortest width, as for a flat marginal, the lowest is
//! reported.
//!
//! Refinement. The panels are doubled (from [`QuadratureSettings::initial_panels`]) until,
//! between two successive grids, ln Z changes by at most the tolerance and every reported
//! quantity of every marginal (the 0.16, 0.5 and 0.84 quantiles, the equal-tailed and
//! highest-density intervals at each level asked) moves by at most the tolerance times the
//! prior's mass, i.e. measured in u (for a uniform prior this is the tolerance times the
//! prior's width), and by at most [`QuadratureSettings::width_fraction`] of the
//! marginal's own 68 % width in u (so that a posterior much narrower than its prior is
//! resolved too). The comparison of two grids is the error estimate (the standard practice
//! of comparing successive refinements; Davis & Rabinowitz 1984, §4.6); the error of ln Z
//! reported is the change of ln Z between the last two grids, an over-estimate for a smooth
//! integrand, whose error falls by a large factor at each doubling. A run that reaches
//! [`QuadratureSettings::max_panels`] without meeting the criterion is returned with
//! `converged: false`.
//!
//! Zero likelihood (no shadow, outside a domain) is a value like any other, but where it
//! starts inside a panel the integrand jumps and the rule converges only at first order. With
//! one sampled parameter, every such change between neighbouring nodes (at most eight) is
//! located by bisection down to neighbouring doubles, and the next grids split their panels
//! there, so each panel's integrand is smooth again. In two dimensions such a boundary is a
//! curve, not located: the refinement converges slowly there and may end NOT converged. Draws: each is the inverse cumulative distribution of a uniform number
//! (Devroye 1986, "Non-Uniform Random Variate Generation", §II.2); in two dimensions the first
//! parameter from its marginal, then the second from its conditional distribution at that
//! value (the product rule's rows interpolated in the first parameter, clipped at zero). The
//! uniform numbers are drawn on the calling thread from the run's seed, so the draws are
//! identical at any number of threads.
//!
//! ```
//! use umbral::sampling::quadrature::{quadrature, QuadratureSettings};
//! use umbral::sampling::{ParallelDensity, Prior};
//! // A likelihood L = x under a uniform prior on [0, 1]: the posterior density is 2x, with
//! // CDF x², so the median is √(1/2) and the mean 2/3; Z = 1/2.
//! let mut likelihood = ParallelDensity(|x: &[f64]| x[0].ln());
//! let priors = vec![Prior::Uniform { low: 0.0, high: 1.0 }];
//! let run = quadrature(&mut likelihood, &priors, &QuadratureSettings::default()).unwrap();
//! assert!(run.converged);
//! assert!((run.marginals[0].median() - 0.5f64.sqrt()).abs() < 1e-12);
//! assert!((run.marginals[0].mean() - 2.0 / 3.0).abs() < 1e-12);
//! assert!((run.log_evidence - 0.5f64.ln()).abs() < 1e-12);
//! ```

use super::batch::sanitise;
use super::prior::Transform;
use super::summary::SummaryError;
use super::{stream, Halted, LogDensityBatch, Prior, PriorError};
use crate::numerics::{brent_minimise, gauss_legendre_unit, safeguarded_newton, NewtonEval};
use rand_distr::{Distribution, Open01};
use rayon::prelude::*;

/// Stream purpose of [`super::stream`] for the draws.
const DRAW_STREAM: u64 = 21;

/// The quantiles whose convergence each refinement checks, with the intervals asked.
pub const CHECKED_QUANTILES: [f64; 3] = [0.16, 0.5, 0.84];

/// Most grid points one refinement may have (a 2-D grid of 1024 × 1024 nodes).
pub const MAX_GRID_POINTS: usize = 1 << 20;

/// Points of the scan over the lower tail α of a highest-density interval.
const HPD_SCAN: usize = 256;

/// How to integrate.
#[derive(Debug, Clone, PartialEq)]
pub struct QuadratureSettings {
    /// Gauss–Legendre nodes per panel.
    pub nodes: usize,
    /// Panels per parameter of the first grid.
    pub initial_panels: usize,
    /// Panels per parameter at most (at least twice the initial panels).
    pub max_panels: usize,
    /// The largest change between two grids of ln Z, and of a reported quantity in units of
    /// the prior's mass, that counts as converged.
    pub tolerance: f64,
    /// The largest change of a reported quantity, as a fraction of the marginal's 68 % width
    /// (both in units of the prior's mass), that counts as converged.
    pub width_fraction: f64,
    /// Credible levels of the intervals whose convergence is checked.
    pub levels: Vec<f64>,
    /// Independent posterior draws to make from the last grid.
    pub samples: usize,
    /// The seed of the draws.
    pub seed: u64,
}

impl Default for QuadratureSettings {
    fn default() -> Self {
        QuadratureSettings {
            nodes: 8,
            initial_panels: 4,
            max_panels: 64,
            tolerance: 1e-4,
            width_fraction: 1e-2,
            levels: vec![0.68, 0.95],
            samples: 0,
            seed: 0,
        }
    }
}

/// Why a quadrature could not be made.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum QuadratureError {
    /// A prior is not valid.
    #[error(transparent)]
    Prior(#[from] PriorError),
    /// Every parameter is fixed.
    #[error("every parameter is fixed: there is nothing to integrate")]
    NothingToSample,
    /// More than two parameters are sampled.
    #[error(
        "quadrature integrates one or two sampled parameters, not {0}: use the ensemble \
         sampler or nested sampling"
    )]
    Dimensions(usize),
    /// The settings do not make a run.
    #[error("{0}")]
    Settings(String),
    /// No grid point had a finite likelihood.
    #[error(
        "no grid point up to {panels} panels of {nodes} nodes per parameter has a finite \
         likelihood ({evaluations} evaluations)"
    )]
    NoFiniteLikelihood {
        /// Panels per parameter of the last grid.
        panels: usize,
        /// Nodes per panel.
        nodes: usize,
        /// Evaluations made.
        evaluations: usize,
    },
    /// The evaluator stopped the run.
    #[error(transparent)]
    Halted(#[from] Halted),
}

/// The outcome of [`quadrature`].
#[derive(Debug, Clone, PartialEq)]
pub struct QuadratureRun {
    /// ln Z = ln ∫ L dπ from the last grid.
    pub log_evidence: f64,
    /// |ln Z − ln Z′|, Z′ from the grid before the last (+∞ when there is none).
    pub log_evidence_error: f64,
    /// The marginal of each sampled parameter, in order.
    pub marginals: Vec<TabulatedMarginal>,
    /// Independent posterior draws (every parameter, fixed ones at their value).
    pub samples: Vec<Vec<f64>>,
    /// Panels per parameter of the last grid.
    pub panels: usize,
    /// Nodes per panel.
    pub nodes: usize,
    /// Grids evaluated.
    pub grids: usize,
    /// Likelihood evaluations made (every grid's points).
    pub evaluations: usize,
    /// The largest change of a checked quantity between the last two grids over its
    /// tolerance (at most 1 when converged; +∞ when there was one grid with a finite Z).
    pub change: f64,
    /// Whether the refinement met its criterion.
    pub converged: bool,
    /// With one sampled parameter, the points (in its units) where the likelihood changes
    /// between zero and non-zero, located by bisection; the panels are split there.
    pub boundaries: Vec<f64>,
}

/// Gauss–Legendre nodes and weights on (0, 1) with their barycentric weights
/// λⱼ = 1/∏_{i≠j}(tⱼ − tᵢ).
#[derive(Debug, Clone, PartialEq)]
struct Rule {
    nodes: Vec<f64>,
    weights: Vec<f64>,
    barycentric: Vec<f64>,
}

impl Rule {
    fn new(n: usize) -> Rule {
        let (nodes, weights): (Vec<f64>, Vec<f64>) = gauss_legendre_unit(n).into_iter().unzip();
        let barycentric = (0..n)
            .map(|j| {
                let product: f64 = (0..n)
                    .filter(|&i| i != j)
                    .map(|i| nodes[j] - nodes[i])
                    .product();
                1.0 / product
            })
            .collect();
        Rule {
            nodes,
            weights,
            barycentric,
        }
    }

    fn len(&self) -> usize {
        self.nodes.len()
    }

    /// The Lagrange basis ℓⱼ(s) at `s` ∈ [0, 1] (barycentric form, Berrut & Trefethen 2004,
    /// eq. 4.2): cⱼ = λⱼ/(s − tⱼ), ℓⱼ = cⱼ/Σ cᵢ.
    fn basis(&self, s: f64, out: &mut [f64]) {
        if let Some(j) = self.nodes.iter().position(|&t| t == s) {
            out.fill(0.0);
            out[j] = 1.0;
            return;
        }
        let mut sum = 0.0;
        for ((o, &t), &l) in out.iter_mut().zip(&self.nodes).zip(&self.barycentric) {
            *o = l / (s - t);
            sum += *o;
        }
        for o in out.iter_mut() {
            *o /= sum;
        }
    }

    /// The polynomial through `values` at the nodes, at `s` (the barycentric formula).
    fn interpolate(&self, values: &[f64], s: f64) -> f64 {
        let (mut num, mut den) = (0.0, 0.0);
        for ((&t, &l), &v) in self.nodes.iter().zip(&self.barycentric).zip(values) {
            let d = s - t;
            if d == 0.0 {
                return v;
            }
            num += l / d * v;
            den += l / d;
        }
        num / den
    }

    /// ∫₀ˢ of that polynomial: the same rule on [0, s], exact for its degree n − 1.
    fn integral_to(&self, values: &[f64], s: f64) -> f64 {
        let sum: f64 = self
            .nodes
            .iter()
            .zip(&self.weights)
            .map(|(&t, &w)| w * self.interpolate(values, s * t))
            .sum();
        s * sum
    }
}

/// A non-negative density on [0, 1] tabulated at the nodes of a composite rule (panels
/// between `edges`), with its cumulative integral at the panel ends.
#[derive(Debug, Clone, PartialEq)]
struct Table {
    edges: Vec<f64>,
    values: Vec<f64>,
    cumulative: Vec<f64>,
}

impl Table {
    fn new(rule: &Rule, edges: &[f64], values: Vec<f64>) -> Table {
        let mut cumulative = Vec::with_capacity(edges.len());
        let mut total = 0.0;
        cumulative.push(total);
        for (panel, ends) in values.chunks(rule.len()).zip(edges.windows(2)) {
            total += (ends[1] - ends[0])
                * panel
                    .iter()
                    .zip(&rule.weights)
                    .map(|(v, w)| v * w)
                    .sum::<f64>();
            cumulative.push(total);
        }
        Table {
            edges: edges.to_vec(),
            values,
            cumulative,
        }
    }

    fn panels(&self) -> usize {
        self.edges.len() - 1
    }

    fn total(&self) -> f64 {
        self.cumulative[self.panels()]
    }

    /// The point u below which the fraction `p` of the mass lies: the panel from the
    /// cumulative sums, then the point in it by safeguarded Newton on the interpolant's
    /// integral (Press et al. 2007, "Numerical Recipes", 3rd ed., §9.4).
    fn quantile(&self, rule: &Rule, p: f64) -> f64 {
        let n = rule.len();
        let target = p.clamp(0.0, 1.0) * self.total();
        let k = self.cumulative[1..]
            .partition_point(|&c| c < target)
            .min(self.panels() - 1);
        let (a, h) = (self.edges[k], self.edges[k + 1] - self.edges[k]);
        let mass = self.cumulative[k + 1] - self.cumulative[k];
        let rest = target - self.cumulative[k];
        // A panel without mass (zero likelihood throughout, or NaN): its start.
        if mass.is_nan() || mass <= 0.0 {
            return a;
        }
        let values = &self.values[k * n..(k + 1) * n];
        let start = (rest / mass).clamp(0.0, 1.0);
        let s = safeguarded_newton(
            |s| {
                let value = rest - h * rule.integral_to(values, s);
                if value == 0.0 {
                    NewtonEval::Root
                } else {
                    NewtonEval::Slope(value, -h * rule.interpolate(values, s))
                }
            },
            [0.0, 1.0],
            start,
            200,
            |previous, next, lo, hi| (next - previous).abs() <= 1e-14 || hi - lo <= 1e-14,
        )
        .unwrap_or(start);
        (a + s.clamp(0.0, 1.0) * h).min(1.0)
    }

    /// ∫ g(u) p(u) du / ∫ p(u) du by the composite rule.
    fn expectation(&self, rule: &Rule, g: impl Fn(f64) -> f64) -> f64 {
        let (u, w) = composite(rule, &self.edges);
        let sum: f64 = self
            .values
            .iter()
            .zip(u.iter().zip(&w))
            .map(|(v, (&u, &w))| w * v * g(u))
            .sum();
        sum / self.total()
    }
}

/// One sampled parameter's marginal posterior, tabulated by the quadrature: quantiles, mean
/// and intervals in the parameter's own units.
#[derive(Debug, Clone, PartialEq)]
pub struct TabulatedMarginal {
    prior: Prior,
    rule: Rule,
    table: Table,
    mean: f64,
}

impl TabulatedMarginal {
    fn new(prior: Prior, rule: &Rule, table: Table) -> TabulatedMarginal {
        let mean = table.expectation(rule, |u| prior.from_unit(u));
        TabulatedMarginal {
            prior,
            rule: rule.clone(),
            table,
            mean,
        }
    }

    /// The quantile at `p` ∈ [0, 1], in the prior's cumulative probability u.
    pub fn unit_quantile(&self, p: f64) -> f64 {
        self.table.quantile(&self.rule, p)
    }

    /// The quantile at `p` ∈ [0, 1] (at 0 and 1 the ends of the prior's support).
    pub fn quantile(&self, p: f64) -> f64 {
        self.prior.from_unit(self.unit_quantile(p))
    }

    /// The median.
    pub fn median(&self) -> f64 {
        self.quantile(0.5)
    }

    /// The mean, by the same quadrature.
    pub fn mean(&self) -> f64 {
        self.mean
    }

    /// The equal-tailed interval at `level`: [Q((1 − level)/2), Q((1 + level)/2)].
    pub fn equal_tailed(&self, level: f64) -> Result<[f64; 2], SummaryError> {
        check_level(level)?;
        Ok([
            self.quantile(0.5 * (1.0 - level)),
            self.quantile(0.5 * (1.0 + level)),
        ])
    }

    /// The shortest interval holding the fraction `level` (see the module documentation).
    pub fn highest_density(&self, level: f64) -> Result<[f64; 2], SummaryError> {
        let [lo, hi] = self.highest_density_unit(level)?;
        Ok([self.prior.from_unit(lo), self.prior.from_unit(hi)])
    }

    /// The highest-density interval's ends in u.
    fn highest_density_unit(&self, level: f64) -> Result<[f64; 2], SummaryError> {
        check_level(level)?;
        let span = 1.0 - level;
        let width = |a: f64| self.quantile(a + level) - self.quantile(a);
        let at = |i: usize| span * i as f64 / HPD_SCAN as f64;
        let widths: Vec<f64> = (0..=HPD_SCAN).map(|i| width(at(i))).collect();
        let least = widths.iter().copied().fold(f64::INFINITY, f64::min);
        let i = widths
            .iter()
            .position(|&w| w <= least * (1.0 + 1e-9))
            .unwrap_or(0);
        let (lo, hi) = (at(i.saturating_sub(1)), at((i + 1).min(HPD_SCAN)));
        let alpha = match brent_minimise(width, lo, hi, at(i), widths[i], 1e-13) {
            Ok((a, w)) if w < widths[i] * (1.0 - 1e-9) => a,
            _ => at(i),
        };
        Ok([self.unit_quantile(alpha), self.unit_quantile(alpha + level)])
    }
}

fn check_level(level: f64) -> Result<(), SummaryError> {
    if level > 0.0 && level < 1.0 {
        Ok(())
    } else {
        Err(SummaryError::Level(level))
    }
}

/// One grid: its panels' edges (the same in both dimensions), ln L at its nodes and
/// L/max L (row-major in two dimensions), ln Z, the marginals and their tables.
struct Grid {
    edges: Vec<f64>,
    log_l: Vec<f64>,
    scaled: Vec<f64>,
    log_z: f64,
    marginals: Vec<TabulatedMarginal>,
    tables: Vec<Table>,
}

/// `panels` equal panels on [0, 1], each split at the points of `breaks` inside it (more
/// than 1e-12 from its ends).
fn panel_edges(panels: usize, breaks: &[f64]) -> Vec<f64> {
    let mut edges: Vec<f64> = (0..=panels).map(|k| k as f64 / panels as f64).collect();
    for &b in breaks {
        let near = edges.iter().any(|e| (e - b).abs() <= 1e-12);
        if !near && b > 0.0 && b < 1.0 {
            edges.push(b);
        }
    }
    edges.sort_by(f64::total_cmp);
    edges
}

/// The node coordinates u and weights of the composite rule on the panels between `edges`.
fn composite(rule: &Rule, edges: &[f64]) -> (Vec<f64>, Vec<f64>) {
    edges
        .windows(2)
        .flat_map(|ends| {
            let (a, h) = (ends[0], ends[1] - ends[0]);
            rule.nodes
                .iter()
                .zip(&rule.weights)
                .map(move |(&t, &w)| (a + t * h, w * h))
        })
        .unzip()
}

/// Evaluate the grid on the panels between `edges` in each dimension; `None` if no node
/// has a finite likelihood.
fn evaluate_grid(
    likelihood: &mut dyn LogDensityBatch,
    transform: &Transform,
    rule: &Rule,
    edges: Vec<f64>,
    stage: &str,
) -> Result<Option<Grid>, Halted> {
    let d = transform.free.len();
    let (u, w) = composite(rule, &edges);
    let g = u.len();
    let points: Vec<Vec<f64>> = if d == 1 {
        u.iter().map(|&a| transform.parameters(&[a])).collect()
    } else {
        u.iter()
            .flat_map(|&a| u.iter().map(move |&b| [a, b]))
            .map(|ab| transform.parameters(&ab))
            .collect()
    };
    let log_l: Vec<f64> = likelihood
        .log_densities(stage, &points)?
        .into_iter()
        .map(sanitise)
        .collect();
    let top = log_l.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    if top == f64::NEG_INFINITY {
        return Ok(None);
    }
    let scaled: Vec<f64> = log_l.iter().map(|l| (l - top).exp()).collect();
    let sums: Vec<Vec<f64>> = if d == 1 {
        vec![scaled.clone()]
    } else {
        let rows = (0..g)
            .map(|i| (0..g).map(|j| w[j] * scaled[i * g + j]).sum())
            .collect();
        let columns = (0..g)
            .map(|j| (0..g).map(|i| w[i] * scaled[i * g + j]).sum())
            .collect();
        vec![rows, columns]
    };
    let tables: Vec<Table> = sums
        .into_iter()
        .map(|values| Table::new(rule, &edges, values))
        .collect();
    let log_z = top + tables[0].total().ln();
    let marginals = tables
        .iter()
        .zip(&transform.free)
        .map(|(t, &i)| TabulatedMarginal::new(transform.priors[i], rule, t.clone()))
        .collect();
    Ok(Some(Grid {
        edges,
        log_l,
        scaled,
        log_z,
        marginals,
        tables,
    }))
}

/// Most boundaries of the likelihood's support located in one dimension: more changes
/// between zero and non-zero likelihood than this along the grid are not a boundary to
/// locate (scattered solver failures, say), and are left to the refinement.
const MAX_BOUNDARIES: usize = 8;

/// Locate, by bisection in u down to neighbouring doubles, every point between two
/// neighbouring nodes of a 1-D grid where the likelihood changes between zero and non-zero
/// and that is not yet a known boundary; each bisection step is one batch of evaluations (one
/// point per boundary). Returns the new boundaries and the evaluations made.
fn locate_boundaries(
    likelihood: &mut dyn LogDensityBatch,
    transform: &Transform,
    rule: &Rule,
    grid: &Grid,
    known: &[f64],
) -> Result<(Vec<f64>, usize), Halted> {
    let (u, _) = composite(rule, &grid.edges);
    let finite: Vec<bool> = grid.log_l.iter().map(|l| l.is_finite()).collect();
    let mut brackets: Vec<(f64, f64, bool)> = (1..u.len())
        .filter(|&i| finite[i - 1] != finite[i])
        .filter(|&i| !known.iter().any(|&b| u[i - 1] <= b && b <= u[i]))
        .map(|i| (u[i - 1], u[i], finite[i - 1]))
        .collect();
    if brackets.is_empty() || brackets.len() > MAX_BOUNDARIES {
        return Ok((Vec::new(), 0));
    }
    let mut evaluations = 0;
    for step in 1.. {
        let open: Vec<usize> = (0..brackets.len())
            .filter(|&b| {
                let (lo, hi, _) = brackets[b];
                let mid = 0.5 * (lo + hi);
                mid > lo && mid < hi
            })
            .collect();
        if open.is_empty() {
            break;
        }
        let points: Vec<Vec<f64>> = open
            .iter()
            .map(|&b| transform.parameters(&[0.5 * (brackets[b].0 + brackets[b].1)]))
            .collect();
        let stage = format!(
            "locating {} boundary(ies) of the likelihood's support, step {step}",
            brackets.len()
        );
        let values = likelihood.log_densities(&stage, &points)?;
        evaluations += points.len();
        for (&b, v) in open.iter().zip(values) {
            let (lo, hi, low_finite) = brackets[b];
            let mid = 0.5 * (lo + hi);
            if sanitise(v).is_finite() == low_finite {
                brackets[b].0 = mid;
            } else {
                brackets[b].1 = mid;
            }
        }
    }
    Ok((
        brackets
            .iter()
            .map(|&(lo, hi, _)| 0.5 * (lo + hi))
            .collect(),
        evaluations,
    ))
}

/// The quantities checked between grids, with their tolerances: ln Z, then per marginal the
/// checked quantiles and each level's intervals, in u.
fn checked(grid: &Grid, settings: &QuadratureSettings) -> Vec<(f64, f64)> {
    let mut out = vec![(grid.log_z, settings.tolerance)];
    for m in &grid.marginals {
        let width = m.unit_quantile(0.84) - m.unit_quantile(0.16);
        let tolerance = settings.tolerance.min(settings.width_fraction * width);
        let mut push = |x: f64| out.push((x, tolerance));
        for p in CHECKED_QUANTILES {
            push(m.unit_quantile(p));
        }
        for &level in &settings.levels {
            push(m.unit_quantile(0.5 * (1.0 - level)));
            push(m.unit_quantile(0.5 * (1.0 + level)));
            if let Ok([lo, hi]) = m.highest_density_unit(level) {
                push(lo);
                push(hi);
            }
        }
    }
    out
}

/// The largest change between two grids' checked quantities over the tolerance (the finer
/// grid's tolerance).
fn change(coarse: &[(f64, f64)], fine: &[(f64, f64)]) -> f64 {
    coarse
        .iter()
        .zip(fine)
        .map(|(&(a, _), &(b, tolerance))| (a - b).abs() / tolerance)
        .fold(
            0.0,
            |m, c| if c.is_nan() { f64::INFINITY } else { m.max(c) },
        )
}

pub(crate) fn check_settings(s: &QuadratureSettings, dims: usize) -> Result<(), QuadratureError> {
    let problem = if !(2..=64).contains(&s.nodes) {
        Some(format!("nodes per panel must be 2 to 64, got {}", s.nodes))
    } else if s.initial_panels == 0 || s.max_panels < 2 * s.initial_panels {
        Some(format!(
            "the panels must start at 1 or more and may grow to at least twice that, got {} and \
             at most {}",
            s.initial_panels, s.max_panels
        ))
    } else if (s.max_panels.saturating_mul(s.nodes))
        .checked_pow(dims as u32)
        .is_none_or(|points| points > MAX_GRID_POINTS)
    {
        Some(format!(
            "{} panels of {} nodes in {dims} dimensions exceed {MAX_GRID_POINTS} grid points",
            s.max_panels, s.nodes
        ))
    } else if !(s.tolerance > 0.0 && s.tolerance.is_finite()) {
        Some(format!(
            "the tolerance must be positive, got {}",
            s.tolerance
        ))
    } else if !(s.width_fraction > 0.0 && s.width_fraction.is_finite()) {
        Some(format!(
            "the width fraction must be positive, got {}",
            s.width_fraction
        ))
    } else {
        s.levels
            .iter()
            .find(|&&l| !(l > 0.0 && l < 1.0))
            .map(|l| format!("credible levels must lie in (0, 1), got {l}"))
    };
    problem.map_or(Ok(()), |p| Err(QuadratureError::Settings(p)))
}

/// Integrate `likelihood` (a log-likelihood) under `priors`, one or two of them not fixed.
pub fn quadrature(
    likelihood: &mut dyn LogDensityBatch,
    priors: &[Prior],
    settings: &QuadratureSettings,
) -> Result<QuadratureRun, QuadratureError> {
    for p in priors {
        p.validate()?;
    }
    let transform = Transform::new(priors);
    let dims = transform.free.len();
    match dims {
        0 => return Err(QuadratureError::NothingToSample),
        1 | 2 => {}
        d => return Err(QuadratureError::Dimensions(d)),
    }
    check_settings(settings, dims)?;
    let rule = Rule::new(settings.nodes);
    let (mut panels, mut grids, mut evaluations) = (settings.initial_panels, 0, 0);
    // Where the likelihood's support ends inside the prior (in u; one dimension only).
    let mut boundaries: Vec<f64> = Vec::new();
    let mut previous: Option<(f64, Vec<(f64, f64)>)> = None;
    loop {
        grids += 1;
        let edges = panel_edges(panels, &boundaries);
        let stage = format!(
            "grid {grids}: {} panels of {} nodes per parameter",
            edges.len() - 1,
            settings.nodes
        );
        let points = ((edges.len() - 1) * settings.nodes).pow(dims as u32);
        let grid = evaluate_grid(likelihood, &transform, &rule, edges, &stage)?;
        evaluations += points;
        let last = 2 * panels > settings.max_panels;
        let Some(grid) = grid else {
            if last {
                return Err(QuadratureError::NoFiniteLikelihood {
                    panels,
                    nodes: settings.nodes,
                    evaluations,
                });
            }
            previous = None;
            panels *= 2;
            continue;
        };
        let quantities = checked(&grid, settings);
        let (change, error) = match &previous {
            Some((log_z, q)) => (change(q, &quantities), (grid.log_z - log_z).abs()),
            None => (f64::INFINITY, f64::INFINITY),
        };
        let converged = change <= 1.0;
        if converged || last {
            let samples = draw(&grid, &rule, &transform, settings);
            let prior = priors[transform.free[0]];
            return Ok(QuadratureRun {
                log_evidence: grid.log_z,
                log_evidence_error: error,
                marginals: grid.marginals,
                samples,
                panels,
                nodes: settings.nodes,
                grids,
                evaluations,
                change,
                converged,
                boundaries: boundaries.iter().map(|&u| prior.from_unit(u)).collect(),
            });
        }
        if dims == 1 {
            let (found, made) =
                locate_boundaries(likelihood, &transform, &rule, &grid, &boundaries)?;
            evaluations += made;
            boundaries.extend(found);
        }
        previous = Some((grid.log_z, quantities));
        panels *= 2;
    }
}

/// `settings.samples` independent draws from the grid's posterior (see the module
/// documentation).
fn draw(
    grid: &Grid,
    rule: &Rule,
    transform: &Transform,
    settings: &QuadratureSettings,
) -> Vec<Vec<f64>> {
    let dims = transform.free.len();
    let mut rng = stream(settings.seed, DRAW_STREAM, 0);
    let uniforms: Vec<f64> = (0..settings.samples * dims)
        .map(|_| Open01.sample(&mut rng))
        .collect();
    uniforms
        .par_chunks(dims)
        .map(|v| {
            // Inside (0, 1), where every prior's quantile function is finite (a quantile
            // lands on an end only in a zero-mass stretch, with probability zero).
            let open = |u: f64| u.clamp(f64::MIN_POSITIVE, 1.0 - f64::EPSILON / 2.0);
            let first = grid.tables[0].quantile(rule, v[0]);
            let mut u = vec![open(first)];
            if dims == 2 {
                u.push(open(conditional(grid, rule, first).quantile(rule, v[1])));
            }
            transform.parameters(&u)
        })
        .collect()
}

/// The second parameter's density at the first parameter's value `u1` (up to a constant):
/// the rows of the panel holding u1 interpolated at it, clipped at zero; the second
/// marginal where that is zero everywhere (reached with probability zero).
fn conditional(grid: &Grid, rule: &Rule, u1: f64) -> Table {
    let n = rule.len();
    let panels = grid.edges.len() - 1;
    let g = panels * n;
    let k = grid.edges[1..].partition_point(|&e| e < u1).min(panels - 1);
    let (a, h) = (grid.edges[k], grid.edges[k + 1] - grid.edges[k]);
    let s = ((u1 - a) / h).clamp(0.0, 1.0);
    let mut basis = vec![0.0; n];
    rule.basis(s, &mut basis);
    let values: Vec<f64> = (0..g)
        .map(|j| {
            let v: f64 = basis
                .iter()
                .enumerate()
                .map(|(i, b)| b * grid.scaled[(k * n + i) * g + j])
                .sum();
            v.max(0.0)
        })
        .collect();
    let table = Table::new(rule, &grid.edges, values);
    if table.total() > 0.0 {
        table
    } else {
        grid.tables[1].clone()
    }
}

impl super::summary::MarginalSummary for TabulatedMarginal {
    fn median(&self) -> f64 {
        TabulatedMarginal::median(self)
    }
    fn mean(&self) -> f64 {
        TabulatedMarginal::mean(self)
    }
    fn equal_tailed(&self, level: f64) -> Result<[f64; 2], SummaryError> {
        TabulatedMarginal::equal_tailed(self, level)
    }
    fn highest_density(&self, level: f64) -> Result<[f64; 2], SummaryError> {
        TabulatedMarginal::highest_density(self, level)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sampling::ParallelDensity;

    fn uniform() -> Prior {
        Prior::Uniform {
            low: 0.0,
            high: 1.0,
        }
    }

    #[test]
    fn the_interpolant_and_its_integral_are_exact_for_polynomials() {
        // A polynomial of degree n − 1 is its own interpolant, and ∫₀ˢ is exact.
        let rule = Rule::new(6);
        let f = |x: f64| 1.0 + x * (2.0 - x * (3.0 - x * x * x));
        let values: Vec<f64> = rule.nodes.iter().map(|&t| f(t)).collect();
        for s in [0.0, 0.13, 0.5, 0.97, 1.0] {
            assert!((rule.interpolate(&values, s) - f(s)).abs() < 1e-13);
            let exact = s + s * s - s * s * s + s.powi(6) / 6.0;
            assert!((rule.integral_to(&values, s) - exact).abs() < 1e-14, "{s}");
        }
        let mut basis = vec![0.0; 6];
        rule.basis(0.3, &mut basis);
        let by_basis: f64 = basis.iter().zip(&values).map(|(b, v)| b * v).sum();
        assert!((by_basis - f(0.3)).abs() < 1e-13);
    }

    #[test]
    fn the_density_two_x_has_its_closed_form_summaries() {
        // L = x, uniform prior: p(x) = 2x, F(x) = x², Q(p) = √p, Z = 1/2. The shortest
        // interval holding a fraction ℓ is [√(1 − ℓ), 1] (the density increases).
        let mut likelihood = ParallelDensity(|x: &[f64]| x[0].ln());
        let settings = QuadratureSettings {
            samples: 2000,
            seed: 4,
            ..Default::default()
        };
        let run = quadrature(&mut likelihood, &[uniform()], &settings).unwrap();
        assert!(run.converged, "{run:?}");
        let m = &run.marginals[0];
        for p in [0.05, 0.16, 0.5, 0.84, 0.99] {
            assert!((m.quantile(p) - p.sqrt()).abs() < 1e-12, "{p}");
        }
        let [lo, hi] = m.highest_density(0.68).unwrap();
        assert!((lo - 0.32f64.sqrt()).abs() < 1e-9 && (hi - 1.0).abs() < 1e-12);
        let [lo, hi] = m.equal_tailed(0.9).unwrap();
        assert!((lo - 0.05f64.sqrt()).abs() < 1e-12 && (hi - 0.95f64.sqrt()).abs() < 1e-12);
        assert!((run.log_evidence - 0.5f64.ln()).abs() < 1e-12);
        // The draws: their mean, 2/3, within four standard errors √(1/18)/√n.
        let mean = run.samples.iter().map(|s| s[0]).sum::<f64>() / 2000.0;
        assert!((mean - 2.0 / 3.0).abs() < 4.0 * (1.0f64 / 18.0 / 2000.0).sqrt());
    }

    #[test]
    fn a_flat_marginal_reports_the_lowest_shortest_interval() {
        // Every interval of mass ℓ under a flat density is equally short: the lowest is
        // reported, and the refinement converges.
        let mut likelihood = ParallelDensity(|_: &[f64]| 0.0);
        let run = quadrature(&mut likelihood, &[uniform()], &Default::default()).unwrap();
        assert!(run.converged);
        assert_eq!(run.grids, 2);
        let [lo, hi] = run.marginals[0].highest_density(0.68).unwrap();
        assert!(
            lo.abs() < 1e-12 && (hi - 0.68).abs() < 1e-12,
            "[{lo}, {hi}]"
        );
        assert!(run.log_evidence.abs() < 1e-14);
    }

    #[test]
    fn a_jump_to_zero_is_located_and_the_panels_split_there() {
        // L = x on [0, 0.7), zero above: p(x) = 2x/0.49 there, Q(p) = 0.7 √p, Z = 0.49/2.
        let mut likelihood = ParallelDensity(|x: &[f64]| {
            if x[0] < 0.7 {
                x[0].ln()
            } else {
                f64::NEG_INFINITY
            }
        });
        let run = quadrature(&mut likelihood, &[uniform()], &Default::default()).unwrap();
        assert!(run.converged, "{run:?}");
        assert_eq!(run.boundaries.len(), 1);
        assert!(
            (run.boundaries[0] - 0.7).abs() < 1e-15,
            "{:?}",
            run.boundaries
        );
        for p in [0.16, 0.5, 0.84] {
            assert!((run.marginals[0].quantile(p) - 0.7 * p.sqrt()).abs() < 1e-12);
        }
        assert!((run.log_evidence - 0.245f64.ln()).abs() < 1e-12);
        let [_, hi] = run.marginals[0].highest_density(0.68).unwrap();
        assert!((hi - 0.7).abs() < 1e-12);
    }

    #[test]
    fn impossible_requests_are_typed_errors() {
        let mut flat = ParallelDensity(|_: &[f64]| 0.0);
        let three = vec![uniform(); 3];
        assert_eq!(
            quadrature(&mut flat, &three, &Default::default()).unwrap_err(),
            QuadratureError::Dimensions(3)
        );
        assert_eq!(
            quadrature(&mut flat, &[Prior::Fixed(1.0)], &Default::default()).unwrap_err(),
            QuadratureError::NothingToSample
        );
        let mut nowhere = ParallelDensity(|_: &[f64]| f64::NEG_INFINITY);
        let e = quadrature(&mut nowhere, &[uniform()], &Default::default()).unwrap_err();
        assert!(
            matches!(e, QuadratureError::NoFiniteLikelihood { .. }),
            "{e}"
        );
        let wide = QuadratureSettings {
            max_panels: 4096,
            ..Default::default()
        };
        let e = quadrature(&mut flat, &[uniform(), uniform()], &wide).unwrap_err();
        assert!(e.to_string().contains("exceed"), "{e}");
    }

    #[test]
    fn an_unresolved_posterior_is_not_converged() {
        // A spike of width 1e-6 cannot be resolved by 16 panels of 8 nodes.
        let mut spike = ParallelDensity(|x: &[f64]| -0.5 * ((x[0] - 0.3) / 1e-6).powi(2));
        let settings = QuadratureSettings {
            max_panels: 16,
            ..Default::default()
        };
        match quadrature(&mut spike, &[uniform()], &settings) {
            Ok(run) => assert!(!run.converged && run.change > 1.0, "{run:?}"),
            Err(e) => assert!(matches!(e, QuadratureError::NoFiniteLikelihood { .. })),
        }
    }
}
