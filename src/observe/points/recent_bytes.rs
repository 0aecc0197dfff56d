//! A pass-through reader that remembers the last few kilobytes it delivered.
//!
//! The CSV reader needs one fact its parser does not expose: whether the byte that ended a
//! record was a line feed (a `\n` terminator, already counted as a line) or something else
//! (`\r` of a CRLF pair, whose `\n` is counted with the next record, or the end of the file).
//! The parser reads ahead by at most its buffer capacity, so a window a little larger than
//! that buffer always still holds the byte in question. Memory stays fixed whatever the file
//! size.

use std::io::Read;

/// Wraps a reader and keeps the last `window` bytes it delivered.
#[derive(Debug)]
pub struct RecentBytes<R> {
    inner: R,
    /// Ring buffer: the byte at stream offset `o` lives at `ring[o % ring.len()]` while
    /// `o + ring.len() > delivered`.
    ring: Vec<u8>,
    delivered: u64,
    reached_end: bool,
    last_non_line_break: Option<u8>,
}

impl<R: Read> RecentBytes<R> {
    /// Keeps the last `window` bytes (window > 0).
    pub fn new(inner: R, window: usize) -> RecentBytes<R> {
        RecentBytes {
            inner,
            ring: vec![0; window.max(1)],
            delivered: 0,
            reached_end: false,
            last_non_line_break: None,
        }
    }

    /// The byte at stream offset `offset`, if it is still in the window.
    pub fn byte_at(&self, offset: u64) -> Option<u8> {
        let window = self.ring.len() as u64;
        if offset >= self.delivered || offset + window < self.delivered {
            return None;
        }
        Some(self.ring[(offset % window) as usize])
    }

    /// Bytes delivered so far.
    pub fn delivered(&self) -> u64 {
        self.delivered
    }

    /// Whether the inner reader has reported the end of its data.
    pub fn reached_end(&self) -> bool {
        self.reached_end
    }

    /// The last byte delivered that is neither `\r` nor `\n`.
    pub fn last_non_line_break(&self) -> Option<u8> {
        self.last_non_line_break
    }
}

impl<R: Read> Read for RecentBytes<R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        let n = self.inner.read(buf)?;
        if n == 0 && !buf.is_empty() {
            self.reached_end = true;
        }
        let window = self.ring.len();
        // Only the last `window` bytes of a long read can matter.
        let skip = n.saturating_sub(window);
        let mut at = ((self.delivered + skip as u64) % window as u64) as usize;
        let mut rest = &buf[skip..n];
        while !rest.is_empty() {
            let take = rest.len().min(window - at);
            self.ring[at..at + take].copy_from_slice(&rest[..take]);
            rest = &rest[take..];
            at = (at + take) % window;
        }
        if let Some(&b) = buf[..n].iter().rev().find(|&&b| b != b'\n' && b != b'\r') {
            self.last_non_line_break = Some(b);
        }
        self.delivered += n as u64;
        Ok(n)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn keeps_exactly_the_last_window_bytes() {
        let data: Vec<u8> = (0..=255u8).cycle().take(1000).collect();
        let mut r = RecentBytes::new(&data[..], 64);
        let mut buf = [0u8; 37];
        while r.read(&mut buf).unwrap() > 0 {}
        assert!(r.reached_end());
        assert_eq!(r.delivered(), 1000);
        for offset in 0..1000u64 {
            let expected = (offset + 64 >= 1000).then(|| data[offset as usize]);
            assert_eq!(r.byte_at(offset), expected, "offset {offset}");
        }
        assert_eq!(r.byte_at(1000), None);
    }

    #[test]
    fn remembers_the_last_byte_before_line_breaks() {
        let mut r = RecentBytes::new(&b"a,\"b\"\r\n\n"[..], 4);
        let mut buf = [0u8; 3];
        while r.read(&mut buf).unwrap() > 0 {}
        assert_eq!(r.last_non_line_break(), Some(b'"'));
    }
}
