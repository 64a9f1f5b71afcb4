//! What the presets that run a context-mixing engine of
//! [`model::cm`](crate::model::cm) (`order2`, `mix`, `history`) share: the
//! `precise` parameter, the power-of-two memory parameter and the copy of
//! an engine's decoded block into the caller's buffer.
//!
//! A block's payload is the engine's own coded stream; the raw length comes
//! from the block frame and the parameters from the container header, so
//! nothing else is stored. The decoder checks the engine's memory need
//! against the reader's limit through
//! [`Preset::memory_needed`](super::Preset::memory_needed) before any block
//! is decoded.
//!
//! Invariant: the engines allocate exactly their declared tables plus the
//! block's output bytes, whatever the payload says.

use crate::error::Result;
use crate::preset::spec::ParamSpec;

/// The binary step of the `order2` and `mix` presets, the last of their
/// parameters; a header without it implies the coarse step (0).
pub(crate) const PRECISE: ParamSpec = ParamSpec {
    name: "precise",
    default: 1,
    min: 0,
    max: 1,
    help: "binary steps split the range exactly (1), or drop its low 16 bits (0)",
    absent: Some(0),
};

/// The log2 of a memory size given in MiB, a power of two of at most
/// `2^max_log2` MiB.
///
/// # Errors
///
/// [`ErrorKind::InvalidParameter`](crate::ErrorKind::InvalidParameter) for
/// any other size.
pub(crate) fn mem_log2(mib: u32, max_log2: u8) -> Result<u8> {
    if !mib.is_power_of_two() || mib > 1u32 << max_log2 {
        return Err(crate::Error::invalid_parameter(
            "memory_mib",
            "must be a power of two in 1 ..= 1024",
        ));
    }
    Ok(mib.trailing_zeros() as u8)
}

/// Copies an engine's decoded block into `out`, which must have its length.
///
/// # Errors
///
/// [`ErrorKind::CorruptStream`](crate::ErrorKind::CorruptStream) when the
/// lengths differ.
pub(crate) fn copy_exact(back: &[u8], out: &mut [u8]) -> Result<()> {
    if back.len() != out.len() {
        return Err(crate::Error::corrupt_stream(
            0,
            "engine returned a block of the wrong length",
        ));
    }
    out.copy_from_slice(back);
    Ok(())
}

/// The block size as a length, saturating.
pub(crate) fn block_len(block_size: u64) -> usize {
    usize::try_from(block_size).unwrap_or(usize::MAX)
}
