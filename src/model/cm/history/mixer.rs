//! Two mixing layers: several weight sets chosen by different contexts,
//! then a small mixer over their outputs.
//!
//! Logistic mixing (Mahoney, "Adaptive weighing of context models for
//! lossless data compression", Florida Tech. CS-2005-16, 2005): a weight
//! set turns stretched inputs `x_i` into `p = squash(Σ w_i x_i)` and learns
//! by `w_i += η x_i (y - p)`. Here the first layer has [`SELECTORS`] weight
//! sets in use at once, each picked by its own context (the match state,
//! the partial byte with the previous byte's class, the previous byte with
//! the bit position); each sees all inputs and learns on its own error. The
//! second layer mixes their stretched outputs with a weight set picked by
//! the partial byte. Each selector specialises on what its context tells
//! apart, and the second layer learns which one to believe when.
//!
//! The learning rate starts high and falls with the bits coded towards its
//! floor (as `1/t`, the annealing of stochastic gradient descent), so the
//! weights settle fast and then stop jittering: on stationary
//! data the mixing noise, which costs bits, shrinks as the block goes on.
//!
//! Fixed point: inputs carry 8 fractional bits and stay within ±2047 (an
//! `i16`); first-layer weights are `i16` with 12 fractional bits (4096 is
//! 1.0, at most ±8), one set a 32-byte row of [`MAX_INPUTS`] weights, the
//! unused ones multiplying zero inputs. A dot product of `i16` pairs sums in
//! an `i32` without overflow (16 · 2047 · 32768 < 2^31), and the loops run
//! over whole fixed-length rows, so the compiler turns them into vector
//! multiply-adds of `i16` lanes. The update adds the rounded
//! `(x · err + 2^15) >> 16` to each weight, saturated to the `i16` range.
//! The second layer keeps `i32` weights with 16 fractional bits. All of it is
//! integer: identical results everywhere, vector units or not.
//!
//! Invariants: selected sets are masked to their table (a power of two), so any context
//! value is safe; the input vector has a fixed length [`MAX_INPUTS`], its
//! entries past the mixer's `n` inputs stay 0.

use alloc::vec;
use alloc::vec::Vec;

use super::kernel::{dot, train};
use crate::model::bit::logistic::{squash, stretch};

/// Largest input count, the length of a weight set.
pub(crate) const MAX_INPUTS: usize = super::kernel::ROW;

/// Weight sets in use at once in the first layer.
pub(crate) const SELECTORS: usize = 3;

/// Largest second-layer weight magnitude (8.0). Weights start at `1 / n`.
const WEIGHT_LIMIT: i32 = (8 << 16) - 1;

/// One first-layer weight set: half a cache line of `i16` weights.
#[derive(Debug, Clone, Copy)]
#[repr(C, align(32))]
struct Row([i16; MAX_INPUTS]);

/// The two-layer mixer.
#[derive(Debug, Clone)]
pub(crate) struct Mixer2 {
    /// First-layer weights: selector `k`'s sets from row `base[k]`.
    weights: Vec<Row>,
    base: [usize; SELECTORS],
    sets: [usize; SELECTORS],
    chosen: [usize; SELECTORS],
    /// Inputs of the current bit (entries from `n` on stay 0).
    pub(crate) x: [i16; MAX_INPUTS],
    /// Outputs of the first layer (stretched) and their probabilities.
    out: [i32; SELECTORS + 1],
    out_p: [u32; SELECTORS],
    /// Second layer: `SELECTORS + 1` weights (the last for a bias) a set.
    final_w: Vec<i32>,
    final_set: usize,
    p: u32,
    /// Rates, in 1/16 of the base step, for both layers.
    rate: i32,
    final_rate: i32,
    floor: i32,
    bits: u64,
}

impl Mixer2 {
    /// A mixer of `n` inputs whose selectors have `sets[k]` weight sets,
    /// and `final_sets` sets in the second layer (powers of two); `floor` is the settled
    /// learning rate (in 1/16 steps).
    pub(crate) fn new(n: usize, sets: [usize; SELECTORS], final_sets: usize, floor: i32) -> Self {
        let n = n.min(MAX_INPUTS);
        assert!(sets.iter().all(|s| s.is_power_of_two()) && final_sets.is_power_of_two());
        let mut base = [0; SELECTORS];
        let mut total = 0;
        for k in 0..SELECTORS {
            base[k] = total;
            total += sets[k];
        }
        let mut row = Row([0; MAX_INPUTS]);
        row.0[..n].fill((4096 / n.max(1)) as i16);
        let mut final_w = vec![0; final_sets * (SELECTORS + 1)];
        for (i, w) in final_w.iter_mut().enumerate() {
            if i % (SELECTORS + 1) < SELECTORS {
                *w = 65536 / SELECTORS as i32;
            }
        }
        Mixer2 {
            weights: vec![row; total],
            base,
            sets,
            chosen: [0; SELECTORS],
            x: [0; MAX_INPUTS],
            out: [0; SELECTORS + 1],
            out_p: [32768; SELECTORS],
            final_w,
            final_set: 0,
            p: 32768,
            rate: 16 * 16,
            final_rate: 16 * 4,
            floor,
            bits: 0,
        }
    }

    /// Bytes of a mixer of the same shape.
    pub(crate) fn memory_needed(n: usize, sets: [usize; SELECTORS], final_sets: usize) -> u64 {
        let _ = n;
        let first: usize = sets.iter().sum();
        (first * core::mem::size_of::<Row>() + 4 * final_sets * (SELECTORS + 1)) as u64
    }

    /// Mixes the inputs in `x` with the sets chosen by `ctx` and the second
    /// layer's set `final_ctx`; returns the 16-bit probability of a 1.
    #[inline(always)]
    #[allow(clippy::needless_range_loop)]
    pub(crate) fn mix(&mut self, ctx: [usize; SELECTORS], final_ctx: usize) -> u32 {
        for k in 0..SELECTORS {
            let at = self.base[k] + (ctx[k] & (self.sets[k] - 1));
            self.chosen[k] = at;
            let s = (dot(&self.x, &self.weights[at].0) >> 12).clamp(-2047, 2047);
            self.out[k] = s;
            self.out_p[k] = squash(s);
        }
        self.out[SELECTORS] = 256;
        let sets = self.final_w.len() / (SELECTORS + 1);
        self.final_set = (final_ctx & (sets - 1)) * (SELECTORS + 1);
        let fw = &self.final_w[self.final_set..self.final_set + SELECTORS + 1];
        let mut sum = 0i32;
        for (o, w) in self.out.iter().zip(fw) {
            sum += (o * w) >> 16;
        }
        self.p = squash(sum.clamp(-2047, 2047));
        self.p
    }

    /// The stretched output of the last [`mix`](Mixer2::mix).
    #[inline(always)]
    pub(crate) fn stretched(&self) -> i32 {
        stretch(self.p)
    }

    /// Learns the coded bit.
    #[inline(always)]
    #[allow(clippy::needless_range_loop)]
    pub(crate) fn update(&mut self, bit: bool) {
        let y = if bit { 65536 } else { 0 };
        for k in 0..SELECTORS {
            // The step of 16-bit weights, `x · err >> 10`, at 12 bits.
            let err = ((((y - self.out_p[k] as i32) >> 4) * self.rate) >> 4).clamp(-32767, 32767);
            let at = self.chosen[k];
            train(&self.x, &mut self.weights[at].0, err);
        }
        let err = (((y - self.p as i32) >> 4) * self.final_rate) >> 6;
        let fw = &mut self.final_w[self.final_set..self.final_set + SELECTORS + 1];
        for (wi, o) in fw.iter_mut().zip(&self.out) {
            *wi = (*wi + ((o * err) >> 10)).clamp(-WEIGHT_LIMIT, WEIGHT_LIMIT);
        }
        self.bits += 1;
        if self.bits & 1023 == 0 {
            // Rate falls as 1 / (1 + bits / 2^16) to the floor.
            let decayed = (16 * 16 * 65536 / (65536 + self.bits as i64)) as i32;
            self.rate = decayed.max(self.floor);
            self.final_rate = (decayed / 4).max(self.floor / 4).max(2);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn learns_to_follow_the_informative_input() {
        let mut m = Mixer2::new(2, [1, 4, 2], 4, 24);
        let mut cost = 0.0f64;
        for i in 0..20_000u32 {
            let bit = (i.wrapping_mul(2_654_435_761) >> 7) % 4 != 0; // p(1) = 3/4
            m.x[0] = stretch(if bit { 60_000 } else { 6_000 }) as i16;
            m.x[1] = 0;
            let p = m.mix([0, i as usize, 1], 2) as f64 / 65536.0;
            if i > 10_000 {
                cost += -(if bit { p } else { 1.0 - p }).log2();
            }
            m.update(bit);
        }
        assert!(cost / 10_000.0 < 0.2, "{}", cost / 10_000.0);
    }
}
