//! Solving one equation `expr(p) = target` for one parameter: symbolic
//! isolation first (inverse operations), else a sign change on the
//! parameter's grid refined by Brent's method (Brent 1973).

use super::scales::{global_grid, ParamScale};
use crate::symbolic::algebra;
use crate::symbolic::Expr;

/// Solves `expr = target` for parameter `p`, the other parameters at `base`.
pub fn solve_for(expr: &Expr, p: usize, target: f64, base: &[f64], s: &ParamScale) -> Option<f64> {
    if !target.is_finite() {
        return None;
    }
    let eval = |v: f64| {
        let mut q = base.to_vec();
        if let Some(slot) = q.get_mut(p) {
            *slot = v;
        }
        expr.eval(&q, &[]) - target
    };
    let ok = |v: f64| {
        let r = eval(v);
        v.is_finite() && r.is_finite() && r.abs() <= 1e-8 * target.abs().max(1e-300)
    };
    let mut notes = Vec::new();
    if let Some(e) = algebra::isolate(Expr::Num(target), expr, p, &mut notes) {
        let v = e.eval(base, &[]);
        if ok(v) {
            return Some(v);
        }
    }
    // bracket on the grid, nearest to the typical value first
    let grid = global_grid(s, 200);
    let mut best: Option<(f64, f64)> = None;
    for w in grid.windows(2) {
        let (a, b) = (w[0], w[1]);
        let (fa, fb) = (eval(a), eval(b));
        if fa.is_finite() && fb.is_finite() && fa * fb <= 0.0 {
            if let Some(r) = brent(&eval, a, b, fa, fb) {
                let d = (r - s.range.typical).abs();
                if best.map_or(true, |(_, bd)| d < bd) {
                    best = Some((r, d));
                }
            }
        }
    }
    best.map(|(r, _)| r)
}

/// Brent's method (Brent 1973, ch. 4) on a bracket [a, b] with f(a)·f(b) ≤ 0.
pub fn brent(f: &dyn Fn(f64) -> f64, a: f64, b: f64, fa: f64, fb: f64) -> Option<f64> {
    let (mut a, mut b, mut fa, mut fb) = (a, b, fa, fb);
    if fa == 0.0 {
        return Some(a);
    }
    if fb == 0.0 {
        return Some(b);
    }
    if fa * fb > 0.0 {
        return None;
    }
    let (mut c, mut fc) = (a, fa);
    let mut d = b - a;
    let mut e = d;
    for _ in 0..100 {
        if fb * fc > 0.0 {
            c = a;
            fc = fa;
            d = b - a;
            e = d;
        }
        if fc.abs() < fb.abs() {
            a = b;
            b = c;
            c = a;
            fa = fb;
            fb = fc;
            fc = fa;
        }
        let tol = 2.0 * f64::EPSILON * b.abs() + 1e-300;
        let m = 0.5 * (c - b);
        if m.abs() <= tol || fb == 0.0 {
            return Some(b);
        }
        if e.abs() >= tol && fa.abs() > fb.abs() {
            let s = fb / fa;
            let (mut p, mut q);
            if a == c {
                p = 2.0 * m * s;
                q = 1.0 - s;
            } else {
                let qq = fa / fc;
                let r = fb / fc;
                p = s * (2.0 * m * qq * (qq - r) - (b - a) * (r - 1.0));
                q = (qq - 1.0) * (r - 1.0) * (s - 1.0);
            }
            if p > 0.0 {
                q = -q;
            } else {
                p = -p;
            }
            if 2.0 * p < (3.0 * m * q - (tol * q).abs()).min((e * q).abs()) {
                e = d;
                d = p / q;
            } else {
                d = m;
                e = m;
            }
        } else {
            d = m;
            e = m;
        }
        a = b;
        fa = fb;
        b += if d.abs() > tol { d } else { tol * m.signum() };
        fb = f(b);
        if !fb.is_finite() {
            return None;
        }
    }
    Some(b)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn brent_finds_a_cube_root() {
        let f = |x: f64| x * x * x - 2.0;
        let r = brent(&f, 0.0, 2.0, -2.0, 6.0).unwrap();
        assert!((r - 2f64.cbrt()).abs() < 1e-12);
    }
}
