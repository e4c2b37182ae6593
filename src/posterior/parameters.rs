//! The model's parameters: which are shared by every source (the metric's deviation
//! parameters), which each source has for itself (spin, inclination, the ring chain's
//! calibration, mass and distance), and the prior of each, from `NAME=SPEC` assignments.
//!
//! Naming: a shared parameter is its metric name (`q`). A per-source one is its name, then
//! `@` and the source's number from 1 (`a@2`, `inclination@1`, `kappa@1`); a prior given
//! without `@K` applies to every source. The metric parameter named `a` is the spin and is per
//! source (every black hole has its own); every other metric parameter is shared.

use super::InferError;
use crate::measurement::calibration::KappaOrigin;
use crate::measurement::ring::AngularScale;
use crate::measurement::{Gaussian, Measurement, SizeMeasurement};
use crate::metric::MetricInfo;
use crate::sampling::Prior;

/// The metric parameter that is each source's own.
pub const SPIN: &str = "a";
/// The observer's inclination (a prior spec in degrees, radians inside).
pub const INCLINATION: &str = "inclination";
/// The ring-to-shadow diameter ratio κ of a ring measurement.
pub const KAPPA: &str = "kappa";
/// The mass in solar masses of a ring measurement.
pub const MASS: &str = "mass_msun";
/// The distance in Mpc of a ring measurement.
pub const DISTANCE: &str = "distance_mpc";
/// θ_g = GM/(c²D) in micro-arcseconds of a ring measurement.
pub const THETA_G: &str = "theta_g_uas";

/// What a parameter is in the model.
#[derive(Debug, Clone, PartialEq)]
pub enum Role {
    /// A metric parameter shared by every source.
    Shared(String),
    /// A metric parameter of one source (the spin).
    Spin {
        /// The source, from 0.
        source: usize,
    },
    /// The observer's inclination towards one source, radians.
    Inclination {
        /// The source, from 0.
        source: usize,
    },
    /// A ring chain's nuisance ([`KAPPA`], [`MASS`], [`DISTANCE`] or [`THETA_G`]).
    Ring {
        /// The source, from 0.
        source: usize,
        /// Which nuisance.
        what: &'static str,
    },
}

/// One parameter of the model with its prior.
#[derive(Debug, Clone, PartialEq)]
pub struct Parameter {
    /// The name in output columns (`q`, `a@1`).
    pub name: String,
    /// What it is.
    pub role: Role,
    /// Its prior (`Fixed` for a parameter that is held).
    pub prior: Prior,
    /// Where the prior comes from, for the assumptions.
    pub origin: String,
}

/// The parameters of a model of `sources` under `info`'s metric, with `assignments`
/// (`NAME=SPEC`, parsed) overriding the defaults: metric parameters are fixed at their defaults,
/// inclinations isotropic over [0°, 90°] (fixed at 90° for a spherically symmetric metric,
/// whose shadow does not depend on it), ring nuisances Gaussian as the measurement file gives
/// them.
pub fn parameters(
    info: &MetricInfo,
    spherical: bool,
    sources: &[Measurement],
    assignments: &[(String, Prior)],
) -> Result<Vec<Parameter>, InferError> {
    let mut out = Vec::new();
    let per_source =
        |name: &'static str| (0..sources.len()).map(move |k| (k, format!("{name}@{}", k + 1)));
    for p in &info.parameters {
        let default = Prior::Fixed(p.default);
        if p.name == SPIN {
            for (k, name) in per_source(SPIN) {
                out.push(Parameter {
                    name,
                    role: Role::Spin { source: k },
                    prior: default,
                    origin: format!("the metric's default {} (no prior given)", p.default),
                });
            }
        } else {
            out.push(Parameter {
                name: p.name.clone(),
                role: Role::Shared(p.name.clone()),
                prior: default,
                origin: format!("the metric's default {} (no prior given)", p.default),
            });
        }
    }
    for (k, name) in per_source(INCLINATION) {
        let (prior, origin) = if spherical {
            (
                Prior::Fixed(std::f64::consts::FRAC_PI_2),
                "irrelevant for a spherically symmetric metric (held at 90 deg)".to_string(),
            )
        } else {
            (
                Prior::Isotropic {
                    low: 0.0,
                    high: std::f64::consts::FRAC_PI_2,
                },
                "isotropic over [0, 90] deg (no prior given)".to_string(),
            )
        };
        out.push(Parameter {
            name,
            role: Role::Inclination { source: k },
            prior,
            origin,
        });
    }
    for (k, m) in sources.iter().enumerate() {
        if let SizeMeasurement::Ring(chain) = &m.size {
            let mut ring = |what: &'static str, g: Gaussian| {
                let origin = if what == KAPPA && chain.kappa_origin != KappaOrigin::Given {
                    format!(
                        "a Gaussian truncated to positive values: {}",
                        chain.kappa_origin.describe(g)
                    )
                } else {
                    format!(
                        "the measurement file's Gaussian {} +- {}, truncated to positive values",
                        g.value, g.sigma
                    )
                };
                out.push(Parameter {
                    name: format!("{what}@{}", k + 1),
                    role: Role::Ring { source: k, what },
                    prior: Prior::Normal {
                        mean: g.value,
                        sigma: g.sigma,
                    },
                    origin,
                });
            };
            ring(KAPPA, chain.ring_to_shadow);
            match chain.scale {
                AngularScale::MassDistance {
                    mass_msun,
                    distance_mpc,
                } => {
                    ring(MASS, mass_msun);
                    ring(DISTANCE, distance_mpc);
                }
                AngularScale::ThetaG { theta_g_uas } => ring(THETA_G, theta_g_uas),
            }
        }
    }
    for (name, prior) in assignments {
        assign(&mut out, name, *prior, sources.len())?;
    }
    Ok(out)
}

/// Give `prior` to the parameter `name` (or, without `@K`, to every source's parameter of
/// that name).
fn assign(
    params: &mut [Parameter],
    name: &str,
    prior: Prior,
    sources: usize,
) -> Result<(), InferError> {
    let (base, source) = match name.split_once('@') {
        Some((b, k)) => {
            let k: usize = k
                .parse()
                .ok()
                .filter(|k| (1..=sources).contains(k))
                .ok_or_else(|| InferError::Prior {
                    name: name.to_string(),
                    problem: format!("the source number after '@' must be 1 to {sources}"),
                })?;
            (b, Some(k))
        }
        None => (name, None),
    };
    let given = prior;
    let prior = if base == INCLINATION {
        inclination_prior(prior).map_err(|problem| InferError::Prior {
            name: name.to_string(),
            problem,
        })?
    } else {
        prior
    };
    let mut matched = 0;
    for p in params.iter_mut() {
        let (p_base, p_source) = match p.name.split_once('@') {
            Some((b, k)) => (b, k.parse::<usize>().ok()),
            None => (p.name.as_str(), None),
        };
        if p_base == base && (source.is_none() || source == p_source) {
            p.prior = prior;
            p.origin = format!("--prior {name}={given}");
            matched += 1;
        }
    }
    if matched == 0 {
        let known: Vec<&str> = params.iter().map(|p| p.name.as_str()).collect();
        return Err(InferError::Prior {
            name: name.to_string(),
            problem: format!("no such parameter (known: {})", known.join(", ")),
        });
    }
    Ok(())
}

/// An inclination prior as written (degrees, as everywhere on the command line; an isotropic
/// prior is already in radians) in radians, within [0, π].
fn inclination_prior(prior: Prior) -> Result<Prior, String> {
    let r = f64::to_radians;
    let prior = match prior {
        Prior::Uniform { low, high } => Prior::Uniform {
            low: r(low),
            high: r(high),
        },
        Prior::LogUniform { low, high } => Prior::LogUniform {
            low: r(low),
            high: r(high),
        },
        Prior::Normal { mean, sigma } => Prior::Normal {
            mean: r(mean),
            sigma: r(sigma),
        },
        Prior::Fixed(v) => Prior::Fixed(r(v)),
        iso @ Prior::Isotropic { .. } => iso,
    };
    let (lo, hi) = prior.support();
    if matches!(prior, Prior::Normal { .. }) || lo < 0.0 || hi > std::f64::consts::PI {
        return Err(
            "an inclination prior must lie within [0, 180] deg (uniform, log-uniform, \
             isotropic or fixed, in degrees)"
                .into(),
        );
    }
    Ok(prior)
}
