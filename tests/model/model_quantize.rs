//! `quantize_counts`: the contract (sum, presence, determinism, errors) and
//! the quality of the result, in ideal code length, against a naive
//! proportional rounding and — for tiny alphabets — the exhaustive optimum.

use crate::support::SplitMix64;
use proptest::prelude::*;
use subrange::model::quantize_counts;
use subrange::ErrorKind;

/// Bits to code the counted data with `freq` out of `2^k`: `Σ c·log2(T/f)`.
fn cost(counts: &[u64], freq: &[u32], k: u32) -> f64 {
    let total = f64::from(1u32 << k);
    counts
        .iter()
        .zip(freq)
        .filter(|(&c, _)| c > 0)
        .map(|(&c, &f)| c as f64 * (total / f64::from(f)).log2())
        .sum()
}

/// Naive proportional rounding: `max(1, round(c·T/N))` for present symbols,
/// then the surplus or deficit is put on the largest frequencies, one unit
/// at a time (never below 1).
fn naive(counts: &[u64], k: u32) -> Vec<u32> {
    let total = 1u64 << k;
    let sum: u128 = counts.iter().map(|&c| u128::from(c)).sum();
    let mut f: Vec<u64> = counts
        .iter()
        .map(|&c| {
            if c == 0 {
                0
            } else {
                ((u128::from(c) * u128::from(total) * 2 + sum) / (2 * sum)).max(1) as u64
            }
        })
        .collect();
    let mut assigned: u64 = f.iter().sum();
    while assigned != total {
        let largest = (0..f.len())
            .max_by_key(|&i| (f[i], core::cmp::Reverse(i)))
            .unwrap();
        if assigned < total {
            f[largest] += 1;
            assigned += 1;
        } else {
            // Take from the largest frequency above 1.
            let i = (0..f.len())
                .filter(|&i| f[i] > 1)
                .max_by_key(|&i| (f[i], core::cmp::Reverse(i)))
                .expect("more units than present symbols");
            f[i] -= 1;
            assigned -= 1;
        }
    }
    f.into_iter().map(|x| x as u32).collect()
}

/// Counts with zeros, small and huge values, and the smallest total that
/// holds the present symbols up to 2^16.
fn counts_and_k() -> impl Strategy<Value = (Vec<u64>, u32)> {
    (
        prop::collection::vec(
            prop_oneof![2 => Just(0u64), 3 => 1u64..20, 2 => 1u64..100_000, 1 => 1u64..u64::MAX / 4096],
            1..300,
        ),
        0u32..=16,
    )
        .prop_map(|(mut counts, k)| {
            if counts.iter().all(|&c| c == 0) {
                counts[0] = 1;
            }
            let present = counts.iter().filter(|&&c| c > 0).count() as u32;
            let k = k.max(32 - (present - 1).leading_zeros());
            (counts, k)
        })
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(256))]

    #[test]
    fn contract_holds((counts, k) in counts_and_k()) {
        let f = quantize_counts(&counts, k).unwrap();
        prop_assert_eq!(f.len(), counts.len());
        prop_assert_eq!(f.iter().map(|&x| u64::from(x)).sum::<u64>(), 1u64 << k);
        for (&c, &x) in counts.iter().zip(&f) {
            prop_assert_eq!(c > 0, x >= 1, "count {} got frequency {}", c, x);
        }
        prop_assert_eq!(quantize_counts(&counts, k).unwrap(), f);
    }

    #[test]
    fn never_worse_than_naive_rounding((counts, k) in counts_and_k()) {
        let f = quantize_counts(&counts, k).unwrap();
        let ours = cost(&counts, &f, k);
        let theirs = cost(&counts, &naive(&counts, k), k);
        prop_assert!(ours <= theirs * (1.0 + 1e-12) + 1e-9, "{} > {} for {:?}", ours, theirs, f);
    }

    /// Scaling all counts by a constant does not change the result (the
    /// quantiser only sees proportions).
    #[test]
    fn scale_invariant((counts, k) in counts_and_k(), m in 1u64..1000) {
        prop_assume!(counts.iter().all(|&c| c < u64::MAX / 1000));
        let scaled: Vec<u64> = counts.iter().map(|&c| c * m).collect();
        prop_assert_eq!(quantize_counts(&scaled, k).unwrap(), quantize_counts(&counts, k).unwrap());
    }
}

/// Every way of splitting `total` among the present symbols (frequency >= 1
/// each, 0 for absent ones).
fn compositions(counts: &[u64], total: u32, out: &mut Vec<Vec<u32>>, cur: &mut Vec<u32>) {
    let i = cur.len();
    if i == counts.len() {
        if total == 0 {
            out.push(cur.clone());
        }
        return;
    }
    let rest_present = counts[i + 1..].iter().filter(|&&c| c > 0).count() as u32;
    if counts[i] == 0 {
        cur.push(0);
        compositions(counts, total, out, cur);
        cur.pop();
        return;
    }
    for f in 1..=total.saturating_sub(rest_present) {
        cur.push(f);
        compositions(counts, total - f, out, cur);
        cur.pop();
    }
}

/// For small alphabets and totals the optimum can be found by trying every
/// table: the quantiser must reach it (its module documents optimality among
/// tables with the same presence pattern).
#[test]
fn reaches_the_exhaustive_optimum() {
    let mut checked = 0;
    let mut rng = SplitMix64::new(0x0123_4567_89AB_CDEF);
    for _ in 0..3000 {
        let r = rng.next_u64();
        let n = 1 + (r >> 60) as usize % 4;
        let k = 1 + (r >> 40) as u32 % 5;
        let counts: Vec<u64> = (0..n)
            .map(|i| {
                let v = (r >> (8 * i)) & 0xFF;
                if v < 40 {
                    0
                } else {
                    v * v
                }
            })
            .collect();
        let present = counts.iter().filter(|&&c| c > 0).count() as u32;
        if present == 0 || present > 1 << k {
            continue;
        }
        let f = quantize_counts(&counts, k).unwrap();
        let mut all = Vec::new();
        compositions(&counts, 1 << k, &mut all, &mut Vec::new());
        let best = all
            .iter()
            .map(|g| cost(&counts, g, k))
            .fold(f64::INFINITY, f64::min);
        let ours = cost(&counts, &f, k);
        assert!(
            ours <= best * (1.0 + 1e-12) + 1e-9,
            "{counts:?} k={k}: {f:?} costs {ours}, optimum {best}"
        );
        checked += 1;
    }
    assert!(checked > 1000);
}

#[test]
fn rejects_impossible_requests() {
    let invalid = |r: subrange::Result<Vec<u32>>| {
        matches!(r.unwrap_err().kind(), ErrorKind::InvalidParameter { .. })
    };
    assert!(invalid(quantize_counts(&[], 8)));
    assert!(invalid(quantize_counts(&[0, 0, 0], 8)));
    assert!(invalid(quantize_counts(&[1, 2], 17)));
    assert!(invalid(quantize_counts(&[1, 1, 1], 1)));
    assert!(invalid(quantize_counts(&vec![1; 65_537], 16)));
    assert_eq!(quantize_counts(&[1, 1], 1).unwrap(), [1, 1]);
    assert_eq!(
        quantize_counts(&[u64::MAX, u64::MAX, 1], 16)
            .unwrap()
            .iter()
            .sum::<u32>(),
        65_536
    );
}
