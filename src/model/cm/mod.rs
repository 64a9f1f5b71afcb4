//! Context-mixing engines: whole blocks in, range-coded bytes out.
//!
//! Three engines code a block of bytes bit by bit, predicting every bit
//! from the bytes before it:
//!
//! - the **order-2** engine ([`encode_order2`] / [`decode_order2`]): direct
//!   order-2 context tables whose new contexts inherit order-1 predictions;
//!   fast, and close to the data's order-2 conditional entropy;
//! - the **mix** engine ([`encode_mix`] / [`decode_mix`]): hashed contexts of
//!   orders 1 to 6, word and column contexts and a match model, combined by
//!   logistic mixing and refined by two adaptive probability maps;
//! - the **history** engine ([`encode_history`] / [`decode_history`]):
//!   bit-history contexts, two mixing layers and a refinement chain, with
//!   the x86 transform chosen per block; the strongest model of the crate.
//!
//! The outputs are bare coded streams: a container records the raw length
//! and the parameters (the `order2`, `mix` and `history` presets write each
//! parameter as a number of the block header, `docs/FORMAT.md`) and passes
//! them back to the decoder; [`Order2Params::to_bytes`] and
//! [`MixParams::to_bytes`] give a fixed-size form for callers that store
//! the parameters themselves. Before decoding, a container
//! compares the parameters' need for its block size
//! ([`memory_needed_for`](MixParams::memory_needed_for)) with its limit
//! ([`check_memory`]); the decoders then allocate exactly the tables for
//! `raw_len` bytes and the output, whatever the coded bytes say. Tables hold
//! only the contexts a block of that length can visit, so short blocks are
//! cheap.
//!
//! Everything is integer arithmetic: the same input and parameters give the
//! same bytes on every platform.
//!
//! # Example
//!
//! ```
//! use subrange::model::cm::{check_memory, decode_mix, encode_mix, MixParams};
//!
//! # fn main() -> Result<(), subrange::Error> {
//! let data = b"2031-04-02T10:15Z,gauge 7,level 1.82 m,flow 3.41 m3/s,12.6 C\n".repeat(50);
//! let mut params = MixParams::default();
//! params.mem_log2 = 2; // 4 MiB of context tables
//! let coded = encode_mix(&data, &params)?;
//! assert!(coded.len() * 20 < data.len());
//!
//! // Decoder side: parameters and length come from the container.
//! check_memory(params.memory_needed(), 256 << 20)?;
//! assert_eq!(decode_mix(&coded, data.len(), &params)?, data);
//! # Ok(())
//! # }
//! ```

pub(crate) mod column;
pub(crate) mod hashed;
mod history;
mod io;
pub(crate) mod matcher;
mod mix;
mod order2;
mod params;
mod shrink;
pub(crate) mod word;

#[cfg(feature = "std")]
pub(crate) use history::encode_history_or_store;
pub use history::{decode_history, encode_history, ideal_cost_history, HistoryParams};
#[cfg(feature = "std")]
pub(crate) use mix::encode_mix_or_store;
pub use mix::{decode_mix, encode_mix, ideal_cost_mix};
#[cfg(feature = "std")]
pub(crate) use order2::encode_order2_or_store;
pub use order2::{decode_order2, encode_order2, ideal_cost_order2};
pub use params::{check_memory, MixParams, Order2Params};
