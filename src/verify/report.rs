//! The outcome of a checks run: one row per expectation, as a table or JSON.

use super::schema::{Expected, Tolerance};
use serde::Serialize;

/// A number in full (shortest round-trip) precision, in exponent form when very small or large.
fn number(x: f64) -> String {
    if x != 0.0 && (x.abs() < 1e-4 || x.abs() >= 1e16) {
        format!("{x:e}")
    } else {
        format!("{x}")
    }
}

/// One expectation's outcome.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CheckRow {
    /// The checks file, as given.
    pub file: String,
    /// The case's name.
    pub case: String,
    /// The quantity's name.
    pub quantity: String,
    /// The value or range expected.
    pub expected: Expected,
    /// The computed value, when there is one.
    pub got: Option<f64>,
    /// For a value: got − expected. For a range: got minus its nearest end.
    pub difference: Option<f64>,
    /// The tolerance in the quantity's units (values only).
    pub tolerance: Option<f64>,
    /// Whether the expectation holds.
    pub passed: bool,
    /// Why there is no value (solver failure, no shadow, quantity not available).
    pub reason: Option<String>,
    /// Where the expected number comes from.
    pub source: String,
    /// `case` or `bound`: the array of tables the row's case is in.
    pub section: &'static str,
    /// The confidence level (bound rows only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub confidence: Option<f64>,
    /// Index of the case in its section of the file.
    pub case_index: usize,
    /// Index of the expectation in the case.
    pub expect_index: usize,
}

impl CheckRow {
    /// Judge a computed value (or the reason there is none) against an expectation.
    pub fn judge(
        file: String,
        case: (usize, &str),
        expect_index: usize,
        quantity: &str,
        expected: Expected,
        source: &str,
        got: Result<f64, String>,
    ) -> CheckRow {
        let mut row = CheckRow {
            file,
            case: case.1.to_string(),
            quantity: quantity.to_string(),
            expected,
            got: None,
            difference: None,
            tolerance: None,
            passed: false,
            reason: None,
            source: source.to_string(),
            section: "case",
            confidence: None,
            case_index: case.0,
            expect_index,
        };
        let got = match got {
            Ok(g) if g.is_finite() => g,
            Ok(g) => {
                row.got = Some(g);
                row.reason = Some(format!("computed value is not finite ({g})"));
                return row;
            }
            Err(reason) => {
                row.reason = Some(reason);
                return row;
            }
        };
        row.got = Some(got);
        match expected {
            Expected::Value { value, tolerance } => {
                let tol = tolerance.absolute_for(value);
                let diff = got - value;
                row.difference = Some(diff);
                row.tolerance = Some(tol);
                row.passed = diff.abs() <= tol;
            }
            Expected::Range { min, max } => {
                let below = min.map(|m| got - m);
                let above = max.map(|m| got - m);
                row.difference = match (below, above) {
                    (Some(b), Some(a)) => Some(if b.abs() <= a.abs() { b } else { a }),
                    (b, a) => b.or(a),
                };
                row.passed = min.is_none_or(|m| got >= m) && max.is_none_or(|m| got <= m);
            }
        }
        row
    }

    fn expected_text(&self) -> String {
        match self.expected {
            Expected::Value { value, .. } => number(value),
            Expected::Range {
                min: Some(lo),
                max: Some(hi),
            } => format!("[{}, {}]", number(lo), number(hi)),
            Expected::Range {
                min: Some(lo),
                max: None,
            } => format!(">= {}", number(lo)),
            Expected::Range {
                min: None,
                max: Some(hi),
            } => format!("<= {}", number(hi)),
            Expected::Range {
                min: None,
                max: None,
            } => "any".into(),
        }
    }

    fn tolerance_text(&self) -> String {
        match self.expected {
            Expected::Value {
                tolerance: Tolerance::Absolute(t),
                ..
            } => format!("abs {t:e}"),
            Expected::Value {
                tolerance: Tolerance::Relative(t),
                ..
            } => format!("rel {t:e}"),
            Expected::Range { .. } => "-".into(),
        }
    }

    fn result_text(&self) -> String {
        match (&self.reason, self.passed) {
            (_, true) => "PASS".into(),
            (Some(reason), false) => format!("FAIL ({reason})"),
            (None, false) => "FAIL".into(),
        }
    }
}

/// All rows of one or more checks files.
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct VerifyReport {
    /// One row per expectation, in file order.
    pub rows: Vec<CheckRow>,
}

impl VerifyReport {
    /// Whether every expectation passed.
    pub fn all_passed(&self) -> bool {
        self.rows.iter().all(|r| r.passed)
    }

    /// Number of passing rows.
    pub fn passed(&self) -> usize {
        self.rows.iter().filter(|r| r.passed).count()
    }

    /// Number of failing rows.
    pub fn failed(&self) -> usize {
        self.rows.len() - self.passed()
    }

    /// The rows that failed.
    pub fn failures(&self) -> impl Iterator<Item = &CheckRow> {
        self.rows.iter().filter(|r| !r.passed)
    }

    /// Append another report's rows.
    pub fn extend(&mut self, other: VerifyReport) {
        self.rows.extend(other.rows);
    }

    /// The report as a plain-text table, one row per expectation, and a summary line.
    pub fn render_table(&self) -> String {
        let headers = [
            "file",
            "case",
            "quantity",
            "expected",
            "got",
            "difference",
            "tolerance",
            "result",
        ];
        let fmt_opt = |x: Option<f64>, sci: bool| match x {
            None => "-".to_string(),
            Some(v) if sci => format!("{v:+.3e}"),
            Some(v) => number(v),
        };
        let cells: Vec<[String; 8]> = self
            .rows
            .iter()
            .map(|r| {
                [
                    r.file.clone(),
                    r.case.clone(),
                    match r.confidence {
                        Some(c) => format!("{} @ {c}", r.quantity),
                        None => r.quantity.clone(),
                    },
                    r.expected_text(),
                    fmt_opt(r.got, false),
                    fmt_opt(r.difference, true),
                    r.tolerance_text(),
                    r.result_text(),
                ]
            })
            .collect();
        let mut widths = headers.map(str::len);
        for row in &cells {
            for (w, c) in widths.iter_mut().zip(row) {
                *w = (*w).max(c.chars().count());
            }
        }
        let line = |row: &[String]| {
            let mut s = String::new();
            for (i, (c, w)) in row.iter().zip(widths).enumerate() {
                if i + 1 == row.len() {
                    s.push_str(c);
                } else {
                    s.push_str(&format!("{c:<w$}  "));
                }
            }
            s.trim_end().to_string()
        };
        let mut out = String::new();
        out.push_str(&line(&headers.map(String::from)));
        out.push('\n');
        for row in &cells {
            out.push_str(&line(row));
            out.push('\n');
        }
        out.push_str(&format!(
            "summary: {} expectations, {} pass, {} fail\n",
            self.rows.len(),
            self.passed(),
            self.failed()
        ));
        out
    }
}
