//! The strong coupling α_s(μ²) in the MS-bar scheme, run from α_s(M_Z²) at four loops
//! through the charm and bottom flavour thresholds.
//!
//! μ² da/d μ² = −a²(β₀ + β₁a + β₂a² + β₃a³), a = α_s/π, with the four-loop coefficients of
//! van Ritbergen, Vermaseren & Larin, Phys. Lett. B 400 (1997) 379, eq. (8) (in their
//! normalisation divided by 4ⁿ⁺¹ for a = α_s/π). Matching at μ = m̄_Q(m̄_Q) is continuous, which is
//! exact at two loops; the three-loop constant (11/72)a² (Chetyrkin, Kniehl & Steinhauser 1997;
//! from memory) is neglected: a 2 × 10⁻⁴ relative effect on α_s near the thresholds, which
//! keeps R continuous there so that Re Π has no logarithmic spike at those energies.
//!
//! The solution is tabulated once (RK4 in ln μ², step 0.01) and interpolated by one cubic
//! spline per flavour number, so a query costs a binary search and a cubic.

use crate::numeric::CubicSpline;

const ZETA3: f64 = 1.202_056_903_159_594;

/// The β-function coefficients for a = α_s/π at `nf` flavours.
fn beta(nf: f64) -> [f64; 4] {
    [
        (11.0 - 2.0 * nf / 3.0) / 4.0,
        (102.0 - 38.0 * nf / 3.0) / 16.0,
        (2857.0 / 2.0 - 5033.0 * nf / 18.0 + 325.0 * nf * nf / 54.0) / 64.0,
        (149_753.0 / 6.0 + 3564.0 * ZETA3 - (1_078_361.0 / 162.0 + 6508.0 * ZETA3 / 27.0) * nf
            + (50_065.0 / 162.0 + 6472.0 * ZETA3 / 81.0) * nf * nf
            + 1093.0 * nf * nf * nf / 729.0)
            / 256.0,
    ]
}

fn rhs(a: f64, b: &[f64; 4]) -> f64 {
    -a * a * (b[0] + a * (b[1] + a * (b[2] + a * b[3])))
}

/// Lowest and highest μ² tabulated (GeV²); queries outside are clamped.
const MU2_MIN: f64 = 0.8;
const MU2_MAX: f64 = 1e13;
const STEP: f64 = 0.01;

/// α_s(μ²) run from α_s(M_Z²) with flavour thresholds at m̄_c, m̄_b.
#[derive(Debug, Clone)]
pub struct AlphaS {
    /// (upper edge in ln μ², nf, spline of a(ln μ²)) for nf = 3, 4, 5.
    pieces: Vec<(f64, f64, CubicSpline)>,
    alpha_s_mz: f64,
}

impl AlphaS {
    /// Run from `alpha_s_mz` at M_Z = `m_z_gev` with thresholds `m_c_gev`, `m_b_gev` (MS-bar).
    pub fn new(alpha_s_mz: f64, m_z_gev: f64, m_c_gev: f64, m_b_gev: f64) -> Self {
        let t_z = (m_z_gev * m_z_gev).ln();
        let t_c = (m_c_gev * m_c_gev).ln();
        let t_b = (m_b_gev * m_b_gev).ln();
        let (t_lo, t_hi) = (MU2_MIN.ln(), MU2_MAX.ln());
        let a_z = alpha_s_mz / std::f64::consts::PI;
        // nf = 5 up and down from M_Z, then 4 down from m_b, then 3 down from m_c.
        let (t5, a5) = run(a_z, t_z, &[t_b, t_hi], 5.0);
        let a_b = a5[0][0];
        let (t4, a4) = run(a_b, t_b, &[t_c, t_b], 4.0);
        let a_c = a4[0][0];
        let (t3, a3) = run(a_c, t_c, &[t_lo, t_c], 3.0);
        let piece = |t: Vec<f64>, a: Vec<f64>| CubicSpline::new(t, a).expect("monotone grid");
        AlphaS {
            pieces: vec![
                (t_c, 3.0, piece(t3, a3[1].clone())),
                (t_b, 4.0, piece(t4, a4[1].clone())),
                (f64::INFINITY, 5.0, piece(t5, a5[1].clone())),
            ],
            alpha_s_mz,
        }
    }

    /// a = α_s(μ²)/π and the number of active flavours at μ² (GeV²).
    pub fn a_and_nf(&self, mu2_gev2: f64) -> (f64, f64) {
        let t = mu2_gev2.clamp(MU2_MIN, MU2_MAX).ln();
        let (_, nf, spline) = self
            .pieces
            .iter()
            .find(|(edge, _, _)| t < *edge)
            .unwrap_or(&self.pieces[2]);
        (spline.eval(t), *nf)
    }

    /// α_s(μ²).
    pub fn alpha_s(&self, mu2_gev2: f64) -> f64 {
        self.a_and_nf(mu2_gev2).0 * std::f64::consts::PI
    }

    /// The input α_s(M_Z²).
    pub fn alpha_s_mz(&self) -> f64 {
        self.alpha_s_mz
    }
}

/// RK4 from (a0, t0) to both ends of `span` = [t_lo, t_hi] (t0 inside). Returns the sorted
/// grid in t and [[a at t_lo], a on the grid]; a at t_lo starts the next lower piece.
fn run(a0: f64, t0: f64, span: &[f64; 2], nf: f64) -> (Vec<f64>, [Vec<f64>; 2]) {
    let b = beta(nf);
    let mut lower = vec![(t0, a0)];
    let mut upper = vec![];
    for (end, out) in [(span[0], &mut lower), (span[1], &mut upper)] {
        let n = ((end - t0).abs() / STEP).ceil().max(1.0) as usize;
        let h = (end - t0) / n as f64;
        let (mut t, mut a) = (t0, a0);
        for _ in 0..n {
            let k1 = rhs(a, &b);
            let k2 = rhs(a + 0.5 * h * k1, &b);
            let k3 = rhs(a + 0.5 * h * k2, &b);
            let k4 = rhs(a + h * k3, &b);
            a += h / 6.0 * (k1 + 2.0 * k2 + 2.0 * k3 + k4);
            t += h;
            out.push((t, a));
        }
    }
    let a_lower_end = lower.last().map_or(a0, |p| p.1);
    lower.reverse();
    lower.extend(upper);
    lower.dedup_by(|x, y| x.0 <= y.0);
    let (t, a): (Vec<f64>, Vec<f64>) = lower.into_iter().unzip();
    (t, [vec![a_lower_end], a])
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reproduces_input_and_is_continuous() {
        let a = AlphaS::new(0.118, 91.188, 1.2729, 4.186);
        assert!((a.alpha_s(91.188f64.powi(2)) - 0.118).abs() < 1e-10);
        for m in [1.2729f64, 4.186] {
            let (lo, hi) = (
                a.alpha_s(m * m * (1.0 - 1e-9)),
                a.alpha_s(m * m * (1.0 + 1e-9)),
            );
            assert!((lo - hi).abs() < 1e-8, "jump at {m}: {lo} {hi}");
        }
    }
}
