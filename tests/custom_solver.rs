//! A solver added from outside the crate, through the public API only: a closed-form
//! Schwarzschild solver, registered and run through the `shadow` dispatch, and the same
//! closed form run as an unregistered value through `solve_with`.
//!
//! Closed forms (Schwarzschild, distant observer): the critical curve is the circle of radius
//! b_c = 3√3 M (Synge 1966, MNRAS 131, 463); the photon sphere is at r = 3 M; the Lyapunov
//! exponent in coordinate time is λ = 1/(3√3 M) (Cardoso et al. 2009, Phys. Rev. D 79, 064016)
//! and the demagnification exponent per half orbit is γ = π (Johnson et al. 2020, Sci. Adv. 6,
//! eaaz1310).

use std::f64::consts::PI;
use umbral::prelude::*;
use umbral::shadow::{
    find_solver, register_solver, singular_exterior, solve, solve_with, CriticalCurve, Diagnostics,
    Observer, RingExponents, ShadowError, ShadowResult, ShadowSettings, ShadowStatus, SolverChoice,
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
        spacetime: &dyn Spacetime,
        observer: &Observer,
        settings: &ShadowSettings,
    ) -> Result<ShadowResult, ShadowError> {
        if observer.radius.is_some() {
            return Err(ShadowError::BadRequest(
                "the closed form is for a distant observer".into(),
            ));
        }
        // No shadow where the metric is singular outside its horizon, as from every solver.
        if let Some(none) = singular_exterior(spacetime, observer, self.name()) {
            return Ok(none);
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
            orbits: None,
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

/// The closed form under a name no test registers: run as a value, never by name.
struct Unlisted;

impl ShadowSolver for Unlisted {
    fn name(&self) -> &'static str {
        "unlisted-circle"
    }
    fn summary(&self) -> &'static str {
        "the closed-form circle, run without registration"
    }
    fn applies_to(&self, spacetime: &dyn Spacetime) -> Result<(), String> {
        SchwarzschildCircle.applies_to(spacetime)
    }
    fn solve(
        &self,
        spacetime: &dyn Spacetime,
        observer: &Observer,
        settings: &ShadowSettings,
    ) -> Result<ShadowResult, ShadowError> {
        let result = SchwarzschildCircle.solve(spacetime, observer, settings)?;
        Ok(ShadowResult {
            solver: self.name(),
            ..result
        })
    }
}

#[test]
fn an_unregistered_solver_value_runs_behind_the_same_checks() {
    let observer = Observer::distant(1.0);
    // `settings.solver` is not consulted: the value given is the solver that runs.
    let result = solve_with(&Unlisted, &Schwarzschild, &observer, &settings("auto", 64)).unwrap();
    assert_eq!(result.solver, "unlisted-circle");
    assert!(find_solver("unlisted-circle").is_none());
    assert!("unlisted-circle".parse::<SolverChoice>().is_err());
    // b_c = 3√3 (Synge 1966).
    let curve = result.curve.unwrap();
    assert!(curve.radii.iter().all(|r| (r - 27f64.sqrt()).abs() < 1e-12));
    // The request checks and `applies_to` run before the solver, as in the dispatch.
    assert!(matches!(
        solve_with(&Unlisted, &Schwarzschild, &observer, &settings("auto", 7)),
        Err(ShadowError::BadRequest(_))
    ));
    match solve_with(
        &Unlisted,
        &Kerr::new(0.5).unwrap(),
        &observer,
        &settings("auto", 64),
    ) {
        Err(ShadowError::SolverNotApplicable { solver, .. }) => {
            assert_eq!(solver, "unlisted-circle")
        }
        other => panic!("{other:?}"),
    }
}

/// The check every solver starts with is public: Johannsen's metric with a = 0.9 and
/// α13 = −2.95 has g_tt over [(r² + a²) A1 − a² A2 sin²θ]², which vanishes on the equator
/// where r⁵ + α13 (r² + a²) = 0, outside r₊ for α13 < −r₊⁴/2 (Johannsen 2013, Phys. Rev. D 88,
/// 044002): a program's solver reports no shadow there, under its own name.
#[test]
fn a_program_solver_can_refuse_a_singular_exterior() {
    let observer = Observer::distant(1.0);
    let set = [("a".to_string(), 0.9), ("alpha13".to_string(), -2.95)];
    let singular = build_metric("johannsen", &set).unwrap();
    let none = singular_exterior(singular.as_ref(), &observer, "unlisted-circle").unwrap();
    assert_eq!(none.solver, "unlisted-circle");
    assert!(none.curve.is_none());
    match &none.status {
        ShadowStatus::NoShadow { reason } => assert!(reason.contains("not a regular"), "{reason}"),
        other => panic!("{other:?}"),
    }
    assert!(singular_exterior(&Schwarzschild, &observer, "unlisted-circle").is_none());
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

/// Counts the calls of the full and the curve-only solve, delegating to the separable solver.
struct Counting;

static FULL_SOLVES: std::sync::atomic::AtomicUsize = std::sync::atomic::AtomicUsize::new(0);
static CURVE_SOLVES: std::sync::atomic::AtomicUsize = std::sync::atomic::AtomicUsize::new(0);

impl ShadowSolver for Counting {
    fn name(&self) -> &'static str {
        "counting-separable"
    }
    fn summary(&self) -> &'static str {
        "the separable solver, counting its full and curve-only solves"
    }
    fn applies_to(&self, spacetime: &dyn Spacetime) -> Result<(), String> {
        find_solver("separable").unwrap().applies_to(spacetime)
    }
    fn solve(
        &self,
        spacetime: &dyn Spacetime,
        observer: &Observer,
        settings: &ShadowSettings,
    ) -> Result<ShadowResult, ShadowError> {
        FULL_SOLVES.fetch_add(1, std::sync::atomic::Ordering::SeqCst);
        find_solver("separable")
            .unwrap()
            .solve(spacetime, observer, settings)
    }
    fn solve_curve(
        &self,
        spacetime: &dyn Spacetime,
        observer: &Observer,
        settings: &ShadowSettings,
    ) -> Result<ShadowResult, ShadowError> {
        CURVE_SOLVES.fetch_add(1, std::sync::atomic::Ordering::SeqCst);
        find_solver("separable")
            .unwrap()
            .solve_curve(spacetime, observer, settings)
    }
}

/// A checks-file case that pins no photon-ring exponent is solved for the curve only; one that
/// pins γ gets the full solve. Kerr at a = 0 is Schwarzschild: shadow radius 3√3 (Synge 1966,
/// MNRAS 131, 463) and photon-ring exponent γ = π (Johnson et al. 2020, Sci. Adv. 6,
/// eaaz1310).
#[test]
fn verify_takes_the_curve_only_path_unless_an_exponent_is_pinned() {
    let _ = register_solver(Counting);
    let case = |name: &str, quantity: &str, value: f64| {
        format!(
            "[[case]]\nname = \"{name}\"\nmetric = \"kerr\"\nparameters = {{ a = 0.0 }}\n\
             inclination = 30.0\npoints = 32\nsolver = \"counting-separable\"\n\
             [[case.expect]]\nquantity = \"{quantity}\"\nvalue = {value:?}\nrel = 1e-6\n\
             source = \"closed form\"\n"
        )
    };
    let dir = std::env::temp_dir().join(format!("umbral-counting-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("c.toml");
    let (full0, curve0) = (
        FULL_SOLVES.load(std::sync::atomic::Ordering::SeqCst),
        CURVE_SOLVES.load(std::sync::atomic::Ordering::SeqCst),
    );
    let text = format!(
        "description = \"curve-only path\"\n{}{}",
        case("radius", "mean_radius", 27f64.sqrt()),
        case("gamma", "gamma_min", PI)
    );
    std::fs::write(&path, text).unwrap();
    let report = umbral::verify::run_checks_file(&path).unwrap();
    assert!(report.all_passed(), "{}", report.render_table());
    let full = FULL_SOLVES.load(std::sync::atomic::Ordering::SeqCst) - full0;
    let curve = CURVE_SOLVES.load(std::sync::atomic::Ordering::SeqCst) - curve0;
    assert_eq!((full, curve), (1, 1), "full and curve-only solves");
    let _ = std::fs::remove_dir_all(&dir);
}
