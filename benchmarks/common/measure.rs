//! What the benchmarks measure besides wall time: CPU time and peak memory of
//! this process (Linux /proc), a seeded invented-data generator, and the growth
//! exponent between two sizes.

// Each benchmark uses a part of these helpers.
#![allow(dead_code)]

/// CPU seconds (user + system) used by this process so far, from
/// /proc/self/stat (clock ticks of 1/100 s); NaN where unreadable.
pub fn cpu_seconds() -> f64 {
    let Ok(s) = std::fs::read_to_string("/proc/self/stat") else {
        return f64::NAN;
    };
    // the command name may hold spaces: fields are counted after its ')'
    let Some(rest) = s.rfind(')').map(|i| &s[i + 2..]) else {
        return f64::NAN;
    };
    let f: Vec<&str> = rest.split_whitespace().collect();
    let tick = |k: usize| f.get(k).and_then(|v| v.parse::<f64>().ok());
    match (tick(11), tick(12)) {
        (Some(u), Some(s)) => (u + s) / 100.0,
        _ => f64::NAN,
    }
}

/// Peak resident memory of this process in MB (VmHWM); NaN where unreadable.
pub fn peak_mb() -> f64 {
    std::fs::read_to_string("/proc/self/status")
        .ok()
        .and_then(|s| {
            s.lines()
                .find(|l| l.starts_with("VmHWM:"))
                .and_then(|l| l.split_whitespace().nth(1))
                .and_then(|v| v.parse::<f64>().ok())
        })
        .map(|kb| kb / 1024.0)
        .unwrap_or(f64::NAN)
}

/// Growth exponent b of t ∝ n^b between (n1, t1) and (n2, t2).
pub fn exponent(n1: f64, t1: f64, n2: f64, t2: f64) -> f64 {
    (t2 / t1).ln() / (n2 / n1).ln()
}

/// Seeded pseudo-random numbers for invented data (xorshift64*, Box–Muller normals).
pub struct Rng(u64);

impl Rng {
    /// A generator from a seed.
    pub fn new(seed: u64) -> Rng {
        Rng(seed.max(1))
    }
    /// Uniform on [0, 1).
    pub fn uniform(&mut self) -> f64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        (self.0.wrapping_mul(0x2545_F491_4F6C_DD1D) >> 11) as f64 / (1u64 << 53) as f64
    }
    /// Standard normal.
    pub fn normal(&mut self) -> f64 {
        let u = self.uniform().max(1e-300);
        let v = self.uniform();
        (-2.0 * u.ln()).sqrt() * (2.0 * std::f64::consts::PI * v).cos()
    }
}
