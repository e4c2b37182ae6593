//! Images of emission models checked against the outside world: an mpmath orbit-equation
//! generator, the critical impact parameter in closed form, the photon-ring demagnification,
//! and symmetry.

use umbral::image::blur::gaussian_blur;
use umbral::image::emission::{EmissionModel, InnerEdge};
use umbral::image::features::{ring_features, FeatureSettings};
use umbral::image::inner_shadow::inner_shadow;
use umbral::image::trace::{ImageSettings, ImageTracer, PixelFate, RenderedImage};
use umbral::metric::Spacetime;
use umbral::metrics::{Kerr, ReissnerNordstrom, Schwarzschild};
use umbral::run::image::render;
use umbral::run::Controls;
use umbral::shadow::{solve, Observer, ShadowSettings};

fn reference(key: &str) -> f64 {
    let text = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/data/face_on_rings.json"
    ))
    .expect("tests/data/face_on_rings.json");
    let json: serde_json::Value = serde_json::from_str(&text).expect("JSON");
    json[key].as_str().expect(key).parse().expect("a number")
}

fn image<'m>(
    metric: &'m dyn Spacetime,
    model: &EmissionModel,
    inclination_deg: f64,
    pixels: usize,
    field: f64,
) -> (ImageTracer<'m>, RenderedImage) {
    let settings = ImageSettings::new(
        Observer::distant(inclination_deg.to_radians()),
        pixels,
        field,
    );
    let tracer = ImageTracer::new(metric, model, &settings).expect("a valid request");
    let rendered = render(&tracer, Controls::default()).expect("rendered");
    assert_eq!(rendered.failed, 0, "{:?}", rendered.first_failure);
    (tracer, rendered)
}

/// The edge between screen radii `lo` (where `inside` holds) and `hi` (where it does not)
/// along the α axis, by bisection to 1e-10 M.
fn edge(tracer: &ImageTracer, mut lo: f64, mut hi: f64, inside: impl Fn(f64) -> bool) -> f64 {
    assert!(inside(lo) && !inside(hi), "not a bracket: [{lo}, {hi}]");
    while (hi - lo).abs() > 1e-10 {
        let mid = 0.5 * (lo + hi);
        if inside(mid) {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    let _ = tracer;
    0.5 * (lo + hi)
}

/// Face-on Schwarzschild, thin disk down to the horizon: the inner shadow's radius and the
/// n = 1 (lensed) ring's extent against the mpmath orbit-equation generator
/// (tests/generate_face_on_rings.py; orbit equation from Chandrasekhar 1983, *The
/// Mathematical Theory of Black Holes*; lensed ring 5.02 < b < 6.17 as in Gralla, Holz & Wald
/// 2019, Phys. Rev. D 100, 024018).
#[test]
fn face_on_schwarzschild_inner_shadow_and_lensed_ring_match_the_orbit_equation() {
    let model = EmissionModel::built_in("disk-horizon").unwrap();
    let (tracer, rendered) = image(&Schwarzschild, &model, 0.0, 48, 16.0);
    let b_inner = reference("b_inner");
    let (low, high) = (reference("b_ring1_low"), reference("b_ring1_high"));

    let shadow = inner_shadow(&tracer, &rendered).expect("an inner shadow");
    assert_eq!(shadow.unbracketed, 0);
    assert!(
        (shadow.mean_radius - b_inner).abs() < 1e-5,
        "inner shadow {} vs {b_inner}",
        shadow.mean_radius
    );
    // Circular about the centre: every direction's edge at the same radius.
    assert!(shadow.radius_range[1] - shadow.radius_range[0] < 1e-5);
    assert!(shadow.centre[0].hypot(shadow.centre[1]) < 1e-9);

    // The lensed ring along the α axis, by bisection on rays.
    let second = |rho: f64| tracer.trace_pixel(rho, 0.0).by_order[1] > 0.0;
    let ring_low = edge(&tracer, 5.1, 4.9, second);
    // The outer end is the ray whose second crossing is at infinity: traced from 1e7 M, where
    // the emission region (and so the disk) ends.
    let mut far = *tracer.settings();
    far.start_radius = 1e7;
    let far = ImageTracer::new(&Schwarzschild, &model, &far).unwrap();
    let ring_high = edge(&far, 5.5, 6.5, |rho| {
        far.trace_pixel(rho, 0.0).by_order[1] > 0.0
    });
    assert!((ring_low - low).abs() < 1e-5, "{ring_low} vs {low}");
    assert!((ring_high - high).abs() < 1e-5, "{ring_high} vs {high}");

    // In the image, every pixel with n = 1 emission lies within the ring (to half a pixel's
    // diagonal), and the ring's pixels reach both ends.
    let ring = &rendered.orders[1];
    let h = ring.pixel_size();
    let (mut nearest, mut farthest) = (f64::INFINITY, 0.0f64);
    for i in 0..ring.pixels {
        for j in 0..ring.pixels {
            if ring.at(i, j) > 0.0 {
                let b = ring.alpha(j).hypot(ring.beta(i));
                nearest = nearest.min(b);
                farthest = farthest.max(b);
            }
        }
    }
    let half_diagonal = h / 2f64.sqrt();
    assert!(
        nearest >= low - half_diagonal && nearest <= low + 2.0 * h,
        "{nearest}"
    );
    assert!(
        farthest <= high + half_diagonal && farthest >= high - 2.0 * h,
        "{farthest}"
    );
}

/// b_c of Reissner–Nordström: r_ph²/√(r_ph² − 2r_ph + q²), r_ph = (3 + √(9 − 8q²))/2
/// (e.g. Zakharov et al. 2005, Phys. Rev. D 72, 084020).
fn rn_critical(q: f64) -> f64 {
    let r = 0.5 * (3.0 + (9.0 - 8.0 * q * q).sqrt());
    r * r / (r * r - 2.0 * r + q * q).sqrt()
}

/// Spherical infall: the image's brightest radius sits at the critical impact parameter b_c
/// within one pixel, whatever the emissivity index (Narayan, Johnson & Gammie 2019, ApJL 885,
/// L33), for Schwarzschild and Reissner–Nordström.
#[test]
fn spherical_infall_brightness_edge_sits_at_the_critical_impact_parameter() {
    let rn = ReissnerNordstrom::new(0.6).unwrap();
    let cases: [(&dyn Spacetime, f64); 2] =
        [(&Schwarzschild, 27f64.sqrt()), (&rn, rn_critical(0.6))];
    for (metric, b_c) in cases {
        for index in [2.0, 3.0] {
            let model = EmissionModel::Infall {
                index,
                spectral_index: 0.0,
            };
            // An odd pixel count puts the middle row on β = 0.
            let (_, rendered) = image(metric, &model, 50.0, 61, 16.0);
            let img = &rendered.total;
            let mid = img.pixels / 2;
            let (mut best, mut at) = (0.0, 0);
            for j in mid..img.pixels {
                if img.at(mid, j) > best {
                    best = img.at(mid, j);
                    at = j;
                }
            }
            let peak = img.alpha(at);
            assert!(
                (peak - b_c).abs() <= img.pixel_size(),
                "index {index}: peak at {peak}, b_c = {b_c}, pixel {}",
                img.pixel_size()
            );
            // Darker inside than at the edge: the shadow is a brightness depression.
            assert!(img.at(mid, mid) < 0.5 * best);
        }
    }
}

/// The n-th order image of a disk reaching the horizon converges onto the critical curve as
/// n grows, each order e^{−γ} narrower than the one before (Johnson et al. 2020, Sci. Adv. 6,
/// eaaz1310; Gralla & Lupsasca 2020, Phys. Rev. D 101, 044031); for Schwarzschild γ = π.
#[test]
fn higher_order_rings_converge_onto_the_critical_curve() {
    let model = EmissionModel::built_in("disk-horizon").unwrap();
    // Schwarzschild at 60°: b_c = 3√3 in closed form (Synge 1966).
    let mut settings = ImageSettings::new(Observer::distant(60f64.to_radians()), 8, 16.0);
    settings.max_order = 5;
    let tracer = ImageTracer::new(&Schwarzschild, &model, &settings).unwrap();
    let b_c = 27f64.sqrt();
    let widths = order_widths(&tracer, [0.0, 0.0], 0.0, b_c, 4);
    // From n = 2 on (the first lensed ring is not yet in the asymptotic regime).
    for w in widths[1..].windows(2) {
        let ratio = w[1] / w[0];
        assert!(
            (ratio - (-std::f64::consts::PI).exp()).abs() < 0.15 * (-std::f64::consts::PI).exp(),
            "widths {widths:?}"
        );
    }
    // Kerr a = 0.9 at 60°, both sides of the α axis: the critical curve from the separable
    // solver (itself checked against Bardeen 1973 in tests/shadow_separable.rs).
    let kerr = Kerr::new(0.9).unwrap();
    let observer = Observer::distant(60f64.to_radians());
    let exact = solve(
        &kerr,
        &observer,
        &ShadowSettings {
            points: 8,
            ..Default::default()
        },
    )
    .unwrap();
    let curve = exact.curve.unwrap();
    let settings = ImageSettings {
        max_order: 5,
        ..ImageSettings::new(observer, 8, 16.0)
    };
    let tracer = ImageTracer::new(&kerr, &model, &settings).unwrap();
    for (psi, rho_c) in [
        (0.0, curve.radii[0]),
        (std::f64::consts::PI, curve.radii[4]),
    ] {
        let widths = order_widths(&tracer, curve.origin, psi, rho_c, 4);
        for w in widths.windows(2) {
            assert!(w[1] < 0.25 * w[0], "psi {psi}: widths {widths:?}");
        }
    }
}

/// Widths of the screen intervals (along the line at angle `psi` through `origin`) whose rays
/// cross the equatorial plane at least n + 1 times before capture, n = 1..=max; each interval
/// must contain the critical radius `rho_c` (within 1e-7 M).
fn order_widths(
    tracer: &ImageTracer,
    origin: [f64; 2],
    psi: f64,
    rho_c: f64,
    max: usize,
) -> Vec<f64> {
    let (s, c) = psi.sin_cos();
    let crossings = |rho: f64| tracer.trace_pixel(origin[0] + rho * c, origin[1] + rho * s);
    let reaches = |rho: f64, n: usize| crossings(rho).crossings.len() > n;
    let mut widths = Vec::new();
    for n in 1..=max {
        assert!(
            reaches(rho_c - 1e-9, n) && reaches(rho_c + 1e-9, n),
            "order {n}"
        );
        let inner = edge(tracer, rho_c - 1e-9, rho_c - 2.0, |r| reaches(r, n));
        let outer = edge(tracer, rho_c + 1e-9, rho_c + 3.0, |r| reaches(r, n));
        assert!(inner < rho_c + 1e-7 && outer > rho_c - 1e-7);
        widths.push(outer - inner);
    }
    widths
}

/// Doppler boosting: around Kerr seen at 60°, the disk's brighter side is the side whose gas
/// moves toward the observer (α < 0 for a > 0 in Bardeen's screen: gas on circular orbits with
/// Ω > 0 approaches the observer there), and flipping the spin mirrors the image
/// (common practice, no source).
#[test]
fn the_approaching_side_is_brighter_and_flips_with_the_spin() {
    let model = EmissionModel::built_in("disk-isco").unwrap();
    let moment = |a: f64| {
        let kerr = Kerr::new(a).unwrap();
        let (_, rendered) = image(&kerr, &model, 60.0, 64, 24.0);
        let img = rendered.total;
        let (mut m, mut f) = (0.0, 0.0);
        for i in 0..img.pixels {
            for j in 0..img.pixels {
                m += img.alpha(j) * img.at(i, j);
                f += img.at(i, j);
            }
        }
        (m / f, img)
    };
    let (plus, image_plus) = moment(0.9);
    let (minus, image_minus) = moment(-0.9);
    assert!(plus < -0.3, "brightness-weighted alpha {plus}");
    assert!(minus > 0.3, "brightness-weighted alpha {minus}");
    // The ring's brightness asymmetry (umbral::image::features): towards −α (180°) for
    // a > 0, towards +α (0°) for a < 0, the two 180° apart. Measured after a blur of 1.5 M:
    // at full resolution the direct image's edge and the lensed rings are nearly as bright at
    // some angles, and which one a profile's peak picks there can change with the last digits.
    let settings = FeatureSettings::default();
    let blurred = |image: &umbral::image::Image| gaussian_blur(image, 1.5).unwrap();
    let ring_plus = ring_features(&blurred(&image_plus), &settings).unwrap();
    let ring_minus = ring_features(&blurred(&image_minus), &settings).unwrap();
    assert!(
        (ring_plus.asymmetry_angle_deg.abs() - 180.0).abs() < 15.0,
        "{}",
        ring_plus.asymmetry_angle_deg
    );
    // The mirror image α → −α takes a position angle ψ to 180° − ψ: a flip by 180° about the
    // α axis, where both lie.
    let mirrored =
        (180.0 - ring_plus.asymmetry_angle_deg - ring_minus.asymmetry_angle_deg).rem_euclid(360.0);
    assert!(
        mirrored.min(360.0 - mirrored) < 0.01,
        "{ring_plus:?} {ring_minus:?}"
    );
    assert!(ring_minus.asymmetry_angle_deg.abs() < 15.0);
    // The ring found is the one about the hole, not the bright spot's flanks.
    assert!(
        ring_plus.centre[0].hypot(ring_plus.centre[1]) < 1.5,
        "{ring_plus:?}"
    );
    assert!((ring_plus.diameter - 10.0).abs() < 1.5, "{ring_plus:?}");
    assert!(ring_plus.asymmetry_contrast > 0.2);
    assert!((ring_plus.asymmetry_contrast - ring_minus.asymmetry_contrast).abs() < 1e-3);
    // Mirror image under α → −α, to the integration's accuracy.
    let n = image_plus.pixels;
    let peak = image_plus.data.iter().cloned().fold(0.0, f64::max);
    for i in 0..n {
        for j in 0..n {
            let d = (image_plus.at(i, j) - image_minus.at(i, n - 1 - j)).abs();
            assert!(d < 1e-5 * peak, "pixel ({i}, {j}): {d}");
        }
    }
}

/// An equatorially symmetric metric with spherical infall: the image is symmetric under
/// β → −β at any inclination for a spherical metric (the scene is symmetric about every axis
/// through the centre), and for Kerr seen edge-on (reflection through the equator).
#[test]
fn infall_images_are_symmetric_under_beta_reflection() {
    let model = EmissionModel::built_in("infall").unwrap();
    let rn = ReissnerNordstrom::new(0.5).unwrap();
    let kerr = Kerr::new(0.8).unwrap();
    let cases: [(&dyn Spacetime, f64); 3] = [(&Schwarzschild, 35.0), (&rn, 70.0), (&kerr, 90.0)];
    for (metric, inclination) in cases {
        // A tight tolerance: the check is of the physics, the numerics must not blur it.
        let settings = ImageSettings {
            rtol: 1e-9,
            ..ImageSettings::new(Observer::distant(f64::to_radians(inclination)), 24, 20.0)
        };
        let tracer = ImageTracer::new(metric, &model, &settings).unwrap();
        let rendered = render(&tracer, Controls::default()).unwrap();
        assert_eq!(rendered.failed, 0);
        let img = &rendered.total;
        let peak = img.data.iter().cloned().fold(0.0, f64::max);
        let n = img.pixels;
        for i in 0..n {
            for j in 0..n {
                let d = (img.at(i, j) - img.at(n - 1 - i, j)).abs();
                assert!(d < 1e-6 * peak, "{inclination}°, pixel ({i}, {j}): {d}");
            }
        }
    }
}

/// The image is the same, bit for bit, at one and at two threads.
#[test]
fn images_are_bit_identical_at_any_thread_count() {
    let model = EmissionModel::ThinDisk {
        profile: umbral::image::emission::DiskProfile::LogNormal {
            peak: 5.0,
            width: 0.5,
        },
        inner_edge: InnerEdge::Horizon,
        outer_radius: Some(30.0),
        spectral_index: 1.0,
    };
    let kerr = Kerr::new(0.7).unwrap();
    let settings = ImageSettings::new(Observer::distant(40f64.to_radians()), 16, 20.0);
    let tracer = ImageTracer::new(&kerr, &model, &settings).unwrap();
    let run = |threads: usize| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
            .install(|| render(&tracer, Controls::default()).unwrap())
    };
    let (one, two) = (run(1), run(2));
    let bits = |r: &RenderedImage| r.total.data.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
    assert_eq!(bits(&one), bits(&two));
    assert!(one.total.data.iter().any(|&x| x > 0.0));
    assert!(one.total.data.iter().all(|x| x.is_finite()));
    let _ = PixelFate::Captured;
}
