//! Tables of results for the terminal, LaTeX (booktabs) and CSV, and numbers printed to the
//! precision their accuracy supports.

/// One column: its heading on the terminal and in CSV, and in LaTeX.
#[derive(Debug, Clone)]
pub struct Column {
    /// Plain heading (terminal, CSV), e.g. `mean radius (M)`.
    pub head: String,
    /// LaTeX heading, e.g. `$\bar r/M$`.
    pub latex: String,
}

impl Column {
    pub fn new(head: impl Into<String>, latex: impl Into<String>) -> Column {
        Column {
            head: head.into(),
            latex: latex.into(),
        }
    }
}

/// A table of text cells, one row per result.
#[derive(Debug, Clone, Default)]
pub struct Table {
    pub columns: Vec<Column>,
    pub rows: Vec<Vec<String>>,
}

impl Table {
    /// Aligned columns for the terminal (numbers right-aligned, text left-aligned).
    pub fn terminal(&self) -> String {
        let widths: Vec<usize> = (0..self.columns.len())
            .map(|c| {
                self.rows
                    .iter()
                    .map(|r| r[c].chars().count())
                    .chain(std::iter::once(self.columns[c].head.chars().count()))
                    .max()
                    .unwrap_or(0)
            })
            .collect();
        let numeric = |c: usize| {
            self.rows
                .iter()
                .all(|r| r[c].parse::<f64>().is_ok() || r[c] == "-")
        };
        let line = |cells: Vec<&str>, head: bool| -> String {
            cells
                .iter()
                .enumerate()
                .map(|(c, s)| {
                    let pad = widths[c] - s.chars().count();
                    if numeric(c) && !head {
                        format!("{}{s}", " ".repeat(pad))
                    } else {
                        format!("{s}{}", " ".repeat(pad))
                    }
                })
                .collect::<Vec<_>>()
                .join("  ")
                .trim_end()
                .to_string()
        };
        let mut out = line(self.columns.iter().map(|c| c.head.as_str()).collect(), true);
        out.push('\n');
        for r in &self.rows {
            out.push_str(&line(r.iter().map(String::as_str).collect(), false));
            out.push('\n');
        }
        out
    }

    /// A booktabs table (`\toprule`, `\midrule`, `\bottomrule`; needs `\usepackage{booktabs}`)
    /// with `caption` as a comment line above it.
    pub fn latex(&self, caption: &str) -> String {
        let spec: String = (0..self.columns.len())
            .map(|c| {
                if self.rows.iter().all(|r| r[c].parse::<f64>().is_ok()) {
                    'r'
                } else {
                    'l'
                }
            })
            .collect();
        let mut out = format!("% {caption}\n\\begin{{tabular}}{{{spec}}}\n\\toprule\n");
        let heads: Vec<&str> = self.columns.iter().map(|c| c.latex.as_str()).collect();
        out.push_str(&format!("{} \\\\\n\\midrule\n", heads.join(" & ")));
        for r in &self.rows {
            let cells: Vec<String> = r.iter().map(|s| latex_cell(s)).collect();
            out.push_str(&format!("{} \\\\\n", cells.join(" & ")));
        }
        out.push_str("\\bottomrule\n\\end{tabular}\n");
        out
    }
}

/// A cell in LaTeX: numbers in math mode with a true minus sign, text escaped.
fn latex_cell(s: &str) -> String {
    if s.parse::<f64>().is_ok() {
        return format!("${s}$");
    }
    let mut out = String::new();
    for ch in s.chars() {
        match ch {
            '&' | '%' | '$' | '#' | '_' | '{' | '}' => {
                out.push('\\');
                out.push(ch);
            }
            '~' => out.push_str("\\textasciitilde{}"),
            '^' => out.push_str("\\textasciicircum{}"),
            '\\' => out.push_str("\\textbackslash{}"),
            _ => out.push(ch),
        }
    }
    out
}

/// The decimals that resolve `accuracy` (at least 0): 1e-8 → 8, 2.5e-9 → 9.
///
/// ```ignore
/// assert_eq!(decimals_for(1e-8), 8);
/// ```
pub fn decimals_for(accuracy: f64) -> usize {
    if !(accuracy.is_finite() && accuracy > 0.0) {
        return 6;
    }
    (-accuracy.log10()).ceil().clamp(0.0, 17.0) as usize
}

/// `x` with `decimals` decimals, never a negative zero (`-0.000` prints as `0.000`).
pub fn fixed(x: f64, decimals: usize) -> String {
    if !x.is_finite() {
        return umbral::numfmt::num(x);
    }
    let s = format!("{x:.decimals$}");
    match s.strip_prefix('-') {
        Some(rest) if rest.chars().all(|c| c == '0' || c == '.') => rest.to_string(),
        _ => s,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_print_to_their_accuracy_without_negative_zero() {
        assert_eq!(decimals_for(1e-8), 8);
        assert_eq!(decimals_for(2.5e-9), 9);
        assert_eq!(fixed(-0.0, 5), "0.00000");
        assert_eq!(fixed(-1e-9, 5), "0.00000");
        assert_eq!(fixed(-1.25, 1), "-1.2");
    }

    #[test]
    fn tables_align_escape_and_quote() {
        let t = Table {
            columns: vec![
                Column::new("a", "$a$"),
                Column::new("solver, name", "solver"),
            ],
            rows: vec![
                vec!["0.5".into(), "separable".into()],
                vec!["-0.25".into(), "a_b & c".into()],
            ],
        };
        assert_eq!(
            t.terminal(),
            "a      solver, name\n  0.5  separable\n-0.25  a_b & c\n"
        );
        let latex = t.latex("test");
        assert!(latex.contains("\\begin{tabular}{rl}\n\\toprule\n$a$ & solver \\\\\n\\midrule"));
        assert!(latex.contains("$-0.25$ & a\\_b \\& c \\\\"));
    }
}
