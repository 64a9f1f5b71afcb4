//! Context groups allocated on first use, so a block pays for the contexts
//! it visits, not for every context that could exist.
//!
//! A direct context table keeps one fixed-size *group* of entries per
//! context (for the nibble-tree engines: 272 counters per byte context).
//! Allocating all of them costs the same for a 16-byte block as for a 1 MiB
//! one. A [`GroupArena`] instead maps each context key to a group taken from
//! a table of `max_groups` groups, in the order the keys are first asked
//! for. A block of `n` bytes asks for at most `n` distinct keys per table
//! (one context per byte), so `max_groups = min(n, keys)` always suffices
//! and the table grows with the block.
//!
//! Groups start as zeroed memory, which callers either store so that zero
//! reads as a fresh entry (counters as `counter ^ COUNTER_INIT`) or
//! initialise when [`GroupMap::base_fresh`] reports a group new. Either
//! way a context not seen before holds what a fully allocated direct table
//! would hold: the predictions, and so the coded bytes, are the same.
//!
//! The key-to-group map is a direct index of one `u32` per possible key, or,
//! when the arena holds few groups compared with the keys, a small
//! open-addressed hash table of about twice `max_groups` entries, so its size
//! too follows the block. An arena with room for every key (a long block)
//! needs no map: it is the direct table, and key `k` has group `k`.
//!
//! Invariants: every returned base `b` satisfies `b + group <= table.len()`;
//! a key keeps its group for the arena's lifetime; [`GroupArena::memory_needed`]
//! is exactly the bytes [`GroupArena::new`] allocates.

use alloc::vec;
use alloc::vec::Vec;

/// Below this ratio of groups to keys the map is hashed rather than direct.
const HASHED_FRACTION: usize = 8;

/// How keys find their groups.
#[derive(Debug, Clone)]
enum KeyMap {
    /// Every key has its group, `key` itself (the arena holds all of them).
    Identity,
    /// `index[key]`: 0 while the key has no group, else `1 + group`.
    Direct(Vec<u32>),
    /// Open addressing with linear probing: an entry is 0 when empty, else
    /// `(key + 1) << GROUP_BITS | group`; `shift` picks the top bits of the
    /// multiplicative hash.
    Hashed { entries: Vec<u32>, shift: u32 },
}

/// Bits of a hashed entry holding the group number.
const GROUP_BITS: u32 = 15;

/// Which group of a table each key has: the bookkeeping of a
/// [`GroupArena`], for callers that keep the table themselves.
#[derive(Debug, Clone)]
pub(crate) struct GroupMap {
    map: KeyMap,
    group: usize,
    max_groups: usize,
    used: usize,
}

/// A table of context groups handed out on first use.
#[derive(Debug, Clone)]
pub(crate) struct GroupArena<T> {
    map: GroupMap,
    table: Vec<T>,
}

/// Entries of the hashed map for `max_groups` groups: a power of two, at
/// least twice `max_groups` (load at most ½).
fn hashed_entries(max_groups: usize) -> usize {
    (2 * max_groups).next_power_of_two()
}

/// How an arena of `max_groups` groups of `group` entries of `elem` bytes
/// over `keys` keys is laid out: `(map, groups)`, the map's `u32` entries
/// (`None`: no map, the direct table of all `keys` groups) and the groups
/// allocated. The direct table is taken whenever it is no larger than an
/// arena with its map, so the size never decreases as `max_groups` grows.
fn layout(keys: usize, group: usize, elem: usize, max_groups: usize) -> (Option<usize>, usize) {
    let max_groups = max_groups.max(1);
    let hashed = max_groups * HASHED_FRACTION <= keys
        && max_groups < 1 << GROUP_BITS
        && keys < 1 << (32 - GROUP_BITS);
    let map = if hashed {
        hashed_entries(max_groups)
    } else {
        keys
    };
    let whole = (keys as u64) * (group * elem) as u64;
    let arena = 4 * map as u64 + (max_groups as u64) * (group * elem) as u64;
    if max_groups >= keys || whole <= arena {
        (None, keys)
    } else {
        (Some(map), max_groups)
    }
}

/// The next free group of an arena with `used` of `max_groups` taken, and
/// whether it is new; once all are taken (more distinct keys than the arena
/// was sized for, which its callers rule out) the last one is shared rather
/// than running past the end.
#[inline]
fn take(used: &mut usize, max_groups: usize) -> (usize, bool) {
    let fresh = *used < max_groups;
    let g = (*used).min(max_groups - 1);
    *used = (*used + 1).min(max_groups);
    (g, fresh)
}

/// Groups an arena for a block of `len` bytes needs over `keys` keys, when
/// each byte asks for one key: `min(len, keys)`, at least 1.
pub(crate) fn groups_for(len: usize, keys: usize) -> usize {
    len.min(keys).max(1)
}

impl GroupMap {
    /// Bytes of the map and of the table (of `elem`-byte entries) it
    /// describes, for the arguments of [`new`](GroupMap::new).
    pub(crate) fn memory_needed(keys: usize, group: usize, elem: usize, max_groups: usize) -> u64 {
        let (map, groups) = layout(keys, group, elem, max_groups);
        4 * map.unwrap_or(0) as u64 + (elem * group) as u64 * groups as u64
    }

    /// A map for keys `0 .. keys` onto room for `max_groups` groups of
    /// `group` entries of `elem` bytes (one group at least); the caller
    /// allocates [`table_len`](GroupMap::table_len) zeroed entries beside it.
    pub(crate) fn new(keys: usize, group: usize, elem: usize, max_groups: usize) -> Self {
        let (map, groups) = layout(keys, group, elem, max_groups);
        let map = match map {
            None => KeyMap::Identity,
            Some(n) if n < keys => KeyMap::Hashed {
                entries: vec![0; n],
                shift: 32 - n.trailing_zeros(),
            },
            Some(_) => KeyMap::Direct(vec![0; keys]),
        };
        GroupMap {
            map,
            group,
            max_groups: groups,
            used: 0,
        }
    }

    /// Entries of the table the map describes.
    pub(crate) fn table_len(&self) -> usize {
        self.group * self.max_groups
    }

    /// Whether every key has its group already, `key` itself (the table is
    /// the direct table), so that a key's base is `key * group`.
    #[inline]
    pub(crate) fn is_whole(&self) -> bool {
        matches!(self.map, KeyMap::Identity)
    }

    /// The index in the table of the first entry of `key`'s group, and
    /// whether the group was handed out by this call (still zeroed, for a
    /// caller to initialise; never true for the direct table, whose groups
    /// exist from the start). `key` must be below the map's `keys`.
    #[inline]
    pub(crate) fn base_fresh(&mut self, key: usize) -> (usize, bool) {
        let (g, fresh) = match &mut self.map {
            KeyMap::Identity => (key, false),
            KeyMap::Direct(index) => {
                let slot = index[key];
                if slot != 0 {
                    (slot as usize - 1, false)
                } else {
                    let (g, fresh) = take(&mut self.used, self.max_groups);
                    index[key] = g as u32 + 1;
                    (g, fresh)
                }
            }
            KeyMap::Hashed { entries, shift } => {
                let mask = entries.len() - 1;
                let tag = (key as u32 + 1) << GROUP_BITS;
                let mut i = ((key as u32).wrapping_mul(0x9E37_79B1) >> *shift) as usize;
                loop {
                    let e = entries[i];
                    if e & !((1 << GROUP_BITS) - 1) == tag {
                        break ((e & ((1 << GROUP_BITS) - 1)) as usize, false);
                    }
                    if e == 0 {
                        let (g, fresh) = take(&mut self.used, self.max_groups);
                        entries[i] = tag | g as u32;
                        break (g, fresh);
                    }
                    i = (i + 1) & mask;
                }
            }
        };
        (g * self.group, fresh)
    }
}

impl<T: Copy + Default> GroupArena<T> {
    /// Bytes [`new`](GroupArena::new) allocates for the same arguments.
    pub(crate) fn memory_needed(keys: usize, group: usize, max_groups: usize) -> u64 {
        GroupMap::memory_needed(keys, group, core::mem::size_of::<T>(), max_groups)
    }

    /// An arena with room for `max_groups` zeroed groups (at least 1) of
    /// `group` entries for keys `0 .. keys`. The caller bounds the size by
    /// checking [`memory_needed`](GroupArena::memory_needed) first.
    pub(crate) fn new(keys: usize, group: usize, max_groups: usize) -> Self {
        let map = GroupMap::new(keys, group, core::mem::size_of::<T>(), max_groups);
        GroupArena {
            table: vec![T::default(); map.table_len()],
            map,
        }
    }

    /// The index in [`table`](GroupArena::table) of the first entry of
    /// `key`'s group, giving the key a fresh group if it has none. `key` must
    /// be below the `keys` the arena was built for.
    #[inline]
    pub(crate) fn base(&mut self, key: usize) -> usize {
        self.map.base_fresh(key).0
    }

    /// All groups, back to back.
    #[inline]
    pub(crate) fn table(&self) -> &[T] {
        &self.table
    }

    /// All groups, mutable.
    #[inline]
    pub(crate) fn table_mut(&mut self) -> &mut [T] {
        &mut self.table
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn keys_keep_their_groups_in_both_maps() {
        for (keys, max) in [(65536, 100), (256, 200), (64, 64)] {
            let mut a = GroupArena::<u32>::new(keys, 10, max);
            assert_eq!(
                matches!(a.map.map, KeyMap::Hashed { .. }),
                keys == 65536,
                "{keys}"
            );
            let picks: Vec<usize> = (0..max).map(|i| (i * 7919) % keys).collect();
            let bases: Vec<usize> = picks.iter().map(|&k| a.base(k)).collect();
            for (i, &b) in bases.iter().enumerate() {
                let expect = if keys == max { picks[i] } else { i };
                assert_eq!(b, 10 * expect, "groups are handed out in order");
            }
            for (&k, &b) in picks.iter().zip(&bases) {
                assert_eq!(a.base(k), b);
            }
            assert!(bases.iter().all(|&b| b + 10 <= a.table().len()));
        }
    }

    #[test]
    fn memory_is_exact_and_follows_the_block() {
        let small = GroupArena::<u32>::memory_needed(65536, 272, groups_for(16, 65536));
        assert_eq!(small, 4 * 32 + 4 * 272 * 16);
        let mid = GroupArena::<u32>::memory_needed(65536, 272, groups_for(30_000, 65536));
        assert_eq!(mid, 4 * 65536 + 4 * 272 * 30_000);
        let big = GroupArena::<u32>::memory_needed(65536, 272, groups_for(1 << 20, 65536));
        assert_eq!(big, 4 * 272 * 65536);
        let a = GroupArena::<u16>::new(256, 33, groups_for(1000, 256));
        assert_eq!(a.table().len(), 33 * 256);
        assert_eq!(
            GroupArena::<u16>::memory_needed(256, 33, 200),
            1024 + 2 * 33 * 200
        );
        assert_eq!(GroupArena::<u16>::memory_needed(256, 33, 256), 2 * 33 * 256);
        // Near full, the direct table is smaller than an arena and its map.
        assert_eq!(GroupArena::<u16>::memory_needed(256, 33, 250), 2 * 33 * 256);
        for keys in [256, 4096, 65536] {
            let mut last = 0;
            for g in (0..=keys).step_by(keys / 256) {
                let m = GroupArena::<u32>::memory_needed(keys, 272, g);
                assert!(m >= last, "{keys} {g}");
                last = m;
            }
            assert_eq!(last, 4 * 272 * keys as u64);
        }
    }

    #[test]
    fn a_full_arena_shares_its_last_group() {
        let mut a = GroupMap::new(256, 4, 4, 2);
        assert_eq!(a.table_len(), 8);
        assert_eq!(a.base_fresh(5), (0, true));
        assert_eq!(a.base_fresh(6), (4, true));
        assert_eq!(a.base_fresh(7), (4, false));
        assert_eq!(a.base_fresh(6), (4, false));
        assert_eq!(a.base_fresh(5), (0, false));
    }
}
