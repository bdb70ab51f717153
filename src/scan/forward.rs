//! The forward chain a scan is corrected with: a dressed line shape → radiated (ISR with
//! a cut) → smeared by the beam-energy spread.
//!
//! The radiative link is a small trait, [`Radiation`], so that any radiator
//! implementation plugs in; [`KuraevFadin`] is the one built in here.

use crate::constants::{ALPHA, M_E_GEV};
use crate::numeric::{Tolerance, integrate};
use crate::process::{CrossSection, Feature};
use std::f64::consts::PI;
use std::sync::Arc;

/// The ISR link: σ_rad(s) = ∫₀^{x_max} F(x, s) σ_d(s(1 − x)) dx for any dressed σ_d.
pub trait Radiation: Sync + Send {
    /// σ_rad in nb at s (GeV²) with x ≤ `x_max` (0 < x_max < 1), to an absolute accuracy
    /// of about `abs_tol_nb` or a relative 1e-9, whichever is looser.
    fn radiate(&self, dressed: &dyn CrossSection, s_gev2: f64, x_max: f64, abs_tol_nb: f64) -> f64;

    /// A short name for outputs (`kf2`, `none`).
    fn name(&self) -> &str;

    /// A one-line description with its reference, for provenance.
    fn describe(&self) -> String;
}

/// No radiation: σ_rad = σ_d (the identity link, for Born-level checks).
#[derive(Debug, Clone, Copy, Default)]
pub struct NoRadiation;

impl Radiation for NoRadiation {
    fn radiate(&self, dressed: &dyn CrossSection, s_gev2: f64, _x: f64, _tol: f64) -> f64 {
        dressed.sigma_nb(s_gev2)
    }
    fn name(&self) -> &str {
        "none"
    }
    fn describe(&self) -> String {
        "no initial-state radiation".into()
    }
}

/// The Kuraev–Fadin radiator to O(β²):
/// F(x, s) = β x^(β−1) δ_VS + δ_H(x), β = (2α/π)(ln(s/mₑ²) − 1),
/// δ_VS = 1 + 3β/4 + (α/π)(π²/3 − 1/2) + β²(9/32 − π²/12),
/// δ_H = −β(1 − x/2) + (β²/8)[−4(2 − x) ln x − (1 + 3(1 − x)²) ln(1 − x)/x − 6 + x].
///
/// The soft part is integrated in t = x^β (β x^(β−1) dx = dt), so no integrator ever sees
/// the x^(β−1) singularity; both parts are split at every feature of σ_d.
///
/// # References
/// E. A. Kuraev, V. S. Fadin, Sov. J. Nucl. Phys. 41 (1985) 466, the O(β²) radiator
/// as written in the project's physics notes (§4).
#[derive(Debug, Clone, Copy, Default)]
pub struct KuraevFadin;

impl KuraevFadin {
    /// (β, δ_VS) at s.
    pub fn coefficients(s_gev2: f64) -> (f64, f64) {
        let beta = 2.0 * ALPHA / PI * ((s_gev2 / (M_E_GEV * M_E_GEV)).ln() - 1.0);
        let dvs = 1.0
            + 0.75 * beta
            + ALPHA / PI * (PI * PI / 3.0 - 0.5)
            + beta * beta * (9.0 / 32.0 - PI * PI / 12.0);
        (beta, dvs)
    }

    /// The hard part δ_H(x) at β.
    pub fn hard(beta: f64, x: f64) -> f64 {
        let l1 = if x < 1e-8 {
            -1.0 - 0.5 * x
        } else {
            (-x).ln_1p() / x
        };
        -beta * (1.0 - 0.5 * x)
            + beta * beta / 8.0
                * (-4.0 * (2.0 - x) * x.ln() - (1.0 + 3.0 * (1.0 - x).powi(2)) * l1 - 6.0 + x)
    }
}

impl Radiation for KuraevFadin {
    fn radiate(&self, d: &dyn CrossSection, s: f64, x_max: f64, abs_tol_nb: f64) -> f64 {
        let (beta, dvs) = Self::coefficients(s);
        let xs = x_breakpoints(d.features(), s, x_max);
        let tol = Tolerance {
            rel: 1e-10,
            abs: abs_tol_nb,
        };
        let ts: Vec<f64> = xs.iter().map(|x| x.powf(beta)).collect();
        let inv_beta = 1.0 / beta;
        let soft = integrate(
            |t: f64| d.sigma_nb(s * (1.0 - t.powf(inv_beta))),
            0.0,
            x_max.powf(beta),
            &ts,
            tol,
        );
        let hard = integrate(
            |x: f64| Self::hard(beta, x) * d.sigma_nb(s * (1.0 - x)),
            0.0,
            x_max,
            &xs,
            tol,
        );
        dvs * soft.value + hard.value
    }
    fn name(&self) -> &str {
        "kf2"
    }
    fn describe(&self) -> String {
        "Kuraev-Fadin O(beta^2) radiator (Sov. J. Nucl. Phys. 41 (1985) 466)".into()
    }
}

/// x = 1 − s′/s of every feature of σ_d (and ±1, ±3 widths around peaks) inside (0, x_max).
fn x_breakpoints(features: &[Feature], s: f64, x_max: f64) -> Vec<f64> {
    let mut out = Vec::new();
    let mut push = |s_f: f64| {
        let x = 1.0 - s_f / s;
        if x > 0.0 && x < x_max {
            out.push(x);
        }
    };
    for f in features {
        match *f {
            Feature::Edge { s_gev2 } => push(s_gev2),
            Feature::Peak {
                s_gev2,
                m_gamma_gev2,
            } => {
                for k in [-3.0, -1.0, 0.0, 1.0, 3.0] {
                    push(s_gev2 + k * m_gamma_gev2);
                }
            }
        }
    }
    out
}

/// The radiative cut: the photon may take at most a fraction `x_max` of s, and the final
/// state keeps at least `min_mass_gev` (the tighter wins, and the process threshold always).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Cut {
    pub x_max: Option<f64>,
    pub min_mass_gev: Option<f64>,
}

impl Cut {
    /// The largest x allowed at s for a process with threshold `s_th`; ≤ 0 means nothing
    /// is allowed (σ_obs = 0).
    pub fn x_max(&self, s_gev2: f64, s_th_gev2: f64) -> f64 {
        let s_min = s_th_gev2.max(self.min_mass_gev.map_or(0.0, |m| m * m));
        let kinematic = 1.0 - s_min / s_gev2;
        self.x_max.map_or(kinematic, |x| x.min(kinematic))
    }
}

/// Half-width of the Gaussian energy-spread window in units of σ_W (the truncated mass,
/// erfc(6/√2) ≈ 2e-9, is normalised away).
const SPREAD_WINDOW: f64 = 6.0;

/// Dressed → observed: radiation with a cut, then the beam-energy spread.
#[derive(Clone)]
pub struct ForwardChain {
    radiation: Arc<dyn Radiation>,
    cut: Cut,
}

impl ForwardChain {
    pub fn new(radiation: Arc<dyn Radiation>, cut: Cut) -> Self {
        ForwardChain { radiation, cut }
    }

    pub fn radiation(&self) -> &dyn Radiation {
        &*self.radiation
    }

    pub fn cut(&self) -> Cut {
        self.cut
    }

    /// The radiated σ at s (no spread), nb; `abs_tol_nb` as in [`Radiation::radiate`].
    pub fn radiated_nb(&self, dressed: &dyn CrossSection, s_gev2: f64, abs_tol_nb: f64) -> f64 {
        let x_max = self.cut.x_max(s_gev2, dressed.threshold_s_gev2());
        if x_max <= 0.0 {
            return 0.0;
        }
        self.radiation.radiate(dressed, s_gev2, x_max, abs_tol_nb)
    }

    /// The observed σ at √s: radiated, then averaged over a Gaussian spread of √s with
    /// width `spread_mev` (0 for none).
    ///
    /// σ_obs(√s) = ∫ G(E − √s; σ_W) σ_rad(E²) dE over ±6σ_W, split at the peaks of σ_d.
    pub fn observed_nb(
        &self,
        dressed: &dyn CrossSection,
        sqrt_s_gev: f64,
        spread_mev: f64,
        abs_tol_nb: f64,
    ) -> f64 {
        if spread_mev <= 0.0 {
            return self.radiated_nb(dressed, sqrt_s_gev * sqrt_s_gev, abs_tol_nb);
        }
        let w = spread_mev * 1e-3;
        let (lo, hi) = (
            (sqrt_s_gev - SPREAD_WINDOW * w).max(0.0),
            sqrt_s_gev + SPREAD_WINDOW * w,
        );
        let mut breaks = Vec::new();
        for f in dressed.features() {
            if let Feature::Peak {
                s_gev2,
                m_gamma_gev2,
            } = *f
            {
                let m = s_gev2.sqrt();
                let g = m_gamma_gev2 / m;
                breaks.extend([-3.0, -1.0, 0.0, 1.0, 3.0].map(|k| m + k * g));
            }
        }
        let gauss = |e: f64| (-0.5 * ((e - sqrt_s_gev) / w).powi(2)).exp();
        let tol = Tolerance {
            rel: 1e-9,
            abs: abs_tol_nb,
        };
        let num = integrate(
            |e| gauss(e) * self.radiated_nb(dressed, e * e, abs_tol_nb),
            lo,
            hi,
            &breaks,
            tol,
        );
        // The Gaussian's own integral over the same window, so a constant stays constant.
        let norm = integrate(gauss, lo, hi, &[], Tolerance::relative(1e-13));
        num.value / norm.value
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    struct Flat;
    impl CrossSection for Flat {
        fn sigma_nb(&self, _s: f64) -> f64 {
            1.0
        }
    }

    #[test]
    fn flat_line_shape_gives_the_radiator_integral() {
        // For σ_d = 1 the observed σ is ∫₀^{x_max} F dx = δ_VS x_max^β + ∫₀^{x_max} δ_H dx
        // (the t = x^β substitution is exact for the soft term). With x_max → 1 the
        // published sum rule ∫₀¹ F dx = 1 + (α/π)(π²/3 − 1/2) holds (physics notes §4);
        // x_max = 1 − 1e-12 leaves out O(1e-12·β² ln) of δ_H.
        let chain = ForwardChain::new(
            Arc::new(KuraevFadin),
            Cut {
                x_max: Some(1.0 - 1e-12),
                min_mass_gev: None,
            },
        );
        for sqrt_s in [1.0, 10.0, 91.0] {
            let got = chain.observed_nb(&Flat, sqrt_s, 0.0, 1e-15);
            let want = 1.0 + ALPHA / PI * (PI * PI / 3.0 - 0.5);
            assert!((got - want).abs() < 1e-9, "√s={sqrt_s}: {got} vs {want}");
        }
        // A Gaussian spread leaves a constant unchanged (to the window normalisation).
        let spread = chain.observed_nb(&Flat, 3.0, 1.5, 1e-15);
        assert!((spread - chain.observed_nb(&Flat, 3.0, 0.0, 1e-15)).abs() < 1e-9);
    }

    #[test]
    fn cut_takes_the_tighter_limit() {
        let c = Cut {
            x_max: Some(0.5),
            min_mass_gev: Some(2.0),
        };
        // min mass 2 GeV at √s = 2.5: x ≤ 1 − 4/6.25 = 0.36 < 0.5.
        assert!((c.x_max(6.25, 0.0) - 0.36).abs() < 1e-15);
        assert!((c.x_max(100.0, 0.0) - 0.5).abs() < 1e-15);
        assert!(c.x_max(3.0, 4.0) < 0.0);
    }
}
