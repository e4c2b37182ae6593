//! A closed critical curve on the observer's screen, sampled uniformly in polar angle, and its
//! trigonometric (Fourier) interpolant.

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
/// a_m = (2/N) Σ_k R_k cos(mψ_k), b_m = (2/N) Σ_k R_k sin(mψ_k) (the real discrete Fourier
/// transform, computed directly in O(N²)). For a smooth periodic R it converges spectrally,
/// so it evaluates the curve, and its derivatives, between samples to near machine precision
/// (e.g. Trefethen 2000, Spectral Methods in MATLAB, ch. 3).
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
        let table: Vec<(f64, f64)> = (0..n)
            .map(|j| (TAU * j as f64 / n as f64).sin_cos())
            .collect();
        let scale = 2.0 / n as f64;
        let mean = radii.iter().sum::<f64>() / n as f64;
        let top = n / 2;
        let mut coefficients = Vec::with_capacity(top);
        for m in 1..=top {
            let (mut a, mut b) = (0.0, 0.0);
            for (k, r) in radii.iter().enumerate() {
                let (s, c) = table[(m * k) % n];
                a += r * c;
                b += r * s;
            }
            if 2 * m == n {
                coefficients.push((0.5 * a * scale, 0.0));
            } else {
                coefficients.push((a * scale, b * scale));
            }
        }
        TrigInterpolant {
            origin,
            mean,
            coefficients,
        }
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
