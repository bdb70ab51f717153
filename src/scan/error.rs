//! The error type of the scan layer: every message names where the problem is.

use super::fit::FitStop;
use crate::ParamError;
use std::path::PathBuf;
use thiserror::Error;

#[derive(Debug, Error)]
#[non_exhaustive]
pub enum ScanError {
    /// A bad value or structure in a data file, with its place.
    #[error("{file}, line {line}, column {column}: {message}")]
    Data {
        file: String,
        line: u64,
        column: String,
        message: String,
    },
    /// A data file with no usable rows or missing columns.
    #[error("{file}: {message}")]
    DataFile { file: String, message: String },
    /// A run-card problem; `key` is the card key (dotted path).
    #[error("{file}: {key}: {message}")]
    Card {
        file: String,
        key: String,
        message: String,
    },
    #[error("cannot read {path}: {source}")]
    Io {
        path: PathBuf,
        #[source]
        source: std::io::Error,
    },
    #[error(transparent)]
    Param(#[from] ParamError),
    /// The iteration did not settle: the unfolded values are not trustworthy.
    #[error(
        "unfolding did not converge: after {iterations} iterations the largest relative change \
         is {max_change:.3e} (tolerance {tolerance:.1e}); allowed: raise unfold.max_iterations \
         or use a forward fit for resonances narrower than the energy spread"
    )]
    NotConverged {
        iterations: usize,
        max_change: f64,
        tolerance: f64,
    },
    /// The line-shape model or the response cannot be built from these points.
    #[error("{0}")]
    Model(String),
    /// A forward fit with too few points to leave a degree of freedom.
    #[error(
        "forward fit: the scan has {points} points for {parameters} fitted parameters \
         (fit.continuum = \"{continuum}\"); allowed: at least {} points (parameters + 1), \
         or fewer parameters (fit.continuum = \"scale\")",
        parameters + 1
    )]
    FitTooFewPoints {
        points: usize,
        parameters: usize,
        continuum: &'static str,
    },
    /// The forward fit stopped without converging; its values are not trustworthy.
    #[error(
        "forward fit did not converge: stopped ({stop}) after {iterations} iterations at \
         chi2 {chi2:.6e}, estimated distance to the minimum {edm:.3e} (tolerance \
         {tolerance:.1e}); allowed: raise fit.max_iterations, give starting values nearer \
         the peak (fit.mass_gev, fit.gee_b_kev), or check that the resonance is seen in \
         the data"
    )]
    FitFailed {
        /// [`FitStop::MaxIterations`], [`FitStop::Singular`] or [`FitStop::Stalled`].
        stop: FitStop,
        iterations: usize,
        chi2: f64,
        edm: f64,
        tolerance: f64,
    },
}
