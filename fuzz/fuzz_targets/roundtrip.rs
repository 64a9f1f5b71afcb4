//! Arbitrary data through every preset: decode(encode(x)) == x by the
//! one-shot functions and by the `std::io` adapters.
//!
//! The checks live in `tests/fuzz_support/roundtrip.rs`, shared with the
//! regression replay in `tests/memory/fuzz_regressions.rs`.
#![no_main]

#[path = "../../tests/fuzz_support/mod.rs"]
mod fuzz_support;

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| fuzz_support::roundtrip::check(data));
