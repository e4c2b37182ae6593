//! Schwarzschild (1916): A = 1/B = 1 − 2/r, C = r².

use crate::declare_metric;
use crate::metric::SphericalMetric;
use crate::scalar::DualScalar;

declare_metric! {
    /// The Schwarzschild black hole of unit mass. Horizon r = 2.
    ///
    /// ```
    /// use umbral::prelude::*;
    ///
    /// assert_eq!(Schwarzschild.outer_horizon(), Some(2.0)); // Schwarzschild 1916
    /// // Photon sphere r = 3 and a circular shadow of radius 3√3 from every inclination
    /// // (Synge 1966, MNRAS 131, 463).
    /// let seen = shadow(&Schwarzschild, &ShadowRequest::distant(0.3)).unwrap();
    /// let [r_in, r_out] = seen.result.photon_orbit_radii.unwrap();
    /// assert!((r_in - 3.0).abs() < 1e-12 && (r_out - 3.0).abs() < 1e-12);
    /// let o = seen.observables.unwrap();
    /// assert!((o.mean_radius - 27f64.sqrt()).abs() < 1e-12);
    /// assert!(o.circularity_deviation < 1e-12);
    /// ```
    #[derive(Debug, Clone, Copy, Default, PartialEq)]
    pub struct Schwarzschild {
        name: "schwarzschild",
        title: "Schwarzschild",
        reference: "Schwarzschild 1916, Sitzungsber. Preuss. Akad. Wiss. 189",
        horizon: |_m| Some(2.0),
        parameters: {},
    }
}

impl SphericalMetric for Schwarzschild {
    fn a<D: DualScalar>(&self, r: D) -> D {
        -(r.recip() * 2.0) + 1.0
    }
    fn b<D: DualScalar>(&self, r: D) -> D {
        self.a(r).recip()
    }
    fn c<D: DualScalar>(&self, r: D) -> D {
        r * r
    }
}
