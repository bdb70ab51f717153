//! The `quadrature` crate's double-exponential rule behind a guard.
//!
//! The crate takes an absolute tolerance only, runs one capped sweep, and silently
//! replaces NaN/inf integrand values by zero. This wrapper rejects non-finite values,
//! meets a relative tolerance by bisecting where the estimate is too large, and
//! reports its status. Use it for smooth integrands and as an independent second
//! rule against [`super::integrate`] in tests.

use super::{Integral, Status, Tolerance};
use std::cell::Cell;

/// Bisection depth at which the wrapper gives up with [`Status::BudgetExhausted`].
const MAX_DEPTH: u32 = 30;

/// ∫ₐᵇ f(x) dx by the tanh-sinh rule, guarded.
pub fn integrate_double_exponential<F: Fn(f64) -> f64>(
    f: F,
    a: f64,
    b: f64,
    tol: Tolerance,
) -> Integral {
    let bad: Cell<Option<f64>> = Cell::new(None);
    let guarded = |x: f64| {
        let y = f(x);
        if y.is_finite() {
            y
        } else {
            if bad.get().is_none() {
                bad.set(Some(x));
            }
            0.0
        }
    };
    // A first sweep fixes the scale for the relative tolerance.
    let first = quadrature::double_exponential::integrate(guarded, a, b, 1e-300);
    let target = tol.allowed(first.integral).max(f64::MIN_POSITIVE);
    let mut out = Integral {
        value: 0.0,
        error: 0.0,
        evaluations: first.num_function_evaluations as usize,
        status: Status::Converged,
    };
    if first.error_estimate <= target {
        out.value = first.integral;
        out.error = first.error_estimate;
    } else {
        let width = (b - a).abs();
        bisect(&guarded, a, b, target, width, 0, &mut out);
    }
    if let Some(x) = bad.get() {
        out.value = f64::NAN;
        out.error = f64::INFINITY;
        out.status = Status::NonFinite { x };
    }
    out
}

fn bisect<F: Fn(f64) -> f64>(
    f: &F,
    a: f64,
    b: f64,
    target: f64,
    width: f64,
    depth: u32,
    out: &mut Integral,
) {
    // Each piece gets its share of the error budget, proportional to its width.
    let share = target * (b - a).abs() / width;
    let r = quadrature::double_exponential::integrate(f, a, b, share);
    out.evaluations += r.num_function_evaluations as usize;
    if r.error_estimate <= share || depth >= MAX_DEPTH {
        if r.error_estimate > share {
            out.status = Status::BudgetExhausted;
        }
        out.value += r.integral;
        out.error += r.error_estimate;
        return;
    }
    let mid = 0.5 * (a + b);
    bisect(f, a, mid, target, width, depth + 1, out);
    bisect(f, mid, b, target, width, depth + 1, out);
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn smooth_integrals_to_relative_tolerance() {
        // ∫₀^π sin x dx = 2; ∫₀¹ 1/(1+x²) dx = π/4 (closed forms).
        let r = integrate_double_exponential(
            f64::sin,
            0.0,
            std::f64::consts::PI,
            Tolerance::relative(1e-12),
        );
        assert!(r.converged() && (r.value - 2.0).abs() < 1e-12, "{r:?}");
        let r = integrate_double_exponential(
            |x| 1.0 / (1.0 + x * x),
            0.0,
            1.0,
            Tolerance::relative(1e-13),
        );
        assert!(
            (r.value - std::f64::consts::FRAC_PI_4).abs() < 1e-13,
            "{r:?}"
        );
    }

    #[test]
    fn rejects_the_divergent_integral_the_bare_crate_accepts() {
        // ∫₀¹ dx/x diverges; the bare crate returns a finite number (deps.md measured 31.7).
        let r = integrate_double_exponential(|x| 1.0 / x, 0.0, 1.0, Tolerance::relative(1e-8));
        assert!(!r.converged(), "{r:?}");
    }

    #[test]
    fn flags_nan_values() {
        let r =
            integrate_double_exponential(|x| (x - 0.3).sqrt(), 0.0, 1.0, Tolerance::relative(1e-8));
        assert!(matches!(r.status, Status::NonFinite { .. }), "{r:?}");
    }
}
