//! proptest strategies for models with valid, arbitrary parameters.

use proptest::prelude::*;
use subrange::model::{StepwiseModel, StepwiseParams, TableModel};

/// Alphabet sizes across the whole valid range, weighted towards the
/// boundaries where the model changes storage or needs its escape.
pub fn alphabet() -> impl Strategy<Value = u32> {
    prop_oneof![
        Just(1u32),
        2u32..=16,
        17u32..=300,
        301u32..=65_536,
        65_530u32..=65_536,
    ]
}

/// An adaptive model over `alphabet` with increment and limit drawn from the
/// documented valid ranges (`increment` in `1 ..= 8192`, `limit <= 2^16` and
/// at least `alphabet + 1 + 4·increment` without escape, `2 + 4·increment`
/// with it), escape forced on, forced off or left to the model.
pub fn adaptive_model(
    alphabet: impl Strategy<Value = u32>,
) -> impl Strategy<Value = StepwiseModel> {
    (alphabet, 0u8..3, 0u32..8192, any::<u32>()).prop_map(
        |(alphabet, mode, inc_seed, limit_seed)| {
            let no_escape_room = 65_535u32.saturating_sub(alphabet) / 4;
            let (escape, inc_max) = match mode {
                1 if no_escape_room >= 1 => (Some(false), no_escape_room.min(8192)),
                0 => (None, 8192),
                _ => (Some(true), 8192),
            };
            let inc = 1 + inc_seed % inc_max;
            let need = match escape {
                Some(false) => alphabet + 1 + 4 * inc,
                _ => 2 + 4 * inc,
            };
            let mut p = StepwiseParams::default();
            p.increment = inc;
            p.limit = need + limit_seed % (65_536 - need + 1);
            p.escape = escape;
            StepwiseModel::with_params(alphabet, p)
                .or_else(|_| {
                    // Left to itself the model chose no escape, and this limit is too
                    // small for that; ask for the escape instead.
                    p.escape = Some(true);
                    StepwiseModel::with_params(alphabet, p)
                })
                .expect("parameters within the documented range")
        },
    )
}

/// A table model from counts (some zero) quantised to any total that fits.
pub fn table_from_counts(max_alphabet: usize) -> impl Strategy<Value = TableModel> {
    (
        prop::collection::vec(
            prop_oneof![Just(0u64), 1u64..1000, 1u64..u64::MAX / 65_536],
            1..=max_alphabet,
        ),
        0u32..=16,
    )
        .prop_map(|(mut counts, k)| {
            if counts.iter().all(|&c| c == 0) {
                counts[0] = 1;
            }
            let present = counts.iter().filter(|&&c| c > 0).count() as u32;
            let k = k.max(32 - (present - 1).leading_zeros()).min(16);
            TableModel::from_counts(&counts, k).expect("valid counts")
        })
}

/// Frequencies (some zero) summing to `2^k` for `k` in `0 ..= 16`.
pub fn power_of_two_frequencies(max_alphabet: usize) -> impl Strategy<Value = Vec<u32>> {
    (
        0u32..=16,
        prop::collection::vec(any::<u32>(), 0..max_alphabet),
    )
        .prop_map(|(k, cuts)| {
            let total = 1u32 << k;
            let mut cuts: Vec<u32> = cuts.into_iter().map(|c| c % (total + 1)).collect();
            cuts.sort_unstable();
            let mut freq = Vec::with_capacity(cuts.len() + 1);
            let mut prev = 0;
            for c in cuts {
                freq.push(c - prev);
                prev = c;
            }
            freq.push(total - prev);
            freq
        })
}

/// A [`AdaptiveModel`](subrange::model::AdaptiveModel) of any valid shape:
/// alphabet 1 ..= 256, some symbols excluded, short and long segments, slow
/// and fast forgetting, small and large totals.
pub fn refresh_model() -> impl Strategy<Value = subrange::model::AdaptiveModel> {
    use subrange::model::{AdaptiveModel, AdaptiveParams};
    (
        1usize..=256,
        any::<u64>(),
        0u32..=16,
        1u32..80,
        0u32..2000,
        prop_oneof![1u32..300, 300u32..100_000],
    )
        .prop_filter_map(
            "the total must leave every codable symbol a unit",
            |(n, mask, k, first, extra, limit)| {
                // Every symbol codable, or a pattern from the mask bits
                // (symbol 0 always codable).
                let codable: Vec<bool> = (0..n)
                    .map(|s| s == 0 || mask & 1 == 0 || mask >> (s % 64) & 1 == 1)
                    .collect();
                let mut p = AdaptiveParams::default();
                p.log2_total = k;
                p.first_period = first;
                p.max_period = first + extra;
                p.limit = limit;
                AdaptiveModel::with_symbols(&codable, p).ok()
            },
        )
}
