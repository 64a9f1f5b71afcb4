//! Arbitrary bytes into the raw range decoder with arbitrary models, for a
//! bounded number of symbols: errors are fine, panics and hangs are not.
//!
//! The checks live in `tests/fuzz_support/decode_raw.rs`, shared with the
//! regression replay in `tests/memory/fuzz_regressions.rs`.
#![no_main]

#[path = "../../tests/fuzz_support/mod.rs"]
mod fuzz_support;

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| fuzz_support::decode_raw::check(data));
