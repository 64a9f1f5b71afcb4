//! What the writer and the reader agree on: default options write only
//! what default limits read, raising the limit is a choice made on both
//! sides, block sizes are one integer type throughout, and errors met
//! through `std::io` lead back to the crate's error.
#![cfg(feature = "std")]

use std::error::Error as _;
use std::io::{Read, Write};

use subrange::format::{inspect, DecodeLimits, MAX_BLOCK_SIZE};
use subrange::preset::Preset;
use subrange::stream::{DecodeOptions, MIN_BLOCK_SIZE};
use subrange::{
    compress, compress_reader, decompress, decompress_with_limits, Compressor, Decompressor, Error,
    ErrorKind, Options,
};

/// A few readings: the containers below declare large blocks, but their
/// models size their tables by the data actually coded.
fn readings() -> Vec<u8> {
    subrange::corpus::gauge_csv(4, 3000)
}

/// Every preset with default parameters, and each parameter at its
/// extremes (where the others allow it).
fn presets() -> Vec<Preset> {
    let mut out = Vec::new();
    for base in Preset::all() {
        out.push(base);
        for spec in base.param_specs() {
            for value in [spec.min, spec.max] {
                let mut p = base;
                if p.set_param(spec.name, value).is_ok() {
                    out.push(p);
                }
            }
        }
    }
    out
}

fn is_limit(e: &Error) -> bool {
    matches!(
        e.kind(),
        ErrorKind::LimitExceeded {
            what: "memory needed per block",
            ..
        }
    )
}

#[test]
fn the_default_reader_reads_all_the_default_writer_writes() {
    let data = readings();
    let (mut written, mut refused) = (0, 0);
    for preset in presets() {
        for block_size in [4096, 1 << 20, MAX_BLOCK_SIZE] {
            let mut opts = Options::new();
            opts.preset(preset).threads(1);
            opts.block_size(block_size).unwrap();
            let need = preset.memory_needed(block_size);
            let fits = need <= DecodeLimits::new().memory_limit();
            assert_eq!(opts.check().is_ok(), fits, "{preset} {block_size}");
            match compress(&data, &opts) {
                Ok(packed) => {
                    assert!(fits, "{preset} {block_size}: written, needs {need}");
                    assert_eq!(decompress(&packed).unwrap(), data, "{preset}");
                    written += 1;
                }
                Err(e) => {
                    assert!(!fits && is_limit(&e), "{preset} {block_size}: {e}");
                    refused += 1;
                }
            }
        }
    }
    assert!(written > 0 && refused > 0, "{written} {refused}");
}

#[test]
fn output_only_a_raised_reader_reads_is_written_only_when_asked() {
    let data = readings();
    // The cases a default reader refuses: order2 at 64 MiB blocks (about
    // 260 MiB), mix with 512 MiB of model memory at 1 MiB blocks.
    let mut order2 = Options::new();
    order2
        .preset(Preset::from_name("order2").unwrap())
        .block_size(64 << 20)
        .unwrap();
    let mut mix = Options::new();
    mix.preset(Preset::from_name("mix:memory_mib=512").unwrap());
    for mut opts in [order2, mix] {
        opts.threads(1);
        let name = opts.get_preset().to_string();
        let need = opts.get_preset().memory_needed(opts.get_block_size());
        // Refused by every way of writing, before a byte is written.
        assert!(is_limit(&compress(&data, &opts).unwrap_err()), "{name}");
        let mut sink = Vec::new();
        let err = compress_reader(&data[..], &mut sink, &opts).unwrap_err();
        assert!(is_limit(&err) && sink.is_empty(), "{name}: {err}");
        let mut c = Compressor::new(Vec::new(), &opts);
        let err = c.write_all(&data).unwrap_err();
        let inner = err.source().and_then(|s| s.downcast_ref::<Error>());
        assert!(inner.is_some_and(is_limit), "{name}: {err}");
        assert!(c.get_ref().is_empty(), "{name}");
        assert!(c.try_finish().is_err(), "{name}");

        // Raised on purpose: written; the default reader refuses it with a
        // limit error, a reader raised as far reads it.
        opts.max_decoder_memory(need);
        let packed = compress(&data, &opts).unwrap();
        assert!(is_limit(&decompress(&packed).unwrap_err()), "{name}");
        let mut limits = DecodeLimits::new();
        limits.max_memory(need);
        assert_eq!(decompress_with_limits(&packed, &limits).unwrap(), data);
    }
}

#[test]
fn block_sizes_are_one_integer_type() {
    // The same `u64` goes into the options, the preset's memory, the limits
    // and comes back from the header: no conversion anywhere.
    for size in [MIN_BLOCK_SIZE, 4096, MAX_BLOCK_SIZE] {
        let mut opts = Options::new();
        opts.block_size(size).unwrap();
        let got: u64 = opts.get_block_size();
        assert_eq!(got, size);
        let _: u64 = opts.get_preset().memory_needed(got);
        let mut limits = DecodeLimits::new();
        limits.max_block_size(got);
        assert_eq!(limits.block_size_limit(), size);
        let packed = compress(b"G101,0,212", &opts).unwrap();
        assert_eq!(inspect(&packed[..]).unwrap().header.block_size, size);
    }
    let mut opts = Options::new();
    assert!(opts.block_size(MAX_BLOCK_SIZE + 1).is_err());
    assert!(opts.block_size(MIN_BLOCK_SIZE - 1).is_err());
}

#[test]
fn io_errors_lead_back_to_the_crate_error() {
    let mut packed = compress(&readings(), &Options::new()).unwrap();
    let last = packed.len() - 6;
    packed[last] ^= 0x40;
    let err = Decompressor::new(&packed[..])
        .read_to_end(&mut Vec::new())
        .unwrap_err();
    assert_eq!(err.kind(), std::io::ErrorKind::InvalidData);
    // `std::error::Error::source`, as the documentation says.
    let inner = err
        .source()
        .and_then(|s| s.downcast_ref::<Error>())
        .expect("the crate error is the source");
    assert!(inner.is_damage(), "{inner}");
    // The message is the crate error's.
    assert_eq!(err.to_string(), inner.to_string());
    // Also through the one-shot reader-to-writer helper, which hands the
    // crate error back itself.
    let mut opts = DecodeOptions::new();
    opts.threads(1);
    let e = subrange::stream::decompress_reader(&packed[..], Vec::new(), &opts).unwrap_err();
    assert!(e.is_damage(), "{e}");

    // Truncation: UnexpectedEof, same route.
    let cut = &packed[..packed.len() / 2];
    let err = Decompressor::new(cut)
        .read_to_end(&mut Vec::new())
        .unwrap_err();
    assert_eq!(err.kind(), std::io::ErrorKind::UnexpectedEof);
    let inner = err.source().and_then(|s| s.downcast_ref::<Error>());
    assert!(
        matches!(inner.map(Error::kind), Some(ErrorKind::Truncated { .. })),
        "{err}"
    );
}
