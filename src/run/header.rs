//! The first line of a checkpoint: everything that determines the records, including a
//! SHA-256 hash of the metric itself, so a resumed run never mixes results of an edited metric
//! file, another version of umbral or other arguments.
//!
//! A header is a JSON object whose first field is `umbral_KIND` (the format number of that
//! kind of run: `umbral_scan`, `umbral_bound`), then `umbral_version`, and whatever else the
//! run depends on, with `metric` and `metric_sha256` among them.

use super::checkpoint::CheckpointError;
use crate::metrics::{MetricSource, SourceError};
use serde::de::DeserializeOwned;
use serde::Serialize;
use serde_json::Value;

/// Lower-case hexadecimal SHA-256 of `bytes`.
///
/// ```
/// assert_eq!(
///     umbral::run::sha256_hex(b"abc"),
///     "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
/// );
/// ```
pub fn sha256_hex(bytes: &[u8]) -> String {
    crate::metrics::sha256_hex(bytes)
}

/// Why the metric's content hash could not be made.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum MetricHashError {
    /// The metric file cannot be read again.
    #[error("cannot read '{path}': {message}")]
    Read {
        /// The metric file.
        path: String,
        /// The operating system's message.
        message: String,
    },
    /// The metric file on disk is no longer the one loaded.
    #[error("metric file '{path}' changed while the run was starting; run it again")]
    Changed {
        /// The metric file.
        path: String,
    },
}

/// The metric's content hash ([`MetricSource::content_sha256`]), its errors in run terms.
///
/// ```
/// use umbral::metrics::MetricSource;
/// let kerr = umbral::run::metric_sha256(&MetricSource::builtin("kerr").unwrap()).unwrap();
/// assert_eq!(kerr.len(), 64);
/// let kn = MetricSource::builtin("kerr-newman").unwrap();
/// assert_ne!(kerr, umbral::run::metric_sha256(&kn).unwrap());
/// ```
pub fn metric_sha256(source: &MetricSource) -> Result<String, MetricHashError> {
    source.content_sha256().map_err(|e| match e {
        SourceError::Read { path, reason } => MetricHashError::Read {
            path,
            message: reason,
        },
        SourceError::Changed { path } => MetricHashError::Changed { path },
    })
}

/// A JSON value for a message: compact, and cut short when long.
fn brief(v: Option<&Value>) -> String {
    let Some(v) = v else {
        return "absent".into();
    };
    let s = v.to_string();
    if s.chars().count() > 60 {
        format!("{}...", s.chars().take(57).collect::<String>())
    } else {
        s
    }
}

/// Why the header line `line` of the checkpoint at `path` does not belong to `head`, or
/// `None` when it does. `kind` names the run (`scan`, `bound`); the format number is the
/// header's `umbral_KIND` field.
pub(crate) fn compare<H: Serialize + DeserializeOwned + PartialEq>(
    line: &str,
    head: &H,
    kind: &'static str,
    path: &str,
) -> Option<CheckpointError> {
    let bad = |problem: String| {
        Some(CheckpointError::BadLine {
            path: path.to_string(),
            line: 1,
            problem,
            item: "",
        })
    };
    let found: Value = match serde_json::from_str(line) {
        Ok(v @ Value::Object(_)) => v,
        Ok(_) => return bad(format!("is not a {kind} header (not a JSON object)")),
        Err(e) => return bad(format!("is not a {kind} header: {e}")),
    };
    let field = format!("umbral_{kind}");
    let Some(format) = found.get(&field) else {
        return bad(format!("is not a {kind} header (no '{field}' field)"));
    };
    let want = serde_json::to_value(head).ok()?;
    let (Value::Object(f), Value::Object(w)) = (&found, &want) else {
        return None;
    };
    let mismatch = |why: String| {
        Some(CheckpointError::Mismatch {
            path: path.to_string(),
            kind,
            why,
        })
    };
    if Some(format) != w.get(&field) {
        return mismatch(format!(
            "{kind} format {} in the file, {} now (written by another version of umbral)",
            brief(Some(format)),
            brief(w.get(&field))
        ));
    }
    let mut why = Vec::new();
    for key in f.keys().filter(|k| !w.contains_key(*k)) {
        why.push(format!("unknown field '{key}'"));
    }
    for (key, now) in w {
        if f.get(key) == Some(now) {
            continue;
        }
        if key == "metric_sha256" && f.get("metric") != w.get("metric") {
            continue; // another metric altogether: its hash differs of course
        }
        why.push(match key.as_str() {
            "metric_sha256" => {
                "metric_sha256 (the metric's content changed: an edited metric file or another \
                 definition of the built-in metric)"
                    .to_string()
            }
            _ => format!(
                "{key}: {} in the file, {} now",
                brief(f.get(key)),
                brief(Some(now))
            ),
        });
    }
    // Values that compare unequal as JSON but equal as a header (1 and 1.0) are the same.
    if why.is_empty() || serde_json::from_value::<H>(found).ok().as_ref() == Some(head) {
        return None;
    }
    mismatch(why.join("; "))
}
