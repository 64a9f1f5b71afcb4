//! The last stage of the history engine: a referee between the full
//! prediction and the direct order-0 count model.
//!
//! On a memoryless source the order-0 `1/n` counts (the Krichevsky–Trofimov
//! estimate) cost the entropy plus `½ log2 n` per tree node, while the
//! mixer and the refinement chain, however well they learn, keep some
//! noise of their own, which a memoryless source never pays back. The referee measures
//! both: it keeps the difference of their code lengths, `log2` of the ratio
//! of the probabilities they gave the coded bit, in 1/4096 bit, decayed by
//! `2^-DECAY` per bit (a window of about 64 Ki bits). The coded
//! probability is the order-0 one while that difference favours it by more
//! than [`MARGIN`] bits, the full prediction otherwise. On data with any
//! structure the full prediction is far ahead and is coded unchanged; on a
//! memoryless source the counts win within a few thousand bytes.
//!
//! Invariants: the choice depends only on bits already coded (encoder and
//! decoder choose alike); all arithmetic is integer; the difference stays
//! bounded (each step at most 16 bits, decayed), so it never overflows.

use alloc::vec::Vec;

/// Fractional bits of the code lengths.
const FRAC: u32 = 12;

/// Decay of the difference, a shift per bit.
const DECAY: u32 = 16;

/// Bits by which the counts must lead (in the decayed sum) to be coded.
const MARGIN: i64 = 24;

/// The referee.
#[derive(Debug, Clone)]
pub(crate) struct Referee {
    /// `log2(x)` for 12-bit mantissas `x = 4096 ..= 8191`, in 1/4096 bit
    /// (the fractional part).
    log_table: Vec<u16>,
    /// Decayed sum of `cost(full) - cost(counts)` in 1/4096 bit.
    lead: i64,
    counts_win: bool,
}

/// `log2(m / 2^31)` for `m` in `2^31 .. 2^32`, the fractional part in
/// `FRAC` bits, by repeated squaring (common practice: the digit-by-digit
/// binary logarithm).
fn log2_frac(mut m: u64) -> u16 {
    let mut f = 0u16;
    for i in (0..FRAC).rev() {
        m = (m * m) >> 31;
        if m >= 1 << 32 {
            m >>= 1;
            f |= 1 << i;
        }
    }
    f
}

impl Default for Referee {
    fn default() -> Self {
        let log_table = (0..4096u64).map(|j| log2_frac((4096 + j) << 19)).collect();
        Referee {
            log_table,
            lead: 0,
            counts_win: false,
        }
    }
}

impl Referee {
    /// Bytes the referee allocates.
    pub(crate) const MEMORY: u64 = 2 * 4096;

    /// `log2(p)` of a 16-bit probability `p` in `1 ..= 65535`, in 1/4096 bit.
    #[inline(always)]
    fn log2(&self, p: u32) -> i64 {
        let top = 31 - p.leading_zeros();
        // 13 significant bits, the leading one dropped.
        let m = if top >= 12 {
            (p >> (top - 12)) & 4095
        } else {
            (p << (12 - top)) & 4095
        };
        (i64::from(top) << FRAC) + i64::from(self.log_table[m as usize])
    }

    /// The probability to code: `counts` when the counts lead, else `full`.
    #[inline(always)]
    pub(crate) fn choose(&self, full: u32, counts: u32) -> u32 {
        if self.counts_win {
            counts
        } else {
            full
        }
    }

    /// Scores both predictions of the coded bit (probabilities of a 1).
    #[inline(always)]
    pub(crate) fn update(&mut self, bit: bool, full: u32, counts: u32) {
        let of = |p: u32| if bit { p } else { 65536 - p }.clamp(1, 65535);
        let step = self.log2(of(counts)) - self.log2(of(full));
        self.lead += step - (self.lead >> DECAY);
        self.counts_win = self.lead > MARGIN << FRAC;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn logarithms_match_the_float_formula() {
        let r = Referee::default();
        for p in [1u32, 2, 3, 100, 4095, 4096, 32768, 40000, 65535] {
            let want = (p as f64).log2();
            let got = r.log2(p) as f64 / 4096.0;
            assert!((got - want).abs() < 2.0 / 4096.0, "{p}: {got} {want}");
        }
    }

    #[test]
    fn the_better_predictor_wins() {
        let mut r = Referee::default();
        // Bits with p(1) = 1/4: counts say 1/4, the full prediction 1/2.
        for i in 0..20_000u32 {
            let bit = i.wrapping_mul(2_654_435_761) >> 30 == 0;
            r.update(bit, 32768, 16384);
        }
        assert_eq!(r.choose(1, 2), 2);
        for i in 0..40_000u32 {
            let bit = i.wrapping_mul(2_654_435_761) >> 30 == 0;
            r.update(bit, 16384, 60000);
        }
        assert_eq!(r.choose(1, 2), 1);
    }
}
