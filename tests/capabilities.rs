//! A metric's optional structure is declared ([`Capabilities`]), never probed: solvers choose by
//! the declaration, a declared structure whose hook returns nothing is a typed error (not a
//! silent fallback to another solver), and hooks that are provided but not declared are not
//! used. The built-ins declare exactly the structure their hooks provide.

use umbral::error::MetricError;
use umbral::metric::{check_separation, SeparationError};
use umbral::metrics::{builtin_metrics, Kerr, MetricSource};
use umbral::prelude::*;
use umbral::shadow::{auto_solver, solve, Observer, ShadowError, ShadowSettings};

/// Kerr's line element, declared separable, with no separation hooks: an inconsistent metric.
struct DeclaresSeparationOnly(Kerr);

impl Declared for DeclaresSeparationOnly {}

impl Metric for DeclaresSeparationOnly {
    fn components<D: DualScalar>(&self, r: D, theta: D) -> MetricComponents<D> {
        self.0.components(r, theta)
    }
    fn capabilities(&self) -> Capabilities {
        Capabilities::NONE.with_separation()
    }
}

/// Schwarzschild written through `Metric`, declared spherical, with no spherical functions.
struct DeclaresSphericalOnly;

impl Declared for DeclaresSphericalOnly {}

impl Metric for DeclaresSphericalOnly {
    fn components<D: DualScalar>(&self, r: D, theta: D) -> MetricComponents<D> {
        Schwarzschild.components(r, theta)
    }
    fn capabilities(&self) -> Capabilities {
        Capabilities::SPHERICAL
    }
}

/// Kerr with Carter's potentials provided but nothing declared.
struct UndeclaredPotentials(Kerr);

impl Declared for UndeclaredPotentials {}

impl Metric for UndeclaredPotentials {
    fn components<D: DualScalar>(&self, r: D, theta: D) -> MetricComponents<D> {
        self.0.components(r, theta)
    }
    fn radial_potential<D: DualScalar>(&self, r: D, lambda: D, eta: D) -> Option<D> {
        self.0.radial_potential(r, lambda, eta)
    }
    fn polar_potential<D: DualScalar>(&self, theta: D, lambda: D, eta: D) -> Option<D> {
        self.0.polar_potential(theta, lambda, eta)
    }
}

fn settings() -> ShadowSettings {
    ShadowSettings {
        points: 8,
        ..ShadowSettings::default()
    }
}

#[test]
fn declared_separation_without_hooks_is_a_typed_error_not_a_fallback() {
    let m = DeclaresSeparationOnly(Kerr::new(0.5).unwrap());
    assert!(m.is_separable());
    assert_eq!(auto_solver(&m).name(), "separable");
    let err = m.radial_potential_jet(4.0, 1.0, 10.0).unwrap_err();
    assert!(
        matches!(
            &err,
            MetricError::MissingHook {
                structure: "separation data",
                hook: "radial_potential",
                ..
            }
        ),
        "{err:?}"
    );
    assert!(matches!(
        m.polar_potential_jet(1.0, 1.0, 10.0),
        Err(MetricError::MissingHook {
            hook: "polar_potential",
            ..
        })
    ));
    assert!(matches!(
        m.radial_potential_lambda_jet(4.0, 0.0, 0.0),
        Err(MetricError::MissingHook { .. })
    ));
    // The separation check and the solver report it; no ray-traced curve is returned instead.
    assert!(matches!(
        check_separation(&m),
        Err(SeparationError::MissingHook(
            MetricError::MissingHook { .. }
        ))
    ));
    let e = solve(&m, &Observer::distant(1.0), &settings()).unwrap_err();
    let ShadowError::SolverNotApplicable { solver, why, .. } = &e else {
        panic!("{e:?}")
    };
    assert_eq!(*solver, "separable");
    assert!(
        why.contains("declares separation data") && why.contains("returns nothing"),
        "{why}"
    );
}

#[test]
fn declared_spherical_symmetry_without_hook_is_a_typed_error() {
    let m = DeclaresSphericalOnly;
    assert_eq!(m.symmetry(), Symmetry::Spherical);
    assert!(m.is_equatorially_symmetric());
    assert!(matches!(
        m.spherical_jet(5.0),
        Err(MetricError::MissingHook {
            structure: "spherical symmetry",
            hook: "spherical_functions",
            ..
        })
    ));
    let e = solve(&m, &Observer::distant(1.0), &settings()).unwrap_err();
    assert!(
        e.to_string()
            .contains("spherical_functions returns nothing"),
        "{e}"
    );
}

#[test]
fn provided_but_undeclared_hooks_are_not_used() {
    let m = UndeclaredPotentials(Kerr::new(0.5).unwrap());
    assert!(!m.is_separable());
    assert_eq!(m.symmetry(), Symmetry::StationaryAxisymmetric);
    assert_eq!(auto_solver(&m).name(), "raytrace");
    assert!(matches!(
        m.radial_potential_jet(4.0, 1.0, 10.0),
        Err(MetricError::NotDeclared {
            structure: "separation data",
            ..
        })
    ));
    assert_eq!(check_separation(&m), Err(SeparationError::NotSeparable));
    // Asked for by name, the separable solver refuses as for any metric without the data.
    let request = ShadowSettings {
        solver: "separable".parse().unwrap(),
        ..settings()
    };
    assert!(matches!(
        solve(&m, &Observer::distant(1.0), &request),
        Err(ShadowError::SolverNotApplicable { .. })
    ));
}

/// Every built-in (and every shipped metric file) declares exactly the structure its hooks
/// provide: a declared structure's jets exist at an ordinary point, an undeclared one's are
/// `NotDeclared`.
#[test]
fn builtins_and_shipped_files_declare_what_they_provide() {
    let mut sources: Vec<MetricSource> = builtin_metrics()
        .iter()
        .map(|e| MetricSource::from(*e))
        .collect();
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("metrics");
    for (path, spec) in umbral::metric_file::list_metric_dir(&dir) {
        let spec = spec.unwrap_or_else(|e| panic!("{}: {e}", path.display()));
        sources.push(MetricSource::from(spec));
    }
    assert_eq!(sources.len(), 34);
    for source in &sources {
        let m = source.build(&[]).unwrap();
        let label = source.label();
        let spherical = m.spherical_jet(7.0);
        let radial = m.radial_potential_jet(7.0, 1.0, 10.0);
        let polar = m.polar_potential_jet(1.0, 1.0, 10.0);
        if m.symmetry() == Symmetry::Spherical {
            assert!(spherical.is_ok(), "{label}: {spherical:?}");
            assert!(m.is_equatorially_symmetric(), "{label}");
        } else {
            assert!(
                matches!(spherical, Err(MetricError::NotDeclared { .. })),
                "{label}"
            );
        }
        if m.is_separable() {
            assert!(radial.is_ok() && polar.is_ok(), "{label}");
        } else {
            for jet in [radial.map(|_| ()), polar.map(|_| ())] {
                assert!(
                    matches!(jet, Err(MetricError::NotDeclared { .. })),
                    "{label}"
                );
            }
        }
    }
}
