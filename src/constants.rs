//! Physical constants, each with its source and edition.
//!
//! Masses and widths are in GeV. The one unit conversion of the code base,
//! GeV⁻² → nb, lives here too ([`GEV2_TO_NB`]).
//!
//! `tests/constants.rs` reads several of these back against the bundled PDG
//! database (the `pdg` Python package, edition 2026) so that a typo cannot hide.

/// Fine-structure constant α(0). CODATA 2022: α⁻¹ = 137.035 999 177(21).
pub const ALPHA_INV: f64 = 137.035_999_177;
/// Fine-structure constant α(0) = 1/[`ALPHA_INV`].
pub const ALPHA: f64 = 1.0 / ALPHA_INV;

/// Electron mass in GeV. CODATA 2022: 0.510 998 950 69(16) MeV.
pub const M_E_GEV: f64 = 0.510_998_950_69e-3;
/// Muon mass in GeV. CODATA 2022: 105.658 3755(23) MeV.
pub const M_MU_GEV: f64 = 0.105_658_375_5;
/// Tau mass in GeV. PDG 2026 (the `pdg` package, edition 2026): 1776.93(9) MeV.
pub const M_TAU_GEV: f64 = 1.776_93;

/// Z mass in GeV (the "running width" Breit–Wigner convention of the PDG fit).
/// PDG 2024: 91.1880(20) GeV; the 2026 average 91.18787(197) agrees to 0.1σ.
pub const M_Z_GEV: f64 = 91.1880;
/// Z total width in GeV. PDG 2026: 2.4955(23) GeV.
pub const GAMMA_Z_GEV: f64 = 2.4955;
/// Fermi constant in GeV⁻². CODATA 2022: 1.166 3787(6) × 10⁻⁵ GeV⁻².
pub const G_F_GEV_M2: f64 = 1.166_378_7e-5;
/// Effective leptonic weak mixing angle sin²θ_eff used in the improved-Born Z couplings.
/// PDG 2026 Z listing, "sin²θ(eff)" OUR AVERAGE: 0.23148(12).
pub const SIN2_THETA_EFF: f64 = 0.23148;

/// Strong coupling at the Z mass, α_s(M_Z²), 5 flavours, MS-bar.
/// PDG 2024 QCD review world average: 0.1180(9).
pub const ALPHA_S_MZ: f64 = 0.1180;
/// Uncertainty of [`ALPHA_S_MZ`] (PDG 2024 QCD review).
pub const ALPHA_S_MZ_UNC: f64 = 0.0009;

/// (ħc)² in GeV² nb: 1 GeV⁻² = 389 379.3721 nb.
/// PDG 2024 "Physical constants" table: (ħc)² = 0.389 379 3721(1) GeV² mbarn.
pub const GEV2_TO_NB: f64 = 0.389_379_372_1e6;

/// Editions of the constant sets above, written into every output's provenance.
pub const EDITIONS: &str = "CODATA 2022 (alpha, m_e, m_mu, G_F); PDG 2026 (m_tau, Gamma_Z, sin2theta_eff); PDG 2024 (M_Z, alpha_s(M_Z), hbar c)";

/// The point-like cross-section σ_pt = 4πα²/(3s) in nb, s in GeV².
///
/// # References
/// Any QED text, e.g. Peskin & Schroeder (1995) eq. (5.13).
pub fn sigma_point_nb(s_gev2: f64) -> f64 {
    4.0 * std::f64::consts::PI * ALPHA * ALPHA / (3.0 * s_gev2) * GEV2_TO_NB
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn point_cross_section_is_86_85_nb_at_one_gev2() {
        // 4πα²/3s = 86.85 nb/s[GeV²] (Peskin & Schroeder 1995, ch. 5, quoted value 86.8 nb).
        // Four significant figures is what the quoted value carries.
        let got = sigma_point_nb(1.0);
        assert!((got - 86.85).abs() < 0.01, "got {got}");
    }
}
