//! The expression tree every other module works on: numbers, data variables,
//! parameters, the five arithmetic operators and a fixed set of functions.

use std::fmt;

/// A built-in function of one argument; the set is closed so that every
/// function has a derivative, a limit rule and a compiled instruction.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Func {
    Exp,
    Log,
    Log10,
    Sqrt,
    Abs,
    Sin,
    Cos,
    Tan,
    Asin,
    Acos,
    Atan,
    Sinh,
    Cosh,
    Tanh,
}

impl Func {
    /// Every function, for tables and generators.
    pub const ALL: [Func; 14] = [
        Func::Exp,
        Func::Log,
        Func::Log10,
        Func::Sqrt,
        Func::Abs,
        Func::Sin,
        Func::Cos,
        Func::Tan,
        Func::Asin,
        Func::Acos,
        Func::Atan,
        Func::Sinh,
        Func::Cosh,
        Func::Tanh,
    ];

    /// Looks a function up by the name a user writes (`ln` is `log`).
    pub fn from_name(name: &str) -> Option<Func> {
        Some(match name {
            "exp" => Func::Exp,
            "log" | "ln" => Func::Log,
            "log10" => Func::Log10,
            "sqrt" => Func::Sqrt,
            "abs" => Func::Abs,
            "sin" => Func::Sin,
            "cos" => Func::Cos,
            "tan" => Func::Tan,
            "asin" => Func::Asin,
            "acos" => Func::Acos,
            "atan" => Func::Atan,
            "sinh" => Func::Sinh,
            "cosh" => Func::Cosh,
            "tanh" => Func::Tanh,
            _ => return None,
        })
    }

    /// The canonical name, as printed.
    pub fn name(self) -> &'static str {
        match self {
            Func::Exp => "exp",
            Func::Log => "log",
            Func::Log10 => "log10",
            Func::Sqrt => "sqrt",
            Func::Abs => "abs",
            Func::Sin => "sin",
            Func::Cos => "cos",
            Func::Tan => "tan",
            Func::Asin => "asin",
            Func::Acos => "acos",
            Func::Atan => "atan",
            Func::Sinh => "sinh",
            Func::Cosh => "cosh",
            Func::Tanh => "tanh",
        }
    }

    /// Applies the function to a number.
    pub fn apply(self, v: f64) -> f64 {
        match self {
            Func::Exp => v.exp(),
            Func::Log => v.ln(),
            Func::Log10 => v.log10(),
            Func::Sqrt => v.sqrt(),
            Func::Abs => v.abs(),
            Func::Sin => v.sin(),
            Func::Cos => v.cos(),
            Func::Tan => v.tan(),
            Func::Asin => v.asin(),
            Func::Acos => v.acos(),
            Func::Atan => v.atan(),
            Func::Sinh => v.sinh(),
            Func::Cosh => v.cosh(),
            Func::Tanh => v.tanh(),
        }
    }
}

/// A binary operator.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum BinOp {
    Add,
    Sub,
    Mul,
    Div,
    Pow,
}

impl BinOp {
    /// The operator's symbol, as printed.
    pub fn symbol(self) -> &'static str {
        match self {
            BinOp::Add => "+",
            BinOp::Sub => "-",
            BinOp::Mul => "*",
            BinOp::Div => "/",
            BinOp::Pow => "^",
        }
    }

    /// Applies the operator to two numbers.
    pub fn apply(self, a: f64, b: f64) -> f64 {
        match self {
            BinOp::Add => a + b,
            BinOp::Sub => a - b,
            BinOp::Mul => a * b,
            BinOp::Div => a / b,
            BinOp::Pow => pow(a, b),
        }
    }
}

/// Power with the convention users expect: an integer exponent works for a
/// negative base (`(-2)^3 = -8`), which `f64::powf` alone would make NaN.
pub fn pow(a: f64, b: f64) -> f64 {
    if b == 2.0 {
        a * a
    } else if b.fract() == 0.0 && b.abs() <= 64.0 {
        a.powi(b as i32)
    } else {
        a.powf(b)
    }
}

/// A node of a model expression. `Var(i)` is data column `i` of the model's
/// variable list, `Param(i)` parameter `i` of its parameter list.
#[derive(Debug, Clone, PartialEq)]
pub enum Expr {
    Num(f64),
    Var(usize),
    Param(usize),
    Neg(Box<Expr>),
    Bin(BinOp, Box<Expr>, Box<Expr>),
    Call(Func, Box<Expr>),
}

// `add`, `sub`, … build a node exactly as written, without simplifying
// (parser, tests, the simplifier itself); operator traits would invite their
// use where the simplifying constructors of `simplify` are meant.
#[allow(clippy::should_implement_trait)]
impl Expr {
    /// A number node.
    pub fn num(v: f64) -> Expr {
        Expr::Num(v)
    }
    /// `a + b` without simplification.
    pub fn add(a: Expr, b: Expr) -> Expr {
        Expr::Bin(BinOp::Add, Box::new(a), Box::new(b))
    }
    /// `a - b` without simplification.
    pub fn sub(a: Expr, b: Expr) -> Expr {
        Expr::Bin(BinOp::Sub, Box::new(a), Box::new(b))
    }
    /// `a * b` without simplification.
    pub fn mul(a: Expr, b: Expr) -> Expr {
        Expr::Bin(BinOp::Mul, Box::new(a), Box::new(b))
    }
    /// `a / b` without simplification.
    pub fn div(a: Expr, b: Expr) -> Expr {
        Expr::Bin(BinOp::Div, Box::new(a), Box::new(b))
    }
    /// `a ^ b` without simplification.
    pub fn pow(a: Expr, b: Expr) -> Expr {
        Expr::Bin(BinOp::Pow, Box::new(a), Box::new(b))
    }
    /// `-a` without simplification.
    pub fn neg(a: Expr) -> Expr {
        Expr::Neg(Box::new(a))
    }
    /// `f(a)` without simplification.
    pub fn call(f: Func, a: Expr) -> Expr {
        Expr::Call(f, Box::new(a))
    }

    /// Evaluates at one point: `params[i]` for `Param(i)`, `vars[i]` for `Var(i)`.
    /// Plain tree walking; the compiled tape (`symbolic::tape`) is the fast path.
    pub fn eval(&self, params: &[f64], vars: &[f64]) -> f64 {
        match self {
            Expr::Num(v) => *v,
            Expr::Var(i) => vars[*i],
            Expr::Param(i) => params[*i],
            Expr::Neg(a) => -a.eval(params, vars),
            Expr::Bin(op, a, b) => op.apply(a.eval(params, vars), b.eval(params, vars)),
            Expr::Call(f, a) => f.apply(a.eval(params, vars)),
        }
    }

    /// True when the expression contains parameter `p`.
    pub fn has_param(&self, p: usize) -> bool {
        self.any(&|e| matches!(e, Expr::Param(q) if *q == p))
    }

    /// True when the expression contains variable `v`.
    pub fn has_var(&self, v: usize) -> bool {
        self.any(&|e| matches!(e, Expr::Var(q) if *q == v))
    }

    /// True when the expression contains any parameter.
    pub fn has_any_param(&self) -> bool {
        self.any(&|e| matches!(e, Expr::Param(_)))
    }

    /// True when the expression contains any variable.
    pub fn has_any_var(&self) -> bool {
        self.any(&|e| matches!(e, Expr::Var(_)))
    }

    /// True when `pred` holds for this node or any node below it.
    pub fn any(&self, pred: &dyn Fn(&Expr) -> bool) -> bool {
        if pred(self) {
            return true;
        }
        match self {
            Expr::Num(_) | Expr::Var(_) | Expr::Param(_) => false,
            Expr::Neg(a) | Expr::Call(_, a) => a.any(pred),
            Expr::Bin(_, a, b) => a.any(pred) || b.any(pred),
        }
    }

    /// Number of nodes, a measure of size.
    pub fn size(&self) -> usize {
        match self {
            Expr::Num(_) | Expr::Var(_) | Expr::Param(_) => 1,
            Expr::Neg(a) | Expr::Call(_, a) => 1 + a.size(),
            Expr::Bin(_, a, b) => 1 + a.size() + b.size(),
        }
    }

    /// Replaces every node for which `f` returns `Some`, bottom-up elsewhere.
    pub fn map(&self, f: &dyn Fn(&Expr) -> Option<Expr>) -> Expr {
        if let Some(e) = f(self) {
            return e;
        }
        match self {
            Expr::Num(_) | Expr::Var(_) | Expr::Param(_) => self.clone(),
            Expr::Neg(a) => Expr::Neg(Box::new(a.map(f))),
            Expr::Call(g, a) => Expr::Call(*g, Box::new(a.map(f))),
            Expr::Bin(op, a, b) => Expr::Bin(*op, Box::new(a.map(f)), Box::new(b.map(f))),
        }
    }

    /// Substitutes parameter `p` by `with`.
    pub fn subst_param(&self, p: usize, with: &Expr) -> Expr {
        self.map(&|e| match e {
            Expr::Param(q) if *q == p => Some(with.clone()),
            _ => None,
        })
    }

    /// Renders with the given names for parameters and variables.
    pub fn display<'a>(&'a self, params: &'a [String], vars: &'a [String]) -> Display<'a> {
        Display {
            expr: self,
            params,
            vars,
        }
    }
}

/// Binding strength used when printing, so that only needed parentheses appear.
fn precedence(e: &Expr) -> u8 {
    match e {
        Expr::Bin(BinOp::Add | BinOp::Sub, ..) => 1,
        Expr::Bin(BinOp::Mul | BinOp::Div, ..) => 2,
        Expr::Neg(_) => 3,
        Expr::Bin(BinOp::Pow, ..) => 4,
        // -0 too: `(-0)^-2` = +inf must not print as `-0^(-2)` = -(0^-2) (found by fuzzing).
        Expr::Num(v) if v.is_sign_negative() => 3,
        _ => 5,
    }
}

/// A printable view of an expression with names attached.
pub struct Display<'a> {
    expr: &'a Expr,
    params: &'a [String],
    vars: &'a [String],
}

impl Display<'_> {
    fn sub<'b>(&'b self, e: &'b Expr) -> Display<'b> {
        Display {
            expr: e,
            params: self.params,
            vars: self.vars,
        }
    }

    fn wrap(&self, f: &mut fmt::Formatter<'_>, e: &Expr, paren: bool) -> fmt::Result {
        if paren {
            write!(f, "({})", self.sub(e))
        } else {
            write!(f, "{}", self.sub(e))
        }
    }
}

impl fmt::Display for Display<'_> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self.expr {
            Expr::Num(v) => {
                let a = v.abs();
                if *v == std::f64::consts::PI {
                    write!(f, "pi")
                } else if a >= 1e16 || (a > 0.0 && a < 1e-5) {
                    // Shortest round-trip digits with an exponent: `1e308`, not 309 digits.
                    write!(f, "{:e}", v)
                } else {
                    write!(f, "{}", v)
                }
            }
            Expr::Var(i) => match self.vars.get(*i) {
                Some(n) => write!(f, "{}", n),
                None => write!(f, "x{}", i),
            },
            Expr::Param(i) => match self.params.get(*i) {
                Some(n) => write!(f, "{}", n),
                None => write!(f, "p{}", i),
            },
            Expr::Neg(a) => {
                write!(f, "-")?;
                self.wrap(f, a, precedence(a) <= 3)
            }
            Expr::Call(g, a) => write!(f, "{}({})", g.name(), self.sub(a)),
            Expr::Bin(op, a, b) => {
                let p = precedence(self.expr);
                let (lp, rp) = match op {
                    // A right operand of the same precedence keeps its parentheses,
                    // `a + (b + c)` included: floating-point sums do not regroup
                    // exactly, so the printed form must read back as the same tree
                    // (found by fuzzing).
                    BinOp::Add | BinOp::Sub | BinOp::Mul | BinOp::Div => {
                        (precedence(a) < p, precedence(b) <= p)
                    }
                    BinOp::Pow => (precedence(a) <= p, precedence(b) < p),
                };
                self.wrap(f, a, lp)?;
                match op {
                    BinOp::Add | BinOp::Sub => write!(f, " {} ", op.symbol())?,
                    _ => write!(f, "{}", op.symbol())?,
                }
                self.wrap(f, b, rp)
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use crate::symbolic::parse::parse_formula;

    /// Parses, prints with the parsed names, and returns the printed text.
    fn shown(text: &str) -> String {
        let p = parse_formula(text).unwrap();
        p.rhs.display(&p.names, &[]).to_string()
    }

    /// Printed forms read back as the same tree (regressions found by fuzzing).
    #[test]
    fn printing_reads_back_as_the_same_tree() {
        // Right-nested sums keep their grouping: (a+b)+c and a+(b+c) round differently.
        assert_eq!(shown("a+(b+c)"), "a + (b + c)");
        assert_eq!(shown("a+(b-c)"), "a + (b - c)");
        assert_eq!(shown("a+b+c"), "a + b + c");
        assert_eq!(shown("a + -b"), "a + -b");
        // Negative zero as a base: (-0)^-2 = +inf, -(0^-2) = -inf.
        assert_eq!(shown("(-0)^-2"), "(-0)^(-2)");
        let p = parse_formula(&shown("(-0)^-2")).unwrap();
        assert_eq!(p.rhs.eval(&[], &[]), f64::INFINITY);
        // Extreme magnitudes print with an exponent and read back exactly.
        assert_eq!(shown("1e308*a"), "1e308*a");
        assert_eq!(shown("2.5e-300*a"), "2.5e-300*a");
        assert_eq!(shown("0.001*a + 123456"), "0.001*a + 123456");
        for t in [
            "a+(b+c)",
            "(-0)^-2*a",
            "1.7976931348623157e308*a",
            "5e-324*a",
        ] {
            let p = parse_formula(t).unwrap();
            let q = parse_formula(&p.rhs.display(&p.names, &[]).to_string()).unwrap();
            assert_eq!(p.rhs, q.rhs, "{t}");
        }
    }
}
