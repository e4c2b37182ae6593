//! `--update`: write the computed values into a copy of a checks file as a new baseline,
//! keeping its comments and layout (format-preserving edit with `toml_edit`).
//!
//! Only values whose source is umbral itself are rewritten: an expectation is such a baseline
//! when its `source` is `"umbral"` or begins with `"umbral:"` (see [`is_umbral_source`]).
//! A value with an outside source (a paper, a closed form, a generator script) is never
//! replaced by umbral's own number behind its back: if it drifted it is reported
//! ([`UpdateOutcome::outside_drifted`]) and left as written, unless the caller names its row
//! ([`RowSelector`]); a named row gets the computed value and its source becomes
//! `umbral: forced update, replacing a value from "<old source>"`, so the file never claims
//! an outside source for a number umbral produced. Ranges (`min`/`max`, which are claims rather
//! than baselines) stay as written, and an expectation whose computation failed keeps its old
//! value.

use super::report::{CheckRow, VerifyReport};
use super::schema::Expected;
use super::{ChecksFile, VerifyError};
use crate::run::Controls;
use std::path::{Path, PathBuf};
use toml_edit::{DocumentMut, Item, TableLike, Value};

/// What an update wrote.
#[derive(Debug, Clone)]
pub struct UpdateOutcome {
    /// The rows of the run the new values come from.
    pub report: VerifyReport,
    /// The file written.
    pub output: PathBuf,
    /// Values replaced (umbral baselines and named rows).
    pub updated: usize,
    /// Expectations left as written, with why (a range, or a failed computation).
    pub kept: Vec<String>,
    /// Rows with an outside source whose check failed: left as written, described with the
    /// written and the computed value.
    pub outside_drifted: Vec<String>,
    /// Rows with an outside source that still pass (left as written).
    pub outside_unchanged: usize,
    /// Rows with an outside source replaced because the caller named them.
    pub forced: Vec<String>,
}

/// Whether an expectation's value is a baseline computed by umbral itself, which `--update`
/// may rewrite: its source is `umbral`, or begins with `umbral:` followed by free text
/// (ASCII case ignored, surrounding spaces too).
///
/// ```
/// use umbral::verify::is_umbral_source;
/// assert!(is_umbral_source("umbral"));
/// assert!(is_umbral_source("Umbral: baseline of the a = 0.9 curve"));
/// assert!(!is_umbral_source("Synge 1966, MNRAS 131, 463"));
/// assert!(!is_umbral_source("umbralike"));
/// ```
pub fn is_umbral_source(source: &str) -> bool {
    let s = source.trim();
    let head = s.get(..6).unwrap_or("");
    head.eq_ignore_ascii_case("umbral") && (s.len() == 6 || s[6..].starts_with(':'))
}

/// A row (or rows) named by the caller: `CASE`, `CASE:QUANTITY` or, for a `[[bound]]`,
/// `CASE:QUANTITY@CONFIDENCE`.
///
/// ```
/// use umbral::verify::RowSelector;
/// let s = RowSelector::parse("rn-charge-from-radius:upper_end@0.68").unwrap();
/// assert!(s.matches("rn-charge-from-radius", "upper_end", Some(0.68)));
/// assert!(!s.matches("rn-charge-from-radius", "upper_end", Some(0.95)));
/// assert!(RowSelector::parse("schw").unwrap().matches("schw", "mean_radius", None));
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct RowSelector {
    /// The text as given.
    pub text: String,
    case: String,
    quantity: Option<String>,
    confidence: Option<f64>,
}

impl RowSelector {
    /// Read `CASE[:QUANTITY[@CONFIDENCE]]`.
    pub fn parse(text: &str) -> Result<RowSelector, String> {
        let t = text.trim();
        let (case, rest) = match t.rsplit_once(':') {
            Some((c, q)) => (c.trim(), Some(q.trim())),
            None => (t, None),
        };
        let (quantity, confidence) = match rest {
            None => (None, None),
            Some(q) => match q.split_once('@') {
                None => (Some(q.to_string()), None),
                Some((q, c)) => {
                    let c: f64 = c.trim().parse().map_err(|_| {
                        format!("row '{t}': '{c}' after '@' is not a confidence level")
                    })?;
                    (Some(q.trim().to_string()), Some(c))
                }
            },
        };
        if case.is_empty() || quantity.as_deref() == Some("") {
            return Err(format!(
                "row '{t}': expected CASE, CASE:QUANTITY or CASE:QUANTITY@CONFIDENCE"
            ));
        }
        Ok(RowSelector {
            text: t.to_string(),
            case: case.to_string(),
            quantity,
            confidence,
        })
    }

    /// Whether the expectation `quantity` (at `confidence`, bound rows) of case `case` is named.
    pub fn matches(&self, case: &str, quantity: &str, confidence: Option<f64>) -> bool {
        self.case == case
            && self.quantity.as_deref().is_none_or(|q| q == quantity)
            && match (self.confidence, confidence) {
                (None, _) => true,
                (Some(want), Some(c)) => (want - c).abs() <= 1e-9,
                (Some(_), None) => false,
            }
    }

    /// Whether the selector names some expectation of `checks`.
    pub fn names_a_row_of(&self, checks: &ChecksFile) -> bool {
        let cases = checks.cases.iter().flat_map(|c| {
            c.expectations
                .iter()
                .map(move |e| (&c.name, e.quantity.name(), e.confidence))
        });
        let bounds = checks.bounds.iter().flat_map(|b| {
            b.expectations
                .iter()
                .map(move |e| (&b.name, e.quantity.as_str(), e.confidence))
        });
        cases
            .chain(bounds)
            .any(|(case, q, c)| self.matches(case, q, c))
    }
}

/// The default output path: `NAME.toml` becomes `NAME.updated.toml`.
pub fn default_update_path(path: &Path) -> PathBuf {
    let stem = path
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "checks".into());
    path.with_file_name(format!("{stem}.updated.toml"))
}

/// The `i`-th table of an array of tables, or of an array of inline tables.
fn element_mut(item: &mut Item, i: usize) -> Option<&mut dyn TableLike> {
    match item {
        Item::ArrayOfTables(a) => a.get_mut(i).map(|t| t as &mut dyn TableLike),
        Item::Value(Value::Array(a)) => a
            .get_mut(i)?
            .as_inline_table_mut()
            .map(|t| t as &mut dyn TableLike),
        _ => None,
    }
}

/// Replace a value in place, keeping the comments and spacing around it.
fn set_value(v: &mut Value, new: Value) {
    let decor = v.decor().clone();
    *v = new;
    *v.decor_mut() = decor;
}

/// The new values, and what was kept, of one update.
struct Edits {
    text: String,
    updated: usize,
    kept: Vec<String>,
    outside_drifted: Vec<String>,
    outside_unchanged: usize,
    forced: Vec<String>,
}

fn row_label(row: &CheckRow) -> String {
    match row.confidence {
        Some(c) => format!("{}: {} @ {c}", row.case, row.quantity),
        None => format!("{}: {}", row.case, row.quantity),
    }
}

/// Whether a row's expectation is rewritten: `Some((computed value, whether umbral is its
/// source))`, or `None` with the row recorded in `edits` as kept or as an outside value.
fn triage(row: &CheckRow, force: &[RowSelector], edits: &mut Edits) -> Option<(f64, bool)> {
    let label = row_label(row);
    if let Expected::Range { .. } = row.expected {
        edits
            .kept
            .push(format!("{label} (a range, kept as written)"));
        return None;
    }
    let got = match (row.got, row.passed || row.reason.is_none()) {
        (Some(g), true) if g.is_finite() => g,
        _ => {
            edits.kept.push(format!(
                "{label} (no value: {})",
                row.reason.as_deref().unwrap_or("not computed")
            ));
            return None;
        }
    };
    let named = force
        .iter()
        .any(|s| s.matches(&row.case, &row.quantity, row.confidence));
    let own = is_umbral_source(&row.source);
    if !own && !named {
        if row.passed {
            edits.outside_unchanged += 1;
        } else {
            let written = match row.expected {
                Expected::Value { value, .. } => value,
                Expected::Range { .. } => f64::NAN,
            };
            edits.outside_drifted.push(format!(
                "{label} (written {written}, computed {got}; source \"{}\")",
                row.source
            ));
        }
        return None;
    }
    Some((got, own))
}

/// Write `report`'s computed values into the text of `original` under the rules of the module
/// docs; `force` names rows with an outside source to replace anyway.
fn updated_text(
    original: &str,
    path: &Path,
    report: &VerifyReport,
    force: &[RowSelector],
) -> Result<Edits, VerifyError> {
    let invalid = |message: String| VerifyError::Invalid {
        path: path.to_path_buf(),
        message,
    };
    let mut doc: DocumentMut = original
        .parse()
        .map_err(|e: toml_edit::TomlError| invalid(e.message().to_string()))?;
    let mut edits = Edits {
        text: String::new(),
        updated: 0,
        kept: Vec::new(),
        outside_drifted: Vec::new(),
        outside_unchanged: 0,
        forced: Vec::new(),
    };
    for row in &report.rows {
        let Some((got, own)) = triage(row, force, &mut edits) else {
            continue;
        };
        let label = row_label(row);
        let expectation = doc
            .as_table_mut()
            .get_mut(row.section)
            .and_then(|c| element_mut(c, row.case_index))
            .and_then(|c| c.get_mut("expect"))
            .and_then(|e| element_mut(e, row.expect_index))
            .ok_or_else(|| {
                invalid(format!(
                    "cannot find {} {} expectation {} to update",
                    row.section,
                    row.case_index + 1,
                    row.expect_index + 1
                ))
            })?;
        let mut set = |key: &str, new: Value| -> Result<(), VerifyError> {
            let slot = expectation
                .get_mut(key)
                .and_then(Item::as_value_mut)
                .ok_or_else(|| invalid(format!("cannot find the {key} of {label} to update")))?;
            set_value(slot, new);
            Ok(())
        };
        set("value", Value::from(got))?;
        if !own {
            let source = format!(
                "umbral: forced update, replacing a value from \"{}\"",
                row.source.replace('"', "'")
            );
            set("source", Value::from(source))?;
            edits.forced.push(label);
        }
        edits.updated += 1;
    }
    edits.text = doc.to_string();
    Ok(edits)
}

/// Run a checks file and write its computed values as a new baseline to `output`
/// (default [`default_update_path`]), rewriting only values whose source is umbral itself
/// (module docs). The original is never touched unless `output` names it.
pub fn update_checks_file(
    path: impl AsRef<Path>,
    output: Option<&Path>,
) -> Result<UpdateOutcome, VerifyError> {
    update_checks_file_forcing(path, output, &[])
}

/// [`update_checks_file`], also replacing the rows named by `force` even where their source
/// is an outside one (their source then says that umbral replaced it).
pub fn update_checks_file_forcing(
    path: impl AsRef<Path>,
    output: Option<&Path>,
    force: &[RowSelector],
) -> Result<UpdateOutcome, VerifyError> {
    update_checks_file_with(path, output, force, Controls::default())
}

/// [`update_checks_file_forcing`] with `controls`' observers and stop flag
/// ([`super::ChecksFile::run_with`]); a stop request ends it with
/// [`VerifyError::Interrupted`] before anything is written.
pub fn update_checks_file_with(
    path: impl AsRef<Path>,
    output: Option<&Path>,
    force: &[RowSelector],
    controls: Controls<'_>,
) -> Result<UpdateOutcome, VerifyError> {
    let path = path.as_ref();
    let original = crate::input::read_text(path).map_err(|e| VerifyError::Invalid {
        path: path.to_path_buf(),
        message: format!("cannot read: {e}"),
    })?;
    let checks = super::ChecksFile::parse(&original, path)?;
    let report = checks
        .run_with(controls)
        .map_err(|stopped| VerifyError::Interrupted {
            path: path.to_path_buf(),
            cases_done: stopped.cases_done,
            cases: stopped.cases,
        })?;
    let edits = updated_text(&original, path, &report, force)?;
    let output = output
        .map(Path::to_path_buf)
        .unwrap_or_else(|| default_update_path(path));
    std::fs::write(&output, &edits.text).map_err(|e| VerifyError::Write {
        path: output.clone(),
        message: e.to_string(),
    })?;
    Ok(UpdateOutcome {
        report,
        output,
        updated: edits.updated,
        kept: edits.kept,
        outside_drifted: edits.outside_drifted,
        outside_unchanged: edits.outside_unchanged,
        forced: edits.forced,
    })
}
