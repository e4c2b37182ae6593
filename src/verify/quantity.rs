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

/// Quantities that come from the solver or the metric rather than from the curve.
pub const SOLVER_QUANTITIES: &[&str] = &[
    "horizon_radius",
    "photon_sphere_radius",
    "critical_impact_parameter",
    "photon_orbit_radius_min",
    "photon_orbit_radius_max",
    "gamma",
    "gamma_min",
    "gamma_max",
    "lyapunov",
];

/// The quantities read from the photon-ring exponents. Only these need the full solve; every
/// other quantity comes from the curve, the photon-orbit radii or the metric, which the
/// curve-only solve ([`crate::shadow::solve_curve`]) returns unchanged.
pub const EXPONENT_QUANTITIES: &[&str] = &["gamma", "gamma_min", "gamma_max", "lyapunov"];

/// Whether `name` is read from the photon-ring exponents ([`EXPONENT_QUANTITIES`]).
pub fn needs_exponents(name: &str) -> bool {
    EXPONENT_QUANTITIES.contains(&name)
}

/// Every quantity name, observables first.
pub static QUANTITIES: std::sync::LazyLock<Vec<&'static str>> = std::sync::LazyLock::new(|| {
    Quantity::ALL
        .iter()
        .map(|q| q.name())
        .chain(SOLVER_QUANTITIES.iter().copied())
        .collect()
});

/// Whether `name` is a quantity a check can pin.
pub fn is_known_quantity(name: &str) -> bool {
    QUANTITIES.contains(&name)
}

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
    pub fn quantity(&self, name: &str) -> Result<f64, String> {
        if let Ok(quantity) = name.parse::<Quantity>() {
            let obs = self.observables.as_ref().map_err(Clone::clone)?;
            let value = obs.get(quantity);
            return if value.is_finite() {
                Ok(value)
            } else {
                Err(format!("the observables have no finite number '{name}'"))
            };
        }
        match name {
            "horizon_radius" => self
                .horizon
                .ok_or_else(|| "the metric has no horizon".to_string()),
            "photon_sphere_radius" | "critical_impact_parameter" => self.photon_sphere(name),
            "photon_orbit_radius_min" | "photon_orbit_radius_max" => {
                let r = self.solver_result()?;
                let radii = r.photon_orbit_radii.ok_or_else(|| match &r.status {
                    ShadowStatus::NoShadow { reason } => format!("no shadow: {reason}"),
                    ShadowStatus::Shadow => {
                        format!("the {} solver does not report photon-orbit radii", r.solver)
                    }
                })?;
                Ok(if name == "photon_orbit_radius_min" {
                    radii[0]
                } else {
                    radii[1]
                })
            }
            _ if needs_exponents(name) => self.exponent(name),
            _ => Err(format!("unknown quantity '{name}'")),
        }
    }

    /// The capturing photon sphere's radius or critical impact parameter (spherical solver).
    fn photon_sphere(&self, name: &str) -> Result<f64, String> {
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
        if name == "photon_sphere_radius" {
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
    fn exponent(&self, name: &str) -> Result<f64, String> {
        let r = self.solver_result()?;
        let e = r.exponents.as_ref().ok_or_else(|| match &r.status {
            ShadowStatus::NoShadow { reason } => format!("no shadow: {reason}"),
            ShadowStatus::Shadow => format!(
                "the {} solver does not report photon-ring exponents",
                r.solver
            ),
        })?;
        match name {
            "gamma_min" => Ok(e.gamma_min),
            "gamma_max" => Ok(e.gamma_max),
            "lyapunov" => e.lyapunov.ok_or_else(|| {
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
        for name in QUANTITIES.iter().filter(|n| !needs_exponents(n)) {
            assert_eq!(full.quantity(name), curve.quantity(name), "{name}");
        }
        assert!(full.quantity("gamma_min").is_ok());
        assert!(curve.quantity("gamma_min").is_err());
    }
}
