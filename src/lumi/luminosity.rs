//! Counts → luminosity: L = (N − N_bkg)/(ε σ_vis) per run, with an uncertainty budget.
//!
//! Budget sources (physics notes §5), each a signed shift:
//! - `statistical` (uncorrelated across runs): √N/(ε σ_vis);
//! - `efficiency` (correlated): L · δε/ε from the card;
//! - `acceptance_width` (correlated): σ_vis with every window narrowed / widened by the
//!   alignment uncertainty δθ at both ends; `acceptance_offset` (correlated): every edge moved
//!   by ±δθ; each a numerical derivative of σ_vis times δθ (see [`edge_shift`] at kinks);
//! - `beam_energy` (correlated): σ_vis at √s ± δ√s;
//! - `vp_<region>` (correlated): σ_vis with one region of the hadronic R model at +1σ minus
//!   nominal (full VP only);
//! - `rc_scale` (correlated): σ_vis with the other structure-function scale (|t̄| ↔ s);
//! - `rc_nonlog` (correlated): missing non-logarithmic O(α) terms of the leading-log
//!   structure functions, sized as the non-log O(α) constant (α/π)(π²/3 − 1/2) ≈ 0.65% of the
//!   Kuraev–Fadin radiator (Sov. J. Nucl. Phys. 41 (1985) 466; the size is a rule of thumb,
//!   common practice, no source);
//! - `numerical` (correlated): the integration error estimate.
//!
//! A σ shift δσ becomes δL = −L δσ/σ.

use super::card::Uncertainties;
use super::visible::{SigmaVis, Visible, VisibleError};
use crate::budget::{Budget, BudgetError, Correlation, symmetric_shift};
use crate::constants::ALPHA;
use crate::vp::Polarisation;
use crate::{MIN_EFFICIENCY, ParamError, shown};
use std::f64::consts::PI;
use thiserror::Error;

/// Relative size of the missing non-log O(α) terms (see the module notes).
pub const RC_NONLOG_REL: f64 = ALPHA / PI * (PI * PI / 3.0 - 0.5);

/// One source's shift of σ_vis (nb) at one energy.
#[derive(Debug, Clone, PartialEq)]
pub struct SigmaShift {
    pub name: String,
    pub correlation: Correlation,
    pub shift_nb: f64,
}

/// σ_vis at one energy with its Born value and the σ shifts of every source.
#[derive(Debug, Clone, PartialEq)]
pub struct Prediction {
    pub sqrt_s_gev: f64,
    pub sigma: SigmaVis,
    /// The same acceptance at Born level (no radiation, no VP).
    pub sigma_born_nb: f64,
    pub shifts: Vec<SigmaShift>,
}

impl Prediction {
    /// Quadrature sum of the σ shifts, nb.
    pub fn sigma_unc_nb(&self) -> f64 {
        self.shifts
            .iter()
            .map(|s| s.shift_nb * s.shift_nb)
            .sum::<f64>()
            .sqrt()
    }
}

/// The largest beam-energy uncertainty taken, relative to √s: machines know their energy
/// to 10⁻⁴–10⁻³ (from memory); at √s itself the budget's σ_vis(√s − δ) would be at zero energy.
const MAX_ENERGY_UNC_REL: f64 = 0.01;

/// σ_vis and its budget at √s. `vp_variations` are named VP models with one part of the
/// hadronic Π at +1σ (empty without hadronic VP); each becomes a source `vp_<name>`.
///
/// The VP shifts are evaluated without radiation and scaled by σ_vis/σ_dressed(no radiation):
/// radiation changes a VP shift only at O(α · δΠ), far below the shift itself. The radiated
/// variations (edges, energy, scale) use the nominal's rule size
/// ([`Visible::sigma_vis_with_rule`]) instead of converging on their own: each is then one
/// pass, and its numerical error is of the size of the nominal's (`numerical`), far below
/// the shifts.
///
/// # Errors
/// An energy at or below the channel's threshold ([`VisibleError::BelowThreshold`]: σ_vis
/// is 0 there, no luminosity follows from it); a variation that leaves the valid range (an
/// edge moved past 0° or 180°, …); a beam-energy uncertainty above 1% of √s
/// ([`VisibleError::EnergyUncertaintyTooLarge`]).
pub fn predict<'a>(
    visible: &Visible<'a>,
    vp: Option<&'a dyn Polarisation>,
    vp_variations: &[(&str, &'a dyn Polarisation)],
    unc: &Uncertainties,
    sqrt_s_gev: f64,
) -> Result<Prediction, VisibleError> {
    let threshold_gev = visible.channel().threshold_gev();
    if sqrt_s_gev <= threshold_gev {
        return Err(VisibleError::BelowThreshold {
            channel: visible.channel().key(),
            sqrt_s_gev,
            threshold_gev,
        });
    }
    let s = sqrt_s_gev * sqrt_s_gev;
    let acc = *visible.acceptance();
    let settings = *visible.settings();
    let sigma = visible.sigma_vis(s)?;
    let born_settings = crate::lumi::Settings {
        radiation: false,
        ..settings
    };
    let sigma_born_nb = visible
        .varied(acc, None, born_settings)?
        .sigma_vis(s)?
        .sigma_nb;
    let rule = sigma.rule_points;
    let at = |v: &Visible<'a>, s: f64| v.sigma_vis_with_rule(s, rule).map(|r| r.sigma_nb);
    let mut shifts = vec![SigmaShift {
        name: "numerical".into(),
        correlation: Correlation::Full,
        shift_nb: sigma.error_nb,
    }];
    let d = unc.theta_edge_deg;
    // Width: every window narrowed by δ at both ends (+) or widened (−); offset: every edge
    // moved by +δ or −δ.
    for (name, dmin, dmax) in [("acceptance_width", d, -d), ("acceptance_offset", d, d)] {
        let shift = if d > 0.0 {
            let up = visible.varied(acc.with_edges_moved(dmin, dmax)?, vp, settings)?;
            let down = visible.varied(acc.with_edges_moved(-dmin, -dmax)?, vp, settings)?;
            edge_shift(at(&up, s)? - sigma.sigma_nb, at(&down, s)? - sigma.sigma_nb)
        } else {
            0.0
        };
        shifts.push(SigmaShift {
            name: name.into(),
            correlation: Correlation::Full,
            shift_nb: shift,
        });
    }
    let de = unc.sqrt_s_gev;
    let max_gev = MAX_ENERGY_UNC_REL * sqrt_s_gev;
    if de > max_gev {
        return Err(VisibleError::EnergyUncertaintyTooLarge {
            unc_gev: de,
            sqrt_s_gev,
            max_gev,
        });
    }
    let energy = if de > 0.0 {
        symmetric_shift(
            at(visible, (sqrt_s_gev + de).powi(2))?,
            at(visible, (sqrt_s_gev - de).powi(2))?,
        )
    } else {
        0.0
    };
    shifts.push(SigmaShift {
        name: "beam_energy".into(),
        correlation: Correlation::Full,
        shift_nb: energy,
    });
    if !vp_variations.is_empty() {
        let nominal = at(&visible.varied(acc, vp, born_settings)?, s)?;
        for (name, varied) in vp_variations {
            let up = at(&visible.varied(acc, Some(*varied), born_settings)?, s)?;
            shifts.push(SigmaShift {
                name: format!("vp_{name}"),
                correlation: Correlation::Full,
                shift_nb: (up - nominal) * sigma.sigma_nb / nominal,
            });
        }
    }
    if settings.radiation {
        let other = crate::lumi::Settings {
            scale: settings.scale.other(),
            ..settings
        };
        shifts.push(SigmaShift {
            name: "rc_scale".into(),
            correlation: Correlation::Full,
            shift_nb: at(&visible.varied(acc, vp, other)?, s)? - sigma.sigma_nb,
        });
        shifts.push(SigmaShift {
            name: "rc_nonlog".into(),
            correlation: Correlation::Full,
            shift_nb: RC_NONLOG_REL * sigma.sigma_nb,
        });
    }
    Ok(Prediction {
        sqrt_s_gev,
        sigma,
        sigma_born_nb,
        shifts,
    })
}

/// The σ shift of a two-sided edge variation from its one-sided changes `up` and `down`:
/// the symmetric shift (up − down)/2, unless both sides move σ the same way. Back-to-back
/// windows make σ a kinked function of an edge when another particle's edge takes over;
/// there the larger one-sided change is taken, which is the conservative choice. Equal
/// one-sided changes (the offset of mirror-symmetric windows: σ falls the same either way)
/// give the up side's, so the sign of that shift is a convention, not a direction. "Equal"
/// is to [`SAME_SHIFT_REL`] of their size: otherwise rounding decided the sign run by run,
/// and the correlated sum over runs partly cancelled (the demo's offset total moved from
/// 4.6 to 13.9 nb⁻¹ with changes of 10⁻¹³ in σ_vis).
fn edge_shift(up: f64, down: f64) -> f64 {
    if up * down > 0.0 {
        let same = (up.abs() - down.abs()).abs() <= SAME_SHIFT_REL * up.abs().max(down.abs());
        if same || up.abs() >= down.abs() {
            up
        } else {
            -down
        }
    } else {
        symmetric_shift(up, down)
    }
}

/// One-sided edge changes closer than this (relative) are equal: a symmetry's equality up
/// to rounding (10⁻¹³ seen; both sides use the same rule), far below any asymmetry a kink
/// or a slope gives (of order one).
const SAME_SHIFT_REL: f64 = 1e-9;

/// One run of the counts file.
#[derive(Debug, Clone, PartialEq)]
pub struct Run {
    pub run: String,
    pub sqrt_s_gev: f64,
    pub n: u64,
    pub n_bkg: u64,
    pub efficiency: f64,
    /// Line in the counts file (for messages).
    pub line: u64,
}

/// A counts-file problem: the file, the line, the field, what is wrong.
#[derive(Debug, Error, Clone, PartialEq)]
#[error("{file}, line {line}, field {field}: {message}")]
pub struct CountsError {
    pub file: String,
    pub line: u64,
    pub field: String,
    pub message: String,
}

/// The columns of a counts file, in any order; other columns are rejected.
pub const COUNTS_COLUMNS: [&str; 5] = [
    "run",
    "sqrt_s_gev",
    "n_bhabha",
    "n_bhabha_bkg",
    "bhabha_efficiency",
];

/// Parse a counts CSV (`run,sqrt_s_gev,n_bhabha,n_bhabha_bkg,bhabha_efficiency`; `#` lines
/// are comments). `file` names the source in messages.
///
/// # Errors
/// Missing or unknown columns, non-numeric or non-integer counts, negative counts,
/// N_bkg > N, efficiency outside (0, 1], √s ≤ 0, duplicate run ids, no runs.
pub fn parse_counts(file: &str, text: &str) -> Result<Vec<Run>, CountsError> {
    let err = |line: u64, field: &str, message: String| CountsError {
        file: file.to_string(),
        line,
        field: field.to_string(),
        message,
    };
    let mut reader = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .trim(csv::Trim::All)
        .from_reader(text.as_bytes());
    let header = reader
        .headers()
        .map_err(|e| err(1, "header", e.to_string()))?
        .clone();
    let header_line = reader.position().line().max(1);
    let mut index = [0usize; 5];
    for (k, name) in COUNTS_COLUMNS.iter().enumerate() {
        index[k] = header.iter().position(|h| h == *name).ok_or_else(|| {
            err(
                header_line,
                name,
                format!(
                    "missing column; a counts file has the columns {}",
                    COUNTS_COLUMNS.join(",")
                ),
            )
        })?;
    }
    if let Some(extra) = header.iter().find(|h| !COUNTS_COLUMNS.contains(h)) {
        return Err(err(
            header_line,
            extra,
            format!("unknown column; allowed: {}", COUNTS_COLUMNS.join(",")),
        ));
    }
    let mut runs: Vec<Run> = Vec::new();
    for record in reader.records() {
        let record = record.map_err(|e| {
            let line = e.position().map_or(0, |p| p.line());
            err(line, "record", e.to_string())
        })?;
        let line = record.position().map_or(0, |p| p.line());
        let get = |k: usize| record.get(index[k]).unwrap_or("");
        let count = |k: usize| -> Result<u64, CountsError> {
            get(k).parse::<u64>().map_err(|_| {
                err(
                    line,
                    COUNTS_COLUMNS[k],
                    format!("'{}' is not allowed; allowed: a whole number ≥ 0", get(k)),
                )
            })
        };
        let real = |k: usize| -> Result<f64, CountsError> {
            get(k)
                .parse::<f64>()
                .ok()
                .filter(|v| v.is_finite())
                .ok_or_else(|| {
                    err(
                        line,
                        COUNTS_COLUMNS[k],
                        format!("'{}' is not a finite number", get(k)),
                    )
                })
        };
        let run = get(0).to_string();
        if run.is_empty() {
            return Err(err(line, "run", "empty run id".into()));
        }
        if let Some(first) = runs.iter().find(|r| r.run == run) {
            return Err(err(
                line,
                "run",
                format!("duplicate run id '{run}' (first on line {})", first.line),
            ));
        }
        let sqrt_s_gev = real(1)?;
        if let Err(e) = ParamError::check_sqrt_s("sqrt_s_gev", sqrt_s_gev) {
            return Err(err(line, "sqrt_s_gev", e.verdict()));
        }
        let (n, n_bkg) = (count(2)?, count(3)?);
        if n_bkg > n {
            return Err(err(
                line,
                "n_bhabha_bkg",
                format!("{n_bkg} is not allowed; allowed: ≤ n_bhabha = {n}"),
            ));
        }
        let efficiency = real(4)?;
        if !(MIN_EFFICIENCY..=1.0).contains(&efficiency) {
            return Err(err(
                line,
                "bhabha_efficiency",
                format!(
                    "{} is not allowed; allowed: {MIN_EFFICIENCY:e} ≤ bhabha_efficiency ≤ 1",
                    shown(efficiency)
                ),
            ));
        }
        runs.push(Run {
            run,
            sqrt_s_gev,
            n,
            n_bkg,
            efficiency,
            line,
        });
    }
    if runs.is_empty() {
        return Err(err(header_line, "run", "no runs in the file".into()));
    }
    Ok(runs)
}

/// The luminosity of one run and its budget shifts (nb⁻¹).
#[derive(Debug, Clone, PartialEq)]
pub struct RunLuminosity {
    pub luminosity_nb_inv: f64,
    pub sigma_vis_nb: f64,
}

/// Luminosities of `runs` given the prediction at each run's energy (`predictions[i]`, one per run), and
/// their budget across runs (sources as in the module notes).
///
/// # Errors
/// Only if the budget is inconsistent (an internal error).
pub fn luminosities(
    runs: &[Run],
    predictions: &[&Prediction],
    efficiency_rel: f64,
) -> Result<(Vec<RunLuminosity>, Budget), BudgetError> {
    if runs.is_empty() {
        return Ok((Vec::new(), Budget::new(0)));
    }
    let mut out = Vec::with_capacity(runs.len());
    let mut stat = Vec::with_capacity(runs.len());
    let mut eff = Vec::with_capacity(runs.len());
    for (i, r) in runs.iter().enumerate() {
        let p = predictions[i];
        let denom = r.efficiency * p.sigma.sigma_nb;
        let l = (r.n - r.n_bkg) as f64 / denom;
        out.push(RunLuminosity {
            luminosity_nb_inv: l,
            sigma_vis_nb: p.sigma.sigma_nb,
        });
        stat.push((r.n as f64).sqrt() / denom);
        eff.push(l * efficiency_rel);
    }
    let mut budget = Budget::new(runs.len());
    budget.add("statistical", Correlation::None, stat)?;
    budget.add("efficiency", Correlation::Full, eff)?;
    for (k, source) in predictions[0].shifts.iter().enumerate() {
        let shifts = (0..runs.len())
            .map(|i| {
                let p = predictions[i];
                -out[i].luminosity_nb_inv * p.shifts[k].shift_nb / p.sigma.sigma_nb
            })
            .collect();
        budget.add(source.name.clone(), source.correlation, shifts)?;
    }
    Ok((out, budget))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Opposite one-sided changes give the symmetric shift; same-sign ones the larger, with
    /// the sign of the side it came from; equal ones (to rounding) the up side's, whichever
    /// rounds larger, so a symmetric variation has one sign in every run.
    #[test]
    fn edge_shift_keeps_its_convention_through_rounding() {
        assert_eq!(edge_shift(2.0, -1.0), 1.5);
        assert_eq!(edge_shift(-1.0, -1.5), 1.5);
        assert_eq!(edge_shift(-1.5, -1.0), -1.5);
        let (a, b) = (-1.548_891_273_339_628_7, -1.548_891_273_340_019_5);
        assert_eq!(edge_shift(a, b), a);
        assert_eq!(edge_shift(b, a), b);
    }

    #[test]
    fn counts_errors_name_file_line_and_field() {
        let head = "run,sqrt_s_gev,n_bhabha,n_bhabha_bkg,bhabha_efficiency\n";
        let ok = format!("{head}r1,10.58,1000,10,0.9\n");
        assert_eq!(parse_counts("c.csv", &ok).unwrap()[0].n, 1000);
        for (body, line, field) in [
            ("r1,10.58,1000,10,0.9\nr1,10.58,5,1,0.9\n", 3, "run"),
            ("r1,10.58,-4,0,0.9\n", 2, "n_bhabha"),
            ("r1,10.58,10.5,0,0.9\n", 2, "n_bhabha"),
            ("r1,10.58,10,11,0.9\n", 2, "n_bhabha_bkg"),
            ("r1,10.58,10,1,0\n", 2, "bhabha_efficiency"),
            ("r1,10.58,10,1,1.2\n", 2, "bhabha_efficiency"),
            ("r1,-3,10,1,0.5\n", 2, "sqrt_s_gev"),
        ] {
            let e = parse_counts("c.csv", &format!("{head}{body}")).unwrap_err();
            assert_eq!((e.line, e.field.as_str()), (line, field), "{body}: {e}");
            assert!(e.to_string().starts_with("c.csv, line"), "{e}");
        }
        let e = parse_counts(
            "c.csv",
            "run,sqrt_s_gev,n_bhabha,bhabha_efficiency\nr,1,1,1\n",
        )
        .unwrap_err();
        assert_eq!(e.field, "n_bhabha_bkg");
    }
}
