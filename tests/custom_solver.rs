//! A solver added from outside the crate, through the public API only: a closed-form
//! Schwarzschild solver, registered and run through the `shadow` dispatch.
//!
//! Closed forms (Schwarzschild, distant observer): the critical curve is the circle of radius
//! b_c = 3√3 M (Synge 1966, MNRAS 131, 463); the photon sphere is at r = 3 M; the Lyapunov
//! exponent in coordinate time is λ = 1/(3√3 M) (Cardoso et al. 2009, Phys. Rev. D 79, 064016)
//! and the demagnification exponent per half orbit is γ = π (Johnson et al. 2020, Sci. Adv. 6,
//! eaaz1310).

use std::f64::consts::PI;
use umbral::prelude::*;
use umbral::shadow::{
    register_solver, solve, CriticalCurve, Diagnostics, Observer, RingExponents, ShadowError,
    ShadowResult, ShadowSettings, ShadowStatus, SolverChoice,
};

/// The Schwarzschild shadow in closed form.
struct SchwarzschildCircle;

impl ShadowSolver for SchwarzschildCircle {
    fn name(&self) -> &'static str {
        "schwarzschild-circle"
    }
    fn summary(&self) -> &'static str {
        "closed form, Schwarzschild only: the circle of radius 3√3 M"
    }
    fn applies_to(&self, spacetime: &dyn Spacetime) -> Result<(), String> {
        if spacetime.info().name == "schwarzschild" {
            Ok(())
        } else {
            Err("only the Schwarzschild metric has this closed form".into())
        }
    }
    fn solve(
        &self,
        _: &dyn Spacetime,
        observer: &Observer,
        settings: &ShadowSettings,
    ) -> Result<ShadowResult, ShadowError> {
        if observer.radius.is_some() {
            return Err(ShadowError::BadRequest(
                "the closed form is for a distant observer".into(),
            ));
        }
        let b_c = 27f64.sqrt();
        Ok(ShadowResult {
            solver: self.name(),
            status: ShadowStatus::Shadow,
            curve: Some(CriticalCurve::circle([0.0, 0.0], b_c, settings.points)),
            photon_orbit_radii: Some([3.0, 3.0]),
            photon_spheres: Vec::new(),
            exponents: Some(RingExponents {
                lyapunov: Some(1.0 / b_c),
                gamma_min: PI,
                gamma_max: PI,
            }),
            diagnostics: Diagnostics {
                star_shaped: true,
                ..Diagnostics::default()
            },
        })
    }
}

fn register() {
    // Several tests register it; the second registration is refused by name.
    match register_solver(SchwarzschildCircle) {
        Ok(()) => {}
        Err(ShadowError::BadRequest(m)) => assert!(m.contains("already registered"), "{m}"),
        Err(e) => panic!("{e}"),
    }
}

fn settings(solver: &str, points: usize) -> ShadowSettings {
    ShadowSettings {
        points,
        solver: solver.parse().expect("a registered solver"),
        ..ShadowSettings::default()
    }
}

#[test]
fn a_registered_solver_runs_through_the_dispatch_and_matches_the_closed_form() {
    register();
    assert!(SolverChoice::names().contains(&"schwarzschild-circle"));
    let observer = Observer::distant(1.0);
    let mine = solve(
        &Schwarzschild,
        &observer,
        &settings("schwarzschild-circle", 64),
    )
    .unwrap();
    assert_eq!(mine.solver, "schwarzschild-circle");
    let builtin = solve(&Schwarzschild, &observer, &settings("spherical", 64)).unwrap();
    assert_eq!(builtin.solver, "spherical");
    // b_c = 3√3 (Synge 1966) from the built-in solver, to rounding.
    let (a, b) = (mine.curve.unwrap(), builtin.curve.unwrap());
    assert_eq!(a.radii.len(), b.radii.len());
    for (x, y) in a.radii.iter().zip(&b.radii) {
        assert!((x - y).abs() < 1e-12, "{x} vs {y}");
    }
    // λ = 1/(3√3) (Cardoso et al. 2009), γ = π (Johnson et al. 2020).
    let (e, f) = (mine.exponents.unwrap(), builtin.exponents.unwrap());
    assert!((e.lyapunov.unwrap() - f.lyapunov.unwrap()).abs() < 1e-12);
    assert!((e.gamma_min - f.gamma_min).abs() < 1e-10);
}

#[test]
fn a_registered_solver_feeds_the_observables_entry_point() {
    register();
    let request = ShadowRequest::distant(0.3)
        .with_solver("schwarzschild-circle")
        .unwrap();
    let seen = shadow(&Schwarzschild, &request).unwrap();
    assert_eq!(seen.result.solver, "schwarzschild-circle");
    let o = seen.observables.unwrap();
    // A circle of radius 3√3 about the origin (Synge 1966).
    assert!((o.get(Quantity::MeanRadius) - 27f64.sqrt()).abs() < 1e-12);
    assert!(o.get(Quantity::FractionalDeviationMean).abs() < 1e-12);
    assert!(o.get(Quantity::CircularityDeviation) < 1e-12);
}

#[test]
fn the_dispatch_checks_requests_and_applicability_before_the_solver() {
    register();
    let observer = Observer::distant(1.0);
    // Request checks are the dispatch's, the same for every solver.
    for bad in [settings("schwarzschild-circle", 7), {
        let mut s = settings("schwarzschild-circle", 64);
        s.tolerance = 1.0;
        s
    }] {
        assert!(matches!(
            solve(&Schwarzschild, &observer, &bad),
            Err(ShadowError::BadRequest(_))
        ));
    }
    assert!(matches!(
        solve(
            &Schwarzschild,
            &Observer::distant(4.0),
            &settings("schwarzschild-circle", 64)
        ),
        Err(ShadowError::BadRequest(_))
    ));
    // Not applicable: named, with the solver's reason.
    let kerr = Kerr::new(0.5).unwrap();
    match solve(&kerr, &observer, &settings("schwarzschild-circle", 64)) {
        Err(ShadowError::SolverNotApplicable { solver, why, .. }) => {
            assert_eq!(solver, "schwarzschild-circle");
            assert!(why.contains("closed form"), "{why}");
        }
        other => panic!("{other:?}"),
    }
    // `auto` takes the first registered solver that applies: the built-in spherical one.
    let auto = solve(&Schwarzschild, &observer, &settings("auto", 64)).unwrap();
    assert_eq!(auto.solver, "spherical");
}

#[test]
fn names_are_checked_on_registration_and_parsing() {
    register();
    struct Named(&'static str);
    impl ShadowSolver for Named {
        fn name(&self) -> &'static str {
            self.0
        }
        fn summary(&self) -> &'static str {
            "refused"
        }
        fn applies_to(&self, _: &dyn Spacetime) -> Result<(), String> {
            Ok(())
        }
        fn solve(
            &self,
            _: &dyn Spacetime,
            _: &Observer,
            _: &ShadowSettings,
        ) -> Result<ShadowResult, ShadowError> {
            Err(ShadowError::BadRequest("never run".into()))
        }
    }
    for name in [
        "",
        "auto",
        "spherical",
        "Upper",
        "with space",
        "schwarzschild-circle",
    ] {
        assert!(register_solver(Named(name)).is_err(), "{name:?}");
    }
    let err = "no-such-solver".parse::<SolverChoice>().unwrap_err();
    assert!(err.to_string().contains("schwarzschild-circle"), "{err}");
}
