//! Vacuum polarisation: the photon self-energy Π(q²) and running α.
//!
//! Convention (one for the whole code base): α(q²) = α/(1 − Π(q²)), Π(0) = 0,
//! Δα(q²) = Re Π(q²) > 0 at large |q²|. For timelike q² = s above a threshold Π is
//! complex, evaluated at s + i0, with Im Π(s + i0) = −(α/3) R_total(s).
//!
//! - [`leptonic`]: Π_ℓ for e, μ, τ (one loop exact, two and three loops);
//! - [`hadronic`]: Π_had by the dispersion relation over an [`crate::rmodel::RModel`],
//!   tabulated once per model, with its uncertainty budget per region;
//! - [`Vp`]: the choice none / leptonic / full that later layers take
//!   ([`standard_hadronic`] shares the default table across the process);
//! - [`Dressed`]: the link σ·|1 − Π(s)|⁻² of the chain.
//!
//! [`Vp`] tabulates its s-channel factor 1/(1 − Π(s + i0)) at first use (`factor`, ≈ 4 ms,
//! agreeing with the direct evaluation to 10⁻⁹ relative); [`Polarisation::pi`] stays exact.

mod dressed;
mod factor;
pub mod hadronic;
pub mod leptonic;
mod running;

pub use dressed::Dressed;
pub use running::{Vp, VpChoice, standard_hadronic};

use crate::process::Feature;
use num_complex::Complex64;

/// The pole of 1/(1 − Π) near a Breit–Wigner inside Π with parameters M², MΓ: the zero of
/// g(s) = (1 − Π(s))(s − M² + iMΓ), which is smooth on the scale of M² (the resonance's own
/// pole cancels), by two secant steps on the real axis continued linearly (g is linear there
/// to ~10⁻⁶ of a width). `pi` is Π(s + i0) on the real axis.
pub(crate) fn resummed_pole(pi: impl Fn(f64) -> Complex64, m2: f64, mg: f64) -> Complex64 {
    let g = |s: f64| (1.0 - pi(s)) * Complex64::new(s - m2, mg);
    let secant = |s1: f64, s2: f64| {
        let (g1, g2) = (g(s1), g(s2));
        s1 - g1 * (s2 - s1) / (g2 - g1)
    };
    let first = secant(m2, m2 + 16.0 * mg);
    secant(first.re, first.re + 4.0 * mg)
}

/// A model of the photon vacuum polarisation Π(q²).
pub trait Polarisation: Sync + Send {
    /// Π(q² + i0): real for q² ≤ 0 (spacelike), complex above timelike thresholds.
    fn pi(&self, q2_gev2: f64) -> Complex64;

    /// Cusps (thresholds) and narrow peaks in s that integrals over s must split at. For a
    /// model whose users dress with 1/(1 − Π), the peaks of that factor: [`Vp`] marks a
    /// narrow resonance at the pole of 1/(1 − Π), not at M² ([`Vp::dressed_poles`]).
    fn features(&self) -> &[Feature] {
        &[]
    }

    /// A one-line description for output provenance.
    fn describe(&self) -> String;

    /// The s-channel photon propagator factor 1/(1 − Π(s + i0)).
    fn s_channel_factor(&self, s_gev2: f64) -> Complex64 {
        1.0 / (1.0 - self.pi(s_gev2))
    }

    /// The t-channel (spacelike, t < 0) factor 1/(1 − Π(t)), real.
    fn t_channel_factor(&self, t_gev2: f64) -> f64 {
        1.0 / (1.0 - self.pi(t_gev2).re)
    }

    /// Multiply each `out[i]` by |1/(1 − Π(sᵢ))|² (dressing a batch of bare cross-sections;
    /// a model may look its tables up once per batch instead of once per point).
    fn times_s_channel_norm_sqr(&self, s_gev2: &[f64], out: &mut [f64]) {
        for (o, &s) in out.iter_mut().zip(s_gev2) {
            *o *= self.s_channel_factor(s).norm_sqr();
        }
    }
}

/// A borrowed or shared model is the model itself (chain links hold `&Vp` or an
/// `Arc<dyn Polarisation>` without cloning tables); every method forwards, so a tabulated
/// factor stays tabulated.
macro_rules! forward_polarisation {
    ($($wrapper:ty),*) => {$(
        impl<T: Polarisation + ?Sized> Polarisation for $wrapper {
            fn pi(&self, q2_gev2: f64) -> Complex64 {
                (**self).pi(q2_gev2)
            }
            fn features(&self) -> &[Feature] {
                (**self).features()
            }
            fn describe(&self) -> String {
                (**self).describe()
            }
            fn s_channel_factor(&self, s_gev2: f64) -> Complex64 {
                (**self).s_channel_factor(s_gev2)
            }
            fn t_channel_factor(&self, t_gev2: f64) -> f64 {
                (**self).t_channel_factor(t_gev2)
            }
            fn times_s_channel_norm_sqr(&self, s_gev2: &[f64], out: &mut [f64]) {
                (**self).times_s_channel_norm_sqr(s_gev2, out)
            }
        }
    )*};
}
forward_polarisation!(&T, std::sync::Arc<T>);

/// No vacuum polarisation: Π = 0 (the Born, "bare", choice).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct NoVp;

impl Polarisation for NoVp {
    fn pi(&self, _q2_gev2: f64) -> Complex64 {
        Complex64::new(0.0, 0.0)
    }
    fn describe(&self) -> String {
        "no vacuum polarisation".into()
    }
}
