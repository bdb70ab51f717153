//! Piecewise Chebyshev interpolation with adaptive bisection, for tabulating Π and 1/(1 − Π).
//!
//! On each piece f is sampled at the K Chebyshev–Lobatto points and turned into Chebyshev
//! coefficients; a piece is accepted when its last three coefficients sum to less than the
//! tolerance (the usual truncation estimate for smooth f, e.g. Trefethen, *Approximation
//! Theory and Approximation Practice*, SIAM 2013, ch. 8) and bisected otherwise. f may be
//! vector-valued (M components, e.g. the real and imaginary part of a complex function):
//! the components share the pieces, and one Clenshaw pass evaluates them together.
//! Evaluation is a binary search and a Clenshaw sum: no allocation.

use rayon::prelude::*;
use std::f64::consts::PI;

const MAX_DEPTH: u32 = 40;

/// A piecewise Chebyshev interpolant on [edges₀, edges_last] of an M-component function,
/// K coefficients (degree K − 1) per piece.
#[derive(Debug, Clone)]
pub struct Chebyshev<const K: usize = 21, const M: usize = 1> {
    edges: Vec<f64>,
    coeffs: Vec<[[f64; M]; K]>,
}

/// The Lobatto nodes cos(kπ/(K − 1)) and the cosine matrix cos(jkπ/(K − 1)): computed once
/// per build, not per piece.
struct Basis<const K: usize> {
    nodes: [f64; K],
    cos: [[f64; K]; K],
}

impl<const K: usize> Basis<K> {
    fn new() -> Self {
        let n = (K - 1) as f64;
        let mut cos = [[0.0; K]; K];
        for (j, row) in cos.iter_mut().enumerate() {
            for (k, c) in row.iter_mut().enumerate() {
                *c = (PI * ((j * k) % (2 * (K - 1))) as f64 / n).cos();
            }
        }
        Basis {
            nodes: std::array::from_fn(|k| cos[1][k]),
            cos,
        }
    }
}

type Piece<const K: usize, const M: usize> = (f64, [[f64; M]; K]);

/// What a tolerance sees of a candidate piece [a, b].
#[derive(Debug, Clone, Copy)]
pub struct PieceStats {
    pub a: f64,
    pub b: f64,
    /// The largest Euclidean norm of f's samples.
    pub largest: f64,
    /// Σₖ k²|cₖ| (components summed): Markov's bound on |df/dt|, t ∈ [−1, 1] the local
    /// variable. A steep f sampled at rounded arguments carries an error ~ ulp × slope
    /// that no bisection removes; a tolerance can allow for it.
    pub slope: f64,
}

impl<const K: usize, const M: usize> Chebyshev<K, M> {
    /// Tabulate `f` on [`breaks`₀, `breaks`_last] (pieces never straddle a break) to
    /// absolute tolerance `tol(stats)` per piece ([`PieceStats`]). The intervals between
    /// breaks are built in parallel.
    pub fn build<F, T>(f: &F, breaks: &[f64], tol: &T) -> Self
    where
        F: Fn(f64) -> [f64; M] + Sync,
        T: Fn(&PieceStats) -> f64 + Sync,
    {
        let basis = Basis::new();
        let pieces: Vec<Vec<Piece<K, M>>> = breaks
            .par_windows(2)
            .map(|w| refine_interval(f, tol, &basis, w[0], w[1]))
            .collect();
        Self::assemble(breaks, pieces)
    }

    /// As [`Self::build`] on the calling thread only: for building inside a lock, where
    /// waiting on rayon work could deadlock (see [`crate::vp::standard_hadronic`]).
    pub fn build_serial<F, T>(f: &F, breaks: &[f64], tol: &T) -> Self
    where
        F: Fn(f64) -> [f64; M],
        T: Fn(&PieceStats) -> f64,
    {
        let basis = Basis::new();
        let pieces = breaks
            .windows(2)
            .map(|w| refine_interval(f, tol, &basis, w[0], w[1]))
            .collect();
        Self::assemble(breaks, pieces)
    }

    fn assemble(breaks: &[f64], pieces: Vec<Vec<Piece<K, M>>>) -> Self {
        let mut edges = vec![breaks[0]];
        let mut coeffs = Vec::new();
        for piece in pieces.into_iter().flatten() {
            edges.push(piece.0);
            coeffs.push(piece.1);
        }
        Chebyshev { edges, coeffs }
    }

    /// The tabulated range.
    pub fn range(&self) -> (f64, f64) {
        (self.edges[0], self.edges[self.edges.len() - 1])
    }

    /// Number of pieces.
    pub fn pieces(&self) -> usize {
        self.coeffs.len()
    }

    /// The pieces' ends: piece i is \[edges\[i\], edges\[i + 1\]\].
    pub fn edges(&self) -> &[f64] {
        &self.edges
    }

    /// The interpolant at x (clamped into the range).
    pub fn eval(&self, x: f64) -> [f64; M] {
        let n = self.coeffs.len();
        let i = self.edges.partition_point(|&e| e <= x).clamp(1, n) - 1;
        let (a, b) = (self.edges[i], self.edges[i + 1]);
        let t = ((2.0 * x - a - b) / (b - a)).clamp(-1.0, 1.0);
        let c = &self.coeffs[i];
        let (mut b1, mut b2) = ([0.0; M], [0.0; M]);
        for ck in c[1..].iter().rev() {
            for m in 0..M {
                let b0 = 2.0 * t * b1[m] - b2[m] + ck[m];
                b2[m] = b1[m];
                b1[m] = b0;
            }
        }
        std::array::from_fn(|m| t * b1[m] - b2[m] + c[0][m])
    }

    /// Piece i in the power basis of its local variable t ∈ [−1, 1]: Σⱼ pⱼ tʲ, for
    /// evaluation schemes shorter in latency than Clenshaw's (Estrin). The conversion
    /// loses little for the low degrees it is meant for: the coefficients of Tₖ grow like
    /// (1 + √2)ᵏ, and those of a converged piece fall faster.
    pub fn power_coefficients(&self, i: usize) -> [[f64; M]; K] {
        let c = &self.coeffs[i];
        let mut p = [[0.0; M]; K];
        // Tₖ in powers of t by T₀ = 1, T₁ = t, Tₖ₊₁ = 2tTₖ − Tₖ₋₁.
        let (mut prev, mut cur) = ([0.0; K], [0.0; K]);
        prev[0] = 1.0;
        if K > 1 {
            cur[1] = 1.0;
        }
        for (k, ck) in c.iter().enumerate() {
            let tk = if k == 0 { &prev } else { &cur };
            for (j, pj) in p.iter_mut().enumerate() {
                for m in 0..M {
                    pj[m] += ck[m] * tk[j];
                }
            }
            if k >= 1 && k + 1 < K {
                let mut next = [0.0; K];
                for j in 0..K {
                    next[j] = if j > 0 { 2.0 * cur[j - 1] } else { 0.0 } - prev[j];
                }
                prev = cur;
                cur = next;
            }
        }
        p
    }
}

/// The pieces of [a, b] after bisection.
fn refine_interval<F, T, const K: usize, const M: usize>(
    f: &F,
    tol: &T,
    basis: &Basis<K>,
    a: f64,
    b: f64,
) -> Vec<Piece<K, M>>
where
    F: Fn(f64) -> [f64; M],
    T: Fn(&PieceStats) -> f64,
{
    let mut out = Vec::new();
    refine(f, tol, basis, a, b, 0, &mut out);
    out
}

/// Bisect [a, b] until the coefficients' tail is below tolerance; push (b, coeffs) pieces.
fn refine<F, T, const K: usize, const M: usize>(
    f: &F,
    tol: &T,
    basis: &Basis<K>,
    a: f64,
    b: f64,
    depth: u32,
    out: &mut Vec<Piece<K, M>>,
) where
    F: Fn(f64) -> [f64; M],
    T: Fn(&PieceStats) -> f64,
{
    let values: [[f64; M]; K] =
        std::array::from_fn(|k| f(0.5 * (a + b) + 0.5 * (b - a) * basis.nodes[k]));
    let largest = values
        .iter()
        .map(|v| v.iter().map(|x| x * x).sum::<f64>().sqrt())
        .fold(0.0f64, f64::max);
    let c = coefficients(basis, &values);
    let tail: f64 = c[K - 3..].iter().flatten().map(|x| x.abs()).sum();
    let slope = c
        .iter()
        .enumerate()
        .map(|(k, ck)| (k * k) as f64 * ck.iter().map(|x| x.abs()).sum::<f64>())
        .sum();
    let stats = PieceStats {
        a,
        b,
        largest,
        slope,
    };
    if tail <= tol(&stats) || depth >= MAX_DEPTH {
        out.push((b, c));
    } else {
        let m = 0.5 * (a + b);
        refine(f, tol, basis, a, m, depth + 1, out);
        refine(f, tol, basis, m, b, depth + 1, out);
    }
}

/// `breaks` (sorted) with more breaks graded geometrically towards singular points: for
/// each (centre, start) of `towards` inside the breaks' range, at centre ± start·ratioᵏ
/// (k ≥ 1) on both sides, up to half-way from the centre to the first of `limits` (sorted)
/// beyond centre ± start. A function with a kink or branch point at an edge (start: the
/// first piece's width over the ratio), or a pole pair just off the axis (start: where the
/// breaks around it end), needs pieces that grow with the distance from it; bisection
/// finds them too, but pays a rejected fit at every level (about half of all fits for
/// Π_had and for 1/(1 − Π)), and graded breaks start it at the end.
pub fn graded_towards(
    breaks: &[f64],
    towards: &[(f64, f64)],
    limits: &[f64],
    ratio: f64,
) -> Vec<f64> {
    let mut out = breaks.to_vec();
    let (Some(&first), Some(&last)) = (breaks.first(), breaks.last()) else {
        return out;
    };
    for &(centre, start) in towards.iter().filter(|t| (first..=last).contains(&t.0)) {
        for dir in [-1.0, 1.0] {
            let from = centre + dir * start;
            let next = if dir > 0.0 {
                limits.iter().find(|&&b| b > from).unwrap_or(&last)
            } else {
                limits.iter().rev().find(|&&b| b < from).unwrap_or(&first)
            };
            let room = 0.5 * (next - centre).abs();
            let mut h = start * ratio;
            while h < room {
                out.push(centre + dir * h);
                h *= ratio;
            }
        }
    }
    out.retain(|x| (first..=last).contains(x));
    out.sort_by(f64::total_cmp);
    out.dedup();
    out
}

/// Chebyshev coefficients from values at the Lobatto points cos(kπ/N), k = 0…N = K − 1.
fn coefficients<const K: usize, const M: usize>(
    basis: &Basis<K>,
    v: &[[f64; M]; K],
) -> [[f64; M]; K] {
    let n = K - 1;
    let mut c = [[0.0; M]; K];
    for (j, cj) in c.iter_mut().enumerate() {
        for (k, vk) in v.iter().enumerate() {
            let w = if k == 0 || k == n { 0.5 } else { 1.0 };
            for m in 0..M {
                cj[m] += w * vk[m] * basis.cos[j][k];
            }
        }
        let scale = if j == 0 || j == n { 1.0 } else { 2.0 } / n as f64;
        for x in cj.iter_mut() {
            *x *= scale;
        }
    }
    c
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn interpolates_smooth_and_kinked_functions() {
        // exp on [0, 2] and |x| (kink at a break) reproduced to the tolerance asked.
        let f = |x: f64| [x.exp() + x.abs()];
        let t: Chebyshev = Chebyshev::build(&f, &[-1.0, 0.0, 2.0], &|_: &PieceStats| 1e-12);
        for k in 0..=300 {
            let x = -1.0 + 3.0 * k as f64 / 300.0;
            assert!((t.eval(x)[0] - f(x)[0]).abs() < 1e-11, "x={x}");
        }
    }

    #[test]
    fn graded_breaks_grow_geometrically_from_an_edge_up_to_half_way() {
        // Edge 1 between breaks 0 and 4: room 0.5 below, 1.5 above; steps 0.1, 0.3, 0.9.
        // (A centre beyond the breaks, 5, adds nothing.)
        let breaks = [0.0, 1.0, 4.0];
        let b = graded_towards(&breaks, &[(1.0, 0.1 / 3.0), (5.0, 0.1)], &breaks, 3.0);
        let want = [0.0, 0.7, 0.9, 1.0, 1.1, 1.3, 1.9, 4.0];
        assert_eq!(b.len(), want.len(), "{b:?}");
        for (x, w) in b.iter().zip(want) {
            assert!((x - w).abs() < 1e-15, "{b:?}");
        }
        // √x near its branch point at 0, from graded breaks: as accurate as asked.
        let f = |x: f64| [x.abs().sqrt()];
        let breaks = [-1.0, 0.0, 1.0];
        let breaks = graded_towards(&breaks, &[(0.0, 1e-6 / 3.0)], &breaks, 3.0);
        let t: Chebyshev = Chebyshev::build(&f, &breaks, &|_: &PieceStats| 1e-12);
        for k in 0..=2000 {
            let x = -1.0 + 2.0 * (k as f64 / 2000.0);
            assert!((t.eval(x)[0] - f(x)[0]).abs() < 1e-11, "x={x}");
        }
    }

    #[test]
    fn pairs_serial_build_and_power_basis_agree() {
        // A complex function as two components, built serially at degree 11: Clenshaw and
        // the power basis give the same values (to rounding, the basis change's cost).
        let f = |x: f64| [(3.0 * x).cos(), (2.0 * x).sin() / (2.0 + x)];
        let t = Chebyshev::<12, 2>::build_serial(&f, &[-1.0, 0.5, 3.0], &|p: &PieceStats| {
            1e-12 * p.largest
        });
        for k in 0..=400 {
            let x = -1.0 + 4.0 * k as f64 / 400.0;
            let v = t.eval(x);
            let i = t.edges().partition_point(|&e| e <= x).clamp(1, t.pieces()) - 1;
            let (a, b) = (t.edges()[i], t.edges()[i + 1]);
            let u = (2.0 * x - a - b) / (b - a);
            let p = t.power_coefficients(i);
            for m in 0..2 {
                assert!((v[m] - f(x)[m]).abs() < 1e-11, "x={x} m={m}");
                let power: f64 = p.iter().rev().fold(0.0, |acc, c| acc * u + c[m]);
                assert!((power - v[m]).abs() < 1e-14, "x={x} m={m}");
            }
        }
    }
}
