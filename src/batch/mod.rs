//! Batch coding: whole arrays of symbols in one call.
//!
//! Callers that hold all their symbols in memory at once — a learned codec's
//! latent values, a column of readings — want one call per array, not one per
//! symbol. Each function here codes a whole slice into one ordinary range
//! coded stream (see [`Encoder`]) and decodes it back into a slice whose
//! length the caller knows (the stream stores no length).
//!
//! - [`encode_symbols`] / [`decode_symbols`]: any [`Model`] (an
//!   [`StepwiseModel`](crate::model::StepwiseModel) that learns as it codes,
//!   a fixed [`TableModel`](crate::model::TableModel), ...) over a slice of
//!   symbols.
//! - [`IndexedTables`] with [`encode_indexed`] / [`decode_indexed`]: every
//!   value coded with the table a per-value index selects, less an optional
//!   per-value offset (the layout of learned codecs, whose network predicts a
//!   scale per value and a set of precomputed tables covers the scales).
//! - [`encode_probabilities`] / [`decode_probabilities`]: every symbol coded
//!   under its own probability vector, converted exactly by
//!   [`ProbabilityAdapter`](crate::model::ProbabilityAdapter).
//!
//! Invariant: every coded stream of a batch call is byte for byte the
//! stream the plain [`Encoder`] makes when it is given the same spans one at
//! a time;
//! the decoder reports damage and truncation as typed errors and checks that
//! the whole input was used.

mod indexed;
mod vectors;

pub use indexed::{decode_indexed, encode_indexed, IndexedTables};
pub use vectors::{decode_probabilities, encode_probabilities};

use alloc::vec::Vec;

use crate::coder::{Decoder, Encoder};
use crate::error::Result;
use crate::model::Model;

/// Codes `symbols` with `model` into one stream, letting the model learn
/// each symbol in turn.
///
/// # Errors
///
/// As for [`Encoder::encode`]: [`ErrorKind::UncodableSymbol`](crate::ErrorKind::UncodableSymbol)
/// for a symbol the model cannot code.
///
/// # Example
///
/// ```
/// use subrange::batch::{decode_symbols, encode_symbols};
/// use subrange::model::StepwiseModel;
///
/// # fn main() -> Result<(), subrange::Error> {
/// // Flow readings of a gauge, in litres a second.
/// let flow: Vec<u32> = (0..1000).map(|i| 300 + (i % 7) * 3).collect();
/// let bytes = encode_symbols(&mut StepwiseModel::new(1024)?, &flow)?;
/// assert!(bytes.len() < 400);
/// let mut back = vec![0; flow.len()];
/// decode_symbols(&mut StepwiseModel::new(1024)?, &bytes, &mut back)?;
/// assert_eq!(back, flow);
/// # Ok(())
/// # }
/// ```
pub fn encode_symbols<M: Model + ?Sized>(model: &mut M, symbols: &[u32]) -> Result<Vec<u8>> {
    let mut enc = Encoder::with_sink(Vec::with_capacity(symbols.len() / 2 + 8));
    for &s in symbols {
        enc.encode(model, s)?;
    }
    enc.finish()
}

/// Decodes `out.len()` symbols coded by [`encode_symbols`] with a model in
/// the same starting state.
///
/// # Errors
///
/// [`ErrorKind::Truncated`](crate::ErrorKind::Truncated),
/// [`ErrorKind::CorruptStream`](crate::ErrorKind::CorruptStream) or
/// [`ErrorKind::TrailingBytes`](crate::ErrorKind::TrailingBytes) for input
/// that is not such a stream.
pub fn decode_symbols<M: Model + ?Sized>(
    model: &mut M,
    bytes: &[u8],
    out: &mut [u32],
) -> Result<()> {
    let mut dec = Decoder::new(bytes)?;
    for slot in out.iter_mut() {
        *slot = dec.decode(model)?;
    }
    dec.finish()?;
    Ok(())
}
