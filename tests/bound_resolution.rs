//! A bound refines its ends only down to the resolution its solver declares
//! (`ShadowSolver::curve_resolution`): a size within it of an interval's end is at the end,
//! and the bound states how far that leaves its ends uncertain.
//!
//! The solver here is the built-in spherical one with a deterministic perturbation of 1e-6 M
//! on every radius, as a ray tracer's curve moves under a change of its numerics. Registered
//! twice: declaring a resolution of 1e-5 M, and declaring none (0, exact).
//!
//! Reference: the Reissner–Nordström shadow radius b_c(q) = r²/√(r² − 2r + q²) with
//! r = (3 + √(9 − 8q²))/2 (Zakharov et al. 2005, Phys. Rev. D 72, 084020); the end of the
//! allowed charges for r_sh/M in [4.6, 5.2] is q = 0.7716033510504167, from the mpmath
//! inversion in tests/data/rn_bound.json (tests/generate_rn_bound.py).

use umbral::bounds::{
    bound_on, BoundRequest, BoundSettings, Evaluate, Halted, Inclination, Node, Parallel,
    ParameterRange, SizeMeasure,
};
use umbral::measurement::{DerivedRadii, RadiusInterval};
use umbral::prelude::*;
use umbral::shadow::{
    find_solver, register_solver, Observer, ShadowError, ShadowResult, ShadowSettings,
};

const NOISE: f64 = 1e-6;
const RESOLUTION: f64 = 1e-5;
/// mpmath inversion of b_c(q) = 4.6 (tests/data/rn_bound.json, first case, 68 % level).
const END: f64 = 0.771_603_351_050_416_7;

/// The spherical solver's curve with every radius moved by up to `NOISE`, a fixed function
/// of the radius's bits; `resolution` is what it declares.
struct Perturbed {
    name: &'static str,
    resolution: f64,
}

impl ShadowSolver for Perturbed {
    fn name(&self) -> &'static str {
        self.name
    }
    fn summary(&self) -> &'static str {
        "the spherical solver with a perturbation of 1e-6 M"
    }
    fn applies_to(&self, spacetime: &dyn Spacetime) -> Result<(), String> {
        find_solver("spherical").unwrap().applies_to(spacetime)
    }
    fn solve(
        &self,
        spacetime: &dyn Spacetime,
        observer: &Observer,
        settings: &ShadowSettings,
    ) -> Result<ShadowResult, ShadowError> {
        let mut result = find_solver("spherical")
            .unwrap()
            .solve(spacetime, observer, settings)?;
        if let Some(curve) = result.curve.as_mut() {
            for r in curve.radii.iter_mut() {
                // A splitmix-style scramble of the bits, mapped to [-1, 1).
                let mut z = r.to_bits().wrapping_add(0x9e37_79b9_7f4a_7c15);
                z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
                z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
                z ^= z >> 31;
                let unit = (z >> 11) as f64 / (1u64 << 53) as f64;
                *r += NOISE * (2.0 * unit - 1.0);
            }
        }
        Ok(result)
    }
    fn curve_resolution(&self, _: &ShadowSettings) -> f64 {
        self.resolution
    }
}

fn register() {
    for (name, resolution) in [("perturbed-coarse", RESOLUTION), ("perturbed-exact", 0.0)] {
        match register_solver(Perturbed { name, resolution }) {
            Ok(()) => {}
            Err(ShadowError::BadRequest(m)) => assert!(m.contains("already registered"), "{m}"),
            Err(e) => panic!("{e}"),
        }
    }
}

fn request(solver: &str) -> BoundRequest {
    let mut settings = BoundSettings::default();
    settings.shadow.solver = solver.parse().unwrap();
    BoundRequest {
        metric: umbral::metrics::MetricSource::builtin("reissner-nordstrom").unwrap(),
        vary: ParameterRange {
            name: "q".into(),
            low: 0.0,
            high: 0.95,
        },
        fixed: vec![],
        inclination: Inclination::Fixed { degrees: 17.0 },
        nuisance: vec![],
        size_measure: SizeMeasure::Mean,
        radii: DerivedRadii {
            intervals: vec![RadiusInterval {
                confidence: 0.68,
                low: 4.6,
                high: 5.2,
            }],
            ring: None,
            assumptions: vec![],
        },
        circularity_max: None,
        settings,
    }
}

/// Counts the values evaluated while the bound ends are refined.
struct Counting {
    at_ends: usize,
}

impl Evaluate for Counting {
    fn evaluate(
        &mut self,
        stage: &str,
        xs: &[f64],
        full: bool,
        node: &(dyn Fn(f64) -> Node + Sync),
    ) -> Result<Vec<Node>, Halted> {
        if stage == "bound ends" {
            assert!(full, "the bound ends are refined with the full search");
            self.at_ends += xs.len();
        }
        Parallel.evaluate(stage, xs, full, node)
    }
    fn finish(&mut self) -> Result<(), Halted> {
        Ok(())
    }
}

/// b_c(q) of Reissner–Nordström (Zakharov et al. 2005).
fn shadow_radius(q: f64) -> f64 {
    let r = 0.5 * (3.0 + (9.0 - 8.0 * q * q).sqrt());
    r * r / (r * r - 2.0 * r + q * q).sqrt()
}

#[test]
fn a_bound_end_is_refined_to_the_solvers_resolution_and_says_so() {
    register();
    let mut coarse = Counting { at_ends: 0 };
    let result = bound_on(&request("perturbed-coarse"), &mut coarse).unwrap();
    let mut exact = Counting { at_ends: 0 };
    let reference = bound_on(&request("perturbed-exact"), &mut exact).unwrap();
    assert!(result.failures.is_empty() && reference.failures.is_empty());
    let end = result.levels[0].allowed[0][1];
    // Within (resolution + perturbation) over the slope of b_c(q) of the mpmath end.
    let slope = (shadow_radius(END + 1e-6) - shadow_radius(END - 1e-6)) / 2e-6;
    let allowance = (RESOLUTION + NOISE) / slope.abs();
    assert!(
        (end - END).abs() <= allowance,
        "end {end}, mpmath {END}, allowed {allowance:e}"
    );
    // The end is where the size is within the resolution of 4.6, so the search stopped
    // before the one that claims exact sizes and has to search through the perturbation
    // (2 evaluations against 4 when written).
    assert!(
        coarse.at_ends < exact.at_ends,
        "{} evaluations at the ends against {}",
        coarse.at_ends,
        exact.at_ends
    );
    let said = |r: &umbral::bounds::BoundResult| {
        r.assumptions
            .iter()
            .any(|a| a.contains("until the size is within 1e-5 M of the interval's end"))
    };
    assert!(said(&result), "{:?}", result.assumptions);
    assert!(!said(&reference), "{:?}", reference.assumptions);
    // The spread it states is the resolution over the slope, estimated across the grid cell:
    // within a factor of two of the closed form's at the end.
    let spread: f64 = result
        .assumptions
        .iter()
        .find_map(|a| a.split("known to about ±").nth(1))
        .and_then(|rest| rest.split_whitespace().next())
        .and_then(|v| v.parse().ok())
        .unwrap_or_else(|| panic!("no spread stated: {:?}", result.assumptions));
    let exact = RESOLUTION / slope.abs();
    assert!(
        spread > 0.5 * exact && spread < 2.0 * exact,
        "stated ±{spread:e}, closed form {exact:e}"
    );
    assert!(
        !reference
            .assumptions
            .iter()
            .any(|a| a.contains("known to about")),
        "{:?}",
        reference.assumptions
    );
}
