//! Gauss–Kronrod pairs of any order on [−1, 1]: the (2n+1)-point Kronrod extension of the
//! n-point Gauss–Legendre rule, sharing its n nodes. A fixed panel then gets its value (the
//! Kronrod rule, exact to degree 3n + 1) and its error estimate (the Gauss rule, exact to
//! 2n − 1) from 2n + 1 evaluations, not from two unrelated rules.
//!
//! The Jacobi–Kronrod matrix comes from the Legendre recurrence by Laurie's algorithm
//! (D. P. Laurie, "Calculation of Gauss–Kronrod quadrature rules", *Math. Comp.* 66 (1997)
//! 1133–1145, §4); its eigenvalues are the nodes and b₀ times the squared first components
//! of its eigenvectors the weights (Golub & Welsch, *Math. Comp.* 23 (1969) 221–230), found
//! here by the implicit QL iteration with Wilkinson's shift. The Gauss nodes and weights
//! come from [`GaussLegendre`] (Newton on Pₙ), the shared nodes from there too.

use super::GaussLegendre;

/// A Gauss–Kronrod pair on [−1, 1], nodes ascending.
#[derive(Debug, Clone)]
pub struct KronrodPair {
    nodes: Vec<f64>,
    kronrod: Vec<f64>,
    /// The Gauss weight at each node: 0 at the n + 1 nodes the Kronrod rule adds.
    gauss: Vec<f64>,
}

impl KronrodPair {
    /// The pair extending the n-point Gauss rule, n ≥ 1 (n ≤ 64: tested to 24, and the
    /// eigenproblem loses no accuracy with n).
    pub fn new(n: usize) -> Self {
        let n = n.clamp(1, 64);
        let (diag, off) = jacobi_kronrod(n);
        let (mut nodes, first) = eigen_first_components(diag, off);
        // b₀ = ∫₋₁¹ dx = 2: the weights are 2·v₀².
        let mut kronrod: Vec<f64> = first.iter().map(|v| 2.0 * v * v).collect();
        let mut order: Vec<usize> = (0..nodes.len()).collect();
        order.sort_by(|&i, &j| nodes[i].total_cmp(&nodes[j]));
        nodes = order.iter().map(|&i| nodes[i]).collect();
        kronrod = order.iter().map(|&i| kronrod[i]).collect();
        // The shared nodes interlace: every other one, from the second, is a Gauss node.
        let g = GaussLegendre::new(n);
        let mut gauss = vec![0.0; 2 * n + 1];
        let mut by_node: Vec<(f64, f64)> = g
            .nodes()
            .iter()
            .copied()
            .zip(g.weights().iter().copied())
            .collect();
        by_node.sort_by(|a, b| a.0.total_cmp(&b.0));
        for (k, (x, w)) in by_node.into_iter().enumerate() {
            nodes[2 * k + 1] = x;
            gauss[2 * k + 1] = w;
        }
        KronrodPair {
            nodes,
            kronrod,
            gauss,
        }
    }

    /// The 2n + 1 nodes, ascending.
    pub fn nodes(&self) -> &[f64] {
        &self.nodes
    }

    /// The Kronrod weights.
    pub fn kronrod_weights(&self) -> &[f64] {
        &self.kronrod
    }

    /// The Gauss weights on the same nodes (0 where the Kronrod rule added the node).
    pub fn gauss_weights(&self) -> &[f64] {
        &self.gauss
    }
}

/// The diagonal a₀…a₂ₙ and the off-diagonal √b₁…√b₂ₙ of the Jacobi–Kronrod matrix for the
/// Legendre weight on [−1, 1] (monic recurrence aₖ = 0, b₀ = 2, bₖ = k²/(4k² − 1)).
///
/// Laurie's algorithm: the recurrence coefficients up to ⌈3n/2⌉ fix those of the Kronrod
/// matrix's first n + 1 rows; the rest follow from mixed moments σ (kept in the two rows
/// `s` and `t`, swapped each step), the "eastward" phase m = 0…n−2 and the "southward"
/// phase m = n−1…2n−3 of the paper's §4.
fn jacobi_kronrod(n: usize) -> (Vec<f64>, Vec<f64>) {
    let len = 2 * n + 1;
    let (mut a, mut b) = (vec![0.0; len], vec![0.0; len]);
    let known = (3 * n).div_ceil(2);
    for (k, bk) in b.iter_mut().enumerate().take(known + 1) {
        let kf = k as f64;
        *bk = if k == 0 {
            2.0
        } else {
            kf * kf / (4.0 * kf * kf - 1.0)
        };
    }
    // (aₖ = 0 for the Legendre weight: `a` starts right.)
    let width = n / 2 + 2;
    let (mut s, mut t) = (vec![0.0; width], vec![0.0; width]);
    t[1] = b[n + 1];
    for m in 0..n.saturating_sub(1) {
        let mut u = 0.0;
        for k in (0..=m.div_ceil(2)).rev() {
            let l = m - k;
            u += (a[k + n + 1] - a[l]) * t[k + 1] + b[k + n + 1] * s[k] - b[l] * s[k + 1];
            s[k + 1] = u;
        }
        std::mem::swap(&mut s, &mut t);
    }
    for j in (0..=n / 2).rev() {
        s[j + 1] = s[j];
    }
    for m in (n - 1)..(2 * n).saturating_sub(2) {
        let mut u = 0.0;
        let mut last_j = 0;
        for k in (m + 1 - n)..=((m - 1) / 2) {
            let l = m - k;
            let j = n - 1 - l;
            u += -(a[k + n + 1] - a[l]) * t[j + 1] - b[k + n + 1] * s[j + 1] + b[l] * s[j + 2];
            s[j + 1] = u;
            last_j = j;
        }
        let k = m.div_ceil(2);
        if m % 2 == 0 {
            a[k + n + 1] = a[k] + (s[last_j + 1] - b[k + n + 1] * s[last_j + 2]) / t[last_j + 2];
        } else {
            b[k + n + 1] = s[last_j + 1] / s[last_j + 2];
        }
        std::mem::swap(&mut s, &mut t);
    }
    a[2 * n] = a[n - 1] - b[2 * n] * s[1] / t[1];
    let off = b[1..].iter().map(|x| x.sqrt()).collect();
    (a, off)
}

/// Eigenvalues of the symmetric tridiagonal matrix (diagonal `d`, off-diagonal `e`, one
/// shorter) and the first component of each normalised eigenvector: the implicit QL
/// iteration with Wilkinson's shift, rotating only the first row of the eigenvector
/// matrix (all Golub–Welsch needs).
fn eigen_first_components(mut d: Vec<f64>, off: Vec<f64>) -> (Vec<f64>, Vec<f64>) {
    let n = d.len();
    let mut e = off;
    e.push(0.0);
    let mut z = vec![0.0; n];
    z[0] = 1.0;
    for l in 0..n {
        for _ in 0..60 {
            let mut m = l;
            while m + 1 < n {
                let dd = d[m].abs() + d[m + 1].abs();
                if e[m].abs() <= f64::EPSILON * dd {
                    break;
                }
                m += 1;
            }
            if m == l {
                break;
            }
            let mut g = (d[l + 1] - d[l]) / (2.0 * e[l]);
            let mut r = g.hypot(1.0);
            g = d[m] - d[l] + e[l] / (g + r.copysign(g));
            let (mut s, mut c, mut p) = (1.0, 1.0, 0.0);
            let mut deflated = false;
            for i in (l..m).rev() {
                let f = s * e[i];
                let b = c * e[i];
                r = f.hypot(g);
                e[i + 1] = r;
                if r == 0.0 {
                    d[i + 1] -= p;
                    e[m] = 0.0;
                    deflated = true;
                    break;
                }
                s = f / r;
                c = g / r;
                g = d[i + 1] - p;
                r = (d[i] - g) * s + 2.0 * c * b;
                p = s * r;
                d[i + 1] = g + p;
                g = c * r - b;
                let zf = z[i + 1];
                z[i + 1] = s * z[i] + c * zf;
                z[i] = c * z[i] - s * zf;
            }
            if deflated {
                continue;
            }
            d[l] -= p;
            e[l] = g;
            e[m] = 0.0;
        }
    }
    (d, z)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// QUADPACK's published 21-point pair (Piessens et al., *QUADPACK*, Springer 1983, qk21,
    /// kept verbatim in `gauss_kronrod.rs`): our n = 10 pair must reproduce it.
    #[test]
    fn reproduces_the_published_21_point_pair() {
        let p = KronrodPair::new(10);
        let (xgk, wgk, wg) = super::super::gauss_kronrod::published_qk21();
        // Nodes ascending: index 10 + k is the k-th from the centre, XGK[10 − k].
        for k in 0..=10 {
            let i = 10 + k;
            assert!((p.nodes()[i] - xgk[10 - k]).abs() < 2e-15, "node {i}");
            assert!(
                (p.nodes()[20 - i] + xgk[10 - k]).abs() < 2e-15,
                "node {}",
                20 - i
            );
            assert!(
                (p.kronrod_weights()[i] - wgk[10 - k]).abs() < 2e-15,
                "weight {i}"
            );
        }
        // Gauss weights at XGK[1], XGK[3], … (WG), zero at the Kronrod-only nodes.
        for (k, w) in wg.iter().enumerate() {
            let i = 20 - (2 * k + 1);
            assert!((p.gauss_weights()[i] - w).abs() < 2e-15, "gauss {i}");
            assert_eq!(p.gauss_weights()[i - 1], 0.0);
        }
    }

    /// Exactness, a closed form: ∫₋₁¹ xᵏ dx = 2/(k + 1) for even k, 0 for odd, by the
    /// Kronrod rule up to degree 3n + 1 and by the Gauss rule up to 2n − 1. Beyond, the
    /// Gauss rule misses x²ⁿ by 2²ⁿ⁺¹(n!)⁴/((2n + 1)((2n)!)²) (Abramowitz & Stegun 1964,
    /// eq. 25.4.30 with f⁽²ⁿ⁾ = (2n)!), checked where that is above rounding (n ≤ 8).
    /// Positive weights, nodes inside (−1, 1).
    #[test]
    fn exact_to_their_degrees_for_the_orders_we_use() {
        for n in [4, 8, 16, 18, 20, 24] {
            let p = KronrodPair::new(n);
            assert_eq!(p.nodes().len(), 2 * n + 1);
            assert!(p.nodes().iter().all(|x| x.abs() < 1.0));
            assert!(p.kronrod_weights().iter().all(|&w| w > 0.0), "n = {n}");
            let rule = |w: &[f64], k: i32| -> f64 {
                p.nodes().iter().zip(w).map(|(x, w)| w * x.powi(k)).sum()
            };
            let exact = |k: i32| {
                if k % 2 == 0 {
                    2.0 / (k + 1) as f64
                } else {
                    0.0
                }
            };
            for k in 0..=(3 * n as i32 + 1) {
                let err = (rule(p.kronrod_weights(), k) - exact(k)).abs();
                assert!(err < 1e-14, "n = {n}, Kronrod, degree {k}: {err:e}");
            }
            for k in 0..=(2 * n as i32 - 1) {
                let err = (rule(p.gauss_weights(), k) - exact(k)).abs();
                assert!(err < 1e-14, "n = {n}, Gauss, degree {k}: {err:e}");
            }
            if n <= 8 {
                let fact = |m: usize| (1..=m).map(|i| i as f64).product::<f64>();
                let want = 2f64.powi(2 * n as i32 + 1) * fact(n).powi(4)
                    / ((2 * n + 1) as f64 * fact(2 * n).powi(2));
                let miss = exact(2 * n as i32) - rule(p.gauss_weights(), 2 * n as i32);
                assert!(
                    (miss / want - 1.0).abs() < 1e-6,
                    "n = {n}: {miss:e} ≠ {want:e}"
                );
            }
        }
    }
}
