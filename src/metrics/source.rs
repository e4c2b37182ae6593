//! One way of naming a metric, whatever it is made of: a built-in metric or a metric file.

use super::{find_builtin, MetricEntry};
use crate::error::MetricError;
use crate::metric::{MetricInfo, Spacetime};
use crate::metric_file::{load_metric_file, parse_metric_file, FileMetricSpec, MetricFileError};
use sha2::{Digest, Sha256};
use std::path::Path;
use std::sync::Arc;

/// Where a metric comes from: a built-in metric, or a loaded declarative metric file. The
/// command line (`--metric` / `--metric-file`), checks files (`metric` / `metric_file`),
/// bounds and scans all name their metric this way.
///
/// ```
/// use umbral::metrics::MetricSource;
///
/// let kerr = MetricSource::builtin("kerr").unwrap();
/// let m = kerr.build(&[("a".to_string(), 0.3)]).unwrap();
/// assert_eq!(m.parameter_values(), vec![0.3]);
/// assert_eq!(kerr.label(), "kerr");
/// assert!(MetricSource::builtin("no-such-metric").is_err());
///
/// // A metric file, side by side with the built-in metrics.
/// let text = r#"
/// name = "flat"
/// title = "Minkowski"
/// reference = "textbook"
/// symmetry = "spherical"
/// [line_element]
/// A = "1"
/// B = "1"
/// C = "r^2"
/// "#;
/// let file = MetricSource::from(umbral::metric_file::parse_metric_file(text, "flat.toml").unwrap());
/// assert_eq!(file.name(), "flat");
/// assert_eq!(file.build(&[]).unwrap().outer_horizon(), None);
/// ```
#[derive(Debug, Clone, PartialEq)]
pub enum MetricSource {
    /// A built-in metric (see [`builtin_metrics`](super::builtin_metrics)).
    Builtin(MetricEntry),
    /// A metric file (see docs/metric-files.md).
    File(Arc<FileMetricSpec>),
}

/// Why a metric source's content hash cannot be formed.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SourceError {
    /// The metric file cannot be read again.
    #[error("cannot read metric file '{path}': {reason}")]
    Read {
        /// The file.
        path: String,
        /// Why not.
        reason: String,
    },
    /// The metric file on disk no longer compiles to the metric that was loaded from it.
    #[error("metric file '{path}' changed since it was loaded")]
    Changed {
        /// The file.
        path: String,
    },
}

impl MetricSource {
    /// The built-in metric of this name; an unknown name is an error listing the known ones.
    pub fn builtin(name: &str) -> Result<MetricSource, MetricError> {
        find_builtin(name).map(MetricSource::Builtin)
    }

    /// Read, parse, check and compile a metric file ([`load_metric_file`]).
    pub fn load(path: &Path) -> Result<MetricSource, MetricFileError> {
        load_metric_file(path).map(MetricSource::from)
    }

    /// The metric at these `name=value` assignments, defaults for the rest: names, repeats,
    /// finiteness and domains are checked.
    pub fn build(&self, assignments: &[(String, f64)]) -> Result<Box<dyn Spacetime>, MetricError> {
        match self {
            MetricSource::Builtin(entry) => entry.build(assignments),
            MetricSource::File(spec) => Ok(Box::new(spec.instantiate(assignments)?)),
        }
    }

    /// Name, title, reference and parameter specifications, without building the metric.
    pub fn info(&self) -> MetricInfo {
        match self {
            MetricSource::Builtin(entry) => entry.info(),
            MetricSource::File(spec) => spec.info().clone(),
        }
    }

    /// The metric's name (a file's declared name).
    pub fn name(&self) -> String {
        self.info().name
    }

    /// The metric file it was read from, if any.
    pub fn path(&self) -> Option<&Path> {
        match self {
            MetricSource::Builtin(_) => None,
            MetricSource::File(spec) => spec.path(),
        }
    }

    /// A label that tells built-in and file metrics apart: `kerr` or `file:PATH`.
    pub fn label(&self) -> String {
        match self {
            MetricSource::Builtin(entry) => entry.name(),
            MetricSource::File(spec) => match spec.path() {
                Some(path) => format!("file:{}", path.display()),
                None => format!("file:{}", spec.info().name),
            },
        }
    }

    /// SHA-256 (lower-case hexadecimal) of the metric's content, so that results computed
    /// from it are never mixed with those of an edited metric: a metric file read from disk
    /// is hashed by its bytes, read again here and checked to compile to this metric (so the
    /// hash belongs to the formulas in use); a metric file given as text by its compiled form;
    /// a built-in metric by its name and parameter specifications (the umbral version, which
    /// fixes its formulas, is recorded beside the hash by whoever stores it).
    pub fn content_sha256(&self) -> Result<String, SourceError> {
        match self {
            MetricSource::Builtin(entry) => {
                // MetricInfo holds strings and numbers only: serialising it cannot fail.
                let text = serde_json::to_string(&entry.info()).unwrap_or_default();
                Ok(sha256_hex(format!("builtin\n{text}").as_bytes()))
            }
            MetricSource::File(spec) => match spec.path() {
                None => Ok(sha256_hex(format!("compiled\n{spec:?}").as_bytes())),
                Some(path) => file_sha256(spec, path),
            },
        }
    }
}

/// The bytes' hash of a metric file on disk, after checking they still compile to `spec`.
fn file_sha256(spec: &FileMetricSpec, path: &Path) -> Result<String, SourceError> {
    let read = |e: crate::input::InputError| SourceError::Read {
        path: path.display().to_string(),
        reason: e.to_string(),
    };
    let bytes =
        crate::input::read_bytes_capped(path, crate::input::MAX_INPUT_BYTES).map_err(read)?;
    let text = crate::input::utf8(bytes.clone()).map_err(read)?;
    let unchanged = match parse_metric_file(&text, &path.display().to_string()) {
        Ok(mut again) => {
            again.path = Some(path.to_path_buf());
            again == *spec
        }
        Err(_) => false,
    };
    if !unchanged {
        return Err(SourceError::Changed {
            path: path.display().to_string(),
        });
    }
    Ok(sha256_hex(&bytes))
}

/// Lower-case hexadecimal SHA-256 of `bytes`.
pub(crate) fn sha256_hex(bytes: &[u8]) -> String {
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

impl From<FileMetricSpec> for MetricSource {
    fn from(spec: FileMetricSpec) -> Self {
        MetricSource::File(Arc::new(spec))
    }
}

impl From<MetricEntry> for MetricSource {
    fn from(entry: MetricEntry) -> Self {
        MetricSource::Builtin(entry)
    }
}
