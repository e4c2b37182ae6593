//! Errors of metric files: every one names the file, line and column, shows the source line
//! with a caret under the offending text, and says what was expected.

use std::fmt;

/// A place in a metric file: position, the source line and the width of the marked text.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Location {
    /// The file as given by the caller (or a label such as `<string>`).
    pub file: String,
    /// 1-based line number.
    pub line: usize,
    /// 1-based column, counted in characters.
    pub column: usize,
    /// The full source line (tabs shown as spaces).
    pub source_line: String,
    /// Number of characters to mark (at least 1).
    pub width: usize,
    /// The field of the file the text belongs to, e.g. `line_element.g_tt` (may be empty).
    pub field: String,
}

impl Location {
    /// The location of bytes `start..end` of `text` (clamped to the text; `end` may equal
    /// `start`). Positions inside one line are marked; a range running over a line break is
    /// marked up to the end of its first line.
    pub fn at(file: &str, text: &str, start: usize, end: usize, field: &str) -> Location {
        let start = floor_char_boundary(text, start.min(text.len()));
        let end = floor_char_boundary(text, end.clamp(start, text.len()));
        let line_start = text[..start].rfind('\n').map_or(0, |i| i + 1);
        let line_end = text[start..]
            .find('\n')
            .map_or(text.len(), |i| start + i)
            .max(start);
        let line = text[..start].matches('\n').count() + 1;
        let column = text[line_start..start].chars().count() + 1;
        let marked_end = end.min(line_end);
        let width = text[start..marked_end].chars().count().max(1);
        let source_line = text[line_start..line_end]
            .trim_end_matches('\r')
            .replace('\t', " ");
        Location {
            file: file.to_string(),
            line,
            column,
            source_line,
            width,
            field: field.to_string(),
        }
    }

    /// `file:line:column`.
    pub fn short(&self) -> String {
        format!("{}:{}:{}", self.file, self.line, self.column)
    }

    /// The source line with its number, and a caret line under the marked text.
    fn excerpt(&self) -> String {
        let number = self.line.to_string();
        let pad = " ".repeat(number.len());
        let lead = " ".repeat(self.column.saturating_sub(1));
        format!(
            "  {number} | {}\n  {pad} | {lead}{}",
            self.source_line,
            "^".repeat(self.width)
        )
    }
}

fn floor_char_boundary(text: &str, mut i: usize) -> usize {
    while i > 0 && !text.is_char_boundary(i) {
        i -= 1;
    }
    i
}

/// What can be wrong with a metric file. `Display` gives the full multi-line message (place,
/// source line with a caret, what was expected); [`MetricFileError::summary`] gives one line.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum MetricFileError {
    /// The file could not be read.
    #[error("cannot read metric file {path}: {reason}")]
    Read { path: String, reason: String },
    /// The text is not valid TOML, or its keys or value types do not match the schema
    /// (including unknown keys and missing required keys).
    #[error("{}", self.full_message())]
    Toml { at: Box<Location>, message: String },
    /// An expression does not parse.
    #[error("{}", self.full_message())]
    Syntax {
        at: Box<Location>,
        found: String,
        expected: String,
    },
    /// A name that is neither a parameter, a helper, an allowed coordinate nor a constant.
    #[error("{}", self.full_message())]
    UnknownName {
        at: Box<Location>,
        name: String,
        suggestion: Option<String>,
    },
    /// A call of a function that does not exist.
    #[error("{}", self.full_message())]
    UnknownFunction {
        at: Box<Location>,
        name: String,
        suggestion: Option<String>,
    },
    /// A function called with the wrong number of arguments.
    #[error("{}", self.full_message())]
    ArgumentCount {
        at: Box<Location>,
        function: String,
        expected: usize,
        found: usize,
    },
    /// A helper used by an earlier helper (helpers are evaluated in order).
    #[error("{}", self.full_message())]
    UsedBeforeDefined {
        at: Box<Location>,
        name: String,
        defined_at: usize,
    },
    /// Helpers that refer to each other in a loop.
    #[error("{}", self.full_message())]
    Cycle {
        at: Box<Location>,
        cycle: Vec<String>,
    },
    /// A coordinate used where it is not available, directly or through a helper.
    #[error("{}", self.full_message())]
    NotAvailable {
        at: Box<Location>,
        name: String,
        variable: String,
        context: String,
        allowed: String,
    },
    /// A parameter default outside the parameter's domain.
    #[error("{}", self.full_message())]
    DefaultOutsideDomain {
        at: Box<Location>,
        name: String,
        default: f64,
        domain: String,
    },
    /// A domain that is not an interval.
    #[error("{}", self.full_message())]
    BadDomain { at: Box<Location>, expected: String },
    /// A line-element component the declared symmetry needs is missing.
    #[error("{}", self.full_message())]
    MissingComponent {
        at: Box<Location>,
        component: String,
        symmetry: String,
        needed: String,
    },
    /// A line-element component that does not belong to the declared symmetry.
    #[error("{}", self.full_message())]
    ForeignComponent {
        at: Box<Location>,
        component: String,
        symmetry: String,
        needed: String,
    },
    /// A name defined twice, or a name that is reserved.
    #[error("{}", self.full_message())]
    BadName { at: Box<Location>, problem: String },
    /// A value of the file that is allowed by TOML but not by the schema.
    #[error("{}", self.full_message())]
    Invalid { at: Box<Location>, problem: String },
}

impl MetricFileError {
    /// Where the error is, when it has a place in the file.
    pub fn location(&self) -> Option<&Location> {
        match self {
            MetricFileError::Read { .. } => None,
            MetricFileError::Toml { at, .. }
            | MetricFileError::Syntax { at, .. }
            | MetricFileError::UnknownName { at, .. }
            | MetricFileError::UnknownFunction { at, .. }
            | MetricFileError::ArgumentCount { at, .. }
            | MetricFileError::UsedBeforeDefined { at, .. }
            | MetricFileError::Cycle { at, .. }
            | MetricFileError::NotAvailable { at, .. }
            | MetricFileError::DefaultOutsideDomain { at, .. }
            | MetricFileError::BadDomain { at, .. }
            | MetricFileError::MissingComponent { at, .. }
            | MetricFileError::ForeignComponent { at, .. }
            | MetricFileError::BadName { at, .. }
            | MetricFileError::Invalid { at, .. } => Some(at.as_ref()),
        }
    }

    /// What is wrong and what was expected, in one sentence, without the place.
    pub fn message(&self) -> String {
        match self {
            MetricFileError::Read { path, reason } => {
                format!("cannot read metric file {path}: {reason}")
            }
            MetricFileError::Toml { message, .. } => {
                format!("not a valid metric file: {}", message.trim_end())
            }
            MetricFileError::Syntax {
                found, expected, ..
            } => {
                format!("syntax error: expected {expected}, found {found}")
            }
            MetricFileError::UnknownName {
                name, suggestion, ..
            } => {
                let mut m = format!(
                    "unknown name '{name}': expected a parameter, a helper, a coordinate or pi"
                );
                if let Some(s) = suggestion {
                    m.push_str(&format!("; did you mean '{s}'?"));
                }
                m
            }
            MetricFileError::UnknownFunction {
                name, suggestion, ..
            } => {
                let mut m = format!(
                    "unknown function '{name}': expected one of {}",
                    super::parser::FUNCTION_NAMES.join(", ")
                );
                if let Some(s) = suggestion {
                    m.push_str(&format!("; did you mean '{s}'?"));
                }
                m
            }
            MetricFileError::ArgumentCount {
                function,
                expected,
                found,
                ..
            } => format!(
                "function '{function}' takes {expected} argument{}, found {found}",
                if *expected == 1 { "" } else { "s" }
            ),
            MetricFileError::UsedBeforeDefined {
                name, defined_at, ..
            } => format!(
                "helper '{name}' is used before it is defined (on line {defined_at}); \
                 helpers are evaluated in order, so define it earlier"
            ),
            MetricFileError::Cycle { cycle, .. } => format!(
                "helpers refer to each other in a cycle: {}",
                cycle.join(" -> ")
            ),
            MetricFileError::NotAvailable {
                name,
                variable,
                context,
                allowed,
                ..
            } => {
                if name == variable {
                    format!(
                        "'{variable}' is not available in {context}; expected an expression in {allowed}"
                    )
                } else {
                    format!(
                        "helper '{name}' depends on '{variable}', which is not available in \
                         {context}; expected an expression in {allowed}"
                    )
                }
            }
            MetricFileError::DefaultOutsideDomain {
                name,
                default,
                domain,
                ..
            } => format!(
                "the default {default} of parameter '{name}' is outside its domain {domain}"
            ),
            MetricFileError::BadDomain { expected, .. } => {
                format!("bad parameter domain: expected {expected}")
            }
            MetricFileError::MissingComponent {
                component,
                symmetry,
                needed,
                ..
            } => {
                format!(
                    "missing component '{component}': the {symmetry} line element needs {needed}"
                )
            }
            MetricFileError::ForeignComponent {
                component,
                symmetry,
                needed,
                ..
            } => format!(
                "component '{component}' does not belong to the {symmetry} line element, \
                 which is given by {needed}"
            ),
            MetricFileError::BadName { problem, .. } | MetricFileError::Invalid { problem, .. } => {
                problem.clone()
            }
        }
    }

    /// One line: `file:line:column: message`.
    pub fn summary(&self) -> String {
        match self.location() {
            Some(at) => format!("{}: {}", at.short(), self.message()),
            None => self.message(),
        }
    }

    /// The full message: place, field, source line with a caret, and the message.
    pub fn full_message(&self) -> String {
        match self.location() {
            None => self.message(),
            Some(at) => {
                let field = if at.field.is_empty() {
                    String::new()
                } else {
                    format!(" (in {})", at.field)
                };
                format!(
                    "error in metric file {}, line {}, column {}{field}:\n{}\n{}",
                    at.file,
                    at.line,
                    at.column,
                    at.excerpt(),
                    self.message()
                )
            }
        }
    }
}

impl fmt::Display for Location {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.short())
    }
}

/// Levenshtein edit distance between two names (insertions, deletions, substitutions).
pub(crate) fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut row: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut diagonal = row[0];
        row[0] = i + 1;
        for (j, cb) in b.iter().enumerate() {
            let substitution = diagonal + usize::from(ca != *cb);
            diagonal = row[j + 1];
            row[j + 1] = substitution.min(row[j] + 1).min(diagonal + 1);
        }
    }
    row[b.len()]
}

/// The closest candidate to `name`, if it is close enough to be a plausible typo: at most a
/// third of the longer name's length in edits (at least one edit), ties to the earlier one.
/// Case-only differences always qualify.
pub(crate) fn closest<'a>(
    name: &str,
    candidates: impl IntoIterator<Item = &'a str>,
) -> Option<String> {
    let mut best: Option<(usize, &str)> = None;
    for c in candidates {
        if c == name {
            continue;
        }
        let d = if c.eq_ignore_ascii_case(name) {
            0
        } else {
            edit_distance(name, c)
        };
        let limit = (name.chars().count().max(c.chars().count()) / 3).max(1);
        if d <= limit && best.is_none_or(|(bd, _)| d < bd) {
            best = Some((d, c));
        }
    }
    best.map(|(_, c)| c.to_string())
}
