//! Luminosity: acceptances, visible Bhabha (γγ, μμ) cross-sections, counts → luminosity.
//!
//! The chain read backwards (design notes): the visible cross-section is a prediction inside
//! an [`Acceptance`], and L = (N − N_bkg)/(ε σ_vis) (physics notes §5).

mod acceptance;
mod structure_function;
mod visible;

pub use acceptance::{Acceptance, FinalState, Intervals, PolarRange};
pub use structure_function::StructureFunction;
pub use visible::{Channel, Scale, Settings, SigmaVis, Visible, VisibleError};
