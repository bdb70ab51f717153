//! The electron (lepton) structure function D(z, Q²) in the leading-log, exponentiated form.
//!
//! D(z, Q²) = (β/2)(1 − z)^(β/2 − 1)(1 + 3β/8) − (β/4)(1 + z),
//! β = (2α/π)(ln(Q²/m²) − 1), z the energy fraction the lepton keeps
//! (E. A. Kuraev, V. S. Fadin, Sov. J. Nucl. Phys. 41 (1985) 466;
//! O. Nicrosini, L. Trentadue, Phys. Lett. B 196 (1987) 551; the O(β) form of physics notes §4).
//!
//! With these coefficients ∫₀¹ D dz = (1 + 3β/8) − (β/4)(3/2) = 1 exactly, and to first order
//! in β it is δ(1 − z) + (β/4)[(1 + z²)/(1 − z)]₊, the Altarelli–Parisi splitting function
//! times (α/2π)(L − 1). The soft singularity (1 − z)^(β/2 − 1) is removed by t = (1 − z)^(β/2),
//! under which D(z) dz = [(1 + 3β/8) − ½(1 + z) t^(2/β − 1)] dt (see [`StructureFunction::dt_weight`]).

use crate::constants::ALPHA;
use crate::error::ParamError;
use std::f64::consts::PI;

/// D(z, Q²) for a lepton of mass m at the scale Q², through its exponent β.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StructureFunction {
    beta: f64,
}

impl StructureFunction {
    /// The structure function of a lepton of mass `m_gev` at the scale `q2_gev2`.
    ///
    /// # Errors
    /// Unless Q² > e·m² (β > 0): below that the leading log has no meaning.
    pub fn new(q2_gev2: f64, m_gev: f64) -> Result<Self, ParamError> {
        let beta = 2.0 * ALPHA / PI * ((q2_gev2 / (m_gev * m_gev)).ln() - 1.0);
        if beta > 0.0 && beta.is_finite() {
            Ok(StructureFunction { beta })
        } else {
            Err(ParamError::new(
                "q2_gev2",
                q2_gev2,
                format!(
                    "Q² > e·m² = {:.3e} GeV²",
                    std::f64::consts::E * m_gev * m_gev
                ),
            ))
        }
    }

    /// The exponent β = (2α/π)(ln(Q²/m²) − 1).
    pub fn beta(&self) -> f64 {
        self.beta
    }

    /// D(z) for 0 ≤ z < 1 (the δ-like soft peak at z → 1 is integrable, not a value).
    pub fn density(&self, z: f64) -> f64 {
        let b = self.beta;
        0.5 * b * (1.0 - z).powf(0.5 * b - 1.0) * (1.0 + 0.375 * b) - 0.25 * b * (1.0 + z)
    }

    /// D at z = 1 − w, from the loss w directly: exact where 1 − w rounds to 1.
    pub fn density_at_loss(&self, w: f64) -> f64 {
        let b = self.beta;
        0.5 * b * w.powf(0.5 * b - 1.0) * (1.0 + 0.375 * b) - 0.25 * b * (2.0 - w)
    }

    /// ∫_{z₀}^1 D(z) dz: the probability that the lepton keeps at least the fraction z₀
    /// (1 for z₀ ≤ 0, 0 for z₀ ≥ 1). Closed form of the density above.
    pub fn keep_at_least(&self, z0: f64) -> f64 {
        if z0 >= 1.0 {
            return 0.0;
        }
        let z0 = z0.max(0.0);
        let b = self.beta;
        let w = 1.0 - z0;
        (1.0 + 0.375 * b) * w.powf(0.5 * b) - 0.25 * b * (w + 0.5 * (1.0 - z0 * z0))
    }

    /// z as a function of t = (1 − z)^(β/2).
    pub fn z_of_t(&self, t: f64) -> f64 {
        1.0 - t.powf(2.0 / self.beta)
    }

    /// t = (1 − z)^(β/2).
    pub fn t_of_z(&self, z: f64) -> f64 {
        (1.0 - z).powf(0.5 * self.beta)
    }

    /// D(z) dz/dt at t (z = z(t)): smooth on [0, 1], so fixed Gauss rules integrate it well.
    pub fn dt_weight(&self, t: f64) -> f64 {
        let b = self.beta;
        let z = self.z_of_t(t);
        (1.0 + 0.375 * b) - 0.5 * (1.0 + z) * t.powf(2.0 / b - 1.0)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::constants::M_E_GEV;
    use crate::numeric::{GaussLegendre, Tolerance, integrate_power_endpoint};

    #[test]
    fn cumulative_is_the_integral_of_the_density() {
        // keep_at_least (closed form) against adaptive quadrature of the density with the
        // soft substitution; both are exact up to rounding (1e-12, quadrature target).
        let d = StructureFunction::new(100.0, M_E_GEV).unwrap();
        let b = d.beta();
        for z0 in [0.0, 0.3, 0.9, 0.999] {
            // ∫_{z0}^1 D dz: soft part with t-substitution on x = 1 − z, regular part direct.
            let soft = integrate_power_endpoint(
                |_| 1.0 + 0.375 * b,
                0.5 * b,
                1.0 - z0,
                &[],
                Tolerance::relative(1e-13),
            )
            .value;
            let hard = GaussLegendre::new(4).integrate(|z| -0.25 * b * (1.0 + z), z0, 1.0);
            let got = d.keep_at_least(z0);
            assert!(
                (got - (soft + hard)).abs() < 1e-12,
                "z0={z0}: {got} vs {}",
                soft + hard
            );
        }
    }

    #[test]
    fn density_from_the_loss_is_the_density() {
        // The same formula with w = 1 − z (exact identity; w small is where it matters).
        let d = StructureFunction::new(25.0, M_E_GEV).unwrap();
        for z in [0.0, 0.3, 0.9, 0.999_999] {
            assert!(
                (d.density_at_loss(1.0 - z) / d.density(z) - 1.0).abs() < 1e-9,
                "z={z}"
            );
        }
        assert!(d.density_at_loss(1e-30).is_finite());
    }

    #[test]
    fn dt_weight_is_density_times_jacobian() {
        // D(z)·|dz/dt| with dz/dt = −(2/β) t^(2/β−1), evaluated directly (exact identity).
        let d = StructureFunction::new(25.0, M_E_GEV).unwrap();
        let b = d.beta();
        // t where 1 − z = t^(2/β) is representable well (t = 0.3 gives z = 1 in f64).
        for t in [0.7, 0.9, 0.95, 0.99] {
            let z = d.z_of_t(t);
            let direct = d.density(z) * (2.0 / b) * t.powf(2.0 / b - 1.0);
            assert!((d.dt_weight(t) / direct - 1.0).abs() < 1e-9, "t={t}");
        }
    }
}
