//! The context-mixing engines (mix, order-2 and history): bit predictors,
//! round trips, compression, damaged input and pinned streams (one test
//! binary; their memory use is checked in `tests/memory/`).

#[allow(dead_code)]
#[path = "../support/mod.rs"]
mod support;

mod history;
mod mix_bits;
mod mix_compression;
mod mix_hostile;
mod mix_roundtrip;
mod mix_stable;

use subrange::model::cm::MixParams;

/// The mix engine with the smallest tables (`mem_log2` 0): fast enough for
/// many proptest cases.
fn small_mix() -> MixParams {
    let mut p = MixParams::default();
    p.mem_log2 = 0;
    p
}
