//! Adaptive probability maps for the history engine's refinement chain.
//!
//! Secondary estimation as in [`Apm`](crate::model::Apm): per context a
//! curve of probabilities over the stretched input at steps of ½ in
//! log-odds, read by linear interpolation and trained at the two points
//! read. A curve is 32 points, one 64-byte line, from log-odds −8 to 7.5;
//! inputs above 7.5 are read as 7.5 (a probability of 0.9994, where the
//! curve is nearly flat anyway), so a refinement touches one cache line. This copy adds [`touch`](Refiner::touch): the engine knows the
//! two contexts the next bit can have (the partial byte with a 0 or a 1
//! appended) before the current bit is coded, and reading their curves then
//! brings them into cache while the current bit is mixed and coded, instead
//! of waiting for them afterwards.
//!
//! Invariants: points stay in `0 ..= 65535`; contexts are masked to the
//! table, a power of two.

use alloc::vec::Vec;

use crate::model::bit::logistic::squash;

const POINTS: usize = 32;

/// One curve, aligned to a cache line.
#[derive(Debug, Clone, Copy)]
#[repr(C, align(64))]
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
            *p = squash(((j as i32 - 16) * 128).clamp(-2047, 2047)) as u16;
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

    /// Reads context `ctx`'s curve so that it is in cache when refined.
    #[inline(always)]
    pub(crate) fn touch(&self, ctx: usize) -> u32 {
        u32::from(self.table[ctx & self.mask].0[0])
    }

    /// The refined probability of stretched input `st` in context `ctx`.
    #[inline(always)]
    pub(crate) fn refine(&mut self, st: i32, ctx: usize) -> u32 {
        // 1 ..= 3967: `lo <= 30`, so `lo + 1` is a point of the curve.
        let s = (st.clamp(-2047, 1919) + 2048) as u32;
        let lo = (s >> 7) as usize;
        let w = s & 127;
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
