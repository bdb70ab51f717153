//! Bhabha scattering e⁺e⁻ → e⁺e⁻ through s- and t-channel photons, optionally with Z.
//!
//! Helicity form (massless): with t = −s(1 − c)/2, u = −s(1 + c)/2 and the channel
//! factors A_ij(q²) = [P_γ(q²) + g_i g_j χ(q²)]/q² (P_γ the photon propagator multiplier,
//! 1/(1 − Π) when dressed, 1 at Born level; g_L,R = v_e ± a_e),
//!
//! dσ/dΩ = (α²/4s) [u² (|A_LL(s) + A_LL(t)|² + |A_RR(s) + A_RR(t)|²)
//!                 + t² (|A_LR(s)|² + |A_RL(s)|²) + s² (|A_LR(t)|² + |A_RL(t)|²)].
//!
//! For γ only it is dσ/dΩ = (α²/2s)[(s² + u²)/t² + 2u²/(st) + (t² + u²)/s²]
//! = (α²/4s)(3 + c²)²/(1 − c)² (Peskin & Schroeder problem 5.2; Berestetskii–Lifshitz–
//! Pitaevskii §81), whose cosθ integral is closed: with a = 1 − c,
//! dσ/dcosθ = (πα²/s)(8/a² − 8/a + 6 − 2a + a²/2).
//! The photon propagators are dressed at amplitude level so that the s–t interference
//! gets the running right (physics notes §1).

use super::{Angular, CosRange, CrossSection, Feature, ZExchange};
use crate::constants::{ALPHA, GEV2_TO_NB};
use crate::numeric::{Tolerance, integrate};
use num_complex::Complex64;
use std::f64::consts::PI;

const T3_E: f64 = -0.5;
const Q_E: f64 = -1.0;

/// Bhabha scattering with the electron's cosθ in a [`CosRange`] (required: σ diverges
/// in the forward direction).
#[derive(Debug, Clone, PartialEq)]
pub struct Bhabha {
    z: Option<ZExchange>,
    range: CosRange,
    features: Vec<Feature>,
}

impl Bhabha {
    /// Photon exchange only, electron cosθ in `range`.
    pub fn new(range: CosRange) -> Self {
        Bhabha {
            z: None,
            range,
            features: Vec::new(),
        }
    }

    /// Add Z exchange in both channels.
    pub fn with_z(mut self, z: ZExchange) -> Self {
        let (m, g) = z.mass_width_gev();
        self.features = vec![Feature::Peak {
            s_gev2: m * m,
            m_gamma_gev2: m * g,
        }];
        self.z = Some(z);
        self
    }

    /// The acceptance in cosθ.
    pub fn range(&self) -> CosRange {
        self.range
    }

    /// The Z exchange, if on.
    pub fn z(&self) -> Option<&ZExchange> {
        self.z.as_ref()
    }

    /// dσ/dcosθ in nb with the photon propagators multiplied by `photon_s` (s channel,
    /// complex: 1/(1 − Π(s))) and `photon_t` (t channel, real: 1/(1 − Π(t))).
    pub fn dsigma_dcos_dressed_nb(
        &self,
        s: f64,
        c: f64,
        photon_s: Complex64,
        photon_t: f64,
    ) -> f64 {
        let t = -0.5 * s * (1.0 - c);
        let u = -0.5 * s * (1.0 + c);
        let pre = 2.0 * PI * ALPHA * ALPHA / (4.0 * s) * GEV2_TO_NB;
        match &self.z {
            None => {
                // Photons only: |A(s)+A(t)|² twice, the s-only and t-only terms twice.
                let a_s = photon_s / s;
                let a_t = photon_t / t;
                let sum = (a_s + a_t).norm_sqr();
                pre * 2.0 * (u * u * sum + t * t * a_s.norm_sqr() + s * s * a_t * a_t)
            }
            Some(z) => {
                let (chi_s, chi_t) = (z.chi(s), z.chi(t));
                let v = z.vector(T3_E, Q_E);
                let (g_l, g_r) = (v + T3_E, v - T3_E);
                let q2 = Q_E * Q_E;
                let amp = |p: Complex64, gg: f64, chi: Complex64, q: f64| (p * q2 + gg * chi) / q;
                let pt = Complex64::new(photon_t, 0.0);
                let ll =
                    (amp(photon_s, g_l * g_l, chi_s, s) + amp(pt, g_l * g_l, chi_t, t)).norm_sqr();
                let rr =
                    (amp(photon_s, g_r * g_r, chi_s, s) + amp(pt, g_r * g_r, chi_t, t)).norm_sqr();
                let lr_s = amp(photon_s, g_l * g_r, chi_s, s).norm_sqr();
                let lr_t = amp(pt, g_l * g_r, chi_t, t).norm_sqr();
                pre * (u * u * (ll + rr) + 2.0 * t * t * lr_s + 2.0 * s * s * lr_t)
            }
        }
    }

    /// σ in nb over the electron's cosθ ∈ [lo, hi] (hi < 1).
    pub fn sigma_in_cos_nb(&self, s: f64, lo: f64, hi: f64) -> f64 {
        match &self.z {
            None => {
                // With a = 1 − c and dc = −da, ∫_lo^hi f dc = G(a₁) − G(a₂) for the
                // antiderivative G(a) = −8/a − 8 ln a + 6a − a² + a³/6, a₁ = 1 − lo > a₂ = 1 − hi.
                // Each difference is written with the width Δ = a₁ − a₂ as a factor, so a
                // narrow bin keeps its digits.
                let (a1, a2, width) = (1.0 - lo, 1.0 - hi, hi - lo);
                let algebraic =
                    8.0 / (a1 * a2) + 6.0 - (a1 + a2) + (a1 * a1 + a1 * a2 + a2 * a2) / 6.0;
                let bracket = width * algebraic - 8.0 * (width / a2).ln_1p();
                PI * ALPHA * ALPHA / s * GEV2_TO_NB * bracket
            }
            Some(_) => {
                let one = Complex64::new(1.0, 0.0);
                integrate(
                    |c| self.dsigma_dcos_dressed_nb(s, c, one, 1.0),
                    lo,
                    hi,
                    &[],
                    Tolerance::relative(1e-12),
                )
                .value
            }
        }
    }
}

impl CrossSection for Bhabha {
    fn sigma_nb(&self, s_gev2: f64) -> f64 {
        self.sigma_in_cos_nb(s_gev2, self.range.lo(), self.range.hi())
    }

    fn features(&self) -> &[Feature] {
        &self.features
    }
}

impl Angular for Bhabha {
    fn dsigma_dcos_nb(&self, s_gev2: f64, c: f64) -> f64 {
        self.dsigma_dcos_dressed_nb(s_gev2, c, Complex64::new(1.0, 0.0), 1.0)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::process::WidthScheme;

    fn textbook(s: f64, c: f64) -> f64 {
        // (α²/2s)[(s² + u²)/t² + 2u²/(st) + (t² + u²)/s²] × 2π (Peskin & Schroeder pr. 5.2).
        let t = -0.5 * s * (1.0 - c);
        let u = -0.5 * s * (1.0 + c);
        2.0 * PI * ALPHA * ALPHA / (2.0 * s)
            * ((s * s + u * u) / (t * t) + 2.0 * u * u / (s * t) + (t * t + u * u) / (s * s))
            * GEV2_TO_NB
    }

    #[test]
    fn helicity_form_equals_textbook_form() {
        let b = Bhabha::new(CosRange::FULL);
        for c in [-0.99, -0.5, 0.0, 0.3, 0.9, 0.999] {
            let got = b.dsigma_dcos_nb(10.0, c);
            assert!((got / textbook(10.0, c) - 1.0).abs() < 1e-14, "c={c}");
        }
    }

    #[test]
    fn closed_form_matches_quadrature() {
        // Closed form vs adaptive Gauss–Kronrod of the textbook dσ/dcosθ: ≤ 1e-10 (issue bar).
        let b = Bhabha::new(CosRange::FULL);
        for (lo, hi) in [(-0.8, 0.8), (0.5, 0.9995), (-0.9, 0.0)] {
            let q = integrate(
                |c| textbook(25.0, c),
                lo,
                hi,
                &[],
                Tolerance::relative(1e-13),
            );
            let cf = b.sigma_in_cos_nb(25.0, lo, hi);
            assert!((cf / q.value - 1.0).abs() < 1e-10, "[{lo},{hi}]");
        }
    }

    #[test]
    fn narrow_bins_keep_their_digits() {
        let b = Bhabha::new(CosRange::FULL);
        crate::process::assert_narrow_bins_keep_their_digits(
            |lo, hi| b.sigma_in_cos_nb(25.0, lo, hi),
            |c| textbook(25.0, c),
        );
    }

    #[test]
    fn z_exchange_vanishes_at_low_energy() {
        // At √s = 1 GeV, |χ| ~ 1e-4: γ+Z differs from γ only by ~1e-4 (s/M_Z² · couplings).
        let r = CosRange::new(-0.8, 0.8).unwrap();
        let g = Bhabha::new(r).sigma_nb(1.0);
        let gz = Bhabha::new(r)
            .with_z(ZExchange::standard(WidthScheme::Running))
            .sigma_nb(1.0);
        assert!((gz / g - 1.0).abs() < 1e-3);
    }
}
