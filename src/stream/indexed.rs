//! Random access: a [`Read`] + [`Seek`] view of the decoded data of a
//! container in a [`Read`] + [`Seek`] source.
//!
//! The [`IndexedReader`] locates the blocks once ([`BlockIndex::read`]:
//! the index record, or a walk over the frames of a container without one),
//! then serves each read from the block that holds the position, decoding
//! it on first use and keeping it until a read needs another. A read stops
//! at the end of its block (a short read, as [`Read`] allows), so
//! `read_exact` of 4 KiB at any offset decodes at most two blocks.
//!
//! Each block is read with one seek and one read of its record, whose
//! length the index gives and which passed the block size limit; its frame
//! must then agree with the index (frame check for that block number, raw
//! length, record length) before its payload is decoded, and its bytes are
//! handed out only after their CRC-32 matched. A damaged block fails the
//! reads that touch it; the other blocks stay readable.

use core::ops::Range;
use std::io::{self, Cursor, Read, Seek, SeekFrom};
use std::vec::Vec;

use crate::error::{ErrorKind, Result};
use crate::format::{
    check_payload, decode_payload_into, read_frame, BlockIndex, DecodeLimits, Frame, Input,
};
use crate::stream::oneshot::from_io;

/// Decodes any byte range of a container from a source that can seek.
///
/// Positions are offsets in the decoded data. Seeking past the end is
/// allowed, as for files: reads there return 0 bytes. Memory: one block's
/// record and its decoded bytes, what the preset needs for one block
/// ([`Preset::memory_needed`](crate::preset::Preset::memory_needed)), plus
/// the block list (48 bytes a block).
///
/// Give it the file itself: each block is one seek and one read of its
/// record, so a [`BufReader`](std::io::BufReader) around the file adds
/// nothing.
///
/// Errors come as [`io::Error`]s carrying the crate's
/// [`Error`](crate::Error) (`InvalidData` for damage).
///
/// # Example: read one hour of a day of gauge readings
///
/// ```
/// use std::io::{Cursor, Read, Seek, SeekFrom};
/// use subrange::stream::IndexedReader;
/// use subrange::{compress, Options};
///
/// # fn main() -> Result<(), Box<dyn std::error::Error>> {
/// let data = subrange::corpus::gauge_csv(8, 200_000);
/// let mut opts = Options::new();
/// opts.block_size(8 << 10)?;
/// let packed = compress(&data, &opts)?;
///
/// let mut reader = IndexedReader::new(Cursor::new(packed))?;
/// assert_eq!(reader.len(), 200_000);
/// reader.seek(SeekFrom::Start(123_456))?;
/// let mut window = vec![0u8; 4096];
/// reader.read_exact(&mut window)?;
/// assert_eq!(window, &data[123_456..123_456 + 4096]);
/// assert!(reader.blocks_decoded() <= 2);
/// # Ok(())
/// # }
/// ```
#[derive(Debug)]
pub struct IndexedReader<R> {
    inner: R,
    index: BlockIndex,
    pos: u64,
    /// The block whose bytes are in `out`.
    current: Option<usize>,
    record: Vec<u8>,
    out: Vec<u8>,
    decoded: u64,
}

impl<R: Read + Seek> IndexedReader<R> {
    /// Opens the container that starts at `inner`'s position and ends at
    /// its end, with default limits.
    ///
    /// # Errors
    ///
    /// As for [`BlockIndex::read`].
    pub fn new(inner: R) -> Result<Self> {
        Self::with_limits(inner, &DecodeLimits::new())
    }

    /// Opens the container in `inner`, checking its header and block list
    /// against `limits`.
    ///
    /// # Errors
    ///
    /// As for [`BlockIndex::read`].
    pub fn with_limits(mut inner: R, limits: &DecodeLimits) -> Result<Self> {
        let index = BlockIndex::read(&mut inner, limits)?;
        Ok(Self::with_index(inner, index))
    }

    /// Reads through `inner` with a block list located earlier (by
    /// [`BlockIndex::read`] or [`BlockIndex::walk`] on the same container,
    /// at the same position [`BlockIndex::base`]): workers of one job each
    /// open their own reader from one shared list.
    pub fn with_index(inner: R, index: BlockIndex) -> Self {
        IndexedReader {
            inner,
            index,
            pos: 0,
            current: None,
            record: Vec::new(),
            out: Vec::new(),
            decoded: 0,
        }
    }

    /// The block list.
    pub fn index(&self) -> &BlockIndex {
        &self.index
    }

    /// Length of the decoded data.
    pub fn len(&self) -> u64 {
        self.index.total_raw()
    }

    /// Whether the decoded data is empty.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// How many times a block has been decoded so far (a block decoded
    /// again after others counts again).
    pub fn blocks_decoded(&self) -> u64 {
        self.decoded
    }

    /// The inner source.
    pub fn get_ref(&self) -> &R {
        &self.inner
    }

    /// Returns the inner source (at an unspecified position).
    pub fn into_inner(self) -> R {
        self.inner
    }

    /// Decodes block `b` into `out`.
    fn load(&mut self, b: usize) -> Result<()> {
        self.current = None;
        let entry = self.index.blocks()[b];
        let header = self.index.header();
        let disagrees = |reason| crate::Error::corrupt_index(entry.offset, reason);
        // `record_len` is within the block size plus a frame (checked when
        // the list was made), and the block size within the limits.
        self.inner
            .seek(SeekFrom::Start(self.index.base() + entry.offset))?;
        Input::at(&mut self.inner, entry.offset)
            .fill(&mut self.record, entry.record_len as usize)?;
        let mut input = Input::at(&self.record[..], entry.offset);
        let frame = match read_frame(&mut input, header, b as u64)? {
            Frame::Block(f) => f,
            Frame::End { .. } => return Err(disagrees("index points at an end record")),
        };
        let frame_len = (input.offset() - entry.offset) as usize;
        if frame.raw_len != entry.raw_len
            || frame_len as u64 + frame.payload_len != entry.record_len
        {
            return Err(disagrees("index disagrees with the block's frame"));
        }
        let payload = &self.record[frame_len..];
        check_payload(&frame, payload)?;
        self.out.clear();
        self.out.resize(frame.raw_len as usize, 0);
        decode_payload_into(&header.preset, &frame, payload, &mut self.out)?;
        self.current = Some(b);
        self.decoded += 1;
        Ok(())
    }
}

impl<R: Read + Seek> Read for IndexedReader<R> {
    fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
        if buf.is_empty() {
            return Ok(0);
        }
        let Some(b) = self.index.block_at(self.pos) else {
            return Ok(0);
        };
        if self.current != Some(b) {
            self.load(b).map_err(io::Error::from)?;
        }
        let entry = self.index.blocks()[b];
        let from = (self.pos - entry.raw_offset) as usize;
        let n = buf.len().min(self.out.len() - from);
        buf[..n].copy_from_slice(&self.out[from..from + n]);
        self.pos += n as u64;
        Ok(n)
    }
}

impl<R: Read + Seek> Seek for IndexedReader<R> {
    fn seek(&mut self, to: SeekFrom) -> io::Result<u64> {
        let (from, delta) = match to {
            SeekFrom::Start(p) => {
                self.pos = p;
                return Ok(p);
            }
            SeekFrom::End(d) => (self.len(), d),
            SeekFrom::Current(d) => (self.pos, d),
        };
        match from.checked_add_signed(delta) {
            Some(p) => {
                self.pos = p;
                Ok(p)
            }
            None => Err(io::Error::new(
                io::ErrorKind::InvalidInput,
                "seek to a position before the start or beyond 2^64 - 1",
            )),
        }
    }

    fn stream_position(&mut self) -> io::Result<u64> {
        Ok(self.pos)
    }
}

/// Decodes the bytes `range` of the data in the container `data`, from the
/// blocks that hold them only, with default limits.
///
/// An empty range (`start == end`) within the data gives no bytes.
///
/// # Errors
///
/// [`ErrorKind::RangeOutsideData`] when `range.start > range.end` or
/// `range.end` is past the end of the data (a range is never cut short
/// silently); otherwise as for [`IndexedReader::new`] and the damage of the
/// blocks read.
///
/// # Example
///
/// ```
/// use subrange::stream::decompress_range;
/// use subrange::{compress, ErrorKind, Options};
///
/// # fn main() -> Result<(), subrange::Error> {
/// let data = subrange::corpus::gauge_binary(5, 60_000);
/// let mut opts = Options::new();
/// opts.block_size(4096)?;
/// let packed = compress(&data, &opts)?;
/// assert_eq!(decompress_range(&packed, 10_000..10_100)?, &data[10_000..10_100]);
/// assert!(decompress_range(&packed, 60_000..60_000)?.is_empty());
/// let err = decompress_range(&packed, 59_990..60_010).unwrap_err();
/// assert!(matches!(err.kind(), ErrorKind::RangeOutsideData { len: 60_000, .. }));
/// # Ok(())
/// # }
/// ```
pub fn decompress_range(data: &[u8], range: Range<u64>) -> Result<Vec<u8>> {
    decompress_range_with_limits(data, range, &DecodeLimits::new())
}

/// As [`decompress_range`], with `limits` on what the container declares;
/// the range's length counts against the total limit.
///
/// # Errors
///
/// As for [`decompress_range`]; [`ErrorKind::LimitExceeded`] when the
/// range is longer than the total limit.
pub fn decompress_range_with_limits(
    data: &[u8],
    range: Range<u64>,
    limits: &DecodeLimits,
) -> Result<Vec<u8>> {
    let mut reader = IndexedReader::with_limits(Cursor::new(data), limits)?;
    let len = reader.len();
    if range.start > range.end || range.end > len {
        return Err(ErrorKind::RangeOutsideData {
            start: range.start,
            end: range.end,
            len,
        }
        .into());
    }
    let want = range.end - range.start;
    crate::Error::check_limit("total decoded length", want, limits.total_limit())?;
    reader.pos = range.start;
    // The output grows with the blocks decoded, not with the range asked.
    let mut out = Vec::new();
    (&mut reader)
        .take(want)
        .read_to_end(&mut out)
        .map_err(from_io)?;
    if out.len() as u64 != want {
        return Err(crate::Error::truncated(reader.index().container_len()));
    }
    Ok(out)
}
