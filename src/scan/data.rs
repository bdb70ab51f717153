//! The measured scan: one row per energy point, read from CSV.
//!
//! Columns (header names; order free; lines starting with `#` are comments):
//!
//! | column | meaning | allowed |
//! |---|---|---|
//! | `sqrt_s_gev` | centre-of-mass energy of the point, GeV | 0 < √s ≤ 10⁵, strictly increasing down the file |
//! | `n_events` | selected signal-candidate events | whole number 0 to 2⁵³ |
//! | `n_bkg` | expected background among them (an estimate, may be fractional) | 0 ≤ `n_bkg` < `n_events` |
//! | `efficiency` | signal selection efficiency × acceptance | 10⁻⁶ ≤ ε ≤ 1 |
//! | `luminosity_nb_inv` | integrated luminosity, nb⁻¹ | > 0 |
//! | `n_bhabha`, `n_bhabha_bkg`, `bhabha_efficiency` | luminosity-monitor counts instead of `luminosity_nb_inv` | as for the signal |
//! | `energy_spread_mev` | optional: the centre-of-mass energy spread σ_W of this point, MeV | 0 to √s/8 |
//!
//! Give either `luminosity_nb_inv` or all three Bhabha columns, not both.

use super::ScanError;
use crate::isr::max_spread_mev;
use crate::{MAX_EVENTS, MIN_EFFICIENCY, ParamError, shown};
use std::path::Path;

/// How the luminosity of a point is given.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum LuminosityInput {
    /// Integrated luminosity in nb⁻¹, measured elsewhere.
    Given { luminosity_nb_inv: f64 },
    /// Luminosity-monitor counts, to be divided by a visible cross-section.
    Bhabha {
        n_events: f64,
        n_bkg: f64,
        efficiency: f64,
    },
}

/// One measured energy point.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ScanPoint {
    pub sqrt_s_gev: f64,
    pub n_events: f64,
    pub n_bkg: f64,
    pub efficiency: f64,
    pub luminosity: LuminosityInput,
    /// Centre-of-mass energy spread σ_W in MeV, if this row gives one.
    pub energy_spread_mev: Option<f64>,
}

impl ScanPoint {
    /// The point's spread in MeV: its own, else `default_mev` (the card's), which must not
    /// exceed [`max_spread_mev`] at the point's energy (its own was checked when read).
    ///
    /// # Errors
    /// The default too wide at this energy.
    pub fn spread_mev(&self, default_mev: f64) -> Result<f64, ScanError> {
        let w = self.energy_spread_mev.unwrap_or(default_mev);
        let most = max_spread_mev(self.sqrt_s_gev);
        if w > most {
            return Err(ScanError::Model(format!(
                "beam.energy_spread_mev {w} is too wide at sqrt_s = {} GeV; allowed: ≤ {most} MeV (sqrt_s/8)",
                self.sqrt_s_gev
            )));
        }
        Ok(w)
    }
}

const KNOWN: [&str; 9] = [
    "sqrt_s_gev",
    "n_events",
    "n_bkg",
    "efficiency",
    "luminosity_nb_inv",
    "n_bhabha",
    "n_bhabha_bkg",
    "bhabha_efficiency",
    "energy_spread_mev",
];

/// Read a scan CSV file.
///
/// # Errors
/// [`ScanError::Io`] when unreadable; otherwise as [`parse_scan`].
pub fn read_scan(path: &Path) -> Result<Vec<ScanPoint>, ScanError> {
    let text = std::fs::read_to_string(path).map_err(|source| ScanError::Io {
        path: path.to_path_buf(),
        source,
    })?;
    parse_scan(&text, &path.display().to_string())
}

/// Parse scan CSV text; `file` names it in messages.
///
/// # Errors
/// [`ScanError::Data`] naming line and column for a bad value, a count below its
/// background, an efficiency outside (0, 1], a luminosity ≤ 0 or energies that do not
/// increase; [`ScanError::DataFile`] for missing or unknown columns and for no rows.
pub fn parse_scan(text: &str, file: &str) -> Result<Vec<ScanPoint>, ScanError> {
    let mut reader = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .trim(csv::Trim::All)
        .from_reader(text.as_bytes());
    let file_error = |message: String| ScanError::DataFile {
        file: file.to_string(),
        message,
    };
    let headers: Vec<String> = reader
        .headers()
        .map_err(|e| file_error(format!("cannot read the header: {e}")))?
        .iter()
        .map(str::to_string)
        .collect();
    if let Some(bad) = headers.iter().find(|h| !KNOWN.contains(&h.as_str())) {
        return Err(file_error(format!(
            "unknown column '{bad}'; allowed: {}",
            KNOWN.join(", ")
        )));
    }
    let col = |name: &str| headers.iter().position(|h| h == name);
    for required in ["sqrt_s_gev", "n_events", "n_bkg", "efficiency"] {
        if col(required).is_none() {
            return Err(file_error(format!("missing column '{required}'")));
        }
    }
    let bhabha = [
        col("n_bhabha"),
        col("n_bhabha_bkg"),
        col("bhabha_efficiency"),
    ];
    let given = col("luminosity_nb_inv");
    let has_bhabha = bhabha.iter().all(Option::is_some);
    if given.is_some() == has_bhabha || (!has_bhabha && bhabha.iter().any(Option::is_some)) {
        return Err(file_error(
            "give either the column luminosity_nb_inv or all of n_bhabha, n_bhabha_bkg, \
             bhabha_efficiency"
                .into(),
        ));
    }

    let mut points: Vec<ScanPoint> = Vec::new();
    for record in reader.records() {
        let record = record.map_err(|e| file_error(format!("malformed CSV: {e}")))?;
        let line = record.position().map_or(0, |p| p.line());
        let bad = |column: &str, message: String| ScanError::Data {
            file: file.to_string(),
            line,
            column: column.to_string(),
            message,
        };
        let value = |name: &str| -> Result<f64, ScanError> {
            let i = col(name).unwrap_or(usize::MAX);
            let text = record.get(i).unwrap_or("");
            let v: f64 = text
                .parse()
                .map_err(|_| bad(name, format!("'{text}' is not a number")))?;
            if v.is_finite() {
                Ok(v)
            } else {
                Err(bad(name, format!("'{text}' is not finite")))
            }
        };
        let counts = |n: &str, b: &str, e: &str| -> Result<(f64, f64, f64), ScanError> {
            let (nv, bv, ev) = (value(n)?, value(b)?, value(e)?);
            if !(0.0..=MAX_EVENTS).contains(&nv) || nv.fract() != 0.0 {
                return Err(bad(
                    n,
                    format!("{}; allowed: a whole number from 0 to 2^53", shown(nv)),
                ));
            }
            if !(bv >= 0.0 && bv < nv) {
                return Err(bad(
                    b,
                    format!(
                        "{bv} with {n} = {nv} leaves no signal; allowed: 0 ≤ {b} < {n} \
                         (a cross-section must be positive to be corrected)"
                    ),
                ));
            }
            if !(MIN_EFFICIENCY..=1.0).contains(&ev) {
                return Err(bad(
                    e,
                    format!("{}; allowed: {MIN_EFFICIENCY:e} ≤ {e} ≤ 1", shown(ev)),
                ));
            }
            Ok((nv, bv, ev))
        };
        let sqrt_s_gev = value("sqrt_s_gev")?;
        if let Err(e) = ParamError::check_sqrt_s("sqrt_s_gev", sqrt_s_gev) {
            return Err(bad("sqrt_s_gev", e.verdict()));
        }
        if let Some(prev) = points.last()
            && sqrt_s_gev <= prev.sqrt_s_gev
        {
            return Err(bad(
                "sqrt_s_gev",
                format!(
                    "{sqrt_s_gev} does not increase on the previous row's {}; allowed: \
                     strictly increasing energies, one row per point",
                    prev.sqrt_s_gev
                ),
            ));
        }
        let (n_events, n_bkg, efficiency) = counts("n_events", "n_bkg", "efficiency")?;
        let luminosity = if given.is_some() {
            let l = value("luminosity_nb_inv")?;
            if l <= 0.0 {
                return Err(bad("luminosity_nb_inv", format!("{l}; allowed: > 0")));
            }
            LuminosityInput::Given {
                luminosity_nb_inv: l,
            }
        } else {
            let (n, b, e) = counts("n_bhabha", "n_bhabha_bkg", "bhabha_efficiency")?;
            LuminosityInput::Bhabha {
                n_events: n,
                n_bkg: b,
                efficiency: e,
            }
        };
        let energy_spread_mev = match col("energy_spread_mev") {
            Some(_) => {
                let w = value("energy_spread_mev")?;
                let most = max_spread_mev(sqrt_s_gev);
                if !(0.0..=most).contains(&w) {
                    return Err(bad(
                        "energy_spread_mev",
                        format!("{w}; allowed: 0 to {most} (sqrt_s/8) at this energy"),
                    ));
                }
                Some(w)
            }
            None => None,
        };
        points.push(ScanPoint {
            sqrt_s_gev,
            n_events,
            n_bkg,
            efficiency,
            luminosity,
            energy_spread_mev,
        });
    }
    if points.is_empty() {
        return Err(file_error(
            "no data rows; allowed: at least one energy point".into(),
        ));
    }
    Ok(points)
}

#[cfg(test)]
mod tests {
    use super::*;

    const HEAD: &str = "sqrt_s_gev,n_events,n_bkg,efficiency,luminosity_nb_inv\n";

    #[test]
    fn reads_both_luminosity_forms() {
        let p = parse_scan(
            &format!("{HEAD}# a comment\n3.0,100,2.5,0.8,10\n3.1,90,0,1,11\n"),
            "s.csv",
        )
        .unwrap();
        assert_eq!(p.len(), 2);
        assert_eq!(
            p[1].luminosity,
            LuminosityInput::Given {
                luminosity_nb_inv: 11.0
            }
        );
        let b = parse_scan(
            "sqrt_s_gev,n_events,n_bkg,efficiency,n_bhabha,n_bhabha_bkg,bhabha_efficiency,energy_spread_mev\n\
             3.0,100,2,0.8,5000,10,0.9,1.2\n",
            "b.csv",
        )
        .unwrap();
        assert!(matches!(b[0].luminosity, LuminosityInput::Bhabha { .. }));
        assert_eq!(b[0].energy_spread_mev, Some(1.2));
    }

    #[test]
    fn spreads_are_checked_against_the_energy() {
        // √s/8 at 3 GeV is 375 MeV: a row above is an error naming its column; a card default
        // above is an error when a row without its own spread takes it.
        let head = "sqrt_s_gev,n_events,n_bkg,efficiency,luminosity_nb_inv,energy_spread_mev\n";
        let err = parse_scan(&format!("{head}3.0,100,2,0.8,10,400\n"), "s.csv")
            .unwrap_err()
            .to_string();
        assert!(
            err.contains("column energy_spread_mev") && err.contains("375"),
            "{err}"
        );
        let p = parse_scan(&format!("{HEAD}3.0,100,2,0.8,10\n"), "s.csv").unwrap();
        assert_eq!(p[0].spread_mev(2.0).unwrap(), 2.0);
        let err = p[0].spread_mev(400.0).unwrap_err().to_string();
        assert!(
            err.contains("beam.energy_spread_mev 400") && err.contains("375"),
            "{err}"
        );
    }

    #[test]
    fn bad_rows_name_line_and_column() {
        // Each case: the text after the header, the column the message must name.
        let cases = [
            (
                "3.0,100,2,0.8,10\n3.0,100,2,0.8,10\n",
                "line 3, column sqrt_s_gev",
            ),
            (
                "3.1,100,2,0.8,10\n3.0,100,2,0.8,10\n",
                "line 3, column sqrt_s_gev",
            ),
            ("3.0,100,2,0.8,0\n", "column luminosity_nb_inv"),
            ("3.0,100,2,1.2,10\n", "column efficiency"),
            ("3.0,100,2,0,10\n", "column efficiency"),
            ("3.0,10,12,0.5,10\n", "column n_bkg"),
            ("3.0,10.5,1,0.5,10\n", "column n_events"),
            ("3.0,x,1,0.5,10\n", "column n_events"),
            ("3.0,10,1,0.5,nan\n", "column luminosity_nb_inv"),
            // Beyond 2^53 counts are not whole numbers any more; efficiencies below 1e-6.
            ("3.0,1e300,1,0.5,10\n", "column n_events"),
            ("3.0,100,1,1e-9,10\n", "column efficiency"),
        ];
        for (body, want) in cases {
            let err = parse_scan(&format!("{HEAD}{body}"), "s.csv")
                .unwrap_err()
                .to_string();
            assert!(
                err.contains(want) && err.starts_with("s.csv"),
                "{body:?}: {err}"
            );
        }
        for (text, want) in [
            (HEAD.to_string(), "no data rows"),
            (
                "sqrt_s_gev,n_events,n_bkg,efficiency\n3,1,0,1\n".into(),
                "either",
            ),
            (
                format!("{}x\n3,1,0,1,1,2\n", HEAD.trim_end().to_owned() + ","),
                "unknown column",
            ),
        ] {
            let err = parse_scan(&text, "s.csv").unwrap_err().to_string();
            assert!(err.contains(want), "{text:?}: {err}");
        }
    }
}
