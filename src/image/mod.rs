//! Images of simple emission models on the observer's screen.
//!
//! An [`Image`] is a square grid of screen points (α, β) in units of M (Bardeen's screen
//! convention), stored row-major with row 0 at the top (largest β) and column 0 at the left
//! (smallest α): pixel (i, j) has its centre at
//! α_j = −F/2 + (j + ½) F/N, β_i = F/2 − (i + ½) F/N for N pixels across a field of F M.
//! This is the order in which numpy and most image viewers show a 2-D array (first row on top).
//!
//! What can be done with an image: [`gaussian_blur`] to a resolution ([`blur`]),
//! [`ring_features`] measured on it ([`features`]), and files: [`write_npy`], [`write_fits`] and
//! [`write_png`] ([`files`]), the PNG in umbral's own colour map [`fathom`] ([`colormap`]).
//!
//! ```
//! use umbral::image::Image;
//!
//! let image = Image::zeros(4, 8.0).unwrap();
//! assert_eq!(image.pixel_size(), 2.0);
//! assert_eq!(image.alpha(0), -3.0);
//! assert_eq!(image.beta(0), 3.0);
//! ```

pub mod blur;
pub mod colormap;
pub mod emission;
pub mod features;
pub mod files;
pub mod inner_shadow;
pub mod models;
pub mod trace;

use serde::Serialize;

pub use blur::{gaussian_blur, uas_to_m};
pub use colormap::{fathom, COLOUR_MAP_NAME};
pub use features::{ring_features, FeatureSettings, RingFeatures};
pub use files::{write_fits, write_npy, write_png, FitsCard, FitsHeader, FitsValue};

/// Why an image could not be made or measured.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ImageError {
    /// A request that cannot be honoured, with the reason (a one-line message).
    #[error("{0}")]
    BadRequest(String),
    /// An image file could not be written, with the reason.
    #[error("could not write the image: {0}")]
    Write(String),
}

/// A square image on the screen: `pixels` × `pixels` values over a field of `field` M.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Image {
    /// Pixels along each side.
    pub pixels: usize,
    /// Side of the field of view, in M.
    pub field: f64,
    /// Row-major values, row 0 at the top (largest β), column 0 at the left (smallest α).
    pub data: Vec<f64>,
}

impl Image {
    /// A black image; errors unless `pixels` ≥ 1 and `field` is positive and finite.
    pub fn zeros(pixels: usize, field: f64) -> Result<Image, ImageError> {
        Image::check_grid(pixels, field)?;
        Ok(Image {
            pixels,
            field,
            data: vec![0.0; pixels * pixels],
        })
    }

    /// An image from row-major values (module docs for the order).
    pub fn from_rows(pixels: usize, field: f64, data: Vec<f64>) -> Result<Image, ImageError> {
        Image::check_grid(pixels, field)?;
        if data.len() != pixels * pixels {
            return Err(ImageError::BadRequest(format!(
                "an image of {pixels} x {pixels} pixels needs {} values, got {}",
                pixels * pixels,
                data.len()
            )));
        }
        Ok(Image {
            pixels,
            field,
            data,
        })
    }

    fn check_grid(pixels: usize, field: f64) -> Result<(), ImageError> {
        if pixels == 0 {
            return Err(ImageError::BadRequest(
                "an image needs at least one pixel".into(),
            ));
        }
        if !(field.is_finite() && field > 0.0) {
            return Err(ImageError::BadRequest(format!(
                "the field of view must be a positive number of M, got {field}"
            )));
        }
        Ok(())
    }

    /// Side of one pixel, in M.
    pub fn pixel_size(&self) -> f64 {
        self.field / self.pixels as f64
    }

    /// α of the centre of column `j`, in M.
    pub fn alpha(&self, j: usize) -> f64 {
        -0.5 * self.field + (j as f64 + 0.5) * self.pixel_size()
    }

    /// β of the centre of row `i`, in M.
    pub fn beta(&self, i: usize) -> f64 {
        0.5 * self.field - (i as f64 + 0.5) * self.pixel_size()
    }

    /// The value of pixel (row `i`, column `j`).
    pub fn at(&self, i: usize, j: usize) -> f64 {
        self.data[i * self.pixels + j]
    }
}
