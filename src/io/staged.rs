//! An output directory written all at once: files go to a hidden staging folder beside
//! the target and are moved in only when everything succeeded, so a failed run leaves
//! nothing half-written.

use std::fs;
use std::path::{Path, PathBuf};
use thiserror::Error;

#[derive(Debug, Error)]
#[non_exhaustive]
pub enum StagedError {
    #[error("output directory {path} is an existing file; allowed: a directory or a new path")]
    IsFile { path: PathBuf },
    #[error("refusing to overwrite input file {path}")]
    WouldOverwriteInput { path: PathBuf },
    #[error("cannot write {path}: {source}")]
    Io {
        path: PathBuf,
        #[source]
        source: std::io::Error,
    },
}

/// A staging folder for the directory `target`; dropped uncommitted, it is removed.
#[derive(Debug)]
pub struct StagedDir {
    target: PathBuf,
    staging: PathBuf,
    files: Vec<PathBuf>,
    committed: bool,
}

impl StagedDir {
    /// Stage output for `target` (created on commit if it does not exist).
    ///
    /// # Errors
    /// `target` is a file, or its parent folder is not writable.
    pub fn new(target: &Path) -> Result<Self, StagedError> {
        if target.is_file() {
            return Err(StagedError::IsFile {
                path: target.to_path_buf(),
            });
        }
        let parent = match target.parent() {
            Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
            _ => PathBuf::from("."),
        };
        let name = target
            .file_name()
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_else(|| "out".into());
        let staging = parent.join(format!(".{name}.{}.staging", std::process::id()));
        fs::create_dir_all(&staging).map_err(|source| StagedError::Io {
            path: target.to_path_buf(),
            source,
        })?;
        Ok(StagedDir {
            target: target.to_path_buf(),
            staging,
            files: Vec::new(),
            committed: false,
        })
    }

    /// Write `bytes` to `relative` (e.g. `hepdata/table1.yaml`) inside the staging folder.
    ///
    /// # Errors
    /// An I/O failure.
    pub fn write(&mut self, relative: &str, bytes: &[u8]) -> Result<(), StagedError> {
        let path = self.staging.join(relative);
        let io = |source| StagedError::Io {
            path: self.target.join(relative),
            source,
        };
        if let Some(dir) = path.parent() {
            fs::create_dir_all(dir).map_err(io)?;
        }
        fs::write(&path, bytes).map_err(io)?;
        self.files.push(PathBuf::from(relative));
        Ok(())
    }

    /// Move everything into `target`. None of `inputs` may be among the files.
    ///
    /// # Errors
    /// An output would replace an input, or a move fails.
    pub fn commit(mut self, inputs: &[&Path]) -> Result<(), StagedError> {
        let canon = |p: &Path| fs::canonicalize(p).unwrap_or_else(|_| p.to_path_buf());
        let inputs: Vec<PathBuf> = inputs.iter().map(|p| canon(p)).collect();
        for f in &self.files {
            let dest = self.target.join(f);
            if inputs.contains(&canon(&dest)) {
                return Err(StagedError::WouldOverwriteInput { path: dest });
            }
        }
        let io = |path: &Path, source| StagedError::Io {
            path: path.to_path_buf(),
            source,
        };
        if !self.target.exists() {
            fs::rename(&self.staging, &self.target).map_err(|e| io(&self.target, e))?;
        } else {
            for f in &self.files {
                let dest = self.target.join(f);
                if let Some(dir) = dest.parent() {
                    fs::create_dir_all(dir).map_err(|e| io(&dest, e))?;
                }
                fs::rename(self.staging.join(f), &dest).map_err(|e| io(&dest, e))?;
            }
            let _ = fs::remove_dir_all(&self.staging);
        }
        self.committed = true;
        Ok(())
    }
}

impl Drop for StagedDir {
    fn drop(&mut self) {
        if !self.committed {
            let _ = fs::remove_dir_all(&self.staging);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn commits_all_or_nothing() {
        let dir = tempfile::tempdir().unwrap();
        let out = dir.path().join("out");
        let mut s = StagedDir::new(&out).unwrap();
        s.write("a.csv", b"1\n").unwrap();
        s.write("sub/b.yaml", b"x: 1\n").unwrap();
        drop(s);
        assert!(!out.exists());
        assert_eq!(fs::read_dir(dir.path()).unwrap().count(), 0);
        let mut s = StagedDir::new(&out).unwrap();
        s.write("a.csv", b"1\n").unwrap();
        s.commit(&[]).unwrap();
        assert_eq!(fs::read_to_string(out.join("a.csv")).unwrap(), "1\n");
        // Into an existing directory, file by file; an input is never replaced.
        let mut s = StagedDir::new(&out).unwrap();
        s.write("a.csv", b"2\n").unwrap();
        let input = out.join("a.csv");
        assert!(s.commit(&[input.as_path()]).is_err());
        assert_eq!(fs::read_to_string(out.join("a.csv")).unwrap(), "1\n");
        let file = dir.path().join("f");
        fs::write(&file, b"").unwrap();
        assert!(matches!(
            StagedDir::new(&file),
            Err(StagedError::IsFile { .. })
        ));
    }
}
