//! Quantising counts to a power-of-two total.
//!
//! Given counts `c_i` (any `u64`) and a target total `T = 2^k`, produce
//! integer frequencies `f_i` with `Σ f_i = T`, `f_i >= 1` exactly where
//! `c_i > 0`, that lose as little as possible: the cost of coding the counted
//! data with `f` is `Σ c_i · log2(T / f_i)`.
//!
//! Method: start from `f_i = max(1, ⌊c_i·T / N⌋)`, then repair the sum one
//! unit at a time, always moving the unit where it changes the cost least —
//! adding where `c_i / (f_i + 1)` is largest, removing where `c_i / (f_i - 1)`
//! is smallest (the first-order change of `c_i·log f_i`). Ratios are compared
//! by cross-multiplication in `u128`, so the result is exact, deterministic and
//! free of floating point. The repair touches at most `n` units, each in
//! O(log n) with a heap.

use alloc::collections::BinaryHeap;
use alloc::vec;
use alloc::vec::Vec;
use core::cmp::Ordering;

use crate::error::{ErrorKind, Result};

/// A candidate unit move: symbol `index` with `num / den` as its priority.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
struct Ratio {
    num: u64,
    den: u64,
    index: usize,
}

impl Ord for Ratio {
    fn cmp(&self, other: &Self) -> Ordering {
        let a = u128::from(self.num) * u128::from(other.den);
        let b = u128::from(other.num) * u128::from(self.den);
        // Ties go to the lower index, so the result never depends on heap order.
        a.cmp(&b).then_with(|| other.index.cmp(&self.index))
    }
}

impl PartialOrd for Ratio {
    fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
        Some(self.cmp(other))
    }
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
        return Err(ErrorKind::InvalidParameter {
            name: "log2_total",
            reason: "must be at most 16",
        }
        .into());
    }
    let total = 1u64 << log2_total;
    let present = counts.iter().filter(|&&c| c > 0).count() as u64;
    if present == 0 {
        return Err(ErrorKind::InvalidParameter {
            name: "counts",
            reason: "at least one count must be non-zero",
        }
        .into());
    }
    if present > total {
        return Err(ErrorKind::InvalidParameter {
            name: "log2_total",
            reason: "the total is smaller than the number of present symbols",
        }
        .into());
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
    match assigned.cmp(&total) {
        Ordering::Equal => {}
        Ordering::Less => {
            // Add units where c / (f + 1) is largest.
            let mut heap: BinaryHeap<Ratio> = counts
                .iter()
                .enumerate()
                .filter(|(_, &c)| c > 0)
                .map(|(index, &c)| Ratio {
                    num: c,
                    den: u64::from(freq[index]) + 1,
                    index,
                })
                .collect();
            while assigned < total {
                let Some(mut top) = heap.pop() else { break };
                freq[top.index] += 1;
                assigned += 1;
                top.den += 1;
                heap.push(top);
            }
        }
        Ordering::Greater => {
            // Remove units where c / (f - 1) is smallest, never below 1.
            let mut heap: BinaryHeap<core::cmp::Reverse<Ratio>> = counts
                .iter()
                .enumerate()
                .filter(|(i, &c)| c > 0 && freq[*i] > 1)
                .map(|(index, &c)| {
                    core::cmp::Reverse(Ratio {
                        num: c,
                        den: u64::from(freq[index]) - 1,
                        index,
                    })
                })
                .collect();
            while assigned > total {
                let Some(core::cmp::Reverse(mut top)) = heap.pop() else {
                    break;
                };
                freq[top.index] -= 1;
                assigned -= 1;
                if freq[top.index] > 1 {
                    top.den -= 1;
                    heap.push(core::cmp::Reverse(top));
                }
            }
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
    fn exact_total_of_one_symbol() {
        assert_eq!(quantize_counts(&[0, 9, 0], 16).unwrap(), vec![0, 65536, 0]);
    }
}
