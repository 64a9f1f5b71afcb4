//! Seeded synthetic data for the mix-engine tests and benches: the inputs of
//! the pinned streams (`tests/mix/mix_stable.rs`, `tests/mix/history.rs`),
//! so these bytes must never change.
//!
//! Demo data from the project's scenario: river-gauging stations sending
//! water level, flow and temperature readings (telemetry records), and
//! English-like report text about them. Each generator is a pure function of
//! its seed and size drawn from the crate's [`SplitMix64`], with the
//! argument order of `subrange::corpus` (`seed`, then `size`). The data sets
//! differ from the corpus's own `gauge_csv`, `text_like` and `random` (a
//! larger vocabulary with bigram preferences; timestamped records; one byte
//! a draw), which is why they are kept beside it.
use super::{Draws, SplitMix64};

const ONSETS: &[&str] = &[
    "b", "c", "d", "f", "g", "h", "l", "m", "n", "p", "r", "s", "t", "v", "w", "st", "tr", "gr",
    "fl", "br", "ch", "sh", "th", "wh", "",
];
const VOWELS: &[&str] = &["a", "e", "i", "o", "u", "ea", "ou", "ai", "ee", "oo"];
const CODAS: &[&str] = &[
    "", "", "n", "r", "s", "t", "l", "nd", "st", "ng", "ck", "rd", "m",
];
const DOMAIN: &[&str] = &[
    "river",
    "gauge",
    "station",
    "level",
    "flow",
    "water",
    "temperature",
    "reading",
    "upstream",
    "downstream",
    "bank",
    "flood",
    "weir",
    "channel",
    "rain",
    "rose",
    "fell",
    "steady",
    "metres",
    "cubic",
    "per",
    "second",
    "the",
    "of",
    "and",
    "at",
    "was",
    "is",
    "in",
    "to",
    "a",
    "on",
];

/// English-like text: a Zipf-distributed vocabulary of pseudo-words and
/// scenario words, with a bigram preference, sentences and line breaks.
pub fn text(seed: u64, len: usize) -> Vec<u8> {
    let mut rng = SplitMix64::new(seed);
    let mut vocab: Vec<String> = DOMAIN.iter().map(|s| s.to_string()).collect();
    while vocab.len() < 3000 {
        let syllables = 1 + rng.zipf(4) as usize;
        let mut w = String::new();
        for _ in 0..syllables {
            w.push_str(ONSETS[rng.below(ONSETS.len() as u64) as usize]);
            w.push_str(VOWELS[rng.below(VOWELS.len() as u64) as usize]);
            w.push_str(CODAS[rng.below(CODAS.len() as u64) as usize]);
        }
        vocab.push(w);
    }
    // Each word has a few favourite successors.
    let follow: Vec<[u64; 4]> = (0..vocab.len())
        .map(|_| core::array::from_fn(|_| rng.zipf(vocab.len() as u64)))
        .collect();
    let mut out = Vec::with_capacity(len + 100);
    let mut line = 0usize;
    let mut prev = 0usize;
    let mut start = true;
    while out.len() < len {
        let w = if rng.below(2) == 0 {
            follow[prev][rng.below(4) as usize] as usize
        } else {
            rng.zipf(vocab.len() as u64) as usize
        };
        let word = vocab[w].as_bytes();
        if start {
            out.push(word[0].to_ascii_uppercase());
            out.extend_from_slice(&word[1..]);
            start = false;
        } else {
            out.extend_from_slice(word);
        }
        line += word.len();
        prev = w;
        let r = rng.below(100);
        if r < 8 {
            out.push(b'.');
            start = true;
        } else if r < 12 {
            out.push(b',');
        }
        if line > 68 {
            out.push(b'\n');
            line = 0;
        } else {
            out.push(b' ');
            line += 1;
        }
    }
    out.truncate(len);
    out
}

/// Telemetry records: one CSV line per station and 15-minute step, with
/// random-walk water level, flow and temperature.
pub fn telemetry(seed: u64, len: usize) -> Vec<u8> {
    let mut rng = SplitMix64::new(seed);
    let stations = 12usize;
    let mut level: Vec<i64> = (0..stations)
        .map(|_| 500 + rng.below(2000) as i64)
        .collect();
    let mut flow: Vec<i64> = (0..stations)
        .map(|_| 100 + rng.below(5000) as i64)
        .collect();
    let mut temp: Vec<i64> = (0..stations).map(|_| 40 + rng.below(120) as i64).collect();
    let mut out = Vec::with_capacity(len + 100);
    out.extend_from_slice(b"time,station,level_mm,flow_l_s,temp_dc,status\n");
    let mut minutes = 0u64;
    while out.len() < len {
        let (day, rem) = (minutes / 1440, minutes % 1440);
        for s in 0..stations {
            level[s] = (level[s] + rng.below(7) as i64 - 3).max(0);
            flow[s] = (flow[s] + rng.below(41) as i64 - 20).max(0);
            if rng.below(4) == 0 {
                temp[s] = (temp[s] + rng.below(3) as i64 - 1).clamp(0, 300);
            }
            let status = if rng.below(50) == 0 { "CHK" } else { "OK" };
            let line = format!(
                "2031-{:02}-{:02}T{:02}:{:02}Z,RG{:03},{},{},{}.{},{}\n",
                1 + (day / 28) % 12,
                1 + day % 28,
                rem / 60,
                rem % 60,
                101 + s * 7,
                level[s],
                flow[s],
                temp[s] / 10,
                temp[s] % 10,
                status
            );
            out.extend_from_slice(line.as_bytes());
        }
        minutes += 15;
    }
    out.truncate(len);
    out
}

/// Uniformly random bytes.
pub fn random(seed: u64, len: usize) -> Vec<u8> {
    let mut rng = SplitMix64::new(seed);
    (0..len).map(|_| rng.next_u64() as u8).collect()
}

/// Empirical order-2 conditional entropy of `data`, in bits (total):
/// `Σ over contexts (a, b) and bytes c of n(a,b,c)·log2(n(a,b)/n(a,b,c))`.
/// The first two bytes are counted with their shorter contexts.
pub fn order2_entropy_bits(data: &[u8]) -> f64 {
    use std::collections::HashMap;
    let mut ctx: HashMap<u32, u64> = HashMap::new();
    let mut full: HashMap<u32, u64> = HashMap::new();
    for i in 0..data.len() {
        let a = if i >= 2 {
            u32::from(data[i - 2]) | 0x100
        } else {
            0
        };
        let b = if i >= 1 {
            u32::from(data[i - 1]) | 0x100
        } else {
            0
        };
        let c = (a << 9) | b;
        *ctx.entry(c).or_default() += 1;
        *full.entry((c << 8) | u32::from(data[i])).or_default() += 1;
    }
    full.iter()
        .map(|(&k, &n)| {
            let total = ctx[&(k >> 8)] as f64;
            n as f64 * (total / n as f64).log2()
        })
        .sum()
}
