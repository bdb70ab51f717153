//! The scan's response matrix against the chain it stands for.
//!
//! The matrix K is built in one pass over the quadrature nodes of the spread and ISR fast
//! paths (`ForwardChain::response`); K·y must be what the chain itself
//! (`ForwardChain::observed_nb`, with its own error control, itself checked against mpmath
//! in tests/isr_convolution.rs and against scipy in tests/isr_spread.rs) gives for the line
//! shape through y. The case is the hard one for the nodes: a 40 MeV wide resonance inside
//! the scan (√s on the peak), a 2 MeV spread whose Gaussian is centred on a spline knot at
//! every point, and a minimum-mass cut.

use radnorm::isr::Order;
use radnorm::process::CrossSection;
use radnorm::scan::{ShapeModel, parse_scan_card};

const CARD: &str = r#"
[process]
final_state = "hadrons"
r_ratio = 3.7
[radiation]
radiator = "kf2"
min_mass_gev = 3.9
[vp]
model = "full"
[luminosity]
visible_sigma_times_s_nb_gev2 = 300.0
[[resonance]]
name = "Y"
mass_gev = 5.2
width_gev = 0.04
"#;

/// The card's template through knots at the points `e` (unit starting values).
fn shape_model(plan: &radnorm::scan::ScanPlan, e: &[f64]) -> ShapeModel {
    ShapeModel::new(
        plan.continuum.clone(),
        plan.resonances.clone(),
        e.to_vec(),
        &vec![1.0; e.len()],
    )
    .unwrap()
}

#[test]
fn response_matrix_reproduces_the_chain_for_any_line_shape() {
    let plan = parse_scan_card(CARD, "response.toml").unwrap();
    let e: Vec<f64> = (0..15).map(|i| 5.06 + 0.02 * i as f64).collect();
    let model = shape_model(&plan, &e);
    // A line shape the template does not contain (the spline carries the wiggle).
    let y: Vec<f64> = e
        .iter()
        .map(|v| 10.0 + 30.0 / (1.0 + ((v - 5.2) / 0.02f64).powi(2)) + 0.5 * (v * 40.0).sin())
        .collect();
    let shape = model.through(&y);
    for spread_mev in [0.0, 2.0] {
        let spread = vec![spread_mev; e.len()];
        let high = plan.chain.response(&model, &spread, Order::High);
        let low = plan.chain.response(&model, &spread, Order::Low);
        let (ky_high, ky_low) = (high.apply(&y), low.apply(&y));
        for i in 0..e.len() {
            let chain = plan.chain.observed_nb(&shape, e[i], spread_mev);
            assert!(chain > 0.0 && shape.sigma_nb(e[i] * e[i]) > 0.0);
            // The higher rules are the chain's own fast-path value: equal to rounding
            // (1e-12: sums of ~10⁴ terms in another order).
            let rel_high = (ky_high[i] / chain - 1.0).abs();
            assert!(
                rel_high < 1e-12,
                "spread {spread_mev} √s {}: {rel_high:e}",
                e[i]
            );
            // The lower rules differ by at most the fast paths' error estimates, which
            // the chain accepted at ≤ 1e-8 (ISR 1e-9 in the scan, spread 1e-8).
            let rel_low = (ky_low[i] / chain - 1.0).abs();
            assert!(
                rel_low < 2e-8,
                "spread {spread_mev} √s {}: {rel_low:e}",
                e[i]
            );
        }
    }
}

#[test]
fn rows_outside_the_fast_paths_come_from_the_chain() {
    // A template resonance 0.5 MeV wide under a 2 MeV spread: the spread's fast path does not
    // apply at the points near it, whose rows are the chain applied to each L(eⱼ); the matrix
    // still reproduces the chain for any line shape, by linearity (to the adaptive paths'
    // 1e-8 targets, summed over the points: 1e-7).
    let card = CARD.replace("width_gev = 0.04", "width_gev = 0.0005");
    let plan = parse_scan_card(&card, "narrow.toml").unwrap();
    let e: Vec<f64> = (0..8).map(|i| 5.17 + 0.01 * i as f64).collect();
    let model = shape_model(&plan, &e);
    let y: Vec<f64> = e.iter().map(|v| 10.0 + 2.0 * (v * 40.0).sin()).collect();
    let shape = model.through(&y);
    let spread = vec![2.0; e.len()];
    let k = plan.chain.response(&model, &spread, Order::Low);
    let ky = k.apply(&y);
    for i in 0..e.len() {
        let chain = plan.chain.observed_nb(&shape, e[i], 2.0);
        let rel = (ky[i] / chain - 1.0).abs();
        assert!(rel < 1e-7, "√s {}: {rel:e}", e[i]);
    }
}
