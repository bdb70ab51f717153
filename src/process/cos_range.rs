//! The polar-angle acceptance of a two-body final state, as a range of cosθ.

use crate::error::ParamError;

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
    /// Unless 0 < θ_min < θ_max < 180°, or when no back-to-back pair fits (θ_min ≥ 90°).
    pub fn both_inside_deg(theta_min_deg: f64, theta_max_deg: f64) -> Result<Self, ParamError> {
        ParamError::check_open("theta_min_deg", theta_min_deg, 0.0, 180.0)?;
        ParamError::check_open("theta_max_deg", theta_max_deg, 0.0, 180.0)?;
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
        assert!(CosRange::both_inside_deg(10.0, 180.0).is_err());
        assert!(CosRange::both_inside_deg(100.0, 170.0).is_err());
        assert!(CosRange::new(-1.5, 0.0).is_err());
    }
}
