//! Running α and the VP choice the later layers (ISR, luminosity, scans) take.
//!
//! α(q²) = α/(1 − Π(q²)); the s-channel factor is the complex 1/(1 − Π(s + i0)), the
//! t-channel one the real 1/(1 − Π(t)) (the [`Polarisation`] defaults).

use super::Polarisation;
use super::hadronic::HadronicVp;
use super::leptonic::{LEPTON_MASSES_GEV, pi_leptonic};
use crate::constants::ALPHA;
use crate::process::Feature;
use crate::rmodel::{RModel, Region};
use num_complex::Complex64;
use std::sync::{Arc, OnceLock};

/// Which vacuum polarisation to include.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum VpChoice {
    /// Π = 0 (bare).
    None,
    /// Leptons only (e, μ, τ; one loop exact plus two and three loops).
    Leptonic,
    /// Leptons and hadrons (the default R model, or a given one).
    Full,
}

impl VpChoice {
    /// The key used on the command line and in outputs.
    pub fn key(self) -> &'static str {
        match self {
            VpChoice::None => "none",
            VpChoice::Leptonic => "leptonic",
            VpChoice::Full => "full",
        }
    }
}

/// The tabulated hadronic Π of the default R model, built once per process and shared.
///
/// The table is built outside the lock: building uses rayon, and a rayon worker blocked
/// on a lock whose holder waits for rayon work deadlocks (seen with the region variations
/// built in parallel). Two threads may race to build it; the first result is kept.
pub fn standard_hadronic() -> Arc<HadronicVp> {
    static STANDARD: OnceLock<Arc<HadronicVp>> = OnceLock::new();
    if let Some(table) = STANDARD.get() {
        return table.clone();
    }
    let built = Arc::new(HadronicVp::new(RModel::standard()));
    STANDARD.get_or_init(|| built).clone()
}

/// A vacuum-polarisation model: none, leptonic, or leptonic + hadronic.
///
/// Cheap to clone (the hadronic table is shared through an [`Arc`]).
#[derive(Debug, Clone)]
pub struct Vp {
    choice: VpChoice,
    hadronic: Option<Arc<HadronicVp>>,
    features: Vec<Feature>,
}

impl Vp {
    /// No vacuum polarisation.
    pub fn none() -> Self {
        Vp {
            choice: VpChoice::None,
            hadronic: None,
            features: Vec::new(),
        }
    }

    /// Leptons only.
    pub fn leptonic() -> Self {
        Vp {
            choice: VpChoice::Leptonic,
            hadronic: None,
            features: lepton_edges(),
        }
    }

    /// Leptons and the default hadronic model (tabulated once per process, then shared).
    pub fn full() -> Self {
        Self::with_hadronic(standard_hadronic())
    }

    /// Leptons and a given hadronic Π (a user R table, a varied model).
    pub fn with_hadronic(hadronic: Arc<HadronicVp>) -> Self {
        let mut features = lepton_edges();
        features.extend_from_slice(hadronic.features());
        Vp {
            choice: VpChoice::Full,
            hadronic: Some(hadronic),
            features,
        }
    }

    /// The choice by name.
    pub fn from_choice(choice: VpChoice) -> Self {
        match choice {
            VpChoice::None => Self::none(),
            VpChoice::Leptonic => Self::leptonic(),
            VpChoice::Full => Self::full(),
        }
    }

    /// The default model with one R region moved by `n_sigma` (for uncertainty budgets);
    /// builds a new table (≈ 25 ms).
    pub fn full_varied(region: Region, n_sigma: f64) -> Self {
        let model = standard_hadronic().model().varied(region, n_sigma);
        Self::with_hadronic(Arc::new(HadronicVp::new(model)))
    }

    pub fn choice(&self) -> VpChoice {
        self.choice
    }

    /// The hadronic part, when the choice is [`VpChoice::Full`].
    pub fn hadronic(&self) -> Option<&HadronicVp> {
        self.hadronic.as_deref()
    }

    /// The leptonic Π(q² + i0) (zero for [`VpChoice::None`]).
    pub fn pi_leptonic(&self, q2_gev2: f64) -> Complex64 {
        match self.choice {
            VpChoice::None => Complex64::new(0.0, 0.0),
            _ => pi_leptonic(q2_gev2),
        }
    }

    /// The hadronic Π(q² + i0) (zero unless [`VpChoice::Full`]).
    pub fn pi_hadronic(&self, q2_gev2: f64) -> Complex64 {
        self.hadronic
            .as_ref()
            .map_or(Complex64::new(0.0, 0.0), |h| h.pi(q2_gev2))
    }

    /// The complex running coupling α/(1 − Π(q² + i0)).
    pub fn alpha(&self, q2_gev2: f64) -> Complex64 {
        ALPHA / (1.0 - self.pi(q2_gev2))
    }

    /// The usual 1/α(q²) = α⁻¹(1 − Re Π(q²)).
    pub fn alpha_inv(&self, q2_gev2: f64) -> f64 {
        (1.0 - self.pi(q2_gev2).re) / ALPHA
    }
}

fn lepton_edges() -> Vec<Feature> {
    LEPTON_MASSES_GEV
        .iter()
        .map(|m| Feature::Edge {
            s_gev2: 4.0 * m * m,
        })
        .collect()
}

impl Polarisation for Vp {
    fn pi(&self, q2_gev2: f64) -> Complex64 {
        self.pi_leptonic(q2_gev2) + self.pi_hadronic(q2_gev2)
    }
    fn features(&self) -> &[Feature] {
        &self.features
    }
    fn describe(&self) -> String {
        match (&self.choice, &self.hadronic) {
            (VpChoice::Full, Some(h)) => {
                use crate::process::RRatio;
                format!(
                    "vacuum polarisation: leptonic (one loop exact + Steinhauser 1998 two/three loops) + hadronic dispersion over {}",
                    h.model().describe()
                )
            }
            (VpChoice::Leptonic, _) => {
                "vacuum polarisation: leptonic only (one loop exact + Steinhauser 1998 two/three loops)".into()
            }
            _ => "no vacuum polarisation".into(),
        }
    }
}
