//! Quasi-random points in the unit cube: a Sobol sequence (Sobol' 1967) with
//! the direction numbers of Joe & Kuo (2008, "Constructing Sobol sequences with
//! better two-dimensional projections", SIAM J. Sci. Comput. 30, table
//! new-joe-kuo-6.21201) for up to 32 dimensions, randomised by a Cranley &
//! Patterson (1976) rotation drawn from the seed; beyond 32 dimensions a Latin
//! hypercube (McKay, Beckman & Conover 1979). Deterministic for a given seed.

use super::rng::Rng;

/// Bits per coordinate.
const BITS: usize = 32;

/// Joe & Kuo (2008) primitive-polynomial data for dimensions 2..=32:
/// (degree s, coefficient code a, initial direction numbers m₁..mₛ).
const JOE_KUO: [(u32, u32, &[u32]); 31] = [
    (1, 0, &[1]),
    (2, 1, &[1, 3]),
    (3, 1, &[1, 3, 1]),
    (3, 2, &[1, 1, 1]),
    (4, 1, &[1, 1, 3, 3]),
    (4, 4, &[1, 3, 5, 13]),
    (5, 2, &[1, 1, 5, 5, 17]),
    (5, 4, &[1, 1, 5, 5, 5]),
    (5, 7, &[1, 1, 7, 11, 19]),
    (5, 11, &[1, 1, 5, 1, 1]),
    (5, 13, &[1, 1, 1, 3, 11]),
    (5, 14, &[1, 3, 5, 5, 31]),
    (6, 1, &[1, 3, 3, 9, 7, 49]),
    (6, 13, &[1, 1, 1, 15, 21, 21]),
    (6, 16, &[1, 3, 1, 13, 27, 49]),
    (6, 19, &[1, 1, 1, 15, 7, 5]),
    (6, 22, &[1, 3, 1, 15, 13, 25]),
    (6, 25, &[1, 1, 5, 5, 19, 61]),
    (7, 1, &[1, 3, 7, 11, 23, 15, 103]),
    (7, 4, &[1, 3, 7, 13, 13, 15, 69]),
    (7, 7, &[1, 1, 3, 13, 7, 35, 63]),
    (7, 8, &[1, 3, 5, 9, 1, 25, 53]),
    (7, 14, &[1, 3, 1, 13, 9, 35, 107]),
    (7, 19, &[1, 3, 1, 5, 27, 61, 31]),
    (7, 21, &[1, 1, 5, 11, 19, 41, 61]),
    (7, 28, &[1, 3, 5, 3, 3, 13, 69]),
    (7, 31, &[1, 1, 7, 13, 1, 19, 1]),
    (7, 32, &[1, 3, 7, 5, 13, 19, 59]),
    (7, 37, &[1, 1, 3, 9, 25, 29, 41]),
    (7, 41, &[1, 3, 5, 13, 23, 1, 55]),
    (7, 42, &[1, 3, 7, 3, 13, 59, 17]),
];

/// Most dimensions the Sobol generator supports.
pub const SOBOL_MAX_DIM: usize = JOE_KUO.len() + 1;

/// Direction numbers V₁..V₃₂ (scaled by 2³²) for dimension `d` (0-based).
fn directions(d: usize) -> [u32; BITS] {
    let mut v = [0u32; BITS];
    if d == 0 {
        for (i, vi) in v.iter_mut().enumerate() {
            *vi = 1u32 << (BITS - 1 - i);
        }
        return v;
    }
    let (s, a, m) = JOE_KUO[d - 1];
    let s = s as usize;
    for i in 0..s.min(BITS) {
        v[i] = m[i] << (BITS - 1 - i);
    }
    for i in s..BITS {
        let mut x = v[i - s] ^ (v[i - s] >> s);
        for k in 1..s {
            if (a >> (s - 1 - k)) & 1 == 1 {
                x ^= v[i - k];
            }
        }
        v[i] = x;
    }
    v
}

/// A Sobol sequence in `dim` ≤ [`SOBOL_MAX_DIM`] dimensions, generated in
/// Gray-code order (Antonov & Saleev 1979).
#[derive(Debug, Clone)]
pub struct Sobol {
    v: Vec<[u32; BITS]>,
    x: Vec<u32>,
    index: u64,
}

impl Sobol {
    /// The sequence in `dim` dimensions, or `None` beyond [`SOBOL_MAX_DIM`].
    pub fn new(dim: usize) -> Option<Sobol> {
        if dim > SOBOL_MAX_DIM {
            return None;
        }
        Some(Sobol {
            v: (0..dim).map(directions).collect(),
            x: vec![0; dim],
            index: 0,
        })
    }

    /// The next point (the first call gives the origin).
    pub fn next_point(&mut self) -> Vec<f64> {
        let out = self.x.iter().map(|&x| x as f64 / 4294967296.0).collect();
        // Gray code: flip the direction number at the lowest zero bit of the index.
        let c = (!self.index).trailing_zeros() as usize;
        if c < BITS {
            for (x, v) in self.x.iter_mut().zip(&self.v) {
                *x ^= v[c];
            }
        }
        self.index += 1;
        out
    }
}

/// `n` Latin-hypercube points in `dim` dimensions (McKay, Beckman & Conover
/// 1979): each coordinate takes one value in each of n equal strata, in a
/// random order, jittered within its stratum.
pub fn latin_hypercube(n: usize, dim: usize, rng: &mut Rng) -> Vec<Vec<f64>> {
    let mut pts = vec![vec![0.0; dim]; n];
    for d in 0..dim {
        let mut perm: Vec<usize> = (0..n).collect();
        // Fisher–Yates shuffle.
        for i in (1..n).rev() {
            let j = rng.below(i + 1);
            perm.swap(i, j);
        }
        for (i, p) in pts.iter_mut().enumerate() {
            p[d] = (perm[i] as f64 + rng.uniform()) / n as f64;
        }
    }
    pts
}

/// `n` points in [0,1)^dim, deterministic for `seed`: a Sobol sequence (origin
/// skipped) shifted modulo 1 by a seeded random vector, or a Latin hypercube
/// when `dim` exceeds [`SOBOL_MAX_DIM`].
pub fn unit_points(n: usize, dim: usize, seed: u64) -> Vec<Vec<f64>> {
    let mut rng = Rng::new(seed);
    match Sobol::new(dim) {
        Some(mut s) => {
            let shift: Vec<f64> = (0..dim).map(|_| rng.uniform()).collect();
            s.next_point();
            (0..n)
                .map(|_| {
                    s.next_point()
                        .iter()
                        .zip(&shift)
                        .map(|(u, t)| (u + t).fract())
                        .collect()
                })
                .collect()
        }
        None => latin_hypercube(n, dim, &mut rng),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sobol_first_points() {
        // First points of the 3-dimensional sequence with Joe & Kuo's numbers
        // (from memory; they follow by hand from m = 1 and m = (1, 3)).
        let mut s = Sobol::new(3).unwrap();
        let expect = [
            [0.0, 0.0, 0.0],
            [0.5, 0.5, 0.5],
            [0.75, 0.25, 0.25],
            [0.25, 0.75, 0.75],
            [0.375, 0.375, 0.625],
            [0.875, 0.875, 0.125],
        ];
        for e in expect {
            assert_eq!(s.next_point(), e.to_vec());
        }
    }

    #[test]
    fn sobol_strata_are_balanced() {
        // A Sobol sequence is a (t, s)-sequence: the first 2^k points put exactly
        // 2^(k-1) points in each half of every coordinate (Sobol' 1967).
        let mut s = Sobol::new(SOBOL_MAX_DIM).unwrap();
        let pts: Vec<Vec<f64>> = (0..256).map(|_| s.next_point()).collect();
        for d in 0..SOBOL_MAX_DIM {
            let low = pts.iter().filter(|p| p[d] < 0.5).count();
            assert_eq!(low, 128, "dimension {d}");
            let quarter = pts.iter().filter(|p| p[d] < 0.25).count();
            assert_eq!(quarter, 64, "dimension {d}");
        }
        assert!(Sobol::new(SOBOL_MAX_DIM + 1).is_none());
    }

    #[test]
    fn latin_hypercube_one_per_stratum() {
        let mut rng = Rng::new(3);
        let pts = latin_hypercube(10, 4, &mut rng);
        for d in 0..4 {
            let mut strata: Vec<usize> = pts.iter().map(|p| (p[d] * 10.0) as usize).collect();
            strata.sort();
            assert_eq!(strata, (0..10).collect::<Vec<_>>());
        }
    }

    #[test]
    fn unit_points_seeded() {
        let a = unit_points(16, 5, 11);
        let b = unit_points(16, 5, 11);
        let c = unit_points(16, 5, 12);
        assert_eq!(a, b);
        assert_ne!(a, c);
        assert!(a.iter().flatten().all(|&u| (0.0..1.0).contains(&u)));
        let big = unit_points(8, 40, 1);
        assert_eq!(big.len(), 8);
        assert_eq!(big[0].len(), 40);
    }
}
