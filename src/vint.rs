//! Variable-length unsigned integers ("vints"): the container, the block
//! payloads of presets, model snapshots and primed messages all write
//! their integers this one way.
//!
//! A vint stores a `u64` in groups of seven bits, least significant group
//! first. Each byte carries one group in its low seven bits; its top bit is 1
//! when another byte follows. A value therefore takes 1 to 10 bytes
//! (`0 ..= 127` take one byte, `128 ..= 16383` two, and so on); it is the
//! unsigned LEB128 code of DWARF (DWARF 4, section 7.6; common practice).
//!
//! Invariant: every value has exactly one encoding. A reader rejects a vint
//! longer than 10 bytes, a tenth byte above 1 (bits beyond 64), and a
//! non-minimal encoding (a last byte of zero in a vint of two or more
//! bytes), so a flipped continuation bit cannot hide as a padded value.

use alloc::vec::Vec;

/// Most bytes one vint may take.
pub const MAX_VINT_BYTES: usize = 10;

/// Why a vint could not be read.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum VintError {
    /// The input ended inside the vint.
    Truncated,
    /// Over-long, beyond 64 bits, or not minimal.
    Malformed,
}

/// Appends the vint of `value` to `out`.
pub(crate) fn put_vint(out: &mut Vec<u8>, mut value: u64) {
    while value >= 0x80 {
        out.push((value as u8 & 0x7F) | 0x80);
        value >>= 7;
    }
    out.push(value as u8);
}

/// Decodes a vint from bytes handed out by `next` (which returns `None` at
/// the end of input).
pub(crate) fn read_vint(
    mut next: impl FnMut() -> Option<u8>,
) -> core::result::Result<u64, VintError> {
    let mut value = 0u64;
    for i in 0..MAX_VINT_BYTES {
        let b = next().ok_or(VintError::Truncated)?;
        let group = u64::from(b & 0x7F);
        if i == MAX_VINT_BYTES - 1 && b > 1 {
            return Err(VintError::Malformed);
        }
        value |= group << (7 * i);
        if b & 0x80 == 0 {
            if i > 0 && b == 0 {
                return Err(VintError::Malformed);
            }
            return Ok(value);
        }
    }
    Err(VintError::Malformed)
}

/// Decodes a vint from the front of `bytes`; returns it and its length.
pub(crate) fn vint_from_slice(bytes: &[u8]) -> core::result::Result<(u64, usize), VintError> {
    let mut pos = 0;
    let v = read_vint(|| {
        let b = bytes.get(pos).copied();
        pos += usize::from(b.is_some());
        b
    })?;
    Ok((v, pos))
}

/// Reads fields from the front of a byte slice.
#[cfg(feature = "std")]
#[derive(Debug, Clone)]
pub(crate) struct Cursor<'a> {
    bytes: &'a [u8],
    pos: usize,
}

#[cfg(feature = "std")]
impl<'a> Cursor<'a> {
    pub(crate) fn new(bytes: &'a [u8]) -> Self {
        Cursor { bytes, pos: 0 }
    }

    /// Bytes read so far.
    pub(crate) fn position(&self) -> usize {
        self.pos
    }

    /// The bytes not read yet.
    pub(crate) fn rest(&self) -> &'a [u8] {
        &self.bytes[self.pos..]
    }

    pub(crate) fn byte(&mut self) -> Option<u8> {
        let b = *self.bytes.get(self.pos)?;
        self.pos += 1;
        Some(b)
    }

    pub(crate) fn vint(&mut self) -> core::result::Result<u64, VintError> {
        let (v, n) = vint_from_slice(self.rest())?;
        self.pos += n;
        Ok(v)
    }

    /// The next `n` bytes, or `None` (reading nothing) when fewer remain.
    pub(crate) fn take(&mut self, n: u64) -> Option<&'a [u8]> {
        let n = usize::try_from(n).ok()?;
        let end = self.pos.checked_add(n)?;
        let s = self.bytes.get(self.pos..end)?;
        self.pos = end;
        Some(s)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use alloc::vec;

    #[test]
    fn round_trip_and_lengths() {
        for (v, len) in [
            (0u64, 1usize),
            (127, 1),
            (128, 2),
            (16_383, 2),
            (16_384, 3),
            (u64::from(u32::MAX), 5),
            (u64::MAX, 10),
        ] {
            let mut out = Vec::new();
            put_vint(&mut out, v);
            assert_eq!(out.len(), len, "{v}");
            assert_eq!(vint_from_slice(&out), Ok((v, len)));
        }
        let mut out = Vec::new();
        put_vint(&mut out, 300);
        assert_eq!(out, [0xAC, 0x02]); // 300 = 0b10_0101100
    }

    #[test]
    fn rejects_malformed() {
        assert_eq!(vint_from_slice(&[0x80]), Err(VintError::Truncated));
        assert_eq!(vint_from_slice(&[0x80, 0x00]), Err(VintError::Malformed));
        assert_eq!(vint_from_slice(&[0xFF; 11]), Err(VintError::Malformed));
        let mut over = vec![0xFF; 9];
        over.push(0x02);
        assert_eq!(vint_from_slice(&over), Err(VintError::Malformed));
        assert_eq!(vint_from_slice(&[]), Err(VintError::Truncated));
    }
}
