//! Asymptotic expansion by recursive rules on the tree: every subexpression
//! gets a leading [`GrowthForm`] (or vanishes, explodes, oscillates); sums keep
//! the dominant term in the dominance order of `rules/limits.yaml`, products
//! multiply forms, functions follow their behaviour in the facts table.

use super::super::algebra;
use super::super::expr::{BinOp, Expr, Func};
use super::super::functions::{facts, Behaviour};
use super::super::poly::{self, Atom};
use super::super::simplify::{self, simplify};
use super::forms::{leading_exp_coef, negated, product, Asymptote, GrowthForm};
use super::signs::{sign_of, Assumptions, Cases};
use super::{Analysis, Direction, Leading, Limit, MAX_CASES};
use crate::rules::Component;

/// Where a growth form tends.
pub(super) enum Tendency {
    /// To ±∞ (0: sign unknown).
    Infinite(i8),
    /// To 0.
    Zero,
    /// To this constant.
    Constant(Expr),
}

impl Analysis<'_> {
    /// Asymptotic cases of `e`; too many cases collapse to one `Unknown`.
    pub(super) fn expand(&self, e: &Expr, asm: &Assumptions) -> Cases<Asymptote> {
        let out = self.expand_node(e, asm);
        if out.len() > MAX_CASES {
            return vec![(asm.clone(), Asymptote::Unknown)];
        }
        out
    }

    pub(super) fn expand_node(&self, e: &Expr, asm: &Assumptions) -> Cases<Asymptote> {
        let one = |a: Asymptote| vec![(asm.clone(), a)];
        if !e.has_var(self.var) {
            return one(Asymptote::Like(GrowthForm::constant(e.clone())));
        }
        match e {
            Expr::Var(_) => {
                let c = if self.direction == Direction::NegInf {
                    -1.0
                } else {
                    1.0
                };
                one(Asymptote::Like(GrowthForm {
                    coef: Expr::Num(c),
                    power: Expr::Num(1.0),
                    log_power: 0,
                    exp_coefs: Vec::new(),
                }))
            }
            Expr::Neg(a) => self
                .expand(a, asm)
                .into_iter()
                .map(|(s, x)| (s, negated(x)))
                .collect(),
            Expr::Bin(op @ (BinOp::Add | BinOp::Sub), a, b) => {
                let mut out = Vec::new();
                for (s1, x) in self.expand(a, asm) {
                    for (s2, y) in self.expand(b, &s1) {
                        let y = if *op == BinOp::Sub { negated(y) } else { y };
                        out.extend(self.sum(&s2, &x, &y));
                    }
                }
                out
            }
            Expr::Bin(op @ (BinOp::Mul | BinOp::Div), a, b) => {
                let mut out = Vec::new();
                for (s1, x) in self.expand(a, asm) {
                    for (s2, y) in self.expand(b, &s1) {
                        out.push((s2, product(&x, &y, *op == BinOp::Mul)));
                    }
                }
                out
            }
            Expr::Bin(BinOp::Pow, a, b) => {
                if b.has_var(self.var) {
                    let rewritten = Expr::call(
                        Func::Exp,
                        Expr::mul((**b).clone(), Expr::call(Func::Log, (**a).clone())),
                    );
                    return self.expand(&rewritten, asm);
                }
                let mut out = Vec::new();
                for (s1, x) in self.expand(a, asm) {
                    out.extend(self.power(&s1, &x, b));
                }
                out
            }
            Expr::Call(f, a) => {
                let mut out = Vec::new();
                for (s1, x) in self.expand(a, asm) {
                    out.extend(self.function_of(&s1, *f, &x, a));
                }
                out
            }
            _ => one(Asymptote::Unknown),
        }
    }

    pub(super) fn sum(&self, asm: &Assumptions, x: &Asymptote, y: &Asymptote) -> Cases<Asymptote> {
        let one = |a: Asymptote| vec![(asm.clone(), a)];
        match (x, y) {
            (Asymptote::Like(a), Asymptote::Like(b)) => {
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
                            std::cmp::Ordering::Greater => Asymptote::Like(a.clone()),
                            std::cmp::Ordering::Less => Asymptote::Like(b.clone()),
                            std::cmp::Ordering::Equal => {
                                let c = simplify(&simplify::add(a.coef.clone(), b.coef.clone()));
                                if algebra::is_zero(&c) {
                                    Asymptote::Unknown // leading terms cancel
                                } else {
                                    Asymptote::Like(GrowthForm {
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
            (Asymptote::Like(a), Asymptote::Vanishes)
            | (Asymptote::Vanishes, Asymptote::Like(a)) => {
                if !a.has_exp() {
                    return one(Asymptote::Like(a.clone()));
                }
                let lead = leading_exp_coef(a);
                self.split_on_sign(asm, &lead, &|s, sg| {
                    vec![(
                        s.clone(),
                        if sg > 0 {
                            Asymptote::Like(a.clone())
                        } else {
                            Asymptote::Unknown
                        },
                    )]
                })
            }
            (Asymptote::Like(a), Asymptote::Explodes(s))
            | (Asymptote::Explodes(s), Asymptote::Like(a))
                if !a.has_exp() =>
            {
                one(Asymptote::Explodes(*s))
            }
            (Asymptote::Vanishes, Asymptote::Vanishes) => one(Asymptote::Vanishes),
            (Asymptote::Explodes(s), Asymptote::Explodes(t)) if s == t && *s != 0 => {
                one(Asymptote::Explodes(*s))
            }
            (Asymptote::Oscillates, Asymptote::Vanishes)
            | (Asymptote::Vanishes, Asymptote::Oscillates)
            | (Asymptote::Oscillates, Asymptote::Oscillates) => one(Asymptote::Oscillates),
            (Asymptote::Oscillates, Asymptote::Explodes(s))
            | (Asymptote::Explodes(s), Asymptote::Oscillates) => one(Asymptote::Explodes(*s)),
            (Asymptote::Oscillates, Asymptote::Like(a))
            | (Asymptote::Like(a), Asymptote::Oscillates) => self
                .tendency(asm, a)
                .into_iter()
                .map(|(s, t)| {
                    let r = match t {
                        Tendency::Infinite(_) => Asymptote::Like(a.clone()),
                        _ => Asymptote::Oscillates,
                    };
                    (s, r)
                })
                .collect(),
            _ => one(Asymptote::Unknown),
        }
    }

    /// Which of two forms dominates in magnitude, component by component in the
    /// YAML dominance order.
    pub(super) fn compare(
        &self,
        asm: &Assumptions,
        a: &GrowthForm,
        b: &GrowthForm,
    ) -> Cases<std::cmp::Ordering> {
        let mut items: Vec<(Expr, bool)> = Vec::new(); // (difference, reversed)
        for c in self.dominance {
            match c {
                Component::Exp => {
                    let n = a.exp_coefs.len().max(b.exp_coefs.len());
                    for k in (0..n).rev() {
                        let get =
                            |f: &GrowthForm| f.exp_coefs.get(k).cloned().unwrap_or(Expr::Num(0.0));
                        items.push((simplify(&simplify::sub(get(a), get(b))), false));
                    }
                }
                Component::Power => items.push((
                    simplify(&simplify::sub(a.power.clone(), b.power.clone())),
                    self.direction == Direction::ZeroPlus,
                )),
                Component::Log => {
                    items.push((Expr::Num((a.log_power - b.log_power) as f64), false))
                }
                Component::Const => {}
            }
        }
        self.compare_items(asm, &items)
    }

    pub(super) fn compare_items(
        &self,
        asm: &Assumptions,
        items: &[(Expr, bool)],
    ) -> Cases<std::cmp::Ordering> {
        let Some(((d, rev), rest)) = items.split_first() else {
            return vec![(asm.clone(), std::cmp::Ordering::Equal)];
        };
        if algebra::is_zero(d) {
            return self.compare_items(asm, rest);
        }
        let rev = *rev;
        self.split_on_sign(asm, d, &|s, sg| {
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
    pub(super) fn tendency(&self, asm: &Assumptions, a: &GrowthForm) -> Cases<Tendency> {
        let mut items: Vec<(Expr, bool)> = Vec::new(); // (growth exponent, reversed)
        for c in self.dominance {
            match c {
                Component::Exp => {
                    for k in (0..a.exp_coefs.len()).rev() {
                        items.push((a.exp_coefs[k].clone(), false));
                    }
                }
                Component::Power => {
                    items.push((a.power.clone(), self.direction == Direction::ZeroPlus))
                }
                Component::Log => items.push((Expr::Num(a.log_power as f64), false)),
                Component::Const => {}
            }
        }
        let odd_log = self.direction == Direction::ZeroPlus && a.log_power % 2 != 0;
        let Some((d, rev)) = items.iter().find(|(d, _)| !algebra::is_zero(d)) else {
            return vec![(asm.clone(), Tendency::Constant(a.coef.clone()))];
        };
        let rev = *rev;
        let coef = a.coef.clone();
        self.split_on_sign(asm, d, &|s, sg| {
            if (sg > 0) != rev {
                self.split_on_sign(s, &coef, &|s2, cs| {
                    let cs = if odd_log { -cs } else { cs };
                    vec![(s2.clone(), Tendency::Infinite(cs))]
                })
            } else {
                vec![(s.clone(), Tendency::Zero)]
            }
        })
    }

    pub(super) fn power(&self, asm: &Assumptions, x: &Asymptote, b: &Expr) -> Cases<Asymptote> {
        match x {
            Asymptote::Like(a) => self.power_of_form(asm, a, b),
            Asymptote::Vanishes | Asymptote::Explodes(_) => {
                let x = x.clone();
                self.split_on_sign(asm, b, &|s, sg| {
                    let r = match (&x, sg) {
                        (Asymptote::Vanishes, 1) => Asymptote::Vanishes,
                        (Asymptote::Vanishes, -1) => Asymptote::Explodes(1),
                        (Asymptote::Explodes(_), -1) => Asymptote::Vanishes,
                        (Asymptote::Explodes(t), 1) if *t > 0 => Asymptote::Explodes(1),
                        _ => Asymptote::Unknown,
                    };
                    vec![(s.clone(), r)]
                })
            }
            _ => vec![(asm.clone(), Asymptote::Unknown)],
        }
    }

    pub(super) fn power_of_form(
        &self,
        asm: &Assumptions,
        a: &GrowthForm,
        b: &Expr,
    ) -> Cases<Asymptote> {
        let integer = matches!(b, Expr::Num(n) if n.fract() == 0.0);
        if a.log_power != 0 && !integer {
            return vec![(asm.clone(), Asymptote::Unknown)];
        }
        let mk = |f: &GrowthForm| {
            let log_power = match b {
                Expr::Num(n) => (f.log_power as f64 * n) as i32,
                _ => 0,
            };
            Asymptote::Like(GrowthForm {
                coef: simplify(&simplify::pow(f.coef.clone(), b.clone())),
                power: simplify(&simplify::mul(f.power.clone(), b.clone())),
                log_power,
                exp_coefs: f
                    .exp_coefs
                    .iter()
                    .map(|e| simplify(&simplify::mul(e.clone(), b.clone())))
                    .collect(),
            })
        };
        if integer {
            return vec![(asm.clone(), mk(a))];
        }
        // a fractional power needs a positive base
        let a2 = a.clone();
        self.split_on_sign(asm, &a.coef, &|s, sg| {
            vec![(s.clone(), if sg > 0 { mk(&a2) } else { Asymptote::Unknown })]
        })
    }

    pub(super) fn function_of(
        &self,
        asm: &Assumptions,
        f: Func,
        x: &Asymptote,
        arg: &Expr,
    ) -> Cases<Asymptote> {
        let rule = &facts(f);
        let one = |a: Asymptote| vec![(asm.clone(), a)];
        match x {
            Asymptote::Like(a) => {
                // exp-like rules (same at ±∞) hold whatever the argument does, when
                // the argument is a Laurent polynomial in x: no case split needed
                if let (Behaviour::ExpOfArg { scale, sign }, true) =
                    (&rule.pos_inf, rule.pos_inf == rule.neg_inf)
                {
                    if let Some(f) = self.exp_form(arg, *sign) {
                        return one(Asymptote::Like(f.scale(Expr::Num(*scale))));
                    }
                }
                let mut out = Vec::new();
                for (s, t) in self.tendency(asm, a) {
                    match t {
                        Tendency::Constant(l) => {
                            let v = simplify(&simplify::call(f, l));
                            let r = if algebra::is_zero(&v) {
                                Asymptote::Unknown // f(L) = 0: the next order decides
                            } else {
                                Asymptote::Like(GrowthForm::constant(v))
                            };
                            out.push((s, r));
                        }
                        Tendency::Zero => {
                            out.extend(self.apply_behaviour(&s, &rule.zero, a, arg, 0))
                        }
                        Tendency::Infinite(sg) if sg > 0 => {
                            out.extend(self.apply_behaviour(&s, &rule.pos_inf, a, arg, 1))
                        }
                        Tendency::Infinite(sg) if sg < 0 => {
                            out.extend(self.apply_behaviour(&s, &rule.neg_inf, a, arg, -1))
                        }
                        Tendency::Infinite(_) => out.push((s, Asymptote::Unknown)),
                    }
                }
                out
            }
            Asymptote::Vanishes => one(match &rule.zero {
                Behaviour::Value(c) => Asymptote::Like(GrowthForm::constant(c.clone())),
                Behaviour::LikeArg(_) => Asymptote::Vanishes,
                Behaviour::Power(q) if *q > 0.0 => Asymptote::Vanishes,
                _ => Asymptote::Unknown,
            }),
            Asymptote::Explodes(s) if *s != 0 => {
                let b = if *s > 0 { &rule.pos_inf } else { &rule.neg_inf };
                one(match b {
                    Behaviour::Value(c) => Asymptote::Like(GrowthForm::constant(c.clone())),
                    Behaviour::LikeArg(k) => Asymptote::Explodes(*s * sign_of(*k)),
                    Behaviour::ExpOfArg { scale, sign } => {
                        if sign * (*s as f64) > 0.0 {
                            Asymptote::Explodes(sign_of(*scale))
                        } else {
                            Asymptote::Vanishes
                        }
                    }
                    Behaviour::Power(q) if *q > 0.0 && *s > 0 => Asymptote::Explodes(1),
                    Behaviour::Bounded => Asymptote::Oscillates,
                    _ => Asymptote::Unknown,
                })
            }
            Asymptote::Oscillates => one(match rule.bounded_arg {
                Behaviour::Bounded => Asymptote::Oscillates,
                _ => Asymptote::Unknown,
            }),
            _ => one(Asymptote::Unknown),
        }
    }

    /// Applies a YAML behaviour to an argument form `a` (expression `arg`).
    pub(super) fn apply_behaviour(
        &self,
        asm: &Assumptions,
        b: &Behaviour,
        a: &GrowthForm,
        arg: &Expr,
        _towards: i8,
    ) -> Cases<Asymptote> {
        let one = |x: Asymptote| vec![(asm.clone(), x)];
        match b {
            Behaviour::Value(c) => one(Asymptote::Like(GrowthForm::constant(c.clone()))),
            Behaviour::LikeArg(k) => one(Asymptote::Like(a.scale(Expr::Num(*k)))),
            Behaviour::Power(q) => self.power_of_form(asm, a, &Expr::Num(*q)),
            Behaviour::LogOfArg(k) => one(match self.log_form(a) {
                Some(f) => Asymptote::Like(f.scale(Expr::Num(*k))),
                None => Asymptote::Unknown,
            }),
            Behaviour::ExpOfArg { scale, sign } => one(match self.exp_form(arg, *sign) {
                Some(f) => Asymptote::Like(f.scale(Expr::Num(*scale))),
                None => Asymptote::Unknown,
            }),
            Behaviour::Bounded => one(Asymptote::Oscillates),
            Behaviour::Unknown => one(Asymptote::Unknown),
        }
    }

    /// exp(sign·u) as a form, from u expanded as a (Laurent) polynomial in the variable.
    pub(super) fn exp_form(&self, u: &Expr, sign: f64) -> Option<GrowthForm> {
        let p = poly::expand(&simplify::mul(Expr::Num(sign), u.clone()));
        let v = self.var;
        let groups = p.group_by(&|a: &Atom| matches!(a, Atom::Var(i) if *i == v));
        let mut c0 = Expr::Num(0.0);
        let mut exp_coefs: Vec<Expr> = Vec::new();
        for (m, c) in groups {
            let ce = c.to_expr();
            if ce.has_var(v) {
                return None; // not polynomial in the variable
            }
            let k = m.values().map(|(_, e)| *e).sum::<i32>();
            let (deg, coef) = match self.direction {
                Direction::PosInf => (k, ce),
                Direction::NegInf => (k, if k % 2 != 0 { simplify::neg(ce) } else { ce }),
                Direction::ZeroPlus => (-k, ce),
            };
            if deg == 0 {
                c0 = simplify::add(c0, coef);
            } else if deg > 0 {
                let d = deg as usize;
                if exp_coefs.len() < d {
                    exp_coefs.resize(d, Expr::Num(0.0));
                }
                exp_coefs[d - 1] = simplify(&coef);
            }
        }
        Some(GrowthForm {
            coef: simplify(&simplify::call(Func::Exp, c0)),
            power: Expr::Num(0.0),
            log_power: 0,
            exp_coefs,
        })
    }

    /// log of a form: the exponent's leading term, else power·log t, else log of the coefficient.
    pub(super) fn log_form(&self, a: &GrowthForm) -> Option<GrowthForm> {
        if let Some(k) = (0..a.exp_coefs.len())
            .rev()
            .find(|&k| !algebra::is_zero(&a.exp_coefs[k]))
        {
            let deg = (k + 1) as f64;
            let p = if self.direction == Direction::ZeroPlus {
                -deg
            } else {
                deg
            };
            return Some(GrowthForm {
                coef: a.exp_coefs[k].clone(),
                power: Expr::Num(p),
                log_power: 0,
                exp_coefs: Vec::new(),
            });
        }
        if !algebra::is_zero(&a.power) {
            return Some(GrowthForm {
                coef: a.power.clone(),
                power: Expr::Num(0.0),
                log_power: 1,
                exp_coefs: Vec::new(),
            });
        }
        if a.log_power != 0 {
            return None;
        }
        let v = simplify(&simplify::call(Func::Log, a.coef.clone()));
        if algebra::is_zero(&v) {
            None
        } else {
            Some(GrowthForm::constant(v))
        }
    }

    /// The leading form and limit of an asymptote, case by case.
    pub(super) fn outcome(&self, asm: &Assumptions, x: &Asymptote) -> Cases<(Leading, Limit)> {
        let one = |l: Leading, m: Limit| vec![(asm.clone(), (l, m))];
        match x {
            Asymptote::Like(a) => {
                let leading = self.leading_of_form(a);
                self.tendency(asm, a)
                    .into_iter()
                    .map(|(s, t)| {
                        let lim = match t {
                            Tendency::Constant(v) => Limit::Finite { value: v },
                            Tendency::Zero => Limit::Finite {
                                value: Expr::Num(0.0),
                            },
                            Tendency::Infinite(1) => Limit::PosInf,
                            Tendency::Infinite(-1) => Limit::NegInf,
                            Tendency::Infinite(_) => Limit::Unknown,
                        };
                        (s, (leading.clone(), lim))
                    })
                    .collect()
            }
            Asymptote::Vanishes => one(
                Leading::Zero,
                Limit::Finite {
                    value: Expr::Num(0.0),
                },
            ),
            Asymptote::Explodes(s) => one(
                Leading::Infinite { sign: *s },
                match s {
                    1 => Limit::PosInf,
                    -1 => Limit::NegInf,
                    _ => Limit::Unknown,
                },
            ),
            Asymptote::Oscillates => one(Leading::Oscillating, Limit::Oscillating),
            Asymptote::Unknown => one(Leading::Unknown, Limit::Unknown),
        }
    }

    pub(super) fn leading_of_form(&self, a: &GrowthForm) -> Leading {
        let nz: Vec<usize> = (0..a.exp_coefs.len())
            .filter(|&k| !algebra::is_zero(&a.exp_coefs[k]))
            .collect();
        if !nz.is_empty() {
            if nz != [0] || a.log_power != 0 {
                return Leading::Unknown;
            }
            let rate = a.exp_coefs[0].clone();
            return match self.direction {
                Direction::PosInf => Leading::Exponential {
                    coef: a.coef.clone(),
                    power: a.power.clone(),
                    rate,
                },
                Direction::NegInf => Leading::Exponential {
                    coef: a.coef.clone(),
                    power: a.power.clone(),
                    rate: simplify(&simplify::neg(rate)),
                },
                Direction::ZeroPlus => Leading::ExponentialInverse {
                    coef: a.coef.clone(),
                    power: a.power.clone(),
                    rate,
                },
            };
        }
        let flat = algebra::is_zero(&a.power);
        match (flat, a.log_power) {
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
}
