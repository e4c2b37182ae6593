//! Properties of the metric layer over the parameter domains: symmetry of the connection,
//! the inverse metric, the limits between the built-in metrics, the dual-number Hamiltonian
//! gradient against a hand-written closed form, finite-difference cross-checks, Carter's
//! separation of the Hamiltonian, and conservation of H along integrated null geodesics.

use proptest::prelude::*;
use std::f64::consts::PI;
use umbral::geodesic::{integrate, null_radial_momentum, Control, IntegratorSettings};
use umbral::metric::{Metric, PhaseGradient, Spacetime};
use umbral::metrics::{Kerr, KerrNewman, Schwarzschild};

/// |x − y| ≤ rtol·|y| + atol.
fn close(x: f64, y: f64, rtol: f64, atol: f64) -> bool {
    (x - y).abs() <= rtol * y.abs() + atol
}

/// Outer horizon of Kerr–Newman, r₊ = 1 + √(1 − a² − q²) (Newman et al. 1965,
/// J. Math. Phys. 6, 918).
fn kn_horizon(a: f64, q: f64) -> f64 {
    1.0 + (1.0 - a * a - q * q).max(0.0).sqrt()
}

/// A spin in (−1, 1), a charge with a² + q² < 1, and a point r ∈ (r₊ + 0.1, 50),
/// θ ∈ (0.05, π − 0.05).
fn kerr_newman_point() -> impl Strategy<Value = (f64, f64, f64, f64)> {
    (
        -0.999f64..0.999,
        -0.999f64..0.999,
        0.0f64..1.0,
        0.05f64..(PI - 0.05),
    )
        .prop_map(|(a, q_frac, u, theta)| {
            let q = q_frac * (1.0 - a * a).sqrt();
            let r_min = kn_horizon(a, q) + 0.1;
            let r = r_min + (50.0 - r_min) * u;
            (a, q, r, theta)
        })
}

/// A spin in (−1, 1) and a point outside its horizon.
fn kerr_point() -> impl Strategy<Value = (f64, f64, f64)> {
    (-0.999f64..0.999, 0.0f64..1.0, 0.05f64..(PI - 0.05)).prop_map(|(a, u, theta)| {
        let r_min = kn_horizon(a, 0.0) + 0.1;
        (a, r_min + (50.0 - r_min) * u, theta)
    })
}

/// Covariant momenta with p_t = −1 (not necessarily null: the identities below hold for any p).
fn momentum() -> impl Strategy<Value = [f64; 4]> {
    (-3.0f64..3.0, -6.0f64..6.0, -8.0f64..8.0).prop_map(|(pr, pth, pph)| [-1.0, pr, pth, pph])
}

/// Scale of the rounding in ∂H/∂r and ∂H/∂θ: the sum of the magnitudes of the terms the
/// derivative of ½ g^{μν} p_μ p_ν is made of, with the (t, φ) block of g^{μν} = adj(g)/det
/// (det = g_tt g_φφ − g_tφ²) differentiated term by term. A floating-point sum is accurate to
/// a few ulps of the sum of the magnitudes of its terms (Higham 2002, *Accuracy and Stability
/// of Numerical Algorithms*, SIAM, ch. 3), so 1e-12 times this bounds the rounding of either
/// gradient, also where the result nearly cancels.
fn gradient_term_scale(m: &dyn Spacetime, r: f64, theta: f64, p: &[f64; 4]) -> [f64; 2] {
    let g = m.components_at(r, theta);
    let dg = m.metric_derivatives(r, theta);
    let [pt, pr, pth, pph] = p.map(f64::abs);
    let det = (g.g_tt * g.g_phph - g.g_tphi * g.g_tphi).abs();
    let mut out = [0.0; 2];
    for (k, o) in out.iter_mut().enumerate() {
        let d = &dg[k + 1];
        let (d_tt, d_tph, d_rr, d_thth, d_phph) = (
            d[(0, 0)].abs(),
            d[(0, 3)].abs(),
            d[(1, 1)].abs(),
            d[(2, 2)].abs(),
            d[(3, 3)].abs(),
        );
        let d_det = d_tt * g.g_phph.abs() + g.g_tt.abs() * d_phph + 2.0 * g.g_tphi.abs() * d_tph;
        let block = |adj: f64, d_adj: f64| d_adj / det + adj.abs() * d_det / (det * det);
        let tt = block(g.g_phph, d_phph);
        let tph = block(g.g_tphi, d_tph);
        let phph = block(g.g_tt, d_tt);
        *o = 0.5
            * (tt * pt * pt
                + 2.0 * tph * pt * pph
                + phph * pph * pph
                + d_rr / (g.g_rr * g.g_rr) * pr * pr
                + d_thth / (g.g_thth * g.g_thth) * pth * pth);
    }
    out
}

fn assert_gradients_agree(dual: &PhaseGradient, exact: &PhaseGradient, scale: [f64; 2]) {
    // Relative 1e-12; the floor 1e-12 × (sum of the magnitudes of the separate terms) covers
    // components that nearly cancel (common practice, no source).
    let rtol = 1e-12;
    assert!(
        close(dual.h, exact.h, rtol, 1e-15),
        "H {} vs {}",
        dual.h,
        exact.h
    );
    for i in 1..3 {
        assert!(
            close(dual.dh_dx[i], exact.dh_dx[i], rtol, rtol * scale[i - 1]),
            "dH/dx^{i}: dual {:e} vs closed form {:e} (term scale {:e})",
            dual.dh_dx[i],
            exact.dh_dx[i],
            scale[i - 1]
        );
    }
    assert_eq!(dual.dh_dx[0], 0.0);
    assert_eq!(dual.dh_dx[3], 0.0);
    for i in 0..4 {
        assert!(
            close(dual.dh_dp[i], exact.dh_dp[i], rtol, 1e-14),
            "dH/dp_{i}: dual {:e} vs closed form {:e}",
            dual.dh_dp[i],
            exact.dh_dp[i]
        );
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 128, .. ProptestConfig::default() })]

    /// Γ^μ_{αβ} = Γ^μ_{βα}: the Levi-Civita connection is torsion-free (Carroll 2004,
    /// *Spacetime and Geometry*, ch. 3; from memory for the chapter).
    #[test]
    fn christoffels_are_symmetric((a, q, r, theta) in kerr_newman_point()) {
        let m = KerrNewman::new(a, q).unwrap();
        let gamma = m.christoffel(r, theta);
        for (mu, g) in gamma.iter().enumerate() {
            for (alpha, row) in g.iter().enumerate() {
                for (beta, value) in row.iter().enumerate() {
                    prop_assert_eq!(*value, g[beta][alpha], "mu={}", mu);
                }
            }
        }
    }

    /// g_{μλ} g^{λν} = δ_μ^ν to 1e-12 (definition of the inverse; the floor is scaled by the
    /// sum of the magnitudes of the products, common practice, no source).
    #[test]
    fn metric_times_inverse_is_identity((a, q, r, theta) in kerr_newman_point()) {
        let m = KerrNewman::new(a, q).unwrap();
        let g = m.metric(r, theta);
        let g_inv = m.inverse_metric(r, theta);
        let product = g * g_inv;
        for i in 0..4 {
            for j in 0..4 {
                let mut magnitude = 0.0f64;
                for k in 0..4 {
                    magnitude += (g[(i, k)] * g_inv[(k, j)]).abs();
                }
                let want = if i == j { 1.0 } else { 0.0 };
                prop_assert!(
                    (product[(i, j)] - want).abs() <= 1e-12 * magnitude.max(1.0),
                    "(g g^-1)[{}][{}] = {:e}", i, j, product[(i, j)]
                );
            }
        }
    }

    /// Kerr with a = 0 is Schwarzschild (Kerr 1963, Phys. Rev. Lett. 11, 237): the same
    /// components and Christoffel symbols, written through different formulas.
    #[test]
    fn kerr_at_zero_spin_is_schwarzschild(u in 0.0f64..1.0, theta in 0.05f64..(PI - 0.05)) {
        let r = 2.1 + 47.9 * u;
        let kerr = Kerr::new(0.0).unwrap();
        let (k, s) = (kerr.components_at(r, theta), Schwarzschild.components_at(r, theta));
        for (x, y) in [
            (k.g_tt, s.g_tt), (k.g_tphi, s.g_tphi), (k.g_rr, s.g_rr),
            (k.g_thth, s.g_thth), (k.g_phph, s.g_phph),
        ] {
            prop_assert!(close(x, y, 1e-13, 1e-15), "{} vs {}", x, y);
        }
        let (gk, gs) = (kerr.christoffel(r, theta), Schwarzschild.christoffel(r, theta));
        let scale = gs.iter().flatten().flatten().fold(0.0f64, |m, x| m.max(x.abs()));
        for mu in 0..4 {
            for alpha in 0..4 {
                for beta in 0..4 {
                    let (x, y) = (gk[mu][alpha][beta], gs[mu][alpha][beta]);
                    prop_assert!(close(x, y, 1e-12, 1e-15 * scale),
                        "Gamma^{}_{}{}: {} vs {}", mu, alpha, beta, x, y);
                }
            }
        }
    }

    /// Kerr–Newman with q = 0 is Kerr (Newman et al. 1965, J. Math. Phys. 6, 918).
    #[test]
    fn kerr_newman_at_zero_charge_is_kerr((a, r, theta) in kerr_point()) {
        let kn = KerrNewman::new(a, 0.0).unwrap();
        let kerr = Kerr::new(a).unwrap();
        let (x, y) = (kn.components_at(r, theta), kerr.components_at(r, theta));
        for (u, v) in [
            (x.g_tt, y.g_tt), (x.g_tphi, y.g_tphi), (x.g_rr, y.g_rr),
            (x.g_thth, y.g_thth), (x.g_phph, y.g_phph),
        ] {
            prop_assert!(close(u, v, 1e-14, 1e-16), "{} vs {}", u, v);
        }
        let (gx, gy) = (kn.christoffel(r, theta), kerr.christoffel(r, theta));
        let scale = gy.iter().flatten().flatten().fold(0.0f64, |m, x| m.max(x.abs()));
        for mu in 0..4 {
            for alpha in 0..4 {
                for beta in 0..4 {
                    let (u, v) = (gx[mu][alpha][beta], gy[mu][alpha][beta]);
                    prop_assert!(close(u, v, 1e-13, 1e-15 * scale));
                }
            }
        }
    }

    /// The dual-number gradient of H equals the hand-written one, built on Carter's form
    /// 2ΣH = −P²/Δ + (L − aE sin²θ)²/sin²θ + Δ p_r² + p_θ² (Carter 1968, Phys. Rev. 174, 1559).
    #[test]
    fn dual_gradient_equals_closed_form((a, r, theta) in kerr_point(), p in momentum()) {
        let kerr = Kerr::new(a).unwrap();
        let dual = kerr.hamiltonian_gradient(r, theta, &p);
        let exact = kerr.analytic_hamiltonian_gradient(r, theta, &p);
        let scale = gradient_term_scale(&kerr, r, theta, &p);
        assert_gradients_agree(&dual, &exact, scale);
        // ∂H/∂p_μ = g^{μν} p_ν from the inverse-metric matrix, too. The two paths evaluate the
        // components in dual and in plain arithmetic, which may differ in the last place (a
        // dual quotient rounds as a·(1/b)); the (t, φ) inverse divides by
        // Δ₂ = g_tt g_φφ − g_tφ², so such a difference grows by the block's condition number
        // κ = (|g_tt g_φφ| + g_tφ²)/|Δ₂|, large beside the horizon (first-order perturbation
        // of a 2×2 inverse; common practice, no source). Allowed: 1e-14, or 8 ulps times κ.
        let g_inv = kerr.inverse_metric(r, theta);
        let g = kerr.components_at(r, theta);
        let delta2 = g.g_tt * g.g_phph - g.g_tphi * g.g_tphi;
        let kappa = ((g.g_tt * g.g_phph).abs() + g.g_tphi * g.g_tphi) / delta2.abs();
        let relative = 1e-14f64.max(8.0 * f64::EPSILON * kappa);
        for mu in 0..4 {
            let mut sum = 0.0;
            let mut magnitude = 0.0f64;
            for nu in 0..4 {
                sum += g_inv[(mu, nu)] * p[nu];
                magnitude += (g_inv[(mu, nu)] * p[nu]).abs();
            }
            prop_assert!(
                close(dual.dh_dp[mu], sum, 0.0, relative * magnitude.max(1e-300)),
                "{} vs {sum} (condition number {kappa:.1})",
                dual.dh_dp[mu]
            );
        }
    }

    /// ∂_r g and ∂_θ g agree with a central difference, step h = 1e-5: a sanity cross-check of
    /// the dual numbers only. Allowed: 1e-6 relative (truncation ~h² ≈ 1e-10), plus the
    /// rounding of the difference quotient, a few ε|g_{μν}|/h (Press et al. 2007, *Numerical
    /// Recipes*, 3rd ed., §5.7).
    #[test]
    fn metric_derivatives_match_central_differences((a, q, r, theta) in kerr_newman_point()) {
        let m = KerrNewman::new(a, q).unwrap();
        let dg = m.metric_derivatives(r, theta);
        let h = 1e-5;
        let fd_r = (m.metric(r + h, theta) - m.metric(r - h, theta)) / (2.0 * h);
        let fd_th = (m.metric(r, theta + h) - m.metric(r, theta - h)) / (2.0 * h);
        let g = m.metric(r, theta);
        for (exact, fd, name) in [(&dg[1], &fd_r, "r"), (&dg[2], &fd_th, "theta")] {
            let scale = exact.iter().fold(0.0f64, |m, x| m.max(x.abs()));
            for ((x, y), value) in exact.iter().zip(fd.iter()).zip(g.iter()) {
                let rounding = 4.0 * f64::EPSILON * value.abs() / h;
                prop_assert!(close(*y, *x, 1e-6, 1e-8 * scale + rounding),
                    "d_{} g: dual {} vs difference {}", name, x, y);
            }
        }
        prop_assert!(dg[0].iter().all(|x| *x == 0.0));
        prop_assert!(dg[3].iter().all(|x| *x == 0.0));
    }

    /// Carter's separation (Carter 1968, Phys. Rev. 174, 1559): with p_t = −1, p_φ = λ,
    /// p_θ² = Θ(θ) and p_r² = R(r)/Δ², H = 0 for every λ and η. Since H is linear in p_r²,
    /// g^rr R/Δ² is added to H evaluated at p_r = 0, which works also where R < 0.
    #[test]
    fn separation_data_make_the_hamiltonian_vanish(
        (a, q, r, theta) in kerr_newman_point(),
        lambda in -8.0f64..8.0,
        excess in 0.0f64..30.0,
    ) {
        let m = KerrNewman::new(a, q).unwrap();
        // Choose η so that Θ(θ) = η + a² cos²θ − λ² cot²θ = excess ≥ 0.
        let (s, c) = theta.sin_cos();
        let eta = excess + lambda * lambda * (c / s) * (c / s) - a * a * c * c;
        let big_theta = m.polar_potential(theta, lambda, eta).unwrap();
        prop_assert!(close(big_theta, excess, 1e-12, 1e-10));
        let big_r = m.radial_potential(r, lambda, eta).unwrap();
        let delta = r * r - 2.0 * r + a * a + q * q;
        let inv = m.components_at(r, theta).inverse();
        let p = [-1.0, 0.0, big_theta.sqrt(), lambda];
        let radial = 0.5 * inv.g_rr * big_r / (delta * delta);
        let h = m.hamiltonian(r, theta, &p) + radial;
        let magnitude = 0.5 * (inv.g_tt.abs() + 2.0 * (inv.g_tphi * lambda).abs()
            + inv.g_phph * lambda * lambda + inv.g_thth * big_theta) + radial.abs();
        prop_assert!(h.abs() <= 1e-10 * magnitude, "H = {:e}, scale {:e}", h, magnitude);
        // The same through a real radial momentum where R ≥ 0.
        if big_r >= 0.0 {
            let p = [-1.0, big_r.sqrt() / delta, big_theta.sqrt(), lambda];
            prop_assert!(m.hamiltonian(r, theta, &p).abs() <= 1e-10 * magnitude);
        }
        // The Kerr separation data agree with Kerr–Newman's at q = 0.
        let kerr = Kerr::new(a).unwrap();
        let kn0 = KerrNewman::new(a, 0.0).unwrap();
        prop_assert_eq!(kerr.radial_potential(r, lambda, eta), kn0.radial_potential(r, lambda, eta));
        prop_assert_eq!(kerr.polar_potential(theta, lambda, eta), kn0.polar_potential(theta, lambda, eta));
    }
}

/// Hamilton's equations conserve H exactly, so a null ray keeps H = 0 up to integration error
/// (Misner, Thorne & Wheeler 1973, *Gravitation*, §25.2 super-Hamiltonian; from memory for
/// the section). Checked to 1e-10 along short rays integrated with tight tolerances.
#[test]
fn hamiltonian_is_conserved_along_null_geodesics() {
    let settings = IntegratorSettings {
        rtol: 1e-12,
        atol: 1e-14,
        initial_step: 1e-3,
        ..IntegratorSettings::default()
    };
    let kerr = Kerr::new(0.9).unwrap();
    let kerr_newman = KerrNewman::new(0.6, 0.5).unwrap();
    let spacetimes: [(&dyn Spacetime, &str); 2] = [(&kerr, "Kerr a=0.9"), (&kerr_newman, "KN")];
    // (r, θ, p_θ, p_φ, sign of p_r)
    let rays = [
        (10.0, 1.2, 1.5, 2.0, -1.0),
        (15.0, 0.6, -2.5, -3.0, -1.0),
        (20.0, PI / 2.0, 0.0, 4.5, -1.0),
        (12.0, 2.0, 3.0, 1.0, 1.0),
    ];
    for (m, name) in spacetimes {
        let r_stop = m.outer_horizon().unwrap() + 0.5;
        for (r, theta, p_theta, p_phi, sign) in rays {
            let p_r = null_radial_momentum(m, r, theta, -1.0, p_theta, p_phi, sign)
                .expect("the ray starts outside its turning points");
            let y0 = [0.0, r, theta, 0.0, -1.0, p_r, p_theta, p_phi];
            let h0 = m.hamiltonian(r, theta, &[-1.0, p_r, p_theta, p_phi]);
            assert!(h0.abs() < 1e-14, "{name}: initial H = {h0:e}");
            let mut worst = 0.0f64;
            let end = integrate(m, y0, 60.0, &settings, |_, y, _| {
                let h = m.hamiltonian(y[1], y[2], &[y[4], y[5], y[6], y[7]]);
                worst = worst.max(h.abs());
                if y[1] < r_stop || y[1] > 200.0 {
                    Control::Stop
                } else {
                    Control::Continue
                }
            })
            .unwrap_or_else(|e| panic!("{name}: ray from r={r} failed: {e}"));
            assert!(end.steps > 10, "{name}: only {} steps", end.steps);
            assert!(
                worst <= 1e-10,
                "{name} ray r={r} theta={theta}: max |H| = {worst:e}"
            );
            // The conserved p_t and p_φ (stationarity and axisymmetry) stay exactly put.
            assert_eq!(end.state[4], -1.0);
            assert_eq!(end.state[7], p_phi);
        }
    }
}

/// Second derivatives of g (hyper-dual numbers) and the Hessian of H against central
/// differences of the first derivatives (dual numbers), step 1e-5: a consistency check
/// between the two derivative orders.
#[test]
fn second_derivatives_match_differences_of_first_derivatives() {
    let h = 1e-5;
    let metrics: Vec<Box<dyn Spacetime>> = vec![
        Box::new(Kerr::new(0.9).unwrap()),
        Box::new(KerrNewman::new(-0.5, 0.7).unwrap()),
        Box::new(Schwarzschild),
    ];
    let p = [-1.0, 0.4, 2.5, -3.0];
    for m in &metrics {
        for (r, theta) in [(3.0, 0.4), (6.5, 1.3), (15.0, PI / 2.0), (30.0, 2.8)] {
            let d2 = m.metric_second_derivatives(r, theta);
            let d1 = |r: f64, theta: f64| m.metric_derivatives(r, theta);
            let dr = [
                (d1(r + h, theta)[1] - d1(r - h, theta)[1]) / (2.0 * h),
                (d1(r + h, theta)[2] - d1(r - h, theta)[2]) / (2.0 * h),
            ];
            let dth = [
                (d1(r, theta + h)[1] - d1(r, theta - h)[1]) / (2.0 * h),
                (d1(r, theta + h)[2] - d1(r, theta - h)[2]) / (2.0 * h),
            ];
            // fd[i][j] = ∂_i ∂_j g with i the differenced direction.
            let fd = [dr, dth];
            let scale = d2
                .iter()
                .flatten()
                .flat_map(|x| x.iter())
                .fold(1e-300f64, |m, x| m.max(x.abs()));
            for i in 0..2 {
                for j in 0..2 {
                    for (x, y) in d2[i][j].iter().zip(fd[i][j].iter()) {
                        assert!(
                            close(*y, *x, 1e-6, 1e-8 * scale),
                            "d{i}d{j} g at r={r} theta={theta}: {x} vs {y}"
                        );
                    }
                    assert_eq!(d2[i][j], d2[j][i].transpose());
                }
            }
            let hess = m.hamiltonian_hessian(r, theta, &p);
            let grad = |r: f64, theta: f64| m.hamiltonian_gradient(r, theta, &p).dh_dx;
            let fd_h = [
                [
                    (grad(r + h, theta)[1] - grad(r - h, theta)[1]) / (2.0 * h),
                    (grad(r + h, theta)[2] - grad(r - h, theta)[2]) / (2.0 * h),
                ],
                [
                    (grad(r, theta + h)[1] - grad(r, theta - h)[1]) / (2.0 * h),
                    (grad(r, theta + h)[2] - grad(r, theta - h)[2]) / (2.0 * h),
                ],
            ];
            let scale = hess.iter().flatten().fold(1e-300f64, |m, x| m.max(x.abs()));
            for i in 0..2 {
                for j in 0..2 {
                    assert!(
                        close(fd_h[i][j], hess[i][j], 1e-6, 1e-8 * scale),
                        "H_{i}{j} at r={r} theta={theta}: {} vs {}",
                        hess[i][j],
                        fd_h[i][j]
                    );
                }
            }
            assert!(close(hess[0][1], hess[1][0], 1e-13, 1e-15 * scale));
        }
    }
}
