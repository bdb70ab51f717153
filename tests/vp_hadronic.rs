//! Hadronic vacuum polarisation: analytic Breit–Wigners against quadrature and the δ-function
//! closed form, the table against the direct dispersion integral, and Δα_had⁽⁵⁾(M_Z²)
//! against a published data-driven determination.

mod common;
use common::*;

use radnorm::constants::ALPHA;
use radnorm::numeric::{Tolerance, integrate, principal_value};
use radnorm::process::RRatio;
use radnorm::rmodel::{RModel, Region, Resonance};
use radnorm::vp::hadronic::{HadronicVp, pi_breit_wigner};
use radnorm::vp::standard_hadronic;
use std::f64::consts::PI;

fn jpsi_like(width_gev: f64) -> Resonance {
    // J/ψ-like numbers (PDG 2026 mass and Γ_ee); the width is a parameter of the test.
    Resonance {
        name: "test".into(),
        mass_gev: 3.0969,
        width_gev,
        gamma_ee_bare_gev: 5.53e-6,
        gamma_ee_rel_unc: 0.02,
        weight: 1.0,
        region: Region::Narrow,
    }
}

/// −(αq²/3π) P∫₀^∞ R(s)/(s(s − q²)) ds by adaptive quadrature, split at the peak.
fn numeric_dispersion(res: &Resonance, q2: f64) -> f64 {
    let m2 = res.mass_gev * res.mass_gev;
    let mg = res.mass_gev * res.width_gev;
    let points: Vec<f64> = [-100.0, -10.0, -3.0, -1.0, 0.0, 1.0, 3.0, 10.0, 100.0]
        .iter()
        .map(|k| m2 + k * mg)
        .filter(|&s| s > 0.0)
        .collect();
    let tol = Tolerance {
        rel: 1e-12,
        abs: 0.0,
    };
    let big = 1e4 * m2;
    let g = |s: f64| res.r(s) / s;
    let finite = if q2 > 0.0 && q2 < big {
        principal_value(g, 0.0, big, q2, &points, tol).value
    } else {
        integrate(|s| g(s) / (s - q2), 0.0, big, &points, tol).value
    };
    // Tail: R ≈ K/s there, ∫_big^∞ K/(s²(s − q²)) ds ≈ K/(2big²) (relative 1e-8 of the total).
    let tail = res.strength() / (2.0 * big * big);
    -ALPHA * q2 / (3.0 * PI) * (finite + tail)
}

#[test]
fn breit_wigner_partial_fractions_match_quadrature() {
    // The exact partial-fraction form against adaptive Gauss–Kronrod (spacelike, below,
    // on and above the peak, far above). The quadrature target is 1e-12; 1e-8 leaves room
    // for the principal value's subtraction near a steep peak.
    for width in [0.093e-3, 0.05] {
        let res = jpsi_like(width);
        let m2 = res.mass_gev * res.mass_gev;
        for q2 in [-4.0, 2.0, m2 - 3e-3, m2, m2 + 1e-3, 30.0, 8315.0] {
            let got = pi_breit_wigner(&res, q2);
            let want = numeric_dispersion(&res, q2);
            assert_abs(
                &format!("Re Π_BW(Γ={width}) at q²={q2}"),
                got.re,
                want,
                1e-8 * want.abs().max(1e-3),
            );
            // Im Π = −(α/3)R (physics.md §2), exactly.
            let im = if q2 > 0.0 {
                -ALPHA / 3.0 * res.r(q2)
            } else {
                0.0
            };
            assert_abs("Im Π_BW", got.im, im, 1e-12 * im.abs().max(1e-12));
        }
    }
}

#[test]
fn narrow_limit_is_the_delta_function_form() {
    // Δα_V(q²) = −3q²Γ_ee/(αM(M² − q²)) for R_V = (9π/α²)MΓ_ee δ(s − M²) (physics.md §2).
    // A Breit–Wigner of width Γ differs by O(Γ/M) and O(MΓ/|M² − q²|): with Γ = 1 keV both are
    // below 1e-6; the dispersion integral of that Breit–Wigner is done by quadrature.
    let res = jpsi_like(1e-6);
    let m = res.mass_gev;
    for q2 in [-100.0, -1.0, 4.0, 16.0, 8315.0] {
        let closed = -3.0 * q2 * res.gamma_ee_bare_gev / (ALPHA * m * (m * m - q2));
        assert_rel(
            &format!("δ form q²={q2}"),
            numeric_dispersion(&res, q2),
            closed,
            1e-6,
        );
        assert_rel(
            &format!("BW form q²={q2}"),
            pi_breit_wigner(&res, q2).re,
            closed,
            1e-6,
        );
    }
}

#[test]
fn table_matches_direct_integral_on_random_points() {
    // The bound: tabulated Δα_had within 1e-6 relative of the direct adaptive
    // dispersion integral. Points from a seeded generator over 10⁻⁶ … 10¹⁰ GeV², both signs,
    // plus points next to every structure (thresholds, ρ, ω, J/ψ…). Where Δα_had crosses zero
    // (timelike, near the ρ) the relative measure is ill-defined: there the bound is 1e-6 of
    // 10⁻³, the size of Δα_had around it.
    let h = standard_hadronic();
    let mut seed: u64 = 0x9e37_79b9_7f4a_7c15;
    let mut next = || {
        seed = seed.wrapping_mul(6_364_136_223_846_793_005).wrapping_add(1);
        (seed >> 11) as f64 / (1u64 << 53) as f64
    };
    let mut points: Vec<f64> = (0..120)
        .map(|_| {
            let mag = 10f64.powf(-6.0 + 16.0 * next());
            if next() < 0.5 { -mag } else { mag }
        })
        .collect();
    for f in h.features() {
        let (radnorm::process::Feature::Edge { s_gev2 }
        | radnorm::process::Feature::Peak { s_gev2, .. }) = *f;
        points.extend([s_gev2 * (1.0 - 1e-3), s_gev2, s_gev2 * (1.0 + 1e-3)]);
    }
    for q2 in points {
        let tab = h.pi(q2);
        let direct = h.pi_direct(q2);
        assert_abs(
            &format!("table vs direct at q²={q2}"),
            tab.re,
            direct.re,
            1e-6 * direct.re.abs().max(1e-3),
        );
        assert_eq!(tab.im, direct.im);
    }
}

#[test]
fn delta_alpha_had_at_mz_against_published_value() {
    // Keshavarzi, Nomura & Teubner, Phys. Rev. D 101 (2020) 014029, eq. (4.3) (from memory):
    // Δα_had⁽⁵⁾(M_Z²) = (276.09 ± 1.12) × 10⁻⁴. The acceptance bar is 1%.
    // M_Z = 91.1876 GeV as in that paper.
    let h = standard_hadronic();
    let got = h.delta_alpha(91.1876f64.powi(2));
    assert_rel("Δα_had⁽⁵⁾(M_Z²)", got, 276.09e-4, 0.01);
    // Our budget must be at least the published uncertainty (ours is a model, theirs data).
    let (_, unc) = h.uncertainty(91.1876f64.powi(2));
    assert!(unc >= 1.12e-4, "unc {unc}");
}

#[test]
fn breakdown_sums_to_total_and_budget_is_complete() {
    let h = standard_hadronic();
    for q2 in [-2.0, 0.3, 0.6125, 9.5, 8315.0] {
        let parts = h.breakdown(q2);
        let sum: f64 = parts.iter().map(|p| p.value).sum();
        // The breakdown uses the fixed rule, the total the table: they agree to the table's
        // tolerance (2e-8 relative) plus the rule's error (≤1e-8).
        assert_abs(
            &format!("breakdown sum q²={q2}"),
            sum,
            h.delta_alpha(q2),
            1e-7 * h.delta_alpha(q2).abs().max(1e-3),
        );
        let (budget, total) = h.uncertainty(q2);
        assert_eq!(budget.len(), 5);
        assert!(total > 0.0 && budget.iter().all(|b| b.value >= 0.0 && b.value.is_finite()));
    }
}

#[test]
fn defined_at_thresholds_and_resonance_masses() {
    // Exactly at the ππ threshold, the open-flavour thresholds, ω, φ and the narrow masses
    // the result is finite (documented in vp::hadronic) and continuous with its neighbours.
    let h = standard_hadronic();
    let m = h.model();
    let mut points = vec![
        m.s_threshold(),
        4.0 * 1.864842442f64.powi(2),
        4.0 * 5.279405997f64.powi(2),
    ];
    points.extend(m.resonances().iter().map(|r| r.mass_gev * r.mass_gev));
    for q2 in points {
        let pi = h.pi(q2);
        assert!(pi.re.is_finite() && pi.im.is_finite(), "q²={q2}: {pi}");
        let near = h.pi(q2 * (1.0 + 1e-12));
        // A relative step of 1e-12 moves Π by |dΠ/dq²|·1e-12 q²: at the Υ(1S) peak, where
        // |Π| ≈ 9 varies on the scale MΓ = 5e-4 GeV², that is ~2e-6 of |Π|.
        assert!(
            (near - pi).norm() < 1e-5 * pi.norm().max(1e-2),
            "q²={q2}: {pi} vs {near}"
        );
    }
}

#[test]
fn model_r_is_continuous_and_perturbative_at_high_energy() {
    // Far above the b threshold R → 3ΣQ²(1 + α_s/π + …) = 11/3 (1.04…) (parton model plus
    // O(α_s); at √s = 50 GeV α_s/π ≈ 0.042 from the running, so R ≈ 3.82–3.85).
    let m = RModel::standard();
    let r50 = m.r(2500.0);
    assert!((3.80..3.87).contains(&r50), "R(50 GeV) = {r50}");
    // Continuity across the region joins (no step: the table relies on it).
    for e in [
        1.0f64,
        1.6,
        2.0,
        1.2729,
        4.186,
        2.0 * 1.864842442,
        2.0 * 5.279405997,
    ] {
        let (lo, hi) = (
            m.r_smooth(e * e * (1.0 - 1e-10)),
            m.r_smooth(e * e * (1.0 + 1e-10)),
        );
        assert!((lo - hi).abs() < 1e-6, "step at {e} GeV: {lo} vs {hi}");
    }
}

#[test]
fn varied_model_moves_by_its_budget() {
    // Moving one region by +1σ shifts Δα_had by that region's budget entry (linear model).
    let h = standard_hadronic();
    let q2 = -10.0;
    let (budget, _) = h.uncertainty(q2);
    for b in budget {
        let shifted = HadronicVp::new(h.model().varied(b.region, 1.0));
        let delta = (shifted.delta_alpha(q2) - h.delta_alpha(q2)).abs();
        // R is linear in each region's shift except where it is floored at zero; the narrow
        // widths also re-enter the other resonances' undressing at second order.
        assert_abs(
            &format!("{:?}", b.region),
            delta,
            b.value,
            2e-3 * b.value + 1e-10,
        );
    }
}

#[test]
fn varied_tables_match_the_direct_integral_next_to_their_edges() {
    // A region moved by ±1σ can make R jump where the region ends (the inclusive and pQCD
    // uncertainties meet at the pQCD onset, 2 GeV): Re Π then has a logarithm there, which a
    // table must split at like any edge. Unmarked, the varied tables were off by up to
    // 6e-4 in Re Π (10%) within 0.3 GeV² of 4 GeV². The bound is the random-point test's.
    let h = standard_hadronic();
    for region in [Region::PiPi, Region::Inclusive, Region::Pqcd] {
        for n_sigma in [1.0, -1.0] {
            let varied = HadronicVp::new(h.model().varied(region, n_sigma));
            let mut points = vec![];
            for f in varied.features() {
                if let radnorm::process::Feature::Edge { s_gev2 } = *f {
                    for r in [1e-3, 1e-2, 0.1] {
                        points.extend([s_gev2 * (1.0 - r), s_gev2 * (1.0 + r)]);
                    }
                }
            }
            for q2 in points {
                let (tab, direct) = (varied.pi(q2), varied.pi_direct(q2));
                assert_abs(
                    &format!("{region:?} {n_sigma:+}σ: table vs direct at q²={q2}"),
                    tab.re,
                    direct.re,
                    1e-6 * direct.re.abs().max(1e-3),
                );
            }
        }
    }
}

#[test]
fn spacelike_delta_alpha_matches_independent_scipy_evaluation_of_the_model() {
    // No published data-driven value at a few GeV² is at hand to cite, so (as the issue
    // allows) the same model is re-implemented independently in tests/ref/vp_model.py (its
    // own α_s by solve_ivp, its own R, scipy.quad on the plain spacelike dispersion
    // integrand) at q² = −3 GeV². The bare Γ_ee, M and Γ are passed in. scipy's quad at 1e-12 and
    // the two α_s solutions (1e-10) allow 1e-8 relative; R itself must agree to 1e-9.
    let h = standard_hadronic();
    let q2 = -3.0;
    let mut args = vec![format!("{q2}")];
    for r in h.model().resonances() {
        args.push(format!(
            "{}={:.15e}:{:.15e}:{:.15e}",
            r.name,
            r.gamma_ee_bare_gev * 1e6,
            r.mass_gev,
            r.width_gev
        ));
    }
    let argv: Vec<&str> = args.iter().map(String::as_str).collect();
    let Some(out) = python_reference("vp_model.py", &argv) else {
        return;
    };
    let want = parse_key_values(&out);
    let parts = h.breakdown(q2);
    let (mut smooth, mut bw) = (0.0, 0.0);
    for p in &parts {
        match p.region {
            Region::OmegaPhi | Region::Narrow => bw += p.value,
            _ => smooth += p.value,
        }
    }
    assert_rel("smooth Δα_had(−3 GeV²)", smooth, want["smooth"], 1e-8);
    // The breakdown by region: the shares jump at the pQCD onset (2 GeV), which the rule
    // must take as a panel boundary (integrated across it, the inclusive and pQCD shares
    // were 0.2–0.4% off while their sum was right).
    for (region, key) in [
        (Region::PiPi, "smooth_pipi"),
        (Region::Inclusive, "smooth_inclusive"),
        (Region::Pqcd, "smooth_pqcd"),
    ] {
        let part = parts.iter().find(|p| p.region == region).unwrap().value;
        assert_rel(&format!("{key} Δα_had(−3 GeV²)"), part, want[key], 1e-8);
    }
    assert_rel("Breit–Wigner Δα_had(−3 GeV²)", bw, want["bw"], 1e-8);
    for e in ["0.5", "0.775", "1.3", "2.5", "4.0", "12.0"] {
        let x: f64 = e.parse().unwrap();
        assert_rel(
            &format!("R_smooth({e} GeV)"),
            h.model().r_smooth(x * x),
            want[&format!("r_{e}")],
            1e-9,
        );
    }
}
