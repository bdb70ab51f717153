//! A luminosity monitor ready to predict: a validated [`LumiPlan`] together with the VP
//! models it needs (nominal and, for full VP, one +1σ variation per R-model region).
//!
//! `radnorm lumi` and a scan with luminosity-monitor counts both predict through this type,
//! so σ_vis and its budget ([`predict`]) are the same wherever they are used.

use super::card::LumiPlan;
use super::luminosity::{Prediction, predict};
use super::visible::{Visible, VisibleError};
use crate::rmodel::Region;
use crate::vp::{Polarisation, Vp, VpChoice};
use rayon::prelude::*;
use std::sync::Arc;

/// The VP models of a monitor: the nominal Π (None: no VP) and the varied ones, each named
/// by its R-model region key (`pipi`, …), which [`predict`] turns into the source `vp_<key>`.
#[derive(Clone)]
pub struct VpModels {
    pub nominal: Option<Arc<dyn Polarisation>>,
    pub variations: Vec<(String, Arc<dyn Polarisation>)>,
}

impl VpModels {
    /// The standard models of a VP choice: for `full`, the default R model with each region
    /// of [`Region::MODEL`] moved by +1σ (each a new table, ≈ 25 ms; built in parallel).
    pub fn standard(choice: VpChoice) -> Self {
        let nominal: Option<Arc<dyn Polarisation>> = match choice {
            VpChoice::None => None,
            VpChoice::Leptonic => Some(Arc::new(Vp::leptonic())),
            VpChoice::Full => Some(Arc::new(Vp::full())),
        };
        let variations = if choice == VpChoice::Full {
            Region::MODEL
                .par_iter()
                .map(|&r| {
                    let vp: Arc<dyn Polarisation> = Arc::new(Vp::full_varied(r, 1.0));
                    (r.key().to_string(), vp)
                })
                .collect()
        } else {
            Vec::new()
        };
        VpModels {
            nominal,
            variations,
        }
    }
}

/// A luminosity monitor: channel, acceptance, physics settings, uncertainty inputs and VP.
#[derive(Clone)]
pub struct Monitor {
    plan: LumiPlan,
    vp: VpModels,
}

impl Monitor {
    /// The monitor of a validated plan with the standard VP models of its choice.
    ///
    /// # Errors
    /// As [`Visible::new`] (a plan from [`LumiPlan::try_from`] has passed these checks).
    pub fn new(plan: LumiPlan) -> Result<Self, VisibleError> {
        let vp = VpModels::standard(plan.vp);
        Self::with_vp(plan, vp)
    }

    /// The monitor with VP models built elsewhere (to share tables already built); they must
    /// be the models of `plan.vp`.
    ///
    /// # Errors
    /// As [`Visible::new`].
    pub fn with_vp(plan: LumiPlan, vp: VpModels) -> Result<Self, VisibleError> {
        let monitor = Monitor { plan, vp };
        monitor.visible()?;
        Ok(monitor)
    }

    pub fn plan(&self) -> &LumiPlan {
        &self.plan
    }

    /// The nominal VP model (None: no VP).
    pub fn vp(&self) -> Option<&dyn Polarisation> {
        self.vp.nominal.as_deref()
    }

    /// The visible cross-section calculator of the nominal settings.
    ///
    /// # Errors
    /// As [`Visible::new`].
    pub fn visible(&self) -> Result<Visible<'_>, VisibleError> {
        Visible::new(
            self.plan.channel,
            self.plan.acceptance,
            self.vp(),
            self.plan.settings,
        )
    }

    /// σ_vis at √s (GeV) with its budget of σ shifts (see [`predict`]).
    ///
    /// # Errors
    /// As [`predict`].
    pub fn predict(&self, sqrt_s_gev: f64) -> Result<Prediction, VisibleError> {
        let variations: Vec<(&str, &dyn Polarisation)> = self
            .vp
            .variations
            .iter()
            .map(|(k, v)| (k.as_str(), v.as_ref()))
            .collect();
        predict(
            &self.visible()?,
            self.vp(),
            &variations,
            &self.plan.uncertainty,
            sqrt_s_gev,
        )
    }

    /// A one-line description for provenance: channel, acceptance, radiation, VP.
    pub fn describe(&self) -> String {
        let p = &self.plan;
        let a = &p.acceptance;
        let (f, s) = (a.first(), a.second());
        let radiation = if p.settings.radiation {
            format!(
                "structure functions at scale {}, precision {:e}",
                p.settings.scale.key(),
                p.settings.precision
            )
        } else {
            "none (Born level)".into()
        };
        format!(
            "{} in first {}-{} deg, second {}-{} deg, acollinearity <= {} deg, E >= {} E_beam, \
             {} final state; radiation: {radiation}; vp: {}{}",
            p.channel.key(),
            f.theta_min_deg(),
            f.theta_max_deg(),
            s.theta_min_deg(),
            s.theta_max_deg(),
            a.acol_max_deg(),
            a.e_min_frac(),
            match a.final_state() {
                super::FinalState::Calorimetric => "calorimetric",
                super::FinalState::BareTrack => "bare-track",
            },
            p.vp.key(),
            if p.settings.z_exchange {
                "; Z exchange on"
            } else {
                ""
            }
        )
    }
}
