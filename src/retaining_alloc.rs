//! An allocator for front ends that call the engine in a loop (the Python module installs it
//! as its global allocator): the system allocator, except that large blocks freed by the
//! front end's own Rust code (a map handed to numpy and dropped by Python, a transform's working
//! arrays) are kept for the next request of the same size instead of being returned at once.
//!
//! Why: the system allocator serves blocks of a map's size (about 1 MiB at L = 255) with
//! fresh memory mappings and unmaps them on free, so a loop that alternates, say, synthesis
//! and analysis pays every call for new pages, faulted in one by one, and for the unmapping
//! (measured on a 2-core virtual machine at L = 255: an analysis after a synthesis took 4.4 ms
//! instead of 2.6 ms, and 2.6 ms again when the C allocator was told to keep its memory). The
//! engine's numbers are unchanged: only where the bytes come from differs.
//!
//! Bounds: only blocks of at least [`MIN_KEPT_BYTES`] are kept, at most [`KEPT_BLOCKS`] of
//! them and [`MAX_KEPT_BYTES`] in all; the rest go back to the system as before. Python's own
//! objects and numpy's arrays use their own allocators and are not affected.

use std::alloc::{GlobalAlloc, Layout, System};
use std::sync::Mutex;

/// Blocks smaller than this are served by the system allocator's own pools as usual.
pub const MIN_KEPT_BYTES: usize = 256 * 1024;
/// At most this many freed blocks are kept.
pub const KEPT_BLOCKS: usize = 16;
/// At most this many bytes are kept in all.
pub const MAX_KEPT_BYTES: usize = 256 * 1024 * 1024;

struct Kept {
    blocks: [(usize, usize, usize); KEPT_BLOCKS],
    count: usize,
    bytes: usize,
}

/// The allocator (see the module notes).
pub struct RetainingAlloc {
    kept: Mutex<Kept>,
}

impl RetainingAlloc {
    pub const fn new() -> Self {
        RetainingAlloc {
            kept: Mutex::new(Kept {
                blocks: [(0, 0, 0); KEPT_BLOCKS],
                count: 0,
                bytes: 0,
            }),
        }
    }

    /// A kept block of exactly this layout, removed from the list.
    fn take(&self, layout: Layout) -> Option<*mut u8> {
        if layout.size() < MIN_KEPT_BYTES {
            return None;
        }
        let mut kept = self.kept.lock().ok()?;
        let count = kept.count;
        let i = kept.blocks[..count]
            .iter()
            .position(|&(_, size, align)| size == layout.size() && align == layout.align())?;
        let (ptr, size, _) = kept.blocks[i];
        kept.blocks[i] = kept.blocks[count - 1];
        kept.count -= 1;
        kept.bytes -= size;
        Some(ptr as *mut u8)
    }

    /// Keeps a freed block when there is room; false when the caller must free it.
    fn keep(&self, ptr: *mut u8, layout: Layout) -> bool {
        if layout.size() < MIN_KEPT_BYTES {
            return false;
        }
        let Ok(mut kept) = self.kept.lock() else {
            return false;
        };
        if kept.count == KEPT_BLOCKS || kept.bytes + layout.size() > MAX_KEPT_BYTES {
            return false;
        }
        let count = kept.count;
        kept.blocks[count] = (ptr as usize, layout.size(), layout.align());
        kept.count += 1;
        kept.bytes += layout.size();
        true
    }
}

impl Default for RetainingAlloc {
    fn default() -> Self {
        Self::new()
    }
}

// SAFETY: every block handed out comes from `System` with the same layout it is asked for
// (kept blocks are reused only for an identical size and alignment), and every block is
// either kept (and later handed out once, being removed from the list under the lock) or
// returned to `System` with the layout it was allocated with.
unsafe impl GlobalAlloc for RetainingAlloc {
    unsafe fn alloc(&self, layout: Layout) -> *mut u8 {
        match self.take(layout) {
            Some(ptr) => ptr,
            None => System.alloc(layout),
        }
    }

    unsafe fn alloc_zeroed(&self, layout: Layout) -> *mut u8 {
        match self.take(layout) {
            Some(ptr) => {
                std::ptr::write_bytes(ptr, 0, layout.size());
                ptr
            }
            None => System.alloc_zeroed(layout),
        }
    }

    unsafe fn dealloc(&self, ptr: *mut u8, layout: Layout) {
        if !self.keep(ptr, layout) {
            System.dealloc(ptr, layout);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_freed_large_block_serves_the_next_request_of_its_size_zeroed() {
        let a = RetainingAlloc::new();
        let layout = Layout::from_size_align(MIN_KEPT_BYTES, 8).unwrap();
        unsafe {
            let p = a.alloc(layout);
            std::ptr::write_bytes(p, 0xAB, layout.size());
            a.dealloc(p, layout);
            let q = a.alloc_zeroed(layout);
            assert_eq!(q, p);
            assert!(std::slice::from_raw_parts(q, layout.size())
                .iter()
                .all(|&b| b == 0));
            // another size is not served from the kept block
            let other = Layout::from_size_align(MIN_KEPT_BYTES + 8, 8).unwrap();
            let r = a.alloc(other);
            assert_ne!(r, q);
            a.dealloc(r, other);
            a.dealloc(q, layout);
        }
    }
}
