//! Arbitrary bytes as a container read at random: the block list
//! ([`BlockIndex::read`], from the index record or a walk), then byte
//! ranges through an [`IndexedReader`], under tight limits, checked
//! against the one-shot decoder.
//!
//! Checks, for any input: no panic; whenever the whole data reads through
//! the index, the one-shot decoder accepts the container and gives the same
//! bytes, and whenever the one-shot decoder accepts it, the index reads and
//! every range decodes to its slice (allowing for the limits, which the two
//! apply at different points); a list from the index record equals the one
//! a walk over the frames finds; every range read agrees with the full read
//! where both succeed; and the peak of live heap bytes stays within twice
//! the memory limit (the block list and one block's decoding, each checked
//! against it) plus the output (which may be reallocated while growing:
//! three times the total limit).
//!
//! Limits, ranges and read sizes come from a hash of the input's length and
//! last bytes, as in [`super::decode_container`], so the whole input stays
//! a container. Inputs holding a header of a slow preset get the smaller
//! totals of that target.

use std::io::{Cursor, Read, Seek, SeekFrom};

use subrange::format::{BlockIndex, DecodeLimits, IndexSource};
use subrange::stream::{decompress_with_options, DecodeOptions, IndexedReader};
use subrange::ErrorKind;

use super::alloc::peak_during;
use super::decode_container::{self, MEMORY_LIMITS, SLACK};

/// A 32-bit linear congruential step (the constants of Numerical Recipes;
/// common practice).
fn lcg(state: &mut u32) -> u32 {
    *state = state.wrapping_mul(1_664_525).wrapping_add(1_013_904_223);
    *state >> 8
}

fn limits_for(data: &[u8], h: u32) -> DecodeLimits {
    decode_container::limits_for(data, MEMORY_LIMITS[(h & 3) as usize])
}

/// Whether an error is one the limits explain (not a disagreement).
fn is_limit(e: &subrange::Error) -> bool {
    matches!(e.kind(), ErrorKind::LimitExceeded { .. })
}

/// The crate error inside an I/O error from the reader.
fn inner(e: &std::io::Error) -> Option<&subrange::Error> {
    std::error::Error::source(e).and_then(|i| i.downcast_ref::<subrange::Error>())
}

/// Runs every check on one input; panics on the first broken promise.
pub fn check(data: &[u8]) {
    // FNV-1a (common practice) over the length and the last eight bytes.
    let mut h: u32 = 0x811C_9DC5;
    let tail = &data[data.len().saturating_sub(8)..];
    for &b in (data.len() as u32).to_le_bytes().iter().chain(tail) {
        h = (h ^ u32::from(b)).wrapping_mul(0x0100_0193);
    }
    let limits = limits_for(data, h);
    let memory = limits.memory_limit();
    let total = limits.total_limit();
    let mut options = DecodeOptions::new();
    options.limits(limits).threads(1);
    let oneshot = decompress_with_options(data, &options);

    let (index, peak) = peak_during(|| BlockIndex::read(&mut Cursor::new(data), &limits));
    assert!(
        peak as u64 <= memory + SLACK,
        "reading the block list peaked at {peak} bytes, limit {memory}"
    );
    let index = match index {
        Ok(index) => index,
        Err(e) => {
            if oneshot.is_ok() {
                assert!(
                    is_limit(&e),
                    "decoded in one go, yet the block list failed: {e}"
                );
            }
            return;
        }
    };
    // A walk meets the same blocks, unless a frame is damaged (which the
    // whole read below then meets too).
    let walk_failed = match BlockIndex::walk(&mut Cursor::new(data), &limits) {
        Ok(walked) => {
            assert_eq!(walked.blocks(), index.blocks(), "index and walk differ");
            assert_eq!(walked.total_raw(), index.total_raw());
            false
        }
        Err(e) => {
            assert!(
                index.source() == IndexSource::Recorded,
                "a walk, then not: {e}"
            );
            true
        }
    };
    if index.total_raw() > total {
        if let Ok(v) = &oneshot {
            panic!("decoded {} bytes past the total limit {total}", v.len());
        }
        return;
    }

    // The whole data through the reader.
    let mut reader = IndexedReader::with_index(Cursor::new(data), index.clone());
    let mut all = Vec::new();
    let (full, peak) = peak_during(|| reader.read_to_end(&mut all));
    assert!(
        peak as u64 <= 2 * memory + 3 * total + SLACK,
        "reading through the index peaked at {peak} bytes"
    );
    assert!(
        !walk_failed || full.is_err(),
        "the walk failed, yet every block read through the index"
    );
    match (&full, &oneshot) {
        (Ok(_), Ok(v)) => assert!(all == *v, "the index and one-shot paths gave other bytes"),
        (Ok(_), Err(e)) => assert!(
            is_limit(e),
            "every block read through the index, yet one-shot decoding failed: {e}"
        ),
        (Err(e), Ok(_)) => panic!("one-shot decoding succeeded, the index path failed: {e}"),
        (Err(e), Err(_)) => assert!(inner(e).is_some(), "an error without a crate error: {e}"),
    }

    // Ranges, including empty ones, block edges and past the end.
    let len = index.total_raw();
    let mut rng = h ^ 0xA5A5_A5A5;
    let mut reader = IndexedReader::with_index(Cursor::new(data), index.clone());
    for i in 0..6 {
        let start = match i {
            0 => len,
            1 => index.blocks().last().map_or(0, |b| b.raw_offset),
            _ => u64::from(lcg(&mut rng)) % (len + 2),
        };
        let want = u64::from(lcg(&mut rng)) % 5000;
        let mut got = Vec::new();
        reader
            .seek(SeekFrom::Start(start))
            .expect("seeks never fail");
        match (&mut reader).take(want).read_to_end(&mut got) {
            Ok(n) => {
                let lo = start.min(len);
                let hi = (start + want).min(len).max(lo);
                assert_eq!(n as u64, hi - lo, "a read of {want} at {start} of {len}");
                if full.is_ok() {
                    assert!(
                        got == all[lo as usize..hi as usize],
                        "range {lo}..{hi} differs"
                    );
                }
            }
            Err(e) => {
                assert!(full.is_err(), "a range failed, the whole read did not: {e}");
            }
        }
    }
}
