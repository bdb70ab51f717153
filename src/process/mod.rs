//! Born cross-sections of e⁺e⁻ annihilation and scattering processes.
//!
//! Every process is a type implementing [`CrossSection`] (σ in nb at s in GeV²) and
//! [`Angular`] (dσ/dcosθ of the first final particle). Each carries the polar-angle
//! acceptance it is integrated over as a [`CosRange`].
//!
//! Conventions: θ is the angle of the first final particle (the negative lepton, or
//! either photon) to the incoming electron; the electron mass is neglected in the initial
//! state; α = α(0) in every Born term (running α enters through the VP layer).

mod bhabha;
mod cos_range;
mod diphoton;
mod fermion_pair;
mod hadrons;
mod z_exchange;

pub use bhabha::Bhabha;
pub use cos_range::{CosRange, MIN_POLAR_DEG, check_polar_deg};
pub use diphoton::Diphoton;
pub use fermion_pair::FermionPair;
pub use hadrons::{ConstantR, Hadrons, MAX_R, RRatio};
pub use z_exchange::{WidthScheme, ZExchange};

/// Test aid: σ over bins 10⁻⁴ wide across the angle (`closed(lo, hi)`) against adaptive
/// Gauss–Kronrod at 1e-15 of a published `differential(c)`. Tolerance 32 ulp: a few
/// roundings on either side (seen: ≤ 3e-15); a difference of two antiderivative values lost
/// 2e-13…4e-12 on these bins (tests/born_reference.rs checks the same bins against mpmath).
#[cfg(test)]
pub(crate) fn assert_narrow_bins_keep_their_digits(
    closed: impl Fn(f64, f64) -> f64,
    differential: impl Fn(f64) -> f64,
) {
    use crate::numeric::{Tolerance, integrate};
    for lo in [-0.9, -0.5, 0.0, 0.3, 0.9, 0.999] {
        let hi = lo + 1e-4;
        let q = integrate(&differential, lo, hi, &[], Tolerance::relative(1e-15));
        let cf = closed(lo, hi);
        assert!((cf / q.value - 1.0).abs() < 32.0 * f64::EPSILON, "lo={lo}");
    }
}

/// A structure in σ(s) that integrators over s must split at.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Feature {
    /// A resonance peak at s = M² with width parameter MΓ (both GeV²).
    Peak { s_gev2: f64, m_gamma_gev2: f64 },
    /// A kink or step at s (a threshold or cusp), GeV².
    Edge { s_gev2: f64 },
}

/// A cross-section as a function of s: the one trait every link of the chain implements.
pub trait CrossSection: Sync {
    /// σ in nb at s in GeV²; zero below threshold, never NaN for finite s > 0.
    fn sigma_nb(&self, s_gev2: f64) -> f64;

    /// `out[i] = sigma_nb(s_gev2[i])` for a batch of points (the ISR rule nodes of one
    /// panel), bit for bit. Links whose formula vectorises override it; a wrapper forwards it.
    fn sigma_nb_many(&self, s_gev2: &[f64], out: &mut [f64]) {
        for (o, &s) in out.iter_mut().zip(s_gev2) {
            *o = self.sigma_nb(s);
        }
    }

    /// The s below which σ vanishes, in GeV².
    fn threshold_s_gev2(&self) -> f64 {
        0.0
    }

    /// Peaks and edges that integrals over s must split at (none by default).
    fn features(&self) -> &[Feature] {
        &[]
    }
}

impl<T: CrossSection + ?Sized> CrossSection for &T {
    fn sigma_nb(&self, s_gev2: f64) -> f64 {
        (**self).sigma_nb(s_gev2)
    }
    fn sigma_nb_many(&self, s_gev2: &[f64], out: &mut [f64]) {
        (**self).sigma_nb_many(s_gev2, out)
    }
    fn threshold_s_gev2(&self) -> f64 {
        (**self).threshold_s_gev2()
    }
    fn features(&self) -> &[Feature] {
        (**self).features()
    }
}

impl<T: CrossSection + ?Sized + Send> CrossSection for Box<T> {
    fn sigma_nb(&self, s_gev2: f64) -> f64 {
        (**self).sigma_nb(s_gev2)
    }
    fn sigma_nb_many(&self, s_gev2: &[f64], out: &mut [f64]) {
        (**self).sigma_nb_many(s_gev2, out)
    }
    fn threshold_s_gev2(&self) -> f64 {
        (**self).threshold_s_gev2()
    }
    fn features(&self) -> &[Feature] {
        (**self).features()
    }
}

/// The angular distribution of the first final particle.
pub trait Angular: CrossSection {
    /// dσ/dcosθ in nb at s (GeV²) and cosθ ∈ [−1, 1], ignoring the process' [`CosRange`].
    fn dsigma_dcos_nb(&self, s_gev2: f64, cos_theta: f64) -> f64;
}
