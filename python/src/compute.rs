//! `umbral.shadow`, `umbral.bound`, `umbral.infer` and `umbral.image`: the library's calls
//! with the command line's checks and messages (naming the keyword argument where the command
//! line names its option).

use crate::errors::{input, Fail, OrRaise};
use crate::interrupt::interruptible;
use crate::metric::Metric;
use crate::scan::{observers, progress_lines};
use numpy::ndarray::Array2;
use numpy::{IntoPyArray, PyArray2};
use pyo3::prelude::*;
use std::path::{Path, PathBuf};
use umbral::bounds::{
    BoundError, BoundRequest, BoundSettings, Inclination, ParameterRange, SizeMeasure,
};
use umbral::image::blur::{gaussian_blur, uas_to_m};
use umbral::image::trace::{ImageSettings, ImageTracer};
use umbral::measurement::Measurement;
use umbral::numfmt::Num;
use umbral::observables::{shadow_report, CentreChoice};
use umbral::posterior::report::{assumptions, sample_columns, verdict, Choice, Report};
use umbral::posterior::{InferenceRequest, PosteriorModel, SamplerKind};
use umbral::run::bound::{bound_with, open_checkpoint, BoundRunError};
use umbral::run::calibrate::{emission_model, resolve_measurement, ResolveError};
use umbral::run::image::{render, RenderError};
use umbral::run::infer::{infer_with, InferStop};
use umbral::run::{Controls, RunError};
use umbral::sampling::Prior;
use umbral::scan::table::tabulated;
use umbral::shadow::{self, Observer, ShadowSettings, SolverChoice};

/// An inclination in degrees, from 0 to 180.
fn check_inclination(degrees: f64) -> Result<f64, Fail> {
    if !(0.0..=180.0).contains(&degrees) {
        return Err(Fail::Input(format!(
            "inclination must lie between 0 and 180 degrees, got {}",
            Num(degrees)
        )));
    }
    Ok(degrees)
}

/// A number that must be positive (`name` for the message).
fn positive(value: f64, name: &str) -> Result<f64, Fail> {
    if !(value > 0.0 && value.is_finite()) {
        return Err(Fail::Input(format!(
            "{name} must be positive, got {}",
            Num(value)
        )));
    }
    Ok(value)
}

/// The observer: distant, or at `radius` M.
fn observer(inclination: f64, radius: Option<f64>) -> Result<Observer, Fail> {
    let i = check_inclination(inclination)?.to_radians();
    Ok(match radius {
        None => Observer::distant(i),
        Some(r) => Observer::at_radius(i, positive(r, "observer_radius")?),
    })
}

/// Shadow settings from (points, solver, tolerance), checked.
pub fn shadow_settings(
    (points, solver, tolerance): (usize, String, f64),
) -> Result<ShadowSettings, Fail> {
    positive(tolerance, "tolerance")?;
    if shadow::check_points(points).is_err() {
        return Err(Fail::Input(format!(
            "points must lie between {} and {}, got {points}",
            shadow::MIN_POINTS,
            shadow::MAX_POINTS
        )));
    }
    let solver: SolverChoice = solver
        .parse()
        .map_err(|e: shadow::ShadowError| Fail::Input(format!("solver: {e}")))?;
    Ok(ShadowSettings {
        points,
        tolerance,
        solver,
    })
}

/// The shadow as `umbral shadow --json` prints it.
#[pyfunction]
#[pyo3(signature = (metric, inclination, settings, observer_radius, centre))]
pub fn shadow_json(
    py: Python<'_>,
    metric: &Metric,
    inclination: f64,
    settings: (usize, String, f64),
    observer_radius: Option<f64>,
    centre: &str,
) -> PyResult<String> {
    let run = || -> Result<String, Fail> {
        let observer = observer(inclination, observer_radius)?;
        let settings = shadow_settings(settings)?;
        let centre = match centre {
            "centroid" => CentreChoice::Centroid,
            "midpoint" => CentreChoice::Midpoint,
            other => {
                return Err(Fail::Input(format!(
                    "centre must be 'centroid' or 'midpoint', got '{other}'"
                )))
            }
        };
        let spacetime = metric.built.as_ref();
        // One solve: no stop flag to give it, so it runs to its end off the GIL.
        let report = py
            .detach(|| shadow_report(spacetime, inclination, &observer, &settings, centre))
            .map_err(input)?;
        Ok(serde_json::to_string(&report).unwrap_or_default())
    };
    run().or_raise(py)
}

/// A measurement file, with its computed κ calibration made if it asks for one.
fn measurement(
    path: &Path,
    stop: &std::sync::atomic::AtomicBool,
    progress: Option<f64>,
) -> Result<Measurement, Fail> {
    let mut m = Measurement::from_path(path).map_err(input)?;
    let mut line = progress_lines(progress);
    let controls = Controls {
        observers: observers(&mut line),
        stop: Some(stop),
    };
    resolve_measurement(&mut m, controls).map_err(|e| match e {
        ResolveError::Calibration(umbral::run::calibrate::CalibrateError::Run(
            RunError::Interrupted { .. },
        )) => Fail::Computation(e.to_string()),
        other => input(other),
    })?;
    Ok(m)
}

/// A size measure by name.
fn size_measure(name: &str) -> Result<SizeMeasure, Fail> {
    match name {
        "mean" => Ok(SizeMeasure::Mean),
        "area" => Ok(SizeMeasure::Area),
        other => Err(Fail::Input(format!(
            "size_measure must be 'mean' or 'area', got '{other}'"
        ))),
    }
}

/// `PARAM=LO:HI` with LO < HI, both finite (`what` names it in the message: `vary q`).
fn range(name: &str, (low, high): (f64, f64), what: &str) -> Result<ParameterRange, Fail> {
    if !(low.is_finite() && high.is_finite()) || low >= high {
        return Err(Fail::Input(format!(
            "{what}: need LO < HI, got {}:{}",
            Num(low),
            Num(high)
        )));
    }
    Ok(ParameterRange {
        name: name.to_string(),
        low,
        high,
    })
}

/// The bound as `umbral bound --json` prints it.
#[pyfunction]
#[pyo3(signature = (metric, vary, measurement_path, inclination, inclination_range, nuisance, size, levels, require_horizon, checkpoint, progress, full_extremes))]
#[allow(clippy::too_many_arguments)]
pub fn bound_json(
    py: Python<'_>,
    metric: &Metric,
    vary: (String, (f64, f64)),
    measurement_path: PathBuf,
    inclination: Option<f64>,
    inclination_range: Option<(f64, f64)>,
    nuisance: Vec<(String, (f64, f64))>,
    size: &str,
    levels: Option<Vec<f64>>,
    require_horizon: bool,
    checkpoint: Option<PathBuf>,
    progress: Option<f64>,
    full_extremes: bool,
) -> PyResult<String> {
    let run = |stop: &std::sync::atomic::AtomicBool| -> Result<String, Fail> {
        let vary = range(&vary.0, vary.1, &format!("vary {}", vary.0))?;
        let nuisance = nuisance
            .iter()
            .map(|(n, r)| range(n, *r, &format!("nuisance {n}")))
            .collect::<Result<Vec<_>, _>>()?;
        let fixed = metric.assignments.clone();
        let inclination = match (inclination, inclination_range) {
            (Some(degrees), None) => Inclination::Fixed { degrees },
            (None, Some((low_degrees, high_degrees))) => {
                range("inclination", (low_degrees, high_degrees), "inclination")?;
                Inclination::Range {
                    low_degrees,
                    high_degrees,
                }
            }
            (None, None) => match Inclination::unspecified(&metric.source, &fixed) {
                Ok(i) => i,
                Err(BoundError::InclinationNeeded) => {
                    return Err(Fail::Input(
                        "give inclination=DEG or inclination=(LO, HI) (the metric is not spherically symmetric)".into(),
                    ))
                }
                Err(e) => return Err(input(e)),
            },
            (Some(_), Some(_)) => unreachable!("the Python layer passes one of the two"),
        };
        let m = measurement(&measurement_path, stop, progress)?;
        let radii = m.derive(levels.as_deref()).map_err(input)?;
        let request = BoundRequest {
            metric: metric.source.clone(),
            vary,
            fixed,
            inclination,
            nuisance,
            size_measure: size_measure(size)?,
            radii,
            circularity_max: m.circularity_max,
            settings: BoundSettings {
                require_horizon,
                full_extremes,
                ..BoundSettings::default()
            },
        };
        let mut file = match &checkpoint {
            Some(path) => Some(open_checkpoint(&request, path).map_err(input)?),
            None => None,
        };
        let mut line = progress_lines(progress);
        let controls = Controls {
            observers: observers(&mut line),
            stop: Some(stop),
        };
        let result = bound_with(&request, controls, file.as_mut()).map_err(|e| match e {
            BoundRunError::Interrupted { .. } => Fail::Computation(e.to_string()),
            other => input(other),
        })?;
        Ok(serde_json::to_string(&result).unwrap_or_default())
    };
    interruptible(py, run).or_raise(py)
}

/// A sampler by name.
fn sampler(name: &str) -> Result<SamplerKind, Fail> {
    match name {
        "ensemble" => Ok(SamplerKind::Ensemble),
        "nested" => Ok(SamplerKind::Nested),
        "quadrature" => Ok(SamplerKind::Quadrature),
        other => Err(Fail::Input(format!(
            "sampler must be 'ensemble', 'nested' or 'quadrature', got '{other}'"
        ))),
    }
}

/// What the Python layer passes to [`infer`] besides the metric and the measurements.
#[derive(FromPyObject)]
pub struct InferOptions {
    priors: Vec<(String, String)>,
    sampler: String,
    seed: u64,
    samples: usize,
    steps: Option<usize>,
    max_steps: Option<usize>,
    live_points: usize,
    max_panels: usize,
    levels: Vec<f64>,
    size_measure: String,
    require_horizon: bool,
    tabulate: bool,
    table_nodes: usize,
    table_dir: PathBuf,
    progress: Option<f64>,
}

/// A posterior: its report (as `umbral infer --json`, JSON), the sample columns and the
/// samples (one row each, inclinations in degrees). A run that did not converge raises
/// `NotConvergedError` with the report.
#[pyfunction]
pub fn infer<'py>(
    py: Python<'py>,
    metric: &Metric,
    measurements: Vec<PathBuf>,
    options: InferOptions,
) -> PyResult<(String, Vec<String>, Bound<'py, PyArray2<f64>>)> {
    let o = &options;
    let run =
        |stop: &std::sync::atomic::AtomicBool| -> Result<(String, Vec<String>, Array2<f64>), Fail> {
            let mut priors = Vec::new();
            for (name, value) in &metric.assignments {
                if o.priors.iter().any(|(n, _)| n == name) {
                    return Err(Fail::Input(format!(
                        "parameter '{name}' has both a value in the metric and a prior"
                    )));
                }
                priors.push((name.clone(), Prior::Fixed(*value)));
            }
            for (name, spec) in &o.priors {
                let prior =
                    Prior::parse(spec.trim()).map_err(|e| Fail::Input(format!("prior {e}")))?;
                priors.push((name.trim().to_string(), prior));
            }
            let sources = measurements
                .iter()
                .map(|p| measurement(p, stop, o.progress))
                .collect::<Result<Vec<_>, _>>()?;
            let mut request = InferenceRequest::new(metric.source.clone(), priors, sources);
            request.size_measure = size_measure(&o.size_measure)?;
            request.require_horizon = o.require_horizon;
            request.tabulate = o.tabulate;
            if !(umbral::posterior::table::MIN_NODES..=201).contains(&o.table_nodes) {
                return Err(Fail::Input(format!(
                    "table_nodes: give {} to 201, got {}",
                    umbral::posterior::table::MIN_NODES,
                    o.table_nodes
                )));
            }
            request.table_nodes = o.table_nodes;
            let model = PosteriorModel::new(&request).map_err(input)?;
            let choice = Choice {
                sampler: sampler(&o.sampler)?,
                seed: o.seed,
                samples: o.samples,
                steps: o.steps,
                max_steps: o.max_steps,
                live_points: o.live_points,
                max_panels: o.max_panels,
                levels: o.levels.clone(),
            };
            let settings = choice.settings(model.names().len()).map_err(input)?;
            settings.check(&model.names()).map_err(input)?;
            let mut line = progress_lines(o.progress);
            let model = if model.needs_tables() {
                model.table_plans().map_err(input)?;
                std::fs::create_dir_all(&o.table_dir).map_err(|e| {
                    Fail::Input(format!(
                        "table_dir {}: cannot create: {e}",
                        o.table_dir.display()
                    ))
                })?;
                let gr_limit = matches!(
                    choice.sampler,
                    SamplerKind::Nested | SamplerKind::Quadrature
                );
                let controls = Controls {
                    observers: observers(&mut line),
                    stop: Some(stop),
                };
                tabulated(model, &o.table_dir, gr_limit, controls).map_err(input)?
            } else {
                model
            };
            let controls = Controls {
                observers: observers(&mut line),
                stop: Some(stop),
            };
            let inference = infer_with(&model, &settings, controls).map_err(|e| match e {
                InferStop::Interrupted { .. } => Fail::Computation(e.to_string()),
                InferStop::Run(umbral::posterior::InferRunError::Ensemble(e)) => {
                    Fail::Input(format!("the sampler: {e}"))
                }
                InferStop::Run(e) => input(e),
            })?;
            let assumed = assumptions(&model, &settings, &inference);
            let named: Vec<String> = measurements
                .iter()
                .map(|p| p.display().to_string())
                .collect();
            let why = verdict(&inference);
            let report = Report::new(&named, &model, &inference, &assumed, why.is_none());
            let report = serde_json::to_string(&report).unwrap_or_default();
            if let Some(why) = why {
                return Err(Fail::NotConverged {
                    message: format!("NOT CONVERGED: {why}; no intervals are reported"),
                    report,
                });
            }
            let (names, degrees): (Vec<String>, Vec<bool>) =
                sample_columns(&inference).into_iter().unzip();
            let rows = inference.samples.len();
            let flat: Vec<f64> = inference
                .samples
                .iter()
                .flat_map(|row| {
                    row.iter()
                        .zip(&degrees)
                        .map(|(&x, &d)| if d { x.to_degrees() } else { x })
                })
                .collect();
            let samples = Array2::from_shape_vec((rows, names.len()), flat)
                .map_err(|e| Fail::Computation(format!("the samples do not form a table: {e}")))?;
            Ok((report, names, samples))
        };
    let (report, names, samples) = interruptible(py, run).or_raise(py)?;
    Ok((report, names, samples.into_pyarray(py)))
}

/// What the Python layer passes to [`image`] besides the metric.
#[derive(FromPyObject)]
pub struct ImageOptions {
    inclination: f64,
    emission: String,
    models: Option<PathBuf>,
    pixels: usize,
    field: f64,
    observer_radius: Option<f64>,
    blur_uas: Option<f64>,
    blur_m: Option<f64>,
    theta_g_uas: Option<f64>,
    order: String,
    progress: Option<f64>,
}

/// An image (row 0 at the top), as `umbral image --out FILE.npy` writes it.
#[pyfunction]
pub fn image<'py>(
    py: Python<'py>,
    metric: &Metric,
    options: ImageOptions,
) -> PyResult<Bound<'py, PyArray2<f64>>> {
    let o = &options;
    let run = |stop: &std::sync::atomic::AtomicBool| -> Result<Array2<f64>, Fail> {
        let observer = observer(o.inclination, o.observer_radius)?;
        positive(o.field, "field")?;
        if o.pixels == 0 || o.pixels > 8192 {
            return Err(Fail::Input(format!(
                "pixels must lie between 1 and 8192, got {}",
                o.pixels
            )));
        }
        let fwhm_m = match (o.blur_uas, o.theta_g_uas, o.blur_m) {
            (Some(_), _, Some(_)) => {
                return Err(Fail::Input("give blur_uas or blur_m, not both".into()))
            }
            (Some(b), Some(t), None) => {
                Some(uas_to_m(b, positive(t, "theta_g_uas")?).map_err(input)?)
            }
            (Some(_), None, None) => {
                return Err(Fail::Input(
                    "blur_uas needs theta_g_uas to convert micro-arcseconds to M".into(),
                ))
            }
            (None, _, Some(m)) => Some(positive(m, "blur_m")?),
            (None, _, None) => None,
        };
        let order = match o.order.as_str() {
            "all" => None,
            "0" => Some(0),
            "1" => Some(1),
            "2" => Some(2),
            other => {
                return Err(Fail::Input(format!(
                    "order must be 'all', 0, 1 or 2, got '{other}'"
                )))
            }
        };
        let model = emission_model(&o.emission, o.models.as_deref()).map_err(input)?;
        let settings = ImageSettings::new(observer, o.pixels, o.field);
        let tracer = ImageTracer::new(metric.built.as_ref(), &model, &settings).map_err(input)?;
        if order.is_some() && !tracer.has_orders() {
            return Err(Fail::Input(format!(
                "order {} needs a thin-disk model; '{}' has no equatorial crossings",
                o.order, o.emission
            )));
        }
        let mut line = progress_lines(o.progress);
        let controls = Controls {
            observers: observers(&mut line),
            stop: Some(stop),
        };
        let rendered = render(&tracer, controls).map_err(|e| match e {
            RenderError::Run(RunError::Interrupted { .. }) => Fail::Computation(e.to_string()),
            other => input(other),
        })?;
        if rendered.failed > 0 {
            return Err(Fail::Computation(format!(
                "{} of {} rays failed (first: {})",
                rendered.failed,
                o.pixels * o.pixels,
                rendered
                    .first_failure
                    .as_deref()
                    .unwrap_or("no reason given")
            )));
        }
        let native = match order {
            None => rendered.total,
            Some(k) => rendered.orders[k].clone(),
        };
        let shown = match fwhm_m {
            Some(f) => gaussian_blur(&native, f).map_err(input)?,
            None => native,
        };
        Array2::from_shape_vec((shown.pixels, shown.pixels), shown.data)
            .map_err(|e| Fail::Computation(format!("the image does not form a square: {e}")))
    };
    let image = interruptible(py, run).or_raise(py)?;
    Ok(image.into_pyarray(py))
}
