//! Symbols coded under per-symbol probability vectors.
//!
//! Row `i` of a row-major `count × alphabet` array holds the probabilities
//! of symbol `i`; [`ProbabilityAdapter`] turns each row into a frequency
//! table exactly (integer arithmetic on the bits of each float), so encoder
//! and decoder build the same table from the same floats.
//!
//! Invariant: step `i` codes with the table of row `i` alone; the decoder
//! rebuilds it from the same row before locating its symbol.

use alloc::vec::Vec;

use crate::coder::{Decoder, Encoder};
#[cfg(doc)]
use crate::error::ErrorKind;
use crate::error::Result;
use crate::model::{Probability, ProbabilityAdapter};

fn rows(len: usize, alphabet: usize, count: usize) -> Result<()> {
    let fits = alphabet.checked_mul(count).is_some_and(|need| need == len);
    if alphabet == 0 && count > 0 || !fits {
        return Err(crate::Error::invalid_parameter(
            "probabilities",
            "needs one row of `alphabet` probabilities per symbol",
        ));
    }
    Ok(())
}

/// Codes `symbols[i]` with the probabilities of row `i` of `probabilities`
/// (`symbols.len()` rows of `alphabet` values), tables with a total of
/// `2^log2_total`.
///
/// # Errors
///
/// [`ErrorKind::InvalidParameter`] when the array is not `symbols.len()`
/// rows of `alphabet`, for `log2_total` outside `1 ..= 16`, for a row the
/// adapter rejects (NaN, infinite or negative values, all zeros, more
/// symbols than the total); [`ErrorKind::UncodableSymbol`] for a symbol
/// outside the alphabet.
///
/// # Example
///
/// ```
/// use subrange::batch::{decode_probabilities, encode_probabilities};
///
/// # fn main() -> Result<(), subrange::Error> {
/// // A predictor's output for three steps of a gauge: fall, steady, rise.
/// let probs = [0.1f32, 0.8, 0.1, 0.2, 0.7, 0.1, 0.05, 0.15, 0.8];
/// let symbols = [1, 1, 2];
/// let bytes = encode_probabilities(&probs, 3, &symbols, 16)?;
/// let mut back = [0; 3];
/// decode_probabilities(&probs, 3, &bytes, 16, &mut back)?;
/// assert_eq!(back, symbols);
/// # Ok(())
/// # }
/// ```
pub fn encode_probabilities<P: Probability>(
    probabilities: &[P],
    alphabet: usize,
    symbols: &[u32],
    log2_total: u32,
) -> Result<Vec<u8>> {
    rows(probabilities.len(), alphabet, symbols.len())?;
    let mut adapter = ProbabilityAdapter::with_log2_total(log2_total)?;
    adapter.reserve(alphabet);
    let mut enc = Encoder::new();
    for (row, &s) in probabilities.chunks_exact(alphabet.max(1)).zip(symbols) {
        adapter.set_probabilities(row)?;
        enc.encode(&mut adapter, s)?;
    }
    enc.finish()
}

/// Decodes `out.len()` symbols coded by [`encode_probabilities`] with the
/// same probabilities and total.
///
/// # Errors
///
/// As for [`encode_probabilities`] for the probabilities;
/// [`ErrorKind::Truncated`], [`ErrorKind::CorruptStream`] or
/// [`ErrorKind::TrailingBytes`] for input that is not such a stream.
pub fn decode_probabilities<P: Probability>(
    probabilities: &[P],
    alphabet: usize,
    bytes: &[u8],
    log2_total: u32,
    out: &mut [u32],
) -> Result<()> {
    rows(probabilities.len(), alphabet, out.len())?;
    let mut adapter = ProbabilityAdapter::with_log2_total(log2_total)?;
    adapter.reserve(alphabet);
    let mut dec = Decoder::new(bytes)?;
    for (row, slot) in probabilities
        .chunks_exact(alphabet.max(1))
        .zip(out.iter_mut())
    {
        adapter.set_probabilities(row)?;
        *slot = dec.decode(&mut adapter)?;
    }
    dec.finish()?;
    Ok(())
}
