//! Block records: the frame that describes a block, its payload, and the end
//! record.
//!
//! A frame holds the block kind, the raw length, (for coded blocks) the
//! payload length, the CRC-32 of the raw bytes, (for coded blocks) the
//! CRC-32 of the payload, and a frame check: a CRC-32 over the block's index
//! (8 bytes, little-endian) followed by the frame bytes. The index in the
//! check makes a block that was moved, dropped or repeated fail even though
//! its own bytes are intact. The end record has the same shape with the
//! block count and the total raw length.
//!
//! Invariants: the writer stores a block whenever coding would not make it
//! strictly shorter, so a coded block's payload is always shorter than its
//! raw bytes; the reader checks every length against the header's block size
//! and that rule *before* it allocates or reads a payload, and decoded bytes
//! leave the reader only after their CRC-32 matched.

use std::io::Read;
use std::vec::Vec;

use crate::error::{Error, ErrorKind, Result};
use crate::format::input::Input;
use crate::format::Header;
use crate::preset::Preset;
use crate::vint::put_vint;

/// Kind byte of the end record.
const KIND_END: u8 = 0x00;
/// Kind byte of a stored block.
const KIND_STORED: u8 = 0x01;
/// Kind byte of a coded block.
const KIND_CODED: u8 = 0x02;
/// Kind byte of an end record followed by a block index.
pub(crate) const KIND_INDEXED_END: u8 = 0x03;

/// How a block's bytes are kept.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub enum BlockKind {
    /// The raw bytes as they are (coding would not have made them shorter).
    Stored,
    /// Coded by the container's preset.
    Coded,
}

/// A block's frame, as read.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) struct BlockFrame {
    pub(crate) index: u64,
    pub(crate) offset: u64,
    pub(crate) kind: BlockKind,
    pub(crate) raw_len: u64,
    pub(crate) payload_len: u64,
    pub(crate) raw_crc: u32,
    pub(crate) payload_crc: Option<u32>,
}

/// What follows the previous record.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Frame {
    Block(BlockFrame),
    End {
        block_count: u64,
        total_raw: u64,
        /// Whether a block index follows (kind `03`).
        indexed: bool,
    },
}

/// The frame check of record `index`: CRC-32 of the index (8 bytes,
/// little-endian) followed by the record's bytes.
pub(crate) fn frame_check(index: u64, frame: &[u8]) -> u32 {
    let mut h = crc32fast::Hasher::new();
    h.update(&index.to_le_bytes());
    h.update(frame);
    h.finalize()
}

/// A block ready to write: its frame, and its payload unless it is stored
/// (then the payload is the raw bytes).
#[derive(Debug)]
pub(crate) struct EncodedBlock {
    pub(crate) frame: Vec<u8>,
    pub(crate) coded: Option<Vec<u8>>,
}

#[cfg(test)]
impl EncodedBlock {
    pub(crate) fn len(&self, raw_len: usize) -> u64 {
        (self.frame.len() + self.coded.as_ref().map_or(raw_len, Vec::len)) as u64
    }
}

/// Codes block `index` (non-empty `raw`) with `preset`, storing it when
/// coding does not make it shorter.
pub(crate) fn encode_block(preset: &Preset, index: u64, raw: &[u8]) -> Result<EncodedBlock> {
    let coded = preset.encode_or_store(raw)?.filter(|c| c.len() < raw.len());
    let raw_crc = crc32fast::hash(raw);
    let mut frame = Vec::with_capacity(24);
    let coded = if let Some(coded) = coded {
        frame.push(KIND_CODED);
        put_vint(&mut frame, raw.len() as u64);
        put_vint(&mut frame, coded.len() as u64);
        frame.extend_from_slice(&raw_crc.to_le_bytes());
        frame.extend_from_slice(&crc32fast::hash(&coded).to_le_bytes());
        Some(coded)
    } else {
        frame.push(KIND_STORED);
        put_vint(&mut frame, raw.len() as u64);
        frame.extend_from_slice(&raw_crc.to_le_bytes());
        None
    };
    let check = frame_check(index, &frame);
    frame.extend_from_slice(&check.to_le_bytes());
    Ok(EncodedBlock { frame, coded })
}

/// The end record after `block_count` blocks holding `total_raw` bytes;
/// `indexed` when a block index follows it.
pub(crate) fn end_record(block_count: u64, total_raw: u64, indexed: bool) -> Vec<u8> {
    let mut out = Vec::with_capacity(24);
    out.push(if indexed { KIND_INDEXED_END } else { KIND_END });
    put_vint(&mut out, block_count);
    put_vint(&mut out, total_raw);
    let check = frame_check(block_count, &out);
    out.extend_from_slice(&check.to_le_bytes());
    out
}

/// Reads the frame of record `index`, checking it against `header`; damage
/// is reported as [`ErrorKind::CorruptFrame`] (or [`ErrorKind::CorruptEnd`]
/// for an end record).
pub(crate) fn read_frame<R: Read>(
    input: &mut Input<R>,
    header: &Header,
    index: u64,
) -> Result<Frame> {
    let offset = input.offset();
    let mut end = false;
    read_frame_fields(input, header, index, offset, &mut end).map_err(|e| match e.kind() {
        ErrorKind::CorruptStream { reason, .. } if end => Error::corrupt_end(offset, reason),
        ErrorKind::CorruptStream { reason, .. } => Error::corrupt_frame(index, offset, reason),
        _ => e,
    })
}

fn read_frame_fields<R: Read>(
    input: &mut Input<R>,
    header: &Header,
    index: u64,
    offset: u64,
    end: &mut bool,
) -> Result<Frame> {
    input.start_capture();
    let kind = input.byte()?;
    let frame = match kind {
        KIND_END | KIND_INDEXED_END => {
            *end = true;
            let block_count = input.vint("malformed block count in the end record")?;
            let total_raw = input.vint("malformed total length in the end record")?;
            Frame::End {
                block_count,
                total_raw,
                indexed: kind == KIND_INDEXED_END,
            }
        }
        KIND_STORED | KIND_CODED => {
            let raw_len = input.vint("malformed raw length")?;
            let (kind, payload_len) = if kind == KIND_CODED {
                (BlockKind::Coded, input.vint("malformed payload length")?)
            } else {
                (BlockKind::Stored, raw_len)
            };
            let raw_crc = input.u32_le()?;
            let payload_crc = match kind {
                BlockKind::Coded => Some(input.u32_le()?),
                BlockKind::Stored => None,
            };
            Frame::Block(BlockFrame {
                index,
                offset,
                kind,
                raw_len,
                payload_len,
                raw_crc,
                payload_crc,
            })
        }
        _ => return Err(Error::corrupt_frame(index, offset, "unknown record kind")),
    };
    let expected = frame_check(index, input.captured());
    if input.u32_le()? != expected {
        return Err(match frame {
            Frame::End { .. } => Error::corrupt_end(offset, "end record check mismatch"),
            Frame::Block(_) => Error::corrupt_frame(
                index,
                offset,
                "frame check mismatch (damaged, or a block moved, dropped or repeated)",
            ),
        });
    }
    if let Frame::Block(b) = &frame {
        if b.raw_len == 0 {
            return Err(Error::corrupt_frame(index, offset, "empty block"));
        }
        if b.raw_len > header.block_size {
            return Err(Error::corrupt_frame(
                index,
                offset,
                "raw length above the block size",
            ));
        }
        if b.kind == BlockKind::Coded && b.payload_len >= b.raw_len {
            return Err(Error::corrupt_frame(
                index,
                offset,
                "coded payload not shorter than the block",
            ));
        }
    }
    Ok(frame)
}

/// Reads a block's payload into `buf` and checks the payload CRC-32.
pub(crate) fn read_payload<R: Read>(
    input: &mut Input<R>,
    frame: &BlockFrame,
    buf: &mut Vec<u8>,
) -> Result<()> {
    // Lengths were checked against the block size (at most 64 MiB).
    input.fill(buf, frame.payload_len as usize)?;
    if let Some(expected) = frame.payload_crc {
        let actual = crc32fast::hash(buf);
        if actual != expected {
            return Err(Error::corrupt_block(
                frame.index,
                "payload checksum mismatch",
            ));
        }
    }
    Ok(())
}

/// Decodes a block's payload into `out` and checks the raw CRC-32.
///
/// For a stored block `payload` is swapped into `out`.
pub(crate) fn decode_payload(
    preset: &Preset,
    frame: &BlockFrame,
    payload: &mut Vec<u8>,
    out: &mut Vec<u8>,
) -> Result<()> {
    match frame.kind {
        BlockKind::Stored => core::mem::swap(payload, out),
        BlockKind::Coded => preset
            .decode_block(payload, frame.raw_len as usize, out)
            .map_err(|e| in_block(frame.index, e))?,
    }
    if out.len() as u64 != frame.raw_len {
        return Err(Error::corrupt_block(
            frame.index,
            "decoded length differs from the frame",
        ));
    }
    check_raw(frame, out)
}

/// Checks the payload CRC-32 of a block whose payload was borrowed rather
/// than read by [`read_payload`].
pub(crate) fn check_payload(frame: &BlockFrame, payload: &[u8]) -> Result<()> {
    if let Some(expected) = frame.payload_crc {
        if crc32fast::hash(payload) != expected {
            return Err(Error::corrupt_block(
                frame.index,
                "payload checksum mismatch",
            ));
        }
    }
    Ok(())
}

/// Checks a stored block already copied to `out`: its length and raw
/// CRC-32.
pub(crate) fn check_stored(frame: &BlockFrame, out: &[u8]) -> Result<()> {
    if frame.kind != BlockKind::Stored || out.len() as u64 != frame.raw_len {
        return Err(Error::corrupt_block(
            frame.index,
            "decoded length differs from the frame",
        ));
    }
    check_raw(frame, out)
}

/// Decodes a block's payload into `out` (exactly `raw_len` bytes long) and
/// checks the raw CRC-32.
pub(crate) fn decode_payload_into(
    preset: &Preset,
    frame: &BlockFrame,
    payload: &[u8],
    out: &mut [u8],
) -> Result<()> {
    if out.len() as u64 != frame.raw_len || payload.len() as u64 != frame.payload_len {
        return Err(Error::corrupt_block(
            frame.index,
            "decoded length differs from the frame",
        ));
    }
    match frame.kind {
        BlockKind::Stored => out.copy_from_slice(payload),
        BlockKind::Coded => preset
            .decode_into(payload, out)
            .map_err(|e| in_block(frame.index, e))?,
    }
    check_raw(frame, out)
}

fn check_raw(frame: &BlockFrame, raw: &[u8]) -> Result<()> {
    let actual = crc32fast::hash(raw);
    if actual != frame.raw_crc {
        return Err(ErrorKind::ChecksumMismatch {
            block: frame.index,
            expected: frame.raw_crc,
            actual,
        }
        .into());
    }
    Ok(())
}

/// Turns a payload-level error into a block-level one.
fn in_block(index: u64, e: crate::Error) -> crate::Error {
    let reason = match e.kind() {
        ErrorKind::CorruptStream { reason, .. }
        | ErrorKind::CorruptTable { reason }
        | ErrorKind::InvalidModel { reason } => reason,
        ErrorKind::Truncated { .. } => "coded data ends before the block does",
        ErrorKind::TrailingBytes { .. } => "coded data continues after the block's last byte",
        ErrorKind::UncodableSymbol { .. } => "coded data names a symbol the model cannot code",
        _ => return e,
    };
    Error::corrupt_block(index, reason)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::format::header::{encode_header, read_header};
    use crate::format::DecodeLimits;

    #[test]
    fn frames_round_trip_and_bind_the_index() {
        let preset = Preset::default();
        let raw: Vec<u8> = b"G107,1440,212,1123,94\n".repeat(40);
        let mut bytes = encode_header(&preset, 4096);
        let block = encode_block(&preset, 0, &raw).unwrap();
        assert!(block.coded.is_some());
        bytes.extend_from_slice(&block.frame);
        bytes.extend_from_slice(block.coded.as_ref().unwrap());
        bytes.extend_from_slice(&end_record(1, raw.len() as u64, false));
        let mut input = Input::new(&bytes[..]);
        let header = read_header(&mut input, &DecodeLimits::new()).unwrap();
        let Frame::Block(f) = read_frame(&mut input, &header, 0).unwrap() else {
            panic!("expected a block");
        };
        let (mut payload, mut out) = (Vec::new(), Vec::new());
        read_payload(&mut input, &f, &mut payload).unwrap();
        decode_payload(&header.preset, &f, &mut payload, &mut out).unwrap();
        assert_eq!(out, raw);
        assert_eq!(
            read_frame(&mut input, &header, 1).unwrap(),
            Frame::End {
                block_count: 1,
                total_raw: raw.len() as u64,
                indexed: false,
            }
        );
        // The same frame read as block 1 fails its check.
        let mut input = Input::new(&block.frame[..]);
        assert!(read_frame(&mut input, &header, 1).is_err());
    }

    #[test]
    fn incompressible_blocks_are_stored() {
        let raw: Vec<u8> = (0..=255u8).collect();
        let block = encode_block(&Preset::default(), 3, &raw).unwrap();
        assert!(block.coded.is_none());
        assert_eq!(block.len(raw.len()), raw.len() as u64 + 1 + 2 + 4 + 4);
    }
}
