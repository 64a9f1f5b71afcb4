//! A hashed table of nibble slots holding bit histories.
//!
//! A slot is 16 bytes: a check byte and the 15 bit-history states of one
//! nibble's binary tree (node 1 for the nibble's first bit, nodes 2–3 for
//! the second, and so on). Four slots make a 64-byte bucket, one cache line.
//! A context's hash picks the bucket and the check byte; the slot with that
//! check is the context's, and when none has it the slot with the least
//! history (the smallest count total at node 1) is cleared and taken. Old,
//! rarely seen contexts thus give way to new ones, and a collision of the
//! check byte (one in 255 for a foreign context) only shares a history.
//!
//! Contexts of few values (the last byte) need no hash: behind the hashed
//! table, each of [`DIRECT_VALUES`] values owns 17 slots, one for the high
//! nibble and one for each low nibble, found without a search or a check.
//!
//! The low nibble's buckets are known, two at a time, before the high
//! nibble's last bit is coded: [`prefetch_near`](Slots::prefetch_near)
//! asks for both while that bit is mixed and coded.
//!
//! Invariants: every offset returned is a multiple of 16 inside the table;
//! check bytes are never 0, so a zeroed slot is free; the hashed part's
//! size is a power of two of at least 64 KiB fixed at creation.

use alloc::vec;
use alloc::vec::Vec;

use super::contexts::DIRECT_VALUES;
use super::kernel::prefetch;
use super::state::TOTAL;

/// Bytes of one slot.
pub(crate) const SLOT: usize = 16;

/// Slots per bucket.
const WAYS: usize = 4;

/// Offsets within a 4 KiB page.
const PAGE_MASK: usize = 4095;

/// Slots of one direct value: the high nibble's and sixteen low nibbles'.
const PER_VALUE: usize = 17;

/// Bytes of the direct slots.
const DIRECT_BYTES: usize = DIRECT_VALUES * PER_VALUE * SLOT;

/// The slot table.
#[derive(Debug, Clone)]
pub(crate) struct Slots {
    bytes: Vec<u8>,
    mask: usize,
    /// Start of the direct slots (the hashed part's size).
    direct: usize,
}

impl Slots {
    /// Hashed table bytes for a request of `bytes`: the largest power of
    /// two not above it, at least 64 KiB.
    fn hashed_for(bytes: u64) -> u64 {
        let b = bytes.max(1 << 16);
        1u64 << (63 - b.leading_zeros())
    }

    /// Table bytes for a request of `bytes`: the hashed part and the
    /// direct slots.
    pub(crate) fn size_for(bytes: u64) -> u64 {
        Self::hashed_for(bytes) + DIRECT_BYTES as u64
    }

    /// A zeroed table of [`size_for`](Slots::size_for)`(bytes)` bytes.
    pub(crate) fn new(bytes: u64) -> Self {
        let n = usize::try_from(Self::hashed_for(bytes)).unwrap_or(1 << 30);
        Slots {
            bytes: vec![0; n + DIRECT_BYTES],
            mask: (n - 1) & !(SLOT * WAYS - 1),
            direct: n,
        }
    }

    /// The slot of direct value `value` (below [`DIRECT_VALUES`]) for the
    /// partial byte `c0` (1 for the high nibble, `16 + high` for the low).
    #[inline(always)]
    pub(crate) fn direct(&self, value: usize, c0: usize) -> usize {
        let nibble = if c0 < 16 { 0 } else { c0 - 15 };
        self.direct + ((value % DIRECT_VALUES) * PER_VALUE + nibble % PER_VALUE) * SLOT
    }

    /// The low-nibble bucket of the context whose near hash is `near` and
    /// whose high-nibble slot is at `high`.
    #[inline(always)]
    fn near_bucket(&self, near: u64, high: usize) -> (usize, u8) {
        let (line, check) = self.locate(near);
        (
            ((high & !PAGE_MASK) | (line & PAGE_MASK)) & self.mask,
            check,
        )
    }

    /// Hints the buckets of near hashes `near` (high-nibble slots `high`).
    #[inline(always)]
    pub(crate) fn prefetch_near<const N: usize>(&self, near: &[u64; N], high: &[usize; N]) {
        for (&h, &o) in near.iter().zip(high) {
            prefetch(&self.bytes, self.near_bucket(h, o).0);
        }
    }

    /// Bucket offset and check byte of `hash`.
    #[inline(always)]
    fn locate(&self, hash: u64) -> (usize, u8) {
        ((hash as usize) & self.mask, ((hash >> 56) as u8).max(1))
    }

    /// The slots of contexts `hashes` into `out`. All buckets are read
    /// first, with no branch on what they hold, so their cache misses
    /// overlap; then each context's slot is resolved.
    #[inline(always)]
    pub(crate) fn find_all<const N: usize>(&mut self, hashes: &[u64; N], out: &mut [usize; N]) {
        let mut at = [(0usize, 0u8); N];
        for (a, &h) in at.iter_mut().zip(hashes) {
            *a = self.locate(h);
        }
        self.resolve_all(&at, out);
    }

    /// As [`find_all`](Slots::find_all) for the low nibble: each context's
    /// bucket lies in the same 4 KiB page as its high-nibble slot in `out`
    /// (one translation for both), the line within it taken from `hashes`.
    #[inline(always)]
    pub(crate) fn find_all_near<const N: usize>(
        &mut self,
        hashes: &[u64; N],
        out: &mut [usize; N],
    ) {
        let mut at = [(0usize, 0u8); N];
        for ((a, &h), &high) in at.iter_mut().zip(hashes).zip(out.iter()) {
            *a = self.near_bucket(h, high);
        }
        self.resolve_all(&at, out);
    }

    #[inline(always)]
    fn resolve_all<const N: usize>(&mut self, at: &[(usize, u8); N], out: &mut [usize; N]) {
        let mut seen = [[0u8; WAYS]; N];
        for (s, &(bucket, _)) in seen.iter_mut().zip(at) {
            let line = &self.bytes[bucket..bucket + SLOT * WAYS];
            *s = [line[0], line[SLOT], line[2 * SLOT], line[3 * SLOT]];
        }
        for k in 0..N {
            out[k] = self.resolve(at[k].0, at[k].1, seen[k]);
        }
    }

    /// The slot of check byte `check` in the bucket at `bucket` whose check
    /// bytes are `seen`; the weakest slot, cleared, when none has it.
    #[inline(always)]
    fn resolve(&mut self, bucket: usize, check: u8, seen: [u8; WAYS]) -> usize {
        if let Some(w) = seen.iter().position(|&c| c == check) {
            return bucket + w * SLOT;
        }
        let line = &mut self.bytes[bucket..bucket + SLOT * WAYS];
        let mut weakest = 0;
        let mut least = u8::MAX;
        for (w, &c) in seen.iter().enumerate() {
            let total = if c == 0 {
                0
            } else {
                TOTAL[line[w * SLOT + 1] as usize]
            };
            if total < least {
                least = total;
                weakest = w;
            }
        }
        let s = &mut line[weakest * SLOT..(weakest + 1) * SLOT];
        s.fill(0);
        s[0] = check;
        bucket + weakest * SLOT
    }

    /// The slot of context `hash`: found by its check byte, or the weakest
    /// of its bucket, cleared for it.
    #[cfg(test)]
    pub(crate) fn find(&mut self, hash: u64) -> usize {
        let mut out = [0];
        self.find_all(&[hash], &mut out);
        out[0]
    }

    /// All slots.
    #[inline(always)]
    pub(crate) fn bytes(&self) -> &[u8] {
        &self.bytes
    }

    /// All slots, mutable.
    #[inline(always)]
    pub(crate) fn bytes_mut(&mut self) -> &mut [u8] {
        &mut self.bytes
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn finds_again_and_replaces_the_weakest() {
        let mut t = Slots::new(1 << 10);
        assert_eq!(t.bytes().len(), (1 << 16) + DIRECT_BYTES);
        let d = t.direct(255, 31);
        assert!(d >= 1 << 16 && d + SLOT <= t.bytes().len() && d.is_multiple_of(SLOT));
        let a = t.find(0x1100_0000_0000_0040);
        t.bytes_mut()[a + 1] = 30; // some history at node 1
        assert_eq!(t.find(0x1100_0000_0000_0040), a);
        let others: Vec<usize> = (2..5u64).map(|k| t.find((k << 56) | 0x40)).collect();
        assert!(others.iter().all(|&o| o != a && o % SLOT == 0));
        // A fifth context in the full bucket takes a slot without history.
        let e = t.find((9 << 56) | 0x40);
        assert_ne!(e, a);
        assert_eq!(t.find(0x1100_0000_0000_0040), a);
    }
}
