//! Invented demo inputs for tests: a saturation curve y = 5x/(2 + x) with a
//! little deterministic noise, its six survey views and a fit sheet.

use super::{FitSheet, Panel};

/// Deterministic small noise in [-1, 1] (a fixed sine sequence, no RNG).
fn wobble(i: usize) -> f64 {
    ((i as f64) * 12.9898).sin() * 0.8 + ((i as f64) * 4.1414).cos() * 0.2
}

/// The invented saturation data: x from 0 to 20, one NaN row among them.
pub fn saturation_data() -> (Vec<f64>, Vec<f64>) {
    let x: Vec<f64> = (0..25).map(|i| i as f64 * 0.8).collect();
    let mut y: Vec<f64> = x
        .iter()
        .enumerate()
        .map(|(i, x)| 5.0 * x / (2.0 + x) + 0.08 * wobble(i))
        .collect();
    y[0] = 0.0;
    y[13] = f64::NAN;
    (x, y)
}

/// Six survey panels of the saturation data with plausible features drawn.
pub fn saturation_survey() -> Vec<Panel> {
    let (x, y) = saturation_data();
    let xy: Vec<(f64, f64)> = x.iter().copied().zip(y.iter().copied()).collect();
    let map = |f: fn(f64) -> f64| xy.iter().map(|(x, y)| (*x, f(*y))).collect::<Vec<_>>();
    let mut p = Vec::new();
    for log_x in [false, true] {
        let xl = "substrate x";
        let suffix = if log_x {
            " against log x"
        } else {
            " against x"
        };
        let mut a = Panel::new(&format!("y{suffix}"), xl, "y");
        a.log_x = log_x;
        a.points = map(|y| y);
        a.hlines.push((4.93, "plateau 4.93".into()));
        a.markers.push((2.1, 2.47, "half height x≈2.1".into()));
        if !log_x {
            a.segments
                .push(((0.0, 0.05), (1.6, 2.9), "initial slope 1.78".into()));
        }
        let mut b = Panel::new(&format!("1/y{suffix}"), xl, "1/y");
        b.log_x = log_x;
        b.points = map(|y| 1.0 / y);
        b.hlines.push((0.2, "plateau 0.2".into()));
        b.empty_reason = "y = 0 has no reciprocal".into();
        let mut c = Panel::new(&format!("ln y{suffix}"), xl, "ln y");
        c.log_x = log_x;
        c.points = map(|y| if y > 0.0 { y.ln() } else { f64::NAN });
        if log_x {
            c.segments
                .push(((0.8, 0.37), (3.2, 1.15), "slope 1.3 per decade".into()));
        }
        c.hlines.push((1.6, "plateau ln 4.95".into()));
        p.extend([a, b, c]);
    }
    p
}

/// A fit sheet of the saturation data with a deliberately poor starting curve.
pub fn saturation_fit() -> FitSheet {
    let (x, y) = saturation_data();
    let model = |a: f64, k: f64, x: f64| a * x / (k + x);
    let fitted: Vec<f64> = x.iter().map(|x| model(4.98, 2.02, *x)).collect();
    let grid: Vec<f64> = (0..=200).map(|i| i as f64 * 0.1).collect();
    FitSheet {
        title: "Fit of y = a·x/(k + x)".into(),
        x_label: "substrate x".into(),
        y_label: "y".into(),
        start_curve: grid.iter().map(|x| (*x, model(4.5, 3.0, *x))).collect(),
        fitted_curve: grid.iter().map(|x| (*x, model(4.98, 2.02, *x))).collect(),
        residuals: Vec::new(),
        x,
        y,
        fitted,
    }
}
