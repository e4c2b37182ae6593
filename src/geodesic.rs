//! Null geodesics in Hamiltonian form and an adaptive Dormand–Prince 5(4) integrator.
//!
//! State y = (x^μ, p_μ) with x = (t, r, θ, φ). Hamilton's equations for
//! H = ½ g^{μν} p_μ p_ν: dx^μ/dτ = ∂H/∂p_μ, dp_μ/dτ = −∂H/∂x^μ; the gradient comes exactly
//! from [`Spacetime::hamiltonian_gradient`]. Null rays keep H = 0.
//!
//! The integrator is the embedded Runge–Kutta pair of Dormand & Prince (1980,
//! J. Comput. Appl. Math. 6, 19), with the step-size control of Hairer, Nørsett & Wanner
//! (1993, *Solving Ordinary Differential Equations I*, §II.4). It is written here rather
//! than taken from a crate so that every ray can stop on a physical event, report its own
//! failure (step-size underflow, non-finite state, step limit), and allocate nothing.

use crate::metric::Spacetime;
use serde::Serialize;

/// Phase-space state (t, r, θ, φ, p_t, p_r, p_θ, p_φ).
pub type PhaseState = [f64; 8];

/// Right-hand side of Hamilton's equations.
#[inline]
pub fn hamilton_rhs(spacetime: &dyn Spacetime, y: &PhaseState) -> PhaseState {
    let p = [y[4], y[5], y[6], y[7]];
    let g = spacetime.hamiltonian_gradient(y[1], y[2], &p);
    [
        g.dh_dp[0],
        g.dh_dp[1],
        g.dh_dp[2],
        g.dh_dp[3],
        -g.dh_dx[0],
        -g.dh_dx[1],
        -g.dh_dx[2],
        -g.dh_dx[3],
    ]
}

/// The radial momentum p_r that makes (p_t, p_r, p_θ, p_φ) null at (r, θ), with the sign of
/// `sign`; `None` where no real p_r exists (a turning point region).
pub fn null_radial_momentum(
    spacetime: &dyn Spacetime,
    r: f64,
    theta: f64,
    p_t: f64,
    p_theta: f64,
    p_phi: f64,
    sign: f64,
) -> Option<f64> {
    let inv = spacetime.components_at(r, theta).inverse();
    let rest = inv.g_tt * p_t * p_t
        + 2.0 * inv.g_tphi * p_t * p_phi
        + inv.g_phph * p_phi * p_phi
        + inv.g_thth * p_theta * p_theta;
    let pr2 = -rest / inv.g_rr;
    (pr2 >= 0.0 && pr2.is_finite()).then(|| sign.signum() * pr2.sqrt())
}

/// Tolerances and limits of the integrator.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct IntegratorSettings {
    /// Relative tolerance per step.
    pub rtol: f64,
    /// Absolute tolerance per step.
    pub atol: f64,
    /// First trial step.
    pub initial_step: f64,
    /// Smallest step before the ray is declared failed.
    pub min_step: f64,
    /// Largest step.
    pub max_step: f64,
    /// Step limit before the ray is declared failed.
    pub max_steps: usize,
}

impl Default for IntegratorSettings {
    fn default() -> Self {
        IntegratorSettings {
            rtol: 1e-10,
            atol: 1e-12,
            initial_step: 1e-2,
            min_step: 1e-14,
            max_step: f64::INFINITY,
            max_steps: 100_000,
        }
    }
}

/// Why an integration stopped without reaching its goal.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, thiserror::Error)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum IntegrationFailure {
    /// The controller asked for a step below `min_step`.
    #[error("step size fell below the minimum at r = {r}")]
    StepSizeUnderflow {
        /// The radius where it happened, in M.
        r: f64,
    },
    /// The state became NaN or infinite.
    #[error("the state became non-finite after {steps} steps")]
    NonFinite {
        /// Accepted steps before it happened.
        steps: usize,
    },
    /// `max_steps` steps were taken.
    #[error("no result after {steps} steps")]
    TooManySteps {
        /// The number of steps taken.
        steps: usize,
    },
}

/// What the caller's stop test says after an accepted step.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Control {
    /// Go on integrating.
    Continue,
    /// Stop here.
    Stop,
}

/// Where an integration ended.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct IntegrationEnd {
    /// The final state.
    pub state: PhaseState,
    /// The affine parameter reached.
    pub tau: f64,
    /// Accepted steps.
    pub steps: usize,
    /// Rejected trial steps.
    pub rejected: usize,
}

// Dormand–Prince 5(4) coefficients (Dormand & Prince 1980, Table 2). The nodes c_i are not
// needed: Hamilton's equations do not depend on τ explicitly.
const A21: f64 = 1.0 / 5.0;
const A31: f64 = 3.0 / 40.0;
const A32: f64 = 9.0 / 40.0;
const A41: f64 = 44.0 / 45.0;
const A42: f64 = -56.0 / 15.0;
const A43: f64 = 32.0 / 9.0;
const A51: f64 = 19372.0 / 6561.0;
const A52: f64 = -25360.0 / 2187.0;
const A53: f64 = 64448.0 / 6561.0;
const A54: f64 = -212.0 / 729.0;
const A61: f64 = 9017.0 / 3168.0;
const A62: f64 = -355.0 / 33.0;
const A63: f64 = 46732.0 / 5247.0;
const A64: f64 = 49.0 / 176.0;
const A65: f64 = -5103.0 / 18656.0;
const B1: f64 = 35.0 / 384.0;
const B3: f64 = 500.0 / 1113.0;
const B4: f64 = 125.0 / 192.0;
const B5: f64 = -2187.0 / 6784.0;
const B6: f64 = 11.0 / 84.0;
// Differences between the fifth- and fourth-order weights.
const E1: f64 = 71.0 / 57600.0;
const E3: f64 = -71.0 / 16695.0;
const E4: f64 = 71.0 / 1920.0;
const E5: f64 = -17253.0 / 339200.0;
const E6: f64 = 22.0 / 525.0;
const E7: f64 = -1.0 / 40.0;

#[inline(always)]
fn combine(y: &PhaseState, h: f64, terms: &[(f64, &PhaseState)]) -> PhaseState {
    let mut out = *y;
    for (i, o) in out.iter_mut().enumerate() {
        let mut s = 0.0;
        for (w, k) in terms {
            s += w * k[i];
        }
        *o += h * s;
    }
    out
}

/// Which state components enter the step-size controller's error norm.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum ErrorNorm {
    /// All eight components (t, r, θ, φ, p_t, p_r, p_θ, p_φ).
    All,
    /// Only (r, θ, p_r, p_θ). In a stationary, axisymmetric spacetime t and φ are cyclic: they
    /// never feed back into the motion, and p_t, p_φ are exactly constant. Leaving them out
    /// saves steps where only the path in (r, θ) matters (e.g. capture versus escape), and
    /// avoids the logarithmic divergence of t and φ at a Boyer–Lindquist horizon.
    Dynamical,
}

/// Integrate Hamilton's equations from `y0` in the direction of `settings.initial_step`'s
/// sign, calling `stop` after each accepted step with (previous state, new state, τ) until
/// it says [`Control::Stop`] or `tau_max` (in absolute value) is reached.
///
/// The first-same-as-last property is used, so an accepted step costs six gradient
/// evaluations. All eight components are error-controlled; see [`integrate_with_norm`].
pub fn integrate(
    spacetime: &dyn Spacetime,
    y0: PhaseState,
    tau_max: f64,
    settings: &IntegratorSettings,
    stop: impl FnMut(&PhaseState, &PhaseState, f64) -> Control,
) -> Result<IntegrationEnd, IntegrationFailure> {
    integrate_with_norm(spacetime, y0, tau_max, settings, ErrorNorm::All, stop)
}

/// [`integrate`] with a choice of the components that control the step size.
// Long: the Dormand–Prince step loop (stages, error norm, step control) shares its state and is the ray tracer's inner loop; kept whole for speed and to read as in Hairer et al.
#[inline]
pub fn integrate_with_norm(
    spacetime: &dyn Spacetime,
    y0: PhaseState,
    tau_max: f64,
    settings: &IntegratorSettings,
    norm: ErrorNorm,
    mut stop: impl FnMut(&PhaseState, &PhaseState, f64) -> Control,
) -> Result<IntegrationEnd, IntegrationFailure> {
    const ALL: [usize; 8] = [0, 1, 2, 3, 4, 5, 6, 7];
    const DYNAMICAL: [usize; 4] = [1, 2, 5, 6];
    let controlled: &[usize] = match norm {
        ErrorNorm::All => &ALL,
        ErrorNorm::Dynamical => &DYNAMICAL,
    };
    let direction = settings.initial_step.signum();
    let mut h = settings.initial_step.abs();
    let mut y = y0;
    let mut tau = 0.0;
    let mut k1 = hamilton_rhs(spacetime, &y);
    let mut steps = 0;
    let mut rejected = 0;
    let f = |y: &PhaseState| hamilton_rhs(spacetime, y);
    while tau < tau_max.abs() {
        if steps + rejected >= settings.max_steps {
            return Err(IntegrationFailure::TooManySteps { steps });
        }
        h = h.min(settings.max_step).min(tau_max.abs() - tau);
        let hs = h * direction;
        let k2 = f(&combine(&y, hs, &[(A21, &k1)]));
        let k3 = f(&combine(&y, hs, &[(A31, &k1), (A32, &k2)]));
        let k4 = f(&combine(&y, hs, &[(A41, &k1), (A42, &k2), (A43, &k3)]));
        let k5 = f(&combine(
            &y,
            hs,
            &[(A51, &k1), (A52, &k2), (A53, &k3), (A54, &k4)],
        ));
        let k6 = f(&combine(
            &y,
            hs,
            &[(A61, &k1), (A62, &k2), (A63, &k3), (A64, &k4), (A65, &k5)],
        ));
        let y_new = combine(
            &y,
            hs,
            &[(B1, &k1), (B3, &k3), (B4, &k4), (B5, &k5), (B6, &k6)],
        );
        let k7 = f(&y_new);
        let mut err2 = 0.0;
        for &i in controlled {
            let e =
                hs * (E1 * k1[i] + E3 * k3[i] + E4 * k4[i] + E5 * k5[i] + E6 * k6[i] + E7 * k7[i]);
            let scale = settings.atol + settings.rtol * y[i].abs().max(y_new[i].abs());
            err2 += (e / scale) * (e / scale);
        }
        let err = (err2 / controlled.len() as f64).sqrt();
        // A non-finite component outside the norm must still reject the step.
        let err = if y_new.iter().all(|x| x.is_finite()) {
            err
        } else {
            f64::NAN
        };
        if !err.is_finite() {
            // A trial step landed on a singular point: shrink and try again.
            rejected += 1;
            h *= 0.2;
            if h < settings.min_step {
                return Err(if y.iter().all(|x| x.is_finite()) {
                    IntegrationFailure::StepSizeUnderflow { r: y[1] }
                } else {
                    IntegrationFailure::NonFinite { steps }
                });
            }
            continue;
        }
        // Controller of Hairer, Nørsett & Wanner (1993, eq. II.4.13), safety 0.9.
        let factor = if err == 0.0 {
            5.0
        } else {
            (0.9 * err.powf(-0.2)).clamp(0.2, 5.0)
        };
        if err <= 1.0 {
            let y_old = y;
            y = y_new;
            k1 = k7;
            tau += h;
            steps += 1;
            if !y.iter().all(|x| x.is_finite()) {
                return Err(IntegrationFailure::NonFinite { steps });
            }
            if stop(&y_old, &y, tau) == Control::Stop {
                break;
            }
            h *= factor;
        } else {
            rejected += 1;
            h *= factor.min(1.0);
        }
        if h < settings.min_step {
            return Err(IntegrationFailure::StepSizeUnderflow { r: y[1] });
        }
    }
    Ok(IntegrationEnd {
        state: y,
        tau,
        steps,
        rejected,
    })
}
