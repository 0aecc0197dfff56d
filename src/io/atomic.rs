//! Atomic file output: every file is written to a temporary file beside its target and renamed
//! into place only when complete, so a failed or interrupted run never leaves a half-written
//! output and never clobbers a good file with a broken one.

use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};

use crate::error::{Error, Result};

static COUNTER: AtomicU64 = AtomicU64::new(0);

/// Removes the temporary file on drop unless the write was committed (covers errors and panics).
struct TempGuard {
    path: PathBuf,
    committed: bool,
}

impl Drop for TempGuard {
    fn drop(&mut self) {
        if !self.committed {
            let _ = std::fs::remove_file(&self.path);
        }
    }
}

/// The hidden temporary path used for `path`: same folder (so the rename stays on one file
/// system), name `.NAME.kugel-tmp-PID-N`.
fn temporary_path_for(path: &Path) -> Result<PathBuf> {
    let name = path.file_name().ok_or_else(|| {
        Error::invalid(format!("output path '{}' has no file name", path.display()))
    })?;
    let n = COUNTER.fetch_add(1, Ordering::Relaxed);
    let tmp_name = format!(
        ".{}.kugel-tmp-{}-{n}",
        name.to_string_lossy(),
        std::process::id()
    );
    Ok(match path.parent() {
        Some(dir) if !dir.as_os_str().is_empty() => dir.join(tmp_name),
        _ => PathBuf::from(tmp_name),
    })
}

/// Writes `path` atomically: `write` receives a temporary path beside `path` and must create
/// the complete file there; on success it is renamed onto `path`, on error (or panic) the
/// temporary file is removed and `path` is left untouched.
pub fn write_atomic(path: &Path, write: impl FnOnce(&Path) -> Result<()>) -> Result<()> {
    if let Some(dir) = path.parent() {
        if !dir.as_os_str().is_empty() && !dir.is_dir() {
            return Err(Error::io(
                path,
                std::io::Error::new(
                    std::io::ErrorKind::NotFound,
                    format!("output folder '{}' does not exist", dir.display()),
                ),
            ));
        }
    }
    let tmp = temporary_path_for(path)?;
    let mut guard = TempGuard {
        path: tmp.clone(),
        committed: false,
    };
    write(&tmp)?;
    if !tmp.exists() {
        return Err(Error::io(
            path,
            std::io::Error::other("the writer produced no file"),
        ));
    }
    std::fs::rename(&tmp, path).map_err(|e| Error::io(path, e))?;
    guard.committed = true;
    Ok(())
}

/// Writes bytes to `path` atomically (flushed to disk before the rename).
pub fn write_bytes_atomic(path: &Path, bytes: &[u8]) -> Result<()> {
    write_atomic(path, |tmp| {
        use std::io::Write;
        let mut f = std::fs::File::create(tmp).map_err(|e| Error::io(path, e))?;
        f.write_all(bytes).map_err(|e| Error::io(path, e))?;
        f.sync_all().map_err(|e| Error::io(path, e))?;
        Ok(())
    })
}

/// Refuses to run when `output` names the same file as one of `inputs` (after resolving
/// relative paths and links), so that a command can never overwrite its own input.
pub fn refuse_overwrite_of_input(output: &Path, inputs: &[&Path]) -> Result<()> {
    let out = resolved(output);
    for input in inputs {
        if resolved(input) == out {
            return Err(Error::invalid(format!(
                "output '{}' is the same file as input '{}'; choose another output path",
                output.display(),
                input.display()
            )));
        }
    }
    Ok(())
}

/// Canonical form of a path that may not exist yet: the canonical parent joined with the name.
fn resolved(path: &Path) -> PathBuf {
    if let Ok(p) = path.canonicalize() {
        return p;
    }
    let parent = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let parent = parent.canonicalize().unwrap_or(parent);
    match path.file_name() {
        Some(name) => parent.join(name),
        None => parent,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn leftovers(dir: &Path) -> Vec<String> {
        std::fs::read_dir(dir)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect()
    }

    #[test]
    fn success_renames_into_place() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("out.txt");
        write_bytes_atomic(&target, b"hello").unwrap();
        assert_eq!(std::fs::read(&target).unwrap(), b"hello");
        assert_eq!(leftovers(dir.path()), vec!["out.txt".to_string()]);
    }

    #[test]
    fn failing_writer_leaves_nothing_and_keeps_old_file() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("out.txt");
        std::fs::write(&target, b"old").unwrap();
        let err = write_atomic(&target, |tmp| {
            std::fs::write(tmp, b"half").unwrap();
            Err(Error::invalid("simulated failure"))
        })
        .unwrap_err();
        assert!(err.to_string().contains("simulated failure"));
        assert_eq!(std::fs::read(&target).unwrap(), b"old");
        assert_eq!(leftovers(dir.path()), vec!["out.txt".to_string()]);
    }

    #[test]
    fn panicking_writer_leaves_nothing() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("p.nc");
        let d = dir.path().to_path_buf();
        let r = std::panic::catch_unwind(move || {
            let _ = write_atomic(&target, |tmp| {
                std::fs::write(tmp, b"x").unwrap();
                panic!("boom");
            });
        });
        assert!(r.is_err());
        assert!(leftovers(&d).is_empty());
    }

    #[test]
    fn missing_folder_is_named() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("nope").join("x.nc");
        let err = write_bytes_atomic(&target, b"x").unwrap_err().to_string();
        assert!(err.contains("does not exist"), "{err}");
    }

    #[test]
    fn same_input_and_output_refused() {
        let dir = tempfile::tempdir().unwrap();
        let a = dir.path().join("a.nc");
        std::fs::write(&a, b"x").unwrap();
        let other = dir.path().join("b.nc");
        let dotted = dir.path().join(".").join("a.nc");
        assert!(refuse_overwrite_of_input(&dotted, &[&other, &a]).is_err());
        assert!(refuse_overwrite_of_input(&other, &[&a]).is_ok());
    }
}
