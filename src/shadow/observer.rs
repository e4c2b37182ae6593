//! Where the image is taken: a distant observer at inclination θ_o, or one at finite radius.

use serde::Serialize;

/// The observer: inclination from the spin axis (radians, 0 < θ_o < π) and, for an observer
/// at finite distance, its radius r_o (`None`: at infinity).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Observer {
    pub inclination: f64,
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
}
