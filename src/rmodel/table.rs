//! A user R table: `sqrt_s_gev,r,r_stat,r_syst` rows that replace the model over their range.
//!
//! Format (CSV, one header line with exactly these four column names in this order; `#`
//! starts a comment line; blank lines are skipped): energies strictly increasing, R and both
//! uncertainties finite and ≥ 0, at least two rows. Between rows R is interpolated linearly
//! in √s. `r_syst` is taken as fully correlated over the table, `r_stat` as independent
//! point to point.

use crate::process::MAX_R;
use crate::shown;
use thiserror::Error;

/// Where in the file a problem is (1-based line and column).
#[derive(Debug, Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum TableError {
    #[error(
        "{source_name}: line {line}: the header must be `sqrt_s_gev,r,r_stat,r_syst`, found `{found}`"
    )]
    Header {
        source_name: String,
        line: usize,
        found: String,
    },
    #[error(
        "{source_name}: line {line}: expected 4 columns (sqrt_s_gev,r,r_stat,r_syst), found {found}"
    )]
    Columns {
        source_name: String,
        line: usize,
        found: usize,
    },
    #[error("{source_name}: line {line}, column {column} ({key}): `{text}` is not a number")]
    NotANumber {
        source_name: String,
        line: usize,
        column: usize,
        key: &'static str,
        text: String,
    },
    #[error(
        "{source_name}: line {line}, column {column} ({key}): {} is not allowed; allowed: {allowed}", shown(*value)
    )]
    OutOfRange {
        source_name: String,
        line: usize,
        column: usize,
        key: &'static str,
        value: f64,
        allowed: &'static str,
    },
    #[error(
        "{source_name}: line {line}, column 1 (sqrt_s_gev): {value} does not follow {previous}; energies must be strictly increasing (no duplicates)"
    )]
    NotIncreasing {
        source_name: String,
        line: usize,
        value: f64,
        previous: f64,
    },
    #[error("{source_name}: a table needs at least 2 rows, found {found}")]
    TooFewRows { source_name: String, found: usize },
}

const KEYS: [&str; 4] = ["sqrt_s_gev", "r", "r_stat", "r_syst"];

/// A validated user R table.
#[derive(Debug, Clone, PartialEq)]
pub struct RTable {
    sqrt_s_gev: Vec<f64>,
    r: Vec<f64>,
    r_stat: Vec<f64>,
    r_syst: Vec<f64>,
    includes_narrow: bool,
}

impl RTable {
    /// Parse CSV text; `source_name` (the file name) goes into every error message.
    /// `includes_narrow`: the table already contains J/ψ, ψ(2S), Υ(1S–3S) where it covers
    /// their masses, so the model's analytic narrow resonances are dropped there.
    ///
    /// # Errors
    /// [`TableError`] naming the line and column of the first problem.
    pub fn parse(text: &str, source_name: &str, includes_narrow: bool) -> Result<Self, TableError> {
        let name = || source_name.to_string();
        let mut header_seen = false;
        let mut cols: [Vec<f64>; 4] = Default::default();
        for (i, raw) in text.lines().enumerate() {
            let line = i + 1;
            let trimmed = raw.trim();
            if trimmed.is_empty() || trimmed.starts_with('#') {
                continue;
            }
            let fields: Vec<&str> = trimmed.split(',').map(str::trim).collect();
            if !header_seen {
                if fields != KEYS {
                    return Err(TableError::Header {
                        source_name: name(),
                        line,
                        found: trimmed.to_string(),
                    });
                }
                header_seen = true;
                continue;
            }
            if fields.len() != 4 {
                return Err(TableError::Columns {
                    source_name: name(),
                    line,
                    found: fields.len(),
                });
            }
            for (c, field) in fields.iter().enumerate() {
                let column = c + 1;
                let value: f64 = field.parse().map_err(|_| TableError::NotANumber {
                    source_name: name(),
                    line,
                    column,
                    key: KEYS[c],
                    text: field.to_string(),
                })?;
                let ok = if c == 0 {
                    value > 0.0 && value.is_finite()
                } else {
                    (0.0..=MAX_R).contains(&value)
                };
                if !ok {
                    return Err(TableError::OutOfRange {
                        source_name: name(),
                        line,
                        column,
                        key: KEYS[c],
                        value,
                        allowed: if c == 0 {
                            "a finite energy > 0 GeV"
                        } else {
                            "0 ≤ value ≤ 1e6 (above any hadronic R)"
                        },
                    });
                }
                if c == 0
                    && let Some(&previous) = cols[0].last()
                    && value <= previous
                {
                    return Err(TableError::NotIncreasing {
                        source_name: name(),
                        line,
                        value,
                        previous,
                    });
                }
                cols[c].push(value);
            }
        }
        if cols[0].len() < 2 {
            return Err(TableError::TooFewRows {
                source_name: name(),
                found: cols[0].len(),
            });
        }
        let [sqrt_s_gev, r, r_stat, r_syst] = cols;
        Ok(RTable {
            sqrt_s_gev,
            r,
            r_stat,
            r_syst,
            includes_narrow,
        })
    }

    /// The covered range [√s_first, √s_last] in GeV.
    pub fn range_gev(&self) -> (f64, f64) {
        (
            self.sqrt_s_gev[0],
            self.sqrt_s_gev[self.sqrt_s_gev.len() - 1],
        )
    }

    /// True when √s (GeV) lies inside the table's range.
    pub fn covers(&self, sqrt_s_gev: f64) -> bool {
        let (lo, hi) = self.range_gev();
        sqrt_s_gev >= lo && sqrt_s_gev <= hi
    }

    /// Whether the table already contains the narrow resonances.
    pub fn includes_narrow(&self) -> bool {
        self.includes_narrow
    }

    /// The row energies (GeV).
    pub fn sqrt_s_gev(&self) -> &[f64] {
        &self.sqrt_s_gev
    }

    /// The point-to-point (statistical) uncertainties.
    pub fn r_stat(&self) -> &[f64] {
        &self.r_stat
    }

    /// (R, R_syst) interpolated linearly in √s at `sqrt_s_gev` inside the range.
    pub fn eval(&self, sqrt_s_gev: f64) -> (f64, f64) {
        let x = &self.sqrt_s_gev;
        let i = x
            .partition_point(|&v| v <= sqrt_s_gev)
            .clamp(1, x.len() - 1)
            - 1;
        let t = ((sqrt_s_gev - x[i]) / (x[i + 1] - x[i])).clamp(0.0, 1.0);
        let lerp = |v: &[f64]| v[i] + t * (v[i + 1] - v[i]);
        (lerp(&self.r), lerp(&self.r_syst))
    }

    /// A copy with every R shifted by `n_sigma` × (r_syst or r_stat), floored at zero.
    pub fn shifted(&self, n_sigma: f64, stat: bool) -> Self {
        let mut t = self.clone();
        let unc = if stat { &self.r_stat } else { &self.r_syst };
        for (r, u) in t.r.iter_mut().zip(unc) {
            *r = (*r + n_sigma * u).max(0.0);
        }
        t
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_and_interpolates() {
        let t = RTable::parse(
            "# invented example\nsqrt_s_gev,r,r_stat,r_syst\n2.0,2.0,0.1,0.05\n3.0,2.4,0.1,0.06\n",
            "t.csv",
            false,
        )
        .unwrap();
        assert_eq!(t.range_gev(), (2.0, 3.0));
        let (r, syst) = t.eval(2.5);
        assert!((r - 2.2).abs() < 1e-15 && (syst - 0.055).abs() < 1e-15);
    }
}
