//! Throughput of the MQ coder on about a million binary decisions of mixed
//! probability, in decisions per second.
//!
//! The decisions are synthetic and seeded: eight sources of different bias
//! (like the status flags a gauging station sends with each reading: mostly
//! quiet, some nearly even), each coded in its own context, interleaved in a
//! pseudo-random order.

use criterion::{black_box, criterion_group, criterion_main, BenchmarkId, Criterion, Throughput};
use subrange::mq::{MqContexts, MqDecoder, MqEncoder, Termination};

const DECISIONS: usize = 1 << 20;

/// Probability of a 1 for each context, in 1/65536.
const ONES: [u32; 8] = [32768, 19661, 9830, 5243, 2621, 1311, 655, 63570];

/// SplitMix64 (common practice).
struct SplitMix(u64);

impl SplitMix {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }
}

struct Input {
    contexts: Vec<usize>,
    bits: Vec<bool>,
}

fn input() -> Input {
    let mut rng = SplitMix(0x00C0_FFEE);
    let mut contexts = Vec::with_capacity(DECISIONS);
    let mut bits = Vec::with_capacity(DECISIONS);
    for _ in 0..DECISIONS {
        let r = rng.next();
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
    // The crate's own range coder binary step belongs here, side by side on
    // the same input, once `coder` provides it.
    group.finish();
}

criterion_group!(benches, binary_coders);
criterion_main!(benches);
