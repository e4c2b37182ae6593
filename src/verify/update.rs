//! `--update`: write the computed values into a copy of a checks file as a new baseline,
//! keeping its comments and layout (format-preserving edit with `toml_edit`).
//!
//! Only `value` keys change; tolerances, sources and ranges (`min`/`max`, which are claims
//! rather than baselines) stay as written. An expectation whose computation failed keeps its
//! old value.

use super::report::VerifyReport;
use super::schema::Expected;
use super::VerifyError;
use std::path::{Path, PathBuf};
use toml_edit::{DocumentMut, Item, TableLike, Value};

/// What an update wrote.
#[derive(Debug, Clone)]
pub struct UpdateOutcome {
    /// The rows of the run the new values come from.
    pub report: VerifyReport,
    /// The file written.
    pub output: PathBuf,
    /// Values replaced.
    pub updated: usize,
    /// Expectations left as written, with why (a range, or a failed computation).
    pub kept: Vec<String>,
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

/// Replace a number in place, keeping the comments and spacing around it.
fn set_number(v: &mut Value, x: f64) {
    let decor = v.decor().clone();
    *v = Value::from(x);
    *v.decor_mut() = decor;
}

/// Write `report`'s computed values into the text of `original`, returning the new text.
pub fn updated_text(
    original: &str,
    path: &Path,
    report: &VerifyReport,
) -> Result<(String, usize, Vec<String>), VerifyError> {
    let invalid = |message: String| VerifyError::Invalid {
        path: path.to_path_buf(),
        message,
    };
    let mut doc: DocumentMut = original
        .parse()
        .map_err(|e: toml_edit::TomlError| invalid(e.message().to_string()))?;
    let mut updated = 0;
    let mut kept = Vec::new();
    for row in &report.rows {
        let label = format!("{}: {}", row.case, row.quantity);
        if let Expected::Range { .. } = row.expected {
            kept.push(format!("{label} (a range, kept as written)"));
            continue;
        }
        let got = match (row.got, row.passed || row.reason.is_none()) {
            (Some(g), true) if g.is_finite() => g,
            _ => {
                kept.push(format!(
                    "{label} (no value: {})",
                    row.reason.as_deref().unwrap_or("not computed")
                ));
                continue;
            }
        };
        let slot = doc
            .as_table_mut()
            .get_mut(row.section)
            .and_then(|c| element_mut(c, row.case_index))
            .and_then(|c| c.get_mut("expect"))
            .and_then(|e| element_mut(e, row.expect_index))
            .and_then(|e| e.get_mut("value"))
            .and_then(Item::as_value_mut)
            .ok_or_else(|| {
                invalid(format!(
                    "cannot find the value of {} {} expectation {} to update",
                    row.section,
                    row.case_index + 1,
                    row.expect_index + 1
                ))
            })?;
        set_number(slot, got);
        updated += 1;
    }
    Ok((doc.to_string(), updated, kept))
}

/// Run a checks file and write its computed values as a new baseline to `output`
/// (default [`default_update_path`]). The original is never touched unless `output` names it.
pub fn update_checks_file(
    path: impl AsRef<Path>,
    output: Option<&Path>,
) -> Result<UpdateOutcome, VerifyError> {
    let path = path.as_ref();
    let original = crate::input::read_text(path).map_err(|e| VerifyError::Invalid {
        path: path.to_path_buf(),
        message: format!("cannot read: {e}"),
    })?;
    let checks = super::ChecksFile::parse(&original, path)?;
    let report = checks.run();
    let (text, updated, kept) = updated_text(&original, path, &report)?;
    let output = output
        .map(Path::to_path_buf)
        .unwrap_or_else(|| default_update_path(path));
    std::fs::write(&output, text).map_err(|e| VerifyError::Write {
        path: output.clone(),
        message: e.to_string(),
    })?;
    Ok(UpdateOutcome {
        report,
        output,
        updated,
        kept,
    })
}
