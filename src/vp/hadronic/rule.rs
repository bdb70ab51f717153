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
    ///
    /// The sum runs in eight interleaved partial sums, branch-free, so that the
    /// divisions (the cost of every table build: ~2800 nodes per q²) run vectorised; on
    /// x86-64 CPUs with AVX2 from a copy compiled for it (both copies give the same bits).
    pub fn principal_value(&self, g: &[f64], q: f64, g_q: f64) -> f64 {
        #[cfg(target_arch = "x86_64")]
        if std::arch::is_x86_feature_detected!("avx2") {
            // SAFETY: the CPU has AVX2, checked on the line above.
            return unsafe { self.principal_value_avx2(g, q, g_q) };
        }
        self.principal_value_portable(g, q, g_q)
    }

    /// [`Rule::principal_value_portable`] compiled for AVX2.
    #[cfg(target_arch = "x86_64")]
    #[target_feature(enable = "avx2")]
    fn principal_value_avx2(&self, g: &[f64], q: f64, g_q: f64) -> f64 {
        self.principal_value_portable(g, q, g_q)
    }

    #[inline(always)]
    fn principal_value_portable(&self, g: &[f64], q: f64, g_q: f64) -> f64 {
        let columns = [&self.s[..], &self.w, &self.w_over_s, g];
        if q <= self.s_th {
            return lane_sum(columns, |[s, w, _, g]| w * g / (s - q));
        }
        let gq_q = g_q * q;
        // A node within rounding of the pole: the subtracted integrand's limit there is
        // g′(q) + g(q)/q, of the order of its neighbours; its weight is negligible.
        let near = 1e-10 * q;
        let sum = lane_sum(columns, |[s, w, ws, g]| {
            let d = s - q;
            let term = (w * g - gq_q * ws) / d;
            if d.abs() > near { term } else { 0.0 }
        });
        sum + g_q * (self.s_th / (q - self.s_th)).ln()
    }
}

/// Partial sums kept apart in [`principal_value`](Rule::principal_value).
const LANES: usize = 8;

/// Σᵢ term(row i of `columns`) over the shortest column, accumulated in [`LANES`]
/// interleaved partial sums (a fixed order, whatever the instruction set) added pairwise at
/// the end.
#[inline(always)]
fn lane_sum(columns: [&[f64]; 4], term: impl Fn([f64; 4]) -> f64) -> f64 {
    let n = columns.iter().map(|c| c.len()).min().unwrap_or(0);
    let [a, b, c, d] = columns.map(|col| &col[..n]);
    let mut acc = [0.0; LANES];
    let chunks = a
        .chunks_exact(LANES)
        .zip(b.chunks_exact(LANES))
        .zip(c.chunks_exact(LANES).zip(d.chunks_exact(LANES)));
    for ((a, b), (c, d)) in chunks {
        for l in 0..LANES {
            acc[l] += term([a[l], b[l], c[l], d[l]]);
        }
    }
    for (l, i) in (n - n % LANES..n).enumerate() {
        acc[l] += term([a[i], b[i], c[i], d[i]]);
    }
    let [a0, a1, a2, a3, a4, a5, a6, a7] = acc;
    ((a0 + a1) + (a2 + a3)) + ((a4 + a5) + (a6 + a7))
}
