//! The range decoder.
//!
//! The decoder mirrors the encoder's arithmetic on `range` and keeps
//! `code = value - low`, the offset of the encoder's final value inside the
//! current interval, in a 32-bit window (so it never needs `low` itself).
//! For a step with `total`, `r = range / total` and the target `code / r`
//! (capped at `total - 1`, where the top symbol's remainder lies) selects the
//! symbol through [`Model::locate`]; then `code -= r·cum` and `range` narrows
//! exactly as in the encoder. Renormalisation shifts in one byte whenever the
//! encoder shifted one out.
//!
//! Invariant: for a stream the encoder produced, `code < range` after every
//! step. A decoder that finds `code >= range` knows the input is damaged and
//! says so ([`ErrorKind::CorruptStream`]).
//!
//! End of input: the encoder drops trailing zero bytes of its final value
//! (at most four), so the decoder reads up to four zero bytes past the end of
//! the input. Needing a fifth means the input was cut short:
//! [`ErrorKind::Truncated`]. Damaged input yields an error or wrong symbols,
//! never a panic, and the decoder does no work or allocation the input could
//! inflate: each call decodes one symbol.

use crate::coder::source::{ByteSource, SliceSource};
use crate::coder::TOP;
use crate::coder::{Model, Span, ESCAPE, MAX_TOTAL};
#[cfg(doc)]
use crate::error::ErrorKind;
use crate::error::Result;

/// Bytes the decoder may read past the end of its input (as zeros).
const MAX_PAD: u32 = 4;

/// A range decoder reading from a [`ByteSource`].
///
/// See [`Encoder`](super::Encoder) for a round-trip example.
#[derive(Debug, Clone)]
pub struct Decoder<S: ByteSource> {
    range: u32,
    code: u32,
    source: S,
    /// Zero bytes supplied past the end of the input so far.
    padded: u32,
}

impl<'a> Decoder<SliceSource<'a>> {
    /// A decoder over a complete coded stream in memory.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::CorruptStream`] if the first bytes cannot start a stream.
    pub fn new(bytes: &'a [u8]) -> Result<Self> {
        Self::with_source(SliceSource::new(bytes))
    }
}

impl<S: ByteSource> Decoder<S> {
    /// A decoder reading from `source`; reads the first four bytes.
    ///
    /// # Errors
    ///
    /// The source's error; [`ErrorKind::CorruptStream`] if the first bytes
    /// cannot start a stream.
    pub fn with_source(source: S) -> Result<Self> {
        let mut d = Decoder {
            range: u32::MAX,
            code: 0,
            source,
            padded: 0,
        };
        for _ in 0..4 {
            d.code = (d.code << 8) | u32::from(d.next_byte()?);
        }
        d.check()?;
        Ok(d)
    }

    #[inline(always)]
    fn next_byte(&mut self) -> Result<u8> {
        match self.source.take()? {
            Some(b) if self.padded == 0 => Ok(b),
            Some(_) => Err(self.corrupt("input continues after a gap")),
            None => {
                if self.padded >= MAX_PAD {
                    return Err(crate::Error::truncated(self.source.position()));
                }
                self.padded += 1;
                Ok(0)
            }
        }
    }

    fn corrupt(&self, reason: &'static str) -> crate::Error {
        crate::Error::corrupt_stream(self.source.position(), reason)
    }

    #[inline(always)]
    fn check(&self) -> Result<()> {
        if self.code >= self.range {
            return Err(self.corrupt("code value outside the coder interval"));
        }
        Ok(())
    }

    /// Decodes one symbol with `model`, then lets the model learn it.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::Truncated`] when the input ends too early;
    /// [`ErrorKind::CorruptStream`] when the input cannot be a coded stream;
    /// [`ErrorKind::InvalidModel`] when the model breaks its contract.
    #[inline(always)]
    pub fn decode<M: Model + ?Sized>(&mut self, model: &mut M) -> Result<u32> {
        let total = model.total();
        if total == 0 || total > MAX_TOTAL {
            return Err(crate::Error::invalid_model("total must be in 1 ..= 65536"));
        }
        let target = self.target(total);
        let (mut symbol, span) = model.locate(target);
        if span.freq == 0
            || target < span.cum
            || target - span.cum >= span.freq
            || span.cum + span.freq > total
        {
            return Err(crate::Error::invalid_model(
                "locate returned a span that does not contain the target",
            ));
        }
        self.narrow(span, total)?;
        if symbol == ESCAPE {
            let alphabet = model.alphabet_size();
            if alphabet == 0 || alphabet > MAX_TOTAL {
                return Err(crate::Error::invalid_model(
                    "escape needs an alphabet of 1 ..= 65536 symbols",
                ));
            }
            symbol = self.target(alphabet);
            self.narrow(Span::new(symbol, 1), alphabet)?;
        }
        model.update(symbol);
        Ok(symbol)
    }

    /// The target of a step with `total`: which slot of `0 .. total` the
    /// encoder's value lies in. Use with [`consume`](Decoder::consume) to decode
    /// with a frequency table of your own.
    #[inline(always)]
    pub fn target(&self, total: u32) -> u32 {
        let r = self.step_unit(total);
        (self.code / r).min(total - 1)
    }

    #[inline(always)]
    fn step_unit(&self, total: u32) -> u32 {
        if total.is_power_of_two() {
            self.range >> total.trailing_zeros()
        } else {
            self.range / total
        }
    }

    /// Removes the decoded span from the interval (the mirror of
    /// [`Encoder::encode_span`](super::Encoder::encode_span)).
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidModel`] unless `1 <= freq`, `cum + freq <= total`
    /// and `total <= 2^16`; otherwise as for [`decode`](Decoder::decode).
    #[inline(always)]
    pub fn consume(&mut self, span: Span, total: u32) -> Result<()> {
        if span.freq == 0
            || total > MAX_TOTAL
            || span
                .cum
                .checked_add(span.freq)
                .is_none_or(|end| end > total)
        {
            return Err(crate::Error::invalid_model(
                "span must have 1 <= freq, cum + freq <= total <= 65536",
            ));
        }
        self.narrow(span, total)
    }

    #[inline(always)]
    fn narrow(&mut self, span: Span, total: u32) -> Result<()> {
        let r = self.step_unit(total);
        let offset = r * span.cum;
        self.code -= offset.min(self.code);
        if span.cum + span.freq < total {
            self.range = r * span.freq;
        } else {
            self.range -= offset;
        }
        while self.range < TOP {
            self.range <<= 8;
            self.code = (self.code << 8) | u32::from(self.next_byte()?);
        }
        self.check()
    }

    /// Decodes one binary decision coded with probability `p1` (of a 1, scaled
    /// to 2^16, clamped to `1 ..= 65535`).
    ///
    /// # Errors
    ///
    /// As for [`decode`](Decoder::decode).
    #[inline(always)]
    pub fn decode_bit(&mut self, p1: u32) -> Result<bool> {
        let p1 = p1.clamp(1, 65535);
        let bound = ((u64::from(self.range) * u64::from(p1)) >> 16) as u32;
        self.bit_step(bound)
    }

    /// Decodes one binary decision coded by
    /// [`Encoder::encode_bit_coarse`](crate::coder::Encoder::encode_bit_coarse).
    ///
    /// # Errors
    ///
    /// As for [`decode`](Decoder::decode).
    #[inline(always)]
    pub fn decode_bit_coarse(&mut self, p1: u32) -> Result<bool> {
        let p1 = p1.clamp(1, 65535);
        let bound = (self.range >> 16) * p1;
        self.bit_step(bound)
    }

    /// Takes the side of `bound` the code lies on.
    #[inline(always)]
    fn bit_step(&mut self, bound: u32) -> Result<bool> {
        let bit = self.code < bound;
        // Branch-free: the bit is as unpredictable as the data, and the
        // next prediction waits for it.
        let keep = 0u32.wrapping_sub(u32::from(bit));
        self.code -= bound & !keep;
        self.range = (bound & keep) | (self.range.wrapping_sub(bound) & !keep);
        while self.range < TOP {
            self.range <<= 8;
            self.code = (self.code << 8) | u32::from(self.next_byte()?);
        }
        self.check()?;
        Ok(bit)
    }

    /// Number of real input bytes read so far.
    pub fn bytes_read(&self) -> u64 {
        self.source.position()
    }

    /// Whether the decoder has read past the end of its input (into the
    /// implicit zero bytes).
    pub fn past_end(&self) -> bool {
        self.padded > 0
    }

    /// A reference to the source.
    pub fn source(&self) -> &S {
        &self.source
    }

    /// Checks that the whole input was used, and returns the source.
    ///
    /// Call it after the last symbol when the coded stream has a known
    /// length: a stream the encoder produced is consumed exactly.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::TrailingBytes`] when input remains; the source's error.
    pub fn finish(mut self) -> Result<S> {
        if self.padded == 0 {
            let offset = self.source.position();
            if self.source.take()?.is_some() {
                return Err(crate::Error::trailing_bytes(offset, 1));
            }
        }
        Ok(self.source)
    }

    /// Returns the source without checking for unread input.
    pub fn into_source(self) -> S {
        self.source
    }
}
