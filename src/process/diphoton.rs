//! e⁺e⁻ → γγ at Born level (massless electron).
//!
//! dσ/dΩ = (α²/s)(1 + cos²θ)/(1 − cos²θ); with the identical photons counted once,
//! σ(|cosθ| < c) = (2πα²/s)[ln((1 + c)/(1 − c)) − c] (e.g. Berestetskii–Lifshitz–Pitaevskii
//! §88; physics notes §1). We quote dσ/dcosθ = (πα²/s)(1 + c²)/(1 − c²), the photon-pair
//! rate per unit cosθ of either photon, so that its integral over [−c, c] is that σ.
//! No vacuum polarisation enters at Born level (no photon propagator).

use super::{Angular, CosRange, CrossSection};
use crate::constants::{ALPHA, GEV2_TO_NB};
use std::f64::consts::PI;

/// e⁺e⁻ → γγ with a photon's cosθ in a [`CosRange`] (required: σ diverges along the beam).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Diphoton {
    range: CosRange,
}

impl Diphoton {
    pub fn new(range: CosRange) -> Self {
        Diphoton { range }
    }

    /// σ in nb over cosθ ∈ [lo, hi], |lo|, |hi| < 1.
    pub fn sigma_in_cos_nb(&self, s: f64, lo: f64, hi: f64) -> f64 {
        // G(hi) − G(lo) of G(c) = ln((1 + c)/(1 − c)) − c, written without the difference of
        // nearly equal values on a narrow bin: the ratio of the logarithms' arguments is
        // 1 + 2(hi − lo)/((1 − hi)(1 + lo)).
        let width = hi - lo;
        let log_ratio = (2.0 * width / ((1.0 - hi) * (1.0 + lo))).ln_1p();
        PI * ALPHA * ALPHA / s * GEV2_TO_NB * (log_ratio - width)
    }
}

impl CrossSection for Diphoton {
    fn sigma_nb(&self, s_gev2: f64) -> f64 {
        self.sigma_in_cos_nb(s_gev2, self.range.lo(), self.range.hi())
    }
}

impl Angular for Diphoton {
    fn dsigma_dcos_nb(&self, s: f64, c: f64) -> f64 {
        PI * ALPHA * ALPHA / s * GEV2_TO_NB * (1.0 + c * c) / (1.0 - c * c)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::numeric::{Tolerance, integrate};

    #[test]
    fn closed_form_matches_quadrature_and_published_form() {
        let c = 0.9;
        let g = Diphoton::new(CosRange::new(-c, c).unwrap());
        let s = 9.0;
        let published =
            2.0 * PI * ALPHA * ALPHA / s * (((1.0 + c) / (1.0 - c)).ln() - c) * GEV2_TO_NB;
        assert!((g.sigma_nb(s) / published - 1.0).abs() < 1e-14);
        let q = integrate(
            |x| g.dsigma_dcos_nb(s, x),
            -c,
            c,
            &[],
            Tolerance::relative(1e-13),
        );
        assert!((q.value / published - 1.0).abs() < 1e-12);
    }

    #[test]
    fn narrow_bins_keep_their_digits() {
        // The published differential, typed in here: (πα²/s)(1 + c²)/(1 − c²) in the
        // high-energy limit, identical photons counted once (Peskin & Schroeder (1995) §5.5;
        // from memory).
        let g = Diphoton::new(CosRange::FULL);
        let published =
            |c: f64| PI * ALPHA * ALPHA / 9.0 * (1.0 + c * c) / (1.0 - c * c) * GEV2_TO_NB;
        crate::process::assert_narrow_bins_keep_their_digits(
            |lo, hi| g.sigma_in_cos_nb(9.0, lo, hi),
            published,
        );
    }
}
