//! Two small models for the coder's own tests, so that the coder's tests
//! need nothing from the model layer above: [`TestTable`], a fixed table
//! built from counts, and [`Segmented`], an adaptive table rebuilt from its
//! counts after every segment of a fixed length.
//!
//! Both keep the [`LaneTable`] contract: a power-of-two total, every symbol
//! with a count codable with a frequency of at least 1, the set of codable
//! symbols fixed.

use alloc::vec;
use alloc::vec::Vec;

use crate::coder::{LaneTable, Model, Span};
use crate::error::Result;

/// Frequencies summing to `2^log2_total` from `counts`: `1 + c·(T − m)/C`
/// for each of the `m` symbols with a count `c > 0` out of `C`, the
/// rounding's remainder added to the most frequent symbol.
fn quantize(counts: &[u64], log2_total: u32) -> Result<(Vec<u32>, Vec<u32>)> {
    let total = 1u64 << log2_total;
    let codable = counts.iter().filter(|&&c| c > 0).count() as u64;
    let sum: u64 = counts.iter().sum();
    if codable == 0 || codable > total || log2_total > 16 {
        return Err(crate::Error::invalid_parameter(
            "counts",
            "need 1 ..= 2^log2_total symbols with a count",
        ));
    }
    let mut freq: Vec<u32> = counts
        .iter()
        .map(|&c| {
            if c == 0 {
                0
            } else {
                (1 + c * (total - codable) / sum) as u32
            }
        })
        .collect();
    let given: u64 = freq.iter().map(|&f| u64::from(f)).sum();
    let top = (0..counts.len()).max_by_key(|&s| counts[s]).unwrap_or(0);
    freq[top] += (total - given) as u32;
    let mut cum = Vec::with_capacity(freq.len() + 1);
    let mut acc = 0;
    cum.push(0);
    for &f in &freq {
        acc += f;
        cum.push(acc);
    }
    Ok((freq, cum))
}

fn span_of(freq: &[u32], cum: &[u32], symbol: u32) -> Option<Span> {
    let s = symbol as usize;
    (s < freq.len() && freq[s] > 0).then(|| Span::new(cum[s], freq[s]))
}

fn locate_in(freq: &[u32], cum: &[u32], target: u32) -> (u32, Span) {
    let s = cum[1..].partition_point(|&c| c <= target);
    (s as u32, Span::new(cum[s], freq[s]))
}

/// A fixed table over the symbols `0 .. counts.len()`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub(crate) struct TestTable {
    freq: Vec<u32>,
    cum: Vec<u32>,
    log2_total: u32,
}

impl TestTable {
    /// A table of `counts` with a total of `2^log2_total`.
    pub(crate) fn from_counts(counts: &[u64], log2_total: u32) -> Result<Self> {
        let (freq, cum) = quantize(counts, log2_total)?;
        Ok(TestTable {
            freq,
            cum,
            log2_total,
        })
    }

    /// A 256-symbol table of the byte counts of `data`.
    pub(crate) fn from_bytes(data: &[u8], log2_total: u32) -> Result<Self> {
        let mut counts = vec![0u64; 256];
        for &b in data {
            counts[usize::from(b)] += 1;
        }
        Self::from_counts(&counts, log2_total)
    }
}

impl Model for TestTable {
    fn alphabet_size(&self) -> u32 {
        self.freq.len() as u32
    }
    fn total(&self) -> u32 {
        1 << self.log2_total
    }
    fn span(&self, symbol: u32) -> Option<Span> {
        span_of(&self.freq, &self.cum, symbol)
    }
    fn locate(&self, target: u32) -> (u32, Span) {
        locate_in(&self.freq, &self.cum, target)
    }
}

impl LaneTable for TestTable {
    fn frequencies(&self) -> &[u32] {
        &self.freq
    }
    fn cumulative(&self) -> &[u32] {
        &self.cum
    }
    fn log2_total(&self) -> u32 {
        self.log2_total
    }
}

/// An adaptive table: counts start at 1 for every symbol and learn every
/// coded symbol; the table is rebuilt from them after each `period`
/// symbols.
#[derive(Clone, Debug, PartialEq, Eq)]
pub(crate) struct Segmented {
    counts: Vec<u64>,
    table: TestTable,
    period: u64,
    left: u64,
}

impl Segmented {
    /// A model over `alphabet` symbols (at most 256) with a total of
    /// `2^log2_total`, refreshed every `period` symbols.
    pub(crate) fn new(alphabet: usize, log2_total: u32, period: u64) -> Self {
        let counts = vec![1u64; alphabet];
        let table = TestTable::from_counts(&counts, log2_total).expect("a valid table");
        Segmented {
            counts,
            table,
            period,
            left: period,
        }
    }

    fn learn(&mut self, symbol: u8) {
        self.counts[usize::from(symbol)] += 1;
        self.left -= 1;
        if self.left == 0 {
            self.table =
                TestTable::from_counts(&self.counts, self.table.log2_total).expect("a valid table");
            self.left = self.period;
        }
    }
}

impl Model for Segmented {
    fn alphabet_size(&self) -> u32 {
        self.table.alphabet_size()
    }
    fn total(&self) -> u32 {
        self.table.total()
    }
    fn span(&self, symbol: u32) -> Option<Span> {
        self.table.span(symbol)
    }
    fn locate(&self, target: u32) -> (u32, Span) {
        self.table.locate(target)
    }
    fn update(&mut self, symbol: u32) {
        self.learn(symbol as u8);
    }
}

impl LaneTable for Segmented {
    fn frequencies(&self) -> &[u32] {
        &self.table.freq
    }
    fn cumulative(&self) -> &[u32] {
        &self.table.cum
    }
    fn log2_total(&self) -> u32 {
        self.table.log2_total
    }
    fn segment_left(&self) -> u64 {
        self.left
    }
    fn update_run(&mut self, symbols: &[u8]) {
        assert!(symbols.len() as u64 <= self.left, "a run crosses a refresh");
        for &b in symbols {
            self.learn(b);
        }
    }
}
