//! Round trips through the container: adapters with random write and read
//! sizes, every preset, parallel and single-threaded coding, empty input,
//! concatenation and trailing data.
#![cfg(feature = "std")]

use std::io::{BufRead, Read, Write};

use proptest::prelude::*;
use subrange::format::{inspect, TrailingData};
use subrange::preset::Preset;
use subrange::stream::{decompress_with_options, DecodeOptions};
use subrange::{compress, decompress, Compressor, Decompressor, ErrorKind, Options};

fn options(preset: Preset, block_size: u64, threads: usize) -> Options {
    let mut o = Options::new();
    o.preset(preset).threads(threads);
    o.block_size(block_size).unwrap();
    o
}

/// Writes `data` with `write` calls of the sizes in `chunks` (cycled),
/// including zero-length writes, accepting partial writes.
fn write_chunked<W: Write>(w: &mut W, data: &[u8], chunks: &[usize]) {
    let mut pos = 0;
    let mut i = 0;
    while pos < data.len() {
        let want = chunks[i % chunks.len()].min(data.len() - pos);
        i += 1;
        let n = w.write(&data[pos..pos + want]).unwrap();
        assert!(n <= want);
        if want > 0 && n == 0 {
            panic!("compressor accepted nothing");
        }
        pos += n;
    }
}

/// Reads everything with `read` calls of the sizes in `sizes` (cycled).
fn read_sized<R: Read>(r: &mut R, sizes: &[usize]) -> std::io::Result<Vec<u8>> {
    let mut out = Vec::new();
    let mut buf = vec![0u8; *sizes.iter().max().unwrap()];
    let mut i = 0;
    loop {
        let want = sizes[i % sizes.len()];
        i += 1;
        let n = r.read(&mut buf[..want])?;
        if n == 0 {
            return Ok(out);
        }
        out.extend_from_slice(&buf[..n]);
    }
}

fn sample_data() -> impl Strategy<Value = Vec<u8>> {
    prop_oneof![
        proptest::collection::vec(any::<u8>(), 0..3000),
        (any::<u64>(), 0usize..4000).prop_map(|(s, n)| subrange::corpus::gauge_csv(s, n)),
        (any::<u64>(), 0usize..4000).prop_map(|(s, n)| subrange::corpus::skewed(s, n)),
        (any::<u8>(), 0usize..3000).prop_map(|(b, n)| vec![b; n]),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(48))]

    #[test]
    fn adapters_round_trip(
        data in sample_data(),
        preset_index in 0usize..16,
        block_size in 16u64..2048,
        threads in 1usize..=2,
        mut chunks in proptest::collection::vec(0usize..300, 1..8),
        reads in proptest::collection::vec(1usize..200, 1..8),
    ) {
        chunks.push(1);
        let presets: Vec<Preset> = Preset::all().collect();
        let preset = presets[preset_index % presets.len()];
        let opts = options(preset, block_size, threads);
        let mut c = Compressor::new(Vec::new(), &opts);
        write_chunked(&mut c, &data, &chunks);
        prop_assert_eq!(c.total_in(), data.len() as u64);
        let packed = c.finish().unwrap();

        // Chunking and threads do not change the output.
        prop_assert_eq!(&compress(&data, &options(preset, block_size, 1)).unwrap(), &packed);

        let mut d = Decompressor::new(&packed[..]);
        let back = read_sized(&mut d, &reads).unwrap();
        prop_assert_eq!(&back, &data);
        prop_assert_eq!(d.total_out(), data.len() as u64);
        prop_assert_eq!(d.total_in(), packed.len() as u64);
        prop_assert_eq!(&decompress(&packed).unwrap(), &data);
    }
}

#[test]
fn every_preset_round_trips_the_demo_corpus() {
    for set in subrange::corpus::demo(40_000) {
        for preset in Preset::all() {
            for threads in [1, 2] {
                let opts = options(preset, 8192, threads);
                let packed = compress(&set.data, &opts).unwrap();
                assert_eq!(
                    decompress(&packed).unwrap(),
                    set.data,
                    "{} {preset}",
                    set.name
                );
                let mut one = DecodeOptions::new();
                one.threads(1);
                assert_eq!(decompress_with_options(&packed, &one).unwrap(), set.data);
            }
        }
    }
}

#[test]
fn parallel_output_is_byte_identical() {
    let data = subrange::corpus::text_like(9, 300_000);
    for preset in Preset::all() {
        let one = compress(&data, &options(preset, 16 << 10, 1)).unwrap();
        for threads in [0, 2, 3] {
            assert_eq!(
                compress(&data, &options(preset, 16 << 10, threads)).unwrap(),
                one
            );
        }
        let mut reader_out = Vec::new();
        subrange::compress_reader(&data[..], &mut reader_out, &options(preset, 16 << 10, 2))
            .unwrap();
        assert_eq!(reader_out, one);
    }
}

#[test]
fn empty_input_round_trips() {
    for preset in Preset::all() {
        let packed = compress(&[], &options(preset, 1024, 1)).unwrap();
        assert_eq!(decompress(&packed).unwrap(), Vec::<u8>::new());
        let report = inspect(&packed[..]).unwrap();
        assert!(report.is_intact());
        assert!(report.blocks.is_empty());
        let mut out = Vec::new();
        Decompressor::new(&packed[..])
            .read_to_end(&mut out)
            .unwrap();
        assert!(out.is_empty());
        // Dropping an unused compressor still leaves a valid, empty container.
        let mut sink = Vec::new();
        drop(Compressor::new(&mut sink, &options(preset, 1024, 1)));
        assert_eq!(sink, packed);
    }
}

#[test]
fn trailing_bytes_are_reported_and_policies_apply() {
    let data = subrange::corpus::gauge_csv(4, 5000);
    let packed = compress(&data, &options(Preset::default(), 1024, 1)).unwrap();
    let mut with_tail = packed.clone();
    with_tail.extend_from_slice(b"tail");

    let err = decompress(&with_tail).unwrap_err();
    assert!(
        matches!(err.kind(), ErrorKind::TrailingBytes { offset, count: 4 } if *offset == packed.len() as u64),
        "{err}"
    );
    let io_err = Decompressor::new(&with_tail[..])
        .read_to_end(&mut Vec::new())
        .unwrap_err();
    assert_eq!(io_err.kind(), std::io::ErrorKind::InvalidData);
    assert!(inspect(&with_tail[..]).unwrap().error.is_some());

    // Leave: stop at the end record; the reader is just past the container.
    let mut opts = DecodeOptions::new();
    opts.trailing(TrailingData::Leave);
    let mut d = Decompressor::with_options(&with_tail[..], &opts);
    let mut back = Vec::new();
    d.read_to_end(&mut back).unwrap();
    assert_eq!(back, data);
    assert_eq!(d.into_inner(), b"tail");
}

#[test]
fn concatenated_containers() {
    let a = subrange::corpus::gauge_csv(5, 3000);
    let b = subrange::corpus::skewed(6, 2000);
    let mut both = compress(&a, &options(Preset::default(), 512, 1)).unwrap();
    let adaptive = Preset::from_name("adaptive").unwrap();
    both.extend_from_slice(&compress(&b, &options(adaptive, 4096, 1)).unwrap());

    // By default the second container is trailing data.
    assert!(decompress(&both).is_err());

    let mut opts = DecodeOptions::new();
    opts.trailing(TrailingData::Concatenated);
    let expected: Vec<u8> = a.iter().chain(&b).copied().collect();
    assert_eq!(decompress_with_options(&both, &opts).unwrap(), expected);
    let mut back = Vec::new();
    Decompressor::with_options(&both[..], &opts)
        .read_to_end(&mut back)
        .unwrap();
    assert_eq!(back, expected);

    // Garbage after the first container is not a container.
    let mut bad = compress(&a, &Options::default()).unwrap();
    bad.extend_from_slice(b"not a container");
    let err = decompress_with_options(&bad, &opts).unwrap_err();
    assert!(matches!(err.kind(), ErrorKind::BadMagic), "{err}");
}

#[test]
fn flush_makes_everything_written_decodable() {
    let mut c = Compressor::new(Vec::new(), &Options::default());
    c.write_all(b"G120,0,412,4221,71\n").unwrap();
    c.flush().unwrap();
    c.write_all(b"G120,10,413,4240,71\n").unwrap();
    c.flush().unwrap();
    // Without the end record the stream is incomplete, but both blocks read.
    let partial = c.get_ref().clone();
    let mut d = Decompressor::new(&partial[..]);
    let mut first = vec![0u8; 39];
    d.read_exact(&mut first).unwrap();
    assert_eq!(&first[..], b"G120,0,412,4221,71\nG120,10,413,4240,71\n");
    assert_eq!(
        d.read(&mut [0u8; 8]).unwrap_err().kind(),
        std::io::ErrorKind::UnexpectedEof
    );
    let packed = c.finish().unwrap();
    assert_eq!(inspect(&packed[..]).unwrap().blocks.len(), 2);
}

#[test]
fn bufread_and_writes_after_finish() {
    let data = subrange::corpus::text_like(2, 10_000);
    let packed = compress(&data, &options(Preset::default(), 4096, 1)).unwrap();
    let mut d = Decompressor::new(&packed[..]);
    let first = d.fill_buf().unwrap().len();
    assert_eq!(first, 4096);
    d.consume(100);
    let mut rest = Vec::new();
    d.read_to_end(&mut rest).unwrap();
    assert_eq!(rest, &data[100..]);
    assert_eq!(d.read(&mut []).unwrap(), 0);

    let mut c = Compressor::new(Vec::new(), &Options::default());
    c.write_all(b"x").unwrap();
    c.try_finish().unwrap();
    c.try_finish().unwrap();
    assert!(c.write(b"y").is_err());
    assert_eq!(c.total_out(), c.get_ref().len() as u64);
}

#[test]
fn overhead_on_incompressible_data_is_a_few_bytes_per_block() {
    let data = subrange::corpus::random(11, 1 << 20);
    for preset in Preset::all() {
        let packed = compress(&data, &options(preset, 64 << 10, 1)).unwrap();
        let report = inspect(&packed[..]).unwrap();
        assert_eq!(report.blocks.len(), 16);
        // Header + 16 frames (at most 16 bytes each) + end record.
        assert!(
            packed.len() <= data.len() + 64 + 16 * 16,
            "{}",
            packed.len()
        );
    }
}

#[test]
fn container_overhead_at_the_default_block_size() {
    // Target: container bytes beyond the coded payloads stay within
    // 0.1 % of the payloads + 64 bytes.
    let data: Vec<u8> = subrange::corpus::demo(600_000)
        .into_iter()
        .flat_map(|d| d.data)
        .collect();
    for preset in Preset::all() {
        let mut o = Options::new();
        o.preset(preset);
        // The framing does not depend on the preset: the slow
        // context-mixing presets frame a shorter input (one block at their
        // default size, as the whole input would be for `history`).
        let data = match preset.name() {
            "mix" | "history" => &data[..300_000],
            _ => &data[..],
        };
        let packed = compress(data, &o).unwrap();
        let report = inspect(&packed[..]).unwrap();
        assert!(report.is_intact());
        let payload: u64 = report.blocks.iter().map(|b| b.coded_len).sum();
        let overhead = packed.len() as u64 - payload;
        println!(
            "{preset}: {} blocks, payload {payload} bytes, container {} bytes, overhead {overhead} bytes",
            report.blocks.len(),
            packed.len()
        );
        assert!(overhead * 1000 <= payload + 64 * 1000, "{overhead}");
        assert!(overhead <= 64 + 20 * report.blocks.len() as u64);
    }
}
