//! The history engine's predictor: every input, the mixer and the
//! refinement chain, bit by bit.
//!
//! Inputs per bit (see the parent module for the methods):
//! - for each of the [`CONTEXTS`] contexts (hashed, or direct for the last
//!   byte), the bit history of the current tree node in the context's
//!   nibble slot, mapped to a probability by that context's [`StateMap`]
//!   and stretched (the map learns how far a deterministic history, one
//!   bit value only, can be trusted; a second input per context for such
//!   histories measured 0.5 % smaller output, for a mixer row of twice the
//!   width);
//! - order 0 and order 1 from direct tables of counters with `1/n`
//!   adaptation: a memoryless source is learned as fast as counting allows;
//! - the match model: its learned confidence for the current length, and
//!   the expected bit weighted by the length;
//! - a bias.
//!
//! The [`Mixer2`] chooses its first-layer sets by the match state, the
//! previous byte's class and the previous byte; its output goes through two
//! adaptive probability maps in a chain, one keyed by order 1 and one by a
//! hash of order 2 (each with the partial byte), and the full prediction
//! averages the three.
//!
//! Memory: the slots of a nibble's contexts are found once per nibble,
//! all buckets read before any is searched, and the low nibble's buckets
//! are hinted (for both values of its last bit) while the high nibble's
//! last bit is coded; the refinement curves of the next bit are hinted
//! while the current one is coded. The [`Referee`] then codes either the full
//! prediction or the order-0 counts, whichever has cost less over the last
//! bits: on memoryless data the counts (the entropy to within 0.02 %), on
//! everything else the full prediction.
//!
//! Invariant: [`Engine::code_byte`] runs the same predictions and updates
//! for the encoder and the decoder (only the bit's origin differs), and
//! [`Engine::push`] sees the same history on both sides.

use alloc::vec;
use alloc::vec::Vec;

use super::contexts::{class, Contexts, CONTEXTS, DIRECT, HASHED};
use super::mixer::Mixer2;
use super::params::HistoryParams;
use super::referee::Referee;
use super::refine::Refiner;
use super::slots::Slots;
use super::state::{next_state, StateMap};
use crate::error::Result;
use crate::model::bit::logistic::stretch;
use crate::model::cm::hashed::hash2;
use crate::model::cm::io::BitIo;
use crate::model::cm::matcher::MatchModel;

/// Mixer inputs: one per context, order 0, order 1, two for the match
/// model, the bias.
pub(crate) const INPUTS: usize = CONTEXTS + 5;

/// First-layer weight sets of each selector.
pub(crate) const SETS: [usize; 3] = [4 * 256, 8 * 256, 256 * 8];

/// Second-layer weight sets.
pub(crate) const FINAL_SETS: usize = 256;

/// Contexts of each refinement map for a block of `len` bytes: two per
/// byte, from 2^10 to 2^16 (a short block visits few, and sets up in
/// microseconds).
fn apm_contexts(len: usize) -> usize {
    len.saturating_mul(2)
        .checked_next_power_of_two()
        .unwrap_or(usize::MAX)
        .clamp(1 << 10, 1 << 16)
}

/// Curves of the order-2 refinement map: a hash of the last two bytes
/// with the partial byte, 128 KiB of curves that stay in cache (more
/// measured no smaller).
const ORDER2_CURVES: usize = 1 << 12;

/// The direct counts are halved when a node's total reaches this: up to
/// there, the estimate is the exact running frequency.
const DIRECT_LIMIT: u32 = 1 << 16;

/// A pair of bit counts `(n0, n1)` in one `u32` (16 bits each), predicting
/// `(2 n1 + 1) / (2 n + 2)`: the Krichevsky–Trofimov estimate (from
/// memory: Krichevsky & Trofimov, IEEE Trans. Inf. Theory, 1981), whose
/// excess cost over a memoryless source's entropy grows only as
/// `½ log2 n` per node, so such a source is coded at its entropy.
#[inline(always)]
fn counts_p16(c: u32) -> u32 {
    let (n0, n1) = (u64::from(c & 0xFFFF), u64::from(c >> 16));
    // In `u64`: `(2 n1 + 1) << 16` needs 34 bits.
    (((2 * n1 + 1) << 16) / (2 * (n0 + n1) + 2)).clamp(1, 65535) as u32
}

/// Counts `bit`, halving both counts when the total reaches the limit.
#[inline(always)]
fn counts_update(c: &mut u32, bit: bool) {
    let (mut n0, mut n1) = (*c & 0xFFFF, *c >> 16);
    if bit {
        n1 += 1;
    } else {
        n0 += 1;
    }
    if n0 + n1 >= DIRECT_LIMIT {
        n0 = n0.div_ceil(2);
        n1 = n1.div_ceil(2);
    }
    *c = n0 | (n1 << 16);
}

/// The predictor state.
pub(crate) struct Engine {
    slots: Slots,
    maps: StateMap,
    ctx: Contexts,
    offs: [usize; CONTEXTS],
    order0: [u32; 256],
    order1: Vec<u32>,
    matcher: MatchModel,
    mixer: Mixer2,
    apm1: Refiner,
    apm2: Refiner,
    referee: Referee,
    /// The full prediction and the order-0 counts' of the current bit.
    p_full: u32,
    p_counts: u32,
}

impl Engine {
    /// An engine for a block of `len` bytes.
    pub(crate) fn new(params: &HistoryParams, len: usize) -> Result<Self> {
        params.validate()?;
        Ok(Engine {
            slots: Slots::new(params.table_bytes_for(len)),
            maps: StateMap::new(CONTEXTS),
            ctx: Contexts::default(),
            offs: [0; CONTEXTS],
            order0: [0; 256],
            order1: vec![0; 1 << 16],
            matcher: MatchModel::new(HistoryParams::match_bits_for(len)),
            mixer: Mixer2::new(INPUTS, SETS, FINAL_SETS, i32::from(params.rate)),
            apm1: Refiner::new(apm_contexts(len), 7),
            apm2: Refiner::new(apm_contexts(len).min(ORDER2_CURVES), 7),
            referee: Referee::default(),
            p_full: 32768,
            p_counts: 32768,
        })
    }

    /// Bytes the engine allocates for a block of `len` bytes.
    pub(crate) fn memory_needed(params: &HistoryParams, len: usize) -> u64 {
        Slots::size_for(params.table_bytes_for(len))
            + StateMap::memory_needed(CONTEXTS)
            + Contexts::MEMORY
            + 4 * (1 << 16)
            + MatchModel::memory_needed(HistoryParams::match_bits_for(len))
            + Mixer2::memory_needed(INPUTS, SETS, FINAL_SETS)
            + Refiner::memory_needed(apm_contexts(len))
            + Refiner::memory_needed(apm_contexts(len).min(ORDER2_CURVES))
            + Referee::MEMORY
    }

    /// Finds the nibble slots of every context; `c0` is the partial byte
    /// (1 for the high nibble, `16 + high` for the low one).
    #[inline(always)]
    fn find_slots(&mut self, c0: usize) {
        let mut hashed = [0usize; HASHED];
        hashed.copy_from_slice(&self.offs[..HASHED]);
        if c0 == 1 {
            self.slots.find_all(&self.ctx.hashes, &mut hashed);
        } else {
            let near = self.near(c0);
            self.slots.find_all_near(&near, &mut hashed);
        }
        self.offs[..HASHED].copy_from_slice(&hashed);
        for k in 0..DIRECT {
            self.offs[HASHED + k] = self.slots.direct(self.ctx.direct[k], c0);
        }
    }

    /// The low-nibble hashes of the hashed contexts for partial byte `c0`.
    #[inline(always)]
    fn near(&self, c0: usize) -> [u64; HASHED] {
        let mut near = [0u64; HASHED];
        for (n, &h) in near.iter_mut().zip(&self.ctx.hashes) {
            *n = hash2(h, c0 as u64);
        }
        near
    }

    /// Hints the low-nibble buckets of both values the high nibble can
    /// take once its last bit (partial byte `c0`, three bits) is coded.
    #[inline(always)]
    fn prefetch_low(&self, c0: usize) {
        let mut high = [0usize; HASHED];
        high.copy_from_slice(&self.offs[..HASHED]);
        for c in [2 * c0, 2 * c0 + 1] {
            self.slots.prefetch_near(&self.near(c), &high);
        }
    }

    /// Codes one byte (the encoder passes it; the decoder passes anything)
    /// and returns it.
    #[inline(never)]
    pub(crate) fn code_byte<I: BitIo>(&mut self, io: &mut I, byte: u8) -> Result<u8> {
        let c8 = self.ctx.c8;
        let c1 = (c8 & 0xFF) as usize;
        let class1 = class(c1 as u8);
        let h2 = (hash2(c8 & 0xFFFF, 99) >> 48) as usize;
        let mut c0 = 1usize;
        for bitpos in 0..8 {
            if bitpos == 0 || bitpos == 4 {
                self.find_slots(c0);
            } else if bitpos == 3 {
                self.prefetch_low(c0);
            }
            // The tree node within the nibble: 1, then 2–3, 4–7, 8–15.
            let node = if bitpos < 4 {
                c0
            } else {
                let j = bitpos - 4;
                (1 << j) | (c0 & ((1 << j) - 1))
            };
            let bit = (byte >> (7 - bitpos)) & 1 == 1;
            let p = self.predict(c0, c1, class1, h2, node, bitpos);
            let bit = io.code(bit, p)?;
            self.learn(bit, c0, c1, node);
            c0 = 2 * c0 + usize::from(bit);
        }
        Ok(c0 as u8)
    }

    #[inline(always)]
    fn predict(
        &mut self,
        c0: usize,
        c1: usize,
        class1: usize,
        h2: usize,
        node: usize,
        bitpos: usize,
    ) -> u32 {
        let bytes = self.slots.bytes();
        let x = &mut self.mixer.x;
        for k in 0..CONTEXTS {
            let s = bytes[self.offs[k] + node];
            x[k] = stretch(self.maps.p(k, s)) as i16;
        }
        let i = CONTEXTS;
        self.p_counts = counts_p16(self.order0[c0]);
        x[i] = stretch(self.p_counts) as i16;
        x[i + 1] = stretch(counts_p16(self.order1[c1 << 8 | c0])) as i16;
        x[i + 2] = self.matcher.input() as i16;
        x[i + 3] = match self.matcher.expected() {
            Some(b) => {
                let v = (self.matcher.length().min(32) * 32) as i16;
                if b {
                    v
                } else {
                    -v
                }
            }
            None => 0,
        };
        x[i + 4] = 256;
        let m = self.matcher.state();
        let sel = [m * 256 + c0, class1 * 256 + c0, c1 * 8 + bitpos];
        if bitpos < 7 {
            // The next bit's curves, whichever this bit is.
            let (a, b) = (2 * c0, 2 * c0 + 1);
            self.apm1.prefetch(a | c1 << 8);
            self.apm1.prefetch(b | c1 << 8);
            self.apm2.prefetch(h2 ^ a);
            self.apm2.prefetch(h2 ^ b);
        }
        let pm = self.mixer.mix(sel, c0);
        let st = self.mixer.stretched();
        let p1 = self.apm1.refine(st, c0 | c1 << 8);
        let p2 = self.apm2.refine(stretch(p1), h2 ^ c0);
        self.p_full = (pm + p1 + 2 * p2 + 2) >> 2;
        self.referee.choose(self.p_full, self.p_counts)
    }

    #[inline(always)]
    fn learn(&mut self, bit: bool, c0: usize, c1: usize, node: usize) {
        self.mixer.update(bit);
        self.apm1.update(bit);
        self.apm2.update(bit);
        self.referee.update(bit, self.p_full, self.p_counts);
        let bytes = self.slots.bytes_mut();
        for k in 0..CONTEXTS {
            let at = self.offs[k] + node;
            let s = bytes[at];
            self.maps.update(k, s, bit);
            bytes[at] = next_state(s, bit);
        }
        counts_update(&mut self.order0[c0], bit);
        counts_update(&mut self.order1[c1 << 8 | c0], bit);
        self.matcher.update_bit(bit);
    }

    /// Takes in the byte just coded; `history` ends with it.
    pub(crate) fn push(&mut self, history: &[u8]) {
        self.matcher.byte_done(history);
        self.ctx.push(history);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn counts_predict_without_wrapping() {
        // (2 n1 + 1) / (2 n + 2) of 65536, the Krichevsky–Trofimov estimate.
        assert_eq!(counts_p16(0), 32768);
        assert_eq!(counts_p16(3 << 16 | 1), (7 << 16) / 10);
        // Deterministic nodes of large counts stay at their end of the range.
        assert_eq!(counts_p16(60_000 << 16), 65535);
        assert_eq!(counts_p16(60_000), 1);
        let mut c = 0;
        for _ in 0..200_000 {
            counts_update(&mut c, true);
        }
        assert!(c >> 16 < DIRECT_LIMIT && c & 0xFFFF == 0);
        assert_eq!(counts_p16(c), 65535);
    }
}
