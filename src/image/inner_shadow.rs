//! The inner shadow: the dark region of an image whose emission reaches the horizon, i.e.
//! the lensed image of the equatorial horizon (Chael, Johnson & Lupsasca 2021, ApJ 918, 6).
//!
//! Its pixels are those whose ray is captured without meeting any emission
//! ([`RenderedImage::dark`]). About their centroid, along each of [`DIRECTIONS`] directions,
//! the last dark and first lit pixel bracket the edge, which is then located by bisection on
//! traced rays (a ray is dark when it is captured with no emission) to 1e-9 M, so the radius
//! does not depend on the pixel size. The mean radius is the mean over the directions
//! (a method of our own).

use super::trace::{ImageTracer, PixelFate, RenderedImage};
use rayon::prelude::*;
use serde::Serialize;

/// Directions along which the edge is located.
pub const DIRECTIONS: usize = 64;

/// The located edge of the inner shadow.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct InnerShadow {
    /// Mean distance of the edge from `centre`, in M.
    pub mean_radius: f64,
    /// The centroid (α, β) of the dark pixels, in M.
    pub centre: [f64; 2],
    /// Smallest and largest distance of the edge from `centre`, in M.
    pub radius_range: [f64; 2],
    /// Directions where the edge could not be bracketed (not counted in the mean).
    pub unbracketed: usize,
}

/// Locate the inner shadow of `image`, traced by `tracer`. `None` when no pixel is dark (the
/// region is smaller than a pixel, or the model has no such region) or no direction could be
/// bracketed.
pub fn inner_shadow(tracer: &ImageTracer, image: &RenderedImage) -> Option<InnerShadow> {
    let grid = &image.total;
    let n = grid.pixels;
    let (mut count, mut sa, mut sb) = (0usize, 0.0, 0.0);
    for i in 0..n {
        for j in 0..n {
            if image.dark[i * n + j] {
                count += 1;
                sa += grid.alpha(j);
                sb += grid.beta(i);
            }
        }
    }
    if count == 0 {
        return None;
    }
    let centre = [sa / count as f64, sb / count as f64];
    let h = grid.pixel_size();
    let dark_pixel = |alpha: f64, beta: f64| -> Option<bool> {
        let j = ((alpha + 0.5 * grid.field) / h).floor();
        let i = ((0.5 * grid.field - beta) / h).floor();
        (i >= 0.0 && j >= 0.0 && (i as usize) < n && (j as usize) < n)
            .then(|| image.dark[i as usize * n + j as usize])
    };
    let dark_ray = |alpha: f64, beta: f64| {
        let p = tracer.trace_pixel(alpha, beta);
        p.fate == PixelFate::Captured && p.total == 0.0
    };
    let edges: Vec<Option<f64>> = (0..DIRECTIONS)
        .into_par_iter()
        .map(|k| {
            let psi = std::f64::consts::TAU * k as f64 / DIRECTIONS as f64;
            let (s, c) = psi.sin_cos();
            let at = |rho: f64| (centre[0] + rho * c, centre[1] + rho * s);
            // Walk out over the pixels to the first lit one.
            let step = 0.25 * h;
            let mut rho = 0.0;
            loop {
                let (a, b) = at(rho + step);
                match dark_pixel(a, b) {
                    Some(true) => rho += step,
                    Some(false) => break,
                    None => return None,
                }
            }
            // Bracket on rays, widening by a pixel at a time.
            let (mut lo, mut hi) = (rho, rho + step);
            let mut widened = 0;
            loop {
                let (a, b) = at(lo);
                let (c2, d2) = at(hi);
                let inside = dark_ray(a, b);
                let outside = !dark_ray(c2, d2);
                if inside && outside {
                    break;
                }
                widened += 1;
                if widened > 4 {
                    return None;
                }
                if !inside {
                    lo = (lo - h).max(0.0);
                }
                if !outside {
                    hi += h;
                }
            }
            while hi - lo > 1e-9 {
                let mid = 0.5 * (lo + hi);
                let (a, b) = at(mid);
                if dark_ray(a, b) {
                    lo = mid;
                } else {
                    hi = mid;
                }
            }
            Some(0.5 * (lo + hi))
        })
        .collect();
    let found: Vec<f64> = edges.iter().flatten().copied().collect();
    if found.is_empty() {
        return None;
    }
    let mean_radius = found.iter().sum::<f64>() / found.len() as f64;
    let min = found.iter().copied().fold(f64::INFINITY, f64::min);
    let max = found.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    Some(InnerShadow {
        mean_radius,
        centre,
        radius_range: [min, max],
        unbracketed: DIRECTIONS - found.len(),
    })
}
