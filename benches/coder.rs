//! Range coder throughput per model and data kind, with flate2 beside it.
//!
//! Run: `cargo bench --bench coder`. Throughput is in bytes of input, so
//! criterion reports MB/s; compare each model's group against the flate2
//! entries of the same group and run.

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion, Throughput};
use std::hint::black_box;
use std::io::{Read, Write};

use subrange::coder::{
    decode_adaptive_lanes, decode_lanes, decode_table_lanes, encode_adaptive_lanes, encode_lanes,
    encode_table_lanes, encode_table_lanes_scalar, Decoder, Encoder,
};
use subrange::corpus;
use subrange::model::{AdaptiveModel, StepwiseModel, TableModel};

const SIZE: usize = 1 << 20;

fn flate(data: &[u8], level: u32) -> Vec<u8> {
    let mut e = flate2::write::DeflateEncoder::new(Vec::new(), flate2::Compression::new(level));
    e.write_all(data).unwrap();
    e.finish().unwrap()
}

fn unflate(data: &[u8], size: usize) -> Vec<u8> {
    let mut out = Vec::with_capacity(size);
    flate2::read::DeflateDecoder::new(data)
        .read_to_end(&mut out)
        .unwrap();
    out
}

fn bench_sets(c: &mut Criterion) {
    let sets = [
        ("text-like", corpus::text_like(3, SIZE)),
        ("gauge-csv", corpus::gauge_csv(1, SIZE)),
        ("skewed", corpus::skewed(4, SIZE)),
    ];
    for (name, data) in &sets {
        let mut group = c.benchmark_group(format!("encode/{name}"));
        group.throughput(Throughput::Bytes(data.len() as u64));
        group.sample_size(10);
        let table = TableModel::from_bytes_histogram(data, 12).unwrap();
        for lanes in [1usize, 4, 8, 16, 32] {
            group.bench_with_input(BenchmarkId::new("table", lanes), &lanes, |b, &lanes| {
                b.iter(|| encode_table_lanes(&table, black_box(data), lanes).unwrap())
            });
        }
        // The scalar steps the vector kernels are checked against.
        group.bench_function("table-scalar/32", |b| {
            b.iter(|| encode_table_lanes_scalar(&table, black_box(data), 32).unwrap())
        });
        group.bench_function("table-generic", |b| {
            b.iter(|| {
                let mut t = table.clone();
                encode_lanes(&mut t, black_box(data), 4).unwrap()
            })
        });
        group.bench_function("adaptive", |b| {
            b.iter(|| {
                let mut m = StepwiseModel::new(256).unwrap();
                let mut e = Encoder::with_sink(Vec::with_capacity(data.len()));
                for &x in black_box(data.as_slice()) {
                    e.encode(&mut m, u32::from(x)).unwrap();
                }
                e.finish().unwrap()
            })
        });
        for lanes in [1usize, 8, 32] {
            group.bench_with_input(BenchmarkId::new("refresh", lanes), &lanes, |b, &lanes| {
                b.iter(|| {
                    let mut m = AdaptiveModel::new(256).unwrap();
                    encode_adaptive_lanes(&mut m, black_box(data), lanes).unwrap()
                })
            });
        }
        for level in [1u32, 6, 9] {
            group.bench_with_input(BenchmarkId::new("flate2", level), &level, |b, &level| {
                b.iter(|| flate(black_box(data), level))
            });
        }
        group.finish();

        let mut group = c.benchmark_group(format!("decode/{name}"));
        group.throughput(Throughput::Bytes(data.len() as u64));
        group.sample_size(10);
        for lanes in [1usize, 4, 8, 16, 32] {
            let mut t = table.clone();
            let streams = encode_lanes(&mut t, data, lanes).unwrap();
            let views: Vec<&[u8]> = streams.iter().map(|s| s.as_slice()).collect();
            let mut out = vec![0u8; data.len()];
            group.bench_with_input(BenchmarkId::new("table", lanes), &lanes, |b, _| {
                b.iter(|| decode_table_lanes(&table, black_box(&views), &mut out).unwrap())
            });
            if lanes == 4 {
                group.bench_function("table-generic", |b| {
                    b.iter(|| {
                        let mut t = table.clone();
                        decode_lanes(&mut t, black_box(&views), &mut out).unwrap();
                    })
                });
            }
        }
        let coded = {
            let mut m = StepwiseModel::new(256).unwrap();
            let mut e = Encoder::new();
            for &x in data.iter() {
                e.encode(&mut m, u32::from(x)).unwrap();
            }
            e.finish().unwrap()
        };
        group.bench_function("adaptive", |b| {
            b.iter(|| {
                let mut m = StepwiseModel::new(256).unwrap();
                let mut d = Decoder::new(black_box(&coded)).unwrap();
                let mut sum = 0u32;
                for _ in 0..data.len() {
                    sum = sum.wrapping_add(d.decode(&mut m).unwrap());
                }
                sum
            })
        });
        for lanes in [1usize, 8, 32] {
            let streams =
                encode_adaptive_lanes(&mut AdaptiveModel::new(256).unwrap(), data, lanes).unwrap();
            let views: Vec<&[u8]> = streams.iter().map(|s| s.as_slice()).collect();
            let mut out = vec![0u8; data.len()];
            group.bench_with_input(BenchmarkId::new("refresh", lanes), &lanes, |b, _| {
                b.iter(|| {
                    let mut m = AdaptiveModel::new(256).unwrap();
                    decode_adaptive_lanes(&mut m, black_box(&views), &mut out).unwrap()
                })
            });
        }
        let deflated = flate(data, 6);
        group.bench_function("flate2", |b| {
            b.iter(|| unflate(black_box(&deflated), data.len()))
        });
        group.finish();
    }
}

criterion_group!(benches, bench_sets);
criterion_main!(benches);
