//! The ISR convolution of a VP-dressed line shape with narrow resonances (J/ψ, ψ(2S),
//! Υ(1S–3S)) inside the range: the fast fixed-rule path is taken, and its value agrees with
//! an independent evaluation.
//!
//! The reference here is not mpmath: the full hadronic VP (a dispersion integral over the R
//! model, tabulated) would have to be rewritten in Python, and it is already checked against
//! mpmath in `tests/vp_*.rs`, as the radiator and the convolution are in
//! `tests/isr_convolution.rs`. What this file checks is what the fast path adds: where the
//! integral is cut and how each piece is mapped. The reference shares only σ_d and the
//! radiator's published pieces with the code under test and differs in the rest: it
//! integrates in x and t = x^β (not in v = ln(1 − x) with sinh/tan maps), by the tanh–sinh
//! rule with bisection (`numeric::integrate_double_exponential`, the `quadrature` crate; not
//! Gauss–Legendre, not Gauss–Kronrod), split at peaks it finds itself by a golden-section
//! search on σ_d (not at the features the VP reports), to 1e-12 relative.

mod common;
use common::{assert_rel, assert_within_estimate};
use radnorm::isr::{Cuts, Isr, Observed, Radiator, Scheme};
use radnorm::numeric::{Status, Tolerance, integrate_double_exponential};
use radnorm::process::{CrossSection, Feature, FermionPair};
use radnorm::rmodel::Region;
use radnorm::vp::{Dressed, Polarisation, Vp, standard_hadronic};

/// The fast path's value against the reference: the accuracy target (issue 4: 1e-8
/// relative; measured agreement ≲ 1e-12).
const VS_REFERENCE: f64 = 1e-8;
/// The reference's own precision (tanh–sinh at 1e-12 per piece, summed over ~50 pieces),
/// allowed on top of the error estimate when checking that the estimate covers the true error.
const REFERENCE_PRECISION: f64 = 1e-11;
/// Widths (MΓ in s) either side of each peak at which the reference splits.
const SPLITS: [f64; 11] = [
    -256.0, -64.0, -16.0, -4.0, -1.0, 0.0, 1.0, 4.0, 16.0, 64.0, 256.0,
];

/// The s where `f` peaks in [a, b] (golden-section search; f unimodal there).
fn golden_max(f: &dyn Fn(f64) -> f64, mut a: f64, mut b: f64) -> f64 {
    let g = 0.5 * (5f64.sqrt() - 1.0);
    let (mut c, mut d) = (b - g * (b - a), a + g * (b - a));
    for _ in 0..200 {
        if f(c) > f(d) {
            b = d;
        } else {
            a = c;
        }
        c = b - g * (b - a);
        d = a + g * (b - a);
    }
    0.5 * (a + b)
}

/// (s, MΓ) of the narrow resonances of the default R model (tables/resonances.toml).
fn narrow_resonances() -> Vec<(f64, f64)> {
    standard_hadronic()
        .model()
        .resonances()
        .iter()
        .filter(|r| r.region == Region::Narrow)
        .map(|r| (r.mass_gev * r.mass_gev, r.mass_gev * r.width_gev))
        .collect()
}

/// Where the dressed line shape really peaks near each narrow resonance: the maximum of
/// s·σ_d(s) (σ_d·s is flat away from the peak) within ±50 MΓ of M².
fn dressed_peaks<C: CrossSection>(sigma: &C) -> Vec<(f64, f64)> {
    narrow_resonances()
        .into_iter()
        .map(|(m2, mg)| {
            let f = |s: f64| sigma.sigma_nb(s) * s;
            (golden_max(&f, m2 - 50.0 * mg, m2 + 50.0 * mg), mg)
        })
        .collect()
}

/// The peaks among `features`: (s, MΓ) in GeV².
fn peaks_of(features: &[Feature]) -> Vec<(f64, f64)> {
    features
        .iter()
        .filter_map(|f| match *f {
            Feature::Peak {
                s_gev2,
                m_gamma_gev2,
            } => Some((s_gev2, m_gamma_gev2)),
            Feature::Edge { .. } => None,
        })
        .collect()
}

/// σ_obs = C∫σ_d(s(1 − t^{1/β})) dt + ∫H(x)σ_d(s(1 − x)) dx over [0, x_max], tanh–sinh on
/// pieces split at the edges σ_d reports, at the R model's own peaks (ρ, ω, φ and the
/// resonance masses) and at the dressed peaks found by search, each ± [`SPLITS`] widths.
fn reference<C: CrossSection>(sigma: &C, s: f64, x_max: f64, peaks: &[(f64, f64)]) -> f64 {
    let r = Radiator::new(Scheme::KuraevFadin2, s);
    let beta = r.beta();
    // The hadronic VP's own features are the R model's (M² of every resonance and the ρ).
    let model_peaks = peaks_of(standard_hadronic().features());
    let mut xs = vec![0.0, x_max];
    for f in sigma.features() {
        if let Feature::Edge { s_gev2 } = *f {
            xs.push(1.0 - s_gev2 / s);
        }
    }
    for &(sp, w) in peaks.iter().chain(&model_peaks) {
        xs.extend(SPLITS.iter().map(|k| 1.0 - (sp + k * w) / s));
    }
    xs.retain(|&x| (0.0..=x_max).contains(&x));
    xs.sort_by(f64::total_cmp);
    xs.dedup();
    let tol = Tolerance {
        rel: 1e-12,
        abs: 1e-14 * sigma.sigma_nb(s),
    };
    let (mut soft, mut hard) = (0.0, 0.0);
    for w in xs.windows(2) {
        let a = integrate_double_exponential(
            |t: f64| sigma.sigma_nb(s * (1.0 - t.powf(1.0 / beta))),
            w[0].powf(beta),
            w[1].powf(beta),
            tol,
        );
        let b = integrate_double_exponential(
            |x: f64| r.hard(x) * sigma.sigma_nb(s * (1.0 - x)),
            w[0],
            w[1],
            tol,
        );
        assert!(
            a.converged() && b.converged(),
            "reference on x ∈ {w:?} at s = {s}: {a:?} {b:?}"
        );
        soft += a.value;
        hard += b.value;
    }
    r.soft_coefficient() * soft + hard
}

#[test]
fn narrow_vp_resonances_in_range_take_the_fixed_path_and_agree() {
    let dressed = Dressed::new(FermionPair::muon(), Vp::full());
    let peaks = dressed_peaks(&dressed);
    let isr = Isr::new(Scheme::KuraevFadin2, Cuts::NONE.with_x_max(0.5).unwrap());
    // (√s, what lies in s′ ∈ [s/2, s], the most fixed-rule panels allowed: a few more than
    // the 1, 3, 11, 4, 11, 10, 10 taken). Before the sinh-graded peak panels and the dressed
    // poles every row went adaptive (the ρ row by refusal, the others because the fixed
    // rules missed 1e-8 by 1e-3–1e-2): 105, 903, 1428, 1008, 2373, 2436, 2520 evaluations.
    let rows: [(f64, &str, usize); 7] = [
        (2.5, "the ρ just beyond x_max (its tail at the open end)", 2),
        (3.2, "J/ψ", 6),
        (4.0, "J/ψ, ψ(2S), the open-charm edges", 14),
        (9.6, "Υ(1S)", 6),
        (10.58, "Υ(1S), Υ(2S), Υ(3S), the open-bottom edges", 14),
        (11.0, "Υ(1S–3S), the open-bottom edges", 14),
        (12.0, "Υ(1S–3S), the open-bottom edges", 14),
    ];
    for (sqrt_s, inside, max_panels) in rows {
        let s = sqrt_s * sqrt_s;
        let got = isr.observe(&dressed, s).unwrap();
        let what = format!("μμ full VP, √s = {sqrt_s} GeV, x_max = 0.5 ({inside})");
        assert_eq!(got.status, Status::Converged, "{what}: {got:?}");
        assert!(
            got.error_nb <= 1e-8 * got.sigma_nb,
            "{what}: error estimate misses 1e-8: {got:?}"
        );
        // The fixed path reports its panels; the adaptive one none.
        assert!(
            (1..=max_panels).contains(&got.panels),
            "{what}: {} panels ({} evaluations), not the fixed path within {max_panels} panels",
            got.panels,
            got.evaluations
        );
        agrees_with_reference(&what, &got, reference(&dressed, s, got.x_max, &peaks));
    }
}

/// `got` within [`VS_REFERENCE`] of the reference `want`, and its error estimate covering
/// the true error (with the reference's own precision).
#[track_caller]
fn agrees_with_reference(what: &str, got: &Observed, want: f64) {
    let what = format!("{what} vs tanh–sinh reference");
    let (tol, own) = (VS_REFERENCE, REFERENCE_PRECISION);
    assert_within_estimate(&what, got.sigma_nb, got.error_nb, want, tol, own);
}

#[test]
fn the_vp_marks_each_narrow_resonance_at_the_pole_of_the_dressed_factor() {
    // With the resonance inside Π (physics.md §2's Π_V), 1/(1 − Π) = (s − M² + iMΓ)/g(s)
    // with g smooth: a zero near M² and a pole at the zero s_p of g, 3–24 widths away. The
    // features of Vp::full are what dressed integrals split at, so each narrow resonance
    // must be marked at s_p: 1/|g|² is a Lorentzian in s centred at Re s_p with half-width
    // |Im s_p|. Here its maximum and half-maximum points are found by search (the code
    // extrapolates g linearly instead).
    let vp = Vp::full();
    let factor = |s: f64| vp.s_channel_factor(s).norm_sqr();
    for (m2, mg) in narrow_resonances() {
        let lorentz = |s: f64| {
            let g = (1.0 - vp.pi(s)) * num_complex::Complex64::new(s - m2, mg);
            1.0 / g.norm_sqr()
        };
        let s_peak = golden_max(&lorentz, m2 - 50.0 * mg, m2 + 50.0 * mg);
        let half = 0.5 * lorentz(s_peak);
        // The half-maximum points by bisection on either side.
        let crossing = |mut inside: f64, mut outside: f64| {
            for _ in 0..200 {
                let mid = 0.5 * (inside + outside);
                if lorentz(mid) > half {
                    inside = mid;
                } else {
                    outside = mid;
                }
            }
            0.5 * (inside + outside)
        };
        let hwhm =
            0.5 * (crossing(s_peak, s_peak + 20.0 * mg) - crossing(s_peak, s_peak - 20.0 * mg));
        let (s_f, w_f) = peaks_of(vp.features())
            .into_iter()
            .min_by(|a, b| (a.0 - s_peak).abs().total_cmp(&(b.0 - s_peak).abs()))
            .unwrap();
        let what = format!("resonance at M² = {m2} GeV²");
        assert!(
            (s_f - s_peak).abs() < 0.02 * mg,
            "{what}: marked at {s_f}, the pole is at {s_peak} ({} widths off)",
            (s_f - s_peak) / mg
        );
        assert_rel(&format!("{what}: pole half-width"), w_f, hwhm, 0.02);
        // Physics: the dressed factor's peak has left M², where the factor is now a dip.
        assert!(
            (s_peak - m2).abs() > 2.0 * mg && factor(m2) < 0.5 * factor(s_peak),
            "{what}: pole {s_peak}, factor at M² {} vs at the pole {}",
            factor(m2),
            factor(s_peak)
        );
        // And M² itself is no longer among the breaks a dressed integral takes.
        assert!(
            !vp.features()
                .iter()
                .any(|f| matches!(*f, Feature::Peak { s_gev2, .. } if s_gev2 == m2)),
            "{what}: still marked at M²"
        );
    }
}

#[test]
fn a_dense_grid_shares_the_far_part_and_agrees_point_by_point() {
    // `Isr::observe_many` interpolates, on runs of ≥ 32 energies, either σ_obs itself (a
    // run clear of σ_d's structures by half its length: the first grid) or the part from
    // s′ below the run (near structures: the Υ(3S) and the open-bottom edge at 10.56 GeV,
    // the open-charm edge at 4.19 GeV), from 16 Chebyshev nodes. Checked here against the
    // tanh–sinh reference of sampled points over the whole range (the open range down to
    // the μμ threshold, and a minimum-mass cut), and against the point-by-point path.
    let dressed = Dressed::new(FermionPair::muon(), Vp::full());
    let peaks = dressed_peaks(&dressed);
    let grid = |lo: f64, hi: f64, n: usize| -> Vec<f64> {
        (0..n)
            .map(|i| {
                let e = lo + (hi - lo) * i as f64 / (n - 1) as f64;
                e * e
            })
            .collect()
    };
    let cases = [
        (
            "open range, √s 3.3–3.45 GeV (J/ψ, ρ, ω, φ in the far part)",
            Cuts::NONE,
            grid(3.3, 3.45, 200),
        ),
        (
            "open range, √s 10.6–11.1 GeV (open-bottom edge inside)",
            Cuts::NONE,
            grid(10.6, 11.1, 200),
        ),
        (
            "√s′ ≥ 3 GeV, √s 4.1–4.3 GeV (open-charm edge inside)",
            Cuts::NONE.with_min_mass_gev(3.0).unwrap(),
            grid(4.1, 4.3, 200),
        ),
    ];
    for (what, cuts, s_values) in cases {
        let isr = Isr::new(Scheme::KuraevFadin2, cuts);
        let many = isr.observe_many(&dressed, &s_values);
        for (k, (&s, got)) in s_values.iter().zip(&many).enumerate() {
            let got = got.as_ref().unwrap();
            let alone = isr.observe(&dressed, s).unwrap();
            let at = format!("{what}, √s = {:.5} GeV", s.sqrt());
            assert_eq!(got.status, Status::Converged, "{at}: {got:?}");
            assert!(got.error_nb <= 1e-8 * got.sigma_nb, "{at}: {got:?}");
            // The shared part is what makes the grid cheap: fewer than half the
            // evaluations of the point alone.
            assert!(
                2 * got.evaluations < alone.evaluations,
                "{at}: {} evaluations vs {} alone: the run was not shared",
                got.evaluations,
                alone.evaluations
            );
            // Two evaluations within 1e-8 each: 2e-8 at most (measured ≤ 5e-11).
            assert_rel(
                &format!("{at} vs alone"),
                got.sigma_nb,
                alone.sigma_nb,
                2e-8,
            );
            if k % 40 == 7 {
                agrees_with_reference(&at, got, reference(&dressed, s, got.x_max, &peaks));
            }
        }
    }
}

#[test]
fn a_grid_with_an_upper_cut_is_taken_point_by_point() {
    // With x_max (or a photon-energy cut) binding, the lowest s′ moves with s and the far
    // part is no analytic function of s: each point is integrated on its own, bit for bit.
    let dressed = Dressed::new(FermionPair::muon(), Vp::full());
    let isr = Isr::new(Scheme::KuraevFadin2, Cuts::NONE.with_x_max(0.5).unwrap());
    let s_values: Vec<f64> = (0..100).map(|i| (3.3 + 0.001 * i as f64).powi(2)).collect();
    for (got, &s) in isr.observe_many(&dressed, &s_values).iter().zip(&s_values) {
        assert_eq!(got.as_ref().unwrap(), &isr.observe(&dressed, s).unwrap());
    }
}
