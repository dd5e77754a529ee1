//! Helpers shared by the fuzz targets: an expression generator driven by the
//! fuzzer's bytes, points to evaluate at, and a finite-difference check that
//! knows when it is itself reliable.
//!
//! Targets live in `fuzz_targets/`; each one is a thin `fuzz_target!` around a
//! `check_*` function here or in the target file. `read_table` (the data
//! reader) needs none of these helpers: its input is the file's bytes.

use arbitrary::{Result, Unstructured};
use foothold::symbolic::expr::{BinOp, Expr, Func};

/// Numbers the generator puts in leaves: the constants of everyday formulas
/// plus edge cases (zero, huge, tiny, negative).
pub const CONSTS: [f64; 16] = [
    0.0, 1.0, 2.0, 3.0, 0.5, -1.0, -2.0, 0.25, 10.0, 1e-3, 1e3, 1e308, 1e-300, -0.5, 1.5, 4.0,
];

/// Largest tree the generator builds (nodes), so derivatives stay small.
pub const MAX_NODES: usize = 60;

/// Builds an expression over `n_params` parameters and `n_vars` variables from
/// the fuzzer's bytes; depth and size are bounded.
pub fn gen_expr(u: &mut Unstructured, n_params: usize, n_vars: usize) -> Result<Expr> {
    let mut budget = MAX_NODES;
    gen(u, 6, &mut budget, n_params, n_vars)
}

fn gen(
    u: &mut Unstructured,
    depth: usize,
    budget: &mut usize,
    n_params: usize,
    n_vars: usize,
) -> Result<Expr> {
    *budget = budget.saturating_sub(1);
    let leaf_only = depth == 0 || *budget == 0 || u.is_empty();
    let choice: u8 = if leaf_only {
        u.int_in_range(0..=3)?
    } else {
        u.int_in_range(0..=9)?
    };
    Ok(match choice {
        0 => {
            let i: usize = u.int_in_range(0..=CONSTS.len())?;
            match CONSTS.get(i) {
                Some(c) => Expr::Num(*c),
                // Any finite number the bytes spell.
                None => {
                    let v = f64::from_bits(u.arbitrary::<u64>()?);
                    Expr::Num(if v.is_finite() { v } else { 1.0 })
                }
            }
        }
        1 if n_vars > 0 => Expr::Var(u.int_in_range(0..=n_vars - 1)?),
        1 | 2 | 3 if n_params > 0 => Expr::Param(u.int_in_range(0..=n_params - 1)?),
        1..=3 => Expr::Num(1.0),
        4 => Expr::neg(gen(u, depth - 1, budget, n_params, n_vars)?),
        5..=7 => {
            let op = *u.choose(&[BinOp::Add, BinOp::Sub, BinOp::Mul, BinOp::Div, BinOp::Pow])?;
            let a = gen(u, depth - 1, budget, n_params, n_vars)?;
            let b = gen(u, depth - 1, budget, n_params, n_vars)?;
            Expr::Bin(op, Box::new(a), Box::new(b))
        }
        _ => {
            let f = *u.choose(&Func::ALL)?;
            Expr::call(f, gen(u, depth - 1, budget, n_params, n_vars)?)
        }
    })
}

/// A coordinate of a point: one byte mapped to [-8, 8) in steps of 1/16, so
/// that exact zeros, integers and halves are common.
pub fn coord(u: &mut Unstructured) -> Result<f64> {
    Ok(f64::from(u.arbitrary::<i8>()?) / 16.0)
}

/// True when `e` and every subexpression of it is finite at the point: a
/// finite value computed through an infinity (`0.5^(1/0)`) is not a smooth point.
pub fn all_finite(e: &Expr, params: &[f64], vars: &[f64]) -> bool {
    e.eval(params, vars).is_finite()
        && match e {
            Expr::Num(_) | Expr::Var(_) | Expr::Param(_) => true,
            Expr::Neg(a) | Expr::Call(_, a) => all_finite(a, params, vars),
            Expr::Bin(_, a, b) => all_finite(a, params, vars) && all_finite(b, params, vars),
        }
}

/// True when some function's argument sits where that function's own slope is
/// infinite or undefined: sqrt, log, log10 or abs at 0, asin or acos at ±1,
/// u^w at u = 0 with w < 1, or at u < 0 with an exponent that varies. There the chain rule multiplies ∞ by the inner
/// slope, and where that is 0 (sqrt(a*x) at x = 0) the product is NaN even
/// though the function is flat: a known limit of symbolic derivatives without a
/// "strong zero" product. The fitter repairs such Jacobian columns by differences.
pub fn on_inner_boundary(e: &Expr, params: &[f64], vars: &[f64]) -> bool {
    e.any(&|n| match n {
        Expr::Call(Func::Sqrt | Func::Log | Func::Log10 | Func::Abs, u) => {
            u.eval(params, vars) == 0.0
        }
        Expr::Call(Func::Asin | Func::Acos, u) => u.eval(params, vars).abs() == 1.0,
        Expr::Bin(BinOp::Pow, u, w) => {
            let (uv, wv) = (u.eval(params, vars), w.eval(params, vars));
            // u < 0 with a varying exponent: real only at integer w (every float
            // beyond 2^53 is one), so the slope in w does not exist.
            (uv == 0.0 && wv < 1.0) || (uv < 0.0 && (w.has_any_param() || w.has_any_var()))
        }
        _ => false,
    })
}

/// True when some node of `d` overflows: finite operands, an infinite result,
/// and not a pole (division by zero, log 0, 0 to a negative power). The slope
/// of exp(sinh(a)) at a = 7.25 is ≈ 3.9e308 although 2/exp(sinh(a)) and its
/// own slope are ordinary numbers: a symbolic derivative cannot avoid that.
pub fn overflows(d: &Expr, params: &[f64], vars: &[f64]) -> bool {
    d.any(&|n| {
        let v = n.eval(params, vars);
        if !v.is_infinite() {
            return false;
        }
        match n {
            Expr::Bin(op, a, b) => {
                let (x, y) = (a.eval(params, vars), b.eval(params, vars));
                x.is_finite()
                    && y.is_finite()
                    && match op {
                        BinOp::Div => y != 0.0,
                        BinOp::Pow => x != 0.0,
                        _ => true,
                    }
            }
            Expr::Call(f, a) => {
                let x = a.eval(params, vars);
                x.is_finite() && matches!(f, Func::Exp | Func::Sinh | Func::Cosh)
            }
            _ => false,
        }
    })
}

/// Largest magnitude of any subexpression of `e` at the point.
pub fn largest_intermediate(e: &Expr, params: &[f64], vars: &[f64]) -> f64 {
    let here = e.eval(params, vars).abs();
    let below = match e {
        Expr::Num(_) | Expr::Var(_) | Expr::Param(_) => 0.0,
        Expr::Neg(a) | Expr::Call(_, a) => largest_intermediate(a, params, vars),
        Expr::Bin(_, a, b) => {
            largest_intermediate(a, params, vars).max(largest_intermediate(b, params, vars))
        }
    };
    here.max(below)
}

/// Two values the same bit for bit, or both NaN.
pub fn same_bits(a: f64, b: f64) -> bool {
    a.to_bits() == b.to_bits() || (a.is_nan() && b.is_nan())
}

/// Outcome of a finite-difference comparison.
#[derive(Debug, Clone, PartialEq)]
pub enum FdCheck {
    /// The difference quotient was not reliable here (not finite nearby, a
    /// kink or pole, the h and h/2 estimates disagreeing): nothing is claimed.
    Unreliable,
    /// Reliable and the symbolic derivative agrees.
    Agrees,
    /// Reliable but the derivative is wrong or not finite; the message says how.
    Fails(String),
}

/// Central differences of `f` in coordinate `k` of the point `(params, vars)`
/// (parameters first, then variables) with steps h and h/2, Richardson
/// extrapolated (Richardson 1911; Press et al., Numerical Recipes, §5.7).
/// When the formula and every subexpression are finite at the point, the four
/// shifted values are finite, the two estimates agree to 1e-3 and the one-sided
/// differences agree to 1e-2, the check is reliable, and then `sym` must be
/// finite and match (except on an inner domain boundary, see [`on_inner_boundary`]).
pub fn fd_check(e: &Expr, params: &[f64], vars: &[f64], k: usize, sym: f64) -> FdCheck {
    if !all_finite(e, params, vars) {
        return FdCheck::Unreliable;
    }
    let np = params.len();
    let x = if k < np { params[k] } else { vars[k - np] };
    let h = 1e-4 * x.abs().max(1.0);
    let at = |dx: f64| {
        let mut p = params.to_vec();
        let mut v = vars.to_vec();
        if k < np {
            p[k] = x + dx;
        } else {
            v[k - np] = x + dx;
        }
        (e.eval(&p, &v), all_finite(e, &p, &v))
    };
    // A periodic function whose argument turns through many radians across
    // the step is sampled too sparsely: matching differences are aliasing
    // (cos(a^8) at a = 7.25 turns ~6000 radians in h).
    let shift = |dx: f64| {
        let mut p = params.to_vec();
        let mut v = vars.to_vec();
        if k < np {
            p[k] = x + dx;
        } else {
            v[k - np] = x + dx;
        }
        (p, v)
    };
    let ((pp, vp), (pm, vm)) = (shift(h), shift(-h));
    // Likewise a step across a pole of tan (its argument passes an odd multiple
    // of π/2 between x − h and x + h) samples both sides of the pole: the
    // differences there say nothing about the slope at x.
    let aliased = e.any(&|n| match n {
        Expr::Call(Func::Sin | Func::Cos, u) => {
            !((u.eval(&pp, &vp) - u.eval(&pm, &vm)).abs() < 0.5)
        }
        Expr::Call(Func::Tan, u) => {
            let (a, b) = (u.eval(&pp, &vp), u.eval(&pm, &vm));
            !((a - b).abs() < 0.5) || a.cos().signum() != b.cos().signum()
        }
        _ => false,
    });
    if aliased {
        return FdCheck::Unreliable;
    }
    let shifted = [at(h), at(-h), at(h / 2.0), at(-h / 2.0)];
    if shifted.iter().any(|(v, ok)| !ok || !v.is_finite()) {
        return FdCheck::Unreliable;
    }
    let vals: Vec<f64> = shifted.iter().map(|s| s.0).collect();
    let f0 = e.eval(params, vars);
    let d1 = (vals[0] - vals[1]) / (2.0 * h);
    let d2 = (vals[2] - vals[3]) / h;
    if !d1.is_finite() || !d2.is_finite() || (d1 - d2).abs() > 1e-3 * d2.abs() + 1e-9 {
        return FdCheck::Unreliable;
    }
    // One-sided differences must agree too: a feature far narrower than h
    // (a/(4a + 1e-143) at a = 0) gives matching central differences at h and
    // h/2 that are both wrong, but wildly different one-sided ones.
    let fwd = (vals[2] - f0) / (h / 2.0);
    let bwd = (f0 - vals[3]) / (h / 2.0);
    if !((fwd - bwd).abs() <= 1e-2 * d2.abs().max(1.0)) {
        return FdCheck::Unreliable;
    }
    if on_inner_boundary(e, params, vars) {
        return FdCheck::Unreliable;
    }
    if !sym.is_finite() {
        return FdCheck::Fails(format!(
            "derivative is {sym} where the formula ({f0}) and its finite differences \
             ({d1}, {d2}) are finite and agree"
        ));
    }
    if d1 == 0.0 && d2 == 0.0 {
        // Exactly flat computed function: a saturated intermediate (tanh(u)
        // rounded to 1) quantises it, so a nonzero slope cannot be checked.
        return FdCheck::Agrees;
    }
    let rich = d2 + (d2 - d1) / 3.0;
    let fmax = vals.iter().fold(f0.abs(), |m, v| m.max(v.abs()));
    // Rounding in any intermediate (cos of a large argument) shows in the differences.
    let roundoff = 1e-13 * fmax.max(largest_intermediate(e, params, vars)).max(1.0) / h;
    // The step itself is rounded inside a large argument of a sensitive function
    // (tan(u) with u ≈ 3.7e6: a shift of 5e-4 in u is only good to one ulp of u,
    // 2e-6 of the shift), which puts that relative error into the differences.
    let quantised = std::cell::Cell::new(0.0_f64);
    e.any(&|n| {
        if let Expr::Call(Func::Sin | Func::Cos | Func::Tan | Func::Exp, u) = n {
            let du = (u.eval(&pp, &vp) - u.eval(&pm, &vm)).abs();
            let mag = u.eval(params, vars).abs();
            if du > 0.0 && mag.is_finite() {
                quantised.set(quantised.get().max(4.0 * f64::EPSILON * mag / du));
            }
        }
        false
    });
    let quantised = quantised.get();
    let tol = (d1 - d2).abs() + (1e-7 + quantised) * d2.abs().max(1.0) + roundoff;
    if (sym - rich).abs() > tol {
        return FdCheck::Fails(format!(
            "derivative {sym} vs finite difference {rich} (h-estimates {d1}, {d2}, tol {tol})"
        ));
    }
    FdCheck::Agrees
}

/// The fuzzer's bytes as formula text: valid UTF-8 as is, anything else
/// converted lossily (invalid sequences become U+FFFD).
pub fn text(data: &[u8]) -> String {
    String::from_utf8_lossy(data).into_owned()
}
