//! JSON-lines checkpoints: every finished work item on disk as one checked line, so an
//! interrupted run resumes where it stopped and ends with the file an uninterrupted run writes.
//!
//! The file's first line is a header (see [`super::header`]) recording the arguments, the
//! umbral version and a SHA-256 hash of the metric; every other line is one record, the
//! record's JSON with a `checksum` last: the first 16 hexadecimal digits of the SHA-256 of
//! the header line, a newline and the record's JSON. The checksum ties each line to its run
//! and shows an edited or damaged line (a check against accidents, not a signature).
//!
//! Opened again with the same header, a checkpoint keeps every complete line that passes
//! every check: known fields only, a record the run could have written ([`RecordFormat`]),
//! seen once, a matching checksum and the canonical JSON text. A half-written last line is
//! dropped (its item is computed again); any other bad line is refused, naming the line and
//! the problem, and so is a file from other arguments, another metric or another version,
//! naming what differs. Records are appended as items finish and the file is rewritten in the
//! format's order when the run completes. The file is locked for the whole run: a second run
//! on the same file is refused while the first holds it.

use super::file::LockedFile;
use super::header::{compare, sha256_hex};
use serde::de::DeserializeOwned;
use serde::Serialize;
use std::cmp::Ordering;
use std::collections::BTreeMap;
use std::path::Path;

/// Where finished work items are kept between runs, as the executor sees it.
pub trait Checkpoint<O>: Send {
    /// The output an earlier run recorded for the item with this key, if any.
    fn recall(&self, key: &str) -> Option<O>;
    /// Keep a finished item (called once per computed item, as items finish).
    fn record(&mut self, key: &str, output: &O) -> Result<(), CheckpointError>;
    /// The run completed: put the records in their final form.
    fn complete(&mut self) -> Result<(), CheckpointError>;
}

/// How one kind of run writes and checks its records.
pub trait RecordFormat: Send {
    /// A record (the output of one work item).
    type Record: Clone + Send;
    /// The kind of run, as in messages and in the header's `umbral_KIND` field (`scan`).
    const KIND: &'static str;
    /// What one record is, in messages (`point`).
    const ITEM: &'static str;
    /// [`Self::ITEM`] with its article (`a point`).
    const AN_ITEM: &'static str;
    /// The record's work-item key (as [`super::WorkList::key`] gives it).
    fn key(&self, record: &Self::Record) -> String;
    /// The record for messages (`index [1, 2]`).
    fn describe(&self, record: &Self::Record) -> String;
    /// The record's JSON object, without the checksum.
    fn body(&self, record: &Self::Record) -> Result<String, String>;
    /// Read a record line into the record and its stored checksum, checking what the record
    /// says about itself (known fields, an item of this run); the error is the problem, said
    /// of the line ("is not a scan point: ...").
    fn parse(&self, text: &str) -> Result<(Self::Record, String), String>;
    /// Check that the record is what this run would write for its item.
    fn check(&self, record: &Self::Record) -> Result<(), String>;
    /// The order of records in the completed file.
    fn order(&self, a: &Self::Record, b: &Self::Record) -> Ordering;
    /// The longest record line (longer ones are not kept: their items are computed again).
    fn max_line_bytes(&self) -> usize;
    /// The largest file read back, and why that is the most it holds (for the message).
    fn max_file(&self) -> (u64, String);
}

/// Why a checkpoint could not be used.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum CheckpointError {
    /// Writing failed.
    #[error("cannot write '{path}': {message}")]
    Io {
        /// The checkpoint file.
        path: String,
        /// The operating system's message.
        message: String,
    },
    /// Reading failed.
    #[error("cannot read '{path}': {message}")]
    Read {
        /// The checkpoint file.
        path: String,
        /// The operating system's message.
        message: String,
    },
    /// The file belongs to another run.
    #[error(
        "'{path}' was written by a {kind} with different arguments ({why}); refusing to mix them"
    )]
    Mismatch {
        /// The checkpoint file.
        path: String,
        /// The kind of run ([`RecordFormat::KIND`], e.g. `scan`).
        kind: &'static str,
        /// Which header fields differ.
        why: String,
    },
    /// A line fails a check (line 1 is the header).
    #[error("'{path}' line {line} {problem}; refusing to resume from it ({})", remedy(*.line, item))]
    BadLine {
        /// The checkpoint file.
        path: String,
        /// The 1-based line number.
        line: usize,
        /// What is wrong with the line.
        problem: String,
        /// What a record line holds (`point`).
        item: &'static str,
    },
    /// Another run holds the file.
    #[error("'{path}' is in use by another {kind} (it is locked); wait for that {kind} to finish")]
    InUse {
        /// The checkpoint file.
        path: String,
        /// The kind of run ([`RecordFormat::KIND`], e.g. `scan`).
        kind: &'static str,
    },
}

/// What to do about a bad line (a program's own advice, such as another output file, comes
/// on top).
pub fn remedy(line: usize, item: &str) -> String {
    if line == 1 {
        "delete the file".into()
    } else {
        format!("delete that line to have its {item} computed again")
    }
}

/// Hexadecimal digits of a line's checksum.
const CHECKSUM_DIGITS: usize = 16;

fn checksum(head_text: &str, body: &str) -> String {
    let mut text = String::with_capacity(head_text.len() + body.len() + 1);
    text.push_str(head_text);
    text.push('\n');
    text.push_str(body);
    sha256_hex(text.as_bytes())[..CHECKSUM_DIGITS].to_string()
}

/// The line of a record body (without the newline): the body with its checksum last.
fn encode_body(head_text: &str, body: &str) -> String {
    let open = body.strip_suffix('}').unwrap_or(body);
    format!("{open},\"checksum\":\"{}\"}}", checksum(head_text, body))
}

/// The text of a completed checkpoint: the header line `head_text`, then one line per record
/// body (a record's JSON without its checksum), in the order given, each with its checksum.
/// This is what [`JsonlCheckpoint`] writes when a run completes, for a program that joins
/// records computed elsewhere (the merge of shard files).
///
/// ```
/// let text = umbral::run::checkpoint_text("{\"umbral_x\":1}", ["{\"n\":1}"].into_iter());
/// assert!(text.starts_with("{\"umbral_x\":1}\n{\"n\":1,\"checksum\":\""));
/// assert_eq!(text.lines().count(), 2);
/// ```
pub fn checkpoint_text<'b>(head_text: &str, bodies: impl Iterator<Item = &'b str>) -> String {
    let mut text = String::with_capacity(head_text.len() + 1);
    text.push_str(head_text);
    text.push('\n');
    for body in bodies {
        text.push_str(&encode_body(head_text, body));
        text.push('\n');
    }
    text
}

/// The line of a record (without the newline).
fn encode<F: RecordFormat>(
    format: &F,
    head_text: &str,
    record: &F::Record,
) -> Result<String, String> {
    Ok(encode_body(head_text, &format.body(record)?))
}

/// Records by key: the line's text and the record.
type Kept<R> = BTreeMap<String, (String, R)>;

/// Check a complete record line against the run; `seen` holds the records so far.
fn decode<F: RecordFormat>(
    format: &F,
    text: &str,
    head_text: &str,
    seen: &Kept<F::Record>,
) -> Result<F::Record, String> {
    if text.trim().is_empty() {
        return Err("is blank".into());
    }
    let max = format.max_line_bytes();
    if text.len() > max {
        return Err(format!(
            "is longer than {max} bytes, more than any {} line",
            F::ITEM
        ));
    }
    let (record, stored) = format.parse(text)?;
    if seen.contains_key(&format.key(&record)) {
        return Err(format!(
            "{} appears a second time ({} is written once)",
            format.describe(&record),
            F::AN_ITEM
        ));
    }
    format.check(&record)?;
    let body = format.body(&record)?;
    if stored != checksum(head_text, &body) {
        return Err(
            "its checksum does not match its content (the line was edited or damaged)".into(),
        );
    }
    if encode_body(head_text, &body) != text {
        return Err("is not written the way umbral writes it (the line was edited)".into());
    }
    Ok(record)
}

/// The records an earlier run with header `head_text` left in `data` (none if it is empty or
/// holds no complete header), every line checked.
fn read_records<F: RecordFormat, H: Serialize + DeserializeOwned + PartialEq>(
    format: &F,
    data: &[u8],
    shown: &str,
    head: &H,
    head_text: &str,
) -> Result<Kept<F::Record>, CheckpointError> {
    let bad = |line: usize, problem: String| CheckpointError::BadLine {
        path: shown.to_string(),
        line,
        problem,
        item: F::ITEM,
    };
    let mut found = BTreeMap::new();
    if data.starts_with(b"\xEF\xBB\xBF") {
        return Err(bad(
            1,
            "starts with a byte-order mark (U+FEFF), which umbral never writes".into(),
        ));
    }
    for (number, raw, complete) in lines(data) {
        let text = line_text(raw, F::KIND).map_err(|problem| bad(number, problem))?;
        if number == 1 {
            if !complete {
                // A header cut off mid-write: nothing was computed yet.
                return if head_text.starts_with(text) {
                    Ok(found)
                } else {
                    Err(bad(
                        1,
                        format!(
                            "is cut off (no newline) and does not begin this {}'s header",
                            F::KIND
                        ),
                    ))
                };
            }
            if let Some(e) = compare(text, head, F::KIND, shown) {
                return Err(e);
            }
            continue;
        }
        if !complete {
            break; // a half-written last line: its item is computed again
        }
        let record =
            decode(format, text, head_text, &found).map_err(|problem| bad(number, problem))?;
        // Kept verbatim: the checks above made sure it is the canonical text.
        found.insert(format.key(&record), (text.to_string(), record));
    }
    Ok(found)
}

/// The lines of `data`, numbered from 1, each with whether it ends in a newline.
fn lines(data: &[u8]) -> impl Iterator<Item = (usize, &[u8], bool)> {
    let mut rest = data;
    let mut number = 0;
    std::iter::from_fn(move || {
        if rest.is_empty() {
            return None;
        }
        number += 1;
        Some(match rest.iter().position(|&b| b == b'\n') {
            Some(i) => {
                let raw = &rest[..i];
                rest = &rest[i + 1..];
                (number, raw, true)
            }
            None => (number, std::mem::take(&mut rest), false),
        })
    })
}

/// A line as text: no control characters but tabs, valid UTF-8.
fn line_text<'a>(raw: &'a [u8], kind: &str) -> Result<&'a str, String> {
    if let Some(at) = raw.iter().position(|&b| b < 0x20 && b != b'\t') {
        return Err(format!(
            "holds binary data (byte {} is a control character; is this a {kind} file?)",
            at + 1
        ));
    }
    std::str::from_utf8(raw).map_err(|e| {
        format!(
            "is not UTF-8 text (byte {} of the line; is this a {kind} file?)",
            e.valid_up_to() + 1
        )
    })
}

/// A JSON-lines checkpoint file, locked while it is open.
///
/// ```
/// use std::cmp::Ordering;
/// use umbral::run::{Checkpoint, JsonlCheckpoint, RecordFormat};
///
/// /// Squares of whole numbers, one line each: `{"n":3,"square":9,"checksum":"..."}`.
/// struct Squares;
/// impl RecordFormat for Squares {
///     type Record = (u64, u64);
///     const KIND: &'static str = "squares";
///     const ITEM: &'static str = "square";
///     const AN_ITEM: &'static str = "a square";
///     fn key(&self, r: &(u64, u64)) -> String { r.0.to_string() }
///     fn describe(&self, r: &(u64, u64)) -> String { format!("n = {}", r.0) }
///     fn body(&self, r: &(u64, u64)) -> Result<String, String> {
///         Ok(format!("{{\"n\":{},\"square\":{}}}", r.0, r.1))
///     }
///     fn parse(&self, text: &str) -> Result<((u64, u64), String), String> {
///         let v: serde_json::Value = serde_json::from_str(text).map_err(|e| e.to_string())?;
///         let n = v["n"].as_u64().ok_or("no n")?;
///         let sum = v["checksum"].as_str().ok_or("no checksum")?.to_string();
///         Ok(((n, v["square"].as_u64().ok_or("no square")?), sum))
///     }
///     fn check(&self, r: &(u64, u64)) -> Result<(), String> {
///         (r.0 * r.0 == r.1).then_some(()).ok_or("is not a square".into())
///     }
///     fn order(&self, a: &(u64, u64), b: &(u64, u64)) -> Ordering { a.0.cmp(&b.0) }
///     fn max_line_bytes(&self) -> usize { 256 }
///     fn max_file(&self) -> (u64, String) { (1 << 20, "1 MiB".into()) }
/// }
///
/// let path = std::env::temp_dir().join(format!("umbral-ckpt-doc-{}.jsonl", std::process::id()));
/// let _ = std::fs::remove_file(&path);
/// let head = serde_json::json!({"umbral_squares": 1, "umbral_version": "x"});
/// let mut first = JsonlCheckpoint::open(&path, Squares, &head).unwrap();
/// first.record("3", &(3, 9)).unwrap();
/// drop(first); // interrupted before completing
/// let mut again = JsonlCheckpoint::open(&path, Squares, &head).unwrap();
/// assert_eq!((again.kept(), again.recall("3")), (1, Some((3, 9))));
/// again.record("2", &(2, 4)).unwrap();
/// again.complete().unwrap();
/// let text = std::fs::read_to_string(&path).unwrap();
/// assert!(text.lines().nth(1).unwrap().starts_with("{\"n\":2,\"square\":4,\"checksum\":"));
/// again.remove().unwrap();
/// assert!(!path.exists());
/// ```
pub struct JsonlCheckpoint<F: RecordFormat> {
    format: F,
    head_text: String,
    shown: String,
    file: LockedFile,
    records: Kept<F::Record>,
    kept: usize,
}

impl<F: RecordFormat> JsonlCheckpoint<F> {
    /// Open (or create) the checkpoint at `path` for a run with header `head`, lock it and
    /// keep the records an earlier run of the same header left in it. A file this call
    /// created is removed again if it fails.
    pub fn open<H: Serialize + DeserializeOwned + PartialEq>(
        path: &Path,
        format: F,
        head: &H,
    ) -> Result<Self, CheckpointError> {
        let shown = path.display().to_string();
        let head_text = header_text(head, &shown)?;
        let mut file = LockedFile::open(path, F::KIND)?;
        let (cap, why) = format.max_file();
        let start = file
            .read(cap, &why)
            .and_then(|data| read_records(&format, &data, &shown, head, &head_text));
        let records = match start {
            Ok(r) => r,
            Err(e) => {
                file.abandon();
                return Err(e);
            }
        };
        let mut checkpoint = JsonlCheckpoint {
            format,
            head_text,
            shown,
            file,
            kept: records.len(),
            records,
        };
        // Rewrite what was kept (drops a half-written line); records are appended after it.
        if let Err(e) = checkpoint.rewrite() {
            checkpoint.file.abandon();
            return Err(e);
        }
        Ok(checkpoint)
    }

    /// Read and check the records an earlier run left at `path`, without locking or writing
    /// anything (for tests and fuzzing): in the format's order, none when the file does not
    /// exist; the error is what [`Self::open`] would refuse the file with.
    pub fn read<H: Serialize + DeserializeOwned + PartialEq>(
        path: &Path,
        format: &F,
        head: &H,
    ) -> Result<Vec<F::Record>, CheckpointError> {
        let shown = path.display().to_string();
        let head_text = header_text(head, &shown)?;
        if !path.exists() {
            return Ok(Vec::new());
        }
        let (cap, _) = format.max_file();
        let data =
            crate::input::read_bytes_capped(path, cap).map_err(|e| CheckpointError::Read {
                path: shown.clone(),
                message: e.to_string(),
            })?;
        let records = read_records(format, &data, &shown, head, &head_text)?;
        let mut out: Vec<F::Record> = records.into_values().map(|(_, r)| r).collect();
        out.sort_by(|a, b| format.order(a, b));
        Ok(out)
    }

    /// How many records were kept from an earlier run.
    pub fn kept(&self) -> usize {
        self.kept
    }

    /// The path as given, for messages.
    pub fn path(&self) -> &str {
        &self.shown
    }

    /// Every record (kept and new) in the format's order.
    pub fn records(&self) -> Vec<&F::Record> {
        let mut all: Vec<&F::Record> = self.records.values().map(|(_, r)| r).collect();
        all.sort_by(|a, b| self.format.order(a, b));
        all
    }

    /// Delete the checkpoint (for a run whose checkpoint is only a safeguard, once the run
    /// has completed).
    pub fn remove(self) -> Result<(), CheckpointError> {
        self.file.remove()
    }

    /// Replace the file by the header and every record in the format's order.
    fn rewrite(&mut self) -> Result<(), CheckpointError> {
        let mut lines: Vec<&(String, F::Record)> = self.records.values().collect();
        lines.sort_by(|a, b| self.format.order(&a.1, &b.1));
        let mut text = String::with_capacity(
            self.head_text.len() + 1 + lines.iter().map(|l| l.0.len() + 1).sum::<usize>(),
        );
        text.push_str(&self.head_text);
        text.push('\n');
        for (line, _) in lines {
            text.push_str(line);
            text.push('\n');
        }
        self.file.replace(&text)
    }
}

/// The header's line (without the newline).
fn header_text<H: Serialize>(head: &H, shown: &str) -> Result<String, CheckpointError> {
    serde_json::to_string(head).map_err(|e| CheckpointError::Io {
        path: shown.to_string(),
        message: format!("cannot write the header: {e}"),
    })
}

impl<F: RecordFormat> Checkpoint<F::Record> for JsonlCheckpoint<F> {
    fn recall(&self, key: &str) -> Option<F::Record> {
        self.records.get(key).map(|(_, r)| r.clone())
    }

    fn record(&mut self, key: &str, output: &F::Record) -> Result<(), CheckpointError> {
        let line =
            encode(&self.format, &self.head_text, output).map_err(|e| CheckpointError::Io {
                path: self.shown.clone(),
                message: e,
            })?;
        if line.len() > self.format.max_line_bytes() {
            return Ok(()); // not kept: it would be refused on reading; computed again then
        }
        self.file.append(&line)?;
        self.records.insert(key.to_string(), (line, output.clone()));
        Ok(())
    }

    fn complete(&mut self) -> Result<(), CheckpointError> {
        self.rewrite()
    }
}
