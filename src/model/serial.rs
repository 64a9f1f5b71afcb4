//! Bit-level integer codes for compact model tables.
//!
//! Tables are written as Elias gamma codes (Elias, "Universal codeword sets
//! and representations of the integers", IEEE Trans. IT 21(2), 1975): a value
//! `v >= 1` with `n + 1` significant bits is `n` zero bits, then `v` in binary
//! (its leading one included). Small values — the common case for run lengths
//! and rare-symbol frequencies — take few bits. Bits are packed most
//! significant first into bytes with [`bitvec`]; the last byte is zero-padded.
//!
//! The reader never trusts its input: a code longer than the caller's bound
//! or running past the end is an error, so a hostile table cannot make it
//! loop or allocate.

use alloc::vec::Vec;
use bitvec::prelude::{BitSlice, BitVec, Msb0};

use crate::error::Result;

/// Appends Elias gamma codes to a growing bit vector.
#[derive(Debug, Default)]
pub(crate) struct GammaWriter {
    bits: BitVec<u8, Msb0>,
}

impl GammaWriter {
    pub(crate) fn new() -> Self {
        Self::default()
    }

    /// Writes `value >= 1`.
    pub(crate) fn gamma(&mut self, value: u32) {
        debug_assert!(value >= 1);
        let width = 32 - value.leading_zeros();
        for _ in 1..width {
            self.bits.push(false);
        }
        for i in (0..width).rev() {
            self.bits.push(value >> i & 1 == 1);
        }
    }

    /// The bytes written, the last one zero-padded.
    pub(crate) fn into_bytes(self) -> Vec<u8> {
        self.bits.into_vec()
    }
}

/// Reads Elias gamma codes from a byte slice.
#[derive(Debug)]
pub(crate) struct GammaReader<'a> {
    bits: &'a BitSlice<u8, Msb0>,
    pos: usize,
}

impl<'a> GammaReader<'a> {
    pub(crate) fn new(bytes: &'a [u8]) -> Self {
        GammaReader {
            bits: BitSlice::from_slice(bytes),
            pos: 0,
        }
    }

    fn bit(&mut self) -> Result<bool> {
        let b = *self
            .bits
            .get(self.pos)
            .ok_or_else(|| crate::Error::corrupt_table("table ends in the middle of a code"))?;
        self.pos += 1;
        Ok(b)
    }

    /// Reads a value in `1 ..= max`.
    pub(crate) fn gamma(&mut self, max: u32) -> Result<u32> {
        let max_width = 32 - max.leading_zeros();
        let mut width = 1;
        while !self.bit()? {
            width += 1;
            if width > max_width {
                return Err(crate::Error::corrupt_table(
                    "code is longer than any valid value",
                ));
            }
        }
        let mut value = 1u32;
        for _ in 1..width {
            value = value << 1 | u32::from(self.bit()?);
        }
        if value > max {
            return Err(crate::Error::corrupt_table("value out of range"));
        }
        Ok(value)
    }

    /// Bytes consumed so far (whole bytes, counting a partly read last byte).
    pub(crate) fn bytes_used(&self) -> usize {
        self.pos.div_ceil(8)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use alloc::vec;

    #[test]
    fn gamma_round_trip() {
        let values = [1u32, 2, 3, 4, 7, 8, 255, 256, 65535, 65536, 131_072];
        let mut w = GammaWriter::new();
        for &v in &values {
            w.gamma(v);
        }
        let bytes = w.into_bytes();
        let mut r = GammaReader::new(&bytes);
        for &v in &values {
            assert_eq!(r.gamma(1 << 17).unwrap(), v);
        }
        assert_eq!(r.bytes_used(), bytes.len());
    }

    #[test]
    fn gamma_layout() {
        // 5 = 101 -> 00101 (Elias 1975); 1 -> 1.
        let mut w = GammaWriter::new();
        w.gamma(5);
        w.gamma(1);
        assert_eq!(w.into_bytes(), vec![0b0010_1100]);
    }

    #[test]
    fn rejects_overlong_and_truncated() {
        assert!(GammaReader::new(&[0, 0, 0, 0, 0]).gamma(1000).is_err());
        assert!(GammaReader::new(&[0b0000_0001]).gamma(1 << 16).is_err());
        assert!(GammaReader::new(&[0b0001_1111]).gamma(10).is_err());
    }
}
