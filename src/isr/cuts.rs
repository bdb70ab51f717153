//! Cuts on the radiated phase space, all expressed as an upper limit on x = 1 − s′/s.

use super::IsrError;
use crate::ParamError;

/// The analysis cuts. The tightest of them and the process threshold wins; with none
/// given the limit is the kinematic one, 1 − s_th/s.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Cuts {
    x_max: Option<f64>,
    min_mass_gev: Option<f64>,
    max_photon_gev: Option<f64>,
}

impl Cuts {
    /// No cut beyond the process threshold.
    pub const NONE: Cuts = Cuts {
        x_max: None,
        min_mass_gev: None,
        max_photon_gev: None,
    };

    /// x ≤ x_max directly, 0 < x_max ≤ 1.
    ///
    /// # Errors
    /// `x_max` outside (0, 1].
    pub fn with_x_max(mut self, x_max: f64) -> Result<Self, ParamError> {
        if !(x_max > 0.0 && x_max <= 1.0) {
            return Err(ParamError::new("x_max", x_max, "0 < x_max ≤ 1"));
        }
        self.x_max = Some(x_max);
        Ok(self)
    }

    /// A minimum final-state invariant mass √s′ ≥ m (GeV): x ≤ 1 − m²/s.
    ///
    /// # Errors
    /// A mass that is not finite and > 0.
    pub fn with_min_mass_gev(mut self, m: f64) -> Result<Self, ParamError> {
        self.min_mass_gev = Some(ParamError::check_positive("min_mass_gev", m)?);
        Ok(self)
    }

    /// A maximum energy of the (single, collinear) ISR photon in the centre-of-mass
    /// frame, E_γ = x√s/2 ≤ E (GeV): x ≤ 2E/√s.
    ///
    /// # Errors
    /// An energy that is not finite and > 0.
    pub fn with_max_photon_gev(mut self, e: f64) -> Result<Self, ParamError> {
        self.max_photon_gev = Some(ParamError::check_positive("max_photon_gev", e)?);
        Ok(self)
    }

    /// The upper limit on x at s (GeV²) for a cross-section with threshold s_th; 0 when
    /// s is at or below the threshold (nothing can be produced).
    ///
    /// # Errors
    /// A minimum mass at or above √s.
    pub fn x_limit(&self, s_gev2: f64, threshold_s_gev2: f64) -> Result<f64, IsrError> {
        if let Some(m) = self.min_mass_gev
            && m * m >= s_gev2
        {
            return Err(IsrError::MinMassAboveEnergy {
                min_mass_gev: m,
                sqrt_s_gev: s_gev2.sqrt(),
            });
        }
        let mut x = self.x_limit_without_upper(s_gev2, threshold_s_gev2);
        if let Some(xm) = self.x_max {
            x = x.min(xm);
        }
        if let Some(e) = self.max_photon_gev {
            x = x.min(2.0 * e / s_gev2.sqrt());
        }
        Ok(x.clamp(0.0, 1.0))
    }

    /// The limit set by the threshold and the minimum mass alone (a fixed lowest s′),
    /// before the x_max and photon-energy cuts.
    pub(super) fn x_limit_without_upper(&self, s_gev2: f64, threshold_s_gev2: f64) -> f64 {
        let s_low = match self.min_mass_gev {
            Some(m) => threshold_s_gev2.max(m * m),
            None => threshold_s_gev2.max(0.0),
        };
        1.0 - s_low / s_gev2
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tightest_cut_wins() {
        let c = Cuts::NONE.with_x_max(0.5).unwrap();
        assert_eq!(c.x_limit(100.0, 0.0).unwrap(), 0.5);
        assert_eq!(c.x_limit(100.0, 80.0).unwrap(), 1.0 - 0.8);
        // E_γ ≤ 1 GeV at √s = 10 GeV: x ≤ 0.2.
        let c = c.with_max_photon_gev(1.0).unwrap();
        assert!((c.x_limit(100.0, 0.0).unwrap() - 0.2).abs() < 1e-15);
        let c = Cuts::NONE.with_min_mass_gev(9.0).unwrap();
        assert!((c.x_limit(100.0, 1.0).unwrap() - 0.19).abs() < 1e-15);
        assert!(c.x_limit(64.0, 1.0).is_err());
        assert_eq!(Cuts::NONE.x_limit(1.0, 2.0).unwrap(), 0.0);
    }

    #[test]
    fn bad_values_are_refused() {
        for x in [0.0, -0.1, 1.5, f64::NAN] {
            assert!(Cuts::NONE.with_x_max(x).is_err(), "{x}");
        }
        assert!(Cuts::NONE.with_min_mass_gev(-1.0).is_err());
        assert!(Cuts::NONE.with_max_photon_gev(0.0).is_err());
    }
}
