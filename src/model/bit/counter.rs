//! Probability counters whose adaptation rate falls as evidence accumulates.
//!
//! A counter is one `u32`: a 22-bit probability of a 1 in the top bits and a
//! 10-bit count `n` of the updates seen so far in the bottom bits. Each update
//! moves the probability `1/(n + 2)` of the way towards the coded bit, then
//! increments `n` up to a `limit`:
//!
//! ```text
//! p ← p + (bit − p) / (n + 2),   n ← min(n + 1, limit)
//! ```
//!
//! While `n` is below the limit this is exactly the running frequency
//! estimate `(n1 + ½) / (n + 1)` of the Krichevsky–Trofimov estimator (up to
//! rounding), so a new context learns as fast as counting allows; once `n`
//! reaches the limit the rate stays at `1/(limit + 2)` and the counter keeps
//! following drifting statistics like a shift-updated probability. Small
//! limits suit non-stationary data, large ones stationary data.
//!
//! Invariants: the probability stays in `0 .. 2^22` (the step never
//! overshoots the target), and `n <= limit <= 1023`. The packed form lets
//! context tables hold one counter per tree node in four bytes; a counter
//! whose bits are all zero is *not* valid (it means probability 0), tables
//! initialise slots with [`COUNTER_INIT`].

#[cfg(doc)]
use crate::error::ErrorKind;
use crate::error::Result;
use crate::model::bit::BitPredictor;

/// Largest count limit a packed counter can hold.
pub const MAX_COUNT_LIMIT: u32 = 1023;

/// A packed counter at probability ½ with a count of zero.
pub(crate) const COUNTER_INIT: u32 = 1 << 31;

/// `RECIPROCAL[n] = round(2^16 / (n + 2))`.
static RECIPROCAL: [u32; 1024] = {
    let mut t = [0u32; 1024];
    let mut n = 0;
    while n < 1024 {
        let d = n as u32 + 2;
        t[n] = (65536 + d / 2) / d;
        n += 1;
    }
    t
};

/// The 16-bit probability of a packed counter (not clamped).
#[inline]
pub(crate) fn counter_p16(c: u32) -> u32 {
    c >> 16
}

/// The count of a packed counter.
#[inline]
pub(crate) fn counter_n(c: u32) -> u32 {
    c & 1023
}

/// Updates a packed counter with `bit`; `limit` must be at most 1023.
#[inline]
pub(crate) fn counter_update(c: &mut u32, bit: bool, limit: u32) {
    let n = *c & 1023;
    let p = (*c >> 10) as i64;
    let target = if bit { (1i64 << 22) - 1 } else { 0 };
    let p = p + (((target - p) * i64::from(RECIPROCAL[n as usize])) >> 16);
    let n = if n < limit { n + 1 } else { limit };
    *c = ((p as u32) << 10) | n;
}

/// A bit predictor with a count-driven adaptation rate (see the module docs).
///
/// # Example
///
/// ```
/// use subrange::model::{BitPredictor, CountingPredictor};
///
/// let mut p = CountingPredictor::new(255).unwrap();
/// p.update(true);
/// // One 1 seen: (1 + ½) / 2 = ¾.
/// assert!(p.p1().abs_diff(49152) < 4);
/// p.update(false);
/// // One of each: ½.
/// assert!(p.p1().abs_diff(32768) < 4);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct CountingPredictor {
    state: u32,
    limit: u16,
}

impl CountingPredictor {
    /// A predictor at probability ½ whose count stops at `limit`.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] unless `1 <= limit <= 1023`.
    pub fn new(limit: u32) -> Result<Self> {
        if limit == 0 || limit > MAX_COUNT_LIMIT {
            return Err(crate::Error::invalid_parameter(
                "limit",
                "must be in 1 ..= 1023",
            ));
        }
        Ok(CountingPredictor {
            state: COUNTER_INIT,
            limit: limit as u16,
        })
    }

    /// Updates seen so far (saturating at the limit).
    pub fn count(&self) -> u32 {
        counter_n(self.state)
    }
}

impl BitPredictor for CountingPredictor {
    #[inline]
    fn p1(&self) -> u32 {
        counter_p16(self.state).clamp(1, 65535)
    }

    #[inline]
    fn update(&mut self, bit: bool) {
        counter_update(&mut self.state, bit, u32::from(self.limit));
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn follows_counting_estimate_below_limit() {
        let mut c = COUNTER_INIT;
        let mut ones = 0u32;
        for i in 0..500u32 {
            let bit = (i * 7) % 10 < 3;
            counter_update(&mut c, bit, 1023);
            ones += u32::from(bit);
            let n = i + 1;
            let kt = (2 * ones + 1) as f64 / (2 * n + 2) as f64;
            let got = counter_p16(c) as f64 / 65536.0;
            assert!((got - kt).abs() < 0.002, "n={n} got={got} kt={kt}");
        }
        assert_eq!(counter_n(c), 500);
    }

    #[test]
    fn stays_in_range_at_the_limit() {
        let mut c = COUNTER_INIT;
        for _ in 0..5000 {
            counter_update(&mut c, true, 3);
        }
        assert_eq!(counter_n(c), 3);
        assert!(counter_p16(c) > 65000);
        for _ in 0..5000 {
            counter_update(&mut c, false, 3);
        }
        assert!(counter_p16(c) < 100);
        assert!(CountingPredictor::new(0).is_err());
        assert!(CountingPredictor::new(1024).is_err());
    }
}
