//! Hashed context tables with check values.
//!
//! High-order contexts are far too many to index directly, so each context
//! (together with the bits of the current byte's high nibble, when coding the
//! low nibble) is hashed to a *slot*: sixteen `u32`s, one 64-byte cache line.
//! Entry 0 holds a 32-bit check value taken from other bits of the same hash;
//! entries 1 to 15 are packed [counters](crate::model::bit::counter) for the 15 nodes of
//! the nibble's binary tree (node `1`, then `2·node + bit`). Coding a byte
//! touches two slots per context, one per nibble.
//!
//! A hash picks a pair of neighbouring slots (`i` and `i ^ 1`, 128 bytes). If
//! either holds the same check value it is the context's slot (verified: a
//! false match needs both the index bits and 32 check bits to collide).
//! Otherwise the slot whose root counter has seen fewer updates is taken over
//! and reset, so contexts seen often survive contexts seen once.
//!
//! A low-nibble lookup has a third candidate, the *companion*: the other slot
//! of the pair holding the same context's high nibble. It is checked first
//! and preferred for a new claim, so a context whose next byte usually starts
//! the same way keeps both nibbles in one 128-byte pair — which the caller
//! loaded whole at the byte boundary, saving a cache miss per nibble.
//!
//! Invariants: the slot count is a power of two, at least 2; a slot's check
//! value is never 0 (the check is forced odd), so zeroed memory reads as a
//! pair of empty slots; entries 1..=15 of a claimed slot are valid counters.

use alloc::vec;
use alloc::vec::Vec;

use crate::model::bit::counter::{counter_n, COUNTER_INIT};

/// `u32`s per slot.
pub(crate) const SLOT_WORDS: usize = 16;

/// Bytes per slot.
pub(crate) const SLOT_BYTES: u64 = 4 * SLOT_WORDS as u64;

/// Mixes two 64-bit values into a well-spread 64-bit hash.
#[inline]
pub(crate) fn hash2(a: u64, b: u64) -> u64 {
    let mut h = a
        .wrapping_add(b.wrapping_mul(0x9E37_79B9_7F4A_7C15))
        .wrapping_mul(0xD6E8_FEB8_6659_FD93);
    h ^= h >> 32;
    h = h.wrapping_mul(0xD6E8_FEB8_6659_FD93);
    h ^ (h >> 29)
}

/// A table of verified context slots.
#[derive(Debug, Clone)]
pub(crate) struct SlotTable {
    words: Vec<u32>,
    shift: u32,
}

impl SlotTable {
    /// Slots that fit in `bytes` (rounded down to a power of two, at least 2).
    pub(crate) fn slots_for(bytes: u64) -> u64 {
        let slots = (bytes / SLOT_BYTES).max(2);
        1 << (63 - slots.leading_zeros())
    }

    /// Bytes a table built with [`new`](SlotTable::new)`(bytes)` allocates.
    pub(crate) fn memory_needed(bytes: u64) -> u64 {
        Self::slots_for(bytes) * SLOT_BYTES
    }

    /// A table of at most `bytes` bytes. The caller bounds `bytes`.
    pub(crate) fn new(bytes: u64) -> Self {
        let slots = Self::slots_for(bytes);
        SlotTable {
            words: vec![0; slots as usize * SLOT_WORDS],
            shift: 64 - slots.trailing_zeros(),
        }
    }

    /// The index of the first word of the slot for `hash`, claiming one if the
    /// context is not present. Entries `index + 1 ..= index + 15` are its
    /// counters.
    #[cfg(test)]
    pub(crate) fn find(&mut self, hash: u64) -> usize {
        let (a, check) = self.locate(hash);
        let seen = [self.words[a], self.words[a + SLOT_WORDS]];
        self.resolve(a, check, seen)
    }

    /// First half of [`find`](SlotTable::find): the slot pair's first word
    /// index and the check value. Callers looking up several contexts locate
    /// them all, load the pair's check words for each (independent loads the
    /// processor overlaps), then [`resolve`](SlotTable::resolve) each.
    #[inline]
    pub(crate) fn locate(&self, hash: u64) -> (usize, u32) {
        let slot = ((hash >> self.shift) as usize) & !1;
        (slot * SLOT_WORDS, (hash as u32) | 1)
    }

    /// Second half of [`find`](SlotTable::find): `seen` holds the check words
    /// of the pair at `a`, as loaded by the caller.
    #[inline]
    pub(crate) fn resolve(&mut self, a: usize, check: u32, seen: [u32; 2]) -> usize {
        let b = a + SLOT_WORDS;
        if seen[0] == check {
            return a;
        }
        if seen[1] == check {
            return b;
        }
        let victim = if counter_n(self.words[b + 1]) < counter_n(self.words[a + 1]) {
            b
        } else {
            a
        };
        self.claim(victim, check)
    }

    /// Like [`resolve`](SlotTable::resolve), with a third candidate: the
    /// `companion` slot (the other slot of the pair holding the same
    /// context's high nibble), which is checked first and preferred for a new
    /// claim when its root count is not higher. The caller has loaded the
    /// companion's pair already, so a context whose low nibble settles there
    /// costs no further cache miss.
    #[inline]
    pub(crate) fn resolve_near(&mut self, companion: usize, a: usize, check: u32) -> usize {
        if self.words[companion] == check {
            return companion;
        }
        let b = a + SLOT_WORDS;
        if self.words[a] == check {
            return a;
        }
        if self.words[b] == check {
            return b;
        }
        let na = counter_n(self.words[a + 1]);
        let nb = counter_n(self.words[b + 1]);
        let nc = counter_n(self.words[companion + 1]);
        let victim = if nc <= na.min(nb) {
            companion
        } else if nb < na {
            b
        } else {
            a
        };
        self.claim(victim, check)
    }

    #[inline]
    fn claim(&mut self, slot: usize, check: u32) -> usize {
        let s = &mut self.words[slot..slot + SLOT_WORDS];
        s[0] = check;
        s[1..].fill(COUNTER_INIT);
        slot
    }

    /// All words (slots back to back).
    #[inline]
    pub(crate) fn words(&self) -> &[u32] {
        &self.words
    }

    /// All words, mutable.
    #[inline]
    pub(crate) fn words_mut(&mut self) -> &mut [u32] {
        &mut self.words
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::bit::counter::counter_update;

    #[test]
    fn finds_again_and_replaces_the_weaker() {
        let mut t = SlotTable::new(1024);
        assert_eq!(SlotTable::memory_needed(1024), 1024);
        let h1 = hash2(1, 2);
        let s1 = t.find(h1);
        assert_eq!(t.find(h1), s1);
        for _ in 0..5 {
            counter_update(&mut t.words_mut()[s1 + 1], true, 255);
        }
        // Another hash with the same slot pair but a different check.
        let h2 = (h1 & !0xFFFF_FFFF) | ((h1 as u32) ^ 0x100) as u64;
        let s2 = t.find(h2);
        assert_ne!(s2, s1);
        let h3 = (h1 & !0xFFFF_FFFF) | ((h1 as u32) ^ 0x200) as u64;
        let s3 = t.find(h3);
        assert_eq!(s3, s2, "the slot with fewer updates is replaced");
        assert_eq!(t.find(h1), s1);
        assert_eq!(t.words()[s3 + 1], COUNTER_INIT);
    }

    #[test]
    fn low_nibbles_settle_in_the_companion() {
        let mut t = SlotTable::new(64 * 64);
        let high = t.find(hash2(7, 0));
        let companion = high ^ SLOT_WORDS;
        let (a, check) = t.locate(hash2(7, 16 + 3));
        let low = t.resolve_near(companion, a, check);
        assert_eq!(low, companion, "a free companion is claimed");
        assert_eq!(t.resolve_near(companion, a, check), companion);
        // A different low nibble finds its own pair while the companion is busier.
        for _ in 0..3 {
            counter_update(&mut t.words_mut()[companion + 1], true, 255);
        }
        let (a2, check2) = t.locate(hash2(7, 16 + 9));
        let other = t.resolve_near(companion, a2, check2);
        assert_ne!(other, companion);
        assert_eq!(t.resolve_near(companion, a2, check2), other);
        assert_eq!(t.words()[companion], check);
    }

    #[test]
    fn sizes_round_down_to_powers_of_two() {
        assert_eq!(SlotTable::slots_for(0), 2);
        assert_eq!(SlotTable::slots_for(64 * 1000), 512);
    }
}
