//! Luminosity: acceptances, visible Bhabha (γγ, μμ) cross-sections, counts → luminosity.
//!
//! The chain read backwards (design notes): the visible cross-section is a prediction inside
//! an [`Acceptance`], and L = (N − N_bkg)/(ε σ_vis) (physics notes §5).

mod acceptance;
mod card;
mod luminosity;
mod monitor;
mod pieces;
mod structure_function;
mod visible;

pub use acceptance::{Acceptance, FinalState, Intervals, PolarRange};
pub use card::{CardError, LumiPlan, RawAcceptance, RawCard, RawUncertainty, Uncertainties};
pub use luminosity::{
    COUNTS_COLUMNS, CountsError, Prediction, RC_NONLOG_REL, Run, RunLuminosity, SigmaShift,
    luminosities, parse_counts, predict,
};
pub use monitor::{Monitor, VpModels};
pub use structure_function::StructureFunction;
pub use visible::{Channel, Scale, Settings, SigmaVis, Visible, VisibleError};
