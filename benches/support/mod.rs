//! The baseline every bench measures beside the crate: raw deflate through
//! flate2 (whole buffers, one call each way). Each bench binary includes
//! this module once.

use std::io::{Read, Write};

/// Raw deflate of `data` at `level` (0 to 9).
pub fn deflate(data: &[u8], level: u32) -> Vec<u8> {
    let mut e = flate2::write::DeflateEncoder::new(Vec::new(), flate2::Compression::new(level));
    e.write_all(data).unwrap();
    e.finish().unwrap()
}

/// Inflates `packed`, which holds `len` bytes once decoded.
pub fn inflate(packed: &[u8], len: usize) -> Vec<u8> {
    let mut out = Vec::with_capacity(len);
    flate2::read::DeflateDecoder::new(packed)
        .read_to_end(&mut out)
        .unwrap();
    out
}
