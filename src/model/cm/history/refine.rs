//! Adaptive probability maps for the history engine's refinement chain.
//!
//! Secondary estimation as in [`Apm`](crate::model::Apm): per context a
//! curve of probabilities over the stretched input at steps of 1 in
//! log-odds, read by linear interpolation and trained at the two points
//! read. A curve is 16 points (32 bytes, half a cache line) from log-odds
//! −8 to 7; inputs above 7 are read as 7 (a probability of 0.9991, where
//! the curve is nearly flat anyway), so a refinement touches one line, and
//! 65536 curves take 2 MiB, a core's second-level cache. The engine knows
//! the two contexts the next bit can have (the partial byte with a 0 or a 1
//! appended) before the current bit is coded and hints both curves then
//! ([`prefetch`](Refiner::prefetch)), so they arrive while the current bit
//! is mixed and coded.
//!
//! Invariants: points stay in `0 ..= 65535`; contexts are masked to the
//! table, a power of two.

use alloc::vec::Vec;

use super::kernel::prefetch;
use crate::model::bit::logistic::squash;

const POINTS: usize = 16;

/// Stretched units between two points.
const STEP: u32 = 8;

/// One curve, aligned to half a cache line.
#[derive(Debug, Clone, Copy)]
#[repr(C, align(32))]
struct Curve([u16; POINTS]);

/// A set of refinement curves.
#[derive(Debug, Clone)]
pub(crate) struct Refiner {
    table: Vec<Curve>,
    mask: usize,
    index: usize,
    weight: u32,
    rate: u32,
}

impl Refiner {
    /// `contexts` curves (a power of two) at rate `2^-rate`.
    pub(crate) fn new(contexts: usize, rate: u32) -> Self {
        assert!(contexts.is_power_of_two());
        let mut identity = Curve([0; POINTS]);
        for (j, p) in identity.0.iter_mut().enumerate() {
            *p = squash(((j as i32 - 8) << STEP).clamp(-2047, 2047)) as u16;
        }
        Refiner {
            table: alloc::vec![identity; contexts],
            mask: contexts - 1,
            index: 0,
            weight: 0,
            rate,
        }
    }

    /// Bytes of `contexts` curves.
    pub(crate) fn memory_needed(contexts: usize) -> u64 {
        (contexts * core::mem::size_of::<Curve>()) as u64
    }

    /// Hints context `ctx`'s curve, so that it is in cache when refined.
    #[inline(always)]
    pub(crate) fn prefetch(&self, ctx: usize) {
        prefetch(&self.table, ctx & self.mask);
    }

    /// The refined probability of stretched input `st` in context `ctx`.
    #[inline(always)]
    pub(crate) fn refine(&mut self, st: i32, ctx: usize) -> u32 {
        // 1 ..= 3839: `lo <= 14`, so `lo + 1` is a point of the curve.
        let s = (st.clamp(-2047, 1791) + 2048) as u32;
        let lo = (s >> STEP) as usize;
        // The position between the two points, in 1/128.
        let w = (s & 255) >> 1;
        let at = (ctx & self.mask) * POINTS + lo;
        self.index = at;
        self.weight = w;
        let c = &self.table[at / POINTS].0;
        let (a, b) = (u32::from(c[lo]), u32::from(c[lo + 1]));
        ((a * (128 - w) + b * w) >> 7).max(1)
    }

    /// Learns the bit at the points the last `refine` read.
    #[inline(always)]
    pub(crate) fn update(&mut self, bit: bool) {
        let target = if bit { 65535 } else { 0 };
        let shift = self.rate + 7;
        let w = self.weight as i32;
        let (row, lo) = (self.index / POINTS, self.index % POINTS);
        let c = &mut self.table[row].0;
        for (j, share) in [(lo, 128 - w), (lo + 1, w)] {
            let t = i32::from(c[j]);
            c[j] = (t + (((target - t) * share) >> shift)) as u16;
        }
    }
}
