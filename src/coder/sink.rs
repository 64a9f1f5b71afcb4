//! Byte sinks: where an encoder puts its output.
//!
//! The encoder emits one byte at a time and never rewrites a byte once it has
//! handed it over (carries are settled before a byte leaves the encoder), so a
//! sink can be a plain append-only stream. `Vec<u8>` is a sink; with the `std`
//! feature, `IoSink` buffers bytes for any [`std::io::Write`].

use alloc::vec::Vec;

use crate::error::Result;

/// An append-only destination for coded bytes.
///
/// # Implementer notes
///
/// `put` is called once per output byte, in order; a sink must keep them in
/// that order. Errors are passed through to the caller of the encoder.
pub trait ByteSink {
    /// Appends one byte.
    ///
    /// # Errors
    ///
    /// Whatever the destination reports (for `IoSink`, an I/O error).
    fn put(&mut self, byte: u8) -> Result<()>;

    /// Appends `count` copies of `byte` (used to release runs of settled
    /// carry bytes). The default calls [`put`](ByteSink::put) in a loop.
    ///
    /// # Errors
    ///
    /// As for [`put`](ByteSink::put).
    fn put_run(&mut self, byte: u8, count: u64) -> Result<()> {
        for _ in 0..count {
            self.put(byte)?;
        }
        Ok(())
    }
}

impl ByteSink for Vec<u8> {
    #[inline]
    fn put(&mut self, byte: u8) -> Result<()> {
        self.push(byte);
        Ok(())
    }

    fn put_run(&mut self, byte: u8, count: u64) -> Result<()> {
        let count = usize::try_from(count).map_err(|_| {
            crate::Error::limit_exceeded("carry run length", count, usize::MAX as u64)
        })?;
        self.resize(self.len() + count, byte);
        Ok(())
    }
}

impl<T: ByteSink + ?Sized> ByteSink for &mut T {
    #[inline]
    fn put(&mut self, byte: u8) -> Result<()> {
        (**self).put(byte)
    }

    fn put_run(&mut self, byte: u8, count: u64) -> Result<()> {
        (**self).put_run(byte, count)
    }
}

/// A buffered sink over any [`std::io::Write`].
///
/// Bytes are collected in a small buffer and written in chunks; call
/// [`flush`](IoSink::flush) (the encoder's `finish` does not know about
/// buffering) or [`into_inner`](IoSink::into_inner) at the end.
///
/// # Example
///
/// ```
/// use subrange::coder::{ByteSink, IoSink};
///
/// # fn main() -> Result<(), subrange::Error> {
/// let mut sink = IoSink::new(Vec::new());
/// sink.put(7)?;
/// assert_eq!(sink.into_inner()?, vec![7]);
/// # Ok(())
/// # }
/// ```
#[cfg(feature = "std")]
#[derive(Debug)]
pub struct IoSink<W: std::io::Write> {
    inner: W,
    buf: Vec<u8>,
}

#[cfg(feature = "std")]
impl<W: std::io::Write> IoSink<W> {
    const CAPACITY: usize = 8 * 1024;

    /// Wraps `inner`.
    pub fn new(inner: W) -> Self {
        IoSink {
            inner,
            buf: Vec::with_capacity(Self::CAPACITY),
        }
    }

    /// Writes out buffered bytes and flushes the inner writer.
    ///
    /// # Errors
    ///
    /// The inner writer's I/O error.
    pub fn flush(&mut self) -> Result<()> {
        self.inner.write_all(&self.buf)?;
        self.buf.clear();
        self.inner.flush()?;
        Ok(())
    }

    /// Flushes and returns the inner writer.
    ///
    /// # Errors
    ///
    /// The inner writer's I/O error.
    pub fn into_inner(mut self) -> Result<W> {
        self.flush()?;
        Ok(self.inner)
    }
}

#[cfg(feature = "std")]
impl<W: std::io::Write> ByteSink for IoSink<W> {
    #[inline]
    fn put(&mut self, byte: u8) -> Result<()> {
        self.buf.push(byte);
        if self.buf.len() >= Self::CAPACITY {
            self.inner.write_all(&self.buf)?;
            self.buf.clear();
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn vec_run() {
        let mut v = Vec::new();
        v.put(1).unwrap();
        v.put_run(0xFF, 3).unwrap();
        assert_eq!(v, [1, 0xFF, 0xFF, 0xFF]);
    }
}
