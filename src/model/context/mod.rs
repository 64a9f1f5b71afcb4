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
use crate::model::snapshot::{read_vint, write_vint, SnapshotState};
use crate::model::{Model, Span, MAX_TOTAL};

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

/// The bytes seen after one context: `(byte, count)` sorted by byte.
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub(crate) struct Successors {
    pub(crate) counts: Vec<(u8, u16)>,
    pub(crate) total: u32,
}

impl Successors {
    fn add(&mut self, byte: u8, increment: u32, limit: u32) {
        if self.total + increment > limit {
            // Halve, dropping bytes whose count reaches zero.
            self.counts.retain_mut(|(_, c)| {
                *c /= 2;
                *c > 0
            });
            self.total = self.counts.iter().map(|&(_, c)| u32::from(c)).sum();
        }
        match self.counts.binary_search_by_key(&byte, |&(b, _)| b) {
            Ok(i) => self.counts[i].1 += increment as u16,
            Err(i) => self.counts.insert(i, (byte, increment as u16)),
        }
        self.total += increment;
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

/// The key of the order-`order` context after `history`: its `order`
/// previous bytes.
fn context_key(history: u32, order: usize) -> u32 {
    match order {
        0 => 0,
        4.. => history,
        k => history & ((1u32 << (8 * k)) - 1),
    }
}

/// Writes the blend of the contexts after `history` into `cum` as 257
/// cumulative frequencies.
///
/// The blend of byte `s` is `(base + extra[s]) / denominator`: `base` is the
/// share every byte gets through the escapes (uniform below order 0),
/// `extra[s]` what the contexts' counts add. With `u_k` distinct bytes and
/// `n_k` counts in order `k`'s context (orders without a context for this
/// history are left out) and `D_k = 256 · Π_{j<k} (n_j + u_j)`, the
/// recurrence `P_k = c_k / (n_k + u_k) + u_k / (n_k + u_k) · P_{k-1}` unrolls
/// to
///
/// ```text
/// denominator = 256 · Π_k (n_k + u_k)      base = Π_k u_k
/// extra[s]    = Σ_k c_k(s) · D_k · Π_{j>k} u_j
/// ```
///
/// all exact in `u128` (the denominator is below 2^57), so the table does
/// not depend on the order the terms are summed in. Only bytes some context
/// has seen get an `extra`; the wide arithmetic and the scaling run over
/// those, and every other byte gets the same share.
fn blend(orders: &[BTreeMap<u32, Successors>], history: u32, cum: &mut [u32]) {
    const ORDERS: usize = MAX_CONTEXT_ORDER as usize + 1;
    static NONE: Successors = Successors {
        counts: Vec::new(),
        total: 0,
    };
    let mut present = [&NONE; ORDERS];
    let mut used = 0;
    for (k, order) in orders.iter().enumerate().take(ORDERS) {
        if let Some(ctx) = order.get(&context_key(history, k)) {
            present[used] = ctx;
            used += 1;
        }
    }
    let present = &present[..used];
    // D_k for each context, then its factor D_k · Π_{j>k} u_j.
    let mut factor = [0u128; ORDERS];
    let factor = &mut factor[..used];
    let mut denominator: u128 = 256;
    for (f, ctx) in factor.iter_mut().zip(present) {
        *f = denominator;
        denominator *= u128::from(ctx.total) + ctx.counts.len() as u128;
    }
    let mut base: u128 = 1;
    for (f, ctx) in factor.iter_mut().zip(present).rev() {
        *f *= base;
        base *= ctx.counts.len() as u128;
    }
    let mut extra = [0u128; 256];
    let mut seen = [0u64; 4];
    for (&f, ctx) in factor.iter().zip(present) {
        for &(b, c) in &ctx.counts {
            extra[usize::from(b)] += u128::from(c) * f;
            seen[usize::from(b >> 6)] |= 1 << (b & 63);
        }
    }
    // Scale to a total of at most 2^16 with every byte at least 1: a
    // numerator `n <= denominator` gets `floor((n >> shift) · room / d)`.
    let shift = (128 - denominator.leading_zeros()).saturating_sub(40);
    let d = Reciprocal::new((denominator >> shift) as u64);
    let room = u64::from(MAX_TOTAL) - 256;
    let share = |n: u128| d.divide((n >> shift) as u64 * room) as u32;
    let common = 1 + share(base);
    let mut sum = 0u32;
    let mut next = 0usize;
    // Bytes no context has seen, `next .. end`, each `common` wide.
    let unseen = |cum: &mut [u32], next: usize, end: usize, sum: &mut u32| {
        for (i, c) in cum[next..end].iter_mut().enumerate() {
            *c = *sum + i as u32 * common;
        }
        *sum += (end - next) as u32 * common;
    };
    for (w, &word) in seen.iter().enumerate() {
        let mut bits = word;
        while bits != 0 {
            let s = 64 * w + bits.trailing_zeros() as usize;
            bits &= bits - 1;
            unseen(cum, next, s, &mut sum);
            cum[s] = sum;
            sum += 1 + share(base + extra[s]);
            next = s + 1;
        }
    }
    unseen(cum, next, 256, &mut sum);
    cum[256] = sum;
}

/// Exact `floor(x / d)` for many `x` and one divisor `d >= 1`, by a
/// multiplication with a reciprocal instead of a division.
///
/// With `m = floor((2^64 - 1) / d)`, `x · m / 2^64` lies in
/// `(x / d - 1, x / d]` for every `x < 2^64` (`m` is short of `2^64 / d` by
/// less than one, which costs less than `x / 2^64 < 1`), so its floor is
/// the quotient or one less, and one comparison of the remainder settles
/// which.
#[derive(Debug, Clone, Copy)]
struct Reciprocal {
    d: u64,
    m: u64,
}

impl Reciprocal {
    fn new(d: u64) -> Self {
        Reciprocal { d, m: u64::MAX / d }
    }

    #[inline]
    fn divide(&self, x: u64) -> u64 {
        let q = ((u128::from(x) * u128::from(self.m)) >> 64) as u64;
        q + u64::from(x - q * self.d >= self.d)
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

/// State layout of a [`ContextModel`] (kind 3): `max_order` (one byte),
/// `increment` and `limit` (vints), the history (u32 little-endian); then
/// per order `0 ..= max_order`: the number of contexts, and per context in
/// increasing key order its key (the previous bytes, most recent lowest), the
/// number of successors and each successor's byte (increasing) and count, all
/// vints but the bytes.
impl SnapshotState for ContextModel {
    const KIND: u16 = 3;

    fn write_state(&self, out: &mut Vec<u8>) {
        out.push(self.params.max_order);
        write_vint(out, self.params.increment);
        write_vint(out, self.params.limit);
        out.extend_from_slice(&self.history.to_le_bytes());
        for order in &self.orders {
            write_vint(out, order.len() as u32);
            for (&key, ctx) in order {
                write_vint(out, key);
                write_vint(out, ctx.counts.len() as u32);
                for &(b, c) in &ctx.counts {
                    out.push(b);
                    write_vint(out, u32::from(c));
                }
            }
        }
    }

    fn read_state(mut state: &[u8]) -> Result<Self> {
        let input = &mut state;
        let bad = |reason| Err(crate::Error::snapshot(reason));
        let Some((&max_order, rest)) = input.split_first() else {
            return bad("context model state is empty");
        };
        *input = rest;
        let params = ContextParams {
            max_order,
            increment: read_vint(input)?,
            limit: read_vint(input)?,
        };
        if params.validate().is_err() {
            return bad("context model state has invalid parameters");
        }
        let Some((history, rest)) = input.split_first_chunk::<4>() else {
            return bad("context model state ends early");
        };
        let history = u32::from_le_bytes(*history);
        *input = rest;
        let mut orders = Vec::with_capacity(usize::from(max_order) + 1);
        for k in 0..=u32::from(max_order) {
            let contexts = read_vint(input)?;
            // A context takes at least four bytes: bound the loop by the input.
            if contexts as usize > input.len() / 4 {
                return bad("context model state declares more contexts than it holds");
            }
            let key_end = if k == 0 { 1u64 } else { 1u64 << (8 * k) };
            let mut order = BTreeMap::new();
            let mut last_key = None;
            for _ in 0..contexts {
                let key = read_vint(input)?;
                if u64::from(key) >= key_end || last_key.is_some_and(|l| key <= l) {
                    return bad("context model state has a bad context key");
                }
                last_key = Some(key);
                let n = read_vint(input)? as usize;
                if n == 0 || n > 256 || n > input.len() / 2 {
                    return bad("context model state has a bad successor count");
                }
                let mut ctx = Successors {
                    counts: Vec::with_capacity(n),
                    total: 0,
                };
                for _ in 0..n {
                    let Some((&b, rest)) = input.split_first() else {
                        return bad("context model state ends early");
                    };
                    *input = rest;
                    let c = read_vint(input)?;
                    if c == 0 || ctx.counts.last().is_some_and(|&(l, _)| b <= l) {
                        return bad("context model state has a bad successor");
                    }
                    ctx.total = ctx.total.saturating_add(c);
                    if ctx.total > params.limit {
                        return bad("context model state has counts above its limit");
                    }
                    ctx.counts.push((b, c as u16));
                }
                order.insert(key, ctx);
            }
            orders.push(order);
        }
        if !input.is_empty() {
            return bad("context model state has trailing bytes");
        }
        ContextModel::from_parts(params, history, orders)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::coder::{Decoder, Encoder, IdealCost};

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
