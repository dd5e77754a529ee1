//! A fuzzed formula — text bound to columns `x`, `t`, or a tree built from the
//! bytes — is simplified, differentiated by every parameter and variable,
//! compiled to a `Tape` and evaluated at a few points. Checks: no panic or
//! hang; the simplifier is idempotent and keeps finite values finite; tape
//! values equal tree-walking values bit for bit; wherever the formula is
//! finite and a central finite-difference check with steps h and h/2 is
//! reliable, every derivative is finite and agrees with it.
#![no_main]

use arbitrary::{Result, Unstructured};
use foothold::symbolic::expr::Expr;
use foothold::symbolic::{diff_param, diff_var, simplify, Model, Tape};
use foothold_fuzz::{all_finite, coord, fd_check, gen_expr, overflows, same_bits, FdCheck};
use libfuzzer_sys::fuzz_target;

/// Longest formula text taken (characters); derivatives grow with size.
const MAX_TEXT: usize = 200;
const N_POINTS: usize = 4;
/// Coordinates read per point (parameters, then variables).
const MAX_COORDS: usize = 5;

/// The formula, its parameter and variable counts.
fn formula(u: &mut Unstructured) -> Result<Option<(Expr, usize, usize)>> {
    if u.arbitrary::<bool>()? {
        let n_params = u.int_in_range(0..=3)?;
        let n_vars = u.int_in_range(0..=2)?;
        return Ok(Some((gen_expr(u, n_params, n_vars)?, n_params, n_vars)));
    }
    // The rest of the input is the text, so seed files are readable.
    let rest = u.peek_bytes(u.len()).unwrap_or(&[]);
    u.bytes(rest.len())?;
    let text = String::from_utf8_lossy(&rest[..rest.len().min(MAX_TEXT)]).into_owned();
    let cols = ["x".to_string(), "t".to_string(), "y".to_string()];
    Ok(Model::new(&text, &cols, None)
        .ok()
        .map(|m| (m.rhs.clone(), m.n_params(), m.vars.len())))
}

fn check(u: &mut Unstructured) -> Result<()> {
    // Input layout: N_POINTS × MAX_COORDS coordinate bytes, a mode byte
    // (odd: generated tree; even: formula text), then the tree's bytes or the text.
    let block: Vec<f64> = (0..N_POINTS * MAX_COORDS)
        .map(|_| coord(u))
        .collect::<Result<_>>()?;
    let Some((e, np, nv)) = formula(u)? else {
        return Ok(());
    };
    if np + nv > MAX_COORDS {
        return Ok(());
    }
    let points: Vec<(Vec<f64>, Vec<f64>)> = block
        .chunks(MAX_COORDS)
        .map(|c| (c[..np].to_vec(), c[np..np + nv].to_vec()))
        .collect();

    let s = simplify(&e);
    assert_eq!(simplify(&s), s, "simplify is not idempotent on {e:?}");
    // Regrouping numeric factors (c1*(x*(c2*y)) → (c1*c2)*(x*y)) changes which
    // intermediate products overflow; with constants beyond 1e±100 a finite
    // value may become infinite, which the simplifier does not promise against.
    let extreme =
        e.any(&|n| matches!(n, Expr::Num(c) if c.abs() > 1e100 || (*c != 0.0 && c.abs() < 1e-100)));
    for (p, v) in points.iter().filter(|_| !extreme) {
        if all_finite(&e, p, v) {
            let (a, b) = (e.eval(p, v), s.eval(p, v));
            assert!(
                b.is_finite(),
                "simplified {s:?} is {b} where {e:?} is {a} at {p:?} {v:?}"
            );
        }
    }

    let mut derivs: Vec<Expr> = (0..np).map(|k| diff_param(&s, k)).collect();
    derivs.extend((0..nv).map(|k| diff_var(&s, k)));
    let mut outputs = vec![e.clone(), s.clone()];
    outputs.extend(derivs.iter().cloned());
    let tape = Tape::compile(&outputs);

    for (p, v) in &points {
        // Tape against tree walking, one row and (for variables) a column of rows.
        let row = tape.eval_one(p, v);
        for (k, o) in outputs.iter().enumerate() {
            let tree = o.eval(p, v);
            assert!(
                same_bits(row[k], tree),
                "tape {} vs tree {tree} for output {k} = {o:?} at {p:?} {v:?}",
                row[k]
            );
        }
        for (k, d) in derivs.iter().enumerate().filter(|_| !extreme) {
            // (Extreme constants are left out here too: a derivative may square a
            // 1e-300 denominator to 0 where the formula itself stays finite.)
            let sym = d.eval(p, v);
            if !sym.is_finite() && overflows(d, p, v) {
                continue;
            }
            match fd_check(&s, p, v, k, sym) {
                FdCheck::Fails(msg) => panic!(
                    "{msg}\n  formula {e:?}\n  simplified {s:?}\n  coordinate {k}, derivative {d:?}\n  at {p:?} {v:?}"
                ),
                FdCheck::Agrees | FdCheck::Unreliable => {}
            }
        }
    }
    // All points' variables as rows of one call with the first point's parameters.
    if nv > 0 {
        let p0 = &points[0].0;
        let cols: Vec<Vec<f64>> = (0..nv)
            .map(|j| points.iter().map(|q| q.1[j]).collect())
            .collect();
        let refs: Vec<&[f64]> = cols.iter().map(|c| c.as_slice()).collect();
        let got = tape.eval_columns(p0, &refs, N_POINTS);
        for (k, o) in outputs.iter().enumerate() {
            for (i, q) in points.iter().enumerate() {
                let tree = o.eval(p0, &q.1);
                assert!(
                    same_bits(got[k][i], tree),
                    "tape column {k} row {i}: {} vs {tree}",
                    got[k][i]
                );
            }
        }
    }
    Ok(())
}

fuzz_target!(|data: &[u8]| {
    let mut u = Unstructured::new(data);
    let _ = check(&mut u);
});
