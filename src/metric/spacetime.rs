//! The object-safe view of a metric, [`Spacetime`], given to every [`Metric`] by a blanket impl.
//!
//! Solvers and the command line hold `Box<dyn Spacetime>`; every method here is derived from
//! [`Metric::components`] by dual numbers, so no implementor writes a derivative. Its method
//! names are its own: none repeats a method of [`Metric`], [`Declared`](super::Declared) or
//! [`SphericalMetric`](super::SphericalMetric), so on a concrete metric `m.outer_horizon()`
//! is never ambiguous.

use super::{Capabilities, Metric, MetricComponents, MetricInfo, Symmetry};
use crate::error::MetricError;
use nalgebra::{Matrix4, SVector};
use num_dual::{hessian, Derivative, Dual, Dual2_64, DualSVec64, DualVec, HyperDual64};
use serde::Serialize;

/// Christoffel symbols Γ^μ_{αβ}, indexed `[mu][alpha][beta]` in the order (t, r, θ, φ).
pub type Christoffel = [[[f64; 4]; 4]; 4];

/// Hamilton's equations' right-hand side for H(x, p) = ½ g^{μν}(x) p_μ p_ν.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct PhaseGradient {
    /// The value of H.
    pub h: f64,
    /// ∂H/∂x^μ in the order (t, r, θ, φ); the t and φ entries vanish by symmetry.
    pub dh_dx: [f64; 4],
    /// ∂H/∂p_μ = g^{μν} p_ν, i.e. dx^μ/dτ.
    pub dh_dp: [f64; 4],
}

/// Values and first and second r-derivatives of the spherical functions A, B, C.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SphericalJet {
    /// [A, A′, A″]
    pub a: [f64; 3],
    /// [B, B′, B″]
    pub b: [f64; 3],
    /// [C, C′, C″]
    pub c: [f64; 3],
}

/// A separation potential with its gradient and Hessian in (x, λ, η), where x is r or θ.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct PotentialJet {
    /// The potential.
    pub value: f64,
    /// Its derivatives in (x, λ, η).
    pub gradient: [f64; 3],
    /// Its second derivatives in (x, λ, η).
    pub hessian: [[f64; 3]; 3],
}

/// R(r; λ, η) expanded in λ and η.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct RadialLambdaJet {
    /// [R, ∂_λR, ∂²_λR].
    pub value: [f64; 3],
    /// The r-derivatives of `value`.
    pub d_r: [f64; 3],
    /// [∂_ηR, ∂_r∂_ηR].
    pub eta: [f64; 2],
}

/// What kind of object a parameter point describes.
///
/// ```
/// use umbral::prelude::*;
///
/// // Reissner–Nordström: r₊ = 1 + √(1 − q²) for |q| ≤ 1, no horizon beyond (Reissner 1916,
/// // Nordström 1918).
/// let charged = ReissnerNordstrom::new(0.6).unwrap();
/// assert_eq!(charged.classify(), Classification::BlackHole { outer_horizon: 1.8 });
/// let naked = ReissnerNordstrom::new(1.1).unwrap();
/// assert_eq!(naked.classify(), Classification::Horizonless);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum Classification {
    /// A black hole with this outer horizon radius.
    BlackHole {
        /// The outer horizon radius r₊.
        outer_horizon: f64,
    },
    /// No horizon: a naked singularity, a wormhole or another horizonless object.
    Horizonless,
}

/// Object-safe geometry of a stationary, axisymmetric spacetime, at points `(r, θ)`.
///
/// Implemented for every [`Metric`]; users never implement it. The structure queries
/// (`symmetry`, `is_separable`, `is_equatorially_symmetric`) read the metric's declared
/// [`Capabilities`]; the jets of a declared structure whose hook returns nothing are the error
/// [`MetricError::MissingHook`], and those of an undeclared one [`MetricError::NotDeclared`].
///
/// ```
/// use umbral::prelude::*;
///
/// let m: Box<dyn Spacetime> = build_metric("schwarzschild", &[]).unwrap();
/// let equator = std::f64::consts::FRAC_PI_2;
/// // The photon sphere r = 3 with impact parameter b = L/E = 3√3 (Synge 1966, MNRAS 131, 463):
/// // a null momentum, H = ½ g^{μν} p_μ p_ν = 0.
/// let h = m.hamiltonian(3.0, equator, &[-1.0, 0.0, 0.0, 27f64.sqrt()]);
/// assert!(h.abs() < 1e-14);
/// // Γ^r_tt = ½ A dA/dr with A = 1 − 2/r, B = 1/A: (1 − 2/r)/r² (Schwarzschild 1916).
/// let gamma = m.christoffel(3.0, 1.0);
/// assert!((gamma[1][0][0] - (1.0 - 2.0 / 3.0) / 9.0).abs() < 1e-15);
/// assert_eq!(m.classify(), Classification::BlackHole { outer_horizon: 2.0 });
/// ```
pub trait Spacetime: Send + Sync {
    /// Name, reference and parameter specifications.
    fn info(&self) -> MetricInfo;
    /// Current parameter values, in the order of `info().parameters`.
    fn parameter_values(&self) -> Vec<f64>;
    /// The declared symmetry.
    fn symmetry(&self) -> Symmetry;
    /// Whether the metric declares θ → π − θ reflection symmetry.
    fn is_equatorially_symmetric(&self) -> bool;
    /// Whether the metric declares separation data (radial and polar potentials).
    fn is_separable(&self) -> bool;
    /// The five covariant components.
    fn components_at(&self, r: f64, theta: f64) -> MetricComponents<f64>;
    /// The covariant metric g_{μν} as a 4×4 matrix.
    fn metric(&self, r: f64, theta: f64) -> Matrix4<f64>;
    /// The inverse metric g^{μν}.
    fn inverse_metric(&self, r: f64, theta: f64) -> Matrix4<f64>;
    /// First derivatives ∂_λ g_{μν}, indexed `[lambda]`; the t and φ entries are zero.
    fn metric_derivatives(&self, r: f64, theta: f64) -> [Matrix4<f64>; 4];
    /// Second derivatives ∂_i ∂_j g_{μν} for i, j ∈ {r, θ}, indexed `[i][j]` (0 = r, 1 = θ).
    fn metric_second_derivatives(&self, r: f64, theta: f64) -> [[Matrix4<f64>; 2]; 2];
    /// Γ^μ_{αβ} = ½ g^{μν}(∂_α g_{νβ} + ∂_β g_{να} − ∂_ν g_{αβ}).
    fn christoffel(&self, r: f64, theta: f64) -> Christoffel;
    /// H = ½ g^{μν} p_μ p_ν for covariant momenta p = (p_t, p_r, p_θ, p_φ).
    fn hamiltonian(&self, r: f64, theta: f64, p: &[f64; 4]) -> f64;
    /// H with its exact gradient in x and p, from one dual-number evaluation.
    fn hamiltonian_gradient(&self, r: f64, theta: f64, p: &[f64; 4]) -> PhaseGradient;
    /// Hessian of H in (r, θ) at fixed p, `[[H_rr, H_rθ], [H_θr, H_θθ]]`.
    fn hamiltonian_hessian(&self, r: f64, theta: f64, p: &[f64; 4]) -> [[f64; 2]; 2];
    /// Outer horizon radius, if any.
    fn outer_horizon(&self) -> Option<f64>;
    /// The Kerr–Newman form of the radial potential, if the metric declares it
    /// ([`super::Metric::carter_radial`]).
    fn carter_radial(&self) -> Option<super::CarterRadial>;
    /// Black hole (with its outer horizon) or horizonless.
    fn classify(&self) -> Classification;
    /// A, B, C and their first two r-derivatives, for a metric declared spherical.
    fn spherical_jet(&self, r: f64) -> Result<SphericalJet, MetricError>;
    /// The radial potential R(r; λ, η) with gradient and Hessian in (r, λ, η).
    fn radial_potential_jet(
        &self,
        r: f64,
        lambda: f64,
        eta: f64,
    ) -> Result<PotentialJet, MetricError>;
    /// The radial potential's derivatives in λ (to second order) and η (first order), each with
    /// its r-derivative, at (r; λ, η): exact, and cheaper than
    /// [`Spacetime::radial_potential_jet`] (nested and hyper-dual numbers instead of a full
    /// three-variable Hessian).
    fn radial_potential_lambda_jet(
        &self,
        r: f64,
        lambda: f64,
        eta: f64,
    ) -> Result<RadialLambdaJet, MetricError>;
    /// The polar potential Θ(θ; λ, η) with gradient and Hessian in (θ, λ, η).
    fn polar_potential_jet(
        &self,
        theta: f64,
        lambda: f64,
        eta: f64,
    ) -> Result<PotentialJet, MetricError>;
}

/// What the metric declares, as the view checks it before asking a hook.
fn require<M: Metric + ?Sized>(
    m: &M,
    declared: impl Fn(&Capabilities) -> bool,
    structure: &'static str,
) -> Result<(), MetricError> {
    if declared(&m.capabilities()) {
        Ok(())
    } else {
        Err(MetricError::NotDeclared {
            metric: m.declared_info().name,
            structure,
        })
    }
}

/// A declared hook that returned nothing.
fn missing<M: Metric + ?Sized>(m: &M, structure: &'static str, hook: &'static str) -> MetricError {
    MetricError::MissingHook {
        metric: m.declared_info().name,
        structure,
        hook,
    }
}

const SPHERICAL: &str = "spherical symmetry";
const SEPARABLE: &str = "separation data";

fn spherical<M: Metric + ?Sized>(m: &M) -> Result<(), MetricError> {
    require(m, |c| c.spherical, SPHERICAL)
}

fn separable<M: Metric + ?Sized>(m: &M) -> Result<(), MetricError> {
    require(m, |c| c.separable, SEPARABLE)
}

/// A dual number seeded with derivative direction `i` of two variables (0 = r, 1 = θ).
#[inline(always)]
fn seeded(x: f64, i: usize) -> DualSVec64<2> {
    let mut e = SVector::<f64, 2>::zeros();
    e[i] = 1.0;
    DualVec::new(x, Derivative::some(e))
}

#[inline(always)]
fn eps2(x: &DualSVec64<2>) -> [f64; 2] {
    x.eps.0.map_or([0.0, 0.0], |m| [m[0], m[1]])
}

/// Components with their (r, θ) gradients from one evaluation.
#[inline]
fn components_with_gradient<M: Metric + ?Sized>(
    m: &M,
    r: f64,
    theta: f64,
) -> MetricComponents<DualSVec64<2>> {
    m.components(seeded(r, 0), seeded(theta, 1))
}

/// Components as 4×4 matrices: value and ∂_r, ∂_θ.
fn matrices_with_gradient<M: Metric + ?Sized>(m: &M, r: f64, theta: f64) -> [Matrix4<f64>; 3] {
    let c = components_with_gradient(m, r, theta);
    let value = c.map(|x| x.re).matrix();
    let d_r = c.map(|x| eps2(x)[0]).matrix();
    let d_theta = c.map(|x| eps2(x)[1]).matrix();
    [value, d_r, d_theta]
}

fn jet_of(
    f: impl Fn(SVector<num_dual::Dual2SVec64<3>, 3>) -> Option<num_dual::Dual2SVec64<3>>,
    x: [f64; 3],
) -> Option<PotentialJet> {
    let (value, grad, hess) = hessian(f, &SVector::from(x))?;
    Some(PotentialJet {
        value,
        gradient: [grad[0], grad[1], grad[2]],
        hessian: [
            [hess[(0, 0)], hess[(0, 1)], hess[(0, 2)]],
            [hess[(1, 0)], hess[(1, 1)], hess[(1, 2)]],
            [hess[(2, 0)], hess[(2, 1)], hess[(2, 2)]],
        ],
    })
}

impl<M: Metric> Spacetime for M {
    fn info(&self) -> MetricInfo {
        self.declared_info()
    }

    fn parameter_values(&self) -> Vec<f64> {
        self.declared_values()
    }

    fn symmetry(&self) -> Symmetry {
        self.capabilities().symmetry()
    }

    fn is_equatorially_symmetric(&self) -> bool {
        self.capabilities().equatorially_symmetric
    }

    fn is_separable(&self) -> bool {
        self.capabilities().separable
    }

    fn components_at(&self, r: f64, theta: f64) -> MetricComponents<f64> {
        self.components(r, theta)
    }

    fn metric(&self, r: f64, theta: f64) -> Matrix4<f64> {
        self.components(r, theta).matrix()
    }

    fn inverse_metric(&self, r: f64, theta: f64) -> Matrix4<f64> {
        self.components(r, theta).inverse().matrix()
    }

    fn metric_derivatives(&self, r: f64, theta: f64) -> [Matrix4<f64>; 4] {
        let [_, d_r, d_theta] = matrices_with_gradient(self, r, theta);
        [Matrix4::zeros(), d_r, d_theta, Matrix4::zeros()]
    }

    fn metric_second_derivatives(&self, r: f64, theta: f64) -> [[Matrix4<f64>; 2]; 2] {
        let mut out = [[Matrix4::zeros(); 2]; 2];
        // One hyper-dual-style evaluation per component: the Hessian of each g_{μν} in (r, θ).
        let pick: [fn(&MetricComponents<num_dual::Dual2SVec64<2>>) -> num_dual::Dual2SVec64<2>; 5] = [
            |c| c.g_tt,
            |c| c.g_tphi,
            |c| c.g_rr,
            |c| c.g_thth,
            |c| c.g_phph,
        ];
        let slots = [(0, 0), (0, 3), (1, 1), (2, 2), (3, 3)];
        for (f, (mu, nu)) in pick.iter().zip(slots) {
            let (_, _, h) = hessian(
                |x: SVector<num_dual::Dual2SVec64<2>, 2>| f(&self.components(x[0], x[1])),
                &SVector::from([r, theta]),
            );
            for i in 0..2 {
                for j in 0..2 {
                    out[i][j][(mu, nu)] = h[(i, j)];
                    out[i][j][(nu, mu)] = h[(i, j)];
                }
            }
        }
        out
    }

    fn christoffel(&self, r: f64, theta: f64) -> Christoffel {
        let [g, d_r, d_theta] = matrices_with_gradient(self, r, theta);
        let g_inv = self.components(r, theta).inverse().matrix();
        let dg = [Matrix4::zeros(), d_r, d_theta, Matrix4::zeros()];
        let _ = g;
        let mut gamma = [[[0.0; 4]; 4]; 4];
        for (mu, gamma_mu) in gamma.iter_mut().enumerate() {
            for alpha in 0..4 {
                for beta in alpha..4 {
                    let mut sum = 0.0;
                    for nu in 0..4 {
                        let inv = g_inv[(mu, nu)];
                        if inv != 0.0 {
                            sum += inv
                                * (dg[alpha][(nu, beta)] + dg[beta][(nu, alpha)]
                                    - dg[nu][(alpha, beta)]);
                        }
                    }
                    gamma_mu[alpha][beta] = 0.5 * sum;
                    gamma_mu[beta][alpha] = 0.5 * sum;
                }
            }
        }
        gamma
    }

    fn hamiltonian(&self, r: f64, theta: f64, p: &[f64; 4]) -> f64 {
        self.components(r, theta).inverse().hamiltonian(p)
    }

    /// With u^μ = g^{μν} p_ν: ∂H/∂p_μ = u^μ and ∂H/∂x = −½ u^α u^β ∂_x g_αβ, from the
    /// derivative of a matrix inverse, ∂g^{μν} = −g^{μα} ∂g_αβ g^{βν} (Petersen & Pedersen,
    /// "The Matrix Cookbook", 2012, eq. 59; equation number from memory). Only the covariant
    /// components carry derivatives; the inverse is taken on their values. Near the axis the
    /// p_t² parts of the θ-force are each O(sin θ) (g^tt and g^tφ stay finite there), and the
    /// centrifugal p_φ² cos θ/sin³θ part is one product, so nothing cancels.
    #[inline]
    fn hamiltonian_gradient(&self, r: f64, theta: f64, p: &[f64; 4]) -> PhaseGradient {
        let g = components_with_gradient(self, r, theta);
        let inv = g.map(|x| x.re).inverse();
        let [pt, pr, pth, pph] = *p;
        let u = [
            inv.g_tt * pt + inv.g_tphi * pph,
            inv.g_rr * pr,
            inv.g_thth * pth,
            inv.g_tphi * pt + inv.g_phph * pph,
        ];
        let [d_tt, d_tphi, d_rr, d_thth, d_phph] =
            [g.g_tt, g.g_tphi, g.g_rr, g.g_thth, g.g_phph].map(|x| eps2(&x));
        let force = |k: usize| {
            -0.5 * (u[0] * u[0] * d_tt[k]
                + 2.0 * u[0] * u[3] * d_tphi[k]
                + u[3] * u[3] * d_phph[k]
                + u[1] * u[1] * d_rr[k]
                + u[2] * u[2] * d_thth[k])
        };
        PhaseGradient {
            h: inv.hamiltonian(p),
            dh_dx: [0.0, force(0), force(1), 0.0],
            dh_dp: u,
        }
    }

    fn hamiltonian_hessian(&self, r: f64, theta: f64, p: &[f64; 4]) -> [[f64; 2]; 2] {
        let (_, _, h) = hessian(
            |x: SVector<num_dual::Dual2SVec64<2>, 2>| {
                self.components(x[0], x[1]).inverse().hamiltonian(p)
            },
            &SVector::from([r, theta]),
        );
        [[h[(0, 0)], h[(0, 1)]], [h[(1, 0)], h[(1, 1)]]]
    }

    fn outer_horizon(&self) -> Option<f64> {
        self.declared_horizon().radius(self)
    }

    fn carter_radial(&self) -> Option<super::CarterRadial> {
        Metric::carter_radial(self)
    }

    fn classify(&self) -> Classification {
        match self.outer_horizon() {
            Some(outer_horizon) => Classification::BlackHole { outer_horizon },
            None => Classification::Horizonless,
        }
    }

    fn spherical_jet(&self, r: f64) -> Result<SphericalJet, MetricError> {
        spherical(self)?;
        let f = self
            .spherical_functions(Dual2_64::from_re(r).derivative())
            .ok_or_else(|| missing(self, SPHERICAL, "spherical_functions"))?;
        let jet = |x: Dual2_64| [x.re, x.v1, x.v2];
        Ok(SphericalJet {
            a: jet(f.a),
            b: jet(f.b),
            c: jet(f.c),
        })
    }

    fn radial_potential_jet(
        &self,
        r: f64,
        lambda: f64,
        eta: f64,
    ) -> Result<PotentialJet, MetricError> {
        separable(self)?;
        jet_of(
            |x| self.radial_potential(x[0], x[1], x[2]),
            [r, lambda, eta],
        )
        .ok_or_else(|| missing(self, SEPARABLE, "radial_potential"))
    }

    fn radial_potential_lambda_jet(
        &self,
        r: f64,
        lambda: f64,
        eta: f64,
    ) -> Result<RadialLambdaJet, MetricError> {
        separable(self)?;
        let none = || missing(self, SEPARABLE, "radial_potential");
        // Outer dual: d/dr; inner second-order dual: d/dλ, d²/dλ².
        let rr = Dual::new(Dual2_64::from(r), Dual2_64::from(1.0));
        let ll = Dual::from_re(Dual2_64::from_re(lambda).derivative());
        let v = self
            .radial_potential(rr, ll, Dual::from_re(Dual2_64::from(eta)))
            .ok_or_else(none)?;
        // Hyper-dual: ε₁ = d/dr, ε₂ = d/dη.
        let w = self
            .radial_potential(
                HyperDual64::from_re(r).derivative1(),
                HyperDual64::from(lambda),
                HyperDual64::from_re(eta).derivative2(),
            )
            .ok_or_else(none)?;
        Ok(RadialLambdaJet {
            value: [v.re.re, v.re.v1, v.re.v2],
            d_r: [v.eps.re, v.eps.v1, v.eps.v2],
            eta: [w.eps2, w.eps1eps2],
        })
    }

    fn polar_potential_jet(
        &self,
        theta: f64,
        lambda: f64,
        eta: f64,
    ) -> Result<PotentialJet, MetricError> {
        separable(self)?;
        jet_of(
            |x| self.polar_potential(x[0], x[1], x[2]),
            [theta, lambda, eta],
        )
        .ok_or_else(|| missing(self, SEPARABLE, "polar_potential"))
    }
}

/// Every parameter of a metric instance by name, with its value.
///
/// ```
/// use umbral::metric::parameter_map;
/// use umbral::metrics::KerrNewman;
/// let m = parameter_map(&KerrNewman::new(0.5, 0.3).unwrap());
/// assert_eq!((m["a"], m["q"]), (0.5, 0.3));
/// ```
pub fn parameter_map(spacetime: &dyn Spacetime) -> std::collections::BTreeMap<String, f64> {
    spacetime
        .info()
        .parameters
        .iter()
        .map(|p| p.name.clone())
        .zip(spacetime.parameter_values())
        .collect()
}
