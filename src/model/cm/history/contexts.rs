//! The byte-level contexts of the history engine, recomputed after every
//! byte.
//!
//! - orders 1, 2, 3, 4 and 6: the last `k` bytes (order 1 direct: its 256
//!   values have slots of their own, no hash);
//! - words (text): the current word, case folded, with the byte before it
//!   when between words; and the current word with the previous word;
//! - a sparse context (binary data): bytes 2 and 3 back, skipping the last;
//! - records (tables, fixed-size structures): the record length is
//!   detected from repeated distances between equal bytes; the byte one
//!   record back ("above") with the last byte, and with the byte two records
//!   back. Without a detected length the previous line stands in, so the
//!   column of text tables works alike;
//! - the column: the byte above in the previous line, with the column (for
//!   text tables whose lines differ in length, where no record length
//!   holds).
//!
//! Record detection: for each byte value, the distance to its previous
//! occurrence is a vote; a candidate length gains on a vote for it and loses
//! on a vote for another (majority vote), and becomes the record length once
//! it has gathered [`RECORD_VOTES`] more votes than it lost. A length stays
//! until another candidate wins.
//!
//! Invariants: every hash and direct value depends only on bytes already
//! coded, so encoder and decoder compute the same ones; direct values stay
//! below [`DIRECT_VALUES`].

use crate::model::cm::hashed::hash2;
use crate::model::cm::word::WordContext;

/// Hashed contexts.
pub(crate) const HASHED: usize = 10;

/// Direct contexts: few values, each with slots of its own.
pub(crate) const DIRECT: usize = 1;

/// Values of the direct contexts: the last byte.
pub(crate) const DIRECT_VALUES: usize = 256;

/// All contexts: the hashed ones, then the direct ones.
pub(crate) const CONTEXTS: usize = HASHED + DIRECT;

/// Votes a record length needs.
const RECORD_VOTES: u32 = 12;

/// Longest record length detected.
const MAX_RECORD: usize = 4096;

/// Byte-level context state.
#[derive(Debug, Clone)]
pub(crate) struct Contexts {
    /// The last eight bytes, the latest in the low byte.
    pub(crate) c8: u64,
    word: WordContext,
    last_seen: alloc::vec::Vec<u32>,
    candidate: usize,
    votes: u32,
    /// Detected record length (0: none).
    pub(crate) record: usize,
    line_start: usize,
    prev_line_start: usize,
    /// The context hashes for the next byte.
    pub(crate) hashes: [u64; HASHED],
    /// The direct contexts' values for the next byte, below
    /// [`DIRECT_VALUES`].
    pub(crate) direct: [usize; DIRECT],
}

impl Default for Contexts {
    fn default() -> Self {
        let mut c = Contexts {
            c8: 0,
            word: WordContext::default(),
            last_seen: alloc::vec![0; 256],
            candidate: 0,
            votes: 0,
            record: 0,
            line_start: 0,
            prev_line_start: 0,
            hashes: [0; HASHED],
            direct: [0; DIRECT],
        };
        c.rehash(&[]);
        c
    }
}

/// Character class of a byte, for mixer contexts: 0 control, 1 space,
/// 2 digit, 3 lower case, 4 upper case, 5 punctuation, 6 and 7 high bytes.
#[inline]
pub(crate) fn class(b: u8) -> usize {
    match b {
        b' ' | b'\t' | b'\n' | b'\r' => 1,
        b'0'..=b'9' => 2,
        b'a'..=b'z' => 3,
        b'A'..=b'Z' => 4,
        0x21..=0x7E => 5,
        0x80..=0xBF => 6,
        0xC0..=0xFF => 7,
        _ => 0,
    }
}

impl Contexts {
    /// Bytes of the state beyond the struct.
    pub(crate) const MEMORY: u64 = 256 * 4;

    /// Takes in the byte just coded; `history` ends with it.
    pub(crate) fn push(&mut self, history: &[u8]) {
        let pos = history.len();
        let Some(&b) = history.last() else { return };
        self.c8 = (self.c8 << 8) | u64::from(b);
        self.word.push(b);
        // Record length votes.
        let seen = &mut self.last_seen[usize::from(b)];
        let d = pos - (*seen as usize).min(pos);
        *seen = pos as u32;
        if (2..=MAX_RECORD).contains(&d) {
            if d == self.candidate {
                self.votes += 1;
                if self.votes >= RECORD_VOTES {
                    self.record = d;
                }
            } else if self.votes > 0 {
                self.votes -= 1;
            } else {
                self.candidate = d;
                self.votes = 1;
            }
        }
        if b == b'\n' {
            self.prev_line_start = self.line_start;
            self.line_start = pos;
        }
        self.rehash(history);
    }

    /// The byte `back` records (or lines) before the next one, 0 if none.
    #[inline]
    fn above(&self, history: &[u8], back: usize) -> u64 {
        let pos = history.len();
        if self.record > 0 {
            let d = self.record * back;
            if d <= pos {
                return u64::from(history[pos - d]);
            }
            return 0;
        }
        if back > 1 {
            return 0;
        }
        self.line_above(history)
    }

    /// The byte in the previous line at the next byte's column, 0 if none.
    #[inline]
    fn line_above(&self, history: &[u8]) -> u64 {
        let pos = history.len();
        let col = pos - self.line_start;
        let at = self.prev_line_start + col;
        if self.line_start > 0 && at < self.line_start {
            u64::from(history[at])
        } else {
            0
        }
    }

    fn rehash(&mut self, history: &[u8]) {
        let c = self.c8;
        let c1 = c & 0xFF;
        let a1 = self.above(history, 1);
        let a2 = self.above(history, 2);
        let col = (history.len() - self.line_start).min(255) as u64;
        let column = hash2(self.line_above(history) | (col << 8), 13);
        self.direct = [c1 as usize];
        let h = &mut self.hashes;
        h[0] = hash2(c & 0xFFFF, 2);
        h[1] = hash2(c & 0xFF_FFFF, 3);
        h[2] = hash2(c & 0xFFFF_FFFF, 4);
        h[3] = hash2(c & 0xFFFF_FFFF_FFFF, 6);
        let w = self.word.word();
        h[4] = hash2(if w == 0 { c1 | 0x100 } else { w }, 7);
        h[5] = hash2(hash2(w, self.word.previous()), 8);
        h[6] = hash2((c >> 8) & 0xFFFF, 9);
        let rec = self.record.min(0xFFFF) as u64;
        h[7] = hash2(a1 | (c1 << 8) | (rec << 16), 11);
        h[8] = hash2(a1 | (a2 << 8) | (rec << 16), 12);
        h[9] = column;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn detects_record_length() {
        let mut c = Contexts::default();
        let mut data = alloc::vec::Vec::new();
        for i in 0..400u32 {
            data.extend_from_slice(&[7, (i % 13) as u8, (i * 3 % 251) as u8, 200, 1, 2, 3]);
        }
        for i in 1..=data.len() {
            c.push(&data[..i]);
        }
        assert_eq!(c.record, 7);
    }
}
