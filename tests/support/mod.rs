//! Helpers shared by the integration tests: seeded data generators ([`gen`],
//! also used by the benches), a small seeded PRNG, samplers,
//! whole-sequence encode/decode helpers, an unbounded natural-number type
//! ([`nat`]), exact reference coders ([`reference`]) and a log-gamma
//! ([`lgamma`]).
//!
//! Every test binary compiles this module on its own and uses only part of
//! it, hence the `dead_code` allowance.
#![allow(dead_code)]

pub mod gen;
pub mod lgamma;
pub mod nat;
pub mod reference;
pub mod strategies;

use subrange::coder::{Decoder, Encoder};
use subrange::model::Model;

/// splitmix64: a 64-bit state advanced by the golden-ratio increment and
/// finalised by two xor-shift-multiply rounds (Steele, Lea & Flood, "Fast
/// splittable pseudorandom number generators", OOPSLA 2014; constants from
/// memory). Small, seeded and identical on every platform.
#[derive(Debug, Clone)]
pub struct SplitMix64(u64);

impl SplitMix64 {
    pub fn new(seed: u64) -> Self {
        SplitMix64(seed)
    }

    pub fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// A value in `0 .. n` (`n >= 1`) by the multiply-high method.
    pub fn below(&mut self, n: u64) -> u64 {
        assert!(n >= 1);
        ((u128::from(self.next_u64()) * u128::from(n)) >> 64) as u64
    }

    pub fn below_u32(&mut self, n: u32) -> u32 {
        self.below(u64::from(n)) as u32
    }

    pub fn coin(&mut self) -> bool {
        self.next_u64() >> 63 == 1
    }
}

/// Draws symbols from the exact distribution `freq[s] / Σ freq`: a uniform
/// slot of `0 .. Σ freq` mapped to the symbol whose cumulative range holds it.
#[derive(Debug, Clone)]
pub struct TableSampler {
    cum: Vec<u64>,
}

impl TableSampler {
    pub fn new(freq: &[u32]) -> Self {
        let mut cum = Vec::with_capacity(freq.len() + 1);
        let mut acc = 0u64;
        cum.push(0);
        for &f in freq {
            acc += u64::from(f);
            cum.push(acc);
        }
        assert!(acc > 0);
        TableSampler { cum }
    }

    pub fn total(&self) -> u64 {
        *self.cum.last().unwrap()
    }

    pub fn sample(&self, rng: &mut SplitMix64) -> u32 {
        let slot = rng.below(self.total());
        // Largest s with cum[s] <= slot.
        (self.cum.partition_point(|&c| c <= slot) - 1) as u32
    }
}

/// Entropy in bits per symbol of the distribution `freq / Σ freq`.
pub fn entropy_bits(freq: &[u32]) -> f64 {
    let total: f64 = freq.iter().map(|&f| f64::from(f)).sum();
    freq.iter()
        .filter(|&&f| f > 0)
        .map(|&f| {
            let p = f64::from(f) / total;
            -p * p.log2()
        })
        .sum()
}

/// Encodes `symbols` with one model and finishes the stream.
pub fn encode_all<M: Model>(model: &mut M, symbols: &[u32]) -> Vec<u8> {
    let mut enc = Encoder::new();
    for &s in symbols {
        enc.encode(model, s).expect("symbol must be codable");
    }
    enc.finish().expect("a Vec sink cannot fail")
}

/// Decodes `count` symbols with one model, then checks that the stream was
/// consumed exactly.
pub fn decode_all<M: Model>(model: &mut M, bytes: &[u8], count: usize) -> Vec<u32> {
    let mut dec = Decoder::new(bytes).expect("stream start");
    let out: Vec<u32> = (0..count)
        .map(|_| dec.decode(model).expect("decode"))
        .collect();
    dec.finish().expect("stream consumed exactly");
    out
}

/// Length of the longest run of `byte` in `bytes`.
pub fn longest_run(bytes: &[u8], byte: u8) -> usize {
    let mut best = 0;
    let mut run = 0;
    for &b in bytes {
        if b == byte {
            run += 1;
            best = best.max(run);
        } else {
            run = 0;
        }
    }
    best
}
