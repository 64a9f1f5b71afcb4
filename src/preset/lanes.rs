//! What the lane-coded presets (`static`, `adaptive`) share: their `lanes`
//! parameter, the lane count a block of a given length uses, and the lane
//! framing of the payload: after the preset's own header fields, the
//! lengths of all lanes but the last as vints, then the lane streams back
//! to back, the last taking the rest of the payload.
//!
//! Invariant: [`read_lanes`] returns exactly the streams [`put_lanes`]
//! wrote, and refuses lengths that run past the payload.

use alloc::vec::Vec;

use crate::error::{Error, Result};
use crate::preset::spec::ParamSpec;
use crate::vint::{put_vint, Cursor};

/// The lane count parameter.
pub(crate) const LANES: ParamSpec = ParamSpec {
    name: "lanes",
    default: 32,
    min: 1,
    max: crate::coder::MAX_LANES as u32,
    help: "interleaved coder lanes per block (blocks under 1 KiB per lane use fewer)",
    absent: None,
};

/// The table total of the lane-coded presets, as a power of two (each
/// preset words its own help).
pub(crate) const LOG2_TOTAL: ParamSpec = ParamSpec {
    name: "log2_total",
    default: 12,
    min: 8,
    max: 16,
    help: "table total, as a power of two",
    absent: None,
};

/// Least bytes per lane before another lane is used (each lane costs up to
/// four flush bytes and a length field).
const LANE_MIN_BYTES: usize = 1024;

/// The lanes a block of `len` bytes uses: `max_lanes`, reduced so that
/// every lane has at least [`LANE_MIN_BYTES`].
pub(crate) fn lanes_for(len: usize, max_lanes: u32) -> usize {
    (len / LANE_MIN_BYTES).clamp(1, max_lanes as usize)
}

/// Working memory of the lane decoders beyond the payload and output
/// buffers: `tables` bytes of model and decoder tables, plus the padded
/// copy of the lanes (the payload, shorter than the block, and its padding
/// per lane).
pub(crate) fn decoder_memory(tables: u64, block_size: u64) -> u64 {
    let pad = crate::coder::LANE_PAD as u64 * crate::coder::MAX_LANES as u64;
    tables.saturating_add(block_size.saturating_add(pad))
}

/// Appends the lane lengths (all but the last) and the lanes to `out`.
pub(crate) fn put_lanes<S: AsRef<[u8]>>(out: &mut Vec<u8>, streams: &[S]) {
    if let Some((_, first)) = streams.split_last() {
        for s in first {
            put_vint(out, s.as_ref().len() as u64);
        }
    }
    for s in streams {
        out.extend_from_slice(s.as_ref());
    }
}

/// Reads `lanes` (at least 1) lane streams from the rest of the payload.
///
/// # Errors
///
/// A corrupt-stream error for a malformed length or a lane that runs past
/// the payload.
pub(crate) fn read_lanes<'a>(cur: &mut Cursor<'a>, lanes: usize) -> Result<Vec<&'a [u8]>> {
    let mut lens = [0u64; crate::coder::MAX_LANES];
    for len in lens.iter_mut().take(lanes.saturating_sub(1)) {
        let at = cur.position();
        *len = cur
            .vint()
            .map_err(|_| Error::corrupt_stream(at as u64, "malformed lane length"))?;
    }
    let mut views: Vec<&[u8]> = Vec::with_capacity(lanes);
    for &len in &lens[..lanes.saturating_sub(1)] {
        let at = cur.position();
        views.push(
            cur.take(len)
                .ok_or_else(|| Error::corrupt_stream(at as u64, "lane runs past the payload"))?,
        );
    }
    views.push(cur.rest());
    Ok(views)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn lanes_follow_the_block_length() {
        assert_eq!(lanes_for(10, 4), 1);
        assert_eq!(lanes_for(2048, 4), 2);
        assert_eq!(lanes_for(1 << 20, 4), 4);
    }

    #[test]
    fn lanes_read_back_as_written() {
        let streams: [&[u8]; 3] = [b"level", b"", b"flow 1123"];
        let mut out = alloc::vec![2u8];
        put_lanes(&mut out, &streams);
        let mut cur = Cursor::new(&out);
        assert_eq!(cur.byte(), Some(2));
        assert_eq!(read_lanes(&mut cur, 3).unwrap(), streams);
        let mut short = Cursor::new(&out[1..4]);
        assert!(read_lanes(&mut short, 3).is_err());
    }
}
