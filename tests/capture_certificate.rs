//! The certificate that ends a ray inside its spherical photon orbit (umbral::metric::capture):
//! the declared Kerr–Newman form agrees with each metric's own radial potential, and below
//! every certified radius the radial potential has no zero down to the horizon, checked by
//! brute force on a fine grid. Reference: Carter's radial potential (Carter 1968, Phys. Rev.
//! 174, 1559), evaluated through each metric's `radial_potential`, independently of the
//! certificate's algebra.

use umbral::metric::{CarterRadial, Spacetime};
use umbral::metrics::{Kerr, KerrNewman};
use umbral::shadow::raytrace::{RayFate, RaytraceOptions, Tracer};
use umbral::shadow::Observer;

fn cases() -> Vec<Box<dyn Spacetime>> {
    vec![
        Box::new(Kerr::new(0.0).unwrap()),
        Box::new(Kerr::new(0.5).unwrap()),
        Box::new(Kerr::new(0.9).unwrap()),
        Box::new(Kerr::new(0.998).unwrap()),
        Box::new(KerrNewman::new(0.5, 0.5).unwrap()),
        Box::new(KerrNewman::new(0.3, 0.9).unwrap()),
    ]
}

/// R = (r² + a² − aλ)² − Δ[η + (λ − a)²] with Δ = r² − 2r + a² + q².
fn carter(c: &CarterRadial, r: f64, lambda: f64, eta: f64) -> f64 {
    let a = c.spin;
    let p = r * r + a * a - a * lambda;
    let delta = r * r - 2.0 * r + a * a + c.charge_squared;
    p * p - delta * (eta + (lambda - a) * (lambda - a))
}

#[test]
fn the_declared_form_is_the_metrics_radial_potential() {
    for m in cases() {
        let c = m
            .carter_radial()
            .expect("Kerr and Kerr-Newman declare the form");
        for &r in &[1.9, 2.5, 3.7, 8.0, 40.0] {
            for &lambda in &[-6.0, -1.0, 0.0, 2.5, 5.0] {
                for &eta in &[-0.5, 0.0, 10.0, 27.0] {
                    let own = m.radial_potential_jet(r, lambda, eta).unwrap().value;
                    let form = carter(&c, r, lambda, eta);
                    assert!(
                        (own - form).abs() <= 1e-12 * (1.0 + own.abs()),
                        "{}: R({r}; {lambda}, {eta}) = {own} against {form}",
                        m.info().name
                    );
                }
            }
        }
    }
}

#[test]
fn below_a_certified_radius_an_inward_ray_has_no_turning_point() {
    let mut checked = 0;
    for m in cases() {
        let c = m.carter_radial().unwrap();
        let r_plus = m.outer_horizon().unwrap();
        for i in 0..=40 {
            let lambda = -8.0 + 16.0 * i as f64 / 40.0;
            let Some(end) = c.capture_certified_below(lambda) else {
                continue;
            };
            assert!(end > r_plus, "{}: certified below {end}", m.info().name);
            // The radii from the horizon up to the certified end, the end included.
            let mut grid: Vec<f64> = (1..2000)
                .map(|k| r_plus + (end - r_plus) * k as f64 / 2000.0)
                .collect();
            grid.push(end);
            // η where R(end) = 0 (R is linear in η), from the metric's own potential; rays
            // just below it turn nowhere below `end`, and are the ones that would expose a
            // certified radius set too high.
            let jet = m.radial_potential_jet(end, lambda, 0.0).unwrap();
            let eta_turning = -jet.value / jet.gradient[2];
            let mut etas: Vec<f64> = (0..=20).map(|j| -1.0 + 40.0 * j as f64 / 20.0).collect();
            etas.extend([1e-9, 1e-6, 1e-4].map(|e| eta_turning - e * (1.0 + eta_turning.abs())));
            for eta in etas {
                let values: Vec<f64> = grid
                    .iter()
                    .map(|&r| m.radial_potential_jet(r, lambda, eta).unwrap().value)
                    .collect();
                // A ray moving inward at any radius where R ≥ 0 must find R > 0 all the way
                // down to the horizon.
                if let Some(start) = values.iter().rposition(|&v| v >= 0.0) {
                    checked += 1;
                    assert!(
                        values[..=start].iter().all(|&v| v > 0.0),
                        "{}: λ = {lambda}, η = {eta}: R has a zero below {}",
                        m.info().name,
                        grid[start]
                    );
                }
            }
        }
    }
    println!("{checked} (λ, η) pairs checked below their certified radius");
    assert!(checked > 4000, "only {checked} pairs checked");
}

/// The tracer's early capture against the same rays followed to the capture radius
/// (`trace_measured`): the same fate, in fewer steps overall, for rays across a
/// Kerr–Newman shadow seen from afar and for an observer at 2.4 M, inside most certified
/// radii of that black hole.
#[test]
fn rays_ended_by_the_certificate_keep_their_fate() {
    let kn = KerrNewman::new(0.5, 0.5).unwrap();
    for observer in [
        Observer::distant(60f64.to_radians()),
        Observer::at_radius(60f64.to_radians(), 2.4),
    ] {
        let tracer = Tracer::new(&kn, &observer, &RaytraceOptions::default()).unwrap();
        let extent = if observer.radius.is_some() { 1.5 } else { 7.0 };
        let (mut early_steps, mut full_steps, mut captured) = (0, 0, 0);
        for i in 0..=24 {
            for j in 0..=12 {
                let alpha = -extent + 2.0 * extent * i as f64 / 24.0;
                let beta = -extent + 2.0 * extent * j as f64 / 12.0;
                let (early, full) = (
                    tracer.trace(alpha, beta),
                    tracer.trace_measured(alpha, beta),
                );
                assert_eq!(early.fate, full.fate, "{observer:?} ({alpha}, {beta})");
                early_steps += early.steps;
                full_steps += full.steps;
                captured += usize::from(full.fate == RayFate::Captured);
            }
        }
        assert!(captured > 20, "{observer:?}: {captured} captured rays");
        assert!(
            early_steps < full_steps,
            "{early_steps} against {full_steps} steps"
        );
    }
}
