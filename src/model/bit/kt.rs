//! The Krichevsky–Trofimov estimator as a counting bit predictor.
//!
//! After `n0` zeros and `n1` ones the estimator predicts
//! `P(1) = (n1 + ½) / (n0 + n1 + 1)` (Krichevsky & Trofimov, "The performance
//! of universal encoding", IEEE Trans. Inf. Theory 27(2), 1981). Its
//! sequential code length for any binary sequence is within about
//! `½·log2(n) + 1` bits of the best fixed-probability code for that sequence
//! chosen in hindsight.
//!
//! The probability is computed exactly in integers as
//! `round(2^16 · (2·n1 + 1) / (2·n + 2))`, clamped to `1 ..= 65535`. When
//! `n0 + n1` reaches the halving limit both counts are halved (rounding up),
//! so the estimator can also follow slowly drifting sources; with the default
//! limit of 2^30 it never halves in practice.
//!
//! Invariant: `n0 + n1 < limit` after every update.

#[cfg(doc)]
use crate::error::ErrorKind;
use crate::error::Result;
use crate::model::bit::BitPredictor;

/// A Krichevsky–Trofimov bit predictor (exact counts).
///
/// # Example
///
/// ```
/// use subrange::model::{BitPredictor, KtPredictor};
///
/// let mut kt = KtPredictor::default();
/// assert_eq!(kt.p1(), 32768);
/// kt.update(false);
/// kt.update(false);
/// kt.update(true);
/// // (1 + ½) / (3 + 1) = 0.375
/// assert_eq!(kt.p1(), 24576);
/// assert_eq!(kt.counts(), (2, 1));
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct KtPredictor {
    n0: u32,
    n1: u32,
    limit: u32,
}

impl Default for KtPredictor {
    /// A predictor with no observations and the default limit.
    fn default() -> Self {
        KtPredictor {
            n0: 0,
            n1: 0,
            limit: Self::DEFAULT_LIMIT,
        }
    }
}

impl KtPredictor {
    /// Default halving limit: 2^30 observations.
    pub const DEFAULT_LIMIT: u32 = 1 << 30;

    /// A predictor with no observations that halves its counts when their
    /// sum reaches `limit` ([`default`](Self::default) takes
    /// [`DEFAULT_LIMIT`](Self::DEFAULT_LIMIT)).
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] unless `4 <= limit <= 2^30`.
    pub fn new(limit: u32) -> Result<Self> {
        if !(4..=Self::DEFAULT_LIMIT).contains(&limit) {
            return Err(crate::Error::invalid_parameter(
                "limit",
                "must be in 4 ..= 2^30",
            ));
        }
        Ok(KtPredictor {
            n0: 0,
            n1: 0,
            limit,
        })
    }

    /// The counts `(n0, n1)` of zeros and ones seen (after any halving).
    pub fn counts(&self) -> (u32, u32) {
        (self.n0, self.n1)
    }
}

impl BitPredictor for KtPredictor {
    #[inline]
    fn p1(&self) -> u32 {
        let n = u64::from(self.n0) + u64::from(self.n1);
        let num = (2 * u64::from(self.n1) + 1) << 16;
        let den = 2 * n + 2;
        ((num + den / 2) / den).clamp(1, 65535) as u32
    }

    #[inline]
    fn update(&mut self, bit: bool) {
        if bit {
            self.n1 += 1;
        } else {
            self.n0 += 1;
        }
        if self.n0 + self.n1 >= self.limit {
            self.n0 = self.n0.div_ceil(2);
            self.n1 = self.n1.div_ceil(2);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn halves_at_limit() {
        let mut kt = KtPredictor::new(8).unwrap();
        for _ in 0..7 {
            kt.update(true);
        }
        kt.update(false);
        assert_eq!(kt.counts(), (1, 4));
        assert!(KtPredictor::new(1).is_err());
    }
}
