//! Block-by-block inspection of a container, damaged or not.
//!
//! An [`Inspector`] reads the header, then walks the blocks, decoding each
//! one to check its CRC-32, and reports what it found per block. A block
//! whose payload or raw bytes fail their checks is reported and skipped:
//! its frame (which has its own check) says where the next block starts.
//! Only damage to a frame itself ends the walk, since then the position of
//! the next block is unknown.
//!
//! Invariant: memory stays O(block size) — one payload and one decoded
//! block at a time — and every declared size is checked first, as when
//! decoding.

use std::io::Read;
use std::vec::Vec;

use crate::error::{Error, ErrorKind, Result};
use crate::format::block::{decode_payload, read_frame, BlockKind, Frame};
use crate::format::header::read_header;
use crate::format::index::{read_after_end, IndexExpect};
use crate::format::input::Input;
use crate::format::{DecodeLimits, Header};

/// The outcome of checking one block.
#[derive(Debug)]
#[non_exhaustive]
pub enum CrcStatus {
    /// The block decoded and its CRC-32 matched.
    Ok,
    /// The block decoded, but the CRC-32 of its bytes is `actual`, not the
    /// recorded one.
    Mismatch {
        /// CRC-32 of the decoded bytes.
        actual: u32,
    },
    /// The coded payload's own CRC-32 does not match: the stored bytes were
    /// damaged (decoding was not attempted).
    PayloadMismatch {
        /// CRC-32 recorded for the payload.
        expected: u32,
        /// CRC-32 of the payload as read.
        actual: u32,
    },
    /// The payload could not be decoded.
    Undecodable(Error),
}

/// What one block is and whether it checked out.
#[derive(Debug)]
#[non_exhaustive]
pub struct BlockInfo {
    /// Zero-based block index.
    pub index: u64,
    /// Offset of the block's frame in the container.
    pub offset: u64,
    /// Offset of the block's first byte in the decoded data.
    pub raw_offset: u64,
    /// Stored or coded.
    pub kind: BlockKind,
    /// Decoded length.
    pub raw_len: u64,
    /// Payload length in the container (equal to `raw_len` when stored).
    pub coded_len: u64,
    /// Length of the frame in front of the payload.
    pub frame_len: u64,
    /// CRC-32 of the raw bytes, as recorded.
    pub crc_expected: u32,
    /// The result of the checks.
    pub crc_status: CrcStatus,
}

/// The end record.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[non_exhaustive]
pub struct EndInfo {
    /// Offset of the end record in the container.
    pub offset: u64,
    /// Number of blocks it records.
    pub block_count: u64,
    /// Total raw length it records.
    pub total_raw: u64,
    /// Length of the whole container, end record and block index included.
    pub container_len: u64,
    /// Length of the block index after the end record (0 without one).
    pub index_len: u64,
}

/// Walks the blocks of a container; an iterator of [`BlockInfo`].
///
/// An `Err` item means the walk cannot go on (a frame is damaged, the input
/// ends early, the end record disagrees with the blocks, or bytes follow
/// it); it is the last item.
///
/// # Example
///
/// ```
/// use subrange::format::{CrcStatus, Inspector};
/// use subrange::{compress, Options};
///
/// # fn main() -> Result<(), subrange::Error> {
/// let mut opts = Options::new();
/// opts.block_size(1024)?;
/// let data = subrange::corpus::gauge_csv(1, 5000);
/// let mut packed = compress(&data, &opts)?;
/// let second_payload = {
///     let blocks: Vec<_> = Inspector::new(&packed[..])?.collect::<Result<_, _>>()?;
///     blocks[1].offset + blocks[1].frame_len
/// };
/// packed[second_payload as usize + 3] ^= 0x10; // damage block 1
/// let mut walk = Inspector::new(&packed[..])?;
/// let blocks: Vec<_> = walk.by_ref().collect::<Result<_, _>>()?;
/// assert_eq!(blocks.len(), 5);
/// assert!(matches!(blocks[0].crc_status, CrcStatus::Ok));
/// assert!(!matches!(blocks[1].crc_status, CrcStatus::Ok));
/// assert!(matches!(blocks[2].crc_status, CrcStatus::Ok));
/// assert_eq!(walk.end().unwrap().total_raw, 5000);
/// # Ok(())
/// # }
/// ```
#[derive(Debug)]
pub struct Inspector<R> {
    input: Input<R>,
    header: Header,
    index: u64,
    raw_offset: u64,
    payload: Vec<u8>,
    out: Vec<u8>,
    end: Option<EndInfo>,
    expect: IndexExpect,
    finished: bool,
}

impl<R: Read> Inspector<R> {
    /// Reads the header of the container in `reader`, with default limits.
    ///
    /// # Errors
    ///
    /// As for [`with_limits`](Inspector::with_limits).
    pub fn new(reader: R) -> Result<Self> {
        Self::with_limits(reader, &DecodeLimits::default())
    }

    /// Reads the header of the container in `reader`, checking it against
    /// `limits`.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::BadMagic`], [`ErrorKind::UnsupportedVersion`],
    /// [`ErrorKind::UnknownPreset`], [`ErrorKind::LimitExceeded`],
    /// [`ErrorKind::CorruptHeader`] (a damaged header),
    /// [`ErrorKind::Truncated`], or the reader's I/O error.
    pub fn with_limits(reader: R, limits: &DecodeLimits) -> Result<Self> {
        let mut input = Input::new(reader);
        let header = read_header(&mut input, limits)?;
        Ok(Inspector {
            input,
            header,
            index: 0,
            raw_offset: 0,
            payload: Vec::new(),
            out: Vec::new(),
            end: None,
            expect: IndexExpect::new(),
            finished: false,
        })
    }

    /// The container's header.
    pub fn header(&self) -> &Header {
        &self.header
    }

    /// The end record, once the walk has reached it.
    pub fn end(&self) -> Option<&EndInfo> {
        self.end.as_ref()
    }

    /// Returns the reader; bytes the inspector had read are lost.
    pub fn into_inner(self) -> R {
        self.input.into_inner()
    }

    fn step(&mut self) -> Result<Option<BlockInfo>> {
        let offset = self.input.offset();
        let frame = match read_frame(&mut self.input, &self.header, self.index)? {
            Frame::Block(f) => f,
            Frame::End {
                block_count,
                total_raw,
                indexed,
            } => {
                self.finished = true;
                self.end = Some(EndInfo {
                    offset,
                    block_count,
                    total_raw,
                    container_len: self.input.offset(),
                    index_len: 0,
                });
                if block_count != self.index || total_raw != self.raw_offset {
                    return Err(crate::Error::corrupt_end(
                        offset,
                        "it differs from the blocks read",
                    ));
                }
                if indexed {
                    let end_bytes = self.input.captured().to_vec();
                    let index_len =
                        read_after_end(&mut self.input, offset, &end_bytes, &self.expect)?;
                    if let Some(end) = &mut self.end {
                        end.index_len = index_len;
                        end.container_len = self.input.offset();
                    }
                }
                let at = self.input.offset();
                let count = self.input.count_rest(1 << 16)?;
                if count > 0 {
                    return Err(crate::Error::trailing_bytes(at, count));
                }
                return Ok(None);
            }
        };
        let frame_len = self.input.offset() - offset;
        self.input
            .fill(&mut self.payload, frame.payload_len as usize)?;
        let crc_status = match frame.payload_crc {
            Some(expected) if crc32fast::hash(&self.payload) != expected => {
                CrcStatus::PayloadMismatch {
                    expected,
                    actual: crc32fast::hash(&self.payload),
                }
            }
            _ => match decode_payload(
                &self.header.preset,
                &frame,
                &mut self.payload,
                &mut self.out,
            ) {
                Ok(()) => CrcStatus::Ok,
                Err(e) => match e.kind() {
                    ErrorKind::ChecksumMismatch { actual, .. } => {
                        CrcStatus::Mismatch { actual: *actual }
                    }
                    _ => CrcStatus::Undecodable(e),
                },
            },
        };
        let info = BlockInfo {
            index: frame.index,
            offset,
            raw_offset: self.raw_offset,
            kind: frame.kind,
            raw_len: frame.raw_len,
            coded_len: frame.payload_len,
            frame_len,
            crc_expected: frame.raw_crc,
            crc_status,
        };
        self.expect.push(
            self.header.block_size,
            frame_len + frame.payload_len,
            frame.raw_len,
        );
        self.index += 1;
        self.raw_offset += frame.raw_len;
        Ok(Some(info))
    }
}

impl<R: Read> Iterator for Inspector<R> {
    type Item = Result<BlockInfo>;

    fn next(&mut self) -> Option<Self::Item> {
        if self.finished {
            return None;
        }
        match self.step() {
            Ok(Some(info)) => Some(Ok(info)),
            Ok(None) => None,
            Err(e) => {
                self.finished = true;
                Some(Err(e))
            }
        }
    }
}

/// Everything [`inspect`] found.
#[derive(Debug)]
#[non_exhaustive]
pub struct Inspection {
    /// The header.
    pub header: Header,
    /// Every block whose frame could be read, in order.
    pub blocks: Vec<BlockInfo>,
    /// The end record, if it was reached.
    pub end: Option<EndInfo>,
    /// Why the walk stopped early, if it did.
    pub error: Option<Error>,
}

impl Inspection {
    /// True when every block checked out, the end record was reached and
    /// agreed with the blocks, and nothing followed it.
    pub fn is_intact(&self) -> bool {
        self.error.is_none()
            && self.end.is_some()
            && self
                .blocks
                .iter()
                .all(|b| matches!(b.crc_status, CrcStatus::Ok))
    }
}

/// Inspects a whole container: header, every block, end record.
///
/// # Errors
///
/// Only when the header cannot be read (as for [`Inspector::new`]); damage
/// after the header is reported in the [`Inspection`].
///
/// # Example
///
/// ```
/// use subrange::format::inspect;
/// use subrange::{compress, Options};
///
/// # fn main() -> Result<(), subrange::Error> {
/// let data = subrange::corpus::gauge_csv(3, 10_000);
/// let packed = compress(&data, &Options::default())?;
/// let report = inspect(&packed[..])?;
/// assert!(report.is_intact());
/// assert_eq!(report.blocks.len(), 1);
/// assert_eq!(report.end.unwrap().container_len, packed.len() as u64);
///
/// let report = inspect(&packed[..packed.len() - 3])?;
/// assert!(!report.is_intact());
/// # Ok(())
/// # }
/// ```
pub fn inspect<R: Read>(reader: R) -> Result<Inspection> {
    let mut walk = Inspector::new(reader)?;
    let mut blocks = Vec::new();
    let mut error = None;
    for item in walk.by_ref() {
        match item {
            Ok(b) => blocks.push(b),
            Err(e) => error = Some(e),
        }
    }
    Ok(Inspection {
        header: walk.header.clone(),
        blocks,
        end: walk.end,
        error,
    })
}
