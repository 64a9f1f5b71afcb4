//! The [`io::Write`] compressor.

use std::io::{self, Write};

use crate::stream::engine::Engine;
use crate::stream::Options;

/// Compresses everything written to it into a container on the inner writer.
///
/// Bytes are gathered into blocks of the configured size; each time
/// [`Options::get_blocks_in_flight`] blocks are full (by default as many as
/// threads code them) they are coded and written out, so memory stays
/// within [`Options::memory_bound`] whatever the stream length, and output
/// starts after that many blocks. Options whose output a default reader
/// could not decode ([`Options::check`]) fail the first write, flush or
/// finish with [`ErrorKind::LimitExceeded`](crate::ErrorKind::LimitExceeded)
/// inside the `io::Error`, and nothing is written. Call [`finish`](Compressor::finish) (or
/// [`try_finish`](Compressor::try_finish)) at the end: it writes the last
/// block and the end record. Dropping an unfinished compressor finishes it
/// on a best-effort basis, ignoring errors — except while the thread is
/// panicking, when the output is left without an end record so that it
/// cannot pass for complete.
///
/// [`flush`](Write::flush) ends the current block early, writes it and
/// flushes the inner writer: the receiver can then decode everything written
/// so far (each flush costs a block frame, about 20 bytes, plus the preset's
/// per-block overhead).
///
/// # Example
///
/// ```
/// use std::io::Write;
/// use subrange::{Compressor, Options};
///
/// # fn main() -> std::io::Result<()> {
/// let mut c = Compressor::new(Vec::new(), &Options::default());
/// for minute in (0..600).step_by(10) {
///     writeln!(c, "G107,{minute},212,1123,94")?;
/// }
/// assert_eq!(c.total_in(), 1249);
/// let packed = c.finish()?;
/// assert!(packed.len() < 1249 / 2);
/// # Ok(())
/// # }
/// ```
#[derive(Debug)]
pub struct Compressor<W: Write> {
    engine: Engine<W>,
}

impl<W: Write> Compressor<W> {
    /// A compressor writing to `writer` with `options`.
    pub fn new(writer: W, options: &Options) -> Self {
        Compressor {
            engine: Engine::new(writer, options),
        }
    }

    /// The inner writer.
    pub fn get_ref(&self) -> &W {
        self.engine.get_ref()
    }

    /// The inner writer, mutably.
    ///
    /// Writing to it, or seeking it, while the compressor is in use corrupts
    /// the container (the compressor does not know about those bytes).
    pub fn get_mut(&mut self) -> &mut W {
        self.engine.get_mut()
    }

    /// Raw bytes taken in so far.
    pub fn total_in(&self) -> u64 {
        self.engine.total_in()
    }

    /// Container bytes written to the inner writer so far.
    pub fn total_out(&self) -> u64 {
        self.engine.total_out()
    }

    /// Writes the buffered bytes and the end record, and flushes the inner
    /// writer. Calling it again does nothing; writing after it is an error.
    ///
    /// # Errors
    ///
    /// The inner writer's error, or an error if an earlier write failed
    /// (the output is then incomplete).
    pub fn try_finish(&mut self) -> io::Result<()> {
        self.engine.finish()
    }

    /// Finishes the container (see [`try_finish`](Compressor::try_finish))
    /// and returns the inner writer.
    ///
    /// # Errors
    ///
    /// As for [`try_finish`](Compressor::try_finish).
    pub fn finish(mut self) -> io::Result<W> {
        self.engine.finish()?;
        Ok(self
            .engine
            .take_inner()
            .expect("the inner writer is present until finish"))
    }
}

impl<W: Write> Write for Compressor<W> {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        self.engine.write(buf)
    }

    fn flush(&mut self) -> io::Result<()> {
        self.engine.flush()
    }
}

impl<W: Write> Drop for Compressor<W> {
    fn drop(&mut self) {
        if self.engine.is_open() && !self.engine.is_finished() && !std::thread::panicking() {
            let _ = self.engine.finish();
        }
    }
}
