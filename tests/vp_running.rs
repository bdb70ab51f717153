//! The `Vp` choice that later layers take: none / leptonic / full, shared tables, variations.

mod common;
use common::*;

use radnorm::constants::ALPHA;
use radnorm::process::{CrossSection, FermionPair};
use radnorm::rmodel::Region;
use radnorm::vp::leptonic::pi_leptonic;
use radnorm::vp::{Dressed, Polarisation, Vp, VpChoice, standard_hadronic};
use std::sync::Arc;

#[test]
fn choices_add_up() {
    let (none, lep, full) = (Vp::none(), Vp::leptonic(), Vp::full());
    for q2 in [-8315.0, -1.0, 0.5, 9.6, 8315.0] {
        assert_eq!(none.pi(q2).norm(), 0.0);
        assert_eq!(lep.pi(q2), pi_leptonic(q2));
        let want = pi_leptonic(q2) + standard_hadronic().pi(q2);
        assert_eq!(full.pi(q2), want);
        // α(q²) = α/(1 − Π) and the s-channel factor 1/(1 − Π) (vp module convention); the
        // factor is tabulated in s (src/vp/factor.rs), whose bound is 1e-9 relative.
        assert_rel(
            "alpha",
            full.alpha(q2).norm(),
            (ALPHA / (1.0 - want)).norm(),
            EXACT,
        );
        assert_rel(
            "s factor",
            full.s_channel_factor(q2).re,
            (1.0 / (1.0 - want)).re,
            1e-9,
        );
        assert_rel(
            "alpha_inv",
            full.alpha_inv(q2),
            (1.0 - want.re) / ALPHA,
            EXACT,
        );
    }
    assert_eq!(
        Vp::from_choice(VpChoice::Leptonic).choice(),
        VpChoice::Leptonic
    );
    assert!(full.features().len() > lep.features().len() && !lep.features().is_empty());
}

#[test]
fn the_default_table_is_built_once_and_shared() {
    let (a, b) = (standard_hadronic(), standard_hadronic());
    assert!(Arc::ptr_eq(&a, &b));
    assert!(std::ptr::eq(
        Vp::full().hadronic().unwrap(),
        Vp::full().hadronic().unwrap()
    ));
}

#[test]
fn dressing_a_born_process_uses_the_complex_pi() {
    // σ_dressed = σ_bare·|1 − Π(s)|⁻² (physics.md §2), with Im Π included.
    let s = 9.5;
    let d = Dressed::new(FermionPair::muon(), Vp::full());
    let pi = Vp::full().pi(s);
    let want = FermionPair::muon().sigma_nb(s) / (1.0 - pi).norm_sqr();
    assert_rel("dressed", d.sigma_nb(s), want, EXACT);
}

#[test]
fn a_varied_model_moves_delta_alpha_by_about_its_budget() {
    // +1σ of the inclusive region moves Δα_had(M_Z²) by that region's budget entry.
    let q2 = 8315.0;
    let (budget, _) = standard_hadronic().uncertainty(q2);
    let entry = budget
        .iter()
        .find(|b| b.region == Region::Inclusive)
        .unwrap()
        .value;
    let up = Vp::full_varied(Region::Inclusive, 1.0);
    let shift = up.pi(q2).re - Vp::full().pi(q2).re;
    assert_rel("inclusive +1σ", shift, entry, 1e-3);
}
