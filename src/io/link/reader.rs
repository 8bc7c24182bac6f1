//! Bytes off a serial line into frames, one byte at a time, in a fixed
//! buffer.

use crate::io::link::frame::{parse, Frame, MAX_ENCODED};
use crate::io::link::LinkError;

/// Undoes COBS in place on one encoded frame without its delimiter;
/// returns the length of the raw frame at the start of `bytes`.
pub fn decode_cobs(bytes: &mut [u8]) -> Result<usize, LinkError> {
    corncobs::decode_in_place(bytes).map_err(|_| LinkError::Cobs)
}

/// Collects the bytes of one frame up to its `0x00` delimiter, then
/// decodes and parses it. Holds at most [`MAX_ENCODED`] bytes; a longer
/// run is dropped up to the next delimiter and reported as
/// [`LinkError::TooLong`]. Zeros with nothing before them (idle line,
/// resynchronisation) are skipped.
#[derive(Clone, Debug)]
pub struct FrameReader {
    buf: [u8; MAX_ENCODED],
    len: usize,
    overflow: bool,
}

impl Default for FrameReader {
    fn default() -> Self {
        Self::new()
    }
}

impl FrameReader {
    /// An empty reader.
    pub const fn new() -> Self {
        Self {
            buf: [0; MAX_ENCODED],
            len: 0,
            overflow: false,
        }
    }

    /// Takes one byte; at a delimiter returns the frame that ended there,
    /// or why it was refused. The frame borrows the reader's buffer until
    /// the next call.
    pub fn push(&mut self, byte: u8) -> Option<Result<Frame<'_>, LinkError>> {
        if byte != 0 {
            match self.buf.get_mut(self.len) {
                Some(slot) if !self.overflow => {
                    *slot = byte;
                    self.len += 1;
                }
                _ => self.overflow = true,
            }
            return None;
        }
        let len = core::mem::take(&mut self.len);
        if core::mem::take(&mut self.overflow) {
            return Some(Err(LinkError::TooLong));
        }
        if len == 0 {
            return None;
        }
        let encoded = self.buf.get_mut(..len)?;
        Some(decode_cobs(encoded).and_then(|n| parse(encoded.get(..n).unwrap_or_default())))
    }
}
