//! The refreshed adaptive order-0 model.
//!
//! Counts learn from every coded symbol, as in any adaptive model, but the
//! frequencies the coder uses change only at *refreshes*: the model codes a
//! segment of symbols with one fixed table whose total is a power of two,
//! then rebuilds the table from the counts. Segments start short (the table
//! follows the first symbols closely) and double in length up to a longest
//! period, so the rebuilding costs little per symbol. Between refreshes
//! coding a symbol is a table lookup and a shift instead of a division and a
//! tree walk, and — because the table does not depend on the symbols of the
//! segment being coded — interleaved lanes can code a whole segment with
//! the byte-table kernels of the static lanes (see
//! [`encode_adaptive_lanes`](crate::coder::encode_adaptive_lanes)). Adapting
//! per segment instead of per symbol costs a little on short inputs and
//! next to nothing on long ones.
//!
//! At each refresh, counts whose sum exceeds `limit` are halved (rounding
//! down) until it does not, so old statistics fade and the model follows
//! drift. The new table gives every codable symbol a frequency of at least 1
//! and shares the rest of the total in proportion to the counts, rounded to
//! the nearest unit; the rounding surplus or deficit goes to the most
//! frequent symbol (see [`AdaptiveModel::frequencies`]). Symbols can be
//! excluded up front ([`AdaptiveModel::with_symbols`]): they get frequency
//! 0 and leave their share to the others, which is how a block coder that
//! knows its block's byte set avoids paying for absent bytes.
//!
//! Invariants: the frequencies of the codable symbols are all at least 1
//! and sum to exactly `2^log2_total`; the table changes only after the last
//! symbol of a segment; encoder and decoder that start from the same
//! parameters and see the same symbols hold identical tables at every step.

use crate::coder::LaneTable;
#[cfg(doc)]
use crate::error::ErrorKind;
use crate::error::Result;
use crate::model::{Model, Span};

/// Largest alphabet of a [`AdaptiveModel`]: the byte values.
pub const MAX_ADAPTIVE_ALPHABET: u32 = 256;

/// Parameters of a [`AdaptiveModel`].
///
/// # Example
///
/// ```
/// use subrange::model::{AdaptiveModel, AdaptiveParams};
///
/// let mut params = AdaptiveParams::default();
/// params.max_period = 1024; // rebuild the table less often: faster
/// params.limit = 1 << 16; // remember longer: for stationary data
/// let model = AdaptiveModel::with_params(256, params).unwrap();
/// assert_eq!(model.params().max_period, 1024);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[non_exhaustive]
pub struct AdaptiveParams {
    /// The table's total is `2^log2_total` (default 12; at most 16, and
    /// at least enough for every codable symbol to have frequency 1).
    pub log2_total: u32,
    /// Symbols coded with the first table (default 32, at least 1); each
    /// later segment is twice as long as the one before, up to `max_period`.
    pub first_period: u32,
    /// Longest segment between two refreshes (default 256).
    pub max_period: u32,
    /// At a refresh, counts are halved while their sum exceeds this
    /// (default 4096, at least 1).
    pub limit: u32,
}

impl Default for AdaptiveParams {
    fn default() -> Self {
        AdaptiveParams {
            log2_total: 12,
            first_period: 32,
            max_period: 256,
            limit: 4096,
        }
    }
}

/// An adaptive order-0 model over at most 256 symbols whose coding table
/// is rebuilt from its counts at growing intervals (see the module docs).
///
/// # Example
///
/// ```
/// use subrange::coder::{Decoder, Encoder};
/// use subrange::model::AdaptiveModel;
///
/// # fn main() -> Result<(), subrange::Error> {
/// let log = b"G107 level 212 cm, flow 1123 l/s\n".repeat(100);
/// let mut model = AdaptiveModel::new(256)?;
/// let mut enc = Encoder::new();
/// for &b in &log {
///     enc.encode(&mut model, b.into())?;
/// }
/// let bytes = enc.finish()?;
/// assert!(bytes.len() < log.len() * 2 / 3);
///
/// let mut model = AdaptiveModel::new(256)?;
/// let mut dec = Decoder::new(&bytes)?;
/// for &b in &log {
///     assert_eq!(dec.decode(&mut model)?, u32::from(b));
/// }
/// # Ok(())
/// # }
/// ```
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct AdaptiveModel {
    params: AdaptiveParams,
    alphabet: usize,
    /// Per symbol: `u32::MAX` when it can be coded, else 0 (also for the
    /// values past the alphabet).
    mask: [u32; 256],
    /// How many symbols can be coded.
    present: u32,
    counts: [u32; 256],
    count_total: u64,
    freq: [u32; 256],
    /// `cum[s]` is the sum of `freq[..s]`; `cum[alphabet]` is the total.
    cum: [u32; 257],
    /// Length of the current segment, and symbols left in it.
    period: u64,
    left: u64,
}

impl AdaptiveModel {
    /// A model over `alphabet` symbols (`1 ..= 256`), default parameters.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] for an alphabet outside `1 ..= 256`.
    pub fn new(alphabet: u32) -> Result<Self> {
        Self::with_params(alphabet, AdaptiveParams::default())
    }

    /// A model over `alphabet` symbols with `params`.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] for an alphabet outside `1 ..= 256`
    /// or parameters that break the rules of [`AdaptiveParams`].
    pub fn with_params(alphabet: u32, params: AdaptiveParams) -> Result<Self> {
        if alphabet == 0 || alphabet > MAX_ADAPTIVE_ALPHABET {
            return Err(crate::Error::invalid_parameter(
                "alphabet",
                "must be 1 ..= 256",
            ));
        }
        Self::with_symbols(&[true; 256][..alphabet as usize], params)
    }

    /// A model over `codable.len()` symbols of which only those marked
    /// `true` can be coded; the others have frequency 0.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] for more than 256 symbols, none
    /// codable, a total smaller than the number of codable symbols, or
    /// parameters that break the rules of [`AdaptiveParams`].
    ///
    /// # Example
    ///
    /// ```
    /// use subrange::model::{Model, AdaptiveModel, AdaptiveParams};
    ///
    /// let digits: Vec<bool> = (0..256).map(|b| (b'0'..=b'9').contains(&(b as u8))).collect();
    /// let model = AdaptiveModel::with_symbols(&digits, AdaptiveParams::default()).unwrap();
    /// assert!(model.span(u32::from(b'7')).is_some());
    /// assert!(model.span(u32::from(b'x')).is_none());
    /// ```
    pub fn with_symbols(codable: &[bool], params: AdaptiveParams) -> Result<Self> {
        if codable.is_empty() || codable.len() > MAX_ADAPTIVE_ALPHABET as usize {
            return Err(crate::Error::invalid_parameter(
                "alphabet",
                "must be 1 ..= 256",
            ));
        }
        let present = codable.iter().filter(|&&c| c).count();
        if present == 0 {
            return Err(crate::Error::invalid_parameter(
                "symbols",
                "at least one symbol must be codable",
            ));
        }
        if params.log2_total > 16 || present > 1 << params.log2_total {
            return Err(crate::Error::invalid_parameter(
                "log2_total",
                "must be at most 16 and leave every codable symbol a unit",
            ));
        }
        if params.first_period == 0 || params.max_period < params.first_period {
            return Err(crate::Error::invalid_parameter(
                "period",
                "first_period must be at least 1 and max_period at least first_period",
            ));
        }
        if params.limit == 0 {
            return Err(crate::Error::invalid_parameter(
                "limit",
                "must be at least 1",
            ));
        }
        let mut mask = [0u32; 256];
        for (m, &c) in mask.iter_mut().zip(codable) {
            *m = if c { u32::MAX } else { 0 };
        }
        let mut model = AdaptiveModel {
            params,
            alphabet: codable.len(),
            mask,
            present: present as u32,
            counts: [0; 256],
            count_total: 0,
            freq: [0; 256],
            cum: [0; 257],
            period: u64::from(params.first_period),
            left: u64::from(params.first_period),
        };
        model.rebuild();
        Ok(model)
    }

    /// The model's parameters.
    pub fn params(&self) -> AdaptiveParams {
        self.params
    }

    /// The current table's frequencies, one per symbol (0 for symbols that
    /// cannot be coded).
    ///
    /// Each codable symbol `s` gets `1 + round(c_s · (2^k − m) / C)` where
    /// `c_s` is its count, `C` the sum of the counts, `m` the number of
    /// codable symbols and `2^k` the total (the quotient `(2^k − m) / C` is
    /// taken in fixed point with 32 significant bits); the difference to
    /// `2^k` left by the rounding is given to (or, when negative, first
    /// taken from) the most frequent symbol. With no counts yet the total
    /// is shared equally.
    pub fn frequencies(&self) -> &[u32] {
        &self.freq[..self.alphabet]
    }

    /// The current table's cumulative frequencies: `alphabet + 1` entries,
    /// the last one the total.
    pub fn cumulative(&self) -> &[u32] {
        &self.cum[..=self.alphabet]
    }

    /// `log2` of the total.
    pub fn log2_total(&self) -> u32 {
        self.params.log2_total
    }

    /// Symbols still to be coded with the current table before it is
    /// rebuilt (at least 1).
    pub fn segment_left(&self) -> u64 {
        self.left
    }

    /// Learns a run of coded symbols at once: the same as calling
    /// [`update`](Model::update) for each, in order.
    ///
    /// # Panics
    ///
    /// When `symbols` is longer than [`segment_left`](Self::segment_left)
    /// (a run must not cross a refresh).
    #[inline(always)]
    pub fn update_run(&mut self, symbols: &[u8]) {
        assert!(symbols.len() as u64 <= self.left, "a run crosses a refresh");
        // Values past the alphabet (never coded) are counted but never
        // used: the mask keeps them out of the table.
        for &b in symbols {
            self.counts[usize::from(b)] += 1;
        }
        self.count_total += symbols.len() as u64;
        self.left -= symbols.len() as u64;
        if self.left == 0 {
            self.refresh();
        }
    }

    /// [`refresh`](Self::refresh) kept out of line, for the per-symbol path.
    #[inline(never)]
    fn refresh_cold(&mut self) {
        self.refresh();
    }

    #[inline(always)]
    fn refresh(&mut self) {
        while self.count_total > u64::from(self.params.limit) {
            let mut sum = 0;
            for c in &mut self.counts {
                *c >>= 1;
                sum += u64::from(*c);
            }
            self.count_total = sum;
        }
        self.rebuild();
        self.period = (self.period * 2).min(u64::from(self.params.max_period));
        self.left = self.period;
    }

    /// Quantises the counts to the table (see [`frequencies`](Self::frequencies)).
    ///
    /// Inlined into its callers so that the lane coders can compile it for
    /// wider vectors (the adaptive lanes' `learn_run`).
    #[inline(always)]
    fn rebuild(&mut self) {
        let total = 1u32 << self.params.log2_total;
        let mut counted = 0u64;
        for (&c, &m) in self.counts.iter().zip(&self.mask) {
            counted += u64::from(c & m);
        }
        if counted == 0 {
            let (each, extra) = (total / self.present, total % self.present);
            let mut k = 0;
            for (f, &m) in self.freq.iter_mut().zip(&self.mask) {
                *f = (each + u32::from(k < extra)) & m;
                k += m & 1;
            }
        } else {
            // `spare / counted` with 32 significant bits: `scale < 2^32`,
            // so each product is a 32 x 32 -> 64-bit multiplication.
            let spare = u64::from(total - self.present);
            let shift = 31 + counted.ilog2() - spare.max(1).ilog2();
            let scale = ((spare << shift) / counted) as u32;
            let half = 1u64 << (shift - 1);
            let mut sum = 0u32;
            for ((f, &c), &m) in self.freq.iter_mut().zip(&self.counts).zip(&self.mask) {
                *f = (1 + ((u64::from(c) * u64::from(scale) + half) >> shift) as u32) & m;
                sum += *f;
            }
            // The most frequent codable symbol (the first of equals; some
            // codable symbol has a count, so `best > 0`).
            let best = self
                .counts
                .iter()
                .zip(&self.mask)
                .fold(0, |best, (&c, &m)| best.max(c & m));
            let top = self
                .counts
                .iter()
                .zip(&self.mask)
                .position(|(&c, &m)| c & m == best)
                .unwrap_or(0);
            if sum <= total {
                self.freq[top] += total - sum;
            } else {
                self.take(top, sum - total);
            }
        }
        // The running sums of four quarters side by side: four short
        // dependency chains in place of one long one.
        let quarter: [u32; 4] =
            core::array::from_fn(|q| self.freq[64 * q..64 * q + 64].iter().sum());
        let mut acc = [0, quarter[0], quarter[0] + quarter[1], 0];
        acc[3] = acc[2] + quarter[2];
        for i in 0..64 {
            for (q, a) in acc.iter_mut().enumerate() {
                self.cum[64 * q + i] = *a;
                *a += self.freq[64 * q + i];
            }
        }
        self.cum[256] = acc[3];
        debug_assert_eq!(acc[3], total);
    }

    /// Removes `excess` units: up to half of `top`'s frequency from it, the
    /// rest one unit at a time from every symbol above 1, in symbol order.
    fn take(&mut self, top: usize, mut excess: u32) {
        let first = excess.min((self.freq[top] - 1) / 2);
        self.freq[top] -= first;
        excess -= first;
        while excess > 0 {
            for f in self.freq.iter_mut() {
                if excess > 0 && *f > 1 {
                    *f -= 1;
                    excess -= 1;
                }
            }
        }
    }
}

impl Model for AdaptiveModel {
    fn alphabet_size(&self) -> u32 {
        self.alphabet as u32
    }

    #[inline]
    fn total(&self) -> u32 {
        1 << self.params.log2_total
    }

    #[inline]
    fn span(&self, symbol: u32) -> Option<Span> {
        let s = symbol as usize;
        let f = *self.frequencies().get(s)?;
        (f > 0).then(|| Span::new(self.cum[s], f))
    }

    fn locate(&self, target: u32) -> (u32, Span) {
        // The last symbol whose cumulative frequency is at most `target`
        // and whose frequency is not 0.
        let upper = self.cum[1..=self.alphabet].partition_point(|&c| c <= target);
        let s = upper.min(self.alphabet - 1);
        (s as u32, Span::new(self.cum[s], self.freq[s]))
    }

    #[inline]
    fn update(&mut self, symbol: u32) {
        if (symbol as usize) < self.alphabet {
            self.counts[symbol as usize] += 1;
            self.count_total += 1;
        }
        self.left -= 1;
        if self.left == 0 {
            self.refresh_cold();
        }
    }
}

impl LaneTable for AdaptiveModel {
    fn frequencies(&self) -> &[u32] {
        self.frequencies()
    }
    fn cumulative(&self) -> &[u32] {
        self.cumulative()
    }
    fn log2_total(&self) -> u32 {
        self.log2_total()
    }
    fn segment_left(&self) -> u64 {
        self.segment_left()
    }
    #[inline(always)]
    fn update_run(&mut self, symbols: &[u8]) {
        self.update_run(symbols)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use alloc::vec;
    use alloc::vec::Vec;

    fn check_table(m: &AdaptiveModel) {
        let total: u32 = m.frequencies().iter().sum();
        assert_eq!(total, m.total());
        for (s, &f) in m.frequencies().iter().enumerate() {
            assert_eq!(f > 0, m.mask[s] != 0, "symbol {s}");
        }
    }

    #[test]
    fn tables_stay_exact_through_skewed_and_flat_counts() {
        let mut m = AdaptiveModel::new(256).unwrap();
        check_table(&m);
        assert!(m.frequencies().iter().all(|&f| f == 16));
        // All one symbol, then all symbols equally: rounding in both
        // directions.
        for i in 0..100_000u32 {
            let s = if i < 30_000 { 7 } else { i % 256 };
            m.update(s);
            if m.segment_left() == m.period {
                check_table(&m);
            }
        }
        check_table(&m);
    }

    #[test]
    fn segments_double_up_to_the_longest_period() {
        let p = AdaptiveParams {
            first_period: 4,
            max_period: 20,
            ..AdaptiveParams::default()
        };
        let mut m = AdaptiveModel::with_params(3, p).unwrap();
        let mut lengths = vec![];
        let mut run = 0;
        for _ in 0..100 {
            run += 1;
            m.update(1);
            if m.segment_left() == m.period {
                lengths.push(run);
                run = 0;
            }
        }
        assert_eq!(&lengths[..5], &[4, 8, 16, 20, 20]);
    }

    #[test]
    fn halving_keeps_counts_under_the_limit() {
        let p = AdaptiveParams {
            limit: 100,
            ..AdaptiveParams::default()
        };
        let mut m = AdaptiveModel::with_params(4, p).unwrap();
        for i in 0..5000u32 {
            m.update(i % 3);
            assert!(m.count_total <= 100 + m.period);
        }
        // Symbol 3 was never seen: it keeps the floor of one unit.
        assert_eq!(m.frequencies()[3], 1);
    }

    #[test]
    fn update_run_equals_single_updates() {
        let data: Vec<u8> = (0..20_000u32).map(|i| (i * i % 251) as u8).collect();
        let mut a = AdaptiveModel::new(256).unwrap();
        let mut b = a.clone();
        for &x in &data {
            a.update(u32::from(x));
        }
        let mut rest = &data[..];
        while !rest.is_empty() {
            let (run, next) = rest.split_at((b.segment_left() as usize).min(rest.len()));
            b.update_run(run);
            rest = next;
        }
        assert_eq!(a, b);
    }

    #[test]
    fn locate_inverts_span() {
        let codable: Vec<bool> = (0..40).map(|s| s % 3 != 1).collect();
        let mut m = AdaptiveModel::with_symbols(&codable, AdaptiveParams::default()).unwrap();
        for i in 0..3000u32 {
            m.update((i * 7 % 40) / 3 * 3);
        }
        for t in 0..m.total() {
            let (s, span) = m.locate(t);
            assert_eq!(m.span(s), Some(span));
            assert!(span.cum <= t && t < span.cum + span.freq);
        }
    }

    #[test]
    fn bad_parameters_are_refused() {
        assert!(AdaptiveModel::new(0).is_err());
        assert!(AdaptiveModel::new(257).is_err());
        let mut p = AdaptiveParams {
            log2_total: 7,
            ..AdaptiveParams::default()
        };
        assert!(AdaptiveModel::with_params(256, p).is_err());
        assert!(AdaptiveModel::with_params(128, p).is_ok());
        p.log2_total = 17;
        assert!(AdaptiveModel::with_params(2, p).is_err());
        let p = AdaptiveParams {
            max_period: 8,
            ..AdaptiveParams::default()
        };
        assert!(AdaptiveModel::with_params(2, p).is_err());
        assert!(AdaptiveModel::with_symbols(&[false; 4], AdaptiveParams::default()).is_err());
    }
}
