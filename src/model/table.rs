//! The table (static) model.
//!
//! A fixed frequency table whose total is a power of two, `2^k` with
//! `k <= 16`. Encoding looks up `cum[s]` and `freq[s]`; decoding maps the
//! target slot straight to its symbol through a `2^k`-entry lookup table, so
//! both directions are O(1). A power-of-two total also lets the coder replace
//! its division by a shift on the encoding side.
//!
//! Tables are built from counts (quantised without zeroing any present
//! symbol, see [`quantize_counts`]), from probabilities, or from exact
//! frequencies, and serialise compactly (see [`TableModel::to_bytes`]).
//!
//! Invariant: `cum[0] = 0`, `cum[s + 1] = cum[s] + freq[s]`, `cum[n] = 2^k`,
//! and `slots[t] = s` exactly when `cum[s] <= t < cum[s + 1]`.

use alloc::vec;
use alloc::vec::Vec;

use crate::coder::LaneTable;
#[cfg(doc)]
use crate::error::ErrorKind;
use crate::error::Result;
use crate::model::quantize::quantize_counts;
use crate::model::serial::{GammaReader, GammaWriter};
use crate::model::{Model, Span, MAX_ALPHABET};

/// A static model with a power-of-two total and O(1) coding in both directions.
///
/// # Example
///
/// ```
/// use subrange::coder::{Decoder, Encoder};
/// use subrange::model::{Model, TableModel};
///
/// # fn main() -> Result<(), subrange::Error> {
/// // Water-level change classes seen at a gauge: mostly "steady".
/// let mut model = TableModel::from_counts(&[900, 60, 30, 10], 12)?;
/// assert_eq!(model.total(), 4096);
/// let readings = [0u32, 0, 1, 0, 0, 0, 2, 0, 3, 0];
/// let mut enc = Encoder::new();
/// for &r in &readings {
///     enc.encode(&mut model, r)?;
/// }
/// let bytes = enc.finish()?;
/// let mut dec = Decoder::new(&bytes)?;
/// for &r in &readings {
///     assert_eq!(dec.decode(&mut model)?, r);
/// }
/// # Ok(())
/// # }
/// ```
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct TableModel {
    freq: Vec<u32>,
    cum: Vec<u32>,
    log2_total: u32,
    slots: Vec<u16>,
}

impl TableModel {
    /// Builds a table from counts, quantised to a total of `2^log2_total`.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] for an empty or oversize alphabet
    /// (more than 65,536 symbols), all-zero counts, `log2_total > 16`, or more
    /// present symbols than `2^log2_total`.
    pub fn from_counts(counts: &[u64], log2_total: u32) -> Result<Self> {
        check_alphabet(counts.len())?;
        let freq = quantize_counts(counts, log2_total)?;
        Ok(Self::build(freq, log2_total))
    }

    /// Counts the bytes of `data` and builds a 256-symbol table.
    ///
    /// # Errors
    ///
    /// As for [`from_counts`](TableModel::from_counts); `data` must not be empty.
    pub fn from_bytes_histogram(data: &[u8], log2_total: u32) -> Result<Self> {
        Self::from_counts(&crate::model::byte_counts(data), log2_total)
    }

    /// Builds a table from probabilities (any non-negative weights; they need
    /// not sum to one), quantised to a total of `2^log2_total`.
    ///
    /// The weights are first scaled to integers (2^40 for the largest), so the
    /// same weights give the same table on every platform.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] when a weight is negative or not finite,
    /// when all are zero, or as for [`from_counts`](TableModel::from_counts).
    ///
    /// # Example
    ///
    /// ```
    /// use subrange::model::{Model, TableModel};
    ///
    /// let model = TableModel::from_probabilities(&[0.5, 0.25, 0.25], 4).unwrap();
    /// assert_eq!(model.frequencies(), &[8, 4, 4]);
    /// ```
    pub fn from_probabilities(probabilities: &[f64], log2_total: u32) -> Result<Self> {
        let max = probabilities.iter().cloned().fold(0.0f64, f64::max);
        if probabilities.iter().any(|p| !p.is_finite() || *p < 0.0) || max <= 0.0 {
            return Err(crate::Error::invalid_parameter(
                "probabilities",
                "weights must be finite, non-negative and not all zero",
            ));
        }
        let scale = (1u64 << 40) as f64 / max;
        let counts: Vec<u64> = probabilities
            .iter()
            .map(|&p| {
                let c = (p * scale) as u64;
                if c == 0 && p > 0.0 {
                    1
                } else {
                    c
                }
            })
            .collect();
        Self::from_counts(&counts, log2_total)
    }

    /// Builds a table from exact frequencies, which must sum to a power of two
    /// no larger than 2^16.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] when the sum is not such a power of two
    /// or the alphabet is empty or oversize.
    pub fn from_frequencies(freq: &[u32]) -> Result<Self> {
        check_alphabet(freq.len())?;
        let sum: u64 = freq.iter().map(|&f| u64::from(f)).sum();
        if sum == 0 || !sum.is_power_of_two() || sum > 1 << 16 {
            return Err(crate::Error::invalid_parameter(
                "freq",
                "frequencies must sum to a power of two no larger than 65536",
            ));
        }
        Ok(Self::build(freq.to_vec(), sum.trailing_zeros()))
    }

    fn build(freq: Vec<u32>, log2_total: u32) -> Self {
        let mut cum = Vec::with_capacity(freq.len() + 1);
        let mut slots = vec![0u16; 1 << log2_total];
        let mut acc = 0u32;
        cum.push(0);
        for (s, &f) in freq.iter().enumerate() {
            slots[acc as usize..(acc + f) as usize].fill(s as u16);
            acc += f;
            cum.push(acc);
        }
        TableModel {
            freq,
            cum,
            log2_total,
            slots,
        }
    }

    /// The frequencies, one per symbol.
    pub fn frequencies(&self) -> &[u32] {
        &self.freq
    }

    /// Cumulative frequencies: `cumulative()[s]` is where symbol `s` starts;
    /// the last entry is the total.
    pub fn cumulative(&self) -> &[u32] {
        &self.cum
    }

    /// `log2` of the total.
    pub fn log2_total(&self) -> u32 {
        self.log2_total
    }

    /// Serialises the table: Elias gamma codes of `log2_total + 1`, the
    /// alphabet size, the number of present symbols, and per present symbol
    /// the gap since the previous one plus its frequency (the last frequency is
    /// implied by the total). A 256-symbol table of English-like text takes
    /// about 100 bytes.
    ///
    /// # Example
    ///
    /// ```
    /// use subrange::model::TableModel;
    ///
    /// # fn main() -> Result<(), subrange::Error> {
    /// let model = TableModel::from_counts(&[5, 0, 0, 3, 1], 8)?;
    /// let bytes = model.to_bytes();
    /// let (back, used) = TableModel::from_table_bytes(&bytes, 1 << 16)?;
    /// assert_eq!(back, model);
    /// assert_eq!(used, bytes.len());
    /// # Ok(())
    /// # }
    /// ```
    pub fn to_bytes(&self) -> Vec<u8> {
        let mut w = GammaWriter::new();
        w.gamma(self.log2_total + 1);
        w.gamma(self.freq.len() as u32);
        let present: Vec<usize> = (0..self.freq.len()).filter(|&s| self.freq[s] > 0).collect();
        w.gamma(present.len() as u32);
        let mut next = 0usize;
        for (i, &s) in present.iter().enumerate() {
            w.gamma((s - next) as u32 + 1);
            if i + 1 < present.len() {
                w.gamma(self.freq[s]);
            }
            next = s + 1;
        }
        w.into_bytes()
    }

    /// Reads a table written by [`to_bytes`](TableModel::to_bytes) from the
    /// start of `bytes`; returns it and the number of bytes used.
    /// `max_alphabet` bounds the alphabet size the input may declare (and so
    /// the memory this call may allocate).
    ///
    /// # Errors
    ///
    /// [`ErrorKind::CorruptTable`] for malformed input;
    /// [`ErrorKind::LimitExceeded`] when the declared alphabet is over
    /// `max_alphabet`.
    pub fn from_table_bytes(bytes: &[u8], max_alphabet: u32) -> Result<(Self, usize)> {
        let mut r = GammaReader::new(bytes);
        let log2_total = r.gamma(17)? - 1;
        let alphabet = r.gamma(MAX_ALPHABET)?;
        if alphabet > max_alphabet {
            return Err(crate::Error::limit_exceeded(
                "table alphabet",
                alphabet.into(),
                max_alphabet.into(),
            ));
        }
        let total = 1u32 << log2_total;
        let present = r.gamma(alphabet.min(total))?;
        let mut freq = vec![0u32; alphabet as usize];
        let mut next = 0u32;
        let mut acc = 0u32;
        for i in 0..present {
            let gap = r.gamma(alphabet - next)? - 1;
            let s = next + gap;
            // Leave room for the symbols still to come, one unit each.
            let left = present - i - 1;
            if s >= alphabet || alphabet - s - 1 < left {
                return Err(crate::Error::corrupt_table("symbol index out of range"));
            }
            let f = if left > 0 {
                let room = total - acc - left;
                r.gamma(room)?
            } else {
                total - acc
            };
            if f == 0 {
                return Err(crate::Error::corrupt_table("frequencies exceed the total"));
            }
            freq[s as usize] = f;
            acc += f;
            next = s + 1;
        }
        Ok((Self::build(freq, log2_total), r.bytes_used()))
    }
}

fn check_alphabet(len: usize) -> Result<()> {
    if len == 0 || len > MAX_ALPHABET as usize {
        return Err(crate::Error::invalid_parameter(
            "alphabet",
            "must have 1 ..= 65536 symbols",
        ));
    }
    Ok(())
}

impl Model for TableModel {
    #[inline]
    fn alphabet_size(&self) -> u32 {
        self.freq.len() as u32
    }

    #[inline]
    fn total(&self) -> u32 {
        1 << self.log2_total
    }

    #[inline]
    fn span(&self, symbol: u32) -> Option<Span> {
        let s = symbol as usize;
        let f = *self.freq.get(s)?;
        (f > 0).then(|| Span::new(self.cum[s], f))
    }

    #[inline]
    fn locate(&self, target: u32) -> (u32, Span) {
        let t = (target as usize).min(self.slots.len() - 1);
        let s = self.slots[t] as usize;
        (s as u32, Span::new(self.cum[s], self.freq[s]))
    }
}

impl LaneTable for TableModel {
    fn frequencies(&self) -> &[u32] {
        self.frequencies()
    }
    fn cumulative(&self) -> &[u32] {
        self.cumulative()
    }
    fn log2_total(&self) -> u32 {
        self.log2_total()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::error::ErrorKind;

    #[test]
    fn locate_inverts_span() {
        let m = TableModel::from_counts(&[7, 0, 1, 300, 2, 0, 9], 10).unwrap();
        for t in 0..m.total() {
            let (s, span) = m.locate(t);
            assert_eq!(m.span(s), Some(span));
            assert!(span.cum <= t && t < span.cum + span.freq);
        }
        assert_eq!(m.span(1), None);
        assert_eq!(m.span(7), None);
    }

    #[test]
    fn serial_round_trip_large_alphabet() {
        let counts: Vec<u64> = (0..65536u64).map(|i| u64::from(i % 3 == 0)).collect();
        let m = TableModel::from_counts(&counts, 16).unwrap();
        let bytes = m.to_bytes();
        let (back, used) = TableModel::from_table_bytes(&bytes, 1 << 16).unwrap();
        assert_eq!(back, m);
        assert_eq!(used, bytes.len());
    }

    #[test]
    fn table_bytes_reject_damage() {
        let m = TableModel::from_counts(&[5, 3, 1, 1], 8).unwrap();
        let bytes = m.to_bytes();
        assert!(TableModel::from_table_bytes(&bytes[..bytes.len() - 1], 1 << 16).is_err());
        assert!(matches!(
            TableModel::from_table_bytes(&bytes, 2).unwrap_err().kind(),
            ErrorKind::LimitExceeded { .. }
        ));
    }
}
