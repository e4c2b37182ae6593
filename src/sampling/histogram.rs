//! Histograms of samples, for looking at a posterior: the plotted range and the bin count of a
//! parameter, 1-D and 2-D counts, and the count threshold whose cells hold a given fraction of
//! the samples (the highest-posterior-density region of the histogram).
//!
//! Bin widths follow Scott's normal-reference rule for a d-dimensional histogram,
//! h = 3.5 s n^(−1/(2+d)) (d = 1: Scott 1979, Biometrika 66, 605, h = 3.49 s n^(−1/3); the
//! d-dimensional form: Scott 1992, Multivariate Density Estimation, Wiley, ch. 3, from memory),
//! with the robust scale s = min(standard deviation, IQR/1.349) so that a long tail does not
//! widen the bins (the IQR of a normal distribution is 1.349 σ).
//!
//! ```
//! use umbral::sampling::histogram::{density_threshold, Axis};
//! let axis = Axis::new(0.0, 4.0, 4);
//! let counts = axis.counts(&[0.5, 1.5, 1.6, 1.7, 2.5, 2.6, 3.5]);
//! assert_eq!(counts, vec![1.0, 3.0, 2.0, 1.0]);
//! // The fullest cells holding at least 5 of the 7 samples: those with 2 or more.
//! assert_eq!(density_threshold(&counts, 5.0 / 7.0), Some(2.0));
//! ```

use super::summary::Marginal;

/// Equal bins over `[low, high]`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Axis {
    /// The low end of the first bin.
    pub low: f64,
    /// The high end of the last bin.
    pub high: f64,
    /// The number of bins (at least 1).
    pub bins: usize,
}

impl Axis {
    /// `bins` equal bins over `[low, high]` (at least one bin; `low < high` expected).
    pub fn new(low: f64, high: f64, bins: usize) -> Axis {
        Axis {
            low,
            high,
            bins: bins.max(1),
        }
    }

    /// The width of a bin.
    pub fn width(&self) -> f64 {
        (self.high - self.low) / self.bins as f64
    }

    /// The centre of bin `i`.
    pub fn centre(&self, i: usize) -> f64 {
        self.low + (i as f64 + 0.5) * self.width()
    }

    /// The bin holding `x` (`high` itself is in the last bin), `None` outside the range.
    pub fn bin(&self, x: f64) -> Option<usize> {
        if !(x >= self.low && x <= self.high) {
            return None;
        }
        let i = ((x - self.low) / self.width()).floor() as usize;
        Some(i.min(self.bins - 1))
    }

    /// The number of `values` in each bin (values outside the range are not counted).
    pub fn counts(&self, values: &[f64]) -> Vec<f64> {
        let mut counts = vec![0.0; self.bins];
        for i in values.iter().filter_map(|&x| self.bin(x)) {
            counts[i] += 1.0;
        }
        counts
    }
}

/// The plotted range of a parameter: its 0.1 % and 99.9 % quantiles widened by 5 % of their
/// distance on each side, but not past the smallest and largest sample (so a prior's edge that
/// the samples reach stays the range's end). All samples equal: that value ± 0.5 (± half its
/// size when larger). At most 0.2 % of the samples fall outside.
pub fn plot_range(m: &Marginal) -> (f64, f64) {
    let (min, max) = (m.quantile(0.0), m.quantile(1.0));
    let (q_lo, q_hi) = (m.quantile(0.001), m.quantile(0.999));
    let pad = 0.05 * (q_hi - q_lo);
    let (lo, hi) = ((q_lo - pad).max(min), (q_hi + pad).min(max));
    if hi > lo {
        (lo, hi)
    } else {
        let half = 0.5 * lo.abs().max(1.0);
        (lo - half, lo + half)
    }
}

/// Scott's bin width h = 3.5 s n^(−1/(2+d)) for a d-dimensional histogram of `n` independent
/// draws, s = min(standard deviation, IQR/1.349) of `m` (module docs); `None` when the scale
/// is zero or `n` is not positive.
pub fn scott_width(m: &Marginal, n: f64, dims: usize) -> Option<f64> {
    let sd = m.standard_deviation();
    let iqr = m.quantile(0.75) - m.quantile(0.25);
    let s = if iqr > 0.0 { sd.min(iqr / 1.349) } else { sd };
    let h = 3.5 * s * n.powf(-1.0 / (2.0 + dims as f64));
    (h > 0.0 && h.is_finite()).then_some(h)
}

/// The counts of the pairs (`xs[k]`, `ys[k]`) in the cells of `x` × `y`, row-major with x
/// fastest (`counts[j * x.bins + i]`); pairs outside either range are not counted.
pub fn counts_2d(xs: &[f64], ys: &[f64], x: &Axis, y: &Axis) -> Vec<f64> {
    let mut counts = vec![0.0; x.bins * y.bins];
    for (&a, &b) in xs.iter().zip(ys) {
        if let (Some(i), Some(j)) = (x.bin(a), y.bin(b)) {
            counts[j * x.bins + i] += 1.0;
        }
    }
    counts
}

/// The highest-density region of a histogram: the largest count t such that the cells with
/// count ≥ t together hold at least `fraction` of all counts (cells are taken fullest first).
/// Contouring the histogram at t outlines the region. `None` for no counts or a fraction
/// outside (0, 1].
pub fn density_threshold(counts: &[f64], fraction: f64) -> Option<f64> {
    let total: f64 = counts.iter().sum();
    if !(total > 0.0 && fraction > 0.0 && fraction <= 1.0) {
        return None;
    }
    let mut sorted: Vec<f64> = counts.iter().copied().filter(|&c| c > 0.0).collect();
    sorted.sort_by(|a, b| b.total_cmp(a));
    // A sum within 1e-12 of the target counts as reaching it (0.5 of 4 counts asks for 2).
    let target = fraction * total * (1.0 - 1e-12);
    let mut inside = 0.0;
    for &c in &sorted {
        inside += c;
        if inside >= target {
            return Some(c);
        }
    }
    sorted.last().copied()
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand_chacha::rand_core::SeedableRng;
    use rand_chacha::ChaCha8Rng;
    use rand_distr::{Distribution, StandardNormal};
    use std::f64::consts::PI;

    /// For a bivariate normal the region inside Mahalanobis radius r = √(−2 ln(1 − p)) holds
    /// probability p (the squared radius is χ² with 2 degrees of freedom, P = 1 − e^(−r²/2);
    /// Johnson & Wichern 2007, Applied Multivariate Statistical Analysis, 6th ed., ch. 4), and
    /// it is the highest-density region: the density on its edge is
    /// (1 − p)/(2π σx σy √(1 − ρ²)). The histogram's region from [`density_threshold`] must
    /// hold p of the exact probability to within 0.01 (the mass of its cells by the midpoint
    /// rule on the exact density), differ from the ellipse by little mass, and its threshold
    /// must match the edge density within four Poisson errors of the boundary cells' count.
    #[test]
    fn the_highest_density_region_of_a_gaussian_histogram_holds_its_fraction() {
        let (sx, sy, rho) = (1.0, 2.0, 0.6);
        let n = 400_000;
        let mut rng = ChaCha8Rng::seed_from_u64(5);
        let (mut xs, mut ys) = (Vec::with_capacity(n), Vec::with_capacity(n));
        for _ in 0..n {
            let (u, v): (f64, f64) = (
                StandardNormal.sample(&mut rng),
                StandardNormal.sample(&mut rng),
            );
            xs.push(sx * u);
            ys.push(sy * (rho * u + (1.0 - rho * rho).sqrt() * v));
        }
        let (ax, ay) = (
            Axis::new(-4.5 * sx, 4.5 * sx, 90),
            Axis::new(-4.5 * sy, 4.5 * sy, 90),
        );
        let counts = counts_2d(&xs, &ys, &ax, &ay);
        let area = ax.width() * ay.width();
        let det = sx * sy * (1.0 - rho * rho).sqrt();
        let mahalanobis2 = |x: f64, y: f64| {
            let (u, v) = (x / sx, y / sy);
            (u * u - 2.0 * rho * u * v + v * v) / (1.0 - rho * rho)
        };
        let pdf = |x: f64, y: f64| (-0.5 * mahalanobis2(x, y)).exp() / (2.0 * PI * det);
        for p in [0.68, 0.95] {
            let t = density_threshold(&counts, p).unwrap();
            let r2 = -2.0 * (1.0 - p).ln();
            let (mut mass, mut differ, mut held) = (0.0, 0.0, 0.0);
            for j in 0..ay.bins {
                for i in 0..ax.bins {
                    let (x, y) = (ax.centre(i), ay.centre(j));
                    let cell = pdf(x, y) * area;
                    let in_region = counts[j * ax.bins + i] >= t;
                    if in_region {
                        mass += cell;
                        held += counts[j * ax.bins + i];
                    }
                    if in_region != (mahalanobis2(x, y) <= r2) {
                        differ += cell;
                    }
                }
            }
            let edge = (1.0 - p) / (2.0 * PI * det) * area * n as f64;
            println!(
                "p {p}: exact mass {mass:.4}, samples held {:.4}, differs from the ellipse by \
                 {differ:.4}, threshold {t} against edge count {edge:.1}",
                held / n as f64
            );
            assert!((mass - p).abs() < 0.01, "p {p}: mass {mass}");
            let held = held / n as f64;
            assert!(held >= p && held < p + 0.01, "p {p}: {held}");
            assert!(differ < 0.02, "p {p}: {differ}");
            assert!((t - edge).abs() < 4.0 * edge.sqrt(), "p {p}: {t} vs {edge}");
        }
    }

    #[test]
    fn thresholds_take_the_fullest_cells_first() {
        assert_eq!(
            density_threshold(&[1.0, 4.0, 0.0, 3.0, 2.0], 0.7),
            Some(3.0)
        );
        assert_eq!(
            density_threshold(&[1.0, 4.0, 0.0, 3.0, 2.0], 0.71),
            Some(2.0)
        );
        assert_eq!(
            density_threshold(&[1.0, 4.0, 0.0, 3.0, 2.0], 1.0),
            Some(1.0)
        );
        assert_eq!(density_threshold(&[0.0, 0.0], 0.5), None);
        assert_eq!(density_threshold(&[1.0], 0.0), None);
        assert_eq!(density_threshold(&[1.0], 1.5), None);
    }

    #[test]
    fn bins_follow_scotts_rule_and_ranges_stop_at_the_samples() {
        // Uniform on [0, 1): s = min(1/√12, 0.5/1.349) = 0.2887; h = 3.5 s n^(-1/3).
        let u: Vec<f64> = (0..1000).map(|i| (i as f64 + 0.5) / 1000.0).collect();
        let m = Marginal::new(&u).unwrap();
        let h = scott_width(&m, 1000.0, 1).unwrap();
        assert!((h - 3.5 * (1.0f64 / 12.0).sqrt() * 0.1).abs() < 1e-3, "{h}");
        let h2 = scott_width(&m, 1000.0, 2).unwrap();
        assert!((h2 - 3.5 * (1.0f64 / 12.0).sqrt() * 1000f64.powf(-0.25)).abs() < 2e-3);
        let (lo, hi) = plot_range(&m);
        assert_eq!((lo, hi), (0.0005, 0.9995));
        let one = Marginal::new(&[2.0, 2.0]).unwrap();
        assert_eq!(plot_range(&one), (1.0, 3.0));
        assert_eq!(scott_width(&one, 2.0, 1), None);
        let axis = Axis::new(0.0, 1.0, 10);
        assert_eq!(
            (axis.bin(1.0), axis.bin(-0.1), axis.bin(0.35)),
            (Some(9), None, Some(3))
        );
    }
}
