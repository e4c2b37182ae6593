//! The Rezzolla–Zhidenko parametrization of static, spherically symmetric black holes
//! (Rezzolla & Zhidenko 2014, Phys. Rev. D 90, 084009), truncated after a2 and b2:
//!
//! ds² = −N² dt² + (B²/N²) dr² + r² dΩ², x = 1 − r0/r, r0 = 2/(1 + ε),
//! N² = x A(x), A = 1 − ε(1 − x) + (a0 − ε)(1 − x)² + Ã(x)(1 − x)³, Ã = a1/(1 + a2 x),
//! B = 1 + b0(1 − x) + B̃(x)(1 − x)², B̃ = b1/(1 + b2 x).
//!
//! All deviation parameters zero is Schwarzschild. The horizon is at r0 by construction.

use crate::declare_metric;
use crate::metric::{Domain, SphericalMetric};
use crate::scalar::DualScalar;

declare_metric! {
    /// The Rezzolla–Zhidenko metric with parameters (ε, a0, b0, a1, a2, b1, b2).
    #[derive(Debug, Clone, Copy, PartialEq)]
    pub struct RezzollaZhidenko {
        name: "rezzolla-zhidenko",
        title: "Rezzolla–Zhidenko parametrization",
        reference: "Rezzolla & Zhidenko 2014, Phys. Rev. D 90, 084009",
        parameters: {
            epsilon: {
                default: 0.0,
                domain: Domain::greater_than(-1.0),
                meaning: "horizon shift: r0 = 2/(1 + epsilon)",
            },
            a0: {
                default: 0.0,
                domain: Domain::REAL,
                meaning: "post-Newtonian coefficient of N^2 (PPN)",
            },
            b0: {
                default: 0.0,
                domain: Domain::REAL,
                meaning: "post-Newtonian coefficient of B (PPN)",
            },
            a1: {
                default: 0.0,
                domain: Domain::REAL,
                meaning: "first continued-fraction coefficient of N^2",
            },
            a2: {
                default: 0.0,
                domain: Domain::REAL,
                meaning: "second continued-fraction coefficient of N^2",
            },
            b1: {
                default: 0.0,
                domain: Domain::REAL,
                meaning: "first continued-fraction coefficient of B",
            },
            b2: {
                default: 0.0,
                domain: Domain::REAL,
                meaning: "second continued-fraction coefficient of B",
            },
        },
    }
}

impl RezzollaZhidenko {
    fn r0(&self) -> f64 {
        2.0 / (1.0 + self.epsilon)
    }

    /// N²(r).
    fn n2<D: DualScalar>(&self, r: D) -> D {
        let (eps, a0, a1, a2) = (self.epsilon, self.a0, self.a1, self.a2);
        let y = r.recip() * self.r0(); // 1 − x
        let x = -y + 1.0;
        let a_tilde = (x * a2 + 1.0).recip() * a1;
        let a = -(y * eps) + 1.0 + y * y * (a0 - eps) + a_tilde * y * y * y;
        x * a
    }

    /// B(r).
    fn big_b<D: DualScalar>(&self, r: D) -> D {
        let (b0, b1, b2) = (self.b0, self.b1, self.b2);
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
}
