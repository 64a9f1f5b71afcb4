//! Hostile headers and frames fail fast with a limit (or damage) error and
//! allocate nothing large: a counting global allocator records the peak of
//! live heap bytes while each hostile container is decoded.
//!
//! The containers are built by hand from the layout in `docs/FORMAT.md`
//! (vints, CRC-32 fields), which also checks the document against the code.

use std::io::Read;

use subrange::format::DecodeLimits;
use subrange::{decompress, decompress_with_limits, Decompressor, ErrorKind};

use crate::fuzz_support::alloc::peak_during;
use crate::serial;

fn vint(out: &mut Vec<u8>, mut v: u64) {
    while v >= 0x80 {
        out.push(v as u8 | 0x80);
        v >>= 7;
    }
    out.push(v as u8);
}

/// Header: magic, version 1, preset id, block size, params, CRC-32.
fn header(preset: u64, block_size: u64, params: &[u64]) -> Vec<u8> {
    let mut h = vec![0xB7, 0x73, 0x72, 0x67, 1];
    vint(&mut h, preset);
    vint(&mut h, block_size);
    h.push(params.len() as u8);
    for &p in params {
        vint(&mut h, p);
    }
    let crc = crc32fast::hash(&h);
    h.extend_from_slice(&crc.to_le_bytes());
    h
}

/// A coded block frame (kind 2) for block `index`, then its payload.
fn coded_block(index: u64, raw_len: u64, raw_crc: u32, payload: &[u8], declared: u64) -> Vec<u8> {
    let mut f = vec![2u8];
    vint(&mut f, raw_len);
    vint(&mut f, declared);
    f.extend_from_slice(&raw_crc.to_le_bytes());
    f.extend_from_slice(&crc32fast::hash(payload).to_le_bytes());
    let mut check = crc32fast::Hasher::new();
    check.update(&index.to_le_bytes());
    check.update(&f);
    f.extend_from_slice(&check.finalize().to_le_bytes());
    f.extend_from_slice(payload);
    f
}

fn limit_error(bytes: &[u8]) -> ErrorKind {
    let mut err = None;
    let ((), peak) = peak_during(|| {
        err = Some(decompress(bytes).unwrap_err().into_kind());
    });
    assert!(peak < 64 << 10, "one-shot peak {peak} bytes");
    let ((), peak) = peak_during(|| {
        let mut d = Decompressor::new(bytes);
        let mut out = Vec::new();
        assert!(d.read_to_end(&mut out).is_err());
    });
    assert!(peak < 64 << 10, "stream peak {peak} bytes");
    err.unwrap()
}

#[test]
fn hostile_declarations_fail_fast_without_large_allocations() {
    let _serial = serial();
    // A block size of 2^60 bytes.
    let kind = limit_error(&header(1, 1 << 60, &[4, 12]));
    assert!(
        matches!(kind, ErrorKind::LimitExceeded { what: "block size", declared, .. } if declared == 1 << 60),
        "{kind:?}"
    );

    // A static block declaring a model table of 2^40 bytes.
    let mut payload = vec![1u8];
    vint(&mut payload, 1 << 40);
    let mut c = header(1, 4096, &[4, 12]);
    c.extend(coded_block(0, 4000, 0, &payload, payload.len() as u64));
    let kind = limit_error(&c);
    assert!(
        matches!(
            kind,
            ErrorKind::LimitExceeded {
                what: "model table size",
                ..
            }
        ),
        "{kind:?}"
    );

    // A preset parameter of 2^31 lanes.
    let kind = limit_error(&header(1, 4096, &[1 << 31, 12]));
    assert!(
        matches!(kind, ErrorKind::LimitExceeded { what: "lanes", .. }),
        "{kind:?}"
    );

    // A block whose raw length is 2^60 (above the block size): damage.
    let mut c = header(2, 4096, &[24, 65_536]);
    c.extend(coded_block(0, 1 << 60, 0, &[1, 2, 3], 3));
    let kind = limit_error(&c);
    assert!(
        matches!(kind, ErrorKind::CorruptFrame { index: 0, .. }),
        "{kind:?}"
    );

    // An unknown preset id.
    let kind = limit_error(&header(1 << 30, 4096, &[]));
    assert!(
        matches!(kind, ErrorKind::UnknownPreset { id } if id == 1 << 30),
        "{kind:?}"
    );

    // More parameters than any preset has.
    let kind = limit_error(&header(2, 4096, &[1; 200]));
    assert!(matches!(kind, ErrorKind::CorruptHeader { .. }), "{kind:?}");
}

#[test]
fn memory_limit_is_checked_before_allocating() {
    let _serial = serial();
    let mut limits = DecodeLimits::new();
    limits.max_memory(1 << 20);
    let bytes = header(2, 16 << 20, &[24, 65_536]);
    let mut err = None;
    let ((), peak) =
        peak_during(|| err = Some(decompress_with_limits(&bytes, &limits).unwrap_err()));
    assert!(peak < 64 << 10, "peak {peak}");
    assert!(matches!(
        err.unwrap().kind(),
        ErrorKind::LimitExceeded {
            what: "memory needed per block",
            ..
        }
    ));
}

#[test]
fn truncated_large_block_does_not_reserve_its_declared_size() {
    let _serial = serial();
    // A 64 MiB block whose 60 MiB payload is cut off after 10 bytes.
    let mut c = header(2, 64 << 20, &[24, 65_536]);
    let mut f = coded_block(0, 64 << 20, 0, &[0; 10], 60 << 20);
    // The payload CRC in the frame is of the 10 bytes; the read stops first.
    c.append(&mut f);
    let ((), peak) = peak_during(|| {
        let mut d = Decompressor::new(&c[..]);
        let e = d.read_to_end(&mut Vec::new()).unwrap_err();
        assert_eq!(e.kind(), std::io::ErrorKind::UnexpectedEof);
    });
    // Payload buffers grow by at most 1 MiB ahead of the data.
    assert!(peak < 2 << 20, "peak {peak}");
}

/// Writes `blocks` blocks of demo data through a [`Compressor`] to a sink
/// and returns the peak of live heap bytes meanwhile.
fn compressor_peak(opts: &subrange::Options, blocks: u64) -> usize {
    let block = opts.get_block_size() as usize;
    let data = subrange::corpus::gauge_csv(8, block * blocks as usize);
    peak_during(|| {
        let mut c = subrange::Compressor::new(std::io::sink(), opts);
        for chunk in data.chunks(50_000) {
            std::io::Write::write_all(&mut c, chunk).unwrap();
        }
        c.finish().unwrap();
    })
    .1
}

#[test]
fn compressor_output_starts_once_the_blocks_in_flight_are_full() {
    let _serial = serial();
    let block = 64 << 10;
    let data = subrange::corpus::gauge_csv(3, 40 * block);
    for (threads, in_flight) in [(1, 0), (2, 0), (0, 0), (2, 3), (1, 4)] {
        let mut opts = subrange::Options::new();
        opts.threads(threads).blocks_in_flight(in_flight);
        opts.block_size(block as u64).unwrap();
        let n = opts.get_blocks_in_flight();
        assert!(
            n >= 1 && (in_flight == 0 || n == in_flight),
            "{threads} {in_flight}: {n}"
        );
        let mut c = subrange::Compressor::new(Vec::new(), &opts);
        std::io::Write::write_all(&mut c, &data[..n * block - 1]).unwrap();
        assert_eq!(c.total_out(), 0, "threads {threads}, in flight {n}");
        std::io::Write::write_all(&mut c, &data[n * block - 1..n * block]).unwrap();
        assert!(c.total_out() > 0, "threads {threads}, in flight {n}");
    }
    // By default, one block more than threads.
    let mut opts = subrange::Options::new();
    opts.threads(2);
    assert_eq!(opts.get_blocks_in_flight(), 3);
}

#[test]
fn compressor_memory_follows_the_blocks_in_flight_within_its_bound() {
    let _serial = serial();
    let block: u64 = 128 << 10;
    for (name, threads) in [("static", 1), ("adaptive", 2), ("order2", 2), ("mix", 1)] {
        let mut peaks = Vec::new();
        for in_flight in [1, 4] {
            let mut opts = subrange::Options::new();
            opts.preset(subrange::preset::Preset::from_name(name).unwrap())
                .threads(threads)
                .blocks_in_flight(in_flight);
            opts.block_size(block).unwrap();
            let peak = compressor_peak(&opts, 8) as u64;
            let bound = opts.memory_bound();
            assert!(
                peak <= bound,
                "{name}, {in_flight} in flight: peak {peak} above the bound {bound}"
            );
            println!(
                "{name}, {threads} threads, {in_flight} in flight: peak {peak}, bound {bound}"
            );
            peaks.push(peak);
        }
        // Three more blocks in flight hold at least three more blocks of
        // raw bytes.
        assert!(
            peaks[1] >= peaks[0] + 3 * block,
            "{name}: peaks {peaks:?} do not follow the blocks in flight"
        );
    }
}

#[test]
fn compress_reader_memory_stays_within_the_bound_while_it_overlaps_io() {
    let _serial = serial();
    let block: u64 = 128 << 10;
    let data = subrange::corpus::gauge_csv(9, 10 * block as usize);
    for (name, threads, in_flight) in [
        ("static", 1, 0),
        ("static", 2, 0),
        ("adaptive", 1, 2),
        ("adaptive", 2, 5),
        ("order2", 1, 1),
    ] {
        let mut opts = subrange::Options::new();
        opts.preset(subrange::preset::Preset::from_name(name).unwrap())
            .threads(threads)
            .blocks_in_flight(in_flight);
        opts.block_size(block).unwrap();
        let mut out = Vec::with_capacity(data.len() + 4096);
        let ((), peak) = peak_during(|| {
            subrange::compress_reader(&data[..], &mut out, &opts).unwrap();
        });
        let peak = peak as u64;
        let bound = opts.memory_bound();
        assert!(
            peak <= bound,
            "{name}, {threads} threads, {in_flight} in flight: peak {peak} above {bound}"
        );
        assert_eq!(subrange::decompress(&out).unwrap(), data);
    }
}
