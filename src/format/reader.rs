//! The container reader: header, then block after block, then the end record.
//!
//! This is the one decoding engine under the [`Decompressor`], the one-shot
//! functions and the [`Inspector`](crate::format::Inspector). It hands out a
//! block's frame and checked payload; decoding is a separate step
//! ([`decode_payload`]) so that the one-shot path can decode several blocks
//! at once.
//!
//! Invariant: each declared length passes its check (block size, total
//! limit, the frame rules) before any buffer is sized for it, and the end
//! record must agree with the blocks actually read.
//!
//! [`Decompressor`]: crate::stream::Decompressor

use std::io::Read;
use std::vec::Vec;

#[cfg(doc)]
use crate::error::ErrorKind;
use crate::error::Result;
use crate::format::block::{check_payload, read_frame, read_payload, BlockFrame, Frame};
use crate::format::header::read_header;
use crate::format::index::{read_after_end, IndexExpect};
use crate::format::input::Input;
use crate::format::limits::DecodeLimits;
use crate::format::Header;

/// What a decoder does with bytes after a container's end record.
///
/// # Example
///
/// ```
/// use subrange::format::TrailingData;
/// use subrange::stream::DecodeOptions;
///
/// let mut opts = DecodeOptions::new();
/// opts.trailing(TrailingData::Concatenated);
/// assert_eq!(opts.get_trailing(), TrailingData::Concatenated);
/// ```
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub enum TrailingData {
    /// Any byte after the end record is an error
    /// ([`ErrorKind::TrailingBytes`]). The default.
    #[default]
    Reject,
    /// Stop at the end record without reading further: the inner reader is
    /// left just after the container (for containers embedded in a larger
    /// stream).
    Leave,
    /// Bytes after the end record must be another container; its data
    /// continues the output.
    Concatenated,
}

/// How many trailing bytes an error report counts at most.
const TRAILING_COUNT_MAX: u64 = 1 << 16;

#[derive(Debug)]
pub(crate) struct ContainerReader<R> {
    input: Input<R>,
    limits: DecodeLimits,
    trailing: TrailingData,
    header: Option<Header>,
    index: u64,
    /// Raw bytes in the blocks of the current container.
    total: u64,
    /// Raw bytes in the blocks of all containers read (for the limit).
    grand_total: u64,
    /// Offset of the current container's first byte.
    start: u64,
    /// The index entries the blocks read so far call for.
    expect: IndexExpect,
    done: bool,
}

impl<R: Read> ContainerReader<R> {
    pub(crate) fn new(inner: R, limits: DecodeLimits, trailing: TrailingData) -> Self {
        ContainerReader {
            input: Input::new(inner),
            limits,
            trailing,
            header: None,
            index: 0,
            total: 0,
            grand_total: 0,
            start: 0,
            expect: IndexExpect::new(),
            done: false,
        }
    }

    pub(crate) fn input(&self) -> &Input<R> {
        &self.input
    }

    pub(crate) fn input_mut(&mut self) -> &mut Input<R> {
        &mut self.input
    }

    pub(crate) fn into_input(self) -> Input<R> {
        self.input
    }

    /// The header of the container being read, reading it first if needed.
    pub(crate) fn header(&mut self) -> Result<&Header> {
        if self.header.is_none() {
            self.start = self.input.offset();
            let h = read_header(&mut self.input, &self.limits)?;
            self.header = Some(h);
        }
        Ok(self.header.as_ref().expect("header was just read"))
    }

    /// Reads the next block's frame and payload (into `payload`, its
    /// checksum checked). `None` after the last block of the last container.
    pub(crate) fn next_block(&mut self, payload: &mut Vec<u8>) -> Result<Option<BlockFrame>> {
        let Some(frame) = self.next_frame()? else {
            return Ok(None);
        };
        read_payload(&mut self.input, &frame, payload)?;
        self.count(&frame);
        Ok(Some(frame))
    }

    /// As [`next_block`](Self::next_block), but the payload's checksum is
    /// left to the caller ([`check_payload`], before decoding it), so that
    /// the thread decoding a block also checks it.
    pub(crate) fn next_block_unchecked(
        &mut self,
        payload: &mut Vec<u8>,
    ) -> Result<Option<BlockFrame>> {
        let Some(frame) = self.next_frame()? else {
            return Ok(None);
        };
        // Lengths were checked against the block size (at most 64 MiB).
        self.input.fill(payload, frame.payload_len as usize)?;
        self.count(&frame);
        Ok(Some(frame))
    }

    /// Counts a block whose payload has been read.
    fn count(&mut self, frame: &BlockFrame) {
        let block_size = self.header.as_ref().map_or(0, |h| h.block_size);
        let record_len = self.input.offset() - frame.offset;
        self.expect.push(block_size, record_len, frame.raw_len);
        self.index += 1;
        self.total += frame.raw_len;
        self.grand_total += frame.raw_len;
    }

    /// Reads the next block's frame (the payload is the caller's to read),
    /// going past end records into concatenated containers. `None` after the
    /// last block of the last container.
    fn next_frame(&mut self) -> Result<Option<BlockFrame>> {
        loop {
            if self.done {
                return Ok(None);
            }
            self.header()?;
            let header = self.header.as_ref().expect("header was just read");
            let at = self.input.offset();
            match read_frame(&mut self.input, header, self.index)? {
                Frame::Block(frame) => {
                    crate::Error::check_limit(
                        "total decoded length",
                        self.grand_total.saturating_add(frame.raw_len),
                        self.limits.total_limit(),
                    )?;
                    return Ok(Some(frame));
                }
                Frame::End {
                    block_count,
                    total_raw,
                    indexed,
                } => {
                    if block_count != self.index {
                        return Err(crate::Error::corrupt_end(
                            at,
                            "its block count differs from the blocks read",
                        ));
                    }
                    if total_raw != self.total {
                        return Err(crate::Error::corrupt_end(
                            at,
                            "its total differs from the bytes read",
                        ));
                    }
                    if indexed {
                        let end_bytes = self.input.captured().to_vec();
                        let end_offset = self.input.offset() - end_bytes.len() as u64;
                        read_after_end(
                            &mut self.input,
                            end_offset - self.start,
                            &end_bytes,
                            &self.expect,
                        )?;
                    }
                    self.after_end()?;
                }
            }
        }
    }

    fn after_end(&mut self) -> Result<()> {
        match self.trailing {
            TrailingData::Leave => self.done = true,
            TrailingData::Reject => {
                self.done = true;
                let offset = self.input.offset();
                let count = self.input.count_rest(TRAILING_COUNT_MAX)?;
                if count > 0 {
                    return Err(crate::Error::trailing_bytes(offset, count));
                }
            }
            TrailingData::Concatenated => {
                if self.input.at_end()? {
                    self.done = true;
                } else {
                    self.header = None;
                    self.index = 0;
                    self.total = 0;
                    self.expect = IndexExpect::new();
                }
            }
        }
        Ok(())
    }
}

impl<'a> ContainerReader<&'a [u8]> {
    /// As [`next_block`](ContainerReader::next_block), with the payload
    /// borrowed from the input instead of copied (its checksum checked).
    /// Falls back to copying into `spare` when the input cannot lend it.
    pub(crate) fn next_block_borrowed(
        &mut self,
        spare: &mut Vec<u8>,
    ) -> Result<Option<(BlockFrame, Payload<'a>)>> {
        let Some(frame) = self.next_frame()? else {
            return Ok(None);
        };
        let payload = match self.input.take_slice(frame.payload_len as usize)? {
            Some(slice) => {
                check_payload(&frame, slice)?;
                Payload::Borrowed(slice)
            }
            None => {
                let mut buf = core::mem::take(spare);
                read_payload(&mut self.input, &frame, &mut buf)?;
                Payload::Owned(buf)
            }
        };
        self.count(&frame);
        Ok(Some((frame, payload)))
    }
}

/// A block payload: borrowed from an in-memory container, or read into a
/// buffer of its own.
#[derive(Debug)]
pub(crate) enum Payload<'a> {
    /// A slice of the container.
    Borrowed(&'a [u8]),
    /// A copy.
    Owned(Vec<u8>),
}

impl Payload<'_> {
    /// The payload's bytes.
    pub(crate) fn bytes(&self) -> &[u8] {
        match self {
            Payload::Borrowed(s) => s,
            Payload::Owned(v) => v,
        }
    }
}
