//! A fixed quadrature rule for dispersion integrals over s ∈ [s_th, ∞).
//!
//! Panels of 10-point Gauss–Legendre between the model's structures: each panel is at most
//! 12% of s wide (40% above 150 GeV², where R is pQCD alone) and, near a peak at M² with width parameter MΓ, at most
//! max(MΓ, |s − M²|) wide, and panels are graded towards every edge (a kink of R, where a
//! pole q² close by needs resolution on the scale of its distance). A panel that starts at a
//! threshold where R rises like a power of (s − s₀) (the ππ threshold, β³) uses
//! s = a + (b − a)t², so the integrand is smooth in t. Above 10¹² GeV² one panel in u = 10¹²/s covers the tail.
//!
//! With the nodes fixed, R is sampled once per model and every q² costs one pass over them:
//! this is how the tables are built and how out-of-table points are evaluated.

use crate::numeric::GaussLegendre;

/// Upper end of the panelled range, GeV²; the tail beyond is one mapped panel.
pub const S_END: f64 = 1e12;
const POINTS: usize = 10;
const MAX_RATIO: f64 = 0.12;
/// Above this s (GeV²) R is smooth (pQCD, no edges beyond the b onset): wider panels.
const SMOOTH_ABOVE: f64 = 150.0;
const MAX_RATIO_SMOOTH: f64 = 0.4;

/// Nodes and weights for ∫_{s_th}^∞ f(s) ds.
#[derive(Debug, Clone)]
pub struct Rule {
    pub s: Vec<f64>,
    pub w: Vec<f64>,
    /// q·wᵢ/sᵢ is the subtraction's weight: wᵢ/sᵢ kept to save a division per node.
    w_over_s: Vec<f64>,
    pub s_th: f64,
}

impl Rule {
    /// Build the rule: `edges` are kinks/discontinuities (graded panel boundaries), `plain`
    /// further panel boundaries without grading (the rows of a user table, where R is
    /// linear in √s between them), `thresholds` where R starts like a power (t² map),
    /// `peaks` (M², MΓ) pairs.
    pub fn new(
        s_th: f64,
        edges: &[f64],
        plain: &[f64],
        thresholds: &[f64],
        peaks: &[(f64, f64)],
    ) -> Self {
        let gl = GaussLegendre::new(POINTS);
        let mut bounds: Vec<f64> = edges
            .iter()
            .chain(thresholds)
            .copied()
            .chain(peaks.iter().map(|p| p.0))
            .filter(|&e| e > s_th && e < S_END)
            .collect();
        bounds.push(s_th);
        bounds.push(S_END);
        let mut inner = bounds.clone();
        inner.sort_by(f64::total_cmp);
        bounds.extend(plain.iter().copied().filter(|&e| e > s_th && e < S_END));
        bounds.sort_by(f64::total_cmp);
        bounds.dedup();
        let scale = |s: f64| {
            // Graded towards every edge (R has a kink there, and a pole q² next to it needs
            // resolution on the scale of its distance): h ≤ max(distance, 10⁻³ s).
            // (Approaching an edge from below the panel must end within half the distance.)
            let d = inner
                .iter()
                .map(|&e| if e > s { 0.5 * (e - s) } else { s - e })
                .fold(f64::INFINITY, f64::min);
            let ratio = if s < SMOOTH_ABOVE {
                MAX_RATIO
            } else {
                MAX_RATIO_SMOOTH
            };
            let mut h = (ratio * s).min(d.max(1e-3 * s));
            for &(m2, mg) in peaks {
                h = h.min(mg.max((s - m2).abs()));
            }
            h
        };
        let (mut s_nodes, mut weights) = (Vec::new(), Vec::new());
        for pair in bounds.windows(2) {
            let (lo, hi) = (pair[0], pair[1]);
            let squared = thresholds.iter().chain([&s_th]).any(|&t| t == lo);
            let mut a = lo;
            while a < hi {
                // Grade towards a threshold: the first panel is small.
                let mut h = scale(a).max(1e-9 * a);
                if squared && a == lo {
                    h = h.min(0.25 * (hi - lo));
                }
                let b = if a + h > hi - 0.25 * h { hi } else { a + h };
                for (x, wx) in gl.nodes().iter().zip(gl.weights()) {
                    let t = 0.5 * (x + 1.0);
                    if squared && a == lo {
                        // s = a + (b − a)t², ds = 2(b − a)t dt, t ∈ [0, 1] (dt = dx/2).
                        s_nodes.push(a + (b - a) * t * t);
                        weights.push(wx * (b - a) * t);
                    } else {
                        s_nodes.push(a + (b - a) * t);
                        weights.push(0.5 * wx * (b - a));
                    }
                }
                a = b;
            }
        }
        // Tail: s = S_END/u, ds = S_END/u² du, u ∈ (0, 1].
        for (x, wx) in gl.nodes().iter().zip(gl.weights()) {
            let u = 0.5 * (x + 1.0);
            s_nodes.push(S_END / u);
            weights.push(0.5 * wx * S_END / (u * u));
        }
        let w_over_s = weights.iter().zip(&s_nodes).map(|(w, s)| w / s).collect();
        Rule {
            s: s_nodes,
            w: weights,
            w_over_s,
            s_th,
        }
    }

    /// P∫ g(s)/(s − q) ds over [s_th, ∞) with gᵢ = g(sᵢ) given and g_q = g(q) (used only
    /// when s_th < q): pole subtraction with g(q)·q/s, whose principal value is
    /// g(q)·ln(s_th/(q − s_th)) in closed form.
    pub fn principal_value(&self, g: &[f64], q: f64, g_q: f64) -> f64 {
        let mut sum = 0.0;
        if q <= self.s_th {
            for ((s, w), gi) in self.s.iter().zip(&self.w).zip(g) {
                sum += w * gi / (s - q);
            }
            return sum;
        }
        let gq_q = g_q * q;
        for (((s, w), ws), gi) in self.s.iter().zip(&self.w).zip(&self.w_over_s).zip(g) {
            let d = s - q;
            // A node within rounding of the pole: the subtracted integrand's limit there is
            // g′(q) + g(q)/q, of the order of its neighbours; its weight is negligible.
            if d.abs() > 1e-10 * q {
                sum += (w * gi - gq_q * ws) / d;
            }
        }
        sum + g_q * (self.s_th / (q - self.s_th)).ln()
    }
}
