//! The tracer's internals: the distant-observer start data and the search along one screen
//! line (the public behaviour is tested in tests/shadow_raytrace.rs).

use super::*;
use crate::geodesic::IntegratorSettings;
use crate::metrics::{Kerr, Schwarzschild};

fn scan(scan_to: f64, tolerance: f64) -> LineScan {
    LineScan {
        spacing: 0.5,
        scan_to,
        tolerance,
        max_radius: 100.0,
    }
}

#[test]
fn start_radius_convergence_of_the_asymptotic_correction() {
    // Kerr a = 0.9, 60°, one radial line off the symmetry axes. With the first-order
    // correction the boundary converges like 1/D²; without it like 1/D.
    let kerr = Kerr::new(0.9).unwrap();
    let observer = Observer::distant(f64::to_radians(60.0));
    let boundary = |d: f64, corrected: bool| {
        let options = RaytraceOptions {
            start_radius: d,
            asymptotic_correction: corrected,
            integrator: IntegratorSettings {
                rtol: 1e-12,
                ..RaytraceOptions::default().integrator
            },
            ..Default::default()
        };
        let tracer = Tracer::new(&kerr, &observer, &options).unwrap();
        let line = tracer.boundary_along_line([0.0, 0.0], true, 1.0, &scan(0.0, 1e-11));
        assert!(line.failure.is_none());
        line.crossings[0]
    };
    let ds = [3e3, 1e4, 3e4, 1e5];
    let radii: Vec<f64> = ds.par_iter().map(|&d| boundary(d, true)).collect();
    let reference = radii[3];
    let errors: Vec<f64> = radii[..3].iter().map(|r| (r - reference).abs()).collect();
    println!("corrected errors at D = 3e3, 1e4, 3e4: {errors:?}");
    // 1/D²: each factor ~3.3 in D gains a factor ~10 (at least 5 allowing for noise).
    assert!(errors[0] > 5.0 * errors[1] && errors[1] > 5.0 * errors[2]);
    // The default start radius 3e4 is within 1e-8 M of D = 1e5 (and D = 1e5 itself is
    // within ~1e-10 by the same scaling).
    assert!(errors[2] < 1e-8);
    assert_eq!(RaytraceOptions::default().start_radius, 3e4);
    let uncorrected = (boundary(3e4, false) - reference).abs();
    println!("uncorrected error at D = 3e4: {uncorrected:e}");
    assert!(uncorrected > 1e-6 && uncorrected > 100.0 * errors[2]);
}

#[test]
fn a_line_crossing_the_boundary_twice_reports_both_crossings() {
    // A screen line that misses the origin: from (−10, 2) along +α it enters and leaves the
    // Schwarzschild circle of radius 3√3 at α = ∓√(27 − 4) (Synge 1966, MNRAS 131, 463).
    let observer = Observer::distant(f64::to_radians(90.0));
    let tracer = Tracer::new(&Schwarzschild, &observer, &RaytraceOptions::default()).unwrap();
    assert_eq!(tracer.trace(-10.0, 2.0).fate, RayFate::Escaped);
    let line = tracer.boundary_along_line([-10.0, 2.0], false, 0.0, &scan(20.0, 1e-9));
    assert!(line.failure.is_none());
    let half_chord = 23f64.sqrt();
    assert_eq!(line.crossings.len(), 2, "{:?}", line.crossings);
    assert!((line.crossings[0] - (10.0 - half_chord)).abs() < 1e-7);
    assert!((line.crossings[1] - (10.0 + half_chord)).abs() < 1e-7);
}

#[test]
fn a_seeded_line_finds_the_crossing_near_its_guess_and_falls_back_to_the_scan_far_from_it() {
    // Schwarzschild seen from anywhere: the boundary is the circle b_c = 3√3 about the screen
    // centre (Synge 1966, MNRAS 131, 463).
    let observer = Observer::distant(f64::to_radians(60.0));
    let tracer = Tracer::new(&Schwarzschild, &observer, &RaytraceOptions::default()).unwrap();
    let b_c = 27f64.sqrt();
    let line = |guess: f64, half_width: f64| {
        let seed = seeding::Seed {
            guess,
            half_width,
            error: 0.5 * half_width,
            law: None,
        };
        tracer.boundary_near([0.0, 0.0], 0.7, seed, &scan(0.0, 1e-9))
    };
    // A guess 1e-3 M off with a bracket of 1e-4 M: widened fourfold twice, then refined.
    let near = line(b_c + 1e-3, 1e-4);
    assert!(near.failure.is_none() && near.seeded, "{near:?}");
    assert_eq!(near.crossings.len(), 1);
    assert!(
        (near.crossings[0] - b_c).abs() < 2e-9,
        "{:?}",
        near.crossings
    );
    // A guess 1 M off with a bracket of 1e-4 M: three fourfold widenings reach 6.4e-3 M, not
    // the crossing; the line is scanned in full, and the rays of the attempt are counted.
    let far = line(b_c - 1.0, 1e-4);
    assert!(far.failure.is_none() && !far.seeded, "{far:?}");
    assert!((far.crossings[0] - b_c).abs() < 2e-9, "{:?}", far.crossings);
    let scanned = tracer.boundary_along_line([0.0, 0.0], true, 0.7, &scan(0.0, 1e-9));
    assert_eq!(far.crossings, scanned.crossings);
    assert_eq!(far.rays, scanned.rays + 5);
}

#[test]
fn seeded_and_fully_scanned_curves_agree_within_the_tolerance() {
    // Kerr a = 0.9 at 60° (a separable metric: the β mirror is used), and Johannsen–Psaltis
    // (a = 0.5, ε₃ = 0.5), which is not separable, so every angle from 0 to 2π is traced.
    let jp = crate::metrics::JohannsenPsaltis::new(0.5, 0.5).unwrap();
    let kerr = Kerr::new(0.9).unwrap();
    let metrics: [&dyn Spacetime; 2] = [&kerr, &jp];
    let observer = Observer::distant(f64::to_radians(60.0));
    let settings = ShadowSettings {
        points: 32,
        tolerance: 1e-8,
        ..Default::default()
    };
    for metric in metrics {
        let curve = |anchor_every: usize| {
            let options = RaytraceOptions {
                anchor_every,
                ..Default::default()
            };
            let report = trace_curve(metric, &observer, &settings, &options).unwrap();
            let rays = report.diagnostics.rays_traced;
            let result = report.into_result().unwrap();
            let checks = result.diagnostics.raytrace.clone().unwrap();
            assert!(checks.tolerance_met, "{checks:?}");
            (result.curve.unwrap(), checks.seeded_lines, rays)
        };
        let (full, none_seeded, full_rays) = curve(1);
        let (seeded, some_seeded, seeded_rays) = curve(4);
        assert_eq!(none_seeded, 0);
        // 8 anchors of 32 angles; the other 24 seeded.
        assert_eq!(some_seeded, 24);
        assert!(
            seeded_rays < full_rays,
            "{seeded_rays} rays against {full_rays}"
        );
        assert_eq!(full.origin, seeded.origin);
        for (a, b) in full.radii.iter().zip(&seeded.radii) {
            // Each is within 1e-8 M of the boundary (the re-traced check above).
            assert!((a - b).abs() < 2e-8, "{a} against {b}");
        }
    }
}

#[test]
fn the_winding_of_a_ray_ending_at_its_turning_point_is_the_angle_swept_to_it() {
    // Schwarzschild rays of impact parameter b from the start radius D = 3e4 to their radial
    // turning point sweep phi(b; D) = int du / sqrt(1/b^2 - u^2 + 2u^3) (Chandrasekhar 1983,
    // The Mathematical Theory of Black Holes, ch. 3), computed with mpmath by
    // tests/generate_turning_windings.py. The step that passes the turning point counts only
    // up to it, so the winding does not depend on where the steps fall: the whole step would
    // add up to a step's sweep. The ray of b = 80 turns beyond the far radius (50 M), inside
    // the far chart.
    let table: serde_json::Value =
        serde_json::from_str(include_str!("../../../tests/data/turning_windings.json")).unwrap();
    assert_eq!(
        table["start_radius"],
        RaytraceOptions::default().start_radius
    );
    let observer = Observer::distant(1.0);
    let tracer = Tracer::new(&Schwarzschild, &observer, &RaytraceOptions::default()).unwrap();
    for case in table["cases"].as_array().unwrap() {
        let b = case["impact_parameter"].as_f64().unwrap();
        let reference = case["swept_angle"].as_f64().unwrap();
        for rtol in [1e-7, 1e-10] {
            let out = tracer.trace_with(b, 0.0, rtol, true);
            assert!(out.escaped_at_turning_point, "b = {b}: {out:?}");
            // Measured: at most 7e-4 rad at rtol 1e-7 and 5e-5 rad at 1e-10 (the linear
            // interpolation within the last step); counting that whole step gave up to 6e-2.
            let error = (out.winding - reference).abs();
            assert!(error < 2e-3, "b = {b}, rtol {rtol:e}: error {error:e} rad");
        }
    }
}

#[test]
fn with_the_neighbours_slope_two_rays_on_one_side_place_the_crossing() {
    // Windings on the law w = c − k ln|ρ − ρ_c| (Bozza 2002, Phys. Rev. D 66, 103001: the
    // deflection diverges logarithmically at the critical impact parameter), two rays on each
    // side. With the slopes given, the fit recovers ρ_c; without them (a side of two rays fits
    // any ρ_c) there is no fit.
    let rho_c = 5.0 + 3.3e-6;
    let (k, c) = ([1.0, 0.5], [3.7, 2.3]);
    let ray = |rho: f64, side_a: bool| {
        let s = usize::from(!side_a);
        (rho, c[s] - k[s] * (rho - rho_c).abs().ln(), side_a)
    };
    let probed = vec![
        ray(5.0 - 7e-4, true),
        ray(5.0, true),
        ray(5.0 + 7e-4, false),
        ray(5.0 + 1e-4, false),
    ];
    let bracket = Bracket {
        a: 5.0,
        wa: probed[1].1,
        b: 5.0 + 1e-4,
        wb: probed[3].1,
    };
    assert_eq!(fitted_crossing(&probed, &bracket, 0.25, None), None);
    let fitted = fitted_crossing(&probed, &bracket, 0.25, Some(k)).unwrap();
    // To the golden-section search's resolution, about 1e-3 of the distance to the nearer end.
    assert!(
        (fitted - rho_c).abs() < 1e-3 * (rho_c - bracket.a),
        "{fitted} vs {rho_c}"
    );
}

#[test]
fn rays_aimed_at_a_precise_prediction_end_the_refinement_and_a_wrong_aim_keeps_the_guarantee() {
    // A synthetic line: captured below ρ_c, windings on the law w = c − k ln|ρ − ρ_c|
    // (Bozza 2002, Phys. Rev. D 66, 103001), from a first bracket ±1e-5 about the crossing;
    // `reversed` puts the bracket's `a` end (the side of the first aimed ray) above ρ_c.
    let rho_c = 5.0 + 3.3e-10;
    let width = 1e-8;
    // (A ray that lands on ρ_c itself, as the law's guidance may place one, escapes.)
    let winding = |rho: f64| 3.0 - (rho - rho_c).abs().max(1e-300).ln();
    let refine = |aim: Option<(f64, f64)>, reversed: bool| {
        let (a, b) = if reversed {
            (rho_c + 1e-5, rho_c - 1e-5)
        } else {
            (rho_c - 1e-5, rho_c + 1e-5)
        };
        let start = Bracket {
            a,
            wa: winding(a),
            b,
            wb: winding(b),
        };
        let mut probed = Vec::new();
        let end = guided_refine(start, width, None, aim, &mut probed, |rho| {
            let captured = rho < rho_c;
            Ok::<_, ()>((captured != reversed, winding(rho)))
        })
        .unwrap();
        // A change of fate within the width, and every ray inside the first bracket.
        let (lo, hi) = (end.a.min(end.b), end.a.max(end.b));
        assert!(end.width() <= width && lo < rho_c && rho_c <= hi, "{end:?}");
        assert!(probed.iter().all(|p| p.0 > a.min(b) && p.0 < a.max(b)));
        probed
    };
    for reversed in [false, true] {
        let dir = if reversed { -1.0 } else { 1.0 };
        // A prediction 2e-9 M off, aimed at ∓0.45 of the width: two rays, one on either side.
        let aimed = refine(Some((rho_c + dir * 2e-9, 0.45 * width)), reversed);
        assert_eq!(aimed.len(), 2, "{aimed:?}");
        assert!(aimed[0].2 && !aimed[1].2);
        // Without an aim the law's guidance takes more.
        let unaimed = refine(None, reversed);
        assert!(unaimed.len() > 2, "{unaimed:?}");
        // An aim 1e-7 M short of the crossing: the ray meant for b's side falls on a's too,
        // and the refinement still ends with the crossing in a bracket of the width.
        let short = refine(Some((rho_c - dir * 1e-7, 0.45 * width)), reversed);
        assert!(short[0].2 && short[1].2 && short.len() > 2, "{short:?}");
        // 1e-7 M beyond it: the first ray is already on b's side, and no second is aimed
        // (the next ray is not 0.9 width from it).
        let beyond = refine(Some((rho_c + dir * 1e-7, 0.45 * width)), reversed);
        assert!(!beyond[0].2 && beyond.len() > 2, "{beyond:?}");
        assert!((beyond[1].0 - beyond[0].0).abs() > width, "{beyond:?}");
        // An aim whose first ray would fall outside the bracket: nothing is aimed.
        let outside = refine(Some((rho_c - dir * 1e-5, 0.45 * width)), reversed);
        assert!(outside.len() > 2, "{outside:?}");
    }
}

#[test]
fn the_winding_check_takes_the_refinements_rays_and_finds_schwarzschilds_growth() {
    // Schwarzschild: beside the critical impact parameter 3√3 the deflection diverges like
    // −ln(b/b_c − 1) (Darwin 1959, Proc. R. Soc. A 249, 180), so a captured ray's winding grows
    // by 1 rad per e-fold of distance; an escaping ray that ends at its turning point sweeps
    // half of its orbit, 1/2 rad per e-fold (derived here: the orbit is symmetric about its
    // turning point).
    let observer = Observer::distant(f64::to_radians(60.0));
    let tracer = Tracer::new(&Schwarzschild, &observer, &RaytraceOptions::default()).unwrap();
    let validator = tracer.validator().unwrap();
    let mut line = tracer.boundary_along_line([0.0, 0.0], true, 0.7, &scan(0.0, 5e-9));
    assert_eq!(line.crossings.len(), 1);
    let nearby = line.nearby.len();
    assert!(nearby > 5, "{nearby} refinement rays");
    let (rays, steps) = (line.rays, line.steps);
    tracer.check_crossing(&validator, [0.0, 0.0], &mut line, 1e-8);
    let check = line.check.as_ref().unwrap();
    assert_eq!(check.photon_orbit, Some(true), "{check:?}");
    // The validation pair always; without the refinement's rays the four far and mid rays
    // would be new as well.
    let traced = line.rays - rays;
    assert!(
        (2..6).contains(&traced),
        "{traced} rays traced for the check"
    );
    assert!(line.steps > steps);
    // From the far to the mid rays to 0.01 rad per e-fold. The near rays (1e-8 M) are the
    // validation pair, and their distance from the true crossing is uncertain by about
    // ε = 2e-9 M: the crossing's placement (half the bisection's last bracket plus the strict
    // rays' noise of ~1e-9 M) and the pair's own offset. A winding w = c − k ln d then moves by
    // up to k ε/1e-8, so the growth over the ln 1000 e-folds from the mid rays is good to
    // k ε/(1e-8 · ln 1000) ≈ 0.03 k: k = 1 on the captured side, 1/2 on the escaping side
    // (the mid rays' own shift, k ε/1e-5, is negligible).
    let limits = [0.01, 0.03];
    for (g, limit) in check.growth_inside.iter().zip(limits) {
        assert!((g - 1.0).abs() < limit, "captured side: {check:?}");
    }
    let limits = [0.01, 0.015];
    for (g, limit) in check.growth_outside.iter().zip(limits) {
        assert!((g - 0.5).abs() < limit, "escaping side: {check:?}");
    }
}

#[test]
fn a_far_step_rotates_by_the_integral_of_the_asymptotic_frame_dragging() {
    // ω = 2J/r³ far out (Bardeen, Press & Teukolsky 1972), and t linear in r along the step:
    // ∫ω dt = (Δt/Δr) J (r_old⁻² − r_new⁻²) exactly; the trapezoid over a far step from
    // 3e4 M to 30 M is off by orders of magnitude, which is why far steps use the power law.
    let j = 0.45;
    let omega = |r: f64| 2.0 * j / r.powi(3);
    let mut old = [0.0f64; 8];
    let mut new = [0.0f64; 8];
    (old[0], old[1], old[5]) = (100.0, 3.0e4, 1.0);
    (new[0], new[1], new[5]) = (100.0 + 1.02 * (3.0e4 - 30.0), 30.0, 1.0);
    let exact = -1.02 * j * (old[1].powi(-2) - new[1].powi(-2));
    let far = frame_rotation(&old, &new, omega(old[1]), omega(new[1]), true);
    assert!((far / exact - 1.0).abs() < 1e-12, "{far} against {exact}");
    let trapezoid = frame_rotation(&old, &new, omega(old[1]), omega(new[1]), false);
    assert!(
        (trapezoid / exact).abs() > 100.0,
        "{trapezoid} against {exact}"
    );
    // ω = 0 (no rotation) gives none.
    assert_eq!(frame_rotation(&old, &new, 0.0, 0.0, true), 0.0);
    // ω ∝ 1/r (k = 1): ∫ω dt = (Δt/Δr) C ln(r_new/r_old), the limit of the power law.
    let c = 1e-3;
    let exact = -1.02 * c * (new[1] / old[1]).ln();
    let far = frame_rotation(&old, &new, c / old[1], c / new[1], true);
    assert!((far / exact - 1.0).abs() < 1e-12, "{far} against {exact}");
    // A far step that passes a radial turning point (p_r changes sign) keeps the trapezoid.
    (old[5], new[5]) = (1.0, -1.0);
    let turning = frame_rotation(&old, &new, omega(old[1]), omega(new[1]), true);
    assert_eq!(turning, trapezoid);
}

#[test]
fn a_far_radius_below_ten_m_is_refused_and_infinity_turns_the_far_chart_off() {
    let observer = Observer::distant(1.0);
    for (far_radius, ok) in [
        (5.0, false),
        (f64::NAN, false),
        (10.0, true),
        (f64::INFINITY, true),
    ] {
        let options = RaytraceOptions {
            far_radius,
            ..Default::default()
        };
        let built = Tracer::new(&Schwarzschild, &observer, &options);
        assert_eq!(built.is_ok(), ok, "far radius {far_radius}");
        if let Err(e) = built {
            assert!(e.to_string().contains("far radius"), "{e}");
        }
    }
    // Off: a ray takes the affine chart throughout, and classifies as with it on.
    let off = RaytraceOptions {
        far_radius: f64::INFINITY,
        ..Default::default()
    };
    let tracer_off = Tracer::new(&Schwarzschild, &observer, &off).unwrap();
    let tracer_on = Tracer::new(&Schwarzschild, &observer, &RaytraceOptions::default()).unwrap();
    for b in [5.0, 5.4] {
        let (a, c) = (tracer_off.trace(b, 0.0), tracer_on.trace(b, 0.0));
        assert_eq!(a.fate, c.fate, "b = {b}");
        assert!(
            c.steps < a.steps,
            "b = {b}: {} against {} steps",
            c.steps,
            a.steps
        );
    }
}

/// Johannsen–Psaltis (a = 0.79, ε₃ = 0.9) at 60°: its photon orbits on the retrograde side
/// lie within the capture margin of the horizon, so the curve is refused (the boundary there
/// is the capture surface's outline). Traced for the curve alone, the lines stop after the
/// level where that shows, with fewer rays, the same kind of error and a message that says
/// so, the same on one and on two threads; a curve that is not refused is unchanged.
#[test]
fn a_curve_certain_to_be_refused_is_not_traced_to_the_end() {
    use crate::metrics::JohannsenPsaltis;
    let jp = JohannsenPsaltis::new(0.7916666, 0.9).unwrap();
    let observer = Observer::distant(f64::to_radians(60.0));
    let settings = ShadowSettings {
        points: 32,
        ..Default::default()
    };
    let options = RaytraceOptions::default();
    let full = trace_lines(&jp, &observer, &settings, &options, false).unwrap();
    let on = |threads: usize| {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap();
        pool.install(|| trace_lines(&jp, &observer, &settings, &options, true).unwrap())
    };
    let stopped = on(2);
    assert_eq!(stopped.stopped_early, Some(32));
    assert!(stopped.lines.len() < 32, "{} lines", stopped.lines.len());
    assert!(
        stopped.diagnostics.rays_traced < full.diagnostics.rays_traced,
        "{} rays against {}",
        stopped.diagnostics.rays_traced,
        full.diagnostics.rays_traced
    );
    let message = |r: RaytraceReport| match r.into_result() {
        Err(ShadowError::NotConverged(m)) => m,
        other => panic!("expected a refusal, got {other:?}"),
    };
    // The same lines and counts on one thread as on two.
    let one = on(1);
    let counts = |r: &RaytraceReport| {
        let d = &r.diagnostics;
        let psi: Vec<f64> = r.lines.iter().map(|l| l.psi).collect();
        (psi, d.rays_traced, d.failed_rays, d.integrator_steps)
    };
    assert_eq!(counts(&one), counts(&stopped));
    let quick = message(one);
    assert_eq!(quick, message(stopped));
    assert!(quick.contains("not formed by photon orbits"), "{quick}");
    assert!(quick.contains("tracing stopped"), "{quick}");
    let whole = message(full);
    assert!(whole.contains("not formed by photon orbits"), "{whole}");
    assert!(!whole.contains("tracing stopped"), "{whole}");

    // Kerr, not refused: the same curve either way.
    let kerr = Kerr::new(0.9).unwrap();
    let a = solve_with(&kerr, &observer, &settings, &options).unwrap();
    let b = solve_curve_with(&kerr, &observer, &settings, &options).unwrap();
    assert_eq!(a.curve, b.curve);
    let work = |r: &ShadowResult| {
        let d = &r.diagnostics;
        (d.rays_traced, d.integrator_steps, d.raytrace.clone())
    };
    assert_eq!(work(&a), work(&b));
}
