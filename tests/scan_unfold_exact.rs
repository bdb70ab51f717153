//! The unfolding of an exactly radiated analytic line shape converges to it.
//!
//! The observed cross-sections come from an independent mpmath evaluation
//! (tests/ref/scan_radiated.py: same published radiator, soft term by subtraction
//! instead of our t = x^β substitution), so the test checks the radiator and the
//! iteration together against something outside the code.

mod common;

use common::{assert_rel, python_reference};
use radnorm::constants::sigma_point_nb;
use radnorm::isr::{Cuts, Scheme};
use radnorm::process::{ConstantR, CrossSection, Hadrons};
use radnorm::scan::{ForwardChain, ShapeModel, TemplateResonance, UnfoldSettings, unfold};
use std::sync::Arc;

#[test]
fn exactly_radiated_resonance_on_continuum_unfolds_to_itself() {
    let (a, b, m, g, m_min) = (2.0, 30.0, 3.0, 0.03, 2.7);
    let energies: Vec<f64> = (0..31).map(|i| 2.85 + 0.01 * i as f64).collect();
    let mut args: Vec<String> = [a, b, m, g, m_min].iter().map(|v| v.to_string()).collect();
    args.extend(energies.iter().map(|e| format!("{e:.2}")));
    let argv: Vec<&str> = args.iter().map(String::as_str).collect();
    let Some(out) = python_reference("scan_radiated.py", &argv) else {
        return;
    };
    let obs: Vec<f64> = out
        .lines()
        .map(|l| l.split_whitespace().nth(1).unwrap().parse().unwrap())
        .collect();
    assert_eq!(obs.len(), energies.len());

    let truth = |s: f64| {
        let mg = m * g;
        a * sigma_point_nb(s) + b * mg * mg / ((s - m * m).powi(2) + mg * mg)
    };
    let chain = ForwardChain::new(
        Scheme::KuraevFadin2,
        Cuts::NONE.with_min_mass_gev(m_min).unwrap(),
    );
    let template = TemplateResonance {
        name: "R".into(),
        mass_gev: m,
        width_gev: g,
    };
    let model = ShapeModel::new(
        Arc::new(Hadrons::new(ConstantR(1.0))),
        vec![template],
        energies.clone(),
        &[1.0; 31],
    )
    .unwrap();
    let spread = vec![0.0; 31];
    let settings = UnfoldSettings {
        tolerance: 1e-12,
        max_iterations: 200,
    };
    let r = unfold(&chain, &model, &spread, &obs, settings).unwrap();
    for (i, e) in energies.iter().enumerate() {
        // 1e-6 is the acceptance the task sets; the template holds the truth exactly, so
        // what is left is the two quadratures (1e-10 targets) and the 1e-12 stopping rule.
        assert_rel(
            &format!("sigma_dressed at {e:.2} GeV"),
            r.sigma_dressed_nb[i],
            truth(e * e),
            1e-6,
        );
    }
    // The forward chain alone against the reference: the ISR convolution targets 1e-9.
    let line = model.through(&r.sigma_dressed_nb);
    for (i, e) in energies.iter().enumerate().step_by(5) {
        let got = chain.observed_nb(&line, *e, 0.0);
        assert_rel(&format!("sigma_obs at {e:.2} GeV"), got, obs[i], 1e-8);
        assert!(line.sigma_nb(e * e) > 0.0);
    }
    assert!(r.iterations > 1);
}
