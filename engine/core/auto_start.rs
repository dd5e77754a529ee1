//! Starting values when none are given with `--start`: inference from the model
//! and the data, then the multistart search over the inferred candidates; every
//! command (`fit`, `fit --by`, `infer`, `report`) and `api::fit` call only this.

use crate::error::Error;
use crate::fit::problem::Problem;
use crate::infer::{infer, InferOptions, Inference, ScanRange};
use crate::search::{
    find_sign_flips, find_signed_swaps, find_symmetries, search, Minimum, ParamScale,
    SearchOptions, SearchOutcome, SignFreedom,
};

/// Converts inference's natural range of a parameter into the search's scale.
///
/// The range comes from how the parameter meets the data alone; when the
/// inferred start lies outside it (a factor whose size depends on another
/// parameter, such as `a` in `a*exp(-e/T)`), the start is the better evidence
/// of magnitude: the range is re-centred on it with the same breadth, so the
/// search samples around the start and does not call its minimum "at infinity".
pub fn scale_from_range(r: &ScanRange, start: f64) -> ParamScale {
    let usable = start.is_finite() && start != 0.0;
    let (mut range_lo, mut range_hi) = (r.lo, r.hi);
    let mut typical = if r.typical.is_finite() && r.typical > 0.0 {
        r.typical
    } else if usable {
        start.abs()
    } else {
        1.0
    };
    if usable && r.lo.is_finite() && r.hi.is_finite() && r.lo < r.hi {
        if r.log && r.lo > 0.0 {
            let m = start.abs();
            if m < r.lo || m > r.hi {
                let breadth = (r.hi / r.lo).sqrt();
                range_lo = m / breadth;
                range_hi = m * breadth;
                typical = m;
            }
        } else if !r.log && (start < r.lo || start > r.hi) {
            let half = 0.5 * (r.hi - r.lo);
            range_lo = start - half;
            range_hi = start + half;
            typical = typical.max(start.abs());
        }
    }
    let sign = if r.sign_free {
        SignFreedom::Either
    } else if start < 0.0 {
        SignFreedom::Negative
    } else {
        SignFreedom::Positive
    };
    let (lo, hi) = if r.log {
        match sign {
            SignFreedom::Either => (-range_hi, range_hi),
            SignFreedom::Negative => (-range_hi, -range_lo),
            SignFreedom::Positive => (range_lo, range_hi),
        }
    } else {
        (range_lo, range_hi)
    };
    ParamScale {
        typical,
        log: r.log,
        sign,
        lo,
        hi,
    }
}

/// Noise standard deviation of one row: the features read the noise from the
/// identity view, whose points average the rows that share an x, so with r
/// rows per point on average (in the rows it read) it is the single-row level
/// divided by √r.
pub fn row_noise(inf: &Inference) -> f64 {
    let Some(view) = inf.features.views.first() else {
        return inf.features.noise;
    };
    let points = view.view.counts.len();
    if points == 0 {
        return inf.features.noise;
    }
    let per_point = view.view.counts.iter().sum::<usize>() as f64 / points as f64;
    inf.features.noise * per_point.max(1.0).sqrt()
}

/// Inference followed by the ranked multistart search over its candidates;
/// the search stops early when the inferred start fits to the data's noise
/// level and further starts keep returning to it (`--starts` is a ceiling).
pub fn infer_and_search(
    problem: &Problem,
    opts: &SearchOptions,
) -> Result<(Inference, SearchOutcome), Error> {
    let inf = infer(problem, &InferOptions::default())
        .map_err(|e| Error::Usage(format!("cannot infer starting values: {e}")))?;
    let candidates: Vec<Vec<f64>> = inf.candidates.iter().map(|c| c.params.clone()).collect();
    let scales: Vec<ParamScale> = inf
        .scales
        .iter()
        .zip(&inf.start)
        .map(|(r, s)| scale_from_range(r, *s))
        .collect();
    let symmetries = find_symmetries(&problem.model);
    let mut opts = opts.clone();
    // Stop early once the inferred start fits to the noise level (one
    // predictor only: with more, the noise read along the first one also holds
    // the others' effects).
    if opts.noise_sd.is_none() && problem.x.len() == 1 {
        opts.noise_sd = Some(row_noise(&inf));
    }
    opts.sign_flips = find_sign_flips(&problem.model);
    opts.signed_swaps = find_signed_swaps(&problem.model);
    let mut outcome = search(
        problem,
        &problem.model.params,
        &candidates,
        &scales,
        &symmetries,
        &opts,
    );
    for m in outcome.minima.iter_mut() {
        crate::infer::canonical_labelling(problem, &mut m.params);
    }
    Ok((inf, outcome))
}

/// Starting values for every parameter of `problem`, in parameter order: the
/// point of the best-ranked minimum found from the inferred candidates (the
/// inferred start itself when the search finds no proper minimum).
pub fn starts_for(problem: &Problem) -> Result<Vec<f64>, Error> {
    Ok(starts_and_counts(problem)?.0)
}

/// As [`starts_for`], with (local fits tried, distinct minima found).
pub fn starts_and_counts(problem: &Problem) -> Result<(Vec<f64>, (usize, usize)), Error> {
    starts_with_options(problem, &SearchOptions::default())
}

/// As [`starts_and_counts`], with the search's budget and seed from `opts`.
pub fn starts_with_options(
    problem: &Problem,
    opts: &SearchOptions,
) -> Result<(Vec<f64>, (usize, usize)), Error> {
    let (inf, outcome) = infer_and_search(problem, opts)?;
    let counts = (outcome.candidates_tried, outcome.minima.len());
    let start = best_start(&inf, &outcome).0;
    Ok((start, counts))
}

/// The start a fit should use after the search: the point of
/// [`best_proper_minimum`] with its rank, or the inferred start (rank `None`)
/// when the search found no proper minimum. The final fit starts at that
/// minimum and Levenberg–Marquardt only accepts steps that lower the sum of
/// squares, so the answer is never worse than any proper minimum found.
pub fn best_start(inf: &Inference, outcome: &SearchOutcome) -> (Vec<f64>, Option<usize>) {
    best_proper_minimum(outcome)
        .map(|m| (m.params.clone(), Some(m.rank)))
        .unwrap_or_else(|| (inf.start.clone(), None))
}

/// The proper minimum (finite sum of squares and parameters, none at a
/// boundary or at infinity) with the lowest sum of squares; among sums equal
/// within the ranking's tie (`rank::SSR_TIE`), the best-ranked one.
pub fn best_proper_minimum(outcome: &SearchOutcome) -> Option<&Minimum> {
    let proper = |m: &&Minimum| {
        m.divergent.is_empty() && m.ssr.is_finite() && m.params.iter().all(|v| v.is_finite())
    };
    let lowest = outcome
        .minima
        .iter()
        .filter(proper)
        .map(|m| m.ssr)
        .fold(f64::INFINITY, f64::min);
    let tie = crate::search::rank::SSR_TIE * lowest.abs();
    outcome
        .minima
        .iter()
        .filter(proper)
        .find(|m| m.ssr <= lowest + tie)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn range(lo: f64, hi: f64, log: bool, typical: f64) -> ScanRange {
        ScanRange {
            lo,
            hi,
            log,
            sign_free: false,
            typical,
        }
    }

    fn minimum(rank: usize, ssr: f64, params: Vec<f64>, divergent: Vec<usize>) -> Minimum {
        Minimum {
            rank,
            start: params.clone(),
            params,
            ssr,
            share: 0.1,
            iterations_median: 5.0,
            condition: 10.0,
            divergent,
            reached_by: 1,
            credited: 0,
            valley: None,
        }
    }

    #[test]
    fn the_answer_is_the_lowest_proper_minimum() {
        let outcome = |minima: Vec<Minimum>| SearchOutcome {
            names: vec!["a".into(), "b".into()],
            minima,
            candidates_tried: 3,
            stopped_by_time: false,
            stop: crate::search::SearchStop::EveryStartTried,
            runs: Vec::new(),
        };
        // A divergent minimum first, a worse proper one, then the best proper one.
        let o = outcome(vec![
            minimum(1, 0.5, vec![1.0, 1e9], vec![1]),
            minimum(2, 2.0, vec![1.0, 2.0], vec![]),
            minimum(3, 1.0, vec![1.5, 3.0], vec![]),
            minimum(4, 0.1, vec![f64::NAN, 3.0], vec![]),
        ]);
        assert_eq!(best_proper_minimum(&o).map(|m| m.rank), Some(3));
        // Equal sums: the better-ranked one.
        let o = outcome(vec![
            minimum(1, 1.0, vec![1.0, 2.0], vec![]),
            minimum(2, 1.0 - 1e-12, vec![1.0, 2.5], vec![]),
        ]);
        assert_eq!(best_proper_minimum(&o).map(|m| m.rank), Some(1));
        // None proper: none.
        let o = outcome(vec![minimum(1, 0.5, vec![1.0, 1e9], vec![1])]);
        assert!(best_proper_minimum(&o).is_none());
    }

    #[test]
    fn a_start_inside_the_range_keeps_it() {
        let s = scale_from_range(&range(0.01, 100.0, true, 1.0), 3.0);
        assert_eq!((s.lo, s.hi, s.typical), (0.01, 100.0, 1.0));
        assert_eq!(s.sign, SignFreedom::Positive);
        let s = scale_from_range(&range(-5.0, 5.0, false, 2.0), -1.0);
        assert_eq!((s.lo, s.hi, s.typical), (-5.0, 5.0, 2.0));
    }

    #[test]
    fn a_start_outside_the_range_recentres_it() {
        // Breadth 1e4 (four decades), start 1e7 far above: 1e5 .. 1e9 around it.
        let s = scale_from_range(&range(0.01, 100.0, true, 1.0), -1e7);
        assert_eq!(s.typical, 1e7);
        assert_eq!(s.sign, SignFreedom::Negative);
        assert!(
            (s.lo + 1e9).abs() < 1.0 && (s.hi + 1e5).abs() < 1e-6,
            "{s:?}"
        );
        let s = scale_from_range(&range(0.0, 10.0, false, 2.0), 40.0);
        assert_eq!((s.lo, s.hi, s.typical), (35.0, 45.0, 40.0));
    }
}
