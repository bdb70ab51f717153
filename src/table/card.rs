//! The correction-table run card (TOML), read in two stages: [`RawTableCard`] mirrors the
//! file (unknown keys are errors), then it is validated into a [`TablePlan`]. Every
//! message names the card key.
//!
//! ```toml
//! [grid]
//! sqrt_s_gev = "2.0:12.0:1000"    # a value, a grid start:stop:count (ends included) or a list
//! processes = ["mumu", "hadrons"] # mumu | tautau | hadrons (default ["mumu"])
//! r_ratio = 2.0                   # optional: a constant R for hadrons instead of the R model
//! energy_spread_mev = 0.0         # Gaussian centre-of-mass spread of σ_obs (default 0; ≤ √s/8)
//!
//! [radiation]
//! radiator = "kf2"                # kf2 | exp1 | sfll (default kf2)
//!
//! [vp]
//! model = "full"                  # none | lep (or leptonic) | full (default full)
//!
//! [[cut]]                         # cut sets (default: one set "open", the kinematic limit)
//! name = "x50"                    # lower-case letters, digits, _ ; a column value
//! x_max = 0.5                     # any of x_max, min_mass_gev, max_photon_gev
//!
//! [[variation]]                   # any number; exactly one change each
//! name = "radiator_exp1"
//! radiator = "exp1"               # another radiator scheme
//! # vp_region = "all"             # one R-model region at +1σ (pipi, omega_phi,
//! #                               # inclusive_1_2_gev, pqcd, narrow), or "all": one
//! #                               # variation per region, named <name>_<region>
//! # sqrt_s_shift_mev = 0.5        # every energy moved (beam-energy calibration)
//! # energy_spread_mev = 1.2       # another centre-of-mass spread
//! ```

use super::{Change, CutSet, TablePlan, TablePlanError, TableProcess, Variation};
use crate::isr::{Cuts, Scheme, max_spread_mev};
use crate::numeric::Grid;
use crate::process::{ConstantR, CrossSection, FermionPair, Hadrons, RRatio};
use crate::rmodel::{RModel, Region};
use crate::vp::{Vp, VpChoice};
use crate::{ParamError, shown};
use rayon::prelude::*;
use serde::Deserialize;
use std::sync::Arc;

/// The file as written.
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawTableCard {
    pub grid: RawGrid,
    #[serde(default)]
    pub radiation: RawRadiation,
    #[serde(default)]
    pub vp: RawVp,
    #[serde(default)]
    pub cut: Vec<RawCut>,
    #[serde(default)]
    pub variation: Vec<RawVariation>,
}

/// Energies as one number, a grid string or a list.
#[derive(Debug, Clone, Deserialize)]
#[serde(untagged)]
pub enum RawEnergies {
    One(f64),
    Grid(String),
    List(Vec<f64>),
}

impl Default for RawEnergies {
    fn default() -> Self {
        RawEnergies::List(Vec::new())
    }
}

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawGrid {
    pub sqrt_s_gev: RawEnergies,
    pub processes: Option<Vec<String>>,
    pub r_ratio: Option<f64>,
    pub energy_spread_mev: Option<f64>,
}

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawRadiation {
    pub radiator: Option<String>,
}

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawVp {
    pub model: Option<String>,
}

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawCut {
    pub name: String,
    pub x_max: Option<f64>,
    pub min_mass_gev: Option<f64>,
    pub max_photon_gev: Option<f64>,
}

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawVariation {
    pub name: String,
    pub radiator: Option<String>,
    pub vp_region: Option<String>,
    pub sqrt_s_shift_mev: Option<f64>,
    pub energy_spread_mev: Option<f64>,
}

/// The most rows one card may ask for (a job array takes more through shards of cards).
const MAX_ROWS: usize = 10_000_000;

fn err(key: &str, message: impl Into<String>) -> TablePlanError {
    TablePlanError::Card {
        file: String::new(),
        key: key.to_string(),
        message: message.into(),
    }
}

/// Parse and validate a correction-table card; `file` names it in messages.
///
/// # Errors
/// [`TablePlanError::Card`] for TOML syntax, unknown keys, wrong types and every value
/// outside its allowed range, naming the key.
pub fn parse_table_card(text: &str, file: &str) -> Result<TablePlan, TablePlanError> {
    let with_file = |e: TablePlanError| match e {
        TablePlanError::Card { key, message, .. } => TablePlanError::Card {
            file: file.to_string(),
            key,
            message,
        },
        other => other,
    };
    let raw: RawTableCard = toml::from_str(text)
        .map_err(|e| err("TOML", e.to_string().trim_end()))
        .map_err(with_file)?;
    TablePlan::try_from(raw).map_err(with_file)
}

fn is_name(s: &str) -> bool {
    s.chars().next().is_some_and(|c| c.is_ascii_lowercase())
        && s.chars()
            .all(|c| c.is_ascii_lowercase() || c.is_ascii_digit() || c == '_')
}

fn check_name(key: &str, name: &str, seen: &mut Vec<String>) -> Result<(), TablePlanError> {
    if !is_name(name) {
        return Err(err(
            key,
            format!("'{name}'; allowed: lower-case letters, digits and _, starting with a letter"),
        ));
    }
    if seen.iter().any(|s| s == name) {
        return Err(err(
            key,
            format!("'{name}' is used twice; names must differ"),
        ));
    }
    seen.push(name.to_string());
    Ok(())
}

fn energies(raw: &RawEnergies) -> Result<Vec<f64>, TablePlanError> {
    const KEY: &str = "grid.sqrt_s_gev";
    let points = match raw {
        RawEnergies::One(x) => vec![*x],
        RawEnergies::Grid(text) => Grid::parse(text)
            .map_err(|e| err(KEY, e.to_string()))?
            .points()
            .to_vec(),
        RawEnergies::List(list) => list.clone(),
    };
    if points.is_empty() {
        return Err(err(
            KEY,
            "no energies; allowed: at least one energy > 0 GeV",
        ));
    }
    for &e in &points {
        if let Err(e) = ParamError::check_sqrt_s("sqrt_s_gev", e) {
            return Err(err(KEY, e.verdict()));
        }
    }
    let mut sorted = points.clone();
    sorted.sort_by(f64::total_cmp);
    if let Some(w) = sorted.windows(2).find(|w| w[0] == w[1]) {
        return Err(err(
            KEY,
            format!("{} is listed twice; allowed: each energy once", shown(w[0])),
        ));
    }
    Ok(points)
}

fn process(name: &str, r_ratio: Option<f64>) -> Result<TableProcess, TablePlanError> {
    let born: Box<dyn CrossSection + Send>;
    let (reaction, describe) = match name {
        "mumu" => {
            born = Box::new(FermionPair::muon());
            (
                "E+ E- --> MU+ MU-",
                "e+e- -> mu+mu-, QED Born with the muon mass".to_string(),
            )
        }
        "tautau" => {
            born = Box::new(FermionPair::tau());
            (
                "E+ E- --> TAU+ TAU-",
                "e+e- -> tau+tau-, QED Born with the tau mass".to_string(),
            )
        }
        "hadrons" => {
            let describe = match r_ratio {
                Some(r) => {
                    let model = ConstantR(r);
                    let d = model.describe();
                    born = Box::new(Hadrons::new(model));
                    d
                }
                None => {
                    let model = RModel::standard();
                    let d = model.describe();
                    born = Box::new(Hadrons::new(model));
                    d
                }
            };
            (
                "E+ E- --> HADRONS",
                format!("sigma_pt * R(s), R: {describe}"),
            )
        }
        other => {
            return Err(err(
                "grid.processes",
                format!("unknown process '{other}'; allowed: mumu, tautau, hadrons"),
            ));
        }
    };
    Ok(TableProcess {
        key: name.to_string(),
        reaction,
        born,
        describe,
    })
}

fn scheme(key: &str, name: &str) -> Result<Scheme, TablePlanError> {
    Scheme::from_key(name).ok_or_else(|| {
        err(
            key,
            format!(
                "unknown radiator '{name}'; allowed: {}",
                Scheme::allowed_keys()
            ),
        )
    })
}

/// A spread in MeV: at most 1000 MeV and at most [`max_spread_mev`] at the lowest energy.
fn spread(key: &str, w: f64, lowest_gev: f64) -> Result<f64, TablePlanError> {
    let most = max_spread_mev(lowest_gev).min(1e3);
    if (0.0..=most).contains(&w) {
        Ok(w)
    } else {
        Err(err(
            key,
            format!(
                "{w}; allowed: 0 ≤ {key} ≤ {most} MeV (at most 1000 MeV and sqrt_s/8 at the lowest energy, {lowest_gev} GeV)"
            ),
        ))
    }
}

fn cut_set(i: usize, raw: &RawCut) -> Result<CutSet, TablePlanError> {
    let key = |k: &str| format!("cut[{i}].{k}");
    let mut cuts = Cuts::NONE;
    let mut words = Vec::new();
    let param = |k: &str, e: crate::ParamError| err(&key(k), e.verdict());
    if let Some(x) = raw.x_max {
        cuts = cuts.with_x_max(x).map_err(|e| param("x_max", e))?;
        words.push(format!("x_max = {x}"));
    }
    if let Some(m) = raw.min_mass_gev {
        cuts = cuts
            .with_min_mass_gev(m)
            .map_err(|e| param("min_mass_gev", e))?;
        words.push(format!("min_mass_gev = {m}"));
    }
    if let Some(e) = raw.max_photon_gev {
        cuts = cuts
            .with_max_photon_gev(e)
            .map_err(|er| param("max_photon_gev", er))?;
        words.push(format!("max_photon_gev = {e}"));
    }
    if words.is_empty() {
        words.push("no cut beyond the process threshold".into());
    }
    Ok(CutSet {
        name: raw.name.clone(),
        cuts,
        describe: words.join(", "),
    })
}

/// The variations of one card entry (a `vp_region = "all"` entry gives one per region).
fn variations(
    i: usize,
    raw: &RawVariation,
    nominal: Scheme,
    vp_choice: VpChoice,
    lowest_gev: f64,
    spread_mev: f64,
) -> Result<Vec<Variation>, TablePlanError> {
    let key = |k: &str| format!("variation[{i}].{k}");
    let given = [
        raw.radiator.is_some(),
        raw.vp_region.is_some(),
        raw.sqrt_s_shift_mev.is_some(),
        raw.energy_spread_mev.is_some(),
    ];
    if given.iter().filter(|g| **g).count() != 1 {
        return Err(err(
            &key("name"),
            format!(
                "'{}' must give exactly one of radiator, vp_region, sqrt_s_shift_mev, energy_spread_mev",
                raw.name
            ),
        ));
    }
    let one = |change: Change, describe: String| {
        Ok(vec![Variation {
            name: raw.name.clone(),
            change,
            describe,
        }])
    };
    if let Some(r) = &raw.radiator {
        let s = scheme(&key("radiator"), r)?;
        if s == nominal {
            return Err(err(
                &key("radiator"),
                format!("'{r}' is the nominal radiator; allowed: another scheme"),
            ));
        }
        return one(
            Change::Radiator(s),
            format!("radiator {}: {}", s.key(), s.describe()),
        );
    }
    if let Some(d) = raw.sqrt_s_shift_mev {
        if !(d.is_finite() && d != 0.0 && d.abs() <= 1e3) {
            return Err(err(
                &key("sqrt_s_shift_mev"),
                format!("{d}; allowed: 0 < |sqrt_s_shift_mev| ≤ 1000 MeV"),
            ));
        }
        let shifted = lowest_gev + 1e-3 * d;
        if !(shifted > 0.0 && spread_mev <= max_spread_mev(shifted)) {
            return Err(err(
                &key("sqrt_s_shift_mev"),
                format!(
                    "{d} moves the lowest energy {lowest_gev} GeV to {shifted} GeV; allowed: shifts that keep it above 0 and above 8 × grid.energy_spread_mev"
                ),
            ));
        }
        return one(
            Change::SqrtSShiftMev(d),
            format!("every energy moved by {d} MeV (beam-energy calibration)"),
        );
    }
    if let Some(w) = raw.energy_spread_mev {
        let w = spread(&key("energy_spread_mev"), w, lowest_gev)?;
        return one(
            Change::SpreadMev(w),
            format!("centre-of-mass spread {w} MeV"),
        );
    }
    let region = raw.vp_region.as_deref().unwrap_or_default();
    if vp_choice != VpChoice::Full {
        return Err(err(
            &key("vp_region"),
            "a hadronic VP variation needs vp.model = \"full\"",
        ));
    }
    let regions: Vec<Region> = if region == "all" {
        Region::MODEL.to_vec()
    } else {
        let r = Region::MODEL
            .iter()
            .find(|r| r.key() == region)
            .ok_or_else(|| {
                let keys: Vec<&str> = Region::MODEL.iter().map(|r| r.key()).collect();
                err(
                    &key("vp_region"),
                    format!(
                        "unknown region '{region}'; allowed: {}, all",
                        keys.join(", ")
                    ),
                )
            })?;
        vec![*r]
    };
    let expand = region == "all";
    Ok(regions
        .par_iter()
        .map(|&r| Variation {
            name: if expand {
                format!("{}_{}", raw.name, r.key())
            } else {
                raw.name.clone()
            },
            change: Change::Vp(Arc::new(Vp::full_varied(r, 1.0))),
            describe: format!(
                "hadronic VP with the R-model region {} at +1 sigma",
                r.key()
            ),
        })
        .collect())
}

impl TryFrom<RawTableCard> for TablePlan {
    type Error = TablePlanError;

    fn try_from(raw: RawTableCard) -> Result<Self, TablePlanError> {
        let energies_gev = energies(&raw.grid.sqrt_s_gev)?;
        if let Some(r) = raw.grid.r_ratio
            && let Err(e) = ConstantR::new("r_ratio", r)
        {
            return Err(err("grid.r_ratio", e.verdict()));
        }
        let names = raw
            .grid
            .processes
            .clone()
            .unwrap_or_else(|| vec!["mumu".into()]);
        if names.is_empty() {
            return Err(err(
                "grid.processes",
                "empty; allowed: mumu, tautau, hadrons",
            ));
        }
        let mut seen = Vec::new();
        let mut processes = Vec::new();
        for n in &names {
            check_name("grid.processes", n, &mut seen)?;
            processes.push(process(n, raw.grid.r_ratio)?);
        }
        if raw.grid.r_ratio.is_some() && !names.iter().any(|n| n == "hadrons") {
            return Err(err("grid.r_ratio", "only with the process hadrons"));
        }
        let lowest_gev = energies_gev.iter().copied().fold(f64::INFINITY, f64::min);
        let spread_mev = spread(
            "grid.energy_spread_mev",
            raw.grid.energy_spread_mev.unwrap_or(0.0),
            lowest_gev,
        )?;
        let scheme = scheme(
            "radiation.radiator",
            raw.radiation.radiator.as_deref().unwrap_or("kf2"),
        )?;
        let vp_name = raw.vp.model.as_deref().unwrap_or("full");
        let vp_choice = VpChoice::from_key(vp_name).ok_or_else(|| {
            err(
                "vp.model",
                format!("unknown model '{vp_name}'; allowed: none, lep (or leptonic), full"),
            )
        })?;

        let mut seen = Vec::new();
        let mut cuts = Vec::new();
        for (i, c) in raw.cut.iter().enumerate() {
            check_name(&format!("cut[{i}].name"), &c.name, &mut seen)?;
            cuts.push(cut_set(i, c)?);
        }
        if cuts.is_empty() {
            cuts.push(CutSet {
                name: "open".into(),
                cuts: Cuts::NONE,
                describe: "no cut beyond the process threshold".into(),
            });
        }
        let rows = energies_gev.len() * processes.len() * cuts.len();
        if rows > MAX_ROWS {
            return Err(err(
                "grid",
                format!("{rows} rows; allowed: at most {MAX_ROWS} per card"),
            ));
        }

        let mut seen = Vec::new();
        let mut all = Vec::new();
        for (i, v) in raw.variation.iter().enumerate() {
            check_name(&format!("variation[{i}].name"), &v.name, &mut seen)?;
            for var in variations(i, v, scheme, vp_choice, lowest_gev, spread_mev)? {
                if all.iter().any(|a: &Variation| a.name == var.name) {
                    return Err(err(
                        &format!("variation[{i}].name"),
                        format!("'{}' is used twice; names must differ", var.name),
                    ));
                }
                all.push(var);
            }
        }
        Ok(TablePlan {
            energies_gev,
            processes,
            cuts,
            scheme,
            vp: Arc::new(Vp::from_choice(vp_choice)),
            spread_mev,
            variations: all,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn key_of(text: &str) -> String {
        match parse_table_card(text, "t.toml") {
            Err(TablePlanError::Card { key, .. }) => key,
            Err(other) => panic!("not a card error: {other}"),
            Ok(_) => panic!("accepted: {text}"),
        }
    }

    #[test]
    fn bad_cards_name_the_key() {
        let cases = [
            ("[grid]\nsqrt_s_gev = \"3:1:0\"\n", "grid.sqrt_s_gev"),
            ("[grid]\nsqrt_s_gev = -1.0\n", "grid.sqrt_s_gev"),
            ("[grid]\nsqrt_s_gev = []\n", "grid.sqrt_s_gev"),
            ("[grid]\nsqrt_s_gev = [5.0, 5.0]\n", "grid.sqrt_s_gev"),
            (
                "[grid]\nsqrt_s_gev = 3.0\nprocesses = [\"ee\"]\n",
                "grid.processes",
            ),
            ("[grid]\nsqrt_s_gev = 3.0\nr_ratio = 2.0\n", "grid.r_ratio"),
            (
                "[grid]\nsqrt_s_gev = 3.0\nenergy_spread_mev = -1.0\n",
                "grid.energy_spread_mev",
            ),
            // Wider than √s/8 at the lowest energy (62.5 MeV at 0.5 GeV).
            (
                "[grid]\nsqrt_s_gev = [0.5, 3.0]\nenergy_spread_mev = 70.0\n",
                "grid.energy_spread_mev",
            ),
            (
                "[grid]\nsqrt_s_gev = 0.5\n[[variation]]\nname = \"w\"\nenergy_spread_mev = 70.0\n",
                "variation[0].energy_spread_mev",
            ),
            // A shift that takes the lowest energy to 0 or below, or below 8σ_W.
            (
                "[grid]\nsqrt_s_gev = 0.5\n[[variation]]\nname = \"e\"\nsqrt_s_shift_mev = -500.0\n",
                "variation[0].sqrt_s_shift_mev",
            ),
            (
                "[grid]\nsqrt_s_gev = 0.5\nenergy_spread_mev = 60.0\n[[variation]]\nname = \"e\"\nsqrt_s_shift_mev = -50.0\n",
                "variation[0].sqrt_s_shift_mev",
            ),
            (
                "[grid]\nsqrt_s_gev = 3.0\n[radiation]\nradiator = \"x\"\n",
                "radiation.radiator",
            ),
            (
                "[grid]\nsqrt_s_gev = 3.0\n[vp]\nmodel = \"some\"\n",
                "vp.model",
            ),
            (
                "[grid]\nsqrt_s_gev = 3.0\n[[cut]]\nname = \"a\"\nx_max = 1.5\n",
                "cut[0].x_max",
            ),
            (
                "[grid]\nsqrt_s_gev = 3.0\n[[cut]]\nname = \"A b\"\n",
                "cut[0].name",
            ),
            (
                "[grid]\nsqrt_s_gev = 3.0\n[[variation]]\nname = \"v\"\n",
                "variation[0].name",
            ),
            (
                "[grid]\nsqrt_s_gev = 3.0\n[[variation]]\nname = \"v\"\nradiator = \"kf2\"\n",
                "variation[0].radiator",
            ),
            (
                "[grid]\nsqrt_s_gev = 3.0\n[vp]\nmodel = \"leptonic\"\n[[variation]]\nname = \"v\"\nvp_region = \"pipi\"\n",
                "variation[0].vp_region",
            ),
            ("[grid]\nsqrt_s_gev = 3.0\nextra = 1\n", "TOML"),
        ];
        for (text, want) in cases {
            assert_eq!(key_of(text), want, "card:\n{text}");
        }
    }

    #[test]
    fn vp_region_all_expands_per_region() {
        let plan = parse_table_card(
            "[grid]\nsqrt_s_gev = 3.0\n[[variation]]\nname = \"vp\"\nvp_region = \"all\"\n",
            "t.toml",
        )
        .unwrap();
        let names: Vec<&str> = plan.variations.iter().map(|v| v.name.as_str()).collect();
        assert_eq!(
            names,
            [
                "vp_pipi",
                "vp_omega_phi",
                "vp_inclusive_1_2_gev",
                "vp_pqcd",
                "vp_narrow"
            ]
        );
    }
}
