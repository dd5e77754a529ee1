//! Starting values when none are given with `--start`: inference from the model
//! and the data, then the multistart search over the inferred candidates; every
//! command (`fit`, `fit --by`, `infer`, `report`) and `api::fit` call only this.

use crate::error::Error;
use crate::fit::problem::Problem;
use crate::infer::{infer, InferOptions, Inference, ScanRange};
use crate::search::{
    find_sign_flips, find_symmetries, search, ParamScale, SearchOptions, SearchOutcome, SignFreedom,
};

/// Converts inference's natural range of a parameter into the search's scale.
pub fn scale_from_range(r: &ScanRange, start: f64) -> ParamScale {
    let typical = if r.typical.is_finite() && r.typical > 0.0 {
        r.typical
    } else if start.is_finite() && start != 0.0 {
        start.abs()
    } else {
        1.0
    };
    let sign = if r.sign_free {
        SignFreedom::Either
    } else if start < 0.0 {
        SignFreedom::Negative
    } else {
        SignFreedom::Positive
    };
    let (lo, hi) = if r.log {
        match sign {
            SignFreedom::Either => (-r.hi, r.hi),
            SignFreedom::Negative => (-r.hi, -r.lo),
            SignFreedom::Positive => (r.lo, r.hi),
        }
    } else {
        (r.lo, r.hi)
    };
    ParamScale {
        typical,
        log: r.log,
        sign,
        lo,
        hi,
    }
}

/// Inference followed by the ranked multistart search over its candidates.
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
    opts.sign_flips = find_sign_flips(&problem.model);
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
    let (inf, outcome) = infer_and_search(problem, &SearchOptions::default())?;
    let counts = (outcome.candidates_tried, outcome.minima.len());
    let start = outcome
        .minima
        .iter()
        .find(|m| m.divergent.is_empty() && m.params.iter().all(|v| v.is_finite()))
        .map(|m| m.params.clone())
        .unwrap_or(inf.start);
    Ok((start, counts))
}
