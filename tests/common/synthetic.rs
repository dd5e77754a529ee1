//! A seeded synthetic suite of model forms of the trade, with random true parameters
//! over several decades and realistic noise. The forms are common practice in growth,
//! dose–response, kinetics, calibration, spectroscopy and creep work; the generators,
//! ranges and noise levels are our own choices.

#![allow(dead_code)]

use foothold::symbolic::Model;

/// SplitMix64 (Steele, Lea & Flood 2014): a small, fast, seedable generator, so the
/// suite is identical on every machine and needs no crate.
pub struct Rng(u64);

impl Rng {
    pub fn new(seed: u64) -> Rng {
        Rng(seed)
    }
    pub fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }
    /// Uniform on [0, 1).
    pub fn unif(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 / (1u64 << 53) as f64
    }
    /// Uniform on [a, b).
    pub fn range(&mut self, a: f64, b: f64) -> f64 {
        a + (b - a) * self.unif()
    }
    /// Log-uniform on [a, b), a, b > 0.
    pub fn log_range(&mut self, a: f64, b: f64) -> f64 {
        (a.ln() + (b.ln() - a.ln()) * self.unif()).exp()
    }
    /// Standard normal (Box–Muller).
    pub fn normal(&mut self) -> f64 {
        let u1 = self.unif().max(1e-300);
        let u2 = self.unif();
        (-2.0 * u1.ln()).sqrt() * (2.0 * std::f64::consts::PI * u2).cos()
    }
    /// +1 or −1 with equal chance.
    pub fn sign(&mut self) -> f64 {
        if self.unif() < 0.5 {
            -1.0
        } else {
            1.0
        }
    }
}

/// One generated dataset with the truth it came from.
pub struct Case {
    pub form: &'static str,
    pub formula: &'static str,
    /// Predictor columns by name.
    pub x: Vec<(String, Vec<f64>)>,
    pub y: Vec<f64>,
    /// True parameters by name.
    pub truth: Vec<(String, f64)>,
}

/// Predictor columns and true parameters, both by name.
pub type Drawn = (Vec<(String, Vec<f64>)>, Vec<(String, f64)>);

/// A model form of the trade and how to draw a realistic instance of it.
pub struct Form {
    pub name: &'static str,
    pub formula: &'static str,
    /// Draws predictor columns and true parameters.
    pub draw: fn(&mut Rng) -> Drawn,
    /// Relative noise (share of the response's range).
    pub noise: f64,
}

fn lin(n: usize, a: f64, b: f64) -> Vec<f64> {
    (0..n)
        .map(|i| a + (b - a) * i as f64 / (n - 1) as f64)
        .collect()
}

fn logspace(n: usize, a: f64, b: f64) -> Vec<f64> {
    (0..n)
        .map(|i| (a.ln() + (b.ln() - a.ln()) * i as f64 / (n - 1) as f64).exp())
        .collect()
}

/// An x design over [0, xmax] (or a log-spaced one) with a random number of points,
/// sometimes replicated and shuffled, as lab data are.
fn design(r: &mut Rng, lo: f64, hi: f64, log: bool) -> Vec<f64> {
    let n = 12 + (r.unif() * 40.0) as usize;
    let mut x = if log {
        logspace(n, lo, hi)
    } else {
        lin(n, lo, hi)
    };
    if r.unif() < 0.3 {
        let copy = x.clone();
        x.extend(copy);
    }
    if r.unif() < 0.3 {
        for i in (1..x.len()).rev() {
            let j = (r.unif() * (i + 1) as f64) as usize;
            x.swap(i, j);
        }
    }
    x
}

fn p(name: &str, v: f64) -> (String, f64) {
    (name.to_string(), v)
}

fn col(name: &str, v: Vec<f64>) -> Vec<(String, Vec<f64>)> {
    vec![(name.to_string(), v)]
}

/// The forms: at least twenty, across the families the issue names.
pub fn forms() -> Vec<Form> {
    vec![
        Form {
            name: "exponential decay",
            formula: "a*exp(-k*t)",
            noise: 0.02,
            draw: |r| {
                let k = r.log_range(1e-3, 1e2);
                let a = r.log_range(1e-2, 1e4) * r.sign();
                (
                    col("t", {
                        let lo = 0.0;
                        let hi = r.range(2.0, 6.0) / k;
                        design(r, lo, hi, false)
                    }),
                    vec![p("a", a), p("k", k)],
                )
            },
        },
        Form {
            name: "decay to a floor",
            formula: "a*exp(-k*t) + c",
            noise: 0.02,
            draw: |r| {
                let k = r.log_range(1e-3, 1e2);
                let a = r.log_range(1e-2, 1e4);
                let c = a * r.range(-0.5, 2.0);
                (
                    col("t", {
                        let lo = 0.0;
                        let hi = r.range(3.0, 7.0) / k;
                        design(r, lo, hi, false)
                    }),
                    vec![p("a", a), p("c", c), p("k", k)],
                )
            },
        },
        Form {
            name: "monomolecular saturation",
            formula: "a*(1 - exp(-k*t))",
            noise: 0.02,
            draw: |r| {
                let k = r.log_range(1e-4, 1e1);
                let a = r.log_range(1e-1, 1e5);
                (
                    col("t", {
                        let lo = 0.0;
                        let hi = r.range(1.5, 6.0) / k;
                        design(r, lo, hi, false)
                    }),
                    vec![p("a", a), p("k", k)],
                )
            },
        },
        Form {
            name: "Michaelis-Menten",
            formula: "vmax*s/(km + s)",
            noise: 0.02,
            draw: |r| {
                let km = r.log_range(1e-3, 1e3);
                let v = r.log_range(1e-2, 1e4);
                (
                    col("s", {
                        let lo = km * 0.05;
                        let hi = km * r.range(5.0, 20.0);
                        design(r, lo, hi, true)
                    }),
                    vec![p("km", km), p("vmax", v)],
                )
            },
        },
        Form {
            name: "Hill",
            formula: "top*c^h/(ec50^h + c^h)",
            noise: 0.02,
            draw: |r| {
                let e = r.log_range(1e-3, 1e3);
                let h = r.range(0.6, 3.5);
                let top = r.log_range(1.0, 1e3);
                (
                    col("c", {
                        let lo = e / 30.0;
                        let hi = e * 30.0;
                        design(r, lo, hi, true)
                    }),
                    vec![p("ec50", e), p("h", h), p("top", top)],
                )
            },
        },
        Form {
            name: "logistic growth",
            formula: "a/(1 + exp(-k*(t - m)))",
            noise: 0.02,
            draw: |r| {
                let k = r.log_range(1e-2, 1e1);
                let m = r.range(3.0, 7.0) / k;
                let a = r.log_range(1e-1, 1e4);
                (
                    col("t", {
                        let lo = 0.0;
                        let hi = m + r.range(3.0, 7.0) / k;
                        design(r, lo, hi, false)
                    }),
                    vec![p("a", a), p("k", k), p("m", m)],
                )
            },
        },
        Form {
            name: "four-parameter logistic dose-response",
            formula: "d + (a - d)/(1 + (x/c)^b)",
            noise: 0.02,
            draw: |r| {
                let c = r.log_range(1e-3, 1e3);
                let b = r.range(0.7, 3.0);
                let a = r.range(0.0, 10.0);
                let d = a + r.log_range(5.0, 500.0) * r.sign();
                (
                    col("x", {
                        let lo = c / 100.0;
                        let hi = c * 100.0;
                        design(r, lo, hi, true)
                    }),
                    vec![p("a", a), p("b", b), p("c", c), p("d", d)],
                )
            },
        },
        Form {
            name: "five-parameter logistic dose-response",
            formula: "d + (a - d)/(1 + (x/c)^b)^g",
            noise: 0.01,
            draw: |r| {
                let c = r.log_range(1e-2, 1e2);
                let b = r.range(0.8, 2.5);
                let g = r.range(0.5, 2.0);
                let a = r.range(0.0, 5.0);
                let d = a + r.log_range(10.0, 200.0);
                (
                    col("x", {
                        let lo = c / 300.0;
                        let hi = c * 300.0;
                        design(r, lo, hi, true)
                    }),
                    vec![p("a", a), p("b", b), p("c", c), p("d", d), p("g", g)],
                )
            },
        },
        Form {
            name: "Gompertz growth",
            formula: "a*exp(-b*exp(-k*t))",
            noise: 0.02,
            draw: |r| {
                let k = r.log_range(1e-2, 1e1);
                let b = r.range(2.0, 10.0);
                let a = r.log_range(1e-1, 1e4);
                (
                    col("t", {
                        let hi = (b.ln() + r.range(3.0, 6.0)) / k;
                        design(r, 0.0, hi, false)
                    }),
                    vec![p("a", a), p("b", b), p("k", k)],
                )
            },
        },
        Form {
            name: "Weibull growth",
            formula: "a*(1 - exp(-(t/l)^s))",
            noise: 0.02,
            draw: |r| {
                let l = r.log_range(1e-2, 1e3);
                let s = r.range(0.7, 3.0);
                let a = r.log_range(1e-1, 1e4);
                (
                    col("t", {
                        let lo = 0.0;
                        let hi = l * r.range(2.0, 4.0);
                        design(r, lo, hi, false)
                    }),
                    vec![p("a", a), p("l", l), p("s", s)],
                )
            },
        },
        Form {
            name: "Richards growth",
            formula: "a/(1 + exp(-k*(t - m)))^(1/v)",
            noise: 0.01,
            draw: |r| {
                let k = r.log_range(1e-2, 1e1);
                let m = r.range(4.0, 7.0) / k;
                let v = r.range(0.5, 2.0);
                let a = r.log_range(1.0, 1e4);
                (
                    col("t", {
                        let lo = 0.0;
                        let hi = m + r.range(4.0, 8.0) / k;
                        design(r, lo, hi, false)
                    }),
                    vec![p("a", a), p("k", k), p("m", m), p("v", v)],
                )
            },
        },
        Form {
            name: "biexponential",
            formula: "a1*exp(-k1*t) + a2*exp(-k2*t)",
            noise: 0.005,
            draw: |r| {
                let k1 = r.log_range(1e-2, 1e1);
                let k2 = k1 * r.log_range(5.0, 30.0);
                let a1 = r.log_range(1.0, 1e3);
                let a2 = a1 * r.log_range(0.5, 3.0);
                (
                    col("t", {
                        let lo = 0.0;
                        let hi = r.range(4.0, 7.0) / k1;
                        design(r, lo, hi, false)
                    }),
                    vec![p("a1", a1), p("a2", a2), p("k1", k1), p("k2", k2)],
                )
            },
        },
        Form {
            name: "first-order absorption and elimination",
            formula: "d*ka/(ka - ke)*(exp(-ke*t) - exp(-ka*t))",
            noise: 0.02,
            draw: |r| {
                let ke = r.log_range(1e-2, 1.0);
                let ka = ke * r.log_range(4.0, 20.0);
                let d = r.log_range(1.0, 1e3);
                (
                    col("t", {
                        let lo = 0.0;
                        let hi = r.range(4.0, 6.0) / ke;
                        design(r, lo, hi, false)
                    }),
                    vec![p("d", d), p("ka", ka), p("ke", ke)],
                )
            },
        },
        Form {
            name: "power law with offset (creep)",
            formula: "e0 + a*t^n",
            noise: 0.01,
            draw: |r| {
                let n = r.range(0.15, 0.8);
                let a = r.log_range(1e-3, 1e2);
                let e0 = a * r.range(0.0, 5.0);
                (
                    col("t", {
                        let lo = 0.1;
                        let hi = r.log_range(10.0, 1e4);
                        design(r, lo, hi, false)
                    }),
                    vec![p("a", a), p("e0", e0), p("n", n)],
                )
            },
        },
        Form {
            name: "Gaussian peak on a sloped baseline",
            formula: "h*exp(-(x - c)^2/(2*w^2)) + b0 + b1*x",
            noise: 0.02,
            draw: |r| {
                let span = r.log_range(1.0, 1e3);
                let c = span * r.range(0.3, 0.7);
                let w = span * r.range(0.04, 0.15);
                let h = r.log_range(1.0, 1e4);
                let b0 = h * r.range(0.0, 0.5);
                let b1 = h / span * r.range(-0.2, 0.2);
                (
                    col("x", lin(40 + (r.unif() * 80.0) as usize, 0.0, span)),
                    vec![p("b0", b0), p("b1", b1), p("c", c), p("h", h), p("w", w)],
                )
            },
        },
        Form {
            name: "Lorentzian peak on a baseline",
            formula: "h/(1 + ((x - c)/w)^2) + b0",
            noise: 0.02,
            draw: |r| {
                let span = r.log_range(1.0, 1e3);
                let c = span * r.range(0.3, 0.7);
                let w = span * r.range(0.03, 0.12);
                let h = r.log_range(1.0, 1e4);
                let b0 = h * r.range(-0.3, 0.3);
                (
                    col("x", lin(40 + (r.unif() * 80.0) as usize, 0.0, span)),
                    vec![p("b0", b0), p("c", c), p("h", h), p("w", w)],
                )
            },
        },
        Form {
            name: "damped oscillation",
            formula: "exp(-d*t)*(a*cos(w*t) + b*sin(w*t)) + c",
            noise: 0.02,
            draw: |r| {
                let w = r.log_range(1e-1, 1e2);
                let cycles = r.range(3.0, 8.0);
                let tmax = cycles * 2.0 * std::f64::consts::PI / w;
                let d = r.range(0.3, 2.0) / tmax;
                let a = r.log_range(1.0, 1e3) * r.sign();
                let b = a.abs() * r.range(-1.0, 1.0);
                let c = a.abs() * r.range(-1.0, 1.0);
                (
                    col("t", lin(60 + (r.unif() * 100.0) as usize, 0.0, tmax)),
                    vec![p("a", a), p("b", b), p("c", c), p("d", d), p("w", w)],
                )
            },
        },
        Form {
            name: "rational calibration",
            formula: "(a + b*x)/(1 + c*x)",
            noise: 0.01,
            draw: |r| {
                let xs = r.log_range(1e-2, 1e3);
                let c = r.range(0.3, 3.0) / xs;
                let a = r.log_range(1e-2, 1e2);
                let b = r.log_range(1.0, 1e3) / xs;
                (
                    col("x", {
                        let lo = 0.0;
                        let hi = xs * r.range(2.0, 8.0);
                        design(r, lo, hi, false)
                    }),
                    vec![p("a", a), p("b", b), p("c", c)],
                )
            },
        },
        Form {
            name: "Arrhenius rate",
            formula: "a*exp(-ea/temp)",
            noise: 0.02,
            draw: |r| {
                let ea = r.range(2000.0, 12000.0);
                let a = r.log_range(1e2, 1e12);
                (
                    col("temp", {
                        let lo = 280.0;
                        let hi = 420.0;
                        design(r, lo, hi, false)
                    }),
                    vec![p("a", a), p("ea", ea)],
                )
            },
        },
        Form {
            name: "Langmuir isotherm",
            formula: "qm*k*c/(1 + k*c)",
            noise: 0.02,
            draw: |r| {
                let k = r.log_range(1e-3, 1e3);
                let qm = r.log_range(1e-2, 1e3);
                (
                    col("c", {
                        let lo = 0.05 / k;
                        let hi = r.range(5.0, 30.0) / k;
                        design(r, lo, hi, true)
                    }),
                    vec![p("k", k), p("qm", qm)],
                )
            },
        },
        Form {
            name: "van Genuchten retention",
            formula: "tr + (ts - tr)/(1 + (al*h)^n)^(1 - 1/n)",
            noise: 0.01,
            draw: |r| {
                let al = r.log_range(1e-3, 1e-1);
                let n = r.range(1.3, 3.5);
                let tr = r.range(0.02, 0.15);
                let ts = r.range(0.35, 0.55);
                (
                    col("h", {
                        let lo = 0.05 / al;
                        let hi = 300.0 / al;
                        design(r, lo, hi, true)
                    }),
                    vec![p("al", al), p("n", n), p("tr", tr), p("ts", ts)],
                )
            },
        },
        Form {
            name: "Avrami transformation",
            formula: "a*(1 - exp(-k*t^n))",
            noise: 0.01,
            draw: |r| {
                let n = r.range(1.0, 4.0);
                let tau = r.log_range(1e-1, 1e3);
                let k = tau.powf(-n);
                let a = r.log_range(0.5, 100.0);
                (
                    col("t", {
                        let lo = tau * 0.05;
                        let hi = tau * r.range(2.0, 3.5);
                        design(r, lo, hi, false)
                    }),
                    vec![p("a", a), p("k", k), p("n", n)],
                )
            },
        },
        Form {
            name: "sinusoid of unknown period",
            formula: "c + a*sin(2*pi*t/per) + b*cos(2*pi*t/per)",
            noise: 0.05,
            draw: |r| {
                let per = r.log_range(1e-1, 1e2);
                let tmax = per * r.range(3.0, 10.0);
                let a = r.log_range(1.0, 1e3);
                let b = a * r.range(-1.0, 1.0);
                let c = a * r.range(-2.0, 2.0);
                let n = 40 + (r.unif() * 100.0) as usize;
                let mut t: Vec<f64> = (0..n).map(|_| r.range(0.0, tmax)).collect();
                t.sort_by(|x, y| x.partial_cmp(y).unwrap());
                (
                    col("t", t),
                    vec![p("a", a), p("b", b), p("c", c), p("per", per)],
                )
            },
        },
        Form {
            name: "two-predictor production surface",
            formula: "a*x1^b*x2^c",
            noise: 0.02,
            draw: |r| {
                let n = 30 + (r.unif() * 40.0) as usize;
                let x1: Vec<f64> = (0..n).map(|_| r.log_range(1.0, 100.0)).collect();
                let x2: Vec<f64> = (0..n).map(|_| r.log_range(0.1, 10.0)).collect();
                let a = r.log_range(1e-2, 1e3);
                let b = r.range(0.1, 1.2);
                let c = r.range(-0.8, 1.2);
                (
                    vec![("x1".to_string(), x1), ("x2".to_string(), x2)],
                    vec![p("a", a), p("b", b), p("c", c)],
                )
            },
        },
        Form {
            name: "two-predictor saturation with temperature",
            formula: "vmax*exp(-ea*(1/temp - 1/300))*s/(km + s)",
            noise: 0.02,
            draw: |r| {
                let n = 30 + (r.unif() * 40.0) as usize;
                let km = r.log_range(1e-2, 1e2);
                let s: Vec<f64> = (0..n).map(|_| r.log_range(km / 10.0, km * 20.0)).collect();
                let temp: Vec<f64> = (0..n).map(|_| r.range(280.0, 320.0)).collect();
                let vmax = r.log_range(1e-1, 1e3);
                let ea = r.range(1000.0, 8000.0);
                (
                    vec![("s".to_string(), s), ("temp".to_string(), temp)],
                    vec![p("ea", ea), p("km", km), p("vmax", vmax)],
                )
            },
        },
    ]
}

/// Evaluates a form's model at the given predictors and named parameters (tree walking).
pub fn eval_form(formula: &str, x: &[(String, Vec<f64>)], truth: &[(String, f64)]) -> Vec<f64> {
    let mut cols: Vec<String> = x.iter().map(|(n, _)| n.clone()).collect();
    cols.push("y".into());
    let m = Model::new(formula, &cols, Some("y")).expect("form parses");
    let p: Vec<f64> = m
        .params
        .iter()
        .map(|n| truth.iter().find(|(t, _)| t == n).expect("truth").1)
        .collect();
    let xs: Vec<&Vec<f64>> = m
        .vars
        .iter()
        .map(|v| &x.iter().find(|(n, _)| n == v).expect("column").1)
        .collect();
    (0..xs[0].len())
        .map(|i| m.rhs.eval(&p, &xs.iter().map(|c| c[i]).collect::<Vec<_>>()))
        .collect()
}

/// Draws one case of a form: predictors, truth, and a noisy response.
pub fn draw_case(form: &Form, r: &mut Rng) -> Case {
    let (x, truth) = (form.draw)(r);
    let clean = eval_form(form.formula, &x, &truth);
    let (lo, hi) = clean
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| {
            (a.min(v), b.max(v))
        });
    let sd = form.noise * (hi - lo).abs().max(f64::MIN_POSITIVE);
    let y = clean.iter().map(|v| v + sd * r.normal()).collect();
    Case {
        form: form.name,
        formula: form.formula,
        x,
        y,
        truth,
    }
}
