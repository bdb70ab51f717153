//! The beam-energy-spread link against the Voigt profile (scipy), for width ratios
//! Γ/σ_W from 1e-2 to 1e2, and the ISR chain through it.

mod common;
use common::{assert_rel, parse_key_values, python_reference};
use radnorm::isr::{Cuts, Isr, Radiated, Scheme, Smeared};
use radnorm::process::{CrossSection, Feature, FermionPair};

/// A Lorentzian line in √s (an invented narrow resonance for the test).
struct Line {
    m: f64,
    gamma: f64,
    peak_nb: f64,
    features: [Feature; 1],
}

impl CrossSection for Line {
    fn sigma_nb(&self, s: f64) -> f64 {
        let h = 0.5 * self.gamma;
        let d = s.sqrt() - self.m;
        self.peak_nb * h * h / (d * d + h * h)
    }
    fn features(&self) -> &[Feature] {
        &self.features
    }
}

#[test]
fn gaussian_spread_of_a_lorentzian_is_the_voigt_profile() {
    let Some(out) = python_reference("isr_spread.py", &[]) else {
        return;
    };
    let want = parse_key_values(&out);
    let (m, sw_mev) = (3.097, 1.0);
    // (Γ/σ_W, its name as the script prints it with {:g})
    for (ratio, tag) in [(1e-2, "0.01"), (1.0, "1"), (1e2, "100")] {
        let gamma = ratio * sw_mev * 1e-3;
        let line = Line {
            m,
            gamma,
            peak_nb: 1000.0,
            features: [Feature::Peak {
                s_gev2: m * m,
                m_gamma_gev2: m * gamma,
            }],
        };
        let smeared = Smeared::new(line, sw_mev).unwrap();
        for k in [0, 2] {
            let w = m + k as f64 * sw_mev * 1e-3;
            let got = smeared.smeared(w);
            assert!(got.converged(), "{got:?}");
            // The integral's target is 1e-8; the Voigt values are good to ~1e-13.
            let key = format!("r{tag}_k{k}");
            assert_rel(
                &format!("smeared Γ/σ_W = {ratio}, W = M + {k}σ_W"),
                got.value,
                want[&key],
                1e-7,
            );
        }
    }
}

#[test]
fn spread_is_negligible_on_a_smooth_shape_and_chains_with_isr() {
    // Away from narrow structures the spread changes σ only at O((σ_W/√s)²·s²σ″/σ):
    // for the radiated μμ line at 10 GeV and σ_W = 5 MeV that is ~1e-6 (common practice,
    // no source: the Gaussian's second moment times the curvature of a 1/s shape).
    let isr = Isr::new(Scheme::KuraevFadin2, Cuts::NONE.with_x_max(0.5).unwrap());
    let radiated = Radiated::new(FermionPair::muon(), isr);
    let plain = radiated.sigma_nb(100.0);
    let smeared = Smeared::new(radiated, 5.0).unwrap();
    assert_rel(
        "smeared vs unsmeared μμ at 10 GeV",
        smeared.sigma_nb(100.0),
        plain,
        1e-5,
    );
    assert!(Smeared::new(FermionPair::muon(), -1.0).is_err());
    assert!(Smeared::new(FermionPair::muon(), f64::NAN).is_err());
}
