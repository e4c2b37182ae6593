//! The measurement chain: file parsing, the ring propagation and the derived r_sh/M intervals.

use umbral::measurement::ring::{AngularScale, RingChain};
use umbral::measurement::{Gaussian, Measurement, MeasurementError};

fn g(value: f64, sigma: f64) -> Gaussian {
    Gaussian { value, sigma }
}

/// θ_g in µas written out from the constants' definitions: GM☉ = 1.3271244e20 m³ s⁻²
/// (IAU 2015 Resolution B3), c = 299 792 458 m/s (SI, exact), 1 au = 149 597 870 700 m
/// (IAU 2012 Resolution B2), 1 pc = 648 000/π au (IAU 2015 Resolution B2).
fn theta_g_reference(mass_msun: f64, distance_mpc: f64) -> f64 {
    let c = 299_792_458.0f64;
    let metres = mass_msun * 1.327_124_4e20 / (c * c);
    let parsec = 149_597_870_700.0 * 648_000.0 / std::f64::consts::PI;
    let radians = metres / (distance_mpc * 1e6 * parsec);
    radians * 180.0 / std::f64::consts::PI * 3600.0 * 1e6
}

#[test]
fn ring_chain_with_zero_errors_collapses_to_the_exact_value() {
    let chain = RingChain {
        diameter_uas: g(30.0, 0.0),
        ring_to_shadow: g(1.1, 0.0),
        scale: AngularScale::MassDistance {
            mass_msun: g(5.4e9, 0.0),
            distance_mpc: g(18.3, 0.0),
        },
        kappa_origin: umbral::measurement::calibration::KappaOrigin::Given,
    };
    let p = chain.propagate(&[0.68, 0.95]).unwrap();
    let exact = 30.0 / (1.1 * 2.0 * theta_g_reference(5.4e9, 18.3));
    assert!((p.central_value / exact - 1.0).abs() < 1e-13);
    for iv in p.monte_carlo.iter().chain(&p.linear) {
        assert_eq!(iv.low, p.central_value);
        assert_eq!(iv.high, p.central_value);
    }
}

/// For small relative errors r = d D/(2 κ GM/c²) is nearly linear in each input, so the Monte
/// Carlo interval must match first-order propagation (the delta method; e.g. Bevington &
/// Robinson 2003, "Data Reduction and Error Analysis", ch. 3) to 1e-3 relative.
#[test]
fn monte_carlo_matches_linear_propagation_for_small_errors() {
    for scale in [
        AngularScale::MassDistance {
            mass_msun: g(5.4e9, 5.4e9 * 0.004),
            distance_mpc: g(18.3, 18.3 * 0.003),
        },
        AngularScale::ThetaG {
            theta_g_uas: g(3.6, 0.36 * 0.01),
        },
    ] {
        let chain = RingChain {
            diameter_uas: g(30.0, 0.15),
            ring_to_shadow: g(1.1, 0.0022),
            scale,
            kappa_origin: umbral::measurement::calibration::KappaOrigin::Given,
        };
        let p = chain.propagate(&[0.68, 0.95]).unwrap();
        for (mc, lin) in p.monte_carlo.iter().zip(&p.linear) {
            assert!((mc.low / lin.low - 1.0).abs() < 1e-3, "{mc:?} vs {lin:?}");
            assert!((mc.high / lin.high - 1.0).abs() < 1e-3, "{mc:?} vs {lin:?}");
            // And the widths agree to a few percent (Monte Carlo noise ~ 1.5/sqrt(N)).
            let (wm, wl) = (mc.high - mc.low, lin.high - lin.low);
            assert!((wm / wl - 1.0).abs() < 0.03, "{wm} vs {wl}");
        }
        // Deterministic: the same numbers on every run.
        assert_eq!(chain.propagate(&[0.68, 0.95]).unwrap(), p);
    }
}

#[test]
fn too_wide_gaussians_are_refused() {
    let chain = RingChain {
        diameter_uas: g(30.0, 30.0),
        ring_to_shadow: g(1.1, 0.05),
        scale: AngularScale::ThetaG {
            theta_g_uas: g(3.6, 0.1),
        },
        kappa_origin: umbral::measurement::calibration::KappaOrigin::Given,
    };
    assert!(matches!(
        chain.propagate(&[0.68]),
        Err(MeasurementError::Invalid(_))
    ));
}

/// Two-sided Gaussian multipliers: z(0.68) = 0.994457883..., z(0.95) = 1.959963985
/// (Abramowitz & Stegun 1964, table 26.1 / 26.2).
#[test]
fn fractional_deviation_intervals() {
    let m = Measurement::from_toml_str(
        "label = \"x\"\n[size.fractional_deviation]\nvalue = -0.03\nminus = 0.10\nplus = 0.09\n",
    )
    .unwrap();
    let d = m.derive(None).unwrap();
    let s = 3.0 * 3f64.sqrt();
    let z68 = 0.994_457_883_209_753_1;
    let z95 = 1.959_963_984_540_054;
    let iv = &d.intervals;
    assert!((iv[0].low - s * (1.0 - 0.03 - z68 * 0.10)).abs() < 1e-12);
    assert!((iv[0].high - s * (1.0 - 0.03 + z68 * 0.09)).abs() < 1e-12);
    assert!((iv[1].low - s * (1.0 - 0.03 - z95 * 0.10)).abs() < 1e-12);
    assert!((iv[1].high - s * (1.0 - 0.03 + z95 * 0.09)).abs() < 1e-12);
    assert!(d.assumptions.iter().any(|a| a.contains("z plus")));
    let custom = m.derive(Some(&[0.9])).unwrap();
    assert_eq!(custom.intervals.len(), 1);
}

#[test]
fn shadow_radius_levels_must_exist_in_the_file() {
    let m = Measurement::from_toml_str(
        "[size.shadow_radius]\nintervals = [ { confidence = 0.68, low = 4.6, high = 5.2 } ]\n",
    )
    .unwrap();
    assert_eq!(m.derive(None).unwrap().intervals[0].low, 4.6);
    assert!(m.derive(Some(&[0.95])).is_err());
}

#[test]
fn bad_files_are_refused_with_a_reason() {
    let cases = [
        // unknown key
        ("[size.shadow_radius]\nintervals = []\nextra = 1\n", "unknown field"),
        // two size forms
        (
            "[size.fractional_deviation]\nvalue = 0.0\nminus = 0.1\nplus = 0.1\n\
             [size.shadow_radius]\nintervals = [ { confidence = 0.68, low = 4.6, high = 5.2 } ]\n",
            "exactly one size form",
        ),
        // no size form
        ("label = \"x\"\n[size]\n", "exactly one size form"),
        // NaN
        ("[size.fractional_deviation]\nvalue = nan\nminus = 0.1\nplus = 0.1\n", "finite"),
        // low >= high
        (
            "[size.shadow_radius]\nintervals = [ { confidence = 0.68, low = 5.2, high = 4.6 } ]\n",
            "low < high",
        ),
        // mass without distance
        (
            "[size.ring]\ndiameter_uas = { value = 30.0, sigma = 2.0 }\n\
             ring_to_shadow = { value = 1.1, sigma = 0.05 }\nmass_msun = { value = 5e9, sigma = 1e8 }\n",
            "distance_mpc",
        ),
        // negative sigma
        (
            "[size.ring]\ndiameter_uas = { value = 30.0, sigma = -2.0 }\n\
             ring_to_shadow = { value = 1.1, sigma = 0.05 }\ntheta_g_uas = { value = 3.6, sigma = 0.1 }\n",
            "sigma",
        ),
        ("[size.shadow_radius]\nintervals = [ { confidence = 1.5, low = 4.6, high = 5.2 } ]\n", "between 0 and 1"),
        ("[circularity]\nmax = 0.1\n", "size"),
    ];
    for (text, needle) in cases {
        let e = Measurement::from_toml_str(text)
            .err()
            .unwrap_or_else(|| panic!("accepted {text}"));
        assert!(e.to_string().contains(needle), "'{e}' lacks '{needle}'");
    }
    let missing = Measurement::from_path(std::path::Path::new("no/such/measurement.toml"));
    assert!(matches!(missing, Err(MeasurementError::Io { .. })));
}

#[test]
fn example_measurement_files_parse() {
    for f in [
        "measurement_radius.toml",
        "measurement_ring.toml",
        "measurement_deviation.toml",
    ] {
        let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("examples")
            .join(f);
        let m = Measurement::from_path(&path).unwrap();
        assert_eq!(m.derive(None).unwrap().intervals.len(), 2, "{f}");
    }
}

#[test]
fn derived_intervals_must_be_finite_and_nested() {
    // Intervals that do not nest (the 0.95 one inside the 0.68 one) are refused.
    let text = r#"
label = "non-nested"
[size.shadow_radius]
intervals = [ { confidence = 0.68, low = 4.6, high = 5.2 }, { confidence = 0.95, low = 4.8, high = 5.0 } ]
"#;
    let err = Measurement::from_toml_str(text)
        .unwrap()
        .derive(None)
        .unwrap_err();
    assert!(err.to_string().contains("does not contain"), "{err}");
    // A ring whose numbers overflow gives no interval, not [inf, inf].
    let text = r#"
label = "overflow"
[size.ring]
diameter_uas = { value = 1e308, sigma = 1.0 }
ring_to_shadow = { value = 1e-308, sigma = 0.0 }
theta_g_uas = { value = 1.0, sigma = 0.0 }
"#;
    let err = Measurement::from_toml_str(text)
        .unwrap()
        .derive(None)
        .unwrap_err();
    assert!(
        err.to_string().contains("not a finite positive interval"),
        "{err}"
    );
}

/// The value-with-errors forms: r_sh/M with `sigma` or `minus`/`plus` gives the intervals
/// [value − z minus, value + z plus] (z the two-sided Gaussian multiplier, z(0.68) computed
/// here by bisection of erf from the standard library's definition: Abramowitz & Stegun 1964,
/// 7.1.1); the fractional deviation accepts `sigma`; a soft circularity limit enters bounds as
/// value + 2 sigma and says so. Mixed or incomplete forms are refused with a reason.
#[test]
fn value_with_errors_forms_and_soft_circularity() {
    let m = Measurement::from_toml_str(
        "[size.shadow_radius]\nvalue = 5.0\nminus = 0.2\nplus = 0.4\n\
         [circularity]\nvalue = 0.05\nsigma = 0.02\n",
    )
    .unwrap();
    let d = m.derive(Some(&[0.68])).unwrap();
    // z(0.68) from erf(z/√2) = 0.68 by bisection on a series for erf (A&S 7.1.5).
    let erf = |x: f64| {
        let mut term = x;
        let mut sum = x;
        for n in 1..80 {
            term *= -x * x / n as f64;
            sum += term / (2 * n + 1) as f64;
        }
        2.0 / std::f64::consts::PI.sqrt() * sum
    };
    let (mut lo, mut hi) = (0.5, 1.5);
    for _ in 0..100 {
        let mid = 0.5 * (lo + hi);
        if erf(mid / 2f64.sqrt()) < 0.68 {
            lo = mid
        } else {
            hi = mid
        }
    }
    let z = 0.5 * (lo + hi);
    assert!((d.intervals[0].low - (5.0 - 0.2 * z)).abs() < 1e-12);
    assert!((d.intervals[0].high - (5.0 + 0.4 * z)).abs() < 1e-12);
    assert_eq!(m.circularity_max, Some(0.05 + 2.0 * 0.02));
    assert!(d
        .assumptions
        .iter()
        .any(|a| a.contains("soft upper limit 0.05")));
    let f = Measurement::from_toml_str("[size.fractional_deviation]\nvalue = 0.1\nsigma = 0.05\n")
        .unwrap();
    let umbral::measurement::SizeMeasurement::FractionalDeviation(v) = f.size else {
        panic!("{:?}", f.size)
    };
    assert_eq!((v.minus, v.plus), (0.05, 0.05));
    for (text, needle) in [
        (
            "[size.shadow_radius]\nvalue = 5.0\nsigma = 0.2\nintervals = []\n",
            "not both",
        ),
        ("[size.shadow_radius]\nvalue = 5.0\n", "value with sigma"),
        (
            "[size.fractional_deviation]\nvalue = 0.1\nsigma = 0.1\nminus = 0.1\n",
            "value with sigma",
        ),
        (
            "[size.shadow_radius]\nvalue = -5.0\nsigma = 0.2\n",
            "must be positive",
        ),
        (
            "[size.shadow_radius]\nvalue = 5.0\nsigma = 0.2\n[circularity]\nvalue = 0.1\n",
            "circularity needs",
        ),
    ] {
        let e = Measurement::from_toml_str(text).unwrap_err().to_string();
        assert!(e.contains(needle), "{text}: {e}");
    }
}
