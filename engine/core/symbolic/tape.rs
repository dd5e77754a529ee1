//! Compiles expressions to a flat instruction tape evaluated column-wise over
//! whole data columns: the fast path for model values and Jacobians.
//!
//! Compilation hash-conses the trees (value numbering, as in Cocke 1970 /
//! Aho, Sethi & Ullman's DAG construction), so a subexpression shared by several
//! outputs — the model and its derivatives share most of theirs — is computed
//! once. Nodes that depend on no data variable ("uniform": constants and
//! parameter-only subexpressions) are evaluated once per call into scalar
//! registers; the remaining instructions run over blocks of rows, one tight
//! loop per instruction per block, with column slots reused by a linear-scan
//! allocation over the instructions' live ranges (Poletto & Sarkar 1999).
//! Results are bitwise the same as tree walking (`Expr::eval`): every
//! instruction applies the same floating-point operation to the same inputs.

use super::expr::{pow, BinOp, Expr, Func};
use std::collections::HashMap;

/// Rows per block: large enough to amortise dispatch, small enough for L1/L2.
const BLOCK: usize = 256;

thread_local! {
    /// Scratch columns of [`Tape::eval`], kept between calls on each thread.
    static SCRATCH: std::cell::RefCell<Vec<Vec<f64>>> = const { std::cell::RefCell::new(Vec::new()) };
}

/// A compile-time register: scalar (uniform), input column, or computed column.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
enum Reg {
    S(u32),
    In(u32),
    V(u32),
}

/// A hash-consing key: numbers by bit pattern, operands by register.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
enum Key {
    Const(u64),
    Var(usize),
    Param(usize),
    Neg(Reg),
    Bin(BinOp, Reg, Reg),
    Call(Func, Reg),
}

/// An instruction on scalar registers, run once per evaluation.
#[derive(Debug, Clone, Copy)]
enum SOp {
    Param(usize),
    Neg(u32),
    Bin(BinOp, u32, u32),
    Call(Func, u32),
}

/// An operand of a column instruction.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Arg {
    /// Scalar register.
    S(u32),
    /// Input data column.
    In(u32),
    /// Column slot (after allocation) or virtual column register (before).
    Col(u32),
}

/// How a power with a constant exponent is computed; mirrors `expr::pow` exactly.
#[derive(Debug, Clone, Copy)]
enum PowKind {
    Square,
    Powi(i32),
    Powf(f64),
}

/// A column instruction, run for every block of rows.
#[derive(Debug, Clone, Copy)]
enum VOp {
    Neg(Arg),
    Bin(BinOp, Arg, Arg),
    PowConst(Arg, PowKind),
    Call(Func, Arg),
}

/// A column instruction with its destination slot.
#[derive(Debug, Clone, Copy)]
struct VInstr {
    dst: u32,
    op: VOp,
}

/// A compiled set of expressions sharing common subexpressions.
#[derive(Debug, Clone)]
pub struct Tape {
    /// Initial scalar register file (constants set, the rest filled by `scode`).
    scalar_init: Vec<f64>,
    /// Scalar instructions with their destination register.
    scode: Vec<(u32, SOp)>,
    /// Column instructions in execution order.
    vcode: Vec<VInstr>,
    /// Number of column slots needed per block.
    n_slots: usize,
    /// Where each output lives.
    outputs: Vec<Arg>,
    /// One more than the highest variable index used.
    n_vars: usize,
}

/// Builds a tape: hash-consing table and the two instruction streams.
struct Builder {
    table: HashMap<Key, Reg>,
    scalar_init: Vec<f64>,
    scalar_const: Vec<Option<f64>>,
    scode: Vec<(u32, SOp)>,
    vcode: Vec<(u32, VOp)>,
    n_virtual: u32,
    n_vars: usize,
}

impl Builder {
    fn new_scalar(&mut self, init: f64, constant: bool) -> u32 {
        self.scalar_init.push(init);
        self.scalar_const
            .push(if constant { Some(init) } else { None });
        (self.scalar_init.len() - 1) as u32
    }

    fn arg(r: Reg) -> Arg {
        match r {
            Reg::S(i) => Arg::S(i),
            Reg::In(i) => Arg::In(i),
            Reg::V(i) => Arg::Col(i),
        }
    }

    fn emit_v(&mut self, op: VOp) -> Reg {
        let v = self.n_virtual;
        self.n_virtual += 1;
        self.vcode.push((v, op));
        Reg::V(v)
    }

    fn emit_s(&mut self, op: SOp) -> Reg {
        let s = self.new_scalar(0.0, false);
        self.scode.push((s, op));
        Reg::S(s)
    }

    fn node(&mut self, e: &Expr) -> Reg {
        let key = match e {
            Expr::Num(v) => Key::Const(v.to_bits()),
            Expr::Var(i) => Key::Var(*i),
            Expr::Param(i) => Key::Param(*i),
            Expr::Neg(a) => Key::Neg(self.node(a)),
            Expr::Bin(op, a, b) => {
                let ra = self.node(a);
                let rb = self.node(b);
                Key::Bin(*op, ra, rb)
            }
            Expr::Call(f, a) => Key::Call(*f, self.node(a)),
        };
        if let Some(r) = self.table.get(&key) {
            return *r;
        }
        let r = match key {
            Key::Const(bits) => Reg::S(self.new_scalar(f64::from_bits(bits), true)),
            Key::Var(i) => {
                self.n_vars = self.n_vars.max(i + 1);
                Reg::In(i as u32)
            }
            Key::Param(i) => self.emit_s(SOp::Param(i)),
            Key::Neg(Reg::S(a)) => self.emit_s(SOp::Neg(a)),
            Key::Neg(a) => self.emit_v(VOp::Neg(Self::arg(a))),
            Key::Bin(op, Reg::S(a), Reg::S(b)) => self.emit_s(SOp::Bin(op, a, b)),
            Key::Bin(BinOp::Pow, a, Reg::S(b)) if self.scalar_const[b as usize].is_some() => {
                let n = self.scalar_const[b as usize].unwrap_or(f64::NAN);
                // Same branches as `expr::pow`, decided once at compile time.
                let kind = if n == 2.0 {
                    PowKind::Square
                } else if n.fract() == 0.0 && n.abs() <= 64.0 {
                    PowKind::Powi(n as i32)
                } else {
                    PowKind::Powf(n)
                };
                self.emit_v(VOp::PowConst(Self::arg(a), kind))
            }
            Key::Bin(op, a, b) => self.emit_v(VOp::Bin(op, Self::arg(a), Self::arg(b))),
            Key::Call(f, Reg::S(a)) => self.emit_s(SOp::Call(f, a)),
            Key::Call(f, a) => self.emit_v(VOp::Call(f, Self::arg(a))),
        };
        self.table.insert(key, r);
        r
    }
}

/// A source of values for one block: a column slice or one scalar for every row.
#[derive(Clone, Copy)]
enum Src<'a> {
    Col(&'a [f64]),
    Scalar(f64),
}

#[inline(always)]
fn map1(d: &mut [f64], a: Src, f: impl Fn(f64) -> f64) {
    match a {
        Src::Col(a) => {
            for (x, &u) in d.iter_mut().zip(a) {
                *x = f(u);
            }
        }
        Src::Scalar(u) => d.fill(f(u)),
    }
}

#[inline(always)]
fn map2(d: &mut [f64], a: Src, b: Src, f: impl Fn(f64, f64) -> f64) {
    match (a, b) {
        (Src::Col(a), Src::Col(b)) => {
            for ((x, &u), &v) in d.iter_mut().zip(a).zip(b) {
                *x = f(u, v);
            }
        }
        (Src::Col(a), Src::Scalar(v)) => {
            for (x, &u) in d.iter_mut().zip(a) {
                *x = f(u, v);
            }
        }
        (Src::Scalar(u), Src::Col(b)) => {
            for (x, &v) in d.iter_mut().zip(b) {
                *x = f(u, v);
            }
        }
        (Src::Scalar(u), Src::Scalar(v)) => d.fill(f(u, v)),
    }
}

fn apply_call(d: &mut [f64], f: Func, a: Src) {
    match f {
        Func::Exp => map1(d, a, f64::exp),
        Func::Log => map1(d, a, f64::ln),
        Func::Log10 => map1(d, a, f64::log10),
        Func::Sqrt => map1(d, a, f64::sqrt),
        Func::Abs => map1(d, a, f64::abs),
        Func::Sin => map1(d, a, f64::sin),
        Func::Cos => map1(d, a, f64::cos),
        Func::Tan => map1(d, a, f64::tan),
        Func::Asin => map1(d, a, f64::asin),
        Func::Acos => map1(d, a, f64::acos),
        Func::Atan => map1(d, a, f64::atan),
        Func::Sinh => map1(d, a, f64::sinh),
        Func::Cosh => map1(d, a, f64::cosh),
        Func::Tanh => map1(d, a, f64::tanh),
    }
}

impl Tape {
    /// Compiles `outputs` into one tape.
    pub fn compile(outputs: &[Expr]) -> Tape {
        let mut b = Builder {
            table: HashMap::new(),
            scalar_init: Vec::new(),
            scalar_const: Vec::new(),
            scode: Vec::new(),
            vcode: Vec::new(),
            n_virtual: 0,
            n_vars: 0,
        };
        let regs: Vec<Reg> = outputs.iter().map(|e| b.node(e)).collect();

        // Live ranges: the last instruction reading each virtual column; outputs live to the end.
        let nv = b.n_virtual as usize;
        let mut last_use = vec![0usize; nv];
        for (i, (_, op)) in b.vcode.iter().enumerate() {
            for a in op_args(op) {
                if let Arg::Col(v) = a {
                    last_use[v as usize] = i;
                }
            }
        }
        for r in &regs {
            if let Reg::V(v) = r {
                last_use[*v as usize] = usize::MAX;
            }
        }
        // Linear-scan slot allocation; the destination is allocated before the
        // operands are freed, so an instruction never writes a slot it reads.
        let mut slot_of = vec![0u32; nv];
        let mut free: Vec<u32> = Vec::new();
        let mut n_slots = 0u32;
        let mut vcode = Vec::with_capacity(b.vcode.len());
        for (i, (v, op)) in b.vcode.iter().enumerate() {
            let map = |a: Arg| match a {
                Arg::Col(c) => Arg::Col(slot_of[c as usize]),
                other => other,
            };
            let op = match *op {
                VOp::Neg(a) => VOp::Neg(map(a)),
                VOp::Bin(o, a, c) => VOp::Bin(o, map(a), map(c)),
                VOp::PowConst(a, k) => VOp::PowConst(map(a), k),
                VOp::Call(f, a) => VOp::Call(f, map(a)),
            };
            let dst = free.pop().unwrap_or_else(|| {
                n_slots += 1;
                n_slots - 1
            });
            slot_of[*v as usize] = dst;
            vcode.push(VInstr { dst, op });
            let mut freed: Vec<u32> = Vec::new();
            for a in op_args(&b.vcode[i].1) {
                if let Arg::Col(c) = a {
                    if last_use[c as usize] == i && !freed.contains(&c) {
                        freed.push(c);
                        free.push(slot_of[c as usize]);
                    }
                }
            }
        }
        let outputs = regs
            .iter()
            .map(|r| match *r {
                Reg::S(i) => Arg::S(i),
                Reg::In(i) => Arg::In(i),
                Reg::V(v) => Arg::Col(slot_of[v as usize]),
            })
            .collect();
        Tape {
            scalar_init: b.scalar_init,
            scode: b.scode,
            vcode,
            n_slots: n_slots as usize,
            outputs,
            n_vars: b.n_vars,
        }
    }

    /// Number of outputs.
    pub fn n_outputs(&self) -> usize {
        self.outputs.len()
    }

    /// Number of data columns the tape reads (one more than the highest variable index).
    pub fn n_vars(&self) -> usize {
        self.n_vars
    }

    /// Number of instructions run per row block (after sharing); a measure of cost.
    pub fn n_column_instructions(&self) -> usize {
        self.vcode.len()
    }

    /// Number of instructions run once per call (parameters and constants).
    pub fn n_scalar_instructions(&self) -> usize {
        self.scode.len()
    }

    /// Evaluates every output over all rows: `vars[j]` is column j (all the same
    /// length n), `out[k]` (length n) receives output k. Rows beyond the shortest
    /// column or output are left untouched; a missing parameter reads as NaN, and
    /// too few columns fill the outputs with NaN.
    pub fn eval(&self, params: &[f64], vars: &[&[f64]], out: &mut [&mut [f64]]) {
        let mut n = out.iter().map(|o| o.len()).min().unwrap_or(0);
        if vars.len() < self.n_vars {
            for o in out.iter_mut() {
                o.fill(f64::NAN);
            }
            return;
        }
        for v in &vars[..self.n_vars] {
            n = n.min(v.len());
        }
        let s = self.scalars(params);
        // Scratch sized to the data, so small problems (LM on a few dozen rows)
        // stay cheap, and kept per thread between calls: every instruction
        // writes its whole column before any reads it, so old values never show.
        let block = BLOCK.min(n);
        let mut cols: Vec<Vec<f64>> = SCRATCH.with(|c| std::mem::take(&mut *c.borrow_mut()));
        if cols.len() < self.n_slots {
            cols.resize_with(self.n_slots, Vec::new);
        }
        for c in cols.iter_mut().take(self.n_slots) {
            if c.len() < block {
                c.resize(block, 0.0);
            }
        }
        let mut start = 0;
        while start < n {
            let len = block.min(n - start);
            let end = start + len;
            for ins in &self.vcode {
                let mut dst = std::mem::take(&mut cols[ins.dst as usize]);
                {
                    let src = |a: Arg| -> Src {
                        match a {
                            Arg::S(i) => Src::Scalar(s[i as usize]),
                            Arg::In(j) => Src::Col(&vars[j as usize][start..end]),
                            Arg::Col(c) => Src::Col(&cols[c as usize][..len]),
                        }
                    };
                    let d = &mut dst[..len];
                    match ins.op {
                        VOp::Neg(a) => map1(d, src(a), |u| -u),
                        VOp::Bin(BinOp::Add, a, b) => map2(d, src(a), src(b), |u, v| u + v),
                        VOp::Bin(BinOp::Sub, a, b) => map2(d, src(a), src(b), |u, v| u - v),
                        VOp::Bin(BinOp::Mul, a, b) => map2(d, src(a), src(b), |u, v| u * v),
                        VOp::Bin(BinOp::Div, a, b) => map2(d, src(a), src(b), |u, v| u / v),
                        VOp::Bin(BinOp::Pow, a, b) => map2(d, src(a), src(b), pow),
                        VOp::PowConst(a, PowKind::Square) => map1(d, src(a), |u| u * u),
                        VOp::PowConst(a, PowKind::Powi(k)) => map1(d, src(a), |u| u.powi(k)),
                        VOp::PowConst(a, PowKind::Powf(k)) => map1(d, src(a), |u| u.powf(k)),
                        VOp::Call(f, a) => apply_call(d, f, src(a)),
                    }
                }
                cols[ins.dst as usize] = dst;
            }
            for (o, a) in out.iter_mut().zip(&self.outputs) {
                let o = &mut o[start..end];
                match *a {
                    Arg::S(i) => o.fill(s[i as usize]),
                    Arg::In(j) => o.copy_from_slice(&vars[j as usize][start..end]),
                    Arg::Col(c) => o.copy_from_slice(&cols[c as usize][..len]),
                }
            }
            start = end;
        }
        SCRATCH.with(|c| *c.borrow_mut() = cols);
    }

    /// Evaluates every output at one row of variable values.
    pub fn eval_one(&self, params: &[f64], row: &[f64]) -> Vec<f64> {
        let vars: Vec<&[f64]> = row.iter().map(std::slice::from_ref).collect();
        let mut out = vec![[0.0f64; 1]; self.outputs.len()];
        let mut refs: Vec<&mut [f64]> = out.iter_mut().map(|o| &mut o[..]).collect();
        self.eval(params, &vars, &mut refs);
        out.iter().map(|o| o[0]).collect()
    }

    /// Evaluates every output over `n_rows` rows of `vars`, into new columns.
    pub fn eval_columns(&self, params: &[f64], vars: &[&[f64]], n_rows: usize) -> Vec<Vec<f64>> {
        let mut out = vec![vec![f64::NAN; n_rows]; self.outputs.len()];
        let mut refs: Vec<&mut [f64]> = out.iter_mut().map(|o| o.as_mut_slice()).collect();
        self.eval(params, vars, &mut refs);
        out
    }

    /// The scalar register file for these parameters.
    fn scalars(&self, params: &[f64]) -> Vec<f64> {
        let mut s = self.scalar_init.clone();
        for (dst, op) in &self.scode {
            s[*dst as usize] = match *op {
                SOp::Param(i) => params.get(i).copied().unwrap_or(f64::NAN),
                SOp::Neg(a) => -s[a as usize],
                SOp::Bin(o, a, b) => o.apply(s[a as usize], s[b as usize]),
                SOp::Call(f, a) => f.apply(s[a as usize]),
            };
        }
        s
    }
}

/// The operands an instruction reads.
fn op_args(op: &VOp) -> Vec<Arg> {
    match *op {
        VOp::Neg(a) | VOp::PowConst(a, _) | VOp::Call(_, a) => vec![a],
        VOp::Bin(_, a, b) => vec![a, b],
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::symbolic::diff::diff_param;
    use crate::symbolic::parse::parse_formula;

    fn is_send_sync<T: Send + Sync>() {}

    #[test]
    fn tape_is_send_and_sync() {
        is_send_sync::<Tape>();
    }

    #[test]
    fn matches_tree_walking_bitwise() {
        // names: a, b, x in order of appearance; x is treated as Var(0).
        let p = parse_formula("a*exp(-b*x) + (x - a)^3 + x^b / (1 + x^2) + sqrt(abs(x))").unwrap();
        let x_idx = p.names.iter().position(|n| n == "x").unwrap();
        let f = p.rhs.map(&|e| match e {
            Expr::Param(i) if *i == x_idx => Some(Expr::Var(0)),
            Expr::Param(i) if *i > x_idx => Some(Expr::Param(*i - 1)),
            _ => None,
        });
        let outs = vec![f.clone(), diff_param(&f, 0), diff_param(&f, 1)];
        let tape = Tape::compile(&outs);
        let xs: Vec<f64> = (0..1000).map(|i| -3.0 + 0.0071 * i as f64).collect();
        let params = [1.7, 0.4];
        let got = tape.eval_columns(&params, &[&xs], xs.len());
        for (k, e) in outs.iter().enumerate() {
            for (i, &x) in xs.iter().enumerate() {
                let want = e.eval(&params, &[x]);
                let g = got[k][i];
                assert!(
                    g.to_bits() == want.to_bits() || (g.is_nan() && want.is_nan()),
                    "output {k} row {i}: {g} vs {want}"
                );
            }
        }
    }

    /// The limit guards of zero-base derivatives (`functions::vanishing_guard`)
    /// are ordinary operators, so tape and tree agree there too, at x = 0 included.
    #[test]
    fn matches_tree_walking_bitwise_at_vanishing_bases() {
        let p =
            parse_formula("c + (d - c)/(1 + (x/ed)^b) + d*exp(-(x/ed)^b) + sqrt(ed*x) + abs(x*ed)")
                .unwrap();
        let x_idx = p.names.iter().position(|n| n == "x").unwrap();
        let f = p.rhs.map(&|e| match e {
            Expr::Param(i) if *i == x_idx => Some(Expr::Var(0)),
            Expr::Param(i) if *i > x_idx => Some(Expr::Param(*i - 1)),
            _ => None,
        });
        let mut outs = vec![f.clone()];
        outs.extend((0..4).map(|k| diff_param(&f, k)));
        let tape = Tape::compile(&outs);
        let mut xs: Vec<f64> = vec![0.0, -0.0, 0.0];
        xs.extend((0..300).map(|i| 0.013 * i as f64));
        for params in [
            [0.1, 1.9, 1.8, 0.55],
            [1.9, 0.1, 0.7, 3.0],
            [0.0, 1.0, 2.0, 0.3],
            [0.2, 1.5, 2.0, -0.8],
        ] {
            let got = tape.eval_columns(&params, &[&xs], xs.len());
            for (k, e) in outs.iter().enumerate() {
                for (i, &x) in xs.iter().enumerate() {
                    let want = e.eval(&params, &[x]);
                    let g = got[k][i];
                    assert!(
                        g.to_bits() == want.to_bits() || (g.is_nan() && want.is_nan()),
                        "output {k} row {i}: {g} vs {want}"
                    );
                    if x == 0.0 {
                        assert!(g.is_finite(), "output {k} at x = 0 with {params:?}: {g}");
                    }
                }
            }
        }
    }

    #[test]
    fn shares_subexpressions_and_hoists_parameters() {
        // exp(-b*x) appears in f and both derivatives; -b and p-only parts are scalar.
        let x = Expr::Var(0);
        let e = Expr::call(Func::Exp, Expr::mul(Expr::neg(Expr::Param(1)), x.clone()));
        let f = Expr::mul(Expr::Param(0), e.clone());
        let tape = Tape::compile(&[f.clone(), e.clone(), f.clone()]);
        // column work: (-b)*x, exp(.), a*exp(.) — three instructions, nothing repeated.
        assert_eq!(tape.n_column_instructions(), 3);
        // scalar work: load a, load b, negate b.
        assert_eq!(tape.n_scalar_instructions(), 3);
        let v = tape.eval_one(&[2.0, 0.5], &[2.0]);
        assert_eq!(
            v,
            vec![
                2.0 * (-1.0f64).exp(),
                (-1.0f64).exp(),
                2.0 * (-1.0f64).exp()
            ]
        );
    }

    #[test]
    fn integer_powers_of_negative_bases() {
        let e = Expr::pow(Expr::Var(0), Expr::Num(3.0));
        let g = Expr::pow(Expr::Var(0), Expr::Param(0));
        let tape = Tape::compile(&[e, g]);
        assert_eq!(tape.eval_one(&[2.0], &[-2.0]), vec![-8.0, 4.0]);
    }

    #[test]
    fn long_columns_cross_block_boundaries() {
        let e = Expr::add(Expr::Var(0), Expr::mul(Expr::Param(0), Expr::Var(1)));
        let tape = Tape::compile(&[e, Expr::Num(7.0), Expr::Var(1)]);
        let n = 3 * BLOCK + 17;
        let x0: Vec<f64> = (0..n).map(|i| i as f64).collect();
        let x1: Vec<f64> = (0..n).map(|i| (2 * i) as f64).collect();
        let out = tape.eval_columns(&[0.5], &[&x0, &x1], n);
        assert_eq!(out[0][n - 1], 2.0 * (n - 1) as f64);
        assert_eq!(out[1][n - 1], 7.0);
        assert_eq!(out[2][BLOCK], (2 * BLOCK) as f64);
    }

    #[test]
    fn missing_inputs_give_nan_not_panic() {
        let tape = Tape::compile(&[Expr::add(Expr::Var(1), Expr::Param(3))]);
        assert!(tape.eval_one(&[], &[1.0]).iter().all(|v| v.is_nan()));
        assert!(tape.eval_one(&[], &[1.0, 2.0]).iter().all(|v| v.is_nan()));
    }
}
