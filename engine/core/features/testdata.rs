//! Deterministic test data: a seeded SplitMix64 generator (Steele, Lea & Flood
//! 2014) with Box–Muller (1958) normal deviates.

/// Seeded pseudo-random generator for reproducible noise in tests.
pub struct Rng(u64);

impl Rng {
    /// A generator from a seed.
    pub fn new(seed: u64) -> Self {
        Rng(seed)
    }

    /// Next 64 random bits (SplitMix64, the engine's own step).
    pub fn next_u64(&mut self) -> u64 {
        crate::search::rng::splitmix64(&mut self.0)
    }

    /// Uniform deviate in (0, 1).
    pub fn uniform(&mut self) -> f64 {
        ((self.next_u64() >> 11) as f64 + 0.5) / (1u64 << 53) as f64
    }

    /// Standard normal deviate (Box–Muller).
    pub fn normal(&mut self) -> f64 {
        let (u, v) = (self.uniform(), self.uniform());
        (-2.0 * u.ln()).sqrt() * (2.0 * std::f64::consts::PI * v).cos()
    }
}

/// n evenly spaced values from a to b inclusive.
pub fn linspace(a: f64, b: f64, n: usize) -> Vec<f64> {
    (0..n)
        .map(|i| a + (b - a) * i as f64 / (n - 1) as f64)
        .collect()
}

/// n log-spaced values from a to b inclusive (a, b > 0).
pub fn logspace(a: f64, b: f64, n: usize) -> Vec<f64> {
    linspace(a.ln(), b.ln(), n)
        .into_iter()
        .map(f64::exp)
        .collect()
}

/// f(x) with additive Gaussian noise of standard deviation sd.
pub fn noisy(x: &[f64], f: impl Fn(f64) -> f64, sd: f64, rng: &mut Rng) -> Vec<f64> {
    x.iter().map(|&t| f(t) + sd * rng.normal()).collect()
}

/// f(x) with relative Gaussian noise: f·(1 + rel·ε).
pub fn noisy_rel(x: &[f64], f: impl Fn(f64) -> f64, rel: f64, rng: &mut Rng) -> Vec<f64> {
    x.iter()
        .map(|&t| f(t) * (1.0 + rel * rng.normal()))
        .collect()
}

#[test]
fn generator_is_reproducible_and_normal() {
    let mut a = Rng::new(42);
    let mut b = Rng::new(42);
    assert_eq!(a.next_u64(), b.next_u64());
    let v: Vec<f64> = (0..20000).map(|_| a.normal()).collect();
    let m = v.iter().sum::<f64>() / v.len() as f64;
    let s = (v.iter().map(|x| (x - m).powi(2)).sum::<f64>() / v.len() as f64).sqrt();
    assert!(m.abs() < 0.03 && (s - 1.0).abs() < 0.03, "{m} {s}");
}
