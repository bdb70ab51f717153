//! Cauchy principal values by pole subtraction.

use super::{Integral, Tolerance, integrate};

/// P∫ₐᵇ f(x)/(x − x₀) dx for a < x₀ < b, as
/// ∫ₐᵇ [f(x) − f(x₀)]/(x − x₀) dx + f(x₀)·ln((b − x₀)/(x₀ − a)).
///
/// The subtracted integrand is finite at x₀ (a breakpoint, so no node lands on it).
/// For x₀ outside [a, b] the integral is ordinary and computed as such.
pub fn principal_value<F: FnMut(f64) -> f64>(
    mut f: F,
    a: f64,
    b: f64,
    x0: f64,
    breakpoints: &[f64],
    tol: Tolerance,
) -> Integral {
    if x0 <= a || x0 >= b {
        return integrate(|x| f(x) / (x - x0), a, b, breakpoints, tol);
    }
    let f0 = f(x0);
    let mut points = breakpoints.to_vec();
    points.push(x0);
    let mut r = integrate(
        |x| {
            let d = x - x0;
            if d == 0.0 { 0.0 } else { (f(x) - f0) / d }
        },
        a,
        b,
        &points,
        tol,
    );
    r.value += f0 * ((b - x0) / (x0 - a)).ln();
    r
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn closed_forms() {
        // P∫₀¹ dx/(x − ½) = ln 1 = 0; P∫₀² x/(x − ½) dx = 2 + ½ ln 3 (closed forms).
        let tol = Tolerance::relative(1e-13);
        let r = principal_value(|_| 1.0, 0.0, 1.0, 0.5, &[], tol);
        assert!(r.value.abs() < 1e-14, "{r:?}");
        let r = principal_value(|x| x, 0.0, 2.0, 0.5, &[], tol);
        assert!((r.value - (2.0 + 0.5 * 3f64.ln())).abs() < 1e-13, "{r:?}");
        // P∫₀^π cos x /(x − 1) dx checked by scipy.integrate.quad(weight='cauchy', wvar=1)
        // in tests/ref/numeric.py; here only the ordinary branch: ∫₀¹ dx/(x − 2) = ln(1/2).
        let r = principal_value(|_| 1.0, 0.0, 1.0, 2.0, &[], tol);
        assert!((r.value - 0.5f64.ln()).abs() < 1e-14);
    }
}
