//! Fixed n-point Gauss–Legendre rules for hot loops.
//!
//! Nodes are the roots of Pₙ found by Newton's method from the Tricomi initial guess,
//! weights 2/((1 − x²) Pₙ′(x)²) (Abramowitz & Stegun 1964, eq. 25.4.29). They are
//! computed once per rule; evaluating an integral allocates nothing.

/// An n-point Gauss–Legendre rule on [−1, 1].
#[derive(Debug, Clone)]
pub struct GaussLegendre {
    nodes: Vec<f64>,
    weights: Vec<f64>,
}

impl GaussLegendre {
    /// The rule with `n ≥ 1` points (exact for polynomials of degree ≤ 2n − 1).
    pub fn new(n: usize) -> Self {
        let n = n.max(1);
        let mut nodes = vec![0.0; n];
        let mut weights = vec![0.0; n];
        let nf = n as f64;
        for i in 0..n.div_ceil(2) {
            // Tricomi's approximation to the i-th root, then Newton.
            let k = i as f64 + 1.0;
            let mut x = (std::f64::consts::PI * (k - 0.25) / (nf + 0.5)).cos()
                * (1.0 - (nf - 1.0) / (8.0 * nf * nf * nf));
            let mut dp = 0.0;
            for _ in 0..100 {
                let (p, d) = legendre_and_derivative(n, x);
                dp = d;
                let step = p / d;
                x -= step;
                if step.abs() < 1e-16 {
                    let (_, d) = legendre_and_derivative(n, x);
                    dp = d;
                    break;
                }
            }
            let w = 2.0 / ((1.0 - x * x) * dp * dp);
            nodes[i] = -x;
            nodes[n - 1 - i] = x;
            weights[i] = w;
            weights[n - 1 - i] = w;
        }
        if n % 2 == 1 {
            nodes[n / 2] = 0.0;
        }
        GaussLegendre { nodes, weights }
    }

    /// Nodes on [−1, 1], ascending.
    pub fn nodes(&self) -> &[f64] {
        &self.nodes
    }

    /// Weights matching [`Self::nodes`]; they sum to 2.
    pub fn weights(&self) -> &[f64] {
        &self.weights
    }

    /// ∫ₐᵇ f(x) dx with this rule.
    pub fn integrate<F: FnMut(f64) -> f64>(&self, mut f: F, a: f64, b: f64) -> f64 {
        let c = 0.5 * (a + b);
        let h = 0.5 * (b - a);
        let mut sum = 0.0;
        for (x, w) in self.nodes.iter().zip(&self.weights) {
            sum += w * f(c + h * x);
        }
        sum * h
    }
}

/// (Pₙ(x), Pₙ′(x)) by the three-term recurrence.
fn legendre_and_derivative(n: usize, x: f64) -> (f64, f64) {
    let (mut p0, mut p1) = (1.0, x);
    for k in 2..=n {
        let kf = k as f64;
        let p2 = ((2.0 * kf - 1.0) * x * p1 - (kf - 1.0) * p0) / kf;
        p0 = p1;
        p1 = p2;
    }
    let d = n as f64 * (x * p1 - p0) / (x * x - 1.0);
    (p1, d)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exact_for_polynomials_up_to_degree_2n_minus_1() {
        // ∫₋₁¹ x^k dx = 2/(k+1) for even k, 0 for odd k (closed form).
        for n in [1, 2, 5, 16, 48, 96] {
            let rule = GaussLegendre::new(n);
            assert!(
                (rule.weights().iter().sum::<f64>() - 2.0).abs() < 1e-13,
                "n={n}"
            );
            for k in 0..(2 * n).min(40) {
                let want = if k % 2 == 0 {
                    2.0 / (k as f64 + 1.0)
                } else {
                    0.0
                };
                let got = rule.integrate(|x| x.powi(k as i32), -1.0, 1.0);
                assert!((got - want).abs() < 1e-13, "n={n} k={k}: {got} vs {want}");
            }
        }
    }

    #[test]
    fn five_point_nodes_match_the_table() {
        // Abramowitz & Stegun (1964) Table 25.4, n = 5: x = 0.906179845938664,
        // w = 0.236926885056189; x = 0.538469310105683, w = 0.478628670499366.
        let r = GaussLegendre::new(5);
        assert!((r.nodes()[4] - 0.906_179_845_938_664).abs() < 1e-15);
        assert!((r.weights()[4] - 0.236_926_885_056_189).abs() < 1e-15);
        assert!((r.nodes()[3] - 0.538_469_310_105_683).abs() < 1e-15);
        assert!((r.weights()[3] - 0.478_628_670_499_366).abs() < 1e-15);
    }
}
