//! Throughput of the MQ coder on about a million binary decisions of mixed
//! probability, in decisions per second.
//!
//! The decisions are synthetic and seeded: eight sources of different bias
//! (like the status flags a gauging station sends with each reading: mostly
//! quiet, some nearly even), each coded in its own context, interleaved in a
//! pseudo-random order.
//!
//! Beside it, on the same decisions: the crate's range coder binary step
//! driven by one shift-update bit predictor per context. Sizes of both
//! streams are printed once (the ratio comparison), criterion measures speed.

use criterion::{black_box, criterion_group, criterion_main, BenchmarkId, Criterion, Throughput};
use subrange::coder::{Decoder, Encoder};
use subrange::corpus::SplitMix64;
use subrange::model::{decode_with, encode_with, ShiftPredictor};
use subrange::mq::{MqContexts, MqDecoder, MqEncoder, Termination};

const DECISIONS: usize = 1 << 20;

/// Probability of a 1 for each context, in 1/65536.
const ONES: [u32; 8] = [32768, 19661, 9830, 5243, 2621, 1311, 655, 63570];

struct Input {
    contexts: Vec<usize>,
    bits: Vec<bool>,
}

fn input() -> Input {
    let mut rng = SplitMix64::new(0x00C0_FFEE);
    let mut contexts = Vec::with_capacity(DECISIONS);
    let mut bits = Vec::with_capacity(DECISIONS);
    for _ in 0..DECISIONS {
        let r = rng.next_u64();
        let cx = (r & 7) as usize;
        contexts.push(cx);
        bits.push(((r >> 48) as u32) < ONES[cx]);
    }
    Input { contexts, bits }
}

fn encode(input: &Input) -> Vec<u8> {
    let mut contexts = MqContexts::new(ONES.len());
    let mut encoder = MqEncoder::new(Vec::with_capacity(DECISIONS / 8));
    for (&cx, &bit) in input.contexts.iter().zip(&input.bits) {
        encoder.encode(&mut contexts, cx, bit).unwrap();
    }
    encoder.finish(Termination::Wavelet)
}

fn decode(stream: &[u8], input: &Input) -> usize {
    let mut contexts = MqContexts::new(ONES.len());
    let mut decoder = MqDecoder::new(stream);
    let mut ones = 0;
    for &cx in &input.contexts {
        ones += usize::from(decoder.decode(&mut contexts, cx).unwrap());
    }
    ones
}

fn predictors() -> Vec<ShiftPredictor> {
    (0..ONES.len())
        .map(|_| ShiftPredictor::new(5).unwrap())
        .collect()
}

fn range_encode(input: &Input) -> Vec<u8> {
    let mut preds = predictors();
    let mut encoder = Encoder::with_sink(Vec::with_capacity(DECISIONS / 8));
    for (&cx, &bit) in input.contexts.iter().zip(&input.bits) {
        encode_with(&mut encoder, &mut preds[cx], bit).unwrap();
    }
    encoder.finish().unwrap()
}

fn range_decode(stream: &[u8], input: &Input) -> usize {
    let mut preds = predictors();
    let mut decoder = Decoder::new(stream).unwrap();
    let mut ones = 0;
    for &cx in &input.contexts {
        ones += usize::from(decode_with(&mut decoder, &mut preds[cx]).unwrap());
    }
    ones
}

/// The entropy of the decisions given their context, in bytes (the bound
/// both coders approach).
fn entropy_bytes(input: &Input) -> f64 {
    let mut n = [[0u64; 2]; 8];
    for (&cx, &bit) in input.contexts.iter().zip(&input.bits) {
        n[cx][usize::from(bit)] += 1;
    }
    n.iter()
        .map(|c| {
            let t = (c[0] + c[1]) as f64;
            c.iter()
                .filter(|&&k| k > 0)
                .map(|&k| -(k as f64) * (k as f64 / t).log2())
                .sum::<f64>()
        })
        .sum::<f64>()
        / 8.0
}

fn binary_coders(c: &mut Criterion) {
    let input = input();
    let stream = encode(&input);
    let expected_ones = input.bits.iter().filter(|&&b| b).count();
    assert_eq!(decode(&stream, &input), expected_ones);

    let mut group = c.benchmark_group("binary_mixed");
    group.throughput(Throughput::Elements(DECISIONS as u64));
    group.bench_function(BenchmarkId::new("mq_encode", DECISIONS), |b| {
        b.iter(|| encode(black_box(&input)))
    });
    group.bench_function(BenchmarkId::new("mq_decode", DECISIONS), |b| {
        b.iter(|| decode(black_box(&stream), black_box(&input)))
    });
    let ranged = range_encode(&input);
    assert_eq!(range_decode(&ranged, &input), expected_ones);
    eprintln!(
        "binary_mixed sizes: entropy {:.0} B, mq {} B ({:.4}x), range+shift {} B ({:.4}x)",
        entropy_bytes(&input),
        stream.len(),
        stream.len() as f64 / entropy_bytes(&input),
        ranged.len(),
        ranged.len() as f64 / entropy_bytes(&input),
    );
    group.bench_function(BenchmarkId::new("range_shift_encode", DECISIONS), |b| {
        b.iter(|| range_encode(black_box(&input)))
    });
    group.bench_function(BenchmarkId::new("range_shift_decode", DECISIONS), |b| {
        b.iter(|| range_decode(black_box(&ranged), black_box(&input)))
    });
    group.finish();
}

criterion_group!(benches, binary_coders);
criterion_main!(benches);
