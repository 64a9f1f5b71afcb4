//! Parameters of the two context-mixing engines.
//!
//! Each engine's parameters are a handful of small integers, so a container
//! can record them in a few bytes ([`Order2Params::to_bytes`],
//! [`MixParams::to_bytes`]) and rebuild them with validation
//! (`from_bytes`). Each parameter set also states exactly how much memory its
//! engine allocates ([`Order2Params::memory_needed_for`],
//! [`MixParams::memory_needed_for`]), so a decoder can refuse a stream before
//! allocating anything.
//!
//! Tables hold only what a block can visit, so the need depends on the
//! block's length: `memory_needed_for(len)`, which never decreases as `len`
//! grows; `memory_needed()` is its largest value, for blocks of any length.
//!
//! Invariant: a value that passed `validate` builds, for a block of `len`
//! bytes, an engine whose allocations are exactly `memory_needed_for(len)`
//! bytes of tables (plus the output).

#[cfg(doc)]
use crate::error::ErrorKind;
use crate::error::Result;
use crate::model::arena::{groups_for, GroupArena};
use crate::model::bit::apm::Apm;
use crate::model::bit::mix::Mixer;
use crate::model::cm::hashed::SlotTable;
use crate::model::cm::matcher::MatchModel;

/// Entries of a direct nibble-tree table per context: 17 groups of 16.
pub(crate) const NODES_PER_CONTEXT: usize = 17 * 16;

/// Parameters of the fast order-2 engine
/// ([`encode_order2`](super::encode_order2)).
///
/// # Example
///
/// ```
/// use subrange::model::cm::Order2Params;
///
/// # fn main() -> Result<(), subrange::Error> {
/// let mut p = Order2Params::default();
/// p.limit = 255; // for long, stationary inputs
/// assert_eq!(Order2Params::from_bytes(p.to_bytes())?, p);
/// assert!(p.memory_needed() < 80 << 20);
/// # Ok(())
/// # }
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub struct Order2Params {
    /// New order-2 contexts inherit order-1 predictions (default `true`):
    /// much better on short or varied inputs, at little cost in speed.
    pub order1: bool,
    /// Count limit of the adaptive counters, `1 ..= 1023` (default 60):
    /// higher suits long stationary data, lower adapts faster.
    pub limit: u16,
    /// Code bits with the coder's precise binary step
    /// ([`Encoder::encode_bit`](crate::coder::Encoder::encode_bit), default
    /// `true`); `false` is the coarse step (`precise=0` in a header).
    pub precise: bool,
}

impl Default for Order2Params {
    fn default() -> Self {
        Order2Params {
            order1: true,
            limit: 60,
            precise: true,
        }
    }
}

impl Order2Params {
    /// Checks every field against its documented range.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] naming the first field out of range.
    pub fn validate(&self) -> Result<()> {
        if self.limit == 0 || self.limit > 1023 {
            return Err(crate::Error::invalid_parameter(
                "limit",
                "must be in 1 ..= 1023",
            ));
        }
        Ok(())
    }

    /// Bytes of tables the engine allocates for a block of any length: the
    /// largest [`memory_needed_for`](Order2Params::memory_needed_for).
    pub fn memory_needed(&self) -> u64 {
        self.memory_needed_for(usize::MAX)
    }

    /// Bytes of tables the engine allocates for a block of `len` bytes.
    ///
    /// A block of `len` bytes visits at most `len` order-2 and `len` order-1
    /// contexts, so the tables hold no more (see the engine's documentation):
    /// about 1 KiB per byte for short blocks, about 70 MB from 64 KiB on.
    /// The value never decreases as `len` grows, so a container can bound
    /// every block by its block size.
    ///
    /// # Example
    ///
    /// ```
    /// use subrange::model::cm::Order2Params;
    ///
    /// let p = Order2Params::default();
    /// assert!(p.memory_needed_for(300) < 1 << 20);
    /// assert!(p.memory_needed_for(300) <= p.memory_needed_for(301));
    /// assert_eq!(p.memory_needed_for(1 << 20), p.memory_needed());
    /// ```
    pub fn memory_needed_for(&self, len: usize) -> u64 {
        let (t2, t1) = Self::groups_for(len);
        let mut total = GroupArena::<u32>::memory_needed(65536, NODES_PER_CONTEXT, t2);
        if self.order1 {
            total += GroupArena::<u32>::memory_needed(256, NODES_PER_CONTEXT, t1);
        } else {
            total += GroupArena::<u32>::memory_needed(0, 0, 0);
        }
        total
    }

    /// Context groups of the order-2 and order-1 tables for a block of `len`
    /// bytes (one context of each order per byte).
    pub(crate) fn groups_for(len: usize) -> (usize, usize) {
        (groups_for(len, 65536), groups_for(len, 256))
    }

    /// The parameters as three bytes: flags (bit 0 `order1`, bit 1
    /// `precise`) and `limit` (little-endian).
    pub fn to_bytes(&self) -> [u8; 3] {
        let [l0, l1] = self.limit.to_le_bytes();
        [u8::from(self.order1) | u8::from(self.precise) << 1, l0, l1]
    }

    /// Rebuilds parameters written by [`to_bytes`](Order2Params::to_bytes).
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] for unknown flag bits or a field out of range.
    pub fn from_bytes(bytes: [u8; 3]) -> Result<Self> {
        if bytes[0] & !0b11 != 0 {
            return Err(crate::Error::invalid_parameter(
                "flags",
                "unknown flag bits",
            ));
        }
        let p = Order2Params {
            order1: bytes[0] & 1 == 1,
            limit: u16::from_le_bytes([bytes[1], bytes[2]]),
            precise: bytes[0] & 2 != 0,
        };
        p.validate()?;
        Ok(p)
    }
}

/// Parameters of the mix engine ([`encode_mix`](super::encode_mix)).
///
/// # Example
///
/// ```
/// use subrange::model::cm::MixParams;
///
/// # fn main() -> Result<(), subrange::Error> {
/// let mut p = MixParams::default();
/// p.mem_log2 = 4; // 16 MiB of context tables
/// p.orders = 0b11_1111; // orders 1 to 6
/// p.validate()?;
/// assert_eq!(MixParams::from_bytes(p.to_bytes())?, p);
/// assert!(p.memory_needed() > 16 << 20);
/// # Ok(())
/// # }
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub struct MixParams {
    /// Hashed context tables take `2^mem_log2` MiB, `0 ..= 10` (default 2,
    /// 4 MiB: for the default 1 MiB blocks it costs about 1.7 % in size
    /// against 32 MiB and runs about a sixth faster, the tables staying in
    /// cache; raise it for larger blocks); the match model's table takes
    /// 2^(18 + mem_log2) bytes more, at most 4 MiB.
    pub mem_log2: u8,
    /// Context orders in use: bit `k` enables order `k + 1`, orders 1 to 6
    /// (default `0b00_0111`: orders 1, 2 and 3 — with the word, column and
    /// match models beside them, they compress text and records about as
    /// well as orders 1, 2, 4 and 6, and binary records better, at three
    /// quarters of the work).
    pub orders: u8,
    /// The word context for text: the current word with the previous word
    /// (default on).
    pub word: bool,
    /// The column context for line-structured records: the byte above in the
    /// previous line, with the column (default on).
    pub column: bool,
    /// The match model (default on).
    pub matcher: bool,
    /// Mixer learning rate, `1 ..= 64` (default 6).
    pub rate: u8,
    /// Code bits with the coder's precise binary step
    /// ([`Encoder::encode_bit`](crate::coder::Encoder::encode_bit), default
    /// `true`); `false` is the coarse step (`precise=0` in a header).
    pub precise: bool,
}

impl Default for MixParams {
    fn default() -> Self {
        MixParams {
            mem_log2: 2,
            orders: 0b00_0111,
            word: true,
            column: true,
            matcher: true,
            rate: 6,
            precise: true,
        }
    }
}

impl MixParams {
    /// Largest `mem_log2`: 1 GiB of context tables.
    pub const MAX_MEM_LOG2: u8 = 10;

    /// Weight sets of the mixer: match state (4) × partial byte (256).
    pub(crate) const SETS: usize = 4 * 256;

    /// APM contexts of the second refinement stage (order 1 and partial byte).
    pub(crate) const APM2_CONTEXTS: usize = 1 << 16;

    /// The second stage's curves come in groups of 16 contexts (the partial
    /// bytes `16 k ..= 16 k + 15` after one previous byte).
    pub(crate) const APM2_GROUP_LOG2: u32 = 0;

    /// Groups of the second stage a block of `len` bytes can visit: the
    /// partial bytes of one byte fall in five groups (`1 ..= 15`, `16 ..= 31`,
    /// one of `32 ..= 63`, of `64 ..= 127` and of `128 ..= 255`).
    pub(crate) fn apm2_groups_for(len: usize) -> usize {
        let k = Self::APM2_GROUP_LOG2 as usize;
        len.saturating_mul(8 - k + usize::from(k > 0))
            .min(Self::APM2_CONTEXTS >> Self::APM2_GROUP_LOG2)
    }

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
        if self.orders & !0b11_1111 != 0 {
            return Err(crate::Error::invalid_parameter(
                "orders",
                "only bits 0 to 5 (orders 1 to 6) exist",
            ));
        }
        if self.rate == 0 || self.rate > 64 {
            return Err(crate::Error::invalid_parameter(
                "rate",
                "must be in 1 ..= 64",
            ));
        }
        if self.inputs() == 1 {
            return Err(crate::Error::invalid_parameter(
                "orders",
                "at least one context or the match model is needed",
            ));
        }
        Ok(())
    }

    /// Number of hashed contexts (orders 2 to 6, word, column).
    pub(crate) fn hashed_contexts(&self) -> usize {
        (self.orders >> 1).count_ones() as usize + usize::from(self.word) + usize::from(self.column)
    }

    /// Mixer inputs: one per context, the match model, and a bias.
    pub(crate) fn inputs(&self) -> usize {
        self.hashed_contexts() + usize::from(self.orders & 1 == 1) + usize::from(self.matcher) + 1
    }

    /// Bytes of the hashed context tables.
    pub(crate) fn table_bytes(&self) -> u64 {
        1u64 << (20 + u32::from(self.mem_log2))
    }

    /// Log2 of the match model's position entries: 2^(16 + mem_log2), at
    /// most 2^20 (4 MiB), plenty for blocks of a few MiB.
    pub(crate) fn match_bits(&self) -> u32 {
        (16 + u32::from(self.mem_log2)).min(20)
    }

    /// Bytes of hashed context tables for a block of `len` bytes: about
    /// 1 KiB per byte (a block touches at most a few hundred bytes of slots
    /// per byte coded), at least 64 KiB, at most [`table_bytes`]. Small
    /// blocks (short messages) then set up in microseconds instead of
    /// clearing tens of MiB; both sides know `len`, so both size alike.
    ///
    /// [`table_bytes`]: MixParams::table_bytes
    pub(crate) fn table_bytes_for(&self, len: usize) -> u64 {
        let want = (len as u64).saturating_mul(1024).max(1 << 16);
        want.checked_next_power_of_two()
            .unwrap_or(u64::MAX)
            .min(self.table_bytes())
    }

    /// Log2 of the match model's entries for a block of `len` bytes: no more
    /// entries than twice the block has positions, at least 2^10.
    pub(crate) fn match_bits_for(&self, len: usize) -> u32 {
        let positions = (len as u64)
            .max(1 << 9)
            .checked_next_power_of_two()
            .map_or(64, u64::trailing_zeros);
        (positions + 1).min(self.match_bits())
    }

    /// Bytes of tables the engine allocates for a block of any length: the
    /// largest [`memory_needed_for`](MixParams::memory_needed_for).
    pub fn memory_needed(&self) -> u64 {
        self.memory_needed_for(usize::MAX)
    }

    /// Bytes of tables the engine allocates for a block of `len` bytes.
    ///
    /// The hashed context tables and the match model are sized to the
    /// block; the order-1 table and the second refinement stage hold only
    /// the contexts a block of `len` bytes can visit. The value never
    /// decreases as `len` grows, so a container can bound every block by its
    /// block size.
    ///
    /// # Example
    ///
    /// ```
    /// use subrange::model::cm::MixParams;
    ///
    /// let p = MixParams::default();
    /// assert!(p.memory_needed_for(300) < 1 << 20);
    /// assert!(p.memory_needed_for(300) <= p.memory_needed_for(301));
    /// assert_eq!(p.memory_needed_for(64 << 20), p.memory_needed());
    /// ```
    pub fn memory_needed_for(&self, len: usize) -> u64 {
        let order1_keys = if self.orders & 1 == 1 { 256 } else { 0 };
        let mut total = SlotTable::memory_needed(self.table_bytes_for(len))
            + Mixer::memory_needed(self.inputs(), Self::SETS)
            + Apm::memory_needed(256)
            + Apm::memory_needed_grouped(
                Self::APM2_CONTEXTS,
                Self::APM2_GROUP_LOG2,
                Self::apm2_groups_for(len),
            )
            + GroupArena::<u32>::memory_needed(
                order1_keys,
                NODES_PER_CONTEXT,
                groups_for(len, 256),
            );
        if self.matcher {
            total += MatchModel::memory_needed(self.match_bits_for(len));
        }
        total
    }

    /// The parameters as four bytes: `mem_log2`, `orders`, flags (bit 0
    /// `word`, bit 1 `column`, bit 2 `matcher`, bit 3 `precise`), `rate`.
    pub fn to_bytes(&self) -> [u8; 4] {
        let flags = u8::from(self.word)
            | (u8::from(self.column) << 1)
            | (u8::from(self.matcher) << 2)
            | (u8::from(self.precise) << 3);
        [self.mem_log2, self.orders, flags, self.rate]
    }

    /// Rebuilds parameters written by [`to_bytes`](MixParams::to_bytes).
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] for unknown flag bits or a field out of range.
    pub fn from_bytes(bytes: [u8; 4]) -> Result<Self> {
        if bytes[2] & !0b1111 != 0 {
            return Err(crate::Error::invalid_parameter(
                "flags",
                "unknown flag bits",
            ));
        }
        let p = MixParams {
            mem_log2: bytes[0],
            orders: bytes[1],
            word: bytes[2] & 1 != 0,
            column: bytes[2] & 2 != 0,
            matcher: bytes[2] & 4 != 0,
            rate: bytes[3],
            precise: bytes[2] & 8 != 0,
        };
        p.validate()?;
        Ok(p)
    }
}

/// Checks a memory need against a limit: the test a decoder makes before
/// building an engine for a stream.
///
/// # Errors
///
/// [`ErrorKind::LimitExceeded`] when `needed > limit`.
///
/// # Example
///
/// ```
/// use subrange::model::cm::{check_memory, MixParams};
///
/// let p = MixParams::default();
/// assert!(check_memory(p.memory_needed(), 1 << 30).is_ok());
/// assert!(check_memory(p.memory_needed(), 1 << 20).is_err());
/// ```
pub fn check_memory(needed: u64, limit: u64) -> Result<()> {
    crate::Error::check_limit("model memory", needed, limit)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bad_fields_are_refused() {
        assert!(Order2Params::from_bytes([4, 60, 0]).is_err());
        assert!(Order2Params::from_bytes([2, 60, 0]).unwrap().precise);
        assert!(Order2Params::from_bytes([1, 0, 0]).is_err());
        assert!(Order2Params::from_bytes([1, 0, 4]).is_err());
        assert!(Order2Params::from_bytes([0, 255, 3]).is_ok());
        assert!(MixParams::from_bytes([11, 63, 7, 6]).is_err());
        assert!(MixParams::from_bytes([6, 64, 7, 6]).is_err());
        assert!(MixParams::from_bytes([6, 63, 16, 6]).is_err());
        assert!(!MixParams::from_bytes([6, 63, 7, 6]).unwrap().precise);
        assert!(MixParams::from_bytes([6, 63, 7, 65]).is_err());
        assert!(MixParams::from_bytes([6, 0, 0, 6]).is_err());
        assert!(MixParams::from_bytes([6, 1, 0, 6]).is_ok());
    }
}
