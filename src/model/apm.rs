//! Secondary estimation: an adaptive probability map (APM).
//!
//! An APM refines a probability that another model produced, given a small
//! context: for each context it keeps a curve of 33 output probabilities at
//! evenly spaced points of the stretched input (`-2048, -1920, …, 2048`, i.e.
//! log-odds from −8 to 8 in steps of ½). A prediction interpolates linearly
//! between the two points around `stretch(p)`; after the bit is coded both
//! points move towards it, each by `2^-rate` times its interpolation weight. The curves start as
//! the identity, so an untrained APM passes probabilities through, and they
//! learn what the input's confidence really means in each context — for
//! instance that a model which claims 99 % is right only 95 % of the time.
//!
//! Invariant: every point stays in `0 ..= 65535` (a shift step never
//! overshoots), and outputs are clamped to `1 ..= 65535`.

use alloc::vec::Vec;

use crate::error::{ErrorKind, Result};
use crate::model::logistic::{squash, stretch};

/// Points per context curve.
const POINTS: usize = 33;

/// An adaptive probability map over a number of contexts.
///
/// # Example
///
/// ```
/// use subrange::model::Apm;
///
/// # fn main() -> Result<(), subrange::Error> {
/// let mut apm = Apm::new(1, 6)?;
/// // The input claims 90 % but the bit is a 1 only half the time.
/// for i in 0..5000 {
///     let _ = apm.refine(58_982, 0);
///     apm.update(i % 2 == 0);
/// }
/// let p = apm.refine(58_982, 0);
/// assert!(p.abs_diff(32768) < 4000, "{p}");
/// # Ok(())
/// # }
/// ```
#[derive(Debug, Clone)]
pub struct Apm {
    table: Vec<u16>,
    contexts: usize,
    index: usize,
    weight: u32,
    rate: u8,
}

impl Apm {
    /// Largest number of contexts.
    pub const MAX_CONTEXTS: usize = 1 << 24;

    /// An APM with `contexts` curves, each learning at rate `2^-rate`.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] unless `1 <= contexts <= 2^24` and
    /// `1 <= rate <= 15`.
    pub fn new(contexts: usize, rate: u8) -> Result<Self> {
        if contexts == 0 || contexts > Self::MAX_CONTEXTS {
            return Err(ErrorKind::InvalidParameter {
                name: "contexts",
                reason: "must be in 1 ..= 2^24",
            }
            .into());
        }
        if rate == 0 || rate > 15 {
            return Err(ErrorKind::InvalidParameter {
                name: "rate",
                reason: "must be in 1 ..= 15",
            }
            .into());
        }
        let curve: [u16; POINTS] =
            core::array::from_fn(|j| squash((j as i32 - 16) * 128).min(65535) as u16);
        let mut table = Vec::with_capacity(contexts * POINTS);
        for _ in 0..contexts {
            table.extend_from_slice(&curve);
        }
        Ok(Apm {
            table,
            contexts,
            index: 0,
            weight: 0,
            rate,
        })
    }

    /// Bytes of memory an APM with `contexts` curves takes.
    pub fn memory_needed(contexts: usize) -> u64 {
        2 * POINTS as u64 * contexts as u64
    }

    /// The refined probability (16-bit) of `p16` in `context` (contexts past
    /// the last use the last). Remembers where it looked for the next
    /// [`update`](Apm::update).
    #[inline]
    pub fn refine(&mut self, p16: u32, context: usize) -> u32 {
        let s = (stretch(p16) + 2048) as u32; // 1 ..= 4095
        let lo = (s >> 7) as usize;
        let w = s & 127;
        let base = context.min(self.contexts - 1) * POINTS + lo;
        let a = u32::from(self.table[base]);
        let b = u32::from(self.table[base + 1]);
        self.index = base;
        self.weight = w;
        ((a * (128 - w) + b * w) >> 7).clamp(1, 65535)
    }

    /// Learns the coded bit at the two points the last `refine` used.
    #[inline]
    pub fn update(&mut self, bit: bool) {
        let target = if bit { 65535 } else { 0 };
        let shift = u32::from(self.rate) + 7;
        let w = self.weight as i32;
        for (i, share) in [(self.index, 128 - w), (self.index + 1, w)] {
            let t = i32::from(self.table[i]);
            self.table[i] = (t + (((target - t) * share) >> shift)).clamp(0, 65535) as u16;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn untrained_is_near_identity() {
        let mut apm = Apm::new(4, 7).unwrap();
        for p in (256..65280).step_by(997) {
            let q = apm.refine(p, 3);
            assert!(q.abs_diff(p) < p.min(65536 - p) / 8 + 64, "p={p} q={q}");
        }
    }

    #[test]
    fn contexts_are_separate() {
        let mut apm = Apm::new(2, 5).unwrap();
        for _ in 0..2000 {
            apm.refine(32768, 0);
            apm.update(true);
        }
        assert!(apm.refine(32768, 0) > 50_000);
        assert!(apm.refine(32768, 1).abs_diff(32768) < 200);
        assert!(Apm::new(0, 5).is_err());
        assert!(Apm::new(1, 16).is_err());
    }
}
