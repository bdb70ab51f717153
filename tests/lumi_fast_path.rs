//! The radiated σ_vis (τ = z₁z₂ and the split at fixed τ, fixed rules compared in turn, the
//! s-channel photon factor integrated against interpolated coefficients) against a slow,
//! independent evaluation of the same formulas: nested adaptive Gauss–Kronrod over the two
//! beams' soft variables t = (1 − z)^(β/2) in the other order (z₁ outer, z₂ inner), explicit
//! breakpoints along every resonance curve z₁z₂s = M², Π called directly (no tables, no
//! coefficient split) and a 16-point angle rule.

mod common;

use num_complex::Complex64;
use radnorm::constants::{ALPHA, M_E_GEV};
use radnorm::lumi::{
    Acceptance, Channel, FinalState, PolarRange, Settings, SigmaVis, StructureFunction, Visible,
};
use radnorm::numeric::{GaussLegendre, Tolerance, integrate};
use radnorm::process::{Bhabha, CosRange, Feature};
use radnorm::vp::{Polarisation, Vp};
use rayon::prelude::*;

/// Narrow Breit–Wigner resonances alone in Π (physics notes §2):
/// Π_V(q²) = (3Γ_ee/(αM))·q²/(q² − M² + iMΓ), so Im Π < 0 on the peak and Δα_V > 0 spacelike.
/// Cheap to evaluate, so the reference can be tight; strong enough (Γ_ee/Γ ~ 3%) that the
/// radiative return to them moves σ_vis by well over the requested precision.
struct Resonances(Vec<(f64, f64, f64)>, Vec<Feature>);

impl Resonances {
    /// (M, Γ, Γ_ee) in GeV. The features are each dressed pole, (M² − iMΓ)/(1 − A) for one
    /// resonance with A = 3Γ_ee/(αM): where 1/(1 − Π) peaks.
    fn new(list: &[(f64, f64, f64)]) -> Self {
        let features = list
            .iter()
            .map(|&(m, g, gee)| {
                let a = 3.0 * gee / (ALPHA * m);
                Feature::Peak {
                    s_gev2: m * m / (1.0 - a),
                    m_gamma_gev2: m * g / (1.0 - a),
                }
            })
            .collect();
        Resonances(list.to_vec(), features)
    }
}

impl Polarisation for Resonances {
    fn pi(&self, q2: f64) -> Complex64 {
        self.0
            .iter()
            .map(|&(m, g, gee)| 3.0 * gee / (ALPHA * m) * q2 / Complex64::new(q2 - m * m, m * g))
            .sum()
    }
    fn features(&self) -> &[Feature] {
        &self.1
    }
    fn describe(&self) -> String {
        "test resonances".into()
    }
}

/// The slow evaluation (see the module notes), relative tolerance `rel` for both adaptive
/// integrals; the outer panels run in parallel.
fn reference(acc: &Acceptance, vp: &dyn Polarisation, s: f64, q2: f64, rel: f64) -> f64 {
    let isr = StructureFunction::new(q2, M_E_GEV).unwrap();
    let fsr = (acc.final_state() == FinalState::BareTrack).then_some(isr);
    let bhabha = Bhabha::new(CosRange::FULL);
    let rule = GaussLegendre::new(16);
    let e = acc.e_min_frac();
    let hard = |z1: f64, z2: f64| -> f64 {
        let sh = z1 * z2 * s;
        let ps = vp.s_channel_factor(sh);
        let mut total = 0.0;
        for &(lo, hi) in acc.intervals(z1, z2).as_slice() {
            total += rule.integrate(
                |u| {
                    let a = u.exp();
                    let c = 1.0 - a;
                    let w = fsr.map_or(1.0, |d| {
                        let f1 = 0.5 * ((z1 + z2) + (z1 - z2) * c);
                        let f2 = 0.5 * ((z1 + z2) - (z1 - z2) * c);
                        d.keep_at_least(e / f1) * d.keep_at_least(e / f2)
                    });
                    let pt = vp.t_channel_factor(-0.5 * sh * a);
                    bhabha.dsigma_dcos_dressed_nb(sh, c, ps, pt) * w * a
                },
                (1.0 - hi).ln(),
                (1.0 - lo).ln(),
            );
        }
        total
    };
    // Resonance curves z₁z₂ = τ_V and thresholds, with a ladder of widths around each peak.
    let marks: Vec<(f64, f64)> = vp
        .features()
        .iter()
        .map(|f| match *f {
            Feature::Peak {
                s_gev2,
                m_gamma_gev2,
            } => (s_gev2 / s, m_gamma_gev2 / s),
            Feature::Edge { s_gev2 } => (s_gev2 / s, 0.0),
        })
        .collect();
    let ladder = |z: f64, g: f64| -> Vec<f64> {
        let mut v = vec![z];
        if g > 0.0 {
            for k in [1.0, 3.0, 10.0, 30.0, 100.0, 300.0, 1000.0] {
                v.extend([z + k * g, z - k * g]);
            }
        }
        v
    };
    let fixed = [0.5, 0.7, 0.8, 0.9, 0.95, 0.99, 0.999, e, 2.0 * e - 1.0];
    let in_t = |zs: &mut dyn Iterator<Item = f64>| -> Vec<f64> {
        zs.filter(|&z| z > 0.0 && z < 1.0)
            .map(|z| isr.t_of_z(z))
            .collect()
    };
    let mut outer = in_t(
        &mut fixed
            .iter()
            .copied()
            .chain(marks.iter().flat_map(|&(t, g)| ladder(t, g))),
    );
    outer.extend([0.0, 1.0]);
    outer.sort_by(f64::total_cmp);
    outer.dedup();
    outer
        .par_windows(2)
        .map(|w| {
            integrate(
                |t1| {
                    let z1 = isr.z_of_t(t1);
                    if z1 <= 0.0 {
                        return 0.0;
                    }
                    let inner_marks = in_t(
                        &mut fixed
                            .iter()
                            .copied()
                            .chain([z1])
                            .chain(marks.iter().flat_map(|&(t, g)| ladder(t / z1, g / z1))),
                    );
                    let inner = integrate(
                        |t2| {
                            let z2 = isr.z_of_t(t2);
                            if z2 <= 0.0 {
                                0.0
                            } else {
                                isr.dt_weight(t2) * hard(z1, z2)
                            }
                        },
                        0.0,
                        1.0,
                        &inner_marks,
                        Tolerance { rel, abs: 0.0 },
                    );
                    assert!(inner.converged(), "reference inner at z1 = {z1}");
                    isr.dt_weight(t1) * inner.value
                },
                w[0],
                w[1],
                &[],
                Tolerance { rel, abs: 0.0 },
            )
        })
        .map(|r| {
            assert!(r.converged(), "reference outer panel");
            r.value
        })
        .sum()
}

/// The fast σ_vis against the reference: within `tol` relative, and its error estimate
/// covering the difference beyond the reference's own tolerance.
fn check(what: &str, got: &SigmaVis, want: f64, tol: f64, ref_rel: f64) {
    let diff = got.sigma_nb - want;
    assert!(got.converged, "{what}: not converged: {got:?}");
    assert!(
        (diff / want).abs() <= tol,
        "{what}: got {} want {want} (rel {:.2e} > {tol:.0e})",
        got.sigma_nb,
        diff / want
    );
    assert!(
        diff.abs() <= got.error_nb + 2.0 * ref_rel * want,
        "{what}: |got − want| = {:.3e} above the error estimate {:.3e}",
        diff.abs(),
        got.error_nb
    );
}

#[test]
fn radiative_return_to_narrow_resonances_matches_the_slow_evaluation() {
    // √s = 10.58 GeV, 40°–140°, acollinearity ≤ 10°, E ≥ 0.5 E_beam, calorimetric. Two
    // invented resonances: one in the radiative tail (ŝ/s ≈ 0.88, Γ/M = 5·10⁻⁵) and one just
    // below √s (ŝ/s ≈ 0.985, Γ/M = 10⁻⁴), both with Γ_ee/Γ = 3%.
    let vp = Resonances::new(&[(9.9, 5e-4, 1.5e-5), (10.5, 1e-3, 3e-5)]);
    let w = PolarRange::new(40.0, 140.0).unwrap();
    let acc = Acceptance::new(w, w, 10.0, 0.5, FinalState::Calorimetric).unwrap();
    let s = 10.58f64.powi(2);
    let fast = Visible::new(Channel::Bhabha, acc, Some(&vp), Settings::default())
        .unwrap()
        .sigma_vis(s)
        .unwrap();
    let without = Visible::new(Channel::Bhabha, acc, None, Settings::default())
        .unwrap()
        .sigma_vis(s)
        .unwrap();
    // The resonances matter here: far more than the requested precision (1e-4).
    let effect = fast.sigma_nb / without.sigma_nb - 1.0;
    assert!(effect.abs() > 1e-3, "resonance effect {effect:e}");
    let rel = 1e-8;
    let want = reference(&acc, &vp, s, fast.q2_gev2, rel);
    // 2e-6: far below the 1e-4 requested; the rules reach ~1e-7 here.
    check("narrow resonances", &fast, want, 2e-6, rel);
}

#[test]
fn bare_tracks_with_full_vp_match_the_slow_evaluation() {
    // The same acceptance with bare tracks (FSR weights) and the full VP at 10.58 GeV, where
    // the s-channel factor has the Υ(1S–3S) poles inside the radiative tail.
    let vp = Vp::full();
    let w = PolarRange::new(40.0, 140.0).unwrap();
    let acc = Acceptance::new(w, w, 10.0, 0.5, FinalState::BareTrack).unwrap();
    let s = 10.58f64.powi(2);
    let fast = Visible::new(Channel::Bhabha, acc, Some(&vp), Settings::default())
        .unwrap()
        .sigma_vis(s)
        .unwrap();
    let rel = 1e-6;
    let want = reference(&acc, &vp, s, fast.q2_gev2, rel);
    check("bare tracks, full VP", &fast, want, 2e-6, rel);
}

#[test]
fn variations_share_the_nominal_rule() {
    // A fixed-rule evaluation at the nominal's rule size reproduces the nominal exactly (the
    // budget's shifts are differences at one rule).
    let vp = Vp::leptonic();
    let w = PolarRange::new(45.0, 135.0).unwrap();
    let acc = Acceptance::new(w, w, 10.0, 0.5, FinalState::Calorimetric).unwrap();
    let v = Visible::new(Channel::Bhabha, acc, Some(&vp), Settings::default()).unwrap();
    let s = 5.2f64.powi(2);
    let nominal = v.sigma_vis(s).unwrap();
    let fixed = v.sigma_vis_with_rule(s, nominal.rule_points).unwrap();
    assert_eq!(fixed.sigma_nb, nominal.sigma_nb);
}
