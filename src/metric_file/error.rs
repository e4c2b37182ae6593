//! Errors of metric files: every one names the file, line and column, shows the source line
//! with a caret under the offending text, and says what was expected.

use std::fmt;

/// A place in a metric file: position, an excerpt of the source line and the marked text.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Location {
    /// The file as given by the caller (or a label such as `<string>`).
    pub file: String,
    /// 1-based line number.
    pub line: usize,
    /// 1-based column, counted in characters.
    pub column: usize,
    /// The source line as shown: at most [`EXCERPT_WINDOW`] characters on either side of the
    /// marked text (and at most twice that of marked text), with `…` where it is cut; tabs
    /// shown as spaces, control and invisible formatting characters escaped (`\u{0}`).
    pub source_line: String,
    /// 1-based column of the caret in `source_line`.
    pub caret_column: usize,
    /// Number of characters of `source_line` to mark (at least 1).
    pub width: usize,
    /// The field of the file the text belongs to, e.g. `line_element.g_tt` (may be empty).
    pub field: String,
}

/// Characters of context shown on either side of an error's marked text.
pub const EXCERPT_WINDOW: usize = 60;

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
        let source = text[line_start..line_end].trim_end_matches('\r');
        let (source_line, caret_column, width) = excerpt_window(source, column - 1, width);
        Location {
            file: file.to_string(),
            line,
            column,
            source_line,
            caret_column,
            width,
            field: shown(field),
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
        let lead = " ".repeat(self.caret_column.saturating_sub(1));
        format!(
            "  {number} | {}\n  {pad} | {lead}{}",
            self.source_line,
            "^".repeat(self.width)
        )
    }
}

/// The part of `line` shown around characters `mark..mark + width`: the excerpt, the 1-based
/// caret column in it and the marked width, both counted in shown characters.
fn excerpt_window(line: &str, mark: usize, width: usize) -> (String, usize, usize) {
    let chars: Vec<char> = line.chars().collect();
    let mark_end = (mark + width).min(mark + 2 * EXCERPT_WINDOW);
    let lo = mark.saturating_sub(EXCERPT_WINDOW);
    let hi = if mark + width > mark_end {
        mark_end
    } else {
        mark_end + EXCERPT_WINDOW
    }
    .min(chars.len());
    let mut shown_line = String::new();
    let mut count = 0;
    if lo > 0 {
        shown_line.push('…');
        count += 1;
    }
    let (mut caret, mut caret_end) = (None, None);
    for (i, c) in chars.iter().enumerate().take(hi).skip(lo) {
        if i == mark {
            caret = Some(count);
        }
        if i == mark_end {
            caret_end = Some(count);
        }
        let piece = escaped(*c);
        count += piece.chars().count();
        shown_line.push_str(&piece);
    }
    // The mark may start or end at (or past) the end of the shown text.
    let caret = caret.unwrap_or(count);
    let caret_end = caret_end.unwrap_or(count).max(caret + 1);
    if hi < chars.len() {
        shown_line.push('…');
    }
    (shown_line, caret + 1, caret_end - caret)
}

/// A character as shown in an error: tabs as a space, control characters and invisible
/// formatting characters (zero-width, bidirectional overrides, byte-order mark) escaped.
fn escaped(c: char) -> String {
    let invisible = matches!(c, '\u{200B}'..='\u{200F}' | '\u{202A}'..='\u{202E}' | '\u{2066}'..='\u{2069}' | '\u{FEFF}');
    if c == '\t' {
        " ".into()
    } else if c.is_control() || invisible {
        c.escape_default().to_string()
    } else {
        c.to_string()
    }
}

/// User text as it appears inside a message: escaped like the excerpt, and when longer than
/// 60 characters cut to its first 40 and last 15 with `…` between.
pub(crate) fn shown(text: &str) -> String {
    let chars: Vec<char> = text.chars().collect();
    let pick: String = if chars.len() > 60 {
        let head: String = chars[..40].iter().collect();
        let tail: String = chars[chars.len() - 15..].iter().collect();
        format!("{head}…{tail}")
    } else {
        text.to_string()
    };
    pick.chars().map(escaped).collect()
}

/// A whole message made safe to print: control characters escaped and every run of more than
/// 80 characters without a space (a pasted name, a long number) cut by [`shown`].
fn tidy(message: &str) -> String {
    message
        .split(' ')
        .map(|word| {
            if word.chars().count() > 80 {
                shown(word)
            } else {
                word.chars().map(escaped).collect()
            }
        })
        .collect::<Vec<_>>()
        .join(" ")
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
    Read {
        /// The path as given.
        path: String,
        /// The operating system's reason.
        reason: String,
    },
    /// The text is not valid TOML, or its keys or value types do not match the schema
    /// (including unknown keys and missing required keys).
    #[error("{}", self.full_message())]
    Toml {
        /// Where in the file.
        at: Box<Location>,
        /// The TOML reader's message.
        message: String,
    },
    /// An expression does not parse.
    #[error("{}", self.full_message())]
    Syntax {
        /// Where in the file.
        at: Box<Location>,
        /// What was found there, described in words.
        found: String,
        /// What would have been valid there.
        expected: String,
    },
    /// A name that is neither a parameter, a helper, an allowed coordinate nor a constant.
    #[error("{}", self.full_message())]
    UnknownName {
        /// Where in the file.
        at: Box<Location>,
        /// The unknown name.
        name: String,
        /// The closest known name, if one is close enough to be a likely typo.
        suggestion: Option<String>,
    },
    /// A call of a function that does not exist.
    #[error("{}", self.full_message())]
    UnknownFunction {
        /// Where in the file.
        at: Box<Location>,
        /// The unknown function name.
        name: String,
        /// The closest known function name, if one is close enough to be a likely typo.
        suggestion: Option<String>,
    },
    /// A function called with the wrong number of arguments.
    #[error("{}", self.full_message())]
    ArgumentCount {
        /// Where in the file.
        at: Box<Location>,
        /// The function called.
        function: String,
        /// The number of arguments it takes.
        expected: usize,
        /// The number of arguments given.
        found: usize,
    },
    /// A helper used by an earlier helper (helpers are evaluated in order).
    #[error("{}", self.full_message())]
    UsedBeforeDefined {
        /// Where in the file the helper is used.
        at: Box<Location>,
        /// The helper used too early.
        name: String,
        /// The 1-based line on which that helper is defined.
        defined_at: usize,
    },
    /// Helpers that refer to each other in a loop.
    #[error("{}", self.full_message())]
    Cycle {
        /// Where in the file the loop closes.
        at: Box<Location>,
        /// The helper names along the loop, first and last the same.
        cycle: Vec<String>,
    },
    /// A coordinate used where it is not available, directly or through a helper.
    #[error("{}", self.full_message())]
    NotAvailable {
        /// Where in the file.
        at: Box<Location>,
        /// The name used: the coordinate itself, or the helper that depends on it.
        name: String,
        /// The coordinate that is not available (`r`, `theta`, `lambda` or `eta`).
        variable: String,
        /// Where the expression stands, e.g. "the line element of a spherical metric".
        context: String,
        /// What that place allows, e.g. "r and the parameters".
        allowed: String,
    },
    /// A parameter default outside the parameter's domain.
    #[error("{}", self.full_message())]
    DefaultOutsideDomain {
        /// Where in the file.
        at: Box<Location>,
        /// The parameter.
        name: String,
        /// Its default value.
        default: f64,
        /// Its domain, as written in interval notation.
        domain: String,
    },
    /// A domain that is not an interval.
    #[error("{}", self.full_message())]
    BadDomain {
        /// Where in the file.
        at: Box<Location>,
        /// What a domain must look like.
        expected: String,
    },
    /// A line-element component the declared symmetry needs is missing.
    #[error("{}", self.full_message())]
    MissingComponent {
        /// Where in the file (the start of the line-element table).
        at: Box<Location>,
        /// The missing component, e.g. `g_tt`.
        component: String,
        /// The declared symmetry, e.g. `spherical`.
        symmetry: String,
        /// The components that symmetry needs.
        needed: String,
    },
    /// A line-element component that does not belong to the declared symmetry.
    #[error("{}", self.full_message())]
    ForeignComponent {
        /// Where in the file.
        at: Box<Location>,
        /// The component that does not belong.
        component: String,
        /// The declared symmetry.
        symmetry: String,
        /// The components that symmetry is given by.
        needed: String,
    },
    /// A name defined twice, or a name that is reserved.
    #[error("{}", self.full_message())]
    BadName {
        /// Where in the file.
        at: Box<Location>,
        /// What is wrong with the name.
        problem: String,
    },
    /// A value of the file that is allowed by TOML but not by the schema.
    #[error("{}", self.full_message())]
    Invalid {
        /// Where in the file.
        at: Box<Location>,
        /// What is wrong with the value.
        problem: String,
    },
    /// Separation data that do not reproduce the null Hamiltonian of the line element, or a
    /// line element that is not finite where they are checked.
    #[error("{}", self.full_message())]
    Separation {
        /// Where in the file.
        at: Box<Location>,
        /// What the check found, with the parameter values it used.
        problem: String,
    },
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
            | MetricFileError::Invalid { at, .. }
            | MetricFileError::Separation { at, .. } => Some(at.as_ref()),
        }
    }

    /// What is wrong and what was expected, in one sentence, without the place. User text in
    /// it is escaped and long runs are cut (see [`Location::source_line`]).
    pub fn message(&self) -> String {
        tidy(&self.raw_message())
    }

    // Long: one flat match arm per error variant, a table of messages read top to bottom; splitting it would only scatter the wording.
    fn raw_message(&self) -> String {
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
            MetricFileError::BadName { problem, .. }
            | MetricFileError::Invalid { problem, .. }
            | MetricFileError::Separation { problem, .. } => problem.clone(),
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
/// Case-only differences always qualify. Names over 64 characters get no suggestion.
pub(crate) fn closest<'a>(
    name: &str,
    candidates: impl IntoIterator<Item = &'a str>,
) -> Option<String> {
    let length = name.chars().count();
    if length > 64 {
        // Not a plausible typo of any name, and edit distances would cost O(length) each.
        return None;
    }
    let mut best: Option<(usize, &str)> = None;
    for c in candidates {
        let other = c.chars().count();
        // The distance is at least the difference in length: skip hopeless candidates early.
        if c == name || length.abs_diff(other) > (length.max(other) / 3).max(1) {
            continue;
        }
        let d = if c.eq_ignore_ascii_case(name) {
            0
        } else {
            edit_distance(name, c)
        };
        let limit = (length.max(other) / 3).max(1);
        if d <= limit && best.is_none_or(|(bd, _)| d < bd) {
            best = Some((d, c));
        }
    }
    best.map(|(_, c)| c.to_string())
}
