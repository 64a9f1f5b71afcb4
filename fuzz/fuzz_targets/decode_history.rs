//! Arbitrary payloads into the history engine's decoder, and short round
//! trips: errors are fine, panics, hangs and mismatches are not.
//!
//! The checks live in `tests/fuzz_support/decode_history.rs`, shared with
//! the regression replay in `tests/memory/fuzz_regressions.rs`.
#![no_main]

#[path = "../../tests/fuzz_support/mod.rs"]
mod fuzz_support;

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| fuzz_support::decode_history::check(data));
