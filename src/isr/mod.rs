//! Initial-state radiation: radiator schemes, the convolution with cuts, the final-state
//! factor and the beam-energy spread.
//!
//! Two links of the chain live here, each a [`CrossSection`](crate::process::CrossSection)
//! wrapping another: [`Radiated`] (σ_obs = ∫ F(x, s) σ_d(s(1 − x)) dx) and [`Smeared`]
//! (a Gaussian in √s). Vocabulary: `1 + δ_ISR = σ_obs/σ_dressed`.

mod convolve;
mod cuts;
mod fsr;
mod grid;
mod radiator;
mod spread;

pub use convolve::{Isr, Observed, Radiated};
pub use cuts::Cuts;
pub use fsr::schwinger_factor;
pub use grid::NODES as RUN_NODES;
pub use radiator::{Radiator, Scheme};
pub use spread::{Order, Smeared, max_spread_mev, visit_spread_nodes};

use thiserror::Error;

/// What can go wrong in the ISR layer.
#[derive(Debug, Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum IsrError {
    #[error(
        "min_mass_gev = {min_mass_gev} is not below sqrt_s_gev = {sqrt_s_gev}: no event can pass the cut"
    )]
    MinMassAboveEnergy { min_mass_gev: f64, sqrt_s_gev: f64 },
    #[error("s = {s_gev2} GeV² is not allowed; allowed: a finite s > 0")]
    BadEnergy { s_gev2: f64 },
}
