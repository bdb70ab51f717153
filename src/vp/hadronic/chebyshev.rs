//! Piecewise Chebyshev interpolation with adaptive bisection, for tabulating Re Π.
//!
//! On each piece f is sampled at the N + 1 Chebyshev–Lobatto points and turned into
//! Chebyshev coefficients; a piece is accepted when its last three coefficients sum to less
//! than the tolerance (the usual truncation estimate for smooth f, e.g. Trefethen,
//! *Approximation Theory and Approximation Practice*, SIAM 2013, ch. 8) and bisected
//! otherwise. Evaluation is a binary search and a Clenshaw sum: no allocation.

use rayon::prelude::*;
use std::f64::consts::PI;

const N: usize = 20;
const MAX_DEPTH: u32 = 40;

/// A piecewise Chebyshev interpolant on [edges₀, edges_last].
#[derive(Debug, Clone)]
pub struct Chebyshev {
    edges: Vec<f64>,
    coeffs: Vec<[f64; N + 1]>,
}

impl Chebyshev {
    /// Tabulate `f` on [`breaks`₀, `breaks`_last] (pieces never straddle a break) to
    /// absolute tolerance `tol(values)` per piece (`values`: the samples on the piece).
    pub fn build<F, T>(f: &F, breaks: &[f64], tol: &T) -> Self
    where
        F: Fn(f64) -> f64 + Sync,
        T: Fn(&[f64]) -> f64 + Sync,
    {
        let pieces: Vec<Vec<(f64, [f64; N + 1])>> = breaks
            .par_windows(2)
            .map(|w| {
                let mut out = Vec::new();
                refine(f, tol, w[0], w[1], 0, &mut out);
                out
            })
            .collect();
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

    /// The interpolant at x (clamped into the range).
    pub fn eval(&self, x: f64) -> f64 {
        let n = self.coeffs.len();
        let i = self.edges.partition_point(|&e| e <= x).clamp(1, n) - 1;
        let (a, b) = (self.edges[i], self.edges[i + 1]);
        let t = ((2.0 * x - a - b) / (b - a)).clamp(-1.0, 1.0);
        let c = &self.coeffs[i];
        let (mut b1, mut b2) = (0.0, 0.0);
        for &ck in c[1..].iter().rev() {
            let b0 = 2.0 * t * b1 - b2 + ck;
            b2 = b1;
            b1 = b0;
        }
        t * b1 - b2 + c[0]
    }
}

/// Bisect [a, b] until the coefficients' tail is below tolerance; push (b, coeffs) pieces.
fn refine<F, T>(f: &F, tol: &T, a: f64, b: f64, depth: u32, out: &mut Vec<(f64, [f64; N + 1])>)
where
    F: Fn(f64) -> f64,
    T: Fn(&[f64]) -> f64,
{
    let values: Vec<f64> = (0..=N)
        .map(|k| {
            let t = (PI * k as f64 / N as f64).cos();
            f(0.5 * (a + b) + 0.5 * (b - a) * t)
        })
        .collect();
    let c = coefficients(&values);
    let tail = c[N].abs() + c[N - 1].abs() + c[N - 2].abs();
    if tail <= tol(&values) || depth >= MAX_DEPTH {
        out.push((b, c));
    } else {
        let m = 0.5 * (a + b);
        refine(f, tol, a, m, depth + 1, out);
        refine(f, tol, m, b, depth + 1, out);
    }
}

/// Chebyshev coefficients from values at the Lobatto points cos(kπ/N), k = 0…N.
fn coefficients(v: &[f64]) -> [f64; N + 1] {
    let mut c = [0.0; N + 1];
    for (j, cj) in c.iter_mut().enumerate() {
        let mut sum = 0.0;
        for (k, vk) in v.iter().enumerate() {
            let w = if k == 0 || k == N { 0.5 } else { 1.0 };
            sum += w * vk * (PI * (j * k) as f64 / N as f64).cos();
        }
        *cj = 2.0 / N as f64 * sum;
    }
    c[0] *= 0.5;
    c[N] *= 0.5;
    c
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn interpolates_smooth_and_kinked_functions() {
        // exp on [0, 2] and |x| (kink at a break) reproduced to the tolerance asked.
        let f = |x: f64| x.exp() + x.abs();
        let t = Chebyshev::build(&f, &[-1.0, 0.0, 2.0], &|_: &[f64]| 1e-12);
        for k in 0..=300 {
            let x = -1.0 + 3.0 * k as f64 / 300.0;
            assert!((t.eval(x) - f(x)).abs() < 1e-11, "x={x}");
        }
    }
}
