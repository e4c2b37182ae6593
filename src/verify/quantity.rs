//! The quantities a check can pin, and how each is read from a solved case.
//!
//! Observables (every [`Quantity`]: the numeric fields of [`Observables`], by their field names)
//! need a critical curve. The others come from the solver or the metric:
//!
//! * `horizon_radius`: [`Spacetime::outer_horizon`];
//! * `photon_sphere_radius`, `critical_impact_parameter`: the photon sphere that bounds capture
//!   and b_c = √(C/A) there (spherical solver; Synge 1966);
//! * `photon_orbit_radius_min`, `photon_orbit_radius_max`: the range of spherical photon orbits
//!   that form the curve (Bardeen 1973);
//! * `gamma` (one value along the whole curve), `gamma_min`, `gamma_max`, `lyapunov`: the
//!   photon-ring exponents (Johnson et al. 2020; Cardoso et al. 2009).

use crate::metric::Spacetime;
use crate::observables::{Observables, Quantity};
use crate::shadow::{spherical, ShadowResult, ShadowStatus};

/// A quantity that comes from the solver or the metric rather than from the curve.
///
/// ```
/// use umbral::verify::SolverQuantity;
///
/// let q: SolverQuantity = "gamma_min".parse().unwrap();
/// assert_eq!(q, SolverQuantity::GammaMin);
/// assert_eq!(q.to_string(), "gamma_min");
/// assert!(SolverQuantity::names().contains(&"horizon_radius"));
/// assert!("mean_radius".parse::<SolverQuantity>().is_err());
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum SolverQuantity {
    /// The outer horizon.
    HorizonRadius,
    /// The photon sphere that bounds capture (spherical solver).
    PhotonSphereRadius,
    /// b_c = √(C/A) at that photon sphere (spherical solver).
    CriticalImpactParameter,
    /// The least radius of the spherical photon orbits that form the curve.
    PhotonOrbitRadiusMin,
    /// The greatest radius of those orbits.
    PhotonOrbitRadiusMax,
    /// γ, when it is one value along the whole curve.
    Gamma,
    /// The least γ along the curve.
    GammaMin,
    /// The greatest γ along the curve.
    GammaMax,
    /// The Lyapunov exponent.
    Lyapunov,
}

impl SolverQuantity {
    /// Every solver quantity, in the order of the list above.
    pub const ALL: &'static [SolverQuantity] = &[
        SolverQuantity::HorizonRadius,
        SolverQuantity::PhotonSphereRadius,
        SolverQuantity::CriticalImpactParameter,
        SolverQuantity::PhotonOrbitRadiusMin,
        SolverQuantity::PhotonOrbitRadiusMax,
        SolverQuantity::Gamma,
        SolverQuantity::GammaMin,
        SolverQuantity::GammaMax,
        SolverQuantity::Lyapunov,
    ];

    /// The name a checks file uses.
    pub fn name(self) -> &'static str {
        match self {
            SolverQuantity::HorizonRadius => "horizon_radius",
            SolverQuantity::PhotonSphereRadius => "photon_sphere_radius",
            SolverQuantity::CriticalImpactParameter => "critical_impact_parameter",
            SolverQuantity::PhotonOrbitRadiusMin => "photon_orbit_radius_min",
            SolverQuantity::PhotonOrbitRadiusMax => "photon_orbit_radius_max",
            SolverQuantity::Gamma => "gamma",
            SolverQuantity::GammaMin => "gamma_min",
            SolverQuantity::GammaMax => "gamma_max",
            SolverQuantity::Lyapunov => "lyapunov",
        }
    }

    /// Whether the quantity is read from the photon-ring exponents (γ and the Lyapunov
    /// exponent). Only these need the full solve; every other quantity comes from the curve,
    /// the photon-orbit radii or the metric, which the curve-only solve
    /// ([`crate::shadow::solve_curve`]) returns unchanged.
    pub fn needs_exponents(self) -> bool {
        matches!(
            self,
            SolverQuantity::Gamma
                | SolverQuantity::GammaMin
                | SolverQuantity::GammaMax
                | SolverQuantity::Lyapunov
        )
    }

    /// Every name, in the order of [`SolverQuantity::ALL`].
    pub fn names() -> Vec<&'static str> {
        SolverQuantity::ALL.iter().map(|q| q.name()).collect()
    }
}

impl std::str::FromStr for SolverQuantity {
    type Err = String;
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        SolverQuantity::ALL
            .iter()
            .copied()
            .find(|q| q.name() == s)
            .ok_or_else(|| {
                format!(
                    "unknown solver quantity '{s}' (known: {})",
                    SolverQuantity::names().join(", ")
                )
            })
    }
}

impl std::fmt::Display for SolverQuantity {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.name())
    }
}

/// A quantity a check can pin: an observable of the curve or a solver quantity, parsed once
/// when the checks file is loaded.
///
/// ```
/// use umbral::observables::Quantity;
/// use umbral::verify::{CheckQuantity, SolverQuantity};
///
/// assert_eq!("area".parse(), Ok(CheckQuantity::Observable(Quantity::Area)));
/// assert_eq!("lyapunov".parse(), Ok(CheckQuantity::Solver(SolverQuantity::Lyapunov)));
/// assert_eq!(CheckQuantity::Observable(Quantity::Area).to_string(), "area");
/// assert!("radius".parse::<CheckQuantity>().unwrap_err().starts_with("unknown quantity 'radius'"));
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum CheckQuantity {
    /// A numeric field of [`Observables`].
    Observable(Quantity),
    /// A quantity of the solver or the metric.
    Solver(SolverQuantity),
}

impl CheckQuantity {
    /// Whether the quantity needs the photon-ring exponents
    /// ([`SolverQuantity::needs_exponents`]).
    pub fn needs_exponents(self) -> bool {
        matches!(self, CheckQuantity::Solver(q) if q.needs_exponents())
    }

    /// The name a checks file uses.
    pub fn name(self) -> &'static str {
        match self {
            CheckQuantity::Observable(q) => q.name(),
            CheckQuantity::Solver(q) => q.name(),
        }
    }
}

impl std::str::FromStr for CheckQuantity {
    type Err = String;
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        if let Ok(q) = s.parse::<Quantity>() {
            return Ok(CheckQuantity::Observable(q));
        }
        if let Ok(q) = s.parse::<SolverQuantity>() {
            return Ok(CheckQuantity::Solver(q));
        }
        Err(format!(
            "unknown quantity '{s}' (known: {})",
            QUANTITIES.join(", ")
        ))
    }
}

impl std::fmt::Display for CheckQuantity {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.name())
    }
}

impl serde::Serialize for CheckQuantity {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(self.name())
    }
}

/// Every quantity name, observables first.
pub static QUANTITIES: std::sync::LazyLock<Vec<&'static str>> = std::sync::LazyLock::new(|| {
    Quantity::names()
        .into_iter()
        .chain(SolverQuantity::names())
        .collect()
});

/// Relative spread below which γ_min and γ_max count as one `gamma`.
const GAMMA_SPREAD: f64 = 1e-12;

/// What solving one case produced.
pub struct Solved {
    /// The outer horizon, if the metric has one.
    pub horizon: Option<f64>,
    /// The solver's result, or why it failed.
    pub result: Result<ShadowResult, String>,
    /// The observables of the curve, or why there are none.
    pub observables: Result<Observables, String>,
}

impl Solved {
    /// Solve the case's shadow and reduce it to observables; failures are kept as reasons.
    pub fn new(
        metric: &dyn Spacetime,
        result: Result<ShadowResult, String>,
        centre: crate::observables::CentreChoice,
    ) -> Solved {
        let horizon = metric.outer_horizon();
        let observables = match &result {
            Err(e) => Err(format!("the solver failed: {e}")),
            Ok(r) => match (&r.status, &r.curve) {
                (ShadowStatus::NoShadow { reason }, _) => Err(format!("no shadow: {reason}")),
                (ShadowStatus::Shadow, None) => Err("no shadow: no critical curve".into()),
                (ShadowStatus::Shadow, Some(curve)) => {
                    Observables::from_curve(curve, centre, horizon, r.photon_orbit_radii)
                        .map_err(|e| format!("observables failed: {e}"))
                }
            },
        };
        Solved {
            horizon,
            result,
            observables,
        }
    }

    fn solver_result(&self) -> Result<&ShadowResult, String> {
        self.result
            .as_ref()
            .map_err(|e| format!("the solver failed: {e}"))
    }

    /// The value of a quantity, or why it is not available.
    pub fn quantity(&self, quantity: CheckQuantity) -> Result<f64, String> {
        let solver = match quantity {
            CheckQuantity::Observable(q) => {
                let obs = self.observables.as_ref().map_err(Clone::clone)?;
                let value = obs.get(q);
                return if value.is_finite() {
                    Ok(value)
                } else {
                    Err(format!("the observables have no finite number '{q}'"))
                };
            }
            CheckQuantity::Solver(q) => q,
        };
        match solver {
            SolverQuantity::HorizonRadius => self
                .horizon
                .ok_or_else(|| "the metric has no horizon".to_string()),
            SolverQuantity::PhotonSphereRadius | SolverQuantity::CriticalImpactParameter => {
                self.photon_sphere(solver)
            }
            SolverQuantity::PhotonOrbitRadiusMin | SolverQuantity::PhotonOrbitRadiusMax => {
                let r = self.solver_result()?;
                let radii = r.photon_orbit_radii.ok_or_else(|| match &r.status {
                    ShadowStatus::NoShadow { reason } => format!("no shadow: {reason}"),
                    ShadowStatus::Shadow => {
                        format!("the {} solver does not report photon-orbit radii", r.solver)
                    }
                })?;
                Ok(if solver == SolverQuantity::PhotonOrbitRadiusMin {
                    radii[0]
                } else {
                    radii[1]
                })
            }
            SolverQuantity::Gamma
            | SolverQuantity::GammaMin
            | SolverQuantity::GammaMax
            | SolverQuantity::Lyapunov => self.exponent(solver),
        }
    }

    /// The capturing photon sphere's radius or critical impact parameter (spherical solver).
    fn photon_sphere(&self, name: SolverQuantity) -> Result<f64, String> {
        let r = self.solver_result()?;
        if r.solver != spherical::NAME {
            return Err(format!(
                "{name} needs the spherical solver (this case used {})",
                r.solver
            ));
        }
        let radius = match (&r.status, r.photon_orbit_radii) {
            (ShadowStatus::Shadow, Some([radius, _])) => radius,
            (ShadowStatus::NoShadow { reason }, _) => return Err(format!("no shadow: {reason}")),
            _ => return Err("no capturing photon sphere".into()),
        };
        if name == SolverQuantity::PhotonSphereRadius {
            return Ok(radius);
        }
        r.photon_spheres
            .iter()
            .find(|s| s.radius == radius)
            .map(|s| s.impact_parameter)
            .ok_or_else(|| "no capturing photon sphere".to_string())
    }

    /// A photon-ring exponent: γ (when constant along the curve), its min or max, or the
    /// Lyapunov exponent.
    fn exponent(&self, name: SolverQuantity) -> Result<f64, String> {
        let r = self.solver_result()?;
        let e = r.exponents.as_ref().ok_or_else(|| match &r.status {
            ShadowStatus::NoShadow { reason } => format!("no shadow: {reason}"),
            ShadowStatus::Shadow => format!(
                "the {} solver does not report photon-ring exponents",
                r.solver
            ),
        })?;
        match name {
            SolverQuantity::GammaMin => Ok(e.gamma_min),
            SolverQuantity::GammaMax => Ok(e.gamma_max),
            SolverQuantity::Lyapunov => e.lyapunov.ok_or_else(|| {
                format!(
                    "the {} solver does not report a Lyapunov exponent",
                    r.solver
                )
            }),
            _ => {
                let spread = (e.gamma_max - e.gamma_min).abs();
                if spread <= GAMMA_SPREAD * e.gamma_max.abs() {
                    Ok(0.5 * (e.gamma_min + e.gamma_max))
                } else {
                    Err(format!(
                        "gamma varies along the curve ({} to {}): pin gamma_min and gamma_max",
                        e.gamma_min, e.gamma_max
                    ))
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::metrics::Kerr;
    use crate::observables::CentreChoice;
    use crate::shadow::{solve, solve_curve, Observer, ShadowSettings};

    /// Every checks-file name parses to the quantity of that name, and no name is both an
    /// observable and a solver quantity (the observable would hide the other).
    #[test]
    fn every_name_parses_back_and_names_are_unique() {
        for name in QUANTITIES.iter() {
            let q: CheckQuantity = name.parse().unwrap();
            assert_eq!(q.to_string(), *name);
        }
        for q in SolverQuantity::ALL {
            assert_eq!(q.name().parse::<SolverQuantity>(), Ok(*q));
            assert!(q.name().parse::<Quantity>().is_err(), "{q}");
        }
        let mut names = QUANTITIES.clone();
        names.sort_unstable();
        names.dedup();
        assert_eq!(names.len(), QUANTITIES.len());
        assert_eq!(
            "radius".parse::<CheckQuantity>(),
            Err(format!(
                "unknown quantity 'radius' (known: {})",
                QUANTITIES.join(", ")
            ))
        );
    }

    /// The list of observable names must match the numeric fields `Observables` serialises,
    /// so a new observable cannot be silently unreachable from checks files.
    #[test]
    fn observable_names_match_the_struct() {
        let kerr = Kerr::new(0.5).unwrap();
        let settings = ShadowSettings {
            points: 32,
            ..ShadowSettings::default()
        };
        let result = solve(&kerr, &Observer::distant(1.0), &settings).map_err(|e| e.to_string());
        let solved = Solved::new(&kerr, result, CentreChoice::Centroid);
        let json = serde_json::to_value(solved.observables.as_ref().unwrap()).unwrap();
        let obs = json.as_object().unwrap();
        let mut numeric: Vec<&str> = obs
            .iter()
            .filter(|(k, v)| v.is_number() && k.as_str() != "horizon_radius")
            .map(|(k, _)| k.as_str())
            .collect();
        numeric.sort_unstable();
        let mut listed = Quantity::names();
        listed.sort_unstable();
        assert_eq!(numeric, listed);
    }

    /// A case that pins no exponent is solved for the curve only: every other quantity must
    /// read the same from it as from the full solve, and only the exponents go missing.
    #[test]
    fn the_curve_only_solve_reads_the_same_quantities() {
        let kerr = Kerr::new(0.7).unwrap();
        let observer = Observer::distant(1.0);
        let settings = ShadowSettings {
            points: 32,
            ..ShadowSettings::default()
        };
        let solved = |curve_only: bool| {
            let result = if curve_only {
                solve_curve(&kerr, &observer, &settings)
            } else {
                solve(&kerr, &observer, &settings)
            };
            Solved::new(
                &kerr,
                result.map_err(|e| e.to_string()),
                CentreChoice::Centroid,
            )
        };
        let (full, curve) = (solved(false), solved(true));
        for name in QUANTITIES.iter() {
            let q: CheckQuantity = name.parse().unwrap();
            if !q.needs_exponents() {
                assert_eq!(full.quantity(q), curve.quantity(q), "{name}");
            }
        }
        let gamma_min = CheckQuantity::Solver(SolverQuantity::GammaMin);
        assert!(full.quantity(gamma_min).is_ok());
        assert!(curve.quantity(gamma_min).is_err());
    }
}
