//! Correcting a measured scan: counts → observed cross-sections → dressed and bare ones,
//! by iterating the forward chain (physics notes §6), with the uncertainty budget.
//!
//! - [`data`]: the scan CSV (one row per energy point).
//! - [`forward`]: the chain dressed → radiated → smeared (the ISR layer's links).
//! - [`shape`]: the line-shape model through the current points (template + spline).
//! - [`unfold`]: the iteration and the response matrix.
//! - [`generate`]: invented scans with seeded Poisson noise (tests, demos).

pub mod card;
mod correct;
pub mod data;
mod error;
pub mod forward;
pub mod generate;
mod linalg;
pub mod shape;
pub mod unfold;

pub use card::parse_scan_card;
pub use correct::{
    CorrectedPoint, CorrectedScan, InverseS, LuminositySource, RelativeTerm, ScanPlan, correct_scan,
};
pub use data::{LuminosityInput, ScanPoint, parse_scan, read_scan};
pub use error::ScanError;
pub use forward::ForwardChain;
pub use linalg::Matrix;
pub use shape::{LineShape, ShapeModel, TemplateResonance};
pub use unfold::{UnfoldSettings, Unfolded, response, unfold};
