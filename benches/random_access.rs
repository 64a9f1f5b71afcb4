//! Random access: 4 KiB read at a random offset of a 1 GiB container
//! (river-gauge readings, `static` preset, 1 MiB blocks) through the block
//! index, from a file. Beside it, the cost of the unit of work each read
//! implies: decoding one 1 MiB block with the same preset, and inflating
//! one 1 MiB deflate stream of the same data (flate2 level 6, the
//! baseline).
//!
//! The container is written once, streamed to
//! `target/bench-data/gauge-<MiB>MiB.sr` (memory: a few blocks), and kept
//! for later runs. `SUBRANGE_BENCH_MIB` sets its size in MiB (default
//! 1024); the data is generated 8 MiB at a time, so building 1 GiB takes
//! some seconds and about 400 MB of disk. The setup prints the index's
//! share of the container and the most blocks any read decoded.

mod support;

use std::fs::File;
use std::hint::black_box;
use std::io::{BufReader, BufWriter, Read, Seek, SeekFrom, Write};
use std::path::PathBuf;

use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use subrange::format::{inspect, BlockIndex, DecodeLimits, IndexSource};
use subrange::{compress, decompress, Compressor, IndexedReader, Options};
use support::{deflate, inflate};

/// Raw bytes per generated chunk.
const CHUNK: usize = 8 << 20;
/// Bytes per read.
const READ: usize = 4096;

/// The `i`-th chunk of the data: a day of readings from one station.
fn chunk(i: usize) -> Vec<u8> {
    subrange::corpus::gauge_csv(1000 + i as u64, CHUNK)
}

/// The container of `mib` MiB of readings, built unless already there.
fn container(mib: usize) -> PathBuf {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("target/bench-data");
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join(format!("gauge-{mib}MiB.sr"));
    let total = (mib as u64) << 20;
    let ok = File::open(&path)
        .ok()
        .and_then(|mut f| BlockIndex::read(&mut f, &DecodeLimits::new()).ok())
        .is_some_and(|ix| ix.total_raw() == total && ix.source() == IndexSource::Recorded);
    if !ok {
        eprintln!("writing {} ...", path.display());
        let tmp = path.with_extension("partial");
        let mut c = Compressor::new(BufWriter::new(File::create(&tmp).unwrap()), &Options::new());
        for i in 0..(mib << 20).div_ceil(CHUNK) {
            let data = chunk(i);
            let left = (total - c.total_in()) as usize;
            c.write_all(&data[..left.min(CHUNK)]).unwrap();
        }
        c.finish().unwrap().flush().unwrap();
        std::fs::rename(&tmp, &path).unwrap();
    }
    path
}

/// A 64-bit LCG (Knuth's MMIX constants; common practice).
fn next(state: &mut u64) -> u64 {
    *state = state
        .wrapping_mul(6364136223846793005)
        .wrapping_add(1442695040888963407);
    *state >> 11
}

fn bench(c: &mut Criterion) {
    let mib: usize = std::env::var("SUBRANGE_BENCH_MIB")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(1024);
    let path = container(mib);
    let file = File::open(&path).unwrap();
    let container_len = file.metadata().unwrap().len();
    let end = inspect(BufReader::new(File::open(&path).unwrap()))
        .map(|r| r.end.unwrap())
        .unwrap();
    eprintln!(
        "container: {} MiB -> {container_len} bytes; index {} bytes = {:.5} % of the container",
        mib,
        end.index_len,
        100.0 * end.index_len as f64 / container_len as f64
    );

    let mut reader = IndexedReader::new(BufReader::with_capacity(64 << 10, file)).unwrap();
    let len = reader.len();
    let mut buf = vec![0u8; READ];
    let mut state = 7u64;
    // The count the issue sets: at most two blocks per read.
    let mut most = 0;
    for _ in 0..200 {
        let at = next(&mut state) % (len - READ as u64);
        let before = reader.blocks_decoded();
        reader.seek(SeekFrom::Start(at)).unwrap();
        reader.read_exact(&mut buf).unwrap();
        most = most.max(reader.blocks_decoded() - before);
    }
    eprintln!("most blocks decoded by one 4 KiB read: {most}");
    assert!(most <= 2);

    let mut group = c.benchmark_group("random_access");
    group.sample_size(20);
    group.bench_function("read_4k_at_random_offset", |b| {
        b.iter(|| {
            let at = next(&mut state) % (len - READ as u64);
            reader.seek(SeekFrom::Start(at)).unwrap();
            reader.read_exact(black_box(&mut buf)).unwrap();
        })
    });

    // The unit of work: one 1 MiB block of the same data.
    let block = chunk(0)[..1 << 20].to_vec();
    group.throughput(Throughput::Bytes(block.len() as u64));
    let packed = compress(&block, Options::new().threads(1)).unwrap();
    group.bench_function("static/decode_1m_block", |b| {
        b.iter(|| decompress(black_box(&packed)).unwrap())
    });
    let deflated = deflate(&block, 6);
    group.bench_function("flate2-6/inflate_1m", |b| {
        b.iter(|| inflate(black_box(&deflated), block.len()))
    });
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
