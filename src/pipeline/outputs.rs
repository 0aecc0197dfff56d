//! Where a run's files go. Everything is first written into a hidden staging folder inside the
//! output folder (each file atomically, via `io::atomic`) and moved into place only when the
//! whole run has succeeded: an interrupted or failed run leaves no outputs, and a rerun starts
//! by removing any staging folder a killed run left behind.

use std::path::{Path, PathBuf};

use crate::error::{Error, Result};

const STAGING_PREFIX: &str = ".kugel-staging-";

/// One written file and what it holds.
#[derive(Debug, Clone)]
pub struct OutputFile {
    pub name: String,
    pub bytes: u64,
    pub what: String,
}

/// The staging folder of a running job.
pub struct Staging {
    pub final_dir: PathBuf,
    pub dir: PathBuf,
    pub files: Vec<OutputFile>,
}

impl Staging {
    /// Creates the output folder (if needed) and a fresh staging folder inside it, removing
    /// staging folders of earlier runs that were killed.
    pub fn create(final_dir: &Path) -> Result<Staging> {
        std::fs::create_dir_all(final_dir).map_err(|e| Error::io(final_dir, e))?;
        let entries = std::fs::read_dir(final_dir).map_err(|e| Error::io(final_dir, e))?;
        for entry in entries.flatten() {
            if entry
                .file_name()
                .to_string_lossy()
                .starts_with(STAGING_PREFIX)
            {
                let p = entry.path();
                std::fs::remove_dir_all(&p).map_err(|e| Error::io(&p, e))?;
            }
        }
        let dir = final_dir.join(format!("{STAGING_PREFIX}{}", std::process::id()));
        std::fs::create_dir(&dir).map_err(|e| Error::io(&dir, e))?;
        Ok(Staging {
            final_dir: final_dir.to_path_buf(),
            dir,
            files: Vec::new(),
        })
    }

    /// Path of output `name` inside the staging folder.
    pub fn path(&self, name: &str) -> PathBuf {
        self.dir.join(name)
    }

    /// Records a file written at `self.path(name)`.
    pub fn record(&mut self, name: &str, what: impl Into<String>) -> Result<()> {
        let p = self.path(name);
        let bytes = std::fs::metadata(&p).map_err(|e| Error::io(&p, e))?.len();
        self.files.push(OutputFile {
            name: name.to_string(),
            bytes,
            what: what.into(),
        });
        Ok(())
    }

    /// Writes `bytes` to output `name` and records it.
    pub fn write_bytes(&mut self, name: &str, bytes: &[u8], what: impl Into<String>) -> Result<()> {
        crate::io::atomic::write_bytes_atomic(&self.path(name), bytes)?;
        self.record(name, what)
    }

    /// Moves every staged file into the output folder (each a rename within one file
    /// system) and removes the staging folder.
    pub fn commit(self) -> Result<Vec<OutputFile>> {
        for f in &self.files {
            let from = self.dir.join(&f.name);
            let to = self.final_dir.join(&f.name);
            std::fs::rename(&from, &to).map_err(|e| Error::io(&to, e))?;
        }
        std::fs::remove_dir_all(&self.dir).map_err(|e| Error::io(&self.dir, e))?;
        Ok(self.files)
    }

    /// Removes the staging folder and everything in it (after a failure).
    pub fn discard(self) {
        let _ = std::fs::remove_dir_all(&self.dir);
    }
}
