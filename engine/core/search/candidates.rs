//! Candidate starting points for the multistart search: the inferred starts as
//! given, then structured moves from the best of them (sign flips of sign-free
//! parameters, partial swaps of interchangeable terms), then quasi-random points
//! in each parameter's natural scale around the inferred starts.

pub use super::symmetry::find_symmetries;

use super::rng::Rng;
use super::sampling::unit_points;
use super::scale::{ParamScale, SignFreedom};
use super::symmetry::transpositions;
use serde::Serialize;

/// Where a candidate start came from.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "snake_case", tag = "kind")]
pub enum Origin {
    /// The `index`-th start handed in (from inference).
    Given { index: usize },
    /// No start was handed in: each parameter at its typical value and allowed sign.
    Typical,
    /// Start `of` with the sign of parameter `param` reversed.
    SignFlip { of: usize, param: usize },
    /// Start `of` with parameters `i` and `j` exchanged, one half of a swap of
    /// interchangeable terms (e.g. the rates of two exponentials swapped but not
    /// their amplitudes): a genuinely different start, whereas the whole swap
    /// would only reach a mirror image of the same minimum.
    PartialSwap { of: usize, i: usize, j: usize },
    /// A quasi-random point around start `around`, spread over `decades`
    /// decades (multiplicative parameters) or that fraction of the plausible
    /// range (additive ones).
    QuasiRandom { around: usize, spread: f64 },
}

/// One candidate start.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Candidate {
    /// Parameter values.
    pub point: Vec<f64>,
    /// How it was made.
    pub origin: Origin,
}

/// Most given starts used as centres of quasi-random points.
const MAX_CENTRES: usize = 4;

/// The value of parameter `s` when nothing but its scale is known.
fn typical_value(s: &ParamScale) -> f64 {
    match s.sign {
        SignFreedom::Negative => -s.unit(),
        _ => s.unit(),
    }
}

/// Up to `total` candidates, deterministic for `seed`. The given starts come
/// first, in their order (those of the wrong length or with non-finite values
/// are skipped); then at most half of what remains goes to sign flips and
/// partial swaps of the first start; the rest are quasi-random points around
/// the first few starts, the first start taking every other point.
pub fn generate(
    given: &[Vec<f64>],
    scales: &[ParamScale],
    symmetries: &[Vec<usize>],
    total: usize,
    seed: u64,
) -> Vec<Candidate> {
    let n = scales.len();
    let mut out: Vec<Candidate> = Vec::new();
    let push = |out: &mut Vec<Candidate>, c: Candidate| {
        if out.len() < total
            && c.point.iter().all(|v| v.is_finite())
            && !out.iter().any(|o| o.point == c.point)
        {
            out.push(c);
        }
    };
    for (index, g) in given.iter().enumerate() {
        if g.len() == n {
            push(
                &mut out,
                Candidate {
                    point: g.clone(),
                    origin: Origin::Given { index },
                },
            );
        }
    }
    if out.is_empty() {
        push(
            &mut out,
            Candidate {
                point: scales.iter().map(typical_value).collect(),
                origin: Origin::Typical,
            },
        );
    }
    let centres: Vec<Candidate> = out.iter().take(MAX_CENTRES).cloned().collect();
    let Some(first) = centres.first().cloned() else {
        return out;
    };
    let of = match first.origin {
        Origin::Given { index } => index,
        _ => 0,
    };

    // Structured moves from the first start, at most half the remaining budget.
    let structured_cap = out.len() + total.saturating_sub(out.len()) / 2;
    let mut moves: Vec<Candidate> = Vec::new();
    for (param, s) in scales.iter().enumerate() {
        if s.sign == SignFreedom::Either && first.point[param] != 0.0 {
            let mut p = first.point.clone();
            p[param] = -p[param];
            moves.push(Candidate {
                point: p,
                origin: Origin::SignFlip { of, param },
            });
        }
    }
    for perm in symmetries.iter().filter(|p| p.len() == n) {
        let ts = transpositions(perm);
        if ts.len() < 2 {
            continue;
        }
        for (i, j) in ts {
            let mut p = first.point.clone();
            p.swap(i, j);
            moves.push(Candidate {
                point: p,
                origin: Origin::PartialSwap { of, i, j },
            });
        }
    }
    for m in moves {
        if out.len() >= structured_cap {
            break;
        }
        push(&mut out, m);
    }

    // Quasi-random points around the centres.
    let need = total.saturating_sub(out.len());
    if need == 0 || n == 0 {
        return out;
    }
    let units = unit_points(need, n, seed);
    let mut rng = Rng::new(seed ^ 0xA5A5_5A5A_F00D_CAFE);
    let mut per_centre = vec![0usize; centres.len()];
    for (k, u) in units.iter().enumerate() {
        let c = if centres.len() == 1 || k % 2 == 0 {
            0
        } else {
            1 + (k / 2) % (centres.len() - 1)
        };
        // Alternate a near ring (one decade, a quarter of the range) and a far one.
        let near = per_centre[c] % 2 == 0;
        per_centre[c] += 1;
        let around = match centres[c].origin {
            Origin::Given { index } => index,
            _ => 0,
        };
        let point = perturb(&centres[c].point, scales, u, near, &mut rng);
        let spread = if near { 1.0 } else { 2.0 };
        push(
            &mut out,
            Candidate {
                point,
                origin: Origin::QuasiRandom { around, spread },
            },
        );
    }
    out
}

/// Moves `centre` to the point of the unit cube `u` in each parameter's scale:
/// multiplicative parameters by a factor 10^((2u−1)·D) with D one or two
/// decades, additive ones within a quarter of (or the whole) plausible range,
/// clamped to it; signs kept where fixed, reversed one time in four where free.
fn perturb(
    centre: &[f64],
    scales: &[ParamScale],
    u: &[f64],
    near: bool,
    rng: &mut Rng,
) -> Vec<f64> {
    centre
        .iter()
        .zip(scales)
        .zip(u)
        .map(|((&c, s), &ui)| {
            let flip = rng.uniform() < 0.25;
            let v = if s.log {
                let base = if c != 0.0 { c } else { typical_value(s) };
                let decades = if near { 1.0 } else { 2.0 };
                let mut v = base * 10f64.powf((2.0 * ui - 1.0) * decades);
                if s.sign == SignFreedom::Either && flip {
                    v = -v;
                }
                v
            } else {
                let half = if s.has_range() {
                    0.5 * (s.hi - s.lo)
                } else {
                    10.0 * s.unit()
                };
                let w = if near { 0.25 * half } else { half };
                let v = c + (2.0 * ui - 1.0) * w;
                if s.has_range() {
                    v.clamp(s.lo, s.hi)
                } else {
                    v
                }
            };
            match s.sign {
                SignFreedom::Positive => v.abs().max(f64::MIN_POSITIVE),
                SignFreedom::Negative => -v.abs().max(f64::MIN_POSITIVE),
                SignFreedom::Either => v,
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn scale(t: f64, log: bool, sign: SignFreedom) -> ParamScale {
        ParamScale {
            typical: t,
            log,
            sign,
            lo: -10.0 * t,
            hi: 10.0 * t,
        }
    }

    #[test]
    fn given_first_then_moves_then_points() {
        let scales = vec![
            scale(2.0, true, SignFreedom::Either),
            scale(3.0, true, SignFreedom::Either),
            scale(0.5, true, SignFreedom::Positive),
            scale(0.1, true, SignFreedom::Positive),
        ];
        let given = vec![vec![2.0, 3.0, 0.5, 0.1], vec![1.0, 1.0, 1.0, 1.0]];
        let sym = vec![vec![1, 0, 3, 2]];
        let c = generate(&given, &scales, &sym, 20, 9);
        assert_eq!(c.len(), 20);
        assert_eq!(c[0].origin, Origin::Given { index: 0 });
        assert_eq!(c[1].point, given[1]);
        // Two sign flips (a1, a2), two partial swaps.
        assert_eq!(c[2].origin, Origin::SignFlip { of: 0, param: 0 });
        assert_eq!(c[2].point, vec![-2.0, 3.0, 0.5, 0.1]);
        assert_eq!(c[4].origin, Origin::PartialSwap { of: 0, i: 0, j: 1 });
        assert_eq!(c[5].point, vec![2.0, 3.0, 0.1, 0.5]);
        // Quasi-random points: positive parameters stay positive, within two decades.
        for q in &c[6..] {
            assert!(matches!(q.origin, Origin::QuasiRandom { .. }));
            assert!(q.point[2] > 0.0 && q.point[3] > 0.0);
            let centre = match q.origin {
                Origin::QuasiRandom { around, .. } => &given[around],
                _ => unreachable!(),
            };
            let r = (q.point[3] / centre[3]).log10().abs();
            assert!(r <= 2.0 + 1e-12, "{r}");
        }
        // Deterministic for the seed, different for another.
        assert_eq!(c, generate(&given, &scales, &sym, 20, 9));
        assert_ne!(c, generate(&given, &scales, &sym, 20, 10));
    }

    #[test]
    fn nothing_given_and_small_budgets() {
        let scales = vec![
            scale(4.0, false, SignFreedom::Negative),
            scale(1.0, true, SignFreedom::Positive),
        ];
        let c = generate(&[], &scales, &[], 5, 1);
        assert_eq!(c[0].origin, Origin::Typical);
        assert_eq!(c[0].point, vec![-4.0, 1.0]);
        assert!(c
            .iter()
            .all(|k| k.point[0] < 0.0 && k.point[0] >= -40.0 && k.point[1] > 0.0));
        assert_eq!(c.len(), 5);
        let d = generate(&vec![vec![-1.0, 1.0]; 3], &scales, &[], 2, 1);
        assert_eq!(d.len(), 2);
        let given = d
            .iter()
            .filter(|k| matches!(k.origin, Origin::Given { .. }))
            .count();
        assert_eq!(given, 1, "duplicates dropped");
        assert!(generate(&[vec![1.0]], &scales, &[], 0, 1).is_empty());
    }
}
