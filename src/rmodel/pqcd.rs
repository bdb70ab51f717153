//! Perturbative QCD for R(s) above the resonance region, to O(α_s³).
//!
//! R = Σ_q 3Q_q² V_q [1 + a + r₂a² + r₃a³] − 1.2395 (Σ_q Q_q V_q)² a³, a = α_s(s)/π, with the
//! massless coefficients r₂ = 1.9857 − 0.1152 n_f and r₃ = −6.63694 − 1.20013 n_f − 0.00518 n_f²
//! (Gorishny, Kataev & Larin, Phys. Lett. B 259 (1991) 144; Surguladze & Samuel, Phys. Rev.
//! Lett. 66 (1991) 560; the singlet 1.2395 as in physics.md §3; digits from memory).
//!
//! Quark-mass effects near the charm and bottom thresholds: each heavy quark carries the
//! Born velocity factor v(3 − v²)/2, v = √(1 − 4m̄²/s) with the MS-bar mass m̄_Q(m̄_Q), times an
//! onset that rises smoothly (3t² − 2t³) from 0 at the open-flavour threshold 2M (M the
//! lightest D or B meson) to 1 at 2M + 0.2 GeV. Below 2M the bound states are the narrow
//! resonances; above it the continuum is taken by local duality (the resonant data between
//! 3.7 and 5 GeV scatter around it; common practice, no source). The onset keeps R
//! continuous, so Re Π has no logarithmic spike at 2M. The coefficients use n_f = Σ_q V_q,
//! continuous across thresholds as well.
//! u, d, s are massless. The top quark is left out (R⁽⁵⁾, as in Δα_had⁽⁵⁾).

use super::alpha_s::AlphaS;

/// Quark charges u, d, s, c, b.
const CHARGES: [f64; 5] = [2.0 / 3.0, -1.0 / 3.0, -1.0 / 3.0, 2.0 / 3.0, -1.0 / 3.0];

/// The velocity factor v(3 − v²)/2 of a pair of mass `m` (zero below threshold).
pub fn velocity_factor(s_gev2: f64, m_gev: f64) -> f64 {
    let y = 4.0 * m_gev * m_gev / s_gev2;
    if y >= 1.0 {
        return 0.0;
    }
    let v = (1.0 - y).sqrt();
    0.5 * v * (3.0 - v * v)
}

/// Width of the onset above an open-flavour threshold, GeV.
pub const ONSET_GEV: f64 = 0.2;

/// The heavy quark's weight V_Q: velocity factor with mass `m_quark_gev` times the onset
/// above the open-flavour threshold `m_open_gev` (lightest meson mass).
pub fn heavy_weight(s_gev2: f64, m_quark_gev: f64, m_open_gev: f64) -> f64 {
    let t = ((s_gev2.sqrt() - 2.0 * m_open_gev) / ONSET_GEV).clamp(0.0, 1.0);
    t * t * (3.0 - 2.0 * t) * velocity_factor(s_gev2, m_quark_gev)
}

/// Heavy-quark masses: (MS-bar quark mass, lightest open-flavour meson mass) for c and b, GeV.
pub type HeavyMasses = [(f64, f64); 2];

/// R in perturbative QCD at s, given α_s and the heavy-quark masses.
/// `heavy = false` keeps only u, d, s (the inclusive 1–2 GeV form).
pub fn r_pqcd(s_gev2: f64, alpha_s: &AlphaS, masses: &HeavyMasses, heavy: bool) -> f64 {
    let (a, _) = alpha_s.a_and_nf(s_gev2);
    let mut weights = [1.0, 1.0, 1.0, 0.0, 0.0];
    if heavy {
        weights[3] = heavy_weight(s_gev2, masses[0].0, masses[0].1);
        weights[4] = heavy_weight(s_gev2, masses[1].0, masses[1].1);
    }
    let nf: f64 = weights.iter().sum();
    let sum_q2: f64 = CHARGES.iter().zip(&weights).map(|(q, w)| q * q * w).sum();
    let sum_q: f64 = CHARGES.iter().zip(&weights).map(|(q, w)| q * w).sum();
    let r2 = 1.9857 - 0.1152 * nf;
    let r3 = -6.63694 - 1.20013 * nf - 0.00518 * nf * nf;
    3.0 * sum_q2 * (1.0 + a * (1.0 + a * (r2 + a * r3))) - 1.2395 * sum_q * sum_q * a * a * a
}
