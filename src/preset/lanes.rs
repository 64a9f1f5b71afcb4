//! The lane framing shared by the lane-coded presets (`static`,
//! `adaptive`): after the preset's own header fields, the lengths of all
//! lanes but the last as vints, then the lane streams back to back, the
//! last taking the rest of the payload.
//!
//! Invariant: [`read_lanes`] returns exactly the streams [`put_lanes`]
//! wrote, and refuses lengths that run past the payload.

use alloc::vec::Vec;

use crate::error::Result;
use crate::preset::corrupt;
use crate::vint::{put_vint, Cursor};

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
            .map_err(|_| corrupt(at, "malformed lane length"))?;
    }
    let mut views: Vec<&[u8]> = Vec::with_capacity(lanes);
    for &len in &lens[..lanes.saturating_sub(1)] {
        let at = cur.position();
        views.push(
            cur.take(len)
                .ok_or_else(|| corrupt(at, "lane runs past the payload"))?,
        );
    }
    views.push(cur.rest());
    Ok(views)
}
