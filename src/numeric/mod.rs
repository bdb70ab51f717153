//! Numerical toolkit: quadrature, singular-endpoint substitution, principal values,
//! the dilogarithm, interpolation and grids. Nothing in here knows any physics.
//!
//! Integrators that a caller must be able to audit return an [`Integral`] record
//! (value, error estimate, evaluations, status). Hot loops use the fixed
//! [`GaussLegendre`] rules once a test has shown their accuracy for the integrand.

mod gauss_hermite;
mod gauss_kronrod;
mod gauss_legendre;
mod grid;
mod guarded;
mod kronrod;
mod lanes;
mod li2;
mod principal_value;
mod singular;
mod spline;

pub use gauss_hermite::GaussHermite;
pub use gauss_kronrod::{integrate, integrate_to_infinity};
pub use gauss_legendre::GaussLegendre;
pub use grid::{Grid, GridError};
pub use guarded::integrate_double_exponential;
pub use kronrod::KronrodPair;
pub use li2::{li2, li2_complex};
pub mod fast {
    //! Branch-free elementary functions for vectorisable node loops.
    #[cfg(target_arch = "x86_64")]
    pub use super::lanes::avx2_fma;
    pub use super::lanes::{
        Coefficient, Fused, Rounding, Separate, estrin, exp, exp_and_exp_m1, ln, ln_one_minus,
    };
}
pub use principal_value::principal_value;
pub use singular::integrate_power_endpoint;
pub use spline::{CubicSpline, SplineError};

/// How an integration ended.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Status {
    /// The error estimate meets the requested tolerance.
    Converged,
    /// The evaluation or subdivision budget ran out before the tolerance was met.
    BudgetExhausted,
    /// The integrand returned NaN or ±inf at `x`; the value is meaningless.
    NonFinite { x: f64 },
}

/// The result of an integration: never a bare number when the caller must know how it went.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Integral {
    pub value: f64,
    /// Estimated absolute error of `value`.
    pub error: f64,
    pub evaluations: usize,
    pub status: Status,
}

impl Integral {
    /// The integral over an empty range.
    pub const ZERO: Integral = Integral {
        value: 0.0,
        error: 0.0,
        evaluations: 0,
        status: Status::Converged,
    };

    /// True when the tolerance was met and every integrand value was finite.
    pub fn converged(&self) -> bool {
        self.status == Status::Converged
    }
}

/// Requested accuracy: met when `error ≤ max(abs, rel·|value|)`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Tolerance {
    pub rel: f64,
    pub abs: f64,
}

impl Tolerance {
    /// A purely relative tolerance.
    pub const fn relative(rel: f64) -> Self {
        Tolerance { rel, abs: 0.0 }
    }

    /// The absolute error allowed for a result of size `value`.
    pub fn allowed(&self, value: f64) -> f64 {
        self.abs.max(self.rel * value.abs())
    }
}
