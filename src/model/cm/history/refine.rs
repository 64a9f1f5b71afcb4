//! Adaptive probability maps for the history engine's refinement chain.
//!
//! Secondary estimation as in [`Apm`](crate::model::Apm): per context a
//! curve of 33 probabilities over the stretched input (steps of ½ in
//! log-odds), read by linear interpolation and trained at the two points
//! read. This copy adds [`touch`](Refiner::touch): the engine knows the
//! two contexts the next bit can have (the partial byte with a 0 or a 1
//! appended) before the current bit is coded, and reading their curves then
//! brings them into cache while the current bit is mixed and coded, instead
//! of waiting for them afterwards.
//!
//! Invariants: points stay in `0 ..= 65535`; contexts are masked to the
//! table, a power of two.

use alloc::vec::Vec;

use crate::model::logistic::squash;

const POINTS: usize = 33;

/// A set of refinement curves.
#[derive(Debug, Clone)]
pub(crate) struct Refiner {
    table: Vec<u16>,
    mask: usize,
    index: usize,
    weight: u32,
    rate: u32,
}

impl Refiner {
    /// `contexts` curves (a power of two) at rate `2^-rate`.
    pub(crate) fn new(contexts: usize, rate: u32) -> Self {
        assert!(contexts.is_power_of_two());
        let mut table = Vec::with_capacity(contexts * POINTS);
        for _ in 0..contexts {
            for j in 0..POINTS {
                let x = (j as i32 - 16) * 128;
                table.push(squash(x.clamp(-2047, 2047)) as u16);
            }
        }
        Refiner {
            table,
            mask: contexts - 1,
            index: 0,
            weight: 0,
            rate,
        }
    }

    /// Bytes of `contexts` curves.
    pub(crate) fn memory_needed(contexts: usize) -> u64 {
        (contexts * POINTS * 2) as u64
    }

    /// Reads context `ctx`'s curve so that it is in cache when refined.
    #[inline(always)]
    pub(crate) fn touch(&self, ctx: usize) -> u32 {
        let at = (ctx & self.mask) * POINTS;
        u32::from(self.table[at]) ^ u32::from(self.table[at + POINTS - 1])
    }

    /// The refined probability of stretched input `st` in context `ctx`.
    #[inline(always)]
    pub(crate) fn refine(&mut self, st: i32, ctx: usize) -> u32 {
        let s = (st.clamp(-2047, 2047) + 2048) as u32;
        let lo = (s >> 7) as usize;
        let w = s & 127;
        let at = (ctx & self.mask) * POINTS + lo;
        self.index = at;
        self.weight = w;
        let (a, b) = (u32::from(self.table[at]), u32::from(self.table[at + 1]));
        ((a * (128 - w) + b * w) >> 7).max(1)
    }

    /// Learns the bit at the points the last `refine` read.
    #[inline(always)]
    pub(crate) fn update(&mut self, bit: bool) {
        let target = if bit { 65535 } else { 0 };
        let shift = self.rate + 7;
        let w = self.weight as i32;
        let at = self.index;
        for (j, share) in [(at, 128 - w), (at + 1, w)] {
            let t = i32::from(self.table[j]);
            self.table[j] = (t + (((target - t) * share) >> shift)) as u16;
        }
    }
}
