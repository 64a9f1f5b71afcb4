//! subrange: streaming arithmetic-coding compression.
#![no_std]
#![deny(missing_docs, missing_debug_implementations)]
#![forbid(unsafe_code)]

extern crate alloc;
#[cfg(feature = "std")]
extern crate std;

pub mod coder;
pub mod corpus;
mod error;
#[cfg(feature = "std")]
pub mod format;
pub mod model;
#[cfg(feature = "std")]
pub mod preset;
#[cfg(feature = "std")]
pub mod stream;
#[cfg(feature = "std")]
mod vint;

pub use error::{Error, ErrorKind, Result};
#[cfg(feature = "std")]
pub use stream::{
    compress, compress_reader, decompress, decompress_with_limits, Compressor, Decompressor,
    Options,
};
