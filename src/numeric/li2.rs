//! The dilogarithm Li₂(z) = −∫₀^z ln(1 − t)/t dt.
//!
//! Algorithm of G. 't Hooft and M. Veltman, Nucl. Phys. B153 (1979) 365, §A: map z into
//! |z| ≤ 1, Re z ≤ ½ with the inversion and reflection identities, then sum the Bernoulli
//! series Li₂(z) = Σₙ Bₙ uⁿ⁺¹/(n + 1)!, u = −ln(1 − z), which converges fast there.

use num_complex::Complex64;
use std::f64::consts::PI;

/// B₂ₖ/(2k + 1)! for k = 1…12 (Bernoulli numbers B₂ = 1/6, B₄ = −1/30, …, B₂₄).
const COEFFS: [f64; 12] = {
    const B: [f64; 12] = [
        1.0 / 6.0,
        -1.0 / 30.0,
        1.0 / 42.0,
        -1.0 / 30.0,
        5.0 / 66.0,
        -691.0 / 2730.0,
        7.0 / 6.0,
        -3617.0 / 510.0,
        43867.0 / 798.0,
        -174611.0 / 330.0,
        854513.0 / 138.0,
        -236364091.0 / 2730.0,
    ];
    let mut c = [0.0; 12];
    let mut k = 0;
    let mut fact = 1.0; // (2k + 1)! before the update, (2k + 3)! after
    while k < 12 {
        let n = (2 * k + 3) as f64;
        fact *= (n - 1.0) * n;
        c[k] = B[k] / fact;
        k += 1;
    }
    c
};

const ZETA2: f64 = PI * PI / 6.0;

/// Real part of Li₂(x) for real x (for x > 1, Li₂ is complex; its real part is returned).
pub fn li2(x: f64) -> f64 {
    li2_complex(Complex64::new(x, 0.0)).re
}

/// Li₂(z) for complex z, on the principal branch (cut along real z > 1, where the
/// value returned is the limit from Im z = +0).
pub fn li2_complex(z: Complex64) -> Complex64 {
    if z == Complex64::new(0.0, 0.0) {
        return z;
    }
    if z == Complex64::new(1.0, 0.0) {
        return Complex64::new(ZETA2, 0.0);
    }
    if z.norm_sqr() > 1.0 {
        // Li₂(z) = −Li₂(1/z) − π²/6 − ½ ln²(−z); −z taken just below the cut for z on it.
        let minus_z = if z.im == 0.0 {
            Complex64::new(-z.re, -0.0)
        } else {
            -z
        };
        let l = minus_z.ln();
        return -li2_inner(1.0 / z) - ZETA2 - 0.5 * l * l;
    }
    li2_inner(z)
}

/// |z| ≤ 1.
fn li2_inner(z: Complex64) -> Complex64 {
    if z.re > 0.5 {
        // Li₂(z) = −Li₂(1 − z) + π²/6 − ln z ln(1 − z).
        let w = Complex64::new(1.0, 0.0) - z;
        if w.norm_sqr() == 0.0 {
            return Complex64::new(ZETA2, 0.0);
        }
        return -series(w) + ZETA2 - z.ln() * w.ln();
    }
    series(z)
}

fn series(z: Complex64) -> Complex64 {
    let u = -(Complex64::new(1.0, 0.0) - z).ln();
    let u2 = u * u;
    let mut sum = u - 0.25 * u2;
    let mut p = u;
    for c in COEFFS {
        p *= u2;
        sum += c * p;
    }
    sum
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn special_values() {
        // Closed forms (Lewin, *Polylogarithms and associated functions*, 1981, §1.2):
        // Li₂(1) = π²/6, Li₂(−1) = −π²/12, Li₂(½) = π²/12 − ½ ln²2.
        assert!((li2(1.0) - ZETA2).abs() < 1e-15);
        assert!((li2(-1.0) + PI * PI / 12.0).abs() < 1e-15);
        assert!((li2(0.5) - (PI * PI / 12.0 - 0.5 * 2f64.ln().powi(2))).abs() < 1e-15);
        // Li₂(2) = π²/4 − iπ ln 2 on the Im z = +0 side (Lewin 1981, eq. 1.13).
        let v = li2_complex(Complex64::new(2.0, 0.0));
        assert!((v.re - PI * PI / 4.0).abs() < 1e-14, "{v}");
    }

    #[test]
    fn reflection_identity() {
        // Euler: Li₂(x) + Li₂(1 − x) = π²/6 − ln x ln(1 − x).
        for x in [0.01, 0.2, 0.37, 0.8, 0.999] {
            let lhs = li2(x) + li2(1.0 - x);
            let rhs = ZETA2 - x.ln() * (1.0 - x).ln();
            assert!((lhs - rhs).abs() < 1e-14, "x={x}");
        }
    }
}
