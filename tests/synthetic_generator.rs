//! The synthetic suite itself must be sound: at least twenty forms, every form binds as a
//! model, every parameter has a true value, and every drawn response is finite.

mod common;

use common::synthetic::{draw_case, forms, Rng};
use foothold::symbolic::Model;

#[test]
fn synthetic_suite_is_sound() {
    let fs = forms();
    assert!(fs.len() >= 20, "only {} forms", fs.len());
    let mut r = Rng::new(20261202);
    for f in &fs {
        for _ in 0..20 {
            let c = draw_case(f, &mut r);
            let mut cols: Vec<String> = c.x.iter().map(|(n, _)| n.clone()).collect();
            cols.push("y".into());
            let m = Model::new(f.formula, &cols, Some("y")).unwrap();
            assert_eq!(
                m.params.len(),
                c.truth.len(),
                "{}: parameters {:?}",
                f.name,
                m.params
            );
            assert!(
                c.y.iter().all(|v| v.is_finite()),
                "{}: non-finite response",
                f.name
            );
            assert!(c.y.len() > m.params.len() + 2, "{}: too few rows", f.name);
        }
    }
    println!(
        "synthetic suite: {} forms, 20 draws each, all sound",
        fs.len()
    );
}
