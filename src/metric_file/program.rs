//! Compiled expressions: a flat register-machine program evaluated generically over the
//! dual-number scalar, so derivatives of file metrics are as exact as those of Rust metrics.
//!
//! Compilation (once per parameter point) substitutes the parameter values, folds every
//! constant subexpression in `f64`, merges repeated subexpressions (value numbering), turns
//! operations with one constant operand into scalar forms (`x * c` needs no dual constant),
//! compiles integer powers to `powi` (`x^2` to `x * x`), other constant powers to `powf` and
//! variable powers to `powd`, and finally reuses registers whose values are dead, so a whole
//! metric fits in a few dozen registers held in a fixed-size array on the stack.

use super::parser::{BinOp, Func};
use super::resolve::{Node, Var};
use crate::scalar::{sin_cos, DualScalar};
use std::collections::HashMap;

/// One operation; operands are register numbers, constants are `f64`.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Op {
    Const(f64),
    Add(u32, u32),
    Sub(u32, u32),
    Mul(u32, u32),
    Div(u32, u32),
    /// x + c
    AddC(u32, f64),
    /// c − x
    RSubC(f64, u32),
    /// x · c
    MulC(u32, f64),
    /// x / c
    DivC(u32, f64),
    /// c / x
    RDivC(f64, u32),
    Neg(u32),
    Square(u32),
    Powi(u32, i32),
    Powf(u32, f64),
    Powd(u32, u32),
    Unary(Func, u32),
}

impl Op {
    /// A hashable identity for value numbering (constants by their bits).
    fn key(&self) -> (u8, u32, u64) {
        let b = |x: f64| x.to_bits();
        match *self {
            Op::Const(c) => (0, 0, b(c)),
            Op::Add(x, y) => (1, x, y as u64),
            Op::Sub(x, y) => (2, x, y as u64),
            Op::Mul(x, y) => (3, x, y as u64),
            Op::Div(x, y) => (4, x, y as u64),
            Op::AddC(x, c) => (5, x, b(c)),
            Op::RSubC(c, x) => (6, x, b(c)),
            Op::MulC(x, c) => (7, x, b(c)),
            Op::DivC(x, c) => (8, x, b(c)),
            Op::RDivC(c, x) => (9, x, b(c)),
            Op::Neg(x) => (10, x, 0),
            Op::Square(x) => (11, x, 0),
            Op::Powi(x, n) => (12, x, n as u32 as u64),
            Op::Powf(x, c) => (13, x, b(c)),
            Op::Powd(x, y) => (14, x, y as u64),
            Op::Unary(f, x) => (15, x, f as u64),
        }
    }

    fn operands(&self) -> [Option<u32>; 2] {
        match *self {
            Op::Const(_) => [None, None],
            Op::Add(x, y) | Op::Sub(x, y) | Op::Mul(x, y) | Op::Div(x, y) | Op::Powd(x, y) => {
                [Some(x), Some(y)]
            }
            Op::AddC(x, _)
            | Op::RSubC(_, x)
            | Op::MulC(x, _)
            | Op::DivC(x, _)
            | Op::RDivC(_, x)
            | Op::Neg(x)
            | Op::Square(x)
            | Op::Powi(x, _)
            | Op::Powf(x, _)
            | Op::Unary(_, x) => [Some(x), None],
        }
    }

    fn rename(&self, f: impl Fn(u32) -> u32) -> Op {
        match *self {
            Op::Const(c) => Op::Const(c),
            Op::Add(x, y) => Op::Add(f(x), f(y)),
            Op::Sub(x, y) => Op::Sub(f(x), f(y)),
            Op::Mul(x, y) => Op::Mul(f(x), f(y)),
            Op::Div(x, y) => Op::Div(f(x), f(y)),
            Op::AddC(x, c) => Op::AddC(f(x), c),
            Op::RSubC(c, x) => Op::RSubC(c, f(x)),
            Op::MulC(x, c) => Op::MulC(f(x), c),
            Op::DivC(x, c) => Op::DivC(f(x), c),
            Op::RDivC(c, x) => Op::RDivC(c, f(x)),
            Op::Neg(x) => Op::Neg(f(x)),
            Op::Square(x) => Op::Square(f(x)),
            Op::Powi(x, n) => Op::Powi(f(x), n),
            Op::Powf(x, c) => Op::Powf(f(x), c),
            Op::Powd(x, y) => Op::Powd(f(x), f(y)),
            Op::Unary(g, x) => Op::Unary(g, f(x)),
        }
    }
}

/// One instruction: `regs[dst] = op(regs)`.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Instr {
    dst: u32,
    op: Op,
}

/// An output: a register or a constant.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Operand {
    Reg(u32),
    Const(f64),
}

/// A compiled program with `inputs` input registers (0..inputs) and a list of outputs.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Program {
    inputs: usize,
    registers: usize,
    code: Vec<Instr>,
    outputs: Vec<Operand>,
}

/// A value during compilation: a folded constant or an SSA value number.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Value {
    Const(f64),
    Ssa(u32),
}

/// The exponent as an `i32` if it is an integer that fits.
fn integer_exponent(c: f64) -> Option<i32> {
    (c.fract() == 0.0 && c.abs() <= i32::MAX as f64).then_some(c as i32)
}

/// `f64` semantics of every operation, used for constant folding; the evaluator gives the
/// same real part on every scalar type.
fn fold_unary(f: Func, x: f64) -> f64 {
    match f {
        Func::Sqrt => x.sqrt(),
        Func::Exp => x.exp(),
        Func::Ln => x.ln(),
        Func::Sin => sin_cos(x).0,
        Func::Cos => sin_cos(x).1,
        Func::Tan => x.tan(),
        Func::Sinh => x.sinh(),
        Func::Cosh => x.cosh(),
        Func::Tanh => x.tanh(),
        Func::Abs => x.abs(),
        // Two-argument; never folded as unary.
        Func::Pow => f64::NAN,
    }
}

fn fold_pow(x: f64, y: f64) -> f64 {
    match integer_exponent(y) {
        Some(2) => x * x,
        Some(n) => x.powi(n),
        None => x.powf(y),
    }
}

/// Compiles resolved trees for one parameter point.
struct Emitter<'a> {
    params: &'a [f64],
    helpers: &'a [Node],
    helper_values: Vec<Option<Value>>,
    /// SSA number of each available variable.
    inputs: [Option<u32>; 4],
    n_inputs: u32,
    ops: Vec<Op>,
    numbering: HashMap<(u8, u32, u64), u32>,
}

impl Emitter<'_> {
    fn push(&mut self, op: Op) -> Value {
        let key = op.key();
        if let Some(&v) = self.numbering.get(&key) {
            return Value::Ssa(v);
        }
        let id = self.n_inputs + self.ops.len() as u32;
        self.ops.push(op);
        self.numbering.insert(key, id);
        Value::Ssa(id)
    }

    fn materialize(&mut self, v: Value) -> u32 {
        match v {
            Value::Ssa(i) => i,
            Value::Const(c) => match self.push(Op::Const(c)) {
                Value::Ssa(i) => i,
                Value::Const(_) => unreachable!("push always returns an SSA value"),
            },
        }
    }

    fn emit(&mut self, node: &Node) -> Value {
        match node {
            Node::Const(c) => Value::Const(*c),
            Node::Param(i) => Value::Const(self.params.get(*i).copied().unwrap_or(f64::NAN)),
            Node::Var(v) => match self.inputs[*v as usize] {
                Some(id) => Value::Ssa(id),
                // Resolution rules this out; a NaN keeps evaluation total.
                None => Value::Const(f64::NAN),
            },
            Node::Helper(i) => {
                if let Some(v) = self.helper_values.get(*i).copied().flatten() {
                    return v;
                }
                let Some(tree) = self.helpers.get(*i) else {
                    return Value::Const(f64::NAN);
                };
                let v = self.emit(tree);
                self.helper_values[*i] = Some(v);
                v
            }
            Node::Neg(x) => match self.emit(x) {
                Value::Const(c) => Value::Const(-c),
                Value::Ssa(s) => self.push(Op::Neg(s)),
            },
            Node::Bin(op, a, b) => {
                let (a, b) = (self.emit(a), self.emit(b));
                self.binary(*op, a, b)
            }
            Node::Call(Func::Pow, args) if args.len() == 2 => {
                let (a, b) = (self.emit(&args[0]), self.emit(&args[1]));
                self.binary(BinOp::Pow, a, b)
            }
            Node::Call(f, args) if args.len() == 1 => match self.emit(&args[0]) {
                Value::Const(c) => Value::Const(fold_unary(*f, c)),
                Value::Ssa(s) => self.push(Op::Unary(*f, s)),
            },
            // The parser checks arities; a NaN keeps evaluation total.
            Node::Call(..) => Value::Const(f64::NAN),
        }
    }

    fn binary(&mut self, op: BinOp, a: Value, b: Value) -> Value {
        use Value::{Const as C, Ssa as S};
        match (op, a, b) {
            (BinOp::Add, C(x), C(y)) => C(x + y),
            (BinOp::Sub, C(x), C(y)) => C(x - y),
            (BinOp::Mul, C(x), C(y)) => C(x * y),
            (BinOp::Div, C(x), C(y)) => C(x / y),
            (BinOp::Pow, C(x), C(y)) => C(fold_pow(x, y)),
            (BinOp::Add, S(x), C(c)) | (BinOp::Add, C(c), S(x)) => self.push(Op::AddC(x, c)),
            (BinOp::Sub, S(x), C(c)) => self.push(Op::AddC(x, -c)),
            (BinOp::Sub, C(c), S(x)) => self.push(Op::RSubC(c, x)),
            (BinOp::Mul, S(x), C(c)) | (BinOp::Mul, C(c), S(x)) => self.push(Op::MulC(x, c)),
            (BinOp::Div, S(x), C(c)) => self.push(Op::DivC(x, c)),
            (BinOp::Div, C(c), S(x)) => self.push(Op::RDivC(c, x)),
            (BinOp::Pow, S(x), C(c)) => match integer_exponent(c) {
                Some(1) => S(x),
                Some(2) => self.push(Op::Square(x)),
                Some(n) => self.push(Op::Powi(x, n)),
                None => self.push(Op::Powf(x, c)),
            },
            (BinOp::Add, S(x), S(y)) => self.push(Op::Add(x, y)),
            (BinOp::Sub, S(x), S(y)) => self.push(Op::Sub(x, y)),
            (BinOp::Mul, S(x), S(y)) => self.push(Op::Mul(x, y)),
            (BinOp::Div, S(x), S(y)) => self.push(Op::Div(x, y)),
            (BinOp::Pow, x, y) => {
                let x = self.materialize(x);
                let y = self.materialize(y);
                self.push(Op::Powd(x, y))
            }
        }
    }
}

impl Program {
    /// Compile `outputs` over the input variables `inputs` (input registers in this order),
    /// with the parameter values `params` and the resolved helper trees `helpers`.
    pub(crate) fn compile(
        inputs: &[Var],
        outputs: &[&Node],
        params: &[f64],
        helpers: &[Node],
    ) -> Program {
        let mut slots = [None; 4];
        for (i, v) in inputs.iter().enumerate() {
            slots[*v as usize] = Some(i as u32);
        }
        let mut e = Emitter {
            params,
            helpers,
            helper_values: vec![None; helpers.len()],
            inputs: slots,
            n_inputs: inputs.len() as u32,
            ops: Vec::new(),
            numbering: HashMap::new(),
        };
        // Helpers the outputs need (transitively), compiled in file order: each refers only to
        // earlier ones, already compiled, so `emit` never recurses from one helper's tree into
        // another's and its depth is that of a single tree (bounded by the parser).
        let mut needed = vec![false; helpers.len()];
        let mut pending = Vec::new();
        outputs.iter().for_each(|n| helper_refs(n, &mut pending));
        while let Some(i) = pending.pop() {
            if let Some(false) = needed.get(i) {
                needed[i] = true;
                helper_refs(&helpers[i], &mut pending);
            }
        }
        for (i, tree) in helpers.iter().enumerate() {
            if needed[i] {
                let v = e.emit(tree);
                e.helper_values[i] = Some(v);
            }
        }
        let values: Vec<Value> = outputs.iter().map(|n| e.emit(n)).collect();
        allocate(inputs.len(), &e.ops, &values)
    }

    /// Number of registers the program uses.
    pub(crate) fn registers(&self) -> usize {
        self.registers
    }

    /// Number of instructions.
    pub(crate) fn len(&self) -> usize {
        self.code.len()
    }

    /// Evaluate on `K` inputs, giving `M` outputs (missing outputs are NaN).
    #[inline]
    pub(crate) fn run<D: DualScalar, const K: usize, const M: usize>(
        &self,
        inputs: [D; K],
    ) -> [D; M] {
        match self.registers {
            0..=4 => self.run_stack::<D, K, M, 4>(inputs),
            5..=8 => self.run_stack::<D, K, M, 8>(inputs),
            9..=16 => self.run_stack::<D, K, M, 16>(inputs),
            17..=32 => self.run_stack::<D, K, M, 32>(inputs),
            33..=64 => self.run_stack::<D, K, M, 64>(inputs),
            _ => {
                let mut regs = vec![D::from(0.0); self.registers.max(K)];
                self.execute(&mut regs, &inputs)
            }
        }
    }

    #[inline]
    fn run_stack<D: DualScalar, const K: usize, const M: usize, const N: usize>(
        &self,
        inputs: [D; K],
    ) -> [D; M] {
        let mut regs = [D::from(0.0); N];
        self.execute(&mut regs, &inputs)
    }

    #[inline(always)]
    fn execute<D: DualScalar, const M: usize>(&self, regs: &mut [D], inputs: &[D]) -> [D; M] {
        let n = inputs.len().min(self.inputs).min(regs.len());
        regs[..n].copy_from_slice(&inputs[..n]);
        for ins in &self.code {
            let value = step(regs, ins.op);
            regs[ins.dst as usize] = value;
        }
        std::array::from_fn(|i| match self.outputs.get(i) {
            Some(Operand::Reg(r)) => regs.get(*r as usize).copied().unwrap_or(D::from(f64::NAN)),
            Some(Operand::Const(c)) => D::from(*c),
            None => D::from(f64::NAN),
        })
    }
}

/// One operation on the register file. Register numbers come from [`allocate`], which only
/// produces numbers below the program's register count, and the register file always has at
/// least that many entries, so the indexing cannot fail.
#[inline(always)]
fn step<D: DualScalar>(regs: &[D], op: Op) -> D {
    let g = |i: u32| regs[i as usize];
    match op {
        Op::Const(c) => D::from(c),
        Op::Add(x, y) => g(x) + g(y),
        Op::Sub(x, y) => g(x) - g(y),
        Op::Mul(x, y) => g(x) * g(y),
        Op::Div(x, y) => g(x) / g(y),
        Op::AddC(x, c) => g(x) + c,
        Op::RSubC(c, x) => -g(x) + c,
        Op::MulC(x, c) => g(x) * c,
        Op::DivC(x, c) => g(x) / c,
        Op::RDivC(c, x) => g(x).recip() * c,
        Op::Neg(x) => -g(x),
        Op::Square(x) => {
            let v = g(x);
            v * v
        }
        Op::Powi(x, n) => g(x).powi(n),
        Op::Powf(x, c) => g(x).powf(c),
        Op::Powd(x, y) => g(x).powd(g(y)),
        Op::Unary(f, x) => {
            let v = g(x);
            match f {
                Func::Sqrt => v.sqrt(),
                Func::Exp => v.exp(),
                Func::Ln => v.ln(),
                Func::Sin => sin_cos(v).0,
                Func::Cos => sin_cos(v).1,
                Func::Tan => v.tan(),
                Func::Sinh => v.sinh(),
                Func::Cosh => v.cosh(),
                Func::Tanh => v.tanh(),
                Func::Abs => v.abs(),
                Func::Pow => D::from(f64::NAN),
            }
        }
    }
}

/// The helpers a tree refers to directly.
fn helper_refs(node: &Node, out: &mut Vec<usize>) {
    match node {
        Node::Helper(i) => out.push(*i),
        Node::Neg(x) => helper_refs(x, out),
        Node::Bin(_, a, b) => {
            helper_refs(a, out);
            helper_refs(b, out);
        }
        Node::Call(_, args) => args.iter().for_each(|a| helper_refs(a, out)),
        Node::Const(_) | Node::Var(_) | Node::Param(_) => {}
    }
}

/// Register allocation over the SSA program: each value lives from its definition to its
/// last use; a register is reused as soon as its value is dead (lowest free number first).
fn allocate(n_inputs: usize, ops: &[Op], values: &[Value]) -> Program {
    let n_values = n_inputs + ops.len();
    const NEVER: usize = usize::MAX - 1;
    const FOREVER: usize = usize::MAX;
    let mut last_use = vec![NEVER; n_values];
    for (i, op) in ops.iter().enumerate() {
        for x in op.operands().into_iter().flatten() {
            last_use[x as usize] = i;
        }
    }
    for v in values {
        if let Value::Ssa(x) = v {
            last_use[*x as usize] = FOREVER;
        }
    }
    let mut reg_of = vec![u32::MAX; n_values];
    let mut free: std::collections::BTreeSet<u32> = std::collections::BTreeSet::new();
    let mut registers = n_inputs as u32;
    for (i, r) in reg_of.iter_mut().enumerate().take(n_inputs) {
        *r = i as u32;
        if last_use[i] == NEVER {
            free.insert(i as u32);
        }
    }
    let mut code = Vec::with_capacity(ops.len());
    for (i, op) in ops.iter().enumerate() {
        let renamed = op.rename(|x| reg_of[x as usize]);
        let mut operands = op.operands().into_iter().flatten().collect::<Vec<_>>();
        operands.dedup();
        for x in operands {
            if last_use[x as usize] == i {
                free.insert(reg_of[x as usize]);
            }
        }
        let dst = match free.pop_first() {
            Some(r) => r,
            None => {
                registers += 1;
                registers - 1
            }
        };
        let id = n_inputs + i;
        reg_of[id] = dst;
        if last_use[id] == NEVER {
            free.insert(dst);
        }
        code.push(Instr { dst, op: renamed });
    }
    let outputs = values
        .iter()
        .map(|v| match v {
            Value::Const(c) => Operand::Const(*c),
            Value::Ssa(x) => Operand::Reg(reg_of[*x as usize]),
        })
        .collect();
    Program {
        inputs: n_inputs,
        registers: registers as usize,
        code,
        outputs,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::metric_file::parser::parse_expression;
    use crate::metric_file::resolve::{Context, Scope};

    fn compile_one(text: &str) -> Program {
        let scope = Scope {
            params: vec!["a".into()],
            param_index: [("a".to_string(), 0)].into(),
            helpers: vec![],
            helper_index: Default::default(),
            helper_refs: vec![],
            helper_vars: vec![],
        };
        let e = parse_expression(text).unwrap();
        let (n, _) = scope.resolve(&e, Context::AXISYMMETRIC, None).unwrap();
        Program::compile(&[Var::R, Var::Theta], &[&n], &[0.5], &[])
    }

    #[test]
    fn folds_constants_and_numbers_repeated_subexpressions() {
        // a^2 folds; cos(theta)^2 is computed once and squared by a multiplication.
        let p = compile_one("r^2 + a^2*cos(theta)^2 + cos(theta)^2");
        assert_eq!(p.len(), 6, "{p:?}");
        let [v]: [f64; 1] = p.run([3.0, 1.0]);
        let c2 = 1.0f64.cos().powi(2);
        assert!((v - (9.0 + 0.25 * c2 + c2)).abs() < 1e-15);
    }

    #[test]
    fn negative_base_integer_power_is_exact() {
        let p = compile_one("(r - 5)^3 + (r - 5)^-2");
        let [v]: [f64; 1] = p.run([3.0, 0.0]);
        assert_eq!(v, -8.0 + 0.25);
    }
}
