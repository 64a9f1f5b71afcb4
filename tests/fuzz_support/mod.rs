//! The checks behind every fuzz target, shared by the fuzz crate (each
//! target in `fuzz/fuzz_targets/` is one call into a module here) and by
//! `tests/memory/fuzz_regressions.rs`, which replays the inputs kept under
//! `tests/data/fuzz/<target>/` through the same checks in the ordinary
//! test suite.
//!
//! Each module has one `check(data: &[u8])` that panics when a promise is
//! broken and returns otherwise (errors on bad input are expected, not
//! failures). The memory checks need the [`alloc::Counting`] allocator
//! installed as the binary's global allocator.
#![allow(dead_code)]

pub mod alloc;
pub mod decode_container;
pub mod decode_frame;
pub mod decode_history;
pub mod decode_index;
pub mod decode_raw;
pub mod model_roundtrip;
pub mod mq_decode;
pub mod pool;
pub mod roundtrip;

/// A target's check: panics when a promise is broken.
pub type Check = fn(&[u8]);

/// Every target by name, with its check.
pub const TARGETS: &[(&str, Check)] = &[
    ("decode_container", decode_container::check),
    ("decode_frame", decode_frame::check),
    ("decode_index", decode_index::check),
    ("decode_history", decode_history::check),
    ("decode_raw", decode_raw::check),
    ("model_roundtrip", model_roundtrip::check),
    ("mq_decode", mq_decode::check),
    ("roundtrip", roundtrip::check),
];
