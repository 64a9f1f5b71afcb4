//! Arbitrary bytes as a container, decoded three ways under tight limits:
//! the one-shot decoder, the `Decompressor` fed and drained in chunks, and
//! the `Inspector`; decoder memory is counted by a global allocator.
//!
//! The checks live in `tests/fuzz_support/decode_container.rs`, shared with the
//! regression replay in `tests/memory/fuzz_regressions.rs`.
#![no_main]

#[path = "../../tests/fuzz_support/mod.rs"]
mod fuzz_support;

use libfuzzer_sys::fuzz_target;

#[global_allocator]
static ALLOC: fuzz_support::alloc::Counting = fuzz_support::alloc::Counting;

fuzz_target!(|data: &[u8]| fuzz_support::decode_container::check(data));
