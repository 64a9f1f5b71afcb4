//! Exact, offset-counting reads from the underlying [`Read`].
//!
//! The container reader never reads past what the format tells it to: frame
//! fields are read one byte at a time (a few bytes per block) and payloads
//! with reads of the declared length, so when the end record has been read
//! the inner reader is positioned just after it. `Interrupted` is retried;
//! an end of input is reported as [`ErrorKind::Truncated`] with the exact
//! offset. A payload buffer grows with the bytes that actually arrive
//! (in steps of at most 1 MiB), so a truncated stream that declares a large
//! block does not make the reader reserve the whole declared length first;
//! and it never grows past the declared length, so a payload buffer costs
//! at most one block size however block lengths vary.

use std::io::{self, Read};
use std::vec::Vec;

use crate::error::Result;
use crate::vint::{read_vint, VintError};

/// Largest step by which a payload buffer grows ahead of the data.
const GROW_STEP: usize = 1 << 20;

#[derive(Debug)]
pub(crate) struct Input<R> {
    inner: R,
    offset: u64,
    peeked: Option<u8>,
    /// Bytes of the frame being read, for its check value.
    captured: Vec<u8>,
}

impl<R: Read> Input<R> {
    pub(crate) fn new(inner: R) -> Self {
        Input {
            inner,
            offset: 0,
            peeked: None,
            captured: Vec::with_capacity(32),
        }
    }

    /// An input whose first byte is at `offset` of the container (for
    /// reads that start after a seek; offsets in errors stay absolute).
    pub(crate) fn at(inner: R, offset: u64) -> Self {
        Input {
            offset,
            ..Input::new(inner)
        }
    }

    /// Bytes consumed so far (plus the starting offset).
    pub(crate) fn offset(&self) -> u64 {
        self.offset
    }

    pub(crate) fn get_ref(&self) -> &R {
        &self.inner
    }

    pub(crate) fn get_mut(&mut self) -> &mut R {
        &mut self.inner
    }

    pub(crate) fn into_inner(self) -> R {
        self.inner
    }

    /// Starts capturing frame bytes afresh.
    pub(crate) fn start_capture(&mut self) {
        self.captured.clear();
    }

    /// The bytes read since [`start_capture`](Input::start_capture).
    pub(crate) fn captured(&self) -> &[u8] {
        &self.captured
    }

    /// The next byte, or `None` at the end of input (not captured).
    pub(crate) fn try_byte(&mut self) -> Result<Option<u8>> {
        if let Some(b) = self.peeked.take() {
            self.offset += 1;
            return Ok(Some(b));
        }
        let mut b = [0u8; 1];
        loop {
            match self.inner.read(&mut b) {
                Ok(0) => return Ok(None),
                Ok(_) => {
                    self.offset += 1;
                    return Ok(Some(b[0]));
                }
                Err(e) if e.kind() == io::ErrorKind::Interrupted => continue,
                Err(e) => return Err(e.into()),
            }
        }
    }

    /// Whether input remains; reads at most one byte ahead and keeps it.
    pub(crate) fn at_end(&mut self) -> Result<bool> {
        if self.peeked.is_some() {
            return Ok(false);
        }
        match self.try_byte()? {
            Some(b) => {
                self.offset -= 1;
                self.peeked = Some(b);
                Ok(false)
            }
            None => Ok(true),
        }
    }

    fn truncated(&self) -> crate::Error {
        crate::Error::truncated(self.offset)
    }

    /// The next byte, captured; the end of input is an error.
    pub(crate) fn byte(&mut self) -> Result<u8> {
        let b = self.try_byte()?.ok_or_else(|| self.truncated())?;
        self.captured.push(b);
        Ok(b)
    }

    /// A little-endian `u32`, captured.
    pub(crate) fn u32_le(&mut self) -> Result<u32> {
        let mut v = [0u8; 4];
        for b in &mut v {
            *b = self.byte()?;
        }
        Ok(u32::from_le_bytes(v))
    }

    /// A vint, captured. `what` names the field for a malformed one.
    pub(crate) fn vint(&mut self, what: &'static str) -> Result<u64> {
        let start = self.offset;
        let mut failure = None;
        let v = read_vint(|| match self.byte() {
            Ok(b) => Some(b),
            Err(e) => {
                failure = Some(e);
                None
            }
        });
        match v {
            Ok(v) => Ok(v),
            Err(_) if failure.is_some() => Err(failure.unwrap_or_else(|| self.truncated())),
            Err(VintError::Truncated) => Err(self.truncated()),
            Err(VintError::Malformed) => Err(crate::Error::corrupt_stream(start, what)),
        }
    }

    /// Replaces `buf` with the next `len` bytes (not captured).
    ///
    /// The buffer's capacity never passes `len` (growth doubles with the
    /// data that arrives but stops at the declared length), and a buffer too
    /// small for the first step is dropped before its replacement is
    /// allocated, so old and new never live at once.
    pub(crate) fn fill(&mut self, buf: &mut Vec<u8>, len: usize) -> Result<()> {
        if buf.capacity() < len.min(GROW_STEP) {
            *buf = Vec::new();
        }
        // Bytes the buffer already holds (a recycled buffer's earlier
        // contents) are read over in place; only bytes it never held are
        // zeroed before the read.
        let mut have = 0;
        if let Some(b) = self.peeked.take() {
            if len == 0 {
                self.peeked = Some(b);
                buf.clear();
                return Ok(());
            }
            match buf.first_mut() {
                Some(first) => *first = b,
                None => buf.push(b),
            }
            have = 1;
            self.offset += 1;
        }
        while have < len {
            let want = (len - have).min(GROW_STEP);
            if buf.len() < have + want {
                if buf.capacity() < have + want {
                    let cap = (have + want).max(have.saturating_mul(2)).min(len);
                    buf.reserve_exact(cap - buf.len());
                }
                buf.resize(have + want, 0);
            }
            let mut got = 0;
            while got < want {
                match self.inner.read(&mut buf[have + got..have + want]) {
                    Ok(0) => {
                        buf.truncate(have + got);
                        return Err(self.truncated());
                    }
                    Ok(n) => {
                        got += n;
                        self.offset += n as u64;
                    }
                    Err(e) if e.kind() == io::ErrorKind::Interrupted => continue,
                    Err(e) => {
                        buf.truncate(have + got);
                        return Err(e.into());
                    }
                }
            }
            have += want;
        }
        buf.truncate(len);
        Ok(())
    }
}

impl<'a> Input<&'a [u8]> {
    /// The next `len` bytes borrowed from the input instead of copied (not
    /// captured), or `None` when a peeked byte stands before them (the
    /// caller then reads them with [`fill`](Input::fill)).
    ///
    /// # Errors
    ///
    /// [`ErrorKind::Truncated`] at the offset where the input ends, when it
    /// holds fewer than `len` bytes.
    pub(crate) fn take_slice(&mut self, len: usize) -> Result<Option<&'a [u8]>> {
        if self.peeked.is_some() {
            return Ok(None);
        }
        if self.inner.len() < len {
            self.offset += self.inner.len() as u64;
            self.inner = &self.inner[self.inner.len()..];
            return Err(self.truncated());
        }
        let (taken, rest) = self.inner.split_at(len);
        self.inner = rest;
        self.offset += len as u64;
        Ok(Some(taken))
    }
}

impl<R: Read> Input<R> {
    /// Counts the bytes left, reading at most `max` of them.
    pub(crate) fn count_rest(&mut self, max: u64) -> Result<u64> {
        let mut n = 0;
        while n < max && self.try_byte()?.is_some() {
            n += 1;
        }
        Ok(n)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ErrorKind;
    use std::vec;

    #[test]
    fn exact_reads_and_offsets() {
        let data = [1u8, 0xAC, 0x02, 9, 8, 7, 6, 5];
        let mut input = Input::new(&data[..]);
        input.start_capture();
        assert_eq!(input.byte().unwrap(), 1);
        assert_eq!(input.vint("x").unwrap(), 300);
        assert_eq!(input.captured(), &[1, 0xAC, 0x02]);
        assert!(!input.at_end().unwrap());
        let mut buf = Vec::new();
        input.fill(&mut buf, 4).unwrap();
        assert_eq!(buf, [9, 8, 7, 6]);
        assert_eq!(input.offset(), 7);
        let err = input.fill(&mut buf, 2).unwrap_err();
        assert!(matches!(err.kind(), ErrorKind::Truncated { offset: 8 }));
    }

    #[test]
    fn fills_overwrite_a_recycled_buffer() {
        let data: Vec<u8> = (0..3000u32).map(|i| (i % 253) as u8).collect();
        let mut input = Input::new(&data[..]);
        // A buffer holding more, then less, than the next fill.
        let mut buf = vec![0xEE; 2500];
        input.fill(&mut buf, 1000).unwrap();
        assert_eq!(buf, data[..1000]);
        assert!(!input.at_end().unwrap()); // peeks a byte
        input.fill(&mut buf, 1500).unwrap();
        assert_eq!(buf, data[1000..2500]);
        assert_eq!(input.offset(), 2500);
        input.fill(&mut buf, 0).unwrap();
        assert!(buf.is_empty());
        let err = input.fill(&mut buf, 600).unwrap_err();
        assert!(matches!(err.kind(), ErrorKind::Truncated { offset: 3000 }));
        assert_eq!(buf, data[2500..]);
    }
}
