//! Arbitrary frequency tables and symbol sequences through table and adaptive
//! models, interleaved with binary steps in one raw coder stream:
//! decode(encode(x)) == x.
//!
//! The checks live in `tests/fuzz_support/model_roundtrip.rs`, shared with the
//! regression replay in `tests/memory/fuzz_regressions.rs`.
#![no_main]

#[path = "../../tests/fuzz_support/mod.rs"]
mod fuzz_support;

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| fuzz_support::model_roundtrip::check(data));
