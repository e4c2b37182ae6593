//! The Rezzolla–Zhidenko parametrization of static, spherically symmetric black holes
//! (Rezzolla & Zhidenko 2014, Phys. Rev. D 90, 084009), truncated after a2 and b2:
//!
//! ds² = −N² dt² + (B²/N²) dr² + r² dΩ², x = 1 − r0/r, r0 = 2/(1 + ε),
//! N² = x A(x), A = 1 − ε(1 − x) + (a0 − ε)(1 − x)² + Ã(x)(1 − x)³, Ã = a1/(1 + a2 x),
//! B = 1 + b0(1 − x) + B̃(x)(1 − x)², B̃ = b1/(1 + b2 x).
//!
//! All deviation parameters zero is Schwarzschild. The horizon is at r0 by construction.

use crate::error::MetricError;
use crate::metric::{Domain, MetricInfo, ParameterSpec, SphericalMetric};
use crate::scalar::DualScalar;

/// The Rezzolla–Zhidenko metric with parameters (ε, a0, b0, a1, a2, b1, b2).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RezzollaZhidenko {
    p: [f64; 7],
}

impl RezzollaZhidenko {
    /// From (epsilon, a0, b0, a1, a2, b1, b2).
    pub fn new(values: [f64; 7]) -> Result<Self, MetricError> {
        let spec = Self::describe().parameters;
        for (s, v) in spec.iter().zip(values) {
            s.check(v)?;
        }
        Ok(RezzollaZhidenko { p: values })
    }

    /// Name, reference and parameters.
    pub fn describe() -> MetricInfo {
        let real = |name: &str, meaning: &str| ParameterSpec::new(name, 0.0, Domain::REAL, meaning);
        MetricInfo {
            name: "rezzolla-zhidenko".into(),
            title: "Rezzolla-Zhidenko parametrization".into(),
            reference: "Rezzolla & Zhidenko 2014, Phys. Rev. D 90, 084009".into(),
            parameters: vec![
                ParameterSpec::new(
                    "epsilon",
                    0.0,
                    Domain::greater_than(-1.0),
                    "horizon shift: r0 = 2/(1 + epsilon)",
                ),
                real("a0", "post-Newtonian coefficient of N^2 (PPN)"),
                real("b0", "post-Newtonian coefficient of B (PPN)"),
                real("a1", "first continued-fraction coefficient of N^2"),
                real("a2", "second continued-fraction coefficient of N^2"),
                real("b1", "first continued-fraction coefficient of B"),
                real("b2", "second continued-fraction coefficient of B"),
            ],
        }
    }

    fn r0(&self) -> f64 {
        2.0 / (1.0 + self.p[0])
    }

    /// N²(r).
    fn n2<D: DualScalar>(&self, r: D) -> D {
        let [eps, a0, _, a1, a2, _, _] = self.p;
        let y = r.recip() * self.r0(); // 1 − x
        let x = -y + 1.0;
        let a_tilde = (x * a2 + 1.0).recip() * a1;
        let a = -(y * eps) + 1.0 + y * y * (a0 - eps) + a_tilde * y * y * y;
        x * a
    }

    /// B(r).
    fn big_b<D: DualScalar>(&self, r: D) -> D {
        let [_, _, b0, _, _, b1, b2] = self.p;
        let y = r.recip() * self.r0();
        let x = -y + 1.0;
        let b_tilde = (x * b2 + 1.0).recip() * b1;
        y * b0 + 1.0 + b_tilde * y * y
    }
}

impl SphericalMetric for RezzollaZhidenko {
    fn a<D: DualScalar>(&self, r: D) -> D {
        self.n2(r)
    }
    fn b<D: DualScalar>(&self, r: D) -> D {
        let b = self.big_b(r);
        b * b / self.n2(r)
    }
    fn c<D: DualScalar>(&self, r: D) -> D {
        r * r
    }
    fn info(&self) -> MetricInfo {
        Self::describe()
    }
    fn parameter_values(&self) -> Vec<f64> {
        self.p.to_vec()
    }
}
