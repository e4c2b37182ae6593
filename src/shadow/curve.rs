//! A closed critical curve on the observer's screen, sampled uniformly in polar angle, and its
//! trigonometric (Fourier) interpolant.

use rustfft::num_complex::Complex;
use rustfft::FftPlanner;
use serde::Serialize;
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
            radii: vec![radius; points],
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

    /// Screen coordinates (α_k, β_k) of the samples.
    pub fn alpha_beta(&self) -> (Vec<f64>, Vec<f64>) {
        (0..self.radii.len())
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
        if let Some((k, r)) = self
            .radii
            .iter()
            .enumerate()
            .find(|(_, r)| !(r.is_finite() && **r > 0.0))
        {
            return Err(format!(
                "curve radius {k} is {r}: radii must be finite and positive"
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

/// Re-seed the cos/sin recurrence from the library functions this often (bounds round-off).
const RESEED: usize = 32;

thread_local! {
    /// One FFT planner per thread: it keeps the plans (twiddle factors) of the sizes used, so
    /// the many equal-sized curves of a bound or scan are planned once.
    static PLANNER: std::cell::RefCell<FftPlanner<f64>> = std::cell::RefCell::new(FftPlanner::new());
}

fn with_planner<T>(f: impl FnOnce(&mut FftPlanner<f64>) -> T) -> T {
    PLANNER.with(|p| f(&mut p.borrow_mut()))
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
        let mut buffer: Vec<Complex<f64>> = radii.iter().map(|&r| Complex::new(r, 0.0)).collect();
        with_planner(|p| p.plan_fft_forward(n)).process(&mut buffer);
        let scale = 2.0 / n as f64;
        let mean = radii
            .iter()
            .sum::<compensated_summation::KahanBabuskaNeumaier<f64>>()
            .total()
            / n as f64;
        let coefficients = (1..=n / 2)
            .map(|m| {
                let (a, b) = (buffer[m].re, -buffer[m].im);
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

    /// R(ψ), R′(ψ), R″(ψ).
    pub fn radius_derivatives(&self, psi: f64) -> [f64; 3] {
        let (s1, c1) = psi.sin_cos();
        let (mut s, mut c) = (s1, c1);
        let (mut r, mut dr, mut ddr) = (self.mean, 0.0, 0.0);
        for (i, &(a, b)) in self.coefficients.iter().enumerate() {
            let m = (i + 1) as f64;
            if i > 0 {
                if i % RESEED == 0 {
                    (s, c) = (m * psi).sin_cos();
                } else {
                    (s, c) = (s * c1 + c * s1, c * c1 - s * s1);
                }
            }
            r += a * c + b * s;
            dr += m * (b * c - a * s);
            ddr -= m * m * (a * c + b * s);
        }
        [r, dr, ddr]
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
/// Fewest grid points of an [`InterpolantTable`] (at least twice the Lagrange stencil).
const TABLE_MIN_GRID: usize = 64;
/// Points of the local Lagrange stencil of an [`InterpolantTable`].
const STENCIL: usize = 16;

/// The trigonometric interpolant R(ψ) and its derivative R′(ψ), tabulated on a uniform grid
/// of G = 4N points (at least 64) and evaluated between grid points by 16-point Lagrange
/// interpolation in barycentric form: O(N log N) to build, O(1) per evaluation.
///
/// The grid values are exact samples of the interpolant: the coefficients, zero-padded to G
/// and multiplied by (1 − im) so that R + iR′ comes out of one inverse FFT (`rustfft`). The
/// local interpolation error for a Fourier mode m is at most about 3e-6 (mh)¹⁶ times its
/// amplitude, h = 2π/G (the Lagrange remainder on equispaced nodes, e.g. Trefethen 2019,
/// Approximation Theory and Approximation Practice, ch. 5): with mh ≤ π/4 (every mode of the
/// interpolant) that is below 7e-8 of the amplitude for the highest modes and far below the
/// rounding level for the smooth part of a curve, whose amplitudes fall spectrally.
#[derive(Debug, Clone, PartialEq)]
pub struct InterpolantTable {
    /// (R(ψ_j), R′(ψ_j)) at ψ_j = j h.
    values: Vec<(f64, f64)>,
    /// Grid spacing h = 2π/G.
    step: f64,
    /// Barycentric weights of the stencil.
    weights: [f64; STENCIL],
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
        let mut spectrum = vec![Complex::new(0.0, 0.0); g];
        // R = Σ_m X_m e^{imψ}: X_0 = a₀/2, X_{±m} = (a_m ∓ i b_m)/2; R′ has i m X_m, so
        // R + iR′ has (1 − m) X_m.
        spectrum[0] = Complex::new(interp.mean, 0.0);
        for (i, &(a, b)) in interp.coefficients.iter().enumerate() {
            let m = (i + 1) as f64;
            spectrum[i + 1] = Complex::new(0.5 * a, -0.5 * b) * (1.0 - m);
            spectrum[g - i - 1] = Complex::new(0.5 * a, 0.5 * b) * (1.0 + m);
        }
        with_planner(|p| p.plan_fft_inverse(g)).process(&mut spectrum);
        InterpolantTable {
            values: spectrum.iter().map(|z| (z.re, z.im)).collect(),
            step: TAU / g as f64,
            weights: stencil_weights(),
        }
    }

    /// [R(ψ), R′(ψ)] of the interpolant.
    pub fn radius_slope(&self, psi: f64) -> [f64; 2] {
        let g = self.values.len();
        let t = psi.rem_euclid(TAU) / self.step;
        let j0 = t.floor();
        let s = t - j0;
        // Nodes j0 − 7, …, j0 + 8 at positions 0, …, 15; ψ sits at position 7 + s, s in [0, 1).
        let centre = STENCIL / 2 - 1;
        let first = (j0 as usize % g + g - centre) % g;
        if s == 0.0 {
            let (r, dr) = self.values[(first + centre) % g];
            return [r, dr];
        }
        let (mut num_r, mut num_dr, mut den) = (0.0, 0.0, 0.0);
        for (k, w) in self.weights.iter().enumerate() {
            let (r, dr) = self.values[(first + k) % g];
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
