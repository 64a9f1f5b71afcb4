//! Helpers shared by every test binary (each `tests/<layer>/main.rs`
//! includes this module once): the crate's own seeded generator
//! ([`SplitMix64`], from `subrange::corpus`) with the few draws the tests add
//! ([`Draws`]), seeded data sets ([`gen`] for the pinned mix-engine inputs,
//! [`gauge_frames`] for radio frames; everything else uses
//! `subrange::corpus`), samplers and entropies, whole-sequence encode/decode
//! helpers, an unbounded natural-number type ([`nat`]), exact reference
//! coders ([`reference`]), a log-gamma ([`lgamma`]), proptest strategies
//! ([`strategies`]) and the codecs the primed frames are compared with
//! ([`frame_codecs`]).
//!
//! Each binary uses only part of it; the `dead_code` allowance sits on the
//! one `mod support;` line of each `main.rs`.

pub mod frame_codecs;
pub mod gauge_frames;
pub mod gen;
pub mod lgamma;
pub mod nat;
pub mod reference;
pub mod strategies;

use subrange::coder::{Decoder, Encoder};
use subrange::model::Model;

pub use subrange::corpus::SplitMix64;

/// Draws the tests take from a [`SplitMix64`] stream beside its own
/// `next_u64` and `below`.
pub trait Draws {
    /// A value in `0 .. n` (`n >= 1`).
    fn below_u32(&mut self, n: u32) -> u32;
    /// A fair coin: the top bit of the next draw.
    fn coin(&mut self) -> bool;
    /// A 1 with probability `ones / 2^16` (the top 16 bits of the next draw).
    fn bit(&mut self, ones: u32) -> bool;
    /// A skewed index in `0 .. n`: small indices are common (three nested
    /// uniform draws, a heavy-headed, roughly Zipf-like shape).
    fn zipf(&mut self, n: u64) -> u64;
    /// Uniform in `[0, 1)` (the top 53 bits of the next draw).
    fn unit(&mut self) -> f64;
    /// Roughly normal (sum of four uniforms, centred, unit variance).
    fn normal(&mut self) -> f64;
}

impl Draws for SplitMix64 {
    fn below_u32(&mut self, n: u32) -> u32 {
        assert!(n >= 1);
        self.below(u64::from(n)) as u32
    }

    fn coin(&mut self) -> bool {
        self.next_u64() >> 63 == 1
    }

    fn bit(&mut self, ones: u32) -> bool {
        ((self.next_u64() >> 48) as u32) < ones
    }

    fn zipf(&mut self, n: u64) -> u64 {
        let a = self.below(n) + 1;
        let b = self.below(a) + 1;
        self.below(b)
    }

    fn unit(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 / (1u64 << 53) as f64
    }

    fn normal(&mut self) -> f64 {
        let s: f64 = (0..4).map(|_| self.unit()).sum();
        (s - 2.0) * 3f64.sqrt()
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

/// Binary entropy in bits of a source that gives a 1 with probability `p`
/// (Cover & Thomas, "Elements of Information Theory", eq. 2.5; common
/// practice); 0 at `p <= 0` and `p >= 1`.
pub fn binary_entropy(p: f64) -> f64 {
    if p <= 0.0 || p >= 1.0 {
        0.0
    } else {
        -p * p.log2() - (1.0 - p) * (1.0 - p).log2()
    }
}

/// Bitwise CRC-32 (reflected polynomial 0xEDB88320, initial value and final
/// XOR 0xFFFFFFFF: the IEEE 802.3 checksum, common practice), written out
/// bit by bit as a reference independent of the crate's `crc32fast`.
pub fn crc32(data: &[u8]) -> u32 {
    let mut crc = 0xFFFF_FFFFu32;
    for &b in data {
        crc ^= u32::from(b);
        for _ in 0..8 {
            crc = if crc & 1 == 1 {
                (crc >> 1) ^ 0xEDB8_8320
            } else {
                crc >> 1
            };
        }
    }
    !crc
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
