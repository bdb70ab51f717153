//! The shared input-error record: which parameter, what value, what is allowed.
//!
//! Parameter names are snake_case with the unit last (`theta_min_deg`), the same as the
//! run-card keys; the command line shows them as flags (`--theta-min-deg`).

use thiserror::Error;

/// The highest centre-of-mass energy radnorm takes, GeV (100 TeV: beyond any e⁺e⁻ collider;
/// the hadronic Π table ends at q² = 1e10 GeV² and the structure functions' scales with it).
pub const MAX_SQRT_S_GEV: f64 = 1e5;

/// The smallest selection efficiency taken (a prescale included): below, N/(εσ) and its
/// uncertainties leave any sensible range (1e-160 had overflowed the budget; common
/// practice, no source).
pub const MIN_EFFICIENCY: f64 = 1e-6;

/// The largest event count taken: 2⁵³, beyond which a double no longer holds every whole
/// number.
pub const MAX_EVENTS: f64 = 9_007_199_254_740_992.0;

/// A number as a person would write it back in a message: to 12 significant digits (no
/// 0.052000000000000005 from arithmetic), plain where that is short, with an exponent for
/// very large or very small magnitudes (`{}` would print 1e300 as 301 digits).
pub fn shown(v: f64) -> String {
    let rounded: f64 = format!("{v:.11e}").parse().unwrap_or(v);
    let a = rounded.abs();
    if a != 0.0 && a.is_finite() && !(1e-5..1e15).contains(&a) {
        format!("{rounded:e}")
    } else {
        format!("{rounded}")
    }
}

/// A parameter outside its allowed range.
#[derive(Debug, Error, Clone, PartialEq)]
#[error("{name} = {}", self.verdict())]
pub struct ParamError {
    pub name: &'static str,
    pub value: f64,
    pub allowed: String,
}

impl ParamError {
    pub fn new(name: &'static str, value: f64, allowed: impl Into<String>) -> Self {
        ParamError {
            name,
            value,
            allowed: allowed.into(),
        }
    }

    /// Ok when `lo < value < hi` (open interval, NaN rejected).
    pub fn check_open(name: &'static str, value: f64, lo: f64, hi: f64) -> Result<f64, Self> {
        if value > lo && value < hi {
            Ok(value)
        } else {
            Err(Self::new(name, value, format!("{lo} < {name} < {hi}")))
        }
    }

    /// "`value` is not allowed; allowed: `allowed`", for messages that name the parameter
    /// their own way (a flag, a card key, a file column).
    pub fn verdict(&self) -> String {
        format!(
            "{} is not allowed; allowed: {}",
            shown(self.value),
            self.allowed
        )
    }

    /// Ok when 0 < `value` ≤ [`MAX_SQRT_S_GEV`]: a centre-of-mass energy.
    pub fn check_sqrt_s(name: &'static str, value: f64) -> Result<f64, Self> {
        if value > 0.0 && value <= MAX_SQRT_S_GEV {
            Ok(value)
        } else {
            Err(Self::new(
                name,
                value,
                format!("0 < {name} ≤ {MAX_SQRT_S_GEV:e} GeV (100 TeV)"),
            ))
        }
    }

    /// Ok when `value > 0` and finite.
    pub fn check_positive(name: &'static str, value: f64) -> Result<f64, Self> {
        if value > 0.0 && value.is_finite() {
            Ok(value)
        } else {
            Err(Self::new(name, value, format!("a finite {name} > 0")))
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_are_shown_as_written() {
        assert_eq!(shown(0.01 * 5.2), "0.052");
        assert_eq!(shown(1e300), "1e300");
        assert_eq!(shown(-2.5e-9), "-2.5e-9");
        assert_eq!(shown(3.0), "3");
        assert_eq!(shown(91.1876), "91.1876");
        assert_eq!(shown(f64::NAN), "NaN");
        let e = ParamError::new("x_max", 1e-300, "0 < x_max ≤ 1");
        assert_eq!(
            e.to_string(),
            "x_max = 1e-300 is not allowed; allowed: 0 < x_max ≤ 1"
        );
    }
}
