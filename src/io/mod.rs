//! Files in and out: atomic writes that never overwrite an input, staged output
//! directories, provenance, and the table writers (CSV, JSON, HEPData YAML).

mod atomic;
pub mod hepdata;
mod provenance;
mod staged;
pub mod tables;

pub use atomic::{AtomicWriteError, write_atomic};
pub use provenance::Provenance;
pub use staged::{StagedDir, StagedError};
