//! e⁺e⁻ → hadrons at Born level: σ = σ_pt(s)·R(s) with R from a pluggable model.

use super::{Angular, CrossSection, Feature};
use crate::ParamError;
use crate::constants::sigma_point_nb;

/// A model of the R ratio σ(e⁺e⁻ → hadrons)/σ_pt, bare (without vacuum polarisation).
pub trait RRatio: Sync + Send {
    /// R at s (GeV²); zero below the hadronic threshold.
    fn r(&self, s_gev2: f64) -> f64;

    /// The hadronic threshold in GeV² (default 4m_π±², PDG 2026 m_π± = 139.570 MeV).
    fn threshold_s_gev2(&self) -> f64 {
        4.0 * 0.139_570_39f64.powi(2)
    }

    /// Peaks and edges of R for integrators.
    fn features(&self) -> &[Feature] {
        &[]
    }

    /// A one-line description for output provenance.
    fn describe(&self) -> String;
}

/// A constant R above the two-pion threshold (a toy or a quick estimate).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ConstantR(pub f64);

/// The largest R taken, anywhere: R peaks near 10⁴ on the J/ψ (12π B_ee B_had/M² against
/// σ_μμ; from memory), so 10⁶ is above any hadronic cross-section and below any overflow.
pub const MAX_R: f64 = 1e6;

impl ConstantR {
    /// A constant R for the parameter `name` (flag or card key).
    ///
    /// # Errors
    /// Unless 0 < R ≤ [`MAX_R`].
    pub fn new(name: &'static str, r: f64) -> Result<Self, ParamError> {
        if r > 0.0 && r <= MAX_R {
            Ok(ConstantR(r))
        } else {
            Err(ParamError::new(name, r, format!("0 < {name} ≤ {MAX_R:e}")))
        }
    }
}

impl RRatio for ConstantR {
    fn r(&self, s_gev2: f64) -> f64 {
        if s_gev2 > self.threshold_s_gev2() {
            self.0
        } else {
            0.0
        }
    }
    fn describe(&self) -> String {
        format!("constant R = {}", self.0)
    }
}

/// e⁺e⁻ → hadrons through an R model.
pub struct Hadrons<R: RRatio> {
    model: R,
}

impl<R: RRatio> Hadrons<R> {
    pub fn new(model: R) -> Self {
        Hadrons { model }
    }

    pub fn model(&self) -> &R {
        &self.model
    }
}

impl<R: RRatio> CrossSection for Hadrons<R> {
    fn sigma_nb(&self, s_gev2: f64) -> f64 {
        // R = 0 is checked first: σ_pt ∝ 1/s overflows for a tiny s, and ∞·0 is NaN.
        let r = self.model.r(s_gev2);
        if r == 0.0 {
            0.0
        } else {
            sigma_point_nb(s_gev2) * r
        }
    }
    fn threshold_s_gev2(&self) -> f64 {
        self.model.threshold_s_gev2()
    }
    fn features(&self) -> &[Feature] {
        self.model.features()
    }
}

impl<R: RRatio> Angular for Hadrons<R> {
    /// The parton-level (3/8)(1 + cos²θ)σ of a spin-½ quark pair along the event axis:
    /// an inclusive hadronic final state has no single polar angle.
    fn dsigma_dcos_nb(&self, s_gev2: f64, c: f64) -> f64 {
        0.375 * (1.0 + c * c) * self.sigma_nb(s_gev2)
    }
}
