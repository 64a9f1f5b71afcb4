//! Ideal code length in integer fixed point.
//!
//! A symbol coded with frequency `freq` out of `total` ideally costs
//! `-log2(freq / total) = log2(total) - log2(freq)` bits. [`IdealCost`] adds
//! these up exactly enough to measure coding overhead (actual − ideal bits) to
//! far better than 0.01 %: each logarithm is computed in Q32 fixed point from a
//! 257-entry table of `log2(1 + i/256)` with linear interpolation (error below
//! 3·10⁻⁶ bit per term), and sums are kept in a `u128`. No floating point is
//! used, so the figure is the same on every platform and in `no_std`.

/// Fractional bits of the fixed-point logarithms.
const FRAC: u32 = 32;
/// `ONE` is 1.0 in Q32.
const ONE: u64 = 1 << FRAC;

/// `LOG_TABLE[i] = log2(1 + i/256)` in Q32, built at compile time by the
/// bit-by-bit squaring method (common practice).
const LOG_TABLE: [u64; 257] = build_table();

const fn log2_unit(num: u64, den: u64) -> u64 {
    // log2(num/den) for 1 <= num/den <= 2, Q32. y is kept in Q62.
    if num == 2 * den {
        return ONE;
    }
    let mut y: u128 = ((num as u128) << 62) / den as u128;
    let mut result = 0u64;
    let mut bit = 0;
    while bit < FRAC {
        y = (y * y) >> 62;
        if y >= (2u128 << 62) {
            y >>= 1;
            result |= 1 << (FRAC - 1 - bit);
        }
        bit += 1;
    }
    result
}

const fn build_table() -> [u64; 257] {
    let mut t = [0u64; 257];
    let mut i = 0;
    while i <= 256 {
        t[i] = log2_unit(256 + i as u64, 256);
        i += 1;
    }
    t
}

/// `log2(x)` in Q32 fixed point for `x >= 1`.
///
/// ```
/// use subrange::coder::log2_q32;
///
/// assert_eq!(log2_q32(1), 0);
/// assert_eq!(log2_q32(1024), 10 << 32);
/// let three = log2_q32(3) as f64 / 2f64.powi(32);
/// assert!((three - 3f64.log2()).abs() < 1e-6);
/// ```
///
/// # Panics
///
/// Panics if `x` is zero.
pub fn log2_q32(x: u64) -> u64 {
    assert!(x != 0, "log2 of zero");
    let n = 63 - x.leading_zeros();
    // Mantissa in [2^63, 2^64): top 8 bits after the leading one index the table,
    // the next 32 bits interpolate.
    let m = x << (63 - n);
    let index = ((m >> 55) & 0xFF) as usize;
    let frac = (m >> 23) & 0xFFFF_FFFF;
    let lo = LOG_TABLE[index];
    let hi = LOG_TABLE[index + 1];
    let interp = lo + (((hi - lo) * frac) >> 32);
    ((n as u64) << FRAC) + interp
}

/// A running sum of ideal code lengths.
///
/// # Example
///
/// ```
/// use subrange::coder::IdealCost;
///
/// let mut cost = IdealCost::new();
/// cost.add(1, 4); // p = 1/4: two bits
/// cost.add(1, 2); // one bit
/// assert!((cost.bits() - 3.0).abs() < 1e-6);
/// ```
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct IdealCost {
    q32: u128,
    count: u64,
}

impl IdealCost {
    /// An empty sum.
    pub const fn new() -> Self {
        IdealCost { q32: 0, count: 0 }
    }

    /// Adds the cost of one event of probability `freq / total`.
    ///
    /// Zero `freq` or `freq > total` adds nothing (such an event cannot be
    /// coded and never reaches the meter through the coder).
    #[inline]
    pub fn add(&mut self, freq: u32, total: u32) {
        if freq == 0 || freq > total {
            return;
        }
        self.q32 += u128::from(log2_q32(total.into()) - log2_q32(freq.into()));
        self.count += 1;
    }

    /// Adds the cost of `times` events of probability `freq / total` each
    /// (as `times` calls of [`add`](Self::add), in one step).
    ///
    /// ```
    /// use subrange::coder::IdealCost;
    ///
    /// let mut cost = IdealCost::new();
    /// cost.add_repeated(1, 8, 5); // five events of p = 1/8
    /// assert!((cost.bits() - 15.0).abs() < 1e-6);
    /// assert_eq!(cost.events(), 5);
    /// ```
    #[inline]
    pub fn add_repeated(&mut self, freq: u32, total: u32, times: u64) {
        if freq == 0 || freq > total {
            return;
        }
        let each = log2_q32(total.into()) - log2_q32(freq.into());
        self.q32 += u128::from(each) * u128::from(times);
        self.count += times;
    }

    /// Adds the cost of one binary decision: `p1` is the probability of a 1
    /// scaled to 2^16, `bit` what was coded.
    #[inline]
    pub fn add_bit(&mut self, bit: bool, p1: u32) {
        let p1 = p1.clamp(1, 65535);
        let freq = if bit { p1 } else { 65536 - p1 };
        self.add(freq, 65536);
    }

    /// Adds another sum to this one.
    pub fn merge(&mut self, other: &IdealCost) {
        self.q32 += other.q32;
        self.count += other.count;
    }

    /// The total in bits.
    pub fn bits(&self) -> f64 {
        self.q32 as f64 / ONE as f64
    }

    /// The total in bits, as Q32 fixed point.
    pub fn bits_q32(&self) -> u128 {
        self.q32
    }

    /// How many events were added.
    pub fn events(&self) -> u64 {
        self.count
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn powers_of_two_are_exact() {
        for k in 0..63 {
            assert_eq!(log2_q32(1 << k), (k as u64) << 32);
        }
    }

    #[test]
    fn close_to_float_log() {
        for x in [3u64, 5, 7, 255, 257, 1000, 4095, 65535, 65537, 123_456_789] {
            let got = log2_q32(x) as f64 / ONE as f64;
            let want = (x as f64).log2();
            assert!((got - want).abs() < 3e-6, "x={x} got={got} want={want}");
        }
    }

    #[test]
    fn monotone() {
        let mut prev = 0;
        for x in 1..70_000u64 {
            let v = log2_q32(x);
            assert!(v >= prev);
            prev = v;
        }
    }
}
