//! What a search hands back: every local run and the distinct minima, ranked;
//! serialisable, with non-finite numbers written as null.

use super::candidates::Origin;
use crate::fit::lm::StopReason;
use serde::{Serialize, Serializer};

/// Writes a finite number as itself and a non-finite one as null (JSON has no NaN or ∞).
pub fn finite_or_null<S: Serializer>(v: &f64, s: S) -> Result<S::Ok, S::Error> {
    if v.is_finite() {
        s.serialize_f64(*v)
    } else {
        s.serialize_none()
    }
}

/// [`finite_or_null`] for every element of a vector.
pub fn finite_or_null_vec<S: Serializer>(v: &[f64], s: S) -> Result<S::Ok, S::Error> {
    let opt: Vec<Option<f64>> = v.iter().map(|x| x.is_finite().then_some(*x)).collect();
    opt.serialize(s)
}

/// One local fit of the search.
#[derive(Debug, Clone, Serialize)]
pub struct Run {
    /// Position in the candidate list (runs are kept in this order).
    pub index: usize,
    /// Where the start came from.
    pub origin: Origin,
    /// Starting values.
    #[serde(serialize_with = "finite_or_null_vec")]
    pub start: Vec<f64>,
    /// Where the run ended (or was abandoned), as the fitter left it (not reordered).
    #[serde(serialize_with = "finite_or_null_vec")]
    pub end: Vec<f64>,
    /// Sum of squares at `end`.
    #[serde(serialize_with = "finite_or_null")]
    pub ssr: f64,
    /// Trust-region iterations used, over all legs.
    pub iterations: usize,
    /// Residual evaluations used, over all legs.
    pub evaluations: usize,
    /// Why the last leg stopped.
    pub stop: StopReason,
    /// True when the run reached a (local) minimum by the fitter's tests.
    pub converged: bool,
    /// True when the run was a single full-length fit (first batch), false when run in legs.
    pub full_length: bool,
    /// Rank of the minimum this run was credited to when it was stopped early
    /// because it was heading into that already-found basin.
    pub abandoned_into: Option<usize>,
    /// Rank of the minimum the run reached or was credited to; `None` when it reached none.
    pub minimum: Option<usize>,
}

/// A distinct minimum found by the search.
#[derive(Debug, Clone, Serialize)]
pub struct Minimum {
    /// 1 for the best.
    pub rank: usize,
    /// Best point of the minimum, in canonical order when the model has interchangeable terms.
    #[serde(serialize_with = "finite_or_null_vec")]
    pub params: Vec<f64>,
    /// Sum of squares at `params`.
    #[serde(serialize_with = "finite_or_null")]
    pub ssr: f64,
    /// Fraction of all runs that reached it (including runs credited to it early).
    #[serde(serialize_with = "finite_or_null")]
    pub share: f64,
    /// Median iterations of the runs that reached it in full (credited runs excluded).
    #[serde(serialize_with = "finite_or_null")]
    pub iterations_median: f64,
    /// Condition number σmax/σmin of the Jacobian at `params` (null when singular).
    #[serde(serialize_with = "finite_or_null")]
    pub condition: f64,
    /// Parameters at a boundary or at infinity (grown beyond 1e6× their typical
    /// scale, not finite, or with a vanishing Jacobian column); empty for a proper minimum.
    pub divergent: Vec<usize>,
    /// The start that reached it with the fewest iterations.
    #[serde(serialize_with = "finite_or_null_vec")]
    pub start: Vec<f64>,
    /// Number of runs that reached it (including credited ones).
    pub reached_by: usize,
    /// Of those, runs stopped early and credited to it.
    pub credited: usize,
    /// When several minima of equal cost lie on one flat valley
    /// ([`super::cluster::flat_valleys`]) they are reported as this one.
    pub valley: Option<Valley>,
}

/// A flat valley: minima of equal cost joined by a path of equal cost.
#[derive(Debug, Clone, Serialize)]
pub struct Valley {
    /// How many minima the search found on it.
    pub minima: usize,
    /// Parameters that change along it (indices in parameter order).
    pub direction: Vec<usize>,
    /// Lowest and highest sum of squares of those minima.
    #[serde(serialize_with = "finite_or_null")]
    pub ssr_low: f64,
    #[serde(serialize_with = "finite_or_null")]
    pub ssr_high: f64,
}

/// The result of a multistart search.
#[derive(Debug, Clone, Serialize)]
pub struct SearchOutcome {
    /// Parameter names, in the order of every point.
    pub names: Vec<String>,
    /// Distinct minima, best first.
    pub minima: Vec<Minimum>,
    /// Candidate starts refined (fewer than asked when the time limit stopped the search).
    pub candidates_tried: usize,
    /// True when the time limit ended the search before every candidate was tried.
    pub stopped_by_time: bool,
    /// Why the search ended (every start tried, time limit, or settled early).
    pub stop: super::SearchStop,
    /// Every local run, in candidate order.
    pub runs: Vec<Run>,
}

impl SearchOutcome {
    /// The best proper minimum, if any.
    pub fn best(&self) -> Option<&Minimum> {
        self.minima.first()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn non_finite_numbers_become_null() {
        let m = Minimum {
            rank: 1,
            params: vec![1.0, f64::INFINITY],
            ssr: f64::NAN,
            share: 0.5,
            iterations_median: 3.0,
            condition: f64::INFINITY,
            divergent: vec![1],
            start: vec![0.0, 1.0],
            reached_by: 1,
            credited: 0,
            valley: None,
        };
        let j = serde_json::to_string(&m).unwrap();
        assert!(j.contains("\"params\":[1.0,null]"), "{j}");
        assert!(j.contains("\"ssr\":null"), "{j}");
        assert!(j.contains("\"condition\":null"), "{j}");
    }
}
