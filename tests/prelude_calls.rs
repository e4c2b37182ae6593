//! With `use umbral::prelude::*` alone, every method of every trait the prelude exports is
//! called by plain method syntax on concrete metrics: a built-in written through `Metric`
//! (Kerr), one written through `SphericalMetric` (Reissner–Nordström, which implements all
//! four traits `SphericalMetric`, `Metric`, `Declared` and `Spacetime`), a unit metric
//! (Schwarzschild) and one declared outside the crate with `declare_metric!`. If two of these
//! traits shared a method name, this file would not compile (E0034, "multiple applicable
//! items in scope"); the values are then checked against closed forms, so a call that resolved
//! to the wrong method would fail.

use umbral::prelude::*;

fn close(got: f64, want: f64, tol: f64) {
    assert!(
        (got - want).abs() <= tol * want.abs().max(1.0),
        "got {got}, want {want}"
    );
}

/// Kerr in Boyer–Lindquist form (Boyer & Lindquist 1967, J. Math. Phys. 8, 265), M = 1:
/// Σ = r² + a² cos²θ, Δ = r² − 2r + a².
fn kerr_sigma_delta(a: f64, r: f64, theta: f64) -> (f64, f64) {
    (r * r + a * a * theta.cos().powi(2), r * r - 2.0 * r + a * a)
}

#[test]
fn kerr_every_method_by_plain_call() {
    let (a, r, th) = (0.6, 5.0, 1.0);
    let kerr = Kerr::new(a).unwrap();
    let (sigma, delta) = kerr_sigma_delta(a, r, th);
    let s2 = th.sin().powi(2);

    // Declared: metadata, values and horizon rule, by names of their own.
    assert_eq!(kerr.declared_info().name, "kerr");
    assert_eq!(kerr.declared_values(), vec![a]);
    // r₊ = 1 + √(1 − a²) (Boyer & Lindquist 1967).
    assert_eq!(kerr.declared_horizon(), DeclaredHorizon::Known(Some(1.8)));

    // Metric: the one required method and the declared structure with its hooks.
    let c = kerr.components(r, th);
    close(c.g_tt, -(1.0 - 2.0 * r / sigma), 1e-15);
    close(c.g_tphi, -2.0 * a * r * s2 / sigma, 1e-15);
    close(c.g_rr, sigma / delta, 1e-15);
    close(c.g_thth, sigma, 1e-15);
    close(
        c.g_phph,
        (r * r + a * a + 2.0 * a * a * r * s2 / sigma) * s2,
        1e-15,
    );
    let caps = kerr.capabilities();
    assert!(caps.separable && caps.equatorially_symmetric && !caps.spherical);
    assert!(kerr.spherical_functions(r).is_none());
    let (lambda, eta) = (2.0, 15.0);
    // Carter 1968, Phys. Rev. 174, 1559: R = (r² + a² − aλ)² − Δ(η + (λ − a)²),
    // Θ = η + a² cos²θ − λ² cot²θ.
    let p = r * r + a * a - a * lambda;
    let big_r = p * p - delta * (eta + (lambda - a).powi(2));
    let big_theta = eta + a * a * th.cos().powi(2) - lambda * lambda / th.tan().powi(2);
    close(kerr.radial_potential(r, lambda, eta).unwrap(), big_r, 1e-14);
    close(
        kerr.polar_potential(th, lambda, eta).unwrap(),
        big_theta,
        1e-14,
    );

    // Spacetime: the object-safe view, on the concrete type without naming the trait.
    assert_eq!(kerr.info(), kerr.declared_info());
    assert_eq!(kerr.parameter_values(), vec![a]);
    assert_eq!(kerr.symmetry(), Symmetry::StationaryAxisymmetric);
    assert!(kerr.is_separable() && kerr.is_equatorially_symmetric());
    assert_eq!(kerr.components_at(r, th), c);
    assert_eq!(kerr.metric(r, th)[(0, 3)], c.g_tphi);
    close(kerr.inverse_metric(r, th)[(1, 1)], delta / sigma, 1e-14);
    close(kerr.inverse_metric(r, th)[(2, 2)], 1.0 / sigma, 1e-14);
    // ∂_r g_θθ = ∂_r Σ = 2r; ∂²_r Σ = 2; ∂²_θ Σ = −2a² cos 2θ.
    close(kerr.metric_derivatives(r, th)[1][(2, 2)], 2.0 * r, 1e-14);
    let second = kerr.metric_second_derivatives(r, th);
    close(second[0][0][(2, 2)], 2.0, 1e-14);
    close(second[1][1][(2, 2)], -2.0 * a * a * (2.0 * th).cos(), 1e-14);
    // Γ^θ_rθ = ½ g^θθ ∂_r g_θθ = r/Σ.
    close(kerr.christoffel(r, th)[2][1][2], r / sigma, 1e-14);
    assert_eq!(kerr.outer_horizon(), Some(1.8));
    assert_eq!(
        kerr.classify(),
        Classification::BlackHole { outer_horizon: 1.8 }
    );
    assert!(matches!(
        kerr.spherical_jet(r),
        Err(MetricError::NotDeclared { .. })
    ));
    let jet = kerr.radial_potential_jet(r, lambda, eta).unwrap();
    close(jet.value, big_r, 1e-14);
    close(jet.gradient[2], -delta, 1e-14); // ∂_η R = −Δ
    let lj = kerr.radial_potential_lambda_jet(r, lambda, eta).unwrap();
    close(lj.value[0], big_r, 1e-14);
    close(lj.value[2], 2.0 * a * a - 2.0 * delta, 1e-14); // ∂²_λ R = 2a² − 2Δ
    close(lj.eta[1], -(2.0 * r - 2.0), 1e-14); // ∂_r ∂_η R = −Δ′
    let pj = kerr.polar_potential_jet(th, lambda, eta).unwrap();
    close(pj.value, big_theta, 1e-14);
    close(pj.gradient[2], 1.0, 1e-15); // ∂_η Θ = 1
}

#[test]
fn reissner_nordstrom_implements_all_four_traits_and_calls_them_plainly() {
    // Reissner 1916, Ann. Phys. 355, 106; Nordström 1918, Proc. KNAW 20, 1238:
    // A = 1/B = 1 − 2/r + q²/r², C = r², r₊ = 1 + √(1 − q²).
    let (q, r) = (0.6, 4.0);
    let rn = ReissnerNordstrom::new(q).unwrap();
    let a = 1.0 - 2.0 / r + q * q / (r * r);
    let da = 2.0 / (r * r) - 2.0 * q * q / r.powi(3);
    let dda = -4.0 / r.powi(3) + 6.0 * q * q / r.powi(4);

    // SphericalMetric.
    close(rn.a(r), a, 1e-15);
    close(rn.b(r), 1.0 / a, 1e-15);
    assert_eq!(rn.c(r), r * r);
    // Metric, given by the blanket impl over SphericalMetric.
    assert_eq!(rn.capabilities(), Capabilities::SPHERICAL);
    let f = rn.spherical_functions(r).unwrap();
    assert_eq!((f.a, f.b, f.c), (rn.a(r), rn.b(r), rn.c(r)));
    close(rn.components(r, 1.2).g_tt, -a, 1e-15);
    assert!(rn.radial_potential(r, 1.0, 1.0).is_none());
    assert!(rn.polar_potential(1.0, 1.0, 1.0).is_none());
    // Declared.
    assert_eq!(rn.declared_values(), vec![q]);
    assert_eq!(rn.declared_info().parameters[0].name, "q");
    assert_eq!(rn.declared_horizon(), DeclaredHorizon::Known(Some(1.8)));
    // Spacetime.
    assert_eq!(rn.outer_horizon(), Some(1.8));
    assert_eq!(rn.info().name, "reissner-nordstrom");
    assert_eq!(rn.parameter_values(), vec![q]);
    assert_eq!(rn.symmetry(), Symmetry::Spherical);
    assert!(rn.is_equatorially_symmetric() && !rn.is_separable());
    let jet = rn.spherical_jet(r).unwrap();
    close(jet.a[0], a, 1e-15);
    close(jet.a[1], da, 1e-14);
    close(jet.a[2], dda, 1e-14);
    close(jet.b[1], -da / (a * a), 1e-14); // B = 1/A
    assert_eq!(jet.c, [r * r, 2.0 * r, 2.0]);
    assert!(matches!(
        rn.radial_potential_jet(r, 1.0, 1.0),
        Err(MetricError::NotDeclared { .. })
    ));
    assert!(rn.polar_potential_jet(1.0, 1.0, 1.0).is_err());
    assert!(rn.radial_potential_lambda_jet(r, 0.0, 0.0).is_err());
    assert_eq!(
        ReissnerNordstrom::new(1.2).unwrap().classify(),
        Classification::Horizonless
    );
}

#[test]
fn schwarzschild_hamiltonian_and_christoffel_by_plain_call() {
    // Schwarzschild (Schwarzschild 1916), f = 1 − 2/r; the Christoffel symbols Γ^r_tt =
    // f/r², Γ^t_tr = 1/(r² f) and Γ^θ_rθ = 1/r are those of Carroll 2004, Spacetime and
    // Geometry, ch. 5, at M = 1.
    let s = Schwarzschild;
    let r = 6.0;
    let f = 1.0 - 2.0 / r;
    let gamma = s.christoffel(r, 0.9);
    close(gamma[1][0][0], f / (r * r), 1e-15);
    close(gamma[0][0][1], 1.0 / (r * r * f), 1e-15);
    close(gamma[2][1][2], 1.0 / r, 1e-15);
    // A radial null ray: p = (−1, 1/f, 0, 0), H = ½(−1/f + f p_r²) = 0, dr/dτ = g^rr p_r = 1,
    // ∂_r H = f′/f² with f′ = 2/r².
    let p = [-1.0, 1.0 / f, 0.0, 0.0];
    assert!(s.hamiltonian(r, 0.9, &p).abs() < 1e-15);
    let g = s.hamiltonian_gradient(r, 0.9, &p);
    close(g.dh_dp[1], 1.0, 1e-15);
    let df = 2.0 / (r * r);
    close(g.dh_dx[1], df / (f * f), 1e-14);
    // H_rr = ½(p_t² ∂²_r(−1/f) + p_r² f″) with ∂²_r(−1/f) = f″/f² − 2f′²/f³, f″ = −4/r³;
    // nothing depends on θ when p_θ = p_φ = 0 (zero up to rounding of the (t, φ) inversion).
    let ddf = -4.0 / r.powi(3);
    let h = s.hamiltonian_hessian(r, 0.9, &p);
    let h_rr = 0.5 * ((ddf / (f * f) - 2.0 * df * df / f.powi(3)) + ddf / (f * f));
    close(h[0][0], h_rr, 1e-13);
    assert!(h[0][1].abs() < 1e-14 && h[1][1].abs() < 1e-14, "{h:?}");
    assert_eq!(s.outer_horizon(), Some(2.0));
    assert_eq!(s.parameter_values(), Vec::<f64>::new());
    assert_eq!(s.declared_values(), Vec::<f64>::new());
    assert_eq!(s.info().name, "schwarzschild");
}

umbral::declare_metric! {
    /// Kerr again, declared outside the crate and written through `Metric`, with no closed-form
    /// horizon: the default finder must locate r₊ = 1 + √(1 − a²).
    #[derive(Debug, Clone, Copy, PartialEq)]
    pub struct OutsideKerr {
        name: "outside-kerr",
        title: "Kerr, declared in a test",
        reference: "Boyer & Lindquist 1967, J. Math. Phys. 8, 265",
        parameters: {
            a: { default: 0.0, domain: Domain::closed(-1.0, 1.0), meaning: "spin a/M" },
        },
    }
}

impl Metric for OutsideKerr {
    fn components<D: DualScalar>(&self, r: D, theta: D) -> MetricComponents<D> {
        let a = self.a;
        let (s, c) = theta.sin_cos();
        let sigma = r * r + c * c * (a * a);
        let delta = r * r - r * 2.0 + a * a;
        let s2 = s * s;
        MetricComponents {
            g_tt: r * 2.0 / sigma - 1.0,
            g_tphi: -(r * (2.0 * a)) * s2 / sigma,
            g_rr: sigma / delta,
            g_thth: sigma,
            g_phph: (r * r + a * a + r * (2.0 * a * a) * s2 / sigma) * s2,
        }
    }
    fn capabilities(&self) -> Capabilities {
        Capabilities::NONE.with_equatorial_symmetry()
    }
}

#[test]
fn a_metric_declared_outside_the_crate_calls_plainly_too() {
    let m = OutsideKerr::new(0.6).unwrap();
    assert_eq!(m.declared_horizon(), DeclaredHorizon::Numerical);
    close(m.outer_horizon().unwrap(), 1.8, 1e-12);
    assert_eq!(m.parameter_values(), vec![0.6]);
    assert_eq!(m.info(), OutsideKerr::describe());
    assert!(!m.is_separable() && m.is_equatorially_symmetric());
    assert_eq!(m.symmetry(), Symmetry::StationaryAxisymmetric);
    // Same line element as the built-in Kerr, component by component (to rounding: the
    // built-in groups its products differently).
    let kerr = Kerr::new(0.6).unwrap();
    let (x, y) = (m.components(5.0, 1.0), kerr.components_at(5.0, 1.0));
    assert_eq!(m.components_at(5.0, 1.0), x);
    for (u, v) in [
        (x.g_tt, y.g_tt),
        (x.g_tphi, y.g_tphi),
        (x.g_rr, y.g_rr),
        (x.g_thth, y.g_thth),
        (x.g_phph, y.g_phph),
    ] {
        close(u, v, 1e-15);
    }
    // Its registry entry builds it by name with domain checks, like a built-in.
    let boxed = OutsideKerr::ENTRY.build(&[("a".into(), 0.3)]).unwrap();
    assert_eq!(boxed.parameter_values(), vec![0.3]);
    assert!(OutsideKerr::ENTRY.build(&[("a".into(), 1.5)]).is_err());
    assert!(OutsideKerr::new(f64::NAN).is_err());
}
