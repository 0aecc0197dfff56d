//! Working buffers kept between calls. The analysis of a user's array first copies it into
//! engine order (one map of doubles); a fresh map-sized allocation is memory the system hands
//! out page by page on first touch, which at L = 255 costs a few percent of the transform.
//! The last few buffers are kept here and reused, up to a size limit, so a loop over maps of
//! one shape touches the same pages every time. Only working copies come from here: nothing
//! handed to numpy does.

use std::sync::{Mutex, MutexGuard};

/// Buffers kept (two threads analysing at once each find one).
const KEPT: usize = 2;
/// The largest buffer kept: 2^26 doubles (512 MiB, a degree-4095 Gauss map is 268 MiB);
/// bigger ones go back to the system at once.
const KEPT_MAX_LEN: usize = 1 << 26;

static SPARE: Mutex<Vec<Vec<f64>>> = Mutex::new(Vec::new());

fn spare() -> MutexGuard<'static, Vec<Vec<f64>>> {
    // a buffer list is never left half-changed, so a panic elsewhere does not spoil it
    SPARE.lock().unwrap_or_else(|p| p.into_inner())
}

/// A buffer to write into (empty; its capacity is whatever an earlier call left).
pub fn take() -> Vec<f64> {
    spare().pop().unwrap_or_default()
}

/// Returns a buffer for a later call, or frees it when enough are kept or it is too large.
pub fn give_back(buffer: Vec<f64>) {
    if buffer.capacity() > KEPT_MAX_LEN {
        return;
    }
    let mut spare = spare();
    if spare.len() < KEPT {
        spare.push(buffer);
    }
}
