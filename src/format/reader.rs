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

use crate::error::{ErrorKind, Result};
use crate::format::block::{read_frame, read_payload, BlockFrame, Frame};
use crate::format::header::read_header;
use crate::format::input::Input;
use crate::format::limits::{check, DecodeLimits};
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
            let h = read_header(&mut self.input, &self.limits)?;
            self.header = Some(h);
        }
        Ok(self.header.as_ref().expect("header was just read"))
    }

    /// Reads the next block's frame and payload (into `payload`, its
    /// checksum checked). `None` after the last block of the last container.
    pub(crate) fn next_block(&mut self, payload: &mut Vec<u8>) -> Result<Option<BlockFrame>> {
        loop {
            if self.done {
                return Ok(None);
            }
            self.header()?;
            let header = self.header.as_ref().expect("header was just read");
            match read_frame(&mut self.input, header, self.index)? {
                Frame::Block(frame) => {
                    check(
                        "total decoded length",
                        self.grand_total.saturating_add(frame.raw_len),
                        self.limits.total_limit(),
                    )?;
                    read_payload(&mut self.input, &frame, payload)?;
                    self.index += 1;
                    self.total += frame.raw_len;
                    self.grand_total += frame.raw_len;
                    return Ok(Some(frame));
                }
                Frame::End {
                    block_count,
                    total_raw,
                } => {
                    if block_count != self.index {
                        return Err(ErrorKind::CorruptBlock {
                            index: self.index,
                            reason: "end record block count differs from the blocks read",
                        }
                        .into());
                    }
                    if total_raw != self.total {
                        return Err(ErrorKind::CorruptBlock {
                            index: self.index,
                            reason: "end record total differs from the bytes read",
                        }
                        .into());
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
                    return Err(ErrorKind::TrailingBytes { offset, count }.into());
                }
            }
            TrailingData::Concatenated => {
                if self.input.at_end()? {
                    self.done = true;
                } else {
                    self.header = None;
                    self.index = 0;
                    self.total = 0;
                }
            }
        }
        Ok(())
    }
}
