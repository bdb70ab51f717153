//! The invented demo scenario: a fictional collider scans an invented resonance on a
//! hadronic continuum, and a luminosity monitor counts Bhabha events at every point.
//!
//! Everything here is invented for demonstration and tests; no number describes a real
//! machine or a real particle. The counts are drawn from the project's own forward chain
//! (the invented dressed line shape → ISR → beam-energy spread, and the monitor's visible
//! Bhabha cross-section from the luminosity layer) with Poisson noise from a fixed seed,
//! so the shipped data can be regenerated bit for bit ([`generate`]).
//!
//! The scenario file (TOML):
//!
//! ```toml
//! [scenario]
//! name = "…"                      # a label
//! seed = 20261203                 # Poisson seed
//!
//! [truth]                         # the invented dressed line shape
//! r_continuum = 3.7               # σ_pt·R, dressed with the scan card's VP
//! [[truth.resonance]]             # any number
//! name = "Y5200"
//! mass_gev = 5.2
//! width_gev = 0.04
//! peak_nb = 6.0                   # dressed Breit–Wigner height at s = M²
//!
//! [points]
//! sqrt_s_gev = [5.06, 5.08, 5.10] # increasing, GeV
//! luminosity_nb_inv = 2000.0      # true integrated luminosity of every point
//! efficiency = 0.70               # signal efficiency
//! n_bkg = 150.0                   # expected background events per point
//! energy_spread_mev = 2.0
//!
//! [monitor]
//! bhabha_efficiency = 0.93
//! n_bhabha_bkg = 60.0
//! ```

use crate::lumi::Monitor;
use crate::process::{ConstantR, CrossSection, Feature, Hadrons};
use crate::scan::generate::{PlannedPoint, SplitMix64, generate_scan, round_significant};
use crate::scan::{ForwardChain, LuminosityInput, ScanPoint};
use crate::vp::Polarisation;
use serde::Deserialize;
use std::fmt::Write as _;
use std::sync::Arc;
use thiserror::Error;

/// What can go wrong with a scenario.
#[derive(Debug, Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum DemoError {
    #[error("{file}: {key}: {message}")]
    Card {
        file: String,
        key: String,
        message: String,
    },
    #[error("luminosity monitor at sqrt_s_gev = {sqrt_s_gev}: {message}")]
    Monitor { sqrt_s_gev: f64, message: String },
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawScenario {
    scenario: RawHead,
    truth: RawTruth,
    points: RawPoints,
    monitor: RawMonitor,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawHead {
    name: String,
    seed: u64,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawTruth {
    r_continuum: f64,
    #[serde(default)]
    resonance: Vec<RawResonance>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawResonance {
    name: String,
    mass_gev: f64,
    width_gev: f64,
    peak_nb: f64,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawPoints {
    sqrt_s_gev: Vec<f64>,
    luminosity_nb_inv: f64,
    efficiency: f64,
    n_bkg: f64,
    energy_spread_mev: f64,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawMonitor {
    bhabha_efficiency: f64,
    n_bhabha_bkg: f64,
}

/// An invented resonance of the truth: a constant-width relativistic Breit–Wigner.
#[derive(Debug, Clone, PartialEq)]
pub struct TruthResonance {
    pub name: String,
    pub mass_gev: f64,
    pub width_gev: f64,
    /// Dressed height at s = M², nb.
    pub peak_nb: f64,
}

/// A validated scenario.
#[derive(Debug, Clone, PartialEq)]
pub struct Scenario {
    pub name: String,
    pub seed: u64,
    pub r_continuum: f64,
    pub resonances: Vec<TruthResonance>,
    pub points: Vec<PlannedPoint>,
    pub bhabha_efficiency: f64,
    pub n_bhabha_bkg: f64,
}

/// Parse and validate a scenario; `file` names it in messages.
///
/// # Errors
/// [`DemoError::Card`] naming the key for syntax, unknown keys and values out of range.
pub fn parse_scenario(text: &str, file: &str) -> Result<Scenario, DemoError> {
    let err = |key: &str, message: String| DemoError::Card {
        file: file.to_string(),
        key: key.to_string(),
        message,
    };
    let raw: RawScenario =
        toml::from_str(text).map_err(|e| err("TOML", e.to_string().trim_end().to_string()))?;
    let check = |key: &str, v: f64, ok: bool, allowed: &str| {
        if ok && v.is_finite() {
            Ok(v)
        } else {
            Err(err(key, format!("{v}; allowed: {allowed}")))
        }
    };
    let p = &raw.points;
    let energies = p.sqrt_s_gev.clone();
    let increasing = energies.windows(2).all(|w| w[1] > w[0]);
    if energies.len() < 3 || !increasing || energies.iter().any(|e| !(*e > 0.0 && e.is_finite())) {
        return Err(err(
            "points.sqrt_s_gev",
            format!("{energies:?}; allowed: at least 3 increasing energies > 0 GeV"),
        ));
    }
    let lumi = check(
        "points.luminosity_nb_inv",
        p.luminosity_nb_inv,
        p.luminosity_nb_inv > 0.0,
        "> 0",
    )?;
    let eff = check(
        "points.efficiency",
        p.efficiency,
        p.efficiency > 0.0 && p.efficiency <= 1.0,
        "0 < efficiency ≤ 1",
    )?;
    let bkg = check("points.n_bkg", p.n_bkg, p.n_bkg >= 0.0, "≥ 0")?;
    let spread = check(
        "points.energy_spread_mev",
        p.energy_spread_mev,
        p.energy_spread_mev >= 0.0,
        "≥ 0 MeV",
    )?;
    let m = &raw.monitor;
    let bhabha_efficiency = check(
        "monitor.bhabha_efficiency",
        m.bhabha_efficiency,
        m.bhabha_efficiency > 0.0 && m.bhabha_efficiency <= 1.0,
        "0 < bhabha_efficiency ≤ 1",
    )?;
    let n_bhabha_bkg = check(
        "monitor.n_bhabha_bkg",
        m.n_bhabha_bkg,
        m.n_bhabha_bkg >= 0.0,
        "≥ 0",
    )?;
    let r_continuum = check(
        "truth.r_continuum",
        raw.truth.r_continuum,
        raw.truth.r_continuum > 0.0,
        "> 0",
    )?;
    let mut resonances = Vec::new();
    for (i, r) in raw.truth.resonance.iter().enumerate() {
        let key = |k: &str| format!("truth.resonance[{i}].{k}");
        resonances.push(TruthResonance {
            name: r.name.clone(),
            mass_gev: check(&key("mass_gev"), r.mass_gev, r.mass_gev > 0.0, "> 0 GeV")?,
            width_gev: check(
                &key("width_gev"),
                r.width_gev,
                r.width_gev > 0.0 && r.width_gev < r.mass_gev,
                "0 < width_gev < mass_gev",
            )?,
            peak_nb: check(&key("peak_nb"), r.peak_nb, r.peak_nb > 0.0, "> 0 nb")?,
        });
    }
    Ok(Scenario {
        name: raw.scenario.name,
        seed: raw.scenario.seed,
        r_continuum,
        resonances,
        points: energies
            .iter()
            .map(|&e| PlannedPoint {
                sqrt_s_gev: e,
                luminosity_nb_inv: lumi,
                efficiency: eff,
                n_bkg: bkg,
                energy_spread_mev: spread,
            })
            .collect(),
        bhabha_efficiency,
        n_bhabha_bkg,
    })
}

/// The invented dressed line shape: σ_pt·R·|1 − Π(s)|⁻² plus the resonances.
pub struct Truth {
    continuum: Hadrons<ConstantR>,
    vp: Arc<dyn Polarisation>,
    resonances: Vec<TruthResonance>,
    features: Vec<Feature>,
}

impl Truth {
    /// The truth of `scenario` dressed with `vp` (the scan card's VP model).
    pub fn new(scenario: &Scenario, vp: Arc<dyn Polarisation>) -> Self {
        let continuum = Hadrons::new(ConstantR(scenario.r_continuum));
        let mut features = continuum.features().to_vec();
        features.extend_from_slice(vp.features());
        for r in &scenario.resonances {
            features.push(Feature::Peak {
                s_gev2: r.mass_gev * r.mass_gev,
                m_gamma_gev2: r.mass_gev * r.width_gev,
            });
        }
        Truth {
            continuum,
            vp,
            resonances: scenario.resonances.clone(),
            features,
        }
    }
}

impl CrossSection for Truth {
    fn sigma_nb(&self, s: f64) -> f64 {
        let mut sigma = self.continuum.sigma_nb(s) * self.vp.s_channel_factor(s).norm_sqr();
        if s > self.continuum.threshold_s_gev2() {
            for r in &self.resonances {
                let mg = r.mass_gev * r.width_gev;
                sigma += r.peak_nb * mg * mg / ((s - r.mass_gev * r.mass_gev).powi(2) + mg * mg);
            }
        }
        sigma
    }
    fn threshold_s_gev2(&self) -> f64 {
        self.continuum.threshold_s_gev2()
    }
    fn features(&self) -> &[Feature] {
        &self.features
    }
}

/// The scan of `scenario`: signal counts through `chain` from `truth`, and monitor counts
/// nᵢ ~ Poisson(ε_B Lᵢ σ_vis(sᵢ) + b_B) with σ_vis from `monitor` (a second, independent
/// stream of the same seed).
///
/// # Errors
/// A monitor cross-section the luminosity layer cannot compute.
pub fn generate(
    scenario: &Scenario,
    chain: &ForwardChain,
    truth: &Truth,
    monitor: &Monitor,
) -> Result<Vec<ScanPoint>, DemoError> {
    use rayon::prelude::*;
    let sigma_vis: Vec<f64> = scenario
        .points
        .par_iter()
        .map(|p| {
            let fail = |e: crate::lumi::VisibleError| DemoError::Monitor {
                sqrt_s_gev: p.sqrt_s_gev,
                message: e.to_string(),
            };
            let s = p.sqrt_s_gev * p.sqrt_s_gev;
            Ok(monitor
                .visible()
                .map_err(fail)?
                .sigma_vis(s)
                .map_err(fail)?
                .sigma_nb)
        })
        .collect::<Result<_, DemoError>>()?;
    let mut points = generate_scan(chain, truth, &scenario.points, scenario.seed);
    let mut rng = SplitMix64::new(scenario.seed ^ 0x6c75_6d69);
    for (p, s) in points.iter_mut().zip(sigma_vis) {
        // σ_vis is computed to 1e-4: four significant digits keep the draws stable.
        let mean = round_significant(
            scenario.bhabha_efficiency * scenario.points[0].luminosity_nb_inv * s
                + scenario.n_bhabha_bkg,
            4,
        );
        let mut n = rng.poisson(mean) as f64;
        while n <= scenario.n_bhabha_bkg {
            n = rng.poisson(mean) as f64;
        }
        p.luminosity = LuminosityInput::Bhabha {
            n_events: n,
            n_bkg: scenario.n_bhabha_bkg,
            efficiency: scenario.bhabha_efficiency,
        };
    }
    Ok(points)
}

/// The monitor counts of a scan as the luminosity layer's counts CSV
/// (`run,sqrt_s_gev,n_bhabha,n_bhabha_bkg,bhabha_efficiency`), one run per point.
pub fn counts_csv(points: &[ScanPoint], comment: &str) -> String {
    let mut s = String::new();
    for line in comment.lines() {
        let _ = writeln!(s, "# {line}");
    }
    s.push_str("run,sqrt_s_gev,n_bhabha,n_bhabha_bkg,bhabha_efficiency\n");
    for (i, p) in points.iter().enumerate() {
        if let LuminosityInput::Bhabha {
            n_events,
            n_bkg,
            efficiency,
        } = p.luminosity
        {
            let _ = writeln!(
                s,
                "{},{},{},{},{}",
                i + 1,
                p.sqrt_s_gev,
                n_events,
                n_bkg,
                efficiency
            );
        }
    }
    s
}
