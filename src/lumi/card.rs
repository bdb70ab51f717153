//! The luminosity run card: a raw TOML mirror (unknown keys rejected), then a validated plan.
//!
//! ```toml
//! process = "ee"              # ee | gg | mumu
//! sqrt_s_gev = 10.58          # optional with a counts file (each run has its energy)
//! vp = "full"                 # none | lep | full
//! born_only = false           # no radiation, no VP
//! final_state = "calorimetric" # calorimetric | bare
//! scale = "t"                 # structure-function scale: t (|t̄|) | s; default t for ee, s otherwise
//! precision = 1e-4            # target relative numerical precision of σ_vis
//! z_exchange = false          # Z exchange in the Born process (ee, mumu)
//!
//! [acceptance]
//! theta_min_deg = 40.0        # both particles, unless second_* is given; 0.1°–179.9°
//! theta_max_deg = 140.0
//! second_theta_min_deg = 40.0 # optional: the second particle's own window
//! second_theta_max_deg = 140.0
//! acol_max_deg = 10.0         # default 180 (no cut)
//! e_min_frac = 0.5            # per particle, fraction of the beam energy
//!
//! [uncertainty]
//! theta_edge_deg = 0.01       # alignment uncertainty of every polar edge
//! sqrt_s_gev = 0.005          # uncertainty of the c.m. energy
//! efficiency_rel = 0.002      # relative uncertainty of the selection efficiency
//! ```

use super::acceptance::{Acceptance, FinalState, PolarRange};
use super::visible::{Channel, Scale, Settings};
use crate::error::{ParamError, shown};
use crate::vp::VpChoice;
use serde::Deserialize;
use thiserror::Error;

/// The file as written: every key optional, unknown keys rejected.
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawCard {
    pub process: Option<String>,
    pub sqrt_s_gev: Option<f64>,
    pub vp: Option<String>,
    pub born_only: Option<bool>,
    pub final_state: Option<String>,
    pub scale: Option<String>,
    pub precision: Option<f64>,
    pub z_exchange: Option<bool>,
    #[serde(default)]
    pub acceptance: RawAcceptance,
    #[serde(default)]
    pub uncertainty: RawUncertainty,
}

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawAcceptance {
    pub theta_min_deg: Option<f64>,
    pub theta_max_deg: Option<f64>,
    pub second_theta_min_deg: Option<f64>,
    pub second_theta_max_deg: Option<f64>,
    pub acol_max_deg: Option<f64>,
    pub e_min_frac: Option<f64>,
}

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawUncertainty {
    pub theta_edge_deg: Option<f64>,
    pub sqrt_s_gev: Option<f64>,
    pub efficiency_rel: Option<f64>,
}

/// A card problem, naming the card key.
#[derive(Debug, Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum CardError {
    #[error("run card is not valid TOML or has an unknown key: {0}")]
    Syntax(String),
    #[error("{key}: {message}")]
    Invalid { key: String, message: String },
}

impl CardError {
    /// The card key at fault (empty for a syntax error).
    pub fn key(&self) -> &str {
        match self {
            CardError::Syntax(_) => "",
            CardError::Invalid { key, .. } => key,
        }
    }

    fn invalid(key: &str, message: impl Into<String>) -> Self {
        CardError::Invalid {
            key: key.to_string(),
            message: message.into(),
        }
    }

    /// A range error of a validated field, under its card key (`section.name`).
    fn param(section: &str, e: ParamError) -> Self {
        let key = if section.is_empty() {
            e.name.to_string()
        } else {
            format!("{section}.{}", e.name)
        };
        CardError::invalid(&key, e.verdict())
    }
}

impl RawCard {
    /// Parse the TOML text of a card.
    ///
    /// # Errors
    /// Invalid TOML, wrong types or unknown keys (the message carries line and column).
    pub fn parse(text: &str) -> Result<Self, CardError> {
        toml::from_str(text).map_err(|e| CardError::Syntax(e.to_string()))
    }
}

/// Uncertainty inputs of the budget.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Uncertainties {
    /// Alignment uncertainty of every polar edge, degrees.
    pub theta_edge_deg: f64,
    /// Uncertainty of √s, GeV.
    pub sqrt_s_gev: f64,
    /// Relative uncertainty of the selection efficiency.
    pub efficiency_rel: f64,
}

/// The validated plan: what physics code sees.
#[derive(Debug, Clone, PartialEq)]
pub struct LumiPlan {
    pub channel: Channel,
    pub sqrt_s_gev: Option<f64>,
    pub vp: VpChoice,
    pub acceptance: Acceptance,
    pub settings: Settings,
    pub uncertainty: Uncertainties,
}

fn choice<T: Copy>(
    key: &str,
    value: Option<&str>,
    default: T,
    options: &[(&str, T)],
) -> Result<T, CardError> {
    let Some(v) = value else { return Ok(default) };
    options
        .iter()
        .find(|(k, _)| *k == v)
        .map(|(_, t)| *t)
        .ok_or_else(|| {
            let names: Vec<&str> = options.iter().map(|(k, _)| *k).collect();
            CardError::invalid(
                key,
                format!("'{v}' is not allowed; allowed: {}", names.join(", ")),
            )
        })
}

fn non_negative(key: &str, v: Option<f64>) -> Result<f64, CardError> {
    match v {
        None => Ok(0.0),
        Some(x) if x >= 0.0 && x.is_finite() => Ok(x),
        Some(x) => Err(CardError::invalid(
            key,
            format!("{x} is not allowed; allowed: a finite value ≥ 0"),
        )),
    }
}

impl TryFrom<RawCard> for LumiPlan {
    type Error = CardError;

    fn try_from(raw: RawCard) -> Result<Self, CardError> {
        let channel = choice(
            "process",
            raw.process.as_deref(),
            Channel::Bhabha,
            &[
                ("ee", Channel::Bhabha),
                ("gg", Channel::Diphoton),
                ("mumu", Channel::MuonPair),
            ],
        )?;
        let born_only = raw.born_only.unwrap_or(false);
        let vp = choice(
            "vp",
            raw.vp.as_deref(),
            VpChoice::Full,
            &[
                ("none", VpChoice::None),
                ("lep", VpChoice::Leptonic),
                ("full", VpChoice::Full),
            ],
        )?;
        let vp = if born_only { VpChoice::None } else { vp };
        let final_state = choice(
            "final_state",
            raw.final_state.as_deref(),
            FinalState::Calorimetric,
            &[
                ("calorimetric", FinalState::Calorimetric),
                ("bare", FinalState::BareTrack),
            ],
        )?;
        let default_scale = if channel == Channel::Bhabha {
            Scale::MomentumTransfer
        } else {
            Scale::S
        };
        let scale = choice(
            "scale",
            raw.scale.as_deref(),
            default_scale,
            &[("t", Scale::MomentumTransfer), ("s", Scale::S)],
        )?;
        if let Some(e) = raw.sqrt_s_gev {
            ParamError::check_sqrt_s("sqrt_s_gev", e).map_err(|e| CardError::param("", e))?;
        }
        let precision = raw.precision.unwrap_or(1e-4);
        ParamError::check_open("precision", precision, 1e-9, 0.1)
            .map_err(|e| CardError::param("", e))?;

        let a = &raw.acceptance;
        let need = |key: &str, v: Option<f64>| {
            v.ok_or_else(|| CardError::invalid(key, "required (the polar window of the selection)"))
        };
        let first = PolarRange::new(
            need("acceptance.theta_min_deg", a.theta_min_deg)?,
            need("acceptance.theta_max_deg", a.theta_max_deg)?,
        )
        .map_err(|e| CardError::param("acceptance", e))?;
        let second = PolarRange::new(
            a.second_theta_min_deg.unwrap_or(first.theta_min_deg()),
            a.second_theta_max_deg.unwrap_or(first.theta_max_deg()),
        )
        .map_err(|e| {
            CardError::param(
                "acceptance",
                ParamError {
                    name: if e.name == "theta_min_deg" {
                        "second_theta_min_deg"
                    } else {
                        "second_theta_max_deg"
                    },
                    ..e
                },
            )
        })?;
        let acceptance = Acceptance::new(
            first,
            second,
            a.acol_max_deg.unwrap_or(180.0),
            a.e_min_frac.unwrap_or(0.0),
            final_state,
        )
        .map_err(|e| CardError::param("acceptance", e))?;
        if !born_only && acceptance.e_min_frac() <= 0.0 {
            return Err(CardError::invalid(
                "acceptance.e_min_frac",
                "required > 0 with radiation on (without an energy cut σ_vis grows without bound as both beams radiate); allowed: 0 < e_min_frac < 1, or born_only",
            ));
        }
        if channel == Channel::Diphoton && !acceptance.is_symmetric() {
            return Err(CardError::invalid(
                "acceptance.second_theta_min_deg",
                "identical photons need the same window for both particles (process gg)",
            ));
        }
        let u = &raw.uncertainty;
        let uncertainty = Uncertainties {
            theta_edge_deg: non_negative("uncertainty.theta_edge_deg", u.theta_edge_deg)?,
            sqrt_s_gev: non_negative("uncertainty.sqrt_s_gev", u.sqrt_s_gev)?,
            efficiency_rel: non_negative("uncertainty.efficiency_rel", u.efficiency_rel)?,
        };
        // The budget moves every polar edge by ±δ (window width and offset): the moved
        // windows must be acceptances too.
        let d = uncertainty.theta_edge_deg;
        for (d_min, d_max) in [(d, -d), (-d, d), (d, d), (-d, -d)] {
            if let Err(e) = acceptance.with_edges_moved(d_min, d_max) {
                return Err(CardError::invalid(
                    "uncertainty.theta_edge_deg",
                    format!(
                        "{d}: an edge moved by it gives {} = {}, where the allowed is {}",
                        e.name,
                        shown(e.value),
                        e.allowed
                    ),
                ));
            }
        }
        Ok(LumiPlan {
            channel,
            sqrt_s_gev: raw.sqrt_s_gev,
            vp,
            acceptance,
            settings: Settings {
                radiation: !born_only,
                scale,
                precision,
                z_exchange: raw.z_exchange.unwrap_or(false),
            },
            uncertainty,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const CARD: &str = r#"
process = "ee"
sqrt_s_gev = 10.58
[acceptance]
theta_min_deg = 40.0
theta_max_deg = 140.0
acol_max_deg = 10.0
e_min_frac = 0.5
[uncertainty]
theta_edge_deg = 0.01
"#;

    #[test]
    fn parses_and_validates_a_card() {
        let plan = LumiPlan::try_from(RawCard::parse(CARD).unwrap()).unwrap();
        assert_eq!(plan.channel, Channel::Bhabha);
        assert_eq!(plan.vp, VpChoice::Full);
        assert_eq!(plan.settings.scale, Scale::MomentumTransfer);
        assert_eq!(plan.acceptance.e_min_frac(), 0.5);
        assert_eq!(plan.uncertainty.theta_edge_deg, 0.01);
    }

    #[test]
    fn errors_name_the_card_key() {
        let unknown = RawCard::parse("[acceptance]\ntheta_minimum = 3\n").unwrap_err();
        assert!(unknown.to_string().contains("theta_minimum"), "{unknown}");
        // The message of the plan made from CARD with `from` replaced by `to`.
        let refused = |from: &str, to: &str| {
            let raw = RawCard::parse(&CARD.replace(from, to)).unwrap();
            LumiPlan::try_from(raw).unwrap_err().to_string()
        };
        let e = refused("theta_max_deg = 140.0", "theta_max_deg = 30.0");
        assert!(e.starts_with("acceptance.theta_max_deg"), "{e}");
        let e = refused("process = \"ee\"", "process = \"tautau\"");
        assert!(e.starts_with("process"), "{e}");
        let e = refused("e_min_frac = 0.5", "");
        assert!(e.starts_with("acceptance.e_min_frac"), "{e}");
        // An acollinearity cut tighter than 1e-3° (σ_vis stalls at rounding level far below).
        let e = refused("acol_max_deg = 10.0", "acol_max_deg = 1e-300");
        assert!(
            e.starts_with("acceptance.acol_max_deg: 1e-300 is not allowed"),
            "{e}"
        );
        // Closer to the beam than 0.1° (σ_Bhabha ∝ 1/θ² there; 1e-9° had overflowed a
        // table's size), and an edge uncertainty that would move an edge there.
        let e = refused("theta_min_deg = 40.0", "theta_min_deg = 1e-9");
        assert!(e.starts_with("acceptance.theta_min_deg"), "{e}");
        let e = refused("theta_min_deg = 40.0", "theta_min_deg = 0.105");
        assert!(
            e.starts_with("uncertainty.theta_edge_deg") && e.contains("0.095"),
            "{e}"
        );
    }
}
