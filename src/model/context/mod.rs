//! A byte model over the previous bytes: orders 0 to 3, blended.
//!
//! For each order `k` the model keeps, per context (the `k` previous bytes),
//! the counts of the bytes that followed it. The probability of the next
//! byte blends the orders from the highest down, the way PPM's escape
//! estimates do (Cleary & Witten, "Data compression using adaptive coding
//! and partial string matching", IEEE Trans. Communications 32(4), 1984;
//! escape method C of Moffat, "Implementing the PPM data compression
//! scheme", IEEE Trans. Communications 38(11), 1990):
//!
//! ```text
//! P_k(s) = c_k(s) / (n_k + u_k) + u_k / (n_k + u_k) · P_{k-1}(s)
//! ```
//!
//! with `n_k` the context's total count and `u_k` its number of distinct
//! bytes; an order whose context has no counts passes `P_{k-1}` through, and
//! below order 0 every byte has probability 1/256. Nothing is excluded, so
//! the blend is a proper mixture and every byte keeps a non-zero probability.
//!
//! The arithmetic is exact integers: the blend's numerators and its common
//! denominator are built in `u128`, scaled to a frequency table of total at
//! most 2^16 in which every byte has at least 1. Encoder and decoder compute
//! bit-identical tables on every platform.
//!
//! It is meant for short messages started from a trained state
//! ([`prime`](crate::prime)): recomputing the table costs O(256 · orders)
//! per byte, and contexts are stored sparsely (only bytes seen), so a
//! snapshot of a model trained on tens of kilobytes stays small.
//!
//! Invariants: in every context the counts are `>= 1`, sorted by byte, and
//! sum to `n_k <= limit`; the cached table is the blend of the current
//! history.

use alloc::collections::BTreeMap;
use alloc::vec::Vec;

#[cfg(doc)]
use crate::error::ErrorKind;
use crate::error::Result;
use crate::model::{Model, Span};

mod blend;
mod state;

use blend::{blend, context_key, Successors};

/// Highest context order.
pub const MAX_CONTEXT_ORDER: u8 = 3;

/// Largest count limit per context.
pub const MAX_CONTEXT_LIMIT: u32 = 4096;

/// Parameters of a [`ContextModel`].
///
/// # Example
///
/// ```
/// use subrange::model::ContextParams;
///
/// let mut params = ContextParams::default();
/// params.max_order = 2;
/// assert!(params.validate().is_ok());
/// params.limit = 1;
/// assert!(params.validate().is_err());
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub struct ContextParams {
    /// Highest order used, `0 ..= 3` (default 3).
    pub max_order: u8,
    /// Added to a byte's count each time it follows the context,
    /// `1 ..= 255` (default 2).
    pub increment: u32,
    /// A context's counts are halved when their sum would pass this,
    /// `increment + 1 ..= 4096` (default 1024).
    pub limit: u32,
}

impl Default for ContextParams {
    fn default() -> Self {
        ContextParams {
            max_order: 3,
            increment: 2,
            limit: 1024,
        }
    }
}

impl ContextParams {
    /// Checks every field against its documented range.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] naming the first field out of range.
    pub fn validate(&self) -> Result<()> {
        let bad = |name, reason| Err(crate::Error::invalid_parameter(name, reason));
        if self.max_order > MAX_CONTEXT_ORDER {
            return bad("max_order", "must be in 0 ..= 3");
        }
        if self.increment == 0 || self.increment > 255 {
            return bad("increment", "must be in 1 ..= 255");
        }
        if self.limit <= self.increment || self.limit > MAX_CONTEXT_LIMIT {
            return bad("limit", "must be in increment + 1 ..= 4096");
        }
        Ok(())
    }
}

/// An adaptive byte model over contexts of the previous 0 to 3 bytes.
///
/// Per order `k` and context (the `k` previous bytes) it counts the bytes
/// that followed, and blends the orders from the highest down the way PPM's
/// escape estimates do (Cleary & Witten, IEEE Trans. Communications 32(4),
/// 1984; escape method C of Moffat, IEEE Trans. Communications 38(11), 1990):
/// `P_k(s) = c_k(s) / (n_k + u_k) + u_k / (n_k + u_k) · P_{k-1}(s)`, with
/// `n_k` the context's total count and `u_k` its number of distinct bytes,
/// and 1/256 for every byte below order 0. The blend is computed in exact
/// integers and scaled to a table of total at most 2^16 with every byte at
/// least 1, so encoder and decoder agree on every platform. Rebuilding the
/// table costs O(256) per byte: the model suits short messages started from
/// a trained state ([`prime`](crate::prime)), and contexts are stored
/// sparsely, so its snapshot stays small.
///
/// # Example
///
/// ```
/// use subrange::coder::{Decoder, Encoder};
/// use subrange::model::{ContextModel, ContextParams, Model};
///
/// # fn main() -> Result<(), subrange::Error> {
/// let mut model = ContextModel::new(ContextParams::default())?;
/// model.train(&b"7 1714521600\n231 45.60 12.3\n".repeat(30));
///
/// let frame = b"7 1714522200\n232 45.70 12.3\n";
/// let mut enc = Encoder::new();
/// let mut m = model.clone();
/// for &b in frame {
///     enc.encode(&mut m, b.into())?;
/// }
/// let coded = enc.finish()?;
/// assert!(coded.len() < frame.len() / 2);
///
/// let mut dec = Decoder::new(&coded)?;
/// let mut m = model.clone();
/// let back: Vec<u8> = (0..frame.len())
///     .map(|_| dec.decode(&mut m).map(|s| s as u8))
///     .collect::<Result<_, _>>()?;
/// assert_eq!(back, frame);
/// # Ok(())
/// # }
/// ```
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ContextModel {
    params: ContextParams,
    /// The last bytes, most recent in the low byte.
    history: u32,
    /// Per order `0 ..= max_order`: context key (the `k` previous bytes) to
    /// its successors.
    orders: Vec<BTreeMap<u32, Successors>>,
    /// Cumulative frequencies of the current blend, 257 entries.
    cum: Vec<u32>,
}

impl ContextModel {
    /// A model that has seen nothing (every byte 1/256).
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] when `params` is out of range.
    pub fn new(params: ContextParams) -> Result<Self> {
        Self::from_parts(
            params,
            0,
            alloc::vec![BTreeMap::new(); usize::from(params.max_order) + 1],
        )
    }

    pub(crate) fn from_parts(
        params: ContextParams,
        history: u32,
        orders: Vec<BTreeMap<u32, Successors>>,
    ) -> Result<Self> {
        params.validate()?;
        let mut model = ContextModel {
            params,
            history,
            orders,
            cum: alloc::vec![0; 257],
        };
        model.refresh();
        Ok(model)
    }

    /// The model's parameters.
    pub fn params(&self) -> ContextParams {
        self.params
    }

    /// The previous bytes the next prediction uses (most recent in the low
    /// byte).
    pub fn history(&self) -> u32 {
        self.history
    }

    /// Number of contexts with counts, over all orders.
    pub fn contexts(&self) -> usize {
        self.orders.iter().map(BTreeMap::len).sum()
    }

    /// Learns from `data` as if it had been coded, faster than calling
    /// [`update`](Model::update) per byte (the table is rebuilt once, at the
    /// end).
    pub fn train(&mut self, data: &[u8]) {
        for &b in data {
            self.learn(b);
        }
        self.refresh();
    }

    fn learn(&mut self, byte: u8) {
        let (increment, limit) = (self.params.increment, self.params.limit);
        for k in 0..self.orders.len() {
            let key = context_key(self.history, k);
            self.orders[k]
                .entry(key)
                .or_default()
                .add(byte, increment, limit);
        }
        self.history = self.history << 8 | u32::from(byte);
    }

    /// Rebuilds the cumulative table for the current history.
    fn refresh(&mut self) {
        blend(&self.orders, self.history, &mut self.cum);
    }
}

impl Model for ContextModel {
    fn alphabet_size(&self) -> u32 {
        256
    }

    fn total(&self) -> u32 {
        self.cum[256]
    }

    fn span(&self, symbol: u32) -> Option<Span> {
        let s = usize::try_from(symbol).ok().filter(|&s| s < 256)?;
        Some(Span::new(self.cum[s], self.cum[s + 1] - self.cum[s]))
    }

    fn locate(&self, target: u32) -> (u32, Span) {
        // The last entry whose cumulative frequency is <= target.
        let s = (self.cum[1..256].partition_point(|&c| c <= target)).min(255);
        (
            s as u32,
            Span::new(self.cum[s], self.cum[s + 1] - self.cum[s]),
        )
    }

    fn update(&mut self, symbol: u32) {
        if let Ok(b) = u8::try_from(symbol) {
            self.learn(b);
            self.refresh();
        }
    }
}

#[cfg(test)]
mod tests {
    use super::blend::Reciprocal;
    use super::*;
    use crate::coder::{Decoder, Encoder, IdealCost};
    use crate::model::snapshot::SnapshotState;
    use crate::model::MAX_TOTAL;

    #[test]
    fn table_is_valid_and_learns_contexts() {
        let mut m = ContextModel::new(ContextParams::default()).unwrap();
        assert_eq!(m.total(), 65_536 - 256 + 256);
        m.train(&b"abcabcabcabd".repeat(20));
        let t = m.total();
        assert!(t <= MAX_TOTAL);
        let mut seen = 0;
        for s in 0..256 {
            let span = m.span(s).unwrap();
            assert!(span.freq >= 1);
            assert_eq!(m.locate(span.cum), (s, span));
            assert_eq!(m.locate(span.cum + span.freq - 1), (s, span));
            seen += span.freq;
        }
        assert_eq!(seen, t);
        // After "...abd" comes "a": order 3 ("abd") has seen only 'a'.
        let a = m.span(u32::from(b'a')).unwrap().freq;
        assert!(a > t / 2, "{a} of {t}");
    }

    #[test]
    fn round_trip_with_halving_and_every_order() {
        let data: Vec<u8> = (0..6000u32)
            .map(|i| (i * i % 251 % 17) as u8 + b'0')
            .collect();
        for max_order in 0..=MAX_CONTEXT_ORDER {
            let params = ContextParams {
                max_order,
                increment: 8,
                limit: 64,
            };
            let mut m = ContextModel::new(params).unwrap();
            let mut enc = Encoder::new();
            let mut cost = IdealCost::new();
            for &b in &data {
                let span = m.span(b.into()).unwrap();
                cost.add(span.freq, m.total());
                enc.encode(&mut m, b.into()).unwrap();
            }
            let coded = enc.finish().unwrap();
            assert!((coded.len() as f64 * 8.0) < cost.bits() + 64.0);
            let mut m = ContextModel::new(params).unwrap();
            let mut dec = Decoder::new(&coded).unwrap();
            for &b in &data {
                assert_eq!(dec.decode(&mut m).unwrap(), u32::from(b));
            }
        }
    }

    #[test]
    fn snapshot_round_trip_and_damage() {
        use crate::model::Snapshot;
        let mut m = ContextModel::new(ContextParams::default()).unwrap();
        m.train(&b"12 1714521600\n231 45.60 12.3\n".repeat(40));
        let snap = Snapshot::capture(&m).unwrap();
        let back: ContextModel = snap.restore().unwrap();
        assert_eq!(back, m);
        // Every strict prefix of the state and every single-byte change
        // either fails or restores a valid model; none panics.
        let state = snap.state().to_vec();
        for cut in 0..state.len() {
            assert!(
                ContextModel::read_state(&state[..cut]).is_err(),
                "cut {cut}"
            );
        }
        for i in 0..state.len() {
            let mut s = state.clone();
            s[i] ^= 0x41;
            if let Ok(m) = ContextModel::read_state(&s) {
                assert!(m.total() <= MAX_TOTAL);
            }
        }
    }

    /// The blend computed the plain way: orders from the lowest up, a
    /// division per byte.
    fn reference_table(m: &ContextModel) -> Vec<u32> {
        let mut extra = [0u128; 256];
        let mut seen = [false; 256];
        let mut base: u128 = 1;
        let mut denominator: u128 = 256;
        for (k, order) in m.orders.iter().enumerate() {
            let Some(ctx) = order.get(&context_key(m.history, k)) else {
                continue;
            };
            let distinct = ctx.counts.len() as u128;
            base *= distinct;
            for e in extra.iter_mut() {
                *e *= distinct;
            }
            for &(b, c) in &ctx.counts {
                seen[usize::from(b)] = true;
                extra[usize::from(b)] += u128::from(c) * denominator;
            }
            denominator *= u128::from(ctx.total) + distinct;
        }
        let shift = (128 - denominator.leading_zeros()).saturating_sub(40);
        let d = (denominator >> shift) as u64;
        let room = u64::from(MAX_TOTAL) - 256;
        let share = |n: u128| ((n >> shift) as u64 * room / d) as u32;
        let mut cum = alloc::vec![0u32; 257];
        for s in 0..256 {
            cum[s + 1] = cum[s]
                + if seen[s] {
                    1 + share(base + extra[s])
                } else {
                    1 + share(base)
                };
        }
        cum
    }

    #[test]
    fn table_is_the_plain_blend() {
        let mut state = 0x2545_F491_4F6C_DD1Du64;
        let mut next = move || {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            state
        };
        for (max_order, increment, limit) in [(3, 2, 1024), (3, 255, 4096), (2, 1, 2), (0, 7, 64)] {
            for alphabet in [2u64, 20, 256] {
                let params = ContextParams {
                    max_order,
                    increment,
                    limit,
                };
                let mut m = ContextModel::new(params).unwrap();
                assert_eq!(m.cum, reference_table(&m));
                for i in 0..3000 {
                    let b = if i % 7 == 0 {
                        next() % 256
                    } else {
                        next() % alphabet
                    };
                    m.update(b as u32);
                    assert_eq!(m.cum, reference_table(&m), "{params:?} step {i}");
                }
            }
        }
    }

    #[test]
    fn reciprocal_division_is_exact() {
        let mut state = 0x9E37_79B9_7F4A_7C15u64;
        let mut next = move || {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            state
        };
        let mut divisors = alloc::vec![1u64, 2, 3, 255, 256, 257, (1 << 40) - 1, 1 << 39, u64::MAX];
        divisors.extend((0..200).map(|_| next() >> (next() % 64)).filter(|&d| d > 0));
        for d in divisors {
            let r = Reciprocal::new(d);
            let mut xs = alloc::vec![0u64, 1, d - 1, d, d.wrapping_add(1), u64::MAX, u64::MAX - 1];
            for _ in 0..200 {
                let x = next();
                let q = x / d;
                xs.extend([x, q * d, (q * d).wrapping_sub(1), x >> (next() % 64)]);
            }
            for x in xs {
                assert_eq!(r.divide(x), x / d, "{x} / {d}");
            }
        }
    }

    #[test]
    fn bad_parameters_are_refused() {
        for (max_order, increment, limit) in [
            (4, 1, 100),
            (1, 0, 100),
            (1, 256, 4096),
            (1, 8, 8),
            (1, 1, 5000),
        ] {
            let p = ContextParams {
                max_order,
                increment,
                limit,
            };
            assert!(ContextModel::new(p).is_err(), "{p:?}");
        }
    }
}
