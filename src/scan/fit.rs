//! The forward fit of a narrow resonance: where a resonance is narrower than the
//! beam-energy spread, pointwise unfolding is ill-posed (the observed line shape holds no
//! information on structure finer than the spread), so instead its parameters are fitted
//! to the observed cross-sections through the full forward chain.
//!
//! # The model
//!
//! The dressed line shape is a smooth continuum plus one resonance,
//!
//! σ_d(s) = φ₀(s)·(a + b(√s − E₀)) + σ_R(s),
//!
//! σ_R(s) = 12π Γ_ee B Γ / ((s − M²)² + M²Γ²) · (GeV⁻² → nb),
//!
//! where φ₀ is the card's dressed continuum template (the process' Born cross-section
//! times the VP factor of the card's `[vp]` model), a the continuum scale, b an optional
//! slope (per GeV) about the pivot E₀ (the card resonance's `mass_gev`), M the mass,
//! Γ_ee·B the electronic width times the branching fraction into the measured final
//! state (keV) and Γ the total width, **held fixed** at the card's `width_gev`: when the
//! spread is much wider than Γ the observed shape depends on Γ only through the area,
//! which is Γ_ee·B, so a scan cannot determine Γ. At the peak σ_R(M²) = (12π/M²) B_ee B
//! (the relativistic Breit–Wigner of a J = 1 resonance formed in e⁺e⁻, spins averaged).
//!
//! Conventions: σ_R is a *dressed* cross-section, i.e. Γ_ee is the electronic width with
//! vacuum polarisation included (the width the peak area measures); the VP factor is not
//! applied to σ_R a second time. The lowest-order ("bare") width would be
//! Γ_ee·|1 − Π(M²)|², Π without the resonance's own contribution; it is not computed here. There is no resonance–continuum
//! interference term (right for an inclusive hadronic final state away from the
//! continuum's own structure; not for μμ, where it is visible). With `vp.model = "full"`
//! the continuum template carries the R model's hadronic Π, which includes the narrow
//! charmonium and bottomonium states; when fitting one of those, prefer `leptonic`.
//!
//! The observed cross-section at point i is the chain [`ForwardChain::observed_nb`]
//! (ISR convolution with the card's radiator and cuts, then the Gaussian spread of that
//! point) applied to σ_d. The narrow-width integral of the Breit–Wigner,
//! ∫σ_R dE = 6π² Γ_ee B / M², is kept by the spread (a normalised convolution), which the
//! tests check.
//!
//! # The fit
//!
//! χ² = Σᵢ (σ_obs,i − f_i(p))²/δᵢ² with δᵢ the statistical uncertainty of σ_obs,i
//! (signal counts, and the luminosity-monitor counts when the luminosity comes from
//! them), minimised by Levenberg–Marquardt with Marquardt's diagonal scaling: the step
//! solves (A + λ diag A) δp = Jᵀ W r with A = Jᵀ W J, W = diag(1/δᵢ²), r = σ_obs − f, and
//! is taken when it lowers χ² at fixed W (else λ grows tenfold; after a taken step it
//! shrinks tenfold).
//!
//! The weights come in two phases. First δᵢ² is the observed-count variance N/(εL)²
//! (Neyman's χ²), robust from a poor start. Its weights are correlated with the data
//! (a downward fluctuation gets more weight), which biases a parameter by about
//! √(points/N) standard deviations — visible for a continuum scale fitted over many
//! points of modest counts. So from that minimum the fit goes on with the variance the
//! model predicts, δᵢ² = (fᵢ + B/(εL))/(εL) ⊕ (fᵢ δL/L)², refreshed every iteration:
//! with only counting noise its fixed point is the Poisson maximum-likelihood estimate
//! (Fisher scoring), free of that bias. The χ² reported is the one with those model
//! variances (Pearson's form) and the per-point pulls use them too. Points given without
//! their counts ([`Noise::Fixed`]) keep their fixed uncertainty throughout.
//!
//! The Jacobian J is taken by central differences through the whole chain,
//! ∂f/∂p_k ≈ (f(p + h_k) − f(p − h_k))/(2h_k), with steps
//! - mass: h = 10⁻³·w, w = max(Γ, smallest non-zero spread of the points) — the scale on
//!   which the observed shape varies; the truncation error is O((h/w)²) ≈ 10⁻⁶ relative,
//!   and the integration noise (≈10⁻⁸ relative) over h stays near 10⁻⁵ relative;
//! - Γ_ee·B, continuum scale: h = 10⁻³·max(|p_k|, 10⁻⁶ keV resp. 10⁻³); the model is linear
//!   in them, so only rounding and integration noise enter;
//! - slope: h = 10⁻³·max(|b|, 1/Δ), Δ the largest |√sᵢ − E₀|.
//!
//! Stopping: the fit has **converged** when the estimated distance to the minimum
//! EDM = gᵀ A⁻¹ g (g = Jᵀ W r, the χ² decrease a Gauss–Newton step predicts) falls below
//! [`EDM_TOLERANCE`]; it fails loudly when A is **singular** (a parameter without effect
//! on the points: no resonance seen, or the mass far from every point), when no step with
//! λ up to [`LAMBDA_MAX`] lowers χ² (**stalled**) while EDM is above [`EDM_NOISE_FLOOR`]
//! (below it that is accepted as convergence at the χ² noise floor of the chain's
//! integrals), or after `max_iterations` accepted steps (**max iterations**). The covariance of the parameters is A⁻¹ at the minimum
//! (not scaled by χ²/ndf), inverted after scaling A to a unit diagonal.
//!
//! # References
//! - Breit–Wigner cross-section for e⁺e⁻ → R → f: Particle Data Group, Review of Particle
//!   Physics, review "Cross-section formulae for specific processes", the Breit–Wigner
//!   formula (σ_BW = (2J+1)/((2S₁+1)(2S₂+1)) · 4π/k² · B_in B_out · (Γ²/4)/((E − E₀)² + Γ²/4),
//!   here in its relativistic form in s with k = √s/2).
//! - K. Levenberg, Quart. Appl. Math. 2 (1944) 164; D. W. Marquardt, J. SIAM 11 (1963) 431.

use super::ScanError;
use super::correct::ScanPlan;
use super::data::ScanPoint;
use super::forward::ForwardChain;
use super::linalg::Matrix;
use crate::constants::GEV2_TO_NB;
use crate::process::{CrossSection, Feature};
use rayon::prelude::*;
use std::f64::consts::PI;

/// Convergence: the χ² decrease a Gauss–Newton step still predicts (the parameters are
/// then within ≈ √EDM = 10⁻³ standard deviations of the minimum). Well above the χ² noise
/// of the chain's integrals (≈10⁻⁸ relative per point).
pub const EDM_TOLERANCE: f64 = 1e-6;
/// Where no step lowers χ² any more (the χ² of high-count points carries the chain's
/// integration noise, ≈10⁻⁸ relative per point times (σ/δ)², which can exceed
/// [`EDM_TOLERANCE`]), an EDM below this (parameters within ≈0.03 standard deviations of
/// the minimum) is accepted as converged ([`FitStop::NoiseFloor`]); above it the fit fails.
pub const EDM_NOISE_FLOOR: f64 = 1e-3;
/// The damping at which a step that lowers χ² is given up on (the step is then ≈10⁻¹⁰
/// of a Gauss–Newton step).
pub const LAMBDA_MAX: f64 = 1e10;
/// The initial damping (Marquardt's suggestion, small: start close to Gauss–Newton).
const LAMBDA_START: f64 = 1e-3;
/// Relative step of the central differences (see the module doc).
const STEP_REL: f64 = 1e-3;
/// The default number of accepted steps.
pub const DEFAULT_MAX_ITERATIONS: usize = 100;

/// The continuum of the fit: a scale of the card's template, optionally with a slope.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ContinuumForm {
    /// φ₀(s)·a.
    Scale,
    /// φ₀(s)·(a + b(√s − E₀)).
    ScaleSlope,
}

impl ContinuumForm {
    /// The card's name of the form (`fit.continuum`).
    pub fn key(self) -> &'static str {
        match self {
            ContinuumForm::Scale => "scale",
            ContinuumForm::ScaleSlope => "scale_slope",
        }
    }

    /// The form named `key`, if any.
    pub fn from_key(key: &str) -> Option<Self> {
        [ContinuumForm::Scale, ContinuumForm::ScaleSlope]
            .into_iter()
            .find(|f| f.key() == key)
    }
}

/// A fitted parameter, in the order of the parameter vector.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Parameter {
    /// M, GeV.
    Mass,
    /// Γ_ee·B, keV.
    GeeB,
    /// a, dimensionless.
    ContinuumScale,
    /// b, GeV⁻¹.
    ContinuumSlope,
}

impl Parameter {
    /// The output key of the value (units last).
    pub fn key(self) -> &'static str {
        match self {
            Parameter::Mass => "mass_gev",
            Parameter::GeeB => "gee_b_kev",
            Parameter::ContinuumScale => "continuum_scale",
            Parameter::ContinuumSlope => "continuum_slope_per_gev",
        }
    }

    /// The output key of the uncertainty (`_unc` before the unit).
    pub fn unc_key(self) -> &'static str {
        match self {
            Parameter::Mass => "mass_unc_gev",
            Parameter::GeeB => "gee_b_unc_kev",
            Parameter::ContinuumScale => "continuum_scale_unc",
            Parameter::ContinuumSlope => "continuum_slope_unc_per_gev",
        }
    }
}

/// The validated `[fit]` section of a scan card.
#[derive(Debug, Clone, PartialEq)]
pub struct FitPlan {
    /// The `[[resonance]]` fitted (its name).
    pub resonance: String,
    /// Total width Γ, GeV: held fixed (the card resonance's `width_gev`).
    pub width_gev: f64,
    /// The pivot E₀ of the continuum slope, GeV (the card resonance's `mass_gev`).
    pub pivot_sqrt_s_gev: f64,
    /// Starting mass, GeV.
    pub mass_start_gev: f64,
    /// Starting Γ_ee·B, keV; `None`: the linear least-squares value at the starting mass.
    pub gee_b_start_kev: Option<f64>,
    pub continuum: ContinuumForm,
    /// Most accepted Levenberg–Marquardt steps.
    pub max_iterations: usize,
}

impl FitPlan {
    /// The fitted parameters, in order.
    pub fn parameters(&self) -> Vec<Parameter> {
        let mut p = vec![Parameter::Mass, Parameter::GeeB, Parameter::ContinuumScale];
        if self.continuum == ContinuumForm::ScaleSlope {
            p.push(Parameter::ContinuumSlope);
        }
        p
    }
}

/// How the statistical uncertainty of a point arises.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Noise {
    /// Counted events: σ_obs = (N − B)/(εL). The variance the fit uses follows the model
    /// σ (not the observed N): (σ + σ_bkg)/(εL) ⊕ (σ·δL/L)².
    Counts {
        /// ε·L, nb⁻¹ (expected signal events per nb).
        exposure_nb_inv: f64,
        /// The background in cross-section units, B/(εL), nb.
        sigma_bkg_nb: f64,
        /// Relative statistical uncertainty of L (monitor counts; 0 when L is given).
        luminosity_rel: f64,
    },
    /// A fixed Gaussian uncertainty, `sigma_obs_stat_nb` (points without their counts).
    Fixed,
}

/// One observed point the fit uses.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FitPoint {
    pub sqrt_s_gev: f64,
    /// Gaussian centre-of-mass energy spread, MeV (0: none).
    pub energy_spread_mev: f64,
    pub sigma_obs_nb: f64,
    /// Statistical uncertainty of `sigma_obs_nb` from the observed counts, nb (> 0): the
    /// reported uncertainty of the point, and the fit's until its first convergence.
    pub sigma_obs_stat_nb: f64,
    pub noise: Noise,
}

impl FitPoint {
    /// The variance of σ_obs if the true observed σ were `sigma_nb` (nb²); the observed
    /// one for [`Noise::Fixed`] or where the model variance is not positive.
    pub fn variance_at(&self, sigma_nb: f64) -> f64 {
        let observed = self.sigma_obs_stat_nb * self.sigma_obs_stat_nb;
        match self.noise {
            Noise::Fixed => observed,
            Noise::Counts {
                exposure_nb_inv,
                sigma_bkg_nb,
                luminosity_rel,
            } => {
                let v = (sigma_nb + sigma_bkg_nb) / exposure_nb_inv
                    + (sigma_nb * luminosity_rel).powi(2);
                if v > 0.0 && v.is_finite() {
                    v
                } else {
                    observed
                }
            }
        }
    }
}

/// The observed cross-sections of a measured scan with their statistical uncertainties:
/// σ = (N − N_bkg)/(εL), δ = √N/(εL) ⊕ σ·δL/L (the monitor's counting error when the
/// luminosity comes from Bhabha counts; zero when it is given). The luminosity's
/// systematic terms (scale, monitor theory) are not part of the fit's χ².
///
/// # Errors
/// A luminosity the plan cannot provide (Bhabha counts without a monitor).
pub fn observed_points(plan: &ScanPlan, data: &[ScanPoint]) -> Result<Vec<FitPoint>, ScanError> {
    let luminosity = plan.luminosity.evaluate(data)?;
    data.iter()
        .zip(&luminosity.values)
        .map(|(p, &(l, dl))| {
            let sigma = (p.n_events - p.n_bkg) / (p.efficiency * l);
            let stat = p.n_events.sqrt() / (p.efficiency * l);
            Ok(FitPoint {
                sqrt_s_gev: p.sqrt_s_gev,
                energy_spread_mev: plan.spread_at(p)?,
                sigma_obs_nb: sigma,
                sigma_obs_stat_nb: stat.hypot(sigma * dl / l),
                noise: Noise::Counts {
                    exposure_nb_inv: p.efficiency * l,
                    sigma_bkg_nb: p.n_bkg / (p.efficiency * l),
                    luminosity_rel: dl / l,
                },
            })
        })
        .collect()
}

/// The dressed resonance σ_R(s) of the module doc (nb), with its narrow-width area.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ResonanceLine {
    pub mass_gev: f64,
    pub width_gev: f64,
    pub gee_b_kev: f64,
}

impl ResonanceLine {
    /// σ_R at s (GeV²), nb.
    pub fn sigma_nb(&self, s_gev2: f64) -> f64 {
        let m = self.mass_gev;
        let mg = m * self.width_gev;
        12.0 * PI * self.gee_b_kev * 1e-6 * self.width_gev / ((s_gev2 - m * m).powi(2) + mg * mg)
            * GEV2_TO_NB
    }

    /// The narrow-width area ∫σ_R d√s = 6π² Γ_ee B / M², in nb·GeV.
    pub fn peak_area_nb_gev(&self) -> f64 {
        6.0 * PI * PI * self.gee_b_kev * 1e-6 / (self.mass_gev * self.mass_gev) * GEV2_TO_NB
    }
}

/// The dressed line shape of the fit at one parameter vector.
pub struct FitShape<'a> {
    continuum: &'a dyn CrossSection,
    resonance: ResonanceLine,
    scale: f64,
    slope_per_gev: f64,
    pivot_sqrt_s_gev: f64,
    features: Vec<Feature>,
}

impl<'a> FitShape<'a> {
    /// σ_d = φ₀·(scale + slope·(√s − pivot)) + σ_R.
    pub fn new(
        continuum: &'a dyn CrossSection,
        resonance: ResonanceLine,
        scale: f64,
        slope_per_gev: f64,
        pivot_sqrt_s_gev: f64,
    ) -> Self {
        let mut features = vec![Feature::Edge {
            s_gev2: continuum.threshold_s_gev2(),
        }];
        features.extend_from_slice(continuum.features());
        features.push(Feature::Peak {
            s_gev2: resonance.mass_gev * resonance.mass_gev,
            m_gamma_gev2: resonance.mass_gev * resonance.width_gev,
        });
        FitShape {
            continuum,
            resonance,
            scale,
            slope_per_gev,
            pivot_sqrt_s_gev,
            features,
        }
    }
}

impl CrossSection for FitShape<'_> {
    fn sigma_nb(&self, s_gev2: f64) -> f64 {
        if s_gev2 <= self.continuum.threshold_s_gev2() {
            return 0.0;
        }
        let factor = self.scale + self.slope_per_gev * (s_gev2.sqrt() - self.pivot_sqrt_s_gev);
        self.continuum.sigma_nb(s_gev2) * factor + self.resonance.sigma_nb(s_gev2)
    }
    fn threshold_s_gev2(&self) -> f64 {
        self.continuum.threshold_s_gev2()
    }
    fn features(&self) -> &[Feature] {
        &self.features
    }
}

/// Why the iteration stopped.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FitStop {
    /// EDM below [`EDM_TOLERANCE`].
    Converged,
    /// `max_iterations` accepted steps without converging.
    MaxIterations,
    /// A = JᵀWJ cannot be inverted: a parameter does not move any point.
    Singular,
    /// No step lowers χ² even at the largest damping, with EDM still above
    /// [`EDM_NOISE_FLOOR`].
    Stalled,
    /// No step lowers χ² any more but EDM is below [`EDM_NOISE_FLOOR`]: the minimum is
    /// found to within the χ² noise of the chain's integrals (accepted as converged).
    NoiseFloor,
}

impl std::fmt::Display for FitStop {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.key())
    }
}

impl FitStop {
    /// A short name for outputs.
    pub fn key(self) -> &'static str {
        match self {
            FitStop::Converged => "converged",
            FitStop::MaxIterations => "max_iterations",
            FitStop::Singular => "singular",
            FitStop::Stalled => "stalled",
            FitStop::NoiseFloor => "converged_at_noise_floor",
        }
    }
}

/// A converged forward fit.
#[derive(Debug, Clone)]
pub struct ForwardFit {
    pub plan: FitPlan,
    /// [`FitStop::Converged`] or [`FitStop::NoiseFloor`].
    pub stop: FitStop,
    pub parameters: Vec<Parameter>,
    /// Values in the order of `parameters`.
    pub values: Vec<f64>,
    /// A⁻¹ at the minimum, in the units of the parameters.
    pub covariance: Matrix,
    pub chi2: f64,
    pub ndf: usize,
    /// Accepted steps.
    pub iterations: usize,
    /// The estimated distance to the minimum at the end.
    pub edm: f64,
    pub points: Vec<FitPoint>,
    /// The fitted observed cross-section at each point, nb.
    pub sigma_obs_fit_nb: Vec<f64>,
}

impl ForwardFit {
    fn index(&self, p: Parameter) -> Option<usize> {
        self.parameters.iter().position(|q| *q == p)
    }

    /// The value of `p` (`None` when not fitted).
    pub fn value(&self, p: Parameter) -> Option<f64> {
        self.index(p).map(|i| self.values[i])
    }

    /// The standard uncertainty of `p` (√ of the covariance diagonal).
    pub fn uncertainty(&self, p: Parameter) -> Option<f64> {
        self.index(p).map(|i| self.covariance.get(i, i).sqrt())
    }

    /// The correlation matrix of the parameters.
    pub fn correlation(&self) -> Matrix {
        let k = self.parameters.len();
        let mut c = Matrix::zeros(k);
        for i in 0..k {
            for j in 0..k {
                let d = (self.covariance.get(i, i) * self.covariance.get(j, j)).sqrt();
                c.set(i, j, self.covariance.get(i, j) / d);
            }
        }
        c
    }

    /// The fitted resonance.
    pub fn resonance(&self) -> ResonanceLine {
        ResonanceLine {
            mass_gev: self.values[0],
            width_gev: self.plan.width_gev,
            gee_b_kev: self.values[1],
        }
    }

    /// The narrow-width peak area 6π²Γ_ee B/M² (nb·GeV) and its uncertainty, propagated
    /// with the covariance of M and Γ_ee·B.
    pub fn peak_area_nb_gev(&self) -> (f64, f64) {
        let r = self.resonance();
        let a = r.peak_area_nb_gev();
        // ∂A/∂M = −2A/M, ∂A/∂(Γ_ee B) = A/(Γ_ee B).
        let d = [-2.0 * a / r.mass_gev, a / r.gee_b_kev];
        let mut var = 0.0;
        for (i, di) in d.iter().enumerate() {
            for (j, dj) in d.iter().enumerate() {
                var += di * dj * self.covariance.get(i, j);
            }
        }
        (a, var.max(0.0).sqrt())
    }

    /// The statistical uncertainty the fitted curve predicts at each point, nb
    /// ([`FitPoint::variance_at`] the fitted σ).
    pub fn sigma_obs_fit_stat_nb(&self) -> Vec<f64> {
        self.points
            .iter()
            .zip(&self.sigma_obs_fit_nb)
            .map(|(p, f)| p.variance_at(*f).sqrt())
            .collect()
    }

    /// (σ_obs − σ_fit)/δ_fit at each point, δ_fit from [`Self::sigma_obs_fit_stat_nb`]; χ² is
    /// the sum of their squares.
    pub fn pulls(&self) -> Vec<f64> {
        self.points
            .iter()
            .zip(&self.sigma_obs_fit_nb)
            .zip(self.sigma_obs_fit_stat_nb())
            .map(|((p, f), d)| (p.sigma_obs_nb - f) / d)
            .collect()
    }
}

/// The model: chain, continuum template, plan, points.
struct Model<'a> {
    chain: &'a ForwardChain,
    continuum: &'a dyn CrossSection,
    plan: &'a FitPlan,
    points: &'a [FitPoint],
}

impl Model<'_> {
    fn shape(&self, p: &[f64]) -> FitShape<'_> {
        FitShape::new(
            self.continuum,
            ResonanceLine {
                mass_gev: p[0],
                width_gev: self.plan.width_gev,
                gee_b_kev: p[1],
            },
            p[2],
            p.get(3).copied().unwrap_or(0.0),
            self.plan.pivot_sqrt_s_gev,
        )
    }

    /// The observed σ at every point for each parameter vector, in parallel over both.
    fn evaluate(&self, params: &[Vec<f64>]) -> Vec<Vec<f64>> {
        let n = self.points.len();
        let flat: Vec<f64> = (0..params.len() * n)
            .into_par_iter()
            .map(|job| {
                let (k, i) = (job / n, job % n);
                let pt = &self.points[i];
                self.chain
                    .observed_nb(&self.shape(&params[k]), pt.sqrt_s_gev, pt.energy_spread_mev)
            })
            .collect();
        flat.chunks(n.max(1)).map(<[f64]>::to_vec).collect()
    }

    /// The variance of each point: from the observed counts, or from the model `f`.
    fn variance(&self, f: &[f64], from_model: bool) -> Vec<f64> {
        self.points
            .iter()
            .zip(f)
            .map(|(p, v)| {
                if from_model {
                    p.variance_at(*v)
                } else {
                    p.sigma_obs_stat_nb * p.sigma_obs_stat_nb
                }
            })
            .collect()
    }

    fn chi2(&self, f: &[f64], var: &[f64]) -> f64 {
        self.points
            .iter()
            .zip(f)
            .zip(var)
            .map(|((p, v), var)| (p.sigma_obs_nb - v).powi(2) / var)
            .sum()
    }

    /// The central-difference steps at `p` (module doc).
    fn steps(&self, p: &[f64]) -> Vec<f64> {
        let min_spread_gev = self
            .points
            .iter()
            .map(|q| q.energy_spread_mev * 1e-3)
            .filter(|w| *w > 0.0)
            .fold(f64::INFINITY, f64::min);
        let w = if min_spread_gev.is_finite() {
            self.plan.width_gev.max(min_spread_gev)
        } else {
            self.plan.width_gev
        };
        let span = self
            .points
            .iter()
            .map(|q| (q.sqrt_s_gev - self.plan.pivot_sqrt_s_gev).abs())
            .fold(0.0, f64::max)
            .max(1e-6);
        let mut h = vec![
            STEP_REL * w,
            STEP_REL * p[1].abs().max(1e-6),
            STEP_REL * p[2].abs().max(1e-3),
        ];
        if p.len() > 3 {
            h.push(STEP_REL * p[3].abs().max(1.0 / span));
        }
        h
    }

    /// The Jacobian at `p` (rows: points, columns: parameters).
    fn jacobian(&self, p: &[f64]) -> Vec<Vec<f64>> {
        let h = self.steps(p);
        let mut params = Vec::with_capacity(2 * p.len());
        for (k, hk) in h.iter().enumerate() {
            for sign in [1.0, -1.0] {
                let mut q = p.to_vec();
                q[k] += sign * hk;
                params.push(q);
            }
        }
        let values = self.evaluate(&params);
        (0..self.points.len())
            .map(|i| {
                (0..p.len())
                    .map(|k| (values[2 * k][i] - values[2 * k + 1][i]) / (2.0 * h[k]))
                    .collect()
            })
            .collect()
    }

    /// A = JᵀWJ and g = JᵀW r.
    fn normal(&self, f: &[f64], jac: &[Vec<f64>], var: &[f64]) -> (Matrix, Vec<f64>) {
        let k = jac.first().map_or(0, Vec::len);
        let mut a = Matrix::zeros(k);
        let mut g = vec![0.0; k];
        for (i, pt) in self.points.iter().enumerate() {
            let w = 1.0 / var[i];
            let r = pt.sigma_obs_nb - f[i];
            for a_ in 0..k {
                g[a_] += jac[i][a_] * w * r;
                for b in 0..k {
                    a.set(a_, b, a.get(a_, b) + jac[i][a_] * w * jac[i][b]);
                }
            }
        }
        (a, g)
    }
}

/// The inverse of a symmetric positive matrix, computed on its unit-diagonal scaling
/// D^(−1/2) A D^(−1/2) (so that parameters of very different sizes — a mass in GeV known
/// to 10⁻⁵, a scale near 1 — do not trip the pivot test); `None` when singular.
fn scaled_inverse(a: &Matrix) -> Option<Matrix> {
    let k = a.size();
    let d: Vec<f64> = (0..k).map(|i| a.get(i, i)).collect();
    if d.iter().any(|v| !(*v > 0.0 && v.is_finite())) {
        return None;
    }
    let mut s = Matrix::zeros(k);
    for i in 0..k {
        for j in 0..k {
            s.set(i, j, a.get(i, j) / (d[i] * d[j]).sqrt());
        }
    }
    let inv = s.inverse()?;
    let mut out = Matrix::zeros(k);
    for i in 0..k {
        for j in 0..k {
            out.set(i, j, inv.get(i, j) / (d[i] * d[j]).sqrt());
        }
    }
    Some(out)
}

fn dot(a: &[f64], b: &[f64]) -> f64 {
    a.iter().zip(b).map(|(x, y)| x * y).sum()
}

/// Fit the plan's resonance and continuum to `points` through `chain`.
///
/// `continuum` is the dressed continuum template φ₀ (e.g. [`ScanPlan::continuum`]).
///
/// # Errors
/// - [`ScanError::FitTooFewPoints`] with fewer points than parameters + 1;
/// - [`ScanError::Model`] for a point with a non-positive uncertainty or a chain that
///   gives a non-finite σ at the start;
/// - [`ScanError::FitFailed`] when the iteration stops for any reason but convergence.
pub fn fit_forward(
    chain: &ForwardChain,
    continuum: &dyn CrossSection,
    plan: &FitPlan,
    points: &[FitPoint],
) -> Result<ForwardFit, ScanError> {
    let parameters = plan.parameters();
    let k = parameters.len();
    if points.len() < k + 1 {
        return Err(ScanError::FitTooFewPoints {
            points: points.len(),
            parameters: k,
            continuum: plan.continuum.key(),
        });
    }
    if let Some(p) = points
        .iter()
        .find(|p| !(p.sigma_obs_stat_nb > 0.0 && p.sigma_obs_stat_nb.is_finite()))
    {
        return Err(ScanError::Model(format!(
            "forward fit: the point at sqrt_s_gev = {} has statistical uncertainty {} nb; \
             allowed: a finite value > 0",
            p.sqrt_s_gev, p.sigma_obs_stat_nb
        )));
    }
    let model = Model {
        chain,
        continuum,
        plan,
        points,
    };
    let mut p = vec![
        plan.mass_start_gev,
        plan.gee_b_start_kev.unwrap_or(0.0),
        1.0,
    ];
    if k > 3 {
        p.push(0.0);
    }
    if plan.gee_b_start_kev.is_none() {
        p = linear_start(&model, p)?;
    }

    let mut f = model.evaluate(std::slice::from_ref(&p)).remove(0);
    if let Some(i) = f.iter().position(|v| !v.is_finite()) {
        return Err(ScanError::Model(format!(
            "forward fit: the forward chain gives a non-finite σ at sqrt_s_gev = {} for the \
             starting values",
            points[i].sqrt_s_gev
        )));
    }
    // Phase 1 weighs the points by their observed-count variances (robust from a poor
    // start); phase 2, from its minimum, by the variances the model predicts, refreshed
    // every iteration (Fisher scoring of the Poisson likelihood when only counting noise
    // enters): weights that do not depend on the data avoid the O(√(points/N))-σ bias
    // toward downward fluctuations of observed-count weights.
    let mut jac = model.jacobian(&p);
    let counted = points
        .iter()
        .any(|p| matches!(p.noise, Noise::Counts { .. }));
    let mut from_model = false;
    let mut lambda = LAMBDA_START;
    let mut iterations = 0;
    let failed = |stop: FitStop, iterations: usize, chi2: f64, edm: f64| ScanError::FitFailed {
        stop,
        iterations,
        chi2,
        edm,
        tolerance: EDM_TOLERANCE,
    };
    loop {
        let var = model.variance(&f, from_model);
        let chi2 = model.chi2(&f, &var);
        let (a, g) = model.normal(&f, &jac, &var);
        let Some(cov) = scaled_inverse(&a) else {
            return Err(failed(FitStop::Singular, iterations, chi2, f64::NAN));
        };
        let edm = dot(&g, &cov.apply(&g));
        let mut stop = (edm < EDM_TOLERANCE).then_some(FitStop::Converged);
        if stop.is_none() {
            if iterations >= plan.max_iterations {
                return Err(failed(FitStop::MaxIterations, iterations, chi2, edm));
            }
            // Damped steps until one lowers χ².
            loop {
                let mut damped = a.clone();
                for i in 0..k {
                    damped.set(i, i, a.get(i, i) * (1.0 + lambda));
                }
                let Some(inv) = scaled_inverse(&damped) else {
                    return Err(failed(FitStop::Singular, iterations, chi2, edm));
                };
                let step = inv.apply(&g);
                let trial: Vec<f64> = p.iter().zip(&step).map(|(x, d)| x + d).collect();
                let f_trial = model.evaluate(std::slice::from_ref(&trial)).remove(0);
                let chi2_trial = model.chi2(&f_trial, &var);
                if chi2_trial.is_finite() && chi2_trial <= chi2 {
                    p = trial;
                    f = f_trial;
                    lambda = (lambda / 10.0).max(1e-12);
                    break;
                }
                lambda *= 10.0;
                if lambda > LAMBDA_MAX {
                    if edm >= EDM_NOISE_FLOOR {
                        return Err(failed(FitStop::Stalled, iterations, chi2, edm));
                    }
                    stop = Some(FitStop::NoiseFloor);
                    lambda = LAMBDA_START;
                    break;
                }
            }
        }
        match stop {
            Some(_) if counted && !from_model => {
                // Phase 1 done: go on with the model variances from here.
                from_model = true;
                continue;
            }
            Some(stop) => {
                // Gauss–Jordan leaves rounding-level asymmetry; the covariance is symmetric.
                let mut covariance = Matrix::zeros(k);
                for i in 0..k {
                    for j in 0..k {
                        covariance.set(i, j, 0.5 * (cov.get(i, j) + cov.get(j, i)));
                    }
                }
                return Ok(ForwardFit {
                    plan: plan.clone(),
                    stop,
                    parameters,
                    values: p,
                    covariance,
                    chi2,
                    ndf: points.len() - k,
                    iterations,
                    edm,
                    points: points.to_vec(),
                    sigma_obs_fit_nb: f,
                });
            }
            None => {
                iterations += 1;
                // The model at the new point is the accepted trial's.
                jac = model.jacobian(&p);
            }
        }
    }
}

/// Starting values with the mass held: the model is linear in Γ_ee·B and the continuum
/// parameters, so their weighted least-squares values follow from one evaluation of each
/// unit contribution through the chain.
fn linear_start(model: &Model<'_>, p: Vec<f64>) -> Result<Vec<f64>, ScanError> {
    let k = p.len();
    // Unit vectors in the linear parameters (index 1..k) at the starting mass.
    let basis: Vec<Vec<f64>> = (1..k)
        .map(|j| {
            let mut q = vec![0.0; k];
            q[0] = p[0];
            q[j] = 1.0;
            q
        })
        .collect();
    let cols = model.evaluate(&basis);
    let m = k - 1;
    let mut a = Matrix::zeros(m);
    let mut rhs = vec![0.0; m];
    for (i, pt) in model.points.iter().enumerate() {
        let w = 1.0 / (pt.sigma_obs_stat_nb * pt.sigma_obs_stat_nb);
        for x in 0..m {
            rhs[x] += cols[x][i] * w * pt.sigma_obs_nb;
            for y in 0..m {
                a.set(x, y, a.get(x, y) + cols[x][i] * w * cols[y][i]);
            }
        }
    }
    let inv = scaled_inverse(&a).ok_or_else(|| {
        ScanError::Model(format!(
            "forward fit: the resonance at the starting mass {} GeV cannot be told apart from \
             the continuum at the scan points; set fit.mass_gev closer to the peak",
            p[0]
        ))
    })?;
    let lin = inv.apply(&rhs);
    let mut out = vec![p[0]];
    out.extend(lin);
    Ok(out)
}

/// [`fit_forward`] on a measured scan with the card's chain and continuum.
///
/// # Errors
/// As [`observed_points`] and [`fit_forward`].
pub fn fit_scan(
    plan: &ScanPlan,
    fit: &FitPlan,
    data: &[ScanPoint],
) -> Result<ForwardFit, ScanError> {
    let points = observed_points(plan, data)?;
    fit_forward(&plan.chain, plan.continuum.as_ref(), fit, &points)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn peak_value_is_12_pi_over_m2_times_branching_ratios() {
        // σ_R(M²) = 12π/M² · (Γ_ee/Γ)·B: Γ_ee·B = 1 keV, Γ = 1 MeV → B_ee·B = 1e-3.
        let r = ResonanceLine {
            mass_gev: 3.0,
            width_gev: 1e-3,
            gee_b_kev: 1.0,
        };
        let want = 12.0 * PI / 9.0 * 1e-3 * GEV2_TO_NB;
        assert!((r.sigma_nb(9.0) / want - 1.0).abs() < 1e-14);
        // Half maximum at s = M² ± MΓ (the Breit–Wigner's definition of Γ).
        assert!((r.sigma_nb(9.0 + 3e-3) / want - 0.5).abs() < 1e-12);
    }

    #[test]
    fn scaled_inverse_handles_disparate_scales() {
        // diag(1e12, 1e-6) with a correlation 0.5 (a mass known to 1e-6 next to a scale
        // known to 1e3, say): the plain inverse's pivot test (1e-13 of the largest
        // element) calls it singular, the scaled inverse is exact.
        let mut a = Matrix::zeros(2);
        let (x, y): (f64, f64) = (1e12, 1e-6);
        let c = 0.5 * (x * y).sqrt();
        a.set(0, 0, x);
        a.set(1, 1, y);
        a.set(0, 1, c);
        a.set(1, 0, c);
        assert!(a.inverse().is_none());
        let inv = scaled_inverse(&a).unwrap();
        // 2×2 inverse: [[y, −c], [−c, x]]/(xy − c²).
        let det = x * y - c * c;
        assert!((inv.get(0, 0) / (y / det) - 1.0).abs() < 1e-12);
        assert!((inv.get(1, 1) / (x / det) - 1.0).abs() < 1e-12);
        assert!((inv.get(0, 1) / (-c / det) - 1.0).abs() < 1e-12);
        assert!(scaled_inverse(&Matrix::zeros(2)).is_none());
    }
}
