//! Simple emission models: where the light comes from, how the gas moves, and the redshift.
//!
//! # Thin equatorial disk
//!
//! Geometrically thin and optically thin, in the equatorial plane θ = π/2 of an equatorially
//! symmetric metric, between an inner edge (the ISCO, the outer horizon, or a radius) and an
//! optional outer radius. Its emissivity J(r) is a power law r^(−q) or a log-normal profile
//! exp(−[ln(r/r_pk)]²/(2σ²)) (a profile of our own choosing, peaked at r_pk).
//!
//! Gas outside the ISCO moves on circular geodesics co-rotating with the hole (the root whose
//! angular velocity has the sign of the frame dragging ω = −g_tφ/g_φφ; positive when ω = 0).
//! With primes for ∂/∂r at θ = π/2 (Bardeen, Press & Teukolsky 1972, ApJ 178, 347, for Kerr;
//! the general stationary axisymmetric form follows from ∂_r g_{μν} u^μ u^ν = 0):
//! Ω = [−g′_tφ ± √(g′_tφ² − g′_tt g′_φφ)]/g′_φφ, u^t = 1/√(−(g_tt + 2Ωg_tφ + Ω²g_φφ)),
//! u^φ = Ωu^t, E = −(g_tt + Ωg_tφ)u^t, L = (g_tφ + Ωg_φφ)u^t.
//! The ISCO is the outermost radius where such an orbit stops being stable: with
//! V(r) = g^tt E² − 2g^tφ EL + g^φφ L² + 1 at the orbit's E and L (g^rr u_r² = −V), the orbit
//! is stable where V″ > 0, and the ISCO is where V″ = 0 (found by an inward scan and bisection).
//! Inside the ISCO the gas plunges keeping E and L of the ISCO (Cunningham 1975, ApJ 202, 788):
//! u_t = −E, u_φ = L, g_rr (u^r)² = −V(r), u^r < 0.
//!
//! # Spherical infall
//!
//! Optically thin gas falling from rest at infinity with zero angular momentum: u_t = −1,
//! u_θ = u_φ = 0, so u^t = −g^tt, u^φ = −g^tφ, g_rr (u^r)² = −1 − g^tt, u^r < 0 (for
//! ds² = −A dt² + B dr² + C dΩ² this is u^r = −√((1 − A)/(AB)); Falcke, Melia & Agol 2000,
//! ApJ 528, L13; Narayan, Johnson & Gammie 2019, ApJL 885, L33). Emissivity j ∝ r^(−q)
//! (q = 2 by default). Where gas cannot fall from rest (−1 − g^tt < 0) it does not emit.
//!
//! # Redshift and intensity
//!
//! A photon with p_t = −1 at infinity reaching an emitter of four-velocity u has
//! g = ν_obs/ν_em = 1/(−p_μ u^μ). I_ν/ν³ is invariant along a ray, so for an emitted spectrum
//! ∝ ν^(−α_ν) the intensity observed at a fixed frequency is I = g^(3+α_ν) × (emitted); umbral
//! uses α_ν = 0 by default (g³; α_ν = 1 gives the bolometric g⁴). The thin disk adds
//! g^(3+α_ν) J(r_n) at each equatorial crossing n (no path-length factor for the crossing
//! angle: a choice, stated here); crossing 0 is the direct image, 1 the lensed ring, 2 and
//! beyond the photon ring (Gralla, Holz & Wald 2019, Phys. Rev. D 100, 024018; Johnson et al.
//! 2020, Sci. Adv. 6, eaaz1310). Infall integrates I = ∫ g^(3+α_ν) j dl along the ray, with
//! dl = (−p_μ u^μ) |dτ| the path length in the gas frame.
//!
//! ```
//! use umbral::image::emission::isco;
//! use umbral::metrics::Schwarzschild;
//!
//! // The Schwarzschild ISCO, 6M (Bardeen, Press & Teukolsky 1972).
//! assert!((isco(&Schwarzschild).unwrap() - 6.0).abs() < 1e-9);
//! ```

use super::ImageError;
use crate::metric::Spacetime;
use serde::{Deserialize, Serialize};
use std::f64::consts::FRAC_PI_2;

/// The radial emissivity profile of a thin disk.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "kebab-case", deny_unknown_fields)]
pub enum DiskProfile {
    /// J ∝ r^(−index).
    PowerLaw {
        /// The power-law index q.
        index: f64,
    },
    /// J ∝ exp(−[ln(r/peak)]²/(2 width²)).
    LogNormal {
        /// The radius r_pk of the peak, in M.
        peak: f64,
        /// The width σ in ln r.
        width: f64,
    },
}

impl DiskProfile {
    /// J(r).
    pub fn emissivity(&self, r: f64) -> f64 {
        match *self {
            DiskProfile::PowerLaw { index } => r.powf(-index),
            DiskProfile::LogNormal { peak, width } => {
                let x = (r / peak).ln() / width;
                (-0.5 * x * x).exp()
            }
        }
    }
}

/// Where a thin disk begins.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum InnerEdge {
    /// The innermost stable circular orbit.
    Isco,
    /// The outer horizon.
    Horizon,
    /// A radius in M.
    Radius(f64),
}

/// An emission model.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum EmissionModel {
    /// A thin equatorial disk (module docs).
    ThinDisk {
        /// The emissivity profile.
        profile: DiskProfile,
        /// Where the disk begins.
        inner_edge: InnerEdge,
        /// Where it ends, in M (`None`: where the ray leaves the tracer).
        outer_radius: Option<f64>,
        /// Spectral index α_ν of the emitted spectrum ∝ ν^(−α_ν).
        spectral_index: f64,
    },
    /// Optically thin spherical infall (module docs).
    Infall {
        /// Emissivity index q: j ∝ r^(−q).
        index: f64,
        /// Spectral index α_ν.
        spectral_index: f64,
    },
}

/// The built-in model names of the command line.
pub const BUILT_IN: [&str; 3] = ["disk-isco", "disk-horizon", "infall"];

impl EmissionModel {
    /// A built-in model: `disk-isco` (J ∝ r^(−2) from the ISCO), `disk-horizon` (J ∝ r^(−2)
    /// down to the outer horizon) or `infall` (j ∝ r^(−2)); all with α_ν = 0.
    pub fn built_in(name: &str) -> Option<EmissionModel> {
        let disk = |inner_edge| EmissionModel::ThinDisk {
            profile: DiskProfile::PowerLaw { index: 2.0 },
            inner_edge,
            outer_radius: None,
            spectral_index: 0.0,
        };
        match name {
            "disk-isco" => Some(disk(InnerEdge::Isco)),
            "disk-horizon" => Some(disk(InnerEdge::Horizon)),
            "infall" => Some(EmissionModel::Infall {
                index: 2.0,
                spectral_index: 0.0,
            }),
            _ => None,
        }
    }

    /// Check the numbers of the model (finite, positive where they must be).
    pub fn validate(&self) -> Result<(), ImageError> {
        let bad = |what: &str, x: f64| {
            Err(ImageError::BadRequest(format!(
                "the emission model's {what} must be a finite number{}, got {x}",
                if what.contains("index") {
                    ""
                } else {
                    " above 0"
                }
            )))
        };
        match *self {
            EmissionModel::ThinDisk {
                profile,
                inner_edge,
                outer_radius,
                spectral_index,
            } => {
                match profile {
                    DiskProfile::PowerLaw { index } if !index.is_finite() => {
                        return bad("power-law index", index)
                    }
                    DiskProfile::LogNormal { peak, .. } if !(peak.is_finite() && peak > 0.0) => {
                        return bad("peak radius", peak)
                    }
                    DiskProfile::LogNormal { width, .. } if !(width.is_finite() && width > 0.0) => {
                        return bad("log-normal width", width)
                    }
                    _ => {}
                }
                if let InnerEdge::Radius(r) = inner_edge {
                    if !(r.is_finite() && r > 0.0) {
                        return bad("inner radius", r);
                    }
                }
                if let Some(r) = outer_radius {
                    if !(r.is_finite() && r > 0.0) {
                        return bad("outer radius", r);
                    }
                }
                if !spectral_index.is_finite() {
                    return bad("spectral index", spectral_index);
                }
            }
            EmissionModel::Infall {
                index,
                spectral_index,
            } => {
                if !index.is_finite() {
                    return bad("emissivity index", index);
                }
                if !spectral_index.is_finite() {
                    return bad("spectral index", spectral_index);
                }
            }
        }
        Ok(())
    }

    /// Whether the model's emission reaches down to the outer horizon in the equatorial plane
    /// (then the image has an inner shadow; Chael, Johnson & Lupsasca 2021, ApJ 918, 6).
    pub fn reaches_horizon(&self) -> bool {
        matches!(
            self,
            EmissionModel::ThinDisk {
                inner_edge: InnerEdge::Horizon,
                ..
            }
        )
    }
}

/// A circular equatorial geodesic.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct CircularOrbit {
    /// Angular velocity Ω = dφ/dt.
    pub omega: f64,
    /// u^t.
    pub u_t: f64,
    /// Specific energy E = −u_t (covariant).
    pub energy: f64,
    /// Specific angular momentum L = u_φ.
    pub angular_momentum: f64,
}

/// The co-rotating circular equatorial geodesic at radius `r` (module docs), if one exists
/// there (a real Ω and a timelike orbit).
pub fn circular_orbit(spacetime: &dyn Spacetime, r: f64) -> Option<CircularOrbit> {
    let g = spacetime.components_at(r, FRAC_PI_2);
    let d = spacetime.metric_derivatives(r, FRAC_PI_2)[1];
    // Matrix indices: 0 = t, 3 = φ.
    let (dtt, dtp, dpp) = (d[(0, 0)], d[(0, 3)], d[(3, 3)]);
    let disc = dtp * dtp - dtt * dpp;
    if !(disc >= 0.0 && dpp != 0.0) {
        return None;
    }
    let frame = if g.g_phph != 0.0 {
        -g.g_tphi / g.g_phph
    } else {
        0.0
    };
    let sense = if frame < 0.0 { -1.0 } else { 1.0 };
    let omega = (-dtp + sense * disc.sqrt()) / dpp;
    let norm = -(g.g_tt + 2.0 * omega * g.g_tphi + omega * omega * g.g_phph);
    if !(norm > 0.0 && norm.is_finite()) {
        return None;
    }
    let u_t = 1.0 / norm.sqrt();
    Some(CircularOrbit {
        omega,
        u_t,
        energy: -(g.g_tt + omega * g.g_tphi) * u_t,
        angular_momentum: (g.g_tphi + omega * g.g_phph) * u_t,
    })
}

/// V″(r) at fixed E and L (module docs); stable where positive.
fn stability(spacetime: &dyn Spacetime, r: f64, orbit: &CircularOrbit) -> f64 {
    let p = [-orbit.energy, 0.0, 0.0, orbit.angular_momentum];
    2.0 * spacetime.hamiltonian_hessian(r, FRAC_PI_2, &p)[0][0]
}

/// Outermost radius scanned for the ISCO, in M.
const ISCO_SCAN_START: f64 = 100.0;
/// Ratio between successive radii of the inward scan.
const ISCO_SCAN_RATIO: f64 = 0.99;

/// The innermost stable circular orbit of the co-rotating equatorial gas: the outermost
/// radius below which circular orbits stop being stable (module docs). An error if the metric
/// is not equatorially symmetric, if orbits are unstable already at 100 M, or if stable
/// orbits continue down to where circular orbits or the metric's exterior end (no ISCO).
pub fn isco(spacetime: &dyn Spacetime) -> Result<f64, ImageError> {
    if !spacetime.is_equatorially_symmetric() {
        return Err(ImageError::BadRequest(
            "equatorial disk models need an equatorially symmetric metric".into(),
        ));
    }
    let floor = spacetime.outer_horizon().unwrap_or(0.0);
    let stable_at = |r: f64| circular_orbit(spacetime, r).map(|o| stability(spacetime, r, &o));
    let mut outer = ISCO_SCAN_START;
    match stable_at(outer) {
        Some(s) if s > 0.0 => {}
        _ => {
            return Err(ImageError::BadRequest(format!(
                "no stable circular orbit at r = {ISCO_SCAN_START} M: the metric has no ISCO \
                 umbral can find"
            )))
        }
    }
    loop {
        let inner = outer * ISCO_SCAN_RATIO;
        if inner <= floor * (1.0 + 1e-9) || inner < 1e-3 {
            return Err(ImageError::BadRequest(format!(
                "circular orbits stay stable down to r = {} M: the metric has no ISCO; give the \
                 disk an inner radius",
                crate::numfmt::num(outer)
            )));
        }
        match stable_at(inner) {
            Some(s) if s > 0.0 => outer = inner,
            // Unstable, or no circular orbit at all: the edge lies in (inner, outer].
            _ => {
                let (mut lo, mut hi) = (inner, outer);
                for _ in 0..200 {
                    let mid = 0.5 * (lo + hi);
                    if mid <= lo || mid >= hi {
                        break;
                    }
                    match stable_at(mid) {
                        Some(s) if s > 0.0 => hi = mid,
                        _ => lo = mid,
                    }
                }
                return Ok(hi);
            }
        }
    }
}

/// How the emitting gas moves.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub enum Flow {
    /// Circular co-rotating orbits outside `isco`, plunging with the ISCO's E and L inside.
    Keplerian {
        /// The ISCO radius (where plunging begins), in M.
        isco: f64,
        /// The ISCO's orbit.
        orbit: CircularOrbit,
    },
    /// Radial infall from rest at infinity with zero angular momentum.
    Infall,
}

impl Flow {
    /// The Keplerian flow of a metric (its ISCO found by [`isco`]).
    pub fn keplerian(spacetime: &dyn Spacetime) -> Result<Flow, ImageError> {
        let r = isco(spacetime)?;
        let orbit = circular_orbit(spacetime, r).ok_or_else(|| {
            ImageError::BadRequest(format!("no circular orbit at the ISCO r = {r}"))
        })?;
        Ok(Flow::Keplerian { isco: r, orbit })
    }

    /// The gas four-velocity u^μ = (u^t, u^r, u^θ, u^φ) at (r, θ) (θ = π/2 for the disk), or
    /// `None` where this flow cannot exist.
    pub fn four_velocity(&self, spacetime: &dyn Spacetime, r: f64, theta: f64) -> Option<[f64; 4]> {
        let u = match *self {
            Flow::Keplerian { isco, .. } if r >= isco => {
                let o = circular_orbit(spacetime, r)?;
                [o.u_t, 0.0, 0.0, o.omega * o.u_t]
            }
            Flow::Keplerian { orbit, .. } => {
                geodesic_infall(spacetime, r, theta, orbit.energy, orbit.angular_momentum)?
            }
            Flow::Infall => geodesic_infall(spacetime, r, theta, 1.0, 0.0)?,
        };
        u.iter().all(|x| x.is_finite()).then_some(u)
    }
}

/// u^μ of an ingoing geodesic with u_t = −E, u_φ = L, u_θ = 0 at (r, θ).
fn geodesic_infall(
    spacetime: &dyn Spacetime,
    r: f64,
    theta: f64,
    energy: f64,
    angular_momentum: f64,
) -> Option<[f64; 4]> {
    let g = spacetime.components_at(r, theta);
    let inv = g.inverse();
    let (ut_low, uphi_low) = (-energy, angular_momentum);
    let v = inv.g_tt * ut_low * ut_low
        + 2.0 * inv.g_tphi * ut_low * uphi_low
        + inv.g_phph * uphi_low * uphi_low
        + 1.0;
    let ur2 = -v / g.g_rr;
    (ur2 >= 0.0).then(|| {
        [
            inv.g_tt * ut_low + inv.g_tphi * uphi_low,
            -ur2.sqrt(),
            0.0,
            inv.g_tphi * ut_low + inv.g_phph * uphi_low,
        ]
    })
}

/// g = 1/(−p_μ u^μ) for the photon momentum `p` = (p_t, p_r, p_θ, p_φ) (p_t = −1 at infinity).
pub fn redshift(p: &[f64; 4], u: &[f64; 4]) -> f64 {
    1.0 / -(p[0] * u[0] + p[1] * u[1] + p[2] * u[2] + p[3] * u[3])
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::metrics::{Kerr, Schwarzschild};

    /// Kerr ISCO (Bardeen, Press & Teukolsky 1972, ApJ 178, 347, eq. 2.21), co-rotating.
    fn bpt_isco(a: f64) -> f64 {
        let a_abs = a.abs();
        let z1 = 1.0 + (1.0 - a_abs * a_abs).cbrt() * ((1.0 + a_abs).cbrt() + (1.0 - a_abs).cbrt());
        let z2 = (3.0 * a_abs * a_abs + z1 * z1).sqrt();
        3.0 + z2 - ((3.0 - z1) * (3.0 + z1 + 2.0 * z2)).sqrt()
    }

    #[test]
    fn kerr_isco_matches_bardeen_press_teukolsky() {
        for a in [0.0, 0.3, 0.7, 0.9, 0.99, -0.5, -0.9] {
            let r = isco(&Kerr::new(a).unwrap()).unwrap();
            assert!(
                (r - bpt_isco(a)).abs() < 1e-8,
                "a = {a}: {r} vs {}",
                bpt_isco(a)
            );
        }
    }

    #[test]
    fn kerr_circular_orbits_have_the_closed_form_angular_velocity() {
        // Ω = ±1/(r^{3/2} ± a) (Bardeen, Press & Teukolsky 1972), co-rotating.
        for a in [0.0, 0.6, -0.6] {
            let kerr = Kerr::new(a).unwrap();
            for r in [4.0, 7.5, 20.0] {
                let o = circular_orbit(&kerr, r).unwrap();
                let expected = if a >= 0.0 {
                    1.0 / (r.powf(1.5) + a)
                } else {
                    -1.0 / (r.powf(1.5) - a)
                };
                assert!((o.omega - expected).abs() < 1e-13, "a = {a}, r = {r}");
            }
        }
    }

    #[test]
    fn schwarzschild_infall_and_redshift_match_closed_forms() {
        // u^r = −√(2/r), u^t = 1/(1 − 2/r) (Falcke, Melia & Agol 2000 setting).
        let r: f64 = 5.0;
        let u = Flow::Infall.four_velocity(&Schwarzschild, r, 1.0).unwrap();
        assert!((u[0] - 1.0 / (1.0 - 2.0 / r)).abs() < 1e-14);
        assert!((u[1] + (2.0 / r).sqrt()).abs() < 1e-14);
        // A radially outgoing photon, p = (−1, 1/(1 − 2/r), 0, 0): −p·u = u^t − p_r u^r
        // = (1 + √(2/r))/(1 − 2/r) = 1/(1 − √(2/r)), so g = 1 − √(2/r) (derived here from
        // g = 1/(−p·u): the free-fall Doppler factor and the gravitational shift combined).
        let p = [-1.0, 1.0 / (1.0 - 2.0 / r), 0.0, 0.0];
        let g = redshift(&p, &u);
        assert!((g - (1.0 - (2.0 / r).sqrt())).abs() < 1e-14, "{g}");
    }

    #[test]
    fn plunging_gas_continues_the_isco_orbit() {
        let kerr = Kerr::new(0.5).unwrap();
        let flow = Flow::keplerian(&kerr).unwrap();
        let Flow::Keplerian { isco, orbit } = flow else {
            unreachable!()
        };
        let inside = flow.four_velocity(&kerr, isco * 0.999, FRAC_PI_2).unwrap();
        assert!(inside[1] < 0.0 && inside[1] > -0.05);
        assert!((inside[0] - orbit.u_t).abs() < 1e-2);
        // Normalised: g_μν u^μ u^ν = −1.
        let g = kerr.components_at(isco * 0.9, FRAC_PI_2);
        let u = flow.four_velocity(&kerr, isco * 0.9, FRAC_PI_2).unwrap();
        let norm = g.g_tt * u[0] * u[0]
            + 2.0 * g.g_tphi * u[0] * u[3]
            + g.g_phph * u[3] * u[3]
            + g.g_rr * u[1] * u[1];
        assert!((norm + 1.0).abs() < 1e-12, "{norm}");
    }
}
