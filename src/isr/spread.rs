//! The beam-energy-spread link: a Gaussian convolution in √s.

use crate::ParamError;
use crate::numeric::{GaussHermite, Integral, Status, Tolerance, integrate};
use crate::process::{CrossSection, Feature};
use std::f64::consts::PI;
use std::sync::OnceLock;

/// Half-width of the Gaussian range integrated, in units of σ_W (e^(−32) ≈ 1e-14 beyond).
const RANGE_SIGMAS: f64 = 8.0;
/// Multiples of a peak's width Γ at which the integration is split (resolves peaks far
/// narrower than σ_W as well as far wider).
const PEAK_STEPS: [f64; 9] = [-30.0, -8.0, -2.0, -0.5, 0.0, 0.5, 2.0, 8.0, 30.0];
/// Points of the fixed Gauss–Hermite rules of the fast path (the difference of the two is
/// its error estimate).
const FAST_ORDERS: (usize, usize) = (16, 28);
/// The fast path is taken only when every peak near the window is at least this many σ_W
/// wide and no edge lies in the window: then σ is smooth on the scale of the Gaussian.
const FAST_MIN_WIDTH_SIGMAS: f64 = 4.0;
/// Breakpoints across the Gaussian itself, in σ_W.
const GAUSS_STEPS: [f64; 7] = [-4.0, -2.0, -1.0, 0.0, 1.0, 2.0, 4.0];

/// σ_sm(W) = ∫ G(W′ − W; σ_W) σ(W′²) dW′ with G the normal density in √s of width σ_W.
///
/// The spread is the machine's centre-of-mass energy spread; it matters within a few σ_W
/// of narrow structures. Where σ is smooth across the Gaussian (no edge within ±8σ_W, every
/// nearby peak wider than 4σ_W) fixed Gauss–Hermite rules of 16 and 28 points are used,
/// their difference being the error estimate; otherwise, or when that estimate misses the
/// target, the integral is adaptive (GK21), split at every peak M ± kΓ and edge, so
/// Γ/σ_W from 1e-2 to 1e2 is handled.
pub struct Smeared<C> {
    inner: C,
    spread_gev: f64,
    rel_tol: f64,
}

impl<C: CrossSection> Smeared<C> {
    /// Wrap `inner` with a spread σ_W in MeV (as machines quote it); 0 is no spread.
    ///
    /// # Errors
    /// A negative or non-finite spread.
    pub fn new(inner: C, spread_mev: f64) -> Result<Self, ParamError> {
        if !(spread_mev >= 0.0 && spread_mev.is_finite()) {
            return Err(ParamError::new(
                "energy_spread_mev",
                spread_mev,
                "a finite energy_spread_mev ≥ 0",
            ));
        }
        Ok(Smeared {
            inner,
            spread_gev: spread_mev * 1e-3,
            rel_tol: 1e-8,
        })
    }

    pub fn inner(&self) -> &C {
        &self.inner
    }

    /// The spread σ_W in GeV.
    pub fn spread_gev(&self) -> f64 {
        self.spread_gev
    }

    /// The convolution at √s = W (GeV) with its error record.
    pub fn smeared(&self, sqrt_s_gev: f64) -> Integral {
        let sw = self.spread_gev;
        if sw == 0.0 {
            return Integral {
                value: self.inner.sigma_nb(sqrt_s_gev * sqrt_s_gev),
                error: 0.0,
                evaluations: 1,
                status: Status::Converged,
            };
        }
        let w_th = self.inner.threshold_s_gev2().max(0.0).sqrt();
        let lo = (sqrt_s_gev - RANGE_SIGMAS * sw).max(w_th);
        let hi = sqrt_s_gev + RANGE_SIGMAS * sw;
        if lo > w_th
            && let Some(fast) = self.fast(sqrt_s_gev, lo, hi)
        {
            return fast;
        }
        let mut breaks: Vec<f64> = GAUSS_STEPS.iter().map(|k| sqrt_s_gev + k * sw).collect();
        for f in self.inner.features() {
            match *f {
                Feature::Edge { s_gev2 } => breaks.push(s_gev2.max(0.0).sqrt()),
                Feature::Peak {
                    s_gev2,
                    m_gamma_gev2,
                } => {
                    let m = s_gev2.max(0.0).sqrt();
                    let gamma = m_gamma_gev2 / m;
                    breaks.extend(PEAK_STEPS.iter().map(|k| m + k * gamma));
                }
            }
        }
        let norm = 1.0 / (sw * (2.0 * PI).sqrt());
        let g = |w: f64| {
            let z = (w - sqrt_s_gev) / sw;
            norm * (-0.5 * z * z).exp() * self.inner.sigma_nb(w * w)
        };
        if hi <= lo {
            return integrate(g, lo, lo, &[], Tolerance::relative(self.rel_tol));
        }
        integrate(g, lo, hi, &breaks, Tolerance::relative(self.rel_tol))
    }
}

impl<C: CrossSection> Smeared<C> {
    /// The fixed-rule path on a window [lo, hi] free of edges and narrow peaks; None when
    /// it does not apply or misses the target.
    fn fast(&self, sqrt_s_gev: f64, lo: f64, hi: f64) -> Option<Integral> {
        let sw = self.spread_gev;
        for f in self.inner.features() {
            match *f {
                // A kink or step inside the window (a threshold, a spline knot) limits
                // the rules' convergence; their difference measures it, and a miss
                // falls back to the adaptive path.
                Feature::Edge { .. } => {}
                Feature::Peak {
                    s_gev2,
                    m_gamma_gev2,
                } => {
                    let m = s_gev2.max(0.0).sqrt();
                    let gamma = m_gamma_gev2 / m;
                    let near = m > lo - 30.0 * gamma && m < hi + 30.0 * gamma;
                    if near && gamma < FAST_MIN_WIDTH_SIGMAS * sw {
                        return None;
                    }
                }
            }
        }
        static RULES: OnceLock<(GaussHermite, GaussHermite)> = OnceLock::new();
        let (low, high) = RULES.get_or_init(|| {
            (
                GaussHermite::new(FAST_ORDERS.0),
                GaussHermite::new(FAST_ORDERS.1),
            )
        });
        let sigma = |w: f64| self.inner.sigma_nb(w * w);
        let value = high.normal_average(sigma, sqrt_s_gev, sw);
        let error = (value - low.normal_average(sigma, sqrt_s_gev, sw)).abs();
        (value.is_finite() && error <= self.rel_tol * value.abs()).then_some(Integral {
            value,
            error,
            evaluations: FAST_ORDERS.0 + FAST_ORDERS.1,
            status: Status::Converged,
        })
    }
}

impl<C: CrossSection> CrossSection for Smeared<C> {
    fn sigma_nb(&self, s_gev2: f64) -> f64 {
        self.smeared(s_gev2.sqrt()).value
    }
    fn threshold_s_gev2(&self) -> f64 {
        // Spread lets events appear below the nominal threshold; σ is continuous there.
        0.0
    }
    fn features(&self) -> &[Feature] {
        self.inner.features()
    }
}
