//! Large working buffers of one value, written by every thread of the pool.
//!
//! Why: an analysis's ring spectra beyond what the plan keeps (`kept_buffers`; 256 MiB at
//! L = 4095) were filled element by element on one core, faulting their fresh pages in one by
//! one. Filled in parallel, the writes and the page faults are shared out; the values are the
//! same. (Output grids stay `Array2::zeros`: fresh zeroed pages from the system cost nothing
//! until the synthesis writes them, in parallel, and a parallel fill measured no better.)

use rayon::prelude::*;

/// Below this many bytes one thread fills the buffer (a parallel fill would cost more to
/// hand out than it saves).
const PARALLEL_FILL_BYTES: usize = 1 << 20;

/// A vector of `len` copies of `value`, written by all threads of the current pool when it is
/// large.
pub(crate) fn filled_vec<T: Copy + Send + Sync>(value: T, len: usize) -> Vec<T> {
    if len * std::mem::size_of::<T>() < PARALLEL_FILL_BYTES {
        return vec![value; len];
    }
    let mut out = Vec::with_capacity(len);
    // an indexed parallel iterator of known length is written straight into the capacity
    out.par_extend(rayon::iter::repeat_n(value, len));
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn small_and_large_buffers_hold_the_value_everywhere() {
        for len in [0, 1, 1000, (PARALLEL_FILL_BYTES / 8) + 3, 3 << 20] {
            let v = filled_vec(2.5f64, len);
            assert_eq!(v.len(), len);
            assert!(v.iter().all(|&x| x == 2.5), "len {len}");
        }
    }
}
