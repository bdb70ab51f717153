//! Visible cross-sections against the outside: closed forms, the small-angle limit, the
//! structure-function limits, an independent scipy integration with ISR and an independent
//! mpmath evaluation of the VP-dressed Bhabha cross-section.

mod common;

use common::{assert_rel, parse_key_values, python_reference};
use radnorm::constants::{ALPHA, GEV2_TO_NB, M_E_GEV};
use radnorm::lumi::{
    Acceptance, Channel, FinalState, PolarRange, Scale, Settings, StructureFunction, Uncertainties,
    Visible, predict,
};
use radnorm::numeric::GaussLegendre;
use radnorm::vp::{Polarisation, Vp};
use std::f64::consts::PI;

const BORN: Settings = Settings {
    radiation: false,
    scale: Scale::MomentumTransfer,
    precision: 1e-4,
    z_exchange: false,
};

fn window(lo: f64, hi: f64) -> PolarRange {
    PolarRange::new(lo, hi).unwrap()
}

fn acc(first: PolarRange, second: PolarRange, acol: f64, emin: f64, fs: FinalState) -> Acceptance {
    Acceptance::new(first, second, acol, emin, fs).unwrap()
}

/// The closed-form Bhabha integral over cosθ ∈ [lo, hi] (physics notes §1, with a = 1 − c:
/// dσ/dc = (πα²/s)(8/a² − 8/a + 6 − 2a + a²/2)), written out here independently.
fn bhabha_closed(s: f64, lo: f64, hi: f64) -> f64 {
    let g = |c: f64| {
        let a = 1.0 - c;
        -8.0 / a - 8.0 * a.ln() + 6.0 * a - a * a + a * a * a / 6.0
    };
    PI * ALPHA * ALPHA / s * GEV2_TO_NB * (g(lo) - g(hi))
}

#[test]
fn born_limit_equals_the_closed_forms() {
    // No radiation, no VP: σ_vis is the closed-form integral over the back-to-back window.
    let s = 10.58f64.powi(2);
    let w = window(40.0, 140.0);
    let c = 40f64.to_radians().cos();
    let ee = Visible::new(
        Channel::Bhabha,
        acc(w, w, 180.0, 0.0, FinalState::Calorimetric),
        None,
        BORN,
    )
    .unwrap();
    assert_rel(
        "bhabha 40-140",
        ee.sigma_vis(s).unwrap().sigma_nb,
        bhabha_closed(s, -c, c),
        1e-13,
    );
    // Asymmetric windows: electron in 30°–100°, positron in 60°–170°: the electron's cosθ
    // lies in [cos 100°, cos 30°] ∩ [−cos 60°... ] i.e. θ_e ∈ [max(30, 10), min(100, 120)].
    let asym = acc(
        window(30.0, 100.0),
        window(60.0, 170.0),
        180.0,
        0.0,
        FinalState::Calorimetric,
    );
    let ee = Visible::new(Channel::Bhabha, asym, None, BORN).unwrap();
    let (lo, hi) = (100f64.to_radians().cos(), 30f64.to_radians().cos());
    assert_rel(
        "bhabha asymmetric",
        ee.sigma_vis(s).unwrap().sigma_nb,
        bhabha_closed(s, lo, hi),
        1e-13,
    );
    // γγ: (2πα²/s)[ln((1+c)/(1−c)) − c] with identical photons counted once (physics notes §1).
    let gg = Visible::new(
        Channel::Diphoton,
        acc(w, w, 180.0, 0.0, FinalState::Calorimetric),
        None,
        BORN,
    )
    .unwrap();
    let want = 2.0 * PI * ALPHA * ALPHA / s * (((1.0 + c) / (1.0 - c)).ln() - c) * GEV2_TO_NB;
    assert_rel("gg 40-140", gg.sigma_vis(s).unwrap().sigma_nb, want, 1e-13);
}

#[test]
fn small_angle_bhabha_and_its_geometric_sensitivity() {
    // σ ≈ (16πα²/s)(1/θ_min² − 1/θ_max²) at θ ≈ 30–50 mrad: good to ~0.1% (physics notes §1),
    // electron forward in [θ_min, θ_max], positron backward.
    let (t0, t1) = (0.030f64, 0.050f64);
    let (d0, d1) = (t0.to_degrees(), t1.to_degrees());
    let a = acc(
        window(d0, d1),
        window(180.0 - d1, 180.0 - d0),
        180.0,
        0.0,
        FinalState::Calorimetric,
    );
    let s = 91.19f64.powi(2);
    let v = Visible::new(Channel::Bhabha, a, None, BORN).unwrap();
    let sigma = v.sigma_vis(s).unwrap().sigma_nb;
    let approx = 16.0 * PI * ALPHA * ALPHA / s * (1.0 / (t0 * t0) - 1.0 / (t1 * t1)) * GEV2_TO_NB;
    assert_rel("small-angle Bhabha", sigma, approx, 1e-3);
    // Geometry: narrowing every window by δ at both ends moves the electron's effective
    // edges to θ_min + δ and θ_max − δ, so the derivative of the small-angle form gives
    // δσ/σ = −2δ(1/θ_min³ + 1/θ_max³)/(1/θ_min² − 1/θ_max²); for θ_max ≫ θ_min it is the
    // rule δL/L ≈ 2δθ_min/θ_min (common practice at small angle).
    let dtheta_deg = 0.001;
    let unc = Uncertainties {
        theta_edge_deg: dtheta_deg,
        ..Uncertainties::default()
    };
    let p = predict(&v, None, &[], &unc, 91.19).unwrap();
    let width = p
        .shifts
        .iter()
        .find(|x| x.name == "acceptance_width")
        .unwrap()
        .shift_nb;
    let dth = dtheta_deg.to_radians();
    let norm = 1.0 / (t0 * t0) - 1.0 / (t1 * t1);
    let want = -2.0 * dth * (1.0 / t0.powi(3) + 1.0 / t1.powi(3)) / norm;
    // 3e-3: the small-angle form is good to ~1e-3 and its derivative to a few 1e-3.
    assert_rel("acceptance width", width / sigma, want, 3e-3);
    // The rule of thumb, with θ_max far out (30 mrad to 30°): within 2% of 2δθ/θ_min.
    let wide = acc(
        window(d0, 30.0),
        window(150.0, 180.0 - d0),
        180.0,
        0.0,
        FinalState::Calorimetric,
    );
    let v = Visible::new(Channel::Bhabha, wide, None, BORN).unwrap();
    let p = predict(&v, None, &[], &unc, 91.19).unwrap();
    let width = p
        .shifts
        .iter()
        .find(|x| x.name == "acceptance_width")
        .unwrap()
        .shift_nb;
    assert_rel(
        "2 dtheta/theta rule",
        -width / p.sigma.sigma_nb,
        2.0 * dth / t0,
        2e-2,
    );
}

#[test]
fn structure_function_normalisation_and_collinear_limit() {
    // ∫₀¹ D dz = 1 exactly (to the order kept); ⟨z⟩ → 1 − β/3 + O(β²), the first-order
    // Altarelli–Parisi value (β/4)∫(1 + z²)dz·(−1) = −β/3 (closed form).
    let rule = GaussLegendre::new(64);
    for q2 in [1.0, 100.0, 1e4] {
        let d = StructureFunction::new(q2, M_E_GEV).unwrap();
        let b = d.beta();
        assert!((d.keep_at_least(0.0) - 1.0).abs() < 1e-15, "q2={q2}");
        // Moments with the soft substitution: ∫ g(z) D dz = ∫₀¹ g(z(t)) w(t) dt.
        let norm = rule.integrate(|t| d.dt_weight(t), 0.0, 1.0);
        assert!((norm - 1.0).abs() < 1e-12, "q2={q2}: norm {norm}");
        let mean = rule.integrate(|t| d.z_of_t(t) * d.dt_weight(t), 0.0, 1.0);
        assert!(
            (mean - (1.0 - b / 3.0)).abs() < b * b,
            "q2={q2}: <z> {mean}, beta {b}"
        );
    }
    // As β → 0 (Q² → e·m²) D tends to δ(1 − z): ∫ g D → g(1) for a smooth g.
    let d =
        StructureFunction::new(std::f64::consts::E * M_E_GEV * M_E_GEV * 1.001, M_E_GEV).unwrap();
    let g = |z: f64| (2.0 * z).cos();
    let got = rule.integrate(|t| g(d.z_of_t(t)) * d.dt_weight(t), 0.0, 1.0);
    assert!((got - g(1.0)).abs() < 1e-4, "{got}");
}

#[test]
fn isr_sigma_vis_against_independent_scipy_integration() {
    // Calorimetric Bhabha, 40°–140°, acollinearity ≤ 10°, E ≥ 0.5 E_beam at √s = 10 GeV with
    // the |t̄| scale; tests/ref/lumi_radiative.py integrates the same formulas with its own
    // kinematics (explicit boost), root finding and scipy dblquad (epsrel 2e-5).
    let w = window(40.0, 140.0);
    let a = acc(w, w, 10.0, 0.5, FinalState::Calorimetric);
    let v = Visible::new(Channel::Bhabha, a, None, Settings::default()).unwrap();
    let got = v.sigma_vis(100.0).unwrap();
    assert!(got.converged);
    let Some(out) = python_reference(
        "lumi_radiative.py",
        &[
            "10.0",
            "40",
            "140",
            "10",
            "0.5",
            &format!("{}", got.beta),
            "calo",
        ],
    ) else {
        return;
    };
    let r = parse_key_values(&out);
    // The scale: |t̄| = exp⟨ln|t|⟩ (Born-weighted), independently integrated.
    assert_rel("|t| scale", got.q2_gev2.ln(), r["lnt_mean"], 1e-10);
    // 1e-4: the requested precision of both sides.
    assert_rel("sigma_vis ISR", got.sigma_nb, r["sigma_nb"], 1e-4);
    // Radiation lowers σ_vis (events leave the acceptance): a few percent here.
    let born = Visible::new(
        Channel::Bhabha,
        a,
        None,
        Settings {
            radiation: false,
            ..Settings::default()
        },
    )
    .unwrap();
    let ratio = got.sigma_nb / born.sigma_vis(100.0).unwrap().sigma_nb;
    assert!(ratio > 0.85 && ratio < 0.97, "ratio {ratio}");
}

#[test]
fn vp_running_raises_large_angle_bhabha_by_a_few_percent() {
    // Born-level, leptonic VP at √s = 10 GeV, 40°–140°: against tests/ref/lumi_vp.py (mpmath,
    // one-loop Π_ℓ exact in the masses, amplitude-level dressing). Our leptonic Π also has the
    // two- and three-loop terms (~0.5% of Δα_lep), so the VP effect agrees to 2% of itself.
    let w = window(40.0, 140.0);
    let a = acc(w, w, 180.0, 0.0, FinalState::Calorimetric);
    let lep = Vp::leptonic();
    let v = Visible::new(Channel::Bhabha, a, Some(&lep as &dyn Polarisation), BORN).unwrap();
    let dressed = v.sigma_vis(100.0).unwrap().sigma_nb;
    let bare = Visible::new(Channel::Bhabha, a, None, BORN)
        .unwrap()
        .sigma_vis(100.0)
        .unwrap()
        .sigma_nb;
    let effect = dressed / bare - 1.0;
    assert!(
        effect > 0.02 && effect < 0.06,
        "leptonic VP effect {effect}"
    );
    if let Some(out) = python_reference("lumi_vp.py", &["10", "40"]) {
        let r = parse_key_values(&out);
        assert_rel("born (mpmath)", bare, r["sigma_born_nb"], 1e-12);
        let want = r["sigma_dressed_nb"] / r["sigma_born_nb"] - 1.0;
        assert_rel("leptonic VP effect", effect, want, 2e-2);
    }
    // Full VP adds the hadrons: a larger, still few-percent effect, same sign.
    let full = Vp::full();
    let v = Visible::new(Channel::Bhabha, a, Some(&full as &dyn Polarisation), BORN).unwrap();
    let full_effect = v.sigma_vis(100.0).unwrap().sigma_nb / bare - 1.0;
    assert!(
        full_effect > effect && full_effect < 0.1,
        "full VP effect {full_effect}"
    );
}

#[test]
fn bare_tracks_lose_events_to_fsr_only_through_the_energy_cut() {
    // Collinear FSR keeps the direction: with no energy cut beyond a tiny one, bare tracks
    // and calorimetric leptons agree; with E ≥ 0.5 E_beam bare tracks lose events. The FSR
    // weight is the closed-form cumulative ∫_{y₀}^1 D, checked in the unit tests.
    let w = window(40.0, 140.0);
    let sv = |emin: f64, fs| {
        let v = Visible::new(
            Channel::Bhabha,
            acc(w, w, 10.0, emin, fs),
            None,
            Settings::default(),
        )
        .unwrap();
        v.sigma_vis(100.0).unwrap().sigma_nb
    };
    let (calo, bare) = (
        sv(0.5, FinalState::Calorimetric),
        sv(0.5, FinalState::BareTrack),
    );
    assert!(bare < calo && bare > 0.9 * calo, "{bare} vs {calo}");
    let (calo, bare) = (
        sv(1e-3, FinalState::Calorimetric),
        sv(1e-3, FinalState::BareTrack),
    );
    // (1e-3)^(β/2) − 1 ≈ −0.27 β ... the FSR loss at a 0.1% cut is ~β·(e_min) ≈ 1e-4.
    assert_rel("bare vs calo, tiny cut", bare, calo, 1e-3);
}
