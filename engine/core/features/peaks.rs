//! Peaks, troughs and shoulders of a response on a linear x axis.
//!
//! The data are smoothed by Savitzky & Golay (1964) local quadratics; peaks are
//! interior maxima of the smoothed curve with enough topographic prominence (the
//! drop to the higher of the two lowest points reached before the curve climbs
//! above the peak again). The baseline is a straight line fitted to the points
//! away from every peak, or the line between a peak's two flanking minima when too
//! few such points remain. Centre and height come from Caruana's log-parabola
//! fit of the top half with Guo's (2011) y² weights, half width at half maximum
//! from the half-height crossings of the smoothed curve. Shoulders (overlapping
//! peaks too close to make their own maximum) are significant minima of the
//! smoothed second derivative inside a peak's region but away from its centre.

use super::linefit::fit_line;
use super::robust::{median, theil_sen};
use super::smooth::savitzky_golay;
use serde::Serialize;

/// A peak (or a trough, with signs described below) standing out from a baseline.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Peak {
    /// x of the top (bottom for a trough).
    pub centre: f64,
    /// Height above the baseline at the centre (for a trough: depth below it, positive).
    pub height: f64,
    /// Value of the curve at the centre (baseline ± height).
    pub value: f64,
    /// Baseline value at the centre.
    pub baseline_level: f64,
    /// Baseline slope.
    pub baseline_slope: f64,
    /// Half width at half maximum (mean of the sides found), if measurable.
    pub hwhm: Option<f64>,
    /// Half width on the low-x side.
    pub hwhm_left: Option<f64>,
    /// Half width on the high-x side.
    pub hwhm_right: Option<f64>,
    /// Topographic prominence of the smoothed curve.
    pub prominence: f64,
    /// Index of the smoothed maximum in the view.
    pub index: usize,
}

/// A shoulder: an overlapping component seen only as a bend of the curve.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Shoulder {
    /// x of the minimum of the second derivative (maximum for a trough shoulder).
    pub position: f64,
    /// Height of the smoothed curve above the baseline there (depth for troughs).
    pub height: f64,
    /// Smoothed second derivative there.
    pub curvature: f64,
    /// Index (in `peaks` or `troughs`) of the peak whose flank it sits on.
    pub on_peak: usize,
}

/// Peaks, troughs and shoulders of one view.
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct PeakFeatures {
    /// Local maxima standing above the baseline, highest first.
    pub peaks: Vec<Peak>,
    /// Local minima standing below the baseline (negative peaks), deepest first.
    pub troughs: Vec<Peak>,
    /// Shoulders on the flanks of peaks.
    pub peak_shoulders: Vec<Shoulder>,
    /// Shoulders on the flanks of troughs.
    pub trough_shoulders: Vec<Shoulder>,
}

/// Find peaks, troughs and shoulders of (x, y) (x strictly increasing) with noise σ.
pub fn find_peaks(x: &[f64], y: &[f64], sigma: f64) -> PeakFeatures {
    let (peaks, peak_shoulders) = maxima(x, y, sigma);
    let neg: Vec<f64> = y.iter().map(|v| -v).collect();
    let (mut troughs, mut trough_shoulders) = maxima(x, &neg, sigma);
    for t in &mut troughs {
        t.value = -t.value;
        t.baseline_level = -t.baseline_level;
        t.baseline_slope = -t.baseline_slope;
    }
    for s in &mut trough_shoulders {
        s.curvature = -s.curvature;
    }
    PeakFeatures {
        peaks,
        troughs,
        peak_shoulders,
        trough_shoulders,
    }
}

/// A baseline line b(x) = a + c·x.
#[derive(Clone, Copy)]
struct Base {
    a: f64,
    c: f64,
}

impl Base {
    fn at(&self, x: f64) -> f64 {
        self.a + self.c * x
    }
}

struct Cand {
    i: usize,
    lidx: usize,
    ridx: usize,
    prominence: f64,
}

/// Half-height crossings of s − base around index i: (left, right) distances.
fn half_widths(
    x: &[f64],
    s: &[f64],
    i: usize,
    base: Base,
    half: f64,
) -> (Option<f64>, Option<f64>) {
    let n = x.len();
    let above = |k: usize| s[k] - base.at(x[k]) - half;
    let mut left = None;
    let mut k = i;
    while k > 0 {
        let (a, b) = (above(k), above(k - 1));
        if b < 0.0 {
            let t = a / (a - b);
            left = Some(x[i] - (x[k] + t * (x[k - 1] - x[k])));
            break;
        }
        if s[k - 1] > s[i] {
            break;
        }
        k -= 1;
    }
    let mut right = None;
    let mut k = i;
    while k + 1 < n {
        let (a, b) = (above(k), above(k + 1));
        if b < 0.0 {
            let t = a / (a - b);
            right = Some(x[k] + t * (x[k + 1] - x[k]) - x[i]);
            break;
        }
        if s[k + 1] > s[i] {
            break;
        }
        k += 1;
    }
    (left, right)
}

/// Caruana's log-parabola fit of the points in lo..hi whose height above the
/// baseline is positive, weighted by height² (Guo 2011): (centre, height, gaussian σ).
fn log_parabola(
    x: &[f64],
    y: &[f64],
    lo: usize,
    hi: usize,
    base: Base,
    x0: f64,
) -> Option<(f64, f64, f64)> {
    let mut m = [[0.0f64; 3]; 3];
    let mut r = [0.0f64; 3];
    let h = (x[hi - 1] - x[lo]).max(f64::MIN_POSITIVE);
    let mut count = 0;
    for k in lo..hi {
        let v = y[k] - base.at(x[k]);
        if v <= 0.0 {
            continue;
        }
        count += 1;
        let w = v * v;
        let t = (x[k] - x0) / h;
        let p = [1.0, t, t * t];
        for a in 0..3 {
            for b in 0..3 {
                m[a][b] += w * p[a] * p[b];
            }
            r[a] += w * p[a] * v.ln();
        }
    }
    if count < 3 {
        return None;
    }
    let mm = nalgebra::Matrix3::from_fn(|a, b| m[a][b]);
    let beta = mm.try_inverse()? * nalgebra::Vector3::new(r[0], r[1], r[2]);
    let (b0, b1, b2) = (beta[0], beta[1], beta[2]);
    if b2 >= 0.0 || !b2.is_finite() {
        return None;
    }
    let tv = -b1 / (2.0 * b2);
    let centre = x0 + tv * h;
    if centre < x[lo] || centre > x[hi - 1] {
        return None;
    }
    let height = (b0 + b1 * tv + b2 * tv * tv).exp();
    let sig = (-1.0 / (2.0 * b2)).sqrt() * h;
    (height.is_finite() && sig.is_finite()).then_some((centre, height, sig))
}

/// Maxima of y standing above a baseline, and shoulders on their flanks.
fn maxima(x: &[f64], y: &[f64], sigma: f64) -> (Vec<Peak>, Vec<Shoulder>) {
    let n = x.len().min(y.len());
    if n < 7 {
        return (Vec::new(), Vec::new());
    }
    let (x, y) = (&x[..n], &y[..n]);
    let half = ((n as f64 / 40.0).round() as usize).clamp(2, 15);
    let sm = savitzky_golay(x, y, half, 2, &[sigma]);
    let s = &sm.value;
    let (smin, smax) = s
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| {
            (a.min(v), b.max(v))
        });
    let range = smax - smin;
    if range.partial_cmp(&0.0) != Some(std::cmp::Ordering::Greater) {
        return (Vec::new(), Vec::new());
    }
    let sd_s = median(&sm.sd_value).unwrap_or(sigma);
    let thr = (4.0 * std::f64::consts::SQRT_2 * sd_s)
        .max(0.02 * range)
        .max(2.0 * sigma);

    // robust straight background: a candidate must stand above it
    let Some((ts_slope, ts_icpt)) = theil_sen(x, y) else {
        return (Vec::new(), Vec::new());
    };
    let robust_base = Base {
        a: ts_icpt,
        c: ts_slope,
    };
    // candidate maxima with their prominence
    let mut cands: Vec<Cand> = Vec::new();
    for i in 1..n - 1 {
        if !(s[i] > s[i - 1] && s[i] >= s[i + 1]) {
            continue;
        }
        let (mut lmin, mut lidx) = (s[i], i);
        let mut k = i;
        while k > 0 {
            k -= 1;
            if s[k] > s[i] {
                break;
            }
            if s[k] < lmin {
                lmin = s[k];
                lidx = k;
            }
        }
        let (mut rmin, mut ridx) = (s[i], i);
        let mut k = i;
        while k + 1 < n {
            k += 1;
            if s[k] > s[i] {
                break;
            }
            if s[k] < rmin {
                rmin = s[k];
                ridx = k;
            }
        }
        let prominence = s[i] - lmin.max(rmin);
        let above = s[i] - robust_base.at(x[i]);
        if lidx < i && ridx > i && prominence >= thr && above >= thr {
            cands.push(Cand {
                i,
                lidx,
                ridx,
                prominence,
            });
        }
    }
    if cands.is_empty() {
        return (Vec::new(), Vec::new());
    }

    // first pass: local baselines and widths
    let local_base = |c: &Cand| {
        let (xa, xb) = (x[c.lidx], x[c.ridx]);
        let cslope = (s[c.ridx] - s[c.lidx]) / (xb - xa);
        Base {
            a: s[c.lidx] - cslope * xa,
            c: cslope,
        }
    };
    let mut reach: Vec<f64> = Vec::with_capacity(cands.len());
    for c in &cands {
        let b = local_base(c);
        let h0 = s[c.i] - b.at(x[c.i]);
        let (l, r) = half_widths(x, s, c.i, b, 0.5 * h0);
        let w = match (l, r) {
            (Some(a), Some(b)) => 0.5 * (a + b),
            (Some(a), None) | (None, Some(a)) => a,
            (None, None) => 0.25 * (x[c.ridx] - x[c.lidx]),
        };
        reach.push(3.0 * w);
    }
    // global baseline from the points away from every peak
    let far = |k: usize| {
        cands
            .iter()
            .zip(&reach)
            .all(|(c, &w)| (x[k] - x[c.i]).abs() > w)
    };
    let outside: Vec<usize> = (0..n).filter(|&k| far(k)).collect();
    let global = if outside.len() >= 4.max(n / 10) {
        let xs: Vec<f64> = outside.iter().map(|&k| x[k]).collect();
        let ys: Vec<f64> = outside.iter().map(|&k| y[k]).collect();
        fit_line(&xs, &ys, None).map(|l| Base {
            a: l.intercept,
            c: l.slope,
        })
    } else {
        None
    };

    let mut peaks: Vec<Peak> = Vec::new();
    let mut regions: Vec<(usize, usize, f64)> = Vec::new();
    for (c, &w) in cands.iter().zip(&reach) {
        let both_sides = outside.iter().any(|&k| x[k] < x[c.i] - w)
            && outside.iter().any(|&k| x[k] > x[c.i] + w);
        let base = match global {
            Some(g) if both_sides => g,
            _ => local_base(c),
        };
        let h0 = s[c.i] - base.at(x[c.i]);
        if h0 <= 0.0 {
            continue;
        }
        // top half region for the log-parabola
        let mut lo = c.i;
        while lo > c.lidx && s[lo - 1] - base.at(x[lo - 1]) > 0.5 * h0 {
            lo -= 1;
        }
        let mut hi = c.i + 1;
        while hi <= c.ridx && hi < n && s[hi] - base.at(x[hi]) > 0.5 * h0 {
            hi += 1;
        }
        let (centre, height, gauss_sd) = match log_parabola(x, y, lo, hi, base, x[c.i]) {
            Some((cx, h, g)) if (h / h0 - 1.0).abs() < 0.5 => (cx, h, Some(g)),
            _ => (x[c.i], h0, None),
        };
        let (l, r) = half_widths(x, s, c.i, base, 0.5 * height);
        let hwhm = match (l, r) {
            (Some(a), Some(b)) => Some(0.5 * (a + b)),
            (Some(a), None) | (None, Some(a)) => Some(a),
            (None, None) => gauss_sd.map(|g| g * (2.0 * std::f64::consts::LN_2).sqrt()),
        };
        let bl = base.at(centre);
        let mut vl = c.i;
        while vl > 0 && s[vl - 1] <= s[vl] {
            vl -= 1;
        }
        let mut vr = c.i;
        while vr + 1 < n && s[vr + 1] <= s[vr] {
            vr += 1;
        }
        regions.push((vl, vr, hwhm.unwrap_or(0.0)));
        peaks.push(Peak {
            centre,
            height,
            value: bl + height,
            baseline_level: bl,
            baseline_slope: base.c,
            hwhm,
            hwhm_left: l,
            hwhm_right: r,
            prominence: c.prominence,
            index: c.i,
        });
    }

    // shoulders: minima of a smoother second derivative that form their own lobe
    // (prominent as minima of d2) on a peak's flank, away from every centre
    let mut shoulders: Vec<Shoulder> = Vec::new();
    let h2 = (2 * half).min((n - 1) / 2).max(2);
    let sm2 = savitzky_golay(x, y, h2, 2, &[sigma]);
    let d2 = &sm2.d2;
    for i in h2.max(1)..n.saturating_sub(h2.max(1)) {
        if !(d2[i] < d2[i - 1] && d2[i] <= d2[i + 1] && d2[i] < -3.0 * sm2.sd_d2[i]) {
            continue;
        }
        // prominence of the d2 minimum: rise on each side before d2 drops below it again
        let rise = |dir: isize| {
            let mut k = i as isize;
            let mut top = d2[i];
            loop {
                k += dir;
                if k < 0 || k as usize >= n || d2[k as usize] < d2[i] {
                    break;
                }
                top = top.max(d2[k as usize]);
            }
            top - d2[i]
        };
        if rise(-1).min(rise(1)) < 4.0 * sm2.sd_d2[i] {
            continue;
        }
        // the peak whose valley-to-valley span holds it
        let Some(pk) = peaks
            .iter()
            .zip(&regions)
            .position(|(_, &(lo, hi, _))| lo < i && i < hi)
        else {
            continue;
        };
        let near_any = peaks
            .iter()
            .any(|p| (x[i] - p.centre).abs() < 0.5 * p.hwhm.unwrap_or(0.0));
        let p = &peaks[pk];
        let height = s[i] - (p.baseline_level + p.baseline_slope * (x[i] - p.centre));
        if near_any || height < thr {
            continue;
        }
        shoulders.push(Shoulder {
            position: x[i],
            height,
            curvature: d2[i],
            on_peak: pk,
        });
    }
    // highest first; shoulders follow their peak's new index
    let mut order: Vec<usize> = (0..peaks.len()).collect();
    order.sort_by(|&a, &b| peaks[b].height.total_cmp(&peaks[a].height));
    let sorted: Vec<Peak> = order.iter().map(|&k| peaks[k].clone()).collect();
    for sh in &mut shoulders {
        sh.on_peak = order
            .iter()
            .position(|&k| k == sh.on_peak)
            .unwrap_or(sh.on_peak);
    }
    (sorted, shoulders)
}
