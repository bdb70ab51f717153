//! The tabulated s-channel factor 1/(1 − Π(s + i0)) of `Vp` against the direct evaluation
//! 1/(1 − Vp::pi(s)) (the same Π, not tabulated in s): on seeded random points over the
//! table's range and next to every structure the model reports (thresholds on both sides,
//! narrow resonances' masses and dressed poles, user-table rows).

use num_complex::Complex64;
use radnorm::process::Feature;
use radnorm::rmodel::params::Parameters;
use radnorm::rmodel::{RModel, RTable, Region};
use radnorm::vp::hadronic::HadronicVp;
use radnorm::vp::{Polarisation, Vp};
use std::sync::Arc;

/// The bound on the table, relative to |1/(1 − Π)|.
const REL: f64 = 1e-9;

fn direct(vp: &Vp, s: f64) -> Complex64 {
    1.0 / (1.0 - vp.pi(s))
}

/// Largest relative deviation over `points`, and where.
fn worst(vp: &Vp, points: impl Iterator<Item = f64>) -> (f64, f64) {
    let mut w = (0.0, 0.0);
    for s in points {
        let d = direct(vp, s);
        let e = (vp.s_channel_factor(s) - d).norm() / d.norm();
        assert!(e.is_finite(), "s={s}");
        if e > w.0 {
            w = (e, s);
        }
    }
    w
}

/// Seeded log-uniform points on [1e-9, 2e6] GeV² (beyond both ends of the table too).
fn random_points(n: usize, seed: u64) -> impl Iterator<Item = f64> {
    let mut x = seed;
    (0..n).map(move |_| {
        // xorshift64*
        x ^= x >> 12;
        x ^= x << 25;
        x ^= x >> 27;
        let u = (x.wrapping_mul(0x2545_f491_4f6c_dd1d) >> 11) as f64 / (1u64 << 53) as f64;
        1e-9 * 2e15f64.powf(u)
    })
}

/// Points next to every structure: each edge and peak of the model, each Breit–Wigner's
/// M², at relative offsets from 1e-15 (1e-12 at a user table's ends) to 1e-1 on both sides, and across every peak in
/// steps of a tenth of its width out to 60 widths.
fn structure_points(vp: &Vp) -> Vec<f64> {
    let mut centres: Vec<(f64, f64)> = vp
        .features()
        .iter()
        .map(|f| match *f {
            Feature::Edge { s_gev2 } => (s_gev2, 0.0),
            Feature::Peak {
                s_gev2,
                m_gamma_gev2,
            } => (s_gev2, m_gamma_gev2),
        })
        .collect();
    if let Some(h) = vp.hadronic() {
        for r in h.model().resonances() {
            centres.push((r.mass_gev * r.mass_gev, r.mass_gev * r.width_gev));
        }
        if let Some(t) = h.model().table() {
            centres.extend(t.sqrt_s_gev().iter().map(|e| (e * e, 0.0)));
        }
    }
    // A user table's ends are jumps of R, so Re Π ~ ln|s − s₀| there, and the direct Π
    // (the hadronic table, polynomials in ln s on pieces down to ~10⁻¹⁰ wide) is a staircase
    // on the scale of the rounding of ln s: within 1e-13 of such an end it moves by ~1e-6
    // from one float to the next, which no table in s follows. From 1e-12 out it is smooth.
    let jumps: Vec<f64> = vp
        .hadronic()
        .and_then(|h| h.model().table())
        .map_or(Vec::new(), |t| {
            let (lo, hi) = t.range_gev();
            vec![lo * lo, hi * hi]
        });
    let mut out = Vec::new();
    for (s0, mg) in centres {
        let closest = if jumps.contains(&s0) { 12 } else { 15 };
        if closest == 15 {
            out.push(s0);
        }
        for k in 1..=closest {
            let d = 10f64.powi(-k);
            out.push(s0 * (1.0 + d));
            out.push(s0 * (1.0 - d));
        }
        for k in -600..=600 {
            out.push(s0 + 0.1 * k as f64 * mg);
        }
    }
    out.retain(|&s| s > 0.0);
    out
}

fn check(name: &str, vp: &Vp) {
    let pieces = vp.tabulate();
    let (e, s) = worst(vp, random_points(100_000, 0x5eed_f00d));
    assert!(e < REL, "{name}: random points: {e:e} at s={s}");
    let (e2, s2) = worst(vp, structure_points(vp).into_iter());
    assert!(e2 < REL, "{name}: next to structures: {e2:e} at s={s2}");
    eprintln!(
        "{name}: {pieces} pieces; worst {e:.1e} (s={s}) on random points, {e2:.1e} (s={s2}) next to structures"
    );
}

#[test]
fn leptonic_table_matches_direct() {
    check("leptonic", &Vp::leptonic());
}

#[test]
fn full_table_matches_direct() {
    check("full", &Vp::full());
}

#[test]
fn varied_model_table_matches_direct() {
    // A budget variation builds its own table (Γ_ee of the narrow resonances moved).
    check("narrow +1 sigma", &Vp::full_varied(Region::Narrow, 1.0));
}

#[test]
fn user_r_table_matches_direct() {
    // An invented R table over 1.2–2.6 GeV (kinks at every row, the J/ψ left to the model).
    let text = "sqrt_s_gev,r,r_stat,r_syst\n\
                1.2,2.1,0.05,0.08\n1.5,2.3,0.05,0.08\n1.9,2.0,0.06,0.08\n\
                2.2,2.25,0.05,0.07\n2.6,2.3,0.05,0.07\n";
    let table = RTable::parse(text, "invented", false).unwrap();
    let model = RModel::new(&Parameters::shipped(), 0.118, Some(table));
    check(
        "user table",
        &Vp::with_hadronic(Arc::new(HadronicVp::new(model))),
    );
}

#[test]
fn no_vp_factor_is_one() {
    let vp = Vp::none();
    assert_eq!(vp.tabulate(), 0);
    assert_eq!(vp.s_channel_factor(100.0), Complex64::new(1.0, 0.0));
}

#[test]
fn clones_share_one_table() {
    // Built once per model: a clone after the build finds it ready (same piece count,
    // identical values).
    let vp = Vp::full();
    let n = vp.tabulate();
    let c = vp.clone();
    assert_eq!(c.tabulate(), n);
    assert_eq!(c.s_channel_factor(9.7), vp.s_channel_factor(9.7));
}
