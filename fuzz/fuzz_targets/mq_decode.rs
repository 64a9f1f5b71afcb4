//! Arbitrary bytes into the MQ decoder for a bounded number of decisions:
//! never a panic, a hang or an input-driven allocation, never a byte read
//! past the input, and out-of-range contexts always a typed error.
//!
//! The checks live in `tests/fuzz_support/mq_decode.rs`, shared with the
//! regression replay in `tests/memory/fuzz_regressions.rs`.
#![no_main]

#[path = "../../tests/fuzz_support/mod.rs"]
mod fuzz_support;

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| fuzz_support::mq_decode::check(data));
