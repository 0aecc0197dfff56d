//! Scratch kept per worker thread for the length of one parallel loop over orders.
//!
//! The loops over orders run one rayon task per order (`with_max_len(1)`, so that orders of
//! very different cost balance across threads). With `for_each_init` the scratch would then
//! be made, and its arrays zeroed, once per order: at L = 255 that was about a tenth of an
//! analysis. Here each worker thread makes its scratch on first use and keeps it for the
//! loop's remaining orders. A kernel sets every entry of the scratch it reads for an order
//! (recursion coefficients from the order's column start, coefficient runs, per-chunk sums
//! zeroed before use), so a reused scratch gives the same bits as a new one; the all-paths
//! kernel test (`tests/sht/kernel_accuracy.rs`) and the reference comparisons hold that.

use std::sync::Mutex;

/// One slot per thread of the rayon pool the loop runs on.
pub(crate) struct PerThread<S> {
    slots: Vec<Mutex<Option<S>>>,
}

impl<S> PerThread<S> {
    /// Slots for the threads of the current pool (the one a parallel loop started here uses).
    pub(crate) fn for_current_pool() -> Self {
        PerThread {
            slots: (0..rayon::current_num_threads())
                .map(|_| Mutex::new(None))
                .collect(),
        }
    }

    /// Runs `body` with this thread's scratch, made by `init` on the thread's first call.
    /// A thread outside the pool, or one whose slot is busy (a task of the same loop stolen
    /// while this thread waits inside `body`), gets a scratch of its own for the call, so no
    /// call ever waits for a slot.
    pub(crate) fn with<R>(&self, init: impl FnOnce() -> S, body: impl FnOnce(&mut S) -> R) -> R {
        let slot = rayon::current_thread_index()
            .and_then(|i| self.slots.get(i))
            .and_then(|slot| slot.try_lock().ok());
        match slot {
            Some(mut slot) => body(slot.get_or_insert_with(init)),
            None => body(&mut init()),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use rayon::prelude::*;
    use std::sync::atomic::{AtomicUsize, Ordering};

    #[test]
    fn each_thread_makes_its_scratch_once_per_loop() {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(3)
            .build()
            .unwrap();
        let made = AtomicUsize::new(0);
        let total: usize = pool.install(|| {
            let per_thread = PerThread::for_current_pool();
            (0..1000usize)
                .into_par_iter()
                .with_max_len(1)
                .map(|k| {
                    per_thread.with(
                        || {
                            made.fetch_add(1, Ordering::Relaxed);
                            Vec::<usize>::new()
                        },
                        |seen| {
                            seen.push(k);
                            k
                        },
                    )
                })
                .sum()
        });
        assert_eq!(total, 999 * 1000 / 2);
        // one per worker thread at most, instead of one per task
        assert!(
            made.load(Ordering::Relaxed) <= 3,
            "{}",
            made.load(Ordering::Relaxed)
        );
    }

    #[test]
    fn a_call_from_outside_the_pool_gets_a_scratch_of_its_own() {
        let per_thread: PerThread<Vec<u8>> = PerThread { slots: Vec::new() };
        assert_eq!(per_thread.with(|| vec![7], |s| s[0]), 7);
    }
}
