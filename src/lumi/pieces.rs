//! Fixed-rule quadrature on pieces, for the visible cross-sections: pieces that cluster their
//! nodes at ends where the integrand has a kink or a square-root edge, the search for the
//! points where a piecewise-defined integrand changes branch, and the polynomial through a
//! rule's nodes (to integrate a sharply varying factor against a smooth one sampled there).

use crate::numeric::GaussLegendre;

/// A piece [a, b] of an integration variable. At an end marked as a kink the integrand may
/// have a kink or behave like √(x − a); the map x = a + (b − a)φ(σ) with φ′ = 0 there turns
/// both into smooth functions of σ, so a Gauss rule in σ converges fast again.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Piece {
    pub a: f64,
    pub b: f64,
    pub kink_a: bool,
    pub kink_b: bool,
}

impl Piece {
    /// x(σ) and dx/dσ for σ ∈ [0, 1]: φ = σ, σ², σ(2 − σ) or σ²(3 − 2σ) by the kinked ends.
    pub fn map(&self, u: f64) -> (f64, f64) {
        let w = 1.0 - u;
        let (phi, dphi) = match (self.kink_a, self.kink_b) {
            (false, false) => (u, 1.0),
            (true, false) => (u * u * u, 3.0 * u * u),
            (false, true) => (1.0 - w * w * w, 3.0 * w * w),
            (true, true) => (
                u * u * u * (10.0 - 15.0 * u + 6.0 * u * u),
                30.0 * u * u * w * w,
            ),
        };
        let h = self.b - self.a;
        (self.a + h * phi, h * dphi)
    }

    /// σ of x ∈ [a, b] (the inverse of [`Piece::map`]).
    pub fn unmap(&self, x: f64) -> f64 {
        let p = ((x - self.a) / (self.b - self.a)).clamp(0.0, 1.0);
        match (self.kink_a, self.kink_b) {
            (false, false) => p,
            (true, false) => p.cbrt(),
            (false, true) => 1.0 - (1.0 - p).cbrt(),
            (true, true) => {
                // φ rises monotonically from 0 to 1: bisection to rounding.
                let (mut lo, mut hi) = (0.0f64, 1.0f64);
                for _ in 0..64 {
                    let m = 0.5 * (lo + hi);
                    if m * m * m * (10.0 - 15.0 * m + 6.0 * m * m) < p {
                        lo = m;
                    } else {
                        hi = m;
                    }
                }
                0.5 * (lo + hi)
            }
        }
    }
}

/// The pieces between breakpoints (x, is-a-kink): sorted, with points closer than `merge`
/// taken as one (a kink if either was).
pub(crate) fn pieces(mut breaks: Vec<(f64, bool)>, merge: f64) -> Vec<Piece> {
    breaks.sort_by(|p, q| p.0.total_cmp(&q.0));
    let mut merged: Vec<(f64, bool)> = Vec::with_capacity(breaks.len());
    for (x, kink) in breaks {
        match merged.last_mut() {
            Some(last) if x - last.0 <= merge => last.1 |= kink,
            _ => merged.push((x, kink)),
        }
    }
    merged
        .windows(2)
        .map(|w| Piece {
            a: w[0].0,
            b: w[1].0,
            kink_a: w[0].1,
            kink_b: w[1].1,
        })
        .collect()
}

/// An n-point Gauss–Legendre rule on [0, 1], with the barycentric weights of its nodes.
pub(crate) struct UnitRule {
    pub nodes: Vec<f64>,
    pub weights: Vec<f64>,
    bary: Vec<f64>,
}

impl UnitRule {
    pub fn new(n: usize) -> Self {
        let g = GaussLegendre::new(n);
        let nodes: Vec<f64> = g.nodes().iter().map(|x| 0.5 * (x + 1.0)).collect();
        let weights = g.weights().iter().map(|w| 0.5 * w).collect();
        // λⱼ = 1/Πₖ≠ⱼ(xⱼ − xₖ), rescaled (the interpolation formula is scale-free).
        let mut bary: Vec<f64> = (0..n)
            .map(|j| {
                let p: f64 = (0..n)
                    .filter(|&k| k != j)
                    .map(|k| nodes[j] - nodes[k])
                    .product();
                1.0 / p
            })
            .collect();
        let big = bary.iter().fold(0.0f64, |m, l| m.max(l.abs()));
        bary.iter_mut().for_each(|l| *l /= big);
        UnitRule {
            nodes,
            weights,
            bary,
        }
    }

    /// The polynomial through (nodeⱼ, valuesⱼ) at u (barycentric form), componentwise.
    pub fn interpolate<const K: usize>(&self, values: &[[f64; K]], u: f64) -> [f64; K] {
        let mut num = [0.0; K];
        let mut den = 0.0;
        for ((x, l), v) in self.nodes.iter().zip(&self.bary).zip(values) {
            let d = u - x;
            if d == 0.0 {
                return *v;
            }
            let q = l / d;
            den += q;
            for k in 0..K {
                num[k] += q * v[k];
            }
        }
        num.map(|n| n / den)
    }
}

/// The points of (grid₀, grid_last) where `key` changes: each grid cell whose ends differ is
/// bisected to a width of `tol`, then searched on from there (so several changes in one cell
/// are found unless the key returns to its first value).
pub(crate) fn changes<K: PartialEq>(grid: &[f64], key: impl Fn(f64) -> K, tol: f64) -> Vec<f64> {
    let mut out = Vec::new();
    let mut prev = key(grid[0]);
    for w in grid.windows(2) {
        let next = key(w[1]);
        let (mut a, mut ka) = (w[0], prev);
        while ka != next {
            let (mut lo, mut hi) = (a, w[1]);
            loop {
                let m = 0.5 * (lo + hi);
                if hi - lo <= tol || m <= lo || m >= hi {
                    break;
                }
                if key(m) == ka {
                    lo = m;
                } else {
                    hi = m;
                }
            }
            out.push(0.5 * (lo + hi));
            if hi >= w[1] {
                break;
            }
            (a, ka) = (hi, key(hi));
        }
        prev = next;
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn maps_invert_and_integrate_square_root_edges() {
        for (ka, kb) in [(false, false), (true, false), (false, true), (true, true)] {
            let p = Piece {
                a: 0.5,
                b: 2.0,
                kink_a: ka,
                kink_b: kb,
            };
            // Round trip in x (σ is ill-conditioned where φ′ = 0, x is not).
            for u in [0.0, 0.1, 0.37, 0.8, 1.0] {
                let (x, _) = p.map(u);
                assert!((p.map(p.unmap(x)).0 - x).abs() < 1e-14, "{ka} {kb} u={u}");
            }
            // ∫_{0.5}^{2} √(x − 0.5) dx = (2/3)·1.5^{3/2} (closed form). With the kinked end at
            // a the integrand becomes smooth up to a σ^3.5 (or, two-sided, σ^5.5-like) term:
            // 10 points reach 1e-7; without, the edge holds a 10-point rule to ~1e-3.
            let rule = UnitRule::new(10);
            let got: f64 = rule
                .nodes
                .iter()
                .zip(&rule.weights)
                .map(|(&u, w)| {
                    let (x, dx) = p.map(u);
                    w * dx * (x - 0.5).sqrt()
                })
                .sum();
            let rel = (got / (2.0 / 3.0 * 1.5f64.powf(1.5)) - 1.0).abs();
            if ka {
                assert!(rel < 1e-6, "{ka} {kb}: rel {rel:e}");
            } else {
                assert!(rel > 1e-5, "{ka} {kb}: rel {rel:e}");
            }
        }
    }

    #[test]
    fn interpolation_is_exact_for_polynomials_below_the_rule_size() {
        let rule = UnitRule::new(8);
        let f = |u: f64| [1.0 + u * u * u * u * u * u * u - 3.0 * u, u * u];
        let values: Vec<[f64; 2]> = rule.nodes.iter().map(|&u| f(u)).collect();
        for u in [0.0, 0.123, 0.5, 0.999, 1.0] {
            let got = rule.interpolate(&values, u);
            let want = f(u);
            for k in 0..2 {
                assert!(
                    (got[k] - want[k]).abs() < 1e-12,
                    "u={u}: {got:?} vs {want:?}"
                );
            }
        }
    }

    #[test]
    fn changes_finds_each_switch() {
        // A step function with switches at 0.3, 0.31 (inside one cell) and 0.72.
        let key = |x: f64| u8::from(x > 0.3) + u8::from(x > 0.31) + 2 * u8::from(x > 0.72);
        let grid: Vec<f64> = (0..=10).map(|i| i as f64 / 10.0).collect();
        let got = changes(&grid, key, 1e-13);
        assert_eq!(got.len(), 3, "{got:?}");
        for (g, w) in got.iter().zip([0.3, 0.31, 0.72]) {
            assert!((g - w).abs() < 1e-12, "{got:?}");
        }
    }
}
