//! Any text (valid UTF-8 or bytes converted lossily) into `parse_formula` and
//! `Model::new` against a few column sets: never a panic. When the text
//! parses, the printed tree must parse again to a tree that evaluates the
//! same, bit for bit, at a few points.
#![no_main]

use foothold::symbolic::expr::Expr;
use foothold::symbolic::parse::{MAX_DEPTH, MAX_FORMULA_CHARS};
use foothold::symbolic::{parse_formula, Model};
use foothold_fuzz::{same_bits, text};
use libfuzzer_sys::fuzz_target;

/// Column sets a formula is bound against.
const COLUMN_SETS: [&[&str]; 5] = [
    &["x", "y"],
    &["x", "y", "t"],
    &["x1", "x2", "y"],
    &["t", "z"],
    &["y"],
];

/// A value for a name that depends only on the name, so trees whose names are
/// numbered in a different order still get the same values.
fn value_of(name: &str, point: u64) -> f64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325 ^ point;
    for b in name.bytes() {
        h = (h ^ u64::from(b)).wrapping_mul(0x0100_0000_01b3);
    }
    // Values in [-3, 3] in steps of 1/8, zero included; other points use steps
    // of 1/7 and 1/10, which round, so regrouped sums and products show.
    let step = [8.0, 7.0, 10.0][(point % 3) as usize];
    ((h % 49) as f64 - 24.0) / step
}

fn eval_named(e: &Expr, names: &[String], point: u64) -> f64 {
    let vals: Vec<f64> = names.iter().map(|n| value_of(n, point)).collect();
    e.eval(&vals, &[])
}

fuzz_target!(|data: &[u8]| {
    let text = text(data);
    let parsed = parse_formula(&text);
    for cols in COLUMN_SETS {
        let cols: Vec<String> = cols.iter().map(|s| s.to_string()).collect();
        let bound = Model::new(&text, &cols, None);
        let bound_z = Model::new(&text, &cols, Some("z"));
        if let Ok(m) = bound.as_ref().or(bound_z.as_ref()) {
            // A bound model's right side prints and binds again to the same model.
            let again = Model::new(&m.rhs_text(), &cols, Some(m.response.as_str()));
            if let Ok(m2) = again {
                assert_eq!(m.params, m2.params, "parameters changed: {text:?}");
                assert_eq!(m.vars, m2.vars, "variables changed: {text:?}");
            }
        }
    }
    let Ok(p) = parsed else { return };
    let sides: Vec<&Expr> = p.lhs.iter().chain(std::iter::once(&p.rhs)).collect();
    for side in sides {
        let shown = side.display(&p.names, &[]).to_string();
        let again = match parse_formula(&shown) {
            Ok(q) => q,
            Err(e) => {
                // Printing may add parentheses or digits; only the size limits may refuse it.
                let limit = shown.chars().count() > MAX_FORMULA_CHARS
                    || e.message.contains(&MAX_DEPTH.to_string());
                assert!(
                    limit,
                    "printed form {shown:?} of {text:?} does not parse: {e}"
                );
                continue;
            }
        };
        assert!(again.lhs.is_none(), "printed side {shown:?} grew an '='");
        for point in 0..3 {
            let a = eval_named(side, &p.names, point);
            let b = eval_named(&again.rhs, &again.names, point);
            assert!(
                same_bits(a, b),
                "{text:?} printed as {shown:?}: {a} vs {b} at point {point}"
            );
        }
    }
});
