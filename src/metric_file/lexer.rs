//! Tokens of the expression language, with their byte positions in the expression text.

use std::ops::Range;

/// A token kind.
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum Tok {
    Number(f64),
    Name(String),
    Plus,
    Minus,
    Star,
    Slash,
    Caret,
    LParen,
    RParen,
    Comma,
    /// The end of the expression.
    End,
}

impl Tok {
    /// How the token is named in an error message.
    pub(crate) fn describe(&self) -> String {
        match self {
            Tok::Number(x) => format!("number {x}"),
            Tok::Name(n) => format!("name '{n}'"),
            Tok::Plus => "'+'".into(),
            Tok::Minus => "'-'".into(),
            Tok::Star => "'*'".into(),
            Tok::Slash => "'/'".into(),
            Tok::Caret => "'^'".into(),
            Tok::LParen => "'('".into(),
            Tok::RParen => "')'".into(),
            Tok::Comma => "','".into(),
            Tok::End => "the end of the expression".into(),
        }
    }
}

/// A token and the bytes it covers.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Token {
    pub tok: Tok,
    pub span: Range<usize>,
}

/// A lexical error: the bytes of the bad text and what was expected.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct LexError {
    pub span: Range<usize>,
    pub found: String,
    pub expected: String,
}

/// Split an expression into tokens. Numbers are `12`, `1.5`, `.5`, `1e-3`, `2.5E+4`; names
/// are ASCII letters, digits and `_`, not starting with a digit. The last token is `End`.
pub(crate) fn tokenize(text: &str) -> Result<Vec<Token>, LexError> {
    let bytes = text.as_bytes();
    let mut tokens = Vec::new();
    let mut i = 0;
    while i < bytes.len() {
        let c = bytes[i];
        if c.is_ascii_whitespace() {
            i += 1;
            continue;
        }
        let start = i;
        let single = match c {
            b'+' => Some(Tok::Plus),
            b'-' => Some(Tok::Minus),
            b'*' => Some(Tok::Star),
            b'/' => Some(Tok::Slash),
            b'^' => Some(Tok::Caret),
            b'(' => Some(Tok::LParen),
            b')' => Some(Tok::RParen),
            b',' => Some(Tok::Comma),
            _ => None,
        };
        if let Some(tok) = single {
            i += 1;
            tokens.push(Token {
                tok,
                span: start..i,
            });
            continue;
        }
        if c.is_ascii_digit() || (c == b'.' && bytes.get(i + 1).is_some_and(u8::is_ascii_digit)) {
            i = scan_number(bytes, i).map_err(|end| LexError {
                span: start..end,
                found: format!("'{}'", &text[start..end]),
                expected: "digits after the exponent marker, as in 1e-3".into(),
            })?;
            let value: f64 = text[start..i].parse().map_err(|_| LexError {
                span: start..i,
                found: format!("'{}'", &text[start..i]),
                expected: "a number".into(),
            })?;
            tokens.push(Token {
                tok: Tok::Number(value),
                span: start..i,
            });
            continue;
        }
        if c.is_ascii_alphabetic() || c == b'_' {
            while i < bytes.len() && (bytes[i].is_ascii_alphanumeric() || bytes[i] == b'_') {
                i += 1;
            }
            tokens.push(Token {
                tok: Tok::Name(text[start..i].to_string()),
                span: start..i,
            });
            continue;
        }
        let ch = text[start..].chars().next().unwrap_or('?');
        return Err(LexError {
            span: start..start + ch.len_utf8(),
            found: format!("character '{ch}'"),
            expected: "a number, a name, an operator (+ - * / ^), a parenthesis or a comma".into(),
        });
    }
    tokens.push(Token {
        tok: Tok::End,
        span: bytes.len()..bytes.len(),
    });
    Ok(tokens)
}

/// The end of the number starting at `i`, or `Err(end)` for an exponent without digits.
fn scan_number(bytes: &[u8], mut i: usize) -> Result<usize, usize> {
    while i < bytes.len() && bytes[i].is_ascii_digit() {
        i += 1;
    }
    if i < bytes.len() && bytes[i] == b'.' {
        i += 1;
        while i < bytes.len() && bytes[i].is_ascii_digit() {
            i += 1;
        }
    }
    if i < bytes.len() && (bytes[i] == b'e' || bytes[i] == b'E') {
        let mut j = i + 1;
        if j < bytes.len() && (bytes[j] == b'+' || bytes[j] == b'-') {
            j += 1;
        }
        let digits_start = j;
        while j < bytes.len() && bytes[j].is_ascii_digit() {
            j += 1;
        }
        if j == digits_start {
            return Err(j);
        }
        i = j;
    }
    Ok(i)
}
