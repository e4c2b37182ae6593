//! `umbral demo`: the job on the built-in invented scenario.
//!
//! The scenario is fiction: the nucleus of an invented nearby disk galaxy, "Lowmere", with a
//! made-up black-hole mass, distance and viewing angle, seen by an invented space-ground array.
//! The numbers were chosen to resemble no observed source: a mass (1.2e8 Msun) and distance
//! (2.2 Mpc) that no imaged black hole has, a ring of about 7 μas that only an array with
//! space baselines would resolve, and an inclination of 52°. No real source or data is used.

use super::figure::{symbol, write_figure_set, FigureStyle, Theme};
use super::infer::{json_report, samples_csv, verdict, write_corner_plot};
use super::interrupt;
use super::plot::{screen_curves, ScreenCurve, ScreenFigure};
use super::progress::ProgressArgs;
use super::CliError;
use clap::Args;
use serde::Serialize;
use std::path::{Path, PathBuf};
use umbral::bounds::{
    BoundRequest, BoundResult, BoundSettings, Inclination, ParameterRange, SizeMeasure,
};
use umbral::image::blur::gaussian_blur;
use umbral::image::files::write_png;
use umbral::image::models::ModelList;
use umbral::image::trace::{ImageSettings, ImageTracer};
use umbral::measurement::constants::theta_g_uas;
use umbral::measurement::{DerivedRadii, Measurement};
use umbral::metric::Classification;
use umbral::metrics::{build_metric, MetricSource};
use umbral::observables::{shadow_report, CentreChoice, ShadowReport};
use umbral::output::OutputTransaction;
use umbral::posterior::{
    InferRunError, InferSettings, Inference, InferenceRequest, ParameterSummary, PosteriorModel,
    SamplerKind,
};
use umbral::run::bound::{bound_with, BoundRunError};
use umbral::run::calibrate::{calibrate, CalibrateError, Calibration, CalibrationSettings};
use umbral::run::image::render;
use umbral::run::infer::{infer_with, InferStop};
use umbral::run::{Controls, Executor, Observe, RunError, Selection, WorkList};
use umbral::sampling::Prior;
use umbral::shadow::{Observer, ShadowSettings};
use umbral::verify::{ChecksFile, VerifyReport};

/// The scenario's measurement, shipped as examples/measurement_ring.toml.
const MEASUREMENT: &str = include_str!("../../examples/measurement_ring.toml");
/// The checks file the demo runs, shipped as examples/ci-checks.toml.
const CHECKS: &str = include_str!("../../examples/ci-checks.toml");

/// The demo's calibration: Kerr at this spin (the scenario's reference hole), images of
/// this many pixels per side, blurred to this resolution (an invented array's beam).
const DEMO_SPIN: f64 = 0.6;
const DEMO_PIXELS: usize = 96;
const DEMO_RESOLUTION_UAS: f64 = 2.0;
/// The model whose image the report shows, its files, and the PNG's gamma (a square-root
/// stretch, so that the faint lensed light shows beside the bright direct image).
const DEMO_IMAGE_MODEL: &str = "disk-horizon";
const DEMO_IMAGE: &str = "image-kerr.png";
const DEMO_IMAGE_BLURRED: &str = "image-kerr-blurred.png";
const DEMO_PNG_GAMMA: f64 = 0.5;

/// The posterior set beside the first bound: the same metric and parameter, from the same
/// measurement. The prior is uniform on the charges with a horizon, [0, 1]; the bound's
/// range [0, 1.2] casts no shadow above 1, where the likelihood is zero.
const POSTERIOR_METRIC: &str = "reissner-nordstrom";
const POSTERIOR_PARAMETER: &str = "q";
const POSTERIOR_PRIOR: &str = "uniform:0:1";
/// The ensemble sampler's steps (half burn-in), continued (doubling) up to the most steps
/// until it converges, and its seed. The ring's calibration, mass and distance make four
/// sampled parameters whose walker-mean trajectories decorrelate slowly. Measured on this
/// measurement: split R-hat was 1.0081 after 20 000 steps of 8 walkers (640 000 evaluations)
/// at this seed but 1.016 and 1.017 at seeds 2 and 3, and with 8 to 24 walkers most seeds
/// passed 1.01 only after 1.3 to 1.5 million evaluations. A run that has not converged by the
/// most steps is labelled NOT CONVERGED and shows no interval.
const POSTERIOR_STEPS: usize = 20_000;
const POSTERIOR_MAX_STEPS: usize = 80_000;
const POSTERIOR_SEED: u64 = 1;
/// The posterior's files: its JSON report (always), its samples and corner plot (converged
/// only, as `umbral infer` writes them).
const POSTERIOR_JSON: &str = "posterior-reissner-nordstrom.json";
const POSTERIOR_SAMPLES: &str = "samples-reissner-nordstrom.csv";
const POSTERIOR_PLOT: &str = "corner-reissner-nordstrom.svg";

#[derive(Debug, Args)]
pub struct DemoArgs {
    /// Output folder.
    #[arg(long, default_value = "umbral-demo")]
    out: String,
}

/// The invented scenario.
#[derive(Debug, Serialize)]
struct Scenario {
    name: &'static str,
    mass_msun: f64,
    distance_mpc: f64,
    inclination_deg: f64,
    theta_g_uas: f64,
    note: &'static str,
}

fn scenario() -> Scenario {
    let (mass_msun, distance_mpc) = (1.2e8, 2.2);
    Scenario {
        name: "Lowmere nucleus (an invented galaxy)",
        mass_msun,
        distance_mpc,
        inclination_deg: 52.0,
        theta_g_uas: theta_g_uas(mass_msun, distance_mpc),
        note: "all numbers are invented for this demonstration, and chosen to resemble no \
               observed source: a mass and distance that no imaged black hole has, a ring of \
               about 7 uas that only an invented array with space baselines (2 uas beam) \
               resolves, and an inclination of 52 deg",
    }
}

/// A family of shadows (one metric, one parameter at several values) as work items.
struct Family<'a> {
    metric: &'a str,
    parameter: &'a str,
    values: &'a [f64],
    inclination_deg: f64,
    observer: &'a Observer,
    settings: &'a ShadowSettings,
}

impl WorkList for Family<'_> {
    type Output = Result<ShadowReport, CliError>;

    fn len(&self) -> usize {
        self.values.len()
    }

    fn key(&self, index: usize) -> String {
        format!("{} {}={}", self.metric, self.parameter, self.values[index])
    }

    fn run(&self, index: usize) -> Result<ShadowReport, CliError> {
        let m = build_metric(
            self.metric,
            &[(self.parameter.to_string(), self.values[index])],
        )?;
        shadow_report(
            m.as_ref(),
            self.inclination_deg,
            self.observer,
            self.settings,
            CentreChoice::Centroid,
        )
        .map_err(|e| CliError::usage(e.to_string()))
    }
}

/// The shadows of a family, in order, on the run executor.
fn family(family: &Family, display: &mut dyn Observe) -> Result<Vec<ShadowReport>, CliError> {
    let name = format!("{} family", family.metric);
    let batch = {
        let _graceful = interrupt::Graceful::enter("shadows");
        Executor::new(&name, "shadows")
            .observe(display)
            .stop_when(interrupt::stop_flag())
            .run(family, &Selection::All)
    };
    match batch {
        Ok(b) => b.outputs.into_iter().collect(),
        Err(RunError::Interrupted { .. }) => Err(CliError::interrupted("demo interrupted")),
        Err(RunError::Checkpoint(e)) => Err(CliError::usage(e.to_string())),
    }
}

fn curves(reports: &[ShadowReport], parameter: &str) -> Vec<ScreenCurve> {
    reports
        .iter()
        .filter_map(|r| {
            r.curve.as_ref().map(|c| ScreenCurve {
                label: format!(
                    "{} = {}",
                    symbol(parameter),
                    umbral::numfmt::short(r.parameters[parameter], 6)
                ),
                alpha: c.alpha.clone(),
                beta: c.beta.clone(),
            })
        })
        .collect()
}

fn table(reports: &[ShadowReport], parameter: &str, theta_g: f64) -> String {
    let mut t = format!(
        "| {parameter} | solver | mean diameter (M) | mean diameter (uas) | circularity deviation | centroid offset (M) | fractional deviation |\n|---|---|---|---|---|---|---|\n"
    );
    for r in reports {
        match &r.observables {
            Some(o) => t.push_str(&format!(
                "| {} | {} | {:.6} | {:.3} | {:.5} | {:.5} | {:+.5} |\n",
                r.parameters[parameter],
                r.solver,
                2.0 * o.mean_radius,
                2.0 * o.mean_radius * theta_g,
                o.circularity_deviation,
                o.centroid_offset,
                o.fractional_deviation_mean
            )),
            None => t.push_str(&format!(
                "| {} | {} | no shadow: {} | | | | |\n",
                r.parameters[parameter],
                r.solver,
                r.reason.as_deref().unwrap_or("")
            )),
        }
    }
    t
}

pub fn run(args: &DemoArgs, progress: &ProgressArgs) -> Result<(), CliError> {
    if args.out.trim().is_empty() {
        return Err(CliError::usage(
            "--out must name a folder, got an empty string",
        ));
    }
    let out = PathBuf::from(&args.out);
    let created = !out.exists();
    std::fs::create_dir_all(&out)
        .map_err(|e| CliError::usage(format!("cannot create '{}': {e}", out.display())))?;
    // Every file appears only when the whole demo succeeds.
    let mut outputs = OutputTransaction::new();
    let mut display = progress.display(Some("demo"))?;
    let produced = produce(&out, &mut outputs, display.as_mut());
    drop(display);
    match produced {
        Ok(verify) => {
            outputs.commit()?;
            if !verify.all_passed() {
                // A verdict, not a failure to produce: the report it points to is written.
                return Err(CliError::usage(format!(
                    "demo: {} regression check(s) failed; see {}",
                    verify.failed(),
                    out.join("report.md").display()
                )));
            }
            Ok(())
        }
        Err(e) => {
            drop(outputs);
            if created {
                let _ = std::fs::remove_dir(&out); // only if still empty
            }
            Err(if e.exit_code() == super::INTERRUPTED {
                CliError::interrupted("demo interrupted; nothing was written")
            } else {
                e
            })
        }
    }
}

/// Compute and print everything, staging the files in `outputs`; returns the regression
/// checks' report.
fn produce(
    out: &Path,
    outputs: &mut OutputTransaction,
    display: &mut dyn Observe,
) -> Result<VerifyReport, CliError> {
    let sc = scenario();
    outln!("umbral demo: {}", sc.name)?;
    outln!(
        "  invented mass {:.2e} Msun, distance {} Mpc, inclination {} deg -> theta_g = {:.4} uas",
        sc.mass_msun,
        sc.distance_mpc,
        sc.inclination_deg,
        sc.theta_g_uas
    )?;
    kerr_horizon()?;
    let settings = ShadowSettings::default();
    let families = shadows(&sc, &settings, out, outputs, display)?;
    let calibration = calibration(&sc, out, outputs, display)?;
    let (measurement, radii, measurement_staged) = measurement(&calibration, out, outputs)?;
    let bounds = bounds(&sc, &radii, &measurement, out, outputs, display)?;
    let posterior = posterior(&measurement, out, outputs, display)?;
    exclusion_map(&sc, &measurement_staged, out, outputs, display)?;
    // Regression checks: the example checks file a user would put in CI.
    let checks_path = out.join("ci-checks.toml");
    outputs.write(&checks_path, CHECKS.as_bytes())?;
    let verify = ChecksFile::parse(CHECKS, &checks_path)
        .map_err(|e| CliError::usage(e.to_string()))?
        .run();
    let results = Results {
        scenario: &sc,
        settings: &settings,
        kerr_family: &families[0],
        rn_family: &families[1],
        radii: &radii,
        calibration: &calibration,
        bounds: [&bounds[0], &bounds[1]],
        posterior: &posterior,
        verify: &verify,
    };
    results.write(out, outputs)?;
    results.print(out)?;
    Ok(verify)
}

/// Step 1, the scenario's reference metric: Kerr at a moderate spin.
fn kerr_horizon() -> Result<(), CliError> {
    let kerr = build_metric("kerr", &[("a".to_string(), 0.6)])?;
    let horizon = match kerr.classify() {
        Classification::BlackHole { outer_horizon } => outer_horizon,
        Classification::Horizonless => {
            return Err(CliError::usage(
                "internal: Kerr a = 0.6 reported no horizon",
            ))
        }
    };
    outln!("  Kerr a = 0.6: outer horizon r+ = {horizon:.12} M")
}

/// Step 2, shadows: the Kerr family and a charged spherical alternative, with their figures.
fn shadows(
    sc: &Scenario,
    settings: &ShadowSettings,
    out: &Path,
    outputs: &mut OutputTransaction,
    display: &mut dyn Observe,
) -> Result<[Vec<ShadowReport>; 2], CliError> {
    let observer = Observer::distant(sc.inclination_deg.to_radians());
    let of = |metric, parameter, values| Family {
        metric,
        parameter,
        values,
        inclination_deg: sc.inclination_deg,
        observer: &observer,
        settings,
    };
    let kerr_family = family(&of("kerr", "a", &[0.0, 0.5, 0.9, 0.99]), display)?;
    let rn_family = family(
        &of("reissner-nordstrom", "q", &[0.0, 0.5, 0.8, 1.0]),
        display,
    )?;
    let theme = Theme::new(FigureStyle::Paper);
    for (stem, title, reports, parameter) in [
        ("kerr-family", "Kerr", &kerr_family, "a"),
        (
            "reissner-nordstrom-family",
            "Reissner–Nordström",
            &rn_family,
            "q",
        ),
    ] {
        let title = format!(
            "{title} critical curves, θₒ = {}°",
            umbral::numfmt::short(sc.inclination_deg, 6)
        );
        let curves = curves(reports, parameter);
        let figure = ScreenFigure {
            title: &title,
            curves: &curves,
            theta_g_uas: None,
        };
        let svg = screen_curves(stem, &theme, &figure)?;
        write_figure_set(outputs, out, stem, &svg, &theme)?;
    }
    Ok([kerr_family, rn_family])
}

/// The ring-to-shadow calibration of the scenario and an image of its reference metric.
struct DemoCalibration {
    calibration: Calibration,
    /// The image's ring features and the critical curve it is compared with.
    image: ImageSummary,
}

/// What the report says about the demo's image.
#[derive(Debug, Serialize)]
struct ImageSummary {
    model: &'static str,
    pixels: usize,
    field_m: f64,
    ring_diameter_native: f64,
    ring_diameter_blurred: f64,
    asymmetry_angle_deg: f64,
    asymmetry_contrast: f64,
    inner_shadow_mean_radius: Option<f64>,
    critical_curve_mean_radius: f64,
}

/// Step 3, the ring-to-shadow calibration: κ over the built-in emission models around the
/// reference Kerr hole at the scenario's inclination, blurred to the invented array's
/// resolution; and an image of one model beside the critical curve.
fn calibration(
    sc: &Scenario,
    out: &Path,
    outputs: &mut OutputTransaction,
    display: &mut dyn Observe,
) -> Result<DemoCalibration, CliError> {
    let kerr = build_metric("kerr", &[("a".to_string(), DEMO_SPIN)])?;
    let parameters: std::collections::BTreeMap<String, f64> =
        [("a".to_string(), DEMO_SPIN)].into_iter().collect();
    let settings = CalibrationSettings {
        inclination: sc.inclination_deg.to_radians(),
        resolution_uas: DEMO_RESOLUTION_UAS,
        theta_g_uas: sc.theta_g_uas,
        pixels: DEMO_PIXELS,
        field: None,
    };
    let calibration = {
        let _graceful = interrupt::Graceful::enter("image rows");
        calibrate(
            kerr.as_ref(),
            "kerr",
            &parameters,
            &settings,
            &ModelList::built_in(),
            Controls {
                observers: vec![display],
                stop: Some(interrupt::stop_flag()),
            },
        )
        .map_err(|e| match e {
            CalibrateError::Run(RunError::Interrupted { .. }) => {
                CliError::interrupted("demo interrupted")
            }
            other => CliError::usage(format!("demo calibration: {other}")),
        })?
    };
    let text = serde_json::to_string_pretty(&calibration).expect("serialisable");
    outputs.write(
        &out.join("calibration.json"),
        format!("{text}\n").as_bytes(),
    )?;
    // The image of the model the report shows, native and blurred.
    let model = ModelList::built_in()
        .models
        .into_iter()
        .find(|m| m.name == DEMO_IMAGE_MODEL)
        .expect("the demo's image model is in the built-in list");
    let field = settings
        .field_m()
        .map_err(|e| CliError::usage(format!("demo image: {e}")))?;
    let image_settings =
        ImageSettings::new(Observer::distant(settings.inclination), DEMO_PIXELS, field);
    let tracer = ImageTracer::new(kerr.as_ref(), &model.model, &image_settings)
        .map_err(|e| CliError::usage(format!("demo image: {e}")))?;
    let rendered = {
        let _graceful = interrupt::Graceful::enter("image rows");
        render(
            &tracer,
            Controls {
                observers: vec![display],
                stop: Some(interrupt::stop_flag()),
            },
        )
        .map_err(super::image::render_error)?
    };
    let blurred = gaussian_blur(&rendered.total, settings.fwhm_m().expect("checked"))
        .map_err(|e| CliError::usage(format!("demo image: {e}")))?;
    for (image, name) in [
        (&rendered.total, DEMO_IMAGE),
        (&blurred, DEMO_IMAGE_BLURRED),
    ] {
        let mut bytes = Vec::new();
        write_png(image, DEMO_PNG_GAMMA, &mut bytes)
            .map_err(|e| CliError::usage(format!("demo image: {e}")))?;
        outputs.write(&out.join(name), &bytes)?;
    }
    let calibrated = calibration
        .models
        .iter()
        .find(|m| m.name == DEMO_IMAGE_MODEL)
        .expect("the image model was calibrated");
    let (Some(native), Some(blurred_ring)) = (&calibrated.native, &calibrated.blurred) else {
        return Err(CliError::usage(format!(
            "demo calibration: the {DEMO_IMAGE_MODEL} image shows no ring: {}",
            calibrated.note.as_deref().unwrap_or("no reason given")
        )));
    };
    let image = ImageSummary {
        model: DEMO_IMAGE_MODEL,
        pixels: DEMO_PIXELS,
        field_m: field,
        ring_diameter_native: native.diameter,
        ring_diameter_blurred: blurred_ring.diameter,
        asymmetry_angle_deg: native.asymmetry_angle_deg,
        asymmetry_contrast: native.asymmetry_contrast,
        inner_shadow_mean_radius: calibrated.inner_shadow.as_ref().map(|s| s.mean_radius),
        critical_curve_mean_radius: calibration.critical_curve_mean_radius,
    };
    outln!(
        "  calibration: kappa = {:.4} +- {:.4} over {} emission models (Kerr a = {DEMO_SPIN}, \
         {DEMO_RESOLUTION_UAS} uas resolution)",
        calibration.summary.kappa.mean,
        calibration.summary.kappa.spread,
        calibration.summary.kappa.models
    )?;
    Ok(DemoCalibration { calibration, image })
}

/// Step 4, the measurement: the invented ring, its κ from the calibration, pushed through the
/// calibration chain. Returns it, its radius intervals and the staged copy the scan reads.
fn measurement(
    calibration: &DemoCalibration,
    out: &Path,
    outputs: &mut OutputTransaction,
) -> Result<(Measurement, DerivedRadii, PathBuf), CliError> {
    let kappa = calibration.calibration.summary.kappa;
    let given = "ring_to_shadow = { value = 1.10, sigma = 0.05 }  # ring diameter / shadow diameter (emission modelling)";
    if !MEASUREMENT.contains(given) {
        return Err(CliError::usage(
            "internal: the demo measurement's ring_to_shadow line changed",
        ));
    }
    let text = MEASUREMENT.replacen(
        given,
        &format!(
            "ring_to_shadow = {{ value = {:.4}, sigma = {:.4} }}  # from calibration.json \
             (umbral calibrate, {} emission models)",
            kappa.mean, kappa.spread, kappa.models
        ),
        1,
    );
    let measurement_path = out.join("measurement.toml");
    let staged = outputs.stage(&measurement_path)?;
    outputs.write(&measurement_path, text.as_bytes())?;
    let measurement = Measurement::from_toml_str(&text)
        .map_err(|e| CliError::usage(format!("demo measurement: {e}")))?;
    let radii = measurement
        .derive(None)
        .map_err(|e| CliError::usage(format!("demo measurement: {e}")))?;
    Ok((measurement, radii, staged))
}

/// Step 5, bounds: a spherical alternative, and a parametrized Kerr deviation with spin as
/// nuisance, with their figures.
fn bounds(
    sc: &Scenario,
    radii: &DerivedRadii,
    measurement: &Measurement,
    out: &Path,
    outputs: &mut OutputTransaction,
    display: &mut dyn Observe,
) -> Result<[BoundResult; 2], CliError> {
    let on = |metric, vary, nuisance| DemoBound {
        radii,
        measurement,
        metric,
        vary,
        nuisance,
        inclination_deg: sc.inclination_deg,
    };
    let rn_bound = on("reissner-nordstrom", ("q", 0.0, 1.2), &[]).run(display)?;
    let jo_bound = on("johannsen", ("alpha13", -2.0, 4.0), &[("a", 0.0, 0.95)]).run(display)?;
    let theme = Theme::new(FigureStyle::Paper);
    for (b, name, title) in [
        (&rn_bound, "reissner-nordstrom", "Reissner–Nordström"),
        (&jo_bound, "johannsen", "Johannsen"),
    ] {
        let stem = format!("bound-{name}");
        let title = super::plot_bounds::bound_title(title, b);
        let svg = super::plot_bounds::bound_plot(&stem, &theme, &title, b)?;
        write_figure_set(outputs, out, &stem, &svg, &theme)?;
    }
    Ok([rn_bound, jo_bound])
}

/// The posterior of the first bound's parameter and what it assumed.
struct DemoPosterior {
    model: PosteriorModel,
    settings: InferSettings,
    inference: Inference,
    assumptions: Vec<String>,
    /// Why the run is not a posterior to report (`None`: it converged).
    not_converged: Option<String>,
    /// The report `umbral infer --json` prints.
    json: serde_json::Value,
}

impl DemoPosterior {
    /// The files written, in the output folder.
    fn files(&self) -> Vec<&'static str> {
        if self.not_converged.is_none() {
            vec![POSTERIOR_JSON, POSTERIOR_SAMPLES, POSTERIOR_PLOT]
        } else {
            vec![POSTERIOR_JSON]
        }
    }
}

/// Step 6, the posterior: the first bound's parameter from the same measurement, by the
/// ensemble sampler on the run executor (progress, Ctrl-C), written as `umbral infer` writes
/// it: its JSON report, and for a converged run its samples and corner plot.
fn posterior(
    measurement: &Measurement,
    out: &Path,
    outputs: &mut OutputTransaction,
    display: &mut dyn Observe,
) -> Result<DemoPosterior, CliError> {
    let prior = Prior::parse(POSTERIOR_PRIOR)
        .map_err(|e| CliError::usage(format!("internal: demo prior: {e}")))?;
    let request = InferenceRequest::new(
        MetricSource::builtin(POSTERIOR_METRIC)?,
        vec![(POSTERIOR_PARAMETER.to_string(), prior)],
        vec![measurement.clone()],
    );
    let model = PosteriorModel::new(&request)
        .map_err(|e| CliError::usage(format!("demo posterior: {e}")))?;
    let settings = InferSettings {
        sampler: SamplerKind::Ensemble,
        seed: POSTERIOR_SEED,
        steps: POSTERIOR_STEPS,
        max_steps: POSTERIOR_MAX_STEPS,
        // The fewest the sampler takes (twice the sampled parameters): split R-hat depends on
        // the steps rather than the walkers, so fewer walkers reach a verdict for fewer
        // evaluations.
        walkers: 2 * model.names().len(),
        chains: 4,
        levels: vec![0.68, 0.95],
        ..InferSettings::default()
    };
    let result = {
        let _graceful = interrupt::Graceful::enter("model evaluations");
        let controls = Controls {
            observers: vec![display],
            stop: Some(interrupt::stop_flag()),
        };
        infer_with(&model, &settings, controls)
    };
    let inference = match result {
        Ok(i) => i,
        Err(InferStop::Interrupted { .. }) => {
            return Err(CliError::interrupted("demo interrupted"))
        }
        Err(InferStop::Run(InferRunError::Ensemble(e))) => {
            return Err(CliError::usage(format!("demo posterior: the sampler: {e}")))
        }
        Err(InferStop::Run(e)) => return Err(CliError::usage(format!("demo posterior: {e}"))),
    };
    let assumptions = super::infer::assumptions(&model, &settings, &inference);
    let not_converged = verdict(&inference);
    let text = json_report(
        &["measurement.toml".to_string()],
        &model,
        &inference,
        &assumptions,
        not_converged.is_none(),
    )?;
    outputs.write(&out.join(POSTERIOR_JSON), text.as_bytes())?;
    let json = serde_json::from_str(&text)
        .map_err(|e| CliError::usage(format!("internal: demo posterior JSON: {e}")))?;
    if not_converged.is_none() {
        let csv = samples_csv(&inference, &assumptions);
        outputs.write(&out.join(POSTERIOR_SAMPLES), csv.as_bytes())?;
        let plot = out.join(POSTERIOR_PLOT);
        let theme = Theme::new(FigureStyle::Paper);
        let svg = write_corner_plot(outputs, &plot.to_string_lossy(), &model, &inference, &theme)?;
        for ext in ["png", "pdf"] {
            let path = plot.with_extension(ext);
            super::figure::write_figure(outputs, &path.to_string_lossy(), &svg, &theme)?;
        }
    }
    Ok(DemoPosterior {
        model,
        settings,
        inference,
        assumptions,
        not_converged,
        json,
    })
}

/// Step 7, a 2-D exclusion map over (a, q) for Kerr-Newman, through the scan command itself
/// (reading the staged measurement).
fn exclusion_map(
    sc: &Scenario,
    measurement_staged: &Path,
    out: &Path,
    outputs: &mut OutputTransaction,
    display: &mut dyn Observe,
) -> Result<(), CliError> {
    let scan_path = out.join("scan-kerr-newman.jsonl");
    let map_path = out.join("exclusion-kerr-newman.svg");
    let scan_args: Vec<std::ffi::OsString> = [
        "scan",
        "--metric",
        "kerr-newman",
        "--grid",
        "a=0:0.98:15",
        "--grid",
        "q=0:1:15",
        "--inclination",
    ]
    .iter()
    .map(|s| s.into())
    .chain([
        sc.inclination_deg.to_string().into(),
        "--measurement".into(),
        measurement_staged.as_os_str().to_owned(),
        "--out".into(),
        scan_path.clone().into_os_string(),
        "--plot".into(),
        map_path.into_os_string(),
    ])
    .collect();
    // The points go to a staged file (a fresh scan each time); the map is staged by the scan.
    let scan_staged = outputs.stage(&scan_path)?;
    let scan_args = super::scan::parse_args(&scan_args)?;
    let svg = super::scan::run_in(&scan_args, &scan_staged, outputs, display)?;
    // The scan wrote the SVG; the same figure as PNG and PDF beside it.
    if let Some(svg) = svg {
        let theme = Theme::new(FigureStyle::Paper);
        for ext in ["png", "pdf"] {
            let path = out.join(format!("exclusion-kerr-newman.{ext}"));
            super::figure::write_figure(outputs, &path.to_string_lossy(), &svg, &theme)?;
        }
    }
    Ok(())
}

/// Everything the demo computed, for its files and its summary.
struct Results<'a> {
    scenario: &'a Scenario,
    settings: &'a ShadowSettings,
    kerr_family: &'a [ShadowReport],
    rn_family: &'a [ShadowReport],
    radii: &'a DerivedRadii,
    calibration: &'a DemoCalibration,
    bounds: [&'a BoundResult; 2],
    posterior: &'a DemoPosterior,
    verify: &'a VerifyReport,
}

impl Results<'_> {
    /// results.json and report.md.
    fn write(&self, out: &Path, outputs: &mut OutputTransaction) -> Result<(), CliError> {
        #[derive(Serialize)]
        struct DemoJson<'a> {
            scenario: &'a Scenario,
            kerr_family: &'a [ShadowReport],
            reissner_nordstrom_family: &'a [ShadowReport],
            calibration: &'a Calibration,
            image: &'a ImageSummary,
            measured_radius: &'a DerivedRadii,
            bounds: [&'a BoundResult; 2],
            posterior: &'a serde_json::Value,
            posterior_files: Vec<&'static str>,
            checks_passed: usize,
            checks_failed: usize,
        }
        let json = serde_json::to_string_pretty(&DemoJson {
            scenario: self.scenario,
            kerr_family: self.kerr_family,
            reissner_nordstrom_family: self.rn_family,
            calibration: &self.calibration.calibration,
            image: &self.calibration.image,
            measured_radius: self.radii,
            bounds: self.bounds,
            posterior: &self.posterior.json,
            posterior_files: self.posterior.files(),
            checks_passed: self.verify.passed(),
            checks_failed: self.verify.failed(),
        })
        .map_err(|e| CliError::usage(format!("cannot serialise the demo's results: {e}")))?;
        outputs.write(&out.join("results.json"), json.as_bytes())?;
        let report = report_text(self);
        outputs.write(&out.join("report.md"), report.as_bytes())?;
        Ok(())
    }

    /// The summary on standard output and the list of files written.
    fn print(&self, out: &Path) -> Result<(), CliError> {
        outln!(
            "{}",
            table(self.kerr_family, "a", self.scenario.theta_g_uas)
        )?;
        for b in self.bounds {
            outln!("{}", bound_summary(b))?;
        }
        outln!("{}", comparison(self.bounds[0], self.posterior))?;
        outln!(
            "regression checks: {} pass, {} fail",
            self.verify.passed(),
            self.verify.failed()
        )?;
        outln!("wrote:")?;
        for name in [
            "kerr-family.svg",
            "reissner-nordstrom-family.svg",
            "calibration.json",
            DEMO_IMAGE,
            DEMO_IMAGE_BLURRED,
            "bound-reissner-nordstrom.svg",
            "bound-johannsen.svg",
            "exclusion-kerr-newman.svg",
            "scan-kerr-newman.jsonl",
            "measurement.toml",
            "ci-checks.toml",
            "results.json",
            "report.md",
        ]
        .into_iter()
        .chain(self.posterior.files())
        {
            outln!("  {}", out.join(name).display())?;
        }
        outln!("  and every .svg figure also as .png and .pdf")?;
        Ok(())
    }
}

/// A bound of one parameter of `metric` from the scenario's measurement.
struct DemoBound<'a> {
    radii: &'a DerivedRadii,
    measurement: &'a Measurement,
    metric: &'a str,
    vary: (&'a str, f64, f64),
    nuisance: &'a [(&'a str, f64, f64)],
    inclination_deg: f64,
}

impl DemoBound<'_> {
    fn run(&self, display: &mut dyn Observe) -> Result<BoundResult, CliError> {
        let range = |(name, low, high): (&str, f64, f64)| ParameterRange {
            name: name.to_string(),
            low,
            high,
        };
        let request = BoundRequest {
            metric: MetricSource::builtin(self.metric)?,
            vary: range(self.vary),
            fixed: Vec::new(),
            inclination: Inclination::Fixed {
                degrees: self.inclination_deg,
            },
            nuisance: self.nuisance.iter().copied().map(range).collect(),
            size_measure: SizeMeasure::Mean,
            radii: self.radii.clone(),
            circularity_max: self.measurement.circularity_max,
            // The figures draw the predicted band: every value's extremes searched.
            settings: BoundSettings {
                full_extremes: true,
                ..BoundSettings::default()
            },
        };
        let _graceful = interrupt::Graceful::enter("nuisance evaluations");
        let controls = Controls {
            observers: vec![display],
            stop: Some(interrupt::stop_flag()),
        };
        bound_with(&request, controls, None).map_err(|e| match e {
            BoundRunError::Interrupted { .. } => CliError::interrupted("demo interrupted"),
            e => CliError::usage(format!("demo bound on {}: {e}", self.metric)),
        })
    }
}

/// The converged posterior's summary of the demo's parameter (`None` when not converged).
fn posterior_summary(p: &DemoPosterior) -> Option<&ParameterSummary> {
    if p.not_converged.is_some() {
        return None;
    }
    p.inference
        .summaries
        .iter()
        .find(|s| s.name == POSTERIOR_PARAMETER)
}

/// A summary's credible interval of `kind` at `level`.
fn credible(s: &ParameterSummary, level: f64, kind: &str) -> Option<[f64; 2]> {
    s.intervals
        .iter()
        .find(|iv| (iv.confidence - level).abs() < 1e-9 && iv.kind == kind)
        .map(|iv| [iv.low, iv.high])
}

fn interval_text(iv: Option<[f64; 2]>) -> String {
    iv.map_or("-".into(), |[a, b]| format!("[{a:.4}, {b:.4}]"))
}

/// The sampler's verdict in words: converged with its figures, or NOT CONVERGED with why.
fn verdict_text(p: &DemoPosterior) -> String {
    let c = &p.inference.convergence;
    match &p.not_converged {
        None => format!(
            "converged: split R-hat {:.4} (< 1.01), ESS {:.0} (>= 400), {} steps of {} ensembles \
             of {} walkers, {} model evaluations, {} solver failures",
            c.rhat,
            c.ess,
            p.inference.steps,
            p.settings.chains,
            p.settings.walkers,
            p.inference.evaluations,
            p.inference.failures
        ),
        Some(why) => format!("NOT CONVERGED: {why}; no median or interval is shown"),
    }
}

/// What the prior alone gives the demo's parameter: its median and equal-tailed intervals at
/// the bound's levels (the prior's quantile function).
fn prior_alone(p: &DemoPosterior, b: &BoundResult) -> String {
    let Some(prior) = p
        .model
        .parameters()
        .iter()
        .find(|q| q.name == POSTERIOR_PARAMETER)
        .map(|q| q.prior)
    else {
        return String::new();
    };
    let mut s = format!("median {:.4}", prior.from_unit(0.5));
    for l in &b.levels {
        let tail = 0.5 * (1.0 - l.confidence);
        s.push_str(&format!(
            ", {:.0}% [{:.4}, {:.4}]",
            100.0 * l.confidence,
            prior.from_unit(tail),
            prior.from_unit(1.0 - tail)
        ));
    }
    s
}

/// The bound's assumptions in one line: the intervals it compares with, the range, no prior.
fn bound_gist(b: &BoundResult) -> String {
    let intervals: Vec<String> = b
        .levels
        .iter()
        .map(|l| {
            format!(
                "[{:.4}, {:.4}] at {:.0}%",
                l.radius_interval[0],
                l.radius_interval[1],
                100.0 * l.confidence
            )
        })
        .collect();
    let mut s = format!(
        "a value is allowed where the predicted r_sh/M lies in the measured interval ({}; \
         from the ring chain's Monte Carlo over kappa, mass and distance); {} over [{}, {}] \
         with no prior and nothing marginalised",
        intervals.join(", "),
        b.vary.name,
        b.vary.low,
        b.vary.high
    );
    if let Some(c) = b.circularity_max {
        s.push_str(&format!("; circularity deviation at most {c}"));
    }
    s
}

/// The posterior's assumptions in one line: its priors and each source's likelihood.
fn posterior_gist(p: &DemoPosterior) -> String {
    let priors: Vec<String> = p
        .model
        .sampled()
        .iter()
        .map(|q| format!("{} {}", q.name, q.prior))
        .collect();
    let mut s = format!(
        "priors {}, every parameter but {} marginalised",
        priors.join(", "),
        POSTERIOR_PARAMETER
    );
    for a in p.model.assumptions() {
        if let Some(rest) = a.strip_prefix("source 1: ") {
            s.push_str(&format!("; {rest}"));
        }
    }
    s
}

/// The bound and the posterior of the same parameter side by side, each with its
/// assumptions, for standard output.
fn comparison(b: &BoundResult, p: &DemoPosterior) -> String {
    let mut s = format!(
        "bound and posterior of {} of {} from the same measurement (measurement.toml):\n",
        b.vary.name, b.metric
    );
    let summary = posterior_summary(p);
    s.push_str(&format!(
        "  {:<6}{:<48}{}\n",
        "level", "bound: allowed range", "posterior: equal-tailed credible interval"
    ));
    for l in &b.levels {
        let posterior = match summary {
            Some(q) => interval_text(credible(q, l.confidence, "equal-tailed")),
            None => "NOT CONVERGED".into(),
        };
        s.push_str(&format!(
            "  {:<6}{:<48}{posterior}\n",
            format!("{:.0}%", 100.0 * l.confidence),
            b.describe_allowed(&l.allowed, 4)
        ));
    }
    if let Some(q) = summary {
        s.push_str(&format!(
            "  posterior median {:.4} (the prior alone: {})\n",
            q.median,
            prior_alone(p, b)
        ));
    }
    s.push_str(&format!("  posterior {}\n", verdict_text(p)));
    s.push_str(&format!("  the bound assumes: {}\n", bound_gist(b)));
    s.push_str(&format!("  the posterior assumes: {}\n", posterior_gist(p)));
    s.push_str(&format!(
        "  (every assumption of both: report.md, results.json and {POSTERIOR_JSON})"
    ));
    s
}

/// The report's section setting the posterior beside the bound of the same parameter.
fn posterior_section(b: &BoundResult, p: &DemoPosterior) -> String {
    let mut r = format!(
        "## Bound and posterior from the same measurement\n\n\
         The same invented ring, the same metric and parameter ({} of {}), two questions. \
         `umbral bound` asks which values can fit the measured interval for some value of the \
         calibration: no prior, nothing marginalised, conservative. `umbral infer` asks how \
         probable each value is: the likelihood of the measured ring diameter, with kappa, \
         mass and distance sampled from the measurement's Gaussians and marginalised, under a \
         stated prior on {} ({}). docs/bounds.md says when each is the right tool.\n\n",
        b.vary.name, b.metric, POSTERIOR_PARAMETER, POSTERIOR_PRIOR
    );
    match posterior_summary(p) {
        Some(q) => {
            r.push_str(
                "| level | bound: allowed | posterior: equal-tailed | posterior: highest-density |\n\
                 |---|---|---|---|\n",
            );
            for l in &b.levels {
                r.push_str(&format!(
                    "| {:.0}% | {} | {} | {} |\n",
                    100.0 * l.confidence,
                    b.describe_allowed(&l.allowed, 4),
                    interval_text(credible(q, l.confidence, "equal-tailed")),
                    interval_text(credible(q, l.confidence, "highest-density"))
                ));
            }
            r.push_str(&format!(
                "\nPosterior median {:.4}, mean {:.4}. The prior alone gives {}: set against \
                 it, the posterior shows what the ring adds to the prior. The bound has no \
                 prior; its ranges are where the measured interval can be met for some \
                 calibration.\n\n\
                 Verdict: {}.\n\n![corner plot]({POSTERIOR_PLOT})\n\n\
                 Files: {POSTERIOR_JSON} (as `umbral infer --json` prints it), \
                 {POSTERIOR_SAMPLES} (every posterior sample), {POSTERIOR_PLOT}.\n\n",
                q.median,
                q.mean,
                prior_alone(p, b),
                verdict_text(p)
            ));
        }
        None => r.push_str(&format!(
            "Posterior: {}. Its diagnostics are in {POSTERIOR_JSON}; no samples or plot are \
             written.\n\n",
            verdict_text(p)
        )),
    }
    r.push_str("Posterior assumptions:\n\n");
    for a in &p.assumptions {
        r.push_str(&format!("* {a}\n"));
    }
    r.push('\n');
    r
}

fn intervals(v: &[[f64; 2]]) -> String {
    if v.is_empty() {
        "none".into()
    } else {
        v.iter()
            .map(|[a, b]| format!("[{a:.4}, {b:.4}]"))
            .collect::<Vec<_>>()
            .join(" U ")
    }
}

fn bound_summary(b: &BoundResult) -> String {
    let mut s = format!("bound on {} of {}:", b.vary.name, b.metric);
    for l in &b.levels {
        s.push_str(&format!(
            " {:.0}%: {} (r_sh/M in [{:.4}, {:.4}]);",
            100.0 * l.confidence,
            b.describe_allowed(&l.allowed, 4),
            l.radius_interval[0],
            l.radius_interval[1]
        ));
    }
    if !b.no_horizon.is_empty() {
        s.push_str(&format!(" no horizon: {};", intervals(&b.no_horizon)));
    }
    if !b.failures.is_empty() {
        s.push_str(&format!(
            " solver failures in {} range(s);",
            b.failures.len()
        ));
    }
    s
}

/// The report's section on one bound: the allowed ranges at each level, the values neither
/// allowed nor excluded, and the assumptions.
fn bound_section(b: &BoundResult, figure: &str) -> String {
    let mut r = String::new();
    r.push_str(&format!(
        "### {} of {}\n\n![bound]({figure})\n\n",
        b.vary.name, b.metric
    ));
    for l in &b.levels {
        r.push_str(&format!(
            "* {:.0}%: allowed {}\n",
            100.0 * l.confidence,
            b.describe_allowed(&l.allowed, 4)
        ));
    }
    if !b.no_horizon.is_empty() {
        r.push_str(&format!(
            "* no horizon (neither allowed nor excluded): {}\n",
            intervals(&b.no_horizon)
        ));
    }
    if !b.failures.is_empty() {
        r.push_str(&format!(
            "* solver failures (neither allowed nor excluded): {} range(s)\n",
            b.failures.len()
        ));
    }
    if !b.refinement_cut.is_empty() {
        r.push_str(&format!(
            "* less precise near {} value(s) where a solver failure stopped the nuisance refinement\n",
            b.refinement_cut.len()
        ));
    }
    r.push_str("\nAssumptions:\n\n");
    for a in &b.assumptions {
        r.push_str(&format!("* {a}\n"));
    }
    r.push('\n');
    r
}

/// The report's section on the image and the ring-to-shadow calibration.
fn calibration_section(c: &DemoCalibration) -> String {
    let cal = &c.calibration;
    let im = &c.image;
    let mut r = format!(
        "## Emission ring and calibration\n\n\
         A telescope measures the bright emission ring, not the critical curve. Images of simple emission models \
         around Kerr a = {DEMO_SPIN} at the scenario's inclination ({pixels} x {pixels} pixels over {field:.1} M) give the \
         ring-to-shadow factor kappa (calibration.json). Left: the {model} model at full resolution (square-root \
         brightness scale); right: the critical curves of the Kerr family.\n\n\
         | image ({model}) | critical curves |\n| --- | --- |\n\
         | ![image]({img}) | ![Kerr shadows](kerr-family.svg) |\n\n\
         Blurred to {res} uas (FWHM {fwhm:.3} M): ![blurred image]({blurred})\n\n\
         * ring diameter {dn:.4} M at full resolution, {db:.4} M blurred; critical-curve diameter {cd:.4} M;\n\
         * brightness asymmetry at {angle:.0} deg from +alpha (the approaching side), contrast {contrast:.3};\n",
        pixels = im.pixels,
        field = im.field_m,
        model = im.model,
        img = DEMO_IMAGE,
        blurred = DEMO_IMAGE_BLURRED,
        res = DEMO_RESOLUTION_UAS,
        fwhm = cal.fwhm_m,
        dn = im.ring_diameter_native,
        db = im.ring_diameter_blurred,
        cd = 2.0 * im.critical_curve_mean_radius,
        angle = im.asymmetry_angle_deg,
        contrast = im.asymmetry_contrast,
    );
    if let Some(inner) = im.inner_shadow_mean_radius {
        r.push_str(&format!(
            "* inner shadow (the lensed image of the horizon) mean radius {inner:.4} M.\n"
        ));
    }
    r.push_str(
        "\n| model | ring diameter (M) | blurred (M) | kappa |\n| --- | --- | --- | --- |\n",
    );
    for m in &cal.models {
        let cell = |x: Option<f64>| x.map_or("no ring".to_string(), |v| format!("{v:.4}"));
        r.push_str(&format!(
            "| {} | {} | {} | {} |\n",
            m.name,
            cell(m.native.as_ref().map(|r| r.diameter)),
            cell(m.blurred.as_ref().map(|r| r.diameter)),
            cell(m.kappa)
        ));
    }
    r.push_str(&format!(
        "\nkappa = {:.4} +- {:.4} (mean and standard deviation over the models): the measurement below uses it.\n\n",
        cal.summary.kappa.mean, cal.summary.kappa.spread
    ));
    r
}

fn report_text(results: &Results) -> String {
    let Results {
        scenario: sc,
        settings,
        kerr_family,
        rn_family,
        radii,
        calibration,
        bounds,
        posterior,
        verify,
    } = results;
    let mut r = format!(
        "# umbral demo: {name}\n\n\
         The job: predict the shadow (critical curve) of a black-hole metric as a distant observer sees it, reduce \
         it to the numbers an image constrains, and turn a measured ring into allowed ranges of the metric's deviation \
         parameters. Everything here is set in an invented scenario: {note}.\n\n\
         * mass {mass:.2e} Msun, distance {dist} Mpc, so theta_g = GM/(c^2 D) = {tg:.4} uas \
         (IAU 2015 nominal GM_sun, IAU 2012 astronomical unit);\n\
         * inclination {inc} deg, distant observer; observables about the area centroid; \
         the families' curves with {points} points (the scan's start from {scan_points} and the bounds' \
         from {bound_points}, doubled where the sampling error asks), boundary tolerance {tol:e} M.\n\n\
         ## Kerr family\n\n![Kerr shadows](kerr-family.svg)\n\n{kt}\n\
         General relativity predicts a diameter near 2*3*sqrt(3) M = {gr:.4} M for any spin, and a nearly circular curve.\n\n\
         ## Reissner-Nordstrom family\n\n![Reissner-Nordstrom shadows](reissner-nordstrom-family.svg)\n\n{rt}\n",
        name = sc.name,
        note = sc.note,
        mass = sc.mass_msun,
        dist = sc.distance_mpc,
        tg = sc.theta_g_uas,
        inc = sc.inclination_deg,
        points = settings.points,
        scan_points = umbral::scan::DEFAULT_SCAN_POINTS,
        bound_points = umbral::bounds::DEFAULT_BOUND_POINTS,
        tol = settings.tolerance,
        kt = table(kerr_family, "a", sc.theta_g_uas),
        rt = table(rn_family, "q", sc.theta_g_uas),
        gr = 2.0 * umbral::observables::SCHWARZSCHILD_SHADOW_RADIUS,
    );
    r.push_str(&calibration_section(calibration));
    r.push_str("## The measurement\n\nThe invented ring (measurement.toml), with kappa from the calibration, gives these shadow-radius intervals:\n\n");
    for iv in &radii.intervals {
        r.push_str(&format!(
            "* {:.0}%: r_sh/M in [{:.4}, {:.4}]\n",
            100.0 * iv.confidence,
            iv.low,
            iv.high
        ));
    }
    r.push_str("\n## Bounds\n\n");
    for (b, figure) in bounds
        .iter()
        .zip(["bound-reissner-nordstrom.svg", "bound-johannsen.svg"])
    {
        r.push_str(&bound_section(b, figure));
    }
    r.push_str(&posterior_section(bounds[0], posterior));
    r.push_str(
        "## Exclusion map\n\nKerr-Newman over spin and charge (scan-kerr-newman.jsonl), allowed regions at each level:\n\n\
         ![exclusion map](exclusion-kerr-newman.svg)\n\n",
    );
    r.push_str(&format!(
        "## Regression checks\n\nci-checks.toml, the example a user copies into CI: {} pass, {} fail.\n\n```\n{}```\n\n",
        verify.passed(),
        verify.failed(),
        verify.render_table()
    ));
    r.push_str(
        "## Caution\n\nA measured ring constrains the shadow only through the ring-to-shadow calibration and the \
         mass-to-distance prior. Here kappa comes from eight simple emission models around Kerr; their spread stands \
         for the modelling uncertainty, and a real analysis would use models fitted to its source. The bounds are \
         only as good as those.\n",
    );
    r
}
