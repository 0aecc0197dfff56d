//! Where a run's files go. Everything is first written into a hidden staging folder inside the
//! output folder (each file atomically, via `io::atomic`) and moved into place only when the
//! whole run has succeeded: an interrupted or failed run leaves no outputs.
//!
//! One run at a time per output folder: the run holds a lock file `.kugel-lock` (created
//! exclusively, holding the run's PID) from before its staging folder exists until after the
//! outputs are in place. A second run on the same folder is refused naming the holder's PID;
//! a lock whose PID is no longer running (a killed run) is taken over. Staging folders and
//! temporary files of killed runs (their PID gone) are removed when the next run starts, and
//! reported; those of a live process are never touched.

use std::path::{Path, PathBuf};

use crate::error::{Error, Result};
use crate::io::atomic::{check_output_target, register_pending, unregister_pending};

const STAGING_PREFIX: &str = ".kugel-staging-";
const TEMP_MARK: &str = ".kugel-tmp-";
/// Name of the lock file inside an output folder.
pub const LOCK_FILE: &str = ".kugel-lock";

/// True when a process with this PID exists (Linux: `/proc/PID`); elsewhere every PID is
/// taken as alive, so nothing of another run is ever removed by mistake.
pub fn process_alive(pid: u32) -> bool {
    if pid == std::process::id() {
        return true;
    }
    let proc_root = Path::new("/proc/self");
    if !proc_root.exists() {
        return true;
    }
    Path::new("/proc").join(pid.to_string()).exists()
}

/// The exclusive right of one run to an output folder; released on drop.
pub struct FolderLock {
    path: PathBuf,
    /// What was found and cleared while taking the lock (a stale lock of a killed run).
    pub notes: Vec<String>,
}

impl FolderLock {
    /// Takes the lock of `folder` (which must exist), or refuses when a live process holds it.
    pub fn acquire(folder: &Path) -> Result<FolderLock> {
        let path = folder.join(LOCK_FILE);
        let mut notes = Vec::new();
        for _ in 0..2 {
            match std::fs::OpenOptions::new()
                .write(true)
                .create_new(true)
                .open(&path)
            {
                Ok(mut f) => {
                    use std::io::Write;
                    register_pending(&path);
                    let lock = FolderLock { path, notes };
                    writeln!(f, "{}", std::process::id()).map_err(|e| Error::io(&lock.path, e))?;
                    return Ok(lock);
                }
                Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => {
                    let text = std::fs::read_to_string(&path).unwrap_or_default();
                    match text.trim().parse::<u32>() {
                        Ok(pid) if process_alive(pid) => {
                            return Err(Error::io(
                                &path,
                                std::io::Error::new(
                                    std::io::ErrorKind::WouldBlock,
                                    format!(
                                        "output folder {} is in use by another kugel run (PID {pid}); wait for it to finish or choose another output.folder",
                                        folder.display()
                                    ),
                                ),
                            ));
                        }
                        Ok(pid) => {
                            notes.push(format!(
                                "removed the lock of a run that no longer exists (PID {pid})"
                            ));
                        }
                        Err(_) => {
                            // a lock being written this very moment holds no PID yet
                            let age = std::fs::metadata(&path)
                                .and_then(|m| m.modified())
                                .ok()
                                .and_then(|t| t.elapsed().ok())
                                .unwrap_or_default();
                            if age < std::time::Duration::from_secs(5) {
                                return Err(Error::io(
                                    &path,
                                    std::io::Error::new(
                                        std::io::ErrorKind::WouldBlock,
                                        format!(
                                            "output folder {} is being taken by another kugel run; try again",
                                            folder.display()
                                        ),
                                    ),
                                ));
                            }
                            notes.push("removed an unreadable lock file".to_string());
                        }
                    }
                    std::fs::remove_file(&path).map_err(|e| Error::io(&path, e))?;
                }
                Err(e) => return Err(Error::io(&path, e)),
            }
        }
        Err(Error::io(
            &path,
            std::io::Error::other("could not take the output folder's lock"),
        ))
    }
}

impl Drop for FolderLock {
    fn drop(&mut self) {
        let ours = std::fs::read_to_string(&self.path)
            .map(|t| t.trim() == std::process::id().to_string())
            .unwrap_or(false);
        if ours {
            let _ = std::fs::remove_file(&self.path);
        }
        unregister_pending(&self.path);
    }
}

/// The PID in a staging folder name `.kugel-staging-PID` or a temporary file name
/// `.NAME.kugel-tmp-PID-N`, if the name is one of these.
fn leftover_pid(name: &str) -> Option<u32> {
    if let Some(rest) = name.strip_prefix(STAGING_PREFIX) {
        return rest.parse().ok();
    }
    let at = name.rfind(TEMP_MARK)?;
    let rest = &name[at + TEMP_MARK.len()..];
    rest.split('-').next()?.parse().ok()
}

/// Removes staging folders and temporary files in `folder` left by processes that no longer
/// run; returns one note per removed entry.
pub fn clean_leftovers(folder: &Path) -> Result<Vec<String>> {
    let mut notes = Vec::new();
    let entries = std::fs::read_dir(folder).map_err(|e| Error::io(folder, e))?;
    for entry in entries.flatten() {
        let name = entry.file_name().to_string_lossy().into_owned();
        let Some(pid) = leftover_pid(&name) else {
            continue;
        };
        if process_alive(pid) {
            continue;
        }
        let p = entry.path();
        let is_dir = entry.file_type().map(|t| t.is_dir()).unwrap_or(false);
        if is_dir {
            std::fs::remove_dir_all(&p).map_err(|e| Error::io(&p, e))?;
            notes.push(format!(
                "removed the staging folder {name} left by an interrupted run (PID {pid})"
            ));
        } else {
            std::fs::remove_file(&p).map_err(|e| Error::io(&p, e))?;
            notes.push(format!(
                "removed the temporary file {name} left by an interrupted run (PID {pid})"
            ));
        }
    }
    Ok(notes)
}

/// One written file and what it holds.
#[derive(Debug, Clone)]
pub struct OutputFile {
    pub name: String,
    pub bytes: u64,
    pub what: String,
}

/// The staging folder of a running job, with the output folder's lock.
pub struct Staging {
    pub final_dir: PathBuf,
    pub dir: PathBuf,
    pub files: Vec<OutputFile>,
    /// What was cleaned up on the way in (stale lock, leftovers of killed runs), for the user.
    pub notes: Vec<String>,
    lock: FolderLock,
}

impl Staging {
    /// Creates the output folder (if needed), takes its lock, removes what killed runs left
    /// and creates a fresh staging folder inside it.
    pub fn create(final_dir: &Path) -> Result<Staging> {
        std::fs::create_dir_all(final_dir).map_err(|e| Error::io(final_dir, e))?;
        let mut lock = FolderLock::acquire(final_dir)?;
        let mut notes = std::mem::take(&mut lock.notes);
        notes.extend(clean_leftovers(final_dir)?);
        let dir = final_dir.join(format!("{STAGING_PREFIX}{}", std::process::id()));
        if dir.exists() {
            std::fs::remove_dir_all(&dir).map_err(|e| Error::io(&dir, e))?;
        }
        std::fs::create_dir(&dir).map_err(|e| Error::io(&dir, e))?;
        register_pending(&dir);
        Ok(Staging {
            final_dir: final_dir.to_path_buf(),
            dir,
            files: Vec::new(),
            notes,
            lock,
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
    /// system) and removes the staging folder. Every target is checked first (only regular
    /// files are replaced), so a refused target moves nothing.
    pub fn commit(self) -> Result<Vec<OutputFile>> {
        let _publishing = crate::io::atomic::publishing();
        for f in &self.files {
            check_output_target(&self.final_dir.join(&f.name))?;
        }
        for f in &self.files {
            let from = self.dir.join(&f.name);
            let to = self.final_dir.join(&f.name);
            std::fs::rename(&from, &to).map_err(|e| Error::io(&to, e))?;
        }
        std::fs::remove_dir_all(&self.dir).map_err(|e| Error::io(&self.dir, e))?;
        unregister_pending(&self.dir);
        drop(self.lock);
        Ok(self.files)
    }

    /// Removes the staging folder and everything in it (after a failure).
    pub fn discard(self) {
        let _ = std::fs::remove_dir_all(&self.dir);
        unregister_pending(&self.dir);
        drop(self.lock);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn leftover_names_give_their_pid() {
        assert_eq!(leftover_pid(".kugel-staging-4242"), Some(4242));
        assert_eq!(leftover_pid(".a_model.nc.kugel-tmp-77-3"), Some(77));
        assert_eq!(leftover_pid("a_model.nc"), None);
        assert_eq!(leftover_pid(".kugel-staging-x"), None);
    }

    #[test]
    fn second_lock_is_refused_naming_the_pid_and_stale_ones_are_taken_over() {
        let dir = tempfile::tempdir().unwrap();
        let first = FolderLock::acquire(dir.path()).unwrap();
        let err = FolderLock::acquire(dir.path()).err().unwrap().to_string();
        assert!(err.contains(&std::process::id().to_string()), "{err}");
        assert!(err.contains("in use"), "{err}");
        drop(first);
        assert!(!dir.path().join(LOCK_FILE).exists());
        // a lock of a PID that cannot exist (above the kernel's pid_max) is stale
        std::fs::write(dir.path().join(LOCK_FILE), "4294967295\n").unwrap();
        let lock = FolderLock::acquire(dir.path()).unwrap();
        assert!(
            lock.notes[0].contains("no longer exists"),
            "{:?}",
            lock.notes
        );
    }

    #[test]
    fn staging_of_a_dead_run_is_removed_and_reported_a_live_one_kept() {
        let dir = tempfile::tempdir().unwrap();
        let dead = dir.path().join(".kugel-staging-4294967295");
        std::fs::create_dir(&dead).unwrap();
        std::fs::write(dead.join("half.nc"), b"x").unwrap();
        let live = dir
            .path()
            .join(format!(".kugel-staging-{}", std::process::id()));
        std::fs::create_dir(&live).unwrap();
        let notes = clean_leftovers(dir.path()).unwrap();
        assert_eq!(notes.len(), 1, "{notes:?}");
        assert!(notes[0].contains("4294967295"));
        assert!(!dead.exists());
        assert!(live.exists());
    }
}
