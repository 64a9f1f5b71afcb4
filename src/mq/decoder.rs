//! The MQ decoder: registers and procedures of the standards' software
//! conventions (ITU-T T.88 Annex E, ISO/IEC 15444-1 Annex C).
//!
//! # Registers
//!
//! - `A`, the interval size, kept exactly as the encoder keeps it: in
//!   `[0x8000, 0x10000)` between calls.
//! - `C`, the code register: the upper 16 bits (`Chigh`) line up with `A`,
//!   the lower 16 (`Clow`) hold input bits not yet shifted up. This decoder
//!   keeps `C` in the complemented form of T.88's decoder flowcharts: `Chigh`
//!   measures the distance of the code value below the *top* of the interval,
//!   so `Chigh < A` always holds for a well-formed stream. The MPS (upper
//!   sub-interval) is then recognised by `Chigh < A - Qe` and costs no update
//!   of `C` at all; ISO/IEC 15444-1 draws the same decoder measuring from the
//!   bottom, and the two produce the same decisions.
//! - `CT`, the number of bits left in `Clow` before the next BYTEIN: 8 after
//!   an ordinary byte, 7 after a byte that follows 0xFF (the stuffed bit).
//! - `B`, the current input byte (at position `BP`).
//!
//! As in the encoder, RENORMD shifts by the leading zeros of `A` at once,
//! stopping for BYTEIN exactly where the bit-serial flowchart would, and
//! DECODE with its two exchange procedures is written as one selection of
//! the kept sub-interval, so that only the rare BYTEIN path is behind a jump.
//!
//! # Past the end
//!
//! When BYTEIN meets 0xFF followed by a byte above 0x8F (a marker, such as
//! the 0xFF 0xAC that ends a bi-level stream), or the end of the input, it
//! does not advance and feeds 1-bits instead, as the standards prescribe.
//! Every call does a bounded amount of work (at most 15 shifts and two
//! BYTEINs) and nothing is ever allocated, so any input, however malformed,
//! decodes to *some* decisions: the caller bounds the work by the number of
//! decisions it asks for.

use super::contexts::MqContexts;
use super::error::MqError;
use super::table::{PACKED_MASK, TRANSITIONS};

/// An MQ arithmetic decoder reading from a byte slice.
///
/// # Example
///
/// ```
/// use subrange::mq::{MqContexts, MqDecoder, MqEncoder, Termination};
///
/// # fn main() -> Result<(), subrange::mq::MqError> {
/// // "Gauge reading missing" flags of one station over a day: rare.
/// let missing: Vec<bool> = (0..96).map(|quarter| quarter == 40 || quarter == 41).collect();
/// let mut encoder = MqEncoder::new(Vec::new());
/// encoder.encode_many(&mut MqContexts::new(1), 0, &missing)?;
/// let stream = encoder.finish(Termination::BiLevel);
///
/// let mut contexts = MqContexts::new(1);
/// let mut decoder = MqDecoder::new(&stream);
/// let mut back = vec![false; missing.len()];
/// decoder.decode_many(&mut contexts, 0, &mut back)?;
/// assert_eq!(back, missing);
/// # Ok(())
/// # }
/// ```
#[derive(Clone, Debug)]
pub struct MqDecoder<'a> {
    /// Interval size; in `[0x8000, 0x10000)` between calls.
    a: u32,
    /// Code register in complemented form (see the module documentation).
    c: u32,
    /// Bits left in `Clow` before the next BYTEIN.
    ct: u32,
    /// `B` and the input. Kept apart from the registers so that only this
    /// part is handed to the out-of-line BYTEIN path, and the registers can
    /// live in machine registers on the hot path.
    input: Input<'a>,
}

/// The byte side of the decoder: the input, `BP` and `B`.
#[derive(Clone, Debug)]
struct Input<'a> {
    data: &'a [u8],
    /// `BP`: index of `B` in `data` (equal to `data.len()` once the input is
    /// exhausted, never more).
    pos: usize,
    /// `B`: the byte at `BP`, or 0xFF past the end.
    b: u8,
    /// 0xFF bytes fed in place of input (at a marker or past the end).
    filler: u64,
}

impl<'a> MqDecoder<'a> {
    /// Starts decoding `data` (INITDEC: reads the first two bytes and
    /// aligns them with `A = 0x8000`).
    ///
    /// # Example
    ///
    /// ```
    /// use subrange::mq::{MqContexts, MqDecoder};
    ///
    /// # fn main() -> Result<(), subrange::mq::MqError> {
    /// // Any bytes decode to some decisions; an empty input to the same
    /// // decisions as an endless run of 0xFF.
    /// let mut contexts = MqContexts::new(1);
    /// let mut decoder = MqDecoder::new(&[]);
    /// let first = decoder.decode(&mut contexts, 0)?;
    /// let mut contexts = MqContexts::new(1);
    /// assert_eq!(MqDecoder::new(&[0xFF, 0xFF]).decode(&mut contexts, 0)?, first);
    /// # Ok(())
    /// # }
    /// ```
    pub fn new(data: &'a [u8]) -> Self {
        // INITDEC
        let mut input = Input {
            data,
            pos: 0,
            b: 0xFF,
            filler: 0,
        };
        input.b = match data.first() {
            Some(&byte) => byte,
            None => {
                input.filler += 1;
                0xFF
            }
        };
        let c = u32::from(input.b ^ 0xFF) << 16;
        let (add, ct) = input.bytein();
        MqDecoder {
            a: 0x8000,
            c: c.wrapping_add(add) << 7,
            ct: ct - 7,
            input,
        }
    }

    /// Decodes one decision in context `cx`, adapting that context.
    ///
    /// # Errors
    ///
    /// [`MqError::ContextOutOfRange`] if `cx >= contexts.len()`; nothing is
    /// decoded then and the decoder is unchanged.
    ///
    /// # Example
    ///
    /// ```
    /// use subrange::mq::{MqContexts, MqDecoder, MqError};
    ///
    /// let mut contexts = MqContexts::new(2);
    /// let mut decoder = MqDecoder::new(&[0x84, 0xC7]);
    /// assert!(decoder.decode(&mut contexts, 1).is_ok());
    /// assert_eq!(
    ///     decoder.decode(&mut contexts, 2),
    ///     Err(MqError::ContextOutOfRange { context: 2, contexts: 2 })
    /// );
    /// ```
    #[inline]
    pub fn decode(&mut self, contexts: &mut MqContexts, cx: usize) -> Result<bool, MqError> {
        let slot = contexts.slot(cx)?;
        Ok(self.decode_in(slot))
    }

    /// Decodes `out.len()` decisions, all in the one context `cx`, into `out`.
    ///
    /// # Errors
    ///
    /// [`MqError::ContextOutOfRange`] if `cx >= contexts.len()`; nothing is
    /// decoded then and `out` is untouched.
    ///
    /// # Example
    ///
    /// ```
    /// use subrange::mq::{MqContexts, MqDecoder};
    ///
    /// # fn main() -> Result<(), subrange::mq::MqError> {
    /// // However short or odd the input, the work is bounded by `out`.
    /// let mut out = [false; 1000];
    /// MqDecoder::new(&[0x12, 0xFF]).decode_many(&mut MqContexts::new(1), 0, &mut out)?;
    /// # Ok(())
    /// # }
    /// ```
    pub fn decode_many(
        &mut self,
        contexts: &mut MqContexts,
        cx: usize,
        out: &mut [bool],
    ) -> Result<(), MqError> {
        let slot = contexts.slot(cx)?;
        for d in out.iter_mut() {
            *d = self.decode_in(slot);
        }
        Ok(())
    }

    /// Number of input bytes taken into the code register so far (the
    /// decoder reads up to two bytes ahead of the decisions it has returned).
    ///
    /// # Example
    ///
    /// ```
    /// let decoder = subrange::mq::MqDecoder::new(&[0x00, 0x01, 0x02, 0x03]);
    /// assert_eq!(decoder.bytes_read(), 2);
    /// ```
    pub fn bytes_read(&self) -> usize {
        (self.input.pos + 1).min(self.input.data.len())
    }

    /// Number of 0xFF bytes fed in place of input so far, at a marker or past
    /// the end of the data. A properly terminated stream may need a few; a
    /// count that keeps growing means the caller is decoding more decisions
    /// than the stream holds.
    ///
    /// # Example
    ///
    /// ```
    /// use subrange::mq::{MqContexts, MqDecoder};
    ///
    /// # fn main() -> Result<(), subrange::mq::MqError> {
    /// let mut decoder = MqDecoder::new(&[0x00, 0x00, 0x00]);
    /// assert_eq!(decoder.filler_bytes(), 0);
    /// let mut out = [false; 200];
    /// decoder.decode_many(&mut MqContexts::new(1), 0, &mut out)?;
    /// assert!(decoder.filler_bytes() > 0);
    /// # Ok(())
    /// # }
    /// ```
    pub fn filler_bytes(&self) -> u64 {
        self.input.filler
    }

    /// DECODE for the context whose packed state is `slot`, with
    /// MPS_EXCHANGE / LPS_EXCHANGE folded in.
    ///
    /// After `A = A - Qe`, the code value lies in the upper sub-interval
    /// exactly when `Chigh < A` (complemented form). Following the
    /// flowcharts:
    ///
    /// | sub-interval | `A - Qe >= 0x8000` | `Qe <= A - Qe < 0x8000` | `A - Qe < Qe` |
    /// |--------------|--------------------|-------------------------|---------------|
    /// | upper: `A` stays | MPS, no RENORMD | MPS, RENORMD (MPS_EXCHANGE) | LPS, RENORMD (MPS_EXCHANGE) |
    /// | lower: `Chigh -= A`, `A = Qe` | LPS, RENORMD | LPS, RENORMD (LPS_EXCHANGE) | MPS, RENORMD (LPS_EXCHANGE) |
    ///
    /// So the decision is an LPS exactly when (upper) equals
    /// (`A - Qe < Qe`), and RENORMD (with the state change to NMPS or NLPS)
    /// follows exactly when the kept `A` is below `0x8000`. As in the
    /// encoder, these are selections rather than branches, so the common
    /// path has no jump that depends on the decoded value.
    #[inline(always)]
    fn decode_in(&mut self, slot: &mut u8) -> bool {
        let packed = *slot;
        let t = TRANSITIONS[usize::from(packed & PACKED_MASK)];
        let qe = u32::from(t.qe);
        let rest = self.a - qe;
        let upper = (self.c >> 16) < rest;
        let is_lps = upper == (rest < qe);
        // DECODE: keep one sub-interval.
        self.a = if upper { rest } else { qe };
        self.c -= if upper { 0 } else { rest << 16 };
        let renormalise = self.a < 0x8000;
        *slot = if is_lps {
            t.on_lps
        } else if renormalise {
            t.on_mps
        } else {
            packed
        };
        self.renormd();
        (packed & 1 != 0) != is_lps
    }

    /// RENORMD: double `A` and `C` until `A >= 0x8000`, with BYTEIN each time
    /// `CT` has run out. Does nothing when `A >= 0x8000` already.
    #[inline(always)]
    fn renormd(&mut self) {
        // Shifts that bring the top set bit of A to bit 15: 0..=15 (A is
        // never 0; `| 1` tells the compiler so without changing the count).
        let shifts = (self.a | 1).leading_zeros() - 16;
        if shifts <= self.ct {
            // No shift meets CT = 0: no BYTEIN on the way (one due after the
            // last shift waits for the next RENORMD, as in the flowchart).
            self.a <<= shifts;
            self.c <<= shifts;
            self.ct -= shifts;
        } else {
            (self.a, self.c, self.ct) =
                Self::renormd_with_bytein(&mut self.input, self.a, self.c, self.ct, shifts);
        }
    }

    /// The rest of RENORMD when BYTEIN falls within the shifts; the loop
    /// runs at most three times whatever the input. Takes and returns the
    /// registers by value (`A`, `C`, `CT`), so that only the byte side is
    /// reached through memory.
    #[inline(never)]
    fn renormd_with_bytein(
        input: &mut Input<'_>,
        mut a: u32,
        mut c: u32,
        mut ct: u32,
        mut shifts: u32,
    ) -> (u32, u32, u32) {
        loop {
            if ct == 0 {
                let add;
                (add, ct) = input.bytein();
                c = c.wrapping_add(add);
            }
            let step = shifts.min(ct);
            a <<= step;
            c <<= step;
            ct -= step;
            shifts -= step;
            if shifts == 0 {
                return (a, c, ct);
            }
        }
    }
}

impl Input<'_> {
    /// BYTEIN: the next byte for `Clow`, with the bit stuffing after 0xFF
    /// undone and 1-bits fed at a marker or past the end. Returns what to
    /// add to `C` (modulo 2^32) and the new `CT`.
    #[inline(always)]
    fn bytein(&mut self) -> (u32, u32) {
        if self.b == 0xFF {
            let next = match self.data.get(self.pos + 1) {
                Some(&byte) => byte,
                None => 0xFF,
            };
            if next > 0x8F {
                // A marker (or the end): stay on the 0xFF, feed 1-bits. In
                // complemented form the 0xFF adds nothing to C.
                self.filler = self.filler.saturating_add(1);
                (0, 8)
            } else {
                self.pos += 1;
                self.b = next;
                // C + 0xFE00 - (B << 9). A byte of 0x80..=0x8F here carries
                // into the preceding 0xFF, which in complemented form borrows
                // from Chigh; a valid stream leaves room for that, arbitrary
                // input may wrap, harmlessly.
                (0xFE00u32.wrapping_sub(u32::from(next) << 9), 7)
            }
        } else {
            self.pos += 1;
            self.b = match self.data.get(self.pos) {
                Some(&byte) => byte,
                None => {
                    self.filler = self.filler.saturating_add(1);
                    0xFF
                }
            };
            // C + 0xFF00 - (B << 8)
            (0xFF00 - (u32::from(self.b) << 8), 8)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn input_position_never_passes_the_end() {
        for len in 0..6 {
            let data = [0x55u8; 6];
            let mut d = MqDecoder::new(&data[..len]);
            let mut contexts = MqContexts::new(1);
            for _ in 0..500 {
                d.decode(&mut contexts, 0).unwrap();
                assert!(d.input.pos <= len);
                assert!((0x8000..0x10000).contains(&d.a));
            }
            assert_eq!(d.bytes_read(), len);
        }
    }

    #[test]
    fn a_marker_stops_the_input() {
        // Bytes after 0xFF 0xAC are never read.
        let data = [0x12, 0x34, 0xFF, 0xAC, 0x00, 0x00];
        let mut d = MqDecoder::new(&data);
        let mut contexts = MqContexts::new(1);
        for _ in 0..300 {
            d.decode(&mut contexts, 0).unwrap();
        }
        assert_eq!(d.input.pos, 2);
        assert_eq!(d.bytes_read(), 3);
        assert!(d.filler_bytes() > 10);
    }
}
