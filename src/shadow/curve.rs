//! A closed critical curve on the observer's screen, sampled uniformly in polar angle.

use serde::Serialize;

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
    /// Polar angle of sample `k`.
    pub fn angle(&self, k: usize) -> f64 {
        std::f64::consts::TAU * k as f64 / self.radii.len() as f64
    }

    /// Screen coordinates (α_k, β_k) of the samples.
    pub fn alpha_beta(&self) -> (Vec<f64>, Vec<f64>) {
        (0..self.radii.len())
            .map(|k| {
                let (s, c) = self.angle(k).sin_cos();
                (self.origin[0] + self.radii[k] * c, self.origin[1] + self.radii[k] * s)
            })
            .unzip()
    }
}
