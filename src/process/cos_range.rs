//! The polar-angle acceptance of a two-body final state, as a range of cosθ.

use crate::error::ParamError;

/// The smallest polar angle (and 180° minus the largest) an acceptance may have, degrees.
/// Bhabha and photon pairs grow as 1/θ² along the beam, so σ there is set by 1 − cos θ, which
/// below 0.1° (1.7 mrad; no detector measures there) carries more than 1e-10 of rounding from
/// cos θ, and whose t-channel scale |t| ≈ sθ²/4 reaches the electron mass at GeV energies
/// (common practice, no source).
pub const MIN_POLAR_DEG: f64 = 0.1;

/// Ok when θ (degrees) lies within [MIN_POLAR_DEG, 180° − MIN_POLAR_DEG].
pub fn check_polar_deg(name: &'static str, theta_deg: f64) -> Result<f64, ParamError> {
    if (MIN_POLAR_DEG..=180.0 - MIN_POLAR_DEG).contains(&theta_deg) {
        Ok(theta_deg)
    } else {
        Err(ParamError::new(
            name,
            theta_deg,
            format!(
                "{MIN_POLAR_DEG} ≤ {name} ≤ {} (degrees; nothing is measured closer to the beam)",
                180.0 - MIN_POLAR_DEG
            ),
        ))
    }
}

/// cosθ of the first final particle in [lo, hi], −1 ≤ lo < hi ≤ 1.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CosRange {
    lo: f64,
    hi: f64,
}

impl CosRange {
    /// The full solid angle.
    pub const FULL: CosRange = CosRange { lo: -1.0, hi: 1.0 };

    /// cosθ ∈ [lo, hi].
    ///
    /// # Errors
    /// Unless −1 ≤ lo < hi ≤ 1.
    pub fn new(lo: f64, hi: f64) -> Result<Self, ParamError> {
        if !(-1.0..=1.0).contains(&lo) {
            return Err(ParamError::new(
                "cos_theta_min",
                lo,
                "-1 ≤ cos_theta_min < cos_theta_max",
            ));
        }
        if !(hi <= 1.0 && hi > lo) {
            return Err(ParamError::new(
                "cos_theta_max",
                hi,
                format!("{lo} < cos_theta_max ≤ 1"),
            ));
        }
        Ok(CosRange { lo, hi })
    }

    /// Both back-to-back final particles inside θ ∈ [θ_min, θ_max] (degrees).
    ///
    /// The second particle is at π − θ, so the first must lie in
    /// [max(θ_min, 180° − θ_max), min(θ_max, 180° − θ_min)], a range symmetric about 90°.
    ///
    /// # Errors
    /// Unless both angles lie within [`check_polar_deg`]'s range and θ_min < θ_max, or when
    /// no back-to-back pair fits (θ_min ≥ 90°).
    pub fn both_inside_deg(theta_min_deg: f64, theta_max_deg: f64) -> Result<Self, ParamError> {
        check_polar_deg("theta_min_deg", theta_min_deg)?;
        check_polar_deg("theta_max_deg", theta_max_deg)?;
        if theta_max_deg <= theta_min_deg {
            return Err(ParamError::new(
                "theta_max_deg",
                theta_max_deg,
                format!("theta_max_deg > theta_min_deg = {theta_min_deg}"),
            ));
        }
        let lo = theta_min_deg.max(180.0 - theta_max_deg);
        let hi = theta_max_deg.min(180.0 - theta_min_deg);
        if lo >= hi {
            return Err(ParamError::new(
                "theta_min_deg",
                theta_min_deg,
                "theta_min_deg < 90 and theta_max_deg > 180 - theta_min_deg (both back-to-back particles inside)",
            ));
        }
        Ok(CosRange {
            lo: hi.to_radians().cos(),
            hi: lo.to_radians().cos(),
        })
    }

    /// Lower end of cosθ.
    pub fn lo(&self) -> f64 {
        self.lo
    }

    /// Upper end of cosθ.
    pub fn hi(&self) -> f64 {
        self.hi
    }

    /// True for the full solid angle.
    pub fn is_full(&self) -> bool {
        self.lo == -1.0 && self.hi == 1.0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn both_inside_is_symmetric() {
        // 30°–150° is symmetric already: |cosθ| < cos 30°.
        let r = CosRange::both_inside_deg(30.0, 150.0).unwrap();
        assert!((r.hi() - 30f64.to_radians().cos()).abs() < 1e-15);
        assert!((r.lo() + 30f64.to_radians().cos()).abs() < 1e-15);
        // 20°–120°: the partner at 180° − θ must be ≥ 20° and ≤ 120° → θ ∈ [60°, 120°].
        let r = CosRange::both_inside_deg(20.0, 120.0).unwrap();
        assert!((r.hi() - 0.5).abs() < 1e-15 && (r.lo() + 0.5).abs() < 1e-15);
    }

    #[test]
    fn rejects_bad_ranges() {
        assert!(CosRange::both_inside_deg(40.0, 30.0).is_err());
        assert!(CosRange::both_inside_deg(0.0, 30.0).is_err());
        // Closer to the beam than 0.1°: an error, not an infinite or rounded-away σ.
        assert!(CosRange::both_inside_deg(1e-9, 30.0).is_err());
        assert!(CosRange::both_inside_deg(0.1, 179.9).is_ok());
        assert!(CosRange::both_inside_deg(10.0, 179.95).is_err());
        assert!(CosRange::both_inside_deg(10.0, 180.0).is_err());
        assert!(CosRange::both_inside_deg(100.0, 170.0).is_err());
        assert!(CosRange::new(-1.5, 0.0).is_err());
    }
}
