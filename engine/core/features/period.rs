//! Dominant periods of a response sampled at uneven x: the Lomb–Scargle
//! periodogram (Lomb 1976; Scargle 1982) of the linearly detrended data.

use super::linefit::fit_line;
use super::robust::median;
use serde::Serialize;

/// One dominant period.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Period {
    /// Period in x units.
    pub period: f64,
    /// Frequency (cycles per x unit).
    pub frequency: f64,
    /// Scargle's normalised power (variance-normalised, ≈1 for pure noise).
    pub power: f64,
    /// Power ÷ median power over the spectrum: a significance-like ratio.
    pub power_ratio: f64,
    /// False-alarm probability 1 − (1 − e^(−power))^n with n independent
    /// frequencies taken as the number of points (Horne & Baliunas 1986 approximation).
    pub false_alarm: f64,
}

/// Normalised Lomb–Scargle power at angular frequency ω of zero-mean y at x.
/// One sine and cosine per point (into `trig`, a scratch buffer): the double
/// angle gives the offset τ, the angle difference the shifted terms.
fn ls_power(x: &[f64], y: &[f64], var: f64, omega: f64, trig: &mut Vec<(f64, f64)>) -> f64 {
    trig.clear();
    trig.extend(x.iter().map(|&t| (omega * t).sin_cos()));
    let (mut s2, mut c2) = (0.0, 0.0);
    for &(s, c) in trig.iter() {
        s2 += 2.0 * s * c;
        c2 += (c - s) * (c + s);
    }
    let tau = s2.atan2(c2) / (2.0 * omega);
    let (st, ct) = (omega * tau).sin_cos();
    let (mut yc, mut ys, mut cc, mut ss) = (0.0, 0.0, 0.0, 0.0);
    for (&(s1, c1), &v) in trig.iter().zip(y) {
        // sin and cos of ω(t − τ)
        let s = s1 * ct - c1 * st;
        let c = c1 * ct + s1 * st;
        yc += v * c;
        ys += v * s;
        cc += c * c;
        ss += s * s;
    }
    let mut p = 0.0;
    if cc > 0.0 {
        p += yc * yc / cc;
    }
    if ss > 0.0 {
        p += ys * ys / ss;
    }
    p / (2.0 * var)
}

/// The periodogram on an oversampled grid from 1/span to the mean Nyquist
/// frequency n/(2·span): (frequency, power) pairs. Empty for < 8 points or constant y.
pub fn periodogram(x: &[f64], y: &[f64]) -> Vec<(f64, f64)> {
    let n = x.len().min(y.len());
    if n < 8 {
        return Vec::new();
    }
    let span = x[n - 1] - x[0];
    if span <= 0.0 || !span.is_finite() {
        return Vec::new();
    }
    let Some(line) = fit_line(&x[..n], &y[..n], None) else {
        return Vec::new();
    };
    let x0 = x[0] + 0.5 * span;
    let xs: Vec<f64> = x[..n].iter().map(|t| (t - x0) / span).collect();
    let r: Vec<f64> = (0..n).map(|i| y[i] - line.at(x[i])).collect();
    let mean = r.iter().sum::<f64>() / n as f64;
    let r: Vec<f64> = r.iter().map(|v| v - mean).collect();
    let var = r.iter().map(|v| v * v).sum::<f64>() / (n - 1) as f64;
    if var <= 0.0 || !var.is_finite() {
        return Vec::new();
    }
    // frequencies in cycles per span
    let oversample = 8.0;
    let f_hi = 0.5 * n as f64;
    let count = (((f_hi - 1.0) * oversample) as usize).clamp(1, 8000);
    let step = (f_hi - 1.0).max(0.0) / count as f64;
    let mut trig = Vec::with_capacity(n);
    (0..=count)
        .map(|k| {
            let f = 1.0 + k as f64 * step;
            let p = ls_power(&xs, &r, var, 2.0 * std::f64::consts::PI * f, &mut trig);
            (f / span, p)
        })
        .collect()
}

/// Up to `max` distinct dominant periods, strongest first; peaks closer than one
/// resolution element (1/span in frequency) to a stronger one are skipped.
pub fn dominant_periods(x: &[f64], y: &[f64], max: usize) -> Vec<Period> {
    let n = x.len().min(y.len());
    let spec = periodogram(x, y);
    if spec.len() < 3 {
        return Vec::new();
    }
    let span = x[n - 1] - x[0];
    let powers: Vec<f64> = spec.iter().map(|p| p.1).collect();
    let med = median(&powers).unwrap_or(0.0);
    let mut locals: Vec<usize> = (1..spec.len() - 1)
        .filter(|&k| spec[k].1 > spec[k - 1].1 && spec[k].1 >= spec[k + 1].1)
        .collect();
    locals.sort_by(|&a, &b| spec[b].1.total_cmp(&spec[a].1));
    let mut out: Vec<Period> = Vec::new();
    for k in locals {
        if out.len() >= max {
            break;
        }
        // parabolic refinement of the peak frequency (three grid points)
        let (f0, p0) = spec[k - 1];
        let (f1, p1) = spec[k];
        let (_, p2) = spec[k + 1];
        let denom = p0 - 2.0 * p1 + p2;
        let df = f1 - f0;
        let (f, p) = if denom < 0.0 {
            let d = 0.5 * (p0 - p2) / denom;
            (f1 + d * df, p1 - 0.25 * (p0 - p2) * d)
        } else {
            (f1, p1)
        };
        if f <= 0.0 || out.iter().any(|q| (q.frequency - f).abs() < 1.0 / span) {
            continue;
        }
        let false_alarm = 1.0 - (1.0 - (-p).exp()).powi(n as i32);
        out.push(Period {
            period: 1.0 / f,
            frequency: f,
            power: p,
            power_ratio: if med > 0.0 { p / med } else { f64::INFINITY },
            false_alarm,
        });
    }
    out
}
