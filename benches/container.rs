//! Container throughput: compress and decompress ~8 MB of the demo corpus
//! with every preset on one and two threads, with flate2 (level 6) beside
//! them as the baseline. Compressed sizes are printed once per preset.

mod support;

use std::hint::black_box;

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion, Throughput};
use subrange::preset::Preset;
use subrange::stream::{decompress_with_options, DecodeOptions};
use subrange::{compress, Options};
use support::{deflate, inflate};

/// ~8 MB: the five demo data sets of 1.6 MB each, back to back.
fn corpus() -> Vec<u8> {
    subrange::corpus::demo(8_000_000 / 5)
        .into_iter()
        .flat_map(|d| d.data)
        .collect()
}

fn bench(c: &mut Criterion) {
    let data = corpus();
    let mut group = c.benchmark_group("container");
    group.sample_size(10);
    group.throughput(Throughput::Bytes(data.len() as u64));

    let deflated = deflate(&data, 6);
    eprintln!(
        "flate2-6: {} -> {} bytes (ratio {:.3})",
        data.len(),
        deflated.len(),
        deflated.len() as f64 / data.len() as f64
    );
    group.bench_function("flate2-6/compress", |b| {
        b.iter(|| deflate(black_box(&data), 6))
    });
    group.bench_function("flate2-6/decompress", |b| {
        b.iter(|| inflate(black_box(&deflated), data.len()))
    });

    for preset in Preset::all() {
        let mut opts = Options::new();
        opts.preset(preset);
        let packed = compress(&data, &opts).unwrap();
        eprintln!(
            "{}: {} -> {} bytes (ratio {:.3}, {:.3} of flate2-6)",
            preset.name(),
            data.len(),
            packed.len(),
            packed.len() as f64 / data.len() as f64,
            packed.len() as f64 / deflated.len() as f64
        );
        for threads in [1usize, 2] {
            opts.threads(threads);
            group.bench_with_input(
                BenchmarkId::new(format!("{}/compress", preset.name()), threads),
                &opts,
                |b, opts| b.iter(|| compress(black_box(&data), opts).unwrap()),
            );
            let mut dopts = DecodeOptions::new();
            dopts.threads(threads);
            group.bench_with_input(
                BenchmarkId::new(format!("{}/decompress", preset.name()), threads),
                &dopts,
                |b, dopts| b.iter(|| decompress_with_options(black_box(&packed), dopts).unwrap()),
            );
        }
    }
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
