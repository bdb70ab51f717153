//! The final-state factor for inclusive final states.

use crate::constants::ALPHA;
use std::f64::consts::PI;

/// Schwinger's factor 1 + 3αQ_f²/(4π) for a massless fermion pair with collinear
/// photons counted in (J. Schwinger, *Particles, Sources and Fields* vol. III (1989);
/// the O(α) inclusive final-state correction). Kept separate from `1 + δ_ISR`.
pub fn schwinger_factor(charge: f64) -> f64 {
    1.0 + 3.0 * ALPHA * charge * charge / (4.0 * PI)
}
