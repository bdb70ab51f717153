//! Fixed n-point Gauss–Hermite rules: ∫ e^(−x²) f(x) dx ≈ Σ wᵢ f(xᵢ), exact for
//! polynomials f of degree ≤ 2n − 1.
//!
//! Nodes are the roots of Hₙ found by Newton's method on the orthonormal recurrence
//! h_j = x √(2/j) h_{j−1} − √((j−1)/j) h_{j−2}, h₀ = π^(−1/4), with the usual asymptotic
//! initial guesses for the largest roots and extrapolation for the rest; weights
//! 2/h′ₙ(xᵢ)² with h′ₙ = √(2n) h_{n−1} (Abramowitz & Stegun 1964, eq. 25.4.46, in the
//! orthonormal normalisation). Computed once per rule.

/// An n-point Gauss–Hermite rule for the weight e^(−x²) on the real line.
#[derive(Debug, Clone)]
pub struct GaussHermite {
    nodes: Vec<f64>,
    weights: Vec<f64>,
}

/// The orthonormal hₙ(x) and h_{n−1}(x).
fn hermite_pair(n: usize, x: f64) -> (f64, f64) {
    let (mut p1, mut p2) = (std::f64::consts::PI.powf(-0.25), 0.0);
    for j in 1..=n {
        let jf = j as f64;
        let p3 = p2;
        p2 = p1;
        p1 = x * (2.0 / jf).sqrt() * p2 - ((jf - 1.0) / jf).sqrt() * p3;
    }
    (p1, p2)
}

impl GaussHermite {
    /// The rule with `n ≥ 1` points (n ≤ 100; the guesses are tested in that range).
    pub fn new(n: usize) -> Self {
        let n = n.clamp(1, 100);
        let nf = n as f64;
        let mut nodes = vec![0.0; n];
        let mut weights = vec![0.0; n];
        let mut z: f64 = 0.0;
        for i in 0..n.div_ceil(2) {
            // Initial guesses for the i-th largest root.
            z = match i {
                0 => (2.0 * nf + 1.0).sqrt() - 1.85575 * (2.0 * nf + 1.0).powf(-1.0 / 6.0),
                1 => z - 1.14 * nf.powf(0.426) / z,
                2 => 1.86 * z - 0.86 * nodes[n - 1],
                3 => 1.91 * z - 0.91 * nodes[n - 2],
                _ => 2.0 * z - nodes[n - 1 - (i - 2)],
            };
            let mut dp = 1.0;
            for _ in 0..100 {
                let (p, prev) = hermite_pair(n, z);
                dp = (2.0 * nf).sqrt() * prev;
                let step = p / dp;
                z -= step;
                if step.abs() <= 1e-15 * z.abs().max(1.0) {
                    let (_, prev) = hermite_pair(n, z);
                    dp = (2.0 * nf).sqrt() * prev;
                    break;
                }
            }
            let w = 2.0 / (dp * dp);
            nodes[n - 1 - i] = z;
            nodes[i] = -z;
            weights[n - 1 - i] = w;
            weights[i] = w;
        }
        if n % 2 == 1 {
            nodes[n / 2] = 0.0;
        }
        GaussHermite { nodes, weights }
    }

    /// Nodes, ascending.
    pub fn nodes(&self) -> &[f64] {
        &self.nodes
    }

    /// Weights matching [`Self::nodes`]; they sum to √π.
    pub fn weights(&self) -> &[f64] {
        &self.weights
    }

    /// E[f(μ + σZ)] for a standard normal Z: the Gaussian average of f with mean `mu` and
    /// standard deviation `sigma`.
    pub fn normal_average<F: FnMut(f64) -> f64>(&self, mut f: F, mu: f64, sigma: f64) -> f64 {
        let scale = std::f64::consts::SQRT_2 * sigma;
        let sum: f64 = self
            .nodes
            .iter()
            .zip(&self.weights)
            .map(|(x, w)| w * f(mu + scale * x))
            .sum();
        sum / std::f64::consts::PI.sqrt()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn moments_of_the_weight_are_exact() {
        // ∫ x^(2k) e^(−x²) dx = Γ(k + 1/2) = √π (2k − 1)!!/2^k (closed form): the n-point
        // rule is exact up to degree 2n − 1; 1e-13 relative is f64 rounding over n terms.
        for n in [1, 2, 5, 10, 16, 24, 40] {
            let g = GaussHermite::new(n);
            let mut want = std::f64::consts::PI.sqrt();
            for k in 0..n {
                let got: f64 = g
                    .nodes()
                    .iter()
                    .zip(g.weights())
                    .map(|(x, w)| w * x.powi(2 * k as i32))
                    .sum();
                assert!(
                    (got / want - 1.0).abs() < 1e-12,
                    "n={n} moment {}: {got} vs {want}",
                    2 * k
                );
                want *= (2 * k + 1) as f64 / 2.0;
            }
            let odd: f64 = g.nodes().iter().zip(g.weights()).map(|(x, w)| w * x).sum();
            assert!(odd.abs() < 1e-13, "n={n}: first moment {odd}");
        }
    }

    #[test]
    fn known_nodes() {
        // H₂ = 4x² − 2: roots ±1/√2; H₃ = 8x³ − 12x: 0, ±√(3/2) (closed forms).
        let g2 = GaussHermite::new(2);
        assert!((g2.nodes()[1] - 0.5f64.sqrt()).abs() < 1e-15);
        let g3 = GaussHermite::new(3);
        assert!((g3.nodes()[2] - 1.5f64.sqrt()).abs() < 1e-14);
        assert_eq!(g3.nodes()[1], 0.0);
        // Gaussian average of cos(x): e^(−σ²/2) cos μ (characteristic function), smooth,
        // so 24 points reach rounding.
        let g = GaussHermite::new(24);
        let got = g.normal_average(f64::cos, 0.3, 1.2);
        assert!((got - (-0.72f64).exp() * 0.3f64.cos()).abs() < 1e-14);
    }
}
