//! # radnorm
//!
//! Turns event counts at e⁺e⁻ colliders into physics: Born cross-sections, vacuum
//! polarisation (running α), initial-state radiation, luminosity from Bhabha counts,
//! corrected cross-sections and their uncertainty budgets.
//!
//! ## A prediction is a chain of transforms
//!
//! ```text
//!  Born process ──► dressed by VP ──► radiated (ISR, with cuts) ──► smeared (beam spread)
//!  σ₀(s)            σ₀(s)·|1/(1−Π(s))|²   ∫ F(x,s) σ_d(s(1−x)) dx      ∫ G(√s−E) σ_r(E²) dE
//! ```
//!
//! Every link implements [`process::CrossSection`] and wraps the one before it; a
//! correction factor is the ratio of two links (`1 + δ = σ_obs/σ_dressed`).
//!
//! ## Module map (the tree is the pipeline)
//!
//! - [`numeric`]: quadrature, substitutions, principal values, Li₂, splines, grids.
//! - [`constants`]: physical constants with their sources.
//! - [`process`]: Born cross-sections (fermion pairs with γ and Z, Bhabha, γγ, hadrons).
//! - [`rmodel`]: the R(s) model (resonances, pQCD, user tables) with regional uncertainties.
//! - [`vp`]: vacuum polarisation Π(q²), running α, the dressing link.
//! - [`isr`]: radiator schemes, the ISR convolution with cuts, final-state factor, beam spread.
//! - [`lumi`]: acceptances, visible Bhabha/γγ/μμ cross-sections with ISR/FSR, counts → luminosity.
//! - [`scan`]: measured scans, the iterative unfolding to dressed and bare cross-sections.
//! - [`table`]: correction tables on a grid with per-variation shifts, shardable.
//! - [`demo`]: the invented demo scenario and its seeded generator.
//! - [`budget`]: uncertainty sources as signed shifts per point, covariance across points.
//! - [`plot`]: SVG plots of line shapes, correction factors and budgets.
//!
//! ## Units
//!
//! Energies in GeV, `s` and `q²` in GeV², cross-sections in nb, angles in radians inside
//! the library (degrees at the command line), luminosity in nb⁻¹.
//!
//! ```
//! use radnorm::process::{CrossSection, FermionPair};
//! let mumu = FermionPair::muon();
//! let sigma = mumu.sigma_nb(10.0_f64.powi(2));
//! assert!((sigma - 0.8685).abs() < 1e-3); // ≈ 86.85 nb / s, just above the μμ threshold effects
//! ```

pub mod budget;
pub mod constants;
pub mod demo;
pub mod error;
pub mod io;
pub mod isr;
pub mod lumi;
pub mod numeric;
pub mod plot;
pub mod process;
pub mod rmodel;
pub mod scan;
pub mod table;
pub mod vp;

pub use error::{MAX_EVENTS, MAX_SQRT_S_GEV, MIN_EFFICIENCY, ParamError, shown};
