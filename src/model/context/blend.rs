//! The blend of the context orders: the counts after one context
//! ([`Successors`]) and the exact integer mixture of the orders that turns
//! them into the model's frequency table ([`blend`]).

use alloc::collections::BTreeMap;
use alloc::vec::Vec;

use super::MAX_CONTEXT_ORDER;
use crate::model::MAX_TOTAL;

/// The bytes seen after one context: `(byte, count)` sorted by byte.
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub(crate) struct Successors {
    pub(crate) counts: Vec<(u8, u16)>,
    pub(crate) total: u32,
}

impl Successors {
    pub(super) fn add(&mut self, byte: u8, increment: u32, limit: u32) {
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

/// The key of the order-`order` context after `history`: its `order`
/// previous bytes.
pub(super) fn context_key(history: u32, order: usize) -> u32 {
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
pub(super) fn blend(orders: &[BTreeMap<u32, Successors>], history: u32, cum: &mut [u32]) {
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
pub(super) struct Reciprocal {
    d: u64,
    m: u64,
}

impl Reciprocal {
    pub(super) fn new(d: u64) -> Self {
        Reciprocal { d, m: u64::MAX / d }
    }

    #[inline]
    pub(super) fn divide(&self, x: u64) -> u64 {
        let q = ((u128::from(x) * u128::from(self.m)) >> 64) as u64;
        q + u64::from(x - q * self.d >= self.d)
    }
}
