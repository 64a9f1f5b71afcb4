//! Probabilities from outside: a learned or statistical model's output turned
//! into a frequency table, one coding step at a time.
//!
//! A neural network, a logistic regression or a hand-made predictor usually
//! produces one probability per symbol as `f32` or `f64`. The range coder
//! needs integer frequencies: at least 1 for every symbol (any symbol may
//! occur), summing to a fixed total. [`ProbabilityAdapter`] does that
//! conversion for every step, reusing its buffers, and is itself a [`Model`]
//! for the step, so `encoder.encode(&mut adapter, symbol)` codes with it.
//!
//! # Encoder and decoder must see bit-identical probabilities
//!
//! The decoder can only rebuild the table the encoder used if it is handed
//! **exactly the same floating-point values**, bit for bit. A learned model
//! therefore has to run with the same weights, the same order of floating
//! point operations, and the same math library on both sides: `exp`, `tanh`
//! and friends differ in the last bit between platforms and library
//! versions; fused multiply-add contraction, SIMD reductions that sum in a
//! different order, or GPU kernels all change results. One differing bit can
//! move one frequency by one unit, and the decoder then goes astray. Run the
//! predictor in a deterministic way (same binary, or integer/fixed-point
//! arithmetic, or a math library of your own) — this crate cannot check it.
//!
//! The conversion itself is exact and platform-independent: no floating-point
//! arithmetic is performed. Each value (an `f32` widened exactly to `f64`) is
//! taken apart into its integer mantissa and exponent and shifted into a
//! 44-bit fixed-point weight relative to the largest value; everything after
//! that is integer arithmetic.
//!
//! # Method (O(alphabet), no sorting)
//!
//! With `n` symbols, integer weights `w_i` summing to `W`, and a target total
//! `T = 2^k`, the ideal share of symbol `i` is `x_i = T·w_i / W` units.
//! Symbols with `x_i < 1` must be raised to 1; the units that costs are taken
//! from the others in proportion to what they have *above* one unit:
//!
//! 1. every symbol starts with 1 unit; the remaining `A = T - n` units are
//!    shared in proportion to `v_i = max(0, w_i·T - W)` (that is, to
//!    `max(0, x_i - 1)`; when every `v_i` is 0, in proportion to `w_i`);
//! 2. the sharing uses cumulative rounding: symbol `i` gets
//!    `⌊A·V_{i+1} / V⌋ - ⌊A·V_i / V⌋` extra units, where `V_i` is the sum of
//!    the first `i` of the `v`. The extras add up to exactly `A`, each differs
//!    from its exact share by less than one unit, and one pass suffices.
//!
//! When no symbol needs raising, each frequency is within one unit of the
//! ideal `x_i`. Every step is deterministic and costs O(n) integer work with
//! one 64-bit division per symbol.
//!
//! Invariant after every successful [`ProbabilityAdapter::set_probabilities`]:
//! `cum[0] = 0`, `cum[i + 1] - cum[i] >= 1`, `cum[n] = 2^k`.

use alloc::vec::Vec;

#[cfg(doc)]
use crate::error::ErrorKind;
use crate::error::Result;
use crate::model::{Model, Span, MAX_ALPHABET};

/// Default total of the adapter's tables: 2^16.
pub const DEFAULT_LOG2_TOTAL: u32 = 16;

/// Bits of the fixed-point weights: the largest input value becomes a weight
/// in `[2^43, 2^44)`. With at most 2^16 symbols, sums stay below 2^60.
const WEIGHT_BITS: i32 = 44;

/// Bits the shared-out weights are reduced to before the cumulative rounding,
/// so that `A · V_i` (with `A < 2^16`) fits in a `u64`.
const SHARE_BITS: u32 = 47;

mod sealed {
    pub trait Sealed {}
    impl Sealed for f32 {}
    impl Sealed for f64 {}
}

/// A floating-point probability type the adapter accepts: `f32` or `f64`.
///
/// This trait is sealed; it exists so one adapter takes either width.
///
/// # Example
///
/// ```
/// use subrange::model::Probability;
///
/// assert_eq!(0.25f32.to_f64(), 0.25f64);
/// ```
pub trait Probability: Copy + sealed::Sealed {
    /// The value widened to `f64` (exact for both types).
    fn to_f64(self) -> f64;
}

impl Probability for f32 {
    #[inline]
    fn to_f64(self) -> f64 {
        f64::from(self)
    }
}

impl Probability for f64 {
    #[inline]
    fn to_f64(self) -> f64 {
        self
    }
}

fn invalid(reason: &'static str) -> crate::Error {
    crate::Error::invalid_parameter("probabilities", reason)
}

/// Splits a non-negative finite `f64` into `(mantissa, exponent)` with
/// `value = mantissa · 2^exponent`; `None` for zero (and for `-0.0`).
#[inline]
fn decompose(x: f64) -> Result<Option<(u64, i32)>> {
    let bits = x.to_bits();
    let exp_field = ((bits >> 52) & 0x7FF) as i32;
    let frac = bits & ((1u64 << 52) - 1);
    if exp_field == 0x7FF {
        return Err(invalid("a probability is NaN or infinite"));
    }
    if exp_field == 0 && frac == 0 {
        return Ok(None);
    }
    if bits >> 63 == 1 {
        return Err(invalid("a probability is negative"));
    }
    Ok(Some(if exp_field == 0 {
        (frac, -1074)
    } else {
        (frac | 1 << 52, exp_field - 1075)
    }))
}

/// Position of the highest set bit of `m · 2^e` (value in `[2^p, 2^(p+1))`).
#[inline]
fn top_bit(m: u64, e: i32) -> i32 {
    e + 63 - m.leading_zeros() as i32
}

/// `⌊m · 2^shift⌋` for `shift` that keeps the result below 2^64.
#[inline]
fn scaled(m: u64, shift: i32) -> u64 {
    if shift >= 0 {
        m << shift
    } else if shift > -64 {
        m >> -shift
    } else {
        0
    }
}

/// Turns per-step probabilities into a frequency table and codes with it.
///
/// Call [`set_probabilities`](ProbabilityAdapter::set_probabilities) before
/// every coded symbol (on the decoding side too, with the same values), then
/// pass the adapter to [`Encoder::encode`](crate::coder::Encoder::encode) or
/// [`Decoder::decode`](crate::coder::Decoder::decode). Its buffers are reused:
/// after the first step with the largest alphabet, no step allocates.
///
/// **Both sides must compute bit-identical probabilities** (same weights,
/// same floating-point operations, same math library); see the
/// [module documentation](self) for why and what breaks it.
///
/// As a [`Model`], the adapter's `span` is O(1) and its `locate` a binary
/// search over the cumulative frequencies, O(log n); `update` does nothing
/// (the caller supplies the next step's probabilities). Before the first
/// successful `set_probabilities`, or after a failed one, the table is empty:
/// encoding reports [`ErrorKind::UncodableSymbol`], decoding
/// [`ErrorKind::InvalidModel`].
///
/// # Example
///
/// ```
/// use subrange::coder::{Decoder, Encoder};
/// use subrange::model::ProbabilityAdapter;
///
/// # fn main() -> Result<(), subrange::Error> {
/// // A predictor's output for a gauge's level-change class at each step.
/// let steps: [([f32; 4], u32); 3] = [
///     ([0.70, 0.20, 0.05, 0.05], 0),
///     ([0.60, 0.30, 0.05, 0.05], 1),
///     ([0.10, 0.80, 0.05, 0.05], 1),
/// ];
/// let mut adapter = ProbabilityAdapter::new();
/// let mut enc = Encoder::new();
/// for (probs, symbol) in &steps {
///     adapter.set_probabilities(probs)?;
///     enc.encode(&mut adapter, *symbol)?;
/// }
/// let bytes = enc.finish()?;
///
/// let mut dec = Decoder::new(&bytes)?;
/// for (probs, symbol) in &steps {
///     adapter.set_probabilities(probs)?; // the very same values
///     assert_eq!(dec.decode(&mut adapter)?, *symbol);
/// }
/// # Ok(())
/// # }
/// ```
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ProbabilityAdapter {
    log2_total: u32,
    /// `n + 1` cumulative frequencies (empty when no table is loaded).
    cum: Vec<u32>,
    /// Scratch: the fixed-point weights of the current step.
    weights: Vec<u64>,
}

impl Default for ProbabilityAdapter {
    fn default() -> Self {
        Self::new()
    }
}

impl ProbabilityAdapter {
    /// An adapter producing tables with a total of 2^16.
    pub fn new() -> Self {
        ProbabilityAdapter {
            log2_total: DEFAULT_LOG2_TOTAL,
            cum: Vec::new(),
            weights: Vec::new(),
        }
    }

    /// An adapter producing tables with a total of `2^log2_total`.
    ///
    /// A smaller total makes each step cheaper for the coder's arithmetic but
    /// coarser: a symbol can get no less than `1 / 2^log2_total`, and the
    /// alphabet can have at most `2^log2_total` symbols.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] unless `1 <= log2_total <= 16`.
    ///
    /// # Example
    ///
    /// ```
    /// use subrange::model::{Model, ProbabilityAdapter};
    ///
    /// let mut adapter = ProbabilityAdapter::with_log2_total(12).unwrap();
    /// adapter.set_probabilities(&[0.5f64, 0.5]).unwrap();
    /// assert_eq!(adapter.total(), 4096);
    /// assert!(ProbabilityAdapter::with_log2_total(17).is_err());
    /// ```
    pub fn with_log2_total(log2_total: u32) -> Result<Self> {
        if !(1..=16).contains(&log2_total) {
            return Err(crate::Error::invalid_parameter(
                "log2_total",
                "must be 1 ..= 16",
            ));
        }
        Ok(ProbabilityAdapter {
            log2_total,
            ..Self::new()
        })
    }

    /// Reserves room for alphabets of up to `alphabet` symbols, so that not
    /// even the first step allocates (useful on small targets).
    ///
    /// ```
    /// use subrange::model::ProbabilityAdapter;
    ///
    /// let mut adapter = ProbabilityAdapter::new();
    /// adapter.reserve(256);
    /// ```
    pub fn reserve(&mut self, alphabet: usize) {
        let alphabet = alphabet.min(MAX_ALPHABET as usize);
        self.cum.reserve(alphabet + 1);
        self.weights.reserve(alphabet);
    }

    /// `log2` of the total of every table this adapter produces.
    pub fn log2_total(&self) -> u32 {
        self.log2_total
    }

    /// Loads the next step's probabilities, one per symbol.
    ///
    /// The values are relative weights: they need not sum to one (a softmax
    /// that sums to 0.9999 is fine). Zero is allowed; every symbol still gets
    /// a frequency of at least 1.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] when the slice is empty or longer than
    /// the total (`2^log2_total` symbols), or when a value is NaN, infinite or
    /// negative, or all values are zero. On error the table is left empty, so
    /// a stale table is never used by mistake.
    ///
    /// # Example
    ///
    /// ```
    /// use subrange::model::{Model, ProbabilityAdapter};
    /// use subrange::ErrorKind;
    ///
    /// let mut adapter = ProbabilityAdapter::new();
    /// adapter.set_probabilities(&[0.9f32, 0.1, 0.0]).unwrap();
    /// assert_eq!(adapter.frequency(2), 1);
    /// let err = adapter.set_probabilities(&[0.5f32, f32::NAN]).unwrap_err();
    /// assert!(matches!(err.kind(), ErrorKind::InvalidParameter { .. }));
    /// assert_eq!(adapter.alphabet_size(), 0);
    /// ```
    pub fn set_probabilities<P: Probability>(&mut self, probabilities: &[P]) -> Result<()> {
        self.cum.clear();
        self.weights.clear();
        let n = probabilities.len();
        let total = 1u64 << self.log2_total;
        if n == 0 {
            return Err(invalid("the alphabet is empty"));
        }
        if n as u64 > total {
            return Err(invalid("more symbols than the total has units"));
        }
        // Pass 1: validate, find the largest value's magnitude.
        let mut top = None::<i32>;
        for p in probabilities {
            if let Some((m, e)) = decompose(p.to_f64())? {
                let t = top_bit(m, e);
                top = Some(top.map_or(t, |old| old.max(t)));
            }
        }
        let top = top.ok_or_else(|| invalid("all probabilities are zero"))?;
        // Pass 2: fixed-point weights, the largest in [2^43, 2^44).
        let mut weight_sum = 0u64;
        for p in probabilities {
            let w = match decompose(p.to_f64())? {
                Some((m, e)) => scaled(m, e + (WEIGHT_BITS - 1) - top),
                None => 0,
            };
            weight_sum += w;
            self.weights.push(w);
        }
        // Pass 3: what each symbol has above one unit, v_i = max(0, w_i·T - W).
        let above = |w: u64| (w << self.log2_total).saturating_sub(weight_sum);
        let mut share_sum: u128 = self.weights.iter().map(|&w| u128::from(above(w))).sum();
        let proportional = share_sum == 0;
        if proportional {
            share_sum = u128::from(weight_sum);
        }
        let shift = (128 - share_sum.leading_zeros()).saturating_sub(SHARE_BITS);
        let share = |w: u64| (if proportional { w } else { above(w) }) >> shift;
        let reduced_sum: u64 = self.weights.iter().map(|&w| share(w)).sum();
        // Pass 4: one unit each, plus a cumulative rounding of A = T - n.
        let spare = total - n as u64;
        let mut prefix = 0u64;
        let mut given = 0u64;
        let mut cum = 0u32;
        self.cum.push(0);
        for &w in &self.weights {
            prefix += share(w);
            let upto = spare * prefix / reduced_sum;
            cum += 1 + (upto - given) as u32;
            given = upto;
            self.cum.push(cum);
        }
        debug_assert_eq!(u64::from(cum), total);
        Ok(())
    }

    /// The frequency of `symbol` in the current table (0 outside it).
    pub fn frequency(&self, symbol: u32) -> u32 {
        self.span(symbol).map_or(0, |s| s.freq)
    }

    /// The current table's cumulative frequencies: `alphabet + 1` entries
    /// from 0 to the total (empty when no table is loaded).
    ///
    /// ```
    /// use subrange::model::ProbabilityAdapter;
    ///
    /// let mut adapter = ProbabilityAdapter::with_log2_total(4).unwrap();
    /// adapter.set_probabilities(&[0.5f64, 0.25, 0.25]).unwrap();
    /// assert_eq!(adapter.cumulative(), &[0, 8, 12, 16]);
    /// ```
    pub fn cumulative(&self) -> &[u32] {
        &self.cum
    }
}

impl Model for ProbabilityAdapter {
    #[inline]
    fn alphabet_size(&self) -> u32 {
        self.cum.len().saturating_sub(1) as u32
    }

    #[inline]
    fn total(&self) -> u32 {
        1 << self.log2_total
    }

    #[inline]
    fn span(&self, symbol: u32) -> Option<Span> {
        let s = symbol as usize;
        let end = *self.cum.get(s.checked_add(1)?)?;
        Some(Span::new(self.cum[s], end - self.cum[s]))
    }

    #[inline]
    fn locate(&self, target: u32) -> (u32, Span) {
        let n = self.cum.len().saturating_sub(1);
        if n == 0 {
            return (0, Span::new(0, 0));
        }
        // The first symbol whose end lies above the target.
        let s = self.cum[1..]
            .partition_point(|&end| end <= target)
            .min(n - 1);
        (
            s as u32,
            Span::new(self.cum[s], self.cum[s + 1] - self.cum[s]),
        )
    }
}

/// Quantises one set of probabilities to frequencies summing to
/// `2^log2_total`, every symbol getting at least 1.
///
/// The same method as [`ProbabilityAdapter`] (O(n), exact, deterministic),
/// returning a new vector; for per-step use, prefer the adapter, which reuses
/// its buffers.
///
/// # Errors
///
/// As for [`ProbabilityAdapter::with_log2_total`] and
/// [`ProbabilityAdapter::set_probabilities`].
///
/// # Example
///
/// ```
/// use subrange::model::quantize_probabilities;
///
/// // Exact shares stay exact; a zero still gets one unit.
/// assert_eq!(quantize_probabilities(&[0.5f64, 0.25, 0.25], 4).unwrap(), vec![8, 4, 4]);
/// assert_eq!(quantize_probabilities(&[1.0f32, 0.0, 0.0], 4).unwrap(), vec![14, 1, 1]);
/// ```
pub fn quantize_probabilities<P: Probability>(
    probabilities: &[P],
    log2_total: u32,
) -> Result<Vec<u32>> {
    let mut adapter = ProbabilityAdapter::with_log2_total(log2_total)?;
    adapter.set_probabilities(probabilities)?;
    Ok(adapter.cum.windows(2).map(|w| w[1] - w[0]).collect())
}

#[cfg(test)]
mod tests {
    use super::*;
    use alloc::vec;

    #[test]
    fn decompose_is_exact() {
        assert_eq!(decompose(1.0).unwrap(), Some((1 << 52, -52)));
        assert_eq!(decompose(0.0).unwrap(), None);
        assert_eq!(decompose(-0.0).unwrap(), None);
        // Smallest subnormal: 2^-1074.
        assert_eq!(decompose(f64::from_bits(1)).unwrap(), Some((1, -1074)));
        assert!(decompose(-1e-300).is_err());
        assert!(decompose(f64::INFINITY).is_err());
        assert!(decompose(f64::NAN).is_err());
    }

    #[test]
    fn locate_inverts_span() {
        let mut a = ProbabilityAdapter::with_log2_total(10).unwrap();
        a.set_probabilities(&[0.3f64, 0.0, 0.6, 1e-9, 0.1]).unwrap();
        for t in 0..a.total() {
            let (s, span) = a.locate(t);
            assert_eq!(a.span(s), Some(span));
            assert!(span.cum <= t && t < span.cum + span.freq);
        }
        assert_eq!(a.span(5), None);
        assert_eq!(a.span(u32::MAX), None);
    }

    #[test]
    fn buffers_are_reused() {
        let mut a = ProbabilityAdapter::new();
        a.reserve(256);
        let (cum, weights) = (a.cum.as_ptr(), a.weights.as_ptr());
        let mut probs = vec![0.0f32; 256];
        for step in 0..50 {
            for (i, p) in probs.iter_mut().enumerate() {
                *p = ((i * 31 + step * 7) % 97) as f32 + 0.5;
            }
            a.set_probabilities(&probs).unwrap();
            assert_eq!(a.cum.as_ptr(), cum);
            assert_eq!(a.weights.as_ptr(), weights);
        }
    }

    #[test]
    fn huge_and_tiny_magnitudes() {
        // Values far apart in magnitude and near the ends of the f64 range.
        let f = quantize_probabilities(&[f64::MAX, 1e-300, f64::MIN_POSITIVE / 4.0], 16).unwrap();
        assert_eq!(f, vec![65534, 1, 1]);
        let f = quantize_probabilities(&[f64::MAX, f64::MAX], 16).unwrap();
        assert_eq!(f, vec![32768, 32768]);
        let f = quantize_probabilities(&[3e-310f64, 1e-310], 2).unwrap();
        assert_eq!(f.iter().sum::<u32>(), 4);
    }

    #[test]
    fn full_alphabet() {
        let f = quantize_probabilities(&[1.0f32, 2.0, 3.0, 4.0], 2).unwrap();
        assert_eq!(f, vec![1, 1, 1, 1]);
        assert!(quantize_probabilities(&[1.0f32; 5], 2).is_err());
    }
}
