//! Primed messages from untrusted bytes: arbitrary snapshots and frames
//! through the snapshot reader and the message decoder, and round trips
//! through snapshots trained on the input.
//!
//! The checks live in `tests/fuzz_support/decode_frame.rs`, shared with the
//! regression replay in `tests/memory/fuzz_regressions.rs`.
#![no_main]

#[path = "../../tests/fuzz_support/mod.rs"]
mod fuzz_support;

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| fuzz_support::decode_frame::check(data));
