//! Closure of the scan unfolding: invented scans generated from a known dressed line
//! shape through the forward chain, with seeded Poisson noise, are unfolded and must give
//! the known line shape back within their statistical covariance.

mod common;

use radnorm::budget::Kind;
use radnorm::constants::sigma_point_nb;
use radnorm::isr::{Cuts, Scheme};
use radnorm::process::{ConstantR, CrossSection, Hadrons};
use radnorm::scan::generate::{PlannedPoint, generate_scan};
use radnorm::scan::{
    ForwardChain, LuminositySource, Matrix, ScanPlan, TemplateResonance, UnfoldSettings,
    correct_scan,
};
use radnorm::vp::NoVp;
use std::sync::Arc;

/// A dressed line shape given by a closure (the "truth" of an invented scan).
struct Truth<F>(F);
impl<F: Fn(f64) -> f64 + Sync> CrossSection for Truth<F> {
    fn sigma_nb(&self, s: f64) -> f64 {
        (self.0)(s)
    }
    fn threshold_s_gev2(&self) -> f64 {
        4.0 * 0.139_570_39f64.powi(2)
    }
}

fn plan(min_mass_gev: f64, resonances: Vec<TemplateResonance>) -> ScanPlan {
    ScanPlan {
        chain: ForwardChain::new(
            Scheme::KuraevFadin2,
            Cuts::NONE.with_min_mass_gev(min_mass_gev).unwrap(),
        ),
        continuum: Arc::new(Hadrons::new(ConstantR(1.0))),
        vp: Arc::new(NoVp),
        resonances,
        settings: UnfoldSettings::default(),
        luminosity: LuminositySource {
            visible: None,
            describe: "given".into(),
        },
        luminosity_scale_rel: 0.01,
        efficiency_rel: 0.0,
        relative_terms: vec![],
        energy_unc_mev: 0.0,
        energy_spread_mev: 0.0,
        energy_spread_rel: 0.0,
        alternative_radiators: vec![],
        vp_variations: vec![],
    }
}

/// χ² of the unfolded dressed values against the truth with the statistical covariance.
fn chi2(result: &radnorm::scan::CorrectedScan, truth: &dyn CrossSection) -> f64 {
    let n = result.points.len();
    let cov = result.dressed.covariance_of(Some(Kind::Statistical));
    let mut m = Matrix::zeros(n);
    for i in 0..n {
        for j in 0..n {
            m.set(i, j, cov.get(i, j));
        }
    }
    let inv = m.inverse().expect("statistical covariance is invertible");
    let d: Vec<f64> = result
        .points
        .iter()
        .map(|p| p.sigma_dressed_nb - truth.sigma_nb(p.sqrt_s_gev * p.sqrt_s_gev))
        .collect();
    let id = inv.apply(&d);
    d.iter().zip(&id).map(|(a, b)| a * b).sum()
}

fn planned(energies: impl Iterator<Item = f64>, lumi: f64) -> Vec<PlannedPoint> {
    energies
        .map(|e| PlannedPoint {
            sqrt_s_gev: e,
            luminosity_nb_inv: lumi,
            efficiency: 0.6,
            n_bkg: 50.0,
            energy_spread_mev: 0.0,
        })
        .collect()
}

/// The χ² acceptance for n points: χ²(n) has mean n and standard deviation √(2n); accept
/// n ± 4√(2n), clipped below at n/4 so that grossly overestimated errors fail too.
fn assert_chi2(what: &str, chi2: f64, n: usize) {
    let nf = n as f64;
    let hi = nf + 4.0 * (2.0 * nf).sqrt();
    let lo = (nf - 4.0 * (2.0 * nf).sqrt()).max(nf / 4.0);
    assert!(
        chi2 < hi && chi2 > lo,
        "{what}: chi2 {chi2:.2} for {n} points, allowed ({lo:.1}, {hi:.1})"
    );
}

#[test]
fn smooth_continuum_closes_within_statistics() {
    // R(√s) = 2 + 0.3 tanh(√s − 2.5): smooth, not in the template (which is σ_pt), so the
    // spline carries the shape. 31 points 2.0–3.5 GeV, ~1.5e5 events each (0.26% stat).
    let truth = Truth(|s: f64| sigma_point_nb(s) * (2.0 + 0.3 * (s.sqrt() - 2.5).tanh()));
    let p = plan(1.95, vec![]);
    let points = planned((0..31).map(|i| 2.0 + 0.05 * i as f64), 1.0e4);
    let data = generate_scan(&p.chain, &truth, &points, 20261202);
    let r = correct_scan(&p, &data).unwrap();
    assert!(r.iterations < 30, "iterations {}", r.iterations);
    assert!(
        r.response_residual < 1e-8,
        "response residual {}",
        r.response_residual
    );
    assert_chi2("smooth continuum", chi2(&r, &truth), 31);
    // The radiative tail is open down to 1.95 GeV: 1 + δ well away from 1 at every point.
    // Physics: at 2.0 GeV the 1.95 GeV mass cut leaves almost no room to radiate, so the
    // virtual/soft deficit wins (1 + δ < 1); at 3.5 GeV the tail is open and σ_d grows
    // toward lower s′, so 1 + δ > 1.
    assert!(r.points[0].one_plus_delta < 0.9, "{:?}", r.points[0]);
    assert!(r.points[30].one_plus_delta > 1.02, "{:?}", r.points[30]);
    assert!(r.dressed.covariance().is_positive_semidefinite(1e-10));
}

#[test]
fn resonance_tens_of_mev_wide_closes_within_statistics() {
    // A 30 MeV wide resonance at 3.0 GeV on a continuum R = 2; the template declares it
    // 2 MeV off in mass and 10% off in width, so the spline must absorb the difference.
    let bw = |s: f64, m: f64, g: f64| {
        let mg = m * g;
        mg * mg / ((s - m * m).powi(2) + mg * mg)
    };
    let truth = Truth(move |s: f64| 2.0 * sigma_point_nb(s) + 30.0 * bw(s, 3.0, 0.030));
    let template = TemplateResonance {
        name: "R".into(),
        mass_gev: 3.002,
        width_gev: 0.033,
    };
    let p = plan(2.7, vec![template]);
    let points = planned((0..41).map(|i| 2.85 + 0.0075 * i as f64), 2.0e4);
    let data = generate_scan(&p.chain, &truth, &points, 7);
    let r = correct_scan(&p, &data).unwrap();
    assert_chi2("resonance", chi2(&r, &truth), 41);
    // Physics: on the peak radiation lowers σ_obs (1+δ < 1); above it the radiative
    // return to the peak lifts 1+δ back toward 1.
    let at = |e: f64| {
        r.points
            .iter()
            .find(|p| (p.sqrt_s_gev - e).abs() < 4e-3)
            .unwrap()
    };
    assert!(at(3.0).one_plus_delta < 0.9);
    assert!(at(3.045).one_plus_delta - at(3.0).one_plus_delta > 0.15);
}
