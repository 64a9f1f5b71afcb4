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
//! The engines' second stages have many contexts (65,536) of which a short
//! block visits few, so [`Apm::grouped`] gives curves in groups of `2^k`
//! contexts on first use (see [`GroupMap`]), each set to the identity
//! then: a short block pays for the curves it visits, not for all of them.
//! A context not seen before reads as the identity either way, so the
//! refined probabilities are the same as with a fully built table.
//!
//! Invariant: every point stays in `0 ..= 65535` (a shift step never
//! overshoots), and outputs are clamped to `1 ..= 65535`.

#[cfg(doc)]
use crate::error::ErrorKind;
use crate::error::Result;
use alloc::vec;
use alloc::vec::Vec;

use crate::model::arena::GroupMap;
use crate::model::bit::logistic::{squash, stretch};

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
    /// Curves, in groups of `2^group_log2` contexts.
    table: Vec<u16>,
    /// Where each group's curves are in `table`.
    groups: GroupMap,
    /// The identity curve (the starting value of every curve).
    identity: [u16; POINTS],
    contexts: usize,
    /// Contexts `c` share the group `c >> group_log2`.
    group_log2: u32,
    /// Every group is allocated: context `c`'s curve starts at `c * POINTS`.
    whole: bool,
    index: usize,
    weight: u32,
    rate: u8,
}

/// Contexts per group of an ungrouped APM (all of them, at most 2^24).
const WHOLE: u32 = 24;

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
        Self::build(contexts, rate, WHOLE, 1)
    }

    /// An APM whose curves come in groups of `2^group_log2` contexts, given
    /// on first use from room for `max_groups` groups (see the module
    /// documentation). Refining in more than `max_groups` groups makes the
    /// later ones share the last group.
    ///
    /// # Errors
    ///
    /// As for [`new`](Apm::new).
    pub(crate) fn grouped(
        contexts: usize,
        rate: u8,
        group_log2: u32,
        max_groups: usize,
    ) -> Result<Self> {
        Self::build(contexts, rate, group_log2.min(WHOLE), max_groups)
    }

    /// Bytes [`grouped`](Apm::grouped) allocates for the same arguments.
    pub(crate) fn memory_needed_grouped(
        contexts: usize,
        group_log2: u32,
        max_groups: usize,
    ) -> u64 {
        let (keys, group) = Self::shape(contexts, group_log2.min(WHOLE));
        GroupMap::memory_needed(keys, group, 2, max_groups)
    }

    /// Groups and entries per group for `contexts` in groups of `2^group_log2`.
    fn shape(contexts: usize, group_log2: u32) -> (usize, usize) {
        let per = 1usize << group_log2;
        if group_log2 == WHOLE {
            (1, contexts * POINTS)
        } else {
            (contexts.div_ceil(per), per * POINTS)
        }
    }

    fn build(contexts: usize, rate: u8, group_log2: u32, max_groups: usize) -> Result<Self> {
        if contexts == 0 || contexts > Self::MAX_CONTEXTS {
            return Err(crate::Error::invalid_parameter(
                "contexts",
                "must be in 1 ..= 2^24",
            ));
        }
        if rate == 0 || rate > 15 {
            return Err(crate::Error::invalid_parameter(
                "rate",
                "must be in 1 ..= 15",
            ));
        }
        let identity: [u16; POINTS] =
            core::array::from_fn(|j| squash((j as i32 - 16) * 128).min(65535) as u16);
        let (keys, group) = Self::shape(contexts, group_log2);
        let groups = GroupMap::new(keys, group, 2, max_groups);
        let mut table = vec![0; groups.table_len()];
        if groups.is_whole() {
            for curve in table.chunks_exact_mut(POINTS) {
                curve.copy_from_slice(&identity);
            }
        }
        Ok(Apm {
            whole: groups.is_whole(),
            table,
            groups,
            identity,
            contexts,
            group_log2,
            index: 0,
            weight: 0,
            rate,
        })
    }

    /// Bytes of memory an APM with `contexts` curves takes.
    pub fn memory_needed(contexts: usize) -> u64 {
        Self::memory_needed_grouped(contexts, WHOLE, 1)
    }

    /// The refined probability (16-bit) of `p16` in `context` (contexts past
    /// the last use the last). Remembers where it looked for the next
    /// [`update`](Apm::update).
    #[inline]
    pub fn refine(&mut self, p16: u32, context: usize) -> u32 {
        self.refine_stretched(stretch(p16), context.min(self.contexts - 1))
    }

    /// [`refine`](Apm::refine) given `stretch(p16)` (in `-2047 ..= 2047`, as
    /// [`stretch`] returns it), for callers that refine one probability in
    /// several maps; `context` must be below the number of contexts.
    #[inline(always)]
    pub(crate) fn refine_stretched(&mut self, st: i32, context: usize) -> u32 {
        debug_assert!(st.abs() <= 2047 && context < self.contexts);
        let s = (st + 2048) as u32; // 1 ..= 4095, so `lo <= POINTS - 2`
        let lo = (s >> 7) as usize;
        let w = s & 127;
        let base = if self.whole {
            context * POINTS
        } else {
            self.grouped_base(context)
        } + lo;
        let [a, b] = *self.pair(base);
        self.index = base;
        self.weight = w;
        ((u32::from(a) * (128 - w) + u32::from(b) * w) >> 7).max(1)
    }

    /// The two points at `index` and `index + 1`.
    #[inline(always)]
    fn pair(&mut self, index: usize) -> &mut [u16; 2] {
        (&mut self.table[index..index + 2])
            .try_into()
            .expect("a slice of two")
    }

    /// Where context `c`'s curve starts when curves are given on first use
    /// (kept out of line: the common, fully allocated case stays small).
    #[inline(never)]
    fn grouped_base(&mut self, c: usize) -> usize {
        let inner = c & ((1 << self.group_log2) - 1);
        let (group, fresh) = self.groups.base_fresh(c >> self.group_log2);
        if fresh {
            let len = POINTS << self.group_log2;
            for curve in self.table[group..group + len].chunks_exact_mut(POINTS) {
                curve.copy_from_slice(&self.identity);
            }
        }
        group + inner * POINTS
    }

    /// Learns the coded bit at the two points the last `refine` used.
    #[inline]
    pub fn update(&mut self, bit: bool) {
        let target = if bit { 65535 } else { 0 };
        let shift = u32::from(self.rate) + 7;
        let w = self.weight as i32;
        // A step moves a point at most `share / 2^shift <= 2^-rate` of the
        // way to the target (rounding towards minus infinity never passes 0),
        // so points stay in `0 ..= 65535` without clamping.
        let pair = self.pair(self.index);
        for (point, share) in pair.iter_mut().zip([128 - w, w]) {
            let t = i32::from(*point);
            let next = t + (((target - t) * share) >> shift);
            debug_assert!((0..=65535).contains(&next));
            *point = next as u16;
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
    fn grouped_curves_refine_as_a_full_table() {
        for (group_log2, max_groups) in [(0, 300), (4, 200), (0, 60_000)] {
            let mut full = Apm::new(1 << 16, 7).unwrap();
            let mut lazy = Apm::grouped(1 << 16, 7, group_log2, max_groups).unwrap();
            let mut state = 7u32;
            for i in 0..4000u32 {
                // Numerical Recipes constants (common practice).
                state = state.wrapping_mul(1_664_525).wrapping_add(1_013_904_223);
                let ctx = ((state >> 8) % 200) as usize * 97 % (1 << 16);
                let p = 1 + (state >> 16) % 65535;
                assert_eq!(full.refine(p, ctx), lazy.refine(p, ctx), "{i}");
                let bit = state & 1 == 1;
                full.update(bit);
                lazy.update(bit);
            }
        }
        assert!(Apm::memory_needed_grouped(1 << 16, 0, 100) < Apm::memory_needed(1 << 16) / 100);
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
