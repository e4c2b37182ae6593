//! Ring features measured on an image: diameter, width, brightness asymmetry and centroid.
//!
//! Method of our own (the steps are the usual ones for ring images, put together here without a
//! published recipe to follow):
//!
//! 1. The ring's centre. Start from the field's centre (the image is taken to be pointed at
//!    the source, as umbral's images are at the hole); take the ring peaks (steps 2 and 3)
//!    about the current centre, fit a
//!    circle to the peak points by algebraic least squares (minimising
//!    Σ (x² + y² + Dx + Ey + F)²; Kåsa 1976, IEEE Trans. Instrum. Meas. 25, 8), refit
//!    without the peaks far off that circle (those that picked another ring), and move the
//!    centre to the circle's centre (−D/2, −E/2); after 20 fits, by a fraction 1/(k − 19) of
//!    the way at fit k (the running mean of the fitted centres, so that a centre hopping
//!    between two choices of peaks settles between them); repeat until it moves less than
//!    0.01 pixel
//!    (at most [`MAX_CENTRE_ITERATIONS`] times, else an error). The brightness centroid
//!    (α_c, β_c) = Σ I (α, β) / Σ I is reported too, but is no starting point: it is pulled
//!    towards a lopsided ring's bright side (a Doppler-boosted disk image at 60° puts it
//!    most of the way there), from where the profiles find the bright spot's own flanks
//!    instead of the ring. Everything below is measured about the fitted centre.
//! 2. For K angles ψ_k = 2πk/K (default K = 360), with ψ measured from the +α axis
//!    counter-clockwise towards +β, the radial profile I(ψ_k, ρ) is sampled from the centre
//!    outwards at ρ_n = n·Δρ (default Δρ = ¼ pixel) by bilinear interpolation between the four
//!    nearest pixel centres, as long as the point stays within the square of pixel centres (the
//!    field's edge less half a pixel).
//! 3. The ring radius at ψ_k is the position of the profile's largest sample n (the first one
//!    if several are equal), refined by the vertex of the parabola through it and the samples
//!    L = round(1/Δρ) steps (one pixel) either side, I₋ and I₊: ρ_k = (n + Lδ)Δρ,
//!    δ = ½(I₋ − I₊)/(I₋ − 2I₀ + I₊), with the vertex value I_k = I₀ − ¼(I₋ − I₊)δ as the
//!    ring's brightness there (L shrinks near the ends of the profile). The lever is a pixel
//!    rather than one step because bilinear interpolation is piecewise linear along rows and
//!    columns: its maximum there sits on a pixel centre, and a parabola through neighbouring
//!    samples would find that kink, off the ring's peak by up to half a pixel (a ring of
//!    known radius showed a spread of 0.15 pixel over the angles that way, 0.02 pixel with
//!    the one-pixel lever). An angle whose largest sample is the first (at the centroid) or
//!    the last (at the field's edge), or that peaks within a pixel of the centre, has no ring
//!    peak and is left out of everything below; [`RingFeatures::angles_with_peak`] counts the
//!    others. With peaks at fewer than half the angles the image has no ring (an error).
//! 4. Diameter d = 2 × the mean of ρ_k; [`RingFeatures::radius_spread`] is their standard
//!    deviation (a measure of how far the ring is from a circle about the centroid).
//! 5. Width: at each angle, the full width at half maximum of the profile about its peak: the
//!    contiguous interval around the peak where I ≥ I_k/2, each end placed by linear
//!    interpolation between the samples on either side of I_k/2. An angle whose interval runs
//!    into the centroid or the field's edge has no width; the width is the mean over the angles
//!    that have one (`None` if none has).
//! 6. The dark central region: the mean over the angles of the inner half-maximum point of
//!    step 5 (at least half the angles must have one).
//! 7. Asymmetry: with S = Σ_k I_k e^{iψ_k}, the contrast is A = |S| / Σ_k I_k ∈ [0, 1] and the
//!    position angle is arg S in degrees, in (−180°, 180°], measured from +α towards +β (so
//!    90° means the ring is brightest towards +β). For a brightness I₀(1 + c cos(ψ − ψ₀)) about
//!    the centre, S = K I₀ (c/2) e^{iψ₀} exactly for K ≥ 3 (discrete orthogonality of the
//!    harmonics), so A = c/2 and the angle is ψ₀. The angle means nothing when A is near 0.
//!
//! ```
//! use umbral::image::{ring_features, FeatureSettings, Image};
//!
//! // A ring of radius 5 M and Gaussian radial profile (σ = 0.6 M) on a 64 x 64 image of 16 M.
//! let mut image = Image::zeros(64, 16.0).unwrap();
//! for i in 0..64 {
//!     for j in 0..64 {
//!         let rho = image.alpha(j).hypot(image.beta(i));
//!         image.data[i * 64 + j] = (-0.5 * ((rho - 5.0) / 0.6f64).powi(2)).exp();
//!     }
//! }
//! let ring = ring_features(&image, &FeatureSettings::default()).unwrap();
//! assert!((ring.diameter - 10.0).abs() < 0.05);
//! // FWHM = 2√(2 ln 2) σ ≈ 1.41 M.
//! assert!((ring.width.unwrap() - 2.3548 * 0.6).abs() < 0.05);
//! assert!(ring.asymmetry_contrast < 1e-6);
//! ```

use serde::Serialize;

use super::{Image, ImageError};

const MIN_ANGLES: usize = 3;
const MAX_ANGLES: usize = 1_000_000;
const MIN_STEP_PIXELS: f64 = 0.001;

/// How the ring is measured (module docs).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct FeatureSettings {
    /// Number of angles K, uniformly spaced from ψ = 0; 3 to 1 000 000.
    pub angles: usize,
    /// Step of the radial profile, in pixels; 0.001 to 1.
    pub step_pixels: f64,
}

impl Default for FeatureSettings {
    /// 360 angles, a quarter-pixel step.
    fn default() -> Self {
        FeatureSettings {
            angles: 360,
            step_pixels: 0.25,
        }
    }
}

/// Ring features of an image (module docs for the method); lengths in M.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RingFeatures {
    /// Twice the mean ring radius about the centroid.
    pub diameter: f64,
    /// Mean full width at half maximum of the radial profile (`None` if no angle has one).
    pub width: Option<f64>,
    /// Position angle of the brightness asymmetry in degrees, in (−180, 180], from +α towards +β.
    pub asymmetry_angle_deg: f64,
    /// Contrast of the brightness asymmetry, |Σ I_k e^{iψ_k}| / Σ I_k, in [0, 1].
    pub asymmetry_contrast: f64,
    /// Brightness centroid (α_c, β_c).
    pub centroid: [f64; 2],
    /// The ring's centre (α, β), fitted to the ring peaks (module docs, step 1).
    pub centre: [f64; 2],
    /// Circle fits it took to settle the centre.
    pub centre_iterations: usize,
    /// The dark central region's size: the mean over the angles of the radius where the
    /// profile first reaches half the ring's peak going out from the centre (`None` unless
    /// at least half the angles have one). At full resolution with emission down to the
    /// horizon the inner shadow's ray-traced edge is the sharper measure
    /// ([`super::inner_shadow`]); after blurring this is the one an image gives.
    pub dark_radius: Option<f64>,
    /// Standard deviation of the ring radius over the angles.
    pub radius_spread: f64,
    /// Angles whose profile has a ring peak (of the `angles` asked for).
    pub angles_with_peak: usize,
    /// Angles whose profile has a full width at half maximum.
    pub angles_with_width: usize,
}

/// What one radial profile gives.
struct Peak {
    radius: f64,
    brightness: f64,
    width: Option<f64>,
    /// Where the profile first rises to half the peak, going out from the centre.
    inner: Option<f64>,
}

/// Measures the ring of `image` (module docs). Errors for a grid below 3 × 3 pixels, bad
/// settings, a negative or non-finite value, a blank image, or an image with no ring peak at
/// any angle.
pub fn ring_features(
    image: &Image,
    settings: &FeatureSettings,
) -> Result<RingFeatures, ImageError> {
    check(image, settings)?;
    let centroid = centroid(image)?;
    let step = settings.step_pixels * image.pixel_size();
    let lever = ((1.0 / settings.step_pixels).round() as usize).max(1);
    let mut centre = [0.0, 0.0];
    let mut iterations = 0;
    let peaks = loop {
        let peaks = peaks_about(image, centre, settings.angles, step, lever);
        if peaks.is_empty() {
            return Err(ImageError::BadRequest(
                "no ring found: at most angles the brightness profile peaks at the centre or at the field's edge".into(),
            ));
        }
        iterations += 1;
        let fitted = circle_centre(&peaks, centre, image.pixel_size()).ok_or_else(|| {
            ImageError::BadRequest(
                "no ring found: the brightness peaks do not lie on a circle".into(),
            )
        })?;
        let moved = (fitted[0] - centre[0]).hypot(fitted[1] - centre[1]);
        let inside = fitted[0].abs() < 0.5 * image.field && fitted[1].abs() < 0.5 * image.field;
        if !inside {
            return Err(ImageError::BadRequest(
                "no ring found: the circle through the brightness peaks is centred outside the field".into(),
            ));
        }
        // Averaged after a while, so that a centre hopping between two nearly equal choices
        // of peaks settles between them.
        let weight = if iterations > UNDAMPED_ITERATIONS {
            1.0 / (iterations - UNDAMPED_ITERATIONS + 1) as f64
        } else {
            1.0
        };
        centre = [
            centre[0] + weight * (fitted[0] - centre[0]),
            centre[1] + weight * (fitted[1] - centre[1]),
        ];
        if moved < CENTRE_TOLERANCE_PIXELS * image.pixel_size() {
            break peaks_about(image, centre, settings.angles, step, lever);
        }
        if iterations >= MAX_CENTRE_ITERATIONS {
            return Err(ImageError::BadRequest(format!(
                "the ring's centre did not settle in {MAX_CENTRE_ITERATIONS} circle fits \
                 (last move {moved:.2e} M)"
            )));
        }
    };
    if peaks.is_empty() {
        return Err(ImageError::BadRequest(
            "no ring found: at every angle the brightness profile peaks at the centre or at the field's edge".into(),
        ));
    }
    let mut radii = Vec::with_capacity(peaks.len());
    let mut widths = Vec::with_capacity(peaks.len());
    let dark: Vec<f64> = peaks.iter().filter_map(|(_, p)| p.inner).collect();
    let (mut s_re, mut s_im, mut s_abs) = (0.0, 0.0, 0.0);
    for (psi, peak) in &peaks {
        radii.push(peak.radius);
        widths.extend(peak.width);
        s_re += peak.brightness * psi.cos();
        s_im += peak.brightness * psi.sin();
        s_abs += peak.brightness;
    }
    let mean_radius = mean(&radii);
    let variance =
        radii.iter().map(|r| (r - mean_radius).powi(2)).sum::<f64>() / radii.len() as f64;
    let mut angle = s_im.atan2(s_re).to_degrees();
    if angle <= -180.0 {
        angle += 360.0;
    }
    Ok(RingFeatures {
        diameter: 2.0 * mean_radius,
        width: (!widths.is_empty()).then(|| mean(&widths)),
        asymmetry_angle_deg: angle,
        asymmetry_contrast: s_re.hypot(s_im) / s_abs,
        centroid,
        centre,
        centre_iterations: iterations,
        dark_radius: (dark.len() * 2 >= peaks.len()).then(|| mean(&dark)),
        radius_spread: variance.sqrt(),
        angles_with_peak: radii.len(),
        angles_with_width: widths.len(),
    })
}

/// The centre's fixed-point iteration stops when it moves less than this many pixels.
const CENTRE_TOLERANCE_PIXELS: f64 = 1e-2;
/// Most circle fits for the centre (module docs, step 1).
pub const MAX_CENTRE_ITERATIONS: usize = 100;
/// Circle fits before the centre's moves are halved (module docs, step 1).
const UNDAMPED_ITERATIONS: usize = 20;

/// The ring peak at each of `angles` angles about `centre` (angles without one left out, and
/// peaks within a pixel of the centre: no ring is resolved there). Empty unless peaks are
/// found at [`MIN_PEAK_FRACTION`] of the angles at least: a ring runs all the way round.
fn peaks_about(
    image: &Image,
    centre: [f64; 2],
    angles: usize,
    step: f64,
    lever: usize,
) -> Vec<(f64, Peak)> {
    let peaks: Vec<(f64, Peak)> = (0..angles)
        .filter_map(|k| {
            let psi = std::f64::consts::TAU * k as f64 / angles as f64;
            let profile = radial_profile(image, centre, psi, step);
            peak(&profile, step, lever)
                .filter(|p| p.radius >= image.pixel_size())
                .map(|p| (psi, p))
        })
        .collect();
    if (peaks.len() as f64) < MIN_PEAK_FRACTION * angles as f64 {
        Vec::new()
    } else {
        peaks
    }
}

/// A ring must show a peak at this fraction of the angles at least.
pub const MIN_PEAK_FRACTION: f64 = 0.5;

/// The centre (−D/2, −E/2) of the circle x² + y² + Dx + Ey + F = 0 fitted to the peak points
/// by linear least squares (Kåsa 1976), in coordinates relative to `about` for conditioning,
/// then refitted without the outlying peaks (farther from the circle than three times the
/// residuals' scaled median absolute deviation, or half a `pixel` if that is larger: peaks
/// that picked another ring); `None` for fewer than three points or a singular fit.
fn circle_centre(peaks: &[(f64, Peak)], about: [f64; 2], pixel: f64) -> Option<[f64; 2]> {
    let points: Vec<[f64; 2]> = peaks
        .iter()
        .map(|(psi, p)| [p.radius * psi.cos(), p.radius * psi.sin()])
        .collect();
    let (centre, radius) = kasa_fit(&points)?;
    let residuals: Vec<f64> = points
        .iter()
        .map(|q| ((q[0] - centre[0]).hypot(q[1] - centre[1]) - radius).abs())
        .collect();
    let mut sorted = residuals.clone();
    sorted.sort_by(f64::total_cmp);
    let mad = 1.4826 * sorted[sorted.len() / 2];
    let cut = (3.0 * mad).max(0.5 * pixel);
    let kept: Vec<[f64; 2]> = points
        .iter()
        .zip(&residuals)
        .filter(|(_, r)| **r <= cut)
        .map(|(q, _)| *q)
        .collect();
    let (centre, _) = kasa_fit(&kept)?;
    let centre = [about[0] + centre[0], about[1] + centre[1]];
    centre.iter().all(|c| c.is_finite()).then_some(centre)
}

/// The algebraic circle fit (Kåsa 1976): centre and radius.
fn kasa_fit(points: &[[f64; 2]]) -> Option<([f64; 2], f64)> {
    if points.len() < 3 {
        return None;
    }
    let mut ata = nalgebra::Matrix3::<f64>::zeros();
    let mut atb = nalgebra::Vector3::<f64>::zeros();
    for &[x, y] in points {
        let row = nalgebra::Vector3::new(x, y, 1.0);
        ata += row * row.transpose();
        atb += row * (-(x * x + y * y));
    }
    let s = ata.lu().solve(&atb)?;
    let centre = [-0.5 * s[0], -0.5 * s[1]];
    let r2 = centre[0] * centre[0] + centre[1] * centre[1] - s[2];
    (r2 > 0.0).then(|| (centre, r2.sqrt()))
}

fn mean(values: &[f64]) -> f64 {
    values.iter().sum::<f64>() / values.len() as f64
}

fn check(image: &Image, settings: &FeatureSettings) -> Result<(), ImageError> {
    if !(MIN_ANGLES..=MAX_ANGLES).contains(&settings.angles) {
        return Err(ImageError::BadRequest(format!(
            "ring features need {MIN_ANGLES} to {MAX_ANGLES} angles, got {}",
            settings.angles
        )));
    }
    if !(settings.step_pixels >= MIN_STEP_PIXELS && settings.step_pixels <= 1.0) {
        return Err(ImageError::BadRequest(format!(
            "the radial step must be {MIN_STEP_PIXELS} to 1 pixel, got {}",
            settings.step_pixels
        )));
    }
    if image.pixels < 3 {
        return Err(ImageError::BadRequest(format!(
            "ring features need an image of at least 3 x 3 pixels, got {0} x {0}",
            image.pixels
        )));
    }
    if let Some(k) = image
        .data
        .iter()
        .position(|v| !(v.is_finite() && *v >= 0.0))
    {
        return Err(ImageError::BadRequest(format!(
            "ring features need finite, non-negative brightness; row {}, column {} holds {}",
            k / image.pixels,
            k % image.pixels,
            image.data[k]
        )));
    }
    Ok(())
}

/// (α_c, β_c) = Σ I (α, β) / Σ I.
fn centroid(image: &Image) -> Result<[f64; 2], ImageError> {
    let n = image.pixels;
    let (mut total, mut sa, mut sb) = (0.0, 0.0, 0.0);
    for i in 0..n {
        let beta = image.beta(i);
        for j in 0..n {
            let v = image.at(i, j);
            total += v;
            sa += v * image.alpha(j);
            sb += v * beta;
        }
    }
    if !(total > 0.0 && total.is_finite()) {
        return Err(ImageError::BadRequest(
            "the image is blank (no positive brightness), so it has no ring".into(),
        ));
    }
    Ok([sa / total, sb / total])
}

/// I(ψ, ρ_n) for ρ_n = n·step from `centre`, while the point is within the square of pixel
/// centres.
fn radial_profile(image: &Image, centre: [f64; 2], psi: f64, step: f64) -> Vec<f64> {
    let n = image.pixels;
    let h = image.pixel_size();
    let last = (n - 1) as f64;
    // Continuous pixel coordinates: column x = (α + F/2)/h − ½, row y = (F/2 − β)/h − ½.
    let x0 = (centre[0] + 0.5 * image.field) / h - 0.5;
    let y0 = (0.5 * image.field - centre[1]) / h - 0.5;
    let (dx, dy) = (psi.cos() * step / h, -psi.sin() * step / h);
    let mut profile = Vec::new();
    for k in 0.. {
        let (mut x, mut y) = (x0 + k as f64 * dx, y0 + k as f64 * dy);
        if k == 0 {
            // The centroid lies within the square of centres; only rounding can put it outside.
            x = x.clamp(0.0, last);
            y = y.clamp(0.0, last);
        }
        if !(0.0..=last).contains(&x) || !(0.0..=last).contains(&y) {
            break;
        }
        profile.push(bilinear(image, x, y));
    }
    profile
}

fn bilinear(image: &Image, x: f64, y: f64) -> f64 {
    let n = image.pixels;
    let j = (x.floor() as usize).min(n - 2);
    let i = (y.floor() as usize).min(n - 2);
    let (fx, fy) = (x - j as f64, y - i as f64);
    let top = (1.0 - fx) * image.at(i, j) + fx * image.at(i, j + 1);
    let bottom = (1.0 - fx) * image.at(i + 1, j) + fx * image.at(i + 1, j + 1);
    (1.0 - fy) * top + fy * bottom
}

/// The ring peak of one profile sampled every `step` (M), refined over `lever` samples: none
/// if the largest sample is the first or the last.
fn peak(profile: &[f64], step: f64, lever: usize) -> Option<Peak> {
    let mut m = 0;
    for (n, v) in profile.iter().enumerate() {
        if *v > profile[m] {
            m = n;
        }
    }
    if m == 0 || m + 1 >= profile.len() {
        return None;
    }
    // The parabola through the largest sample and the samples `lever` steps either side.
    let lever = lever.min(m).min(profile.len() - 1 - m);
    let (ym, y0, yp) = (profile[m - lever], profile[m], profile[m + lever]);
    let curvature = ym - 2.0 * y0 + yp;
    let delta = if curvature < 0.0 {
        (0.5 * (ym - yp) / curvature).clamp(-0.5, 0.5) * lever as f64
    } else {
        0.0
    };
    let brightness = y0 - 0.25 * (ym - yp) * delta / lever as f64;
    let half = 0.5 * brightness;
    let inner = (0..m).rev().find(|&n| profile[n] < half).map(|n| {
        let (a, b) = (profile[n], profile[n + 1]);
        n as f64 + (half - a) / (b - a)
    });
    let outer = (m + 1..profile.len())
        .find(|&n| profile[n] < half)
        .map(|n| {
            let (a, b) = (profile[n - 1], profile[n]);
            (n - 1) as f64 + (a - half) / (a - b)
        });
    Some(Peak {
        radius: (m as f64 + delta) * step,
        brightness,
        width: inner.zip(outer).map(|(i, o)| (o - i) * step),
        inner: inner.map(|i| i * step),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_parabola_finds_the_vertex_of_a_sampled_parabola() {
        // Samples of 5 − (x − 2.3)² at x = 0, 1, 2, 3, 4, 5: vertex at 2.3, value 5.
        let profile: Vec<f64> = (0..6).map(|x| 5.0 - (x as f64 - 2.3).powi(2)).collect();
        let p = peak(&profile, 0.5, 1).unwrap();
        assert!((p.radius - 2.3 * 0.5).abs() < 1e-12, "{}", p.radius);
        assert!((p.brightness - 5.0).abs() < 1e-12);
        // Half maximum 2.5 where (x − 2.3)² = 2.5, interpolated linearly between samples:
        // inner between x = 0 (−0.29) and 1 (3.31): 0 + 2.79/3.6; outer between x = 3 (4.51)
        // and 4 (2.11): 3 + 2.01/2.4.
        let expected = (3.0 + 2.01 / 2.4) - 2.79 / 3.6;
        assert!((p.width.unwrap() - expected * 0.5).abs() < 1e-12);
    }

    #[test]
    fn the_parabola_reaches_a_pixel_either_side() {
        // Samples of 5 − (x − 2.3)² every 0.25 with a lever of 4 samples (one unit), and the
        // same near the start, where the lever shrinks to what is there.
        let profile: Vec<f64> = (0..24)
            .map(|k| 5.0 - (0.25 * k as f64 - 2.3).powi(2))
            .collect();
        let p = peak(&profile, 0.25, 4).unwrap();
        assert!((p.radius - 2.3).abs() < 1e-12 && (p.brightness - 5.0).abs() < 1e-12);
        let near: Vec<f64> = (0..24)
            .map(|k| 5.0 - (0.25 * k as f64 - 0.3).powi(2))
            .collect();
        let q = peak(&near, 0.25, 4).unwrap();
        assert!((q.radius - 0.3).abs() < 1e-12, "{}", q.radius);
    }

    #[test]
    fn a_profile_peaking_at_an_end_has_no_ring() {
        assert!(peak(&[3.0, 2.0, 1.0], 1.0, 1).is_none());
        assert!(peak(&[1.0, 2.0, 3.0], 1.0, 1).is_none());
    }

    #[test]
    fn an_interval_reaching_the_centroid_has_no_width() {
        let p = peak(&[0.9, 1.0, 0.2], 1.0, 1).unwrap();
        assert_eq!(p.width, None);
    }

    #[test]
    fn bilinear_interpolation_is_exact_for_a_plane() {
        let mut image = Image::zeros(4, 4.0).unwrap();
        for i in 0..4 {
            for j in 0..4 {
                image.data[i * 4 + j] = 2.0 * j as f64 - 3.0 * i as f64 + 20.0;
            }
        }
        for (x, y) in [(0.0, 0.0), (1.25, 2.5), (3.0, 3.0), (2.9, 0.1)] {
            let v = bilinear(&image, x, y);
            assert!(
                (v - (2.0 * x - 3.0 * y + 20.0)).abs() < 1e-12,
                "({x}, {y}): {v}"
            );
        }
    }
}
