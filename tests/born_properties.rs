//! Invariants of the Born cross-sections over the physical domain (proptest).

use proptest::prelude::*;
use radnorm::numeric::GaussLegendre;
use radnorm::process::{
    Angular, Bhabha, CosRange, CrossSection, Diphoton, FermionPair, WidthScheme, ZExchange,
};

proptest! {
    #![proptest_config(ProptestConfig::with_cases(200))]

    /// σ is finite and ≥ 0 at every energy, zero below threshold, and the closed-form
    /// angular integral equals quadrature of dσ/dcosθ (a degree-2 polynomial in cosθ, so a
    /// 4-point Gauss–Legendre rule is exact up to rounding). Tolerance 1e-12: a few ulp on
    /// each side magnified by the near-cancellation of the Z terms at backward angles above
    /// the Z (dσ(−c)/dσ(c) reaches a few hundred; the unit test `narrow_bins_keep_their_digits`
    /// bounds it case by case).
    #[test]
    fn fermion_pairs_are_finite_positive_and_consistent(
        sqrt_s in 0.01f64..300.0,
        lo in -1.0f64..0.99,
        width in 0.001f64..2.0,
        with_z in any::<bool>(),
        coulomb in any::<bool>(),
    ) {
        let hi = (lo + width).min(1.0);
        let s = sqrt_s * sqrt_s;
        let mut f = FermionPair::tau().with_coulomb(coulomb);
        if with_z {
            f = f.with_z(ZExchange::standard(WidthScheme::Running));
        }
        let sigma = f.sigma_in_cos_nb(s, lo, hi);
        prop_assert!(sigma.is_finite() && sigma >= 0.0);
        if s <= f.threshold_s_gev2() {
            prop_assert_eq!(sigma, 0.0);
        }
        let q = GaussLegendre::new(4).integrate(|c| f.dsigma_dcos_nb(s, c), lo, hi);
        prop_assert!((q - sigma).abs() <= 1e-12 * sigma.max(1e-300), "{} vs {}", q, sigma);
        let afb = f.afb(s);
        prop_assert!(afb.is_finite() && afb.abs() <= 1.0);
    }

    /// Photon pairs are forward–backward symmetric; Bhabha is peaked forward (the t-channel
    /// pole at cosθ → 1): dσ(c) > dσ(−c) for c > 0 at Born level with photons only.
    #[test]
    fn angular_symmetries(sqrt_s in 0.5f64..50.0, c in 0.01f64..0.99) {
        let s = sqrt_s * sqrt_s;
        let g = Diphoton::new(CosRange::FULL);
        let (a, b) = (g.dsigma_dcos_nb(s, c), g.dsigma_dcos_nb(s, -c));
        prop_assert!((a - b).abs() <= 1e-14 * a);
        let e = Bhabha::new(CosRange::FULL);
        prop_assert!(e.dsigma_dcos_nb(s, c) > e.dsigma_dcos_nb(s, -c));
    }

    /// Every acceptance 0 < θ_min < θ_max < 180° either builds a symmetric cos range or is a
    /// clear error, never a panic.
    #[test]
    fn acceptances_never_panic(tmin in -10.0f64..200.0, tmax in -10.0f64..200.0) {
        if let Ok(r) = CosRange::both_inside_deg(tmin, tmax) {
            prop_assert!((r.lo() + r.hi()).abs() < 1e-12 && r.hi() > r.lo());
        }
    }
}

/// R and σ_had vanish at and below the π⁺π⁻ threshold 2m_π± = 0.27914078 GeV (PDG 2026
/// m_π± = 139.57039 MeV) — also at m_π⁰ and 2m_π⁰ (π⁰π⁰ is C-forbidden for one photon, π⁰γ
/// has no channel of its own in the model) and at a √s so small that σ_pt = 4πα²/3s
/// overflows — and are positive just above it.
#[test]
fn hadrons_vanish_below_the_two_pion_threshold() {
    use radnorm::process::{Hadrons, RRatio};
    use radnorm::rmodel::RModel;
    let model = RModel::standard();
    let s_th = model.s_threshold();
    assert!(
        (s_th.sqrt() / (2.0 * 0.139_570_39) - 1.0).abs() < 1e-8,
        "{s_th}"
    );
    let hadrons = Hadrons::new(model.clone());
    for sqrt_s in [1e-160, 1e-10, 0.1, 0.134_977, 0.2, 0.269_954, 0.279_14] {
        let s = sqrt_s * sqrt_s;
        assert_eq!(model.r(s), 0.0, "R at sqrt_s = {sqrt_s} GeV");
        assert_eq!(hadrons.sigma_nb(s), 0.0, "sigma at sqrt_s = {sqrt_s} GeV");
    }
    assert_eq!(model.r(s_th), 0.0, "R exactly at threshold");
    assert_eq!(hadrons.sigma_nb(0.0), 0.0);
    for sqrt_s in [0.2792, 0.3, 0.78] {
        let sigma = hadrons.sigma_nb(sqrt_s * sqrt_s);
        assert!(
            sigma.is_finite() && sigma > 0.0,
            "sqrt_s = {sqrt_s}: {sigma}"
        );
    }
}
