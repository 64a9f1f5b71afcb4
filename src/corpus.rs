//! The built-in demo corpus: synthetic, seeded data sets for benchmarks and
//! examples.
//!
//! The scenario is a network of river-gauging stations reporting water level,
//! flow and water temperature over a narrow radio link. Every generator is a
//! pure function of its seed and size (a SplitMix64 stream, common practice),
//! so benchmarks compare like with like across machines and releases. This is
//! demonstration data only; the test suite checks the coder against published
//! references, not against these sets.

use alloc::format;
use alloc::string::String;
use alloc::vec::Vec;

/// A deterministic pseudo-random stream (SplitMix64; common practice).
#[derive(Debug, Clone)]
pub struct SplitMix64(u64);

impl SplitMix64 {
    /// A stream started from `seed`.
    pub fn new(seed: u64) -> Self {
        SplitMix64(seed)
    }

    /// The next 64 random bits.
    pub fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// A value in `0 .. n` (`n > 0`).
    pub fn below(&mut self, n: u64) -> u64 {
        ((u128::from(self.next_u64()) * u128::from(n)) >> 64) as u64
    }

    /// A signed step in `-k ..= k`.
    pub fn step(&mut self, k: i64) -> i64 {
        self.below(2 * k as u64 + 1) as i64 - k
    }
}

/// One named data set of the demo corpus.
#[derive(Debug, Clone)]
pub struct DataSet {
    /// Short name, e.g. `gauge-csv`.
    pub name: &'static str,
    /// What kind of data it is.
    pub kind: DataKind,
    /// The bytes.
    pub data: Vec<u8>,
}

/// The kind of a demo data set (which targets apply to it).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[non_exhaustive]
pub enum DataKind {
    /// Text or structured records: where models should beat general compressors.
    Structured,
    /// Memoryless skewed bytes: where order-0 entropy is the bound.
    Skewed,
    /// Uniform random bytes: incompressible.
    Random,
}

/// Telemetry records as text lines, one reading per station per 10 minutes:
/// `station,minute,level_cm,flow_l_s,temp_dC`.
pub fn gauge_csv(seed: u64, size: usize) -> Vec<u8> {
    let mut rng = SplitMix64::new(seed);
    let stations = 12usize;
    let mut level: Vec<i64> = (0..stations).map(|_| 80 + rng.below(200) as i64).collect();
    let mut temp: Vec<i64> = (0..stations).map(|_| 60 + rng.below(80) as i64).collect();
    let mut out = String::with_capacity(size + 64);
    let mut minute = 0u64;
    while out.len() < size {
        for s in 0..stations {
            level[s] =
                (level[s] + rng.step(2) + if rng.below(50) == 0 { 12 } else { 0 }).clamp(20, 900);
            temp[s] = (temp[s] + rng.step(1)).clamp(0, 300);
            let flow = level[s] * level[s] / 40 + rng.below(3) as i64;
            out.push_str(&format!(
                "G{:03},{},{},{},{}\n",
                100 + s * 7,
                minute,
                level[s],
                flow,
                temp[s]
            ));
        }
        minute += 10;
    }
    out.truncate(size);
    out.into_bytes()
}

/// Telemetry as packed binary frames: station (1 byte), level delta and
/// temperature delta (1 byte each, biased), flow (2 bytes big-endian).
pub fn gauge_binary(seed: u64, size: usize) -> Vec<u8> {
    let mut rng = SplitMix64::new(seed);
    let mut out = Vec::with_capacity(size + 8);
    let mut level = [300i64; 8];
    while out.len() < size {
        for (s, l) in level.iter_mut().enumerate() {
            let d = rng.step(3);
            *l = (*l + d).clamp(0, 2000);
            let flow = (*l * *l / 64) as u16;
            out.push(s as u8);
            out.push((d + 128) as u8);
            out.push((rng.step(1) + 128) as u8);
            out.extend_from_slice(&flow.to_be_bytes());
        }
    }
    out.truncate(size);
    out
}

/// English-like text: words drawn from a fixed vocabulary with a skewed
/// (Zipf-like) distribution, in sentences about the gauge network.
pub fn text_like(seed: u64, size: usize) -> Vec<u8> {
    const WORDS: &[&str] = &[
        "the",
        "river",
        "gauge",
        "station",
        "level",
        "flow",
        "rose",
        "fell",
        "water",
        "of",
        "and",
        "at",
        "to",
        "in",
        "was",
        "is",
        "after",
        "rain",
        "upstream",
        "bridge",
        "weir",
        "reading",
        "temperature",
        "steady",
        "night",
        "morning",
        "report",
        "radio",
        "link",
        "sensor",
        "battery",
        "flood",
        "warning",
        "channel",
        "bank",
        "silt",
        "measured",
        "above",
        "below",
        "normal",
        "high",
        "low",
        "crew",
        "checked",
        "logger",
        "cable",
        "valley",
        "north",
        "south",
        "east",
        "west",
        "spring",
        "summer",
        "autumn",
        "winter",
        "storm",
        "dry",
        "wet",
        "season",
    ];
    let mut rng = SplitMix64::new(seed);
    let mut out = String::with_capacity(size + 32);
    let mut start = true;
    while out.len() < size {
        // Zipf-like: index = floor(n * u^3)
        let u = rng.below(1 << 20) as f64 / (1u64 << 20) as f64;
        let i = ((WORDS.len() as f64) * u * u * u) as usize;
        let w = WORDS[i.min(WORDS.len() - 1)];
        if start {
            let mut c = w.chars();
            if let Some(f) = c.next() {
                out.extend(f.to_uppercase());
                out.push_str(c.as_str());
            }
            start = false;
        } else {
            out.push_str(w);
        }
        match rng.below(12) {
            0 => {
                out.push_str(". ");
                start = true;
            }
            1 => out.push_str(", "),
            _ => out.push(' '),
        }
        if rng.below(90) == 0 {
            out.push('\n');
        }
    }
    out.truncate(size);
    out.into_bytes()
}

/// Memoryless bytes with a geometric distribution (p(k) ∝ 0.7^k).
pub fn skewed(seed: u64, size: usize) -> Vec<u8> {
    let mut rng = SplitMix64::new(seed);
    (0..size)
        .map(|_| {
            let mut k = 0u8;
            while k < 255 && rng.below(10) < 7 {
                k += 1;
            }
            k
        })
        .collect()
}

/// Uniform random bytes.
pub fn random(seed: u64, size: usize) -> Vec<u8> {
    let mut rng = SplitMix64::new(seed);
    let mut out = Vec::with_capacity(size + 8);
    while out.len() < size {
        out.extend_from_slice(&rng.next_u64().to_le_bytes());
    }
    out.truncate(size);
    out
}

/// The whole demo corpus with `size` bytes per data set.
///
/// # Example
///
/// ```
/// let corpus = subrange::corpus::demo(4096);
/// assert!(corpus.iter().any(|d| d.name == "gauge-csv"));
/// assert!(corpus.iter().all(|d| d.data.len() == 4096));
/// ```
pub fn demo(size: usize) -> Vec<DataSet> {
    alloc::vec![
        DataSet {
            name: "gauge-csv",
            kind: DataKind::Structured,
            data: gauge_csv(1, size)
        },
        DataSet {
            name: "gauge-binary",
            kind: DataKind::Structured,
            data: gauge_binary(2, size)
        },
        DataSet {
            name: "text-like",
            kind: DataKind::Structured,
            data: text_like(3, size)
        },
        DataSet {
            name: "skewed",
            kind: DataKind::Skewed,
            data: skewed(4, size)
        },
        DataSet {
            name: "random",
            kind: DataKind::Random,
            data: random(5, size)
        },
    ]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn deterministic_and_sized() {
        for d in demo(10_000) {
            assert_eq!(d.data.len(), 10_000, "{}", d.name);
        }
        assert_eq!(gauge_csv(7, 500), gauge_csv(7, 500));
        assert_ne!(gauge_csv(7, 500), gauge_csv(8, 500));
    }
}
