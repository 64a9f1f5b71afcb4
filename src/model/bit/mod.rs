//! Binary predictors: probabilities for the coder's binary step.
//!
//! A [`BitPredictor`] says how likely the next bit is to be a 1, as a 16-bit
//! integer, and learns from the bit once it is coded. The coder splits its
//! range by that probability ([`Encoder::encode_bit`]); the decoder asks the
//! same predictor, in the same state, for the same probability, so both sides
//! stay in lock step as long as both call [`update`](BitPredictor::update)
//! with the same bits. [`encode_with`] and [`decode_with`] do the
//! predict–code–update step in one call.
//!
//! Around the trait: [`CountingPredictor`] and [`KtPredictor`] (count-based
//! rates), [`BitTree`] (bytes through a binary tree of predictors),
//! [`stretch`] / [`squash`] (the logistic domain), [`Mixer`] and
//! [`MixedPredictor`] (logistic mixing) and [`Apm`] (an adaptive
//! probability map). The packed counters of the context-mixing engines are
//! in `counter`.
//!
//! This file also holds the simplest predictor, [`ShiftPredictor`]: a
//! probability moved a fixed fraction `2^-rate` towards each coded bit (an
//! exponentially decaying average; small rates adapt fast, large rates
//! estimate stationary sources precisely). The invariant it keeps is that its
//! 32-bit state never leaves `0 .. 2^32`, so `p1` is always in `1 ..= 65535`
//! after clamping.

pub(crate) mod apm;
pub(crate) mod counter;
mod kt;
pub(crate) mod logistic;
pub(crate) mod mix;
mod tree;

pub use apm::Apm;
pub use counter::{CountingPredictor, MAX_COUNT_LIMIT};
pub use kt::KtPredictor;
pub use logistic::{squash, stretch, STRETCH_MAX};
pub use mix::{MixedPredictor, Mixer, MAX_MIXER_INPUTS, MAX_MIXER_SETS};
pub use tree::BitTree;

use alloc::boxed::Box;

use crate::coder::{ByteSink, ByteSource, Decoder, Encoder};
#[cfg(doc)]
use crate::error::ErrorKind;
use crate::error::Result;

/// A source of binary probabilities: `P(next bit = 1)` scaled to 2^16.
///
/// # Implementer notes
///
/// - [`p1`](BitPredictor::p1) returns the probability that the next bit is a
///   1, scaled to 2^16. It must be a pure read: calling it twice without an
///   `update` in between gives the same value. Values outside `1 ..= 65535`
///   are clamped by the coder (a probability of 0 or 1 cannot be coded).
/// - [`update`](BitPredictor::update) learns the coded bit. Encoder and
///   decoder must make the same sequence of `update` calls, and the predictor
///   must not change in any other way: no time, randomness, addresses or
///   floating point whose rounding could differ between machines. Integer
///   arithmetic with defined overflow (or none) keeps both sides identical.
/// - Expensive predictors (a mixer, say) can do their work in `update` and
///   cache the next probability, so `p1` stays cheap.
///
/// # Example
///
/// A user-defined predictor: a bit tends to repeat the previous one.
///
/// ```
/// use subrange::coder::{Decoder, Encoder};
/// use subrange::model::{decode_with, encode_with, BitPredictor};
///
/// struct Repeat {
///     last: bool,
/// }
///
/// impl BitPredictor for Repeat {
///     fn p1(&self) -> u32 {
///         if self.last { 60_000 } else { 5_536 }
///     }
///     fn update(&mut self, bit: bool) {
///         self.last = bit;
///     }
/// }
///
/// # fn main() -> Result<(), subrange::Error> {
/// let bits: Vec<bool> = (0..400).map(|i| (i / 50) % 2 == 1).collect();
/// let mut enc = Encoder::new();
/// let mut model = Repeat { last: false };
/// for &b in &bits {
///     encode_with(&mut enc, &mut model, b)?;
/// }
/// let bytes = enc.finish()?;
/// assert!(bytes.len() < 14); // about 78 bits
///
/// let mut dec = Decoder::new(&bytes)?;
/// let mut model = Repeat { last: false };
/// for &b in &bits {
///     assert_eq!(decode_with(&mut dec, &mut model)?, b);
/// }
/// # Ok(())
/// # }
/// ```
pub trait BitPredictor {
    /// Probability that the next bit is a 1, scaled to 2^16 (`1 ..= 65535`).
    fn p1(&self) -> u32;

    /// Learns the bit that was just coded.
    fn update(&mut self, bit: bool);
}

impl<P: BitPredictor + ?Sized> BitPredictor for &mut P {
    #[inline]
    fn p1(&self) -> u32 {
        (**self).p1()
    }
    #[inline]
    fn update(&mut self, bit: bool) {
        (**self).update(bit)
    }
}

impl<P: BitPredictor + ?Sized> BitPredictor for Box<P> {
    #[inline]
    fn p1(&self) -> u32 {
        (**self).p1()
    }
    #[inline]
    fn update(&mut self, bit: bool) {
        (**self).update(bit)
    }
}

#[allow(dead_code)]
fn _bit_predictor_is_object_safe(_: &dyn BitPredictor) {}

/// Codes `bit` with the probability `predictor` gives, then lets it learn.
///
/// # Errors
///
/// The sink's error.
///
/// # Example
///
/// ```
/// use subrange::coder::{Decoder, Encoder};
/// use subrange::model::{decode_with, encode_with, ShiftPredictor};
///
/// # fn main() -> Result<(), subrange::Error> {
/// let mut enc = Encoder::new();
/// let mut p = ShiftPredictor::new(4)?;
/// for i in 0..64 {
///     encode_with(&mut enc, &mut p, i % 8 == 0)?;
/// }
/// let bytes = enc.finish()?;
/// let mut dec = Decoder::new(&bytes)?;
/// let mut p = ShiftPredictor::new(4)?;
/// for i in 0..64 {
///     assert_eq!(decode_with(&mut dec, &mut p)?, i % 8 == 0);
/// }
/// # Ok(())
/// # }
/// ```
#[inline]
pub fn encode_with<S: ByteSink, P: BitPredictor + ?Sized>(
    encoder: &mut Encoder<S>,
    predictor: &mut P,
    bit: bool,
) -> Result<()> {
    encoder.encode_bit(bit, predictor.p1())?;
    predictor.update(bit);
    Ok(())
}

/// Decodes one bit with the probability `predictor` gives, then lets it learn.
///
/// See [`encode_with`] for an example.
///
/// # Errors
///
/// As for [`Decoder::decode_bit`]: truncated or corrupt input.
#[inline]
pub fn decode_with<S: ByteSource, P: BitPredictor + ?Sized>(
    decoder: &mut Decoder<S>,
    predictor: &mut P,
) -> Result<bool> {
    let bit = decoder.decode_bit(predictor.p1())?;
    predictor.update(bit);
    Ok(bit)
}

/// A probability moved `2^-rate` of the way towards every coded bit.
///
/// The state is a 32-bit fixed-point probability, so even slow rates have no
/// dead zone near 0 or 1 that matters at the coder's 16-bit precision.
///
/// # Example
///
/// ```
/// use subrange::model::{BitPredictor, ShiftPredictor};
///
/// let mut p = ShiftPredictor::new(2).unwrap();
/// assert_eq!(p.p1(), 32768);
/// p.update(true); // a quarter of the way to 1
/// assert_eq!(p.p1(), 40960 - 1);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ShiftPredictor {
    p: u32,
    rate: u8,
}

impl ShiftPredictor {
    /// Largest allowed rate (the slowest adaptation).
    pub const MAX_RATE: u8 = 16;

    /// A predictor starting at probability ½.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] unless `1 <= rate <= 16`.
    pub fn new(rate: u8) -> Result<Self> {
        Self::with_p1(rate, 32768)
    }

    /// A predictor starting at probability `p1 / 65536` (clamped to `1 ..= 65535`).
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] unless `1 <= rate <= 16`.
    pub fn with_p1(rate: u8, p1: u32) -> Result<Self> {
        if rate == 0 || rate > Self::MAX_RATE {
            return Err(crate::Error::invalid_parameter(
                "rate",
                "must be in 1 ..= 16",
            ));
        }
        Ok(ShiftPredictor {
            p: p1.clamp(1, 65535) << 16,
            rate,
        })
    }

    /// The adaptation rate: each update moves `2^-rate` of the way.
    pub fn rate(&self) -> u8 {
        self.rate
    }
}

impl BitPredictor for ShiftPredictor {
    #[inline]
    fn p1(&self) -> u32 {
        (self.p >> 16).clamp(1, 65535)
    }

    #[inline]
    fn update(&mut self, bit: bool) {
        if bit {
            self.p += (u32::MAX - self.p) >> self.rate;
        } else {
            self.p -= self.p >> self.rate;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shift_converges_and_stays_in_range() {
        let mut p = ShiftPredictor::new(1).unwrap();
        for _ in 0..100 {
            p.update(true);
        }
        assert_eq!(p.p1(), 65535);
        for _ in 0..100 {
            p.update(false);
        }
        assert_eq!(p.p1(), 1);
        assert!(ShiftPredictor::new(0).is_err());
        assert!(ShiftPredictor::new(17).is_err());
    }

    #[test]
    fn slow_rate_tracks_frequency() {
        let mut p = ShiftPredictor::new(10).unwrap();
        for i in 0..50_000u32 {
            p.update(i % 4 == 0);
        }
        assert!(p.p1().abs_diff(16384) < 600, "{}", p.p1());
    }
}
