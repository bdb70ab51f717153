//! The shared input-error record: which parameter, what value, what is allowed.
//!
//! Parameter names are snake_case with the unit last (`theta_min_deg`), the same as the
//! run-card keys; the command line shows them as flags (`--theta-min-deg`).

use thiserror::Error;

/// A parameter outside its allowed range.
#[derive(Debug, Error, Clone, PartialEq)]
#[error("{name} = {value} is not allowed; allowed: {allowed}")]
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

    /// Ok when `value > 0` and finite.
    pub fn check_positive(name: &'static str, value: f64) -> Result<f64, Self> {
        if value > 0.0 && value.is_finite() {
            Ok(value)
        } else {
            Err(Self::new(name, value, format!("a finite {name} > 0")))
        }
    }
}
