//! Metrics without writing Rust: a small TOML file whose formulas compile to a
//! [`Metric`](crate::metric::Metric) that is generic over the dual-number scalar, so a file
//! metric gets everything a built-in one gets (exact Christoffel symbols, horizons, every
//! shadow solver). The format is described in `docs/metric-files.md`.
//!
//! ```
//! use umbral::metric::Spacetime;
//! use umbral::metric_file::parse_metric_file;
//!
//! let text = r#"
//! name = "tidal"
//! title = "Braneworld tidal charge"
//! reference = "Dadhich, Maartens, Papadopoulos & Rezania 2000, Phys. Lett. B 487, 1"
//! symmetry = "spherical"
//! helpers = ["f = 1 - 2/r + q2/r^2"]
//!
//! [[parameters]]
//! name = "q2"
//! default = -0.5
//! domain = "(-inf, 1]"
//! meaning = "tidal charge"
//!
//! [line_element]
//! A = "f"
//! B = "1/f"
//! C = "r^2"
//! "#;
//! let spec = parse_metric_file(text, "tidal.toml").unwrap();
//! let m = spec.instantiate(&[("q2".to_string(), -0.5)]).unwrap();
//! // r₊ = 1 + √(1 − q2) from the default numerical horizon finder.
//! assert!((m.outer_horizon().unwrap() - (1.0 + 1.5f64.sqrt())).abs() < 1e-12);
//! // A typo is reported with its place and the closest known name.
//! let bad = text.replace("C = \"r^2\"", "C = \"rr^2\"");
//! let err = parse_metric_file(&bad, "tidal.toml").unwrap_err();
//! assert!(err.to_string().contains("unknown name 'rr'"));
//! assert!(err.to_string().contains("did you mean 'r'?"));
//! ```

mod error;
mod lexer;
mod load;
mod metric;
mod parser;
mod program;
mod resolve;
mod schema;
mod strings;

pub use error::{Location, MetricFileError};

/// The metric-file format (docs/metric-files.md); its Rust example is compiled as a doctest.
#[doc = include_str!("../../docs/metric-files.md")]
pub mod format {}
pub use metric::{CheckValue, FileMetric, FileMetricSpec};

use std::path::{Path, PathBuf};

/// Read, parse, check and compile a metric file.
///
/// Errors carry the file, line and column, the source line with a caret, and what was
/// expected ([`MetricFileError`]'s `Display`); [`MetricFileError::summary`] gives one line.
pub fn load_metric_file(path: &Path) -> Result<FileMetricSpec, MetricFileError> {
    let label = path.display().to_string();
    let text = crate::input::read_text(path).map_err(|e| MetricFileError::Read {
        path: label.clone(),
        reason: e.to_string(),
    })?;
    let mut spec = load::parse_spec(&text, &label)?;
    spec.path = Some(path.to_path_buf());
    Ok(spec)
}

/// Parse, check and compile the text of a metric file; `label` names it in error messages.
pub fn parse_metric_file(text: &str, label: &str) -> Result<FileMetricSpec, MetricFileError> {
    load::parse_spec(text, label)
}

/// Every `*.toml` file of a directory, sorted by path, each loaded (or its error). A
/// directory that cannot be read gives one entry with the read error.
pub fn list_metric_dir(dir: &Path) -> Vec<(PathBuf, Result<FileMetricSpec, MetricFileError>)> {
    let paths = match crate::input::list_files(dir, "toml") {
        Ok(paths) => paths,
        Err(e) => {
            return vec![(
                dir.to_path_buf(),
                Err(MetricFileError::Read {
                    path: dir.display().to_string(),
                    reason: e.to_string(),
                }),
            )]
        }
    };
    paths
        .into_iter()
        .map(|p| {
            let spec = load_metric_file(&p);
            (p, spec)
        })
        .collect()
}
