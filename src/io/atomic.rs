//! Atomic file output and the one rule for every file kugel writes.
//!
//! - Every file is written to a hidden temporary file beside its target and renamed into place
//!   only when complete, so a failed or interrupted run never leaves a half-written output and
//!   never clobbers a good file with a broken one.
//! - Only regular files are replaced: a target that is a directory, a symbolic link, a FIFO, a
//!   device node or a socket is refused with its kind named ([`check_output_target`]), before
//!   the work and again just before the rename.
//! - A command with several outputs opens an [`OutputGroup`]: while it is open, every atomic
//!   write on that thread stages its file and defers the rename; [`OutputGroup::publish`] then
//!   checks every target and moves all of them into place, and dropping the group unpublished
//!   removes every staged file. Either all outputs appear or none.
//! - Temporary files and staging folders in progress are registered, so that a signal handler
//!   can remove them ([`remove_pending_outputs`]) before the process exits.

use std::cell::RefCell;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::Mutex;

use crate::error::{Error, Result};

static COUNTER: AtomicU64 = AtomicU64::new(0);

/// Temporary files and staging folders that exist only while their write is in progress.
static PENDING: Mutex<Vec<PathBuf>> = Mutex::new(Vec::new());

fn pending() -> std::sync::MutexGuard<'static, Vec<PathBuf>> {
    PENDING.lock().unwrap_or_else(|p| p.into_inner())
}

/// Registers a temporary file or staging folder for [`remove_pending_outputs`].
pub fn register_pending(path: &Path) {
    pending().push(path.to_path_buf());
}

/// Forgets a path registered with [`register_pending`] (it was committed or removed).
pub fn unregister_pending(path: &Path) {
    let mut list = pending();
    if let Some(i) = list.iter().rposition(|p| p == path) {
        list.swap_remove(i);
    }
}

/// Held while outputs are moved into place, so that an interrupt waits for a publication
/// that has begun: outputs appear all together or not at all, signal or not.
static PUBLISHING: Mutex<()> = Mutex::new(());

/// The publication lock (see [`remove_pending_outputs`]); hold it while renaming a set of
/// outputs into place.
pub fn publishing() -> std::sync::MutexGuard<'static, ()> {
    PUBLISHING.lock().unwrap_or_else(|p| p.into_inner())
}

/// Removes every temporary file and staging folder still in progress; returns how many were
/// removed. Called from the command line's SIGINT/SIGTERM handler just before it exits, so an
/// interrupted command leaves nothing behind. A publication under way is finished first, and
/// the lock stays held, so no new one starts before the process exits.
pub fn remove_pending_outputs() -> usize {
    std::mem::forget(publishing());
    let list: Vec<PathBuf> = std::mem::take(&mut *pending());
    let mut removed = 0;
    for p in list {
        let gone = match std::fs::symlink_metadata(&p) {
            Ok(m) if m.is_dir() => std::fs::remove_dir_all(&p).is_ok(),
            Ok(_) => std::fs::remove_file(&p).is_ok(),
            Err(_) => false,
        };
        removed += usize::from(gone);
    }
    removed
}

/// What a path names on disk, for the output rule.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TargetKind {
    Absent,
    RegularFile,
    Directory,
    SymbolicLink,
    Fifo,
    CharacterDevice,
    BlockDevice,
    Socket,
    Other,
}

impl TargetKind {
    /// The kind of `path` itself (a symbolic link is not followed).
    pub fn of(path: &Path) -> TargetKind {
        let Ok(meta) = std::fs::symlink_metadata(path) else {
            return TargetKind::Absent;
        };
        let t = meta.file_type();
        if t.is_symlink() {
            return TargetKind::SymbolicLink;
        }
        if t.is_file() {
            return TargetKind::RegularFile;
        }
        if t.is_dir() {
            return TargetKind::Directory;
        }
        #[cfg(unix)]
        {
            use std::os::unix::fs::FileTypeExt;
            if t.is_fifo() {
                return TargetKind::Fifo;
            }
            if t.is_char_device() {
                return TargetKind::CharacterDevice;
            }
            if t.is_block_device() {
                return TargetKind::BlockDevice;
            }
            if t.is_socket() {
                return TargetKind::Socket;
            }
        }
        TargetKind::Other
    }

    /// Words for messages.
    pub fn describe(self) -> &'static str {
        match self {
            TargetKind::Absent => "absent",
            TargetKind::RegularFile => "a regular file",
            TargetKind::Directory => "a directory",
            TargetKind::SymbolicLink => "a symbolic link",
            TargetKind::Fifo => "a FIFO (named pipe)",
            TargetKind::CharacterDevice => "a character device",
            TargetKind::BlockDevice => "a block device",
            TargetKind::Socket => "a socket",
            TargetKind::Other => "not a regular file",
        }
    }
}

/// The output rule for one target path: it must be absent or a regular file (which is then
/// replaced). Anything else is refused naming its kind, so that `-o /dev/null`, a FIFO or a
/// link never gets replaced by a regular file. The folder must exist.
pub fn check_output_target(path: &Path) -> Result<()> {
    if path.file_name().is_none() {
        return Err(Error::invalid(format!(
            "output path '{}' has no file name",
            path.display()
        )));
    }
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
    match TargetKind::of(path) {
        TargetKind::Absent | TargetKind::RegularFile => Ok(()),
        kind => Err(Error::invalid(format!(
            "output '{}' is {}; kugel writes and replaces only regular files, choose a file name",
            path.display(),
            kind.describe()
        ))),
    }
}

/// Removes the temporary file on drop unless the write was committed (covers errors and panics).
struct TempGuard {
    path: PathBuf,
    committed: bool,
}

impl TempGuard {
    fn new(path: PathBuf) -> TempGuard {
        register_pending(&path);
        TempGuard {
            path,
            committed: false,
        }
    }

    fn commit(mut self) {
        self.committed = true;
        unregister_pending(&self.path);
    }
}

impl Drop for TempGuard {
    fn drop(&mut self) {
        if !self.committed {
            let _ = std::fs::remove_file(&self.path);
            unregister_pending(&self.path);
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

/// Staged files of the open [`OutputGroup`] of this thread, if one is open.
struct GroupState {
    staged: Vec<(TempGuard, PathBuf)>,
}

thread_local! {
    static GROUP: RefCell<Option<GroupState>> = const { RefCell::new(None) };
}

/// All-or-nothing publication of a command's outputs (see the module documentation).
///
/// ```no_run
/// # fn demo() -> kugel::error::Result<()> {
/// use kugel::io::atomic::{write_bytes_atomic, OutputGroup};
/// let group = OutputGroup::begin()?;
/// write_bytes_atomic("a.csv".as_ref(), b"x")?; // staged, not yet visible
/// write_bytes_atomic("b.svg".as_ref(), b"y")?;
/// let written = group.publish()?; // both appear, or (on error) neither
/// # Ok(()) }
/// ```
pub struct OutputGroup {
    _not_send: std::marker::PhantomData<*const ()>,
}

impl OutputGroup {
    /// Opens the group of this thread; refuses a second, nested one.
    pub fn begin() -> Result<OutputGroup> {
        GROUP.with(|g| {
            let mut g = g.borrow_mut();
            if g.is_some() {
                return Err(Error::invalid(
                    "internal: an output group is already open on this thread",
                ));
            }
            *g = Some(GroupState { staged: Vec::new() });
            Ok(OutputGroup {
                _not_send: std::marker::PhantomData,
            })
        })
    }

    /// Checks every target again and moves every staged file into place, in the order they
    /// were written; returns the published paths. Nothing is moved when a check fails.
    pub fn publish(self) -> Result<Vec<PathBuf>> {
        let state = GROUP.with(|g| g.borrow_mut().take());
        let Some(state) = state else {
            return Ok(Vec::new());
        };
        let _publishing = publishing();
        for (_, target) in &state.staged {
            check_output_target(target)?;
        }
        let mut published = Vec::with_capacity(state.staged.len());
        for (guard, target) in state.staged {
            std::fs::rename(&guard.path, &target).map_err(|e| Error::io(&target, e))?;
            guard.commit();
            published.push(target);
        }
        Ok(published)
    }
}

impl Drop for OutputGroup {
    fn drop(&mut self) {
        // unpublished: the staged temporary files go with their guards
        GROUP.with(|g| g.borrow_mut().take());
    }
}

/// Writes `path` atomically: `write` receives a temporary path beside `path` and must create
/// the complete file there; on success it is renamed onto `path` (or, inside an
/// [`OutputGroup`], staged for the group's publication), on error (or panic) the temporary file
/// is removed and `path` is left untouched. The target must pass [`check_output_target`].
pub fn write_atomic(path: &Path, write: impl FnOnce(&Path) -> Result<()>) -> Result<()> {
    check_output_target(path)?;
    let tmp = temporary_path_for(path)?;
    let guard = TempGuard::new(tmp.clone());
    write(&tmp)?;
    if !tmp.exists() {
        return Err(Error::io(
            path,
            std::io::Error::other("the writer produced no file"),
        ));
    }
    if GROUP.with(|g| g.borrow().is_some()) {
        GROUP.with(|g| {
            if let Some(state) = g.borrow_mut().as_mut() {
                state.staged.push((guard, path.to_path_buf()));
            }
        });
        return Ok(());
    }
    let _publishing = publishing();
    check_output_target(path)?;
    std::fs::rename(&tmp, path).map_err(|e| Error::io(path, e))?;
    guard.commit();
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
/// relative paths and links), so that a command can never overwrite its own input, or when it
/// breaks the output rule ([`check_output_target`]). Commands call it before any work.
pub fn refuse_overwrite_of_input(output: &Path, inputs: &[&Path]) -> Result<()> {
    check_output_target(output)?;
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
