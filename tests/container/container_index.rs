//! Random access through the block index: every byte range of every layout
//! decodes to the slice of the original, from the index record or from a
//! walk over the frames; damaged and lying indexes are typed errors.
//!
//! Past the end: [`decompress_range`] refuses a range that is inverted or
//! ends past the data ([`ErrorKind::RangeOutsideData`]); the
//! [`IndexedReader`] follows [`Read`] + [`Seek`] as files do (seeking past
//! the end is allowed, reads there return 0 bytes, a read across the end is
//! short).
#![cfg(feature = "std")]

use std::io::{Cursor, Read, Seek, SeekFrom, Write};

use proptest::prelude::*;
use subrange::format::{BlockIndex, DecodeLimits, IndexPolicy, IndexSource, INDEX_MARK};
use subrange::preset::Preset;
use subrange::stream::{decompress_range, IndexedReader};
use subrange::{Compressor, ErrorKind, Options};

/// A container of `data` cut into blocks of `block_size`, with the stream
/// flushed (ending a block early) after each offset of `flushes`.
fn container(
    data: &[u8],
    block_size: u64,
    preset: &str,
    policy: IndexPolicy,
    flushes: &[usize],
) -> Vec<u8> {
    let mut opts = Options::new();
    opts.preset(Preset::from_name(preset).unwrap())
        .threads(1)
        .block_index(policy);
    opts.block_size(block_size).unwrap();
    let mut c = Compressor::new(Vec::new(), &opts);
    let mut at = 0;
    let mut cuts: Vec<usize> = flushes.iter().map(|&f| f.min(data.len())).collect();
    cuts.sort_unstable();
    for cut in cuts {
        c.write_all(&data[at..cut]).unwrap();
        c.flush().unwrap();
        at = cut;
    }
    c.write_all(&data[at..]).unwrap();
    c.finish().unwrap()
}

/// Demo data: river-gauge readings with a stretch of random bytes (stored
/// blocks) in the middle.
fn gauge_data(seed: u64, len: usize) -> Vec<u8> {
    let mut data = subrange::corpus::gauge_csv(seed, len / 2);
    data.extend(subrange::corpus::random(seed + 1, len / 8));
    data.extend(subrange::corpus::gauge_binary(seed + 2, len - data.len()));
    data.truncate(len);
    data
}

/// What reading `start..end` through a reader gives: the bytes up to the
/// end of the data (a short read past it, none from past it).
fn read_span<R: Read + Seek>(r: &mut IndexedReader<R>, start: u64, end: u64) -> Vec<u8> {
    r.seek(SeekFrom::Start(start)).unwrap();
    let mut out = Vec::new();
    r.take(end.saturating_sub(start))
        .read_to_end(&mut out)
        .unwrap();
    out
}

fn check_ranges(data: &[u8], packed: &[u8], ranges: &[(u64, u64)], source: IndexSource) {
    let len = data.len() as u64;
    let mut reader = IndexedReader::new(Cursor::new(packed)).unwrap();
    assert_eq!(reader.index().source(), source);
    assert_eq!(reader.len(), len);
    for &(start, end) in ranges {
        let got = decompress_range(packed, start..end);
        if start <= end && end <= len {
            let want = &data[start as usize..end as usize];
            assert_eq!(got.unwrap(), want, "{start}..{end} of {len}");
        } else {
            let err = got.unwrap_err();
            assert!(
                matches!(err.kind(), ErrorKind::RangeOutsideData { start: s, end: e, len: l } if (*s, *e, *l) == (start, end, len)),
                "{start}..{end} of {len}: {err}"
            );
        }
        let lo = start.min(len) as usize;
        let hi = end.min(len).max(lo as u64) as usize;
        assert_eq!(
            read_span(&mut reader, start, end),
            &data[lo..hi],
            "{start}..{end} read"
        );
    }
}

/// Ranges at and around every block edge, the ends, and past the end.
fn edge_ranges(packed: &[u8], len: u64) -> Vec<(u64, u64)> {
    let index = BlockIndex::walk(&mut Cursor::new(packed), &DecodeLimits::new()).unwrap();
    let mut v = vec![
        (0, 0),
        (0, len),
        (len, len),
        (len, len + 1),
        (len + 5, len + 9),
        (3, 1),
    ];
    for b in index.blocks() {
        let e = b.raw_offset;
        for (s, t) in [
            (e, e),
            (e.saturating_sub(1), e + 1),
            (e, e + b.raw_len),
            (e + 1, e + b.raw_len + 1),
        ] {
            v.push((s.min(len + 1), t.min(len + 1)));
        }
    }
    v
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(48))]

    #[test]
    fn every_range_decodes_to_the_slice(
        seed in 0u64..1000,
        len in 0usize..12_000,
        block_size in 16u64..3000,
        preset in prop::sample::select(vec!["static", "adaptive", "order2"]),
        policy in prop::sample::select(vec![IndexPolicy::Auto, IndexPolicy::Always, IndexPolicy::Never]),
        flushes in prop::collection::vec(0usize..12_000, 0..4),
        raw_ranges in prop::collection::vec((0u64..12_100, 0u64..12_100), 1..12),
    ) {
        let data = gauge_data(seed, len);
        let packed = container(&data, block_size, preset, policy, &flushes);
        let blocks = BlockIndex::walk(&mut Cursor::new(&packed), &DecodeLimits::new()).unwrap().blocks().len();
        let indexed = policy == IndexPolicy::Always || (policy == IndexPolicy::Auto && blocks > 1);
        let source = if indexed { IndexSource::Recorded } else { IndexSource::Walked };
        let mut ranges = edge_ranges(&packed, len as u64);
        ranges.extend(raw_ranges.iter().map(|&(a, b)| (a.min(b), a.max(b))));
        ranges.extend(raw_ranges);
        check_ranges(&data, &packed, &ranges, source);
        // The recorded index and a walk agree.
        let recorded = BlockIndex::read(&mut Cursor::new(&packed), &DecodeLimits::new()).unwrap();
        let walked = BlockIndex::walk(&mut Cursor::new(&packed), &DecodeLimits::new()).unwrap();
        prop_assert_eq!(recorded.blocks(), walked.blocks());
        prop_assert_eq!(recorded.container_len(), packed.len() as u64);
        // Split into parts: consecutive, covering, on block edges.
        for parts in [1usize, 2, 3, 7] {
            let split = recorded.split(parts);
            prop_assert_eq!(split.len(), parts);
            prop_assert_eq!(split[0].start, 0);
            prop_assert_eq!(split[parts - 1].end, len as u64);
            for w in split.windows(2) {
                prop_assert_eq!(w[0].end, w[1].start);
            }
            let joined: Vec<u8> = split.iter().flat_map(|r| decompress_range(&packed, r.clone()).unwrap()).collect();
            prop_assert_eq!(joined, data.clone());
        }
    }
}

#[test]
fn a_container_with_its_reader_offset_reads_from_there() {
    let data = gauge_data(3, 20_000);
    let packed = container(&data, 1024, "static", IndexPolicy::Auto, &[]);
    let mut embedded = b"preamble of another format".to_vec();
    let base = embedded.len() as u64;
    embedded.extend_from_slice(&packed);
    let mut src = Cursor::new(embedded);
    src.seek(SeekFrom::Start(base)).unwrap();
    let mut r = IndexedReader::new(src).unwrap();
    assert_eq!(r.index().base(), base);
    assert_eq!(read_span(&mut r, 5000, 9000), &data[5000..9000]);
}

#[test]
fn a_read_of_4_kib_decodes_at_most_two_blocks() {
    let data = gauge_data(4, 3 << 20);
    let packed = container(&data, 64 << 10, "static", IndexPolicy::Auto, &[]);
    let mut r = IndexedReader::new(Cursor::new(&packed)).unwrap();
    let mut buf = vec![0u8; 4096];
    let mut state = 12345u64;
    let mut straddled = 0;
    for _ in 0..200 {
        // A 64-bit LCG (Knuth's MMIX constants; common practice).
        state = state
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        let at = (state >> 11) % (data.len() as u64 - 4096);
        let before = r.blocks_decoded();
        r.seek(SeekFrom::Start(at)).unwrap();
        r.read_exact(&mut buf).unwrap();
        assert_eq!(buf, &data[at as usize..at as usize + 4096]);
        let touched = r.blocks_decoded() - before;
        assert!(touched <= 2, "{touched} blocks at {at}");
        straddled += usize::from(at / (64 << 10) != (at + 4095) / (64 << 10));
    }
    assert!(straddled > 0, "no read crossed a block edge");
    // The block in hand is not decoded again.
    let before = r.blocks_decoded();
    r.seek(SeekFrom::Start(0)).unwrap();
    r.read_exact(&mut buf[..100]).unwrap();
    r.read_exact(&mut buf[..100]).unwrap();
    assert_eq!(r.blocks_decoded() - before, 1);
}

#[test]
fn seeking_follows_the_file_rules() {
    let data = gauge_data(5, 5000);
    let packed = container(&data, 1000, "static", IndexPolicy::Auto, &[]);
    let mut r = IndexedReader::new(Cursor::new(&packed)).unwrap();
    assert_eq!(r.seek(SeekFrom::End(-10)).unwrap(), 4990);
    let mut rest = Vec::new();
    r.read_to_end(&mut rest).unwrap();
    assert_eq!(rest, &data[4990..]);
    assert_eq!(r.seek(SeekFrom::Current(100)).unwrap(), 5100);
    assert_eq!(r.read(&mut [0u8; 8]).unwrap(), 0);
    let err = r.seek(SeekFrom::Current(-6000)).unwrap_err();
    assert_eq!(err.kind(), std::io::ErrorKind::InvalidInput);
    assert_eq!(r.stream_position().unwrap(), 5100);
}

/// The end record's offset, the entries' start and the tail's start of an
/// indexed container.
fn index_parts(packed: &[u8]) -> (usize, usize, usize) {
    let end = subrange::format::inspect(packed).unwrap().end.unwrap();
    let end_offset = end.offset as usize;
    assert_eq!(packed[end_offset], 3);
    let tail = packed.len() - 16;
    // The end record: kind, two vints, frame check.
    let mut at = end_offset + 1;
    for _ in 0..2 {
        while packed[at] & 0x80 != 0 {
            at += 1;
        }
        at += 1;
    }
    (end_offset, at + 4, tail)
}

/// Rewrites the index check after an edit, so that only the cross-checks
/// can tell.
fn reseal(packed: &mut [u8], end_offset: usize) {
    let tail = packed.len() - 16;
    let crc = crc32fast::hash(&packed[end_offset..tail + 8]);
    packed[tail + 8..tail + 12].copy_from_slice(&crc.to_le_bytes());
}

fn put_vint(out: &mut Vec<u8>, mut v: u64) {
    while v >= 0x80 {
        out.push(v as u8 | 0x80);
        v >>= 7;
    }
    out.push(v as u8);
}

/// The entries of an indexed container, decoded.
fn entries(packed: &[u8]) -> Vec<(u64, u64)> {
    let (_, start, tail) = index_parts(packed);
    let mut v = Vec::new();
    let mut at = start;
    let next = |at: &mut usize| {
        let (mut x, mut shift) = (0u64, 0);
        loop {
            let b = packed[*at];
            *at += 1;
            x |= u64::from(b & 0x7F) << shift;
            shift += 7;
            if b & 0x80 == 0 {
                return x;
            }
        }
    };
    while at < tail {
        let r = next(&mut at);
        let s = next(&mut at);
        v.push((r, s));
    }
    v
}

/// The container with its entries replaced and the index check resealed.
fn with_entries(packed: &[u8], new: &[(u64, u64)]) -> Vec<u8> {
    let (end_offset, start, tail) = index_parts(packed);
    let mut out = packed[..start].to_vec();
    for &(r, s) in new {
        put_vint(&mut out, r);
        put_vint(&mut out, s);
    }
    out.extend_from_slice(&packed[tail..]);
    reseal(&mut out, end_offset);
    out
}

fn read_error(packed: &[u8]) -> subrange::Error {
    BlockIndex::read(&mut Cursor::new(packed), &DecodeLimits::new()).unwrap_err()
}

fn is_index_damage(e: &subrange::Error) -> bool {
    matches!(e.kind(), ErrorKind::CorruptIndex { .. })
}

#[test]
fn every_damaged_index_byte_is_detected() {
    let data = gauge_data(6, 8000);
    let packed = container(&data, 1000, "static", IndexPolicy::Auto, &[]);
    let (end_offset, _, _) = index_parts(&packed);
    for at in end_offset..packed.len() {
        for bit in 0..8 {
            let mut bad = packed.clone();
            bad[at] ^= 1 << bit;
            let e = read_error(&bad);
            assert!(e.is_damage(), "byte {at} bit {bit}: {e}");
            // The whole-stream decoder reports it too, and the walk still
            // reaches every block unless the end record itself was hit.
            assert!(subrange::decompress(&bad).is_err());
            if at >= index_parts(&packed).1 {
                assert!(is_index_damage(&e), "byte {at} bit {bit}: {e}");
                let walked =
                    BlockIndex::walk(&mut Cursor::new(&bad), &DecodeLimits::new()).unwrap();
                let mut r = IndexedReader::with_index(Cursor::new(&bad), walked);
                let mut all = Vec::new();
                r.read_to_end(&mut all).unwrap();
                assert_eq!(all, data);
            }
        }
    }
    // A cut index (the file truncated inside it) is damage too.
    for cut in end_offset..packed.len() {
        assert!(read_error(&packed[..cut]).is_damage(), "cut at {cut}");
    }
}

#[test]
fn lying_indexes_are_caught_by_the_cross_checks() {
    let data = gauge_data(7, 9500);
    let packed = container(&data, 1000, "static", IndexPolicy::Auto, &[]);
    let honest = entries(&packed);
    assert_eq!(honest.len(), 10);
    assert_eq!(with_entries(&packed, &honest), packed);

    // Two record lengths swapped: the sums agree, the frames do not.
    let mut swapped = honest.clone();
    swapped.swap(1, 2);
    if swapped != honest {
        let lie = with_entries(&packed, &swapped);
        let mut r = IndexedReader::new(Cursor::new(&lie)).unwrap();
        let mut all = Vec::new();
        let e = r.read_to_end(&mut all).unwrap_err();
        assert_eq!(e.kind(), std::io::ErrorKind::InvalidData, "{e}");
        assert!(subrange::decompress(&lie).is_err());
    }

    // Raw lengths moved between blocks: the totals agree, a frame does not.
    let mut moved = honest.clone();
    moved[0].1 += 1;
    moved[9].1 -= 1;
    let lie = with_entries(&packed, &moved);
    let mut r = IndexedReader::new(Cursor::new(&lie)).unwrap();
    let e = r.read(&mut [0u8; 10]).unwrap_err();
    let inner = std::error::Error::source(&e)
        .and_then(|i| i.downcast_ref::<subrange::Error>())
        .unwrap();
    assert!(is_index_damage(inner), "{inner}");

    // A record length off by one: the offsets no longer reach the end record.
    let mut off = honest.clone();
    off[3].0 += 1;
    assert!(is_index_damage(&read_error(&with_entries(&packed, &off))));

    // A shortfall of the whole block size, a record too short to be one.
    let mut empty = honest.clone();
    empty[2].1 = 1000;
    assert!(is_index_damage(&read_error(&with_entries(&packed, &empty))));
    let mut short = honest.clone();
    short[2].0 = 3;
    short[3].0 += honest[2].0 - 3;
    assert!(is_index_damage(&read_error(&with_entries(&packed, &short))));

    // One entry too few or too many for the block count.
    assert!(is_index_damage(&read_error(&with_entries(
        &packed,
        &honest[..8]
    ))));
    let mut more = honest.clone();
    more.push((11, 0));
    assert!(is_index_damage(&read_error(&with_entries(&packed, &more))));
}

#[test]
fn a_huge_block_count_allocates_nothing() {
    let data = gauge_data(8, 3000);
    let packed = container(&data, 1000, "static", IndexPolicy::Auto, &[]);
    let (end_offset, start, _) = index_parts(&packed);
    for count in [1u64 << 20, 1 << 40, u64::MAX] {
        // An end record claiming `count` blocks, its frame check right.
        let mut end = vec![3u8];
        put_vint(&mut end, count);
        put_vint(&mut end, 3000);
        let mut h = crc32fast::Hasher::new();
        h.update(&count.to_le_bytes());
        h.update(&end);
        end.extend_from_slice(&h.finalize().to_le_bytes());
        let mut bad = packed[..end_offset].to_vec();
        bad.extend_from_slice(&end);
        bad.extend_from_slice(&packed[start..]);
        reseal(&mut bad, end_offset);
        let e = read_error(&bad);
        assert!(is_index_damage(&e), "{count}: {e}");
    }
    // A tight memory limit refuses a long list before reading it.
    let many = container(&gauge_data(9, 40_000), 16, "static", IndexPolicy::Auto, &[]);
    let mut limits = DecodeLimits::new();
    limits.max_memory(4096);
    let e = BlockIndex::read(&mut Cursor::new(&many), &limits).unwrap_err();
    assert!(matches!(e.kind(), ErrorKind::LimitExceeded { .. }), "{e}");
}

#[test]
fn containers_without_an_index_are_walked() {
    let data = gauge_data(10, 30_000);
    let plain = container(&data, 2048, "adaptive", IndexPolicy::Never, &[5000]);
    assert_ne!(plain[plain.len() - 4..], INDEX_MARK);
    let indexed = container(&data, 2048, "adaptive", IndexPolicy::Auto, &[5000]);
    assert!(indexed.len() > plain.len());
    let r = IndexedReader::new(Cursor::new(&plain)).unwrap();
    assert_eq!(r.index().source(), IndexSource::Walked);
    assert_eq!(
        decompress_range(&plain, 4000..21_000).unwrap(),
        &data[4000..21_000]
    );
    // Bytes after an end record without index are refused, as everywhere.
    let mut trailing = plain.clone();
    trailing.push(0);
    assert!(matches!(
        read_error(&trailing).kind(),
        ErrorKind::TrailingBytes { .. }
    ));
    // A damaged frame stops the walk.
    let mut bad = plain.clone();
    let second = BlockIndex::walk(&mut Cursor::new(&plain), &DecodeLimits::new())
        .unwrap()
        .blocks()[1]
        .offset;
    bad[second as usize + 1] ^= 4;
    assert!(read_error(&bad).is_damage());
    // The tail mark damaged in an indexed container: the walk meets the
    // indexed end record, and the index is reported damaged.
    let mut bad = indexed.clone();
    let last = bad.len() - 1;
    bad[last] ^= 1;
    assert!(is_index_damage(&read_error(&bad)));
}

#[test]
fn a_damaged_block_fails_only_the_reads_that_touch_it() {
    let data = gauge_data(11, 10_000);
    let packed = container(&data, 1000, "static", IndexPolicy::Auto, &[]);
    let index = BlockIndex::read(&mut Cursor::new(&packed), &DecodeLimits::new()).unwrap();
    let b = index.blocks()[4];
    let mut bad = packed.clone();
    bad[(b.offset + b.record_len - 2) as usize] ^= 0x40;
    let mut r = IndexedReader::new(Cursor::new(&bad)).unwrap();
    assert_eq!(read_span(&mut r, 0, 4000), &data[..4000]);
    r.seek(SeekFrom::Start(b.raw_offset + 10)).unwrap();
    assert!(r.read(&mut [0u8; 4]).is_err());
    assert_eq!(read_span(&mut r, 5000, 10_000), &data[5000..]);
}

#[test]
fn streaming_readers_read_past_the_index() {
    use subrange::format::TrailingData;
    use subrange::stream::{decompress_with_options, DecodeOptions};
    use subrange::Decompressor;
    let a = gauge_data(12, 7000);
    let b = gauge_data(13, 3000);
    let pa = container(&a, 1000, "static", IndexPolicy::Auto, &[]);
    let pb = container(&b, 1000, "adaptive", IndexPolicy::Always, &[100]);
    // Concatenated: both indexes are read and checked in passing.
    let mut both = pa.clone();
    both.extend_from_slice(&pb);
    let mut opts = DecodeOptions::new();
    opts.trailing(TrailingData::Concatenated);
    let mut want = a.clone();
    want.extend_from_slice(&b);
    assert_eq!(decompress_with_options(&both, &opts).unwrap(), want);
    let mut streamed = Vec::new();
    Decompressor::with_options(&both[..], &opts)
        .read_to_end(&mut streamed)
        .unwrap();
    assert_eq!(streamed, want);
    // Embedded: the reader stops just after the index.
    let mut embedded = pa.clone();
    embedded.extend_from_slice(b"rest of the stream");
    opts.trailing(TrailingData::Leave);
    let mut d = Decompressor::with_options(&embedded[..], &opts);
    let mut out = Vec::new();
    d.read_to_end(&mut out).unwrap();
    assert_eq!(out, a);
    assert_eq!(d.total_in(), pa.len() as u64);
    assert_eq!(d.into_inner(), b"rest of the stream");
    // A damaged index fails the streaming decoders too, after the data.
    let mut bad = pa.clone();
    let at = bad.len() - 20;
    bad[at] ^= 2;
    let mut out = Vec::new();
    let err = Decompressor::new(&bad[..])
        .read_to_end(&mut out)
        .unwrap_err();
    assert_eq!(err.kind(), std::io::ErrorKind::InvalidData);
    assert_eq!(out, a);
}

/// Files written before the block index existed (`tests/data/containers/`,
/// see the README there) decode as they did, read at random by a walk, and
/// are what the writer still writes without an index.
#[test]
fn containers_written_before_the_index_read_as_before() {
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/containers");
    let cases: [(&str, &str, u64, Vec<u8>); 4] = [
        (
            "gauge-csv-static-b4096",
            "static",
            4096,
            subrange::corpus::gauge_csv(71, 30_000),
        ),
        (
            "gauge-binary-adaptive-b1000",
            "adaptive",
            1000,
            subrange::corpus::gauge_binary(72, 12_000),
        ),
        (
            "random-static-b2048",
            "static",
            2048,
            subrange::corpus::random(73, 9000),
        ),
        (
            "text-order2-b16384",
            "order2",
            16384,
            subrange::corpus::text_like(74, 40_000),
        ),
    ];
    for (name, preset, block_size, data) in cases {
        let old = std::fs::read(dir.join(format!("{name}.sr"))).unwrap();
        assert_eq!(subrange::decompress(&old).unwrap(), data, "{name}");
        let end = subrange::format::inspect(&old[..]).unwrap().end.unwrap();
        assert!(end.block_count > 1 && end.index_len == 0, "{name}");
        assert_eq!(
            container(&data, block_size, preset, IndexPolicy::Never, &[]),
            old,
            "{name}"
        );
        let ranges = edge_ranges(&old, data.len() as u64);
        check_ranges(&data, &old, &ranges, IndexSource::Walked);
        // The same data written now carries an index and reads the same.
        let new = container(&data, block_size, preset, IndexPolicy::Auto, &[]);
        assert_eq!(
            new[..end.offset as usize],
            old[..end.offset as usize],
            "{name}"
        );
        check_ranges(&data, &new, &ranges, IndexSource::Recorded);
    }
}
