//! The first line of a checkpoint: everything that determines the records, including a
//! SHA-256 hash of the metric itself, so a resumed run never mixes results of an edited metric
//! file, another version of umbral or other arguments.
//!
//! A header is a JSON object whose first field is `umbral_KIND` (the format number of that
//! kind of run: `umbral_scan`, `umbral_bound`), then `umbral_version`, and whatever else the
//! run depends on, with `metric` and `metric_sha256` among them.

use super::checkpoint::CheckpointError;
use crate::error::MetricError;
use crate::metrics::MetricSource;
use serde::de::DeserializeOwned;
use serde::Serialize;
use serde_json::Value;
use sha2::{Digest, Sha256};

/// Lower-case hexadecimal SHA-256 of `bytes`.
///
/// ```
/// assert_eq!(
///     umbral::run::sha256_hex(b"abc"),
///     "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
/// );
/// ```
pub fn sha256_hex(bytes: &[u8]) -> String {
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

/// Why the metric's content hash could not be made.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum MetricHashError {
    /// The built-in metric does not build.
    #[error(transparent)]
    Metric(#[from] MetricError),
    /// The metric's description does not serialise.
    #[error("cannot describe metric '{name}': {message}")]
    Describe { name: String, message: String },
    /// The metric file cannot be read again.
    #[error("cannot read '{path}': {message}")]
    Read { path: String, message: String },
    /// The metric file on disk is no longer the one loaded.
    #[error("metric file '{path}' changed while the run was starting; run it again")]
    Changed { path: String },
}

/// The metric's content hash. A metric file read from disk is hashed by its bytes, read again
/// here and checked to compile to the metric the run uses (so the hash belongs to the
/// formulas that computed the records); a metric file given as text is hashed by its compiled
/// form; a built-in metric by its name and parameter specifications (the umbral version is a
/// field of its own in the header).
///
/// ```
/// use umbral::metrics::MetricSource;
/// let kerr = umbral::run::metric_sha256(&MetricSource::from("kerr")).unwrap();
/// assert_eq!(kerr.len(), 64);
/// assert_ne!(kerr, umbral::run::metric_sha256(&MetricSource::from("kerr-newman")).unwrap());
/// ```
pub fn metric_sha256(source: &MetricSource) -> Result<String, MetricHashError> {
    match source {
        MetricSource::Builtin(name) => {
            let info = source.build(&[])?.info().clone();
            let text = serde_json::to_string(&info).map_err(|e| MetricHashError::Describe {
                name: name.clone(),
                message: e.to_string(),
            })?;
            Ok(sha256_hex(format!("builtin\n{text}").as_bytes()))
        }
        MetricSource::File(spec) => match spec.path() {
            None => Ok(sha256_hex(format!("compiled\n{spec:?}").as_bytes())),
            Some(path) => {
                let read = |e: crate::input::InputError| MetricHashError::Read {
                    path: path.display().to_string(),
                    message: e.to_string(),
                };
                let bytes = crate::input::read_bytes_capped(path, crate::input::MAX_INPUT_BYTES)
                    .map_err(read)?;
                let text = crate::input::utf8(bytes.clone()).map_err(read)?;
                let changed =
                    match crate::metric_file::parse_metric_file(&text, &path.display().to_string())
                    {
                        Ok(mut again) => {
                            again.path = Some(path.to_path_buf());
                            again != **spec
                        }
                        Err(_) => true,
                    };
                if changed {
                    return Err(MetricHashError::Changed {
                        path: path.display().to_string(),
                    });
                }
                Ok(sha256_hex(&bytes))
            }
        },
    }
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
