//! SIGINT and SIGTERM: an interrupted command removes its unfinished outputs (temporary files,
//! the run's staging folder and its output-folder lock, all registered by the library in
//! `kugel::io::atomic`) and exits with 128 + the signal number (130 for SIGINT, 143 for
//! SIGTERM), as shells do. A SIGKILL cannot be caught: what it leaves is removed, and
//! reported, by the next run on the same folder (`kugel::pipeline::outputs`).
//!
//! Signals are received by `signal-hook`'s iterator (a self-pipe read on a thread of its own;
//! pure Rust over `libc`, no C build step), so the cleanup runs in ordinary code, not in a
//! signal handler.

/// Installs the handler; without it (non-Unix) an interrupt leaves temporary files behind for
/// the next run to clean.
pub fn install() {
    #[cfg(unix)]
    {
        use signal_hook::consts::{SIGINT, SIGTERM};
        use signal_hook::iterator::Signals;
        let Ok(mut signals) = Signals::new([SIGINT, SIGTERM]) else {
            return;
        };
        std::thread::spawn(move || {
            if let Some(signal) = signals.forever().next() {
                let removed = kugel::io::atomic::remove_pending_outputs();
                let name = if signal == SIGINT {
                    "SIGINT"
                } else {
                    "SIGTERM"
                };
                eprintln!(
                    "\ninterrupted ({name}): removed {removed} unfinished output(s); no partial result was published"
                );
                std::process::exit(128 + signal);
            }
        });
    }
}
