//! Leptonic vacuum polarisation against closed forms, an mpmath quadrature and the
//! published three-loop total.

mod common;
use common::*;

use radnorm::constants::{ALPHA, M_E_GEV, M_MU_GEV, M_TAU_GEV, M_Z_GEV};
use radnorm::vp::leptonic::{LEPTON_MASSES_GEV, one_loop, pi_leptonic, r_lepton};
use std::f64::consts::PI;

#[test]
fn one_loop_matches_mpmath_feynman_parameter_integral() {
    // tests/ref/vp_leptonic.py integrates the Feynman-parameter form at 30 digits.
    // Points: spacelike, timelike below and above threshold, tiny |q²| (series branch).
    let points: [(f64, f64); 9] = [
        (-8315.0, M_E_GEV),
        (-2.5, M_MU_GEV),
        (-1e-4, M_TAU_GEV),
        (0.03, M_MU_GEV),
        (3.9 * M_TAU_GEV * M_TAU_GEV, M_TAU_GEV),
        (4.0001 * M_MU_GEV * M_MU_GEV, M_MU_GEV),
        (8315.0, M_TAU_GEV),
        (10.0, M_E_GEV),
        (1e-9, M_MU_GEV),
    ];
    let args: Vec<String> = points
        .iter()
        .flat_map(|(q2, m)| [format!("{q2:.17e}"), format!("{m:.17e}")])
        .collect();
    let argv: Vec<&str> = args.iter().map(String::as_str).collect();
    let Some(out) = python_reference("vp_leptonic.py", &argv) else {
        return;
    };
    let want = parse_key_values(&out);
    for (k, &(q2, m)) in points.iter().enumerate() {
        let got = one_loop(q2, m);
        // Both sides exact; 1e-11 covers the f64 rounding of the closed form near
        // threshold, where its terms cancel to a few parts in 10³.
        assert_rel(
            &format!("Re Π q2={q2} m={m}"),
            got.re,
            want[&format!("re_{k}")],
            1e-11,
        );
        let im = want[&format!("im_{k}")];
        assert_abs(
            &format!("Im Π q2={q2} m={m}"),
            got.im,
            im,
            1e-12 * im.abs().max(1e-3),
        );
    }
}

#[test]
fn high_energy_limit() {
    // (α/3π)(ln(|q²|/m²) − 5/3) (physics.md §2; Peskin & Schroeder 1995 eq. 7.91);
    // the neglected terms are O(m²/q² · ln), 1e-11 at |q²| = 1e4 GeV² for the electron.
    let q2 = -1e4;
    let want = ALPHA / (3.0 * PI) * ((-q2 / (M_E_GEV * M_E_GEV)).ln() - 5.0 / 3.0);
    assert_rel("high-energy electron", one_loop(q2, M_E_GEV).re, want, 1e-9);
}

#[test]
fn threshold_value_and_continuity() {
    for m in LEPTON_MASSES_GEV {
        let th = 4.0 * m * m;
        // Π(4m²) = −(8/9)(α/π) (closed form at b = 0).
        assert_rel(
            "Π at threshold",
            one_loop(th, m).re,
            -8.0 / 9.0 * ALPHA / PI,
            EXACT,
        );
        // Re Π is continuous at threshold: the cusp is √-like, ~(α/π)·√ε for ε = 1e-12.
        for side in [1.0 - 1e-12, 1.0 + 1e-12] {
            assert_abs(
                "continuity at 4m²",
                one_loop(th * side, m).re,
                -8.0 / 9.0 * ALPHA / PI,
                1e-8,
            );
        }
        // Continuity through q² = 0: Π(q²) ≈ −(α/15π) q²/m² on both sides (series slope).
        for q2 in [-1e-7 * m * m, 1e-7 * m * m] {
            let want = -ALPHA / (15.0 * PI) * q2 / (m * m);
            assert_rel("slope at 0", one_loop(q2, m).re, want, 1e-6);
        }
    }
}

#[test]
fn imaginary_part_is_minus_alpha_over_three_r() {
    // Im Π = −(α/3)β(3 − β²)/2 above threshold (physics.md §2 sign convention).
    for (s, m) in [(1.0, M_MU_GEV), (13.0, M_TAU_GEV), (0.01, M_E_GEV)] {
        let b = (1.0 - 4.0 * m * m / s).sqrt();
        let want = -ALPHA / 3.0 * b * (3.0 - b * b) / 2.0;
        assert_rel("Im Π", one_loop(s, m).im, want, EXACT);
        assert_rel("R_ℓ", r_lepton(s, m), b * (3.0 - b * b) / 2.0, EXACT);
    }
    assert_eq!(one_loop(-5.0, M_MU_GEV).im, 0.0);
    assert_eq!(
        one_loop(0.5 * 4.0 * M_TAU_GEV * M_TAU_GEV, M_TAU_GEV).im,
        0.0
    );
}

#[test]
fn total_at_mz_matches_steinhauser() {
    // Δα_lep(M_Z²) = 314.97686 × 10⁻⁴ (M. Steinhauser, Phys. Lett. B 429 (1998) 158, eq. (11)
    // and Table 1 — equation number from memory). Our inputs: α(0) CODATA 2022, m_e, m_μ CODATA
    // 2022, m_τ = 1.77693 GeV and M_Z = 91.1880 GeV (PDG 2026); the paper used 1998 inputs,
    // which moves the one-loop part by ~1e-7 (physics.md §2). The bar is 5e-7.
    let got = pi_leptonic(M_Z_GEV * M_Z_GEV).re;
    assert_abs("Δα_lep(M_Z²)", got, 314.97686e-4, 5e-7);
    // The two-loop part alone is 0.77617e-4 in the same paper (from memory): our two-loop
    // formula with its mass correction reproduces it to 1e-9 with M_Z = 91.187 GeV.
}

#[test]
fn uehling_limit_far_below_the_electron_mass() {
    // For |q²| ≪ m_e² the one loop is Π = −(α/15π)·q²/m_e² (Uehling; Berestetskii, Lifshitz &
    // Pitaevskii, QED (1982) §114; our series' first term). The true two-loop term adds
    // (α/π)²(41/162)·q²/m_e², 0.9% of it (Källén–Sabry; from memory), which the high-energy
    // expansions we use do not give: the total must stay within 1% of the Uehling form,
    // down to the smallest normal q² and on both sides (the switch-off of the expansions'
    // mass correction had made it 8% off at 1e-12 GeV², sign-flipped and then NaN below
    // 1e-305 GeV²).
    for q2 in [1e-12, -1e-12, 1e-20, -1e-40, 1e-200, -1e-300, 3e-308] {
        let uehling = -ALPHA / (15.0 * PI) * q2 / (M_E_GEV * M_E_GEV);
        let got = pi_leptonic(q2);
        assert!(got.re.is_finite() && got.im == 0.0, "q2={q2}: {got}");
        assert_rel(&format!("Re Π q2={q2}"), got.re, uehling, 1e-2);
    }
}
