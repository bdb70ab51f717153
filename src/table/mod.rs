//! Correction tables on a grid: for every process, cut set and energy of a run card the
//! chain's σ_bare, σ_dressed and σ_obs, the factors `1 + δ = σ_obs/σ_dressed` and
//! `vp factor = σ_dressed/σ_bare`, and the signed shift of both factors under each
//! declared variation of one link (radiator scheme, one R-model region of the hadronic
//! VP at +1σ, the beam energy, the energy spread).
//!
//! Rows are ordered process-major, then cut set, then energy; row `i` depends on nothing
//! but the plan and `i`, so any split of the rows ([`TablePlan::shard_range`]) joins back
//! to the same table bit for bit.

mod card;

pub use card::{RawTableCard, parse_table_card};

use crate::isr::{Cuts, Isr, IsrError, Radiated, Scheme, Smeared};
use crate::process::CrossSection;
use crate::vp::{Dressed, Polarisation, Vp};
use rayon::prelude::*;
use std::ops::Range;
use std::sync::Arc;
use thiserror::Error;

/// What can go wrong with a correction table.
#[derive(Debug, Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum TablePlanError {
    /// A run-card problem, naming the file and the card key.
    #[error("{file}: {key}: {message}")]
    Card {
        file: String,
        key: String,
        message: String,
    },
    /// A point the chain cannot evaluate (e.g. a minimum mass above √s).
    #[error("process {process}, cut {cut}, sqrt_s_gev = {sqrt_s_gev}: {source}")]
    Point {
        process: String,
        cut: String,
        sqrt_s_gev: f64,
        source: IsrError,
    },
    /// A shard that does not exist.
    #[error("shard {k}/{n}: not allowed; allowed: 1 ≤ k ≤ n")]
    Shard { k: usize, n: usize },
}

/// A Born process of the table: its card name, reaction and cross-section.
pub struct TableProcess {
    /// The card name (`mumu`, `tautau`, `hadrons`).
    pub key: String,
    /// The reaction in the notation of data records (`E+ E- --> MU+ MU-`).
    pub reaction: &'static str,
    pub born: Box<dyn CrossSection + Send>,
    /// One line for provenance.
    pub describe: String,
}

/// A named set of cuts on the radiated phase space.
#[derive(Debug, Clone, PartialEq)]
pub struct CutSet {
    pub name: String,
    pub cuts: Cuts,
    /// The cuts in words (`x_max = 0.5`), for provenance and data-record qualifiers.
    pub describe: String,
}

/// What a variation changes in the chain.
#[derive(Clone)]
pub enum Change {
    /// Another radiator scheme.
    Radiator(Scheme),
    /// Another VP model (the hadronic Π with one R-model region moved).
    Vp(Arc<Vp>),
    /// Every energy moved by this many MeV (beam-energy calibration).
    SqrtSShiftMev(f64),
    /// Another Gaussian centre-of-mass spread, MeV.
    SpreadMev(f64),
}

/// A named variation of one link; its shift is (varied − nominal) of each factor.
#[derive(Clone)]
pub struct Variation {
    /// snake_case; a column-name part (`shifts.<name>.one_plus_delta`).
    pub name: String,
    pub change: Change,
    pub describe: String,
}

/// The validated plan of a correction-table card.
pub struct TablePlan {
    pub energies_gev: Vec<f64>,
    pub processes: Vec<TableProcess>,
    pub cuts: Vec<CutSet>,
    pub scheme: Scheme,
    pub vp: Arc<Vp>,
    /// Gaussian centre-of-mass spread σ_W of the nominal chain, MeV (0: none).
    pub spread_mev: f64,
    pub variations: Vec<Variation>,
}

/// The shift of both factors under one variation (varied − nominal).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Shift {
    pub one_plus_delta: f64,
    pub vp_factor: f64,
}

/// One row of the table. Cross-sections in nb.
#[derive(Debug, Clone, PartialEq)]
pub struct TableRow {
    pub process: String,
    pub cut: String,
    pub sqrt_s_gev: f64,
    /// The upper limit of x = 1 − s′/s actually used (cuts and threshold).
    pub x_max: f64,
    pub sigma_born_nb: f64,
    pub sigma_dressed_nb: f64,
    pub sigma_obs_nb: f64,
    /// σ_obs/σ_dressed (0 where σ_dressed = 0, below the threshold).
    pub one_plus_delta: f64,
    /// Quadrature sum of the variations' shifts of `one_plus_delta`.
    pub one_plus_delta_syst: f64,
    /// |1 − Π(s)|⁻² (= σ_dressed/σ_bare where σ_bare > 0).
    pub vp_factor: f64,
    /// Quadrature sum of the variations' shifts of `vp_factor`.
    pub vp_factor_syst: f64,
    /// One per variation, in the plan's order.
    pub shifts: Vec<Shift>,
}

/// The chain's values at one point.
#[derive(Debug, Clone, Copy)]
struct Point {
    x_max: f64,
    born: f64,
    dressed: f64,
    obs: f64,
    /// |1 − Π(s)|⁻², defined at every s (also where σ vanishes).
    vp_factor: f64,
}

impl Point {
    fn one_plus_delta(&self) -> f64 {
        if self.dressed > 0.0 {
            self.obs / self.dressed
        } else {
            0.0
        }
    }
}

/// Born → dressed → radiated → smeared at √s.
fn evaluate(
    born: &dyn CrossSection,
    vp: &Vp,
    isr: Isr,
    sqrt_s_gev: f64,
    spread_mev: f64,
) -> Result<Point, IsrError> {
    let s = sqrt_s_gev * sqrt_s_gev;
    let dressed = Dressed::new(born, vp);
    let observed = isr.observe(&dressed, s)?;
    let obs = if spread_mev > 0.0 {
        // The spread was validated with the plan; a failure here is a bad energy.
        Smeared::new(Radiated::new(&dressed, isr), spread_mev)
            .map_err(|_| IsrError::BadEnergy { s_gev2: s })?
            .smeared(sqrt_s_gev)
            .value
    } else {
        observed.sigma_nb
    };
    Ok(Point {
        x_max: observed.x_max,
        born: born.sigma_nb(s),
        dressed: dressed.sigma_nb(s),
        obs,
        vp_factor: dressed.vp_factor(s),
    })
}

impl TablePlan {
    /// The number of rows: processes × cut sets × energies.
    pub fn len(&self) -> usize {
        self.processes.len() * self.cuts.len() * self.energies_gev.len()
    }

    /// True when the table has no rows (a validated plan never has).
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// Rows of shard `k` of `n` (k from 1): contiguous, in order, together all rows once.
    ///
    /// # Errors
    /// `k` outside 1..=n.
    pub fn shard_range(&self, k: usize, n: usize) -> Result<Range<usize>, TablePlanError> {
        if n == 0 || k == 0 || k > n {
            return Err(TablePlanError::Shard { k, n });
        }
        let len = self.len();
        Ok((k - 1) * len / n..k * len / n)
    }

    /// (process, cut set, energy) indices of row `i`.
    fn indices(&self, i: usize) -> (usize, usize, usize) {
        let ne = self.energies_gev.len();
        let nc = self.cuts.len();
        (i / (nc * ne), (i / ne) % nc, i % ne)
    }

    /// The rows in `range`, in parallel; `tick` is called once per finished row (a
    /// progress display).
    ///
    /// # Errors
    /// The first point the chain cannot evaluate.
    pub fn compute(
        &self,
        range: Range<usize>,
        tick: &(dyn Fn() + Sync),
    ) -> Result<Vec<TableRow>, TablePlanError> {
        range
            .into_par_iter()
            .map(|i| {
                let row = self.row(i);
                tick();
                row
            })
            .collect()
    }

    /// Row `i` of the table.
    fn row(&self, i: usize) -> Result<TableRow, TablePlanError> {
        let (p, c, e) = self.indices(i);
        let process = &self.processes[p];
        let cut = &self.cuts[c];
        let sqrt_s = self.energies_gev[e];
        let fail = |source| TablePlanError::Point {
            process: process.key.clone(),
            cut: cut.name.clone(),
            sqrt_s_gev: sqrt_s,
            source,
        };
        let born: &dyn CrossSection = &*process.born;
        let isr = Isr::new(self.scheme, cut.cuts);
        let at = |vp: &Vp, isr: Isr, w: f64, spread: f64| evaluate(born, vp, isr, w, spread);
        let nominal = at(&self.vp, isr, sqrt_s, self.spread_mev).map_err(fail)?;
        let mut shifts = Vec::with_capacity(self.variations.len());
        for v in &self.variations {
            let varied = match &v.change {
                Change::Radiator(scheme) => {
                    at(&self.vp, isr.with_scheme(*scheme), sqrt_s, self.spread_mev)
                }
                Change::Vp(vp) => at(vp, isr, sqrt_s, self.spread_mev),
                Change::SqrtSShiftMev(d) => at(&self.vp, isr, sqrt_s + d * 1e-3, self.spread_mev),
                Change::SpreadMev(w) => at(&self.vp, isr, sqrt_s, *w),
            }
            .map_err(fail)?;
            shifts.push(Shift {
                one_plus_delta: varied.one_plus_delta() - nominal.one_plus_delta(),
                vp_factor: varied.vp_factor - nominal.vp_factor,
            });
        }
        let quadrature =
            |f: fn(&Shift) -> f64| shifts.iter().map(|s| f(s).powi(2)).sum::<f64>().sqrt();
        Ok(TableRow {
            process: process.key.clone(),
            cut: cut.name.clone(),
            sqrt_s_gev: sqrt_s,
            x_max: nominal.x_max,
            sigma_born_nb: nominal.born,
            sigma_dressed_nb: nominal.dressed,
            sigma_obs_nb: nominal.obs,
            one_plus_delta: nominal.one_plus_delta(),
            one_plus_delta_syst: quadrature(|s| s.one_plus_delta),
            vp_factor: nominal.vp_factor,
            vp_factor_syst: quadrature(|s| s.vp_factor),
            shifts,
        })
    }

    /// Provenance lines: the grid, schemes, cuts, variations and conventions.
    pub fn describe(&self) -> Vec<String> {
        let mut lines = vec![
            format!(
                "grid: {} processes x {} cut sets x {} energies = {} rows",
                self.processes.len(),
                self.cuts.len(),
                self.energies_gev.len(),
                self.len()
            ),
            format!("radiator {}: {}", self.scheme.key(), self.scheme.describe()),
            self.vp.describe(),
        ];
        for p in &self.processes {
            lines.push(format!("process {}: {}", p.key, p.describe));
        }
        for c in &self.cuts {
            lines.push(format!("cut {}: {}", c.name, c.describe));
        }
        if self.spread_mev > 0.0 {
            lines.push(format!(
                "sigma_obs includes a Gaussian centre-of-mass spread of {} MeV",
                self.spread_mev
            ));
        }
        for v in &self.variations {
            lines.push(format!("variation {}: {}", v.name, v.describe));
        }
        lines.push(
            "one_plus_delta = sigma_obs/sigma_dressed; vp_factor = |1 - Pi(s)|^-2 = sigma_dressed/sigma_born; \
             shifts.<variation>.* = varied - nominal; *_syst = quadrature sum of the shifts; \
             ISR accuracy target 1e-8 relative"
                .into(),
        );
        lines
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const CARD: &str = r#"
[grid]
sqrt_s_gev = "3.0:5.0:5"
processes = ["mumu", "tautau"]
[vp]
model = "leptonic"
[[cut]]
name = "open"
[[cut]]
name = "x50"
x_max = 0.5
[[variation]]
name = "radiator_exp1"
radiator = "exp1"
"#;

    #[test]
    fn shards_cover_every_row_once_in_order() {
        let plan = parse_table_card(CARD, "t.toml").unwrap();
        assert_eq!(plan.len(), 20);
        for n in 1..=7 {
            let mut next = 0;
            for k in 1..=n {
                let r = plan.shard_range(k, n).unwrap();
                assert_eq!(r.start, next, "shard {k}/{n}");
                next = r.end;
            }
            assert_eq!(next, plan.len());
        }
        assert!(plan.shard_range(0, 3).is_err());
        assert!(plan.shard_range(4, 3).is_err());
    }

    #[test]
    fn rows_do_not_depend_on_the_split() {
        let plan = parse_table_card(CARD, "t.toml").unwrap();
        let all = plan.compute(0..plan.len(), &|| {}).unwrap();
        let mut joined = Vec::new();
        for k in 1..=3 {
            joined.extend(
                plan.compute(plan.shard_range(k, 3).unwrap(), &|| {})
                    .unwrap(),
            );
        }
        assert_eq!(all, joined);
        // Row order: process-major, then cut set, then energy.
        assert_eq!(
            (all[0].process.as_str(), all[0].cut.as_str()),
            ("mumu", "open")
        );
        assert_eq!(
            (all[5].process.as_str(), all[5].cut.as_str()),
            ("mumu", "x50")
        );
        assert_eq!(all[10].process, "tautau");
        // Below the τ threshold (2 m_τ ≈ 3.554 GeV) there is nothing: σ = 0, 1 + δ = 0.
        assert_eq!(all[10].sigma_obs_nb, 0.0);
        assert_eq!(all[10].one_plus_delta, 0.0);
    }
}
