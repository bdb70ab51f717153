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
//! model = "full"            # none | lep (or leptonic) | full (full: region budget from the R model)
//!
//! [beam]
//! energy_unc_mev = 0.1          # centre-of-mass energy uncertainty, common to all points
//! energy_spread_mev = 0.0       # spread for rows without energy_spread_mev
//! energy_spread_unc_rel = 0.1   # relative uncertainty of every spread
//!
//! [luminosity]
//! scale_unc_rel = 0.01                    # correlated luminosity-scale uncertainty
//! # For rows with monitor counts (n_bhabha, …), one of three monitor descriptions:
//! visible_sigma_times_s_nb_gev2 = 4500.0  # (a) a fixed σ_vis = C/s, no budget of its own
//! # monitor_card = "lumi.toml"            # (b) a luminosity run card, relative to this card
//! # [luminosity.monitor]                  # (c) the same run card inline:
//! # process = "ee"                        #     every key of a luminosity run card
//! # [luminosity.monitor.acceptance]
//! # theta_min_deg = 40.0
//! # …
//! # [luminosity.monitor.uncertainty]
//! # theta_edge_deg = 0.01
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
//!
//! [fit]                     # optional: forward fit of a narrow resonance instead of unfolding
//! resonance = "R"           # the [[resonance]] fitted (default: the only one); its width_gev is held fixed
//! mass_gev = 3.0            # optional starting mass (default: the resonance's mass_gev)
//! gee_b_kev = 0.3           # optional starting Γ_ee·B in keV (default: linear least squares at the starting mass)
//! continuum = "scale"       # scale | scale_slope: the continuum template times a, or times a + b(√s − mass_gev)
//! max_iterations = 100      # optional: most Levenberg–Marquardt steps
//! ```
//!
//! The luminosity monitor (for data rows with `n_bhabha,n_bhabha_bkg,bhabha_efficiency`):
//! with (b) or (c) the monitor's σ_vis is the luminosity layer's prediction in its
//! acceptance, with radiation and VP as its card says, computed once per distinct energy,
//! and the layer's budget (numerical, acceptance edges, structure-function scale, non-log
//! terms, VP regions, beam energy, monitor efficiency) joins the scan budget (see
//! [`super::correct_scan`]). The monitor card must not give `sqrt_s_gev` (each point has its
//! own). Its `uncertainty.sqrt_s_gev` and `beam.energy_unc_mev` are one uncertainty: give
//! either (it is used for both) or both equal. Only one of (a), (b), (c) may be given.
//!
//! ## `[fit]`: the forward fit
//!
//! Where a resonance is narrower than the beam-energy spread, pointwise unfolding is
//! ill-posed. With a `[fit]` table, `radnorm correct` fits instead the resonance's mass M,
//! Γ_ee·B (electronic width times the branching fraction into the measured final state, in
//! the dressed convention: Γ_ee with vacuum polarisation included) and the continuum (a
//! scale `a`, with `scale_slope` also a slope `b` per GeV about the resonance's card
//! `mass_gev`) to the observed cross-sections with their statistical uncertainties, through
//! the whole forward chain of this card (the dressed line shape → ISR with `[radiation]` →
//! the Gaussian spread of each point). The continuum is this card's process with its `[vp]`
//! model; the fitted `[[resonance]]` is a relativistic Breit–Wigner normalised by Γ_ee·B;
//! other `[[resonance]]` entries are not part of the fit. The total width is **not
//! fitted**: it is held at the resonance's `width_gev`, because when the spread is much
//! wider than the resonance the observed line shape depends on Γ only through the peak area
//! (∝ Γ_ee·B), so a scan does not determine it. See [`super::fit`] for the model, the
//! algorithm and its stopping rules.

use super::ScanError;
use super::correct::{InverseS, LuminositySource, MonitorSigma, RelativeTerm, ScanPlan};
use super::fit::{ContinuumForm, DEFAULT_MAX_ITERATIONS, FitPlan};
use super::forward::ForwardChain;
use super::shape::TemplateResonance;
use super::unfold::UnfoldSettings;
use crate::budget::Correlation;
use crate::isr::{Cuts, Scheme};
use crate::process::{ConstantR, CrossSection, FermionPair, Hadrons};
use crate::rmodel::Region;
use crate::shown;
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
    pub fit: Option<RawFit>,
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
    /// A luminosity run card file (the format of [`crate::lumi::RawCard`]), relative to
    /// the scan card; [`parse_scan_card`] reads it into `monitor_card_read`.
    pub monitor_card: Option<String>,
    /// A luminosity run card inline (`[luminosity.monitor]`).
    pub monitor: Option<crate::lumi::RawCard>,
    /// The file of `monitor_card` as read: (its path as shown in messages, its contents).
    #[serde(skip)]
    pub monitor_card_read: Option<(String, crate::lumi::RawCard)>,
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

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawFit {
    pub resonance: Option<String>,
    pub mass_gev: Option<f64>,
    pub gee_b_kev: Option<f64>,
    pub continuum: Option<String>,
    pub max_iterations: Option<u32>,
}

/// A whole validated scan card: the correction plan and, with `[fit]`, the forward fit.
#[derive(Clone)]
pub struct ScanCard {
    pub plan: ScanPlan,
    pub fit: Option<FitPlan>,
}

impl TryFrom<RawScanCard> for ScanCard {
    type Error = ScanError;

    fn try_from(raw: RawScanCard) -> Result<Self, ScanError> {
        let raw_fit = raw.fit.clone();
        let plan = ScanPlan::try_from(raw)?;
        let fit = raw_fit
            .map(|f| fit_plan(&f, &plan.resonances))
            .transpose()?;
        Ok(ScanCard { plan, fit })
    }
}

/// The `[fit]` table validated against the card's resonances.
fn fit_plan(raw: &RawFit, resonances: &[TemplateResonance]) -> Result<FitPlan, ScanError> {
    let names = || {
        resonances
            .iter()
            .map(|r| format!("'{}'", r.name))
            .collect::<Vec<_>>()
            .join(", ")
    };
    let resonance = match (&raw.resonance, resonances) {
        (_, []) => {
            return Err(card_err(
                "fit.resonance",
                "the card declares no [[resonance]] to fit; allowed: a [[resonance]] table \
                 with name, mass_gev and width_gev",
            ));
        }
        (None, [only]) => only,
        (None, _) => {
            return Err(card_err(
                "fit.resonance",
                format!(
                    "missing, and the card has several resonances; allowed: {}",
                    names()
                ),
            ));
        }
        (Some(name), _) => resonances.iter().find(|r| &r.name == name).ok_or_else(|| {
            card_err(
                "fit.resonance",
                format!(
                    "'{name}' is not a [[resonance]] of this card; allowed: {}",
                    names()
                ),
            )
        })?,
    };
    let mass_start_gev = match raw.mass_gev {
        Some(m) => in_range("fit.mass_gev", m, 0.0, 1e4, true)?,
        None => resonance.mass_gev,
    };
    let gee_b_start_kev = raw
        .gee_b_kev
        .map(|g| in_range("fit.gee_b_kev", g, 0.0, 1e6, true))
        .transpose()?;
    let continuum = match raw.continuum.as_deref() {
        None => ContinuumForm::Scale,
        Some(k) => ContinuumForm::from_key(k).ok_or_else(|| {
            card_err(
                "fit.continuum",
                format!("unknown continuum '{k}'; allowed: scale, scale_slope"),
            )
        })?,
    };
    let max_iterations = match raw.max_iterations {
        Some(0) => return Err(card_err("fit.max_iterations", "0; allowed: ≥ 1")),
        Some(k) => k as usize,
        None => DEFAULT_MAX_ITERATIONS,
    };
    Ok(FitPlan {
        resonance: resonance.name.clone(),
        width_gev: resonance.width_gev,
        pivot_sqrt_s_gev: resonance.mass_gev,
        mass_start_gev,
        gee_b_start_kev,
        continuum,
        max_iterations,
    })
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
/// The `[fit]` table, if any, is validated too; use [`parse_full_scan_card`] to get it.
///
/// # Errors
/// [`ScanError::Card`] for TOML syntax, unknown keys, wrong types and every value
/// outside its allowed range.
pub fn parse_scan_card(text: &str, file: &str) -> Result<ScanPlan, ScanError> {
    parse_full_scan_card(text, file).map(|c| c.plan)
}

/// Parse card text into the correction plan and the optional forward fit (`[fit]`).
///
/// # Errors
/// As [`parse_scan_card`].
pub fn parse_full_scan_card(text: &str, file: &str) -> Result<ScanCard, ScanError> {
    let mut raw: RawScanCard = toml::from_str(text).map_err(|e| ScanError::Card {
        file: file.to_string(),
        key: "TOML".into(),
        message: e.to_string().trim_end().to_string(),
    })?;
    // A luminosity.monitor_card is found relative to the card's own path, `file`.
    read_monitor_card(&mut raw.luminosity, file)
        .and_then(|()| ScanCard::try_from(raw))
        .map_err(|e| match e {
            ScanError::Card { key, message, .. } => ScanError::Card {
                file: file.to_string(),
                key,
                message,
            },
            other => other,
        })
}

/// Read the file named by `luminosity.monitor_card` (relative to the scan card `card_file`)
/// into `monitor_card_read`.
fn read_monitor_card(lumi: &mut RawLuminosity, card_file: &str) -> Result<(), ScanError> {
    let Some(name) = &lumi.monitor_card else {
        return Ok(());
    };
    let key = "luminosity.monitor_card";
    if lumi.monitor.is_some() {
        return Err(card_err(
            key,
            "given together with [luminosity.monitor]; allowed: one of them",
        ));
    }
    let base = std::path::Path::new(card_file)
        .parent()
        .unwrap_or(std::path::Path::new(""));
    let path = base.join(name);
    let shown = path.display().to_string();
    let text = std::fs::read_to_string(&path)
        .map_err(|e| card_err(key, format!("cannot read {shown}: {e}")))?;
    let card = crate::lumi::RawCard::parse(&text)
        .map_err(|e| card_err(key, format!("{shown}: {}", e.to_string().trim_end())))?;
    lumi.monitor_card_read = Some((shown, card));
    Ok(())
}

/// The luminosity monitor of the `[luminosity]` section (validated) and the centre-of-mass
/// energy uncertainty in MeV, which the monitor and the scan share.
///
/// `scan_vp` and `scan_vp_variations` are the scan's own VP models: when the monitor asks
/// for the same (full) VP, their tables are shared instead of built again.
fn luminosity_monitor(
    lumi: &RawLuminosity,
    beam_energy_unc_mev: Option<f64>,
    scan_vp: (VpChoice, &Arc<dyn Polarisation>),
    scan_vp_variations: &[(String, Arc<dyn Polarisation>)],
) -> Result<(LuminositySource, f64), ScanError> {
    use crate::lumi::{CardError, LumiPlan, Monitor, VpModels};
    let given = [
        lumi.visible_sigma_times_s_nb_gev2.is_some(),
        lumi.monitor_card.is_some(),
        lumi.monitor.is_some(),
    ];
    if given.iter().filter(|g| **g).count() > 1 {
        return Err(card_err(
            if lumi.monitor.is_some() {
                "luminosity.monitor"
            } else {
                "luminosity.monitor_card"
            },
            "more than one luminosity monitor; allowed: one of visible_sigma_times_s_nb_gev2, \
             monitor_card, [luminosity.monitor]",
        ));
    }
    let energy_unc_mev = beam_energy_unc_mev.map_or(Ok(0.0), |x| {
        in_range("beam.energy_unc_mev", x, 0.0, 1e4, false)
    })?;
    if let Some(c) = lumi.visible_sigma_times_s_nb_gev2 {
        let c = in_range(
            "luminosity.visible_sigma_times_s_nb_gev2",
            c,
            0.0,
            1e12,
            true,
        )?;
        let fixed: Arc<dyn CrossSection + Send> = Arc::new(InverseS { nb_gev2: c });
        return Ok((
            LuminositySource {
                visible: Some(MonitorSigma::Fixed(fixed)),
                describe: format!("luminosity monitor sigma_vis = {c} nb GeV^2 / s"),
            },
            energy_unc_mev,
        ));
    }
    type KeyError = Box<dyn Fn(&str, String) -> ScanError>;
    // Errors of the monitor card under the scan card's key: `luminosity.monitor.<key>`
    // inline, or `luminosity.monitor_card` with the file and its own key.
    let (raw, origin, err): (_, _, KeyError) =
        match (&lumi.monitor, &lumi.monitor_card, &lumi.monitor_card_read) {
            (Some(raw), _, _) => (
                raw.clone(),
                "inline [luminosity.monitor]".to_string(),
                Box::new(|k: &str, m: String| card_err(&format!("luminosity.monitor.{k}"), m)),
            ),
            (None, Some(_), Some((shown, raw))) => {
                let shown = shown.clone();
                (
                    raw.clone(),
                    format!("card {shown}"),
                    Box::new(move |k: &str, m: String| {
                        card_err("luminosity.monitor_card", format!("{shown}: {k}: {m}"))
                    }),
                )
            }
            (None, Some(_), None) => {
                return Err(card_err(
                    "luminosity.monitor_card",
                    "the file was not read; read the scan card with parse_scan_card",
                ));
            }
            (None, None, _) => {
                return Ok((
                    LuminositySource {
                        visible: None,
                        describe: "luminosity given per point".into(),
                    },
                    energy_unc_mev,
                ));
            }
        };
    if let Some(e) = raw.sqrt_s_gev {
        return Err(err(
            "sqrt_s_gev",
            format!("{e}; not allowed in a scan (each point has its own energy): remove it"),
        ));
    }
    let monitor_unc_gev = raw.uncertainty.sqrt_s_gev;
    let mut plan = LumiPlan::try_from(raw).map_err(|e| match e {
        CardError::Invalid { key, message } => err(&key, message),
        other => err("", other.to_string()),
    })?;
    // One centre-of-mass energy uncertainty moves σ_vis and the correction factors alike.
    let energy_unc_mev = match (beam_energy_unc_mev, monitor_unc_gev) {
        (Some(_), Some(g))
            if (g * 1e3 - energy_unc_mev).abs() > 1e-9 * energy_unc_mev.max(1e-3) =>
        {
            return Err(err(
                "uncertainty.sqrt_s_gev",
                format!(
                    "{g} GeV differs from beam.energy_unc_mev = {energy_unc_mev} MeV; one \
                     centre-of-mass energy uncertainty moves the monitor and the correction \
                     together; allowed: give it once, or the same value in both"
                ),
            ));
        }
        (None, Some(_)) => plan.uncertainty.sqrt_s_gev * 1e3,
        _ => energy_unc_mev,
    };
    plan.uncertainty.sqrt_s_gev = energy_unc_mev * 1e-3;
    let vp = if plan.vp == VpChoice::Full && scan_vp.0 == VpChoice::Full {
        VpModels {
            nominal: Some(scan_vp.1.clone()),
            variations: scan_vp_variations
                .iter()
                .map(|(name, v)| (name.trim_start_matches("vp:").to_string(), v.clone()))
                .collect(),
        }
    } else {
        VpModels::standard(plan.vp)
    };
    let monitor = Monitor::with_vp(plan, vp).map_err(|e| err("", e.to_string()))?;
    let describe = format!("luminosity monitor ({origin}): {}", monitor.describe());
    Ok((
        LuminositySource {
            visible: Some(MonitorSigma::Layer(Arc::new(monitor))),
            describe,
        },
        energy_unc_mev,
    ))
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
        card_err(
            key,
            format!(
                "unknown radiator '{name}'; allowed: {}, none",
                Scheme::allowed_keys()
            ),
        )
    })
}

/// The vacuum-polarisation choice named `name` (`none`, `leptonic`, `full`).
///
/// # Errors
/// An unknown name, naming `key` and the allowed names.
pub fn vp_by_name(key: &str, name: &str) -> Result<VpChoice, ScanError> {
    VpChoice::from_key(name).ok_or_else(|| {
        card_err(
            key,
            format!("unknown vp model '{name}'; allowed: none, lep (or leptonic), full"),
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
    Region::MODEL
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
    match name {
        "mumu" | "tautau" if r_ratio.is_some() => Err(card_err(
            "process.r_ratio",
            "only for final_state = \"hadrons\"",
        )),
        "mumu" => Ok(Box::new(FermionPair::muon())),
        "tautau" => Ok(Box::new(FermionPair::tau())),
        "hadrons" => {
            let r = ConstantR::new("r_ratio", r_ratio.unwrap_or(1.0))
                .map_err(|e| card_err("process.r_ratio", e.verdict()))?;
            Ok(Box::new(Hadrons::new(r)))
        }
        other => Err(card_err(
            key,
            format!("unknown final state '{other}'; allowed: hadrons, mumu, tautau"),
        )),
    }
}

/// The narrowest template resonance, GeV.
const MIN_WIDTH_GEV: f64 = 1e-6;

/// `value` for `key` when in [lo, hi] (inclusive as flagged), else a card error.
fn in_range(key: &str, value: f64, lo: f64, hi: f64, lo_open: bool) -> Result<f64, ScanError> {
    let ok = value.is_finite() && value <= hi && if lo_open { value > lo } else { value >= lo };
    if ok {
        Ok(value)
    } else {
        let op = if lo_open { "<" } else { "≤" };
        Err(card_err(
            key,
            format!("{}; allowed: {lo} {op} {key} ≤ {hi}", shown(value)),
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
        let continuum: Arc<dyn CrossSection + Send> = Arc::new(Dressed::new(born, vp.clone()));
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
                Some(s) if alternative_radiators.contains(&s) => {
                    return Err(card_err(
                        "radiation.compare",
                        format!("'{n}' is given twice; allowed: each scheme once"),
                    ));
                }
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
        let vp_variations = vp_variations(vp_choice);
        let (luminosity, energy_unc_mev) = luminosity_monitor(
            &raw.luminosity,
            raw.beam.energy_unc_mev,
            (vp_choice, &vp),
            &vp_variations,
        )?;
        let mut resonances = Vec::new();
        for (i, r) in raw.resonance.iter().enumerate() {
            let key = |k: &str| format!("resonance[{i}].{k}");
            in_range(&key("mass_gev"), r.mass_gev, 0.0, 1e4, true)?;
            // 1 keV: below every vector meson's width (Υ(1S): 54 keV, PDG 2024; from memory);
            // 1e-300 GeV had made the line shape NaN.
            in_range(
                &key("width_gev"),
                r.width_gev,
                MIN_WIDTH_GEV,
                r.mass_gev,
                false,
            )?;
            resonances.push(TemplateResonance {
                name: r.name.clone(),
                mass_gev: r.mass_gev,
                width_gev: r.width_gev,
            });
        }
        let mut relative_terms = Vec::new();
        for (i, u) in raw.uncertainty.iter().enumerate() {
            let reserved = ["stat", "luminosity_stat", "luminosity_scale", "efficiency"];
            if reserved.contains(&u.name.as_str())
                || u.name.starts_with("radiator:")
                || u.name.starts_with("luminosity:")
            {
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
            luminosity,
            luminosity_scale_rel: unc(
                "luminosity.scale_unc_rel",
                raw.luminosity.scale_unc_rel,
                1.0,
            )?,
            efficiency_rel: unc("efficiency.unc_rel", raw.efficiency.unc_rel, 1.0)?,
            relative_terms,
            energy_unc_mev,
            energy_spread_mev: unc("beam.energy_spread_mev", raw.beam.energy_spread_mev, 1e4)?,
            energy_spread_rel: unc(
                "beam.energy_spread_unc_rel",
                raw.beam.energy_spread_unc_rel,
                1.0,
            )?,
            alternative_radiators,
            vp_variations,
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
            // An unknown final state is named as such, even beside an r_ratio.
            (
                "[process]\nfinal_state = \"quarks\"\nr_ratio = 2\n",
                "process.final_state",
            ),
            (
                "[process]\nfinal_state = \"hadrons\"\nr_ratio = 1e308\n",
                "process.r_ratio",
            ),
            (
                "[process]\nfinal_state = \"mumu\"\n[radiation]\ncompare = [\"exp1\", \"exp1\"]\n",
                "radiation.compare",
            ),
            (
                "[process]\nfinal_state = \"mumu\"\n[[resonance]]\nname = \"R\"\nmass_gev = 3.0\nwidth_gev = 1e-300\n",
                "resonance[0].width_gev",
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
