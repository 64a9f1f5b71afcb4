//! The [`io::Read`] decompressor.

use std::io::{self, BufRead, Read};
use std::vec::Vec;

use crate::error::Result;
use crate::format::{decode_payload, ContainerReader, DecodeLimits, Header};
use crate::stream::DecodeOptions;

/// Decodes a container from the inner reader; reads give the original bytes.
///
/// One block is decoded at a time, and its bytes are handed out only after
/// its CRC-32 matched, so memory stays within what the header's preset
/// needs for one block ([`Preset::memory_needed`], two to three block
/// sizes) whatever the stream length, and damaged data is never returned.
/// By default the end record must be followed by the end of input
/// ([`TrailingData::Reject`](crate::format::TrailingData::Reject)).
///
/// [`Preset::memory_needed`]: crate::preset::Preset::memory_needed
///
/// Errors come as [`io::Error`]s whose
/// [`source`](std::error::Error::source) is the crate's
/// [`Error`](crate::Error) (`err.source().and_then(|s|
/// s.downcast_ref::<subrange::Error>())`, or `subrange::Error::from(err)`
/// to take it back): `InvalidData` for damage, `UnexpectedEof` for
/// truncation, with the crate error's message. After an error every later
/// read fails too.
///
/// # Example
///
/// ```
/// use std::io::Read;
/// use subrange::{compress, Decompressor, Options};
///
/// # fn main() -> Result<(), Box<dyn std::error::Error>> {
/// let data = subrange::corpus::gauge_csv(7, 20_000);
/// let packed = compress(&data, &Options::default())?;
/// let mut back = Vec::new();
/// Decompressor::new(&packed[..]).read_to_end(&mut back)?;
/// assert_eq!(back, data);
/// # Ok(())
/// # }
/// ```
#[derive(Debug)]
pub struct Decompressor<R: Read> {
    reader: ContainerReader<R>,
    payload: Vec<u8>,
    out: Vec<u8>,
    pos: usize,
    total_out: u64,
    failed: bool,
}

impl<R: Read> Decompressor<R> {
    /// A decompressor reading from `reader` with default limits.
    pub fn new(reader: R) -> Self {
        Self::with_options(reader, &DecodeOptions::default())
    }

    /// A decompressor applying `limits` to what the container declares.
    ///
    /// # Example
    ///
    /// ```
    /// use std::io::Read;
    /// use subrange::format::DecodeLimits;
    /// use subrange::{compress, Decompressor, Options};
    ///
    /// let packed = compress(&[7u8; 5000], &Options::default()).unwrap();
    /// let mut limits = DecodeLimits::new();
    /// limits.max_block_size(64 << 10);
    /// let mut d = Decompressor::with_limits(&packed[..], &limits);
    /// // The container declares 1 MiB blocks: over the limit.
    /// let err = d.read_to_end(&mut Vec::new()).unwrap_err();
    /// assert_eq!(err.kind(), std::io::ErrorKind::InvalidData);
    /// ```
    pub fn with_limits(reader: R, limits: &DecodeLimits) -> Self {
        let mut opts = DecodeOptions::default();
        opts.limits(*limits);
        Self::with_options(reader, &opts)
    }

    /// A decompressor with explicit options (limits and what may follow
    /// the end record; the thread count does not apply here).
    pub fn with_options(reader: R, options: &DecodeOptions) -> Self {
        Decompressor {
            reader: ContainerReader::new(reader, *options.get_limits(), options.get_trailing()),
            payload: Vec::new(),
            out: Vec::new(),
            pos: 0,
            total_out: 0,
            failed: false,
        }
    }

    /// The container's header, reading it first if no read has yet.
    /// With concatenated containers, the header of the one being read.
    ///
    /// # Errors
    ///
    /// As for reading: a damaged, unsupported or over-limit header.
    pub fn header(&mut self) -> Result<&Header> {
        self.reader.header()
    }

    /// The inner reader.
    pub fn get_ref(&self) -> &R {
        self.reader.input().get_ref()
    }

    /// The inner reader, mutably. Reading from it while decoding corrupts
    /// the decoded stream.
    pub fn get_mut(&mut self) -> &mut R {
        self.reader.input_mut().get_mut()
    }

    /// Returns the inner reader. Bytes already read from it but not yet
    /// handed out — the rest of the current block, and a byte looked at
    /// after an end record — are lost. After the end record with
    /// [`TrailingData::Leave`](crate::format::TrailingData::Leave) nothing is
    /// lost: the reader is just past the container.
    pub fn into_inner(self) -> R {
        self.reader.into_input().into_inner()
    }

    /// Container bytes consumed from the inner reader so far.
    pub fn total_in(&self) -> u64 {
        self.reader.input().offset()
    }

    /// Decoded bytes handed out so far.
    pub fn total_out(&self) -> u64 {
        self.total_out
    }

    /// Decodes the next block into `out`; false at the end.
    fn refill(&mut self) -> io::Result<bool> {
        if self.failed {
            return Err(io::Error::other(
                "decoding stopped at an earlier error; no more data can be read",
            ));
        }
        let step = (|| -> Result<bool> {
            loop {
                let Some(frame) = self.reader.next_block(&mut self.payload)? else {
                    return Ok(false);
                };
                let preset = self.reader.header()?.preset;
                decode_payload(&preset, &frame, &mut self.payload, &mut self.out)?;
                self.pos = 0;
                if !self.out.is_empty() {
                    return Ok(true);
                }
            }
        })();
        step.map_err(|e| {
            self.failed = true;
            self.out.clear();
            self.pos = 0;
            io::Error::from(e)
        })
    }
}

impl<R: Read> Read for Decompressor<R> {
    fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
        if buf.is_empty() {
            return Ok(0);
        }
        let avail = self.fill_buf()?;
        let n = avail.len().min(buf.len());
        buf[..n].copy_from_slice(&avail[..n]);
        self.consume(n);
        Ok(n)
    }
}

impl<R: Read> BufRead for Decompressor<R> {
    fn fill_buf(&mut self) -> io::Result<&[u8]> {
        if self.pos == self.out.len() && !self.refill()? {
            return Ok(&[]);
        }
        Ok(&self.out[self.pos..])
    }

    fn consume(&mut self, amt: usize) {
        let amt = amt.min(self.out.len() - self.pos);
        self.pos += amt;
        self.total_out += amt as u64;
    }
}
