//! The crate's error type.
//!
//! Every fallible operation returns [`Error`] — except the calls of the MQ
//! coder, whose only failures are out-of-range table indices and which
//! report them as its own [`MqError`](crate::mq::MqError). `Error` is a
//! small wrapper around a
//! [`#[non_exhaustive]`](ErrorKind) enum whose variants carry the context a
//! user needs to act: the offset of a truncation, the block of a checksum
//! mismatch, the limit that a declared size broke. [`Error::kind`] inspects it.
//!
//! With the `std` feature, `Error` converts into [`std::io::Error`]: damaged
//! input maps to [`std::io::ErrorKind::InvalidData`], truncation to
//! [`std::io::ErrorKind::UnexpectedEof`], the message stays the same, and
//! the original error is the `io::Error`'s
//! [`source`](std::error::Error::source) (downcast it to [`Error`]).
//! Converting such an `io::Error` back (`Error::from`, or `?`) returns the
//! original error rather than wrapping it as [`ErrorKind::Io`].

use core::fmt;

/// What went wrong, with the context needed to report it.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum ErrorKind {
    /// The coded input ended before the decoder had what it needed.
    #[error("truncated input: the coded stream ends at byte offset {offset}")]
    Truncated {
        /// Offset (in bytes, from the start of the stream) where input ran out.
        offset: u64,
    },
    /// The model cannot code this symbol: it is outside the alphabet or has
    /// zero frequency.
    #[error("symbol {symbol} cannot be coded by this model (alphabet of {alphabet})")]
    UncodableSymbol {
        /// The symbol that was asked for.
        symbol: u32,
        /// The model's alphabet size.
        alphabet: u32,
    },
    /// A model or frequency table broke the [`Model`](crate::model::Model)
    /// contract (zero or oversize total, a span outside the total, ...).
    #[error("invalid model: {reason}")]
    InvalidModel {
        /// Which rule was broken.
        reason: &'static str,
    },
    /// A parameter given by the caller is out of its documented range.
    #[error("invalid parameter `{name}`: {reason}")]
    InvalidParameter {
        /// The parameter's name.
        name: &'static str,
        /// The rule it broke.
        reason: &'static str,
    },
    /// The coded stream is not one this decoder could have produced (the
    /// container's parts have errors of their own: [`CorruptHeader`],
    /// [`CorruptFrame`], [`CorruptBlock`], [`CorruptEnd`]).
    ///
    /// [`CorruptHeader`]: ErrorKind::CorruptHeader
    /// [`CorruptFrame`]: ErrorKind::CorruptFrame
    /// [`CorruptBlock`]: ErrorKind::CorruptBlock
    /// [`CorruptEnd`]: ErrorKind::CorruptEnd
    #[error("corrupt coded stream at byte offset {offset}: {reason}")]
    CorruptStream {
        /// Offset (in bytes) near which the damage was detected.
        offset: u64,
        /// What was found.
        reason: &'static str,
    },
    /// A serialised model table could not be read back.
    #[error("corrupt model table: {reason}")]
    CorruptTable {
        /// What was found.
        reason: &'static str,
    },
    /// The container does not start with this crate's magic number.
    #[error("not a subrange container: the magic number is missing")]
    BadMagic,
    /// The container's format version is not one this release reads.
    #[error("unsupported container version {found} (this release reads version {supported})")]
    UnsupportedVersion {
        /// Version found in the header.
        found: u32,
        /// Highest version this release reads.
        supported: u32,
    },
    /// The container names a preset this release does not know.
    #[error("unknown preset id {id}")]
    UnknownPreset {
        /// The preset identifier found.
        id: u32,
    },
    /// The container's header is damaged (its check, a field, or a preset
    /// parameter the preset cannot have).
    #[error("damaged container header at byte offset {offset}: {reason}")]
    CorruptHeader {
        /// Offset (from the start of the container's input) of the field
        /// found wrong.
        offset: u64,
        /// What was found.
        reason: &'static str,
    },
    /// The frame of a block (the record before its payload: kind, lengths,
    /// checksums, frame check) is damaged, or a record is out of place.
    #[error("damaged frame of block {index} at byte offset {offset}: {reason}")]
    CorruptFrame {
        /// Zero-based index of the block whose frame it is.
        index: u64,
        /// Offset of the frame from the start of the input.
        offset: u64,
        /// What was found.
        reason: &'static str,
    },
    /// The payload of a block (the coded or stored bytes after its frame)
    /// is damaged: its checksum, or what decoding it found.
    #[error("damaged payload of block {index}: {reason}")]
    CorruptBlock {
        /// Zero-based block index.
        index: u64,
        /// What was found.
        reason: &'static str,
    },
    /// A block's payload decoded, but its CRC-32 does not match the
    /// recorded one.
    #[error(
        "damaged payload of block {block}: checksum mismatch, recorded {expected:#010x}, computed {actual:#010x}"
    )]
    ChecksumMismatch {
        /// Zero-based block index.
        block: u64,
        /// Checksum recorded in the container.
        expected: u32,
        /// Checksum of the decoded bytes.
        actual: u32,
    },
    /// The end record (after the last block) is damaged, or disagrees with
    /// the blocks read.
    #[error("damaged end record at byte offset {offset}: {reason}")]
    CorruptEnd {
        /// Offset of the end record from the start of the input.
        offset: u64,
        /// What was found.
        reason: &'static str,
    },
    /// A declared size is over the configured limit; nothing was allocated.
    #[error("limit exceeded: {what} is {declared}, the limit is {limit}")]
    LimitExceeded {
        /// What was declared (block size, table size, memory, ...).
        what: &'static str,
        /// The declared value.
        declared: u64,
        /// The limit in force.
        limit: u64,
    },
    /// Bytes follow the end of the coded data.
    #[error("{count} unexpected trailing byte(s) after the end at offset {offset}")]
    TrailingBytes {
        /// Offset of the first unexpected byte.
        offset: u64,
        /// How many were seen (a lower bound for streams).
        count: u64,
    },
    /// A container's block index is damaged, or disagrees with the blocks
    /// it describes (their frames, or the end record).
    #[error("corrupt block index at byte offset {offset}: {reason}")]
    CorruptIndex {
        /// Offset (in bytes, from the start of the container) of the record
        /// or block frame where the disagreement was found.
        offset: u64,
        /// What was found.
        reason: &'static str,
    },
    /// A byte range asked of the decoded data does not lie within it
    /// (`start > end`, or `end` beyond the data's length).
    #[error("byte range {start}..{end} lies outside the decoded data of {len} bytes")]
    RangeOutsideData {
        /// First byte asked for.
        start: u64,
        /// One past the last byte asked for.
        end: u64,
        /// Length of the decoded data.
        len: u64,
    },
    /// A model snapshot was missing, different, or damaged.
    #[error("snapshot mismatch: {reason}")]
    Snapshot {
        /// What did not match.
        reason: &'static str,
    },
    /// An error of the MQ binary coder (context or state out of range).
    #[error("MQ coder: {0}")]
    Mq(#[from] crate::mq::MqError),
    /// An I/O error from the underlying reader or writer.
    #[cfg(feature = "std")]
    #[error("I/O error: {0}")]
    Io(#[from] std::io::Error),
}

/// The error type of every fallible operation in this crate.
///
/// # Example
///
/// ```
/// use subrange::{Error, ErrorKind};
///
/// let err = Error::from(ErrorKind::Truncated { offset: 12 });
/// assert!(matches!(err.kind(), ErrorKind::Truncated { offset: 12 }));
/// assert_eq!(err.to_string(), "truncated input: the coded stream ends at byte offset 12");
/// ```
pub struct Error {
    kind: ErrorKind,
}

impl Error {
    /// The kind of error, with its context.
    pub fn kind(&self) -> &ErrorKind {
        &self.kind
    }

    /// Consumes the error, returning its kind.
    pub fn into_kind(self) -> ErrorKind {
        self.kind
    }

    /// True when the error means the input is damaged or truncated (as opposed
    /// to a caller mistake or an I/O failure).
    pub fn is_damage(&self) -> bool {
        matches!(
            self.kind,
            ErrorKind::Truncated { .. }
                | ErrorKind::CorruptStream { .. }
                | ErrorKind::CorruptTable { .. }
                | ErrorKind::BadMagic
                | ErrorKind::CorruptHeader { .. }
                | ErrorKind::CorruptFrame { .. }
                | ErrorKind::CorruptBlock { .. }
                | ErrorKind::CorruptIndex { .. }
                | ErrorKind::CorruptEnd { .. }
                | ErrorKind::ChecksumMismatch { .. }
                | ErrorKind::TrailingBytes { .. }
        )
    }
}

/// Constructors for the variants built throughout the crate, so every call
/// site names the variant and its context in one line.
impl Error {
    /// [`ErrorKind::InvalidParameter`].
    pub(crate) fn invalid_parameter(name: &'static str, reason: &'static str) -> Self {
        ErrorKind::InvalidParameter { name, reason }.into()
    }

    /// [`ErrorKind::InvalidModel`].
    pub(crate) fn invalid_model(reason: &'static str) -> Self {
        ErrorKind::InvalidModel { reason }.into()
    }

    /// [`ErrorKind::Truncated`].
    pub(crate) fn truncated(offset: u64) -> Self {
        ErrorKind::Truncated { offset }.into()
    }

    /// [`ErrorKind::CorruptStream`].
    pub(crate) fn corrupt_stream(offset: u64, reason: &'static str) -> Self {
        ErrorKind::CorruptStream { offset, reason }.into()
    }

    /// [`ErrorKind::CorruptTable`].
    pub(crate) fn corrupt_table(reason: &'static str) -> Self {
        ErrorKind::CorruptTable { reason }.into()
    }

    /// [`ErrorKind::LimitExceeded`].
    pub(crate) fn limit_exceeded(what: &'static str, declared: u64, limit: u64) -> Self {
        ErrorKind::LimitExceeded {
            what,
            declared,
            limit,
        }
        .into()
    }

    /// [`ErrorKind::TrailingBytes`].
    pub(crate) fn trailing_bytes(offset: u64, count: u64) -> Self {
        ErrorKind::TrailingBytes { offset, count }.into()
    }

    /// [`ErrorKind::Snapshot`].
    pub(crate) fn snapshot(reason: &'static str) -> Self {
        ErrorKind::Snapshot { reason }.into()
    }

    /// Fails with [`ErrorKind::LimitExceeded`] when `declared` exceeds
    /// `limit`: the one place a declared size or a memory need is compared
    /// with its bound.
    pub(crate) fn check_limit(what: &'static str, declared: u64, limit: u64) -> Result<()> {
        if declared > limit {
            return Err(Self::limit_exceeded(what, declared, limit));
        }
        Ok(())
    }
}

/// Constructors for the damage reports of the container format.
#[cfg(feature = "std")]
impl Error {
    /// [`ErrorKind::CorruptHeader`].
    pub(crate) fn corrupt_header(offset: u64, reason: &'static str) -> Self {
        ErrorKind::CorruptHeader { offset, reason }.into()
    }

    /// [`ErrorKind::CorruptFrame`].
    pub(crate) fn corrupt_frame(index: u64, offset: u64, reason: &'static str) -> Self {
        ErrorKind::CorruptFrame {
            index,
            offset,
            reason,
        }
        .into()
    }

    /// [`ErrorKind::CorruptBlock`].
    pub(crate) fn corrupt_block(index: u64, reason: &'static str) -> Self {
        ErrorKind::CorruptBlock { index, reason }.into()
    }

    /// [`ErrorKind::CorruptEnd`].
    pub(crate) fn corrupt_end(offset: u64, reason: &'static str) -> Self {
        ErrorKind::CorruptEnd { offset, reason }.into()
    }

    /// [`ErrorKind::CorruptIndex`].
    pub(crate) fn corrupt_index(offset: u64, reason: &'static str) -> Self {
        ErrorKind::CorruptIndex { offset, reason }.into()
    }
}

impl From<crate::mq::MqError> for Error {
    fn from(err: crate::mq::MqError) -> Self {
        Error {
            kind: ErrorKind::Mq(err),
        }
    }
}

impl From<ErrorKind> for Error {
    fn from(kind: ErrorKind) -> Self {
        Error { kind }
    }
}

/// An `io::Error` made from an [`Error`] returns it back; any other is
/// wrapped as [`ErrorKind::Io`].
#[cfg(feature = "std")]
impl From<std::io::Error> for Error {
    fn from(err: std::io::Error) -> Self {
        if err.get_ref().is_some_and(|e| e.is::<IoCarrier>()) {
            if let Some(inner) = err.into_inner() {
                if let Ok(carrier) = inner.downcast::<IoCarrier>() {
                    return carrier.0;
                }
            }
            unreachable!("the carrier was checked above");
        }
        Error {
            kind: ErrorKind::Io(err),
        }
    }
}

/// What an `io::Error` made from an [`Error`] carries: it prints as the
/// error and gives it as its source. (`io::Error::source` is its payload's
/// `source`, so the payload cannot be the error itself.)
#[cfg(feature = "std")]
#[derive(Debug)]
struct IoCarrier(Error);

#[cfg(feature = "std")]
impl fmt::Display for IoCarrier {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        fmt::Display::fmt(&self.0, f)
    }
}

#[cfg(feature = "std")]
impl std::error::Error for IoCarrier {
    fn source(&self) -> Option<&(dyn std::error::Error + 'static)> {
        Some(&self.0)
    }
}

impl fmt::Debug for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        fmt::Debug::fmt(&self.kind, f)
    }
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        fmt::Display::fmt(&self.kind, f)
    }
}

impl core::error::Error for Error {
    fn source(&self) -> Option<&(dyn core::error::Error + 'static)> {
        core::error::Error::source(&self.kind)
    }
}

#[cfg(feature = "std")]
impl From<Error> for std::io::Error {
    fn from(err: Error) -> Self {
        use std::io::ErrorKind as Io;
        let io_kind = match &err.kind {
            ErrorKind::Truncated { .. } => Io::UnexpectedEof,
            ErrorKind::Io(inner) => inner.kind(),
            ErrorKind::InvalidParameter { .. }
            | ErrorKind::UncodableSymbol { .. }
            | ErrorKind::RangeOutsideData { .. }
            | ErrorKind::Mq(_) => Io::InvalidInput,
            _ => Io::InvalidData,
        };
        std::io::Error::new(io_kind, IoCarrier(err))
    }
}

/// Shorthand for `Result<T, subrange::Error>`.
pub type Result<T, E = Error> = core::result::Result<T, E>;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn damage_is_classified() {
        assert!(Error::from(ErrorKind::BadMagic).is_damage());
        assert!(!Error::from(ErrorKind::UnknownPreset { id: 9 }).is_damage());
    }

    #[cfg(feature = "std")]
    #[test]
    fn io_conversion_keeps_source() {
        use std::error::Error as _;
        use std::string::ToString;
        let io: std::io::Error = Error::from(ErrorKind::Truncated { offset: 3 }).into();
        assert_eq!(io.kind(), std::io::ErrorKind::UnexpectedEof);
        let inner = io.source().unwrap().downcast_ref::<Error>().unwrap();
        assert!(matches!(inner.kind(), ErrorKind::Truncated { offset: 3 }));
        assert_eq!(io.to_string(), inner.to_string());
        // Back again: the original, not an I/O error around it.
        let back = Error::from(io);
        assert!(matches!(back.kind(), ErrorKind::Truncated { offset: 3 }));
        let plain = Error::from(std::io::Error::other("disk full"));
        assert!(matches!(plain.kind(), ErrorKind::Io(_)));
        let io: std::io::Error = Error::from(ErrorKind::BadMagic).into();
        assert_eq!(io.kind(), std::io::ErrorKind::InvalidData);
    }
}
