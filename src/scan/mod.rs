//! Correcting a measured scan: counts → observed cross-sections → dressed and bare ones,
//! by iterating the forward chain (physics notes §6), with the uncertainty budget.
//!
//! - [`data`]: the scan CSV (one row per energy point).
//! - [`forward`]: the chain dressed → radiated → smeared (the ISR layer's links).
//! - [`shape`]: the line-shape model through the current points (template + spline).
//! - [`mod@unfold`]: the iteration and the response matrix.
//! - [`generate`]: invented scans with seeded Poisson noise (tests, demos).
//! - [`fit`]: the forward fit of a narrow resonance (mass, Γ_ee·B, continuum) through the
//!   chain, for resonances narrower than the energy spread.

pub mod card;
mod correct;
pub mod data;
mod error;
pub mod fit;
pub mod forward;
pub mod generate;
mod linalg;
pub mod shape;
pub mod unfold;

pub use card::{ScanCard, parse_full_scan_card, parse_scan_card};
pub use correct::{
    CorrectedPoint, CorrectedScan, InverseS, LuminositySource, LuminosityTerm, MonitorSigma,
    RelativeTerm, ScanLuminosity, ScanPlan, correct_scan, scan_source_name,
};
pub use data::{LuminosityInput, ScanPoint, parse_scan, read_scan};
pub use error::ScanError;
pub use fit::{FitPlan, ForwardFit, fit_scan};
pub use forward::ForwardChain;
pub use linalg::Matrix;
pub use shape::{LineShape, ShapeModel, TemplateResonance};
pub use unfold::{UnfoldSettings, Unfolded, unfold};
