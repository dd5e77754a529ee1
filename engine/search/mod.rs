//! Multistart global search: candidates, parallel refinement, clustering of
//! minima and their ranking by convergence.
//!
//! [`search`] refines candidate starts by Levenberg–Marquardt in parallel, in
//! batches: the first batch gets full-length fits (so the best inferred start
//! is always refined to convergence with the given options, polishing
//! included); later runs go in short legs and stop early when they are clearly
//! inside a basin already found. Results are collected in candidate order, so
//! the outcome is the same for any number of threads. A time limit is checked
//! only between batches; with one set, how many batches run depends on the
//! machine's speed, and so may the outcome.

pub mod adaptive;
pub mod candidates;
pub mod cluster;
pub mod outcome;
pub mod rank;
pub mod refine;
pub mod rng;
pub mod sampling;
pub mod scale;
pub mod symmetry;

#[cfg(test)]
mod tests;

pub use adaptive::SearchStop;
pub use candidates::{find_symmetries, Candidate, Origin};
pub use outcome::{Minimum, Run, SearchOutcome, Valley};
pub use scale::{ParamScale, SignFreedom};
pub use symmetry::{find_sign_flips, find_signed_swaps};

use crate::fit::lm::{LmOptions, StopReason};
use crate::fit::Residuals;
use cluster::{Basins, EndPoint, Tolerances};
use rayon::prelude::*;
use refine::{refine_full, refine_in_legs, KnownMinimum, Refined};
use std::time::{Duration, Instant};

/// Budgets and settings of a search.
#[derive(Debug, Clone)]
pub struct SearchOptions {
    /// Most local fits (candidate starts), inferred starts included: a
    /// ceiling, not a quota, when `noise_sd` is set (see [`adaptive`]).
    pub starts: usize,
    /// Noise standard deviation of the response, when known: the search may
    /// then stop early once the inferred start fits to this level and further
    /// starts keep returning to its minimum ([`adaptive::settled`]).
    pub noise_sd: Option<f64>,
    /// Seed of the quasi-random points: same seed, same outcome.
    pub seed: u64,
    /// Wall-time limit, checked only between batches (makes results speed-dependent).
    pub time_limit: Option<Duration>,
    /// How many minima to report (0 = all).
    pub top: usize,
    /// Options of every local fit.
    pub lm: LmOptions,
    /// Runs per batch (fixed, independent of the thread count, for determinism).
    pub batch: usize,
    /// Iterations per leg for runs after the first batch.
    pub leg_iterations: usize,
    /// Iteration budget of each run after the first batch (the exploratory
    /// runs; the first batch, which holds the inferred starts, has the full
    /// budget of `lm`). A run still moving after this many iterations is
    /// reported as not converged instead of crawling on: such runs were nearly
    /// all on their way to a parameter at infinity or along a flat valley.
    pub explore_iterations: usize,
    /// Parameter sets whose joint change of sign leaves the model unchanged
    /// (see [`symmetry::find_sign_flips`]): mirror-image minima are merged.
    pub sign_flips: Vec<Vec<usize>>,
    /// Swaps of two parameters that leave the model unchanged together with a
    /// change of sign of a third (see [`symmetry::find_signed_swaps`]).
    pub signed_swaps: Vec<(Vec<usize>, usize)>,
}

impl Default for SearchOptions {
    fn default() -> Self {
        SearchOptions {
            starts: 64,
            noise_sd: None,
            seed: 0x00F0_07E0_1D5E_ED00,
            time_limit: None,
            top: 0,
            lm: LmOptions::default(),
            batch: 8,
            leg_iterations: 8,
            explore_iterations: 200,
            sign_flips: Vec::new(),
            signed_swaps: Vec::new(),
        }
    }
}

/// Median of `v` (NaN when empty).
fn median(mut v: Vec<f64>) -> f64 {
    if v.is_empty() {
        return f64::NAN;
    }
    v.sort_by(|a, b| a.total_cmp(b));
    let k = v.len() / 2;
    if v.len() % 2 == 1 {
        v[k]
    } else {
        0.5 * (v[k - 1] + v[k])
    }
}

/// Searches for the minima of `problem`'s sum of squares from `candidates`
/// (ranked inferred starts, best first) and quasi-random points around them in
/// the parameters' natural `scales`, using the parameter permutations
/// `symmetries` (see [`find_symmetries`]) to merge mirror-image minima. Returns
/// the distinct minima, ranked, and every run. `names` label the parameters;
/// `scales` of the wrong length are replaced by [`ParamScale::from_value`] of
/// the first candidate.
pub fn search(
    problem: &dyn Residuals,
    names: &[String],
    candidates: &[Vec<f64>],
    scales: &[ParamScale],
    symmetries: &[Vec<usize>],
    opts: &SearchOptions,
) -> SearchOutcome {
    let clock = Instant::now();
    let n = problem.n_params();
    let first = candidates
        .iter()
        .find(|c| c.len() == n)
        .map(|c| c.as_slice());
    let scales = scale::scales_or_fallback(scales, first, n);
    let symmetries: Vec<Vec<usize>> = symmetries
        .iter()
        .filter(|p| p.len() == n && symmetry::is_permutation(p))
        .cloned()
        .collect();
    let sign_flips: Vec<Vec<usize>> = opts
        .sign_flips
        .iter()
        .filter(|s| !s.is_empty() && s.iter().all(|&k| k < n))
        .cloned()
        .collect();
    let group = symmetry::Symmetries {
        group: symmetry::group(&symmetries, n),
        sign_flips,
        signed_swaps: opts
            .signed_swaps
            .iter()
            .filter(|(p, k)| p.len() == n && symmetry::is_permutation(p) && *k < n)
            .cloned()
            .collect(),
    };
    let cands = candidates::generate(candidates, &scales, &symmetries, opts.starts, opts.seed);

    // Exact fits have ssr ≈ 0: compare sums of squares absolutely far below the best start's.
    let start_ssr = cands
        .iter()
        .take(opts.batch.max(1))
        .map(|c| refine::sum_of_squares(problem, &c.point))
        .fold(f64::INFINITY, f64::min);
    let tol = Tolerances {
        ssr_atol: if start_ssr.is_finite() {
            1e-20 * start_ssr
        } else {
            0.0
        },
        ..Tolerances::default()
    };

    let batch = opts.batch.max(1);
    let explore_lm = LmOptions {
        max_iterations: opts.lm.max_iterations.min(opts.explore_iterations.max(1)),
        max_evaluations: opts
            .lm
            .max_evaluations
            .min(4 * opts.explore_iterations.max(1)),
        ..opts.lm.clone()
    };
    let mut basins = Basins::default();
    let mut done: Vec<(Refined, bool)> = Vec::new();
    let mut stop = SearchStop::EveryStartTried;
    let noise_sd = opts.noise_sd.filter(|s| s.is_finite() && *s > 0.0);
    for (b, range) in adaptive::chunks(cands.len(), batch, noise_sd.is_some())
        .into_iter()
        .enumerate()
    {
        if b > 0 && opts.time_limit.is_some_and(|t| clock.elapsed() >= t) {
            stop = SearchStop::TimeLimit;
            break;
        }
        if let Some(sd) = noise_sd {
            if b > 0 && adaptive::settled(&basins, sd, problem.n_obs(), n) {
                stop = SearchStop::Settled;
                break;
            }
        }
        let full = range.start < batch;
        let chunk = &cands[range];
        let known: Vec<KnownMinimum> = basins
            .list
            .iter()
            .enumerate()
            .map(|(id, k)| KnownMinimum {
                id,
                params: k.params.clone(),
                ssr: k.ssr,
                divergent: k.divergent.clone(),
            })
            .collect();
        let results: Vec<Refined> = chunk
            .par_iter()
            .map(|c| {
                if full {
                    refine_full(problem, &c.point, &opts.lm, &scales, &group)
                } else {
                    refine_in_legs(
                        problem,
                        &c.point,
                        &explore_lm,
                        opts.leg_iterations,
                        &known,
                        &scales,
                        &group,
                    )
                }
            })
            .collect();
        for r in results {
            let idx = done.len();
            if let Some(k) = r.abandoned_into {
                basins.credit(k, idx);
            } else if r.ssr.is_finite() && r.end.iter().all(|v| v.is_finite()) {
                // Converged runs, and runs that used up their budget on the way to infinity.
                let out_of_budget = matches!(
                    r.stop,
                    StopReason::MaxIterations | StopReason::MaxEvaluations
                );
                if r.converged || (out_of_budget && !r.divergent.is_empty()) {
                    let p = EndPoint {
                        params: &r.canonical,
                        ssr: r.ssr,
                        divergent: &r.divergent,
                        singular: r.singular,
                    };
                    basins.add(idx, &p, &scales, &tol);
                }
            }
            done.push((r, full));
        }
    }

    let total = done.len();
    // Minima of equal cost on one flat valley are reported once (issue 10):
    // `valley_of[b]` is the valley (smallest basin index) of basin b.
    let points: Vec<cluster::ValleyPoint> = basins
        .list
        .iter()
        .map(|b| cluster::ValleyPoint {
            params: &b.params,
            ssr: b.ssr,
            divergent: &b.divergent,
        })
        .collect();
    let valley_of = cluster::flat_valleys(&points, |p| refine::sum_of_squares(problem, p));
    let heads: Vec<usize> = (0..basins.list.len())
        .filter(|&b| valley_of[b] == b)
        .collect();
    let minima: Vec<Minimum> = heads
        .iter()
        .map(|&head| {
            let group: Vec<&cluster::Basin> = basins
                .list
                .iter()
                .enumerate()
                .filter(|&(b, _)| valley_of[b] == head)
                .map(|(_, basin)| basin)
                .collect();
            // The lowest member stands for the valley (the first on a tie).
            let basin = group
                .iter()
                .copied()
                .min_by(|a, b| a.ssr.total_cmp(&b.ssr))
                .unwrap_or(&basins.list[head]);
            let members: Vec<usize> = group.iter().flat_map(|b| b.members.clone()).collect();
            let credited: usize = group.iter().map(|b| b.credited.len()).sum();
            let best = &done[basin.best_run].0;
            let fastest = members
                .iter()
                .min_by_key(|&&i| (done[i].0.iterations, i))
                .copied()
                .unwrap_or(basin.best_run);
            let reached_by = members.len() + credited;
            let valley = (group.len() > 1).then(|| {
                let ends: Vec<&[f64]> = group.iter().map(|b| b.params.as_slice()).collect();
                Valley {
                    minima: group.len(),
                    direction: cluster::valley_direction(&ends, &scales, tol.param_rtol),
                    ssr_low: group.iter().map(|b| b.ssr).fold(f64::INFINITY, f64::min),
                    ssr_high: group.iter().map(|b| b.ssr).fold(f64::NEG_INFINITY, f64::max),
                }
            });
            Minimum {
                rank: 0,
                params: basin.params.clone(),
                ssr: basin.ssr,
                share: reached_by as f64 / total.max(1) as f64,
                iterations_median: median(
                    members
                        .iter()
                        .map(|&i| done[i].0.iterations as f64)
                        .collect(),
                ),
                condition: cluster::condition_number(&best.jacobian),
                divergent: best.divergent.clone(),
                start: cands[fastest].point.clone(),
                reached_by,
                credited,
                valley,
            }
        })
        .collect();
    let order = rank::ranking(&minima);
    let mut rank_of_head = vec![0usize; minima.len()];
    for (k, &i) in order.iter().enumerate() {
        rank_of_head[i] = k + 1;
    }
    // Rank of each basin: that of its valley.
    let rank_of: Vec<usize> = (0..basins.list.len())
        .map(|b| {
            let h = heads.iter().position(|&x| x == valley_of[b]).unwrap_or(0);
            rank_of_head[h]
        })
        .collect();
    let mut ranked: Vec<Minimum> = order
        .iter()
        .map(|&i| Minimum {
            rank: rank_of_head[i],
            ..minima[i].clone()
        })
        .collect();
    let mut minimum_of_run: Vec<Option<usize>> = vec![None; total];
    for (id, basin) in basins.list.iter().enumerate() {
        for &i in basin.members.iter().chain(&basin.credited) {
            minimum_of_run[i] = Some(rank_of[id]);
        }
    }
    let runs: Vec<Run> = done
        .into_iter()
        .enumerate()
        .map(|(i, (r, full))| Run {
            index: i,
            origin: cands[i].origin.clone(),
            start: cands[i].point.clone(),
            end: r.end,
            ssr: r.ssr,
            iterations: r.iterations,
            evaluations: r.evaluations,
            stop: r.stop,
            converged: r.converged,
            full_length: full,
            abandoned_into: r.abandoned_into.map(|k| rank_of[k]),
            minimum: minimum_of_run[i],
        })
        .collect();
    if opts.top > 0 {
        ranked.truncate(opts.top);
    }
    SearchOutcome {
        names: names.to_vec(),
        minima: ranked,
        candidates_tried: total,
        stopped_by_time: stop == SearchStop::TimeLimit,
        stop,
        runs,
    }
}
