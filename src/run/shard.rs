//! Shards of a job array: a run split into N independent processes (the tasks of a batch
//! scheduler's job array), each computing every N-th item of the work list from the K-th
//! ([`super::Selection::Shard`], K numbered from 0) into its own JSON-lines file, and the
//! merge that joins the files.
//!
//! A shard file is a checkpoint ([`super::JsonlCheckpoint`]): an interrupted or killed shard
//! rerun with the same arguments keeps its finished items and computes the rest. Its first
//! line is a [`ShardHeader`]: the format, the umbral version, the kind of run, the work
//! list's identity ([`super::Wire::id`], a digest of every argument the items depend on), the
//! number of items, the shard `K/N`, and what the merge needs to write the result (`run`,
//! given by the kind of run: a scan's header, a command's arguments). Every other line is one
//! item, `{"index":17,"key":"[3,2]","output":...,"checksum":"..."}`: its index in the work
//! list, its canonical key and its output as the work list's wire encodes it (the JSON a
//! checkpoint records, every number bit-exact), with the checksum of every checkpoint line.
//!
//! [`read_shards`] checks a set of shard files before anything is merged: every line of every
//! file (as a checkpoint is checked), one header for all but the shard number (the same
//! arguments, work list and umbral version, this version), each shard K of N present exactly
//! once, and each shard holding exactly its items; a missing, duplicated, incomplete or
//! foreign shard is named in the error. The outputs then come in item order, ready for the
//! kind of run to write exactly what a single process writes.

use super::checkpoint::{Checkpoint, CheckpointError, JsonlCheckpoint, RecordFormat};
use super::{Controls, Executor, RunError, Selection, Wire, WorkList};
use serde::{Deserialize, Serialize};
use serde_json::value::RawValue;
use std::cmp::Ordering;
use std::collections::{BTreeMap, HashMap};
use std::path::{Path, PathBuf};

/// The shard-file format written by this version.
pub const FORMAT: u32 = 1;

/// The longest item line of a shard file (an image row of 8192 pixels is about 2 MB).
pub const MAX_LINE_BYTES: usize = 16 << 20;

/// Shard `index` of `count`, numbered from 0.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Shard {
    /// This shard, below `count`.
    pub index: usize,
    /// The number of shards.
    pub count: usize,
}

impl std::fmt::Display for Shard {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}/{}", self.index, self.count)
    }
}

impl std::str::FromStr for Shard {
    type Err = String;

    /// `K/N` with 0 ≤ K < N (K numbered from 0, as a job array's task ids `0-(N-1)`).
    ///
    /// ```
    /// use umbral::run::shard::Shard;
    /// assert_eq!("2/8".parse::<Shard>(), Ok(Shard { index: 2, count: 8 }));
    /// assert!("8/8".parse::<Shard>().unwrap_err().contains("numbered from 0"));
    /// assert!("x".parse::<Shard>().is_err());
    /// ```
    fn from_str(text: &str) -> Result<Shard, String> {
        let bad = || format!("expected K/N (shard K of N, K from 0 to N-1), got '{text}'");
        let (k, n) = text.split_once('/').ok_or_else(bad)?;
        let index: usize = k.trim().parse().map_err(|_| bad())?;
        let count: usize = n.trim().parse().map_err(|_| bad())?;
        if count == 0 || count > 1_000_000 {
            return Err(format!(
                "the number of shards must lie between 1 and 1000000, got {count}"
            ));
        }
        if index >= count {
            return Err(format!(
                "shard {index}/{count} does not exist: shards are numbered from 0 to {} \
                 (K/N with K < N)",
                count - 1
            ));
        }
        Ok(Shard { index, count })
    }
}

impl Shard {
    /// The selection of this shard's items.
    pub fn selection(&self) -> Selection {
        Selection::Shard {
            index: self.index,
            count: self.count,
        }
    }
}

/// The first line of a shard file.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ShardHeader {
    /// The shard-file format ([`FORMAT`]).
    pub umbral_shard: u32,
    /// The umbral version that wrote it.
    pub umbral_version: String,
    /// The kind of run (`scan`, `table`, `image`, `calibrate`).
    pub kind: String,
    /// The work list's identity ([`Wire::id`]).
    pub work: String,
    /// Items in the whole work list.
    pub items: usize,
    /// This shard, `K/N`.
    pub shard: String,
    /// What the merge needs to write the result, as the kind of run gives it.
    pub run: serde_json::Value,
}

/// One item line.
#[derive(Debug, Clone)]
pub struct ShardRecord {
    /// The item's index in the work list.
    pub index: usize,
    /// Its canonical key.
    pub key: String,
    /// Its output, as the work list's wire encodes it.
    pub output: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct StoredRecord<'a> {
    index: usize,
    key: String,
    #[serde(borrow)]
    output: &'a RawValue,
    checksum: String,
}

/// The item lines of one shard (or, with no shard, of any shard of a list: the merge).
struct ShardFormat {
    items: usize,
    shard: Option<Shard>,
    /// The keys of this shard's items by index, when the work list is at hand.
    keys: Option<BTreeMap<usize, String>>,
}

impl RecordFormat for ShardFormat {
    type Record = ShardRecord;
    const KIND: &'static str = "shard";
    const ITEM: &'static str = "item";
    const AN_ITEM: &'static str = "an item";

    fn key(&self, r: &ShardRecord) -> String {
        r.key.clone()
    }

    fn describe(&self, r: &ShardRecord) -> String {
        format!("item {} ({})", r.index, r.key)
    }

    fn body(&self, r: &ShardRecord) -> Result<String, String> {
        let key = serde_json::to_string(&r.key).map_err(|e| e.to_string())?;
        Ok(format!(
            "{{\"index\":{},\"key\":{key},\"output\":{}}}",
            r.index, r.output
        ))
    }

    fn parse(&self, text: &str) -> Result<(ShardRecord, String), String> {
        let s: StoredRecord =
            serde_json::from_str(text).map_err(|e| format!("is not a shard item: {e}"))?;
        if s.index >= self.items {
            return Err(format!(
                "holds item {}, beyond the list's {} items",
                s.index, self.items
            ));
        }
        Ok((
            ShardRecord {
                index: s.index,
                key: s.key,
                output: s.output.get().to_string(),
            },
            s.checksum,
        ))
    }

    fn check(&self, r: &ShardRecord) -> Result<(), String> {
        if let Some(shard) = self.shard {
            if r.index % shard.count != shard.index {
                return Err(format!(
                    "holds item {}, which belongs to shard {}/{}, not to this shard {shard}",
                    r.index,
                    r.index % shard.count,
                    shard.count
                ));
            }
        }
        if let Some(keys) = &self.keys {
            if keys.get(&r.index) != Some(&r.key) {
                return Err(format!(
                    "gives item {} the key '{}', not this run's",
                    r.index, r.key
                ));
            }
        }
        Ok(())
    }

    fn order(&self, a: &ShardRecord, b: &ShardRecord) -> Ordering {
        a.index.cmp(&b.index)
    }

    fn max_line_bytes(&self) -> usize {
        MAX_LINE_BYTES
    }

    fn max_file(&self) -> (u64, String) {
        let lines = self.items.div_ceil(self.shard.map_or(1, |s| s.count)) as u64 + 1;
        (
            lines.saturating_mul(MAX_LINE_BYTES as u64),
            "the most a shard of this list holds (16 MiB per item)".into(),
        )
    }
}

/// A shard file as the executor's checkpoint: outputs encoded by the work list's wire.
struct ShardCheckpoint<'w, O> {
    file: JsonlCheckpoint<ShardFormat>,
    wire: &'w dyn Wire<O>,
    index: HashMap<String, usize>,
}

impl<O> Checkpoint<O> for ShardCheckpoint<'_, O> {
    fn recall(&self, key: &str) -> Option<O> {
        let record = self.file.recall(key)?;
        self.wire.decode(&record.output).ok()
    }

    fn record(&mut self, key: &str, output: &O) -> Result<(), CheckpointError> {
        let Some(&index) = self.index.get(key) else {
            return Err(CheckpointError::Io {
                path: self.file.path().to_string(),
                message: format!("item '{key}' is not one of this shard's"),
            });
        };
        let record = ShardRecord {
            index,
            key: key.to_string(),
            output: self.wire.encode(output),
        };
        self.file.record(key, &record)
    }

    fn complete(&mut self) -> Result<(), CheckpointError> {
        self.file.complete()
    }
}

/// What a shard run is for: the kind of run and what its merge needs.
#[derive(Debug, Clone, PartialEq)]
pub struct ShardJob {
    /// The kind of run (`scan`, `image`, ...).
    pub kind: String,
    /// What the merge needs ([`ShardHeader::run`]).
    pub run: serde_json::Value,
    /// Which shard.
    pub shard: Shard,
}

/// A finished shard.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ShardSummary {
    /// This shard's items.
    pub items: usize,
    /// Computed by this run.
    pub computed: usize,
    /// Kept from an earlier run of the same shard.
    pub kept: usize,
}

/// Run shard `job.shard` of `work` into the shard file at `path` (resumed if it holds items
/// of the same shard), on an executor called `name` with items `unit`, carrying `controls`.
pub fn run_shard<W: WorkList>(
    work: &W,
    job: &ShardJob,
    path: &Path,
    name: &str,
    unit: &str,
    controls: Controls<'_>,
) -> Result<ShardSummary, RunError> {
    let wire = work.wire().ok_or_else(|| {
        RunError::Checkpoint(CheckpointError::Io {
            path: path.display().to_string(),
            message: format!("a {} cannot be run in shards", job.kind),
        })
    })?;
    let head = ShardHeader {
        umbral_shard: FORMAT,
        umbral_version: env!("CARGO_PKG_VERSION").to_string(),
        kind: job.kind.clone(),
        work: wire.id(),
        items: work.len(),
        shard: job.shard.to_string(),
        run: job.run.clone(),
    };
    let selection = job.shard.selection();
    let keys: BTreeMap<usize, String> = selection
        .indices(work.len())
        .into_iter()
        .map(|i| (i, work.key(i)))
        .collect();
    let index = keys.iter().map(|(&i, k)| (k.clone(), i)).collect();
    let format = ShardFormat {
        items: work.len(),
        shard: Some(job.shard),
        keys: Some(keys),
    };
    let mut checkpoint = ShardCheckpoint {
        file: JsonlCheckpoint::open(path, format, &head)?,
        wire,
        index,
    };
    let batch = Executor::new(name, unit)
        .with(controls)
        .checkpoint(&mut checkpoint)
        .run(work, &selection)?;
    Ok(ShardSummary {
        items: batch.outputs.len(),
        computed: batch.computed,
        kept: batch.kept,
    })
}

/// Why shard files cannot be merged (one line, naming the file or shard).
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{0}")]
pub struct MergeError(pub String);

impl From<CheckpointError> for MergeError {
    fn from(e: CheckpointError) -> Self {
        MergeError(e.to_string())
    }
}

/// The shards of one run, checked and joined.
#[derive(Debug, Clone, PartialEq)]
pub struct Merged {
    /// The kind of run.
    pub kind: String,
    /// The work list's identity.
    pub work: String,
    /// What the merge needs ([`ShardHeader::run`]).
    pub run: serde_json::Value,
    /// The number of shards.
    pub shards: usize,
    /// Every item's key, in item order.
    pub keys: Vec<String>,
    /// Every item's encoded output, in item order.
    pub outputs: Vec<String>,
}

impl Merged {
    /// The outputs as a checkpoint for a rerun of the same work list that computes nothing:
    /// every item is recalled, and an item computed all the same (a list that differs from
    /// the shards') is an error.
    pub fn recall<'w, O>(&self, wire: &'w dyn Wire<O>) -> Result<Recalled<'w, O>, MergeError> {
        if wire.id() != self.work {
            return Err(MergeError(format!(
                "the shards were computed for other inputs than these (work list {} in the \
                 files, {} now: a changed metric file, model list or version?)",
                short(&self.work),
                short(&wire.id())
            )));
        }
        Ok(Recalled {
            outputs: self
                .keys
                .iter()
                .cloned()
                .zip(self.outputs.iter().cloned())
                .collect(),
            wire,
        })
    }
}

fn short(id: &str) -> &str {
    &id[..id.len().min(12)]
}

/// Merged outputs as a checkpoint ([`Merged::recall`]).
pub struct Recalled<'w, O> {
    outputs: HashMap<String, String>,
    wire: &'w dyn Wire<O>,
}

impl<O> Checkpoint<O> for Recalled<'_, O> {
    fn recall(&self, key: &str) -> Option<O> {
        self.wire.decode(self.outputs.get(key)?).ok()
    }

    fn record(&mut self, key: &str, _output: &O) -> Result<(), CheckpointError> {
        Err(CheckpointError::Io {
            path: "the merge".into(),
            message: format!("item '{key}' is not in the shard files"),
        })
    }

    fn complete(&mut self) -> Result<(), CheckpointError> {
        Ok(())
    }
}

/// A shard file's header, read without its items.
pub fn read_header(path: &Path) -> Result<ShardHeader, MergeError> {
    let shown = path.display();
    let cant = |e: String| MergeError(format!("cannot read '{shown}': {e}"));
    crate::input::check_regular(path).map_err(|e| cant(e.to_string()))?;
    let file = std::fs::File::open(path).map_err(|e| cant(e.to_string()))?;
    let mut data = Vec::new();
    std::io::Read::read_to_end(&mut std::io::Read::take(file, 1 << 20), &mut data)
        .map_err(|e| cant(e.to_string()))?;
    let first = data.split(|&b| b == b'\n').next().unwrap_or_default();
    let first = std::str::from_utf8(first)
        .map_err(|_| MergeError(format!("'{shown}' is not a shard file (not UTF-8 text)")))?;
    serde_json::from_str(first).map_err(|e| {
        MergeError(format!(
            "'{shown}' line 1 is not a shard header ({e}); give the files written by \
             --shard K/N"
        ))
    })
}

/// The fields two headers differ in (the shard number aside).
fn differences(a: &ShardHeader, b: &ShardHeader) -> Vec<String> {
    let mut why = Vec::new();
    if a.umbral_version != b.umbral_version {
        why.push(format!(
            "umbral version {} and {}",
            a.umbral_version, b.umbral_version
        ));
    }
    if a.kind != b.kind {
        why.push(format!("a {} and a {}", a.kind, b.kind));
    }
    let count = |h: &ShardHeader| h.shard.split_once('/').map(|(_, n)| n.to_string());
    if count(a) != count(b) {
        why.push(format!("shards {} and {}", a.shard, b.shard));
    }
    if a.items != b.items {
        why.push(format!("{} and {} items", a.items, b.items));
    }
    if let (serde_json::Value::Object(x), serde_json::Value::Object(y)) = (&a.run, &b.run) {
        for key in x.keys().chain(y.keys().filter(|k| !x.contains_key(*k))) {
            if x.get(key) != y.get(key) {
                why.push(format!("argument '{key}'"));
            }
        }
    } else if a.run != b.run {
        why.push("the run's arguments".into());
    }
    if why.is_empty() && a.work != b.work {
        why.push("the work list (another metric file or model list?)".into());
    }
    why
}

/// At most `n` numbers, then `...`.
fn some(items: &[usize], n: usize) -> String {
    let shown: Vec<String> = items.iter().take(n).map(usize::to_string).collect();
    let more = if items.len() > n { ", ..." } else { "" };
    format!("{}{more}", shown.join(", "))
}

/// Read and check the shard files `paths` (see the module documentation) and join them into
/// one or more runs: one per distinct work list, in the order first seen. With `one_run`, shard
/// files of different runs are an error naming the first file that differs and how.
pub fn read_shards(paths: &[PathBuf], one_run: bool) -> Result<Vec<Merged>, MergeError> {
    if paths.is_empty() {
        return Err(MergeError("give the shard files to merge".into()));
    }
    let version = env!("CARGO_PKG_VERSION");
    // Runs by work-list identity: (header of the first file, files by shard number).
    let mut runs: Vec<(ShardHeader, BTreeMap<usize, PathBuf>)> = Vec::new();
    for path in paths {
        let shown = path.display();
        let head = read_header(path)?;
        if head.umbral_shard != FORMAT {
            return Err(MergeError(format!(
                "'{shown}' is shard format {}, this umbral reads format {FORMAT}",
                head.umbral_shard
            )));
        }
        if head.umbral_version != version {
            return Err(MergeError(format!(
                "'{shown}' was written by umbral {}, this is umbral {version}: merge with \
                 the version that computed the shards",
                head.umbral_version
            )));
        }
        let shard: Shard = head
            .shard
            .parse()
            .map_err(|e| MergeError(format!("'{shown}' line 1: shard {e}")))?;
        let same = runs
            .iter()
            .position(|(h, _)| differences(h, &head).is_empty());
        let at = match same {
            Some(at) => at,
            None if one_run && !runs.is_empty() => {
                let (first, files) = &runs[0];
                let first_file = files.values().next().map(|p| p.display().to_string());
                return Err(MergeError(format!(
                    "'{shown}' belongs to another run than '{}': they differ in {}",
                    first_file.unwrap_or_default(),
                    differences(first, &head).join(", ")
                )));
            }
            None => {
                runs.push((head.clone(), BTreeMap::new()));
                runs.len() - 1
            }
        };
        if let Some(other) = runs[at].1.insert(shard.index, path.clone()) {
            return Err(MergeError(format!(
                "shard {shard} is given twice: '{}' and '{shown}'",
                other.display()
            )));
        }
    }
    runs.into_iter()
        .map(|(head, files)| join(head, files))
        .collect()
}

/// Join the files of one run.
fn join(head: ShardHeader, files: BTreeMap<usize, PathBuf>) -> Result<Merged, MergeError> {
    let count = head.shard.parse::<Shard>().map_err(MergeError)?.count;
    let items = head.items;
    let of_shard = |k: usize| -> Vec<usize> { (k..items).step_by(count).collect() };
    let missing: Vec<usize> = (0..count).filter(|k| !files.contains_key(k)).collect();
    if let Some(&k) = missing.first() {
        let also = match missing.len() {
            1 => String::new(),
            2 => format!(" (and shard {}/{count})", missing[1]),
            n => format!(" (and {} more shards: {})", n - 1, some(&missing[1..], 8)),
        };
        let what = match of_shard(k).as_slice() {
            [] => "it has no items, but its file is needed to show the set is whole".into(),
            list => format!("items {} have no line", some(list, 6)),
        };
        return Err(MergeError(format!(
            "shard {k}/{count} is missing: {what}{also}"
        )));
    }
    let mut keys = vec![String::new(); items];
    let mut outputs = vec![String::new(); items];
    for (&k, path) in &files {
        let mut head_k = head.clone();
        head_k.shard = format!("{k}/{count}");
        let format = ShardFormat {
            items,
            shard: Some(Shard { index: k, count }),
            keys: None,
        };
        let records = JsonlCheckpoint::read(path, &format, &head_k).map_err(|e| match e {
            CheckpointError::Mismatch { why, .. } => MergeError(format!(
                "'{}' belongs to another run ({why})",
                path.display()
            )),
            other => MergeError::from(other),
        })?;
        let mut present = vec![false; items];
        for r in records {
            if present[r.index] {
                return Err(MergeError(format!(
                    "'{}' holds item {} twice",
                    path.display(),
                    r.index
                )));
            }
            present[r.index] = true;
            keys[r.index] = r.key;
            outputs[r.index] = r.output;
        }
        let absent: Vec<usize> = of_shard(k).into_iter().filter(|&i| !present[i]).collect();
        if !absent.is_empty() {
            return Err(MergeError(format!(
                "shard {k}/{count} ('{}') is incomplete: items {} have no line; rerun that \
                 shard with the same arguments to finish it",
                path.display(),
                some(&absent, 6)
            )));
        }
    }
    Ok(Merged {
        kind: head.kind,
        work: head.work,
        run: head.run,
        shards: count,
        keys,
        outputs,
    })
}
