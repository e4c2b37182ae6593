//! The catalogue of alternative metrics: zero-deviation limits, horizons, domains, and the
//! consistency of separation data with the metric itself.

use proptest::prelude::*;
use umbral::metric::{numerical_outer_horizon, Classification, Spacetime};
use umbral::metrics::*;

fn build(name: &str, set: &[(&str, f64)]) -> Box<dyn Spacetime> {
    let a: Vec<(String, f64)> = set.iter().map(|(k, v)| (k.to_string(), *v)).collect();
    build_metric(name, &a).unwrap()
}

/// |x − y| ≤ tol · max(|x|, |y|, 1).
fn close(x: f64, y: f64, tol: f64) -> bool {
    (x - y).abs() <= tol * x.abs().max(y.abs()).max(1.0)
}

fn assert_same_geometry(m: &dyn Spacetime, reference: &dyn Spacetime, r: f64, th: f64) {
    let (g, g0) = (m.metric(r, th), reference.metric(r, th));
    for i in 0..16 {
        assert!(
            close(g[i], g0[i], 1e-13),
            "{} g[{i}] at r={r} th={th}: {} vs {}",
            m.info().name,
            g[i],
            g0[i]
        );
    }
    let (c, c0) = (m.christoffel(r, th), reference.christoffel(r, th));
    for mu in 0..4 {
        for a in 0..4 {
            for b in 0..4 {
                assert!(
                    close(c[mu][a][b], c0[mu][a][b], 1e-13),
                    "{} Gamma^{mu}_{a}{b} at r={r} th={th}: {} vs {}",
                    m.info().name,
                    c[mu][a][b],
                    c0[mu][a][b]
                );
            }
        }
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(96))]

    /// Every spherical deviation metric at zero deviation is Schwarzschild (1916).
    #[test]
    fn spherical_deviations_vanish_to_schwarzschild(r in 2.2f64..60.0, th in 0.05f64..3.09) {
        let reference = Schwarzschild;
        for (name, set) in [
            ("tidal-charge", vec![("q2", 0.0)]),
            ("bardeen", vec![("g", 0.0)]),
            ("hayward", vec![("l", 0.0)]),
            ("dilaton", vec![("q", 0.0)]),
            ("simpson-visser", vec![("l", 0.0)]),
            ("jnw", vec![("nu", 1.0)]),
            ("rezzolla-zhidenko", vec![]),
        ] {
            assert_same_geometry(build(name, &set).as_ref(), &reference, r, th);
        }
    }

    /// Every rotating deviation metric at zero deviation is Kerr (1963) at the same spin.
    #[test]
    fn rotating_deviations_vanish_to_kerr(a in -0.99f64..0.99, dr in 0.2f64..40.0, th in 0.05f64..3.09) {
        let reference = Kerr::new(a).unwrap();
        let r = reference.outer_horizon().unwrap() + dr;
        for (name, set) in [
            ("johannsen-psaltis", vec![("a", a)]),
            ("johannsen", vec![("a", a)]),
            ("krz", vec![("a", a)]),
            ("kerr-sen", vec![("a", a)]),
            ("rotating-bardeen", vec![("a", a)]),
            ("rotating-hayward", vec![("a", a)]),
        ] {
            assert_same_geometry(build(name, &set).as_ref(), &reference, r, th);
        }
    }

    /// Separation data agree with the metric: with p_t = −1, p_φ = λ, p_θ² = Θ(θ) and
    /// p_r = √R g_rr/g_θθ (from (g_θθ dr/dτ)² = R), the Hamiltonian vanishes (Carter 1968).
    #[test]
    fn separation_data_make_null_momenta(
        a in -0.9f64..0.9, dev in 0.0f64..0.3, dr in 0.5f64..20.0,
        th in 0.3f64..2.8, lambda in -4.0f64..4.0, eta in 0.0f64..30.0,
    ) {
        for (name, set) in [
            ("kerr", vec![("a", a)]),
            ("kerr-newman", vec![("a", a), ("q", dev)]),
            ("johannsen", vec![("a", a), ("alpha13", dev), ("alpha22", -dev), ("alpha52", 2.0 * dev), ("eps3", dev)]),
            ("kerr-sen", vec![("a", a * (1.0 - dev)), ("b", dev)]),
            ("rotating-bardeen", vec![("a", a), ("g", dev)]),
            ("rotating-hayward", vec![("a", a), ("l", dev)]),
        ] {
            let m = build(name, &set);
            let r = m.outer_horizon().unwrap_or(2.0) + dr;
            let rad = m.radial_potential_jet(r, lambda, eta).unwrap().value;
            let pol = m.polar_potential_jet(th, lambda, eta).unwrap().value;
            if rad < 0.0 || pol < 0.0 {
                continue; // classically forbidden here: no real momentum
            }
            let c = m.components_at(r, th);
            let p = [-1.0, rad.sqrt() * c.g_rr / c.g_thth, pol.sqrt(), lambda];
            let h = m.hamiltonian(r, th, &p);
            // Scale: the size of the individual terms of 2H.
            let inv = c.inverse();
            let scale = inv.g_tt.abs() + inv.g_phph.abs() * lambda * lambda + inv.g_thth * pol + inv.g_rr * p[1] * p[1];
            prop_assert!(h.abs() <= 1e-12 * scale, "{name}: H = {h}, scale {scale}");
        }
    }

    /// The shadow of the Johannsen metric cannot depend on alpha52 or eps3: they enter the
    /// radial potential only as the positive factor A5 and not at all (Johannsen 2013).
    #[test]
    fn johannsen_photon_orbits_ignore_alpha52_and_eps3(r in 2.5f64..6.0, lambda in -6.0f64..6.0, eta in 0.0f64..30.0) {
        let base = build("johannsen", &[("a", 0.7), ("alpha13", 0.4), ("alpha22", 0.2)]);
        let other = build("johannsen", &[("a", 0.7), ("alpha13", 0.4), ("alpha22", 0.2), ("alpha52", 0.9), ("eps3", 1.5)]);
        let (j0, j1) = (base.radial_potential_jet(r, lambda, eta).unwrap(), other.radial_potential_jet(r, lambda, eta).unwrap());
        let a5 = 1.0 + 0.9 / (r * r);
        prop_assert!(close(j1.value, a5 * j0.value, 1e-12));
        prop_assert_eq!(
            base.polar_potential_jet(1.0, lambda, eta).unwrap().value,
            other.polar_potential_jet(1.0, lambda, eta).unwrap().value
        );
    }
}

fn horizon(m: &dyn Spacetime) -> Option<f64> {
    match m.classify() {
        Classification::BlackHole { outer_horizon } => Some(outer_horizon),
        Classification::Horizonless => None,
    }
}

#[test]
fn kerr_sen_horizon_matches_sen_closed_form() {
    // r₊ = 1 − b + √((1 − b)² − a²) (Sen 1992, Phys. Rev. Lett. 69, 1006).
    for (a, b) in [(0.0, 0.3), (0.5, 0.2), (0.7, 0.25), (0.3, 0.69)] {
        let m = KerrSen::new(a, b).unwrap();
        let exact = 1.0 - b + ((1.0f64 - b).powi(2) - a * a).sqrt();
        assert!((horizon(&m).unwrap() - exact).abs() < 1e-14);
        assert!((numerical_outer_horizon(&m).unwrap() - exact).abs() < 1e-12);
    }
    assert_eq!(horizon(&KerrSen::new(0.8, 0.3).unwrap()), None); // |a| > 1 − b
}

#[test]
fn regular_black_holes_have_a_horizon_only_up_to_four_over_root_27() {
    // Static Bardeen and Hayward: horizon iff g, l ≤ 4/√27 (checked in the physics notes:
    // double root of f at r = 4/3 for Hayward and r = 4/√3 · 1/√... for Bardeen).
    let edge = 4.0 / 27f64.sqrt();
    for name in ["bardeen", "hayward"] {
        let p = if name == "bardeen" { "g" } else { "l" };
        let below = build(name, &[(p, edge - 1e-6)]);
        let above = build(name, &[(p, edge + 1e-6)]);
        assert!(horizon(below.as_ref()).is_some(), "{name} below the edge");
        assert_eq!(horizon(above.as_ref()), None, "{name} above the edge");
        // The rotating versions close their horizon earlier.
        let rot = build(&format!("rotating-{name}"), &[("a", 0.5), (p, edge - 1e-6)]);
        assert_eq!(horizon(rot.as_ref()), None, "rotating-{name}");
    }
    // Hayward at the edge: the double root is at r = 4/3.
    let h = horizon(build("hayward", &[("l", edge - 1e-9)]).as_ref()).unwrap();
    assert!((h - 4.0 / 3.0).abs() < 1e-3, "{h}");
}

#[test]
fn horizons_of_the_spherical_catalogue() {
    // JNW (ν < 1) is a naked singularity (Virbhadra 1997).
    for nu in [0.3, 0.5, 0.8, 0.99] {
        assert_eq!(horizon(build("jnw", &[("nu", nu)]).as_ref()), None);
    }
    assert_eq!(horizon(build("jnw", &[("nu", 1.0)]).as_ref()), Some(2.0));
    // Simpson & Visser 2019: r_H = √(4 − l²) for l < 2, none for l ≥ 2.
    let sv = build("simpson-visser", &[("l", 1.2)]);
    assert!((horizon(sv.as_ref()).unwrap() - (4.0f64 - 1.44).sqrt()).abs() < 1e-15);
    assert_eq!(
        horizon(build("simpson-visser", &[("l", 2.5)]).as_ref()),
        None
    );
    // Tidal charge: r₊ = 1 + √(1 − q2) (Dadhich et al. 2000).
    let tc = TidalCharge::new(-0.6).unwrap();
    assert!((numerical_outer_horizon(&tc).unwrap() - (1.0 + 1.6f64.sqrt())).abs() < 1e-12);
    // Rezzolla & Zhidenko 2014: the horizon is r0 = 2/(1 + ε) by construction.
    let rz = RezzollaZhidenko::new(0.1, 0.05, 0.02, 0.3, 0.2, -0.1, 0.4).unwrap();
    assert!((horizon(&rz).unwrap() - 2.0 / 1.1).abs() < 1e-12);
    // GHS dilaton: r = 2 while q² < 2.
    assert_eq!(horizon(build("dilaton", &[("q", 1.0)]).as_ref()), Some(2.0));
    assert_eq!(horizon(build("dilaton", &[("q", 1.5)]).as_ref()), None);
    // KRZ keeps the Kerr horizon r0 = 1 + √(1 − a²) (Konoplya et al. 2016).
    let krz = Krz::new(0.6, 0.1, 0.05, -0.05, 0.1, 0.02, 0.03).unwrap();
    assert!((horizon(&krz).unwrap() - 1.8).abs() < 1e-12);
    // Johannsen–Psaltis at a = 0: Δ = 0 at r = 2 whatever ε3.
    let jp = JohannsenPsaltis::new(0.0, 2.0).unwrap();
    assert!((horizon(&jp).unwrap() - 2.0).abs() < 1e-12);
    // For a ≠ 0 the surface Δ + a² h sin²θ = 0 depends on θ. With ε3 > 0 (h > 0) it lies
    // inside the Kerr radius except on the axis, where sin θ = 0 leaves Δ = 0: the outermost
    // point is the pole, r = 1 + √(1 − a²) (derived here from the g_rr of Johannsen &
    // Psaltis 2011). A θ grid that skipped the pole reported 2e-5 M less, and rays near the
    // axis met the horizon before the capture radius.
    for (a, eps3) in [(0.7, 0.5), (0.9, 0.2), (0.3, 2.0)] {
        let jp = JohannsenPsaltis::new(a, eps3).unwrap();
        let kerr = 1.0 + (1.0f64 - a * a).sqrt();
        assert!(
            (horizon(&jp).unwrap() - kerr).abs() < 1e-12,
            "a = {a}, eps3 = {eps3}"
        );
    }
    // With ε3 < 0 the equator's root is the outermost, beyond the Kerr radius.
    let jp = JohannsenPsaltis::new(0.7, -1.0).unwrap();
    assert!(horizon(&jp).unwrap() > 1.0 + 0.51f64.sqrt() + 1e-3);
}

#[test]
fn out_of_domain_parameters_are_typed_errors() {
    for (name, p, v) in [
        ("bardeen", "g", -0.1),
        ("hayward", "l", -1.0),
        ("jnw", "nu", 0.0),
        ("jnw", "nu", 1.5),
        ("krz", "a", 1.5),
        ("johannsen", "a", -1.2),
        ("kerr-sen", "b", -0.2),
        ("rezzolla-zhidenko", "epsilon", -1.0),
    ] {
        let err = build_metric(name, &[(p.to_string(), v)]).err().unwrap();
        assert!(
            err.to_string().contains("outside its domain"),
            "{name}: {err}"
        );
        assert!(err.to_string().contains(p), "{name}: {err}");
    }
}

/// Issue 10 item 9: Kerr–Sen a = 0, b = 1 said "no horizon" while `umbral metrics` declared
/// one for |a| <= 1 − b. Sen 1992 (Phys. Rev. Lett. 69, 1006) gives r₊ = 1 − b + √((1 − b)² − a²)
/// = 0 there: on the singular surface r(r + 2b) = 0, with area 4π(r₊² + 2br₊ + a²) = 0. With
/// a = 0, Kerr–Sen is the dilaton black hole (Garfinkle, Horowitz & Strominger 1991, Phys.
/// Rev. D 43, 3140) with q² = 2b in the radius ρ = r + 2b (C = r(r + 2b) = ρ(ρ − q²),
/// A = 1 − 2/ρ), whose horizon likewise degenerates into the singularity at q² = 2. So b = 1
/// has no horizon, the domain text says so, and both solvers agree on either side: the
/// shadow shrinks to b_c = 2 as b → 1⁻ (photon sphere of the dilaton metric,
/// ρ = [(6 + q²) + √((6 + q²)² − 32q²)]/4, derived by hand from (C/A)′ = 0; b_c = √(C/A) there)
/// and there is none at b = 1.
#[test]
fn kerr_sen_a0_b1_has_no_horizon_and_no_shadow() {
    use umbral::shadow::{solve, Observer, ShadowSettings, ShadowStatus};
    let at_one = KerrSen::new(0.0, 1.0).unwrap();
    assert_eq!(horizon(&at_one), None);
    let meaning = &KerrSen::describe().parameters[1].meaning;
    assert!(
        meaning.contains("b < 1") && meaning.contains("zero area"),
        "{meaning}"
    );
    let observer = Observer::distant(0.5);
    let settings = ShadowSettings {
        points: 16,
        ..ShadowSettings::default()
    };
    let result = solve(&at_one, &observer, &settings).unwrap();
    assert!(matches!(result.status, ShadowStatus::NoShadow { .. }));
    let q = 2f64.sqrt() * (1.0 + f64::EPSILON); // q² just above 2: no horizon
    let dilaton = solve(&Dilaton::new(q).unwrap(), &observer, &settings).unwrap();
    assert!(matches!(dilaton.status, ShadowStatus::NoShadow { .. }));
    for b in [0.5, 0.9, 0.999, 0.99999999, 1.0 - 1e-12] {
        let q2: f64 = 2.0 * b;
        let rho = ((6.0 + q2) + ((6.0 + q2).powi(2) - 32.0 * q2).sqrt()) / 4.0;
        let b_c = (rho * (rho - q2) / (1.0 - 2.0 / rho)).sqrt();
        let sen = solve(&KerrSen::new(0.0, b).unwrap(), &observer, &settings).unwrap();
        let radius = sen.curve.as_ref().map(|c| c.radii[0]);
        let radius = radius.unwrap_or_else(|| panic!("b = {b}: {:?}", sen.status));
        // The closed form loses digits to the cancellation in ρ − 2 ~ √(2 − q²) as b → 1.
        let tol = 1e-12 / (1.0 - b).sqrt();
        assert!((radius - b_c).abs() < tol, "b = {b}: {radius} vs {b_c}");
        if b == 1.0 - 1e-12 {
            // ρ ≈ 2 + √(2 − q²), so b_c ≈ 2 + 2√(2 − q²) ≈ 2 + 2.8e-6 (expanding the closed
            // form; 2 − q² = 2 − 2b is exact in floating point here; mpmath at 40 digits puts
            // the expansion 5e-13 from the closed form). The solver's boundary tolerance is
            // 1e-8 M.
            let expansion = 2.0 + 2.0 * (2.0 - 2.0 * b).sqrt();
            assert!((radius - expansion).abs() < 1e-9, "{radius} vs {expansion}");
        }
    }
}

/// The registry follows each metric's one declaration: names in listing order (command-line
/// contract: never renamed), the built metric's metadata and parameter values equal the entry's
/// declaration at the defaults, and values given in order are counted.
#[test]
fn registry_entries_follow_their_declarations() {
    let names: Vec<String> = builtin_metrics().iter().map(|e| e.name()).collect();
    assert_eq!(
        names,
        [
            "schwarzschild",
            "kerr",
            "reissner-nordstrom",
            "kerr-newman",
            "tidal-charge",
            "bardeen",
            "hayward",
            "dilaton",
            "simpson-visser",
            "jnw",
            "rezzolla-zhidenko",
            "johannsen-psaltis",
            "johannsen",
            "krz",
            "kerr-sen",
            "rotating-bardeen",
            "rotating-hayward",
        ]
    );
    for entry in builtin_metrics() {
        let info = entry.info();
        let m = entry.build(&[]).unwrap();
        assert_eq!(m.info(), info);
        let defaults: Vec<f64> = info.parameters.iter().map(|p| p.default).collect();
        assert_eq!(m.parameter_values(), defaults, "{}", info.name);
        // Each parameter moved on its own lands in its own slot.
        for (i, p) in info.parameters.iter().enumerate() {
            let v = [0.25, 0.5, 0.75]
                .into_iter()
                .find(|v| *v != p.default && p.domain.contains(*v))
                .unwrap();
            let moved = entry.build(&[(p.name.clone(), v)]).unwrap();
            let mut expected = defaults.clone();
            expected[i] = v;
            assert_eq!(
                moved.parameter_values(),
                expected,
                "{} {}",
                info.name,
                p.name
            );
        }
    }
    let err = Kerr::from_values(&[0.1, 0.2]).unwrap_err();
    assert_eq!(
        err.to_string(),
        "metric 'kerr' takes 1 parameter values (a), got 2"
    );
    assert!(Schwarzschild::from_values(&[]).is_ok());
    assert!(KerrNewman::new(0.5, f64::INFINITY).is_err());
}

/// docs/metrics.md ("every built-in metric, as `umbral metrics` lists it") has a row for each
/// built-in, so a new metric cannot be missing from the catalogue.
#[test]
fn every_builtin_has_a_row_in_the_catalogue_document() {
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("docs/metrics.md");
    let text = std::fs::read_to_string(path).unwrap();
    for entry in builtin_metrics() {
        let row = format!("\n| `{}` |", entry.name());
        assert!(
            text.contains(&row),
            "docs/metrics.md has no row for '{}'",
            entry.name()
        );
    }
}
