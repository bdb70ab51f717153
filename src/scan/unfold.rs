//! The iterative unfolding of observed cross-sections to dressed ones (physics notes §6).
//!
//! Start from y⁰ = σ_obs; at each step build the line shape L through yᵏ
//! ([`ShapeModel::through`]), compute 1 + δᵢ = σ_obs\[L\](sᵢ)/L(sᵢ) through the forward chain,
//! set yᵏ⁺¹ᵢ = σ_obs,ᵢ/(1 + δᵢ), and stop when the largest relative change is below the
//! tolerance. Because L is linear in y, the converged y solves K·y = σ_obs with the
//! response matrix Kᵢⱼ = σ_obs\[L(eⱼ)\](sᵢ); [`response`] builds K so that statistical
//! shifts propagate exactly (δy = K⁻¹ δσ_obs: a point's correction depends on the data
//! below it, which correlates the unfolded points).
//!
//! Where the chain's fast paths apply, K is built first, in one pass over their quadrature
//! nodes ([`ForwardChain::response_fast`]), and every iteration is the product K·yᵏ; else
//! each iteration runs the chain on L.

use super::ScanError;
use super::forward::ForwardChain;
use super::linalg::Matrix;
use super::shape::ShapeModel;
use crate::isr::Order;
use rayon::prelude::*;

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
    /// The response matrix the iteration used ([`ForwardChain::response_fast`]); None when
    /// each iteration ran the chain itself.
    pub response: Option<Matrix>,
}

/// The chain applied to the line shape through `y`, at every scan point (in parallel).
fn forward(chain: &ForwardChain, model: &ShapeModel, spread_mev: &[f64], y: &[f64]) -> Vec<f64> {
    let shape = model.through(y);
    model
        .sqrt_s_gev()
        .par_iter()
        .zip(spread_mev)
        .map(|(&e, &w)| chain.observed_nb(&shape, e, w))
        .collect()
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
    let response = chain.response_fast(model, spread_mev, Order::Low);
    let forward = |y: &[f64]| match &response {
        Some(k) => k.apply(y),
        None => forward(chain, model, spread_mev, y),
    };
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
                     positive (iteration {iteration}); the line shape through the points \
                     cannot describe the data",
                    model.sqrt_s_gev()[i]
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

/// The response matrix Kᵢⱼ = σ_obs\[L(eⱼ)\](sᵢ): the observed σ at point i per nb of dressed
/// σ at point j (dimensionless). In one pass over the quadrature nodes where the fast paths
/// apply, else column by column through the chain.
pub fn response(chain: &ForwardChain, model: &ShapeModel, spread_mev: &[f64]) -> Matrix {
    if let Some(k) = chain.response_fast(model, spread_mev, Order::Low) {
        return k;
    }
    let n = model.sqrt_s_gev().len();
    let columns: Vec<Vec<f64>> = (0..n)
        .into_par_iter()
        .map(|j| {
            let mut unit = vec![0.0; n];
            unit[j] = 1.0;
            let shape = model.through(&unit);
            model
                .sqrt_s_gev()
                .iter()
                .zip(spread_mev)
                .map(|(&e, &w)| chain.observed_nb(&shape, e, w))
                .collect()
        })
        .collect();
    let mut k = Matrix::zeros(n);
    for (j, col) in columns.iter().enumerate() {
        for (i, v) in col.iter().enumerate() {
            k.set(i, j, *v);
        }
    }
    k
}
