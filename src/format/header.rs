//! The container header: magic number, version, preset, block size.
//!
//! Layout (see `docs/FORMAT.md`): the four magic bytes, the version byte,
//! the preset id (vint), the block size (vint), the number of preset
//! parameters (one byte) and the parameters (vints), then a CRC-32 of all
//! the bytes before it.
//!
//! Invariant: a [`Header`] handed out by [`read_header`] passed every check —
//! magic, version, field syntax, checksum, the caller's limits, and the
//! preset's own parameter rules — before anything was allocated for the
//! blocks it announces.

use std::io::Read;
use std::vec::Vec;

use crate::error::{Error, ErrorKind, Result};
use crate::format::input::Input;
use crate::format::limits::DecodeLimits;
use crate::format::{MAGIC, VERSION};
use crate::preset::{Preset, MAX_PARAMS};
use crate::vint::put_vint;

/// What a container header declares.
///
/// # Example
///
/// ```
/// use subrange::format::inspect;
/// use subrange::{compress, Options};
///
/// # fn main() -> Result<(), subrange::Error> {
/// let packed = compress(b"G107,1440,212,1123,94\n", &Options::default())?;
/// let report = inspect(&packed[..])?;
/// assert_eq!(report.header.version, 1);
/// assert_eq!(report.header.preset.name(), "static");
/// assert_eq!(report.header.block_size, 1 << 20);
/// # Ok(())
/// # }
/// ```
#[derive(Debug, Clone, PartialEq, Eq)]
#[non_exhaustive]
pub struct Header {
    /// The format version (1).
    pub version: u8,
    /// The preset that coded every block, with its parameters.
    pub preset: Preset,
    /// The largest raw length of any block.
    pub block_size: u64,
    /// Length of the header in bytes.
    pub len: u64,
}

/// Serialises a header.
pub(crate) fn encode_header(preset: &Preset, block_size: u64) -> Vec<u8> {
    let mut out = Vec::with_capacity(32);
    out.extend_from_slice(&MAGIC);
    out.push(VERSION);
    put_vint(&mut out, preset.id().into());
    put_vint(&mut out, block_size);
    out.push(preset.params().len() as u8);
    for &p in preset.params() {
        put_vint(&mut out, p.into());
    }
    let crc = crc32fast::hash(&out);
    out.extend_from_slice(&crc.to_le_bytes());
    out
}

/// Reads and checks a header; damage is reported as
/// [`ErrorKind::CorruptHeader`].
pub(crate) fn read_header<R: Read>(input: &mut Input<R>, limits: &DecodeLimits) -> Result<Header> {
    read_fields(input, limits).map_err(|e| match e.kind() {
        ErrorKind::CorruptStream { offset, reason } => Error::corrupt_header(*offset, reason),
        _ => e,
    })
}

fn read_fields<R: Read>(input: &mut Input<R>, limits: &DecodeLimits) -> Result<Header> {
    let start = input.offset();
    input.start_capture();
    for &m in &MAGIC {
        if input.byte()? != m {
            return Err(ErrorKind::BadMagic.into());
        }
    }
    let version = input.byte()?;
    if version != VERSION {
        return Err(ErrorKind::UnsupportedVersion {
            found: version.into(),
            supported: VERSION.into(),
        }
        .into());
    }
    let id = input.vint("malformed preset id")?;
    let block_size = input.vint("malformed block size")?;
    let at = input.offset();
    let count = input.byte()?;
    if usize::from(count) > MAX_PARAMS {
        return Err(Error::corrupt_header(
            at,
            "more preset parameters than any preset has",
        ));
    }
    let mut params = [0u32; MAX_PARAMS];
    for p in params.iter_mut().take(count.into()) {
        let at = input.offset();
        let v = input.vint("malformed preset parameter")?;
        *p = u32::try_from(v)
            .map_err(|_| Error::corrupt_header(at, "preset parameter above 2^32 - 1"))?;
    }
    let expected = crc32fast::hash(input.captured());
    let at = input.offset();
    if input.u32_le()? != expected {
        return Err(Error::corrupt_header(at, "header checksum mismatch"));
    }
    let id =
        u32::try_from(id).map_err(|_| Error::limit_exceeded("preset id", id, u32::MAX.into()))?;
    if block_size == 0 {
        return Err(Error::corrupt_header(start, "block size is zero"));
    }
    Error::check_limit("block size", block_size, limits.block_size_limit())?;
    let preset = Preset::from_id(id, &params[..count.into()]).map_err(|e| match e.kind() {
        ErrorKind::InvalidParameter { reason, .. } => Error::corrupt_header(start, reason),
        _ => e,
    })?;
    Error::check_limit(
        "memory needed per block",
        preset.memory_needed(block_size),
        limits.memory_limit(),
    )?;
    Ok(Header {
        version,
        preset,
        block_size,
        len: input.offset() - start,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn header_round_trip_and_damage() {
        for preset in Preset::all() {
            let bytes = encode_header(&preset, 4096);
            let h = read_header(&mut Input::new(&bytes[..]), &DecodeLimits::new()).unwrap();
            assert_eq!(h.preset, preset);
            assert_eq!(h.block_size, 4096);
            assert_eq!(h.len, bytes.len() as u64);
            for cut in 0..bytes.len() {
                let err =
                    read_header(&mut Input::new(&bytes[..cut]), &DecodeLimits::new()).unwrap_err();
                assert!(matches!(err.kind(), ErrorKind::Truncated { .. }), "{cut}");
            }
            for bit in 0..bytes.len() * 8 {
                let mut b = bytes.clone();
                b[bit / 8] ^= 1 << (bit % 8);
                assert!(read_header(&mut Input::new(&b[..]), &DecodeLimits::new()).is_err());
            }
        }
    }
}
