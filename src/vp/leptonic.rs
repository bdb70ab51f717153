//! The leptonic photon self-energy Π_ℓ(q²) for e, μ, τ.
//!
//! One loop is exact in the lepton mass for every q² (spacelike, timelike below and above
//! the pair threshold, and a power series for tiny |q²/m²|). The two- and three-loop terms
//! are the high-energy expansions published by Steinhauser (1998), see [`higher_orders`].
//!
//! Sign convention (module [`crate::vp`]): Π(0) = 0, Re Π > 0 at large |q²|,
//! Im Π(s + i0) = −(α/3) R_ℓ(s) above threshold.

use crate::constants::{ALPHA, M_E_GEV, M_MU_GEV, M_TAU_GEV};
use num_complex::Complex64;
use std::f64::consts::PI;

/// The charged-lepton masses summed over (CODATA 2022 e, μ; PDG 2026 τ), GeV.
pub const LEPTON_MASSES_GEV: [f64; 3] = [M_E_GEV, M_MU_GEV, M_TAU_GEV];

/// Riemann ζ(3), ζ(5) and ln 2 (DLMF 25.6, 4.2; 20 digits).
const ZETA3: f64 = 1.202_056_903_159_594;
const ZETA5: f64 = 1.036_927_755_143_37;
const ZETA2: f64 = PI * PI / 6.0;

/// |x| = |q²/m²| below which the one-loop function uses its power series.
const SERIES_LIMIT: f64 = 0.05;

/// One-loop Π of a lepton of mass `m_gev` at q² + i0, exact in the mass.
///
/// With y = 4m²/q² and b = √(1 − y) (q² < 0 or q² ≥ 4m²):
/// Π = (α/3π)[−5/3 − y + (1 + y/2)·b·(ln|(1 + b)/(1 − b)| − iπ·θ(q² > 4m²))];
/// for 0 < q² < 4m² the b-term is 2√(y − 1)·arctan(1/√(y − 1)); for |q²/m²| < 0.05 the
/// series −(2α/π) Σₙ xⁿ/n · ((n+1)!)²/(2n+3)!, x = q²/m², from the Feynman-parameter form
/// Π = (2α/π)∫₀¹ dz z(1 − z) ln(1 − z(1 − z)x − i0).
///
/// # References
/// Peskin & Schroeder (1995) eq. (7.90) and §7.5; at threshold Π(4m²) = −(8/9)(α/π).
pub fn one_loop(q2_gev2: f64, m_gev: f64) -> Complex64 {
    let m2 = m_gev * m_gev;
    let x = q2_gev2 / m2;
    let c = ALPHA / (3.0 * PI);
    if x.abs() < SERIES_LIMIT {
        return Complex64::new(series(x), 0.0);
    }
    let y = 4.0 / x;
    if q2_gev2 < 0.0 || x >= 4.0 {
        let b = (1.0 - y).max(0.0).sqrt();
        // ln|(1+b)/(1−b)| = ln((1+b)²/|y|), free of the cancellation in 1 − b.
        let lg = if b == 0.0 {
            0.0
        } else {
            ((1.0 + b) * (1.0 + b) / y.abs()).ln()
        };
        let re = c * (-5.0 / 3.0 - y + (1.0 + 0.5 * y) * b * lg);
        let im = if x > 4.0 {
            -ALPHA / 3.0 * (1.0 + 0.5 * y) * b
        } else {
            0.0
        };
        Complex64::new(re, im)
    } else {
        let r = (y - 1.0).sqrt();
        Complex64::new(
            c * (-5.0 / 3.0 - y + (1.0 + 0.5 * y) * 2.0 * r * (1.0 / r).atan()),
            0.0,
        )
    }
}

/// −(2α/π) Σₙ xⁿ/n · ((n+1)!)²/(2n+3)! for |x| < 0.05 (terms fall by ≥ 80× each).
fn series(x: f64) -> f64 {
    let mut sum = 0.0;
    let mut xn = 1.0;
    // c_n = ((n+1)!)²/(2n+3)!; c_1 = 4/120, c_{n+1}/c_n = (n+2)²/((2n+4)(2n+5)).
    let mut cn = 4.0 / 120.0;
    for n in 1..=9 {
        xn *= x;
        sum += xn / n as f64 * cn;
        let nf = n as f64;
        cn *= (nf + 2.0) * (nf + 2.0) / ((2.0 * nf + 4.0) * (2.0 * nf + 5.0));
    }
    -2.0 * ALPHA / PI * sum
}

/// R of a lepton pair at lowest order, β(3 − β²)/2 (zero below threshold).
pub fn r_lepton(s_gev2: f64, m_gev: f64) -> f64 {
    let y = 4.0 * m_gev * m_gev / s_gev2;
    if s_gev2 <= 0.0 || y >= 1.0 {
        return 0.0;
    }
    let b = (1.0 - y).sqrt();
    0.5 * b * (3.0 - b * b)
}

/// The two- and three-loop leptonic Π at q² + i0, summed over e, μ, τ.
///
/// Per lepton (a = α/π, L = ln(|q²|/m²)), the high-energy expansions of Steinhauser,
/// Phys. Lett. B 429 (1998) 158 (hep-ph/9803313), with his first mass correction:
/// - two loops: a²[L/4 + ζ(3) − 5/24 + 3(m²/q²)L];
/// - three loops, quenched (no inner lepton loop): a³[−121/48 + (−5 + 8 ln 2)ζ(2)
///   − 99/16 ζ(3) + 10ζ(5) + L/8] (coefficients recalled from that paper: from memory);
/// - three loops, double bubble (lepton j inside lepton i): the leading and next-to-leading
///   logarithms of the renormalisation group, a³/12·[((ℓ − ℓⱼ)² − (λ − ℓⱼ)²)/2 − (5/3)(ℓ − λ)]
///   for ℓ = ln|q²| > λ = max(ln mᵢ², ln mⱼ²), zero below. This is our reconstruction, not the
///   paper's full two-scale result; at M_Z² it gives 0.0103 × 10⁻⁴ of the three-loop total,
///   close to the paper's ≈ 0.0106 × 10⁻⁴ (from memory).
///
/// The expansions hold for |q²| ≫ m²: each single-lepton term is multiplied by
/// w = x²/(x² + 16), x = |q²|/m² (w = ½ at the threshold |q²| = 4m², 1 − 2·10⁻⁶ for the τ
/// at M_Z), the mass correction 3(m²/q²)L by x³/(x³ + 64) (also ½ there), so that they
/// switch off smoothly where they are not valid (where they are of order a² ≈ 5 × 10⁻⁶ at
/// most) and leave the one loop's Uehling limit −(α/15π)q²/m² for |q²| ≪ m². Imaginary part: the two-loop −(α/3)R_ℓ⁽⁰⁾·(3α/4π), the
/// O(α) correction to R_ℓ; three-loop imaginary parts (O(α³)) are neglected, as is the
/// −π²/2 of the timelike continuation of the double-bubble square (4 × 10⁻⁸ at M_Z²).
pub fn higher_orders(q2_gev2: f64) -> Complex64 {
    let aq = q2_gev2.abs();
    if aq == 0.0 {
        return Complex64::new(0.0, 0.0);
    }
    let a = ALPHA / PI;
    let lq = aq.ln();
    let (lm, quenched_const) = *CONSTANTS;
    let mut re = 0.0;
    let mut im = 0.0;
    for (i, &m) in LEPTON_MASSES_GEV.iter().enumerate() {
        let m2 = m * m;
        let x = aq / m2;
        let w = x * x / (x * x + 16.0);
        let big_l = lq - lm[i];
        let two = a * a * (0.25 * big_l + ZETA3 - 5.0 / 24.0);
        let three = a * a * a * (quenched_const + big_l / 8.0);
        // The mass correction 3(m²/q²)L is switched off by w₃ = x³/(x³ + 64) (½ at x = 4
        // like w), written 3x²/(x³ + 64)·L: with w it fell only like x·L and outgrew the one
        // loop's x/15 for |q²| ≪ m² (sign flipped at 1e-320 GeV²), and 3/x alone overflows.
        let mass_correction = a * a * 3.0 / (x + 64.0 / (x * x)) * big_l;
        re += w * (two + three) + mass_correction;
        if q2_gev2 > 0.0 {
            im -= ALPHA / 3.0 * r_lepton(q2_gev2, m) * 3.0 * ALPHA / (4.0 * PI);
        }
        for &lj in &lm {
            let lambda = lm[i].max(lj);
            if lq > lambda {
                let (big_a, big_b) = (lq - lj, lambda - lj);
                re += a * a * a / 12.0
                    * (0.5 * (big_a * big_a - big_b * big_b) - 5.0 / 3.0 * (lq - lambda));
            }
        }
    }
    Complex64::new(re, im)
}

/// (ln mᵢ² for e, μ, τ; the quenched three-loop constant), computed once.
static CONSTANTS: std::sync::LazyLock<([f64; 3], f64)> = std::sync::LazyLock::new(|| {
    let lm = LEPTON_MASSES_GEV.map(|m| (m * m).ln());
    let quenched =
        -121.0 / 48.0 + (-5.0 + 8.0 * 2f64.ln()) * ZETA2 - 99.0 / 16.0 * ZETA3 + 10.0 * ZETA5;
    (lm, quenched)
});

/// The total leptonic Π(q² + i0): exact one loop plus [`higher_orders`], e + μ + τ.
pub fn pi_leptonic(q2_gev2: f64) -> Complex64 {
    let mut pi = higher_orders(q2_gev2);
    for &m in &LEPTON_MASSES_GEV {
        pi += one_loop(q2_gev2, m);
    }
    pi
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn series_and_closed_form_meet() {
        // Both forms are exact; at the switch |x| = 0.05 they must agree to rounding of
        // the closed form (its O(1) terms cancel to O(x/15): ~1e-13 relative).
        for x in [-0.0500001, 0.0500001, -0.04999, 0.04999] {
            let m = M_MU_GEV;
            let q2 = x * m * m;
            let y = 4.0 / x;
            let c = ALPHA / (3.0 * PI);
            let closed = if x < 0.0 {
                let b = (1.0 - y).sqrt();
                c * (-5.0 / 3.0 - y + (1.0 + 0.5 * y) * b * ((b + 1.0) / (b - 1.0)).ln())
            } else {
                let r = (y - 1.0).sqrt();
                c * (-5.0 / 3.0 - y + (1.0 + 0.5 * y) * 2.0 * r * (1.0 / r).atan())
            };
            let got = one_loop(q2, m).re;
            assert!(
                (got / closed - 1.0).abs() < 1e-9,
                "x={x}: {got} vs {closed}"
            );
        }
    }
}
