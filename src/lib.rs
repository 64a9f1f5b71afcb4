//! subrange: streaming arithmetic-coding compression.
//!
//! A finite-precision integer range coder, models that feed it frequencies,
//! and (with `std`) a checksummed block container with `std::io` adapters.
//!
//! - [`coder`]: [`Encoder`](coder::Encoder) and [`Decoder`](coder::Decoder)
//!   narrow an integer interval by each symbol's span; a binary step codes
//!   bits with 16-bit probabilities; interleaved lanes for speed (with AVX2
//!   or AVX-512, byte tables decode eight or sixteen lanes per vector
//!   instruction, to the same bytes); ideal-cost accounting.
//! - [`model`]: the [`Model`](model::Model) trait and models: a static
//!   [`TableModel`](model::TableModel), adaptive order-0 models
//!   ([`StepwiseModel`](model::StepwiseModel), updated after every symbol,
//!   and [`AdaptiveModel`](model::AdaptiveModel), whose table is rebuilt at
//!   intervals so it codes over the fast lanes), a
//!   [`ContextModel`](model::ContextModel) over the previous bytes, bit
//!   predictors, logistic mixing, the context-mixing engines of the
//!   `order2`, `mix` and `history` presets, and the reversible x86
//!   call-target transform ([`model::x86`]).
//! - [`batch`]: whole arrays in one call: any model over a slice, values
//!   under a set of tables chosen per value, per-value probability vectors.
//! - [`prime`]: small messages coded from a saved, checksummed model snapshot.
//! - [`mq`]: the MQ binary arithmetic coder of ITU-T T.88 / ISO/IEC 15444-1.
//! - [`corpus`]: seeded synthetic demo data (river-gauge telemetry).
//!
//! # Example: code records with two models in one stream
//!
//! ```
//! use subrange::coder::{Decoder, Encoder};
//! use subrange::model::{StepwiseModel, TableModel};
//!
//! # fn main() -> Result<(), subrange::Error> {
//! let mut status = TableModel::from_counts(&[97, 2, 1], 10)?; // ok, low battery, sensor fault
//! let mut level = StepwiseModel::new(1024)?; // water level in cm
//! let records = [(0u32, 212u32), (0, 213), (1, 213), (0, 215)];
//! let mut enc = Encoder::new();
//! for &(s, l) in &records {
//!     enc.encode(&mut status, s)?;
//!     enc.encode(&mut level, l)?;
//! }
//! let bytes = enc.finish()?;
//! let mut level = StepwiseModel::new(1024)?;
//! let mut dec = Decoder::new(&bytes)?;
//! for &(s, l) in &records {
//!     assert_eq!((dec.decode(&mut status)?, dec.decode(&mut level)?), (s, l));
//! }
//! # Ok(())
//! # }
//! ```
//!
//! # Example: measure coding overhead
//!
//! ```
//! use subrange::coder::Encoder;
//! use subrange::model::TableModel;
//!
//! # fn main() -> Result<(), subrange::Error> {
//! let data = subrange::corpus::skewed(7, 100_000);
//! let mut model = TableModel::from_bytes_histogram(&data, 12)?;
//! let mut enc = Encoder::new();
//! enc.enable_cost_meter();
//! for &b in &data {
//!     enc.encode(&mut model, b.into())?;
//! }
//! let ideal = enc.ideal_cost().unwrap().bits();
//! let actual = (enc.finish()?.len() * 8) as f64;
//! assert!(actual - ideal < 64.0);
//! # Ok(())
//! # }
//! ```
//!
//! # Example: compress a stream into a container
//!
//! ```
//! # #[cfg(feature = "std")]
//! # fn main() -> Result<(), subrange::Error> {
//! use subrange::{compress, decompress, Options};
//!
//! let frames = subrange::corpus::gauge_binary(3, 20_000);
//! let packed = compress(&frames, &Options::new())?;
//! assert_eq!(decompress(&packed)?, frames);
//! # Ok(())
//! # }
//! # #[cfg(not(feature = "std"))]
//! # fn main() {}
//! ```
//!
//! # Example: read a time window without decoding the whole container
//!
//! ```
//! # #[cfg(feature = "std")]
//! # fn main() -> Result<(), Box<dyn std::error::Error>> {
//! use std::io::{Cursor, Read, Seek, SeekFrom};
//! use subrange::{compress, IndexedReader, Options};
//!
//! let readings = subrange::corpus::gauge_csv(5, 300_000);
//! let mut opts = Options::new();
//! opts.block_size(16 << 10)?;
//! let packed = compress(&readings, &opts)?; // with a block index at its end
//! let mut reader = IndexedReader::new(Cursor::new(packed))?;
//! reader.seek(SeekFrom::Start(200_000))?;
//! let mut hour = vec![0u8; 6000];
//! reader.read_exact(&mut hour)?;
//! assert_eq!(hour, &readings[200_000..206_000]);
//! assert!(reader.blocks_decoded() <= 2);
//! # Ok(())
//! # }
//! # #[cfg(not(feature = "std"))]
//! # fn main() {}
//! ```
//!
//! # Reading one container on many workers
//!
//! The block index gives each worker its own blocks: read it once with
//! [`format::BlockIndex::read`], cut the data into ranges on block
//! boundaries with [`BlockIndex::split`](format::BlockIndex::split), and
//! hand each worker (a thread, or a task of a cluster engine reading the
//! file from shared storage) one range and a copy of the index; the worker
//! opens the file, builds an [`IndexedReader::with_index`], seeks to its
//! range and reads it. No block is decoded twice, and the pieces join to
//! the original bytes (`examples/parallel_ranges.rs`).
//!
//! # Cautions
//!
//! - Compression is not encryption.
//! - Compressing secrets together with attacker-chosen data in one stream
//!   leaks information through the output size.
//! - Verify a round trip before deleting originals.
//! - A user model must compute bit-identical probabilities on both sides.
//! - This release reads and writes container format version 1 (see
//!   `docs/FORMAT.md`) and snapshot version 1; newer releases of the same
//!   major version keep reading them.
//!
//! # Crate features
//!
//! - `std` (default): `std::io` sinks and sources, [`std::error::Error`]
//!   conversions, and everything above the coder that needs the standard library.
//! - `parallel` (default): code container blocks on all cores (rayon).
//!
//! With `default-features = false` the crate is `no_std` + `alloc`: the coder,
//! the models, primed messages ([`prime`]) and the MQ coder ([`mq`]).
//!
//! The `subrange` command-line tool is a package of its own (`subrange-cli`,
//! in the repository's `cli/` folder), so none of its dependencies come with
//! the library.
#![no_std]
#![deny(missing_docs, missing_debug_implementations)]
#![deny(unsafe_code, unsafe_op_in_unsafe_fn)]
#![warn(clippy::undocumented_unsafe_blocks)]

extern crate alloc;
#[cfg(feature = "std")]
extern crate std;

pub mod batch;
pub mod coder;
pub mod corpus;
mod error;
#[cfg(feature = "std")]
pub mod format;
pub mod model;
pub mod mq;
#[cfg(feature = "std")]
pub mod preset;
pub mod prime;
#[cfg(feature = "std")]
pub mod stream;
mod vint;

pub use error::{Error, ErrorKind, Result};
#[cfg(feature = "std")]
pub use stream::{
    compress, compress_reader, decompress, decompress_range, decompress_with_limits, Compressor,
    Decompressor, IndexedReader, Options,
};

#[cfg(doctest)]
#[doc = include_str!("../README.md")]
struct ReadmeDoctests;
