//! A bound ([`crate::bounds`]) run on the executor: its nuisance evaluations are work items,
//! reported to observers, stopped by the stop flag and kept in a checkpoint.
//!
//! The bound's checkpoint: every finished nuisance evaluation (the extremes over the nuisance
//! box at one value x of the varied parameter) as one checked JSON line, so an interrupted
//! bound resumes where it stopped and prints what an uninterrupted one prints.
//!
//! The header holds what an evaluation depends on: the metric and its hash, the varied
//! parameter's name, the fixed values, the nuisance box, the inclination, the size measure,
//! the measured intervals and the circularity limit (a value is decided as soon as its
//! nuisance points allow it at every level, [`crate::bounds::nuisance::decide`]), whether
//! every value's extremes are searched in full, the horizon policy and the nuisance and
//! shadow settings. The range of the varied parameter and the refinement settings only decide
//! which values are evaluated. An evaluation asked for with the full search (where a bound end
//! is refined) is kept apart from one asked for as far as deciding the value needs, also at
//! the same x. A line is
//! `{"x":0.35,"status":"ok","extremes":{...},"checksum":"..."}`, with `"full":true` for the
//! former (statuses `ok`,
//! `no_horizon`, `no_shadow` and `failed`, the last two with a `reason`); a number that is
//! not finite (a size with no feasible nuisance point) is written as the string `nan`, `inf`
//! or `-inf`. The completed file lists the values in increasing order.

use super::{
    metric_sha256, sha256_hex, CheckpointError, Controls, Executor, JsonlCheckpoint,
    MetricHashError, RecordFormat, RunError, Selection, WorkList,
};
use crate::bounds::nuisance::{Aggregate, Extremes};
use crate::bounds::{
    bound_on, check_request, BoundError, BoundRequest, Evaluate, Halted, Inclination, Node,
    ParameterRange, SizeMeasure,
};
use serde::{Deserialize, Serialize};
use std::cmp::Ordering;
use std::collections::BTreeMap;
use std::path::Path;

/// The bound checkpoint format written by this version (2: the intervals and the search effort
/// in the header, full evaluations marked, witnessed values in the lines).
pub const FORMAT: u32 = 2;

/// A checkpoint of a bound's nuisance evaluations.
pub type BoundCheckpoint = JsonlCheckpoint<NodeFormat>;

/// The work-item key of the value `x` (its shortest round-trip decimal form), followed by
/// ` full` for an evaluation asked for with the full search.
fn key(x: f64, full: bool) -> String {
    let number = serde_json::to_string(&x).unwrap_or_else(|_| format!("{x:e}"));
    if full {
        format!("{number} full")
    } else {
        number
    }
}

/// A node line (the checksum is empty while the body is written).
#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct StoredNode {
    x: f64,
    status: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    reason: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    extremes: Option<Extremes>,
    #[serde(default, skip_serializing_if = "std::ops::Not::not")]
    full: bool,
    #[serde(default, skip_serializing_if = "String::is_empty")]
    checksum: String,
}

fn stored(node: &Node) -> StoredNode {
    let (status, reason, extremes) = match &node.value {
        Aggregate::Ok(e) => ("ok", None, Some(e.clone())),
        Aggregate::NoHorizon => ("no_horizon", None, None),
        Aggregate::NoShadow(r) => ("no_shadow", Some(r.clone()), None),
        Aggregate::Failed(r) => ("failed", Some(r.clone()), None),
    };
    StoredNode {
        x: node.x,
        status: status.to_string(),
        reason,
        extremes,
        full: node.full,
        checksum: String::new(),
    }
}

/// The node a line holds, or what is wrong with it.
fn node(s: StoredNode) -> Result<Node, String> {
    if !s.x.is_finite() {
        return Err(format!("x = {} is not a finite number", s.x));
    }
    let has = |field: &str, present: bool, wanted: bool| match (present, wanted) {
        (true, false) => Err(format!("status '{}' has no {field}", s.status)),
        (false, true) => Err(format!("status '{}' needs {field}", s.status)),
        _ => Ok(()),
    };
    let known = ["ok", "no_horizon", "no_shadow", "failed"];
    if !known.contains(&s.status.as_str()) {
        return Err(format!(
            "unknown status '{}' (known: {})",
            s.status,
            known.join(", ")
        ));
    }
    has(
        "a reason",
        s.reason.is_some(),
        matches!(s.status.as_str(), "no_shadow" | "failed"),
    )?;
    has("extremes", s.extremes.is_some(), s.status == "ok")?;
    let value = match (s.status.as_str(), s.reason, s.extremes) {
        ("ok", _, Some(e)) => {
            let sizes =
                (e.size_min.is_finite() && e.size_max.is_finite() && e.size_min <= e.size_max)
                    || (e.size_min.is_nan() && e.size_max.is_nan());
            if !sizes
                || e.circularity_min.is_nan()
                || e.wall_backoff.is_nan()
                || e.wall_backoff < 0.0
            {
                return Err("holds extremes no evaluation gives (sizes, circularity or back-off out of order)".into());
            }
            Aggregate::Ok(e)
        }
        ("no_shadow", Some(r), _) => Aggregate::NoShadow(r),
        ("failed", Some(r), _) => Aggregate::Failed(r),
        _ => Aggregate::NoHorizon,
    };
    Ok(Node {
        x: s.x,
        value,
        full: s.full,
    })
}

/// Node lines of a bound.
pub struct NodeFormat {
    vary: String,
}

impl RecordFormat for NodeFormat {
    type Record = Node;
    const KIND: &'static str = "bound";
    const ITEM: &'static str = "evaluation";
    const AN_ITEM: &'static str = "an evaluation";

    fn key(&self, n: &Node) -> String {
        key(n.x, n.full)
    }

    fn describe(&self, n: &Node) -> String {
        let search = if n.full { " (full search)" } else { "" };
        format!(
            "the evaluation at {} = {}{search}",
            self.vary,
            key(n.x, false)
        )
    }

    fn body(&self, n: &Node) -> Result<String, String> {
        serde_json::to_string(&stored(n)).map_err(|e| e.to_string())
    }

    fn parse(&self, text: &str) -> Result<(Node, String), String> {
        let s: StoredNode =
            serde_json::from_str(text).map_err(|e| format!("is not a nuisance evaluation: {e}"))?;
        let checksum = s.checksum.clone();
        Ok((node(s)?, checksum))
    }

    fn check(&self, _: &Node) -> Result<(), String> {
        Ok(()) // a node says all there is to check about itself
    }

    fn order(&self, a: &Node, b: &Node) -> Ordering {
        a.x.total_cmp(&b.x).then(a.full.cmp(&b.full))
    }

    fn max_line_bytes(&self) -> usize {
        MAX_LINE_BYTES
    }

    fn max_file(&self) -> (u64, String) {
        (
            MAX_FILE_BYTES,
            format!(
                "the most a bound checkpoint holds ({} MiB)",
                MAX_FILE_BYTES >> 20
            ),
        )
    }
}

/// The longest node line kept (a line is a few hundred bytes; longer failure reasons are
/// not kept and their values are evaluated again).
const MAX_LINE_BYTES: usize = 64 * 1024;

/// The largest checkpoint read back.
const MAX_FILE_BYTES: u64 = 64 << 20;

/// The header: everything an evaluation depends on (module documentation).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct Header {
    umbral_bound: u32,
    umbral_version: String,
    metric: String,
    metric_sha256: String,
    vary: String,
    fixed: BTreeMap<String, f64>,
    nuisance: Vec<ParameterRange>,
    inclination: Inclination,
    size_measure: SizeMeasure,
    intervals: Vec<[f64; 2]>,
    circularity_max: Option<f64>,
    full_extremes: bool,
    require_horizon: bool,
    nuisance_grid: usize,
    nuisance_tolerance: f64,
    points: usize,
    tolerance: f64,
    solver: String,
}

fn header(request: &BoundRequest) -> Result<Header, MetricHashError> {
    let s = &request.settings;
    Ok(Header {
        umbral_bound: FORMAT,
        umbral_version: env!("CARGO_PKG_VERSION").to_string(),
        metric: request.metric.label(),
        metric_sha256: metric_sha256(&request.metric)?,
        vary: request.vary.name.clone(),
        fixed: request.fixed.iter().cloned().collect(),
        nuisance: request.nuisance.clone(),
        inclination: request.inclination,
        size_measure: request.size_measure,
        intervals: request
            .radii
            .intervals
            .iter()
            .map(|iv| [iv.low, iv.high])
            .collect(),
        circularity_max: request.circularity_max,
        full_extremes: s.full_extremes,
        require_horizon: s.require_horizon,
        nuisance_grid: s.nuisance.grid,
        nuisance_tolerance: s.nuisance.relative_tolerance,
        points: s.shadow.points,
        tolerance: s.shadow.tolerance,
        solver: format!("{:?}", s.shadow.solver).to_lowercase(),
    })
}

/// Open (or create) the checkpoint of `request` at `path`, keeping the evaluations an
/// earlier run of the same request left there. The request is checked first.
///
/// ```
/// use umbral::bounds::{BoundRequest, BoundSettings, Inclination, ParameterRange, SizeMeasure};
/// use umbral::run::bound::{bound_with, open_checkpoint};
/// use umbral::measurement::Measurement;
/// use umbral::run::Controls;
/// let m = Measurement::from_toml_str(
///     "[size.shadow_radius]\nintervals = [ { confidence = 0.68, low = 4.9, high = 5.3 } ]",
/// ).unwrap();
/// let request = BoundRequest {
///     metric: umbral::metrics::MetricSource::builtin("reissner-nordstrom").unwrap(),
///     vary: ParameterRange { name: "q".into(), low: 0.0, high: 1.2 },
///     fixed: vec![],
///     inclination: Inclination::Fixed { degrees: 17.0 },
///     nuisance: vec![],
///     size_measure: SizeMeasure::Mean,
///     radii: m.derive(None).unwrap(),
///     circularity_max: None,
///     settings: BoundSettings::default(),
/// };
/// let path = std::env::temp_dir().join(format!("umbral-bound-doc-{}.jsonl", std::process::id()));
/// let _ = std::fs::remove_file(&path);
/// let mut checkpoint = open_checkpoint(&request, &path).unwrap();
/// let first = bound_with(&request, Controls::default(), Some(&mut checkpoint)).unwrap();
/// // The executor evaluates what the library's plain parallel loop does.
/// assert_eq!(first, umbral::bounds::bound(&request).unwrap());
/// drop(checkpoint);
/// // A second run recalls every evaluation and gives the same bound.
/// let mut again = open_checkpoint(&request, &path).unwrap();
/// assert!(again.kept() > 20);
/// assert_eq!(bound_with(&request, Controls::default(), Some(&mut again)).unwrap(), first);
/// again.remove().unwrap();
/// ```
pub fn open_checkpoint(
    request: &BoundRequest,
    path: &Path,
) -> Result<BoundCheckpoint, BoundRunError> {
    check_request(request)?;
    let format = NodeFormat {
        vary: request.vary.name.clone(),
    };
    Ok(JsonlCheckpoint::open(path, format, &header(request)?)?)
}

/// A file name for the checkpoint of `request` that no other request shares
/// (`umbral-bound-` and 12 hexadecimal digits of a hash of everything the bound depends on,
/// `.jsonl`), for a program that keeps a checkpoint without being told where.
pub fn checkpoint_name(request: &BoundRequest) -> Result<String, BoundRunError> {
    let head = serde_json::to_string(&header(request)?).unwrap_or_default();
    let rest = format!(
        "{:?} {:?} {:?}",
        request.vary, request.radii.intervals, request.settings
    );
    let hash = sha256_hex(format!("{head}\n{rest}").as_bytes());
    Ok(format!("umbral-bound-{}.jsonl", &hash[..12]))
}

/// Why a bound run on the executor did not give a result.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum BoundRunError {
    /// The bound itself failed (a bad request, a bound end that did not converge).
    #[error(transparent)]
    Bound(#[from] BoundError),
    /// The metric's content hash (for the checkpoint) could not be made.
    #[error(transparent)]
    MetricHash(#[from] MetricHashError),
    /// The checkpoint could not be used.
    #[error(transparent)]
    Checkpoint(#[from] CheckpointError),
    /// Stopped on request after `done` nuisance evaluations (kept in the checkpoint, if any).
    #[error("interrupted after {done} nuisance evaluations")]
    Interrupted {
        /// Nuisance evaluations finished before the stop.
        done: usize,
    },
}

impl From<RunError> for BoundRunError {
    fn from(e: RunError) -> Self {
        match e {
            RunError::Interrupted { done, .. } => BoundRunError::Interrupted { done },
            RunError::Checkpoint(e) => BoundRunError::Checkpoint(e),
        }
    }
}

/// [`bound`](crate::bounds::bound) on a run executor with the observers and stop flag of
/// `controls` attached, and with `checkpoint` (see [`open_checkpoint`]) keeping every nuisance
/// evaluation as it finishes and giving back those an earlier run kept. A stop request ends
/// the bound with [`BoundRunError::Interrupted`] once the evaluations in progress are kept.
pub fn bound_with(
    request: &BoundRequest,
    controls: Controls<'_>,
    checkpoint: Option<&mut BoundCheckpoint>,
) -> Result<crate::bounds::BoundResult, BoundRunError> {
    let name = format!("bound on {}", request.vary.name);
    let mut exec = Executor::new(&name, "nuisance evaluations").with(controls);
    if let Some(c) = checkpoint {
        exec = exec.checkpoint(c);
    }
    let mut on = OnExecutor {
        exec,
        stopped: None,
    };
    match bound_on(request, &mut on) {
        Ok(result) => Ok(result),
        Err(BoundError::Halted(_)) => Err(match on.stopped.take() {
            Some(e) => e.into(),
            // Only this evaluator halts the search, and it always says why first.
            None => BoundRunError::Interrupted {
                done: on.exec.status().done,
            },
        }),
        Err(e) => Err(e.into()),
    }
}

/// The executor as a bound's evaluator: the first reason it stopped is kept for
/// [`bound_with`].
struct OnExecutor<'e> {
    exec: Executor<'e, Node>,
    stopped: Option<RunError>,
}

impl OnExecutor<'_> {
    fn halted<T>(&mut self, r: Result<T, RunError>) -> Result<T, Halted> {
        r.map_err(|e| {
            self.stopped.get_or_insert(e);
            Halted
        })
    }
}

impl Evaluate for OnExecutor<'_> {
    fn evaluate(
        &mut self,
        stage: &str,
        xs: &[f64],
        full: bool,
        node: &(dyn Fn(f64) -> Node + Sync),
    ) -> Result<Vec<Node>, Halted> {
        self.exec.stage(stage);
        let batch = self.exec.batch(&Values { xs, full, node }, &Selection::All);
        Ok(self.halted(batch)?.outputs)
    }

    fn finish(&mut self) -> Result<(), Halted> {
        let finished = self.exec.finish();
        self.halted(finished)
    }
}

/// Values of the varied parameter as work items (key: the value's shortest decimal form, and
/// the effort asked for).
struct Values<'a> {
    xs: &'a [f64],
    full: bool,
    node: &'a (dyn Fn(f64) -> Node + Sync),
}

impl WorkList for Values<'_> {
    type Output = Node;

    fn len(&self) -> usize {
        self.xs.len()
    }

    fn key(&self, index: usize) -> String {
        key(self.xs[index], self.full)
    }

    fn run(&self, index: usize) -> Node {
        (self.node)(self.xs[index])
    }
}
