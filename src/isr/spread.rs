//! The beam-energy-spread link: a Gaussian convolution in √s.

use crate::ParamError;
use crate::numeric::{GaussHermite, GaussLegendre, Integral, Status, Tolerance, integrate};
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
/// Points of the Gauss–Legendre rules per piece where edges cut the window (the difference
/// of the two is the error estimate): the pieces are cut at [`PIECE_STEPS`] too, so at most
/// 2σ_W long in the core (4σ_W in the tails, where the weight is below e⁻⁸), on which a smooth σ times the Gaussian is a polynomial
/// of modest degree.
const PIECE_ORDERS: (usize, usize) = (8, 12);
/// Where the pieces also cut the Gaussian, in σ_W.
const PIECE_STEPS: [f64; 5] = [-4.0, -2.0, 0.0, 2.0, 4.0];
/// The fast path is taken only when every peak near the window is at least this many σ_W
/// wide: then σ is smooth on the scale of the Gaussian, except at edges, where it is cut.
const FAST_MIN_WIDTH_SIGMAS: f64 = 4.0;
/// Breakpoints across the Gaussian itself, in σ_W.
const GAUSS_STEPS: [f64; 7] = [-4.0, -2.0, -1.0, 0.0, 1.0, 2.0, 4.0];

/// The largest spread σ_W in MeV the Gaussian model takes at √s = W: the window W ± 8σ_W it
/// integrates must stay at positive energy, σ_W ≤ W/8. A wider Gaussian is no beam-energy
/// spread (machines quote 10⁻⁴–10⁻³ of W; from memory) and would weight energies where the
/// model means nothing.
pub fn max_spread_mev(sqrt_s_gev: f64) -> f64 {
    1e3 * sqrt_s_gev / RANGE_SIGMAS
}

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

    /// The convolution at √s = W (GeV) with its error record. Meant for spreads up to
    /// [`max_spread_mev`]; above, the window is cut at the threshold and the value is
    /// finite but not a physical one.
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
    /// The fixed-rule path on the window [lo, hi]; None when it does not apply or misses
    /// the target.
    fn fast(&self, sqrt_s_gev: f64, lo: f64, hi: f64) -> Option<Integral> {
        let window = Window::new(self.inner.features(), sqrt_s_gev, self.spread_gev, lo, hi)?;
        let sum = |order| {
            let mut acc = 0.0;
            window.visit(order, |w, weight| {
                acc += weight * self.inner.sigma_nb(w * w)
            });
            acc
        };
        let value = sum(Order::High);
        let error = (value - sum(Order::Low)).abs();
        (value.is_finite() && error <= self.rel_tol * value.abs()).then_some(Integral {
            value,
            error,
            evaluations: window.evaluations(),
            status: Status::Converged,
        })
    }
}

/// Which of the two fixed rules of a fast path (their difference is its error estimate).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Order {
    Low,
    High,
}

/// Most edges inside one window the piecewise rule takes.
const MAX_WINDOW_EDGES: usize = 8;

/// The fixed rules across one Gaussian window: Gauss–Hermite when σ is smooth there,
/// Gauss–Legendre pieces between the edges inside it (spline knots, cusps) otherwise.
struct Window {
    centre: f64,
    sw: f64,
    /// Piece ends (sorted, the window's ends included); `count` = 0 for Gauss–Hermite.
    ends: [f64; MAX_WINDOW_EDGES + 2 + PIECE_STEPS.len()],
    count: usize,
}

impl Window {
    /// None where no fixed rule applies: a peak near the window narrower than
    /// [`FAST_MIN_WIDTH_SIGMAS`]·σ_W, or too many edges in it.
    fn new(features: &[Feature], centre: f64, sw: f64, lo: f64, hi: f64) -> Option<Self> {
        let mut window = Window {
            centre,
            sw,
            ends: [0.0; MAX_WINDOW_EDGES + 2 + PIECE_STEPS.len()],
            count: 0,
        };
        let mut edges = 0;
        for f in features {
            match *f {
                Feature::Edge { s_gev2 } => {
                    let e = s_gev2.max(0.0).sqrt();
                    if e > lo && e < hi {
                        if edges == MAX_WINDOW_EDGES {
                            return None;
                        }
                        window.ends[edges] = e;
                        edges += 1;
                    }
                }
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
        if edges > 0 {
            // Pieces between the edges, also cut across the Gaussian itself.
            let mut n = edges;
            for k in PIECE_STEPS {
                window.ends[n] = centre + k * sw;
                n += 1;
            }
            window.ends[n] = lo;
            window.ends[n + 1] = hi;
            n += 2;
            let ends = &mut window.ends[..n];
            ends.sort_unstable_by(f64::total_cmp);
            window.count = n;
        }
        Some(window)
    }

    /// Points of both rules.
    fn evaluations(&self) -> usize {
        let (low, high) = match self.count {
            0 => FAST_ORDERS,
            n => ((n - 1) * PIECE_ORDERS.0, (n - 1) * PIECE_ORDERS.1),
        };
        low + high
    }

    /// `visit(W′, w)` for each node of one rule: Σ w·σ(W′²) is that rule's value.
    fn visit(&self, order: Order, mut visit: impl FnMut(f64, f64)) {
        let r = rules();
        if self.count == 0 {
            let gh = if order == Order::High { &r.1 } else { &r.0 };
            let scale = std::f64::consts::SQRT_2 * self.sw;
            let norm = 1.0 / PI.sqrt();
            for (x, w) in gh.nodes().iter().zip(gh.weights()) {
                visit(self.centre + scale * x, w * norm);
            }
            return;
        }
        let gl = if order == Order::High { &r.3 } else { &r.2 };
        let norm = 1.0 / (self.sw * (2.0 * PI).sqrt());
        for piece in self.ends[..self.count].windows(2) {
            let (a, b) = (piece[0], piece[1]);
            if b <= a {
                continue;
            }
            let (mid, half) = (0.5 * (a + b), 0.5 * (b - a));
            for (x, w) in gl.nodes().iter().zip(gl.weights()) {
                let at = mid + half * x;
                let z = (at - self.centre) / self.sw;
                visit(at, w * half * norm * (-0.5 * z * z).exp());
            }
        }
    }
}

/// The fast path's rules: Gauss–Hermite low and high, Gauss–Legendre per piece low and high.
fn rules() -> &'static (GaussHermite, GaussHermite, GaussLegendre, GaussLegendre) {
    static RULES: OnceLock<(GaussHermite, GaussHermite, GaussLegendre, GaussLegendre)> =
        OnceLock::new();
    RULES.get_or_init(|| {
        (
            GaussHermite::new(FAST_ORDERS.0),
            GaussHermite::new(FAST_ORDERS.1),
            GaussLegendre::new(PIECE_ORDERS.0),
            GaussLegendre::new(PIECE_ORDERS.1),
        )
    })
}

/// The nodes of the fast path at √s = W for every line shape with these `features` and
/// threshold: `visit(W′, w)` for each node of one rule: with [`Order::High`] Σ w·σ(W′²) is
/// the fast path's value, with [`Order::Low`] the value its error estimate compares with (a
/// linear map of line shapes, the scan's response matrix, is one pass over the nodes). A
/// spread of 0 is the one node (W, 1).
///
/// Returns false, having visited nothing, where the fast path does not apply (a narrow peak
/// near the window, the window reaching the threshold, too many edges in it). No error
/// estimate: check one line shape with [`Smeared::smeared`].
pub fn visit_spread_nodes(
    features: &[Feature],
    threshold_s_gev2: f64,
    sqrt_s_gev: f64,
    spread_mev: f64,
    order: Order,
    mut visit: impl FnMut(f64, f64),
) -> bool {
    let sw = spread_mev * 1e-3;
    if sw == 0.0 {
        visit(sqrt_s_gev, 1.0);
        return true;
    }
    let (lo, hi) = (
        sqrt_s_gev - RANGE_SIGMAS * sw,
        sqrt_s_gev + RANGE_SIGMAS * sw,
    );
    if !(sw > 0.0 && lo > threshold_s_gev2.max(0.0).sqrt()) {
        return false;
    }
    match Window::new(features, sqrt_s_gev, sw, lo, hi) {
        Some(window) => {
            window.visit(order, visit);
            true
        }
        None => false,
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
