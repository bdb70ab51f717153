//! Natural cubic-spline interpolation on strictly increasing knots.

use thiserror::Error;

#[derive(Debug, Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum SplineError {
    #[error("a spline needs at least 2 knots, got {count}")]
    TooFewKnots { count: usize },
    #[error("knots must be strictly increasing: x[{index}] = {x} follows {previous}")]
    NotIncreasing { index: usize, x: f64, previous: f64 },
    #[error("x and y have different lengths ({nx} and {ny})")]
    LengthMismatch { nx: usize, ny: usize },
    #[error("non-finite value at knot {index}")]
    NotFinite { index: usize },
}

/// A natural cubic spline (second derivative zero at both ends). Outside the knots it
/// extrapolates with the end cubic; callers that must not extrapolate check the range.
#[derive(Debug, Clone)]
pub struct CubicSpline {
    x: Vec<f64>,
    y: Vec<f64>,
    /// Second derivatives at the knots.
    m: Vec<f64>,
}

impl CubicSpline {
    /// Build the spline through (xᵢ, yᵢ).
    ///
    /// # Errors
    /// Fewer than two knots, unequal lengths, non-increasing or non-finite knots.
    pub fn new(x: Vec<f64>, y: Vec<f64>) -> Result<Self, SplineError> {
        let n = x.len();
        if n != y.len() {
            return Err(SplineError::LengthMismatch { nx: n, ny: y.len() });
        }
        if n < 2 {
            return Err(SplineError::TooFewKnots { count: n });
        }
        for i in 0..n {
            if !x[i].is_finite() || !y[i].is_finite() {
                return Err(SplineError::NotFinite { index: i });
            }
            if i > 0 && x[i] <= x[i - 1] {
                return Err(SplineError::NotIncreasing {
                    index: i,
                    x: x[i],
                    previous: x[i - 1],
                });
            }
        }
        // Tridiagonal system for the second derivatives (Thomas algorithm).
        let mut m = vec![0.0; n];
        if n > 2 {
            let mut c_prime = vec![0.0; n];
            let mut d_prime = vec![0.0; n];
            for i in 1..n - 1 {
                let h0 = x[i] - x[i - 1];
                let h1 = x[i + 1] - x[i];
                let a = h0 / 6.0;
                let b = (h0 + h1) / 3.0;
                let c = h1 / 6.0;
                let d = (y[i + 1] - y[i]) / h1 - (y[i] - y[i - 1]) / h0;
                let denom = b - a * c_prime[i - 1];
                c_prime[i] = c / denom;
                d_prime[i] = (d - a * d_prime[i - 1]) / denom;
            }
            for i in (1..n - 1).rev() {
                m[i] = d_prime[i] - c_prime[i] * m[i + 1];
            }
        }
        Ok(CubicSpline { x, y, m })
    }

    /// The interpolated value at `t`.
    pub fn eval(&self, t: f64) -> f64 {
        self.eval_in_piece(Self::piece(&self.x, t), t)
    }

    /// The value at `t` on piece `i` (between knots i and i + 1; a caller that knows the
    /// piece saves the search).
    pub fn eval_in_piece(&self, i: usize, t: f64) -> f64 {
        let w = Self::piece_weights(&self.x, i, t);
        w[0] * self.y[i] + w[1] * self.y[i + 1] + w[2] * self.m[i] + w[3] * self.m[i + 1]
    }

    /// The piece of `knots` holding `t` (the end pieces beyond the knots).
    pub fn piece(knots: &[f64], t: f64) -> usize {
        match knots.partition_point(|&xi| xi <= t) {
            0 => 0,
            k if k >= knots.len() => knots.len() - 2,
            k => k - 1,
        }
    }

    /// The weights of (yᵢ, yᵢ₊₁, mᵢ, mᵢ₊₁) (m: second derivatives) in the value at `t` on
    /// piece `i`. A spline is linear in its values and second derivatives, which is what a
    /// linear map of splines (the scan's response matrix) accumulates without building one.
    pub fn piece_weights(knots: &[f64], i: usize, t: f64) -> [f64; 4] {
        let h = knots[i + 1] - knots[i];
        let a = (knots[i + 1] - t) / h;
        let b = (t - knots[i]) / h;
        let h2 = h * h / 6.0;
        [a, b, (a * a * a - a) * h2, (b * b * b - b) * h2]
    }

    /// The second derivatives at the knots (0 at both ends: natural).
    pub fn second_derivatives(&self) -> &[f64] {
        &self.m
    }

    /// The knot range [x₀, xₙ₋₁].
    pub fn range(&self) -> (f64, f64) {
        (self.x[0], self.x[self.x.len() - 1])
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reproduces_knots_and_lines() {
        let s = CubicSpline::new(vec![0.0, 1.0, 3.0, 4.0], vec![1.0, 3.0, 7.0, 9.0]).unwrap();
        // A straight line y = 2x + 1 is reproduced exactly by a natural spline.
        for t in [0.0, 0.5, 2.0, 3.7, 4.0] {
            assert!((s.eval(t) - (2.0 * t + 1.0)).abs() < 1e-14);
        }
    }

    #[test]
    fn converges_on_smooth_function() {
        // sin on 201 knots over [0, π]: the natural spline's error is O(h⁴) inside
        // (h = π/200 → ~4e-9 scale); the ends, where sin'' = 0, keep it that small too.
        let x: Vec<f64> = (0..=200)
            .map(|i| std::f64::consts::PI * i as f64 / 200.0)
            .collect();
        let y: Vec<f64> = x.iter().map(|v| v.sin()).collect();
        let s = CubicSpline::new(x, y).unwrap();
        for k in 0..97 {
            let t = 0.0321 * k as f64;
            assert!((s.eval(t) - t.sin()).abs() < 1e-8, "t={t}");
        }
    }

    #[test]
    fn rejects_bad_knots() {
        assert!(matches!(
            CubicSpline::new(vec![0.0], vec![1.0]),
            Err(SplineError::TooFewKnots { .. })
        ));
        assert!(matches!(
            CubicSpline::new(vec![0.0, 1.0, 1.0], vec![1.0, 2.0, 3.0]),
            Err(SplineError::NotIncreasing { index: 2, .. })
        ));
    }
}
