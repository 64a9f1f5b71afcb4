//! Arbitrary bytes as a container, decoded three ways under tight limits:
//! the one-shot decoder, the [`Decompressor`] fed and drained in chunks, and
//! the [`Inspector`].
//!
//! Checks, for any input: no panic; the one-shot and streaming paths agree
//! (the same bytes, or the same error); the inspector finds the container
//! intact exactly when the one-shot decoder accepts it (allowing for the
//! total limit, which the inspector does not apply); and the peak of live
//! heap bytes stays within what the limits promise:
//!
//! - streaming and inspecting: the memory the header's preset reports for
//!   one block ([`Preset::memory_needed`](subrange::preset::Preset::memory_needed)),
//!   itself within the memory limit;
//! - one-shot: the memory limit for the blocks in flight plus the output,
//!   which is at most the total limit but may be reallocated while growing
//!   (old and new buffers: three times the total).
//!
//! Everything the checks vary — limits, threads, trailing-data rule, read
//! sizes — is drawn from a hash of the input's length and last bytes, so
//! the whole input stays a container and real containers seed it directly.
//! A quarter of the inputs decode on two threads, in the checks' own pool
//! ([`super::pool`]). Inputs holding a header of a slow preset get smaller
//! limits ([`MAX_BLOCK_MIX`], [`MAX_TOTAL_MIX`], [`MAX_TOTAL_ORDER2`]), so
//! that no input costs much more than the others.

use std::io::{self, Read};

use subrange::format::{CrcStatus, DecodeLimits, Inspector, TrailingData};
use subrange::stream::{decompress_with_options, DecodeOptions, Decompressor};

use super::alloc::peak_during;
use super::pool;

/// Largest block size a header may declare here. Small enough that the
/// costliest inputs (short runs that decode to whole blocks, by three
/// decoders, in an instrumented build on a busy machine) stay well within a
/// 1 s timeout.
pub const MAX_BLOCK: u64 = 64 << 10;
/// Largest total decoded length (the inspector, which has no total limit,
/// is walked this far only).
pub const MAX_TOTAL: u64 = 128 << 10;
/// Largest block size when the input holds a header of the `mix` preset
/// (id 4) or the `history` preset (id 6), which decodes about fifty times slower per byte than `static`:
/// a 64 KiB block decoded three times in an instrumented build came close
/// to the 1 s timeout.
pub const MAX_BLOCK_MIX: u64 = 16 << 10;
/// Largest total for `mix`: every block is decoded by all three decoders,
/// so the total bounds an input's work (a few milliseconds in an
/// instrumented build), while the seeds' demo containers (1500 bytes)
/// still decode whole.
pub const MAX_TOTAL_MIX: u64 = 4 << 10;
/// The total when the input holds a header of the `order2` preset (id 3),
/// about ten times slower per byte than `static`, and none of `mix`.
pub const MAX_TOTAL_ORDER2: u64 = 32 << 10;
/// Memory limits to choose from: loose, middling, and near what a 64 KiB
/// block needs (`adaptive` passes the last one, `static` does not), so
/// that the per-block promise is tested where it binds.
pub const MEMORY_LIMITS: [u64; 4] = [64 << 20, 1 << 20, 256 << 10, 144 << 10];
/// Heap bytes allowed above a promise: the decoder's own small state
/// (frame buffer, lane views, error values).
pub const SLACK: u64 = 16 << 10;

/// A 32-bit linear congruential step (the constants of Numerical Recipes;
/// common practice).
fn lcg(state: &mut u32) -> u32 {
    *state = state.wrapping_mul(1_664_525).wrapping_add(1_013_904_223);
    *state >> 8
}

/// The settings one input is checked with.
#[derive(Debug, Clone, Copy)]
struct Setup {
    options: DecodeOptions,
    trailing: TrailingData,
    memory: u64,
    total: u64,
    /// Largest read from the container reader.
    max_in: usize,
    /// Whether the container reader sometimes reports `Interrupted`.
    interrupts: bool,
    seed: u32,
}

fn setup(data: &[u8]) -> Setup {
    // FNV-1a (common practice) over the length and the last eight bytes.
    let mut h: u32 = 0x811C_9DC5;
    let tail = &data[data.len().saturating_sub(8)..];
    for &b in (data.len() as u32).to_le_bytes().iter().chain(tail) {
        h = (h ^ u32::from(b)).wrapping_mul(0x0100_0193);
    }
    let memory = MEMORY_LIMITS[(h & 3) as usize];
    let trailing = match (h >> 2) % 3 {
        0 => TrailingData::Reject,
        1 => TrailingData::Leave,
        _ => TrailingData::Concatenated,
    };
    // Two threads for a quarter of the inputs: each batch handed to the
    // pool waits for its threads, which on a busy machine costs more than
    // decoding a small input.
    let threads = 1 + usize::from(h >> 4 & 3 == 0);
    let max_in = [1, 3, 64, 4096, usize::MAX][((h >> 6) % 5) as usize];
    let limits = limits_for(data, memory);
    let total = limits.total_limit();
    let mut options = DecodeOptions::new();
    options.limits(limits).trailing(trailing).threads(threads);
    Setup {
        options,
        trailing,
        memory,
        total,
        max_in,
        interrupts: h >> 8 & 1 == 1,
        seed: h,
    }
}

/// A reader handing out the input in chunks of varying size, now and then
/// failing with `Interrupted` (which a decoder must retry).
struct Chunked<'a> {
    data: &'a [u8],
    max: usize,
    interrupts: bool,
    rng: u32,
}

impl Read for Chunked<'_> {
    fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
        let r = lcg(&mut self.rng);
        if self.interrupts && r.is_multiple_of(16) {
            return Err(io::ErrorKind::Interrupted.into());
        }
        let n = buf
            .len()
            .min(self.data.len())
            .min(1 + r as usize % self.max.min(1 << 20));
        buf[..n].copy_from_slice(&self.data[..n]);
        self.data = &self.data[n..];
        Ok(n)
    }
}

/// The crate error behind an I/O error, as text (the form both paths can
/// be compared in).
fn io_text(e: &io::Error) -> String {
    match std::error::Error::source(e).and_then(|inner| inner.downcast_ref::<subrange::Error>()) {
        Some(inner) => inner.to_string(),
        None => format!("I/O error without a crate error: {e}"),
    }
}

/// What the streaming path did.
struct Streamed {
    /// Bytes handed out, all of them equal to the one-shot output at the
    /// same position.
    len: usize,
    matches: bool,
    error: Option<String>,
    /// The first header's per-block memory, when the promise is per block.
    need: Option<u64>,
}

fn stream(data: &[u8], s: &Setup, expect: &[u8], buf: &mut [u8]) -> Streamed {
    let reader = Chunked {
        data,
        max: s.max_in,
        interrupts: s.interrupts,
        rng: s.seed,
    };
    let mut d = Decompressor::with_options(reader, &s.options);
    let mut r = Streamed {
        len: 0,
        matches: true,
        error: None,
        need: None,
    };
    if s.trailing != TrailingData::Concatenated {
        match d.header() {
            Ok(h) => r.need = Some(h.preset.memory_needed(h.block_size)),
            Err(e) => {
                r.error = Some(e.to_string());
                return r;
            }
        }
    }
    let mut rng = s.seed ^ 0x5555_5555;
    loop {
        let want = 1 + lcg(&mut rng) as usize % buf.len();
        match d.read(&mut buf[..want]) {
            Ok(0) => return r,
            Ok(n) => {
                let at = r.len;
                r.matches &= expect.get(at..at + n) == Some(&buf[..n]);
                r.len += n;
            }
            Err(e) => {
                r.error = Some(io_text(&e));
                return r;
            }
        }
    }
}

/// Walks the container with the inspector, over at most the total limit
/// of raw bytes; `Ok(Some(intact))`, `Ok(None)` when the walk stopped at
/// the total limit, or the header's error.
fn inspect(data: &[u8], s: &Setup) -> Result<Option<bool>, String> {
    let limits = *s.options.get_limits();
    let mut walk = Inspector::with_limits(data, &limits).map_err(|e| e.to_string())?;
    let mut intact = true;
    let mut raw = 0u64;
    for item in walk.by_ref() {
        match item {
            Ok(b) => {
                intact &= matches!(b.crc_status, CrcStatus::Ok);
                raw += b.raw_len;
                if raw > s.total {
                    return Ok(None);
                }
            }
            Err(_) => intact = false,
        }
    }
    Ok(Some(intact && walk.end().is_some()))
}

/// Runs every check on one input; panics on the first broken promise.
pub fn check(data: &[u8]) {
    run(data, setup(data));
}

/// As [`check`], with `limits` instead of the drawn ones and trailing
/// bytes rejected (for inputs made to test a particular limit).
pub fn check_with_limits(data: &[u8], limits: DecodeLimits) {
    let mut s = setup(data);
    s.options.limits(limits).trailing(TrailingData::Reject);
    s.memory = limits.memory_limit();
    s.total = limits.total_limit();
    s.trailing = TrailingData::Reject;
    run(data, s);
}

fn run(data: &[u8], s: Setup) {
    pool::warm_up();
    let threads = s.options.get_threads();
    let (oneshot, peak) =
        peak_during(|| pool::with_threads(threads, || decompress_with_options(data, &s.options)));
    let bound = s.memory + 3 * s.total + SLACK;
    assert!(
        peak as u64 <= bound,
        "one-shot decoding peaked at {peak} bytes, above {bound} ({s:?})"
    );

    let expect: &[u8] = oneshot.as_deref().unwrap_or(&[]);
    let mut buf = vec![0u8; 8192];
    let (streamed, peak) = peak_during(|| stream(data, &s, expect, &mut buf));
    let promise = streamed.need.unwrap_or(s.memory);
    assert!(
        promise <= s.memory,
        "a header needing {promise} bytes passed a limit of {}",
        s.memory
    );
    assert!(
        peak as u64 <= promise + SLACK,
        "streaming peaked at {peak} bytes; the limits promise {promise} + {SLACK} ({s:?})"
    );
    match (&oneshot, &streamed.error) {
        (Ok(v), None) => assert!(
            streamed.matches && streamed.len == v.len(),
            "the streaming path gave other bytes than the one-shot path"
        ),
        (Ok(_), Some(e)) => panic!("one-shot decoding succeeded, streaming failed: {e}"),
        (Err(e), None) => panic!("streaming succeeded, one-shot decoding failed: {e}"),
        (Err(a), Some(b)) => assert_eq!(a.to_string(), *b, "the two paths report other errors"),
    }

    let (walk, peak) = peak_during(|| inspect(data, &s));
    assert!(
        peak as u64 <= promise + SLACK,
        "inspecting peaked at {peak} bytes; the limits promise {promise} + {SLACK}"
    );
    if s.trailing == TrailingData::Reject {
        match (&oneshot, walk) {
            (Ok(_), Ok(intact)) => assert!(
                intact == Some(true),
                "decoded, yet the inspector found damage or passed the total"
            ),
            (Ok(_), Err(e)) => panic!("decoded, yet the inspector rejected the header: {e}"),
            (Err(e), Ok(Some(true))) => assert!(
                matches!(e.kind(), subrange::ErrorKind::LimitExceeded { .. }),
                "the inspector found the container intact, decoding failed: {e}"
            ),
            (Err(_), _) => {}
        }
    }
}

/// The limits for one input: the block and total bounds of the slowest
/// preset any header in `data` names, and `memory` as the memory limit.
pub fn limits_for(data: &[u8], memory: u64) -> DecodeLimits {
    // The preset id follows the magic and the version (docs/FORMAT.md, 2);
    // any header counts, as concatenated containers may follow the first.
    let holds = |id: u8| {
        data.windows(6)
            .any(|w| w[..4] == subrange::format::MAGIC && w[5] == id)
    };
    // `history` (id 6) costs about what `mix` does per byte, with a larger
    // set-up per block.
    let (max_block, total) = if holds(4) || holds(6) {
        (MAX_BLOCK_MIX, MAX_TOTAL_MIX)
    } else if holds(3) {
        (MAX_BLOCK, MAX_TOTAL_ORDER2)
    } else {
        (MAX_BLOCK, MAX_TOTAL)
    };
    let mut limits = DecodeLimits::new();
    limits
        .max_block_size(max_block)
        .max_memory(memory)
        .max_total(total);
    limits
}
