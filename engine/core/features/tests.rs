//! Scenario tests of the detectors on invented curves with seeded noise.
//! Expected values are the parameters used to generate each curve.

use super::testdata::{linspace, logspace, noisy, noisy_rel, Rng};
use super::*;

fn rel(a: f64, b: f64) -> f64 {
    (a / b - 1.0).abs()
}

fn features(r: &DataFeatures, ax: XAxis, ty: YTransform) -> &ViewFeatures {
    &r.view(ax, ty).expect("view present").features
}

#[test]
fn saturation_plateau_reached() {
    // y = a(1 − e^{−kx}), a = 40, k = 0.5, x to 5/k, 2 % noise of a
    let mut rng = Rng::new(11);
    let x = linspace(0.0, 10.0, 80);
    let y = noisy(&x, |t| 40.0 * (1.0 - (-0.5 * t).exp()), 0.8, &mut rng);
    let r = detect(&x, &y);
    let f = features(&r, XAxis::Linear, YTransform::Identity);
    let hi = f.high_plateau.as_ref().unwrap();
    assert!(hi.reached, "{hi:?}");
    assert!(rel(hi.level, 40.0) < 0.03, "level {}", hi.level);
    let lo = f.low_plateau.as_ref().unwrap();
    assert!(!lo.reached, "{lo:?}");
    assert!((r.noise - 0.8).abs() < 0.25, "noise {}", r.noise);
    let ic = f.intercept.as_ref().unwrap();
    assert!(ic.near && ic.value.abs() < 3.0, "{ic:?}");
    // initial slope a·k = 20 from a straight piece (secant, biased low)
    let s0 = f.initial_slope.unwrap();
    assert!(s0 > 12.0 && s0 < 22.0, "initial slope {s0}");
    let m = f.monotonicity.as_ref().unwrap();
    assert_eq!(m.direction, Direction::Increasing);
    assert!(m.spearman > 0.8);
    assert_eq!(f.low_curvature.as_ref().unwrap().bend, Bend::Concave);
    assert!(f.peaks.peaks.is_empty(), "{:?}", f.peaks.peaks);
}

#[test]
fn saturation_plateau_not_reached() {
    let mut rng = Rng::new(12);
    let x = linspace(0.0, 2.0, 60); // stops at 1/k
    let y = noisy(&x, |t| 40.0 * (1.0 - (-0.5 * t).exp()), 0.8, &mut rng);
    let r = detect(&x, &y);
    let f = features(&r, XAxis::Linear, YTransform::Identity);
    let hi = f.high_plateau.as_ref().unwrap();
    assert!(!hi.reached, "{hi:?}");
    let ymax = y.iter().cloned().fold(f64::MIN, f64::max);
    let tail_max = y[60 - hi.n_points..]
        .iter()
        .cloned()
        .fold(f64::MIN, f64::max);
    assert_eq!(hi.level, tail_max);
    assert!(hi.level <= ymax && hi.level < 40.0 * 0.75, "{}", hi.level);
}

#[test]
fn power_law_straight_in_log_log() {
    // y = 3 x^0.7 with 2 % relative noise over three decades
    let mut rng = Rng::new(13);
    let x = logspace(0.01, 10.0, 60);
    let y = noisy_rel(&x, |t| 3.0 * t.powf(0.7), 0.02, &mut rng);
    let r = detect(&x, &y);
    let f = features(&r, XAxis::Log, YTransform::Log);
    let s = f.segments.longest.as_ref().unwrap();
    assert_eq!(s.n_points, 60, "{s:?}");
    assert!((s.slope - 0.7).abs() < 0.05, "{s:?}");
    assert!((s.intercept - 3f64.ln()).abs() < 0.05, "{s:?}");
    assert!(s.r_squared > 0.99);
    // the same data in y vs x are not straight throughout
    let lin = features(&r, XAxis::Linear, YTransform::Identity);
    assert!(lin.segments.longest.as_ref().unwrap().n_points < 60);
}

#[test]
fn exponential_decay_straight_in_log_y() {
    // y = 8 e^{−0.3x}, 2 % relative noise, x over 3/k
    let mut rng = Rng::new(14);
    let x = linspace(0.0, 10.0, 50);
    let y = noisy_rel(&x, |t| 8.0 * (-0.3 * t).exp(), 0.02, &mut rng);
    let r = detect(&x, &y);
    let f = features(&r, XAxis::Linear, YTransform::Log);
    let s = f.segments.longest.as_ref().unwrap();
    assert!(s.n_points >= 48, "{s:?}");
    assert!((s.slope + 0.3).abs() < 0.01, "{s:?}");
    let ic = f.intercept.as_ref().unwrap();
    assert!((ic.value - 8f64.ln()).abs() < 0.05, "{ic:?}");
    let lin = features(&r, XAxis::Linear, YTransform::Identity);
    assert_eq!(
        lin.monotonicity.as_ref().unwrap().direction,
        Direction::Decreasing
    );
    assert_eq!(lin.low_curvature.as_ref().unwrap().bend, Bend::Convex);
}

#[test]
fn gaussian_peak_on_linear_baseline() {
    // 0.5 + 0.1x + 3 exp(−(x−6)²/(2·0.9²)); HWHM = 0.9·√(2 ln 2) = 1.0598
    let mut rng = Rng::new(15);
    let x = linspace(0.0, 15.0, 200);
    let y = noisy(
        &x,
        |t| 0.5 + 0.1 * t + 3.0 * (-(t - 6.0).powi(2) / (2.0 * 0.81)).exp(),
        0.06,
        &mut rng,
    );
    let r = detect(&x, &y);
    let f = features(&r, XAxis::Linear, YTransform::Identity);
    assert_eq!(f.peaks.peaks.len(), 1, "{:?}", f.peaks.peaks);
    let p = &f.peaks.peaks[0];
    assert!((p.centre - 6.0).abs() < 0.05, "{p:?}");
    assert!(rel(p.height, 3.0) < 0.04, "{p:?}");
    assert!(rel(p.hwhm.unwrap(), 1.0598) < 0.04, "{p:?}");
    assert!((p.baseline_slope - 0.1).abs() < 0.02, "{p:?}");
    assert!(rel(p.baseline_level, 1.1) < 0.06, "{p:?}");
    assert!(f.peaks.troughs.is_empty(), "{:?}", f.peaks.troughs);
    assert_eq!(
        f.monotonicity.as_ref().unwrap().direction,
        Direction::NotMonotone
    );
}

#[test]
fn overlapping_gaussians_two_peaks() {
    // separation 1.5 FWHM: σ = 1, centres 4 and 7.53, heights 2 and 1.5
    let mut rng = Rng::new(16);
    let x = linspace(0.0, 12.0, 240);
    let g = |t: f64, c: f64, h: f64| h * (-(t - c).powi(2) / 2.0).exp();
    let y = noisy(&x, |t| g(t, 4.0, 2.0) + g(t, 7.53, 1.5), 0.03, &mut rng);
    let f = detect_view(&View::build(&x, &y, XAxis::Linear, YTransform::Identity));
    let pk = &f.peaks;
    let mut centres: Vec<f64> = pk.peaks.iter().map(|p| p.centre).collect();
    centres.extend(pk.peak_shoulders.iter().map(|s| s.position));
    centres.sort_by(|a, b| a.total_cmp(b));
    assert_eq!(centres.len(), 2, "{pk:?}");
    assert!((centres[0] - 4.0).abs() < 0.3, "{centres:?}");
    assert!((centres[1] - 7.53).abs() < 0.3, "{centres:?}");
}

#[test]
fn shoulder_of_a_close_second_component() {
    // centres 5 and 7.2 (2.2 σ apart), heights 2 and 1: one maximum and a shoulder
    let mut rng = Rng::new(17);
    let x = linspace(0.0, 12.0, 300);
    let g = |t: f64, c: f64, h: f64| h * (-(t - c).powi(2) / 2.0).exp();
    let y = noisy(&x, |t| g(t, 5.0, 2.0) + g(t, 7.2, 1.0), 0.01, &mut rng);
    let f = detect_view(&View::build(&x, &y, XAxis::Linear, YTransform::Identity));
    let pk = &f.peaks;
    assert_eq!(pk.peaks.len(), 1, "{pk:?}");
    assert_eq!(pk.peak_shoulders.len(), 1, "{pk:?}");
    assert!((pk.peak_shoulders[0].position - 7.2).abs() < 0.5, "{pk:?}");
    assert!(
        pk.peaks[0].centre > 5.0 && pk.peaks[0].centre < 6.0,
        "{pk:?}"
    );
}

#[test]
fn two_periods_on_uneven_x() {
    let mut rng = Rng::new(18);
    let mut x: Vec<f64> = (0..300).map(|_| rng.uniform() * 400.0).collect();
    x.sort_by(|a, b| a.total_cmp(b));
    let tau = 2.0 * std::f64::consts::PI;
    let y = noisy(
        &x,
        |t| 5.0 + 0.01 * t + 1.0 * (tau * t / 12.0).sin() + 0.8 * (tau * t / 44.0 + 1.0).cos(),
        0.2,
        &mut rng,
    );
    let f = detect_view(&View::build(&x, &y, XAxis::Linear, YTransform::Identity));
    let top: Vec<f64> = f.periods.iter().take(3).map(|p| p.period).collect();
    assert!(top.iter().any(|&p| rel(p, 12.0) < 0.03), "{:?}", f.periods);
    assert!(top.iter().any(|&p| rel(p, 44.0) < 0.03), "{:?}", f.periods);
    assert!(
        f.periods[0].power_ratio > 20.0 && f.periods[0].false_alarm < 1e-6,
        "{:?}",
        f.periods
    );
}

#[test]
fn logistic_has_both_plateaus() {
    // 2 + 10/(1 + e^{−1.5(x−5)}), x over c ± 6/k·1.25
    let mut rng = Rng::new(19);
    let x = linspace(0.0, 10.0, 100);
    let y = noisy(
        &x,
        |t| 2.0 + 10.0 / (1.0 + (-1.5 * (t - 5.0)).exp()),
        0.2,
        &mut rng,
    );
    let f = detect_view(&View::build(&x, &y, XAxis::Linear, YTransform::Identity));
    let lo = f.low_plateau.as_ref().unwrap();
    let hi = f.high_plateau.as_ref().unwrap();
    assert!(lo.reached && hi.reached, "{lo:?} {hi:?}");
    assert!((lo.level - 2.0).abs() < 0.25, "{lo:?}");
    assert!((hi.level - 12.0).abs() < 0.25, "{hi:?}");
    assert_eq!(
        f.monotonicity.as_ref().unwrap().direction,
        Direction::Increasing
    );
    assert_eq!(f.low_curvature.as_ref().unwrap().bend, Bend::Straight);
}

#[test]
fn reciprocal_view_of_second_order_decay_is_linear() {
    // y = 1/(0.5 + 0.2x): 1/y = 0.5 + 0.2x, 1 % relative noise
    let mut rng = Rng::new(20);
    let x = linspace(0.0, 30.0, 40);
    let y = noisy_rel(&x, |t| 1.0 / (0.5 + 0.2 * t), 0.01, &mut rng);
    let r = detect(&x, &y);
    let f = features(&r, XAxis::Linear, YTransform::Reciprocal);
    let s = f.segments.longest.as_ref().unwrap();
    assert_eq!(s.n_points, 40, "{s:?}");
    assert!(
        rel(s.slope, 0.2) < 0.03 && (s.intercept - 0.5).abs() < 0.03,
        "{s:?}"
    );
    let ic = f.intercept.as_ref().unwrap();
    assert!((ic.value - 0.5).abs() < 0.05, "{ic:?}");
}

#[test]
fn unsorted_and_repeated_x_give_the_sorted_answer() {
    let mut rng = Rng::new(21);
    let x = linspace(0.0, 10.0, 40);
    let y = noisy(&x, |t| 40.0 * (1.0 - (-0.5 * t).exp()), 0.8, &mut rng);
    let a = detect(&x, &y);
    // shuffle deterministically and duplicate every point
    let mut idx: Vec<usize> = (0..40).collect();
    for i in (1..40).rev() {
        let j = (rng.next_u64() % (i as u64 + 1)) as usize;
        idx.swap(i, j);
    }
    let mut xs: Vec<f64> = idx.iter().map(|&i| x[i]).collect();
    let mut ys: Vec<f64> = idx.iter().map(|&i| y[i]).collect();
    xs.extend(idx.iter().rev().map(|&i| x[i]));
    ys.extend(idx.iter().rev().map(|&i| y[i]));
    let b = detect(&xs, &ys);
    let (fa, fb) = (&a.views[0], &b.views[0]);
    assert_eq!(fb.view.points, fa.view.points);
    assert!(fb.view.counts.iter().all(|&c| c == 2));
    assert_eq!(fb.features, fa.features);
    assert_eq!(b.n_input, 80);
}

#[test]
fn few_points_constant_and_extreme_magnitudes_do_not_panic() {
    for n in 0..7 {
        let x: Vec<f64> = (0..n).map(|i| i as f64 + 1.0).collect();
        let y: Vec<f64> = x.iter().map(|t| 2.0 * t).collect();
        let r = detect(&x, &y);
        assert_eq!(r.views.len(), 6);
        if n >= 5 {
            let f = &r.views[0].features;
            let s = f.segments.longest.as_ref().unwrap();
            assert!((s.slope - 2.0).abs() < 1e-9 && s.n_points == n);
        }
    }
    // constant response
    let x = linspace(1.0, 5.0, 9);
    let r = detect(&x, &[7.0; 9]);
    let f = &r.views[0].features;
    assert!(f.high_plateau.as_ref().unwrap().reached);
    assert_eq!(f.high_plateau.as_ref().unwrap().level, 7.0);
    assert_eq!(f.monotonicity.as_ref().unwrap().direction, Direction::Flat);
    assert!(f.peaks.peaks.is_empty() && f.periods.is_empty());
    // tiny x, huge y: exponential decay keeps its log-linear slope in view units
    let mut rng = Rng::new(22);
    let x: Vec<f64> = linspace(0.0, 5e-12, 30);
    let y = noisy_rel(&x, |t| 1e12 * (-4e11 * t).exp(), 0.01, &mut rng);
    let r = detect(&x, &y);
    let s = features(&r, XAxis::Linear, YTransform::Log)
        .segments
        .longest
        .clone()
        .unwrap();
    assert!(rel(s.slope, -4e11) < 0.03 && s.n_points >= 28, "{s:?}");
    // non-finite and negative-only data
    let r = detect(
        &[1.0, 2.0, f64::NAN, 4.0, 5.0, 6.0],
        &[-1.0, -2.0, -3.0, f64::INFINITY, -5.0, -6.0],
    );
    let lv = r.view(XAxis::Linear, YTransform::Log).unwrap();
    assert!(lv.view.negated && lv.view.excluded.non_finite == 2 && lv.view.len() == 4);
    assert_eq!(r.sign.pattern, SignPattern::Negative);
    assert!(serde_json::to_string(&r).is_ok());
}

mod no_panic {
    use super::super::*;
    use proptest::prelude::*;

    fn value() -> impl Strategy<Value = f64> {
        prop_oneof![
            -1e12f64..1e12,
            -1.0f64..1.0,
            Just(0.0),
            Just(1.0),
            Just(f64::NAN),
            Just(f64::INFINITY),
            Just(-1e-12),
            Just(1e-300),
            Just(f64::MAX),
        ]
    }

    proptest! {
        #![proptest_config(ProptestConfig { cases: 48, ..ProptestConfig::default() })]
        /// Any input, however degenerate, yields six views and finite-or-absent features.
        #[test]
        fn detect_never_panics(x in prop::collection::vec(value(), 0..14), y in prop::collection::vec(value(), 0..14)) {
            let r = detect(&x, &y);
            prop_assert_eq!(r.views.len(), 6);
            for v in &r.views {
                prop_assert!(v.view.points.iter().all(|p| p.0.is_finite() && p.1.is_finite()));
                prop_assert_eq!(v.view.len() + v.view.excluded.total() + v.view.counts.iter().map(|c| c - 1).sum::<usize>(), x.len().max(y.len()));
            }
        }

        /// Longer finite data with repeated x and any scale keep every reported number finite.
        #[test]
        fn finite_data_give_finite_features(
            pts in prop::collection::vec((0u8..30, -1.0f64..1.0), 5..80),
            scale in prop_oneof![Just(1e-12), Just(1.0), Just(1e12)],
            shift in prop_oneof![Just(0.0), Just(5.0), Just(-3.0)],
        ) {
            let x: Vec<f64> = pts.iter().map(|p| p.0 as f64 * scale).collect();
            let y: Vec<f64> = pts.iter().map(|p| (p.1 + shift) * scale).collect();
            let r = detect(&x, &y);
            let json = serde_json::to_string(&r).unwrap_or_default();
            prop_assert!(!json.is_empty());
            let f = &r.views[0].features;
            if let Some(s) = &f.segments.longest {
                prop_assert!(s.slope.is_finite() && s.intercept.is_finite());
            }
            for p in &f.peaks.peaks {
                prop_assert!(p.centre.is_finite() && p.height > 0.0);
            }
            for p in &f.periods {
                prop_assert!(p.period > 0.0 && p.power.is_finite());
            }
        }
    }
}
