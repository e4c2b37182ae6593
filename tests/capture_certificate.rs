//! The certificate that ends a ray inside its spherical photon orbit (umbral::metric::capture):
//! the declared Kerr–Newman form agrees with each metric's own radial potential, and below
//! every certified radius the radial potential has no zero down to the horizon, checked by
//! brute force on a fine grid. Reference: Carter's radial potential (Carter 1968, Phys. Rev.
//! 174, 1559), evaluated through each metric's `radial_potential`, independently of the
//! certificate's algebra.

use umbral::metric::{CarterRadial, Spacetime};
use umbral::metrics::{Kerr, KerrNewman};

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
    let mut certified = 0;
    for m in cases() {
        let c = m.carter_radial().unwrap();
        let r_plus = m.outer_horizon().unwrap();
        for i in 0..=40 {
            let lambda = -8.0 + 16.0 * i as f64 / 40.0;
            let Some(end) = c.capture_certified_below(lambda) else {
                continue;
            };
            assert!(end > r_plus, "{}: certified below {end}", m.info().name);
            for j in 0..=20 {
                let eta = -1.0 + 40.0 * j as f64 / 20.0;
                // Every radius a ray with these constants can be at inside `end` (R ≥ 0):
                // from there down to the horizon R must stay positive.
                let grid: Vec<f64> = (1..2000)
                    .map(|k| r_plus + (end - r_plus) * k as f64 / 2000.0)
                    .collect();
                let values: Vec<f64> = grid
                    .iter()
                    .map(|&r| m.radial_potential_jet(r, lambda, eta).unwrap().value)
                    .collect();
                if let Some(start) = values.iter().rposition(|&v| v >= 0.0) {
                    certified += 1;
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
    println!("{certified} (λ, η) pairs with a certified radius a ray can be inside");
    assert!(certified > 1000, "only {certified} cases certified");
}
