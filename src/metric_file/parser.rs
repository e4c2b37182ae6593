//! A hand-written Pratt (top-down operator precedence) parser for the expression language.
//!
//! Grammar, loosest binding first: `+ -` (left), `* /` (left), unary `-` and `+`, `^` (right;
//! it binds tighter than unary minus, so `-r^2 = -(r^2)` and `2^-1` is allowed). Atoms are
//! numbers, names, calls `f(x)` / `pow(x, y)` and parenthesised expressions. Pratt, V. R.
//! 1973, "Top down operator precedence", Proc. 1st ACM POPL, 41.

use super::lexer::{tokenize, LexError, Tok, Token};
use std::ops::Range;

/// A binary operator.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub(crate) enum BinOp {
    Add,
    Sub,
    Mul,
    Div,
    Pow,
}

/// A function of the expression language.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub(crate) enum Func {
    Sqrt,
    Exp,
    Ln,
    Sin,
    Cos,
    Tan,
    Sinh,
    Cosh,
    Tanh,
    Abs,
    Pow,
}

/// Every function name, in the order error messages list them.
pub(crate) const FUNCTION_NAMES: [&str; 11] = [
    "sqrt", "exp", "ln", "sin", "cos", "tan", "sinh", "cosh", "tanh", "abs", "pow",
];

impl Func {
    /// The function of this name.
    pub(crate) fn from_name(name: &str) -> Option<Func> {
        Some(match name {
            "sqrt" => Func::Sqrt,
            "exp" => Func::Exp,
            "ln" => Func::Ln,
            "sin" => Func::Sin,
            "cos" => Func::Cos,
            "tan" => Func::Tan,
            "sinh" => Func::Sinh,
            "cosh" => Func::Cosh,
            "tanh" => Func::Tanh,
            "abs" => Func::Abs,
            "pow" => Func::Pow,
            _ => return None,
        })
    }

    /// The number of arguments.
    pub(crate) fn arity(self) -> usize {
        if self == Func::Pow {
            2
        } else {
            1
        }
    }
}

/// An expression tree; spans are byte ranges in the expression text.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Expr {
    pub kind: ExprKind,
    pub span: Range<usize>,
    /// Levels of the tree below and including this node (a leaf has depth 1); at most
    /// [`MAX_DEPTH`], so that every recursive walk over a tree is bounded.
    pub depth: usize,
}

/// The kinds of expression nodes.
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum ExprKind {
    Number(f64),
    Name(String),
    Neg(Box<Expr>),
    Binary(BinOp, Box<Expr>, Box<Expr>),
    /// A call; the span of the function name is kept for error messages.
    Call(Func, Range<usize>, Vec<Expr>),
}

/// A parse error at a byte range of the expression text.
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum ParseError {
    Syntax {
        span: Range<usize>,
        found: String,
        expected: String,
    },
    UnknownFunction {
        span: Range<usize>,
        name: String,
    },
    ArgumentCount {
        span: Range<usize>,
        function: String,
        expected: usize,
        found: usize,
    },
}

impl From<LexError> for ParseError {
    fn from(e: LexError) -> Self {
        ParseError::Syntax {
            span: e.span,
            found: e.found,
            expected: e.expected,
        }
    }
}

/// Binding power of unary minus/plus: looser than `^`, tighter than `*` and `/`.
const UNARY: u8 = 30;
/// Deepest nesting accepted, so that no input can exhaust the stack: both the parser's own
/// recursion (parentheses, unary signs, `^` chains, calls) and the depth of the tree it builds
/// (where each operator of a left-associative chain such as `a + b + c` adds a level). Name
/// resolution, compilation and dropping a tree all recurse over it, to this depth at most.
pub(crate) const MAX_DEPTH: usize = 200;
/// Longest expression accepted, in bytes (the shipped files' longest is under 100).
pub(crate) const MAX_LENGTH: usize = 10_000;

/// What a too deeply nested expression is told to do.
const TOO_DEEP: &str = "an expression nested at most 200 levels deep (parentheses, calls and \
                        operators, each operator of a chain such as a + b + c counting as one \
                        level): split long chains into helpers";

/// Left and right binding powers of an infix operator.
fn infix_power(tok: &Tok) -> Option<(BinOp, u8, u8)> {
    Some(match tok {
        Tok::Plus => (BinOp::Add, 10, 11),
        Tok::Minus => (BinOp::Sub, 10, 11),
        Tok::Star => (BinOp::Mul, 20, 21),
        Tok::Slash => (BinOp::Div, 20, 21),
        // Right-associative: the right operand is parsed at a lower power than `^` itself.
        Tok::Caret => (BinOp::Pow, 40, 39),
        _ => return None,
    })
}

/// Parse a whole expression.
pub(crate) fn parse_expression(text: &str) -> Result<Expr, ParseError> {
    if text.len() > MAX_LENGTH {
        let mut at = MAX_LENGTH;
        while !text.is_char_boundary(at) {
            at -= 1;
        }
        return Err(ParseError::Syntax {
            span: at..at + 1,
            found: format!("an expression of {} bytes", text.len()),
            expected: format!("an expression of at most {MAX_LENGTH} bytes: split it into helpers"),
        });
    }
    let tokens = tokenize(text)?;
    let mut parser = Parser {
        tokens,
        pos: 0,
        depth: 0,
    };
    let expr = parser.expression(0)?;
    let next = parser.peek();
    if next.tok != Tok::End {
        let expected = if matches!(next.tok, Tok::Name(_) | Tok::Number(_) | Tok::LParen) {
            "an operator or the end of the expression (products need '*', as in 2*r)"
        } else {
            "an operator or the end of the expression"
        };
        return Err(ParseError::Syntax {
            span: next.span.clone(),
            found: next.tok.describe(),
            expected: expected.into(),
        });
    }
    Ok(expr)
}

struct Parser {
    tokens: Vec<Token>,
    pos: usize,
    depth: usize,
}

impl Parser {
    fn peek(&self) -> &Token {
        // `tokenize` always ends with `End`, and `pos` never passes it.
        &self.tokens[self.pos.min(self.tokens.len() - 1)]
    }

    fn advance(&mut self) -> Token {
        let t = self.peek().clone();
        if self.pos < self.tokens.len() - 1 {
            self.pos += 1;
        }
        t
    }

    fn syntax(&self, token: &Token, expected: &str) -> ParseError {
        ParseError::Syntax {
            span: token.span.clone(),
            found: token.tok.describe(),
            expected: expected.into(),
        }
    }

    fn expect(&mut self, want: Tok, expected: &str) -> Result<Token, ParseError> {
        let t = self.advance();
        if t.tok == want {
            Ok(t)
        } else {
            Err(self.syntax(&t, expected))
        }
    }

    /// Parse operators binding tighter than `min_power`.
    fn expression(&mut self, min_power: u8) -> Result<Expr, ParseError> {
        self.depth += 1;
        if self.depth > MAX_DEPTH {
            let t = self.peek().clone();
            return Err(self.syntax(&t, TOO_DEEP));
        }
        let mut lhs = self.prefix()?;
        while let Some((op, left, right)) = infix_power(&self.peek().tok) {
            if left < min_power {
                break;
            }
            let operator = self.advance();
            let rhs = self.expression(right)?;
            let span = lhs.span.start..rhs.span.end;
            let depth = lhs.depth.max(rhs.depth) + 1;
            if depth > MAX_DEPTH {
                return Err(self.syntax(&operator, TOO_DEEP));
            }
            lhs = Expr {
                kind: ExprKind::Binary(op, Box::new(lhs), Box::new(rhs)),
                span,
                depth,
            };
        }
        self.depth -= 1;
        Ok(lhs)
    }

    fn prefix(&mut self) -> Result<Expr, ParseError> {
        let t = self.advance();
        match t.tok {
            Tok::Number(x) => Ok(Expr {
                kind: ExprKind::Number(x),
                span: t.span,
                depth: 1,
            }),
            Tok::Minus | Tok::Plus => {
                let operand = self.expression(UNARY)?;
                let span = t.span.start..operand.span.end;
                if t.tok == Tok::Plus {
                    return Ok(Expr { span, ..operand });
                }
                let depth = operand.depth + 1;
                if depth > MAX_DEPTH {
                    return Err(self.syntax(&t, TOO_DEEP));
                }
                Ok(Expr {
                    kind: ExprKind::Neg(Box::new(operand)),
                    span,
                    depth,
                })
            }
            Tok::LParen => {
                let inner = self.expression(0)?;
                let close = self.expect(Tok::RParen, "')' to close the '('")?;
                Ok(Expr {
                    span: t.span.start..close.span.end,
                    ..inner
                })
            }
            Tok::Name(name) => {
                if self.peek().tok == Tok::LParen {
                    self.call(name, t.span)
                } else if Func::from_name(&name).is_some() {
                    let next = self.peek().clone();
                    Err(self.syntax(
                        &next,
                        &format!("'(' after the function name '{name}', as in {name}(r)"),
                    ))
                } else {
                    Ok(Expr {
                        kind: ExprKind::Name(name),
                        span: t.span,
                        depth: 1,
                    })
                }
            }
            _ => Err(self.syntax(
                &t,
                "a number, a name, a function call, '(' or a unary minus",
            )),
        }
    }

    fn call(&mut self, name: String, name_span: Range<usize>) -> Result<Expr, ParseError> {
        let func = Func::from_name(&name).ok_or_else(|| ParseError::UnknownFunction {
            span: name_span.clone(),
            name: name.clone(),
        })?;
        self.advance(); // '('
        let mut args = Vec::new();
        if self.peek().tok != Tok::RParen {
            loop {
                args.push(self.expression(0)?);
                let t = self.advance();
                match t.tok {
                    Tok::Comma => continue,
                    Tok::RParen => break,
                    _ => return Err(self.syntax(&t, "',' or ')' in the argument list")),
                }
            }
        } else {
            self.advance();
        }
        let end = self.tokens[self.pos.saturating_sub(1)].span.end;
        if args.len() != func.arity() {
            return Err(ParseError::ArgumentCount {
                span: name_span.start..end,
                function: name,
                expected: func.arity(),
                found: args.len(),
            });
        }
        let depth = args.iter().map(|a| a.depth).max().unwrap_or(0) + 1;
        if depth > MAX_DEPTH {
            return Err(ParseError::Syntax {
                span: name_span,
                found: format!("a call of '{name}'"),
                expected: TOO_DEEP.into(),
            });
        }
        Ok(Expr {
            kind: ExprKind::Call(func, name_span.clone(), args),
            span: name_span.start..end,
            depth,
        })
    }
}

/// Whether `name` is a valid name of the language: ASCII letters, digits, `_`, not starting
/// with a digit.
pub(crate) fn is_identifier(name: &str) -> bool {
    let mut chars = name.chars();
    chars
        .next()
        .is_some_and(|c| c.is_ascii_alphabetic() || c == '_')
        && chars.all(|c| c.is_ascii_alphanumeric() || c == '_')
}

#[cfg(test)]
mod tests {
    use super::*;

    fn show(e: &Expr) -> String {
        match &e.kind {
            ExprKind::Number(x) => format!("{x}"),
            ExprKind::Name(n) => n.clone(),
            ExprKind::Neg(x) => format!("(-{})", show(x)),
            ExprKind::Binary(op, a, b) => {
                let s = match op {
                    BinOp::Add => "+",
                    BinOp::Sub => "-",
                    BinOp::Mul => "*",
                    BinOp::Div => "/",
                    BinOp::Pow => "^",
                };
                format!("({} {s} {})", show(a), show(b))
            }
            ExprKind::Call(f, _, args) => format!(
                "{f:?}({})",
                args.iter().map(show).collect::<Vec<_>>().join(", ")
            ),
        }
    }

    #[test]
    fn precedence_and_associativity() {
        let cases = [
            ("-r^2", "(-(r ^ 2))"),
            ("2^3^2", "(2 ^ (3 ^ 2))"),
            ("a - b - c", "((a - b) - c)"),
            ("a / b / c", "((a / b) / c)"),
            ("-2*a", "((-2) * a)"),
            ("1 + 2*r^-1", "(1 + (2 * (r ^ (-1))))"),
            ("pow(r, 2) + cos(theta)^2", "(Pow(r, 2) + (Cos(theta) ^ 2))"),
            ("1e-3*r", "(0.001 * r)"),
            ("+r", "r"),
        ];
        for (text, want) in cases {
            assert_eq!(show(&parse_expression(text).unwrap()), want, "{text}");
        }
    }

    #[test]
    fn spans_cover_the_text() {
        let e = parse_expression("  (r + 1) * 2").unwrap();
        assert_eq!(e.span, 2..13);
    }
}
