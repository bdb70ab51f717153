//! The forward chain a scan is corrected with: a dressed line shape → radiated (the ISR
//! layer's [`Isr`] link, with its radiator scheme and cuts) → smeared by the beam-energy
//! spread ([`Smeared`]).

use super::linalg::Matrix;
use super::shape::ShapeModel;
use crate::isr::{Cuts, Isr, IsrError, Order, Radiated, Scheme, Smeared, visit_spread_nodes};
use crate::process::CrossSection;
use rayon::prelude::*;

/// Dressed → observed: radiation with cuts (or none, for Born-level checks), then the
/// beam-energy spread of each point.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ForwardChain {
    isr: Option<Isr>,
}

/// Relative accuracy asked of each ISR convolution: well below the 1e-6 closure the
/// unfolding must reach, and within the ISR layer's fast fixed rules.
const ISR_REL_TOL: f64 = 1e-9;

impl ForwardChain {
    /// Radiation with `scheme` and `cuts`.
    pub fn new(scheme: Scheme, cuts: Cuts) -> Self {
        let isr = Isr::new(scheme, cuts);
        ForwardChain {
            isr: Some(isr.with_rel_tol(ISR_REL_TOL).unwrap_or(isr)),
        }
    }

    /// No radiation: σ_obs = σ_d (smeared if a spread is given).
    pub fn without_radiation() -> Self {
        ForwardChain { isr: None }
    }

    /// The same chain with another radiator scheme (for the scheme budget).
    pub fn with_scheme(self, scheme: Scheme) -> Self {
        ForwardChain {
            isr: self.isr.map(|i| i.with_scheme(scheme)),
        }
    }

    /// The radiator's short name (`none` without radiation).
    pub fn radiator_key(&self) -> &'static str {
        self.isr.map_or("none", |i| i.scheme().key())
    }

    /// A one-line description for provenance.
    pub fn describe(&self) -> String {
        match self.isr {
            Some(i) => format!("radiator {} ({})", i.scheme().key(), i.scheme().describe()),
            None => "no initial-state radiation".into(),
        }
    }

    /// Whether the cuts leave a final state at √s.
    ///
    /// # Errors
    /// A minimum mass at or above √s: no event can pass, so nothing can be corrected there.
    pub fn check_energy(&self, sqrt_s_gev: f64) -> Result<(), IsrError> {
        match &self.isr {
            Some(isr) => isr.cuts().x_limit(sqrt_s_gev * sqrt_s_gev, 0.0).map(|_| ()),
            None => Ok(()),
        }
    }

    /// The observed σ at √s (nb): radiated, then averaged over a Gaussian spread of √s of
    /// width `spread_mev` (0 for none).
    pub fn observed_nb(&self, dressed: &dyn CrossSection, sqrt_s_gev: f64, spread_mev: f64) -> f64 {
        match self.isr {
            Some(isr) => smeared(Radiated::new(dressed, isr), sqrt_s_gev, spread_mev),
            None => smeared(dressed, sqrt_s_gev, spread_mev),
        }
    }

    /// The response matrix Kᵢⱼ = σ_obs\[L(eⱼ)\](sᵢ) of the line shapes of `model`: then
    /// σ_obs\[L_y\](sᵢ) = (K·y)ᵢ for every y. A row is one pass over the quadrature nodes of
    /// the fast paths of the spread and of the ISR convolution (they depend on the line
    /// shapes' features only, not on their values); where a point needs the adaptive paths
    /// (a peak narrower than the spread, more breaks than the fixed ISR path takes) its row is
    /// the chain applied to each L(eⱼ).
    ///
    /// `order` picks the fast paths' rules: their error estimate for a line shape is the
    /// difference of the two matrices applied to it (the scan takes it for its converged
    /// shape).
    pub fn response(&self, model: &ShapeModel, spread_mev: &[f64], order: Order) -> Matrix {
        self.response_rows(model, spread_mev, order, None)
    }

    /// As [`Self::response`] with the other `order`, taking the rows outside the fast paths
    /// from `known` (they do not depend on the order): the check of a converged line shape
    /// does not run the chain twice.
    pub fn response_reusing(
        &self,
        model: &ShapeModel,
        spread_mev: &[f64],
        order: Order,
        known: &Matrix,
    ) -> Matrix {
        self.response_rows(model, spread_mev, order, Some(known))
    }

    fn response_rows(
        &self,
        model: &ShapeModel,
        spread_mev: &[f64],
        order: Order,
        known: Option<&Matrix>,
    ) -> Matrix {
        let n = model.sqrt_s_gev().len();
        let rows: Vec<Vec<f64>> = model
            .sqrt_s_gev()
            .par_iter()
            .zip(spread_mev)
            .enumerate()
            .map(|(i, (&e, &w))| {
                self.fast_row(model, e, w, order)
                    .unwrap_or_else(|| match known {
                        Some(k) => (0..n).map(|j| k.get(i, j)).collect(),
                        None => self.row_through_chain(model, e, w),
                    })
            })
            .collect();
        let mut k = Matrix::zeros(n);
        for (i, row) in rows.iter().enumerate() {
            for (j, v) in row.iter().enumerate() {
                k.set(i, j, *v);
            }
        }
        k
    }

    /// Row i of the response from the fast paths' nodes; None where one does not apply.
    fn fast_row(&self, model: &ShapeModel, e: f64, w: f64, order: Order) -> Option<Vec<f64>> {
        let (features, threshold) = (model.features(), model.threshold_s_gev2());
        let mut sum = model.row_sum();
        let mut fixed = true;
        let spread_fixed = visit_spread_nodes(features, threshold, e, w, order, |e_node, g| {
            let s = e_node * e_node;
            match self.isr {
                None => model.add(&mut sum, s, g),
                // A cut that removes every event (Err) contributes 0, as in
                // `Radiated::sigma_nb`.
                Some(isr) => {
                    let visited = isr.visit_nodes(features, threshold, s, order, |sp, wp| {
                        model.add(&mut sum, sp, g * wp)
                    });
                    fixed &= visited.unwrap_or(true);
                }
            }
        });
        (spread_fixed && fixed).then(|| model.row(&sum))
    }

    /// Row i of the response by the chain itself, one line shape L(eⱼ) at a time.
    fn row_through_chain(&self, model: &ShapeModel, e: f64, w: f64) -> Vec<f64> {
        let n = model.sqrt_s_gev().len();
        (0..n)
            .map(|j| {
                let mut unit = vec![0.0; n];
                unit[j] = 1.0;
                self.observed_nb(&model.through(&unit), e, w)
            })
            .collect()
    }
}

fn smeared<C: CrossSection>(sigma: C, sqrt_s_gev: f64, spread_mev: f64) -> f64 {
    if spread_mev > 0.0 {
        Smeared::new(sigma, spread_mev).map_or(f64::NAN, |s| s.smeared(sqrt_s_gev).value)
    } else {
        sigma.sigma_nb(sqrt_s_gev * sqrt_s_gev)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::constants::ALPHA;
    use std::f64::consts::PI;

    struct Flat;
    impl CrossSection for Flat {
        fn sigma_nb(&self, _s: f64) -> f64 {
            1.0
        }
    }

    #[test]
    fn flat_line_shape_gives_the_radiator_sum_rule() {
        // For σ_d = 1 and x up to 1 the observed σ is ∫₀¹ F dx = 1 + (α/π)(π²/3 − 1/2)
        // for the Kuraev–Fadin O(β²) radiator (published property, physics notes §4).
        let chain = ForwardChain::new(Scheme::KuraevFadin2, Cuts::NONE);
        let want = 1.0 + ALPHA / PI * (PI * PI / 3.0 - 0.5);
        for sqrt_s in [1.0, 10.0, 91.0] {
            let got = chain.observed_nb(&Flat, sqrt_s, 0.0);
            assert!((got - want).abs() < 1e-8, "√s={sqrt_s}: {got} vs {want}");
        }
        // A Gaussian spread leaves a constant unchanged.
        assert!((chain.observed_nb(&Flat, 3.0, 1.5) - want).abs() < 1e-8);
        assert_eq!(
            ForwardChain::without_radiation().observed_nb(&Flat, 3.0, 0.0),
            1.0
        );
    }
}
