//! The block index record: where every block starts and how many raw bytes
//! it holds, after the end record.
//!
//! ```text
//! end record (kind 03)  block count · total · frame check
//! entries               per block: record length (vint) · shortfall (vint)
//! end offset            u64, little-endian: where the end record starts
//! index check           CRC-32 of the end record, the entries and the end offset
//! mark                  67 72 73 B7 (the magic, backwards)
//! ```
//!
//! A block's *record* is its frame and payload; its *shortfall* is the
//! header's block size minus its raw length (0 for every full block, so a
//! typical entry takes four bytes). Offsets follow by adding record lengths
//! from the end of the header, raw offsets by adding raw lengths. The fixed
//! 16-byte tail lets a reader that can seek find the index from the end of
//! the container; a reader that cannot seek meets it right after the end
//! record, whose kind byte (`03` instead of `00`) announces it.
//!
//! Invariants: the writer's entries are exactly those of the blocks it
//! wrote. A reader never sizes anything by the index before its block count
//! passed the bounds the container's length allows (each entry takes at
//! least two bytes, each block at least [`MIN_RECORD_LEN`]) and the memory
//! limit; every field is checked against its index check, against the end
//! record, and (when a block is read) against the block's own frame.

use std::io::{BufReader, Read, Seek, SeekFrom};
use std::vec::Vec;

use crate::error::{Error, ErrorKind, Result};
use crate::format::block::{frame_check, KIND_INDEXED_END};
use crate::format::input::Input;
use crate::format::limits::DecodeLimits;
use crate::format::Header;
use crate::vint::put_vint;

/// The last four bytes of a container with a block index.
pub const INDEX_MARK: [u8; 4] = [0x67, 0x72, 0x73, 0xB7];

/// Length of the fixed tail: end offset, index check, mark.
pub(crate) const TAIL_LEN: u64 = 16;

/// Smallest block record: a stored block of one byte (kind, raw length,
/// two CRC-32s, the byte).
pub(crate) const MIN_RECORD_LEN: u64 = 11;

/// Largest frame: kind, two 10-byte vints, three CRC-32s.
pub(crate) const MAX_FRAME_LEN: u64 = 33;

/// Smallest entry: two one-byte vints.
const MIN_ENTRY_LEN: u64 = 2;

/// Largest entry: two 10-byte vints.
const MAX_ENTRY_LEN: u64 = 20;

/// When a writer adds a block index after the end record.
///
/// # Example
///
/// ```
/// use subrange::format::IndexPolicy;
/// use subrange::Options;
///
/// let mut opts = Options::new();
/// opts.block_index(IndexPolicy::Never);
/// assert_eq!(opts.get_block_index(), IndexPolicy::Never);
/// ```
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub enum IndexPolicy {
    /// For containers of two or more blocks (one block needs no index).
    /// The default.
    #[default]
    Auto,
    /// Always, even for an empty container or a single block.
    Always,
    /// Never: the container ends with its end record, as containers written
    /// before the index existed do.
    Never,
}

impl IndexPolicy {
    /// Whether a container of `blocks` blocks gets an index.
    pub(crate) fn applies(self, blocks: u64) -> bool {
        match self {
            IndexPolicy::Auto => blocks > 1,
            IndexPolicy::Always => true,
            IndexPolicy::Never => false,
        }
    }
}

/// Appends the entry of a block of `record_len` bytes holding `raw_len`
/// raw bytes.
fn put_entry(out: &mut Vec<u8>, block_size: u64, record_len: u64, raw_len: u64) {
    put_vint(out, record_len);
    put_vint(out, block_size - raw_len);
}

/// The writer's side: entries of the blocks written so far.
#[derive(Debug, Clone)]
pub(crate) struct IndexBuilder {
    block_size: u64,
    entries: Vec<u8>,
}

impl IndexBuilder {
    pub(crate) fn new(block_size: u64) -> Self {
        IndexBuilder {
            block_size,
            entries: Vec::new(),
        }
    }

    /// Records the next block.
    pub(crate) fn push(&mut self, record_len: u64, raw_len: u64) {
        put_entry(&mut self.entries, self.block_size, record_len, raw_len);
    }

    /// The bytes that follow `end_record` (kind `03`), which starts at
    /// `end_offset` of the container.
    pub(crate) fn finish(&self, end_record: &[u8], end_offset: u64) -> Vec<u8> {
        let mut out = Vec::with_capacity(self.entries.len() + TAIL_LEN as usize);
        out.extend_from_slice(&self.entries);
        out.extend_from_slice(&end_offset.to_le_bytes());
        let mut h = crc32fast::Hasher::new();
        h.update(end_record);
        h.update(&out);
        out.extend_from_slice(&h.finalize().to_le_bytes());
        out.extend_from_slice(&INDEX_MARK);
        out
    }
}

/// The streaming reader's side: what the entries must be, from the blocks
/// actually read, kept as a running CRC-32 and length (O(1) memory).
#[derive(Debug, Clone)]
pub(crate) struct IndexExpect {
    hasher: crc32fast::Hasher,
    len: u64,
    scratch: Vec<u8>,
}

impl IndexExpect {
    pub(crate) fn new() -> Self {
        IndexExpect {
            hasher: crc32fast::Hasher::new(),
            len: 0,
            scratch: Vec::with_capacity(20),
        }
    }

    /// Records a block that was read.
    pub(crate) fn push(&mut self, block_size: u64, record_len: u64, raw_len: u64) {
        self.scratch.clear();
        put_entry(&mut self.scratch, block_size, record_len, raw_len);
        self.hasher.update(&self.scratch);
        self.len += self.scratch.len() as u64;
    }
}

/// A read error inside the index: damage to the index, unless the reader
/// itself failed.
fn damaged(e: crate::Error, at: u64, reason: &'static str) -> crate::Error {
    match e.kind() {
        ErrorKind::Io(_) => e,
        _ => Error::corrupt_index(at, reason),
    }
}

/// Reads the index that follows an end record of kind `03` from a stream
/// and checks it against the blocks read. `end_offset` is where the end
/// record started (from the start of the container) and `end_bytes` are its
/// bytes. Returns the length of what followed the end record.
///
/// # Errors
///
/// [`ErrorKind::CorruptIndex`] for an index whose check fails or whose
/// entries or end offset differ from the blocks read;
/// [`ErrorKind::Truncated`] when the input ends inside it.
pub(crate) fn read_after_end<R: Read>(
    input: &mut Input<R>,
    end_offset: u64,
    end_bytes: &[u8],
    expect: &IndexExpect,
) -> Result<u64> {
    let start = input.offset();
    let mut check = crc32fast::Hasher::new();
    check.update(end_bytes);
    let mut entries = crc32fast::Hasher::new();
    let mut left = expect.len;
    let mut buf = Vec::new();
    while left > 0 {
        let n = left.min(4096) as usize;
        input.fill(&mut buf, n)?;
        check.update(&buf);
        entries.update(&buf);
        left -= n as u64;
    }
    input.start_capture();
    let mut recorded = [0u8; 8];
    for b in &mut recorded {
        *b = input.byte()?;
    }
    check.update(&recorded);
    let at = input.offset();
    if input.u32_le()? != check.finalize() {
        return Err(Error::corrupt_index(at, "index check mismatch"));
    }
    let at = input.offset();
    for m in INDEX_MARK {
        if input.byte()? != m {
            return Err(Error::corrupt_index(at, "index mark missing"));
        }
    }
    if u64::from_le_bytes(recorded) != end_offset {
        return Err(Error::corrupt_index(
            start,
            "index end offset differs from the end record's",
        ));
    }
    if entries.finalize() != expect.hasher.clone().finalize() {
        return Err(Error::corrupt_index(
            start,
            "index entries differ from the blocks read",
        ));
    }
    Ok(input.offset() - start)
}

/// One block as an index describes it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub struct IndexEntry {
    /// Offset of the block's frame from the start of the container.
    pub offset: u64,
    /// Length of the block's frame and payload.
    pub record_len: u64,
    /// Offset of the block's first byte in the decoded data.
    pub raw_offset: u64,
    /// Number of decoded bytes the block holds (at least 1).
    pub raw_len: u64,
}

/// What [`parse_recorded`] and the walk find: the blocks, and where the
/// end record lies.
#[derive(Debug)]
pub(crate) struct Located {
    pub(crate) blocks: Vec<IndexEntry>,
    pub(crate) total_raw: u64,
    /// Offset of the end record.
    pub(crate) end_offset: u64,
    /// Offset just after the container's last byte.
    pub(crate) container_len: u64,
}

/// Fails with [`ErrorKind::LimitExceeded`] when `count` entries would take
/// more memory than the limit allows.
pub(crate) fn check_entry_memory(count: u64, limits: &DecodeLimits) -> Result<()> {
    // An entry, and the pair it is built from while the index is read.
    let each = core::mem::size_of::<IndexEntry>() as u64 + 16;
    Error::check_limit(
        "memory for the block index",
        count.saturating_mul(each),
        limits.memory_limit(),
    )
}

/// Where the tail of a container of `len` bytes (from `base`) says its end
/// record is: `Some(offset)` when the container ends with the index mark.
pub(crate) fn tail_end_offset<R: Read + Seek>(
    reader: &mut R,
    base: u64,
    len: u64,
    header: &Header,
) -> Result<Option<u64>> {
    if len < header.len + TAIL_LEN {
        return Ok(None);
    }
    reader.seek(SeekFrom::Start(base + len - TAIL_LEN))?;
    let mut tail = [0u8; TAIL_LEN as usize];
    reader.read_exact(&mut tail)?;
    if tail[12..] != INDEX_MARK {
        return Ok(None);
    }
    let mut offset = [0u8; 8];
    offset.copy_from_slice(&tail[..8]);
    Ok(Some(u64::from_le_bytes(offset)))
}

/// Reads and checks the index of a container of `len` bytes (from `base`)
/// whose end record (kind `03`) starts at `end_offset`.
///
/// # Errors
///
/// [`ErrorKind::CorruptIndex`] for any disagreement (the record is not an
/// indexed end record, its frame check, the index check, the block count
/// against the index length, entries against the end record, offsets that
/// do not add up); [`ErrorKind::LimitExceeded`] when the entries would need
/// more memory than `limits` allow; the reader's I/O error.
pub(crate) fn parse_recorded<R: Read + Seek>(
    reader: &mut R,
    base: u64,
    len: u64,
    header: &Header,
    limits: &DecodeLimits,
    end_offset: u64,
) -> Result<Located> {
    // The smallest end record: kind, two one-byte vints, its check.
    if end_offset < header.len || end_offset.saturating_add(7 + TAIL_LEN) > len {
        return Err(Error::corrupt_index(
            end_offset,
            "index end offset outside the container",
        ));
    }
    let region = len - end_offset;
    reader.seek(SeekFrom::Start(base + end_offset))?;
    let inner = BufReader::with_capacity(8192, (&mut *reader).take(region));
    let mut input = Input::at(inner, end_offset);
    let end = |e| damaged(e, end_offset, "malformed end record before the index");
    input.start_capture();
    if input.byte().map_err(end)? != KIND_INDEXED_END {
        return Err(Error::corrupt_index(
            end_offset,
            "no indexed end record at the index's end offset",
        ));
    }
    let count = input.vint("block count").map_err(end)?;
    let total_raw = input.vint("total").map_err(end)?;
    let expected = frame_check(count, input.captured());
    if input.u32_le().map_err(end)? != expected {
        return Err(Error::corrupt_index(
            end_offset,
            "end record check mismatch",
        ));
    }
    let mut check = crc32fast::Hasher::new();
    check.update(input.captured());
    let entries_at = input.offset();
    let entries_len = len - TAIL_LEN - entries_at.min(len - TAIL_LEN);
    // Bounds from the lengths alone, before anything is sized by `count`.
    if count.saturating_mul(MIN_ENTRY_LEN) > entries_len
        || count.saturating_mul(MAX_ENTRY_LEN) < entries_len
    {
        return Err(Error::corrupt_index(
            entries_at,
            "index length disagrees with the block count",
        ));
    }
    if count > (end_offset - header.len) / MIN_RECORD_LEN {
        return Err(Error::corrupt_index(
            end_offset,
            "more blocks than the container has room for",
        ));
    }
    check_entry_memory(count, limits)?;
    let mut raw = Vec::with_capacity(count as usize);
    let entry = |e| damaged(e, entries_at, "malformed index entry");
    for _ in 0..count {
        input.start_capture();
        let record_len = input.vint("record length").map_err(entry)?;
        let shortfall = input.vint("shortfall").map_err(entry)?;
        check.update(input.captured());
        raw.push((record_len, shortfall));
    }
    if input.offset() != len - TAIL_LEN {
        return Err(Error::corrupt_index(
            entries_at,
            "index length disagrees with the block count",
        ));
    }
    let tail = |e| damaged(e, len - TAIL_LEN, "malformed index tail");
    input.start_capture();
    let mut recorded = [0u8; 8];
    for b in &mut recorded {
        *b = input.byte().map_err(tail)?;
    }
    check.update(&recorded);
    if input.u32_le().map_err(tail)? != check.finalize() {
        return Err(Error::corrupt_index(
            len - TAIL_LEN + 8,
            "index check mismatch",
        ));
    }
    for m in INDEX_MARK {
        if input.byte().map_err(tail)? != m {
            return Err(Error::corrupt_index(len - 4, "index mark missing"));
        }
    }
    if u64::from_le_bytes(recorded) != end_offset {
        return Err(Error::corrupt_index(
            len - TAIL_LEN,
            "index end offset differs",
        ));
    }
    let mut blocks = Vec::with_capacity(raw.len());
    let (mut offset, mut raw_offset) = (header.len, 0u64);
    for (record_len, shortfall) in raw {
        if shortfall >= header.block_size {
            return Err(Error::corrupt_index(
                entries_at,
                "index entry's raw length outside the block size",
            ));
        }
        let raw_len = header.block_size - shortfall;
        if record_len < MIN_RECORD_LEN || record_len > raw_len + MAX_FRAME_LEN {
            return Err(Error::corrupt_index(
                entries_at,
                "index entry's record length impossible",
            ));
        }
        blocks.push(IndexEntry {
            offset,
            record_len,
            raw_offset,
            raw_len,
        });
        offset = offset.saturating_add(record_len);
        raw_offset = raw_offset.saturating_add(raw_len);
    }
    if offset != end_offset {
        return Err(Error::corrupt_index(
            entries_at,
            "index record lengths do not reach the end record",
        ));
    }
    if raw_offset != total_raw {
        return Err(Error::corrupt_index(
            entries_at,
            "index raw lengths differ from the end record's total",
        ));
    }
    Ok(Located {
        blocks,
        total_raw,
        end_offset,
        container_len: len,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn full_blocks_take_four_bytes_an_entry() {
        let mut b = IndexBuilder::new(1 << 20);
        b.push(400_000, 1 << 20);
        b.push(12, 1);
        assert_eq!(b.entries.len(), 3 + 1 + 1 + 3);
        let mut e = IndexExpect::new();
        e.push(1 << 20, 400_000, 1 << 20);
        e.push(1 << 20, 12, 1);
        assert_eq!(e.len, b.entries.len() as u64);
        assert_eq!(e.hasher.finalize(), crc32fast::hash(&b.entries));
        let tail = b.finish(&[3, 2, 1, 0, 0, 0, 0], 99);
        assert_eq!(tail.len(), b.entries.len() + TAIL_LEN as usize);
        assert_eq!(tail[tail.len() - 4..], INDEX_MARK);
    }
}
