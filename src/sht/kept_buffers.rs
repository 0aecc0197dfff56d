//! Working buffers a plan keeps between analyses: the ring spectra of one chunk of rings, as
//! the FFTs leave them and order-major.
//!
//! Why: made fresh per call, each buffer was zero-filled element by element (about 5 % of a
//! degree-255 analysis in perf profiles) and, when large, faulted in page by page. Every entry
//! an analysis reads is written first in that same analysis (the FFT stage writes every ring
//! row of the chunk, the transpose every order-major entry), so kept buffers give the same
//! doubles as zeroed ones.
//!
//! A plan keeps at most one set, of at most [`MAX_KEPT_BYTES`]; an analysis that finds the set
//! taken (another thread analysing with the same plan) or too small makes its own, and the
//! larger set is kept at the end.

use std::sync::Mutex;

use realfft::num_complex::Complex64;

use super::filled::filled_vec;

/// The most bytes of spectra a plan keeps after an analysis (every ring's spectra, both
/// copies, up to about degree 1400; larger ones are left to the allocator).
pub const MAX_KEPT_BYTES: usize = 64 << 20;

/// The two spectra buffers of an analysis, each of the same length.
#[derive(Default)]
pub struct SpectraBuffers {
    pub by_ring: Vec<Complex64>,
    pub by_order: Vec<Complex64>,
}

impl SpectraBuffers {
    fn bytes(&self) -> usize {
        (self.by_ring.len() + self.by_order.len()) * std::mem::size_of::<Complex64>()
    }
}

/// The set a plan keeps (see the module notes).
#[derive(Default)]
pub struct KeptSpectra {
    kept: Mutex<Option<SpectraBuffers>>,
}

impl KeptSpectra {
    /// Buffers of at least `len` entries each: the kept ones when they are free and large
    /// enough, else new ones (zero-filled once).
    pub fn take(&self, len: usize) -> SpectraBuffers {
        let kept = self.kept.lock().ok().and_then(|mut k| k.take());
        match kept {
            Some(b) if b.by_ring.len() >= len => b,
            // none free, or too small (the new, larger set replaces it when given back)
            _ => SpectraBuffers {
                by_ring: filled_vec(Complex64::new(0.0, 0.0), len),
                by_order: filled_vec(Complex64::new(0.0, 0.0), len),
            },
        }
    }

    /// Keeps `buffers` for the next analysis if they are within [`MAX_KEPT_BYTES`] and larger
    /// than what is kept already; otherwise they are freed.
    pub fn give_back(&self, buffers: SpectraBuffers) {
        if buffers.bytes() > MAX_KEPT_BYTES {
            return;
        }
        if let Ok(mut kept) = self.kept.lock() {
            let larger = kept.as_ref().is_none_or(|k| k.bytes() < buffers.bytes());
            if larger {
                *kept = Some(buffers);
            }
        }
    }

    /// Bytes kept now.
    #[cfg(test)]
    pub fn bytes(&self) -> usize {
        self.kept
            .lock()
            .ok()
            .and_then(|k| k.as_ref().map(SpectraBuffers::bytes))
            .unwrap_or(0)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_kept_set_is_reused_when_large_enough_and_bounded() {
        let kept = KeptSpectra::default();
        let mut b = kept.take(100);
        assert_eq!(b.by_ring.len(), 100);
        b.by_ring[7] = Complex64::new(1.0, 2.0);
        let at = b.by_ring.as_ptr();
        kept.give_back(b);
        assert_eq!(kept.bytes(), 2 * 100 * 16);
        // a smaller request reuses the set (its entries are the caller's to overwrite)
        let b = kept.take(50);
        assert_eq!(b.by_ring.as_ptr(), at);
        assert_eq!(kept.bytes(), 0, "taken");
        kept.give_back(b);
        // a larger one gets a new set; the larger set is kept afterwards
        let big = kept.take(200);
        assert_eq!(big.by_ring.len(), 200);
        assert!(big.by_ring.iter().all(|z| *z == Complex64::new(0.0, 0.0)));
        kept.give_back(big);
        assert_eq!(kept.bytes(), 2 * 200 * 16);
        // beyond the bound nothing is kept
        let huge = SpectraBuffers {
            by_ring: vec![Complex64::new(0.0, 0.0); MAX_KEPT_BYTES / 16],
            by_order: vec![Complex64::new(0.0, 0.0); 1],
        };
        kept.give_back(huge);
        assert_eq!(kept.bytes(), 2 * 200 * 16);
    }
}
