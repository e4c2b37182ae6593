//! Where the image is taken: a distant observer at inclination θ_o, or one at finite radius.
//!
//! # The observer at finite radius
//!
//! A finite observer is the zero-angular-momentum observer (ZAMO, Bardeen 1970, ApJ 162, 71;
//! Bardeen, Press & Teukolsky 1972, ApJ 178, 347) at (r_o, θ_o). With ω = −g_tφ/g_φφ its
//! orthonormal tetrad is
//!
//! e_(t) = (∂_t + ω ∂_φ)/N, N² = −(g_tt − ω² g_φφ) = −g_tt + g_tφ²/g_φφ,
//! e_(r) = ∂_r/√g_rr, e_(θ) = ∂_θ/√g_θθ, e_(φ) = ∂_φ/√g_φφ,
//!
//! which for a static spherical metric is the static observer. A photon with covariant momentum
//! p_μ has tetrad components p^(t) = −(p_t + ω p_φ)/N (the energy the observer measures),
//! p^(r) = p_r/√g_rr, p^(θ) = p_θ/√g_θθ, p^(φ) = p_φ/√g_φφ.
//!
//! Celestial coordinates: the photon appears to come from the direction n = −p^(i)/p^(t).
//! Θ is the angle between n and the direction towards the centre, −e_(r), so
//! cos Θ = p^(r)/p^(t); the azimuth Ψ is measured in the (e_(φ), −e_(θ)) plane,
//! sin Θ cos Ψ = n^(φ) = −p^(φ)/p^(t), sin Θ sin Ψ = −n^(θ) = p^(θ)/p^(t).
//! (These definitions follow from the tetrad; the sign of Ψ is chosen so that the screen
//! agrees with Bardeen's distant-observer convention.)
//!
//! Screen coordinates (the project's convention for a finite observer):
//! (α, β) = √g_θθ(r_o, θ_o) · sin Θ · (cos Ψ, sin Ψ). As r_o → ∞, √g_θθ → r_o and
//! sin Θ cos Ψ → −p_φ/(E r_o sin θ_o), sin Θ sin Ψ → p_θ/(E r_o), so
//! α → −λ/sin θ_o and β → p_θ/E: Bardeen's (1973) screen. The map from Θ to the screen is
//! one-to-one only for Θ ≤ 90°; a shadow larger than a hemisphere (an observer inside the
//! photon region) cannot be drawn on this screen.
//!
//! Which side prograde photons appear on: a photon with λ = p_φ/E > 0 co-rotates with a hole of
//! spin a > 0; its α = −λ/sin θ_o is negative, so the prograde (flattened, smaller-radius) side
//! of a Kerr shadow with a > 0 lies at α < 0, and the retrograde side at α > 0.
//!
//! ```
//! use umbral::metrics::Kerr;
//! use umbral::shadow::observer::{celestial_from_momentum, momentum_from_celestial};
//! use umbral::shadow::Observer;
//!
//! let kerr = Kerr::new(0.7).unwrap();
//! let observer = Observer::at_radius(1.2, 50.0);
//! let p = momentum_from_celestial(&kerr, &observer, 0.3, 2.0).unwrap();
//! let (theta_c, psi_c) = celestial_from_momentum(&kerr, &observer, &p).unwrap();
//! assert!((theta_c - 0.3).abs() < 1e-13 && (psi_c - 2.0).abs() < 1e-13);
//! ```

use super::ShadowError;
use crate::metric::Spacetime;
use crate::numfmt::Num;
use serde::Serialize;

/// The observer: inclination from the spin axis (radians, 0 ≤ θ_o ≤ π) and, for an observer
/// at finite distance, its radius r_o (`None`: at infinity).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Observer {
    /// Inclination θ_o from the spin axis, in radians (0 to π).
    pub inclination: f64,
    /// Radius r_o of an observer at finite distance, in M; `None` at infinity.
    pub radius: Option<f64>,
}

impl Observer {
    /// A distant observer at inclination `inclination` (radians).
    pub fn distant(inclination: f64) -> Self {
        Observer {
            inclination,
            radius: None,
        }
    }

    /// An observer at finite radius `radius`.
    pub fn at_radius(inclination: f64, radius: f64) -> Self {
        Observer {
            inclination,
            radius: Some(radius),
        }
    }

    /// Check that the inclination lies in [0, π] and a finite radius is a positive number.
    pub fn validate(&self) -> Result<(), ShadowError> {
        let i = self.inclination;
        if !(i.is_finite() && (0.0..=std::f64::consts::PI).contains(&i)) {
            return Err(ShadowError::BadRequest(format!(
                "the inclination must lie in [0, pi] radians, got {}",
                Num(i)
            )));
        }
        if let Some(r) = self.radius {
            if !(r.is_finite() && r > 0.0) {
                return Err(ShadowError::BadRequest(format!(
                    "the observer radius must be a positive finite number, got {}",
                    Num(r)
                )));
            }
        }
        Ok(())
    }
}

/// An orthonormal tetrad: the contravariant components (t, r, θ, φ) of its four legs.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Tetrad {
    /// The observer's four-velocity e_(t).
    pub e_t: [f64; 4],
    /// The radial leg e_(r).
    pub e_r: [f64; 4],
    /// The polar leg e_(θ).
    pub e_theta: [f64; 4],
    /// The azimuthal leg e_(φ).
    pub e_phi: [f64; 4],
    /// The frame-dragging angular velocity ω = −g_tφ/g_φφ of the observer.
    pub omega: f64,
    /// The lapse N = √(−g_tt + g_tφ²/g_φφ).
    pub lapse: f64,
}

/// The ZAMO tetrad at (r, θ) (Bardeen, Press & Teukolsky 1972, ApJ 178, 347, §II):
/// e_(t) = (∂_t + ω∂_φ)/N, e_(i) = ∂_i/√g_ii.
///
/// Errors where no such observer exists: on the axis (g_φφ ≤ 0), on or inside a horizon
/// (N² ≤ 0 or g_rr ≤ 0), or where the metric is not finite.
pub fn zamo_tetrad(spacetime: &dyn Spacetime, r: f64, theta: f64) -> Result<Tetrad, ShadowError> {
    let g = spacetime.components_at(r, theta);
    let bad = |why: &str| {
        Err(ShadowError::BadRequest(format!(
            "no zero-angular-momentum observer at r = {r}, theta = {theta}: {why}"
        )))
    };
    if !g.is_finite() {
        return bad("the metric is not finite there");
    }
    if g.g_phph <= 0.0 {
        return bad("g_phiphi <= 0 (on the axis or in a region of closed timelike curves)");
    }
    if g.g_rr <= 0.0 || g.g_thth <= 0.0 {
        return bad("g_rr or g_thetatheta <= 0 (on or inside a horizon)");
    }
    let omega = -g.g_tphi / g.g_phph;
    let lapse2 = -g.g_tt + g.g_tphi * g.g_tphi / g.g_phph;
    if lapse2.is_nan() || lapse2 <= 0.0 {
        return bad("the lapse vanishes (on or inside a horizon)");
    }
    let lapse = lapse2.sqrt();
    Ok(Tetrad {
        e_t: [1.0 / lapse, 0.0, 0.0, omega / lapse],
        e_r: [0.0, 1.0 / g.g_rr.sqrt(), 0.0, 0.0],
        e_theta: [0.0, 0.0, 1.0 / g.g_thth.sqrt(), 0.0],
        e_phi: [0.0, 0.0, 0.0, 1.0 / g.g_phph.sqrt()],
        omega,
        lapse,
    })
}

/// The finite radius of an observer, or a `BadRequest` for a distant one.
fn finite_radius(observer: &Observer) -> Result<f64, ShadowError> {
    observer.validate()?;
    observer.radius.ok_or_else(|| {
        ShadowError::BadRequest("celestial coordinates need an observer at finite radius".into())
    })
}

/// Celestial coordinates (Θ, Ψ) of an arriving photon with covariant momentum
/// p = (p_t, p_r, p_θ, p_φ) at the ZAMO `observer` (module docs): cos Θ = p^(r)/p^(t),
/// tan Ψ = p^(θ)/(−p^(φ)). Θ ∈ [0, π], Ψ ∈ (−π, π].
///
/// Errors for a distant observer, a bad position, or a momentum that is not future-pointing
/// (p^(t) ≤ 0).
pub fn celestial_from_momentum(
    spacetime: &dyn Spacetime,
    observer: &Observer,
    p: &[f64; 4],
) -> Result<(f64, f64), ShadowError> {
    let r_o = finite_radius(observer)?;
    zamo_tetrad(spacetime, r_o, observer.inclination)?.celestial(p)
}

impl Tetrad {
    /// Celestial coordinates (Θ, Ψ) of a photon with covariant momentum `p` seen by this
    /// observer; see [`celestial_from_momentum`].
    pub fn celestial(&self, p: &[f64; 4]) -> Result<(f64, f64), ShadowError> {
        let [p_t, p_r, p_theta, p_phi] = *p;
        let energy = -(p_t + self.omega * p_phi) / self.lapse;
        if !(energy > 0.0 && energy.is_finite()) {
            return Err(ShadowError::BadRequest(format!(
                "the photon momentum is not future-pointing at the observer (local energy {energy})"
            )));
        }
        let radial = p_r * self.e_r[1];
        let polar = p_theta * self.e_theta[2];
        let azimuthal = p_phi * self.e_phi[3];
        let transverse = polar.hypot(azimuthal);
        Ok((transverse.atan2(radial), polar.atan2(-azimuthal)))
    }
}

/// The inverse of [`celestial_from_momentum`]: the covariant momentum of a photon that arrives
/// at the ZAMO `observer` from celestial direction (Θ, Ψ), normalised to unit energy measured by
/// the observer (p^(t) = 1): p_r = √g_rr cos Θ, p_θ = √g_θθ sin Θ sin Ψ,
/// p_φ = −√g_φφ sin Θ cos Ψ, p_t = −N − ω p_φ. Divide by −p_t for the normalisation p_t = −1
/// (then p_φ = λ). Integrating this momentum backwards in affine parameter follows the ray
/// towards its origin.
pub fn momentum_from_celestial(
    spacetime: &dyn Spacetime,
    observer: &Observer,
    theta_c: f64,
    psi_c: f64,
) -> Result<[f64; 4], ShadowError> {
    let r_o = finite_radius(observer)?;
    if !(theta_c.is_finite() && psi_c.is_finite()) {
        return Err(ShadowError::BadRequest(format!(
            "celestial angles must be finite, got ({}, {})",
            Num(theta_c),
            Num(psi_c)
        )));
    }
    let tetrad = zamo_tetrad(spacetime, r_o, observer.inclination)?;
    let (s, c) = theta_c.sin_cos();
    let (sp, cp) = psi_c.sin_cos();
    let p_r = c / tetrad.e_r[1];
    let p_theta = s * sp / tetrad.e_theta[2];
    let p_phi = -s * cp / tetrad.e_phi[3];
    let p_t = -tetrad.lapse - tetrad.omega * p_phi;
    Ok([p_t, p_r, p_theta, p_phi])
}

/// Screen coordinates (α, β) = √g_θθ(r_o, θ_o) sin Θ (cos Ψ, sin Ψ) of a celestial direction,
/// the project's convention for a finite observer (module docs).
pub fn screen_from_celestial(
    spacetime: &dyn Spacetime,
    observer: &Observer,
    theta_c: f64,
    psi_c: f64,
) -> Result<(f64, f64), ShadowError> {
    let r_o = finite_radius(observer)?;
    let g = spacetime.components_at(r_o, observer.inclination);
    if !(g.g_thth > 0.0 && g.g_thth.is_finite()) {
        return Err(ShadowError::BadRequest(format!(
            "g_thetatheta is not positive at the observer (r = {r_o})"
        )));
    }
    let rho = g.g_thth.sqrt() * theta_c.sin();
    Ok((rho * psi_c.cos(), rho * psi_c.sin()))
}

/// A curve on the screen of a finite `observer`, given by its points (α, β), in celestial
/// angles: [`celestial_from_screen`] at every point, except that a point whose
/// ρ/√g_θθ exceeds 1 by rounding only (at most 1e-12, a curve on the edge of the view) is put
/// on the edge, Θ = 90°. Returns (Θ, Ψ) per point.
///
/// ```
/// use umbral::metrics::Schwarzschild;
/// use umbral::shadow::observer::{celestial_curve, Observer};
///
/// let observer = Observer::at_radius(1.0, 10.0);
/// // √g_θθ = r_o = 10 for Schwarzschild: ρ = 4 is Θ = arcsin(0.4).
/// let (theta, psi) = celestial_curve(&Schwarzschild, &observer, &[0.0, 4.0], &[4.0, 0.0]).unwrap();
/// assert!((theta[0] - 0.4f64.asin()).abs() < 1e-15 && (psi[1] - 0.0).abs() < 1e-15);
/// ```
pub fn celestial_curve(
    spacetime: &dyn Spacetime,
    observer: &Observer,
    alpha: &[f64],
    beta: &[f64],
) -> Result<(Vec<f64>, Vec<f64>), ShadowError> {
    let r_o = finite_radius(observer)?;
    let g = spacetime.components_at(r_o, observer.inclination);
    if !(g.g_thth > 0.0 && g.g_thth.is_finite()) {
        return Err(ShadowError::BadRequest(format!(
            "g_thetatheta is not positive at the observer (r = {r_o})"
        )));
    }
    let scale = g.g_thth.sqrt();
    alpha
        .iter()
        .zip(beta)
        .map(|(&a, &b)| {
            let sin_theta = a.hypot(b) / scale;
            if sin_theta <= 1.0 + 1e-12 {
                Ok((sin_theta.min(1.0).asin(), b.atan2(a)))
            } else {
                Err(ShadowError::BadRequest(format!(
                    "curve point ({}, {}) lies beyond the observer's horizon of view",
                    Num(a),
                    Num(b)
                )))
            }
        })
        .collect::<Result<Vec<_>, _>>()
        .map(|points| points.into_iter().unzip())
}

/// The inverse of [`screen_from_celestial`] on the hemisphere Θ ≤ 90° facing the centre:
/// Θ = arcsin(ρ/√g_θθ), Ψ = atan2(β, α). Errors if ρ = √(α² + β²) exceeds √g_θθ.
pub fn celestial_from_screen(
    spacetime: &dyn Spacetime,
    observer: &Observer,
    alpha: f64,
    beta: f64,
) -> Result<(f64, f64), ShadowError> {
    let r_o = finite_radius(observer)?;
    let g = spacetime.components_at(r_o, observer.inclination);
    if !(g.g_thth > 0.0 && g.g_thth.is_finite()) {
        return Err(ShadowError::BadRequest(format!(
            "g_thetatheta is not positive at the observer (r = {r_o})"
        )));
    }
    let sin_theta = alpha.hypot(beta) / g.g_thth.sqrt();
    if sin_theta.is_nan() || sin_theta > 1.0 {
        return Err(ShadowError::BadRequest(format!(
            "screen point ({alpha}, {beta}) lies beyond the observer's horizon of view"
        )));
    }
    Ok((sin_theta.asin(), beta.atan2(alpha)))
}
