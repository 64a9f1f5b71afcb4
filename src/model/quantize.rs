//! Quantising counts to a power-of-two total.
//!
//! Given counts `c_i` (any `u64`) and a target total `T = 2^k`, produce
//! integer frequencies `f_i` with `Σ f_i = T`, `f_i >= 1` exactly where
//! `c_i > 0`, that lose as little as possible: the cost of coding the counted
//! data with `f` is `Σ c_i · log2(T / f_i)`.
//!
//! Method: start from `f_i = max(1, ⌊c_i·T / N⌋)`, repair the sum one unit
//! at a time — adding where `c_i·ln((f_i + 1) / f_i)` (the cost a unit saves)
//! is largest, removing where `c_i·ln(f_i / (f_i - 1))` (the cost it adds) is
//! smallest — and then move single units from one symbol to another while
//! that lowers the cost. The cost is a sum of convex terms in the `f_i`, so
//! a table no single-unit move improves is optimal among all tables with the
//! same presence pattern. The logarithms are computed in Q62 fixed point
//! (`ln((f + 1) / f) = 2·atanh(1 / (2f + 1))`, a fast-converging series) and
//! compared as `u128` products, so the result is deterministic and free of
//! floating point. Each unit moved costs O(log n) with heaps; the repair moves
//! fewer units than there are present symbols, and the exchange only the
//! units by which the repaired start is still off (usually none).

use alloc::collections::BinaryHeap;
use alloc::vec;
use alloc::vec::Vec;
use core::cmp::{Ordering, Reverse};

#[cfg(doc)]
use crate::error::ErrorKind;
use crate::error::Result;

/// `ln((f + 1) / f)` for `f >= 1` in Q62 fixed point, from
/// `2·atanh(x) = 2·Σ_k x^(2k+1) / (2k + 1)` with `x = 1 / (2f + 1)`
/// (common practice). Accurate to a few units of 2^-62; strictly decreasing
/// in `f` (consecutive values differ by about 2^62 / f², far above that).
const fn series_gain(f: u32) -> u64 {
    // m <= 2^17 + 1, so m² and every term fit in a u64.
    let m = 2 * f as u64 + 1;
    let m2 = m * m;
    let mut power = (1u64 << 62) / m; // x^(2k+1) in Q62
    let mut sum = 0u64;
    let mut k = 0u64;
    while power > 0 {
        sum += power / (2 * k + 1);
        power /= m2;
        k += 1;
    }
    2 * sum
}

/// Frequencies below this have their gain tabulated (the series converges
/// slowest for them).
const SMALL: usize = 256;

const SMALL_GAIN: [u64; SMALL] = {
    let mut t = [0u64; SMALL];
    let mut f = 1;
    while f < SMALL {
        t[f] = series_gain(f as u32);
        f += 1;
    }
    t
};

fn unit_gain(f: u32) -> u64 {
    match SMALL_GAIN.get(f as usize) {
        Some(&g) => g,
        None => series_gain(f),
    }
}

/// A candidate unit move for symbol `index` while its frequency is `freq`:
/// `value` is its count times a `unit_gain` (below 2^126, so it fits).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
struct Move {
    value: u128,
    index: usize,
    freq: u32,
}

impl Move {
    /// Adding a unit: saves `c·ln((f + 1) / f)`.
    fn add(counts: &[u64], freq: &[u32], index: usize) -> Move {
        let f = freq[index];
        Move {
            value: u128::from(counts[index]) * u128::from(unit_gain(f)),
            index,
            freq: f,
        }
    }

    /// Removing a unit (never below 1): costs `c·ln(f / (f - 1))`.
    fn remove(counts: &[u64], freq: &[u32], index: usize) -> Option<Reverse<Move>> {
        let f = freq[index];
        (f > 1).then(|| {
            Reverse(Move {
                value: u128::from(counts[index]) * u128::from(unit_gain(f - 1)),
                index,
                freq: f,
            })
        })
    }
}

impl Ord for Move {
    fn cmp(&self, other: &Self) -> Ordering {
        // Ties go to the lower index, so the result never depends on heap order.
        self.value
            .cmp(&other.value)
            .then_with(|| other.index.cmp(&self.index))
    }
}

impl PartialOrd for Move {
    fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
        Some(self.cmp(other))
    }
}

/// The best entry of `heap` that still describes the table, dropping stale
/// stale ones (recorded at a frequency other than the symbol's current one).
fn current<T: Ord + Copy>(
    heap: &mut BinaryHeap<T>,
    freq: &[u32],
    unwrap: impl Fn(T) -> Move,
) -> Option<Move> {
    while let Some(&top) = heap.peek() {
        let m = unwrap(top);
        if m.freq == freq[m.index] {
            return Some(m);
        }
        heap.pop();
    }
    None
}

/// Quantises `counts` to frequencies summing to `2^log2_total`.
///
/// Every symbol with a non-zero count gets a frequency of at least 1; every
/// symbol with a zero count gets 0.
///
/// # Errors
///
/// [`ErrorKind::InvalidParameter`] when all counts are zero, when
/// `log2_total > 16`, or when more symbols are present than the total has
/// units.
///
/// # Example
///
/// ```
/// use subrange::model::quantize_counts;
///
/// let f = quantize_counts(&[50, 30, 0, 20], 4).unwrap();
/// assert_eq!(f.iter().sum::<u32>(), 16);
/// assert_eq!(f[2], 0);
/// assert_eq!(f, vec![8, 5, 0, 3]);
/// ```
pub fn quantize_counts(counts: &[u64], log2_total: u32) -> Result<Vec<u32>> {
    if log2_total > 16 {
        return Err(crate::Error::invalid_parameter(
            "log2_total",
            "must be at most 16",
        ));
    }
    let total = 1u64 << log2_total;
    let present = counts.iter().filter(|&&c| c > 0).count() as u64;
    if present == 0 {
        return Err(crate::Error::invalid_parameter(
            "counts",
            "at least one count must be non-zero",
        ));
    }
    if present > total {
        return Err(crate::Error::invalid_parameter(
            "log2_total",
            "the total is smaller than the number of present symbols",
        ));
    }
    let sum: u128 = counts.iter().map(|&c| u128::from(c)).sum();
    let mut freq = vec![0u32; counts.len()];
    let mut assigned = 0u64;
    for (f, &c) in freq.iter_mut().zip(counts) {
        if c > 0 {
            let share = (u128::from(c) * u128::from(total) / sum) as u64;
            *f = share.max(1) as u32;
            assigned += u64::from(*f);
        }
    }
    let present: Vec<usize> = (0..counts.len()).filter(|&i| counts[i] > 0).collect();
    // Repair the sum. Present symbols never outnumber the units, so while
    // the sum is too large some frequency is above 1.
    if assigned < total {
        let mut adds: BinaryHeap<Move> = present
            .iter()
            .map(|&i| Move::add(counts, &freq, i))
            .collect();
        while assigned < total {
            let Some(m) = adds.pop() else { break };
            freq[m.index] += 1;
            assigned += 1;
            adds.push(Move::add(counts, &freq, m.index));
        }
    } else if assigned > total {
        let mut removes: BinaryHeap<Reverse<Move>> = present
            .iter()
            .filter_map(|&i| Move::remove(counts, &freq, i))
            .collect();
        while assigned > total {
            let Some(Reverse(m)) = removes.pop() else {
                break;
            };
            freq[m.index] -= 1;
            assigned -= 1;
            removes.extend(Move::remove(counts, &freq, m.index));
        }
    }
    // Move single units while that saves more than it costs. Each move
    // strictly lowers the (fixed-point) cost, so this ends; a symbol's own
    // saving `c·ln((f+1)/f)` is always below its cost `c·ln(f/(f-1))`, so the
    // two ends of a move are different symbols.
    let mut adds: BinaryHeap<Move> = present
        .iter()
        .map(|&i| Move::add(counts, &freq, i))
        .collect();
    let mut removes: BinaryHeap<Reverse<Move>> = present
        .iter()
        .filter_map(|&i| Move::remove(counts, &freq, i))
        .collect();
    while let (Some(add), Some(remove)) = (
        current(&mut adds, &freq, |m| m),
        current(&mut removes, &freq, |Reverse(m)| m),
    ) {
        if add.value <= remove.value {
            break;
        }
        freq[add.index] += 1;
        freq[remove.index] -= 1;
        for i in [add.index, remove.index] {
            adds.push(Move::add(counts, &freq, i));
            removes.extend(Move::remove(counts, &freq, i));
        }
    }
    debug_assert_eq!(freq.iter().map(|&f| u64::from(f)).sum::<u64>(), total);
    Ok(freq)
}

#[cfg(test)]
mod tests {
    use super::*;
    use alloc::vec;

    #[test]
    fn many_rare_symbols_keep_frequency_one() {
        let mut counts = vec![1u64; 200];
        counts[0] = 1_000_000;
        let f = quantize_counts(&counts, 10).unwrap();
        assert_eq!(f.iter().sum::<u32>(), 1024);
        assert!(f.iter().all(|&x| x >= 1));
        assert_eq!(f[0], 1024 - 199);
    }

    #[test]
    fn too_many_symbols_is_an_error() {
        assert!(quantize_counts(&[1, 1, 1], 1).is_err());
        assert!(quantize_counts(&[0, 0], 8).is_err());
        assert!(quantize_counts(&[1], 17).is_err());
    }

    #[test]
    fn unit_gain_is_the_logarithm() {
        let mut prev = u64::MAX;
        for f in [1u32, 2, 3, 10, 255, 4096, 65_535, 65_536] {
            let got = unit_gain(f) as f64 / (1u64 << 62) as f64;
            let want = (1.0 + 1.0 / f64::from(f)).ln();
            assert!((got - want).abs() < 1e-15, "f={f}: {got} vs {want}");
            assert!(unit_gain(f) < prev);
            prev = unit_gain(f);
        }
    }

    #[test]
    fn moves_units_when_the_start_is_off() {
        // The proportional start already sums to the total here, but one unit
        // belongs to the middle symbol: 4.94 of 65536 rounds to 5.
        let counts = [1, 2_795_471_715, 37_072_318_800_191];
        assert_eq!(quantize_counts(&counts, 16).unwrap(), vec![1, 5, 65_530]);
    }

    #[test]
    fn exact_total_of_one_symbol() {
        assert_eq!(quantize_counts(&[0, 9, 0], 16).unwrap(), vec![0, 65536, 0]);
    }
}
