//! Byte sources: where a decoder reads coded input.
//!
//! A source hands out bytes one at a time and says when it has none left;
//! it never invents bytes. The decoder decides what the end of input means
//! (see [`Decoder`](super::Decoder)). [`SliceSource`] reads a `&[u8]`; with the
//! `std` feature, `IoSource` reads any [`std::io::Read`] through a buffer.

use crate::error::Result;

/// A sequential source of coded bytes.
///
/// # Implementer notes
///
/// `take` returns `Ok(None)` at the end of input and keeps returning it;
/// `position` counts the bytes handed out so far.
pub trait ByteSource {
    /// The next byte, or `None` at the end of input.
    ///
    /// # Errors
    ///
    /// Whatever the underlying input reports (for `IoSource`, I/O errors).
    fn take(&mut self) -> Result<Option<u8>>;

    /// Number of bytes handed out so far.
    fn position(&self) -> u64;
}

impl<T: ByteSource + ?Sized> ByteSource for &mut T {
    #[inline]
    fn take(&mut self) -> Result<Option<u8>> {
        (**self).take()
    }

    fn position(&self) -> u64 {
        (**self).position()
    }
}

/// Reads coded bytes from a slice.
///
/// # Example
///
/// ```
/// use subrange::coder::{ByteSource, SliceSource};
///
/// let mut src = SliceSource::new(&[5, 6]);
/// assert_eq!(src.take().unwrap(), Some(5));
/// assert_eq!(src.remaining(), &[6]);
/// ```
#[derive(Debug, Clone)]
pub struct SliceSource<'a> {
    bytes: &'a [u8],
    pos: usize,
}

impl<'a> SliceSource<'a> {
    /// Reads `bytes` from the start.
    pub fn new(bytes: &'a [u8]) -> Self {
        SliceSource { bytes, pos: 0 }
    }

    /// The bytes not yet handed out.
    pub fn remaining(&self) -> &'a [u8] {
        &self.bytes[self.pos..]
    }
}

impl ByteSource for SliceSource<'_> {
    #[inline]
    fn take(&mut self) -> Result<Option<u8>> {
        match self.bytes.get(self.pos) {
            Some(&b) => {
                self.pos += 1;
                Ok(Some(b))
            }
            None => Ok(None),
        }
    }

    fn position(&self) -> u64 {
        self.pos as u64
    }
}

/// A buffered source over any [`std::io::Read`].
///
/// Bytes read ahead into the buffer are lost when the source is dropped.
///
/// # Example
///
/// ```
/// use subrange::coder::{ByteSource, IoSource};
///
/// let mut src = IoSource::new(&[9u8][..]);
/// assert_eq!(src.take().unwrap(), Some(9));
/// assert_eq!(src.take().unwrap(), None);
/// ```
#[cfg(feature = "std")]
#[derive(Debug)]
pub struct IoSource<R: std::io::Read> {
    inner: R,
    buf: alloc::boxed::Box<[u8]>,
    start: usize,
    end: usize,
    pos: u64,
}

#[cfg(feature = "std")]
impl<R: std::io::Read> IoSource<R> {
    /// Wraps `inner` with an 8 KiB buffer.
    pub fn new(inner: R) -> Self {
        IoSource {
            inner,
            buf: alloc::vec![0u8; 8 * 1024].into_boxed_slice(),
            start: 0,
            end: 0,
            pos: 0,
        }
    }

    /// Returns the inner reader; bytes already buffered are lost.
    pub fn into_inner(self) -> R {
        self.inner
    }
}

#[cfg(feature = "std")]
impl<R: std::io::Read> ByteSource for IoSource<R> {
    #[inline]
    fn take(&mut self) -> Result<Option<u8>> {
        if self.start == self.end {
            loop {
                match self.inner.read(&mut self.buf) {
                    Ok(0) => return Ok(None),
                    Ok(n) => {
                        self.start = 0;
                        self.end = n;
                        break;
                    }
                    Err(e) if e.kind() == std::io::ErrorKind::Interrupted => continue,
                    Err(e) => return Err(e.into()),
                }
            }
        }
        let b = self.buf[self.start];
        self.start += 1;
        self.pos += 1;
        Ok(Some(b))
    }

    fn position(&self) -> u64 {
        self.pos
    }
}
