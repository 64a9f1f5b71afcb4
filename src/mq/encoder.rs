//! The MQ encoder: registers and procedures of the standards' software
//! conventions (ITU-T T.88 Annex E, ISO/IEC 15444-1 Annex C).
//!
//! # Registers
//!
//! - `A`, the interval size, 16 significant bits with `0x8000` standing for
//!   0.75. Every decision splits `A` into an upper part `A - Qe` and a lower
//!   part `Qe`; renormalisation (RENORME) doubles `A` until it is back in
//!   `[0x8000, 0x10000)`. Between calls `A` is always in that range.
//! - `C`, the low end of the interval, laid out as
//!   `0000 cbbb bbbb bsss xxxx xxxx xxxx xxxx`: 16 fraction bits `x` aligned
//!   with `A`, 3 spacer bits `s`, the 8 bits `b` of the next output byte and
//!   a carry bit `c`.
//! - `CT`, the number of shifts left before the next byte leaves `C`
//!   (BYTEOUT). It is 8 after an ordinary byte, 7 after a 0xFF (the bit
//!   stuffing: the byte after 0xFF carries only 7 code bits, its top bit is
//!   left free to absorb a carry), and 12 at the start.
//! - `B`, the byte most recently taken out of `C`. It is held back from the
//!   sink because a carry out of `C` may still add one to it. A carry never
//!   reaches a 0xFF byte (that is what the stuffed bit is for), so `B` is the
//!   only byte that ever changes after it has been formed, and every byte
//!   handed to the sink is final.
//!
//! # Conditional exchange
//!
//! The MPS normally takes the upper sub-interval `A - Qe`. When that would be
//! smaller than `Qe` (only possible when renormalisation follows anyway), the
//! two symbols swap sub-intervals so the more probable one always gets the
//! larger part (CODEMPS / CODELPS).
//!
//! # Renormalisation in one step
//!
//! RENORME doubles `A` and `C` one bit at a time and calls BYTEOUT whenever
//! `CT` reaches zero. This implementation counts the shifts needed from the
//! leading zeros of `A` and shifts `A` and `C` by up to `CT` bits at once,
//! calling BYTEOUT exactly where the bit-serial procedure would; the result is
//! bit-identical (a unit test checks it against the bit-serial loop, and
//! `tests/mq/mq_roundtrip.rs` the whole encoder against a flowchart-literal one).
//!
//! CODEMPS and CODELPS are likewise written as one selection of the kept
//! sub-interval instead of nested branches (see `encode_in`): the outcome of
//! a decision is exactly what a branch predictor cannot guess, and only the
//! rare BYTEOUT path is left behind a jump.

use alloc::vec::Vec;

use super::contexts::MqContexts;
use super::error::MqError;
use super::table::{PACKED_MASK, TRANSITIONS};

/// Where the encoder puts its bytes.
///
/// # Implementer notes
///
/// Bytes arrive in stream order, each exactly once, and are final when they
/// arrive: the encoder never revisits a byte it has handed over.
///
/// # Example
///
/// ```
/// use subrange::mq::{MqContexts, MqEncoder, MqSink, Termination};
///
/// /// Counts the bytes instead of keeping them.
/// #[derive(Debug, Default)]
/// struct Counter(usize);
///
/// impl MqSink for Counter {
///     fn put_byte(&mut self, _byte: u8) {
///         self.0 += 1;
///     }
/// }
///
/// # fn main() -> Result<(), subrange::mq::MqError> {
/// let flags = [false, true, false, false, false, false, true, false];
/// let mut counting = MqEncoder::new(Counter::default());
/// let mut keeping = MqEncoder::new(Vec::new());
/// counting.encode_many(&mut MqContexts::new(1), 0, &flags)?;
/// keeping.encode_many(&mut MqContexts::new(1), 0, &flags)?;
/// assert_eq!(
///     counting.finish(Termination::BiLevel).0,
///     keeping.finish(Termination::BiLevel).len()
/// );
/// # Ok(())
/// # }
/// ```
pub trait MqSink {
    /// Takes the next byte of the coded stream.
    fn put_byte(&mut self, byte: u8);
}

impl MqSink for Vec<u8> {
    #[inline]
    fn put_byte(&mut self, byte: u8) {
        self.push(byte);
    }
}

impl<S: MqSink + ?Sized> MqSink for &mut S {
    #[inline]
    fn put_byte(&mut self, byte: u8) {
        (**self).put_byte(byte);
    }
}

/// How the encoder ends its stream (FLUSH).
///
/// Both first place the final `C` so that as many trailing bits as possible
/// are 1s (SETBITS) and push out two more bytes; they differ in what follows.
///
/// # Example
///
/// ```
/// use subrange::mq::{MqContexts, MqEncoder, Termination};
///
/// # fn main() -> Result<(), subrange::mq::MqError> {
/// let flags = [false, false, true, false];
/// let mut ends = Vec::new();
/// for termination in [Termination::BiLevel, Termination::Wavelet] {
///     let mut contexts = MqContexts::new(1);
///     let mut encoder = MqEncoder::new(Vec::new());
///     for &flag in &flags {
///         encoder.encode(&mut contexts, 0, flag)?;
///     }
///     ends.push(encoder.finish(termination));
/// }
/// assert!(ends[0].ends_with(&[0xFF, 0xAC]));
/// assert_ne!(ends[1].last(), Some(&0xFF));
/// # Ok(())
/// # }
/// ```
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub enum Termination {
    /// The bi-level image termination (ITU-T T.88): the last byte is kept and
    /// the stream ends with the marker bytes 0xFF 0xAC (the last byte itself
    /// serves as the 0xFF when it is one).
    #[default]
    BiLevel,
    /// The wavelet image termination (ISO/IEC 15444-1): no marker; a final
    /// 0xFF byte is dropped, since the decoder supplies 0xFF bytes past the
    /// end anyway.
    Wavelet,
}

/// An MQ arithmetic encoder writing to a byte sink.
///
/// Each decision is coded in a context of a caller-owned [`MqContexts`]
/// table; the decoder must see the same contexts in the same order.
///
/// # Example
///
/// ```
/// use subrange::mq::{MqContexts, MqDecoder, MqEncoder, Termination};
///
/// # fn main() -> Result<(), subrange::mq::MqError> {
/// // Hourly "water level above the warning mark" flags of two gauging
/// // stations, each coded in its own context.
/// let upstream = [false, false, false, true, true, true, true, false];
/// let downstream = [false, false, false, false, true, true, true, true];
///
/// let mut contexts = MqContexts::new(2);
/// let mut encoder = MqEncoder::new(Vec::new());
/// for (&up, &down) in upstream.iter().zip(&downstream) {
///     encoder.encode(&mut contexts, 0, up)?;
///     encoder.encode(&mut contexts, 1, down)?;
/// }
/// let stream = encoder.finish(Termination::Wavelet);
///
/// let mut contexts = MqContexts::new(2);
/// let mut decoder = MqDecoder::new(&stream);
/// for (&up, &down) in upstream.iter().zip(&downstream) {
///     assert_eq!(decoder.decode(&mut contexts, 0)?, up);
///     assert_eq!(decoder.decode(&mut contexts, 1)?, down);
/// }
/// # Ok(())
/// # }
/// ```
#[derive(Clone, Debug)]
pub struct MqEncoder<S: MqSink> {
    /// Interval size; in `[0x8000, 0x10000)` between calls.
    a: u32,
    /// Low end of the interval (see the module documentation for its layout).
    c: u32,
    /// Shifts left before the next BYTEOUT.
    ct: u32,
    /// `B` and the sink. Kept apart from the registers so that only this
    /// part is handed to the out-of-line BYTEOUT path, and the registers can
    /// live in machine registers on the hot path.
    out: Output<S>,
}

/// The byte side of the encoder: `B`, held back because a carry may still
/// change it, and the sink that takes every byte before it.
#[derive(Clone, Debug)]
struct Output<S> {
    sink: S,
    /// The byte held back from the sink; may still take a carry.
    b: u8,
    /// Whether `b` is a real byte (at the start it is the standard's dummy
    /// byte before the stream, which is never written).
    started: bool,
    /// Bytes handed to the sink so far.
    written: usize,
}

impl<S: MqSink> MqEncoder<S> {
    /// Starts an encoder writing to `sink` (INITENC: `A = 0x8000`, `C = 0`,
    /// `CT = 12`).
    ///
    /// # Example
    ///
    /// ```
    /// let encoder = subrange::mq::MqEncoder::new(Vec::new());
    /// assert_eq!(encoder.bytes_written(), 0);
    /// ```
    pub fn new(sink: S) -> Self {
        // INITENC
        MqEncoder {
            a: 0x8000,
            c: 0,
            ct: 12,
            out: Output {
                sink,
                b: 0,
                started: false,
                written: 0,
            },
        }
    }

    /// Codes decision `bit` in context `cx`, adapting that context.
    ///
    /// # Errors
    ///
    /// [`MqError::ContextOutOfRange`] if `cx >= contexts.len()`; nothing is
    /// coded then and the encoder is unchanged.
    ///
    /// # Example
    ///
    /// ```
    /// use subrange::mq::{MqContexts, MqEncoder, Termination};
    ///
    /// # fn main() -> Result<(), subrange::mq::MqError> {
    /// let mut contexts = MqContexts::new(1);
    /// let mut encoder = MqEncoder::new(Vec::new());
    /// for _ in 0..1000 {
    ///     encoder.encode(&mut contexts, 0, false)?;
    /// }
    /// // A thousand equal decisions fit in a handful of bytes.
    /// assert!(encoder.finish(Termination::Wavelet).len() < 12);
    /// # Ok(())
    /// # }
    /// ```
    #[inline]
    pub fn encode(
        &mut self,
        contexts: &mut MqContexts,
        cx: usize,
        bit: bool,
    ) -> Result<(), MqError> {
        let slot = contexts.slot(cx)?;
        self.encode_in(slot, bit);
        Ok(())
    }

    /// Codes every decision of `bits` in the one context `cx`.
    ///
    /// # Errors
    ///
    /// [`MqError::ContextOutOfRange`] if `cx >= contexts.len()`; nothing is
    /// coded then.
    ///
    /// # Example
    ///
    /// ```
    /// use subrange::mq::{MqContexts, MqDecoder, MqEncoder, Termination};
    ///
    /// # fn main() -> Result<(), subrange::mq::MqError> {
    /// let bits = [true, true, false, true, true, true, false, true];
    /// let mut encoder = MqEncoder::new(Vec::new());
    /// encoder.encode_many(&mut MqContexts::new(1), 0, &bits)?;
    /// let stream = encoder.finish(Termination::BiLevel);
    ///
    /// let mut back = [false; 8];
    /// MqDecoder::new(&stream).decode_many(&mut MqContexts::new(1), 0, &mut back)?;
    /// assert_eq!(back, bits);
    /// # Ok(())
    /// # }
    /// ```
    pub fn encode_many(
        &mut self,
        contexts: &mut MqContexts,
        cx: usize,
        bits: &[bool],
    ) -> Result<(), MqError> {
        let slot = contexts.slot(cx)?;
        for &bit in bits {
            self.encode_in(slot, bit);
        }
        Ok(())
    }

    /// Number of bytes handed to the sink so far. The most recent byte is
    /// held back (a carry may still change it), so this lags the coded
    /// decisions by at least one byte until [`finish`](Self::finish).
    ///
    /// # Example
    ///
    /// ```
    /// use subrange::mq::{MqContexts, MqEncoder};
    ///
    /// # fn main() -> Result<(), subrange::mq::MqError> {
    /// let mut contexts = MqContexts::new(1);
    /// let mut encoder = MqEncoder::new(Vec::new());
    /// for i in 0..64 {
    ///     encoder.encode(&mut contexts, 0, i % 2 == 0)?;
    /// }
    /// assert_eq!(encoder.bytes_written(), encoder.get_ref().len());
    /// assert!(encoder.bytes_written() > 0);
    /// # Ok(())
    /// # }
    /// ```
    pub fn bytes_written(&self) -> usize {
        self.out.written
    }

    /// The sink, holding every byte written so far (all of them final).
    ///
    /// # Example
    ///
    /// ```
    /// let encoder = subrange::mq::MqEncoder::new(vec![0xAB]);
    /// assert_eq!(encoder.get_ref(), &[0xAB]);
    /// ```
    pub fn get_ref(&self) -> &S {
        &self.out.sink
    }

    /// Ends the stream with the chosen termination (FLUSH) and returns the
    /// sink.
    ///
    /// # Example
    ///
    /// ```
    /// use subrange::mq::{MqEncoder, Termination};
    ///
    /// // Even an empty stream needs its final bytes.
    /// let stream = MqEncoder::new(Vec::new()).finish(Termination::BiLevel);
    /// assert_eq!(stream, [0xFF, 0x7F, 0xFF, 0xAC]);
    /// ```
    pub fn finish(mut self, termination: Termination) -> S {
        // FLUSH
        self.setbits();
        self.c <<= self.ct;
        self.byteout();
        self.c <<= self.ct;
        self.byteout();
        let out = &mut self.out;
        let last = out.b;
        match termination {
            Termination::BiLevel => {
                out.put(last);
                if last != 0xFF {
                    out.put(0xFF);
                }
                out.put(0xAC);
            }
            Termination::Wavelet => {
                if last != 0xFF {
                    out.put(last);
                }
            }
        }
        self.out.sink
    }

    /// CODEMPS / CODELPS for the context whose packed state is `slot`.
    ///
    /// Both procedures start with `A = A - Qe` and then keep one of the two
    /// sub-intervals: the upper one (`C = C + Qe`, `A` stays `A - Qe`) or the
    /// lower one (`A = Qe`, `C` unchanged). Following the flowcharts:
    ///
    /// | coded | `A - Qe >= 0x8000` | `Qe <= A - Qe < 0x8000` | `A - Qe < Qe` |
    /// |-------|--------------------|-------------------------|---------------|
    /// | MPS   | upper, no RENORME  | upper, RENORME          | lower (exchange), RENORME |
    /// | LPS   | lower, RENORME     | lower, RENORME          | upper (exchange), RENORME |
    ///
    /// Since `Qe < 0x8000`, `A - Qe >= 0x8000` implies `A - Qe >= Qe`, so
    /// the choice is simply "upper exactly when (MPS) equals
    /// (`A - Qe >= Qe`)", and RENORME (with the state change to NMPS or
    /// NLPS, SWITCH folded into the packed table) follows exactly when the
    /// kept `A` is below `0x8000`. Written as selections rather than
    /// branches, the common path has no data-dependent jump: the outcome of
    /// a decision is the very thing a branch predictor cannot guess.
    #[inline(always)]
    fn encode_in(&mut self, slot: &mut u8, bit: bool) {
        let packed = *slot;
        let t = TRANSITIONS[usize::from(packed & PACKED_MASK)];
        let qe = u32::from(t.qe);
        let rest = self.a - qe;
        let is_mps = u8::from(bit) == packed & 1;
        let upper = is_mps == (rest >= qe);
        // CODEMPS / CODELPS: keep one sub-interval.
        self.a = if upper { rest } else { qe };
        self.c += if upper { qe } else { 0 };
        let renormalise = self.a < 0x8000;
        *slot = if !is_mps {
            t.on_lps
        } else if renormalise {
            t.on_mps
        } else {
            packed
        };
        self.renorme();
    }

    /// RENORME: double `A` and `C` until `A >= 0x8000`, with BYTEOUT each
    /// time `CT` runs out. Does nothing when `A >= 0x8000` already.
    #[inline(always)]
    fn renorme(&mut self) {
        // Shifts that bring the top set bit of A to bit 15: 0..=15 (A is
        // never 0; `| 1` tells the compiler so without changing the count).
        let shifts = (self.a | 1).leading_zeros() - 16;
        if shifts < self.ct {
            // CT does not reach 0: no BYTEOUT on the way.
            self.a <<= shifts;
            self.c <<= shifts;
            self.ct -= shifts;
        } else {
            (self.a, self.c, self.ct) =
                Self::renorme_with_byteout(&mut self.out, self.a, self.c, self.ct, shifts);
        }
    }

    /// The rest of RENORME when BYTEOUT falls within the shifts. Takes and
    /// returns the registers by value (`A`, `C`, `CT`), so that only the
    /// byte side is reached through memory.
    #[inline(never)]
    fn renorme_with_byteout(
        out: &mut Output<S>,
        mut a: u32,
        mut c: u32,
        mut ct: u32,
        mut shifts: u32,
    ) -> (u32, u32, u32) {
        while shifts >= ct {
            a <<= ct;
            c <<= ct;
            shifts -= ct;
            (c, ct) = out.byteout(c);
        }
        (a << shifts, c << shifts, ct - shifts)
    }

    /// BYTEOUT on the encoder's own registers.
    fn byteout(&mut self) {
        (self.c, self.ct) = self.out.byteout(self.c);
    }

    /// SETBITS: set as many low bits of `C` as the interval allows, so the
    /// decoder's 1-bits past the end land inside it.
    fn setbits(&mut self) {
        let top = self.c + self.a;
        self.c |= 0xFFFF;
        if self.c >= top {
            self.c -= 0x8000;
        }
    }
}

impl<S: MqSink> Output<S> {
    /// BYTEOUT: take the next byte out of `C`, resolving a carry into `B`
    /// and stuffing a bit after 0xFF. Returns the new `C` and `CT`.
    #[inline(always)]
    fn byteout(&mut self, c: u32) -> (u32, u32) {
        if self.b == 0xFF {
            // The stuffed byte: 7 code bits, top bit takes any carry.
            self.next_byte_stuffed(c)
        } else if c < 0x0800_0000 {
            self.next_byte(c)
        } else {
            // Carry into B. B is not 0xFF here, so it cannot overflow.
            self.b += 1;
            if self.b == 0xFF {
                self.next_byte_stuffed(c & 0x07FF_FFFF)
            } else {
                self.next_byte(c)
            }
        }
    }

    /// `BP = BP + 1; B = C >> 19; C &= 0x7FFFF; CT = 8`.
    #[inline(always)]
    fn next_byte(&mut self, c: u32) -> (u32, u32) {
        self.release_b();
        // Bit 27 (a carry already added to the old B) falls off the byte.
        self.b = (c >> 19) as u8;
        (c & 0x7_FFFF, 8)
    }

    /// `BP = BP + 1; B = C >> 20; C &= 0xFFFFF; CT = 7`.
    #[inline(always)]
    fn next_byte_stuffed(&mut self, c: u32) -> (u32, u32) {
        self.release_b();
        self.b = (c >> 20) as u8;
        (c & 0xF_FFFF, 7)
    }

    /// Hands the held-back byte to the sink (except the dummy byte that
    /// precedes the stream).
    #[inline(always)]
    fn release_b(&mut self) {
        if self.started {
            self.put(self.b);
        } else {
            self.started = true;
        }
    }

    #[inline(always)]
    fn put(&mut self, byte: u8) {
        self.sink.put_byte(byte);
        self.written += 1;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Bit-serial RENORME exactly as the flowchart draws it, to check the
    /// shift-counting version against.
    fn renorme_serial<S: MqSink>(e: &mut MqEncoder<S>) {
        loop {
            e.a <<= 1;
            e.c <<= 1;
            e.ct -= 1;
            if e.ct == 0 {
                e.byteout();
            }
            if e.a & 0x8000 != 0 {
                break;
            }
        }
    }

    #[test]
    fn batched_renorme_matches_the_flowchart() {
        let mut seed = 0x9E37_79B9_7F4A_7C15_u64;
        for _ in 0..20_000 {
            seed ^= seed << 13;
            seed ^= seed >> 7;
            seed ^= seed << 17;
            let a = ((seed >> 8) as u32 & 0x7FFF).max(1);
            let c = (seed >> 24) as u32 & 0x07FF_FFFF;
            let ct = 1 + (seed % 8) as u32;
            let b = if seed & 0x100 != 0 {
                0xFF
            } else {
                (seed >> 40) as u8 & 0xFE
            };
            let mut fast = MqEncoder::new(Vec::new());
            fast.a = a;
            fast.c = c & if b == 0xFF { 0x07FF_FFFF } else { u32::MAX };
            fast.ct = ct;
            fast.out.b = b;
            fast.out.started = true;
            let mut slow = fast.clone();
            fast.renorme();
            renorme_serial(&mut slow);
            assert_eq!(
                (fast.a, fast.c, fast.ct, fast.out.b, &fast.out.sink),
                (slow.a, slow.c, slow.ct, slow.out.b, &slow.out.sink)
            );
        }
    }
}
