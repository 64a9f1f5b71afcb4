//! Arbitrary bytes as a container read at random: the block list (from the
//! index record or a walk over the frames), then byte ranges through the
//! `IndexedReader`, checked against the one-shot decoder; decoder memory is
//! counted by a global allocator.
//!
//! The checks live in `tests/fuzz_support/decode_index.rs`, shared with the
//! regression replay in `tests/memory/fuzz_regressions.rs`.
#![no_main]

#[path = "../../tests/fuzz_support/mod.rs"]
mod fuzz_support;

use libfuzzer_sys::fuzz_target;

#[global_allocator]
static ALLOC: fuzz_support::alloc::Counting = fuzz_support::alloc::Counting;

fuzz_target!(|data: &[u8]| fuzz_support::decode_index::check(data));
