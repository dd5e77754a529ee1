//! When a multistart search may stop before its ceiling of starts: the
//! inferred start already fits to the noise level of the data and further
//! starts keep returning to its basin.
//!
//! Stopping test, checked after every chunk of runs when a noise level σ̂ of the
//! response is known (robust difference-based estimate, see
//! `features::noise`): let B be the proper basin (no divergent parameter) of
//! least sum of squares S, with n rows and p parameters. Stop when
//! (i) run 0, the best inferred start, reached B;
//! (ii) √(S / (n − p)) ≤ [`NOISE_FACTOR`]·σ̂ (the fit leaves no more than noise);
//! (iii) at least [`RETURNS`] runs after run 0 reached or were credited to B.
//! To let the test act early, the first `batch` candidates (the inferred ones,
//! refined in full) go in chunks ending at 1, [`PROBE`] and `batch`; later
//! chunks are `batch` long as without the test. Chunk bounds and the test
//! depend only on results in candidate order, so the outcome is the same for
//! any number of threads.

use super::cluster::Basins;
use serde::Serialize;

/// Residual standard deviation allowed, as a multiple of the data's noise level.
pub const NOISE_FACTOR: f64 = 2.0;
/// Runs after the inferred start that must return to its basin.
pub const RETURNS: usize = 3;
/// End of the second chunk of an adaptive search.
pub const PROBE: usize = 4;

/// Why a search ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum SearchStop {
    /// Every candidate up to the ceiling (`--starts`) was refined.
    EveryStartTried,
    /// The time limit ended it between batches.
    TimeLimit,
    /// The inferred start fitted to the noise level and further starts kept returning to its basin.
    Settled,
}

impl SearchStop {
    /// The reason in words, for `--verbose` and the rank table.
    pub fn words(self) -> &'static str {
        match self {
            SearchStop::EveryStartTried => "every start tried",
            SearchStop::TimeLimit => "time limit",
            SearchStop::Settled => {
                "settled (the inferred start fits to the noise level and further starts return to its minimum)"
            }
        }
    }
}

/// The chunks of candidate indices `0..total` refined together: `batch` long,
/// except that an adaptive search splits the first `batch` at 1 and [`PROBE`].
pub fn chunks(total: usize, batch: usize, adaptive: bool) -> Vec<std::ops::Range<usize>> {
    let batch = batch.max(1);
    let mut ends: Vec<usize> = Vec::new();
    if adaptive {
        ends.extend([1, PROBE].into_iter().filter(|&e| e < batch));
    }
    let mut e = batch;
    while e < total {
        ends.push(e);
        e += batch;
    }
    ends.push(total);
    ends.retain(|&e| e <= total);
    ends.dedup();
    let mut out = Vec::with_capacity(ends.len());
    let mut start = 0;
    for e in ends {
        if e > start {
            out.push(start..e);
            start = e;
        }
    }
    out
}

/// The stopping test (i)–(iii) of the module notes on the basins found so far.
pub fn settled(basins: &Basins, noise_sd: f64, n_obs: usize, n_params: usize) -> bool {
    if !(noise_sd.is_finite() && noise_sd > 0.0) || n_obs <= n_params {
        return false;
    }
    let Some(best) = basins
        .list
        .iter()
        .filter(|b| b.divergent.is_empty() && b.ssr.is_finite())
        .min_by(|a, b| a.ssr.total_cmp(&b.ssr))
    else {
        return false;
    };
    let residual_sd = (best.ssr / (n_obs - n_params) as f64).sqrt();
    let returned = best
        .members
        .iter()
        .chain(&best.credited)
        .filter(|&&i| i > 0)
        .count();
    best.members.contains(&0) && residual_sd <= NOISE_FACTOR * noise_sd && returned >= RETURNS
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::search::cluster::Basin;

    #[test]
    fn chunks_split_the_first_batch_only_when_adaptive() {
        let plain: Vec<_> = chunks(20, 8, false);
        assert_eq!(plain, vec![0..8, 8..16, 16..20]);
        let adaptive: Vec<_> = chunks(20, 8, true);
        assert_eq!(adaptive, vec![0..1, 1..4, 4..8, 8..16, 16..20]);
        assert_eq!(chunks(3, 8, true), vec![0..1, 1..3]);
        assert_eq!(chunks(0, 8, true), Vec::<std::ops::Range<usize>>::new());
    }

    fn basin(ssr: f64, members: Vec<usize>, credited: Vec<usize>) -> Basin {
        Basin {
            params: vec![1.0],
            ssr,
            divergent: Vec::new(),
            singular: false,
            best_run: members[0],
            members,
            credited,
        }
    }

    #[test]
    fn settles_only_at_the_noise_level_with_returning_starts() {
        // 24 rows, 4 parameters: residual sd √(S/20).
        let at_noise = Basins {
            list: vec![basin(20.0 * 0.01, vec![0, 1, 3], vec![5])],
        };
        assert!(settled(&at_noise, 0.1, 24, 4));
        // too few returns
        let few = Basins {
            list: vec![basin(20.0 * 0.01, vec![0, 1], Vec::new())],
        };
        assert!(!settled(&few, 0.1, 24, 4));
        // residual sd 3σ̂: not at the noise level
        assert!(!settled(&at_noise, 0.1 / 3.0, 24, 4));
        // the inferred start went elsewhere
        let elsewhere = Basins {
            list: vec![
                basin(20.0 * 0.01, vec![1, 2, 3], Vec::new()),
                basin(50.0, vec![0], Vec::new()),
            ],
        };
        assert!(!settled(&elsewhere, 0.1, 24, 4));
        assert!(!settled(&at_noise, f64::NAN, 24, 4));
    }
}
