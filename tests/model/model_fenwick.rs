//! The Fenwick tree against a plain array of frequencies.

use proptest::prelude::*;
use subrange::model::FenwickTree;

#[derive(Debug, Clone)]
enum Op {
    Add(usize, u32),
    Halve,
}

fn op() -> impl Strategy<Value = Op> {
    prop_oneof![
        4 => (any::<usize>(), 0u32..500).prop_map(|(i, d)| Op::Add(i, d)),
        1 => Just(Op::Halve),
    ]
}

/// Naive answers: prefix sums and the symbol holding a target.
fn naive_prefix(freq: &[u32], i: usize) -> u32 {
    freq[..i].iter().sum()
}

/// The symbol whose cumulative interval holds `target`, by a linear scan
/// over the running sums `cum` (`cum[i]` = sum of `freq[..i]`).
fn naive_find(freq: &[u32], cum: &[u32], target: u32) -> (usize, u32) {
    let i = (0..freq.len())
        .find(|&i| cum[i] <= target && target < cum[i] + freq[i])
        .expect("target below the total");
    (i, cum[i])
}

fn check(tree: &FenwickTree, naive: &[u32]) -> Result<(), TestCaseError> {
    prop_assert_eq!(tree.len(), naive.len());
    prop_assert_eq!(tree.is_empty(), naive.is_empty());
    prop_assert_eq!(tree.frequencies(), naive);
    let total: u32 = naive.iter().sum();
    prop_assert_eq!(tree.total(), total);
    let cum: Vec<u32> = (0..=naive.len()).map(|i| naive_prefix(naive, i)).collect();
    for (i, &c) in cum.iter().enumerate() {
        prop_assert_eq!(tree.prefix(i), c);
    }
    for (i, &f) in naive.iter().enumerate() {
        prop_assert_eq!(tree.frequency(i), f);
    }
    // Every target when the total is small, a spread of them otherwise.
    let step = (total / 200).max(1);
    for t in (0..total)
        .step_by(step as usize)
        .chain(total.checked_sub(1))
    {
        let (s, start) = tree.find(t);
        prop_assert_eq!((s, start), naive_find(naive, &cum, t), "target {}", t);
        prop_assert!(naive[s] > 0);
    }
    Ok(())
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(64))]

    #[test]
    fn matches_a_plain_array(
        freq in prop::collection::vec(prop_oneof![Just(0u32), 0u32..100, 0u32..5000], 0..300),
        ops in prop::collection::vec(op(), 0..200),
    ) {
        let mut tree = FenwickTree::from_frequencies(&freq);
        let mut naive = freq.clone();
        check(&tree, &naive)?;
        for op in ops {
            match op {
                Op::Add(i, d) if !naive.is_empty() => {
                    let i = i % naive.len();
                    tree.add(i, d);
                    naive[i] += d;
                }
                Op::Add(..) => {}
                Op::Halve => {
                    tree.map_all(|f| f / 2);
                    naive.iter_mut().for_each(|f| *f /= 2);
                }
            }
            check(&tree, &naive)?;
        }
    }

    /// Targets at or past the total: documented to give the last symbol and
    /// the cumulative frequency where it starts.
    #[test]
    fn targets_past_the_total(freq in prop::collection::vec(0u32..1000, 1..100), extra in 0u32..1000) {
        let tree = FenwickTree::from_frequencies(&freq);
        let total: u32 = freq.iter().sum();
        let last = freq.len() - 1;
        prop_assert_eq!(tree.find(total + extra), (last, total - freq[last]));
    }
}

#[test]
fn power_of_two_and_odd_sizes() {
    for n in [1usize, 2, 3, 15, 16, 17, 255, 256, 257, 4096, 65_536] {
        let freq: Vec<u32> = (0..n as u32).map(|i| (i * 37 + 11) % 7).collect();
        let tree = FenwickTree::from_frequencies(&freq);
        let mut cum = 0;
        for (i, &f) in freq.iter().enumerate() {
            assert_eq!(tree.prefix(i), cum);
            if f > 0 {
                assert_eq!(tree.find(cum), (i, cum));
                assert_eq!(tree.find(cum + f - 1), (i, cum));
            }
            cum += f;
        }
        assert_eq!(tree.total(), cum);
    }
}
