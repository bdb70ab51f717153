//! The VP link of the chain: a Born cross-section dressed by |1/(1 − Π(s))|².

use super::Polarisation;
use crate::process::{CrossSection, Feature};

/// σ_dressed(s) = σ_bare(s)·|1 − Π(s + i0)|⁻², for processes with one s-channel photon.
///
/// Note |1 − Π|² ≠ (1 − Re Π)²: the imaginary part matters near resonances.
pub struct Dressed<C, P> {
    born: C,
    vp: P,
    features: Vec<Feature>,
}

impl<C: CrossSection, P: Polarisation> Dressed<C, P> {
    pub fn new(born: C, vp: P) -> Self {
        let mut features = born.features().to_vec();
        features.extend_from_slice(vp.features());
        Dressed { born, vp, features }
    }

    /// The undressed cross-section.
    pub fn born(&self) -> &C {
        &self.born
    }

    /// The vacuum-polarisation model.
    pub fn vp(&self) -> &P {
        &self.vp
    }

    /// The VP factor σ_dressed/σ_bare = |1 − Π(s)|⁻² at s.
    pub fn vp_factor(&self, s_gev2: f64) -> f64 {
        self.vp.s_channel_factor(s_gev2).norm_sqr()
    }
}

impl<C: CrossSection, P: Polarisation> CrossSection for Dressed<C, P> {
    fn sigma_nb(&self, s_gev2: f64) -> f64 {
        self.born.sigma_nb(s_gev2) * self.vp_factor(s_gev2)
    }
    fn sigma_nb_many(&self, s_gev2: &[f64], out: &mut [f64]) {
        self.born.sigma_nb_many(s_gev2, out);
        self.vp.times_s_channel_norm_sqr(s_gev2, out);
    }
    fn threshold_s_gev2(&self) -> f64 {
        self.born.threshold_s_gev2()
    }
    fn features(&self) -> &[Feature] {
        &self.features
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::process::FermionPair;
    use crate::vp::NoVp;

    #[test]
    fn no_vp_is_the_identity() {
        let d = Dressed::new(FermionPair::muon(), NoVp);
        assert_eq!(d.sigma_nb(100.0), FermionPair::muon().sigma_nb(100.0));
        assert_eq!(d.vp_factor(100.0), 1.0);
    }
}
