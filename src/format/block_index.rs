//! Where each block of a container lies, for reading any part of its data.
//!
//! A [`BlockIndex`] lists every block's container offset, record length,
//! raw offset and raw length. [`BlockIndex::read`] takes it from the index
//! record at the end of the container when there is one (checked by its
//! CRC-32, by the end record, and by adding up), and otherwise walks the
//! frames from the header, reading each frame and seeking over its payload:
//! containers written before the index existed are located that way, at the
//! cost of one short read per block. Finding the block that holds a raw
//! offset is a binary search.
//!
//! Invariant: the list is never larger than the container's length allows
//! (a block takes at least 11 bytes) nor than the memory
//! limit, and its offsets and lengths add up to the end record's. The
//! frames themselves are checked against it when a block is read
//! ([`IndexedReader`](crate::stream::IndexedReader)).

use core::ops::Range;
use std::io::{BufReader, Read, Seek, SeekFrom};
use std::vec::Vec;

#[cfg(doc)]
use crate::error::ErrorKind;
use crate::error::Result;
use crate::format::block::{read_frame, Frame};
use crate::format::header::read_header;
use crate::format::index::{
    check_entry_memory, parse_recorded, tail_end_offset, IndexEntry, Located,
};
use crate::format::input::Input;
use crate::format::{DecodeLimits, Header};

/// Where a [`BlockIndex`] came from.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub enum IndexSource {
    /// The index record at the end of the container.
    Recorded,
    /// A walk over the block frames (the container has no index record, or
    /// [`BlockIndex::walk`] was asked for).
    Walked,
}

/// The blocks of one container and where their bytes are.
///
/// # Example: which blocks hold a time window of telemetry
///
/// ```
/// use std::io::Cursor;
/// use subrange::format::{BlockIndex, DecodeLimits, IndexSource};
/// use subrange::{compress, Options};
///
/// # fn main() -> Result<(), subrange::Error> {
/// let data = subrange::corpus::gauge_csv(4, 100_000);
/// let mut opts = Options::new();
/// opts.block_size(16 << 10)?;
/// let packed = compress(&data, &opts)?;
/// let index = BlockIndex::read(&mut Cursor::new(&packed), &DecodeLimits::new())?;
/// assert_eq!(index.source(), IndexSource::Recorded);
/// assert_eq!(index.total_raw(), 100_000);
/// assert_eq!(index.blocks().len(), 7);
/// assert_eq!(index.block_at(40_000), Some(2));
/// assert_eq!(index.blocks_for(30_000..50_000), 1..4);
/// # Ok(())
/// # }
/// ```
#[derive(Debug, Clone)]
pub struct BlockIndex {
    header: Header,
    base: u64,
    blocks: Vec<IndexEntry>,
    total_raw: u64,
    container_len: u64,
    source: IndexSource,
}

/// What a walk over the frames found.
struct Walked {
    located: Located,
    indexed: bool,
    /// Offset just after the end record.
    after_end: u64,
}

/// The container's extent in `reader`: from the current position to the
/// end. The reader is left at the start.
fn extent<R: Read + Seek>(reader: &mut R) -> Result<(u64, u64)> {
    let base = reader.stream_position()?;
    let end = reader.seek(SeekFrom::End(0))?;
    reader.seek(SeekFrom::Start(base))?;
    Ok((base, end.saturating_sub(base)))
}

fn header_of<R: Read + Seek>(reader: &mut R, len: u64, limits: &DecodeLimits) -> Result<Header> {
    read_header(&mut Input::new((&mut *reader).take(len)), limits)
}

/// Reads every frame from the header on, seeking over the payloads.
fn walk_frames<R: Read + Seek>(
    reader: &mut R,
    base: u64,
    len: u64,
    header: &Header,
    limits: &DecodeLimits,
) -> Result<Walked> {
    let mut blocks = Vec::new();
    let (mut at, mut raw) = (header.len, 0u64);
    loop {
        reader.seek(SeekFrom::Start(base + at))?;
        // One short read per frame (the largest frame is 33 bytes).
        let frame = BufReader::with_capacity(64, (&mut *reader).take(len - at));
        let mut input = Input::at(frame, at);
        let index = blocks.len() as u64;
        match read_frame(&mut input, header, index)? {
            Frame::Block(f) => {
                let record_len = input.offset() - at + f.payload_len;
                if record_len > len - at {
                    return Err(crate::Error::truncated(len));
                }
                check_entry_memory(index + 1, limits)?;
                blocks.push(IndexEntry {
                    offset: at,
                    record_len,
                    raw_offset: raw,
                    raw_len: f.raw_len,
                });
                at += record_len;
                raw += f.raw_len;
            }
            Frame::End {
                block_count,
                total_raw,
                indexed,
            } => {
                let reason = if block_count != index {
                    "end record block count differs from the blocks read"
                } else if total_raw != raw {
                    "end record total differs from the bytes read"
                } else {
                    return Ok(Walked {
                        located: Located {
                            blocks,
                            total_raw,
                            end_offset: at,
                            container_len: len,
                        },
                        indexed,
                        after_end: input.offset(),
                    });
                };
                return Err(crate::Error::corrupt_block(index, reason));
            }
        }
    }
}

/// Bytes after an end record without an index are an error.
fn check_trailing(w: &Walked) -> Result<()> {
    let len = w.located.container_len;
    if !w.indexed && w.after_end < len {
        return Err(crate::Error::trailing_bytes(w.after_end, len - w.after_end));
    }
    Ok(())
}

impl BlockIndex {
    /// Locates the blocks of the container that starts at `reader`'s
    /// position and ends at its end: from the index record when the
    /// container has one, else by walking the frames.
    ///
    /// # Errors
    ///
    /// The header's errors (as for [`Inspector::new`](crate::format::Inspector::new));
    /// [`ErrorKind::CorruptIndex`] when the container has an index that is
    /// damaged or disagrees with the end record (its data can still be read
    /// in full by the [`Decompressor`](crate::Decompressor) — which also
    /// reports the damage — or located with [`walk`](BlockIndex::walk));
    /// for a container without one, the errors of a walk;
    /// [`ErrorKind::LimitExceeded`] when the list would need more memory
    /// than `limits` allow (48 bytes a block); the reader's I/O error.
    pub fn read<R: Read + Seek>(reader: &mut R, limits: &DecodeLimits) -> Result<Self> {
        let (base, len) = extent(reader)?;
        let header = header_of(reader, len, limits)?;
        let recorded = tail_end_offset(reader, base, len, &header)?
            .map(|end| parse_recorded(reader, base, len, &header, limits, end));
        let recorded_error = match recorded {
            Some(Ok(located)) => {
                return Ok(Self::new(header, base, located, IndexSource::Recorded))
            }
            Some(Err(e)) => Some(e),
            None => None,
        };
        // No usable tail: walk. A container without an index whose last
        // bytes happen to look like the mark walks to a plain end record and
        // reads fine.
        // When both fail, the index's error names the damage (usually in
        // the end record, which both read).
        let walked = match walk_frames(reader, base, len, &header, limits) {
            Ok(w) => w,
            Err(e) => return Err(recorded_error.unwrap_or(e)),
        };
        if walked.indexed {
            // The end record announces an index that did not check out.
            return Err(match recorded_error {
                Some(e) => e,
                None => parse_recorded(
                    reader,
                    base,
                    len,
                    &header,
                    limits,
                    walked.located.end_offset,
                )
                .err()
                .unwrap_or_else(|| crate::Error::corrupt_index(len, "index tail damaged")),
            });
        }
        check_trailing(&walked)?;
        Ok(Self::new(header, base, walked.located, IndexSource::Walked))
    }

    /// Locates the blocks by walking the frames, whether or not the
    /// container has an index record (which is then not read): the way to
    /// reach every intact block of a container whose index is damaged.
    ///
    /// # Errors
    ///
    /// The header's errors; a damaged frame ([`ErrorKind::CorruptBlock`]),
    /// a truncation, an end record that disagrees with the blocks, bytes
    /// after an end record without index ([`ErrorKind::TrailingBytes`]);
    /// [`ErrorKind::LimitExceeded`] as for [`read`](BlockIndex::read); the
    /// reader's I/O error.
    ///
    /// # Example
    ///
    /// ```
    /// use std::io::Cursor;
    /// use subrange::format::{BlockIndex, DecodeLimits, IndexSource};
    /// use subrange::{compress, ErrorKind, Options};
    ///
    /// # fn main() -> Result<(), subrange::Error> {
    /// let mut opts = Options::new();
    /// opts.block_size(4096)?;
    /// let mut packed = compress(&subrange::corpus::gauge_csv(2, 20_000), &opts)?;
    /// let at = packed.len() - 10;
    /// packed[at] ^= 1; // damage the index
    /// let limits = DecodeLimits::new();
    /// let err = BlockIndex::read(&mut Cursor::new(&packed), &limits).unwrap_err();
    /// assert!(matches!(err.kind(), ErrorKind::CorruptIndex { .. }));
    /// let walked = BlockIndex::walk(&mut Cursor::new(&packed), &limits)?;
    /// assert_eq!(walked.source(), IndexSource::Walked);
    /// assert_eq!(walked.total_raw(), 20_000);
    /// # Ok(())
    /// # }
    /// ```
    pub fn walk<R: Read + Seek>(reader: &mut R, limits: &DecodeLimits) -> Result<Self> {
        let (base, len) = extent(reader)?;
        let header = header_of(reader, len, limits)?;
        let walked = walk_frames(reader, base, len, &header, limits)?;
        check_trailing(&walked)?;
        Ok(Self::new(header, base, walked.located, IndexSource::Walked))
    }

    fn new(header: Header, base: u64, located: Located, source: IndexSource) -> Self {
        BlockIndex {
            header,
            base,
            blocks: located.blocks,
            total_raw: located.total_raw,
            container_len: located.container_len,
            source,
        }
    }

    /// The container's header.
    pub fn header(&self) -> &Header {
        &self.header
    }

    /// Every block, in order.
    pub fn blocks(&self) -> &[IndexEntry] {
        &self.blocks
    }

    /// Length of the decoded data.
    pub fn total_raw(&self) -> u64 {
        self.total_raw
    }

    /// Length of the container, index included.
    pub fn container_len(&self) -> u64 {
        self.container_len
    }

    /// Position of the container's first byte in the reader it was read
    /// from (block offsets count from there).
    pub fn base(&self) -> u64 {
        self.base
    }

    /// Whether the list came from the index record or a walk.
    pub fn source(&self) -> IndexSource {
        self.source
    }

    /// The block holding decoded byte `raw_pos`, or `None` past the end.
    pub fn block_at(&self, raw_pos: u64) -> Option<usize> {
        let i = self
            .blocks
            .partition_point(|b| b.raw_offset + b.raw_len <= raw_pos);
        (i < self.blocks.len()).then_some(i)
    }

    /// The blocks holding the decoded bytes `range` (empty for an empty or
    /// inverted range; bytes past the end have no block).
    pub fn blocks_for(&self, range: Range<u64>) -> Range<usize> {
        let first = self
            .blocks
            .partition_point(|b| b.raw_offset + b.raw_len <= range.start);
        let last = self.blocks.partition_point(|b| b.raw_offset < range.end);
        first..last.max(first)
    }

    /// Cuts the decoded data into `parts` consecutive ranges on block
    /// boundaries, with as even a share of blocks as can be (some are empty
    /// when there are fewer blocks than parts; `parts` of 0 counts as 1).
    /// Each range decodes from its own blocks only, so workers given one
    /// range each never decode a block twice.
    ///
    /// # Example
    ///
    /// ```
    /// use std::io::Cursor;
    /// use subrange::format::{BlockIndex, DecodeLimits};
    /// use subrange::{compress, Options};
    ///
    /// # fn main() -> Result<(), subrange::Error> {
    /// let mut opts = Options::new();
    /// opts.block_size(1000)?;
    /// let packed = compress(&subrange::corpus::gauge_binary(1, 9500), &opts)?;
    /// let index = BlockIndex::read(&mut Cursor::new(&packed), &DecodeLimits::new())?;
    /// assert_eq!(index.split(3), vec![0..3000, 3000..6000, 6000..9500]);
    /// # Ok(())
    /// # }
    /// ```
    pub fn split(&self, parts: usize) -> Vec<Range<u64>> {
        let parts = parts.max(1);
        let n = self.blocks.len();
        let start_of = |cut: usize| {
            self.blocks
                .get(cut)
                .map_or(self.total_raw, |b| b.raw_offset)
        };
        (0..parts)
            .map(|k| {
                let (a, b) = (k * n / parts, (k + 1) * n / parts);
                start_of(a)..start_of(b)
            })
            .collect()
    }
}
