//! Positions inside TOML string values: which byte of the file each byte of a decoded string
//! came from, so that an error inside an expression points at the right column.
//!
//! Supported: basic strings `"…"` with every TOML escape (`\b \t \n \f \r \e \" \\ \xHH
//! \uXXXX \UXXXXXXXX`), literal strings `'…'`, multi-line basic strings `"""…"""` (including
//! the trimmed first newline and line-ending backslashes) and multi-line literal strings
//! `'''…'''`. A decoded character produced by an escape maps to the escape's first byte.

/// For each byte of the decoded value of the raw TOML string `raw` (quotes included), its
/// offset in `raw`, plus one final entry for the end. `None` when `raw` is not a string this
/// module understands or the decoding does not reproduce `expected` (then callers point at
/// the start of the value).
pub(crate) fn offset_map(raw: &str, expected: &str) -> Option<Vec<usize>> {
    let (delimiter, escapes) = delimiter_of(raw)?;
    if raw.len() < 2 * delimiter {
        return None;
    }
    let inner_start = delimiter;
    let inner = raw.get(inner_start..raw.len() - delimiter)?;
    let mut decoded = String::new();
    let mut map = Vec::new();
    let push = |decoded: &mut String, map: &mut Vec<usize>, c: char, at: usize| {
        for _ in 0..c.len_utf8() {
            map.push(at);
        }
        decoded.push(c);
    };
    let chars: Vec<(usize, char)> = inner.char_indices().collect();
    let mut k = 0;
    // A newline right after the opening delimiter of a multi-line string is dropped.
    if delimiter == 3 {
        if inner.starts_with("\r\n") {
            k = 2;
        } else if inner.starts_with('\n') {
            k = 1;
        }
    }
    while k < chars.len() {
        let (at, c) = chars[k];
        let at = at + inner_start;
        if !(escapes && c == '\\') {
            push(&mut decoded, &mut map, c, at);
            k += 1;
            continue;
        }
        let (d, after) = escape(&chars, k, delimiter == 3)?;
        if let Some(d) = d {
            push(&mut decoded, &mut map, d, at);
        }
        k = after;
    }
    map.push(raw.len() - delimiter);
    (decoded == expected).then_some(map)
}

/// The length of the opening delimiter of a TOML string and whether it takes escapes.
fn delimiter_of(raw: &str) -> Option<(usize, bool)> {
    if raw.starts_with("\"\"\"") {
        Some((3, true))
    } else if raw.starts_with("'''") {
        Some((3, false))
    } else if raw.starts_with('"') {
        Some((1, true))
    } else if raw.starts_with('\'') {
        Some((1, false))
    } else {
        None
    }
}

/// The escape whose backslash is `chars[k]`: the character it stands for (`None` for a
/// line-ending backslash of a multi-line string, which stands for nothing) and the index
/// after it; `None` for an invalid escape.
fn escape(chars: &[(usize, char)], k: usize, multi_line: bool) -> Option<(Option<char>, usize)> {
    let next = chars.get(k + 1).map(|x| x.1)?;
    let simple = match next {
        'b' => Some('\u{8}'),
        't' => Some('\t'),
        'n' => Some('\n'),
        'f' => Some('\u{c}'),
        'r' => Some('\r'),
        'e' => Some('\u{1b}'),
        '"' => Some('"'),
        '\\' => Some('\\'),
        _ => None,
    };
    if let Some(d) = simple {
        return Some((Some(d), k + 2));
    }
    let digits = match next {
        'x' => 2,
        'u' => 4,
        'U' => 8,
        _ => 0,
    };
    if digits > 0 {
        let hex: String = chars
            .get(k + 2..k + 2 + digits)?
            .iter()
            .map(|x| x.1)
            .collect();
        let d = char::from_u32(u32::from_str_radix(&hex, 16).ok()?)?;
        return Some((Some(d), k + 2 + digits));
    }
    // A line-ending backslash (multi-line only): skip whitespace and newlines.
    if multi_line && next.is_whitespace() {
        let mut j = k + 1;
        while j < chars.len() && chars[j].1.is_whitespace() {
            j += 1;
        }
        return Some((None, j));
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn basic_literal_escaped_and_multiline_strings_map_back() {
        let m = offset_map("\"r + a\"", "r + a").unwrap();
        assert_eq!(m, vec![1, 2, 3, 4, 5, 6]);
        let m = offset_map("'r^2'", "r^2").unwrap();
        assert_eq!(m[0], 1);
        // `\t` is one decoded byte from two raw bytes: the `r` after it is at raw offset 3.
        let m = offset_map("\"\\tr\"", "\tr").unwrap();
        assert_eq!(m, vec![1, 3, 4]);
        let m = offset_map("\"\"\"\nr +\n 1\"\"\"", "r +\n 1").unwrap();
        assert_eq!(m[0], 4);
        assert_eq!(m[5], 9);
        let m = offset_map("\"\"\"r + \\\n   1\"\"\"", "r + 1").unwrap();
        assert_eq!(m[4], 12);
        assert!(offset_map("\"abc\"", "abd").is_none());
        assert!(offset_map("12", "12").is_none());
    }
}
