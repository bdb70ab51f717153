//! The scan run card (TOML), read in two stages: [`RawScanCard`] mirrors the file
//! (unknown keys are errors), then `ScanPlan::try_from` validates it; physics code only
//! sees the plan. Every message names the card key.
//!
//! ```toml
//! [process]
//! final_state = "hadrons"   # hadrons | mumu | tautau
//! r_ratio = 2.0             # hadrons: constant R of the continuum template (default 1)
//!
//! [radiation]
//! radiator = "kf2"          # kf2 | exp1 | sfll | none (the ISR layer's schemes)
//! x_max = 0.9               # optional: largest fraction of s the photons may take
//! min_mass_gev = 2.7        # optional: smallest final-state invariant mass
//! compare = ["exp1"]        # alternative radiators (kf2 | exp1 | sfll), a budget source
//!
//! [vp]
//! model = "full"            # none | leptonic | full (full: region budget from the R model)
//!
//! [beam]
//! energy_unc_mev = 0.1          # centre-of-mass energy uncertainty, common to all points
//! energy_spread_mev = 0.0       # spread for rows without energy_spread_mev
//! energy_spread_unc_rel = 0.1   # relative uncertainty of every spread
//!
//! [luminosity]
//! scale_unc_rel = 0.01                    # correlated luminosity-scale uncertainty
//! visible_sigma_times_s_nb_gev2 = 4500.0  # monitor σ_vis·s, for Bhabha-count rows
//!
//! [efficiency]
//! unc_rel = 0.005           # correlated efficiency uncertainty
//!
//! [unfold]
//! tolerance = 1e-10         # largest relative change at which the iteration stops
//! max_iterations = 200
//!
//! [[resonance]]             # template resonances (any number)
//! name = "R"
//! mass_gev = 3.0
//! width_gev = 0.03
//!
//! [[uncertainty]]           # user-declared relative terms (any number)
//! name = "trigger"
//! rel = 0.002
//! correlated = true
//! ```

use super::ScanError;
use super::correct::{InverseS, LuminositySource, RelativeTerm, ScanPlan};
use super::forward::ForwardChain;
use super::shape::TemplateResonance;
use super::unfold::UnfoldSettings;
use crate::budget::Correlation;
use crate::isr::{Cuts, Scheme};
use crate::process::{ConstantR, CrossSection, FermionPair, Hadrons};
use crate::rmodel::Region;
use crate::vp::{Dressed, Polarisation, Vp, VpChoice};
use serde::Deserialize;
use std::sync::Arc;

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawScanCard {
    pub process: RawProcess,
    #[serde(default)]
    pub radiation: RawRadiation,
    #[serde(default)]
    pub vp: RawVp,
    #[serde(default)]
    pub beam: RawBeam,
    #[serde(default)]
    pub luminosity: RawLuminosity,
    #[serde(default)]
    pub efficiency: RawEfficiency,
    #[serde(default)]
    pub unfold: RawUnfold,
    #[serde(default)]
    pub resonance: Vec<RawResonance>,
    #[serde(default)]
    pub uncertainty: Vec<RawUncertainty>,
}

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawProcess {
    pub final_state: String,
    pub r_ratio: Option<f64>,
}

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawRadiation {
    pub radiator: Option<String>,
    pub x_max: Option<f64>,
    pub min_mass_gev: Option<f64>,
    #[serde(default)]
    pub compare: Vec<String>,
}

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawVp {
    pub model: Option<String>,
}

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawBeam {
    pub energy_unc_mev: Option<f64>,
    pub energy_spread_mev: Option<f64>,
    pub energy_spread_unc_rel: Option<f64>,
}

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawLuminosity {
    pub scale_unc_rel: Option<f64>,
    pub visible_sigma_times_s_nb_gev2: Option<f64>,
}

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawEfficiency {
    pub unc_rel: Option<f64>,
}

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawUnfold {
    pub tolerance: Option<f64>,
    pub max_iterations: Option<u32>,
}

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawResonance {
    pub name: String,
    pub mass_gev: f64,
    pub width_gev: f64,
}

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawUncertainty {
    pub name: String,
    pub rel: f64,
    #[serde(default = "yes")]
    pub correlated: bool,
}

fn yes() -> bool {
    true
}

/// A shared VP model as a [`Polarisation`] value (for the dressing link).
struct SharedVp(Arc<dyn Polarisation>);

impl Polarisation for SharedVp {
    fn pi(&self, q2_gev2: f64) -> num_complex::Complex64 {
        self.0.pi(q2_gev2)
    }
    fn features(&self) -> &[crate::process::Feature] {
        self.0.features()
    }
    fn describe(&self) -> String {
        self.0.describe()
    }
}

/// A card key with the problem and what is allowed.
fn card_err(key: &str, message: impl Into<String>) -> ScanError {
    ScanError::Card {
        file: String::new(),
        key: key.to_string(),
        message: message.into(),
    }
}

/// Parse card text; `file` names it in messages (TOML errors carry line and column).
///
/// # Errors
/// [`ScanError::Card`] for TOML syntax, unknown keys, wrong types and every value
/// outside its allowed range.
pub fn parse_scan_card(text: &str, file: &str) -> Result<ScanPlan, ScanError> {
    let raw: RawScanCard = toml::from_str(text).map_err(|e| ScanError::Card {
        file: file.to_string(),
        key: "TOML".into(),
        message: e.to_string().trim_end().to_string(),
    })?;
    ScanPlan::try_from(raw).map_err(|e| match e {
        ScanError::Card { key, message, .. } => ScanError::Card {
            file: file.to_string(),
            key,
            message,
        },
        other => other,
    })
}

/// The radiator scheme named `name` (the ISR layer's short names; `none` is no radiation).
///
/// # Errors
/// An unknown name, naming `key` and the allowed names.
pub fn radiator_by_name(key: &str, name: &str) -> Result<Option<Scheme>, ScanError> {
    if name == "none" {
        return Ok(None);
    }
    Scheme::from_key(name).map(Some).ok_or_else(|| {
        let keys: Vec<&str> = Scheme::ALL.iter().map(|s| s.key()).collect();
        card_err(
            key,
            format!(
                "unknown radiator '{name}'; allowed: {}, none",
                keys.join(", ")
            ),
        )
    })
}

/// The vacuum-polarisation choice named `name` (`none`, `leptonic`, `full`).
///
/// # Errors
/// An unknown name, naming `key` and the allowed names.
pub fn vp_by_name(key: &str, name: &str) -> Result<VpChoice, ScanError> {
    [VpChoice::None, VpChoice::Leptonic, VpChoice::Full]
        .into_iter()
        .find(|c| c.key() == name)
        .ok_or_else(|| {
            card_err(
                key,
                format!("unknown vp model '{name}'; allowed: none, leptonic, full"),
            )
        })
}

/// The budget variations of a VP choice: for `full`, the default R model with each
/// region moved by +1σ (the shift is taken as symmetric). Built in parallel.
pub fn vp_variations(choice: VpChoice) -> Vec<(String, Arc<dyn Polarisation>)> {
    use rayon::prelude::*;
    if choice != VpChoice::Full {
        return Vec::new();
    }
    [
        Region::PiPi,
        Region::OmegaPhi,
        Region::Inclusive,
        Region::Pqcd,
        Region::Narrow,
    ]
    .par_iter()
    .map(|&r| {
        let vp: Arc<dyn Polarisation> = Arc::new(Vp::full_varied(r, 1.0));
        (format!("vp:{}", r.key()), vp)
    })
    .collect()
}

/// The Born process named `name` (R only for hadrons).
///
/// # Errors
/// An unknown name or a bad R.
pub fn born_by_name(
    key: &str,
    name: &str,
    r_ratio: Option<f64>,
) -> Result<Box<dyn CrossSection + Send>, ScanError> {
    if r_ratio.is_some() && name != "hadrons" {
        return Err(card_err(
            "process.r_ratio",
            "only for final_state = \"hadrons\"",
        ));
    }
    match name {
        "mumu" => Ok(Box::new(FermionPair::muon())),
        "tautau" => Ok(Box::new(FermionPair::tau())),
        "hadrons" => {
            let r = r_ratio.unwrap_or(1.0);
            if !(r > 0.0 && r.is_finite()) {
                return Err(card_err(
                    "process.r_ratio",
                    format!("{r}; allowed: a finite R > 0"),
                ));
            }
            Ok(Box::new(Hadrons::new(ConstantR(r))))
        }
        other => Err(card_err(
            key,
            format!("unknown final state '{other}'; allowed: hadrons, mumu, tautau"),
        )),
    }
}

/// `value` for `key` when in [lo, hi] (inclusive as flagged), else a card error.
fn in_range(key: &str, value: f64, lo: f64, hi: f64, lo_open: bool) -> Result<f64, ScanError> {
    let ok = value.is_finite() && value <= hi && if lo_open { value > lo } else { value >= lo };
    if ok {
        Ok(value)
    } else {
        let op = if lo_open { "<" } else { "≤" };
        Err(card_err(
            key,
            format!("{value}; allowed: {lo} {op} {key} ≤ {hi}"),
        ))
    }
}

impl TryFrom<RawScanCard> for ScanPlan {
    type Error = ScanError;

    fn try_from(raw: RawScanCard) -> Result<Self, ScanError> {
        let born = born_by_name(
            "process.final_state",
            &raw.process.final_state,
            raw.process.r_ratio,
        )?;
        let vp_choice = vp_by_name("vp.model", raw.vp.model.as_deref().unwrap_or("full"))?;
        let vp: Arc<dyn Polarisation> = Arc::new(Vp::from_choice(vp_choice));
        let continuum: Arc<dyn CrossSection + Send> =
            Arc::new(Dressed::new(born, SharedVp(vp.clone())));
        let scheme = radiator_by_name(
            "radiation.radiator",
            raw.radiation.radiator.as_deref().unwrap_or("kf2"),
        )?;
        let mut cuts = Cuts::NONE;
        if let Some(x) = raw.radiation.x_max {
            in_range("radiation.x_max", x, 0.0, 1.0, true)?;
            cuts = cuts.with_x_max(x)?;
        }
        if let Some(m) = raw.radiation.min_mass_gev {
            in_range("radiation.min_mass_gev", m, 0.0, 1e4, true)?;
            cuts = cuts.with_min_mass_gev(m)?;
        }
        let chain = match scheme {
            Some(s) => ForwardChain::new(s, cuts),
            None => ForwardChain::without_radiation(),
        };
        let mut alternative_radiators = Vec::new();
        for n in &raw.radiation.compare {
            match radiator_by_name("radiation.compare", n)? {
                Some(s) if Some(s) != scheme => alternative_radiators.push(s),
                _ => {
                    return Err(card_err(
                        "radiation.compare",
                        format!("'{n}'; allowed: radiator schemes other than the nominal one"),
                    ));
                }
            }
        }
        let unc = |key: &str, v: Option<f64>, hi: f64| {
            v.map_or(Ok(0.0), |x| in_range(key, x, 0.0, hi, false))
        };
        let visible = raw
            .luminosity
            .visible_sigma_times_s_nb_gev2
            .map(|c| {
                in_range(
                    "luminosity.visible_sigma_times_s_nb_gev2",
                    c,
                    0.0,
                    1e12,
                    true,
                )
                .map(|c| Arc::new(InverseS { nb_gev2: c }) as Arc<dyn CrossSection + Send>)
            })
            .transpose()?;
        let describe = match raw.luminosity.visible_sigma_times_s_nb_gev2 {
            Some(c) => format!("luminosity monitor sigma_vis = {c} nb GeV^2 / s"),
            None => "luminosity given per point".into(),
        };
        let mut resonances = Vec::new();
        for (i, r) in raw.resonance.iter().enumerate() {
            let key = |k: &str| format!("resonance[{i}].{k}");
            in_range(&key("mass_gev"), r.mass_gev, 0.0, 1e4, true)?;
            in_range(&key("width_gev"), r.width_gev, 0.0, r.mass_gev, true)?;
            resonances.push(TemplateResonance {
                name: r.name.clone(),
                mass_gev: r.mass_gev,
                width_gev: r.width_gev,
            });
        }
        let mut relative_terms = Vec::new();
        for (i, u) in raw.uncertainty.iter().enumerate() {
            let reserved = ["stat", "luminosity_stat", "luminosity_scale", "efficiency"];
            if reserved.contains(&u.name.as_str()) || u.name.starts_with("radiator:") {
                return Err(card_err(
                    &format!("uncertainty[{i}].name"),
                    format!("'{}' is a built-in source name; choose another", u.name),
                ));
            }
            relative_terms.push(RelativeTerm {
                name: u.name.clone(),
                rel: in_range(&format!("uncertainty[{i}].rel"), u.rel, 0.0, 1.0, false)?,
                correlation: if u.correlated {
                    Correlation::Full
                } else {
                    Correlation::None
                },
            });
        }
        let settings = UnfoldSettings {
            tolerance: raw.unfold.tolerance.map_or(Ok(1e-10), |t| {
                in_range("unfold.tolerance", t, 0.0, 0.1, true)
            })?,
            max_iterations: match raw.unfold.max_iterations {
                Some(0) => return Err(card_err("unfold.max_iterations", "0; allowed: ≥ 1")),
                Some(k) => k as usize,
                None => 200,
            },
        };
        Ok(ScanPlan {
            chain,
            continuum,
            vp,
            resonances,
            settings,
            luminosity: LuminositySource { visible, describe },
            luminosity_scale_rel: unc(
                "luminosity.scale_unc_rel",
                raw.luminosity.scale_unc_rel,
                1.0,
            )?,
            efficiency_rel: unc("efficiency.unc_rel", raw.efficiency.unc_rel, 1.0)?,
            relative_terms,
            energy_unc_mev: unc("beam.energy_unc_mev", raw.beam.energy_unc_mev, 1e4)?,
            energy_spread_mev: unc("beam.energy_spread_mev", raw.beam.energy_spread_mev, 1e4)?,
            energy_spread_rel: unc(
                "beam.energy_spread_unc_rel",
                raw.beam.energy_spread_unc_rel,
                1.0,
            )?,
            alternative_radiators,
            vp_variations: vp_variations(vp_choice),
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reads_a_full_card_and_names_bad_keys() {
        let card = r#"
            [process]
            final_state = "hadrons"
            r_ratio = 2.0
            [radiation]
            min_mass_gev = 2.7
            compare = ["exp1"]
            [vp]
            model = "none"
            [beam]
            energy_unc_mev = 0.2
            [[resonance]]
            name = "R"
            mass_gev = 3.0
            width_gev = 0.03
            [[uncertainty]]
            name = "trigger"
            rel = 0.002
        "#;
        let plan = parse_scan_card(card, "scan.toml").unwrap();
        assert_eq!(plan.resonances.len(), 1);
        assert_eq!(plan.relative_terms[0].correlation, Correlation::Full);
        assert_eq!(plan.alternative_radiators, vec![Scheme::Exponentiated1]);
        assert!(plan.vp_variations.is_empty());
        assert_eq!(plan.energy_unc_mev, 0.2);
        for (bad, want) in [
            (
                "[process]\nfinal_state = \"quarks\"\n",
                "process.final_state",
            ),
            (
                "[process]\nfinal_state = \"mumu\"\nr_ratio = 2\n",
                "process.r_ratio",
            ),
            (
                "[process]\nfinal_state = \"mumu\"\n[radiation]\nx_max = 1.5\n",
                "radiation.x_max",
            ),
            (
                "[process]\nfinal_state = \"mumu\"\n[radiation]\nradiator = \"x\"\n",
                "radiation.radiator",
            ),
            (
                "[process]\nfinal_state = \"mumu\"\ncolour = 3\n",
                "unknown field",
            ),
            (
                "[process]\nfinal_state = \"mumu\"\n[[uncertainty]]\nname = \"stat\"\nrel = 0.1\n",
                "uncertainty[0].name",
            ),
        ] {
            let Err(err) = parse_scan_card(bad, "scan.toml") else {
                panic!("{bad:?} was accepted")
            };
            let err = err.to_string();
            assert!(
                err.contains(want) && err.starts_with("scan.toml"),
                "{bad:?}: {err}"
            );
        }
    }
}
