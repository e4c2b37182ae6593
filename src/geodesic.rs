//! Null geodesics in Hamiltonian form and adaptive embedded Runge–Kutta integrators.
//!
//! State y = (x^μ, p_μ) with x = (t, r, θ, φ). Hamilton's equations for
//! H = ½ g^{μν} p_μ p_ν: dx^μ/dτ = ∂H/∂p_μ, dp_μ/dτ = −∂H/∂x^μ; the gradient comes exactly
//! from [`Spacetime::hamiltonian_gradient`]. Null rays keep H = 0.
//!
//! Two embedded pairs share one step loop ([`RungeKuttaPair`]): the 5(4) pair of Dormand &
//! Prince (1980, J. Comput. Appl. Math. 6, 19) and the eighth-order "DOP853" pair of Hairer,
//! Nørsett & Wanner (1993, *Solving Ordinary Differential Equations I*, §II.10), both with the
//! step-size control of Hairer, Nørsett & Wanner (§II.4), taking the smaller of its step and
//! the one Gustafsson's predictive controller gives (Gustafsson 1994, ACM TOMS 20, 496), and
//! no growth right after a rejected trial. At the tolerances of the shadow
//! tracer (1e-10, 1e-11) the eighth-order pair takes about a quarter of the steps at twice the
//! gradient evaluations per step (docs/performance.md). The loop is written here rather than
//! taken from a crate so that every ray can stop on a physical event, report its own failure
//! (step-size underflow, non-finite state, step limit), and allocate nothing.

use crate::metric::Spacetime;
use serde::Serialize;

mod dop853;

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
    /// The embedded Runge–Kutta pair.
    pub pair: RungeKuttaPair,
}

/// The embedded Runge–Kutta pair of an integration.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum RungeKuttaPair {
    /// Dormand & Prince (1980) 5(4): six gradient evaluations per accepted step. Cheapest per
    /// step; the better choice at loose tolerances (images at 1e-7).
    #[default]
    DormandPrince54,
    /// "DOP853" (Hairer, Nørsett & Wanner 1993, §II.10): twelve gradient evaluations per
    /// accepted step, eighth order, so far fewer steps at tight tolerances (1e-10 and below).
    DormandPrince853,
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
            pair: RungeKuttaPair::DormandPrince54,
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
    /// The parameter reached: the affine parameter, or σ in [`Chart::InverseRadius`].
    pub tau: f64,
    /// Accepted steps.
    pub steps: usize,
    /// Rejected trial steps.
    pub rejected: usize,
}

/// An embedded Runge–Kutta pair: one trial step and its scaled error.
trait EmbeddedPair {
    /// Exponent of the step-size controller, −1/(q + 1) for an error estimate of order q.
    const ERROR_EXPONENT: f64;
    /// err^ERROR_EXPONENT, the controller's step factor before its safety factor and limits.
    #[inline(always)]
    fn error_power(err: f64) -> f64 {
        err.powf(Self::ERROR_EXPONENT)
    }
    /// The trial step of size `hs` from `y` with derivative `k1`: the new state, the
    /// derivative there when the pair needs it for its error estimate (first same as last;
    /// else the loop evaluates it once the step is accepted), and the error norm
    /// (≤ 1 accepts) over the `controlled` components.
    fn trial<V: Variables>(
        f: &impl Fn(&PhaseState) -> PhaseState,
        y: &PhaseState,
        k1: &PhaseState,
        hs: f64,
        settings: &IntegratorSettings,
        controlled: &[usize],
    ) -> (PhaseState, Option<PhaseState>, f64);
}

/// The error scale of component `i`: (atol + rtol max(|y_i|, |y_new,i|)) times the chart's
/// weight of that component ([`Variables::error_weights`]).
#[inline(always)]
fn error_scale(
    settings: &IntegratorSettings,
    y: &PhaseState,
    y_new: &PhaseState,
    weights: &PhaseState,
    i: usize,
) -> f64 {
    (settings.atol + settings.rtol * y[i].abs().max(y_new[i].abs())) * weights[i]
}

/// Dormand & Prince (1980, J. Comput. Appl. Math. 6, 19), the 5(4) pair of Table 2; the
/// nodes c_i are not needed (Hamilton's equations do not depend on τ explicitly).
struct DormandPrince54;

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

impl EmbeddedPair for DormandPrince54 {
    const ERROR_EXPONENT: f64 = -0.2;

    #[inline(always)]
    fn trial<V: Variables>(
        f: &impl Fn(&PhaseState) -> PhaseState,
        y: &PhaseState,
        k1: &PhaseState,
        hs: f64,
        settings: &IntegratorSettings,
        controlled: &[usize],
    ) -> (PhaseState, Option<PhaseState>, f64) {
        let k2 = f(&combine(y, hs, &[(A21, k1)]));
        let k3 = f(&combine(y, hs, &[(A31, k1), (A32, &k2)]));
        let k4 = f(&combine(y, hs, &[(A41, k1), (A42, &k2), (A43, &k3)]));
        let k5 = f(&combine(
            y,
            hs,
            &[(A51, k1), (A52, &k2), (A53, &k3), (A54, &k4)],
        ));
        let k6 = f(&combine(
            y,
            hs,
            &[(A61, k1), (A62, &k2), (A63, &k3), (A64, &k4), (A65, &k5)],
        ));
        let y_new = combine(
            y,
            hs,
            &[(B1, k1), (B3, &k3), (B4, &k4), (B5, &k5), (B6, &k6)],
        );
        let k7 = f(&y_new);
        let mut err2 = 0.0;
        let weights = V::error_weights(y, &y_new);
        for &i in controlled {
            let e =
                hs * (E1 * k1[i] + E3 * k3[i] + E4 * k4[i] + E5 * k5[i] + E6 * k6[i] + E7 * k7[i]);
            let scale = error_scale(settings, y, &y_new, &weights, i);
            err2 += (e / scale) * (e / scale);
        }
        let err = (err2 / controlled.len() as f64).sqrt();
        (y_new, Some(k7), err)
    }
}

/// The eighth-order pair "DOP853" of Hairer, Nørsett & Wanner (1993, *Solving Ordinary
/// Differential Equations I*, §II.10): the 8(6) formulae of Prince & Dormand (1981,
/// J. Comput. Appl. Math. 7, 67) with the combined fifth- and third-order error estimate,
/// err = |h| ‖e₅‖² / √(‖e₅‖² + 0.01 ‖e₃‖²). Twelve stages; the derivative at the new state
/// is not part of the error estimate, so it is evaluated only for an accepted step and reused
/// as the next step's first stage (twelve gradient evaluations per accepted step, eleven per
/// rejected one). Coefficients in [`dop853`] (the order conditions are checked in its tests).
struct DormandPrince853;

impl EmbeddedPair for DormandPrince853 {
    const ERROR_EXPONENT: f64 = -1.0 / 8.0;

    /// err^(−1/8) by three square roots: the same value to a few ulps, at a fraction of the
    /// cost of `powf` (which took 3 % of a ray-traced curve's time).
    #[inline(always)]
    fn error_power(err: f64) -> f64 {
        1.0 / err.sqrt().sqrt().sqrt()
    }

    #[inline(always)]
    fn trial<V: Variables>(
        f: &impl Fn(&PhaseState) -> PhaseState,
        y: &PhaseState,
        k1: &PhaseState,
        hs: f64,
        settings: &IntegratorSettings,
        controlled: &[usize],
    ) -> (PhaseState, Option<PhaseState>, f64) {
        use dop853::{A, B, E3, E5, STAGES};
        // Σ_j w_j k_j over the non-zero weights, vectorised over the eight components.
        let weighted = |w: &[f64; STAGES], k: &[PhaseState; STAGES], upto: usize| {
            let mut sum = [0.0; 8];
            for j in 0..upto {
                if w[j] != 0.0 {
                    for (s, kj) in sum.iter_mut().zip(&k[j]) {
                        *s += w[j] * kj;
                    }
                }
            }
            sum
        };
        let advance = |sum: &PhaseState| {
            let mut z = *y;
            for (zi, si) in z.iter_mut().zip(sum) {
                *zi += hs * si;
            }
            z
        };
        let mut k = [[0.0; 8]; STAGES];
        k[0] = *k1;
        for s in 1..STAGES {
            k[s] = f(&advance(&weighted(&A[s], &k, s)));
        }
        let y_new = advance(&weighted(&B, &k, STAGES));
        let (e5, e3) = (weighted(&E5, &k, STAGES), weighted(&E3, &k, STAGES));
        let (mut e5_2, mut e3_2) = (0.0, 0.0);
        let weights = V::error_weights(y, &y_new);
        for &i in controlled {
            let scale = error_scale(settings, y, &y_new, &weights, i);
            e5_2 += (e5[i] / scale) * (e5[i] / scale);
            e3_2 += (e3[i] / scale) * (e3[i] / scale);
        }
        let err = if e5_2 == 0.0 && e3_2 == 0.0 {
            0.0
        } else {
            hs.abs() * e5_2 / ((e5_2 + 0.01 * e3_2) * controlled.len() as f64).sqrt()
        };
        (y_new, None, err)
    }
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

/// The variables an integration advances ([`integrate_in_chart`]). Both give the same rays;
/// they differ in how many steps a ray takes where.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Chart {
    /// The phase state itself, in the affine parameter τ.
    #[default]
    Affine,
    /// Far from the centre: u = 1/r in place of r, in the parameter σ with dτ = r² dσ (a
    /// Sundman time transformation; Hairer, Lubich & Wanner 2006, *Geometric Numerical
    /// Integration*, §VIII.2). A ray coming in from far away is a nearly straight line: r(τ)
    /// has complex singularities about r away from the real axis (r² = τ² + b² in flat
    /// space), so an explicit pair advances r by a fixed factor per step and needs a fixed
    /// number of steps per e-fold of r. In (u, σ) the same line is u = sin(bσ)/b (the form of
    /// Binet's orbit equation; e.g. Goldstein, *Classical Mechanics*, 3rd ed., §3.7) and the
    /// momenta are smooth in σ on a scale 1/b, so a few steps cover the whole far leg.
    /// The equations: du/dσ = −dr/dτ, and r² times Hamilton's right-hand side for every
    /// other component. For rays that stay where r is bounded away from zero.
    InverseRadius,
}

/// The integration variables z of a [`Chart`] and their right-hand side.
trait Variables {
    /// The phase state of z.
    fn to_phase(z: &PhaseState) -> PhaseState;
    /// z of a phase state.
    fn from_phase(y: &PhaseState) -> PhaseState;
    /// dz/d(parameter).
    fn rhs(spacetime: &dyn Spacetime, z: &PhaseState) -> PhaseState;
    /// Factors of the components' error scales over a trial step from z to z_new.
    fn error_weights(z: &PhaseState, z_new: &PhaseState) -> PhaseState;
    /// Whether a trial step may end at z (else it is shrunk, like a non-finite one).
    fn admissible(z: &PhaseState) -> bool;
}

/// [`Chart::Affine`].
struct AffineVariables;

impl Variables for AffineVariables {
    #[inline(always)]
    fn to_phase(z: &PhaseState) -> PhaseState {
        *z
    }
    #[inline(always)]
    fn from_phase(y: &PhaseState) -> PhaseState {
        *y
    }
    #[inline(always)]
    fn rhs(spacetime: &dyn Spacetime, z: &PhaseState) -> PhaseState {
        hamilton_rhs(spacetime, z)
    }
    #[inline(always)]
    fn error_weights(_: &PhaseState, _: &PhaseState) -> PhaseState {
        [1.0; 8]
    }
    #[inline(always)]
    fn admissible(_: &PhaseState) -> bool {
        true
    }
}

/// [`Chart::InverseRadius`].
struct InverseRadiusVariables;

impl Variables for InverseRadiusVariables {
    #[inline(always)]
    fn to_phase(z: &PhaseState) -> PhaseState {
        let mut y = *z;
        y[1] = 1.0 / z[1];
        y
    }
    #[inline(always)]
    fn from_phase(y: &PhaseState) -> PhaseState {
        Self::to_phase(y)
    }
    #[inline(always)]
    fn rhs(spacetime: &dyn Spacetime, z: &PhaseState) -> PhaseState {
        let r = 1.0 / z[1];
        let f = hamilton_rhs(spacetime, &Self::to_phase(z));
        let s = r * r;
        [
            s * f[0],
            -f[1],
            s * f[2],
            s * f[3],
            s * f[4],
            s * f[5],
            s * f[6],
            s * f[7],
        ]
    }
    /// θ in units of transverse distance: an error δθ far out displaces the ray sideways by
    /// r δθ, which changes its impact parameter by as much, so θ's scale is divided by r
    /// (multiplied by the larger u of the step's ends). The other components keep theirs:
    /// p_θ and p_r carry their own scale (the angular and radial momentum), and an error δr
    /// along the nearly radial far leg moves the ray along itself (at fixed momenta its
    /// angular momentum does not depend on r), so u's scale is set by atol.
    #[inline(always)]
    fn error_weights(z: &PhaseState, z_new: &PhaseState) -> PhaseState {
        let mut w = [1.0; 8];
        w[2] = z[1].abs().max(z_new[1].abs());
        w
    }
    /// u > 0: a step to u ≤ 0 would pass r = ∞ (or r = 0).
    #[inline(always)]
    fn admissible(z: &PhaseState) -> bool {
        z[1] > 0.0
    }
}

/// Integrate Hamilton's equations from `y0` in the direction of `settings.initial_step`'s
/// sign, calling `stop` after each accepted step with (previous state, new state, τ) until
/// it says [`Control::Stop`] or `tau_max` (in absolute value) is reached.
///
/// The pair is `settings.pair`; the derivative at the end of an accepted step is reused as the
/// next step's first stage (six gradient evaluations per accepted step for the 5(4) pair,
/// twelve for DOP853). All eight components are error-controlled; see [`integrate_with_norm`].
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
#[inline]
pub fn integrate_with_norm(
    spacetime: &dyn Spacetime,
    y0: PhaseState,
    tau_max: f64,
    settings: &IntegratorSettings,
    norm: ErrorNorm,
    stop: impl FnMut(&PhaseState, &PhaseState, f64) -> Control,
) -> Result<IntegrationEnd, IntegrationFailure> {
    integrate_in_chart(spacetime, y0, tau_max, settings, norm, Chart::Affine, stop)
}

/// [`integrate_with_norm`] advancing the variables of `chart`. `y0`, the states passed to
/// `stop` and the final state are phase states whatever the chart; the parameter (`tau_max`,
/// the steps in `settings`, the τ passed to `stop`, [`IntegrationEnd::tau`]) is the chart's
/// own (σ for [`Chart::InverseRadius`]), and so are the controlled components (u for r).
#[inline]
pub fn integrate_in_chart(
    spacetime: &dyn Spacetime,
    y0: PhaseState,
    tau_max: f64,
    settings: &IntegratorSettings,
    norm: ErrorNorm,
    chart: Chart,
    stop: impl FnMut(&PhaseState, &PhaseState, f64) -> Control,
) -> Result<IntegrationEnd, IntegrationFailure> {
    use {AffineVariables as A, InverseRadiusVariables as U};
    use {DormandPrince54 as P5, DormandPrince853 as P8};
    match (settings.pair, chart) {
        (RungeKuttaPair::DormandPrince54, Chart::Affine) => {
            step_loop::<P5, A>(spacetime, y0, tau_max, settings, norm, stop)
        }
        (RungeKuttaPair::DormandPrince853, Chart::Affine) => {
            step_loop::<P8, A>(spacetime, y0, tau_max, settings, norm, stop)
        }
        (RungeKuttaPair::DormandPrince54, Chart::InverseRadius) => {
            step_loop::<P5, U>(spacetime, y0, tau_max, settings, norm, stop)
        }
        (RungeKuttaPair::DormandPrince853, Chart::InverseRadius) => {
            step_loop::<P8, U>(spacetime, y0, tau_max, settings, norm, stop)
        }
    }
}

/// The adaptive step loop shared by the pairs.
// Long: the step loop (trial, error norm, step control, the caller's stop test) shares its state and is the ray tracer's inner loop; kept whole for speed and to read as in Hairer et al.
#[inline]
fn step_loop<P: EmbeddedPair, V: Variables>(
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
    let mut y = V::from_phase(&y0);
    let mut tau = 0.0;
    let f = |y: &PhaseState| V::rhs(spacetime, y);
    let mut k1 = f(&y);
    let mut steps = 0;
    let mut rejected = 0;
    // (step size, error) of the last accepted step, and whether the last trial failed.
    let mut previous_accepted: Option<(f64, f64)> = None;
    let mut last_rejected = false;
    while tau < tau_max.abs() {
        if steps + rejected >= settings.max_steps {
            return Err(IntegrationFailure::TooManySteps { steps });
        }
        h = h.min(settings.max_step).min(tau_max.abs() - tau);
        let hs = h * direction;
        let (y_new, k_new, err) = P::trial::<V>(&f, &y, &k1, hs, settings, controlled);
        // A non-finite component outside the norm, or a state outside the chart, must still
        // reject the step.
        let err = if y_new.iter().all(|x| x.is_finite()) && V::admissible(&y_new) {
            err
        } else {
            f64::NAN
        };
        if !err.is_finite() {
            // A trial step landed on a singular point: shrink and try again.
            rejected += 1;
            last_rejected = true;
            h *= 0.2;
            if h < settings.min_step {
                return Err(if y.iter().all(|x| x.is_finite()) {
                    IntegrationFailure::StepSizeUnderflow {
                        r: V::to_phase(&y)[1],
                    }
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
            (0.9 * P::error_power(err)).clamp(0.2, 5.0)
        };
        if err <= 1.0 {
            let factor = match previous_accepted {
                // Gustafsson's predictive controller (Gustafsson 1994, ACM TOMS 20, 496; as
                // in Hairer & Wanner 1996, *Solving ODEs II*, §IV.8, code RADAU5): the factor
                // times (h/h_prev)(err_prev/err)^(1/k), when smaller. It follows an error
                // that grows from step to step, as on a ray falling inward, where the
                // factor alone let every second trial step fail (measured: rejected trials
                // were 55 % of the accepted steps on a ray-traced Kerr curve, 10 % with it).
                Some((h_prev, err_prev)) if err > 0.0 => {
                    let trend = (h / h_prev) * P::error_power(err / err_prev);
                    factor.min((factor * trend).max(0.2))
                }
                _ => factor,
            };
            // No growth right after a rejected trial (Hairer, Nørsett & Wanner 1993, §II.4).
            let factor = if last_rejected {
                factor.min(1.0)
            } else {
                factor
            };
            // The error floor of RADAU5: a nearly exact step predicts no trend.
            previous_accepted = Some((h, err.max(1.0e-2)));
            last_rejected = false;
            let y_old = y;
            y = y_new;
            k1 = match k_new {
                Some(k) => k,
                None => f(&y),
            };
            tau += h;
            steps += 1;
            if !y.iter().all(|x| x.is_finite()) {
                return Err(IntegrationFailure::NonFinite { steps });
            }
            if stop(&V::to_phase(&y_old), &V::to_phase(&y), tau) == Control::Stop {
                break;
            }
            h *= factor;
        } else {
            rejected += 1;
            last_rejected = true;
            h *= factor.min(1.0);
        }
        if h < settings.min_step {
            return Err(IntegrationFailure::StepSizeUnderflow {
                r: V::to_phase(&y)[1],
            });
        }
    }
    Ok(IntegrationEnd {
        state: V::to_phase(&y),
        tau,
        steps,
        rejected,
    })
}
