//! Images on the run executor: each row of pixels is a work item, so observers see the rows
//! finish, a stop request ends the run after the rows in progress, and the image is the same
//! at any number of threads (each pixel depends on its own ray alone).

use super::{Controls, Executor, RunError, Selection, WorkList};
use crate::image::trace::{ImageTracer, PixelRecord, RenderedImage};
use crate::image::ImageError;

/// Why no image came out.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum RenderError {
    /// The run stopped.
    #[error(transparent)]
    Run(#[from] RunError),
    /// The rows could not be assembled.
    #[error(transparent)]
    Image(#[from] ImageError),
}

/// The rows of an image as work items.
pub(crate) struct Rows<'t, 'm> {
    pub(crate) tracer: &'t ImageTracer<'m>,
}

impl WorkList for Rows<'_, '_> {
    type Output = Vec<PixelRecord>;
    fn len(&self) -> usize {
        self.tracer.settings().pixels
    }
    fn key(&self, index: usize) -> String {
        format!("row {index}")
    }
    fn run(&self, index: usize) -> Vec<PixelRecord> {
        self.tracer.trace_row(index)
    }
}

/// Trace every pixel of `tracer`'s image on an executor carrying `controls`.
///
/// ```
/// use umbral::image::emission::EmissionModel;
/// use umbral::image::trace::{ImageSettings, ImageTracer};
/// use umbral::metrics::Schwarzschild;
/// use umbral::run::image::render;
/// use umbral::run::Controls;
/// use umbral::shadow::Observer;
///
/// let model = EmissionModel::built_in("infall").unwrap();
/// let settings = ImageSettings::new(Observer::distant(1.0), 6, 16.0);
/// let tracer = ImageTracer::new(&Schwarzschild, &model, &settings).unwrap();
/// let image = render(&tracer, Controls::default()).unwrap();
/// assert_eq!(image.failed, 0);
/// assert!(image.total.data.iter().all(|&x| x > 0.0));
/// ```
pub fn render(tracer: &ImageTracer, controls: Controls<'_>) -> Result<RenderedImage, RenderError> {
    let batch = Executor::new("image", "rows")
        .with(controls)
        .run(&Rows { tracer }, &Selection::All)?;
    Ok(RenderedImage::assemble(tracer, batch.outputs)?)
}
