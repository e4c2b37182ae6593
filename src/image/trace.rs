//! Image-plane ray tracing: one backward ray per screen point, with the emission it meets.
//!
//! Each ray starts as the shadow ray tracer's do ([`crate::shadow::raytrace`]: the distant
//! observer's straight line with the first-order asymptotic correction, or the static
//! observer's celestial direction) and is followed backwards with the same exact-gradient
//! Dormand–Prince 5(4) integrator ([`crate::geodesic`]) until it is captured (the outer
//! horizon, or for a horizonless metric the absorbing core or the domain edge), escapes
//! (moves outward beyond the start radius), or has crossed the equatorial plane
//! `max_order + 1` times (thin disks only: later crossings add nothing that is kept).
//!
//! Thin disk: an accepted step whose end points lie on opposite sides of the equatorial
//! plane (cos θ changes sign) contains a crossing; θ(τ), r(τ) and p_r(τ) on the step are the
//! cubic Hermite interpolants through the end points and their derivatives (the Hamilton
//! right-hand side), and the crossing is where θ = π/2 (+ kπ), located by bisection on that
//! cubic (error O(h⁴), below the integrator's). Infall: the emission integral is summed over
//! each accepted step by the composite Simpson rule in the affine parameter, on sub-steps
//! over which r changes by at most 5 % (far from the hole one step spans a large range of r),
//! the states taken on the same cubic.
//!
//! A distant observer may sit on the spin axis (face-on, θ_o = 0 or π): every ray then has
//! p_φ = 0 and crosses the far side of the axis through the pole (θ passes π), which the
//! Boyer–Lindquist form handles for p_φ = 0. The screen centre's ray would run along the
//! axis itself; it is moved 1e-9 M off it.
//!
//! ```
//! use umbral::image::emission::EmissionModel;
//! use umbral::image::trace::{ImageSettings, ImageTracer, PixelFate};
//! use umbral::metrics::Schwarzschild;
//! use umbral::shadow::Observer;
//!
//! let settings = ImageSettings::new(Observer::distant(0.0), 8, 20.0);
//! let model = EmissionModel::built_in("disk-horizon").unwrap();
//! let tracer = ImageTracer::new(&Schwarzschild, &model, &settings).unwrap();
//! // The ray through the screen centre of a face-on observer falls straight in.
//! let centre = tracer.trace_pixel(0.0, 0.0);
//! assert_eq!(centre.fate, PixelFate::Captured);
//! assert_eq!(centre.total, 0.0);
//! // A ray at impact parameter 8 M crosses the disk in front of the hole.
//! let outer = tracer.trace_pixel(8.0, 0.0);
//! assert!(outer.total > 0.0 && outer.crossings.len() >= 1);
//! ```

use super::emission::{redshift, EmissionModel, Flow, InnerEdge};
use super::{Image, ImageError};
use crate::geodesic::{
    hamilton_rhs, integrate_with_norm, Control, ErrorNorm, IntegratorSettings, PhaseState,
    RungeKuttaPair,
};
use crate::metric::Spacetime;
use crate::shadow::raytrace::{RaytraceOptions, Tracer};
use crate::shadow::Observer;
use serde::Serialize;
use std::f64::consts::{FRAC_PI_2, PI};

/// Face-on screen points closer than this (in M) to the centre are moved to this distance.
const AXIS_OFFSET: f64 = 1e-9;

/// Infall: the emission integral's sub-steps change r by at most this fraction.
const INFALL_SUBSTEP: f64 = 0.05;

/// How an image is traced.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct ImageSettings {
    /// The observer (a distant observer may be face-on, inclination 0 or π).
    pub observer: Observer,
    /// Pixels along each side.
    pub pixels: usize,
    /// Side of the field of view, in M.
    pub field: f64,
    /// Thin disks: the last equatorial crossing kept (0 = the direct image only).
    pub max_order: usize,
    /// Relative tolerance of the integrator.
    pub rtol: f64,
    /// Radius where distant-observer rays start, and beyond which outgoing rays escape, in M.
    pub start_radius: f64,
    /// A ray is captured at r ≤ r₊ (1 + capture_margin).
    pub capture_margin: f64,
    /// Step limit per ray.
    pub max_steps: usize,
}

impl ImageSettings {
    /// Defaults: crossings up to n = 2 (each further one adds a ring about e^(−γ) ≈ 1/23
    /// as wide and as bright for Schwarzschild; Johnson et al. 2020), relative tolerance 1e-7
    /// (screen features to ~1e-6 M, far below a pixel), start radius 1000 M, capture margin
    /// 1e-6, 50 000 steps per ray.
    pub fn new(observer: Observer, pixels: usize, field: f64) -> Self {
        ImageSettings {
            observer,
            pixels,
            field,
            max_order: 2,
            rtol: 1e-7,
            start_radius: 1000.0,
            capture_margin: 1e-6,
            max_steps: 50_000,
        }
    }
}

/// Where a pixel's ray ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum PixelFate {
    /// Reached the capture radius.
    Captured,
    /// Moved outward beyond the start radius.
    Escaped,
    /// Crossed the equatorial plane `max_order + 1` times (thin disks).
    LastOrder,
    /// The integration failed or no start data exist: the pixel has no value.
    Failed,
}

/// One traced pixel.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PixelRecord {
    /// How the ray ended.
    pub fate: PixelFate,
    /// The observed intensity (arbitrary units, the same for every pixel of a model); NaN
    /// when the ray failed.
    pub total: f64,
    /// Thin disks: the intensity added at each equatorial crossing n = 0, 1, … up to
    /// `max_order` (empty for infall).
    pub by_order: Vec<f64>,
    /// Radii of the equatorial crossings, in order (thin disks).
    pub crossings: Vec<f64>,
    /// Emission points where the model's flow does not exist (no emission counted there).
    pub unphysical: usize,
    /// Accepted integrator steps.
    pub steps: usize,
    /// Why the ray failed.
    pub failure: Option<String>,
}

/// The emission a tracer adds along rays.
#[derive(Debug, Clone, Copy)]
enum Emitter {
    Disk {
        model: EmissionModel,
        flow: Flow,
        inner: f64,
        outer: f64,
        power: f64,
    },
    Infall {
        index: f64,
        power: f64,
    },
}

/// Traces the pixels of an image of one emission model around one metric.
pub struct ImageTracer<'a> {
    spacetime: &'a dyn Spacetime,
    tracer: Tracer<'a>,
    settings: ImageSettings,
    emitter: Emitter,
}

impl<'a> ImageTracer<'a> {
    /// Check the request and prepare the model (the ISCO for thin disks).
    pub fn new(
        spacetime: &'a dyn Spacetime,
        model: &EmissionModel,
        settings: &ImageSettings,
    ) -> Result<Self, ImageError> {
        model.validate()?;
        super::Image::zeros(settings.pixels, settings.field)?;
        if !(settings.rtol.is_finite() && settings.rtol > 0.0 && settings.rtol < 1e-2) {
            return Err(ImageError::BadRequest(format!(
                "the image tolerance must lie in (0, 0.01), got {}",
                settings.rtol
            )));
        }
        let options = RaytraceOptions {
            start_radius: settings.start_radius,
            capture_margin: settings.capture_margin,
            validation_start_radius: settings
                .start_radius
                .max(RaytraceOptions::default().validation_start_radius),
            ..RaytraceOptions::default()
        };
        let tracer = Tracer::for_images(spacetime, &settings.observer, &options)
            .map_err(|e| ImageError::BadRequest(e.to_string()))?;
        let emitter = match *model {
            EmissionModel::ThinDisk {
                inner_edge,
                outer_radius,
                spectral_index,
                ..
            } => {
                if !spacetime.is_equatorially_symmetric() {
                    return Err(ImageError::BadRequest(
                        "equatorial disk models need an equatorially symmetric metric".into(),
                    ));
                }
                let horizon = spacetime.outer_horizon();
                let flow = Flow::keplerian(spacetime);
                let inner = match inner_edge {
                    InnerEdge::Isco => match flow {
                        Ok(Flow::Keplerian { isco, .. }) => isco,
                        Ok(Flow::Infall) => unreachable!("a Keplerian flow"),
                        Err(e) => return Err(e),
                    },
                    InnerEdge::Horizon => horizon.ok_or_else(|| {
                        ImageError::BadRequest(
                            "the metric has no horizon: a disk down to the horizon needs one; \
                             give the disk an inner radius"
                                .into(),
                        )
                    })?,
                    InnerEdge::Radius(r) => r,
                };
                let flow = flow?;
                let outer = outer_radius.unwrap_or(f64::INFINITY);
                if outer <= inner {
                    return Err(ImageError::BadRequest(format!(
                        "the disk's outer radius {outer} M does not lie beyond its inner edge \
                         {inner} M"
                    )));
                }
                Emitter::Disk {
                    model: *model,
                    flow,
                    inner,
                    outer,
                    power: 3.0 + spectral_index,
                }
            }
            EmissionModel::Infall {
                index,
                spectral_index,
            } => Emitter::Infall {
                index,
                power: 3.0 + spectral_index,
            },
        };
        Ok(ImageTracer {
            spacetime,
            tracer,
            settings: *settings,
            emitter,
        })
    }

    /// The settings.
    pub fn settings(&self) -> &ImageSettings {
        &self.settings
    }

    /// Everything the pixels depend on, as text (the metric's description and parameter
    /// values, the settings, the prepared emission): two tracers with the same identity
    /// trace the same image, in any process of the same umbral version.
    pub fn identity(&self) -> String {
        format!(
            "{:?}|{:?}|{:?}|{:?}",
            self.spacetime.info(),
            self.spacetime.parameter_values(),
            self.settings,
            self.emitter
        )
    }

    /// The disk's inner edge in M (thin disks), e.g. the ISCO found for `disk-isco`.
    pub fn disk_inner_edge(&self) -> Option<f64> {
        match self.emitter {
            Emitter::Disk { inner, .. } => Some(inner),
            Emitter::Infall { .. } => None,
        }
    }

    /// Whether the model is a thin disk (whose emission comes in orders).
    pub fn has_orders(&self) -> bool {
        matches!(self.emitter, Emitter::Disk { .. })
    }

    /// Whether the model's emission reaches the outer horizon (the image has an inner shadow).
    pub fn reaches_horizon(&self) -> bool {
        match self.emitter {
            Emitter::Disk { model, .. } => model.reaches_horizon(),
            Emitter::Infall { .. } => false,
        }
    }

    /// The pixels of row `i` (row 0 at the top; [`super::Image`] for the layout).
    pub fn trace_row(&self, i: usize) -> Vec<PixelRecord> {
        let grid = Image {
            pixels: self.settings.pixels,
            field: self.settings.field,
            data: Vec::new(),
        };
        let beta = grid.beta(i);
        (0..self.settings.pixels)
            .map(|j| self.trace_pixel(grid.alpha(j), beta))
            .collect()
    }

    /// Trace the ray through screen point (α, β) (in M) and collect its emission.
    pub fn trace_pixel(&self, alpha: f64, beta: f64) -> PixelRecord {
        let orders = match self.emitter {
            Emitter::Disk { .. } => self.settings.max_order + 1,
            Emitter::Infall { .. } => 0,
        };
        let mut record = PixelRecord {
            fate: PixelFate::Failed,
            total: f64::NAN,
            by_order: vec![0.0; orders],
            crossings: Vec::new(),
            unphysical: 0,
            steps: 0,
            failure: None,
        };
        // Face-on, the screen centre's ray runs along the axis, where the Boyer–Lindquist
        // form is singular: it is moved off the axis by 1e-9 M.
        let on_axis = self.settings.observer.inclination.sin().abs() < 1e-12
            && self.settings.observer.radius.is_none()
            && alpha.hypot(beta) < AXIS_OFFSET;
        let alpha = if on_axis { AXIS_OFFSET } else { alpha };
        let y0 = match self.tracer.start_state(alpha, beta) {
            Ok(y) => y,
            Err(e) => {
                record.failure = Some(e.to_string());
                return record;
            }
        };
        let capture = self.tracer.capture_radius();
        let escape = self.tracer.escape_radius();
        let settings = IntegratorSettings {
            rtol: self.settings.rtol,
            atol: 1e-12,
            initial_step: -0.01 * (y0[1] - capture).abs().max(0.1),
            min_step: 1e-14,
            max_step: f64::INFINITY,
            max_steps: self.settings.max_steps,
            pair: RungeKuttaPair::DormandPrince54,
        };
        let mut fate = None;
        let mut total = 0.0;
        let mut last_tau = 0.0;
        let mut last_rhs = hamilton_rhs(self.spacetime, &y0);
        let mut infall_rate = self.infall_rate(&y0, &mut record.unphysical);
        let end = integrate_with_norm(
            self.spacetime,
            y0,
            f64::INFINITY,
            &settings,
            ErrorNorm::Dynamical,
            |old, new, tau| {
                // The integrator reports |τ|; the rays run backwards (τ decreasing).
                let h = tau - last_tau;
                last_tau = tau;
                match self.emitter {
                    Emitter::Disk { .. } => {
                        let new_rhs = hamilton_rhs(self.spacetime, new);
                        let crossing = equatorial_crossing(old, new, &last_rhs, &new_rhs, -h)
                            .filter(|c| c[1] <= escape);
                        if let Some(c) = crossing {
                            let n = record.crossings.len();
                            record.crossings.push(c[1]);
                            let added = self.disk_emission(&c, &mut record.unphysical);
                            record.by_order[n] = added;
                            total += added;
                            if n >= self.settings.max_order {
                                fate = Some(PixelFate::LastOrder);
                            }
                        }
                        last_rhs = new_rhs;
                    }
                    Emitter::Infall { .. } => {
                        // Composite Simpson's rule on the step, on sub-steps over which r
                        // changes by at most 5 %, the states from the Hermite cubic.
                        // The emission region ends at the escape radius: a last step
                        // beyond it counts only up to it.
                        let new_rhs = hamilton_rhs(self.spacetime, new);
                        let upto = if new[1] > escape && new[1] > old[1] {
                            hermite_root(old, new, &last_rhs, &new_rhs, -h, 1, escape)
                        } else {
                            1.0
                        };
                        let r_end = hermite(old, new, &last_rhs, &new_rhs, -h, 1, upto);
                        let change = (r_end - old[1]).abs() / old[1].min(r_end);
                        let parts = ((change / INFALL_SUBSTEP).ceil() as usize).clamp(1, 256);
                        let rate = self.infall_rate(new, &mut record.unphysical);
                        let mut previous = infall_rate;
                        let width = upto / parts as f64;
                        for k in 0..parts {
                            let at = |s: f64| hermite_state(old, new, &last_rhs, &new_rhs, -h, s);
                            let mid = at((k as f64 + 0.5) * width);
                            let mid_rate = self.infall_rate(&mid, &mut record.unphysical);
                            let end_rate = if k + 1 == parts && upto == 1.0 {
                                rate
                            } else {
                                self.infall_rate(
                                    &at((k + 1) as f64 * width),
                                    &mut record.unphysical,
                                )
                            };
                            total += (previous + 4.0 * mid_rate + end_rate) * h * width / 6.0;
                            previous = end_rate;
                        }
                        infall_rate = rate;
                        last_rhs = new_rhs;
                    }
                }
                if new[1] <= capture {
                    fate = Some(PixelFate::Captured);
                } else if new[1] > escape && new[1] > old[1] {
                    fate = Some(PixelFate::Escaped);
                } else if new[1] < old[1] && self.tracer.reached_domain_edge(new) {
                    fate = Some(PixelFate::Captured);
                }
                if fate.is_some() {
                    Control::Stop
                } else {
                    Control::Continue
                }
            },
        );
        match end {
            Ok(end) => {
                record.steps = end.steps;
                match fate {
                    Some(f) => {
                        record.fate = f;
                        record.total = total;
                    }
                    None => record.failure = Some("the ray neither ended nor failed".into()),
                }
            }
            Err(failure) => {
                record.failure = Some(failure.to_string());
            }
        }
        record
    }

    /// g^(3+α_ν) J(r) at a disk crossing (state `c` interpolated at θ = π/2 + kπ), or 0 off
    /// the disk.
    fn disk_emission(&self, c: &PhaseState, unphysical: &mut usize) -> f64 {
        let Emitter::Disk {
            model,
            flow,
            inner,
            outer,
            power,
        } = self.emitter
        else {
            return 0.0;
        };
        let r = c[1];
        if r < inner || r > outer {
            return 0.0;
        }
        let EmissionModel::ThinDisk { profile, .. } = model else {
            return 0.0;
        };
        let Some(u) = flow.four_velocity(self.spacetime, r, FRAC_PI_2) else {
            *unphysical += 1;
            return 0.0;
        };
        let g = redshift(&[c[4], c[5], 0.0, c[7]], &u);
        if !(g.is_finite() && g > 0.0) {
            *unphysical += 1;
            return 0.0;
        }
        g.powf(power) * profile.emissivity(r)
    }

    /// Infall: the rate g^(2+α_ν) j(r) of the emission integral per unit affine parameter at
    /// `y` (I = ∫ g^(3+α_ν) j dl, dl = |dτ|/g), 0 for disks or where no gas can fall.
    fn infall_rate(&self, y: &PhaseState, unphysical: &mut usize) -> f64 {
        let Emitter::Infall { index, power } = self.emitter else {
            return 0.0;
        };
        let (r, theta) = (y[1], y[2]);
        let Some(u) = Flow::Infall.four_velocity(self.spacetime, r, theta) else {
            *unphysical += 1;
            return 0.0;
        };
        let g = redshift(&[y[4], y[5], y[6], y[7]], &u);
        if !(g.is_finite() && g > 0.0) {
            *unphysical += 1;
            return 0.0;
        }
        g.powf(power - 1.0) * r.powf(-index)
    }
}

/// The state where a step from `a` to `b` (affine step `h`, possibly negative, derivatives
/// `da`, `db`) crosses θ = π/2 + kπ, from cubic Hermite interpolation; `None` without a
/// crossing.
fn equatorial_crossing(
    a: &PhaseState,
    b: &PhaseState,
    da: &PhaseState,
    db: &PhaseState,
    h: f64,
) -> Option<PhaseState> {
    let side = |theta: f64| ((theta - FRAC_PI_2) / PI).floor();
    let (ka, kb) = (side(a[2]), side(b[2]));
    if ka == kb {
        return None;
    }
    let target = FRAC_PI_2 + PI * ka.max(kb);
    let mut y = hermite_state(a, b, da, db, h, hermite_root(a, b, da, db, h, 2, target));
    y[2] = target;
    Some(y)
}

/// Component `i` at fraction `s` of a step from `a` to `b` (affine step `h`, derivatives
/// `da`, `db`) on the cubic Hermite interpolant.
fn hermite(
    a: &PhaseState,
    b: &PhaseState,
    da: &PhaseState,
    db: &PhaseState,
    h: f64,
    i: usize,
    s: f64,
) -> f64 {
    let s2 = s * s;
    let s3 = s2 * s;
    (2.0 * s3 - 3.0 * s2 + 1.0) * a[i]
        + (s3 - 2.0 * s2 + s) * h * da[i]
        + (-2.0 * s3 + 3.0 * s2) * b[i]
        + (s3 - s2) * h * db[i]
}

/// The fraction s ∈ [0, 1] of a step where component `i` of the Hermite cubic (see
/// [`hermite`]) reaches `target`, by bisection (the step's ends lie on either side of it).
fn hermite_root(
    a: &PhaseState,
    b: &PhaseState,
    da: &PhaseState,
    db: &PhaseState,
    h: f64,
    i: usize,
    target: f64,
) -> f64 {
    let below_at_start = a[i] < target;
    let (mut lo, mut hi) = (0.0f64, 1.0f64);
    for _ in 0..60 {
        let mid = 0.5 * (lo + hi);
        if (hermite(a, b, da, db, h, i, mid) < target) == below_at_start {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    0.5 * (lo + hi)
}

/// The whole state at fraction `s` of a step (see [`hermite`]).
fn hermite_state(
    a: &PhaseState,
    b: &PhaseState,
    da: &PhaseState,
    db: &PhaseState,
    h: f64,
    s: f64,
) -> PhaseState {
    std::array::from_fn(|i| hermite(a, b, da, db, h, i, s))
}

/// Every pixel of an image, traced (see [`ImageTracer::trace_row`]), as images.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RenderedImage {
    /// The settings it was traced with.
    pub settings: ImageSettings,
    /// The observed intensity; NaN at failed pixels.
    pub total: Image,
    /// Thin disks: the emission of crossing n = 0 (direct), n = 1 (lensed) and n ≥ 2 (photon
    /// ring, up to `max_order`); empty for infall.
    pub orders: Vec<Image>,
    /// Pixels whose ray was captured without meeting any emission, row-major.
    pub dark: Vec<bool>,
    /// Rays that failed (their pixels are NaN).
    pub failed: usize,
    /// The first failure's reason.
    pub first_failure: Option<String>,
    /// Emission points where the flow does not exist (nothing counted there).
    pub unphysical: usize,
    /// Accepted integrator steps over all rays.
    pub steps: usize,
}

impl RenderedImage {
    /// Assemble the rows of `tracer`'s image (row 0 first).
    pub fn assemble(
        tracer: &ImageTracer,
        rows: Vec<Vec<PixelRecord>>,
    ) -> Result<RenderedImage, ImageError> {
        let settings = *tracer.settings();
        let (n, field) = (settings.pixels, settings.field);
        if rows.len() != n || rows.iter().any(|r| r.len() != n) {
            return Err(ImageError::BadRequest(format!(
                "an image of {n} x {n} pixels needs {n} rows of {n} pixels"
            )));
        }
        let mut total = Vec::with_capacity(n * n);
        let mut orders = vec![Vec::with_capacity(n * n); if tracer.has_orders() { 3 } else { 0 }];
        let mut dark = Vec::with_capacity(n * n);
        let (mut failed, mut first_failure, mut unphysical, mut steps) = (0, None, 0, 0);
        for pixel in rows.into_iter().flatten() {
            total.push(pixel.total);
            if !orders.is_empty() {
                let sum = |range: std::ops::RangeFrom<usize>| -> f64 {
                    pixel.by_order.get(range).map_or(0.0, |v| v.iter().sum())
                };
                let nan_if_failed = |x: f64| if pixel.total.is_nan() { f64::NAN } else { x };
                orders[0].push(nan_if_failed(
                    pixel.by_order.first().copied().unwrap_or(0.0),
                ));
                orders[1].push(nan_if_failed(pixel.by_order.get(1).copied().unwrap_or(0.0)));
                orders[2].push(nan_if_failed(sum(2..)));
            }
            dark.push(pixel.fate == PixelFate::Captured && pixel.total == 0.0);
            if pixel.fate == PixelFate::Failed {
                failed += 1;
                if first_failure.is_none() {
                    first_failure = pixel.failure.clone();
                }
            }
            unphysical += pixel.unphysical;
            steps += pixel.steps;
        }
        Ok(RenderedImage {
            settings,
            total: Image::from_rows(n, field, total)?,
            orders: orders
                .into_iter()
                .map(|d| Image::from_rows(n, field, d))
                .collect::<Result<_, _>>()?,
            dark,
            failed,
            first_failure,
            unphysical,
            steps,
        })
    }
}
