//! Plot geometry free of any drawing library: dropping unplottable values,
//! choosing padded axis ranges and clipping lines to the plotting box.

/// Largest magnitude drawn; beyond it the pixel arithmetic loses meaning.
pub const MAX_ABS: f64 = 1e200;

/// True when a coordinate can be placed on an axis.
pub fn plottable(v: f64) -> bool {
    v.is_finite() && v.abs() <= MAX_ABS
}

/// A closed interval `[lo, hi]` with `lo < hi`, used for one axis.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Span {
    /// Lower end.
    pub lo: f64,
    /// Upper end.
    pub hi: f64,
}

impl Span {
    /// Whether `v` lies inside the interval.
    pub fn contains(&self, v: f64) -> bool {
        v >= self.lo && v <= self.hi
    }
}

/// Smallest and largest plottable value, or `None` when there is none.
pub fn extent<I: IntoIterator<Item = f64>>(values: I) -> Option<(f64, f64)> {
    values
        .into_iter()
        .filter(|v| plottable(*v))
        .fold(None, |acc, v| match acc {
            None => Some((v, v)),
            Some((lo, hi)) => Some((lo.min(v), hi.max(v))),
        })
}

/// Axis interval for data `lo..=hi`: degenerate (all-equal) data gets a
/// padding around its value; every interval gets a 5% margin on both sides.
pub fn padded(lo: f64, hi: f64) -> Span {
    let (lo, hi) = if lo <= hi { (lo, hi) } else { (hi, lo) };
    let mid = lo / 2.0 + hi / 2.0;
    let span = hi - lo;
    let degenerate = span.partial_cmp(&(mid.abs() * 1e-9)) != Some(std::cmp::Ordering::Greater);
    let (lo, hi) = if degenerate || span <= 1e-280 {
        let pad = (mid.abs() * 0.1).max(1.0);
        (mid - pad, mid + pad)
    } else {
        (lo, hi)
    };
    let margin = (hi - lo) * 0.05;
    Span {
        lo: lo - margin,
        hi: hi + margin,
    }
}

/// Widens the data extent `(lo, hi)` by the `extras` that lie within one
/// data span of it; far-away extras (a wild extrapolation) are left to clipping.
pub fn widen_near(base: (f64, f64), extras: &[f64]) -> (f64, f64) {
    let (lo, hi) = base;
    let reach = (hi - lo).max(lo.abs().max(hi.abs()) * 0.1).max(1e-12);
    extras
        .iter()
        .filter(|v| plottable(**v) && **v >= lo - reach && **v <= hi + reach)
        .fold((lo, hi), |(a, b), v| (a.min(*v), b.max(*v)))
}

/// Clips the segment `p..q` to the box `xs × ys` (Liang & Barsky, 1984,
/// parametric line clipping); `None` when nothing of it is inside.
pub fn clip_segment(
    p: (f64, f64),
    q: (f64, f64),
    xs: Span,
    ys: Span,
) -> Option<((f64, f64), (f64, f64))> {
    let (dx, dy) = (q.0 - p.0, q.1 - p.1);
    let mut t0 = 0.0f64;
    let mut t1 = 1.0f64;
    let checks = [
        (-dx, p.0 - xs.lo),
        (dx, xs.hi - p.0),
        (-dy, p.1 - ys.lo),
        (dy, ys.hi - p.1),
    ];
    for (pk, qk) in checks {
        if pk == 0.0 {
            if qk < 0.0 {
                return None;
            }
        } else {
            let r = qk / pk;
            if pk < 0.0 {
                t0 = t0.max(r);
            } else {
                t1 = t1.min(r);
            }
            if t0 > t1 {
                return None;
            }
        }
    }
    Some((
        (p.0 + t0 * dx, p.1 + t0 * dy),
        (p.0 + t1 * dx, p.1 + t1 * dy),
    ))
}

/// Splits a polyline into the runs that lie inside the box, clipping at the
/// edges and breaking at unplottable vertices.
pub fn clip_polyline(points: &[(f64, f64)], xs: Span, ys: Span) -> Vec<Vec<(f64, f64)>> {
    let mut runs: Vec<Vec<(f64, f64)>> = Vec::new();
    let mut current: Vec<(f64, f64)> = Vec::new();
    let flush = |current: &mut Vec<(f64, f64)>, runs: &mut Vec<Vec<(f64, f64)>>| {
        if current.len() >= 2 {
            runs.push(std::mem::take(current));
        } else {
            current.clear();
        }
    };
    for pair in points.windows(2) {
        let (p, q) = (pair[0], pair[1]);
        if !(plottable(p.0) && plottable(p.1) && plottable(q.0) && plottable(q.1)) {
            flush(&mut current, &mut runs);
            continue;
        }
        match clip_segment(p, q, xs, ys) {
            Some((a, b)) => {
                let joined = current.last().is_some_and(|last| *last == a);
                if !joined {
                    flush(&mut current, &mut runs);
                    current.push(a);
                }
                current.push(b);
                if b != q {
                    flush(&mut current, &mut runs);
                }
            }
            None => flush(&mut current, &mut runs),
        }
    }
    flush(&mut current, &mut runs);
    runs
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn equal_values_are_padded() {
        let s = padded(5.0, 5.0);
        assert!(s.lo < 5.0 && s.hi > 5.0);
        assert!((s.hi - s.lo - 2.2).abs() < 1e-12, "{s:?}");
        let z = padded(0.0, 0.0);
        assert!((z.lo + 1.1).abs() < 1e-12 && (z.hi - 1.1).abs() < 1e-12);
    }

    #[test]
    fn huge_ranges_stay_finite() {
        let s = padded(-1e200, 1e200);
        assert!(s.lo.is_finite() && s.hi.is_finite() && s.lo < s.hi);
        assert_eq!(
            extent([f64::NAN, 1e300, 2.0, f64::INFINITY, -3.0]),
            Some((-3.0, 2.0))
        );
    }

    #[test]
    fn clipping_cuts_at_the_box() {
        let b = Span { lo: 0.0, hi: 1.0 };
        let (a, c) = clip_segment((-1.0, 0.5), (2.0, 0.5), b, b).unwrap();
        assert_eq!(a, (0.0, 0.5));
        assert_eq!(c, (1.0, 0.5));
        assert!(clip_segment((2.0, 2.0), (3.0, 3.0), b, b).is_none());
        let runs = clip_polyline(
            &[
                (0.1, 0.1),
                (0.5, 2.0),
                (0.9, 0.1),
                (f64::NAN, 0.5),
                (0.2, 0.2),
                (0.3, 0.3),
            ],
            b,
            b,
        );
        assert_eq!(runs.len(), 3, "{runs:?}");
        assert_eq!(runs[2], vec![(0.2, 0.2), (0.3, 0.3)]);
    }

    #[test]
    fn widening_ignores_far_extras() {
        assert_eq!(widen_near((0.0, 1.0), &[1.5, 100.0, f64::NAN]), (0.0, 1.5));
    }
}
