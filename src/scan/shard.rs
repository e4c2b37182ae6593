//! Scans (and the tables a posterior interpolates, which are scans) past one process: the
//! grid's wire ([`crate::run::Wire`]: a point travels as the JSON its scan-file line holds),
//! shards of a job array ([`scan_shard`], [`table_shards`]), the scan file a merge writes
//! ([`merged_scan_file`]), and the grids a worker rank serves ([`served_scan`],
//! [`served_tables`]).
//!
//! A scan's identity is the SHA-256 of its header line (the arguments, the umbral version
//! and the metric's content hash), so shards or ranks of another scan never mix.
//!
//! ```
//! use umbral::metrics::MetricSource;
//! use umbral::run::shard::{read_shards, Shard};
//! use umbral::scan::shard::{merged_scan_file, scan_shard};
//! use umbral::scan::{run_scan, GridAxis, ScanRequest};
//! let dir = std::env::temp_dir().join(format!("umbral-shard-doc-{}", std::process::id()));
//! std::fs::create_dir_all(&dir).unwrap();
//! let request = ScanRequest {
//!     metric: MetricSource::builtin("reissner-nordstrom").unwrap(),
//!     axes: vec![GridAxis::new("q", 0.0, 0.9, 5)],
//!     fixed: vec![],
//!     inclination_deg: Some(17.0),
//!     settings: Default::default(),
//!     require_horizon: false,
//! };
//! let mut files = Vec::new();
//! for k in 0..2 {
//!     let path = dir.join(format!("part-{k}.jsonl"));
//!     let shard = Shard { index: k, count: 2 };
//!     scan_shard(&request, shard, "scan", &path, Default::default()).unwrap();
//!     files.push(path);
//! }
//! let merged = read_shards(&files, true).unwrap();
//! let text = merged_scan_file(&merged[0]).unwrap();
//! let single = dir.join("single.jsonl");
//! run_scan(&request, &single, &|_, _| {}).unwrap();
//! assert_eq!(text, std::fs::read_to_string(&single).unwrap());
//! std::fs::remove_dir_all(&dir).unwrap();
//! ```

use super::header::{header, Header};
use super::table::TableBuildError;
use super::{indices, lines, validate, Grid, ScanError, ScanPoint, ScanRequest};
use crate::posterior::{InferError, PosteriorModel};
use crate::run::cluster::{served, Served};
use crate::run::shard::{run_shard, Merged, Shard, ShardJob, ShardSummary};
use crate::run::{sha256_hex, Controls, RunError, Wire, WorkList};
use std::path::{Path, PathBuf};

/// The header line of a request's scan file.
fn header_text(request: &ScanRequest) -> Result<String, ScanError> {
    Ok(serde_json::to_string(&header(request)?).unwrap_or_default())
}

impl Wire<ScanPoint> for Grid<'_> {
    fn id(&self) -> String {
        match header_text(self.request) {
            Ok(text) => sha256_hex(text.as_bytes()),
            Err(e) => format!("unidentified scan: {e}"),
        }
    }

    fn encode(&self, point: &ScanPoint) -> String {
        serde_json::to_string(point).unwrap_or_default()
    }

    fn decode(&self, text: &str) -> Result<ScanPoint, String> {
        serde_json::from_str(text).map_err(|e| e.to_string())
    }
}

/// Compute shard `shard` of the scan `request` into the shard file `path` (resumed if it
/// holds points of the same shard); `kind` is `scan`, or `table` for a posterior's table.
pub fn scan_shard(
    request: &ScanRequest,
    shard: Shard,
    kind: &str,
    path: &Path,
    controls: Controls<'_>,
) -> Result<ShardSummary, ScanError> {
    validate(request)?;
    let head = header(request)?;
    let grid = Grid {
        request,
        indices: indices(&request.axes),
    };
    let job = ShardJob {
        kind: kind.to_string(),
        run: serde_json::to_value(&head).unwrap_or_default(),
        shard,
    };
    let total = shard.selection().indices(grid.len()).len();
    run_shard(&grid, &job, path, "scan", "points", controls).map_err(|e| match e {
        RunError::Interrupted { done, .. } => ScanError::Interrupted {
            path: path.display().to_string(),
            done,
            total,
        },
        RunError::Checkpoint(e) => ScanError::Checkpoint(e),
    })
}

/// The scan file a single process writes for the merged shards of a scan (or table): the
/// header line, then every point with its checksum, in grid order. Each point is checked to
/// be the grid's point at its place, written the way umbral writes it.
pub fn merged_scan_file(merged: &Merged) -> Result<String, String> {
    if merged.kind != "scan" && merged.kind != "table" {
        return Err(format!(
            "these are shards of a {}, not of a scan",
            merged.kind
        ));
    }
    let head: Header = serde_json::from_value(merged.run.clone())
        .map_err(|e| format!("the shards' scan header cannot be read: {e}"))?;
    let head_text = serde_json::to_string(&head).unwrap_or_default();
    if sha256_hex(head_text.as_bytes()) != merged.work {
        return Err("the shards' scan header does not match their work list".into());
    }
    let axes: Vec<super::GridAxis> = serde_json::from_value(merged.run["axes"].clone())
        .map_err(|e| format!("the shards' grid cannot be read: {e}"))?;
    let grid = indices(&axes);
    if grid.len() != merged.outputs.len() {
        return Err(format!(
            "the shards hold {} points, the grid has {}",
            merged.outputs.len(),
            grid.len()
        ));
    }
    for (i, (text, index)) in merged.outputs.iter().zip(&grid).enumerate() {
        let point: ScanPoint =
            serde_json::from_str(text).map_err(|e| format!("item {i} is not a scan point: {e}"))?;
        let canonical = serde_json::to_string(&point).unwrap_or_default();
        if point.index != *index || *text != canonical || merged.keys[i] != lines::key(index) {
            return Err(format!(
                "item {i} is not the grid point {index:?} written the way umbral writes it"
            ));
        }
    }
    Ok(crate::run::checkpoint_text(
        &head_text,
        merged.outputs.iter().map(String::as_str),
    ))
}

/// The file name of a table whose scan header line is `head_text`
/// (`umbral-table-HASH.jsonl`, as [`super::table::table_path`] names it).
pub fn table_file_name(head_text: &str) -> String {
    let hash = sha256_hex(head_text.as_bytes());
    format!("umbral-table-{}.jsonl", &hash[..12])
}

/// The table file of merged table shards: its name and its text.
pub fn merged_table_file(merged: &Merged) -> Result<(String, String), String> {
    let text = merged_scan_file(merged)?;
    let head_text = text.lines().next().unwrap_or_default();
    Ok((table_file_name(head_text), text))
}

/// The scans of a model's tables that need tracing: one per source with sampled axes (a table
/// of no axis is one point, computed where it is needed).
pub fn table_requests(model: &PosteriorModel) -> Result<Vec<ScanRequest>, InferError> {
    Ok(model
        .table_plans()?
        .iter()
        .map(|plan| super::table::table_scan(model, plan))
        .filter(|r| !r.axes.is_empty())
        .collect())
}

/// Compute shard `shard` of every table `model` needs into `dir`, one shard file per table
/// (`umbral-table-HASH.shard-K-of-N.jsonl`); returns the files with their summaries.
pub fn table_shards(
    model: &PosteriorModel,
    shard: Shard,
    dir: &Path,
    mut controls: Controls<'_>,
) -> Result<Vec<(PathBuf, ShardSummary)>, TableBuildError> {
    let mut done = Vec::new();
    for (k, request) in table_requests(model)?.into_iter().enumerate() {
        let fail = |error| TableBuildError::Scan {
            number: k + 1,
            error,
        };
        let head = header_text(&request).map_err(fail)?;
        let name = table_file_name(&head);
        let stem = name.trim_end_matches(".jsonl");
        let path = dir.join(format!(
            "{stem}.shard-{}-of-{}.jsonl",
            shard.index, shard.count
        ));
        let summary =
            scan_shard(&request, shard, "table", &path, controls.reborrow()).map_err(fail)?;
        done.push((path, summary));
    }
    Ok(done)
}

/// The grid of `request`, for a worker rank to serve.
pub fn served_scan(request: &ScanRequest) -> Option<Box<dyn Served + '_>> {
    served(Grid {
        request,
        indices: indices(&request.axes),
    })
}

/// The grids of `requests` (a model's tables, [`table_requests`]), for a worker rank.
pub fn served_tables(requests: &[ScanRequest]) -> Vec<Box<dyn Served + '_>> {
    requests.iter().filter_map(served_scan).collect()
}
