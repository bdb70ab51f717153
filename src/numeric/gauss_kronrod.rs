//! Globally adaptive 21-point Gauss–Kronrod quadrature with breakpoints.
//!
//! The interval with the largest error estimate is bisected until the summed
//! estimate meets the tolerance, as in QUADPACK's QAG (Piessens, de Doncker-Kapenga,
//! Überhuber, Kahaner, *QUADPACK*, Springer 1983). Nodes, weights and the error
//! heuristic are QUADPACK's QK21.

use super::{Integral, Status, Tolerance};
use std::collections::BinaryHeap;

/// Kronrod abscissae on [0, 1) (QUADPACK qk21 `xgk`); odd indices are the Gauss nodes.
#[allow(
    clippy::excessive_precision,
    reason = "QUADPACK's published digits, kept verbatim"
)]
const XGK: [f64; 11] = [
    0.995_657_163_025_808_080_735_527_280_689_003,
    0.973_906_528_517_171_720_077_964_012_084_452,
    0.930_157_491_355_708_226_001_207_180_059_508,
    0.865_063_366_688_984_510_732_096_688_423_493,
    0.780_817_726_586_416_897_063_717_578_345_042,
    0.679_409_568_299_024_406_234_327_365_114_874,
    0.562_757_134_668_604_683_339_000_099_272_694,
    0.433_395_394_129_247_190_799_265_943_165_784,
    0.294_392_862_701_460_198_131_126_603_103_866,
    0.148_874_338_981_631_210_884_826_001_129_720,
    0.0,
];
/// Kronrod weights (QUADPACK qk21 `wgk`).
#[allow(
    clippy::excessive_precision,
    reason = "QUADPACK's published digits, kept verbatim"
)]
const WGK: [f64; 11] = [
    0.011_694_638_867_371_874_278_064_396_062_192,
    0.032_558_162_307_964_727_478_818_972_459_390,
    0.054_755_896_574_351_996_031_381_300_244_580,
    0.075_039_674_810_919_952_767_043_140_916_190,
    0.093_125_454_583_697_605_535_065_465_083_366,
    0.109_387_158_802_297_641_899_210_590_325_805,
    0.123_491_976_262_065_851_077_600_525_452_212,
    0.134_709_217_311_473_325_928_054_001_771_707,
    0.142_775_938_577_060_080_797_094_273_138_717,
    0.147_739_104_901_338_491_374_841_515_972_068,
    0.149_445_554_002_916_905_664_936_468_389_821,
];
/// 10-point Gauss weights for the nodes XGK[1], XGK[3], …, XGK[9] (QUADPACK qk21 `wg`).
#[allow(
    clippy::excessive_precision,
    reason = "QUADPACK's published digits, kept verbatim"
)]
const WG: [f64; 5] = [
    0.066_671_344_308_688_137_593_568_809_893_332,
    0.149_451_349_150_580_593_145_776_339_657_697,
    0.219_086_362_515_982_043_995_534_934_228_163,
    0.269_266_719_309_996_355_091_226_921_569_469,
    0.295_524_224_714_752_870_173_892_994_651_338,
];

/// The published 21-point pair (nodes, Kronrod weights, Gauss weights), for checking the
/// pairs computed in `kronrod.rs`.
#[cfg(test)]
pub(super) fn published_qk21() -> (&'static [f64; 11], &'static [f64; 11], &'static [f64; 5]) {
    (&XGK, &WGK, &WG)
}

/// Subdivisions allowed before giving up with [`Status::BudgetExhausted`].
const MAX_INTERVALS: usize = 2000;

struct Piece {
    a: f64,
    b: f64,
    value: f64,
    error: f64,
}

impl PartialEq for Piece {
    fn eq(&self, other: &Self) -> bool {
        self.error == other.error
    }
}
impl Eq for Piece {}
impl PartialOrd for Piece {
    fn partial_cmp(&self, other: &Self) -> Option<std::cmp::Ordering> {
        Some(self.cmp(other))
    }
}
impl Ord for Piece {
    fn cmp(&self, other: &Self) -> std::cmp::Ordering {
        self.error.total_cmp(&other.error)
    }
}

/// One QK21 panel: (value, error estimate), or the abscissa of a non-finite value.
fn qk21<F: FnMut(f64) -> f64>(f: &mut F, a: f64, b: f64) -> Result<(f64, f64), f64> {
    let centre = 0.5 * (a + b);
    let half = 0.5 * (b - a);
    let fc = f(centre);
    if !fc.is_finite() {
        return Err(centre);
    }
    let mut resg = 0.0;
    let mut resk = WGK[10] * fc;
    let mut resabs = resk.abs();
    let mut fv1 = [0.0; 10];
    let mut fv2 = [0.0; 10];
    for j in 0..10 {
        let dx = half * XGK[j];
        let (x1, x2) = (centre - dx, centre + dx);
        let (f1, f2) = (f(x1), f(x2));
        if !f1.is_finite() {
            return Err(x1);
        }
        if !f2.is_finite() {
            return Err(x2);
        }
        fv1[j] = f1;
        fv2[j] = f2;
        resk += WGK[j] * (f1 + f2);
        resabs += WGK[j] * (f1.abs() + f2.abs());
        if j % 2 == 1 {
            resg += WG[j / 2] * (f1 + f2);
        }
    }
    let reskh = 0.5 * resk;
    let mut resasc = WGK[10] * (fc - reskh).abs();
    for j in 0..10 {
        resasc += WGK[j] * ((fv1[j] - reskh).abs() + (fv2[j] - reskh).abs());
    }
    let value = resk * half;
    let resabs = resabs * half.abs();
    let resasc = resasc * half.abs();
    let mut err = ((resk - resg) * half).abs();
    if resasc != 0.0 && err != 0.0 {
        err = resasc * (200.0 * err / resasc).powf(1.5).min(1.0);
    }
    if resabs > f64::MIN_POSITIVE / (50.0 * f64::EPSILON) {
        err = err.max(50.0 * f64::EPSILON * resabs);
    }
    Ok((value, err))
}

/// ∫ₐᵇ f(x) dx by globally adaptive Gauss–Kronrod (21 points per panel).
///
/// `breakpoints` inside (a, b) start the subdivision there (resonance peaks, cusps,
/// thresholds); points outside the interval are ignored. A non-finite integrand value
/// stops the integration with [`Status::NonFinite`].
pub fn integrate<F: FnMut(f64) -> f64>(
    mut f: F,
    a: f64,
    b: f64,
    breakpoints: &[f64],
    tol: Tolerance,
) -> Integral {
    if a == b {
        return Integral::ZERO;
    }
    let (lo, hi, sign) = if a < b { (a, b, 1.0) } else { (b, a, -1.0) };
    let mut edges = vec![lo];
    let mut inner: Vec<f64> = breakpoints
        .iter()
        .copied()
        .filter(|&p| p > lo && p < hi)
        .collect();
    inner.sort_by(f64::total_cmp);
    inner.dedup();
    edges.extend(inner);
    edges.push(hi);

    let mut heap = BinaryHeap::with_capacity(64);
    let mut evaluations = 0;
    let (mut value, mut error) = (0.0, 0.0);
    for w in edges.windows(2) {
        evaluations += 21;
        match qk21(&mut f, w[0], w[1]) {
            Ok((v, e)) => {
                value += v;
                error += e;
                heap.push(Piece {
                    a: w[0],
                    b: w[1],
                    value: v,
                    error: e,
                });
            }
            Err(x) => return non_finite(x, evaluations),
        }
    }
    while error > tol.allowed(value) {
        if heap.len() >= MAX_INTERVALS {
            return Integral {
                value: sign * value,
                error,
                evaluations,
                status: Status::BudgetExhausted,
            };
        }
        let Some(worst) = heap.pop() else { break };
        let mid = 0.5 * (worst.a + worst.b);
        if mid <= worst.a || mid >= worst.b {
            // The interval cannot be split further in floating point.
            heap.push(worst);
            return Integral {
                value: sign * value,
                error,
                evaluations,
                status: Status::BudgetExhausted,
            };
        }
        evaluations += 42;
        let left = qk21(&mut f, worst.a, mid);
        let right = qk21(&mut f, mid, worst.b);
        let ((lv, le), (rv, re)) = match (left, right) {
            (Ok(l), Ok(r)) => (l, r),
            (Err(x), _) | (_, Err(x)) => return non_finite(x, evaluations),
        };
        value += lv + rv - worst.value;
        error += le + re - worst.error;
        heap.push(Piece {
            a: worst.a,
            b: mid,
            value: lv,
            error: le,
        });
        heap.push(Piece {
            a: mid,
            b: worst.b,
            value: rv,
            error: re,
        });
        // Re-sum occasionally so that the running error does not drift by cancellation.
        if heap.len() % 64 == 0 {
            value = heap.iter().map(|p| p.value).sum();
            error = heap.iter().map(|p| p.error).sum();
        }
    }
    Integral {
        value: sign * value,
        error: error.max(0.0),
        evaluations,
        status: Status::Converged,
    }
}

fn non_finite(x: f64, evaluations: usize) -> Integral {
    Integral {
        value: f64::NAN,
        error: f64::INFINITY,
        evaluations,
        status: Status::NonFinite { x },
    }
}

/// ∫ₐ^∞ f(x) dx through the map x = a + (1 − t)/t, t ∈ (0, 1].
///
/// `breakpoints` are given in x and mapped. The integrand must decay faster than 1/x.
pub fn integrate_to_infinity<F: FnMut(f64) -> f64>(
    mut f: F,
    a: f64,
    breakpoints: &[f64],
    tol: Tolerance,
) -> Integral {
    let mapped: Vec<f64> = breakpoints
        .iter()
        .filter(|&&x| x > a)
        .map(|&x| 1.0 / (1.0 + (x - a)))
        .collect();
    integrate(
        |t| {
            let x = a + (1.0 - t) / t;
            f(x) / (t * t)
        },
        0.0,
        1.0,
        &mapped,
        tol,
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    const TOL: Tolerance = Tolerance::relative(1e-12);

    #[test]
    fn polynomial_and_exponential_closed_forms() {
        // ∫₀¹ x⁵ dx = 1/6 and ∫₀² eˣ dx = e² − 1 (closed forms).
        let r = integrate(|x| x.powi(5), 0.0, 1.0, &[], TOL);
        assert!((r.value - 1.0 / 6.0).abs() < 1e-15 && r.converged());
        let r = integrate(f64::exp, 0.0, 2.0, &[], TOL);
        assert!((r.value - (2f64.exp() - 1.0)).abs() < 1e-13);
    }

    #[test]
    fn narrow_lorentzian_with_breakpoint() {
        // ∫ γ/((x−1)²+γ²) over [0, 2] = 2 arctan(1/γ) (closed form); γ = 1e-4 is a peak
        // 10⁴ times narrower than the range, the case resonances put us in.
        let g: f64 = 1e-4;
        let want = 2.0 * (1.0 / g).atan();
        let r = integrate(|x| g / ((x - 1.0).powi(2) + g * g), 0.0, 2.0, &[1.0], TOL);
        assert!(r.converged());
        assert!(((r.value - want) / want).abs() < 1e-12, "{r:?} vs {want}");
        assert!(r.error <= 1e-12 * want * 1.01);
    }

    #[test]
    fn integrable_endpoint_singularity() {
        // ∫₀¹ x^(−1/2) dx = 2: QAG converges slowly but surely on this.
        let r = integrate(
            |x| 1.0 / x.sqrt(),
            0.0,
            1.0,
            &[],
            Tolerance::relative(1e-10),
        );
        assert!(r.converged(), "{r:?}");
        assert!((r.value - 2.0).abs() < 1e-9);
    }

    #[test]
    fn reports_non_finite_values() {
        let r = integrate(|x| if x > 0.5 { f64::NAN } else { x }, 0.0, 1.0, &[], TOL);
        assert!(matches!(r.status, Status::NonFinite { .. }));
    }

    #[test]
    fn reversed_limits_change_sign() {
        let r = integrate(|x| x, 1.0, 0.0, &[], TOL);
        assert!((r.value + 0.5).abs() < 1e-15);
    }

    #[test]
    fn infinite_range() {
        // ∫₁^∞ dx/x² = 1; ∫₀^∞ e^(−x) dx = 1 (closed forms).
        let r = integrate_to_infinity(|x| 1.0 / (x * x), 1.0, &[], TOL);
        assert!((r.value - 1.0).abs() < 1e-12, "{r:?}");
        let r = integrate_to_infinity(|x| (-x).exp(), 0.0, &[5.0], TOL);
        assert!((r.value - 1.0).abs() < 1e-12, "{r:?}");
    }

    #[test]
    fn exhausts_budget_honestly() {
        // sin(1/x) on (0, 1] oscillates without bound: no honest 1e-14 exists.
        let r = integrate(
            |x| (1.0 / x).sin(),
            0.0,
            1.0,
            &[],
            Tolerance::relative(1e-15),
        );
        assert_eq!(r.status, Status::BudgetExhausted);
    }
}
