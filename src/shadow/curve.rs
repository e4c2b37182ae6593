//! A closed critical curve on the observer's screen, sampled uniformly in polar angle, and its
//! trigonometric (Fourier) interpolant.

use crate::numerics::{compensated_sums, SUM_CHUNK, SUM_PART, SUM_PARTS_PER_TASK};
use rayon::prelude::*;
use rustfft::num_complex::Complex;
use rustfft::{FftDirection, FftPlanner};
use serde::Serialize;
use std::cell::RefCell;
use std::f64::consts::TAU;

/// A star-shaped closed curve: radii R_k at polar angles ψ_k = 2πk/N about `origin`,
/// ψ measured from the +α axis towards +β.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CriticalCurve {
    /// (α, β) of the point the radii are measured from, in M.
    pub origin: [f64; 2],
    /// R(ψ_k), k = 0..N.
    pub radii: Vec<f64>,
}

impl CriticalCurve {
    /// A circle of radius `radius` about `origin`, sampled at `points` angles.
    pub fn circle(origin: [f64; 2], radius: f64, points: usize) -> Self {
        CriticalCurve {
            origin,
            radii: filled(radius, points),
        }
    }

    /// The curve R(ψ) = `radius(ψ)` about `origin`, sampled at ψ_k = 2πk/`points`.
    ///
    /// ```
    /// use umbral::shadow::CriticalCurve;
    /// let c = CriticalCurve::from_polar([0.0, 0.0], 8, |psi| 5.0 + 0.1 * psi.cos());
    /// assert!((c.radii[0] - 5.1).abs() < 1e-15);
    /// ```
    pub fn from_polar(origin: [f64; 2], points: usize, radius: impl Fn(f64) -> f64) -> Self {
        CriticalCurve {
            origin,
            radii: (0..points)
                .map(|k| radius(TAU * k as f64 / points as f64))
                .collect(),
        }
    }

    /// Number of samples N.
    pub fn len(&self) -> usize {
        self.radii.len()
    }

    /// Whether the curve has no samples.
    pub fn is_empty(&self) -> bool {
        self.radii.is_empty()
    }

    /// Polar angle of sample `k`.
    pub fn angle(&self, k: usize) -> f64 {
        std::f64::consts::TAU * k as f64 / self.radii.len() as f64
    }

    /// Screen coordinates (α_k, β_k) of the samples (computed in parallel chunks).
    pub fn alpha_beta(&self) -> (Vec<f64>, Vec<f64>) {
        (0..self.radii.len())
            .into_par_iter()
            .with_min_len(PARALLEL_CHUNK)
            .with_max_len(2 * PARALLEL_CHUNK)
            .map(|k| {
                let (s, c) = self.angle(k).sin_cos();
                (
                    self.origin[0] + self.radii[k] * c,
                    self.origin[1] + self.radii[k] * s,
                )
            })
            .unzip()
    }

    /// Check that the curve can be analysed: at least `min_points` samples, a finite origin
    /// and finite, positive radii. Returns a description of the first problem.
    pub fn validate(&self, min_points: usize) -> Result<(), String> {
        if self.radii.len() < min_points {
            return Err(format!(
                "a critical curve needs at least {min_points} samples, got {}",
                self.radii.len()
            ));
        }
        if !self.origin.iter().all(|x| x.is_finite()) {
            return Err(format!("curve origin {:?} is not finite", self.origin));
        }
        // In parallel chunks for a long curve; the first bad radius in order is reported.
        if let Some(k) = self
            .radii
            .par_iter()
            .with_min_len(PARALLEL_CHUNK)
            .position_first(|r| !(r.is_finite() && *r > 0.0))
        {
            return Err(format!(
                "curve radius {k} is {}: radii must be finite and positive",
                self.radii[k]
            ));
        }
        Ok(())
    }

    /// The trigonometric interpolant of R(ψ) through the samples (see [`TrigInterpolant`]).
    pub fn interpolant(&self) -> TrigInterpolant {
        TrigInterpolant::new(self.origin, &self.radii)
    }
}

/// The unique trigonometric polynomial of degree ⌊N/2⌋ through N equispaced samples:
///
/// R(ψ) = a₀/2 + Σ_{m=1}^{⌈N/2⌉−1} (a_m cos mψ + b_m sin mψ) [+ (a_{N/2}/2) cos(Nψ/2), N even],
///
/// a_m = (2/N) Σ_k R_k cos(mψ_k), b_m = (2/N) Σ_k R_k sin(mψ_k): the real discrete Fourier
/// transform, computed by a fast Fourier transform (the `rustfft` crate) in O(N log N). For a
/// smooth periodic R it converges spectrally, so it evaluates the curve, and its derivatives,
/// between samples to near machine precision (e.g. Trefethen 2000, Spectral Methods in MATLAB,
/// ch. 3).
///
/// [`Self::radius_derivatives`] sums the series directly (O(N) per point); for many points use
/// [`Self::table`], which evaluates R and R′ in O(1) per point.
///
/// ```
/// use umbral::shadow::CriticalCurve;
/// let curve = CriticalCurve::from_polar([0.0, 0.0], 16, |p| 5.0 + 0.3 * (2.0 * p).sin());
/// let [r, dr, _] = curve.interpolant().radius_derivatives(0.1);
/// assert!((r - (5.0 + 0.3 * 0.2f64.sin())).abs() < 1e-14);
/// assert!((dr - 0.6 * 0.2f64.cos()).abs() < 1e-13);
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct TrigInterpolant {
    origin: [f64; 2],
    /// a₀/2.
    mean: f64,
    /// (a_m, b_m) for m = 1, 2, …, with the N-even Nyquist term stored as (a_{N/2}/2, 0).
    coefficients: Vec<(f64, f64)>,
}

/// Re-seed the cos/sin recurrence from the library functions this often (bounds round-off;
/// the parts of a long series start on a re-seed).
const RESEED: usize = 32;
// A long series's parts must start on a re-seed.
const _: () = assert!(SUM_PART.is_multiple_of(RESEED));

thread_local! {
    /// One FFT planner per thread: it keeps the plans (twiddle factors) of the sizes used, so
    /// the many equal-sized curves of a bound or scan are planned once.
    static PLANNER: RefCell<FftPlanner<f64>> = RefCell::new(FftPlanner::new());
}

/// The FFT of `buffer` in place (`rustfft`; unnormalised, e^{∓2πimk/N} for `direction`
/// forward or inverse), planned by the calling thread's planner.
fn fft_in_place(direction: FftDirection, buffer: &mut [Complex<f64>]) {
    PLANNER
        .with(|p| p.borrow_mut().plan_fft(buffer.len(), direction))
        .process(buffer);
}

/// Items per parallel task of the curve's per-sample loops (each item costs nanoseconds; at
/// most twice as many, so that rayon splits a long loop finely enough to share it evenly).
const PARALLEL_CHUNK: usize = 4096;

/// `n` copies of `value`, written in parallel chunks for a long vector (the first writes
/// to fresh memory are page faults, costly enough to share).
pub(crate) fn filled<T: Clone + Send + Sync>(value: T, n: usize) -> Vec<T> {
    rayon::iter::repeat_n(value, n)
        .with_min_len(PARALLEL_CHUNK)
        .with_max_len(2 * PARALLEL_CHUNK)
        .collect()
}

/// Transforms of at least this many points are split in parallel parts (below, one `rustfft`
/// call; the split depends on the size only, so results are the same at any thread count).
const FFT_SPLIT_MIN: usize = 16384;

/// The DFT X_m = Σ_k x_k e^{−2πimk/N} of real samples, as a function of m ∈ [0, N/2]. For
/// even N ≥ [`FFT_SPLIT_MIN`], one radix-2 decimation-in-time step (Cooley & Tukey 1965,
/// Math. Comp. 19, 297): the even and odd samples' DFTs E and O of N/2 points in parallel,
/// then X_m = E_m + e^{−2πim/N} O_m, with E and O periodic in N/2.
fn forward_dft(x: &[f64]) -> impl Fn(usize) -> Complex<f64> {
    let n = x.len();
    let complex = |v: &mut dyn Iterator<Item = f64>| -> Vec<Complex<f64>> {
        v.map(|r| Complex::new(r, 0.0)).collect()
    };
    let (whole, halves) = if n % 2 == 1 || n < FFT_SPLIT_MIN {
        let mut whole = complex(&mut x.iter().copied());
        fft_in_place(FftDirection::Forward, &mut whole);
        (whole, None)
    } else {
        let transform = |mut v: Vec<Complex<f64>>| {
            fft_in_place(FftDirection::Forward, &mut v);
            v
        };
        let (even, odd) = rayon::join(
            || transform(complex(&mut x.iter().step_by(2).copied())),
            || transform(complex(&mut x.iter().skip(1).step_by(2).copied())),
        );
        (Vec::new(), Some((even, odd)))
    };
    move |m| match &halves {
        None => whole[m],
        Some((even, odd)) => {
            let half = n / 2;
            let (s, c) = (-TAU * m as f64 / n as f64).sin_cos();
            even[m % half] + Complex::new(c, s) * odd[m % half]
        }
    }
}

impl TrigInterpolant {
    fn new(origin: [f64; 2], radii: &[f64]) -> Self {
        let n = radii.len();
        if n == 0 {
            return TrigInterpolant {
                origin,
                mean: 0.0,
                coefficients: Vec::new(),
            };
        }
        // X_m = Σ_k R_k e^{−2πimk/N} = Σ R_k cos(mψ_k) − i Σ R_k sin(mψ_k).
        let spectrum = forward_dft(radii);
        let scale = 2.0 / n as f64;
        let [sum] = compensated_sums(n, |k| [radii[k]]);
        let mean = sum / n as f64;
        let coefficients = (1..n / 2 + 1)
            .into_par_iter()
            .with_min_len(PARALLEL_CHUNK)
            .with_max_len(2 * PARALLEL_CHUNK)
            .map(|m| {
                let x = spectrum(m);
                let (a, b) = (x.re, -x.im);
                if 2 * m == n {
                    (0.5 * a * scale, 0.0)
                } else {
                    (a * scale, b * scale)
                }
            })
            .collect();
        TrigInterpolant {
            origin,
            mean,
            coefficients,
        }
    }

    /// R and R′ tabulated for fast evaluation at many points (see [`InterpolantTable`]).
    ///
    /// ```
    /// use umbral::shadow::CriticalCurve;
    /// let curve = CriticalCurve::from_polar([0.0, 0.0], 64, |p| 5.0 + 0.3 * (3.0 * p).cos());
    /// let interp = curve.interpolant();
    /// let table = interp.table();
    /// for psi in [0.0, 0.123, 2.5, 6.2] {
    ///     let [r, dr, _] = interp.radius_derivatives(psi);
    ///     let [tr, tdr] = table.radius_slope(psi);
    ///     assert!((tr - r).abs() < 1e-14 && (tdr - dr).abs() < 1e-13);
    /// }
    /// ```
    pub fn table(&self) -> InterpolantTable {
        InterpolantTable::new(self)
    }

    /// The origin the radii are measured from.
    pub fn origin(&self) -> [f64; 2] {
        self.origin
    }

    /// a₀/2, the mean of the samples.
    pub fn mean(&self) -> f64 {
        self.mean
    }

    /// The Fourier coefficients (a_m, b_m), m = 1, 2, … (Nyquist term halved, see above).
    pub fn coefficients(&self) -> &[(f64, f64)] {
        &self.coefficients
    }

    /// R(ψ), R′(ψ), R″(ψ). A series of more than 8192 terms is summed in parts of 1024, in
    /// parallel, the parts' sums added in order (the same at any thread count).
    pub fn radius_derivatives(&self, psi: f64) -> [f64; 3] {
        let (s1, c1) = psi.sin_cos();
        let top = self.coefficients.len();
        // The terms i = start..end added to `sums`; cos mψ and sin mψ by the angle-addition
        // recurrence, re-seeded every RESEED terms (a part starts on a re-seed).
        let add_terms = |start: usize, end: usize, mut sums: [f64; 3]| -> [f64; 3] {
            let (mut s, mut c) = (s1, c1);
            for (i, &(a, b)) in self.coefficients[start..end].iter().enumerate() {
                let i = start + i;
                let m = (i + 1) as f64;
                if i > 0 {
                    if i.is_multiple_of(RESEED) {
                        (s, c) = (m * psi).sin_cos();
                    } else {
                        (s, c) = (s * c1 + c * s1, c * c1 - s * s1);
                    }
                }
                sums[0] += a * c + b * s;
                sums[1] += m * (b * c - a * s);
                sums[2] -= m * m * (a * c + b * s);
            }
            sums
        };
        if top <= SUM_CHUNK {
            return add_terms(0, top, [self.mean, 0.0, 0.0]);
        }
        let parts: Vec<[f64; 3]> = (0..top.div_ceil(SUM_PART))
            .into_par_iter()
            .with_max_len(SUM_PARTS_PER_TASK)
            .map(|k| add_terms(k * SUM_PART, ((k + 1) * SUM_PART).min(top), [0.0; 3]))
            .collect();
        parts.iter().fold([self.mean, 0.0, 0.0], |sums, part| {
            [sums[0] + part[0], sums[1] + part[1], sums[2] + part[2]]
        })
    }

    /// R(ψ).
    pub fn radius(&self, psi: f64) -> f64 {
        self.radius_derivatives(psi)[0]
    }

    /// The screen point (α, β) at polar angle ψ about the origin.
    pub fn point(&self, psi: f64) -> [f64; 2] {
        let r = self.radius(psi);
        let (s, c) = psi.sin_cos();
        [self.origin[0] + r * c, self.origin[1] + r * s]
    }
}

/// Grid refinement of [`InterpolantTable`] over the samples.
const TABLE_OVERSAMPLING: usize = 4;
// The interleaved table's twiddle powers and part indexing assume four parts.
const _: () = assert!(TABLE_OVERSAMPLING == 4);
/// Fewest grid points of an [`InterpolantTable`] (at least twice the Lagrange stencil).
const TABLE_MIN_GRID: usize = 64;
/// Points of the local Lagrange stencil of an [`InterpolantTable`].
const STENCIL: usize = 16;

/// The trigonometric interpolant R(ψ) and its derivative R′(ψ), tabulated on a uniform grid
/// of G = 4N points (at least 64) and evaluated between grid points by 16-point Lagrange
/// interpolation in barycentric form: O(N log N) to build, O(1) per evaluation.
///
/// The grid values are exact samples of the interpolant: the coefficients, zero-padded to G
/// and multiplied by (1 − im) so that R + iR′ comes out of one inverse FFT (`rustfft`; four
/// interleaved ones of G/4 points, in parallel, for G ≥ 16384). The
/// local interpolation error for a Fourier mode m is at most about 3e-6 (mh)¹⁶ times its
/// amplitude, h = 2π/G (the Lagrange remainder on equispaced nodes, e.g. Trefethen 2019,
/// Approximation Theory and Approximation Practice, ch. 5): with mh ≤ π/4 (every mode of the
/// interpolant) that is below 7e-8 of the amplitude for the highest modes and far below the
/// rounding level for the smooth part of a curve, whose amplitudes fall spectrally.
#[derive(Debug, Clone, PartialEq)]
pub struct InterpolantTable {
    /// R(ψ_j) + iR′(ψ_j) at ψ_j = j h, stored in 2^`shift` interleaved parts: node j is
    /// `parts[j mod 2^shift][j >> shift]`.
    parts: Vec<Vec<Complex<f64>>>,
    /// log₂ of the number of parts (0: one array; 2: the four parts of a long table).
    shift: u32,
    /// G, the number of nodes.
    nodes: usize,
    /// Grid spacing h = 2π/G.
    step: f64,
    /// Barycentric weights of the stencil.
    weights: [f64; STENCIL],
}

/// y_j = Σ_{|m| ≤ top} X_m e^{2πimj/G}, j = 0..G, for G = 4M with M ≥ 2·top: the samples
/// j = 4p + q are y_{4p+q} = Σ_m (X_m w^{mq}) e^{2πimp/M}, w = e^{2πi/G}, so the four
/// residues q are four inverse DFTs of M points of the twiddled spectrum folded mod M
/// (one radix-4 step of decimation in frequency: the output index split by its residue, the
/// input folded; Cooley & Tukey 1965, Math. Comp. 19, 297), computed in parallel and returned
/// as the parts q = 0..4. `spectrum(m, negative)` gives X_{±m}.
fn interleaved_inverse(
    g: usize,
    top: usize,
    spectrum: &(impl Fn(usize, bool) -> Complex<f64> + Sync),
) -> Vec<Vec<Complex<f64>>> {
    let quarter = g / TABLE_OVERSAMPLING;
    debug_assert!(2 * top <= quarter);
    // w^m, m = 0..=top, in parallel.
    let twiddles: Vec<Complex<f64>> = (0..top + 1)
        .into_par_iter()
        .with_min_len(PARALLEL_CHUNK)
        .with_max_len(2 * PARALLEL_CHUNK)
        .map(|m| {
            let (s, c) = (TAU * m as f64 / g as f64).sin_cos();
            Complex::new(c, s)
        })
        .collect();
    (0..TABLE_OVERSAMPLING)
        .into_par_iter()
        .map(|q| {
            let mut folded = vec![Complex::new(0.0, 0.0); quarter];
            // X_m w^{mq} at m (top ≤ M/2: no folding), X_{−m} w^{−mq} at M − m (the Nyquist
            // terms ±M/2 share a slot).
            for (m, &w1) in twiddles.iter().enumerate() {
                let w = match q {
                    0 => Complex::new(1.0, 0.0),
                    1 => w1,
                    2 => w1 * w1,
                    _ => w1 * w1 * w1,
                };
                folded[m] += spectrum(m, false) * w;
                if m > 0 {
                    folded[quarter - m] += spectrum(m, true) * w.conj();
                }
            }
            fft_in_place(FftDirection::Inverse, &mut folded);
            folded
        })
        .collect()
}

/// Barycentric weights (−1)^k C(p−1, k) of p equispaced nodes.
fn stencil_weights() -> [f64; STENCIL] {
    let mut w = [0.0; STENCIL];
    let mut binomial = 1.0;
    for (k, slot) in w.iter_mut().enumerate() {
        *slot = if k % 2 == 0 { binomial } else { -binomial };
        binomial = binomial * (STENCIL - 1 - k) as f64 / (k + 1) as f64;
    }
    w
}

impl InterpolantTable {
    fn new(interp: &TrigInterpolant) -> Self {
        let top = interp.coefficients.len();
        let g = (TABLE_OVERSAMPLING * 2 * top.max(1)).max(TABLE_MIN_GRID);
        // R = Σ_m X_m e^{imψ}: X_0 = a₀/2, X_{±m} = (a_m ∓ i b_m)/2; R′ has i m X_m, so
        // R + iR′ has (1 − m) X_m, m = −top, …, top.
        let spectrum = |m: usize, negative: bool| -> Complex<f64> {
            if m == 0 {
                return Complex::new(interp.mean, 0.0);
            }
            let (a, b) = interp.coefficients[m - 1];
            let m = m as f64;
            if negative {
                Complex::new(0.5 * a, 0.5 * b) * (1.0 + m)
            } else {
                Complex::new(0.5 * a, -0.5 * b) * (1.0 - m)
            }
        };
        let (parts, shift) = if g < FFT_SPLIT_MIN {
            let mut padded = vec![Complex::new(0.0, 0.0); g];
            for m in 0..=top {
                padded[m] = spectrum(m, false);
                if m > 0 {
                    padded[g - m] = spectrum(m, true);
                }
            }
            fft_in_place(FftDirection::Inverse, &mut padded);
            (vec![padded], 0)
        } else {
            (
                interleaved_inverse(g, top, &spectrum),
                TABLE_OVERSAMPLING.trailing_zeros(),
            )
        };
        InterpolantTable {
            parts,
            shift,
            nodes: g,
            step: TAU / g as f64,
            weights: stencil_weights(),
        }
    }

    /// R + iR′ at node j (0 ≤ j < G).
    fn node(&self, j: usize) -> Complex<f64> {
        self.parts[j & ((1 << self.shift) - 1)][j >> self.shift]
    }

    /// [R(ψ), R′(ψ)] of the interpolant.
    pub fn radius_slope(&self, psi: f64) -> [f64; 2] {
        let g = self.nodes;
        let t = psi.rem_euclid(TAU) / self.step;
        let j0 = t.floor();
        let s = t - j0;
        // Nodes j0 − 7, …, j0 + 8 at positions 0, …, 15; ψ sits at position 7 + s, s in [0, 1).
        let centre = STENCIL / 2 - 1;
        let first = (j0 as usize % g + g - centre) % g;
        let wrapped = |j: usize| if j >= g { j - g } else { j };
        if s == 0.0 {
            let z = self.node(wrapped(first + centre));
            return [z.re, z.im];
        }
        let (mut num_r, mut num_dr, mut den) = (0.0, 0.0, 0.0);
        for (k, w) in self.weights.iter().enumerate() {
            let z = self.node(wrapped(first + k));
            let (r, dr) = (z.re, z.im);
            // s − (k − 7), exact and non-zero for s in (0, 1).
            let c = w / (s - (k as f64 - centre as f64));
            num_r += c * r;
            num_dr += c * dr;
            den += c;
        }
        [num_r / den, num_dr / den]
    }

    /// R(ψ) of the interpolant.
    pub fn radius(&self, psi: f64) -> f64 {
        self.radius_slope(psi)[0]
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_first_bad_radius_is_reported_in_a_long_curve() {
        // Two bad radii in different parallel chunks: the first in order is named.
        let mut curve = CriticalCurve::circle([0.0, 0.0], 1.0, 20_000);
        curve.radii[15_000] = -1.0;
        curve.radii[9_001] = f64::NAN;
        let problem = curve.validate(4).unwrap_err();
        assert!(problem.contains("radius 9001 is NaN"), "{problem}");
    }

    /// R(ψ) = 5 + 0.3 cos 3ψ + 0.1 sin 7ψ + 10⁻³ cos 4000ψ and its first two derivatives.
    fn exact(psi: f64) -> [f64; 3] {
        let (c3, s7, c4k) = ((3.0 * psi).cos(), (7.0 * psi).sin(), (4000.0 * psi).cos());
        let (s3, c7, s4k) = ((3.0 * psi).sin(), (7.0 * psi).cos(), (4000.0 * psi).sin());
        [
            5.0 + 0.3 * c3 + 0.1 * s7 + 1e-3 * c4k,
            -0.9 * s3 + 0.7 * c7 - 4.0 * s4k,
            -2.7 * c3 - 4.9 * s7 - 1.6e4 * c4k,
        ]
    }

    /// The split transforms (a curve of more than FFT_SPLIT_MIN samples, a series of more
    /// than SUM_CHUNK terms, a table of more than FFT_SPLIT_MIN points) give the trigonometric
    /// polynomial sampled: its coefficients, values and derivatives (closed forms above).
    #[test]
    fn split_transforms_reproduce_a_trigonometric_polynomial() {
        for n in [20_000usize, 20_001] {
            let curve = CriticalCurve::from_polar([0.1, -0.2], n, |p| exact(p)[0]);
            let interp = curve.interpolant();
            assert!(interp.coefficients().len() > SUM_CHUNK);
            assert!((interp.mean() - 5.0).abs() < 1e-14);
            for (i, &(a, b)) in interp.coefficients().iter().enumerate() {
                let expected = match i + 1 {
                    3 => (0.3, 0.0),
                    7 => (0.0, 0.1),
                    4000 => (1e-3, 0.0),
                    _ => (0.0, 0.0),
                };
                assert!(
                    (a - expected.0).abs() < 1e-14 && (b - expected.1).abs() < 1e-14,
                    "n = {n}, m = {}: ({a}, {b})",
                    i + 1
                );
            }
            let table = interp.table();
            for psi in [0.0, 1e-4, 0.7, 2.0, 3.3, 6.2] {
                let [r, dr, ddr] = interp.radius_derivatives(psi);
                let [er, edr, eddr] = exact(psi);
                assert!((r - er).abs() < 1e-12, "{psi}: {r} vs {er}");
                assert!((dr - edr).abs() < 1e-9, "{psi}: {dr} vs {edr}");
                assert!((ddr - eddr).abs() < 1e-5, "{psi}: {ddr} vs {eddr}");
                let [tr, tdr] = table.radius_slope(psi);
                assert!((tr - er).abs() < 1e-12, "{psi}: table {tr} vs {er}");
                assert!((tdr - edr).abs() < 1e-9, "{psi}: table {tdr} vs {edr}");
            }
        }
    }

    /// The four interleaved inverse DFTs equal the one zero-padded inverse DFT of G points,
    /// for pseudo-random coefficients with a non-zero Nyquist term (the slot ±top share).
    #[test]
    fn interleaved_inverse_equals_the_padded_transform() {
        let top = 2048;
        let g = 8 * top;
        assert!(g >= FFT_SPLIT_MIN);
        // A fixed linear congruential sequence in [−0.5, 0.5).
        let mut state = 12345u64;
        let mut next = move || {
            state = state
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (state >> 11) as f64 / (1u64 << 53) as f64 - 0.5
        };
        let mut spectrum_values = vec![(Complex::new(0.0, 0.0), Complex::new(0.0, 0.0)); top + 1];
        for v in spectrum_values.iter_mut() {
            *v = (Complex::new(next(), next()), Complex::new(next(), next()));
        }
        spectrum_values[0].1 = spectrum_values[0].0;
        assert!(spectrum_values[top].0.norm() > 0.1 && spectrum_values[top].1.norm() > 0.1);
        let spectrum = |m: usize, negative: bool| {
            let (p, n) = spectrum_values[m];
            if negative {
                n
            } else {
                p
            }
        };
        let parts = interleaved_inverse(g, top, &spectrum);
        let mut padded = vec![Complex::new(0.0, 0.0); g];
        for m in 0..=top {
            padded[m] += spectrum(m, false);
            if m > 0 {
                padded[g - m] += spectrum(m, true);
            }
        }
        FftPlanner::new().plan_fft_inverse(g).process(&mut padded);
        for (j, z) in padded.iter().enumerate() {
            let w = parts[j % 4][j / 4];
            assert!((w - z).norm() < 1e-11, "node {j}: {w} vs {z}");
        }
    }
}
