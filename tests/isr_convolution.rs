//! The ISR convolution against things outside the code: an mpmath evaluation at 30
//! digits, the radiator's published sum rule, the soft limit, the Kuraev–Fadin
//! narrow-resonance closed form, and the physics each number shows.

mod common;
use common::{assert_rel, assert_within_estimate, parse_key_values, python_reference};
use radnorm::constants::{ALPHA, M_MU_GEV};
use radnorm::isr::{Cuts, Isr, Observed, Radiated, Radiator, Scheme};
use radnorm::process::{CrossSection, Feature, FermionPair};
use std::f64::consts::PI;

/// Our target accuracy is 1e-8; the independent comparison is asked to ≤ 1e-7 (issue 4)
/// and in practice agrees to ~1e-13.
const VS_MPMATH: f64 = 1e-9;

/// μμ Born plus a constant-width Breit–Wigner σ_p M²Γ²/((s − M²)² + M²Γ²): an invented
/// J/ψ-like narrow resonance for the tests.
struct WithPeak {
    mumu: FermionPair,
    m: f64,
    gamma: f64,
    peak_nb: f64,
    features: [Feature; 1],
}

impl WithPeak {
    fn new(m: f64, gamma: f64, peak_nb: f64) -> Self {
        WithPeak {
            mumu: FermionPair::muon(),
            m,
            gamma,
            peak_nb,
            features: [Feature::Peak {
                s_gev2: m * m,
                m_gamma_gev2: m * gamma,
            }],
        }
    }
    fn bw(&self, s: f64) -> f64 {
        let mg = self.m * self.gamma;
        let d = s - self.m * self.m;
        self.peak_nb * mg * mg / (d * d + mg * mg)
    }
}

impl CrossSection for WithPeak {
    fn sigma_nb(&self, s: f64) -> f64 {
        self.mumu.sigma_nb(s) + self.bw(s)
    }
    fn threshold_s_gev2(&self) -> f64 {
        4.0 * M_MU_GEV * M_MU_GEV
    }
    fn features(&self) -> &[Feature] {
        &self.features
    }
}

fn isr(scheme: Scheme, x_max: Option<f64>) -> Isr {
    let cuts = match x_max {
        Some(x) => Cuts::NONE.with_x_max(x).unwrap(),
        None => Cuts::NONE,
    };
    Isr::new(scheme, cuts)
}

#[test]
fn agrees_with_mpmath_at_30_digits() {
    let Some(out) = python_reference("isr_convolution.py", &[]) else {
        return;
    };
    let want = parse_key_values(&out);
    let mumu = FermionPair::muon();
    let peak = WithPeak::new(3.0969, 92.6e-6, 3000.0);
    // (name, √s, x_max cut (None: the μμ threshold), scheme, with the peak)
    let rows: [(&str, f64, Option<f64>, Scheme, bool); 8] = [
        ("kf2_3_half", 3.0, Some(0.5), Scheme::KuraevFadin2, false),
        ("kf2_10_half", 10.0, Some(0.5), Scheme::KuraevFadin2, false),
        ("kf2_10_open", 10.0, None, Scheme::KuraevFadin2, false),
        ("kf2_1_open", 1.0, None, Scheme::KuraevFadin2, false),
        ("kf2_025_open", 0.25, None, Scheme::KuraevFadin2, false),
        (
            "exp1_10_half",
            10.0,
            Some(0.5),
            Scheme::Exponentiated1,
            false,
        ),
        (
            "sfll_10_half",
            10.0,
            Some(0.5),
            Scheme::StructureFunctionLl,
            false,
        ),
        ("kf2_bw_32_half", 3.2, Some(0.5), Scheme::KuraevFadin2, true),
    ];
    for (name, rs, xm, scheme, with_peak) in rows {
        let link = isr(scheme, xm);
        let s = rs * rs;
        let got = if with_peak {
            link.observe(&peak, s)
        } else {
            link.observe(&mumu, s)
        }
        .unwrap();
        assert!(
            got.status == radnorm::numeric::Status::Converged,
            "{name}: {got:?}"
        );
        assert!(
            got.error_nb <= 1e-8 * got.sigma_nb,
            "{name}: error estimate {got:?}"
        );
        // The error estimate is honest: it covers the true error (with f64 rounding, 1e-13).
        agrees_with_mpmath(name, &got, want[name], 1e-13);
    }
    // The grid path (`Isr::observe_many`, σ_obs interpolated across runs of energies): the
    // open-range references at √s = 10 and 1 GeV inside dense grids, given in reverse
    // order, twice, beside a point below the μμ threshold.
    let link = isr(Scheme::KuraevFadin2, None);
    let dense =
        |lo: f64, hi: f64| (0..400).map(move |k| (lo + (hi - lo) * k as f64 / 399.0).powi(2));
    let mut s: Vec<f64> = dense(9.0, 11.0).chain(dense(0.8, 1.2)).collect();
    s.extend([100.0, 1.0, 100.0, 0.01]);
    s.reverse();
    let many = link.observe_many(&mumu, &s);
    for (got, &s_k) in many.iter().zip(&s) {
        let got = got.as_ref().unwrap();
        let name = match s_k {
            100.0 => "kf2_10_open",
            1.0 => "kf2_1_open",
            0.01 => {
                assert_eq!(got.sigma_nb, 0.0, "below the threshold: {got:?}");
                continue;
            }
            _ => continue,
        };
        let alone = link.observe(&mumu, s_k).unwrap();
        assert!(
            2 * got.evaluations < alone.evaluations,
            "{name} on the grid: {} evaluations, {} alone: not interpolated",
            got.evaluations,
            alone.evaluations
        );
        assert!(
            got.error_nb <= 1e-8 * got.sigma_nb,
            "{name} on the grid: {got:?}"
        );
        agrees_with_mpmath(&format!("{name} on the grid"), got, want[name], 1e-13);
    }
}

/// `got` within [`VS_MPMATH`] of the mpmath value `want`, its error estimate covering the
/// true error up to `rounding` (relative) of f64 arithmetic.
#[track_caller]
fn agrees_with_mpmath(what: &str, got: &Observed, want: f64, rounding: f64) {
    let what = format!("isr {what} vs mpmath");
    assert_within_estimate(&what, got.sigma_nb, got.error_nb, want, VS_MPMATH, rounding);
}

#[test]
fn sqrt_s_on_and_next_to_a_peak_agrees_with_mpmath_on_the_fixed_path() {
    // √s on a resonance, just below it (the peak above √s) and just above it: the fixed
    // path limits its head panel and grades from x = 0 there (before, these went adaptive).
    // Reference: tests/ref/isr_convolution.py, mpmath at 30 digits.
    let Some(out) = python_reference("isr_convolution.py", &[]) else {
        return;
    };
    let want = parse_key_values(&out);
    let wide = WithPeak::new(5.2, 0.04, 30.0);
    let narrow = WithPeak::new(3.0969, 92.6e-6, 3000.0);
    // (name, √s, σ_d, its peak's M and Γ)
    let rows: [(&str, f64, &WithPeak, f64, f64); 5] = [
        ("kf2_bw40_on", 5.2, &wide, 5.2, 0.04),
        ("kf2_bw40_below", 5.15, &wide, 5.2, 0.04),
        ("kf2_bw40_above", 5.26, &wide, 5.2, 0.04),
        ("kf2_narrow_on", 3.0969, &narrow, 3.0969, 92.6e-6),
        ("kf2_narrow_below", 3.0967, &narrow, 3.0969, 92.6e-6),
    ];
    let link = isr(Scheme::KuraevFadin2, Some(0.5));
    for (name, rs, sigma, m, gamma) in rows {
        let got = link.observe(sigma, rs * rs).unwrap();
        // The fixed path reports its panels (the adaptive fallback none).
        assert!(
            (1..=8).contains(&got.panels),
            "{name}: {} panels, {} evaluations: not the fixed path",
            got.panels,
            got.evaluations
        );
        // The error estimate covers the true error up to f64 rounding, which a peak
        // amplifies: σ_d's condition number in s′ is up to s/(MΓ) there, times the two
        // roundings of s′ = s(1 − x) (≈ 1.5e-11 relative for the narrow peak; seen 4e-12).
        let rounding = (2.0 * f64::EPSILON * rs * rs / (m * gamma)).max(1e-13);
        agrees_with_mpmath(name, &got, want[name], rounding);
    }
}

/// A flat σ = 1 with a negligible threshold turns the convolution into ∫₀^{x_max} F dx.
struct Flat;
impl CrossSection for Flat {
    fn sigma_nb(&self, _s: f64) -> f64 {
        1.0
    }
    fn threshold_s_gev2(&self) -> f64 {
        1e-14
    }
}

#[test]
fn kuraev_fadin_sum_rule() {
    // Kuraev–Fadin (1985): with the O(β²) coefficients ∫₀¹ F(x, s) dx = 1 + (α/π)(π²/3 − 1/2)
    // for every s (the O(β) and O(β²) terms cancel; checked by hand in physics.md §4).
    // The missing sliver x > 1 − 1e-14/s is below 1e-12.
    let want = 1.0 + ALPHA / PI * (PI * PI / 3.0 - 0.5);
    for rs in [1.0, 10.0, 91.0] {
        let got = isr(Scheme::KuraevFadin2, None)
            .observe(&Flat, rs * rs)
            .unwrap();
        assert_rel(
            &format!("∫F dx at √s = {rs} GeV"),
            got.sigma_nb,
            want,
            1e-10,
        );
    }
}

#[test]
fn first_order_schemes_integrate_in_closed_form() {
    // With H = −β(1 − x/2): ∫₀^c F dx = C c^β − β(c − c²/4) (elementary), C written out
    // here from the published forms.
    let s = 100.0;
    let l = (s / radnorm::constants::M_E_GEV.powi(2)).ln();
    let beta = 2.0 * ALPHA / PI * (l - 1.0);
    let k = ALPHA / PI * (PI * PI / 3.0 - 0.5);
    let c_exp1 = 1.0 + 0.75 * beta + k;
    // Γ(1 + β) from its series ln Γ(1+β) = −γβ + Σ ζ(n)(−β)ⁿ/n (A&S 6.1.33), through β⁹.
    let zeta = [
        PI * PI / 6.0,
        1.202_056_903_159_594,
        PI.powi(4) / 90.0,
        1.036_927_755_143_37,
        PI.powi(6) / 945.0,
        1.008_349_277_381_922_8,
        PI.powi(8) / 9450.0,
        1.002_008_392_826_082_2,
    ];
    let g = 0.577_215_664_901_532_9;
    let ln_gamma: f64 = -g * beta
        + zeta
            .iter()
            .enumerate()
            .map(|(i, z)| z * (-beta).powi(i as i32 + 2) / (i as f64 + 2.0))
            .sum::<f64>();
    let c_sfll = (beta * (0.75 - g) - ln_gamma).exp() * (1.0 + k);
    for (scheme, c) in [
        (Scheme::Exponentiated1, c_exp1),
        (Scheme::StructureFunctionLl, c_sfll),
    ] {
        for xm in [0.01f64, 0.5, 0.99] {
            let want = c * xm.powf(beta) - beta * (xm - 0.25 * xm * xm);
            let got = isr(scheme, Some(xm)).observe(&Flat, s).unwrap().sigma_nb;
            assert_rel(&format!("{} ∫₀^{xm} F", scheme.key()), got, want, 1e-10);
        }
    }
}

#[test]
fn radiator_limits() {
    // x → 0: F → C β x^(β−1) dominates (the hard part is at most logarithmic);
    // x → 1 for kf2: H ~ −(β²/8)·ln(1 − x) → +∞ only logarithmically (the published form).
    let r = Radiator::new(Scheme::KuraevFadin2, 100.0);
    let (b, c) = (r.beta(), r.soft_coefficient());
    let x = 1e-12f64;
    assert_rel(
        "F/(Cβx^(β−1)) at x = 1e-12",
        r.density(x) / (c * b * x.powf(b - 1.0)),
        1.0,
        1e-9,
    );
    let (x1, x2) = (1.0 - 1e-6, 1.0 - 1e-12);
    let slope = (r.hard(x2) - r.hard(x1)) / ((1e-6f64).ln() - (1e-12f64).ln());
    assert_rel(
        "d H / d(−ln(1−x)) near x = 1",
        slope,
        b * b / 8.0 * 1.0,
        1e-5,
    );
}

#[test]
fn soft_limit() {
    // From the published radiator: for small x_max, σ_obs = δ_VS x_max^β σ_d(s) + O(x_max)
    // (the hard part and the slope of σ_d contribute at O(x_max)).
    let mumu = FermionPair::muon();
    let s = 25.0;
    let r = Radiator::new(Scheme::KuraevFadin2, s);
    for xm in [1e-3f64, 1e-5] {
        let got = isr(Scheme::KuraevFadin2, Some(xm))
            .observe(&mumu, s)
            .unwrap()
            .sigma_nb;
        let soft = r.soft_coefficient() * xm.powf(r.beta()) * mumu.sigma_nb(s);
        let rel = (got / soft - 1.0).abs();
        assert!(
            rel < 3.0 * xm,
            "x_max = {xm}: σ_obs/soft − 1 = {rel:e} not O(x_max)"
        );
    }
}

#[test]
fn narrow_resonance_peak_matches_kuraev_fadin_closed_form() {
    // Kuraev–Fadin (1985): on the peak of a resonance with Γ ≪ the scale of σ's other
    // variation, σ_obs(M²) = σ_p δ_VS (Γ/M)^β (πβ/2)/sin(πβ/2): the soft term integrated
    // against the Breit–Wigner, which is a Lorentzian in x of half-width Γ/M. The hard part
    // adds O(βΓ/M) ≈ 1e-5·σ_p, which sets the tolerance.
    let (m, gamma) = (3.0969, 92.6e-6);
    let peak = WithPeak::new(m, gamma, 3000.0);
    let bw_only = |s: f64| peak.bw(s);
    struct Bw<'a, F: Fn(f64) -> f64 + Sync>(&'a F, [Feature; 1]);
    impl<F: Fn(f64) -> f64 + Sync> CrossSection for Bw<'_, F> {
        fn sigma_nb(&self, s: f64) -> f64 {
            (self.0)(s)
        }
        fn threshold_s_gev2(&self) -> f64 {
            1.0
        }
        fn features(&self) -> &[Feature] {
            &self.1
        }
    }
    let bw = Bw(&bw_only, peak.features);
    let s = m * m;
    let r = Radiator::new(Scheme::KuraevFadin2, s);
    let b = r.beta();
    let want =
        3000.0 * r.soft_coefficient() * (gamma / m).powf(b) * (PI * b / 2.0) / (PI * b / 2.0).sin();
    let got = isr(Scheme::KuraevFadin2, Some(0.5))
        .observe(&bw, s)
        .unwrap();
    assert_rel(
        "observed J/ψ-like peak vs KF closed form",
        got.sigma_nb,
        want,
        2e-5,
    );
    // Physics: radiation moves the collision off the narrow peak, so on the peak
    // 1 + δ = σ_obs/σ_d is far below 1 (here ≈ 0.5).
    let one_plus_delta = got.sigma_nb / 3000.0;
    assert!(
        one_plus_delta < 0.6,
        "1 + δ on a narrow peak = {one_plus_delta}"
    );
}

#[test]
fn open_tail_raises_mumu() {
    // Physics: far above threshold σ_d ∝ 1/s′ grows toward lower s′, so with the radiative
    // tail open (x_max near 1) the radiated events outweigh the virtual loss: 1 + δ > 1.
    let mumu = FermionPair::muon();
    let s = 100.0;
    let obs = isr(Scheme::KuraevFadin2, Some(0.99))
        .observe(&mumu, s)
        .unwrap()
        .sigma_nb;
    assert!(
        obs / mumu.sigma_nb(s) > 1.1,
        "1 + δ = {}",
        obs / mumu.sigma_nb(s)
    );
    // And with a tight cut the same process loses: the soft factor x_max^β < 1 wins.
    let cut = isr(Scheme::KuraevFadin2, Some(0.01))
        .observe(&mumu, s)
        .unwrap()
        .sigma_nb;
    assert!(cut / mumu.sigma_nb(s) < 1.0);
}

#[test]
fn at_and_just_above_threshold_is_finite() {
    let mumu = FermionPair::muon();
    let s_th = 4.0 * M_MU_GEV * M_MU_GEV;
    let link = isr(Scheme::KuraevFadin2, None);
    assert_eq!(link.observe(&mumu, s_th).unwrap().sigma_nb, 0.0);
    assert_eq!(link.observe(&mumu, 0.5 * s_th).unwrap().sigma_nb, 0.0);
    for eps in [1e-14, 1e-10, 1e-6, 1e-3] {
        let o = link.observe(&mumu, s_th * (1.0 + eps)).unwrap();
        assert!(
            o.sigma_nb.is_finite() && o.sigma_nb >= 0.0,
            "eps {eps}: {o:?}"
        );
        assert!(
            o.sigma_nb <= mumu.sigma_nb(s_th * (1.0 + eps)) * 2.0,
            "eps {eps}: {o:?}"
        );
    }
}

#[test]
fn radiated_is_a_cross_section() {
    let mumu = FermionPair::muon();
    let link = isr(Scheme::KuraevFadin2, Some(0.5));
    let radiated = Radiated::new(FermionPair::muon(), link);
    assert_eq!(
        radiated.sigma_nb(9.0),
        link.observe(&mumu, 9.0).unwrap().sigma_nb
    );
    let cut = Isr::new(
        Scheme::KuraevFadin2,
        Cuts::NONE.with_min_mass_gev(4.0).unwrap(),
    );
    assert!(cut.observe(&mumu, 9.0).is_err());
    assert_eq!(Radiated::new(FermionPair::muon(), cut).sigma_nb(9.0), 0.0);
}
