//! Images on the run executor: each row of pixels is a work item, so observers see the rows
//! finish, a stop request ends the run after the rows in progress, and the image is the same
//! at any number of threads (each pixel depends on its own ray alone).
//!
//! Rows travel ([`super::Wire`]) as JSON arrays of pixels, every number bit-exact (a number
//! that is not finite, such as a failed pixel's NaN, as the string `bits:` and its IEEE-754
//! bits in hexadecimal), so an image traced by the ranks of an MPI job, or in shards and
//! merged, is the image one process traces, byte for byte in every file written from it.

use super::cluster::{served, Served, WorkerLink};
use super::shard::{run_shard, MergeError, Merged, ShardJob, ShardSummary};
use super::{sha256_hex, Controls, Executor, RunError, Selection, Wire, WorkList};
use crate::image::trace::{ImageTracer, PixelFate, PixelRecord, RenderedImage};
use crate::image::ImageError;
use serde_json::{json, Value};
use std::path::Path;

/// Why no image came out.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum RenderError {
    /// The run stopped.
    #[error(transparent)]
    Run(#[from] RunError),
    /// The rows could not be assembled.
    #[error(transparent)]
    Image(#[from] ImageError),
    /// Merged shards do not hold this image.
    #[error(transparent)]
    Merge(#[from] MergeError),
}

/// Where the rows of an image come from.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum RowSource<'m> {
    /// Traced here (or by the ranks of an MPI job, [`super::cluster`]).
    Trace,
    /// Recalled from merged shard files: nothing is traced.
    Merged(&'m Merged),
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
    fn wire(&self) -> Option<&dyn Wire<Vec<PixelRecord>>> {
        Some(self)
    }
}

impl Wire<Vec<PixelRecord>> for Rows<'_, '_> {
    fn id(&self) -> String {
        sha256_hex(format!("image rows|{}", self.tracer.identity()).as_bytes())
    }
    fn encode(&self, row: &Vec<PixelRecord>) -> String {
        encode_row(row)
    }
    fn decode(&self, text: &str) -> Result<Vec<PixelRecord>, String> {
        decode_row(text)
    }
}

/// A number as JSON: itself when finite, else `"bits:HEX"`.
fn number(x: f64) -> Value {
    if x.is_finite() {
        json!(x)
    } else {
        json!(format!("bits:{:016x}", x.to_bits()))
    }
}

fn read_number(v: &Value) -> Result<f64, String> {
    match v {
        Value::Number(n) => n.as_f64().ok_or_else(|| format!("bad number {n}")),
        Value::String(s) => s
            .strip_prefix("bits:")
            .and_then(|h| u64::from_str_radix(h, 16).ok())
            .map(f64::from_bits)
            .ok_or_else(|| format!("bad number '{s}'")),
        other => Err(format!("expected a number, got {other}")),
    }
}

fn fate_name(fate: PixelFate) -> &'static str {
    match fate {
        PixelFate::Captured => "captured",
        PixelFate::Escaped => "escaped",
        PixelFate::LastOrder => "last_order",
        PixelFate::Failed => "failed",
    }
}

/// A row as JSON text: one array `[fate, total, [by order], [crossings], unphysical, steps,
/// failure]` per pixel.
pub(crate) fn encode_row(row: &[PixelRecord]) -> String {
    let pixels: Vec<Value> = row
        .iter()
        .map(|p| {
            json!([
                fate_name(p.fate),
                number(p.total),
                p.by_order.iter().map(|&x| number(x)).collect::<Vec<_>>(),
                p.crossings.iter().map(|&x| number(x)).collect::<Vec<_>>(),
                p.unphysical,
                p.steps,
                p.failure
            ])
        })
        .collect();
    Value::Array(pixels).to_string()
}

pub(crate) fn decode_row(text: &str) -> Result<Vec<PixelRecord>, String> {
    let v: Value = serde_json::from_str(text).map_err(|e| e.to_string())?;
    let numbers = |v: &Value| -> Result<Vec<f64>, String> {
        v.as_array()
            .ok_or("expected an array of numbers")?
            .iter()
            .map(read_number)
            .collect()
    };
    let count = |v: &Value| v.as_u64().map(|n| n as usize).ok_or("expected a count");
    v.as_array()
        .ok_or("a row is an array of pixels")?
        .iter()
        .map(|p| {
            let Some([fate, total, by_order, crossings, unphysical, steps, failure]) =
                p.as_array().map(Vec::as_slice)
            else {
                return Err("a pixel is an array of 7 entries".to_string());
            };
            Ok(PixelRecord {
                fate: match fate.as_str() {
                    Some("captured") => PixelFate::Captured,
                    Some("escaped") => PixelFate::Escaped,
                    Some("last_order") => PixelFate::LastOrder,
                    Some("failed") => PixelFate::Failed,
                    _ => return Err(format!("unknown fate {fate}")),
                },
                total: read_number(total)?,
                by_order: numbers(by_order)?,
                crossings: numbers(crossings)?,
                unphysical: count(unphysical)?,
                steps: count(steps)?,
                failure: match failure {
                    Value::Null => None,
                    Value::String(s) => Some(s.clone()),
                    other => return Err(format!("bad failure {other}")),
                },
            })
        })
        .collect()
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
    render_from(tracer, controls, RowSource::Trace)
}

/// [`render`] with the rows from `source`.
pub fn render_from(
    tracer: &ImageTracer,
    controls: Controls<'_>,
    source: RowSource<'_>,
) -> Result<RenderedImage, RenderError> {
    let rows = Rows { tracer };
    let exec = Executor::new("image", "rows").with(controls);
    let batch = match source {
        RowSource::Trace => exec.run(&rows, &Selection::All)?,
        RowSource::Merged(merged) => {
            let mut recalled = merged.recall(&rows)?;
            exec.checkpoint(&mut recalled).run(&rows, &Selection::All)?
        }
    };
    Ok(RenderedImage::assemble(tracer, batch.outputs)?)
}

/// Trace shard `job.shard` of the image's rows into the shard file `path`.
pub fn render_shard(
    tracer: &ImageTracer,
    job: &ShardJob,
    path: &Path,
    controls: Controls<'_>,
) -> Result<ShardSummary, RunError> {
    run_shard(&Rows { tracer }, job, path, "image", "rows", controls)
}

/// Serve the rows of `tracer`'s image to the master of an MPI job until it ends the
/// program; returns the rows traced here.
pub fn serve_image(tracer: &ImageTracer, link: &mut dyn WorkerLink) -> usize {
    let lists: Vec<Box<dyn Served + '_>> = served(Rows { tracer }).into_iter().collect();
    let lists: Vec<&dyn Served> = lists.iter().map(|b| b.as_ref()).collect();
    super::cluster::serve(link, &lists)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rows_read_back_bit_for_bit() {
        let row = vec![
            PixelRecord {
                fate: PixelFate::Failed,
                total: -f64::NAN,
                by_order: vec![0.0, -0.0, f64::INFINITY],
                crossings: vec![],
                unphysical: 2,
                steps: 17,
                failure: Some("a \"quoted\" reason".into()),
            },
            PixelRecord {
                fate: PixelFate::LastOrder,
                total: 0.1 + 0.2,
                by_order: vec![1e-300, 5e-324],
                crossings: vec![6.000000000000001, 3.0],
                unphysical: 0,
                steps: 3,
                failure: None,
            },
        ];
        let back = decode_row(&encode_row(&row)).unwrap();
        let bits = |r: &[PixelRecord]| -> Vec<u64> {
            r.iter()
                .flat_map(|p| {
                    std::iter::once(p.total)
                        .chain(p.by_order.iter().copied())
                        .chain(p.crossings.iter().copied())
                })
                .map(f64::to_bits)
                .collect()
        };
        assert_eq!(bits(&back), bits(&row));
        assert_eq!(back[0].failure, row[0].failure);
        assert_eq!((back[1].fate, back[1].steps), (PixelFate::LastOrder, 3));
        assert!(decode_row("[[\"lost\",1,[],[],0,0,null]]").is_err());
    }
}
