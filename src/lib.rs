//! subrange: streaming arithmetic-coding compression.
#![no_std]
#![deny(missing_docs, missing_debug_implementations)]
#![forbid(unsafe_code)]

extern crate alloc;
#[cfg(feature = "std")]
extern crate std;

pub mod mq;
