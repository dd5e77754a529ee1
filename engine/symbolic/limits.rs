//! Limits and leading-order behaviour of a model as one variable tends to 0⁺,
//! +∞ or −∞ (other variables held finite), with case splits on the signs of
//! parameter expressions. Plateaus, intercepts, initial slopes and straight
//! segments in the data are matched against these (design note §4).
//!
//! Method: asymptotic expansion by recursive rules on the tree (e.g. de Bruijn,
//! *Asymptotic Methods in Analysis*, 1958, ch. 1): every subexpression gets a
//! leading form `c·t^p·(log t)^m·exp(P(t))` (t = x, or t = −x at −∞; at 0⁺ the
//! polynomial P is in 1/t). Sums keep the dominant term (the order of the
//! components, exp > power > log > const, comes from `rules/limits.yaml`), products
//! multiply forms, functions follow the YAML behaviour table. At 0⁺ an analytic
//! model gets its first-order expansion value + slope·x instead (forward-mode
//! series using the YAML derivatives). Soundness over reach: cancellation of
//! leading terms, or any case without a rule, gives `Unknown`. Generic case:
//! leading coefficients are assumed non-zero.

use super::algebra::{self, ser_expr};
use super::expr::{BinOp, Expr, Func};
use super::model::Model;
use super::poly::{self, Atom};
use crate::rules::{rules, Behaviour, Component, LimitRules};
use serde::Serialize;

/// More cases than this collapse to one `Unknown` case.
pub const MAX_CASES: usize = 32;

/// Where the variable goes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Direction {
    /// x → 0⁺.
    ZeroPlus,
    /// x → +∞.
    PosInf,
    /// x → −∞.
    NegInf,
}

/// A sign assumption `expr > 0` (positive) or `expr < 0`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Condition {
    /// The expression whose sign is assumed.
    #[serde(serialize_with = "ser_expr")]
    pub expr: Expr,
    /// True for `> 0`, false for `< 0`.
    pub positive: bool,
}

impl Condition {
    /// Text with the model's names, e.g. `k > 0`.
    pub fn text(&self, m: &Model) -> String {
        let op = if self.positive { ">" } else { "<" };
        format!("{} {} 0", self.expr.display(&m.params, &m.vars), op)
    }

    /// True when the condition holds at these parameter values (and variables).
    pub fn holds(&self, params: &[f64], vars: &[f64]) -> bool {
        let v = self.expr.eval(params, vars);
        if self.positive {
            v > 0.0
        } else {
            v < 0.0
        }
    }
}

/// Leading-order behaviour. At −∞, `power` and `Log` refer to |x| and `rate`
/// multiplies x itself.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "snake_case", tag = "kind")]
pub enum Leading {
    /// f → value (non-zero generic constant).
    Const {
        #[serde(serialize_with = "ser_expr")]
        value: Expr,
    },
    /// f ≈ value + slope·x (first-order expansion at 0⁺).
    Linear {
        #[serde(serialize_with = "ser_expr")]
        value: Expr,
        #[serde(serialize_with = "ser_expr")]
        slope: Expr,
    },
    /// f ~ coef·x^exponent.
    Power {
        #[serde(serialize_with = "ser_expr")]
        coef: Expr,
        #[serde(serialize_with = "ser_expr")]
        exponent: Expr,
    },
    /// f ~ coef·x^power·exp(rate·x) (at ±∞).
    Exponential {
        #[serde(serialize_with = "ser_expr")]
        coef: Expr,
        #[serde(serialize_with = "ser_expr")]
        power: Expr,
        #[serde(serialize_with = "ser_expr")]
        rate: Expr,
    },
    /// f ~ coef·x^power·exp(rate/x) (at 0⁺).
    ExponentialInverse {
        #[serde(serialize_with = "ser_expr")]
        coef: Expr,
        #[serde(serialize_with = "ser_expr")]
        power: Expr,
        #[serde(serialize_with = "ser_expr")]
        rate: Expr,
    },
    /// f ~ coef·log x.
    Log {
        #[serde(serialize_with = "ser_expr")]
        coef: Expr,
    },
    /// f → 0 faster than any power.
    Zero,
    /// f → ±∞ faster than any power (sign 0 = unknown).
    Infinite { sign: i8 },
    /// f stays bounded and oscillates.
    Oscillating,
    /// No sound statement.
    Unknown,
}

/// The limit value.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "snake_case", tag = "kind")]
pub enum Limit {
    /// A finite value (0 included).
    Finite {
        #[serde(serialize_with = "ser_expr")]
        value: Expr,
    },
    /// +∞.
    PosInf,
    /// −∞.
    NegInf,
    /// No limit: bounded oscillation.
    Oscillating,
    /// Not determined.
    Unknown,
}

/// One case: under `conditions`, the model behaves as `leading` and tends to `limit`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LimitCase {
    /// Sign assumptions of this case (empty: unconditional).
    pub conditions: Vec<Condition>,
    /// Leading-order form.
    pub leading: Leading,
    /// Limit value.
    pub limit: Limit,
}

/// All cases for one variable and direction.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct VarLimits {
    /// Variable index.
    pub var: usize,
    /// Direction.
    pub direction: Direction,
    /// Cases (their conditions partition the generic parameter space).
    pub cases: Vec<LimitCase>,
}

/// Limits of the model's right side for every variable and direction.
pub fn limits(model: &Model) -> Vec<VarLimits> {
    let mut out = Vec::new();
    for v in 0..model.vars.len() {
        for d in [Direction::ZeroPlus, Direction::PosInf, Direction::NegInf] {
            out.push(VarLimits {
                var: v,
                direction: d,
                cases: limit_cases(&model.rhs, v, d),
            });
        }
    }
    out
}

/// Limit cases of `f` as variable `var` goes in direction `dir`.
pub fn limit_cases(f: &Expr, var: usize, dir: Direction) -> Vec<LimitCase> {
    let cx = Ctx {
        v: var,
        dir,
        rules: &rules().limits,
    };
    if dir == Direction::ZeroPlus {
        if let Some((v0, v1)) = cx.taylor(f) {
            let (value, slope) = (algebra::tidy(&v0), algebra::tidy(&v1));
            let leading = if algebra::is_zero(&slope) {
                Leading::Const {
                    value: value.clone(),
                }
            } else {
                Leading::Linear {
                    value: value.clone(),
                    slope,
                }
            };
            return vec![LimitCase {
                conditions: Vec::new(),
                leading,
                limit: Limit::Finite { value },
            }];
        }
    }
    let mut out = Vec::new();
    for (asm, a) in cx.an(f, &Vec::new()) {
        for (asm2, case) in cx.finish(&asm, &a) {
            let conditions = asm2
                .into_iter()
                .map(|(expr, s)| Condition {
                    expr,
                    positive: s > 0,
                })
                .collect();
            out.push(LimitCase {
                conditions,
                leading: case.0,
                limit: case.1,
            });
        }
    }
    if out.len() > MAX_CASES || out.is_empty() {
        return vec![LimitCase {
            conditions: Vec::new(),
            leading: Leading::Unknown,
            limit: Limit::Unknown,
        }];
    }
    out
}

/// Sign assumptions: expressions with their sign (±1).
type Asm = Vec<(Expr, i8)>;

/// `coef · t^power · (log t)^logp · exp(Σ_k expo[k-1]·t^(±k))`.
#[derive(Debug, Clone)]
struct Form {
    coef: Expr,
    power: Expr,
    logp: i32,
    expo: Vec<Expr>,
}

impl Form {
    fn constant(c: Expr) -> Form {
        Form {
            coef: c,
            power: Expr::Num(0.0),
            logp: 0,
            expo: Vec::new(),
        }
    }
    fn combine(&self, o: &Form, s: f64) -> Form {
        let n = self.expo.len().max(o.expo.len());
        let get = |f: &Form, k: usize| f.expo.get(k).cloned().unwrap_or(Expr::Num(0.0));
        let expo = (0..n)
            .map(|k| {
                let b = get(o, k);
                algebra::tidy(&if s > 0.0 {
                    algebra::add(get(self, k), b)
                } else {
                    algebra::sub(get(self, k), b)
                })
            })
            .collect();
        Form {
            coef: algebra::tidy(&if s > 0.0 {
                algebra::mul(self.coef.clone(), o.coef.clone())
            } else {
                algebra::div(self.coef.clone(), o.coef.clone())
            }),
            power: algebra::tidy(&if s > 0.0 {
                algebra::add(self.power.clone(), o.power.clone())
            } else {
                algebra::sub(self.power.clone(), o.power.clone())
            }),
            logp: if s > 0.0 {
                self.logp + o.logp
            } else {
                self.logp - o.logp
            },
            expo,
        }
    }
    fn scale(&self, k: Expr) -> Form {
        Form {
            coef: algebra::tidy(&algebra::mul(k, self.coef.clone())),
            ..self.clone()
        }
    }
    fn has_exp(&self) -> bool {
        self.expo.iter().any(|e| !algebra::is_zero(e))
    }
}

#[derive(Debug, Clone)]
enum Asy {
    Form(Form),
    /// → 0 faster than any power.
    Vanish,
    /// → ±∞ faster than any power (0: sign unknown).
    Blow(i8),
    /// Bounded, oscillating.
    Bounded,
    Unknown,
}

enum Sg {
    Known(i8),
    Split(Expr),
    Unknown,
}

enum Tend {
    Inf(i8),
    Zero,
    Const(Expr),
}

struct Ctx<'a> {
    v: usize,
    dir: Direction,
    rules: &'a LimitRules,
}

type Cases<T> = Vec<(Asm, T)>;

impl Ctx<'_> {
    // ------------------------------------------------------------ signs

    fn sign(&self, e: &Expr, asm: &Asm) -> Sg {
        if !e.has_any_param() && !e.has_any_var() {
            let v = e.eval(&[], &[]);
            return if v.is_nan() {
                Sg::Unknown
            } else {
                Sg::Known(sgn(v))
            };
        }
        let k = algebra::key(e);
        for (a, s) in asm {
            if algebra::key(a) == k {
                return Sg::Known(*s);
            }
            if algebra::key(&algebra::neg(a.clone())) == k {
                return Sg::Known(-*s);
            }
        }
        let both = |a: &Expr, b: &Expr| match self.sign(a, asm) {
            Sg::Known(x) => match self.sign(b, asm) {
                Sg::Known(y) => Sg::Known(x * y),
                o => o,
            },
            o => o,
        };
        match e {
            Expr::Neg(a) => match self.sign(a, asm) {
                Sg::Known(x) => Sg::Known(-x),
                o => o,
            },
            Expr::Bin(BinOp::Mul | BinOp::Div, a, b) => both(a, b),
            Expr::Call(Func::Exp | Func::Sqrt | Func::Cosh | Func::Abs, _) => Sg::Known(1),
            Expr::Bin(BinOp::Pow, a, b) => match **b {
                Expr::Num(n) if n.fract() == 0.0 && (n as i64) % 2 == 0 => Sg::Known(1),
                Expr::Num(n) if n.fract() == 0.0 => self.sign(a, asm),
                _ => match self.sign(a, asm) {
                    Sg::Known(1) => Sg::Known(1),
                    Sg::Known(_) => Sg::Unknown,
                    o => o,
                },
            },
            _ if algebra::is_zero(e) => Sg::Known(0),
            _ => Sg::Split(e.clone()),
        }
    }

    /// Runs `f` with the sign of `e` known, splitting into cases as needed.
    fn fork<T>(&self, asm: &Asm, e: &Expr, f: &dyn Fn(&Asm, i8) -> Cases<T>) -> Cases<T> {
        match self.sign(e, asm) {
            Sg::Known(s) => f(asm, s),
            Sg::Unknown => Vec::new(),
            Sg::Split(atom) => {
                let mut out = Vec::new();
                for s in [1i8, -1] {
                    let mut a2 = asm.clone();
                    a2.push((atom.clone(), s));
                    out.extend(self.fork(&a2, e, f));
                    if out.len() > MAX_CASES {
                        return Vec::new();
                    }
                }
                out
            }
        }
    }

    // ------------------------------------------------------------ analysis

    /// Asymptotic cases of `e`; too many cases collapse to one `Unknown`.
    fn an(&self, e: &Expr, asm: &Asm) -> Cases<Asy> {
        let out = self.an_inner(e, asm);
        if out.len() > MAX_CASES {
            return vec![(asm.clone(), Asy::Unknown)];
        }
        out
    }

    fn an_inner(&self, e: &Expr, asm: &Asm) -> Cases<Asy> {
        let one = |a: Asy| vec![(asm.clone(), a)];
        if !e.has_var(self.v) {
            return one(Asy::Form(Form::constant(e.clone())));
        }
        match e {
            Expr::Var(_) => {
                let c = if self.dir == Direction::NegInf {
                    -1.0
                } else {
                    1.0
                };
                one(Asy::Form(Form {
                    coef: Expr::Num(c),
                    power: Expr::Num(1.0),
                    logp: 0,
                    expo: Vec::new(),
                }))
            }
            Expr::Neg(a) => self
                .an(a, asm)
                .into_iter()
                .map(|(s, x)| (s, neg_asy(x)))
                .collect(),
            Expr::Bin(op @ (BinOp::Add | BinOp::Sub), a, b) => {
                let mut out = Vec::new();
                for (s1, x) in self.an(a, asm) {
                    for (s2, y) in self.an(b, &s1) {
                        let y = if *op == BinOp::Sub { neg_asy(y) } else { y };
                        out.extend(self.add(&s2, &x, &y));
                    }
                }
                out
            }
            Expr::Bin(op @ (BinOp::Mul | BinOp::Div), a, b) => {
                let mut out = Vec::new();
                for (s1, x) in self.an(a, asm) {
                    for (s2, y) in self.an(b, &s1) {
                        out.push((s2, mul_asy(&x, &y, *op == BinOp::Mul)));
                    }
                }
                out
            }
            Expr::Bin(BinOp::Pow, a, b) => {
                if b.has_var(self.v) {
                    let rewritten = Expr::call(
                        Func::Exp,
                        Expr::mul((**b).clone(), Expr::call(Func::Log, (**a).clone())),
                    );
                    return self.an(&rewritten, asm);
                }
                let mut out = Vec::new();
                for (s1, x) in self.an(a, asm) {
                    out.extend(self.pow_asy(&s1, &x, b));
                }
                out
            }
            Expr::Call(f, a) => {
                let mut out = Vec::new();
                for (s1, x) in self.an(a, asm) {
                    out.extend(self.call_asy(&s1, *f, &x, a));
                }
                out
            }
            _ => one(Asy::Unknown),
        }
    }

    fn add(&self, asm: &Asm, x: &Asy, y: &Asy) -> Cases<Asy> {
        let one = |a: Asy| vec![(asm.clone(), a)];
        match (x, y) {
            (Asy::Form(a), Asy::Form(b)) => {
                if algebra::is_zero(&a.coef) {
                    return one(y.clone());
                }
                if algebra::is_zero(&b.coef) {
                    return one(x.clone());
                }
                self.compare(asm, a, b)
                    .into_iter()
                    .map(|(s, o)| {
                        let r = match o {
                            std::cmp::Ordering::Greater => Asy::Form(a.clone()),
                            std::cmp::Ordering::Less => Asy::Form(b.clone()),
                            std::cmp::Ordering::Equal => {
                                let c =
                                    algebra::tidy(&algebra::add(a.coef.clone(), b.coef.clone()));
                                if algebra::is_zero(&c) {
                                    Asy::Unknown // leading terms cancel
                                } else {
                                    Asy::Form(Form {
                                        coef: c,
                                        ..a.clone()
                                    })
                                }
                            }
                        };
                        (s, r)
                    })
                    .collect()
            }
            (Asy::Form(a), Asy::Vanish) | (Asy::Vanish, Asy::Form(a)) => {
                if !a.has_exp() {
                    return one(Asy::Form(a.clone()));
                }
                let lead = leading_expo(a);
                self.fork(asm, &lead, &|s, sg| {
                    vec![(
                        s.clone(),
                        if sg > 0 {
                            Asy::Form(a.clone())
                        } else {
                            Asy::Unknown
                        },
                    )]
                })
            }
            (Asy::Form(a), Asy::Blow(s)) | (Asy::Blow(s), Asy::Form(a)) if !a.has_exp() => {
                one(Asy::Blow(*s))
            }
            (Asy::Vanish, Asy::Vanish) => one(Asy::Vanish),
            (Asy::Blow(s), Asy::Blow(t)) if s == t && *s != 0 => one(Asy::Blow(*s)),
            (Asy::Bounded, Asy::Vanish)
            | (Asy::Vanish, Asy::Bounded)
            | (Asy::Bounded, Asy::Bounded) => one(Asy::Bounded),
            (Asy::Bounded, Asy::Blow(s)) | (Asy::Blow(s), Asy::Bounded) => one(Asy::Blow(*s)),
            (Asy::Bounded, Asy::Form(a)) | (Asy::Form(a), Asy::Bounded) => self
                .tend(asm, a)
                .into_iter()
                .map(|(s, t)| {
                    let r = match t {
                        Tend::Inf(_) => Asy::Form(a.clone()),
                        _ => Asy::Bounded,
                    };
                    (s, r)
                })
                .collect(),
            _ => one(Asy::Unknown),
        }
    }

    /// Which of two forms dominates in magnitude, component by component in the
    /// YAML dominance order.
    fn compare(&self, asm: &Asm, a: &Form, b: &Form) -> Cases<std::cmp::Ordering> {
        let mut items: Vec<(Expr, bool)> = Vec::new(); // (difference, reversed)
        for c in &self.rules.dominance {
            match c {
                Component::Exp => {
                    let n = a.expo.len().max(b.expo.len());
                    for k in (0..n).rev() {
                        let get = |f: &Form| f.expo.get(k).cloned().unwrap_or(Expr::Num(0.0));
                        items.push((algebra::tidy(&algebra::sub(get(a), get(b))), false));
                    }
                }
                Component::Power => items.push((
                    algebra::tidy(&algebra::sub(a.power.clone(), b.power.clone())),
                    self.dir == Direction::ZeroPlus,
                )),
                Component::Log => items.push((Expr::Num((a.logp - b.logp) as f64), false)),
                Component::Const => {}
            }
        }
        self.cmp_items(asm, &items)
    }

    fn cmp_items(&self, asm: &Asm, items: &[(Expr, bool)]) -> Cases<std::cmp::Ordering> {
        let Some(((d, rev), rest)) = items.split_first() else {
            return vec![(asm.clone(), std::cmp::Ordering::Equal)];
        };
        if algebra::is_zero(d) {
            return self.cmp_items(asm, rest);
        }
        let rev = *rev;
        self.fork(asm, d, &|s, sg| {
            let gt = (sg > 0) != rev;
            vec![(
                s.clone(),
                if gt {
                    std::cmp::Ordering::Greater
                } else {
                    std::cmp::Ordering::Less
                },
            )]
        })
    }

    /// Where a form tends.
    fn tend(&self, asm: &Asm, a: &Form) -> Cases<Tend> {
        let mut items: Vec<(Expr, bool)> = Vec::new(); // (growth exponent, reversed)
        for c in &self.rules.dominance {
            match c {
                Component::Exp => {
                    for k in (0..a.expo.len()).rev() {
                        items.push((a.expo[k].clone(), false));
                    }
                }
                Component::Power => items.push((a.power.clone(), self.dir == Direction::ZeroPlus)),
                Component::Log => items.push((Expr::Num(a.logp as f64), false)),
                Component::Const => {}
            }
        }
        let odd_log = self.dir == Direction::ZeroPlus && a.logp % 2 != 0;
        let Some((d, rev)) = items.iter().find(|(d, _)| !algebra::is_zero(d)) else {
            return vec![(asm.clone(), Tend::Const(a.coef.clone()))];
        };
        let rev = *rev;
        let coef = a.coef.clone();
        self.fork(asm, d, &|s, sg| {
            if (sg > 0) != rev {
                self.fork(s, &coef, &|s2, cs| {
                    let cs = if odd_log { -cs } else { cs };
                    vec![(s2.clone(), Tend::Inf(cs))]
                })
            } else {
                vec![(s.clone(), Tend::Zero)]
            }
        })
    }

    fn pow_asy(&self, asm: &Asm, x: &Asy, b: &Expr) -> Cases<Asy> {
        match x {
            Asy::Form(a) => self.pow_form(asm, a, b),
            Asy::Vanish | Asy::Blow(_) => {
                let x = x.clone();
                self.fork(asm, b, &|s, sg| {
                    let r = match (&x, sg) {
                        (Asy::Vanish, 1) => Asy::Vanish,
                        (Asy::Vanish, -1) => Asy::Blow(1),
                        (Asy::Blow(_), -1) => Asy::Vanish,
                        (Asy::Blow(t), 1) if *t > 0 => Asy::Blow(1),
                        _ => Asy::Unknown,
                    };
                    vec![(s.clone(), r)]
                })
            }
            _ => vec![(asm.clone(), Asy::Unknown)],
        }
    }

    fn pow_form(&self, asm: &Asm, a: &Form, b: &Expr) -> Cases<Asy> {
        let integer = matches!(b, Expr::Num(n) if n.fract() == 0.0);
        if a.logp != 0 && !integer {
            return vec![(asm.clone(), Asy::Unknown)];
        }
        let mk = |f: &Form| {
            let logp = match b {
                Expr::Num(n) => (f.logp as f64 * n) as i32,
                _ => 0,
            };
            Asy::Form(Form {
                coef: algebra::tidy(&algebra::pow(f.coef.clone(), b.clone())),
                power: algebra::tidy(&algebra::mul(f.power.clone(), b.clone())),
                logp,
                expo: f
                    .expo
                    .iter()
                    .map(|e| algebra::tidy(&algebra::mul(e.clone(), b.clone())))
                    .collect(),
            })
        };
        if integer {
            return vec![(asm.clone(), mk(a))];
        }
        // a fractional power needs a positive base
        let a2 = a.clone();
        self.fork(asm, &a.coef, &|s, sg| {
            vec![(s.clone(), if sg > 0 { mk(&a2) } else { Asy::Unknown })]
        })
    }

    fn call_asy(&self, asm: &Asm, f: Func, x: &Asy, arg: &Expr) -> Cases<Asy> {
        let Some(rule) = self.rules.function(f) else {
            return vec![(asm.clone(), Asy::Unknown)];
        };
        let one = |a: Asy| vec![(asm.clone(), a)];
        match x {
            Asy::Form(a) => {
                // exp-like rules (same at ±∞) hold whatever the argument does, when
                // the argument is a Laurent polynomial in x: no case split needed
                if let (Behaviour::ExpOfArg { scale, sign }, true) =
                    (&rule.pos_inf, rule.pos_inf == rule.neg_inf)
                {
                    if let Some(f) = self.exp_form(arg, *sign) {
                        return one(Asy::Form(f.scale(Expr::Num(*scale))));
                    }
                }
                let mut out = Vec::new();
                for (s, t) in self.tend(asm, a) {
                    match t {
                        Tend::Const(l) => {
                            let v = algebra::tidy(&algebra::call(f, l));
                            let r = if algebra::is_zero(&v) {
                                Asy::Unknown // f(L) = 0: the next order decides
                            } else {
                                Asy::Form(Form::constant(v))
                            };
                            out.push((s, r));
                        }
                        Tend::Zero => out.extend(self.behave(&s, &rule.zero, a, arg, 0)),
                        Tend::Inf(sg) if sg > 0 => {
                            out.extend(self.behave(&s, &rule.pos_inf, a, arg, 1))
                        }
                        Tend::Inf(sg) if sg < 0 => {
                            out.extend(self.behave(&s, &rule.neg_inf, a, arg, -1))
                        }
                        Tend::Inf(_) => out.push((s, Asy::Unknown)),
                    }
                }
                out
            }
            Asy::Vanish => one(match &rule.zero {
                Behaviour::Value(c) => Asy::Form(Form::constant(c.clone())),
                Behaviour::LikeArg(_) => Asy::Vanish,
                Behaviour::Power(q) if *q > 0.0 => Asy::Vanish,
                _ => Asy::Unknown,
            }),
            Asy::Blow(s) if *s != 0 => {
                let b = if *s > 0 { &rule.pos_inf } else { &rule.neg_inf };
                one(match b {
                    Behaviour::Value(c) => Asy::Form(Form::constant(c.clone())),
                    Behaviour::LikeArg(k) => Asy::Blow(*s * sgn(*k)),
                    Behaviour::ExpOfArg { scale, sign } => {
                        if sign * (*s as f64) > 0.0 {
                            Asy::Blow(sgn(*scale))
                        } else {
                            Asy::Vanish
                        }
                    }
                    Behaviour::Power(q) if *q > 0.0 && *s > 0 => Asy::Blow(1),
                    Behaviour::Bounded => Asy::Bounded,
                    _ => Asy::Unknown,
                })
            }
            Asy::Bounded => one(match rule.bounded_arg {
                Behaviour::Bounded => Asy::Bounded,
                _ => Asy::Unknown,
            }),
            _ => one(Asy::Unknown),
        }
    }

    /// Applies a YAML behaviour to an argument form `a` (expression `arg`).
    fn behave(&self, asm: &Asm, b: &Behaviour, a: &Form, arg: &Expr, _towards: i8) -> Cases<Asy> {
        let one = |x: Asy| vec![(asm.clone(), x)];
        match b {
            Behaviour::Value(c) => one(Asy::Form(Form::constant(c.clone()))),
            Behaviour::LikeArg(k) => one(Asy::Form(a.scale(Expr::Num(*k)))),
            Behaviour::Power(q) => self.pow_form(asm, a, &Expr::Num(*q)),
            Behaviour::LogOfArg(k) => one(match self.log_form(a) {
                Some(f) => Asy::Form(f.scale(Expr::Num(*k))),
                None => Asy::Unknown,
            }),
            Behaviour::ExpOfArg { scale, sign } => one(match self.exp_form(arg, *sign) {
                Some(f) => Asy::Form(f.scale(Expr::Num(*scale))),
                None => Asy::Unknown,
            }),
            Behaviour::Bounded => one(Asy::Bounded),
            Behaviour::Unknown => one(Asy::Unknown),
        }
    }

    /// exp(sign·u) as a form, from u expanded as a (Laurent) polynomial in the variable.
    fn exp_form(&self, u: &Expr, sign: f64) -> Option<Form> {
        let p = poly::expand(&algebra::mul(Expr::Num(sign), u.clone()));
        let v = self.v;
        let groups = p.group_by(&|a: &Atom| matches!(a, Atom::Var(i) if *i == v));
        let mut c0 = Expr::Num(0.0);
        let mut expo: Vec<Expr> = Vec::new();
        for (m, c) in groups {
            let ce = c.to_expr();
            if ce.has_var(v) {
                return None; // not polynomial in the variable
            }
            let k = m.values().map(|(_, e)| *e).sum::<i32>();
            let (deg, coef) = match self.dir {
                Direction::PosInf => (k, ce),
                Direction::NegInf => (k, if k % 2 != 0 { algebra::neg(ce) } else { ce }),
                Direction::ZeroPlus => (-k, ce),
            };
            if deg == 0 {
                c0 = ce_add(c0, coef);
            } else if deg > 0 {
                let d = deg as usize;
                if expo.len() < d {
                    expo.resize(d, Expr::Num(0.0));
                }
                expo[d - 1] = algebra::tidy(&coef);
            }
        }
        Some(Form {
            coef: algebra::tidy(&algebra::call(Func::Exp, c0)),
            power: Expr::Num(0.0),
            logp: 0,
            expo,
        })
    }

    /// log of a form: the exponent's leading term, else power·log t, else log of the coefficient.
    fn log_form(&self, a: &Form) -> Option<Form> {
        if let Some(k) = (0..a.expo.len())
            .rev()
            .find(|&k| !algebra::is_zero(&a.expo[k]))
        {
            let deg = (k + 1) as f64;
            let p = if self.dir == Direction::ZeroPlus {
                -deg
            } else {
                deg
            };
            return Some(Form {
                coef: a.expo[k].clone(),
                power: Expr::Num(p),
                logp: 0,
                expo: Vec::new(),
            });
        }
        if !algebra::is_zero(&a.power) {
            return Some(Form {
                coef: a.power.clone(),
                power: Expr::Num(0.0),
                logp: 1,
                expo: Vec::new(),
            });
        }
        if a.logp != 0 {
            return None;
        }
        let v = algebra::tidy(&algebra::call(Func::Log, a.coef.clone()));
        if algebra::is_zero(&v) {
            None
        } else {
            Some(Form::constant(v))
        }
    }

    // ------------------------------------------------------------ results

    fn finish(&self, asm: &Asm, x: &Asy) -> Cases<(Leading, Limit)> {
        let one = |l: Leading, m: Limit| vec![(asm.clone(), (l, m))];
        match x {
            Asy::Form(a) => {
                let leading = self.form_leading(a);
                self.tend(asm, a)
                    .into_iter()
                    .map(|(s, t)| {
                        let lim = match t {
                            Tend::Const(v) => Limit::Finite { value: v },
                            Tend::Zero => Limit::Finite {
                                value: Expr::Num(0.0),
                            },
                            Tend::Inf(1) => Limit::PosInf,
                            Tend::Inf(-1) => Limit::NegInf,
                            Tend::Inf(_) => Limit::Unknown,
                        };
                        (s, (leading.clone(), lim))
                    })
                    .collect()
            }
            Asy::Vanish => one(
                Leading::Zero,
                Limit::Finite {
                    value: Expr::Num(0.0),
                },
            ),
            Asy::Blow(s) => one(
                Leading::Infinite { sign: *s },
                match s {
                    1 => Limit::PosInf,
                    -1 => Limit::NegInf,
                    _ => Limit::Unknown,
                },
            ),
            Asy::Bounded => one(Leading::Oscillating, Limit::Oscillating),
            Asy::Unknown => one(Leading::Unknown, Limit::Unknown),
        }
    }

    fn form_leading(&self, a: &Form) -> Leading {
        let nz: Vec<usize> = (0..a.expo.len())
            .filter(|&k| !algebra::is_zero(&a.expo[k]))
            .collect();
        if !nz.is_empty() {
            if nz != [0] || a.logp != 0 {
                return Leading::Unknown;
            }
            let rate = a.expo[0].clone();
            return match self.dir {
                Direction::PosInf => Leading::Exponential {
                    coef: a.coef.clone(),
                    power: a.power.clone(),
                    rate,
                },
                Direction::NegInf => Leading::Exponential {
                    coef: a.coef.clone(),
                    power: a.power.clone(),
                    rate: algebra::tidy(&algebra::neg(rate)),
                },
                Direction::ZeroPlus => Leading::ExponentialInverse {
                    coef: a.coef.clone(),
                    power: a.power.clone(),
                    rate,
                },
            };
        }
        let flat = algebra::is_zero(&a.power);
        match (flat, a.logp) {
            (true, 0) if algebra::is_zero(&a.coef) => Leading::Zero,
            (true, 0) => Leading::Const {
                value: a.coef.clone(),
            },
            (false, 0) => Leading::Power {
                coef: a.coef.clone(),
                exponent: a.power.clone(),
            },
            (true, 1) => Leading::Log {
                coef: a.coef.clone(),
            },
            _ => Leading::Unknown,
        }
    }

    // ------------------------------------------------------------ first-order expansion at 0

    /// (f(0), f'(0)) when every node is regular at x = 0 (forward-mode series).
    fn taylor(&self, e: &Expr) -> Option<(Expr, Expr)> {
        let v = self.v;
        if !e.has_var(v) {
            return Some((e.clone(), Expr::Num(0.0)));
        }
        Some(match e {
            Expr::Var(_) => (Expr::Num(0.0), Expr::Num(1.0)),
            Expr::Neg(a) => {
                let (a0, a1) = self.taylor(a)?;
                (algebra::neg(a0), algebra::neg(a1))
            }
            Expr::Bin(op, a, b) => {
                let (a0, a1) = self.taylor(a)?;
                let (b0, b1) = self.taylor(b)?;
                match op {
                    BinOp::Add => (algebra::add(a0, b0), algebra::add(a1, b1)),
                    BinOp::Sub => (algebra::sub(a0, b0), algebra::sub(a1, b1)),
                    BinOp::Mul => (
                        algebra::mul(a0.clone(), b0.clone()),
                        algebra::add(algebra::mul(a0, b1), algebra::mul(a1, b0)),
                    ),
                    BinOp::Div => {
                        if algebra::is_zero(&algebra::tidy(&b0)) {
                            return None;
                        }
                        let q = algebra::div(a0.clone(), b0.clone());
                        let d = algebra::div(
                            algebra::sub(algebra::mul(a1, b0.clone()), algebra::mul(a0, b1)),
                            algebra::pow(b0, Expr::Num(2.0)),
                        );
                        (q, d)
                    }
                    BinOp::Pow => {
                        if b.has_var(v) {
                            if algebra::is_zero(&algebra::tidy(&a0)) {
                                return None;
                            }
                            let r = Expr::call(
                                Func::Exp,
                                Expr::mul((**b).clone(), Expr::call(Func::Log, (**a).clone())),
                            );
                            return self.taylor(&r);
                        }
                        let natural = matches!(**b, Expr::Num(n) if n.fract() == 0.0 && n >= 0.0);
                        if !natural && algebra::is_zero(&algebra::tidy(&a0)) {
                            return None;
                        }
                        let k = (**b).clone();
                        (
                            algebra::pow(a0.clone(), k.clone()),
                            algebra::mul(
                                algebra::mul(
                                    k.clone(),
                                    algebra::pow(a0, algebra::sub(k, Expr::Num(1.0))),
                                ),
                                a1,
                            ),
                        )
                    }
                }
            }
            Expr::Call(f, a) => {
                let (a0, a1) = self.taylor(a)?;
                let a0t = algebra::tidy(&a0);
                if matches!(f, Func::Log | Func::Log10 | Func::Sqrt | Func::Abs)
                    && algebra::is_zero(&a0t)
                {
                    return None;
                }
                let rule = self.rules.function(*f)?;
                let d = rule.derivative.subst_param(0, &a0t);
                (algebra::call(*f, a0t), algebra::mul(d, a1))
            }
            _ => return None,
        })
    }
}

fn ce_add(a: Expr, b: Expr) -> Expr {
    algebra::add(a, b)
}

fn sgn(v: f64) -> i8 {
    if v > 0.0 {
        1
    } else if v < 0.0 {
        -1
    } else {
        0
    }
}

fn leading_expo(a: &Form) -> Expr {
    (0..a.expo.len())
        .rev()
        .map(|k| a.expo[k].clone())
        .find(|e| !algebra::is_zero(e))
        .unwrap_or(Expr::Num(0.0))
}

/// A non-zero constant form (no growth or decay).
fn is_const_form(a: &Form) -> bool {
    !a.has_exp() && a.logp == 0 && algebra::is_zero(&a.power) && !algebra::is_zero(&a.coef)
}

fn neg_asy(x: Asy) -> Asy {
    match x {
        Asy::Form(a) => Asy::Form(a.scale(Expr::Num(-1.0))),
        Asy::Blow(s) => Asy::Blow(-s),
        o => o,
    }
}

fn mul_asy(x: &Asy, y: &Asy, multiply: bool) -> Asy {
    match (x, y, multiply) {
        (Asy::Form(a), Asy::Form(b), m) => Asy::Form(a.combine(b, if m { 1.0 } else { -1.0 })),
        (Asy::Vanish, Asy::Form(a), true) | (Asy::Form(a), Asy::Vanish, true) if !a.has_exp() => {
            Asy::Vanish
        }
        (Asy::Vanish, Asy::Form(a), false) if !a.has_exp() => Asy::Vanish,
        (Asy::Form(a), Asy::Blow(_), false) if !a.has_exp() => Asy::Vanish,
        (Asy::Form(a), Asy::Vanish, false) if !a.has_exp() => Asy::Blow(0),
        (Asy::Blow(_), Asy::Form(a), _) | (Asy::Form(a), Asy::Blow(_), true) if !a.has_exp() => {
            Asy::Blow(0)
        }
        (Asy::Form(a), Asy::Bounded, _) | (Asy::Bounded, Asy::Form(a), _) if is_const_form(a) => {
            Asy::Bounded
        }
        (Asy::Bounded, Asy::Bounded, true) => Asy::Bounded,
        (Asy::Vanish, Asy::Vanish, true) => Asy::Vanish,
        (Asy::Blow(s), Asy::Blow(t), true) => Asy::Blow(s * t),
        _ => Asy::Unknown,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn model(s: &str) -> Model {
        let cols = vec!["x".to_string(), "y".to_string()];
        Model::new(s, &cols, None).unwrap()
    }

    /// The case whose conditions hold at `ps`.
    fn case_at(m: &Model, dir: Direction, ps: &[f64]) -> LimitCase {
        let cases = limit_cases(&m.rhs, 0, dir);
        let hits: Vec<&LimitCase> = cases
            .iter()
            .filter(|c| c.conditions.iter().all(|k| k.holds(ps, &[])))
            .collect();
        assert_eq!(hits.len(), 1, "cases {:?}", cases);
        hits[0].clone()
    }

    fn finite(c: &LimitCase, ps: &[f64]) -> f64 {
        match &c.limit {
            Limit::Finite { value } => value.eval(ps, &[]),
            other => panic!("not finite: {:?}", other),
        }
    }

    #[test]
    fn decaying_and_growing_exponential() {
        let m = model("exp(-k*x)");
        let c = case_at(&m, Direction::PosInf, &[0.5]);
        assert_eq!(finite(&c, &[0.5]), 0.0);
        match &c.leading {
            Leading::Exponential { rate, coef, .. } => {
                assert_eq!(rate.eval(&[0.5], &[]), -0.5);
                assert_eq!(coef.eval(&[0.5], &[]), 1.0);
            }
            l => panic!("{:?}", l),
        }
        let c = case_at(&m, Direction::PosInf, &[-0.5]);
        assert_eq!(c.limit, Limit::PosInf);
        // at -inf the roles swap
        let c = case_at(&m, Direction::NegInf, &[0.5]);
        assert_eq!(c.limit, Limit::PosInf);
    }

    #[test]
    fn saturation_plateau_and_initial_slope() {
        let m = model("a*(1-exp(-k*x))");
        let ps = [3.0, 0.4];
        let c = case_at(&m, Direction::PosInf, &ps);
        assert_eq!(finite(&c, &ps), 3.0);
        let c = case_at(&m, Direction::ZeroPlus, &ps);
        assert_eq!(finite(&c, &ps), 0.0);
        match &c.leading {
            Leading::Linear { slope, .. } => assert!((slope.eval(&ps, &[]) - 1.2).abs() < 1e-12),
            l => panic!("{:?}", l),
        }
        // k < 0, a > 0: a(1 - e^{|k|x}) falls without bound
        let c = case_at(&m, Direction::PosInf, &[3.0, -0.4]);
        assert_eq!(c.limit, Limit::NegInf);
    }

    #[test]
    fn power_law_at_zero() {
        let m = model("b*x^c");
        assert_eq!(
            finite(&case_at(&m, Direction::ZeroPlus, &[2.0, 0.5]), &[2.0, 0.5]),
            0.0
        );
        assert_eq!(
            case_at(&m, Direction::ZeroPlus, &[2.0, -0.5]).limit,
            Limit::PosInf
        );
        assert_eq!(
            case_at(&m, Direction::ZeroPlus, &[-2.0, -0.5]).limit,
            Limit::NegInf
        );
        match case_at(&m, Direction::PosInf, &[2.0, 0.5]).leading {
            Leading::Power { coef, exponent } => {
                assert_eq!(coef.eval(&[2.0, 0.5], &[]), 2.0);
                assert_eq!(exponent.eval(&[2.0, 0.5], &[]), 0.5);
            }
            l => panic!("{:?}", l),
        }
    }

    #[test]
    fn rational_tends_to_ratio_of_leading_coefficients() {
        let m = model("(b1 + b2*x + b3*x^2)/(1 + b4*x + b5*x^2)");
        let ps = [1.0, 2.0, 3.0, 4.0, 5.0];
        assert!((finite(&case_at(&m, Direction::PosInf, &ps), &ps) - 0.6).abs() < 1e-12);
        assert!((finite(&case_at(&m, Direction::NegInf, &ps), &ps) - 0.6).abs() < 1e-12);
        // at 0: value b1, slope b2 - b1 b4
        match case_at(&m, Direction::ZeroPlus, &ps).leading {
            Leading::Linear { value, slope } => {
                assert_eq!(value.eval(&ps, &[]), 1.0);
                assert!((slope.eval(&ps, &[]) - (2.0 - 4.0)).abs() < 1e-12);
            }
            l => panic!("{:?}", l),
        }
    }

    #[test]
    fn arctangent_limits() {
        let m = model("atan(x/w)");
        assert!(
            (finite(&case_at(&m, Direction::PosInf, &[2.0]), &[2.0]) - std::f64::consts::FRAC_PI_2)
                .abs()
                < 1e-15
        );
        assert!(
            (finite(&case_at(&m, Direction::PosInf, &[-2.0]), &[-2.0])
                + std::f64::consts::FRAC_PI_2)
                .abs()
                < 1e-15
        );
        assert!(
            (finite(&case_at(&m, Direction::NegInf, &[2.0]), &[2.0]) + std::f64::consts::FRAC_PI_2)
                .abs()
                < 1e-15
        );
        // b1 - b2*x - atan(b3/(x-b4))/pi at +inf: -inf for b2 > 0 (line dominates)
        let m = model("b1 - b2*x - atan(b3/(x-b4))/pi");
        assert_eq!(
            case_at(&m, Direction::PosInf, &[1.0, 2.0, 1.0, 1.0]).limit,
            Limit::NegInf
        );
    }

    #[test]
    fn gaussian_vanishes_and_oscillation_has_no_limit() {
        let m = model("a*exp(-((x-c)/w)^2)");
        let ps = [2.0, 1.0, 0.5];
        assert_eq!(finite(&case_at(&m, Direction::PosInf, &ps), &ps), 0.0);
        let m = model("a + b*cos(2*pi*x/p)");
        let c = case_at(&m, Direction::PosInf, &[1.0, 1.0, 12.0]);
        assert_eq!(c.limit, Limit::Oscillating);
    }

    #[test]
    fn cancellation_is_unknown_not_wrong() {
        // x*log(1 + b/x) → b, which needs the next order: must not claim 0
        let m = model("x*log(1 + b/x)");
        for c in limit_cases(&m.rhs, 0, Direction::PosInf) {
            assert_eq!(c.limit, Limit::Unknown);
        }
        let m = model("(x + b) - x");
        let c = &limit_cases(&m.rhs, 0, Direction::PosInf)[0];
        assert!(
            matches!(c.limit, Limit::Unknown)
                || matches!(&c.limit, Limit::Finite { value } if value.eval(&[1.5], &[]) == 1.5)
        );
    }

    #[test]
    fn sum_of_three_exponentials_picks_slowest_decay() {
        let m = model("b1*exp(-b2*x) + b3*exp(-b4*x) + b5*exp(-b6*x)");
        let ps = [1.0, 0.5, 2.0, 0.1, 3.0, 1.5];
        let c = case_at(&m, Direction::PosInf, &ps);
        match c.leading {
            Leading::Exponential { coef, rate, .. } => {
                assert_eq!(coef.eval(&ps, &[]), 2.0);
                assert_eq!(rate.eval(&ps, &[]), -0.1);
            }
            l => panic!("{:?}", l),
        }
    }

    #[test]
    fn exponential_with_shift_keeps_constant_factor() {
        // b1*exp(b2/(x+b3)) at +inf → b1; at 0+ analytic: b1*exp(b2/b3)
        let m = model("b1*exp(b2/(x+b3))");
        let ps = [2.0, 1.0, 4.0];
        assert_eq!(finite(&case_at(&m, Direction::PosInf, &ps), &ps), 2.0);
        assert!(
            (finite(&case_at(&m, Direction::ZeroPlus, &ps), &ps) - 2.0 * 0.25f64.exp()).abs()
                < 1e-12
        );
        // exp(-k*(x-c)) at +inf: coefficient exp(k c); parameters (k, c) in
        // order of first appearance
        let m = model("exp(-k*(x-c))");
        let ps = [0.5, 2.0];
        match case_at(&m, Direction::PosInf, &ps).leading {
            Leading::Exponential { coef, rate, .. } => {
                assert!((coef.eval(&ps, &[]) - 1f64.exp()).abs() < 1e-12);
                assert_eq!(rate.eval(&ps, &[]), -0.5);
            }
            l => panic!("{:?}", l),
        }
    }
}
