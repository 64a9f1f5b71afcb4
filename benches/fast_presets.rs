//! The fast presets (`static`, `adaptive`) as one-shot calls on one thread:
//! compress and decompress 8 MiB of each kind of data, flate2 at levels 1
//! and 6 beside them in the same group as the baseline. Sizes are printed
//! once per preset and data set.
//!
//! Run: `cargo bench --bench fast_presets`; criterion reports MB/s of
//! input. Whole-process figures against `gzip` on real files come from
//! `scripts/fast-presets.sh`.

mod support;

use std::hint::black_box;

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion, Throughput};
use subrange::preset::Preset;
use subrange::stream::{decompress_with_options, DecodeOptions};
use subrange::{compress, corpus, Options};
use support::{deflate, inflate};

const SIZE: usize = 8 << 20;

fn bench(c: &mut Criterion) {
    let sets = [
        ("text-like", corpus::text_like(21, SIZE)),
        ("gauge-csv", corpus::gauge_csv(22, SIZE)),
        ("gauge-binary", corpus::gauge_binary(23, SIZE)),
        ("skewed", corpus::skewed(24, SIZE)),
    ];
    for (name, data) in &sets {
        let mut group = c.benchmark_group(format!("fast-presets/{name}"));
        group.sample_size(10);
        group.throughput(Throughput::Bytes(data.len() as u64));
        for level in [1u32, 6] {
            let packed = deflate(data, level);
            group.bench_function(BenchmarkId::new("flate2/compress", level), |b| {
                b.iter(|| deflate(black_box(data), level))
            });
            group.bench_function(BenchmarkId::new("flate2/decompress", level), |b| {
                b.iter(|| inflate(black_box(&packed), data.len()))
            });
        }
        for preset in ["static", "adaptive"] {
            let mut opts = Options::new();
            opts.preset(Preset::from_name(preset).unwrap()).threads(1);
            let mut dec = DecodeOptions::new();
            dec.threads(1);
            let packed = compress(data, &opts).unwrap();
            println!("{name} {preset}: {} -> {} bytes", data.len(), packed.len());
            group.bench_function(format!("{preset}/compress"), |b| {
                b.iter(|| compress(black_box(data), &opts).unwrap())
            });
            group.bench_function(format!("{preset}/decompress"), |b| {
                b.iter(|| decompress_with_options(black_box(&packed), &dec).unwrap())
            });
        }
        group.finish();
    }
}

criterion_group!(benches, bench);
criterion_main!(benches);
