//! The local fitter on the NIST StRD nonlinear regression problems
//! (NIST Statistical Reference Datasets, https://www.itl.nist.gov/div898/strd/),
//! scored by the log relative error as in Mondragon & Borchers (2005),
//! "A comparison of nonlinear regression codes", J. Mod. Appl. Stat. Methods 4(1).
//!
//! Models are hand-coded in Rust over a small forward-mode dual number, so the
//! Jacobian is exact (automatic differentiation), not a finite difference.
//! The files are read from `$FOOTHOLD_STRD_DIR` or `../shared/nist-strd/`.

use foothold::fit::lm::{levenberg_marquardt, LmOptions};
use foothold::fit::stats::summarize;
use foothold::fit::Residuals;
use nalgebra::DMatrix;
use std::ops::{Add, Div, Mul, Neg, Sub};
use std::path::PathBuf;

const MAXP: usize = 9;

/// Value and partial derivatives with respect to up to MAXP parameters.
#[derive(Clone, Copy, Debug)]
struct D {
    v: f64,
    d: [f64; MAXP],
}

impl D {
    fn c(v: f64) -> D {
        D { v, d: [0.0; MAXP] }
    }
    fn var(v: f64, k: usize) -> D {
        let mut d = [0.0; MAXP];
        d[k] = 1.0;
        D { v, d }
    }
    fn chain(self, v: f64, dv: f64) -> D {
        let mut d = self.d;
        d.iter_mut().for_each(|x| *x *= dv);
        D { v, d }
    }
    fn exp(self) -> D {
        let e = self.v.exp();
        self.chain(e, e)
    }
    fn cos(self) -> D {
        self.chain(self.v.cos(), -self.v.sin())
    }
    fn sin(self) -> D {
        self.chain(self.v.sin(), self.v.cos())
    }
    /// Two-argument arctangent atan2(self, x), angle of the point (x, self).
    fn atan2(self, x: D) -> D {
        let v = self.v.atan2(x.v);
        let r2 = x.v * x.v + self.v * self.v;
        let mut d = [0.0; MAXP];
        for k in 0..MAXP {
            d[k] = (x.v * self.d[k] - self.v * x.d[k]) / r2;
        }
        D { v, d }
    }
    fn sqr(self) -> D {
        self * self
    }
    /// self^e for a dual exponent: exp(e·ln self).
    fn pow(self, e: D) -> D {
        let v = self.v.powf(e.v);
        let mut d = [0.0; MAXP];
        for k in 0..MAXP {
            let a = if self.d[k] != 0.0 {
                e.v * self.v.powf(e.v - 1.0) * self.d[k]
            } else {
                0.0
            };
            let b = if e.d[k] != 0.0 {
                v * self.v.ln() * e.d[k]
            } else {
                0.0
            };
            d[k] = a + b;
        }
        D { v, d }
    }
    fn powf(self, e: f64) -> D {
        self.chain(self.v.powf(e), e * self.v.powf(e - 1.0))
    }
}

impl Add for D {
    type Output = D;
    fn add(self, o: D) -> D {
        let mut d = self.d;
        for k in 0..MAXP {
            d[k] += o.d[k];
        }
        D { v: self.v + o.v, d }
    }
}
impl Sub for D {
    type Output = D;
    fn sub(self, o: D) -> D {
        let mut d = self.d;
        for k in 0..MAXP {
            d[k] -= o.d[k];
        }
        D { v: self.v - o.v, d }
    }
}
impl Mul for D {
    type Output = D;
    fn mul(self, o: D) -> D {
        let mut d = [0.0; MAXP];
        for k in 0..MAXP {
            d[k] = self.d[k] * o.v + self.v * o.d[k];
        }
        D { v: self.v * o.v, d }
    }
}
impl Div for D {
    type Output = D;
    fn div(self, o: D) -> D {
        let v = self.v / o.v;
        let mut d = [0.0; MAXP];
        for k in 0..MAXP {
            d[k] = (self.d[k] - v * o.d[k]) / o.v;
        }
        D { v, d }
    }
}
impl Neg for D {
    type Output = D;
    fn neg(self) -> D {
        self.chain(-self.v, -1.0)
    }
}
impl Add<f64> for D {
    type Output = D;
    fn add(self, o: f64) -> D {
        D {
            v: self.v + o,
            d: self.d,
        }
    }
}
impl Sub<f64> for D {
    type Output = D;
    fn sub(self, o: f64) -> D {
        D {
            v: self.v - o,
            d: self.d,
        }
    }
}
impl Mul<f64> for D {
    type Output = D;
    fn mul(self, o: f64) -> D {
        self.chain(self.v * o, o)
    }
}
impl Div<f64> for D {
    type Output = D;
    fn div(self, o: f64) -> D {
        self.chain(self.v / o, 1.0 / o)
    }
}

/// A model f(x; b) as a plain function over duals; `x` is one data row.
type ModelFn = fn(&[f64], &[D]) -> D;

/// A NIST problem as the fitter sees it: r = y − f(x; b).
struct Strd {
    y: Vec<f64>,
    x: Vec<Vec<f64>>,
    np: usize,
    f: ModelFn,
    /// Nelson's response is ln y.
    log_y: bool,
}

impl Strd {
    fn eval(&self, i: usize, p: &[f64]) -> D {
        let b: Vec<D> = p.iter().enumerate().map(|(k, v)| D::var(*v, k)).collect();
        (self.f)(&self.x[i], &b)
    }
    fn yv(&self, i: usize) -> f64 {
        if self.log_y {
            self.y[i].ln()
        } else {
            self.y[i]
        }
    }
}

impl Residuals for Strd {
    fn n_obs(&self) -> usize {
        self.y.len()
    }
    fn n_params(&self) -> usize {
        self.np
    }
    fn residuals(&self, p: &[f64], r: &mut [f64]) {
        for i in 0..self.y.len() {
            r[i] = self.yv(i) - self.eval(i, p).v;
        }
    }
    fn jacobian(&self, p: &[f64], j: &mut DMatrix<f64>) {
        for i in 0..self.y.len() {
            let e = self.eval(i, p);
            for k in 0..self.np {
                j[(i, k)] = -e.d[k];
            }
        }
    }
}

/// The parts of a NIST StRD file the test needs.
struct StrdFile {
    start1: Vec<f64>,
    start2: Vec<f64>,
    certified: Vec<f64>,
    certified_sd: Vec<f64>,
    certified_ssr: f64,
    y: Vec<f64>,
    x: Vec<Vec<f64>>,
}

fn parse_numbers(s: &str) -> Option<Vec<f64>> {
    let v: Result<Vec<f64>, _> = s.split_whitespace().map(|t| t.parse::<f64>()).collect();
    v.ok().filter(|v| !v.is_empty())
}

/// Reads the parameter table (`b1 = start1 start2 certified sd`), the
/// certified residual sum of squares and the data block after the last "Data:" line.
fn parse_strd(text: &str) -> Result<StrdFile, String> {
    let lines: Vec<&str> = text.lines().collect();
    let (mut start1, mut start2, mut certified, mut certified_sd) =
        (vec![], vec![], vec![], vec![]);
    let mut certified_ssr = f64::NAN;
    for line in &lines {
        let t = line.trim();
        if let Some((lhs, rhs)) = t.split_once('=') {
            let lhs = lhs.trim();
            if lhs.starts_with('b') && lhs[1..].parse::<usize>().is_ok() {
                let nums = parse_numbers(rhs).ok_or_else(|| format!("bad parameter line: {t}"))?;
                if nums.len() != 4 {
                    return Err(format!("expected 4 numbers in: {t}"));
                }
                start1.push(nums[0]);
                start2.push(nums[1]);
                certified.push(nums[2]);
                certified_sd.push(nums[3]);
            }
        }
        if let Some(rest) = t.strip_prefix("Residual Sum of Squares:") {
            certified_ssr = rest.trim().parse().unwrap_or(f64::NAN);
        }
    }
    let data_at = lines
        .iter()
        .rposition(|l| l.trim_start().starts_with("Data:"))
        .ok_or("no Data: line")?;
    let (mut y, mut x) = (vec![], vec![]);
    for line in &lines[data_at + 1..] {
        if let Some(nums) = parse_numbers(line) {
            if nums.len() < 2 {
                return Err(format!("short data row: {line}"));
            }
            y.push(nums[0]);
            x.push(nums[1..].to_vec());
        }
    }
    if certified.is_empty() || y.is_empty() {
        return Err("empty parameter table or data".into());
    }
    Ok(StrdFile {
        start1,
        start2,
        certified,
        certified_sd,
        certified_ssr,
        y,
        x,
    })
}

fn strd_dir() -> Option<PathBuf> {
    let mut candidates = vec![];
    if let Ok(d) = std::env::var("FOOTHOLD_STRD_DIR") {
        candidates.push(PathBuf::from(d));
    }
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    candidates.push(root.join("../shared/nist-strd"));
    // A worktree one level further down.
    candidates.push(root.join("../../shared/nist-strd"));
    candidates
        .into_iter()
        .find(|d| d.join("Misra1a.dat").is_file())
}

/// Log relative error (Mondragon & Borchers 2005), capped to [0, 11]; the
/// problem's score is the minimum over parameters.
fn lre(est: &[f64], cert: &[f64]) -> f64 {
    est.iter()
        .zip(cert)
        .map(|(e, c)| {
            if !e.is_finite() {
                return 0.0;
            }
            let rel = if *c == 0.0 {
                (e - c).abs()
            } else {
                ((e - c) / c).abs()
            };
            if rel == 0.0 {
                11.0
            } else {
                (-rel.log10()).clamp(0.0, 11.0)
            }
        })
        .fold(11.0, f64::min)
}

const PI: f64 = std::f64::consts::PI;

/// All 27 problems, models as published by NIST (b1 = b[0], …).
fn models() -> Vec<(&'static str, ModelFn, bool)> {
    vec![
        (
            "Misra1a",
            |x, b| b[0] * (D::c(1.0) - (-b[1] * x[0]).exp()),
            false,
        ),
        (
            "Chwirut2",
            |x, b| (-b[0] * x[0]).exp() / (b[1] + b[2] * x[0]),
            false,
        ),
        (
            "Chwirut1",
            |x, b| (-b[0] * x[0]).exp() / (b[1] + b[2] * x[0]),
            false,
        ),
        ("Lanczos3", lanczos, false),
        ("Gauss1", gauss, false),
        ("Gauss2", gauss, false),
        ("DanWood", |x, b| b[0] * D::c(x[0]).pow(b[1]), false),
        (
            "Misra1b",
            |x, b| b[0] * (D::c(1.0) - (b[1] * x[0] / 2.0 + 1.0).powf(-2.0)),
            false,
        ),
        (
            "Kirby2",
            |x, b| {
                let x = x[0];
                (b[0] + b[1] * x + b[2] * x * x) / (b[3] * x + b[4] * x * x + 1.0)
            },
            false,
        ),
        (
            "Hahn1",
            |x, b| {
                let x = x[0];
                (b[0] + b[1] * x + b[2] * x * x + b[3] * x * x * x)
                    / (b[4] * x + b[5] * x * x + b[6] * x * x * x + 1.0)
            },
            false,
        ),
        (
            "Nelson",
            |x, b| b[0] - b[1] * x[0] * (-b[2] * x[1]).exp(),
            true,
        ),
        (
            "MGH17",
            |x, b| b[0] + b[1] * (-b[3] * x[0]).exp() + b[2] * (-b[4] * x[0]).exp(),
            false,
        ),
        ("Lanczos1", lanczos, false),
        ("Lanczos2", lanczos, false),
        ("Gauss3", gauss, false),
        (
            "Misra1c",
            |x, b| b[0] * (D::c(1.0) - (b[1] * 2.0 * x[0] + 1.0).powf(-0.5)),
            false,
        ),
        (
            "Misra1d",
            |x, b| b[0] * b[1] * x[0] / (b[1] * x[0] + 1.0),
            false,
        ),
        // NIST writes arctan[b3/(x−b4)]; its certified values correspond to the
        // branch atan2(b3, x−b4) (all x < b4 here). The principal arctan reaches
        // the same sum of squares with b1 smaller by exactly 1.
        (
            "Roszman1",
            |x, b| b[0] - b[1] * x[0] - b[2].atan2(-b[3] + x[0]) / PI,
            false,
        ),
        (
            "ENSO",
            |x, b| {
                let w = 2.0 * PI * x[0];
                b[0] + D::c((w / 12.0).cos()) * b[1]
                    + D::c((w / 12.0).sin()) * b[2]
                    + b[4] * (D::c(w) / b[3]).cos()
                    + b[5] * (D::c(w) / b[3]).sin()
                    + b[7] * (D::c(w) / b[6]).cos()
                    + b[8] * (D::c(w) / b[6]).sin()
            },
            false,
        ),
        (
            "MGH09",
            |x, b| {
                let x = x[0];
                b[0] * (b[1] * x + x * x) / (b[2] * x + b[3] + x * x)
            },
            false,
        ),
        (
            "Thurber",
            |x, b| {
                let x = x[0];
                (b[0] + b[1] * x + b[2] * x * x + b[3] * x * x * x)
                    / (b[4] * x + b[5] * x * x + b[6] * x * x * x + 1.0)
            },
            false,
        ),
        (
            "BoxBOD",
            |x, b| b[0] * (D::c(1.0) - (-b[1] * x[0]).exp()),
            false,
        ),
        (
            "Rat42",
            |x, b| b[0] / ((b[1] - b[2] * x[0]).exp() + 1.0),
            false,
        ),
        ("MGH10", |x, b| b[0] * (b[1] / (b[2] + x[0])).exp(), false),
        (
            "Eckerle4",
            |x, b| (b[0] / b[1]) * (((D::c(x[0]) - b[2]) / b[1]).sqr() * -0.5).exp(),
            false,
        ),
        (
            "Rat43",
            |x, b| b[0] / ((b[1] - b[2] * x[0]).exp() + 1.0).pow(D::c(1.0) / b[3]),
            false,
        ),
        (
            "Bennett5",
            |x, b| b[0] * (b[1] + x[0]).pow(-(D::c(1.0) / b[2])),
            false,
        ),
    ]
}

fn lanczos(x: &[f64], b: &[D]) -> D {
    let x = x[0];
    b[0] * (-b[1] * x).exp() + b[2] * (-b[3] * x).exp() + b[4] * (-b[5] * x).exp()
}

fn gauss(x: &[f64], b: &[D]) -> D {
    let x = x[0];
    b[0] * (-b[1] * x).exp()
        + b[2] * ((D::c(x) - b[3]).sqr() * -1.0 / b[4].sqr()).exp()
        + b[5] * ((D::c(x) - b[6]).sqr() * -1.0 / b[7].sqr()).exp()
}

/// Runs that a plain local fitter is not expected to solve from NIST's far
/// start; they would be printed but not asserted. Empty: with the default
/// options every one of the 54 runs reaches LRE ≥ 4 (observed, not promised
/// by the method; MGH09, MGH10, Bennett5 start 1 are the slow ones).
const KNOWN_HARD: &[(&str, usize)] = &[];

#[test]
fn nist_strd_from_both_starts() {
    let Some(dir) = strd_dir() else {
        eprintln!(
            "NIST StRD files not found at $FOOTHOLD_STRD_DIR or {}/../shared/nist-strd; skipping",
            env!("CARGO_MANIFEST_DIR")
        );
        return;
    };
    let opts = LmOptions::default();
    let mut all = vec![];
    let mut bad = vec![];
    let mut se_scores = vec![];
    for (name, f, log_y) in models() {
        let path = dir.join(format!("{name}.dat"));
        let text = match std::fs::read_to_string(&path) {
            Ok(t) => t,
            Err(e) => {
                eprintln!("{}: cannot read ({e}); skipping", path.display());
                continue;
            }
        };
        let file = parse_strd(&text).unwrap_or_else(|e| panic!("{name}: {e}"));
        let np = file.certified.len();
        let problem = Strd {
            y: file.y.clone(),
            x: file.x.clone(),
            np,
            f,
            log_y,
        };
        for (k, start) in [&file.start1, &file.start2].into_iter().enumerate() {
            let res = levenberg_marquardt(&problem, start, &opts);
            let score = lre(&res.params, &file.certified);
            let ssr_lre = lre(&[res.ssr], &[file.certified_ssr]);
            let names: Vec<String> = (1..=np).map(|i| format!("b{i}")).collect();
            let summary = summarize(&names, &res);
            let se: Vec<f64> = summary.parameters.iter().map(|e| e.std_error).collect();
            let se_lre = lre(&se, &file.certified_sd);
            // Lanczos1 is an exact fit whose certified residuals are rounding
            // noise, so its standard errors are noise too: printed only.
            if name != "Lanczos1" {
                se_scores.push(se_lre);
            }
            println!(
                "{name:9} start {}: LRE {score:5.2}  (ssr {ssr_lre:5.2}, se {se_lre:5.2})  {:?}  iter {} eval {}",
                k + 1,
                res.stop,
                res.iterations,
                res.evaluations
            );
            if score < 9.0 && std::env::var("FOOTHOLD_STRD_VERBOSE").is_ok() {
                for (e, c) in res.params.iter().zip(&file.certified) {
                    println!("      {e:>22.15e} {c:>22.15e}");
                }
            }
            all.push(score);
            if score < 4.0 && !KNOWN_HARD.contains(&(name, k + 1)) {
                bad.push(format!("{name} start {}: LRE {score:.2}", k + 1));
            }
        }
    }
    let mean = all.iter().sum::<f64>() / all.len().max(1) as f64;
    let fails = all.iter().filter(|s| **s < 4.0).count();
    println!(
        "runs {}  mean LRE {mean:.2}  failures (LRE < 4) {fails}",
        all.len()
    );
    let se_min = se_scores.iter().cloned().fold(11.0, f64::min);
    println!("standard errors against certified SDs: worst LRE {se_min:.2}");
    assert!(bad.is_empty(), "runs below LRE 4: {bad:?}");
    assert!(
        se_min >= 6.0,
        "a standard error agrees with NIST to fewer than 6 digits"
    );
    if all.len() == 54 {
        // The project's acceptance bar for the whole suite.
        assert!(mean >= 9.0, "mean LRE {mean:.2} < 9");
        assert!(fails <= 2, "{fails} runs below LRE 4");
    }
}

#[test]
fn parser_reads_a_minimal_file() {
    let text = "header\n  b1 =   1   2   3.5E+00  1E-01\n  b2 = 4 5 6 7\n\
                Residual Sum of Squares:  1.25E+00\nData:   y   x\n  1.0  2.0\n  3.0  4.0\n";
    let f = parse_strd(text).expect("parses");
    assert_eq!(f.start1, vec![1.0, 4.0]);
    assert_eq!(f.start2, vec![2.0, 5.0]);
    assert_eq!(f.certified, vec![3.5, 6.0]);
    assert_eq!(f.certified_sd, vec![0.1, 7.0]);
    assert_eq!(f.certified_ssr, 1.25);
    assert_eq!(f.y, vec![1.0, 3.0]);
    assert_eq!(f.x, vec![vec![2.0], vec![4.0]]);
}

#[test]
fn lre_is_capped_and_minimised() {
    assert_eq!(lre(&[1.0], &[1.0]), 11.0);
    assert!((lre(&[1.001], &[1.0]) - 3.0).abs() < 1e-9);
    assert_eq!(lre(&[5.0, 1.0], &[1.0, 1.0]), 0.0);
    assert_eq!(lre(&[f64::NAN], &[1.0]), 0.0);
}
