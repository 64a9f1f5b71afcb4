//! Exact reference coders.
//!
//! [`FastReference`] repeats the integer range coder's documented arithmetic
//! (`r = range / total`, `low += r·cum`, `range = r·freq`, the top symbol
//! taking the remainder, a byte shifted out while `range < 2^24`), but keeps
//! `low` as an unbounded integer: no carry handling, no byte pipeline, no
//! flush. Its interval after any prefix of steps is
//! `[low, low + range) / 2^frame` exactly, so the bytes the real encoder
//! writes can be checked against it as a base-256 fraction.
//!
//! The binary step (`Encoder::encode_bit`) splits the range exactly:
//! `bound = floor(range · p1 / 2^16)`, a 1 taking `0 .. bound`; the coarse
//! step of earlier streams (`encode_bit_coarse`) is a span step of total
//! 2^16 ([`RefStep::coarse_bit`]).
//!
//! [`IdealReference`] is the textbook exact-rational interval coder: the
//! interval `[low, low + width) / den` shrinks to the symbol's exact share
//! `cum / total .. (cum + freq) / total` at every step, with no rounding.
//!
//! [`Tracked`] runs both and checks after every step that the fast coder's
//! interval stays in a neighbourhood of the ideal one (see [`Tracked::check`]).

use core::cmp::Ordering;

use subrange::model::Span;

use super::nat::{cmp_scaled, Nat};

/// Renormalisation threshold of the coder (design document: `range < 2^24`).
pub const TOP: u32 = 1 << 24;

/// One coding step as the references see it.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum RefStep {
    /// Entry `chosen` of `spans`, out of `total`. `spans` lists every entry a
    /// decoder could find at this step (for the reference decoder).
    Choice {
        total: u32,
        spans: Vec<Span>,
        chosen: usize,
    },
    /// Symbol `symbol` of `0 .. total`, every symbol of frequency 1 (the
    /// payload after an escape).
    Uniform { total: u32, symbol: u32 },
    /// A binary decision on the precise split: `p1` (clamped to
    /// `1 ..= 65535`) of 2^16 for a 1, which takes the lower part.
    Bit { bit: bool, p1: u32 },
}

impl RefStep {
    /// A binary decision on the precise split (`Encoder::encode_bit`).
    pub fn bit(bit: bool, p1: u32) -> RefStep {
        RefStep::Bit {
            bit,
            p1: p1.clamp(1, 65535),
        }
    }

    /// A binary decision on the coarse split (`Encoder::encode_bit_coarse`)
    /// with `p1` (probability of a 1 in 2^-16 units, clamped as the coder
    /// documents) as a two-entry step of total 2^16: a 1 takes `0 .. p1`, a
    /// 0 takes `p1 .. 2^16`.
    pub fn coarse_bit(bit: bool, p1: u32) -> RefStep {
        let p1 = p1.clamp(1, 65535);
        RefStep::Choice {
            total: 1 << 16,
            spans: vec![Span::new(0, p1), Span::new(p1, 65536 - p1)],
            chosen: if bit { 0 } else { 1 },
        }
    }

    /// The coded span and its total.
    pub fn coded(&self) -> (Span, u32) {
        match self {
            RefStep::Choice {
                total,
                spans,
                chosen,
            } => (spans[*chosen], *total),
            RefStep::Uniform { total, symbol } => (Span::new(*symbol, 1), *total),
            RefStep::Bit { bit, p1 } => {
                let span = if *bit {
                    Span::new(0, *p1)
                } else {
                    Span::new(*p1, 65536 - *p1)
                };
                (span, 1 << 16)
            }
        }
    }

    /// What a decoder should recover: the chosen entry or the symbol.
    pub fn answer(&self) -> u32 {
        match self {
            RefStep::Choice { chosen, .. } => *chosen as u32,
            RefStep::Uniform { symbol, .. } => *symbol,
            RefStep::Bit { bit, .. } => u32::from(!*bit),
        }
    }
}

/// Whether the base-256 fraction `value / 2^ev` lies in
/// `[lo, lo + width) / 2^frame`.
fn holds(value: &Nat, ev: u32, lo: &Nat, width: u64, frame: u32) -> bool {
    cmp_scaled(value, ev, lo, frame) != Ordering::Less
        && cmp_scaled(value, ev, &lo.add_u64(width), frame) == Ordering::Less
}

/// The fast coder's arithmetic with an unbounded `low`.
#[derive(Clone, Debug)]
pub struct FastReference {
    low: Nat,
    range: u32,
    frame: u32,
}

impl Default for FastReference {
    fn default() -> Self {
        Self::new()
    }
}

impl FastReference {
    /// The initial interval `[0, 2^32 - 1) / 2^32`.
    pub fn new() -> Self {
        FastReference {
            low: Nat::zero(),
            range: u32::MAX,
            frame: 32,
        }
    }

    /// Offset and width (in units of `2^-frame`) of `span` inside the
    /// current interval.
    pub fn split(&self, span: Span, total: u32) -> (u32, u32) {
        assert!(span.freq >= 1 && span.cum + span.freq <= total && total <= 1 << 16);
        let r = self.range / total;
        let offset = r * span.cum;
        let width = if span.cum + span.freq == total {
            self.range - offset
        } else {
            r * span.freq
        };
        (offset, width)
    }

    /// Narrows to `span` and renormalises.
    pub fn code(&mut self, span: Span, total: u32) {
        let (offset, width) = self.split(span, total);
        self.narrow(offset, width);
    }

    /// Offset and width of the `bit` side of the precise binary split.
    pub fn split_bit(&self, bit: bool, p1: u32) -> (u32, u32) {
        let bound = ((u64::from(self.range) * u64::from(p1)) >> 16) as u32;
        if bit {
            (0, bound)
        } else {
            (bound, self.range - bound)
        }
    }

    /// Narrows to `offset .. offset + width` and renormalises.
    fn narrow(&mut self, offset: u32, width: u32) {
        self.low = self.low.add_u64(offset.into());
        self.range = width;
        while self.range < TOP {
            self.range <<= 8;
            self.low = self.low.shl(8);
            self.frame += 8;
        }
    }

    pub fn step(&mut self, step: &RefStep) {
        if let RefStep::Bit { bit, p1 } = step {
            let (offset, width) = self.split_bit(*bit, *p1);
            self.narrow(offset, width);
            return;
        }
        let (span, total) = step.coded();
        self.code(span, total);
    }

    pub fn low(&self) -> &Nat {
        &self.low
    }

    pub fn range(&self) -> u32 {
        self.range
    }

    /// The interval's denominator is `2^frame`.
    pub fn frame(&self) -> u32 {
        self.frame
    }

    /// Bytes the real encoder has shifted out so far.
    pub fn shifts(&self) -> u32 {
        (self.frame - 32) / 8
    }

    /// Whether `bytes`, read as a base-256 fraction, lies in the interval.
    pub fn holds(&self, bytes: &[u8]) -> bool {
        let value = Nat::from_be_bytes(bytes);
        holds(
            &value,
            8 * bytes.len() as u32,
            &self.low,
            self.range.into(),
            self.frame,
        )
    }

    /// Whether some byte string of length `len` has its value in the interval.
    pub fn fits_in(&self, len: usize) -> bool {
        let bits = 8 * len as u32;
        if bits >= self.frame {
            return true; // `low` itself is such a string
        }
        let s = self.frame - bits;
        // The smallest multiple of 2^s at or above low.
        let q = self
            .low
            .add(&Nat::pow2(s))
            .checked_sub(&Nat::from_u64(1))
            .unwrap();
        let candidate = q.shr(s).shl(s);
        candidate < self.low.add_u64(self.range.into())
    }
}

/// Decodes `bytes` with exact arithmetic: at each step, finds every entry
/// whose sub-interval of the fast coder's interval contains the value; there
/// must be exactly one. Returns the answers (see [`RefStep::answer`]).
///
/// # Errors
///
/// A description of the first step where zero or several entries matched.
pub fn reference_decode(bytes: &[u8], steps: &[RefStep]) -> Result<Vec<u32>, String> {
    let value = Nat::from_be_bytes(bytes);
    let ev = 8 * bytes.len() as u32;
    let mut state = FastReference::new();
    let mut out = Vec::with_capacity(steps.len());
    for (k, step) in steps.iter().enumerate() {
        let inside = |span: Span, total: u32| {
            let (offset, width) = state.split(span, total);
            holds(
                &value,
                ev,
                &state.low.add_u64(offset.into()),
                width.into(),
                state.frame,
            )
        };
        let (answer, span, total) = match step {
            RefStep::Choice { total, spans, .. } => {
                let found: Vec<usize> = if let Some(order) = tiling(spans, *total) {
                    // The sub-intervals tile the interval in `order`, so at
                    // most one holds the value: bisect for the last entry
                    // starting at or below it, then test that one.
                    let r = u64::from(state.range / total);
                    let starts_at_or_below = |i: usize| {
                        let start = state.low.add_u64(r * u64::from(spans[i].cum));
                        cmp_scaled(&value, ev, &start, state.frame) != Ordering::Less
                    };
                    let n = order.partition_point(|&i| starts_at_or_below(i));
                    (n.checked_sub(1).map(|j| order[j]))
                        .filter(|&i| inside(spans[i], *total))
                        .into_iter()
                        .collect()
                } else {
                    (0..spans.len())
                        .filter(|&i| inside(spans[i], *total))
                        .collect()
                };
                if found.len() != 1 {
                    return Err(format!("step {k}: value lies in entries {found:?}"));
                }
                (found[0] as u32, spans[found[0]], *total)
            }
            RefStep::Uniform { total, .. } => {
                // Largest s with low + r·s <= value, by bisection.
                let r = state.range / total;
                let (mut lo, mut hi) = (0u32, *total - 1);
                while lo < hi {
                    let mid = lo + (hi - lo).div_ceil(2);
                    let start = state.low.add_u64(u64::from(r) * u64::from(mid));
                    if cmp_scaled(&value, ev, &start, state.frame) != Ordering::Less {
                        lo = mid;
                    } else {
                        hi = mid - 1;
                    }
                }
                let span = Span::new(lo, 1);
                if !inside(span, *total) {
                    return Err(format!("step {k}: value outside every uniform slot"));
                }
                (lo, span, *total)
            }
            RefStep::Bit { p1, .. } => {
                let found: Vec<bool> = [true, false]
                    .into_iter()
                    .filter(|&bit| {
                        let (offset, width) = state.split_bit(bit, *p1);
                        holds(
                            &value,
                            ev,
                            &state.low.add_u64(offset.into()),
                            width.into(),
                            state.frame,
                        )
                    })
                    .collect();
                if found.len() != 1 {
                    return Err(format!("step {k}: value lies in bits {found:?}"));
                }
                let bit = RefStep::bit(found[0], *p1);
                state.step(&bit);
                out.push(bit.answer());
                continue;
            }
        };
        state.code(span, total);
        out.push(answer);
    }
    Ok(out)
}

/// The entries ordered by `cum`, when they tile `0 .. total` without gaps or
/// overlaps.
fn tiling(spans: &[Span], total: u32) -> Option<Vec<usize>> {
    let mut order: Vec<usize> = (0..spans.len()).collect();
    order.sort_by_key(|&i| spans[i].cum);
    let mut next = 0u32;
    for &i in &order {
        if spans[i].cum != next || spans[i].freq == 0 {
            return None;
        }
        next += spans[i].freq;
    }
    (next == total).then_some(order)
}

/// The exact-rational interval coder: `[low, low + width) / den`.
#[derive(Clone, Debug)]
pub struct IdealReference {
    low: Nat,
    width: Nat,
    den: Nat,
}

impl Default for IdealReference {
    fn default() -> Self {
        Self::new()
    }
}

impl IdealReference {
    /// The unit interval.
    pub fn new() -> Self {
        IdealReference {
            low: Nat::zero(),
            width: Nat::from_u64(1),
            den: Nat::from_u64(1),
        }
    }

    /// Narrows to the exact share `cum / total .. (cum + freq) / total`.
    pub fn code(&mut self, span: Span, total: u32) {
        self.low = self.low.mul_u32(total).add(&self.width.mul_u32(span.cum));
        self.width = self.width.mul_u32(span.freq);
        self.den = self.den.mul_u32(total);
    }

    pub fn step(&mut self, step: &RefStep) {
        let (span, total) = step.coded();
        self.code(span, total);
    }

    /// `(low, width, den)`: the interval is `[low, low + width) / den`.
    pub fn parts(&self) -> (&Nat, &Nat, &Nat) {
        (&self.low, &self.width, &self.den)
    }
}

/// Both references side by side, with the neighbourhood bound.
///
/// Bound (derived here, by induction over the steps): write `a, w` for the
/// fast interval's low end and width, `A, P` for the ideal one's, `u` for the
/// fast coder's unit `2^-frame` before a step of total `T`, and
/// `e = a - A`, `d = w - P`. With `ρ = range/T - ⌊range/T⌋ ∈ [0, 1)` a step
/// gives `e' = e + d·cum/T - ρ·cum·u` and `d' = d·freq/T - ρ·freq·u` (or
/// `+ ρ·cum·u` for the top symbol), so `|e'| + |d'| <= |e| + |d| + 2·T·u`.
/// Initially `|e| + |d| = 2^-32` (the coder starts with `range = 2^32 - 1`).
/// Hence both ends of the fast interval lie within
/// `B = 2^-32 + Σ 2·T_k·u_k` of the ideal interval's ends.
#[derive(Clone, Debug)]
pub struct Tracked {
    pub fast: FastReference,
    pub ideal: IdealReference,
    /// `B` in units of `2^-fast.frame()`.
    bound: Nat,
}

impl Default for Tracked {
    fn default() -> Self {
        Self::new()
    }
}

impl Tracked {
    pub fn new() -> Self {
        Tracked {
            fast: FastReference::new(),
            ideal: IdealReference::new(),
            bound: Nat::from_u64(1),
        }
    }

    pub fn step(&mut self, step: &RefStep) {
        let (span, total) = step.coded();
        self.bound = self.bound.add_u64(2 * u64::from(total));
        let before = self.fast.frame();
        self.fast.step(step);
        self.ideal.code(span, total);
        self.bound = self.bound.shl(self.fast.frame() - before);
    }

    /// Checks `a >= A - B` and `a + w <= A + P + B`, exactly.
    ///
    /// # Errors
    ///
    /// Which end left the neighbourhood.
    pub fn check(&self) -> Result<(), String> {
        let (big_a, big_p, den) = self.ideal.parts();
        let f = self.fast.frame();
        let a = self.fast.low();
        let aw = a.add_u64(self.fast.range().into());
        let b_den = self.bound.mul(den);
        // a >= A - B  <=>  (a + B)·den >= A·2^f
        if a.mul(den).add(&b_den) < big_a.shl(f) {
            return Err("the fast interval starts below the ideal one's neighbourhood".into());
        }
        // a + w <= A + P + B  <=>  (a + w)·den <= (A + P)·2^f + B·den
        if aw.mul(den) > big_a.add(big_p).shl(f).add(&b_den) {
            return Err("the fast interval ends above the ideal one's neighbourhood".into());
        }
        Ok(())
    }
}
