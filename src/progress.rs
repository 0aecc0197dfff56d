//! Progress of long library steps, reported through a small trait that the front ends implement
//! (terminal bars in the command line, nothing in tests or from Python).
//!
//! The library never draws anything itself: it only says which stage it is in and how far that
//! stage has come. Clearing a display is the business of the front end that made it. Worker threads call [`Progress::advance`] concurrently, so implementations
//! must be `Sync` and cheap (an atomic add or a rate-limited redraw).

/// Receiver of progress reports. Every method has an empty default, so an implementation picks
/// only what it displays.
pub trait Progress: Sync {
    /// A new stage named `label` with `total` units of work (0 when the total is not known).
    /// The count of the previous stage is discarded.
    fn stage(&self, _label: &str, _total: u64) {}

    /// What is being worked on now, within the current stage (e.g. the pipeline step's name).
    fn note(&self, _message: &str) {}

    /// `units` more units of the current stage are done.
    fn advance(&self, _units: u64) {}
}

/// Reports nothing: for tests, library callers that do not display progress, and quiet runs.
#[derive(Debug, Clone, Copy, Default)]
pub struct Silent;

impl Progress for Silent {}

#[cfg(test)]
mod tests {
    use super::*;
    use std::sync::atomic::{AtomicU64, Ordering};

    /// Counts units from several threads, as the gridding and assembly loops report them.
    struct Counter(AtomicU64);

    impl Progress for Counter {
        fn advance(&self, units: u64) {
            self.0.fetch_add(units, Ordering::Relaxed);
        }
    }

    #[test]
    fn advances_from_worker_threads_add_up() {
        let counter = Counter(AtomicU64::new(0));
        std::thread::scope(|scope| {
            for _ in 0..4 {
                scope.spawn(|| {
                    for _ in 0..1000 {
                        counter.advance(1);
                    }
                });
            }
        });
        assert_eq!(counter.0.load(Ordering::Relaxed), 4000);
        // the silent receiver accepts every call (nothing to observe but that it compiles and runs)
        Silent.stage("x", 3);
    }
}
