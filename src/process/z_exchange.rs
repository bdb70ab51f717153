//! Z-boson exchange in the improved-Born scheme.
//!
//! χ(s) = κ s/(s − M_Z² + i s Γ_Z/M_Z) with κ = √2 G_F M_Z²/(4πα(0)) (the G_μ scheme;
//! the photon term keeps α(0)), couplings v_f = T₃ − 2Q_f sin²θ_eff, a_f = T₃ with the
//! effective leptonic sin²θ_eff (PDG, "Electroweak model and constraints on new physics").

use crate::constants::{ALPHA, G_F_GEV_M2, GAMMA_Z_GEV, M_Z_GEV, SIN2_THETA_EFF};
use num_complex::Complex64;

/// How the Z width enters the propagator.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum WidthScheme {
    /// s Γ_Z/M_Z with the PDG M_Z, Γ_Z (the convention those values are quoted in).
    Running,
    /// M̄Γ̄ constant, with M̄ = M_Z/√(1 + γ²), Γ̄ = Γ_Z/√(1 + γ²), γ = Γ_Z/M_Z
    /// (Bardin, Leike, Riemann, Sachwitz, Phys. Lett. B206 (1988) 539): M̄ ≈ M_Z − 34 MeV.
    Fixed,
}

impl WidthScheme {
    pub fn name(self) -> &'static str {
        match self {
            WidthScheme::Running => "running",
            WidthScheme::Fixed => "fixed",
        }
    }
}

/// The Z propagator and couplings.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ZExchange {
    mass_gev: f64,
    width_gev: f64,
    scheme: WidthScheme,
    kappa: f64,
    sin2_theta: f64,
}

impl ZExchange {
    /// The PDG Z with the G_μ κ and sin²θ_eff.
    pub fn standard(scheme: WidthScheme) -> Self {
        let (mass_gev, width_gev) = match scheme {
            WidthScheme::Running => (M_Z_GEV, GAMMA_Z_GEV),
            WidthScheme::Fixed => {
                let norm = (1.0 + (GAMMA_Z_GEV / M_Z_GEV).powi(2)).sqrt();
                (M_Z_GEV / norm, GAMMA_Z_GEV / norm)
            }
        };
        ZExchange {
            mass_gev,
            width_gev,
            scheme,
            kappa: std::f64::consts::SQRT_2 * G_F_GEV_M2 * M_Z_GEV * M_Z_GEV
                / (4.0 * std::f64::consts::PI * ALPHA),
            sin2_theta: SIN2_THETA_EFF,
        }
    }

    /// χ(q²): the Z propagator relative to the photon's, times κ. Spacelike q² < 0 has no width.
    pub fn chi(&self, q2_gev2: f64) -> Complex64 {
        let m2 = self.mass_gev * self.mass_gev;
        let im = if q2_gev2 <= 0.0 {
            0.0
        } else {
            match self.scheme {
                WidthScheme::Running => q2_gev2 * self.width_gev / self.mass_gev,
                WidthScheme::Fixed => self.mass_gev * self.width_gev,
            }
        };
        self.kappa * q2_gev2 / Complex64::new(q2_gev2 - m2, im)
    }

    /// Vector coupling v_f = T₃ − 2Q sin²θ_eff.
    pub fn vector(&self, t3: f64, charge: f64) -> f64 {
        t3 - 2.0 * charge * self.sin2_theta
    }

    /// The width scheme.
    pub fn scheme(&self) -> WidthScheme {
        self.scheme
    }

    /// Mass and width in this scheme's convention (GeV).
    pub fn mass_width_gev(&self) -> (f64, f64) {
        (self.mass_gev, self.width_gev)
    }

    /// A one-line description for output provenance.
    pub fn describe(&self) -> String {
        format!(
            "Z exchange: improved Born, G_mu kappa = {:.6}, sin2theta_eff = {}, {} width, M_Z = {:.5} GeV, Gamma_Z = {:.5} GeV",
            self.kappa,
            self.sin2_theta,
            self.scheme.name(),
            self.mass_gev,
            self.width_gev
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn width_schemes_are_the_same_pole() {
        // χ_running = χ_fixed/(1 + iγ) exactly (Bardin et al. 1988, eqs. 3–5): the schemes
        // differ by a constant factor, i.e. |χ_run|²(1 + γ²) = |χ_fix|² at every s.
        let run = ZExchange::standard(WidthScheme::Running);
        let fix = ZExchange::standard(WidthScheme::Fixed);
        let g2 = (GAMMA_Z_GEV / M_Z_GEV).powi(2);
        for sqrt_s in [30.0, 88.0, 91.0, 91.19, 95.0, 200.0] {
            let s = sqrt_s * sqrt_s;
            let lhs = run.chi(s).norm_sqr() * (1.0 + g2);
            let rhs = fix.chi(s).norm_sqr();
            assert!((lhs / rhs - 1.0).abs() < 1e-13, "sqrt_s={sqrt_s}");
        }
        // The fixed-width mass is ~34 MeV below the PDG mass (physics notes §1).
        let (m_fix, _) = fix.mass_width_gev();
        assert!(((M_Z_GEV - m_fix) * 1e3 - 34.1).abs() < 0.2);
    }

    #[test]
    fn kappa_is_the_g_mu_value() {
        // κ = √2 G_F M_Z²/(4πα) ≈ 1.4959; it exceeds 1/(4 sin²θ cos²θ) ≈ 1.405 by the running
        // of α to M_Z (~6%, physics notes §1).
        let z = ZExchange::standard(WidthScheme::Running);
        let alt = 1.0 / (4.0 * SIN2_THETA_EFF * (1.0 - SIN2_THETA_EFF));
        let ratio = z.kappa / alt;
        assert!(ratio > 1.05 && ratio < 1.08, "ratio {ratio}");
    }
}
