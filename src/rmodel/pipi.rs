//! e⁺e⁻ → π⁺π⁻: the Gounaris–Sakurai ρ with ρ–ω mixing.
//!
//! R_ππ = β³|F_π(s)|²/4 with F_π = [BW_ρ^GS(s)·(1 + δ s/M_ω² · BW_ω(s))/(1 + δ) +
//! β BW_ρ′^GS(s)]/(1 + β), BW_ω = M_ω²/(M_ω² − s − iM_ωΓ_ω), and the Gounaris–Sakurai form
//! BW^GS = M²(1 + dΓ/M)/(M² − s + f(s) − iMΓ(s)), Γ(s) = Γ(M/√s)(k(s)/k(M²))³,
//! k = ½√(s − 4m_π²), h(s) = (2/π)(k/√s) ln((√s + 2k)/(2m_π)),
//! f(s) = ΓM²/k(M²)³ [k²(h − h(M²)) + (M² − s)k(M²)² h′(M²)],
//! d = (3/π)(m_π²/k(M²)²) ln((M + 2k(M²))/(2m_π)) + M/(2πk(M²)) − m_π²M/(πk(M²)³).
//!
//! # References
//! G. J. Gounaris and J. J. Sakurai, Phys. Rev. Lett. 21 (1968) 244, eqs. (3)–(9); the ρ–ω
//! factor and the ρ′ term in the form of J. H. Kühn and A. Santamaria, Z. Phys. C 48 (1990)
//! 445, eqs. (11)–(13), whose ρ′ parameters (M = 1.37 GeV, Γ = 0.51 GeV, β = −0.145) we use
//! (from memory).

use num_complex::Complex64;
use std::f64::consts::PI;

fn k(s: f64, m_pi: f64) -> f64 {
    0.5 * (s - 4.0 * m_pi * m_pi).max(0.0).sqrt()
}

fn h(s: f64, m_pi: f64) -> f64 {
    let (e, kk) = (s.sqrt(), k(s, m_pi));
    2.0 / PI * kk / e * ((e + 2.0 * kk) / (2.0 * m_pi)).ln()
}

/// One Gounaris–Sakurai Breit–Wigner with its s-independent constants.
#[derive(Debug, Clone)]
struct GsBreitWigner {
    m: f64,
    gamma: f64,
    k_m: f64,
    h_m: f64,
    dh_m: f64,
    norm: f64,
}

impl GsBreitWigner {
    fn new(m: f64, gamma: f64, m_pi: f64) -> Self {
        let s = m * m;
        let k_m = k(s, m_pi);
        let h_m = h(s, m_pi);
        // h′(s) = h(s)[1/(8k²) − 1/(2s)] + 1/(2πs) (the derivative of h; unit-tested).
        let dh_m = h_m * (1.0 / (8.0 * k_m * k_m) - 0.5 / s) + 0.5 / (PI * s);
        let d = 3.0 / PI * m_pi * m_pi / (k_m * k_m) * ((m + 2.0 * k_m) / (2.0 * m_pi)).ln()
            + m / (2.0 * PI * k_m)
            - m_pi * m_pi * m / (PI * k_m * k_m * k_m);
        GsBreitWigner {
            m,
            gamma,
            k_m,
            h_m,
            dh_m,
            norm: s * (1.0 + d * gamma / m),
        }
    }

    fn eval(&self, s: f64, m_pi: f64) -> Complex64 {
        let (m, g) = (self.m, self.gamma);
        let kk = k(s, m_pi);
        let f = g * m * m / self.k_m.powi(3)
            * (kk * kk * (h(s, m_pi) - self.h_m) + (m * m - s) * self.k_m * self.k_m * self.dh_m);
        let width = g * (m / s.sqrt()) * (kk / self.k_m).powi(3);
        self.norm / Complex64::new(m * m - s + f, -m * width)
    }
}

/// The pion form factor: GS ρ with ρ–ω mixing plus a GS ρ′, normalised to F(0) = 1.
#[derive(Debug, Clone)]
pub struct PionFormFactor {
    m_pi: f64,
    rho: GsBreitWigner,
    rho_prime: GsBreitWigner,
    beta: f64,
    m_omega: f64,
    gamma_omega: f64,
    delta: f64,
}

/// Parameters of [`PionFormFactor`] (GeV).
#[derive(Debug, Clone, Copy)]
pub struct PionParams {
    pub m_rho: f64,
    pub gamma_rho: f64,
    pub m_rho_prime: f64,
    pub gamma_rho_prime: f64,
    /// Weight β of the ρ′: F = [BW_ρ(1 + δ s/M_ω² BW_ω)/(1 + δ) + β BW_ρ′]/(1 + β).
    pub beta: f64,
    pub m_omega: f64,
    pub gamma_omega: f64,
    pub delta: f64,
    pub m_pi: f64,
}

impl PionFormFactor {
    pub fn new(p: PionParams) -> Self {
        PionFormFactor {
            m_pi: p.m_pi,
            rho: GsBreitWigner::new(p.m_rho, p.gamma_rho, p.m_pi),
            rho_prime: GsBreitWigner::new(p.m_rho_prime, p.gamma_rho_prime, p.m_pi),
            beta: p.beta,
            m_omega: p.m_omega,
            gamma_omega: p.gamma_omega,
            delta: p.delta,
        }
    }

    /// (M_ρ, Γ_ρ, M_ω, Γ_ω) in GeV.
    pub fn masses_and_widths(&self) -> (f64, f64, f64, f64) {
        (self.rho.m, self.rho.gamma, self.m_omega, self.gamma_omega)
    }

    /// F_π(s) for s above the two-pion threshold.
    pub fn form_factor(&self, s: f64) -> Complex64 {
        let mw2 = self.m_omega * self.m_omega;
        let omega = mw2 / Complex64::new(mw2 - s, -self.m_omega * self.gamma_omega);
        let rho =
            self.rho.eval(s, self.m_pi) * (1.0 + self.delta * s / mw2 * omega) / (1.0 + self.delta);
        (rho + self.beta * self.rho_prime.eval(s, self.m_pi)) / (1.0 + self.beta)
    }

    /// R_ππ = β³|F_π|²/4, zero below 4m_π².
    pub fn r(&self, s: f64) -> f64 {
        let y = 4.0 * self.m_pi * self.m_pi / s;
        if y >= 1.0 {
            return 0.0;
        }
        let b = (1.0 - y).sqrt();
        0.25 * b * b * b * self.form_factor(s).norm_sqr()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn h_derivative_formula() {
        // The closed-form h′ against a central difference (step 1e-5 s: error ~1e-10).
        let m_pi = 0.13957;
        for s in [0.3, 0.6, 1.5] {
            let e = 1e-5 * s;
            let fd = (h(s + e, m_pi) - h(s - e, m_pi)) / (2.0 * e);
            let kk = k(s, m_pi);
            let an = h(s, m_pi) * (1.0 / (8.0 * kk * kk) - 0.5 / s) + 0.5 / (PI * s);
            assert!((fd / an - 1.0).abs() < 1e-8, "s={s}: {fd} vs {an}");
        }
    }
}
