//! Image products: the Gaussian blur, ring features, and the `.npy`, FITS and PNG writers,
//! checked against closed forms and by decoding the files independently of the writers.

use std::f64::consts::{PI, TAU};

use umbral::image::{
    fathom, gaussian_blur, ring_features, uas_to_m, write_fits, write_npy, write_png,
    FeatureSettings, FitsCard, FitsHeader, FitsValue, Image, ImageError, RingFeatures,
};

/// An image of `f(α, β)` sampled at the pixel centres.
fn sampled(pixels: usize, field: f64, f: impl Fn(f64, f64) -> f64) -> Image {
    let mut image = Image::zeros(pixels, field).unwrap();
    for i in 0..pixels {
        for j in 0..pixels {
            image.data[i * pixels + j] = f(image.alpha(j), image.beta(i));
        }
    }
    image
}

/// 2√(2 ln 2): FWHM of a Gaussian over its σ.
fn fwhm_per_sigma() -> f64 {
    2.0 * (2.0 * 2.0f64.ln()).sqrt()
}

// ---------------------------------------------------------------- blur

#[test]
fn a_blurred_gaussian_is_a_gaussian_whose_variances_add() {
    // Bracewell, The Fourier Transform and Its Applications: a Gaussian of variance σ₁²
    // convolved with a unit-integral Gaussian of variance σ₂² is a Gaussian of variance
    // σ₁² + σ₂²; in two dimensions the peak falls by σ₁²/(σ₁² + σ₂²).
    let (s1, s2) = (1.5, 1.0);
    let (a0, b0) = (1.3, -2.1);
    let blob =
        |a: f64, b: f64, s: f64| (-((a - a0).powi(2) + (b - b0).powi(2)) / (2.0 * s * s)).exp();
    let image = sampled(128, 64.0, |a, b| blob(a, b, s1));
    let blurred = gaussian_blur(&image, fwhm_per_sigma() * s2).unwrap();
    let s = (s1 * s1 + s2 * s2).sqrt();
    let expected = sampled(128, 64.0, |a, b| s1 * s1 / (s * s) * blob(a, b, s));
    let worst = blurred
        .data
        .iter()
        .zip(&expected.data)
        .map(|(x, y)| (x - y).abs())
        .fold(0.0, f64::max);
    assert!(
        worst < 1e-12,
        "largest difference {worst} (peak {})",
        s1 * s1 / (s * s)
    );
}

#[test]
fn blurring_conserves_the_flux_of_a_source_far_from_the_edges() {
    // A lopsided ring of radius 5 M on a 40 M field, blurred to a 3 M beam: the ring stays
    // farther than 8σ ≈ 10 M from the edges.
    let image = sampled(96, 40.0, |a, b| {
        let rho = a.hypot(b);
        (1.0 + 0.6 * b.atan2(a).cos()) * (-0.5 * ((rho - 5.0) / 0.7f64).powi(2)).exp()
    });
    let before: f64 = image.data.iter().sum();
    let after: f64 = gaussian_blur(&image, 3.0).unwrap().data.iter().sum();
    assert!((after / before - 1.0).abs() < 1e-12, "{before} -> {after}");
}

#[test]
fn a_uniform_image_is_unchanged_inside_and_darkened_at_the_edges() {
    let image = Image::from_rows(64, 64.0, vec![2.5; 64 * 64]).unwrap();
    let sigma = 2.0; // pixels (1 M each)
    let blurred = gaussian_blur(&image, fwhm_per_sigma() * sigma).unwrap();
    assert!((blurred.at(32, 32) - 2.5).abs() < 1e-13);
    // The sky outside is dark: at a corner the beam keeps the quarter of itself that lies on
    // the grid, (Σ_{k≥0} w_k)² = ((1 + w₀)/2)² with w₀ = 1/Σ_{k∈ℤ} e^(−k²/(2σ²)), a sum of
    // our own evaluation here to 1e-16.
    let z: f64 = (-100..=100)
        .map(|k| (-(k as f64).powi(2) / (2.0 * sigma * sigma)).exp())
        .sum();
    let kept = ((1.0 + 1.0 / z) / 2.0).powi(2);
    assert!(
        (blurred.at(0, 0) - 2.5 * kept).abs() < 1e-13,
        "{}",
        blurred.at(0, 0)
    );
}

#[test]
fn blurring_twice_gives_identical_bits() {
    let image = sampled(50, 20.0, |a, b| {
        (a * 0.7).sin().powi(2) + (b * 0.3).cos().abs()
    });
    let one = gaussian_blur(&image, 2.2).unwrap();
    let two = gaussian_blur(&image, 2.2).unwrap();
    let bits = |im: &Image| im.data.iter().map(|v| v.to_bits()).collect::<Vec<_>>();
    assert_eq!(bits(&one), bits(&two));
    assert_eq!((one.pixels, one.field), (50, 20.0));
}

#[test]
fn bad_blur_requests_are_one_line_errors() {
    let image = Image::zeros(8, 8.0).unwrap();
    for fwhm in [0.0, -1.0, f64::NAN, f64::INFINITY] {
        let Err(ImageError::BadRequest(message)) = gaussian_blur(&image, fwhm) else {
            panic!("FWHM {fwhm} accepted");
        };
        assert!(
            message.contains("FWHM") && !message.contains('\n'),
            "{message}"
        );
    }
    let mut bad = image.clone();
    bad.data[9] = f64::NAN;
    assert!(matches!(
        gaussian_blur(&bad, 1.0),
        Err(ImageError::BadRequest(_))
    ));
    assert_eq!(uas_to_m(20.0, 5.0), Ok(4.0));
    assert!(uas_to_m(20.0, -5.0).is_err());
    assert!(uas_to_m(f64::NAN, 5.0).is_err());
}

// ---------------------------------------------------------------- ring features

/// A ring of radius `r` about (`a0`, `b0`), Gaussian radial profile of σ `w`, brightness
/// 1 + c cos(ψ − ψ₀) around it.
fn ring(pixels: usize, field: f64, centre: (f64, f64), r: f64, w: f64, c: f64, psi0: f64) -> Image {
    sampled(pixels, field, |a, b| {
        let (x, y) = (a - centre.0, b - centre.1);
        let rho = x.hypot(y);
        (1.0 + c * (y.atan2(x) - psi0).cos()) * (-0.5 * ((rho - r) / w).powi(2)).exp()
    })
}

fn features(image: &Image) -> RingFeatures {
    ring_features(image, &FeatureSettings::default()).unwrap()
}

#[test]
fn a_thin_ring_has_its_diameter_and_width() {
    // R = 10 M, σ = 0.5 M on a 0.25 M grid: FWHM = 2√(2 ln 2) σ.
    let image = ring(128, 32.0, (0.0, 0.0), 10.0, 0.5, 0.0, 0.0);
    let f = features(&image);
    let pixel = image.pixel_size();
    assert!(
        (f.diameter - 20.0).abs() < 0.02 * pixel,
        "diameter {}",
        f.diameter
    );
    let fwhm = fwhm_per_sigma() * 0.5;
    assert!(
        (f.width.unwrap() / fwhm - 1.0).abs() < 0.03,
        "width {} vs {fwhm}",
        f.width.unwrap()
    );
    assert!(f.radius_spread < 0.05 * pixel, "spread {}", f.radius_spread);
    // The dark centre's radius: the inner half maximum of the Gaussian, R − σ√(2 ln 2).
    let inner = 10.0 - 0.5 * (2.0 * std::f64::consts::LN_2).sqrt();
    assert!(
        (f.dark_radius.unwrap() - inner).abs() < 0.05 * pixel,
        "dark radius {} vs {inner}",
        f.dark_radius.unwrap()
    );
    assert_eq!((f.angles_with_peak, f.angles_with_width), (360, 360));
    assert!(f.asymmetry_contrast < 1e-10);
    assert!(f.centroid[0].abs() < 1e-12 && f.centroid[1].abs() < 1e-12);
}

/// The exact contrast and angle expected for a thin ring of radius `r` about the origin with
/// brightness 1 + c cos(ψ − ψ₀), measured from a centroid at `centroid` (derivation in the
/// test below).
fn expected_asymmetry(r: f64, c: f64, psi0: f64, centroid: [f64; 2], angles: usize) -> (f64, f64) {
    let (mut sr, mut si, mut total) = (0.0, 0.0, 0.0);
    for k in 0..angles {
        let psi = TAU * k as f64 / angles as f64;
        let u = [psi.cos(), psi.sin()];
        // The ray C + t u from the centroid meets the ring |P| = r at t > 0.
        let cu = centroid[0] * u[0] + centroid[1] * u[1];
        let cc = centroid[0].powi(2) + centroid[1].powi(2);
        let t = -cu + (cu * cu - cc + r * r).sqrt();
        let p = [centroid[0] + t * u[0], centroid[1] + t * u[1]];
        let brightness = 1.0 + c * (p[1].atan2(p[0]) - psi0).cos();
        sr += brightness * psi.cos();
        si += brightness * psi.sin();
        total += brightness;
    }
    (sr.hypot(si) / total, si.atan2(sr).to_degrees())
}

/// The difference of two angles in degrees, folded into (−180, 180].
fn angle_difference(a: f64, b: f64) -> f64 {
    let d = (a - b).rem_euclid(360.0);
    if d > 180.0 {
        d - 360.0
    } else {
        d
    }
}

#[test]
fn a_lopsided_ring_has_its_asymmetry() {
    // About its own centre, a brightness 1 + c cos(ψ − ψ₀) gives S = Σ I_k e^{iψ_k} =
    // K (c/2) e^{iψ₀} (discrete orthogonality of harmonics, K ≥ 3): contrast c/2, angle ψ₀.
    // The brightness centroid is pulled towards the bright side, by (c/2)(R² + w²)/R along ψ₀
    // for a Gaussian radial profile of σ = w ≪ R (Σ I α / Σ I = (c/2) ∫ρ² g dρ / ∫ρ g dρ);
    // the circle fit moves the centre back to the ring's own. `expected_asymmetry` gives the
    // exact sums seen from the measured centre.
    //
    // On the grid the per-angle peak brightness varies with the direction of the ray through
    // the pixels (by a few % for a ring 2 pixels wide), which leaves an absolute floor of a few
    // 1e-4 on the measured contrast: hence an absolute tolerance.
    let (r, w) = (10.0, 0.4);
    let cases = [
        (0.4, 40.0),
        (0.4, 17.2),
        (0.8, -120.0),
        (0.05, 180.0),
        (0.05, 45.0),
        (0.3, 90.0),
    ];
    for (c, psi0_deg) in cases {
        let psi0 = f64::to_radians(psi0_deg);
        let image = ring(160, 32.0, (0.0, 0.0), r, w, c, psi0);
        let f = features(&image);
        let d = 0.5 * c * (r * r + w * w) / r;
        let measured_d = f.centroid[0].hypot(f.centroid[1]);
        assert!(
            (measured_d - d).abs() < 1e-6 * r,
            "c = {c}: centroid {measured_d} vs {d}"
        );
        assert!(
            f.centre[0].hypot(f.centre[1]) < 0.02 * image.pixel_size(),
            "c = {c}: centre {:?}",
            f.centre
        );
        let (contrast, angle) = expected_asymmetry(r, c, psi0, f.centre, 360);
        assert!(angle_difference(angle, psi0_deg).abs() < 0.05);
        assert!(
            angle_difference(f.asymmetry_angle_deg, psi0_deg).abs() < 0.2,
            "c = {c}: angle {} vs {psi0_deg}",
            f.asymmetry_angle_deg
        );
        assert!(
            (f.asymmetry_contrast - contrast).abs() < 1e-3,
            "c = {c}, {psi0_deg} deg: contrast {} vs {contrast}",
            f.asymmetry_contrast
        );
        assert!(
            (f.asymmetry_contrast - 0.5 * c).abs() < 1e-3,
            "c = {c}: contrast {} vs c/2",
            f.asymmetry_contrast
        );
        assert!(f.asymmetry_angle_deg > -180.0 && f.asymmetry_angle_deg <= 180.0);
    }
}

#[test]
fn an_off_centre_ring_has_its_centroid_and_size() {
    let image = ring(128, 32.0, (2.5, -1.75), 8.0, 0.5, 0.0, 0.0);
    let f = features(&image);
    assert!(
        (f.centroid[0] - 2.5).abs() < 1e-9 && (f.centroid[1] + 1.75).abs() < 1e-9,
        "{:?}",
        f.centroid
    );
    assert!(
        (f.centre[0] - 2.5).abs() < 0.02 * image.pixel_size()
            && (f.centre[1] + 1.75).abs() < 0.02 * image.pixel_size(),
        "{:?}",
        f.centre
    );
    assert!(
        (f.diameter - 16.0).abs() < 0.02 * image.pixel_size(),
        "{}",
        f.diameter
    );
    // Off the grid's centre the grid's own pattern shows as a faint asymmetry (the floor
    // above).
    assert!(f.asymmetry_contrast < 1e-3, "{}", f.asymmetry_contrast);
}

#[test]
fn ring_features_do_not_depend_on_where_the_ring_sits() {
    let pixel = 0.25;
    let at = |a0: f64, b0: f64| features(&ring(128, 32.0, (a0, b0), 9.0, 0.6, 0.5, 1.0));
    let here = at(0.3, -0.2);
    // A shift by whole pixels (3 right, 5 down): the centroid moves with it exactly; the
    // fitted centre, whose search starts at the field's centre, ends within its settling
    // tolerance (0.01 pixel) of the shifted one, and the figures agree to that.
    let there = at(0.3 + 3.0 * pixel, -0.2 - 5.0 * pixel);
    assert!((there.centroid[0] - here.centroid[0] - 3.0 * pixel).abs() < 1e-9);
    assert!((there.centroid[1] - here.centroid[1] + 5.0 * pixel).abs() < 1e-9);
    assert!((there.centre[0] - here.centre[0] - 3.0 * pixel).abs() < 0.02 * pixel);
    assert!((there.centre[1] - here.centre[1] + 5.0 * pixel).abs() < 0.02 * pixel);
    assert!((there.diameter - here.diameter).abs() < 0.01 * pixel);
    assert!((there.width.unwrap() / here.width.unwrap() - 1.0).abs() < 1e-3);
    assert!((there.asymmetry_contrast / here.asymmetry_contrast - 1.0).abs() < 1e-3);
    assert!((there.asymmetry_angle_deg - here.asymmetry_angle_deg).abs() < 0.05);
    // A shift by a fraction of a pixel: the same to within the sampling.
    let off = at(0.3 + 0.37 * pixel, -0.2 + 0.61 * pixel);
    assert!(
        (off.diameter - here.diameter).abs() < 0.05 * pixel,
        "{} vs {}",
        off.diameter,
        here.diameter
    );
    assert!((off.width.unwrap() / here.width.unwrap() - 1.0).abs() < 0.01);
    assert!((off.asymmetry_contrast / here.asymmetry_contrast - 1.0).abs() < 0.002);
    assert!((off.asymmetry_angle_deg - here.asymmetry_angle_deg).abs() < 0.05);
}

#[test]
fn images_without_a_ring_are_refused() {
    let settings = FeatureSettings::default();
    let blank = Image::zeros(32, 10.0).unwrap();
    let Err(ImageError::BadRequest(message)) = ring_features(&blank, &settings) else {
        panic!("a blank image was measured");
    };
    assert!(message.contains("blank"), "{message}");
    // A single blob at the centre: every profile peaks at the centroid.
    let blob = sampled(32, 10.0, |a, b| (-(a * a + b * b)).exp());
    let Err(ImageError::BadRequest(message)) = ring_features(&blob, &settings) else {
        panic!("a blob was measured as a ring");
    };
    assert!(message.contains("no ring"), "{message}");
    let mut nan = blob.clone();
    nan.data[5] = f64::NAN;
    assert!(ring_features(&nan, &settings).is_err());
    let mut negative = blob.clone();
    negative.data[5] = -1.0;
    assert!(ring_features(&negative, &settings).is_err());
    assert!(ring_features(&Image::zeros(2, 1.0).unwrap(), &settings).is_err());
    let good = ring(64, 16.0, (0.0, 0.0), 4.0, 0.5, 0.0, 0.0);
    for bad in [
        FeatureSettings {
            angles: 2,
            ..settings
        },
        FeatureSettings {
            angles: usize::MAX,
            ..settings
        },
        FeatureSettings {
            step_pixels: 0.0,
            ..settings
        },
        FeatureSettings {
            step_pixels: 1e-300,
            ..settings
        },
        FeatureSettings {
            step_pixels: 1.5,
            ..settings
        },
        FeatureSettings {
            step_pixels: f64::NAN,
            ..settings
        },
    ] {
        assert!(ring_features(&good, &bad).is_err(), "{bad:?}");
    }
}

#[test]
fn a_ring_filling_the_centre_has_no_width_but_a_diameter() {
    // A ring whose inside never falls below half its peak: a radius at every angle, no width.
    let image = sampled(64, 16.0, |a, b| {
        let rho = a.hypot(b);
        0.8 + (-0.5 * ((rho - 4.0) / 0.5f64).powi(2)).exp() * 0.6
    });
    let f = features(&image);
    assert_eq!(f.width, None);
    assert_eq!(f.angles_with_width, 0);
    assert!((f.diameter - 8.0).abs() < 0.1, "{}", f.diameter);
}

// ---------------------------------------------------------------- files

/// A test pattern whose orientation shows: v(i, j) = 100 i + j + 0.125.
fn pattern(pixels: usize, field: f64) -> Image {
    let data = (0..pixels * pixels)
        .map(|k| 100.0 * (k / pixels) as f64 + (k % pixels) as f64 + 0.125)
        .collect();
    Image::from_rows(pixels, field, data).unwrap()
}

#[test]
fn npy_files_have_numpy_s_layout() {
    // NumPy format 1.0 (NEP 1): magic, version 1.0, u16 LE header length, dict, 64-byte
    // alignment of the data, little-endian f64 rows as stored.
    let image = pattern(7, 3.5);
    let mut bytes = Vec::new();
    write_npy(&image, &mut bytes).unwrap();
    assert_eq!(&bytes[..8], b"\x93NUMPY\x01\x00");
    let header_len = u16::from_le_bytes([bytes[8], bytes[9]]) as usize;
    let start = 10 + header_len;
    assert_eq!(start % 64, 0);
    assert_eq!(bytes.len(), start + 8 * 49);
    let header = std::str::from_utf8(&bytes[10..start]).unwrap();
    assert!(header.ends_with('\n'));
    assert_eq!(
        header.trim_end(),
        "{'descr': '<f8', 'fortran_order': False, 'shape': (7, 7), }"
    );
    let values: Vec<f64> = bytes[start..]
        .chunks_exact(8)
        .map(|c| f64::from_le_bytes(c.try_into().unwrap()))
        .collect();
    assert_eq!(values, image.data);
    assert_eq!(values[7], 100.125); // row 1, column 0
}

/// The header cards (80 characters each) and the data of a FITS file.
fn read_fits(bytes: &[u8]) -> (Vec<String>, Vec<f64>) {
    assert_eq!(bytes.len() % 2880, 0, "FITS length {}", bytes.len());
    let mut cards = Vec::new();
    for chunk in bytes.chunks_exact(80) {
        assert!(
            chunk.iter().all(|c| (32..=126).contains(c)),
            "non-ASCII card"
        );
        let card = String::from_utf8(chunk.to_vec()).unwrap();
        let end = card.trim_end() == "END";
        cards.push(card);
        if end {
            break;
        }
    }
    let start = (cards.len() * 80).next_multiple_of(2880);
    assert!(bytes[cards.len() * 80..start].iter().all(|&c| c == b' '));
    let n1: usize = value(&cards, "NAXIS1").parse().unwrap();
    let n2: usize = value(&cards, "NAXIS2").parse().unwrap();
    let data = bytes[start..start + 8 * n1 * n2]
        .chunks_exact(8)
        .map(|c| f64::from_be_bytes(c.try_into().unwrap()))
        .collect();
    assert!(bytes[start + 8 * n1 * n2..].iter().all(|&c| c == 0));
    (cards, data)
}

/// The value field of a card (before any comment), trimmed, quotes kept.
fn value(cards: &[String], key: &str) -> String {
    let card = cards
        .iter()
        .find(|c| c[..8].trim_end() == key)
        .unwrap_or_else(|| panic!("no {key} card"));
    assert_eq!(&card[8..10], "= ");
    let field = &card[10..];
    let field = if field.trim_start().starts_with('\'') {
        let open = field.find('\'').unwrap();
        let close = field[open + 1..].replace("''", "  ").find('\'').unwrap() + open + 1;
        &field[..=close]
    } else {
        field.split('/').next().unwrap()
    };
    field.trim().to_string()
}

fn real(cards: &[String], key: &str) -> f64 {
    value(cards, key).parse().unwrap()
}

#[test]
fn fits_files_are_blocks_of_cards_with_rows_from_the_bottom() {
    let image = pattern(5, 10.0);
    let mut bytes = Vec::new();
    write_fits(&image, &FitsHeader::default(), &mut bytes).unwrap();
    let (cards, data) = read_fits(&bytes);
    // The mandatory keywords in order, fixed format (Pence et al. 2010, Sect. 4.4.1).
    let keys: Vec<&str> = cards.iter().map(|c| c[..8].trim_end()).collect();
    assert_eq!(keys[..5], ["SIMPLE", "BITPIX", "NAXIS", "NAXIS1", "NAXIS2"]);
    assert_eq!(&cards[0][..30], "SIMPLE  =                    T");
    assert_eq!(&cards[1][..30], "BITPIX  =                  -64");
    assert_eq!(value(&cards, "NAXIS"), "2");
    // The first FITS row is the bottom of the image (row 4, smallest β).
    for (k, v) in data.iter().enumerate() {
        let (fits_row, column) = (k / 5, k % 5);
        assert_eq!(*v, image.at(4 - fits_row, column));
    }
    assert_eq!(data[0], 400.125);
    // Screen coordinates in M: pixel 2 M, centre at pixel 3 (1-based).
    assert_eq!(real(&cards, "PIXSIZEM"), 2.0);
    assert_eq!(real(&cards, "FIELDM"), 10.0);
    assert_eq!(value(&cards, "CTYPE1"), "'ALPHA   '");
    assert_eq!(value(&cards, "CTYPE2"), "'BETA    '");
    assert_eq!(real(&cards, "CRPIX1"), 3.0);
    assert_eq!(real(&cards, "CDELT1"), 2.0);
    assert_eq!(real(&cards, "CDELT2"), 2.0);
    // World α of FITS column p: CRVAL1 + CDELT1 (p − CRPIX1) = α_(p−1).
    for p in 1..=5 {
        assert_eq!(2.0 * (p as f64 - 3.0), image.alpha(p - 1));
    }
    assert_eq!(value(&cards, "BUNIT"), "'arbitrary'");
    assert!(cards.iter().all(|c| c.len() == 80));
}

#[test]
fn fits_files_with_theta_g_carry_celestial_coordinates_and_the_caller_s_cards() {
    let image = pattern(6, 12.0);
    let header = FitsHeader {
        theta_g_uas: Some(3.7),
        bunit: "Jy/pixel".into(),
        cards: vec![
            FitsCard {
                key: "METRIC".into(),
                value: FitsValue::Text("kerr".into()),
                comment: "metric name".into(),
            },
            FitsCard {
                key: "SPIN".into(),
                value: FitsValue::Real(0.9),
                comment: "a".into(),
            },
            FitsCard {
                key: "ORDERS".into(),
                value: FitsValue::Integer(3),
                comment: String::new(),
            },
            FitsCard {
                key: "DISK".into(),
                value: FitsValue::Logical(false),
                comment: String::new(),
            },
        ],
    };
    let mut bytes = Vec::new();
    write_fits(&image, &header, &mut bytes).unwrap();
    let (cards, data) = read_fits(&bytes);
    assert_eq!(data[0], image.at(5, 0));
    assert_eq!(value(&cards, "CTYPE1"), "'RA---SIN'");
    assert_eq!(value(&cards, "CTYPE2"), "'DEC--SIN'");
    assert_eq!(value(&cards, "CUNIT1"), "'deg     '");
    let pixel_uas = 2.0 * 3.7;
    assert_eq!(real(&cards, "THETAG"), 3.7);
    assert!((real(&cards, "PIXUAS") - pixel_uas).abs() < 1e-14);
    // 1° = 3.6e9 μas; RA grows to the left, so CDELT1 < 0.
    assert!((real(&cards, "CDELT1") + pixel_uas / 3.6e9).abs() < 1e-24);
    assert!((real(&cards, "CDELT2") - pixel_uas / 3.6e9).abs() < 1e-24);
    assert_eq!(real(&cards, "CRPIX1"), 3.5);
    assert_eq!(real(&cards, "CRPIX2"), 3.5);
    assert_eq!(real(&cards, "CRVAL1"), 0.0);
    assert!(cards
        .iter()
        .any(|c| c.starts_with("COMMENT") && c.contains("north")));
    assert_eq!(value(&cards, "BUNIT"), "'Jy/pixel'");
    assert_eq!(value(&cards, "METRIC"), "'kerr    '");
    assert_eq!(real(&cards, "SPIN"), 0.9);
    assert_eq!(value(&cards, "ORDERS"), "3");
    assert_eq!(value(&cards, "DISK"), "F");
    // The caller's cards come after BUNIT and before END.
    let position = |key: &str| cards.iter().position(|c| c[..8].trim_end() == key).unwrap();
    assert!(position("BUNIT") < position("METRIC") && position("DISK") < position("END"));
}

#[test]
fn bad_fits_requests_are_refused() {
    let image = pattern(4, 4.0);
    let card = |key: &str, value: FitsValue| FitsHeader {
        cards: vec![FitsCard {
            key: key.into(),
            value,
            comment: String::new(),
        }],
        ..FitsHeader::default()
    };
    for header in [
        card("NAXIS3", FitsValue::Integer(1)),
        card("CDELT1", FitsValue::Real(1.0)),
        card("END", FitsValue::Logical(true)),
        card("lower", FitsValue::Integer(1)),
        card("X", FitsValue::Real(f64::INFINITY)),
        FitsHeader {
            theta_g_uas: Some(0.0),
            ..FitsHeader::default()
        },
    ] {
        let result = write_fits(&image, &header, Vec::new());
        assert!(
            matches!(result, Err(ImageError::BadRequest(_))),
            "{header:?}"
        );
    }
}

#[test]
fn png_files_decode_to_the_colour_of_each_value() {
    let image = pattern(9, 9.0);
    let mut bytes = Vec::new();
    write_png(&image, 1.0, &mut bytes).unwrap();
    let decoder = png::Decoder::new(std::io::Cursor::new(&bytes));
    let mut reader = decoder.read_info().unwrap();
    let mut rgb = vec![0; reader.output_buffer_size().unwrap()];
    let info = reader.next_frame(&mut rgb).unwrap();
    assert_eq!((info.width, info.height), (9, 9));
    assert_eq!(info.color_type, png::ColorType::Rgb);
    assert_eq!(info.bit_depth, png::BitDepth::Eight);
    let top = 800.0 + 8.0 + 0.125;
    let pixel = |rgb: &[u8], i: usize, j: usize| [0, 1, 2].map(|c| rgb[3 * (9 * i + j) + c]);
    // Row 0 on top: the top-left pixel holds v = 0.125, the bottom-right the maximum.
    assert_eq!(pixel(&rgb, 0, 0), fathom(0.125 / top));
    assert_eq!(pixel(&rgb, 8, 8), fathom(1.0));
    assert_eq!(pixel(&rgb, 4, 2), fathom(402.125 / top));
    // γ: t = (v/v_max)^γ.
    let mut bytes = Vec::new();
    write_png(&image, 0.5, &mut bytes).unwrap();
    let mut reader = png::Decoder::new(std::io::Cursor::new(&bytes))
        .read_info()
        .unwrap();
    reader.next_frame(&mut rgb).unwrap();
    assert_eq!(pixel(&rgb, 4, 2), fathom((402.125 / top).sqrt()));
}

#[test]
fn png_requests_are_checked() {
    let image = pattern(3, 3.0);
    for gamma in [0.0, -1.0, f64::NAN] {
        assert!(matches!(
            write_png(&image, gamma, Vec::new()),
            Err(ImageError::BadRequest(_))
        ));
    }
    let mut nan = image.clone();
    nan.data[4] = f64::NAN;
    assert!(matches!(
        write_png(&nan, 1.0, Vec::new()),
        Err(ImageError::BadRequest(_))
    ));
    // A blank image is all the darkest colour.
    let mut bytes = Vec::new();
    write_png(&Image::zeros(3, 3.0).unwrap(), 1.0, &mut bytes).unwrap();
    let mut reader = png::Decoder::new(std::io::Cursor::new(&bytes))
        .read_info()
        .unwrap();
    let mut rgb = vec![0; reader.output_buffer_size().unwrap()];
    reader.next_frame(&mut rgb).unwrap();
    assert!(rgb.chunks_exact(3).all(|c| c == fathom(0.0)));
}

/// A writer that always fails, like a full disk.
struct Full;

impl std::io::Write for Full {
    fn write(&mut self, _: &[u8]) -> std::io::Result<usize> {
        Err(std::io::Error::other("no space left"))
    }
    fn flush(&mut self) -> std::io::Result<()> {
        Ok(())
    }
}

#[test]
fn write_failures_are_errors() {
    let image = pattern(4, 4.0);
    for result in [
        write_npy(&image, Full),
        write_fits(&image, &FitsHeader::default(), Full),
        write_png(&image, 1.0, Full),
    ] {
        let Err(ImageError::Write(message)) = result else {
            panic!("a failed write passed: {result:?}");
        };
        assert!(message.contains("no space left"), "{message}");
    }
}

/// Writes the sample files that `tests/python/check_image_files.py` reads (numpy, astropy):
/// into the folder named by `UMBRAL_IMAGE_FILES_DIR` when set, into a scratch folder
/// otherwise.
#[test]
fn sample_files_for_outside_readers() {
    let scratch = tempfile::tempdir().unwrap();
    let folder = std::env::var_os("UMBRAL_IMAGE_FILES_DIR")
        .map(std::path::PathBuf::from)
        .unwrap_or_else(|| scratch.path().to_path_buf());
    // An invented scene: a lopsided ring off the centre, 48 pixels over 24 M, θ_g = 3.7 μas.
    let image = ring(48, 24.0, (1.0, 0.5), 6.0, 0.8, 0.6, PI / 3.0);
    let create = |name: &str| std::fs::File::create(folder.join(name)).unwrap();
    write_npy(&image, create("sample.npy")).unwrap();
    write_fits(&image, &FitsHeader::default(), create("sample_screen.fits")).unwrap();
    let sky = FitsHeader {
        theta_g_uas: Some(3.7),
        ..FitsHeader::default()
    };
    write_fits(&image, &sky, create("sample_sky.fits")).unwrap();
    write_png(&image, 1.0, create("sample.png")).unwrap();
    for name in [
        "sample.npy",
        "sample_screen.fits",
        "sample_sky.fits",
        "sample.png",
    ] {
        assert!(std::fs::metadata(folder.join(name)).unwrap().len() > 0);
    }
}
