//! Throughput of the order-2 and mix engines beside flate2 level 9.
//!
//! Data: ~1 MB of seeded synthetic English-like text and river-gauge
//! telemetry records (see tests/support/gen.rs). Before timing, each group
//! prints the coded sizes as ratios against flate2 level 9 and, for the
//! order-2 engine, against the data's empirical order-2 conditional entropy.

mod support;
#[allow(dead_code)]
#[path = "../tests/support/mod.rs"]
mod test_support;

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion, Throughput};
use subrange::model::cm::{
    decode_mix, decode_order2, encode_mix, encode_order2, MixParams, Order2Params,
};

use support::{deflate, inflate};
use test_support::gen;

const LEN: usize = 1 << 20;

fn bench(c: &mut Criterion) {
    let p2 = Order2Params::default();
    let pm = MixParams::default();
    for (name, data) in [
        ("text", gen::text(1, LEN)),
        ("telemetry", gen::telemetry(2, LEN)),
    ] {
        let fl = deflate(&data, 9);
        let order2 = encode_order2(&data, &p2).unwrap();
        let mix = encode_mix(&data, &pm).unwrap();
        let h2 = gen::order2_entropy_bits(&data) / 8.0;
        eprintln!(
            "{name}: {} bytes; flate2-9 {} ({:.4}); order2 {} ({:.3}× flate2, {:.3}× H2); mix {} ({:.3}× flate2)",
            data.len(),
            fl.len(),
            fl.len() as f64 / data.len() as f64,
            order2.len(),
            order2.len() as f64 / fl.len() as f64,
            order2.len() as f64 / h2,
            mix.len(),
            mix.len() as f64 / fl.len() as f64,
        );
        let mut g = c.benchmark_group(name);
        g.throughput(Throughput::Bytes(data.len() as u64));
        g.sample_size(10);
        g.bench_function(BenchmarkId::new("flate2-9", "compress"), |b| {
            b.iter(|| deflate(&data, 9))
        });
        g.bench_function(BenchmarkId::new("flate2-9", "decompress"), |b| {
            b.iter(|| inflate(&fl, data.len()))
        });
        g.bench_function(BenchmarkId::new("order2", "encode"), |b| {
            b.iter(|| encode_order2(&data, &p2).unwrap())
        });
        g.bench_function(BenchmarkId::new("order2", "decode"), |b| {
            b.iter(|| decode_order2(&order2, data.len(), &p2).unwrap())
        });
        g.bench_function(BenchmarkId::new("mix", "encode"), |b| {
            b.iter(|| encode_mix(&data, &pm).unwrap())
        });
        g.bench_function(BenchmarkId::new("mix", "decode"), |b| {
            b.iter(|| decode_mix(&mix, data.len(), &pm).unwrap())
        });
        g.finish();
    }
}

criterion_group!(benches, bench);
criterion_main!(benches);
