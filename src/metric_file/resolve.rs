//! Name resolution: parsed expressions become trees over parameter, helper and coordinate
//! indices, with every name checked against what the expression may use.

use super::error::closest;
use super::parser::{BinOp, Expr, ExprKind, Func, FUNCTION_NAMES};
use std::collections::HashMap;
use std::ops::Range;

/// A coordinate or separation variable.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Var {
    R,
    Theta,
    Lambda,
    Eta,
}

impl Var {
    pub(crate) const ALL: [Var; 4] = [Var::R, Var::Theta, Var::Lambda, Var::Eta];

    pub(crate) fn name(self) -> &'static str {
        match self {
            Var::R => "r",
            Var::Theta => "theta",
            Var::Lambda => "lambda",
            Var::Eta => "eta",
        }
    }

    pub(crate) fn bit(self) -> u8 {
        1 << (self as u8)
    }

    fn from_name(name: &str) -> Option<Var> {
        Var::ALL.into_iter().find(|v| v.name() == name)
    }
}

/// Names no parameter or helper may take.
pub(crate) fn is_reserved(name: &str) -> bool {
    name == "pi" || Var::from_name(name).is_some() || FUNCTION_NAMES.contains(&name)
}

/// A resolved expression.
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum Node {
    Const(f64),
    Var(Var),
    Param(usize),
    Helper(usize),
    Neg(Box<Node>),
    Bin(BinOp, Box<Node>, Box<Node>),
    Call(Func, Vec<Node>),
}

/// Where an expression stands: which variables it may use, and how to say so.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Context {
    /// Bit set of allowed [`Var`]s.
    pub allowed: u8,
    /// E.g. "the line element of a spherical metric".
    pub label: &'static str,
    /// E.g. "r and the parameters".
    pub allowed_text: &'static str,
}

impl Context {
    pub(crate) const HELPER: Context = Context {
        allowed: 0b1111,
        label: "a helper",
        allowed_text: "r, theta, lambda, eta and the parameters",
    };
    pub(crate) const SPHERICAL: Context = Context {
        allowed: 0b0001,
        label: "the line element of a spherical metric",
        allowed_text: "r and the parameters",
    };
    pub(crate) const AXISYMMETRIC: Context = Context {
        allowed: 0b0011,
        label: "the line element",
        allowed_text: "r, theta and the parameters",
    };
    pub(crate) const HORIZON: Context = Context {
        allowed: 0,
        label: "the horizon",
        allowed_text: "the parameters (a number, not a function of the coordinates)",
    };
    pub(crate) const RADIAL: Context = Context {
        allowed: 0b1101,
        label: "the radial potential",
        allowed_text: "r, lambda, eta and the parameters",
    };
    pub(crate) const POLAR: Context = Context {
        allowed: 0b1110,
        label: "the polar potential",
        allowed_text: "theta, lambda, eta and the parameters",
    };
}

/// A resolution error, at a byte range of the expression text.
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum ResolveError {
    UnknownName {
        span: Range<usize>,
        name: String,
        suggestion: Option<String>,
    },
    UsedBeforeDefined {
        span: Range<usize>,
        name: String,
        helper: usize,
    },
    Cycle {
        span: Range<usize>,
        cycle: Vec<String>,
    },
    NotAvailable {
        span: Range<usize>,
        name: String,
        variable: Var,
    },
}

/// The names in scope and what is known about the helpers.
pub(crate) struct Scope {
    pub params: Vec<String>,
    /// Index of each parameter by name.
    pub param_index: HashMap<String, usize>,
    pub helpers: Vec<String>,
    /// Index of each helper by name (lookups stay O(1) for files with many helpers).
    pub helper_index: HashMap<String, usize>,
    /// Names each helper's expression refers to (for cycle detection).
    pub helper_refs: Vec<Vec<String>>,
    /// Variables each resolved helper depends on, directly or through other helpers.
    pub helper_vars: Vec<u8>,
}

/// Every name an expression mentions (not function names), in order of appearance.
pub(crate) fn names_in(expr: &Expr, out: &mut Vec<String>) {
    match &expr.kind {
        ExprKind::Number(_) => {}
        ExprKind::Name(n) => out.push(n.clone()),
        ExprKind::Neg(x) => names_in(x, out),
        ExprKind::Binary(_, a, b) => {
            names_in(a, out);
            names_in(b, out);
        }
        ExprKind::Call(_, _, args) => args.iter().for_each(|a| names_in(a, out)),
    }
}

impl Scope {
    /// Resolve `expr` as it stands in `context`; `current` is the index of the helper being
    /// defined (helpers may use only earlier ones). Returns the tree and its variable set.
    pub(crate) fn resolve(
        &self,
        expr: &Expr,
        context: Context,
        current: Option<usize>,
    ) -> Result<(Node, u8), ResolveError> {
        let mut vars = 0u8;
        let node = self.walk(expr, context, current, &mut vars)?;
        Ok((node, vars))
    }

    fn walk(
        &self,
        expr: &Expr,
        context: Context,
        current: Option<usize>,
        vars: &mut u8,
    ) -> Result<Node, ResolveError> {
        Ok(match &expr.kind {
            ExprKind::Number(x) => Node::Const(*x),
            ExprKind::Name(name) => self.name(name, &expr.span, context, current, vars)?,
            ExprKind::Neg(x) => Node::Neg(Box::new(self.walk(x, context, current, vars)?)),
            ExprKind::Binary(op, a, b) => Node::Bin(
                *op,
                Box::new(self.walk(a, context, current, vars)?),
                Box::new(self.walk(b, context, current, vars)?),
            ),
            ExprKind::Call(f, _, args) => Node::Call(
                *f,
                args.iter()
                    .map(|a| self.walk(a, context, current, vars))
                    .collect::<Result<_, _>>()?,
            ),
        })
    }

    fn name(
        &self,
        name: &str,
        span: &Range<usize>,
        context: Context,
        current: Option<usize>,
        vars: &mut u8,
    ) -> Result<Node, ResolveError> {
        if name == "pi" {
            return Ok(Node::Const(std::f64::consts::PI));
        }
        if let Some(v) = Var::from_name(name) {
            if context.allowed & v.bit() == 0 {
                return Err(ResolveError::NotAvailable {
                    span: span.clone(),
                    name: name.to_string(),
                    variable: v,
                });
            }
            *vars |= v.bit();
            return Ok(Node::Var(v));
        }
        if let Some(&i) = self.param_index.get(name) {
            return Ok(Node::Param(i));
        }
        let visible = current.unwrap_or(self.helpers.len());
        if let Some(&i) = self.helper_index.get(name) {
            if i >= visible {
                let me = current.unwrap_or(0);
                if let Some(cycle) = self.cycle_through(i, me) {
                    return Err(ResolveError::Cycle {
                        span: span.clone(),
                        cycle,
                    });
                }
                return Err(ResolveError::UsedBeforeDefined {
                    span: span.clone(),
                    name: name.to_string(),
                    helper: i,
                });
            }
            let needed = self.helper_vars[i];
            let missing = needed & !context.allowed;
            if let Some(v) = Var::ALL.into_iter().find(|v| missing & v.bit() != 0) {
                return Err(ResolveError::NotAvailable {
                    span: span.clone(),
                    name: name.to_string(),
                    variable: v,
                });
            }
            *vars |= needed;
            return Ok(Node::Helper(i));
        }
        let mut known: Vec<&str> = vec!["pi"];
        known.extend(
            Var::ALL
                .into_iter()
                .filter(|v| context.allowed & v.bit() != 0)
                .map(|v| v.name()),
        );
        known.extend(self.params.iter().map(String::as_str));
        known.extend(self.helpers[..visible].iter().map(String::as_str));
        Err(ResolveError::UnknownName {
            span: span.clone(),
            name: name.to_string(),
            suggestion: closest(name, known),
        })
    }

    /// The chain `me -> from -> ... -> me` if helper `from` reaches helper `me` through the
    /// names the helpers mention (breadth-first, shortest chain).
    fn cycle_through(&self, from: usize, me: usize) -> Option<Vec<String>> {
        let index = |n: &str| self.helper_index.get(n).copied();
        let mut previous: Vec<Option<usize>> = vec![None; self.helpers.len()];
        let mut seen = vec![false; self.helpers.len()];
        let mut queue = std::collections::VecDeque::from([from]);
        seen[from] = true;
        while let Some(h) = queue.pop_front() {
            if h == me {
                let mut chain = vec![self.helpers[me].clone()];
                let mut at = Some(h);
                let mut path = Vec::new();
                while let Some(x) = at {
                    path.push(self.helpers[x].clone());
                    at = previous[x];
                }
                path.reverse();
                chain.extend(path);
                if from == me {
                    chain.truncate(2);
                }
                return Some(chain);
            }
            for n in &self.helper_refs[h] {
                if let Some(j) = index(n) {
                    if !seen[j] {
                        seen[j] = true;
                        previous[j] = Some(h);
                        queue.push_back(j);
                    }
                }
            }
        }
        None
    }
}
