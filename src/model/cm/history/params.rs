//! Parameters of the history engine and the memory they need.

#[cfg(doc)]
use crate::error::ErrorKind;
use crate::error::Result;

use super::engine::Engine;

/// Parameters of the history engine ([`encode_history`](super::encode_history)).
///
/// # Example
///
/// ```
/// use subrange::model::cm::HistoryParams;
///
/// # fn main() -> Result<(), subrange::Error> {
/// let mut p = HistoryParams::default();
/// p.mem_log2 = 5; // 32 MiB of context slots
/// p.validate()?;
/// assert!(p.memory_needed() < 64 << 20);
/// assert!(p.memory_needed_for(1000) < 2 << 20);
/// # Ok(())
/// # }
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub struct HistoryParams {
    /// Context slots take at most `2^mem_log2` MiB, `0 ..= 10` (default 7,
    /// 128 MiB; a block of `n` bytes takes at most `256 n` bytes of them).
    pub mem_log2: u8,
    /// Detect x86 code in each block and transform its call and jump
    /// targets (default `true`; see [`x86`](crate::model::x86)).
    pub x86: bool,
    /// Settled learning rate of the mixer, `1 ..= 255` (default 32): lower
    /// is steadier on stationary data, higher follows change faster.
    pub rate: u8,
}

impl Default for HistoryParams {
    fn default() -> Self {
        HistoryParams {
            mem_log2: 7,
            x86: true,
            rate: 32,
        }
    }
}

impl HistoryParams {
    /// Largest `mem_log2`.
    pub const MAX_MEM_LOG2: u8 = 10;

    /// Checks every field against its documented range.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] naming the first field out of range.
    pub fn validate(&self) -> Result<()> {
        if self.mem_log2 > Self::MAX_MEM_LOG2 {
            return Err(crate::Error::invalid_parameter(
                "mem_log2",
                "must be in 0 ..= 10",
            ));
        }
        if self.rate == 0 {
            return Err(crate::Error::invalid_parameter(
                "rate",
                "must be in 1 ..= 255",
            ));
        }
        Ok(())
    }

    /// Bytes of context slots for a block of `len` bytes: 256 per byte
    /// (rounded up to a power of two), at least 64 KiB, at most
    /// `2^mem_log2` MiB.
    pub(crate) fn table_bytes_for(&self, len: usize) -> u64 {
        let want = (len as u64).saturating_mul(256).max(1 << 16);
        want.checked_next_power_of_two()
            .unwrap_or(u64::MAX)
            .min(1u64 << (20 + u32::from(self.mem_log2.min(Self::MAX_MEM_LOG2))))
    }

    /// Log2 of the match model's entries for a block of `len` bytes: twice
    /// the positions, at least 2^10, at most 2^22 (16 MiB).
    pub(crate) fn match_bits_for(len: usize) -> u32 {
        let positions = (len as u64)
            .max(1 << 9)
            .checked_next_power_of_two()
            .map_or(64, u64::trailing_zeros);
        (positions + 1).min(22)
    }

    /// Bytes of tables the engine allocates for a block of any length.
    pub fn memory_needed(&self) -> u64 {
        self.memory_needed_for(usize::MAX)
    }

    /// Bytes of tables the engine allocates for a block of `len` bytes (the
    /// decoder writes into the caller's buffer, the encoder copies a block
    /// it transforms). Never decreases as `len` grows.
    pub fn memory_needed_for(&self, len: usize) -> u64 {
        Engine::memory_needed(self, len)
    }
}
