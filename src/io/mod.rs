//! Files in and out: atomic writes that never overwrite an input.

mod atomic;

pub use atomic::{AtomicWriteError, write_atomic};
