//! Branch-free exp, ln, ln(1 − x) and expm1 for loops over rule nodes.
//!
//! The platform's libm calls are opaque to the compiler, so a loop that calls them is
//! never vectorised; these are straight-line polynomial code on a restricted domain, which
//! it vectorises. Accuracy: a few ulp (tests below compare with the platform libm on
//! seeded samples), far inside the 1e-8 targets of the integrals that use them. Each
//! function states its domain; outside it the result is meaningless (no panics, no
//! checks: callers guarantee the domain).

use num_complex::Complex64;
use std::f64::consts::LOG2_E;

/// How a polynomial step c + a·p is rounded.
///
/// [`Separate`]: a product and a sum, two roundings, the same bits on every CPU. [`Fused`]:
/// one rounding (IEEE fusedMultiplyAdd), ~10% faster node loops, for code compiled with the
/// `fma` target feature; elsewhere `f64::mul_add` is a correctly rounded library call, so
/// the bits are the same but far slower. The node loops that run compiled for AVX2 + FMA use
/// `Fused`, their portable copies `Separate`: on a CPU without FMA results move in the
/// last bits.
pub trait Rounding {
    fn mul_add(a: f64, p: f64, c: f64) -> f64;
}

/// Whether this CPU runs the copies of the node loops compiled for AVX2 and FMA, the ones
/// that take [`Fused`] (the only place it belongs).
#[cfg(target_arch = "x86_64")]
#[inline]
pub fn avx2_fma() -> bool {
    std::arch::is_x86_feature_detected!("avx2") && std::arch::is_x86_feature_detected!("fma")
}

/// Two roundings: `c + a·p`.
pub enum Separate {}

/// One rounding: `a.mul_add(p, c)`.
pub enum Fused {}

impl Rounding for Separate {
    #[inline(always)]
    fn mul_add(a: f64, p: f64, c: f64) -> f64 {
        c + a * p
    }
}

impl Rounding for Fused {
    #[inline(always)]
    fn mul_add(a: f64, p: f64, c: f64) -> f64 {
        a.mul_add(p, c)
    }
}

/// A polynomial coefficient: a real, or a vector over the reals taken component-wise (the
/// VP factor table evaluates Re and Im together).
pub trait Coefficient: Copy {
    /// c + self·p, rounded as `R` says.
    fn mul_add<R: Rounding>(self, p: f64, c: Self) -> Self;
}

impl Coefficient for f64 {
    #[inline(always)]
    fn mul_add<R: Rounding>(self, p: f64, c: f64) -> f64 {
        R::mul_add(self, p, c)
    }
}

impl Coefficient for Complex64 {
    #[inline(always)]
    fn mul_add<R: Rounding>(self, p: f64, c: Complex64) -> Complex64 {
        Complex64::new(R::mul_add(self.re, p, c.re), R::mul_add(self.im, p, c.im))
    }
}

/// 1.5·2⁵²: adding and subtracting it rounds an |x| < 2⁵¹ to the nearest integer.
const ROUND: f64 = 6_755_399_441_055_744.0;
/// ln 2 split so that k·LN2_HI is exact for |k| < 2¹¹ (Cody–Waite reduction).
const LN2_HI: f64 = 0.693_147_180_369_123_8;
const LN2_LO: f64 = 1.908_214_929_270_587_7e-10;

/// 1/(j + 1)! for j = 0…12: (e^r − 1)/r = Σ_j r^j/(j + 1)!.
const EXPM1_QUOTIENT: [f64; 13] = [
    1.0,
    1.0 / 2.0,
    1.0 / 6.0,
    1.0 / 24.0,
    1.0 / 120.0,
    1.0 / 720.0,
    1.0 / 5_040.0,
    1.0 / 40_320.0,
    1.0 / 362_880.0,
    1.0 / 3_628_800.0,
    1.0 / 39_916_800.0,
    1.0 / 479_001_600.0,
    1.0 / 6_227_020_800.0,
];

/// x = k ln 2 + r with |r| ≤ ln 2/2 (Cody–Waite): (k, r, 2^k) for −700 ≤ x ≤ 700, and
/// (e^r − 1)/r through r¹² (remainder (ln 2/2)¹³/14! ≈ 1.3e-17 of it).
#[inline(always)]
fn reduce<R: Rounding>(x: f64) -> (f64, f64, f64, f64) {
    let k = (x * LOG2_E + ROUND) - ROUND;
    let r = (x - k * LN2_HI) - k * LN2_LO;
    // 2^k from k's bits in the rounding constant's mantissa.
    let k_bits = (k + ROUND).to_bits().wrapping_sub(ROUND.to_bits());
    let two_k = f64::from_bits(k_bits.wrapping_add(1023) << 52);
    (k, r, two_k, estrin::<R, _, 13>(&EXPM1_QUOTIENT, r))
}

/// e^x for −700 ≤ x ≤ 700 (Taylor series of e^r through r¹³ after the reduction).
#[inline(always)]
pub fn exp<R: Rounding>(x: f64) -> f64 {
    let (_, r, two_k, q) = reduce::<R>(x);
    R::mul_add(r, q, 1.0) * two_k
}

/// (e^x, e^x − 1) for −700 ≤ x ≤ 700 from one series: e^x − 1 keeps its relative accuracy
/// as x → 0 (there k = 0 and it is r·(e^r − 1)/r; elsewhere |e^x − 1| > 0.29 and the
/// subtraction loses under a bit).
#[inline(always)]
pub fn exp_and_exp_m1<R: Rounding>(x: f64) -> (f64, f64) {
    let (k, r, two_k, q) = reduce::<R>(x);
    let y = R::mul_add(r, q, 1.0) * two_k;
    (y, if k == 0.0 { r * q } else { y - 1.0 })
}

/// Σₖ cₖ xᵏ by Estrin's scheme: pairs c₂ⱼ + c₂ⱼ₊₁x, then pairs of those with x², x⁴, …
/// Horner's chain of N dependent multiply-adds made the node loops latency-bound (a third of
/// their time was spent waiting in it); Estrin's is log₂N deep. The coefficients may be
/// any vector over the reals (the VP factor table evaluates Re and Im together). Constant
/// N: the loops unroll.
#[inline(always)]
pub fn estrin<R: Rounding, T: Coefficient, const N: usize>(c: &[T; N], x: f64) -> T {
    let mut v = *c;
    let mut n = N;
    let mut p = x;
    while n > 1 {
        let half = n / 2;
        for j in 0..half {
            v[j] = v[2 * j + 1].mul_add::<R>(p, v[2 * j]);
        }
        if n % 2 == 1 {
            v[half] = v[n - 1];
        }
        n = half + n % 2;
        p *= p;
    }
    v[0]
}

/// ln x for a positive normal x: x = m·2^e with m ∈ [√½, √2), ln m = 2 atanh f,
/// f = (m − 1)/(m + 1), |f| ≤ 0.172, by its series through f²³ (remainder ≈ 1e-19).
#[inline(always)]
pub fn ln<R: Rounding>(x: f64) -> f64 {
    const SQRT_HALF_BITS: u64 = 0x3fe6_a09e_667f_3bcd;
    let bits = x.to_bits();
    let e = (bits.wrapping_sub(SQRT_HALF_BITS) as i64) >> 52;
    let m = f64::from_bits(bits.wrapping_sub((e as u64) << 52));
    let f = (m - 1.0) / (m + 1.0);
    let f2 = f * f;
    // 2 atanh f = 2f (1 + f²/3 + f⁴/5 + … + f²²/23).
    const C: [f64; 12] = [
        1.0,
        1.0 / 3.0,
        1.0 / 5.0,
        1.0 / 7.0,
        1.0 / 9.0,
        1.0 / 11.0,
        1.0 / 13.0,
        1.0 / 15.0,
        1.0 / 17.0,
        1.0 / 19.0,
        1.0 / 21.0,
        1.0 / 23.0,
    ];
    let acc = estrin::<R, _, 12>(&C, f2);
    // e as f64 through the rounding constant's mantissa (no packed i64 → f64 conversion
    // exists below AVX-512; a cast would leave the vector loop lane by lane).
    let ef = f64::from_bits(ROUND.to_bits().wrapping_add(e as u64)) - ROUND;
    ef * LN2_HI + (ef * LN2_LO + 2.0 * f * acc)
}

/// ln(1 − x) for 0 ≤ x ≤ 1/2 with full relative accuracy as x → 0: ln u for u = fl(1 − x),
/// plus the rounding of u to first order, ((1 − u) − x)/u (exact: Sterbenz).
#[inline(always)]
pub fn ln_one_minus<R: Rounding>(x: f64) -> f64 {
    let u = 1.0 - x;
    ln::<R>(u) + ((1.0 - u) - x) / u
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Seeded uniform samples in [lo, hi] (a fixed LCG: reproducible, no dependency).
    fn samples(lo: f64, hi: f64, n: usize) -> impl Iterator<Item = f64> {
        let mut state: u64 = 0x9e37_79b9_7f4a_7c15;
        (0..n).map(move |_| {
            state = state
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1_442_695_040_888_963_407);
            lo + (hi - lo) * ((state >> 11) as f64 / (1u64 << 53) as f64)
        })
    }

    /// Largest |ours/libm − 1| over the samples. The reference is the platform libm
    /// (glibc's exp/log are correctly rounded to < 1 ulp); 8 ulp ≈ 1.8e-15 allows for
    /// the series' rounding, 10⁶× inside any integrand's 1e-9 use.
    fn worst(
        ours: impl Fn(f64) -> f64,
        libm: impl Fn(f64) -> f64,
        xs: impl Iterator<Item = f64>,
    ) -> f64 {
        xs.map(|x| (ours(x) / libm(x) - 1.0).abs())
            .fold(0.0, f64::max)
    }

    const ULP8: f64 = 8.0 * f64::EPSILON;

    /// Both roundings: the fused steps only round less.
    #[test]
    fn exp_matches_libm_over_its_domain() {
        exp_matches::<Separate>();
        exp_matches::<Fused>();
    }

    fn exp_matches<R: Rounding>() {
        for (lo, hi) in [
            (-700.0, 700.0),
            (-40.0, 1.0),
            (-1e-3, 1e-3),
            (-1e-12, 1e-12),
        ] {
            let e = worst(exp::<R>, f64::exp, samples(lo, hi, 100_000));
            assert!(e < ULP8, "exp on [{lo}, {hi}]: {e:e}");
        }
        assert_eq!(exp::<R>(0.0), 1.0);
    }

    #[test]
    fn ln_matches_libm_over_its_domain() {
        ln_matches::<Separate>();
        ln_matches::<Fused>();
    }

    fn ln_matches<R: Rounding>() {
        for (lo, hi) in [(1e-300, 1e-290), (1e-20, 1.0), (0.5, 2.0), (1.0, 1e300)] {
            let e = worst(ln::<R>, f64::ln, samples(lo, hi, 100_000));
            // Relative error of ln is ill-defined at x = 1; compare absolutely there.
            assert!(e < ULP8 || lo == 0.5, "ln on [{lo}, {hi}]: {e:e}");
        }
        let abs = samples(0.5, 2.0, 100_000)
            .map(|x| (ln::<R>(x) - x.ln()).abs())
            .fold(0.0, f64::max);
        assert!(abs < 2.0 * f64::EPSILON, "ln near 1: {abs:e} absolute");
        assert_eq!(ln::<R>(1.0), 0.0);
    }

    #[test]
    fn ln_one_minus_and_expm1_keep_relative_accuracy_near_zero() {
        near_zero::<Separate>();
        near_zero::<Fused>();
    }

    fn near_zero<R: Rounding>() {
        for (lo, hi) in [(1e-18, 1e-10), (1e-10, 1e-3), (1e-3, 0.5)] {
            let e = worst(
                ln_one_minus::<R>,
                |x| (-x).ln_1p(),
                samples(lo, hi, 100_000),
            );
            assert!(e < ULP8, "ln(1 − x) on [{lo}, {hi}]: {e:e}");
        }
        for (lo, hi) in [
            (-40.0, -0.7),
            (-0.7, -1e-3),
            (-1e-3, -1e-18),
            (1e-18, 0.7),
            (0.7, 40.0),
        ] {
            let e = worst(
                |x| exp_and_exp_m1::<R>(x).1,
                f64::exp_m1,
                samples(lo, hi, 100_000),
            );
            assert!(e < ULP8, "expm1 on [{lo}, {hi}]: {e:e}");
            let e = worst(
                |x| exp_and_exp_m1::<R>(x).0,
                f64::exp,
                samples(lo, hi, 100_000),
            );
            assert!(e < ULP8, "exp (paired) on [{lo}, {hi}]: {e:e}");
        }
    }
}
