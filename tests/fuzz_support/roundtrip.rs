//! Arbitrary data through every preset: decode(encode(x)) == x by the
//! one-shot functions and by the `std::io` adapters.
//!
//! Input layout: eight setup bytes, then the data.
//!
//! | byte | picks |
//! | --- | --- |
//! | 0 | the preset: an index into [`Preset::all`] (new presets join by themselves) |
//! | 1 | how the block size is drawn (low two bits) |
//! | 2, 3 | the block size's value |
//! | 4 | threads (bit 0: 1 or 2), how the data is written (bits 1–2), seed of the write sizes (bits 3–7) |
//! | 5 | largest write |
//! | 6, 7 | the preset's first two parameters (below 128: default; else a value across its range) |
//!
//! Besides the round trip: the container is the same whatever the write
//! sizes and threads (unless a flush ended a block early), it is no larger
//! than the data plus the overhead `docs/FORMAT.md` states for stored
//! blocks, and the total limit is exact (the one-shot round trip runs with
//! the data's length as its total limit; one byte less fails).
//!
//! Only the first [`max_data`] bytes of data are coded, fewer for the
//! slower presets, and at most [`MAX_BLOCKS`] blocks, so that no input
//! takes much longer than a millisecond in an instrumented build: the `mix`
//! engine codes some fifty times slower per byte than `static`, every
//! block costs a model set-up, and a fuzzer learns little from a long
//! input that a short one with the same parameters would not show it.
//! Inputs past [`MAX_INPUT`] bytes add nothing (`-max_len`).
//!
//! The two-thread cases run in the checks' own pool ([`super::pool`]).

use std::io::{Read, Write};

use subrange::format::DecodeLimits;
use subrange::preset::{Preset, PresetKind};
use subrange::stream::{
    compress, decompress_with_options, DecodeOptions, Decompressor, Options, DEFAULT_BLOCK_SIZE,
    MIN_BLOCK_SIZE,
};
use subrange::{Compressor, ErrorKind};

use super::pool;

/// Most data bytes coded for a preset: about the same time for each (per
/// byte, order-2 context modelling costs some five times what `static` and
/// `adaptive` cost, the mix engine some fifty times).
pub fn max_data(kind: PresetKind) -> usize {
    match kind {
        PresetKind::Static => 2048,
        PresetKind::Adaptive => 2048,
        PresetKind::Order2 => 512,
        // `mix`, and presets added later until they are measured.
        _ => 64,
    }
}

/// Most blocks coded: every block costs a model set-up; 64 blocks fill
/// the one-shot decoder's batches of 32 blocks on two threads twice.
pub const MAX_BLOCKS: usize = 64;

/// Longest input that can matter: the setup bytes and the largest
/// [`max_data`].
pub const MAX_INPUT: usize = 8 + 2048;

fn lcg(state: &mut u32) -> u32 {
    // Numerical Recipes constants (common practice).
    *state = state.wrapping_mul(1_664_525).wrapping_add(1_013_904_223);
    *state >> 8
}

fn preset_from(index: u8, params: [u8; 2]) -> Preset {
    let all: Vec<Preset> = Preset::all().collect();
    let mut preset = all[usize::from(index) % all.len()];
    for (spec, &b) in preset.param_specs().iter().zip(&params) {
        if b >= 128 {
            let span = u64::from(spec.max - spec.min);
            let v = spec.min + (u64::from(b - 128) * span / 127) as u32;
            // Values that do not fit with the others are refused; the
            // preset then keeps its default.
            let _ = preset.set_param(spec.name, v);
        }
    }
    preset
}

fn block_size_from(mode: u8, lo: u8, hi: u8) -> u64 {
    match mode % 4 {
        0 => MIN_BLOCK_SIZE + u64::from(lo),
        1 => MIN_BLOCK_SIZE + u64::from(u16::from_le_bytes([lo, hi])),
        2 => 1 << (4 + lo % 17),
        _ => DEFAULT_BLOCK_SIZE,
    }
}

/// Writes `data` through a [`Compressor`]; returns the container and
/// whether a flush ended a block early.
fn write_adapter(data: &[u8], opts: &Options, mode: u8, max: usize, seed: u32) -> (Vec<u8>, bool) {
    let mut c = Compressor::new(Vec::new(), opts);
    let mut rng = seed;
    let mut flushed = false;
    let mut rest = data;
    match mode {
        0 => c.write_all(data).expect("in-memory writes cannot fail"),
        _ => {
            while !rest.is_empty() {
                let n = (1 + lcg(&mut rng) as usize % max).min(rest.len());
                // `write` may take fewer bytes than offered.
                let took = c.write(&rest[..n]).expect("in-memory writes cannot fail");
                assert!(took > 0 && took <= n, "write took {took} of {n} bytes");
                rest = &rest[took..];
                if mode == 2 && lcg(&mut rng).is_multiple_of(4) {
                    c.flush().expect("in-memory flush cannot fail");
                    flushed = true;
                }
            }
        }
    }
    assert_eq!(c.total_in(), data.len() as u64);
    let total_out = c.total_out();
    let packed = c.finish().expect("in-memory finish cannot fail");
    assert!(total_out <= packed.len() as u64);
    (packed, flushed)
}

fn read_adapter(packed: &[u8], seed: u32) -> Vec<u8> {
    let mut d = Decompressor::new(packed);
    let mut out = Vec::new();
    let mut buf = [0u8; 4096];
    let mut rng = seed;
    loop {
        let want = 1 + lcg(&mut rng) as usize % buf.len();
        match d.read(&mut buf[..want]) {
            Ok(0) => break,
            Ok(n) => out.extend_from_slice(&buf[..n]),
            Err(e) => panic!("the decompressor failed on a valid container: {e}"),
        }
    }
    assert_eq!(d.total_in(), packed.len() as u64);
    assert_eq!(d.total_out(), out.len() as u64);
    out
}

/// Runs every check on one input; panics on the first broken promise.
pub fn check(input: &[u8]) {
    let Some((head, data)) = input.split_first_chunk::<8>() else {
        return;
    };
    let preset = preset_from(head[0], [head[6], head[7]]);
    let block_size = block_size_from(head[1], head[2], head[3]);
    let max = max_data(preset.kind()).min(MAX_BLOCKS.saturating_mul(block_size as usize));
    let data = &data[..data.len().min(max)];
    let threads = 1 + usize::from(head[4] & 1);
    let write_mode = head[4] >> 1 & 3;
    let seed = u32::from(head[4] >> 3) << 8 | u32::from(head[5]);
    let max_write = 1 + usize::from(head[5]) * 17;

    // Parameters a reader with default limits (256 MiB) would refuse are
    // not round-trip cases: the writer refuses them with default options.
    if preset.memory_needed(block_size) > 256 << 20 {
        let mut opts = Options::new();
        opts.preset(preset)
            .block_size(block_size)
            .expect("in range");
        let err = compress(data, &opts).unwrap_err();
        assert!(
            matches!(err.kind(), ErrorKind::LimitExceeded { .. }),
            "{err}"
        );
        return;
    }
    pool::with_threads(threads, || {
        round_trip(
            data, preset, block_size, threads, write_mode, seed, max_write,
        )
    });
}

fn round_trip(
    data: &[u8],
    preset: Preset,
    block_size: u64,
    threads: usize,
    write_mode: u8,
    seed: u32,
    max_write: usize,
) {
    let mut opts = Options::new();
    opts.preset(preset).threads(threads);
    opts.block_size(block_size).expect("drawn within range");

    let packed = compress(data, &opts).expect("compressing in memory cannot fail");
    // The default limits with the total at exactly the data's length.
    let mut limits = DecodeLimits::new();
    limits.max_total(data.len() as u64);
    let mut dopts = DecodeOptions::new();
    dopts.threads(threads).limits(limits);
    let back = decompress_with_options(&packed, &dopts).expect("valid container");
    assert!(
        back == data,
        "one-shot round trip differs ({preset}, block {block_size})"
    );

    let blocks = (data.len() as u64).div_ceil(block_size);
    // Header (at most 59 bytes: 4 + 1 + 5 + 4 + 1 + 8 x 5 + 4), a stored
    // frame of at most 13 bytes per block, an end record of at most 25
    // bytes, and for two or more blocks the block index: at most 20 bytes
    // an entry and its 16-byte tail (docs/FORMAT.md, sections 2 to 4.1).
    let index = if blocks >= 2 { 20 * blocks + 16 } else { 0 };
    let bound = data.len() as u64 + 13 * blocks + 59 + 25 + index;
    assert!(
        packed.len() as u64 <= bound,
        "{} bytes packed to {}, above the stored bound {bound}",
        data.len(),
        packed.len()
    );

    let (streamed, flushed) = write_adapter(data, &opts, write_mode, max_write, seed);
    if !flushed {
        assert!(
            streamed == packed,
            "the container depends on write sizes or threads"
        );
    }
    let back = read_adapter(&streamed, seed);
    assert!(
        back == data,
        "adapter round trip differs ({preset}, block {block_size})"
    );

    if !data.is_empty() {
        limits.max_total(data.len() as u64 - 1);
        dopts.limits(limits);
        let err = decompress_with_options(&packed, &dopts).unwrap_err();
        assert!(
            matches!(err.kind(), ErrorKind::LimitExceeded { .. }),
            "{err}"
        );
    }
}
