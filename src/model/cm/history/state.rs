//! Bit histories: a small state machine per context slot, and the adaptive
//! map from a state to a probability.
//!
//! An indirect context model (Mahoney, "Data Compression Explained",
//! 2010–2013, section on indirect models; from memory) does not keep a
//! probability in each context slot but a *bit history*: one byte naming a
//! state that stands for a pair of counts `(n0, n1)` of the zeros and ones
//! seen recently in that context. A second, shared table then learns what
//! each state really predicts: `p(1 | state)` is an adaptive counter per
//! state, updated with the rate `1/n` of its own count (see
//! [`counter`](crate::model::bit::counter)). The same history in two contexts
//! thus gives the same prediction, learned from every context that passed
//! through that state: a context seen twice is predicted as well as the
//! data's many other contexts seen twice allow, not from two samples.
//!
//! The states are all pairs with `min(n0, n1) = m` and `max(n0, n1) <=
//! MAX_HIGH[m]` (long runs of one bit, and shorter mixed histories). When a
//! bit is counted, the opposite count, if above 2, is reduced to `n / 2 + 1`:
//! recent bits weigh more than old ones, so the histories follow changing
//! data. A pair outside the set gives up its larger count until it fits.
//! States with one count zero are the deterministic contexts of Cleary &
//! Witten (1984): only one value has followed them so far, and the map
//! learns how far such a context can be trusted.
//!
//! Invariants: state 0 is the empty history `(0, 0)`; every transition
//! stays inside the table (it is built and checked at compile time); the
//! tables are integer constants, the same on every platform.

use crate::model::bit::counter::{counter_p16, counter_update};

/// Largest larger count for each smaller count `0 ..= 4`.
const MAX_HIGH: [u32; 5] = [40, 20, 10, 6, 5];

/// Number of states.
pub(crate) const STATES: usize = count_states();

const fn allowed(n0: u32, n1: u32) -> bool {
    let (lo, hi) = if n0 < n1 { (n0, n1) } else { (n1, n0) };
    lo < MAX_HIGH.len() as u32 && hi <= MAX_HIGH[lo as usize]
}

const fn count_states() -> usize {
    let mut n = 0;
    let mut t = 0;
    while t <= 2 * MAX_HIGH[0] {
        let mut a = 0;
        while a <= t {
            if allowed(a, t - a) {
                n += 1;
            }
            a += 1;
        }
        t += 1;
    }
    n
}

/// The count pair of every state, ordered by total count.
const PAIRS: [(u32, u32); STATES] = {
    let mut p = [(0u32, 0u32); STATES];
    let mut n = 0;
    let mut t = 0;
    while t <= 2 * MAX_HIGH[0] {
        let mut a = 0;
        while a <= t {
            if allowed(a, t - a) {
                p[n] = (a, t - a);
                n += 1;
            }
            a += 1;
        }
        t += 1;
    }
    p
};

const fn index_of(n0: u32, n1: u32) -> usize {
    let mut i = 0;
    while i < STATES {
        if PAIRS[i].0 == n0 && PAIRS[i].1 == n1 {
            return i;
        }
        i += 1;
    }
    panic!("state not in the table");
}

const fn discount(n: u32) -> u32 {
    if n > 2 {
        n / 2 + 1
    } else {
        n
    }
}

/// `NEXT[2 * state + bit]`: the state after coding `bit` (entries past the
/// last state lead back to state 0).
pub(crate) static NEXT: [u8; 512] = {
    assert!(STATES <= 256);
    let mut t = [0u8; 512];
    let mut s = 0;
    while s < STATES {
        let (n0, n1) = PAIRS[s];
        let mut bit = 0;
        while bit < 2 {
            let (mut a, mut b) = if bit == 1 {
                (discount(n0), n1 + 1)
            } else {
                (n0 + 1, discount(n1))
            };
            while !allowed(a, b) {
                if a > b {
                    a -= 1;
                } else {
                    b -= 1;
                }
            }
            t[2 * s + bit] = index_of(a, b) as u8;
            bit += 1;
        }
        s += 1;
    }
    t
};

/// `TOTAL[state]`: `n0 + n1`, the replacement priority of a slot.
pub(crate) static TOTAL: [u8; 256] = {
    let mut t = [0u8; 256];
    let mut s = 0;
    while s < STATES {
        t[s] = (PAIRS[s].0 + PAIRS[s].1) as u8;
        s += 1;
    }
    t
};

/// The state after `bit`.
#[inline(always)]
pub(crate) fn next_state(state: u8, bit: bool) -> u8 {
    NEXT[2 * state as usize + usize::from(bit)]
}

/// Count limit of the state map's counters: `1/n` adaptation up to 1/1025.
const MAP_LIMIT: u32 = 1023;

/// An adaptive map from a bit-history state to a probability, one counter
/// per state (and per optional small context), starting from the state's
/// own estimate `(2 n1 + 1) / (2 n0 + 2 n1 + 2)`.
#[derive(Debug, Clone)]
pub(crate) struct StateMap {
    counters: alloc::vec::Vec<[u32; 256]>,
}

impl StateMap {
    /// A map for `contexts` sets of states.
    pub(crate) fn new(contexts: usize) -> Self {
        let mut set = [0u32; 256];
        for (s, c) in set.iter_mut().enumerate() {
            let (n0, n1) = if s < STATES { PAIRS[s] } else { (0, 0) };
            let p22 = ((2 * n1 + 1) as u64 * (1 << 22)) / (2 * (n0 + n1) + 2) as u64;
            *c = (p22.min((1 << 22) - 1) as u32) << 10;
        }
        StateMap {
            counters: alloc::vec![set; contexts],
        }
    }

    /// Bytes of a map of `contexts` sets.
    pub(crate) fn memory_needed(contexts: usize) -> u64 {
        contexts as u64 * 256 * 4
    }

    /// The 16-bit probability of a 1 in `state` of set `set`.
    #[inline(always)]
    pub(crate) fn p(&self, set: usize, state: u8) -> u32 {
        counter_p16(self.counters[set][usize::from(state)])
    }

    /// Learns `bit` for `state` of set `set`.
    #[inline(always)]
    pub(crate) fn update(&mut self, set: usize, state: u8, bit: bool) {
        counter_update(&mut self.counters[set][usize::from(state)], bit, MAP_LIMIT);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn transitions_count_and_discount() {
        assert_eq!(PAIRS[0], (0, 0));
        let mut s = 0u8;
        for _ in 0..100 {
            s = next_state(s, true);
        }
        assert_eq!(PAIRS[s as usize], (0, MAX_HIGH[0]));
        s = next_state(s, false);
        // (1, 21) is outside the table: the larger count gives way.
        assert_eq!(PAIRS[s as usize], (1, MAX_HIGH[1]));
        // Every state keeps its transitions inside the table.
        for s in 0..STATES as u8 {
            assert!((next_state(s, false) as usize) < STATES);
            assert!((next_state(s, true) as usize) < STATES);
        }
    }

    #[test]
    fn map_starts_from_the_counts_and_learns() {
        let mut m = StateMap::new(1);
        assert_eq!(m.p(0, 0), 32768);
        let one = next_state(0, true);
        assert!(m.p(0, one).abs_diff(49152) < 4);
        for _ in 0..200 {
            m.update(0, one, false);
        }
        assert!(m.p(0, one) < 2000);
    }
}
