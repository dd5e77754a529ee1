//! End-to-end tests of the search on hand-coded least-squares problems.

use super::*;
use crate::symbolic::Model;
use nalgebra::DMatrix;
use std::time::Duration;

/// A least-squares problem from two closures: residuals and Jacobian.
struct Closure<R, J>
where
    R: Fn(&[f64], &mut [f64]) + Sync,
    J: Fn(&[f64], &mut DMatrix<f64>) + Sync,
{
    m: usize,
    n: usize,
    r: R,
    j: J,
}

impl<R, J> Residuals for Closure<R, J>
where
    R: Fn(&[f64], &mut [f64]) + Sync,
    J: Fn(&[f64], &mut DMatrix<f64>) + Sync,
{
    fn n_obs(&self) -> usize {
        self.m
    }
    fn n_params(&self) -> usize {
        self.n
    }
    fn residuals(&self, p: &[f64], r: &mut [f64]) {
        (self.r)(p, r)
    }
    fn jacobian(&self, p: &[f64], j: &mut DMatrix<f64>) {
        (self.j)(p, j)
    }
}

fn names(v: &[&str]) -> Vec<String> {
    v.iter().map(|s| s.to_string()).collect()
}

/// ssr(a) = (a² − 1)² + (0.3·(a − 1))²: a global minimum at a = 1 (ssr 0) and a
/// local one near a = −0.955 (ssr ≈ 0.35), separated by a ridge near a = 0.
fn two_wells() -> impl Residuals {
    Closure {
        m: 2,
        n: 1,
        r: |p: &[f64], r: &mut [f64]| {
            r[0] = p[0] * p[0] - 1.0;
            r[1] = 0.3 * (p[0] - 1.0);
        },
        j: |p: &[f64], j: &mut DMatrix<f64>| {
            j[(0, 0)] = 2.0 * p[0];
            j[(1, 0)] = 0.3;
        },
    }
}

#[test]
fn two_minima_found_and_ranked_with_shares() {
    let p = two_wells();
    let scale = ParamScale {
        typical: 1.0,
        log: false,
        sign: SignFreedom::Either,
        lo: -2.0,
        hi: 2.0,
    };
    let opts = SearchOptions {
        starts: 24,
        seed: 5,
        ..Default::default()
    };
    let out = search(&p, &names(&["a"]), &[vec![0.5]], &[scale], &[], &opts);
    assert_eq!(out.candidates_tried, 24);
    assert_eq!(out.runs.len(), 24);
    assert_eq!(out.minima.len(), 2, "{:#?}", out.minima);
    let (best, second) = (&out.minima[0], &out.minima[1]);
    assert_eq!(best.rank, 1);
    assert!((best.params[0] - 1.0).abs() < 1e-10, "{:?}", best.params);
    assert!(best.ssr < 1e-20);
    assert!(
        second.params[0] < -0.95 && second.params[0] > -0.96,
        "{:?}",
        second.params
    );
    // Stationary point: 4a(a² − 1) + 0.18(a − 1) = 0 near a = −1.
    let a = second.params[0];
    assert!((4.0 * a * (a * a - 1.0) + 0.18 * (a - 1.0)).abs() < 1e-9);
    assert!((second.ssr - ((a * a - 1.0).powi(2) + 0.09 * (a - 1.0).powi(2))).abs() < 1e-12);
    // Shares: every run reached a minimum, on the side of the ridge it started.
    let right = out.runs.iter().filter(|r| r.start[0] > 0.0).count();
    assert_eq!(best.reached_by + second.reached_by, 24);
    assert_eq!(best.reached_by, right, "runs from a > 0 go to a = 1");
    assert!((best.share - right as f64 / 24.0).abs() < 1e-15);
    assert!((best.share + second.share - 1.0).abs() < 1e-15);
    assert!(right > 0 && right < 24);
    // Every run knows its minimum; the best start reached the best one in full.
    assert!(out.runs.iter().all(|r| r.minimum.is_some()));
    assert!(out.runs[0].full_length && out.runs[0].converged);
    assert_eq!(out.runs[0].minimum, Some(1));
    assert!(out.runs.iter().skip(8).all(|r| !r.full_length));
    assert!(best.divergent.is_empty() && second.divergent.is_empty());
    assert!(
        (best.condition - 1.0).abs() < 1e-12,
        "one column: condition 1"
    );
}

/// y = 3·e^(−0.5x) + e^(−2x) at 25 points on [0, 6]; parameters (a1, a2, k1, k2),
/// the order [`biexp_symmetries`] puts its model's parameters in.
fn biexponential() -> impl Residuals {
    let x: Vec<f64> = (0..25).map(|i| 0.25 * i as f64).collect();
    let y: Vec<f64> = x
        .iter()
        .map(|&t| 3.0 * (-0.5 * t).exp() + (-2.0 * t).exp())
        .collect();
    let (x1, x2) = (x.clone(), x);
    Closure {
        m: 25,
        n: 4,
        r: move |p: &[f64], r: &mut [f64]| {
            for (i, &t) in x1.iter().enumerate() {
                r[i] = p[0] * (-p[2] * t).exp() + p[1] * (-p[3] * t).exp() - y[i];
            }
        },
        j: move |p: &[f64], j: &mut DMatrix<f64>| {
            for (i, &t) in x2.iter().enumerate() {
                let (e1, e2) = ((-p[2] * t).exp(), (-p[3] * t).exp());
                j[(i, 0)] = e1;
                j[(i, 1)] = e2;
                j[(i, 2)] = -p[0] * t * e1;
                j[(i, 3)] = -p[1] * t * e2;
            }
        },
    }
}

fn biexp_symmetries() -> Vec<Vec<usize>> {
    let cols = names(&["x", "y"]);
    let m = Model::new("a1*exp(-k1*x) + a2*exp(-k2*x)", &cols, None)
        .unwrap()
        .with_param_order(&["a1", "a2", "k1", "k2"]);
    assert_eq!(m.params, names(&["a1", "a2", "k1", "k2"]));
    find_symmetries(&m)
}

fn biexp_scales() -> Vec<ParamScale> {
    let amp = ParamScale {
        typical: 2.0,
        log: true,
        sign: SignFreedom::Either,
        lo: -20.0,
        hi: 20.0,
    };
    let rate = ParamScale {
        typical: 1.0,
        log: true,
        sign: SignFreedom::Positive,
        lo: 0.01,
        hi: 100.0,
    };
    vec![amp.clone(), amp, rate.clone(), rate]
}

#[test]
fn swapped_terms_are_one_minimum() {
    let p = biexponential();
    let sym = biexp_symmetries();
    assert_eq!(sym, vec![vec![1, 0, 3, 2]]);
    // The same start twice, terms in either order.
    let starts = vec![vec![3.5, 0.8, 0.4, 2.5], vec![0.8, 3.5, 2.5, 0.4]];
    let opts = SearchOptions {
        starts: 16,
        seed: 1,
        ..Default::default()
    };
    let out = search(
        &p,
        &names(&["a1", "a2", "k1", "k2"]),
        &starts,
        &biexp_scales(),
        &sym,
        &opts,
    );
    let best = &out.minima[0];
    // Canonical order: the smaller amplitude first.
    let want = [1.0, 3.0, 2.0, 0.5];
    for (g, w) in best.params.iter().zip(want) {
        assert!((g - w).abs() < 1e-8, "{:?}", best.params);
    }
    assert!(best.ssr < 1e-20);
    assert_eq!(out.runs[0].minimum, Some(1));
    assert_eq!(out.runs[1].minimum, Some(1));
    // The two runs ended in mirror-image points.
    assert!((out.runs[0].end[0] - 3.0).abs() < 1e-8 && (out.runs[1].end[0] - 1.0).abs() < 1e-8);
    // No second minimum with the same sum of squares.
    assert!(
        out.minima.iter().skip(1).all(|m| m.ssr > 1e-12),
        "{:#?}",
        out.minima
    );
    assert!(best.reached_by >= 2);
    // Without the symmetry the two mirror images are two minima of equal ssr.
    let plain = search(
        &p,
        &names(&["a1", "a2", "k1", "k2"]),
        &starts,
        &biexp_scales(),
        &[],
        &opts,
    );
    let zero = plain.minima.iter().filter(|m| m.ssr < 1e-20).count();
    assert_eq!(zero, 2, "{:#?}", plain.minima);
}

#[test]
fn deterministic_across_thread_counts() -> Result<(), rayon::ThreadPoolBuildError> {
    let p = biexponential();
    let sym = biexp_symmetries();
    let starts = vec![vec![2.0, 2.0, 0.3, 3.0]];
    let nm = names(&["a1", "a2", "k1", "k2"]);
    let opts = SearchOptions {
        starts: 24,
        seed: 42,
        batch: 4,
        ..Default::default()
    };
    let run = |threads: usize, o: &SearchOptions| -> Result<String, rayon::ThreadPoolBuildError> {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()?;
        let out = pool.install(|| search(&p, &nm, &starts, &biexp_scales(), &sym, o));
        Ok(serde_json::to_string(&out).unwrap_or_default())
    };
    let one = run(1, &opts)?;
    let two = run(2, &opts)?;
    assert!(one.len() > 100);
    assert_eq!(one, two);
    let other = run(
        2,
        &SearchOptions {
            seed: 43,
            ..opts.clone()
        },
    )?;
    assert_ne!(one, other, "another seed gives other quasi-random starts");
    Ok(())
}

#[test]
fn divergent_parameters_flagged() {
    // y = a·x/(b + x) on data that lie on the line y = 2x: the fit improves
    // without end as a, b → ∞ with a/b → 2.
    let x: Vec<f64> = (1..=10).map(|i| i as f64).collect();
    let (x1, x2) = (x.clone(), x);
    let p = Closure {
        m: 10,
        n: 2,
        r: move |p: &[f64], r: &mut [f64]| {
            for (i, &t) in x1.iter().enumerate() {
                r[i] = p[0] * t / (p[1] + t) - 2.0 * t;
            }
        },
        j: move |p: &[f64], j: &mut DMatrix<f64>| {
            for (i, &t) in x2.iter().enumerate() {
                j[(i, 0)] = t / (p[1] + t);
                j[(i, 1)] = -p[0] * t / (p[1] + t).powi(2);
            }
        },
    };
    let opts = SearchOptions {
        starts: 4,
        seed: 3,
        ..Default::default()
    };
    let out = search(&p, &names(&["a", "b"]), &[vec![10.0, 5.0]], &[], &[], &opts);
    assert!(!out.minima.is_empty(), "{:#?}", out.runs);
    let m = &out.minima[0];
    assert!(!m.divergent.is_empty(), "{m:#?}");
    assert!(m.divergent.contains(&1), "{m:#?}");
    let json = serde_json::to_string(&out).unwrap_or_default();
    assert!(
        json.contains("\"divergent\":[0,1]") || json.contains("\"divergent\":[1]"),
        "{json}"
    );
}

#[test]
fn time_limit_checked_between_batches() {
    let x: Vec<f64> = (0..5).map(|i| i as f64).collect();
    let x2 = x.clone();
    let slow = Closure {
        m: 5,
        n: 1,
        r: move |p: &[f64], r: &mut [f64]| {
            std::thread::sleep(Duration::from_millis(2));
            for (i, &t) in x.iter().enumerate() {
                r[i] = p[0] * t - t;
            }
        },
        j: move |_p: &[f64], j: &mut DMatrix<f64>| {
            for (i, &t) in x2.iter().enumerate() {
                j[(i, 0)] = t;
            }
        },
    };
    let opts = SearchOptions {
        starts: 40,
        seed: 0,
        batch: 3,
        time_limit: Some(Duration::from_millis(1)),
        ..Default::default()
    };
    let out = search(&slow, &names(&["a"]), &[vec![3.0]], &[], &[], &opts);
    assert_eq!(out.candidates_tried, 3, "only the first batch runs");
    assert!(out.stopped_by_time);
    assert!((out.minima[0].params[0] - 1.0).abs() < 1e-12);
    let free = search(
        &slow,
        &names(&["a"]),
        &[vec![3.0]],
        &[],
        &[],
        &SearchOptions {
            starts: 6,
            batch: 3,
            ..opts.clone()
        },
    );
    assert!(!free.stopped_by_time || free.candidates_tried == 3);
    let unlimited = SearchOptions {
        starts: 6,
        batch: 3,
        time_limit: None,
        ..opts
    };
    let all = search(&slow, &names(&["a"]), &[vec![3.0]], &[], &[], &unlimited);
    assert_eq!(all.candidates_tried, 6);
    assert!(!all.stopped_by_time);
}

#[test]
fn later_runs_are_abandoned_into_known_basins() {
    // Many starts on the single-minimum biexponential: some later runs should be
    // credited to the minimum found by the first batch instead of converging.
    let p = biexponential();
    let sym = biexp_symmetries();
    let opts = SearchOptions {
        starts: 32,
        seed: 7,
        leg_iterations: 1,
        ..Default::default()
    };
    let out = search(
        &p,
        &names(&["a1", "a2", "k1", "k2"]),
        &[vec![2.5, 1.5, 0.6, 1.8]],
        &biexp_scales(),
        &sym,
        &opts,
    );
    let credited: usize = out.minima.iter().map(|m| m.credited).sum();
    let abandoned = out
        .runs
        .iter()
        .filter(|r| r.abandoned_into.is_some())
        .count();
    assert_eq!(credited, abandoned);
    assert!(
        abandoned > 0,
        "{:#?}",
        out.runs
            .iter()
            .map(|r| (r.iterations, r.stop, r.minimum))
            .collect::<Vec<_>>()
    );
    for r in out.runs.iter().filter(|r| r.abandoned_into.is_some()) {
        assert_eq!(r.abandoned_into, r.minimum);
        assert!(!r.full_length && !r.converged);
    }
    assert!(out.minima[0].ssr < 1e-20);
}
