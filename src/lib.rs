//! subrange: streaming arithmetic-coding compression.
//!
//! The coder, the models and primed messages ([`coder`], [`model`],
//! [`prime`]) need only `core` and `alloc`: build with
//! `--no-default-features` for targets without `std`.
#![no_std]
#![deny(missing_docs, missing_debug_implementations)]
#![forbid(unsafe_code)]

extern crate alloc;
#[cfg(feature = "std")]
extern crate std;

pub mod coder;
mod error;
pub mod model;
pub mod prime;

pub use error::{Error, ErrorKind, Result};
