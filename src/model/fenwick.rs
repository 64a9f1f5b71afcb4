//! A Fenwick tree (binary indexed tree) of symbol frequencies.
//!
//! Fenwick, "A new data structure for cumulative frequency tables",
//! Software—Practice and Experience 24(3), 1994. Node `i` (1-based) holds the
//! sum of the `i & -i` frequencies ending at symbol `i - 1`. Prefix sums,
//! updates and "which symbol holds cumulative position t" each take
//! O(log n) steps, so adaptive models over large alphabets stay fast.
//!
//! Invariant: `tree[i] = Σ freq[i - (i & -i) .. i]` for every node, and the
//! plain frequencies are kept beside the tree for O(1) lookups and rebuilds.

use alloc::vec;
use alloc::vec::Vec;

/// Cumulative frequencies over `n` symbols with O(log n) queries and updates.
///
/// # Example
///
/// ```
/// use subrange::model::FenwickTree;
///
/// let mut tree = FenwickTree::from_frequencies(&[3, 0, 5, 2]);
/// assert_eq!(tree.prefix(2), 3); // freq[0] + freq[1]
/// assert_eq!(tree.find(7), (2, 3)); // position 7 is in symbol 2, which starts at 3
/// tree.add(1, 4);
/// assert_eq!(tree.total(), 14);
/// ```
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct FenwickTree {
    tree: Vec<u32>,
    freq: Vec<u32>,
    total: u32,
    /// Largest power of two not above `n` (the first step of `find`).
    top_bit: usize,
}

impl FenwickTree {
    /// Builds a tree over the given frequencies in O(n).
    pub fn from_frequencies(freq: &[u32]) -> Self {
        let mut t = FenwickTree {
            tree: vec![0; freq.len() + 1],
            freq: freq.to_vec(),
            total: 0,
            top_bit: if freq.is_empty() {
                0
            } else {
                1 << (usize::BITS - 1 - freq.len().leading_zeros())
            },
        };
        t.rebuild();
        t
    }

    /// Recomputes the tree from the plain frequencies in O(n).
    fn rebuild(&mut self) {
        let n = self.freq.len();
        self.tree[1..].copy_from_slice(&self.freq);
        self.tree[0] = 0;
        for i in 1..=n {
            let parent = i + (i & i.wrapping_neg());
            if parent <= n {
                self.tree[parent] += self.tree[i];
            }
        }
        self.total = self.freq.iter().sum();
    }

    /// Number of symbols.
    pub fn len(&self) -> usize {
        self.freq.len()
    }

    /// True when there are no symbols.
    pub fn is_empty(&self) -> bool {
        self.freq.is_empty()
    }

    /// Sum of all frequencies.
    pub fn total(&self) -> u32 {
        self.total
    }

    /// Frequency of `symbol`.
    ///
    /// # Panics
    ///
    /// Panics if `symbol >= len()`.
    pub fn frequency(&self, symbol: usize) -> u32 {
        self.freq[symbol]
    }

    /// Sum of the frequencies of symbols `0 .. symbol`.
    ///
    /// # Panics
    ///
    /// Panics if `symbol > len()`.
    #[inline(always)]
    pub fn prefix(&self, symbol: usize) -> u32 {
        let mut i = symbol;
        let mut sum = 0;
        while i > 0 {
            sum += self.tree[i];
            i &= i - 1;
        }
        sum
    }

    /// Adds `delta` to the frequency of `symbol`.
    ///
    /// # Panics
    ///
    /// Panics if `symbol >= len()` (or, in debug builds, on overflow).
    #[inline(always)]
    pub fn add(&mut self, symbol: usize, delta: u32) {
        self.freq[symbol] += delta;
        self.total += delta;
        let n = self.freq.len();
        let mut i = symbol + 1;
        while i <= n {
            self.tree[i] += delta;
            i += i & i.wrapping_neg();
        }
    }

    /// The symbol whose cumulative interval contains `target`, and the
    /// cumulative frequency where it starts. Symbols of zero frequency are
    /// never returned for `target < total()`.
    ///
    /// For `target >= total()` the result is the last symbol's start (callers
    /// keep `target < total()`).
    #[inline(always)]
    pub fn find(&self, target: u32) -> (usize, u32) {
        let n = self.freq.len();
        let mut pos = 0usize;
        let mut rest = target;
        let mut step = self.top_bit;
        while step > 0 {
            let next = pos + step;
            if next <= n && self.tree[next] <= rest {
                pos = next;
                rest -= self.tree[next];
            }
            step >>= 1;
        }
        // `pos` symbols have cumulative sum <= target; symbol `pos` holds it.
        if pos >= n {
            // target >= total: the last symbol, and where it starts.
            let last = n.saturating_sub(1);
            return (last, self.total - self.freq.get(last).copied().unwrap_or(0));
        }
        (pos, target - rest)
    }

    /// Replaces every frequency `f` by `map(f)` and rebuilds in O(n).
    pub fn map_all(&mut self, mut map: impl FnMut(u32) -> u32) {
        for f in &mut self.freq {
            *f = map(*f);
        }
        self.rebuild();
    }

    /// The plain frequencies.
    pub fn frequencies(&self) -> &[u32] {
        &self.freq
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use alloc::vec::Vec;

    #[test]
    fn matches_naive_prefix_and_find() {
        let freq: Vec<u32> = (0..37).map(|i| (i * 7 + 3) % 5).collect();
        let mut t = FenwickTree::from_frequencies(&freq);
        let mut naive = freq.clone();
        for step in 0..200usize {
            let s = (step * 13) % naive.len();
            t.add(s, (step % 3) as u32);
            naive[s] += (step % 3) as u32;
            let mut cum = 0;
            for (i, &f) in naive.iter().enumerate() {
                assert_eq!(t.prefix(i), cum);
                for target in cum..cum + f {
                    assert_eq!(t.find(target), (i, cum));
                }
                cum += f;
            }
            assert_eq!(t.total(), cum);
        }
    }
}
