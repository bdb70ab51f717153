//! Atomic file writes: a temporary file in the target's folder, then a rename, so a
//! reader never sees half a file and a failed run leaves nothing behind.

use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};
use thiserror::Error;

#[derive(Debug, Error)]
#[non_exhaustive]
pub enum AtomicWriteError {
    #[error("refusing to overwrite input file {path}")]
    WouldOverwriteInput { path: PathBuf },
    #[error("{path} is a directory, not a file")]
    IsDirectory { path: PathBuf },
    #[error("cannot write {path}: {source}")]
    Io {
        path: PathBuf,
        #[source]
        source: std::io::Error,
    },
}

/// Write `bytes` to `path` atomically. `inputs` are the files this run read: none of
/// them may be the target.
///
/// # Errors
/// The target is one of `inputs` or a directory, or the folder is not writable.
pub fn write_atomic(path: &Path, bytes: &[u8], inputs: &[&Path]) -> Result<(), AtomicWriteError> {
    let target = canonical_or_self(path);
    if inputs.iter().any(|i| canonical_or_self(i) == target) {
        return Err(AtomicWriteError::WouldOverwriteInput {
            path: path.to_path_buf(),
        });
    }
    if path.is_dir() {
        return Err(AtomicWriteError::IsDirectory {
            path: path.to_path_buf(),
        });
    }
    let io_err = |source| AtomicWriteError::Io {
        path: path.to_path_buf(),
        source,
    };
    let dir = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let tmp = dir.join(format!(".{name}.{}.tmp", std::process::id()));
    let result = (|| {
        let mut f = fs::File::create(&tmp)?;
        f.write_all(bytes)?;
        f.sync_all()?;
        fs::rename(&tmp, path)
    })();
    if let Err(e) = result {
        let _ = fs::remove_file(&tmp);
        return Err(io_err(e));
    }
    Ok(())
}

fn canonical_or_self(p: &Path) -> PathBuf {
    fs::canonicalize(p).unwrap_or_else(|_| p.to_path_buf())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn writes_and_refuses_inputs() {
        let dir = tempfile::tempdir().unwrap();
        let out = dir.path().join("a.csv");
        write_atomic(&out, b"x\n", &[]).unwrap();
        assert_eq!(fs::read_to_string(&out).unwrap(), "x\n");
        let err = write_atomic(&out, b"y\n", &[out.as_path()]).unwrap_err();
        assert!(matches!(err, AtomicWriteError::WouldOverwriteInput { .. }));
        assert_eq!(fs::read_to_string(&out).unwrap(), "x\n");
        let err = write_atomic(dir.path(), b"y", &[]).unwrap_err();
        assert!(matches!(err, AtomicWriteError::IsDirectory { .. }));
        let err = write_atomic(&dir.path().join("no/such/dir/f"), b"y", &[]).unwrap_err();
        assert!(matches!(err, AtomicWriteError::Io { .. }));
    }
}
