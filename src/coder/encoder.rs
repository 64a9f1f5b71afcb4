//! The range encoder.
//!
//! State: `low` (a `u64` whose bit 32 catches carries) and `range` (a `u32`).
//! The coder's current interval is `[low, low + range)` scaled by 2^-32 below
//! the bytes already emitted. Coding a span `cum .. cum + freq` out of `total`
//! sets `r = range / total`, `low += r·cum` and `range = r·freq`, except that
//! the last symbol of the alphabet (`cum + freq == total`) also takes the
//! remainder `range - r·total`, so no part of the interval is wasted at the top.
//!
//! Invariants kept after every step:
//! - `2^24 <= range < 2^32` (renormalisation shifts out a byte while
//!   `range < 2^24`);
//! - `low < 2^32` after each shift, and `low + range` never exceeds the value
//!   the interval had when the previous byte was settled — so a carry can
//!   reach the bytes still held back but never one already emitted.
//!
//! Carries are settled with a cached byte and a count of pending `0xFF` bytes:
//! a byte whose value could still change by a carry is held back; when the
//! next byte is known not to be `0xFF` (or a carry arrives), the cache and the
//! run of pending bytes are released, plus the carry. Output therefore streams:
//! nothing emitted is ever rewritten.
//!
//! [`Encoder::finish`] writes the fewest bytes that pin the final interval:
//! it picks the value in `[low, low + range)` with the most trailing zero bytes
//! and drops those zeros; the decoder reads them back as the (at most four)
//! implicit zero bytes past the end.

use crate::coder::cost::IdealCost;
use crate::coder::sink::ByteSink;
use crate::coder::TOP;
use crate::coder::{Model, Span, MAX_TOTAL};
use crate::error::{ErrorKind, Result};
use alloc::vec::Vec;

/// A range encoder writing to a [`ByteSink`].
///
/// The model is passed per call, so one stream can interleave any number of
/// models (one per field of a record, say); the decoder must use the same
/// models in the same order.
///
/// # Example
///
/// ```
/// use subrange::coder::{Decoder, Encoder};
/// use subrange::model::StepwiseModel;
///
/// # fn main() -> Result<(), subrange::Error> {
/// let message = [3u32, 1, 4, 1, 5, 9, 2, 6];
/// let mut model = StepwiseModel::new(10)?;
/// let mut encoder = Encoder::new();
/// for &s in &message {
///     encoder.encode(&mut model, s)?;
/// }
/// let bytes = encoder.finish()?;
///
/// let mut model = StepwiseModel::new(10)?;
/// let mut decoder = Decoder::new(&bytes)?;
/// for &s in &message {
///     assert_eq!(decoder.decode(&mut model)?, s);
/// }
/// # Ok(())
/// # }
/// ```
#[derive(Debug, Clone)]
pub struct Encoder<S: ByteSink = Vec<u8>> {
    low: u64,
    range: u32,
    /// The byte held back in case a carry reaches it (valid when `has_cache`).
    cache: u8,
    has_cache: bool,
    /// Number of `0xFF` bytes held back after `cache`.
    pending: u64,
    sink: S,
    written: u64,
    meter: Option<IdealCost>,
}

impl Encoder<Vec<u8>> {
    /// An encoder writing into a new `Vec<u8>`.
    pub fn new() -> Self {
        Self::with_sink(Vec::new())
    }
}

impl Default for Encoder<Vec<u8>> {
    fn default() -> Self {
        Self::new()
    }
}

impl<S: ByteSink> Encoder<S> {
    /// An encoder writing into `sink`.
    pub fn with_sink(sink: S) -> Self {
        Encoder {
            low: 0,
            range: u32::MAX,
            cache: 0,
            has_cache: false,
            pending: 0,
            sink,
            written: 0,
            meter: None,
        }
    }

    /// Turns on ideal-cost accounting: from now on every coded step adds
    /// `-log2(freq / total)` to [`ideal_cost`](Encoder::ideal_cost).
    pub fn enable_cost_meter(&mut self) {
        if self.meter.is_none() {
            self.meter = Some(IdealCost::new());
        }
    }

    /// The ideal cost of what was coded since the meter was enabled.
    pub fn ideal_cost(&self) -> Option<&IdealCost> {
        self.meter.as_ref()
    }

    /// Codes `symbol` with `model`, then lets the model learn it.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::UncodableSymbol`] when the model cannot code the symbol
    /// (outside the alphabet, zero frequency and no escape);
    /// [`ErrorKind::InvalidModel`] when the model breaks its contract;
    /// the sink's error. On error nothing was coded and the model is unchanged.
    #[inline(always)]
    pub fn encode<M: Model + ?Sized>(&mut self, model: &mut M, symbol: u32) -> Result<()> {
        let total = model.total();
        match model.span(symbol) {
            Some(span) => self.encode_span(span, total)?,
            None => {
                let alphabet = model.alphabet_size();
                let escape = match model.escape() {
                    Some(esc) if symbol < alphabet => esc,
                    _ => return Err(ErrorKind::UncodableSymbol { symbol, alphabet }.into()),
                };
                self.encode_span(escape, total)?;
                self.encode_span(Span::new(symbol, 1), alphabet)?;
            }
        }
        model.update(symbol);
        Ok(())
    }

    /// Codes one raw step: the span `cum .. cum + freq` out of `total`.
    ///
    /// This is the primitive under [`encode`](Encoder::encode), for callers
    /// that keep their own frequency tables.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidModel`] unless `1 <= freq`, `cum + freq <= total`
    /// and `total <= 2^16`; the sink's error.
    #[inline(always)]
    pub fn encode_span(&mut self, span: Span, total: u32) -> Result<()> {
        let Span { cum, freq } = span;
        if freq == 0 || total > MAX_TOTAL || cum.checked_add(freq).is_none_or(|end| end > total) {
            return Err(crate::Error::invalid_model(
                "span must have 1 <= freq, cum + freq <= total <= 65536",
            ));
        }
        if let Some(meter) = &mut self.meter {
            meter.add(freq, total);
        }
        let r = if total.is_power_of_two() {
            self.range >> total.trailing_zeros()
        } else {
            self.range / total
        };
        let offset = r * cum;
        self.low += u64::from(offset);
        if cum + freq < total {
            self.range = r * freq;
        } else {
            self.range -= offset;
        }
        self.renormalise()
    }

    /// Codes one binary decision. `p1` is the probability that `bit` is `true`,
    /// scaled to 2^16; it is clamped to `1 ..= 65535`, so any value is safe.
    ///
    /// # Errors
    ///
    /// The sink's error.
    ///
    /// # Example
    ///
    /// ```
    /// use subrange::coder::{Decoder, Encoder};
    ///
    /// # fn main() -> Result<(), subrange::Error> {
    /// let mut enc = Encoder::new();
    /// for i in 0..100 {
    ///     enc.encode_bit(i % 10 == 0, 6554)?; // p(1) = 0.1
    /// }
    /// let bytes = enc.finish()?;
    /// assert!(bytes.len() < 7); // about 100 · h(0.1) = 47 bits
    /// let mut dec = Decoder::new(&bytes)?;
    /// for i in 0..100 {
    ///     assert_eq!(dec.decode_bit(6554)?, i % 10 == 0);
    /// }
    /// # Ok(())
    /// # }
    /// ```
    #[inline(always)]
    pub fn encode_bit(&mut self, bit: bool, p1: u32) -> Result<()> {
        let p1 = p1.clamp(1, 65535);
        // floor(range · p1 / 2^16): the split is exact to one unit of the
        // range, so a bit costs its ideal length to within 2^-23 bits.
        let bound = ((u64::from(self.range) * u64::from(p1)) >> 16) as u32;
        self.bit_step(bit, p1, bound)
    }

    /// Codes one binary decision with the coarser split of streams whose
    /// header records `precise=0`: `bound = (range >> 16) · p1`, which drops the low
    /// 16 bits of the range and so costs up to 2^-8 (typically 2^-12) of a
    /// bit's share. Kept so that such streams (the `order2` and `mix`
    /// containers with `precise` 0) still decode; new streams use
    /// [`encode_bit`](Encoder::encode_bit).
    ///
    /// # Errors
    ///
    /// As for [`encode_bit`](Encoder::encode_bit).
    #[inline(always)]
    pub fn encode_bit_coarse(&mut self, bit: bool, p1: u32) -> Result<()> {
        let p1 = p1.clamp(1, 65535);
        let bound = (self.range >> 16) * p1;
        self.bit_step(bit, p1, bound)
    }

    /// Narrows the range to the `bit` side of `bound`.
    #[inline(always)]
    fn bit_step(&mut self, bit: bool, p1: u32, bound: u32) -> Result<()> {
        if let Some(meter) = &mut self.meter {
            meter.add_bit(bit, p1);
        }
        if bit {
            self.range = bound;
        } else {
            self.low += u64::from(bound);
            self.range -= bound;
        }
        self.renormalise()
    }

    #[inline]
    fn renormalise(&mut self) -> Result<()> {
        while self.range < TOP {
            self.range <<= 8;
            self.shift_low()?;
        }
        Ok(())
    }

    /// Moves the top byte of `low` into the cache / pending pipeline.
    #[inline]
    fn shift_low(&mut self) -> Result<()> {
        if self.low < 0xFF00_0000 || self.low >= 1 << 32 {
            let carry = (self.low >> 32) as u8;
            if self.has_cache {
                self.sink.put(self.cache.wrapping_add(carry))?;
                self.written += 1;
            }
            if self.pending > 0 {
                self.sink
                    .put_run(0xFFu8.wrapping_add(carry), self.pending)?;
                self.written += self.pending;
                self.pending = 0;
            }
            self.cache = (self.low >> 24) as u8;
            self.has_cache = true;
        } else {
            self.pending += 1;
        }
        self.low = (self.low << 8) & 0xFFFF_FFFF;
        Ok(())
    }

    /// Number of bytes handed to the sink so far (bytes held back for carry
    /// resolution are not counted until released).
    pub fn bytes_written(&self) -> u64 {
        self.written
    }

    /// An estimate of the stream length if it were finished now, in bytes.
    pub fn len_estimate(&self) -> u64 {
        self.written + u64::from(self.has_cache) + self.pending + 1
    }

    /// A reference to the sink.
    pub fn sink(&self) -> &S {
        &self.sink
    }

    /// Writes the final bytes and returns the sink.
    ///
    /// # Errors
    ///
    /// The sink's error.
    pub fn finish(mut self) -> Result<S> {
        self.flush()?;
        Ok(self.sink)
    }

    fn flush(&mut self) -> Result<()> {
        let (value, keep) = flush_value(self.low, self.range);
        self.low = value;
        for _ in 0..keep {
            self.shift_low()?;
        }
        // Release the cache and pending bytes, settling any final carry.
        let carry = (self.low >> 32) as u8;
        if self.has_cache {
            self.sink.put(self.cache.wrapping_add(carry))?;
            self.written += 1;
            self.has_cache = false;
        }
        if self.pending > 0 {
            self.sink
                .put_run(0xFFu8.wrapping_add(carry), self.pending)?;
            self.written += self.pending;
            self.pending = 0;
        }
        Ok(())
    }
}

/// The value a coder ends its stream with, and how many of its top bytes
/// to write: the value in `[low, low + range)` with the most trailing zero
/// bytes, `low` rounded up to a multiple of `2^(32 - 8k)` for the smallest
/// `k` that stays inside the interval (`k = 1` always does, as
/// `range >= 2^24`). `low` may carry into bit 32; so may the value.
pub(crate) fn flush_value(low: u64, range: u32) -> (u64, u32) {
    let end = low + u64::from(range);
    for k in 0..=4u32 {
        let mask = (1u64 << (32 - 8 * k)) - 1;
        let candidate = (low + mask) & !mask;
        if candidate < end {
            return (candidate, k);
        }
    }
    (low, 0)
}
