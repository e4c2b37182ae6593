//! A Gaussian blur of an image to a given resolution.
//!
//! The image is convolved with a circular Gaussian beam of full width at half maximum `FWHM`,
//! G(α, β) = exp(−(α² + β²)/(2σ²)) / (2πσ²) with σ = FWHM / (2√(2 ln 2)). The beam is the
//! product of two one-dimensional Gaussians, so the convolution is done as two passes, along
//! rows and then along columns. Convolving two Gaussians adds their variances,
//! σ² = σ₁² + σ₂² (Bracewell, *The Fourier Transform and Its Applications*, McGraw-Hill, the
//! convolution theorem applied to Gaussians); the tests check the blur against this closed form.
//!
//! The one-dimensional kernel is the Gaussian sampled at whole-pixel offsets k,
//! w_k = exp(−k²/(2s²)) / Z with s = σ / pixel and Z = Σ_{k ∈ ℤ} exp(−k²/(2s²)) the sum over
//! all offsets, so Σ w_k = 1: a uniform image far from the edges is unchanged and the total flux
//! of a source far from the edges is conserved. Z is summed directly for s ≤ 1000 and taken as
//! √(2π) s beyond (Poisson summation: the two differ by 2√(2π) s e^(−2π²s²), below 10⁻¹⁰⁰⁰⁰⁰
//! there). Taps beyond 8σ (relative weight below e⁻³², about 10⁻¹⁴) are dropped.
//!
//! **The sky outside the field is taken as dark**: taps that fall outside the grid add nothing,
//! so a source within a few σ of the edge loses the part of its flux that the beam spreads
//! beyond the field. Sampling the kernel at pixel centres (rather than averaging it over a
//! pixel) keeps a blurred Gaussian a Gaussian of variance σ₁² + σ₂² up to aliasing terms of
//! order e^(−2π²s²) (Poisson summation), negligible once σ is a pixel or more.
//!
//! A resolution is usually given in micro-arcseconds; [`uas_to_m`] converts it with the
//! angular gravitational radius θ_g = GM/(c²D) of the source.
//!
//! ```
//! use umbral::image::{gaussian_blur, uas_to_m, Image};
//!
//! // A point source at the centre of a 9 x 9 image, blurred to a beam of 20 μas with
//! // θ_g = 5 μas (a beam of 4 M).
//! let mut image = Image::zeros(9, 9.0).unwrap();
//! image.data[4 * 9 + 4] = 1.0;
//! let fwhm = uas_to_m(20.0, 5.0).unwrap();
//! assert_eq!(fwhm, 4.0);
//! let blurred = gaussian_blur(&image, fwhm).unwrap();
//! // Brightest at the centre and symmetric about it.
//! assert!(blurred.at(4, 4) > blurred.at(4, 5));
//! assert_eq!(blurred.at(4, 3), blurred.at(4, 5));
//! ```

use super::{Image, ImageError};

/// FWHM / σ of a Gaussian: 2√(2 ln 2) ≈ 2.3548.
pub const FWHM_PER_SIGMA: f64 = 2.354_820_045_030_949_3;

/// Taps are kept out to this many σ.
const TRUNCATION_SIGMAS: f64 = 8.0;

/// Above this σ in pixels the kernel's normalisation is the Poisson-summation limit √(2π) s.
const DIRECT_SUM_LIMIT: f64 = 1000.0;

/// Converts an angle on the sky in micro-arcseconds to a screen length in M: `angle_uas /
/// theta_g_uas`, with θ_g = GM/(c²D) the angular gravitational radius in micro-arcseconds.
///
/// ```
/// use umbral::image::uas_to_m;
/// assert_eq!(uas_to_m(20.0, 4.0).unwrap(), 5.0);
/// assert!(uas_to_m(20.0, 0.0).is_err());
/// ```
pub fn uas_to_m(angle_uas: f64, theta_g_uas: f64) -> Result<f64, ImageError> {
    if !(theta_g_uas.is_finite() && theta_g_uas > 0.0) {
        return Err(ImageError::BadRequest(format!(
            "theta_g must be a positive number of micro-arcseconds, got {theta_g_uas}"
        )));
    }
    if !angle_uas.is_finite() {
        return Err(ImageError::BadRequest(format!(
            "the angle must be a finite number of micro-arcseconds, got {angle_uas}"
        )));
    }
    Ok(angle_uas / theta_g_uas)
}

/// The image convolved with a circular Gaussian beam of full width at half maximum `fwhm_m`
/// (in M); the sky outside the field counts as dark (module docs). Errors for a non-positive or
/// non-finite FWHM, or an image with a non-finite value.
pub fn gaussian_blur(image: &Image, fwhm_m: f64) -> Result<Image, ImageError> {
    if !(fwhm_m.is_finite() && fwhm_m > 0.0) {
        return Err(ImageError::BadRequest(format!(
            "the blur's FWHM must be a positive number of M, got {fwhm_m}"
        )));
    }
    if let Some(k) = image.data.iter().position(|v| !v.is_finite()) {
        return Err(ImageError::BadRequest(format!(
            "cannot blur an image with a non-finite value ({} at row {}, column {})",
            image.data[k],
            k / image.pixels,
            k % image.pixels
        )));
    }
    let n = image.pixels;
    let weights = kernel(fwhm_m / FWHM_PER_SIGMA / image.pixel_size(), n);
    let reach = weights.len() - 1;

    // Along rows (α): out[i][j] = Σ_k w_|k| in[i][j + k], over the columns inside the grid.
    let mut rows = vec![0.0; n * n];
    for i in 0..n {
        let line = &image.data[i * n..(i + 1) * n];
        for j in 0..n {
            let lo = j.saturating_sub(reach);
            let hi = (j + reach).min(n - 1);
            rows[i * n + j] = (lo..=hi).map(|c| weights[c.abs_diff(j)] * line[c]).sum();
        }
    }
    // Along columns (β), the same kernel.
    let mut data = vec![0.0; n * n];
    for i in 0..n {
        let lo = i.saturating_sub(reach);
        let hi = (i + reach).min(n - 1);
        for j in 0..n {
            data[i * n + j] = (lo..=hi)
                .map(|r| weights[r.abs_diff(i)] * rows[r * n + j])
                .sum();
        }
    }
    Image::from_rows(n, image.field, data)
}

/// The normalised one-sided kernel w_0, w_1, … (w_k = w_−k) for σ = `s` pixels, cut at 8σ and
/// at the image's width (`pixels`), since taps farther out never land on the grid.
fn kernel(s: f64, pixels: usize) -> Vec<f64> {
    let tap = |k: f64| (-0.5 * (k / s).powi(2)).exp();
    let z = if s <= DIRECT_SUM_LIMIT {
        // Σ over all k ∈ ℤ: terms beyond 40σ are below e⁻⁸⁰⁰ and underflow.
        let far = (40.0 * s).ceil() as usize + 1;
        1.0 + 2.0 * (1..=far).map(|k| tap(k as f64)).sum::<f64>()
    } else {
        (2.0 * std::f64::consts::PI).sqrt() * s
    };
    let reach = ((TRUNCATION_SIGMAS * s).ceil() as usize).min(pixels.saturating_sub(1));
    (0..=reach).map(|k| tap(k as f64) / z).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_kernel_sums_to_one_over_all_offsets() {
        for s in [0.3, 1.0, 2.5, 17.0] {
            let w = kernel(s, 10_000);
            let total = w[0] + 2.0 * w[1..].iter().sum::<f64>();
            assert!((total - 1.0).abs() < 1e-13, "s = {s}: {total}");
        }
    }

    #[test]
    fn the_poisson_limit_joins_the_direct_sum() {
        // Just below and above the switch the two normalisations agree to rounding.
        let below = kernel(DIRECT_SUM_LIMIT, 5)[0];
        let above = kernel(DIRECT_SUM_LIMIT * (1.0 + 1e-12), 5)[0];
        assert!((below / above - 1.0).abs() < 1e-10, "{below} vs {above}");
    }

    #[test]
    fn a_narrow_beam_leaves_the_image_unchanged() {
        // σ = 0.05 pixel: w_1 = e^(−200)/Z, below 10⁻⁸⁰.
        let w = kernel(0.05, 10);
        assert_eq!(w[0], 1.0);
        assert!(w[1] < 1e-80);
    }
}
