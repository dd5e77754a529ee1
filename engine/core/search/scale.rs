//! The natural scale of each parameter: its typical magnitude, whether it acts
//! multiplicatively (search it in decades), which signs it may take, and a
//! plausible range. Inference fills these from the model and the data; a
//! fallback makes one from a bare value.

use serde::Serialize;

/// Which signs a parameter may take.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum SignFreedom {
    /// Only positive values make sense (e.g. a rate or a width).
    Positive,
    /// Only negative values make sense.
    Negative,
    /// Either sign is possible.
    Either,
}

/// How the search perturbs and compares one parameter.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ParamScale {
    /// Typical magnitude (> 0): the unit in which distances are measured.
    pub typical: f64,
    /// True for a multiplicative scale parameter, searched in decades.
    pub log: bool,
    /// Signs the parameter may take.
    pub sign: SignFreedom,
    /// Lower end of the plausible range.
    pub lo: f64,
    /// Upper end of the plausible range.
    pub hi: f64,
}

impl ParamScale {
    /// A scale when nothing is known but a value: magnitude |v| searched in
    /// decades (common practice when the order of magnitude is the main
    /// uncertainty), either sign; a zero or non-finite value gets the unit scale,
    /// searched additively over ±10.
    pub fn from_value(v: f64) -> ParamScale {
        if v.is_finite() && v != 0.0 {
            let t = v.abs();
            ParamScale {
                typical: t,
                log: true,
                sign: SignFreedom::Either,
                lo: -1e3 * t,
                hi: 1e3 * t,
            }
        } else {
            ParamScale {
                typical: 1.0,
                log: false,
                sign: SignFreedom::Either,
                lo: -10.0,
                hi: 10.0,
            }
        }
    }

    /// The typical magnitude, made safe for division (positive and finite).
    pub fn unit(&self) -> f64 {
        if self.typical.is_finite() && self.typical > 0.0 {
            self.typical
        } else {
            1.0
        }
    }

    /// True when `lo < hi` are both finite, i.e. the range can bound a perturbation.
    pub fn has_range(&self) -> bool {
        self.lo.is_finite() && self.hi.is_finite() && self.lo < self.hi
    }
}

/// Scales for `n` parameters: `given` where it has the right length, else
/// [`ParamScale::from_value`] of the first candidate (or of 1).
pub fn scales_or_fallback(
    given: &[ParamScale],
    first: Option<&[f64]>,
    n: usize,
) -> Vec<ParamScale> {
    if given.len() == n {
        return given.to_vec();
    }
    (0..n)
        .map(|i| ParamScale::from_value(first.and_then(|c| c.get(i).copied()).unwrap_or(1.0)))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fallback_scales() {
        let s = ParamScale::from_value(-0.02);
        assert_eq!(s.typical, 0.02);
        assert!(s.log);
        assert_eq!(s.sign, SignFreedom::Either);
        assert!(s.has_range());
        let z = ParamScale::from_value(0.0);
        assert_eq!(z.typical, 1.0);
        assert!(!z.log);
        assert_eq!((z.lo, z.hi), (-10.0, 10.0));
        let nan = ParamScale::from_value(f64::NAN);
        assert_eq!(nan.unit(), 1.0);
        let v = scales_or_fallback(&[], Some(&[2.0, 0.0]), 2);
        assert_eq!(v[0].typical, 2.0);
        assert_eq!(v[1].typical, 1.0);
    }
}
