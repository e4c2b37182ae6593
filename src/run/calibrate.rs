//! The ring-to-shadow calibration: images of a list of emission models around one metric,
//! blurred to an observation's resolution, their ring diameters measured and divided by the
//! critical curve's diameter.
//!
//! For each model: the image ([`crate::image::trace`]) on the executor (the rows of every
//! model's image are the work items of one run, model after model, so that the ranks of an
//! MPI job or the shards of a job array share all of them out at once), blurred with a circular Gaussian of the resolution's FWHM
//! converted to M with θ_g ([`crate::image::blur`]); the ring features at the native
//! resolution and after blurring ([`crate::image::features`]); κ = blurred ring diameter /
//! (2 R̄), with R̄ the mean radius of the critical curve about its area centroid from the
//! metric's exact solver where one applies (the ray tracer otherwise;
//! [`crate::observables::shadow`]). The summary is κ's mean and standard deviation over the
//! models ([`KappaSummary`]). A model whose image has failed pixels fails the calibration,
//! naming the model. A model whose image shows no ring (a disk blurred into a central blob
//! by a coarse beam) has no κ: it is left out of the summary, listed in the assumptions, and
//! fewer than [`MIN_MODELS`] models with a ring is an error.

use super::cluster::{served, Served, WorkerLink};
use super::image::{decode_row, encode_row, RowSource};
use super::shard::{run_shard, MergeError, ShardJob, ShardSummary};
use super::{sha256_hex, Controls, Executor, RunError, Selection, Wire, WorkList};
use crate::error::MetricError;
use crate::image::blur::{gaussian_blur, uas_to_m};
use crate::image::emission::EmissionModel;
use crate::image::features::{ring_features, FeatureSettings, RingFeatures};
use crate::image::inner_shadow::{inner_shadow, InnerShadow};
use crate::image::models::ModelList;
use crate::image::trace::{ImageSettings, ImageTracer, PixelRecord, RenderedImage};
use crate::image::ImageError;
use crate::measurement::calibration::{CalibrationSummary, KappaSummary, CALIBRATION_FORMAT};
use crate::measurement::{Measurement, MeasurementError, SizeMeasurement};
use crate::metric::Spacetime;
use crate::metrics::MetricSource;
use crate::observables::{shadow, ShadowRequest};
use crate::shadow::Observer;
use serde::Serialize;
use std::collections::BTreeMap;
use std::path::Path;

/// A calibration needs a ring from at least this many models (or from all, if fewer).
pub const MIN_MODELS: usize = 2;

/// Pixels per side of each calibration image by default.
pub const DEFAULT_PIXELS: usize = 128;

/// How a calibration is run.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct CalibrationSettings {
    /// Observer inclination, in radians (a distant observer).
    pub inclination: f64,
    /// Blur FWHM, in μas.
    pub resolution_uas: f64,
    /// θ_g = GM/(c²D), in μas.
    pub theta_g_uas: f64,
    /// Pixels per side.
    pub pixels: usize,
    /// Field of view in M (`None`: max(24, 12 + 4 FWHM) M, room for the blurred ring).
    pub field: Option<f64>,
}

impl CalibrationSettings {
    /// The blur FWHM in M.
    pub fn fwhm_m(&self) -> Result<f64, ImageError> {
        uas_to_m(self.resolution_uas, self.theta_g_uas)
    }

    /// The field of view in M.
    pub fn field_m(&self) -> Result<f64, ImageError> {
        Ok(match self.field {
            Some(f) => f,
            None => (12.0 + 4.0 * self.fwhm_m()?).max(24.0),
        })
    }
}

/// One model's result.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ModelCalibration {
    /// The model's name.
    pub name: String,
    /// The ring at the native resolution (`None`: no ring, see `note`).
    pub native: Option<RingFeatures>,
    /// The ring after blurring (`None`: no ring at this resolution, see `note`).
    pub blurred: Option<RingFeatures>,
    /// κ = blurred ring diameter / critical-curve diameter (`None` without a blurred ring:
    /// the model is left out of the summary, and the assumptions say so).
    pub kappa: Option<f64>,
    /// κ at the native resolution.
    pub kappa_native: Option<f64>,
    /// Why a ring was not measured.
    pub note: Option<String>,
    /// The inner shadow, for models whose emission reaches the horizon.
    pub inner_shadow: Option<InnerShadow>,
    /// The disk's inner edge in M (thin disks).
    pub disk_inner_edge: Option<f64>,
    /// Accepted integrator steps over the image.
    pub steps: usize,
}

/// A calibration's result: what the measurement files read, and the details.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Calibration {
    /// The summary (metric, settings, κ mean and spread).
    #[serde(flatten)]
    pub summary: CalibrationSummary,
    /// The critical curve's mean radius R̄ about its area centroid, in M.
    pub critical_curve_mean_radius: f64,
    /// The solver that gave it.
    pub critical_curve_solver: String,
    /// Pixels per side and field of view in M of the images.
    pub pixels: usize,
    /// See `pixels`.
    pub field_m: f64,
    /// Blur FWHM in M.
    pub fwhm_m: f64,
    /// Each model.
    pub models: Vec<ModelCalibration>,
    /// What the numbers assume.
    pub assumptions: Vec<String>,
}

/// Why a calibration gave no κ.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum CalibrateError {
    /// A bad request (settings, metric, model list).
    #[error("{0}")]
    BadRequest(String),
    /// A model's image or ring failed.
    #[error("model '{model}': {message}")]
    Model {
        /// The model.
        model: String,
        /// What failed.
        message: String,
    },
    /// The run stopped.
    #[error(transparent)]
    Run(#[from] RunError),
    /// Merged shards do not hold this calibration's images.
    #[error(transparent)]
    Merge(#[from] MergeError),
}

impl From<ImageError> for CalibrateError {
    fn from(e: ImageError) -> Self {
        CalibrateError::BadRequest(e.to_string())
    }
}

/// The critical curve's mean radius about its area centroid and the solver's name; an error
/// for a curve that is not known to meet its boundary tolerance.
pub fn critical_mean_radius(
    spacetime: &dyn Spacetime,
    observer: &Observer,
) -> Result<(f64, String), String> {
    let request = ShadowRequest {
        observer: *observer,
        ..ShadowRequest::distant(observer.inclination)
    }
    .curve_only();
    let s = shadow(spacetime, &request).map_err(|e| e.to_string())?;
    if let Some(why) = s.result.diagnostics.tolerance_shortfall() {
        return Err(format!(
            "the critical curve is not known to lie within the boundary tolerance: {why}"
        ));
    }
    let solver = s.result.solver.to_string();
    let o = s.observables.map_err(|e| e.to_string())?;
    Ok((o.mean_radius, solver))
}

/// Every model's image rows as one work list: model after model, row after row (the key of
/// row `r` of model `NAME` is `NAME row r`).
struct ModelRows<'t, 'm> {
    tracers: &'t [ImageTracer<'m>],
    models: &'t ModelList,
    pixels: usize,
}

impl WorkList for ModelRows<'_, '_> {
    type Output = Vec<PixelRecord>;
    fn len(&self) -> usize {
        self.tracers.len() * self.pixels
    }
    fn key(&self, index: usize) -> String {
        let name = &self.models.models[index / self.pixels].name;
        format!("{name} row {}", index % self.pixels)
    }
    fn run(&self, index: usize) -> Vec<PixelRecord> {
        self.tracers[index / self.pixels].trace_row(index % self.pixels)
    }
    fn wire(&self) -> Option<&dyn Wire<Vec<PixelRecord>>> {
        Some(self)
    }
}

impl Wire<Vec<PixelRecord>> for ModelRows<'_, '_> {
    fn id(&self) -> String {
        let mut text = String::from("calibration rows");
        for (named, tracer) in self.models.models.iter().zip(self.tracers) {
            text.push_str(&format!("|{}|{}", named.name, tracer.identity()));
        }
        sha256_hex(text.as_bytes())
    }
    fn encode(&self, row: &Vec<PixelRecord>) -> String {
        encode_row(row)
    }
    fn decode(&self, text: &str) -> Result<Vec<PixelRecord>, String> {
        decode_row(text)
    }
}

/// The settings of every image of a calibration.
fn image_settings(settings: &CalibrationSettings) -> Result<ImageSettings, CalibrateError> {
    if !(settings.theta_g_uas.is_finite() && settings.theta_g_uas > 0.0) {
        return Err(CalibrateError::BadRequest(format!(
            "theta_g must be a positive number of uas, got {}",
            settings.theta_g_uas
        )));
    }
    settings.fwhm_m()?;
    let observer = Observer::distant(settings.inclination);
    Ok(ImageSettings::new(
        observer,
        settings.pixels,
        settings.field_m()?,
    ))
}

/// Each model's tracer, in the list's order.
fn tracers<'m>(
    spacetime: &'m dyn Spacetime,
    models: &ModelList,
    image_settings: &ImageSettings,
) -> Result<Vec<ImageTracer<'m>>, CalibrateError> {
    models
        .models
        .iter()
        .map(|named| {
            ImageTracer::new(spacetime, &named.model, image_settings).map_err(|e| {
                CalibrateError::Model {
                    model: named.name.clone(),
                    message: e.to_string(),
                }
            })
        })
        .collect()
}

/// Trace shard `job.shard` of a calibration's image rows (every model's) into the shard file
/// `path`.
pub fn calibrate_shard(
    spacetime: &dyn Spacetime,
    settings: &CalibrationSettings,
    models: &ModelList,
    job: &ShardJob,
    path: &Path,
    controls: Controls<'_>,
) -> Result<ShardSummary, CalibrateError> {
    let image_settings = image_settings(settings)?;
    let tracers = tracers(spacetime, models, &image_settings)?;
    let rows = ModelRows {
        tracers: &tracers,
        models,
        pixels: settings.pixels,
    };
    Ok(run_shard(
        &rows,
        job,
        path,
        "calibrate",
        "image rows",
        controls,
    )?)
}

/// Serve a calibration's image rows to the master of an MPI job until it ends the program;
/// returns the rows traced here.
pub fn serve_calibration(
    spacetime: &dyn Spacetime,
    settings: &CalibrationSettings,
    models: &ModelList,
    link: &mut dyn WorkerLink,
) -> Result<usize, CalibrateError> {
    let image_settings = image_settings(settings)?;
    let tracers = tracers(spacetime, models, &image_settings)?;
    let rows = ModelRows {
        tracers: &tracers,
        models,
        pixels: settings.pixels,
    };
    let lists: Vec<Box<dyn Served + '_>> = served(rows).into_iter().collect();
    let lists: Vec<&dyn Served> = lists.iter().map(|b| b.as_ref()).collect();
    Ok(super::cluster::serve(link, &lists))
}

/// Calibrate κ for `spacetime` (named `metric` with `parameters`) over `models`.
pub fn calibrate(
    spacetime: &dyn Spacetime,
    metric: &str,
    parameters: &BTreeMap<String, f64>,
    settings: &CalibrationSettings,
    models: &ModelList,
    controls: Controls<'_>,
) -> Result<Calibration, CalibrateError> {
    calibrate_from(
        spacetime,
        metric,
        parameters,
        settings,
        models,
        controls,
        RowSource::Trace,
    )
}

/// [`calibrate`] with the image rows from `source`.
// Long: one loop over the models (assemble, blur, measure) with the run's bookkeeping around it; each step is a call.
pub fn calibrate_from(
    spacetime: &dyn Spacetime,
    metric: &str,
    parameters: &BTreeMap<String, f64>,
    settings: &CalibrationSettings,
    models: &ModelList,
    controls: Controls<'_>,
    source: RowSource<'_>,
) -> Result<Calibration, CalibrateError> {
    let image_settings = image_settings(settings)?;
    let (fwhm, field) = (settings.fwhm_m()?, settings.field_m()?);
    let observer = image_settings.observer;
    let (mean_radius, solver) = critical_mean_radius(spacetime, &observer)
        .map_err(|e| CalibrateError::BadRequest(format!("no critical curve to compare: {e}")))?;
    let features = FeatureSettings::default();
    let tracers = tracers(spacetime, models, &image_settings)?;
    let rows = ModelRows {
        tracers: &tracers,
        models,
        pixels: settings.pixels,
    };
    let exec = Executor::new("calibrate", "image rows").with(controls);
    let batch = match source {
        RowSource::Trace => exec.run(&rows, &Selection::All)?,
        RowSource::Merged(merged) => {
            let mut recalled = merged.recall(&rows)?;
            exec.checkpoint(&mut recalled).run(&rows, &Selection::All)?
        }
    };
    let mut outputs = batch.outputs.into_iter();
    let mut results = Vec::new();
    for (named, tracer) in models.models.iter().zip(&tracers) {
        let fail = |message: String| CalibrateError::Model {
            model: named.name.clone(),
            message,
        };
        let image_rows: Vec<Vec<PixelRecord>> = outputs.by_ref().take(settings.pixels).collect();
        let image = RenderedImage::assemble(tracer, image_rows)?;
        if image.failed > 0 {
            return Err(fail(format!(
                "{} of {} rays failed ({})",
                image.failed,
                settings.pixels * settings.pixels,
                image.first_failure.as_deref().unwrap_or("no reason given")
            )));
        }
        let native = ring_features(&image.total, &features);
        let blurred_image = gaussian_blur(&image.total, fwhm).map_err(|e| fail(e.to_string()))?;
        let blurred = ring_features(&blurred_image, &features);
        let note = match (&native, &blurred) {
            (Err(e), _) => Some(format!("no ring at full resolution: {e}")),
            (_, Err(e)) => Some(format!("no ring at this resolution: {e}")),
            _ => None,
        };
        let (native, blurred) = (native.ok(), blurred.ok());
        let inner = tracer
            .reaches_horizon()
            .then(|| inner_shadow(tracer, &image))
            .flatten();
        results.push(ModelCalibration {
            name: named.name.clone(),
            kappa: blurred.as_ref().map(|r| r.diameter / (2.0 * mean_radius)),
            kappa_native: native.as_ref().map(|r| r.diameter / (2.0 * mean_radius)),
            note,
            native,
            blurred,
            inner_shadow: inner,
            disk_inner_edge: tracer.disk_inner_edge(),
            steps: image.steps,
        });
    }
    let kappas: Vec<f64> = results.iter().filter_map(|m| m.kappa).collect();
    let left_out: Vec<String> = results
        .iter()
        .filter(|m| m.kappa.is_none())
        .map(|m| format!("{} ({})", m.name, m.note.as_deref().unwrap_or("no ring")))
        .collect();
    if kappas.len() < MIN_MODELS.min(results.len()) {
        return Err(CalibrateError::BadRequest(format!(
            "only {} of {} models show a ring at {} uas (left out: {}); a finer resolution or \
             other models are needed",
            kappas.len(),
            results.len(),
            settings.resolution_uas,
            left_out.join("; ")
        )));
    }
    let kappa = KappaSummary::of(&kappas)
        .ok_or_else(|| CalibrateError::BadRequest("no model gave a finite kappa".to_string()))?;
    let summary = CalibrationSummary {
        format: CALIBRATION_FORMAT.to_string(),
        umbral_version: env!("CARGO_PKG_VERSION").to_string(),
        metric: metric.to_string(),
        parameters: parameters.clone(),
        inclination_deg: settings.inclination.to_degrees(),
        resolution_uas: settings.resolution_uas,
        theta_g_uas: settings.theta_g_uas,
        kappa,
    };
    let assumptions = vec![
        format!(
            "images: {} x {} pixels over {:.4} M, distant observer, rays traced backwards \
             (Dormand-Prince 5(4), relative tolerance {:e}), thin disks summed over equatorial \
             crossings n = 0..{}",
            settings.pixels, settings.pixels, field, image_settings.rtol, image_settings.max_order
        ),
        format!(
            "blur: circular Gaussian of FWHM {} uas = {:.4} M at theta_g = {} uas; the sky \
             outside the field is dark",
            settings.resolution_uas, fwhm, settings.theta_g_uas
        ),
        "ring diameter: twice the mean over 360 directions from the brightness centroid of \
         the peak radius of the radial brightness profile (a method of our own)"
            .to_string(),
        format!(
            "shadow diameter: 2 x the mean radius {mean_radius:.6} M of the critical curve \
             about its area centroid ({solver} solver)"
        ),
        format!(
            "kappa: mean and sample standard deviation over the {} models; the spread stands \
             for the emission-modelling uncertainty",
            kappa.models
        ),
    ];
    let mut assumptions = assumptions;
    if !left_out.is_empty() {
        assumptions.push(format!(
            "left out of kappa (no ring to measure): {}",
            left_out.join("; ")
        ));
    }
    Ok(Calibration {
        summary,
        critical_curve_mean_radius: mean_radius,
        critical_curve_solver: solver,
        pixels: settings.pixels,
        field_m: field,
        fwhm_m: fwhm,
        models: results,
        assumptions,
    })
}

/// A model list read from a file (TOML), or the built-in list.
pub fn model_list(path: Option<&Path>) -> Result<ModelList, CalibrateError> {
    let Some(path) = path else {
        return Ok(ModelList::built_in());
    };
    let text = crate::input::read_text(path).map_err(|e| {
        CalibrateError::BadRequest(format!("cannot read model list '{}': {e}", path.display()))
    })?;
    ModelList::from_toml(&text)
        .map_err(|e| CalibrateError::BadRequest(format!("'{}': {e}", path.display())))
}

/// The emission model `name`: from the model list `list` (a file, else the built-in list),
/// else among the built-in names (`disk-isco`, `disk-horizon`, `infall`).
pub fn emission_model(name: &str, list: Option<&Path>) -> Result<EmissionModel, CalibrateError> {
    let models = model_list(list)?;
    if let Some(m) = models.models.iter().find(|m| m.name == name) {
        return Ok(m.model);
    }
    if let Some(m) = EmissionModel::built_in(name) {
        return Ok(m);
    }
    let names: Vec<&str> = models.models.iter().map(|m| m.name.as_str()).collect();
    Err(CalibrateError::BadRequest(format!(
        "unknown emission model '{name}' (known: {})",
        names.join(", ")
    )))
}

/// Why a measurement's pending κ calibration could not be computed.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ResolveError {
    /// The calibration's metric.
    #[error(transparent)]
    Metric(#[from] MetricError),
    /// The calibration's model list.
    #[error(transparent)]
    Models(CalibrateError),
    /// The calibration failed or was stopped.
    #[error("calibration: {0}")]
    Calibration(CalibrateError),
    /// The measurement refused the result.
    #[error(transparent)]
    Measurement(#[from] MeasurementError),
}

/// Compute the κ calibration a measurement file asks for (`ring_to_shadow = "computed"`) on an
/// executor carrying `controls`, and give the measurement its result; nothing to do for a
/// measurement without one.
pub fn resolve_measurement(
    m: &mut Measurement,
    controls: Controls<'_>,
) -> Result<(), ResolveError> {
    let Some(request) = m.pending_calibration().cloned() else {
        return Ok(());
    };
    let SizeMeasurement::Ring(chain) = &m.size else {
        unreachable!("only a ring chain has a calibration")
    };
    let theta_g_uas = chain.central_theta_g_uas();
    let source = MetricSource::builtin(&request.metric)?;
    let assignments: Vec<(String, f64)> = request.parameters.clone().into_iter().collect();
    let spacetime = source.build(&assignments)?;
    let models = model_list(request.models.as_deref()).map_err(ResolveError::Models)?;
    let settings = CalibrationSettings {
        inclination: request.inclination_deg.to_radians(),
        resolution_uas: request.resolution_uas,
        theta_g_uas,
        pixels: request.pixels.unwrap_or(DEFAULT_PIXELS),
        field: request.field_m,
    };
    let calibration = calibrate(
        spacetime.as_ref(),
        &spacetime.info().name.to_string(),
        &request.parameters,
        &settings,
        &models,
        controls,
    )
    .map_err(ResolveError::Calibration)?;
    Ok(m.resolve_calibration(calibration.summary)?)
}
