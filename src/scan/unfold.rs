//! The iterative unfolding of observed cross-sections to dressed ones (physics notes §6).
//!
//! Start from y⁰ = σ_obs; at each step build the line shape L through yᵏ
//! ([`ShapeModel::through`]), compute 1 + δᵢ = σ_obs\[L\](sᵢ)/L(sᵢ) through the forward chain,
//! set yᵏ⁺¹ᵢ = σ_obs,ᵢ/(1 + δᵢ), and stop when the largest relative change is below the
//! tolerance. Because L is linear in y, the converged y solves K·y = σ_obs with the
//! response matrix Kᵢⱼ = σ_obs\[L(eⱼ)\](sᵢ), which also propagates statistical
//! shifts exactly (δy = K⁻¹ δσ_obs: a point's correction depends on the data
//! below it, which correlates the unfolded points).
//!
//! K is built first ([`ForwardChain::response`]: a pass over the quadrature nodes of each
//! point), and every iteration is the product K·yᵏ.

use super::ScanError;
use super::forward::ForwardChain;
use super::linalg::Matrix;
use super::shape::ShapeModel;
use crate::isr::Order;

/// When to stop iterating.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct UnfoldSettings {
    /// Largest relative change of any point between two iterations at which to stop.
    pub tolerance: f64,
    /// Iterations allowed before giving up with [`ScanError::NotConverged`].
    pub max_iterations: usize,
}

impl Default for UnfoldSettings {
    fn default() -> Self {
        UnfoldSettings {
            tolerance: 1e-10,
            max_iterations: 200,
        }
    }
}

/// The result of an unfolding.
#[derive(Debug, Clone, PartialEq)]
pub struct Unfolded {
    /// Dressed cross-sections at the scan energies, nb.
    pub sigma_dressed_nb: Vec<f64>,
    /// σ_obs/σ_dressed at each point, from the converged line shape.
    pub one_plus_delta: Vec<f64>,
    /// Iterations used.
    pub iterations: usize,
    /// The largest relative change in the last iteration.
    pub last_change: f64,
    /// The response matrix the iteration used ([`ForwardChain::response`], lower rules).
    pub response: Matrix,
}

/// Unfold `sigma_obs_nb` (one value per point of `model`, all > 0) with `chain`.
///
/// # Errors
/// [`ScanError::NotConverged`] when the tolerance is not met in time;
/// [`ScanError::Model`] when a correction factor is not positive and finite (a line
/// shape that the data cannot support).
pub fn unfold(
    chain: &ForwardChain,
    model: &ShapeModel,
    spread_mev: &[f64],
    sigma_obs_nb: &[f64],
    settings: UnfoldSettings,
) -> Result<Unfolded, ScanError> {
    // The chain is linear in y: with the response matrix every iteration is a product.
    let response = chain.response(model, spread_mev, Order::Low);
    let forward = |y: &[f64]| response.apply(y);
    let mut y = sigma_obs_nb.to_vec();
    let mut last_change = f64::INFINITY;
    for iteration in 1..=settings.max_iterations {
        let obs = forward(&y);
        let mut change = 0.0f64;
        let mut next = Vec::with_capacity(y.len());
        for i in 0..y.len() {
            let one_plus_delta = obs[i] / y[i];
            if !(one_plus_delta > 0.0 && one_plus_delta.is_finite()) {
                return Err(ScanError::Model(format!(
                    "at sqrt_s_gev = {} the correction factor 1+delta = {one_plus_delta} is not \
                     a positive finite number (iteration {iteration}); the line shape through \
                     the points cannot describe the data{}",
                    model.sqrt_s_gev()[i],
                    largest_step(model.sqrt_s_gev(), sigma_obs_nb)
                )));
            }
            let v = sigma_obs_nb[i] / one_plus_delta;
            change = change.max((v / y[i] - 1.0).abs());
            next.push(v);
        }
        y = next;
        last_change = change;
        if change < settings.tolerance {
            let obs = forward(&y);
            let one_plus_delta = obs.iter().zip(&y).map(|(o, v)| o / v).collect();
            return Ok(Unfolded {
                sigma_dressed_nb: y,
                one_plus_delta,
                iterations: iteration,
                last_change,
                response,
            });
        }
    }
    Err(ScanError::NotConverged {
        iterations: settings.max_iterations,
        max_change: last_change,
        tolerance: settings.tolerance,
    })
}

/// Where neighbouring observed cross-sections differ most, as a hint for a diverging
/// iteration (an outlier point — a wrong efficiency or luminosity — shows as a large step).
fn largest_step(sqrt_s_gev: &[f64], sigma_obs_nb: &[f64]) -> String {
    let step = |k: usize| (sigma_obs_nb[k + 1] / sigma_obs_nb[k]).ln().abs();
    (0..sigma_obs_nb.len().saturating_sub(1))
        .filter(|&k| step(k).is_finite())
        .max_by(|&a, &b| step(a).total_cmp(&step(b)))
        .map_or(String::new(), |k| {
            format!(
                " (the largest step between neighbouring points: sigma_obs changes by a factor {:.3} from sqrt_s_gev = {} to {}; an outlier?)",
                sigma_obs_nb[k + 1] / sigma_obs_nb[k],
                sqrt_s_gev[k],
                sqrt_s_gev[k + 1]
            )
        })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_hint_points_at_the_outlier() {
        // A point 700× too high (an efficiency of 0.001 for 0.7) next to a resonance's
        // factor-of-3 rise: the hint names the outlier's step.
        let e = [5.06, 5.08, 5.10, 5.12];
        let sigma = [7000.0, 10.0, 30.0, 12.0];
        let hint = largest_step(&e, &sigma);
        assert!(hint.contains("from sqrt_s_gev = 5.06 to 5.08"), "{hint}");
        assert_eq!(largest_step(&[5.0], &[1.0]), "");
    }
}
