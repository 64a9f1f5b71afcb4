//! Arbitrary bytes into the history engine's decoder, and short round trips.
//!
//! The first byte picks the parameters (`x86` on or off, the mixer rate)
//! and, with the second, the raw length (at most [`MAX_RAW`]); the rest is
//! the payload. Decoding must give an error or exactly that many bytes,
//! never a panic or a hang. The same rest, cut to [`MAX_RAW`] bytes, is
//! then coded and must decode to itself.
//!
//! The engine costs some fifty times `static` per byte, and its set-up
//! (a few MiB of tables for the smallest block) is the same for a short
//! input as for a long one, so the lengths stay small.

use subrange::model::cm::{decode_history, encode_history, HistoryParams};

/// Largest raw length decoded or coded.
pub const MAX_RAW: usize = 1024;

pub fn check(data: &[u8]) {
    if data.len() < 2 {
        return;
    }
    let mut p = HistoryParams::default();
    p.mem_log2 = 0;
    p.x86 = data[0] & 1 == 1;
    p.rate = 1 + (data[0] >> 1);
    let raw_len = usize::from(u16::from_le_bytes([data[0], data[1]])) % (MAX_RAW + 1);
    let payload = &data[2..];
    let mut out = vec![0u8; raw_len];
    let _ = decode_history(payload, &mut out, &p);
    let raw = &payload[..payload.len().min(MAX_RAW)];
    let coded = encode_history(raw, &p).expect("valid parameters");
    let mut back = vec![0u8; raw.len()];
    decode_history(&coded, &mut back, &p).expect("own stream decodes");
    assert_eq!(back, raw);
}
