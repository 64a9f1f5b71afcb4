//! One interface over the encoder and the decoder for the engines' bit loops.
//!
//! An engine writes its per-byte loop once, generic over [`BitIo`]: the
//! encoding side codes the bit it is given, the decoding side ignores it and
//! returns the decoded bit. Both sides thus run literally the same model code,
//! which is what keeps their states identical. [`Coarse`] codes with the
//! coarser binary step of streams whose header records `precise=0`.

use crate::coder::{ByteSink, ByteSource, Decoder, Encoder};
use crate::error::Result;

/// Codes one bit with a 16-bit probability of a 1.
pub(crate) trait BitIo {
    /// Encodes `bit` (encoder) or decodes a bit, ignoring `bit` (decoder);
    /// returns the bit coded.
    fn code(&mut self, bit: bool, p1: u32) -> Result<bool>;
}

impl<S: ByteSink> BitIo for Encoder<S> {
    #[inline(always)]
    fn code(&mut self, bit: bool, p1: u32) -> Result<bool> {
        self.encode_bit(bit, p1)?;
        Ok(bit)
    }
}

impl<S: ByteSource> BitIo for Decoder<S> {
    #[inline(always)]
    fn code(&mut self, _bit: bool, p1: u32) -> Result<bool> {
        self.decode_bit(p1)
    }
}

/// An encoder or decoder coding with the coarse binary step
/// ([`Encoder::encode_bit_coarse`]).
pub(crate) struct Coarse<'a, T>(pub(crate) &'a mut T);

impl<S: ByteSink> BitIo for Coarse<'_, Encoder<S>> {
    #[inline(always)]
    fn code(&mut self, bit: bool, p1: u32) -> Result<bool> {
        self.0.encode_bit_coarse(bit, p1)?;
        Ok(bit)
    }
}

impl<S: ByteSource> BitIo for Coarse<'_, Decoder<S>> {
    #[inline(always)]
    fn code(&mut self, _bit: bool, p1: u32) -> Result<bool> {
        self.0.decode_bit_coarse(p1)
    }
}
