//! The match model: predict the next byte from the longest earlier match.
//!
//! After every byte, a hash of the last [`MIN_LEN`] bytes indexes a table of
//! positions (the position just after the last time those bytes occurred).
//! When no match is active, the candidate found there is verified by
//! comparing bytes backwards, so a hash collision never starts a false match;
//! the verified length becomes the match length. While a match is active and
//! its predicted byte keeps coming true, the length grows by one a byte; a
//! wrong byte ends it.
//!
//! Within a byte the model predicts the next bit of the predicted byte, as
//! long as the bits coded so far agree with it. How far to trust that guess
//! is learned: an adaptive counter per (length bucket, predicted bit) turns
//! the match state into a probability, which the mixer receives in the
//! logistic domain. The length bucket is also offered as mixer context.
//!
//! Invariants: an active match points strictly before the current position
//! (`ptr < history.len()`), its length is at most [`MAX_LEN`], and nothing is
//! predicted once a bit of the current byte contradicted the guess.

use alloc::vec;
use alloc::vec::Vec;

use crate::model::bit::counter::{counter_p16, counter_update, COUNTER_INIT};
use crate::model::bit::logistic::stretch;
use crate::model::cm::hashed::hash2;

/// Bytes hashed to find match candidates.
pub(crate) const MIN_LEN: usize = 6;

/// Longest match length tracked.
pub(crate) const MAX_LEN: u32 = 65535;

/// Bytes compared backwards when verifying a candidate.
const VERIFY: usize = 32;

/// Number of length buckets.
pub(crate) const LEN_BUCKETS: usize = 24;

/// Count limit of the confidence counters.
const LIMIT: u32 = 1023;

/// `MatchModel::active` when the last bit had no prediction.
const IDLE: usize = usize::MAX;

/// Length bucket: exact up to 15, then logarithmic.
#[inline]
fn bucket(len: u32) -> usize {
    if len < 16 {
        len as usize
    } else {
        (12 + (31 - len.leading_zeros()) as usize).min(LEN_BUCKETS - 1)
    }
}

/// State of the match model.
#[derive(Debug, Clone)]
pub(crate) struct MatchModel {
    table: Vec<u32>,
    shift: u32,
    ptr: usize,
    len: u32,
    /// The predicted byte with a leading 1 (`0x100 | byte`) while every bit
    /// of the current byte so far agreed with it; 0 when idle or contradicted.
    predicted: u32,
    /// Position in `predicted` of the next bit (7 for the first bit).
    depth: u32,
    /// `2 * bucket(len)`: the counter pair of the current length.
    bucket2: usize,
    /// [`state`](MatchModel::state) while a match predicts.
    len_state: usize,
    counters: [u32; 2 * LEN_BUCKETS],
    /// The counter of the last prediction, or [`IDLE`] when there was none.
    active: usize,
}

impl MatchModel {
    /// Bytes a model with a table of `2^bits` entries allocates.
    pub(crate) fn memory_needed(bits: u32) -> u64 {
        4u64 << bits
    }

    /// A model with `2^bits` position entries (`bits` in `1 ..= 32`).
    pub(crate) fn new(bits: u32) -> Self {
        MatchModel {
            table: vec![0; 1usize << bits],
            shift: 64 - bits,
            ptr: 0,
            len: 0,
            predicted: 0,
            depth: 7,
            bucket2: 0,
            len_state: 0,
            counters: [COUNTER_INIT; 2 * LEN_BUCKETS],
            active: IDLE,
        }
    }

    /// A small summary of the match state for mixer contexts: 0 idle or
    /// contradicted, then 1 to 3 for short, medium and long matches.
    #[inline]
    pub(crate) fn state(&self) -> usize {
        if self.active == IDLE {
            0
        } else {
            self.len_state
        }
    }

    /// The expected next bit, if the match still predicts one (valid after
    /// [`input`](MatchModel::input)).
    #[cfg(test)]
    pub(crate) fn expected_bit(&self) -> Option<bool> {
        (self.active != IDLE).then_some(self.active & 1 == 1)
    }

    /// The expected next bit while the match still predicts the current
    /// byte (before [`update_bit`](MatchModel::update_bit) of that bit).
    #[inline]
    pub(crate) fn expected(&self) -> Option<bool> {
        (self.predicted != 0).then_some((self.predicted >> self.depth) & 1 == 1)
    }

    /// The current match length (0 when idle).
    #[inline]
    pub(crate) fn length(&self) -> u32 {
        self.len
    }

    /// The stretched prediction for the next bit (0 when there is none).
    #[inline]
    pub(crate) fn input(&mut self) -> i32 {
        if self.predicted == 0 {
            self.active = IDLE;
            return 0;
        }
        let bit = (self.predicted >> self.depth) & 1;
        let i = self.bucket2 + bit as usize;
        self.active = i;
        stretch(counter_p16(self.counters[i]))
    }

    /// Learns the coded bit.
    #[inline]
    pub(crate) fn update_bit(&mut self, bit: bool) {
        let i = self.active;
        if i != IDLE {
            counter_update(&mut self.counters[i], bit, LIMIT);
            if (i & 1 == 1) != bit {
                // Contradicted: nothing more is predicted in this byte.
                self.predicted = 0;
            }
        }
        self.depth = self.depth.wrapping_sub(1);
    }

    /// Takes in the byte just completed; `history` ends with it.
    pub(crate) fn byte_done(&mut self, history: &[u8]) {
        self.depth = 7;
        let pos = history.len();
        let Some(&last) = history.last() else {
            return;
        };
        if self.len > 0 {
            if self.ptr < pos && history[self.ptr] == last {
                self.len = (self.len + 1).min(MAX_LEN);
                self.ptr += 1;
            } else {
                self.len = 0;
            }
        }
        if pos >= MIN_LEN {
            let mut key = 0u64;
            for &b in &history[pos - MIN_LEN..] {
                key = (key << 8) | u64::from(b);
            }
            let slot = (hash2(key, MIN_LEN as u64) >> self.shift) as usize;
            if self.len == 0 {
                let cand = self.table[slot] as usize;
                if cand > 0 && cand < pos {
                    let mut k = 0;
                    while k < VERIFY && k < cand && history[cand - 1 - k] == history[pos - 1 - k] {
                        k += 1;
                    }
                    if k >= MIN_LEN {
                        self.len = k as u32;
                        self.ptr = cand;
                    }
                }
            }
            // Positions past u32 are not recorded (blocks are smaller).
            if let Ok(p) = u32::try_from(pos) {
                self.table[slot] = p;
            }
        }
        self.predicted = if self.len > 0 && self.ptr < pos {
            0x100 | u32::from(history[self.ptr])
        } else {
            0
        };
        self.bucket2 = 2 * bucket(self.len);
        self.len_state = if self.len < 16 {
            1
        } else if self.len < 32 {
            2
        } else {
            3
        };
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn finds_and_follows_a_repeat() {
        let text = b"station 12 level 1.82; station 12 level 1.8";
        let mut m = MatchModel::new(12);
        let mut hist = Vec::new();
        for &b in text.iter() {
            hist.push(b);
            m.byte_done(&hist);
        }
        // The second "station 12 level 1.8" is matched; next byte predicted '2'.
        assert!(m.len >= 20, "{}", m.len);
        assert_eq!(m.predicted, 0x100 | u32::from(b'2'));
        // '2' = 0b0011_0010: first bit 0, so the input leans to 0.
        m.input();
        assert_eq!(m.expected_bit(), Some(false));
        m.update_bit(true); // contradicts
        assert_eq!(m.input(), 0);
        assert_eq!(m.expected_bit(), None);
    }

    #[test]
    fn buckets_are_bounded() {
        for len in [0, 1, 15, 16, 31, 32, 1000, 65535] {
            assert!(bucket(len) < LEN_BUCKETS);
        }
    }
}
