//! Integrable power-law endpoint singularities, removed by substitution.

use super::{Integral, Tolerance, integrate};

/// ∫₀^c b·x^(b−1)·g(x) dx for 0 < b, by t = x^b (then b·x^(b−1) dx = dt):
/// ∫₀^(c^b) g(t^(1/b)) dt, whose integrand is as smooth as g near 0.
///
/// This is the form of the soft-photon term of ISR radiators (b ≈ 0.07): never hand
/// x^(b−1) itself to a quadrature rule. `breakpoints` are in x.
pub fn integrate_power_endpoint<G: FnMut(f64) -> f64>(
    mut g: G,
    b: f64,
    c: f64,
    breakpoints: &[f64],
    tol: Tolerance,
) -> Integral {
    let inv_b = 1.0 / b;
    let mapped: Vec<f64> = breakpoints
        .iter()
        .filter(|&&x| x > 0.0 && x < c)
        .map(|&x| x.powf(b))
        .collect();
    integrate(|t| g(t.powf(inv_b)), 0.0, c.powf(b), &mapped, tol)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn beta_function_closed_form() {
        // ∫₀¹ b x^(b−1) (1 − x) dx = 1 − b/(b+1) = 1/(b+1) (closed form), b = 0.07 as for ISR.
        let b = 0.07;
        let r = integrate_power_endpoint(|x| 1.0 - x, b, 1.0, &[], Tolerance::relative(1e-13));
        assert!((r.value - 1.0 / (b + 1.0)).abs() < 1e-13, "{r:?}");
        // ∫₀^c b x^(b−1) dx = c^b.
        let r = integrate_power_endpoint(|_| 1.0, b, 0.3, &[], Tolerance::relative(1e-14));
        assert!((r.value - 0.3f64.powf(b)).abs() < 1e-14);
    }
}
