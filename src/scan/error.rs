//! The error type of the scan layer: every message names where the problem is.

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
}
