//! The history engine: bit-history context models, two mixing layers and
//! a refinement chain; the strongest model of the crate.
//!
//! Methods, and where they come from (cited from memory):
//! - *indirect context models*: each context slot keeps a bit history, a
//!   small state machine of recent zeros and ones, and an adaptive table
//!   maps the state to a probability (Mahoney, "Data Compression
//!   Explained", 2010–2013); states with one count zero are the
//!   deterministic contexts of Cleary & Witten ("Data compression using
//!   adaptive coding and partial string matching", IEEE Trans. Commun.,
//!   1984), whose reliability the map learns ([`state`]);
//! - *logistic mixing* with context-selected weight sets (Mahoney,
//!   "Adaptive weighing of context models for lossless data compression",
//!   Florida Tech. CS-2005-16, 2005), here in two layers ([`mixer`]);
//! - *adaptive probability maps* with interpolation, in a chain keyed by
//!   order 1 and order 2 (secondary estimation, from the same textbook);
//! - orders 1–4 and 6, word, sparse and record contexts ([`contexts`]), a
//!   direct order 0 and order 1 with `1/n` counting (the order-0 counts
//!   coded in place of the mix while they predict better, [`referee`]), and a match model over
//!   the whole block with a minimum length and a backward check
//!   ([`MatchModel`](crate::model::cm::matcher));
//! - the x86 call/jump target transform ([`x86`](crate::model::x86)),
//!   chosen per block by detection.
//!
//! A payload is one flags byte (bit 0: the block was transformed as x86
//! code; other bits 0) and the range-coded bytes. The decoder codes into
//! the caller's buffer and then undoes the transform there, so it needs
//! [`HistoryParams::memory_needed_for`] bytes beside the buffers, nothing
//! sized by the payload.
//!
//! Invariants: encoder and decoder run one model code path ([`BitIo`]); all
//! arithmetic is integer, so the output is the same on every platform; all
//! table indices are masked or reduced, so no input can index out of range.
//!
//! # Example
//!
//! ```
//! use subrange::model::cm::{decode_history, encode_history, HistoryParams};
//!
//! # fn main() -> Result<(), subrange::Error> {
//! let data = subrange::corpus::gauge_csv(7, 20_000);
//! let params = HistoryParams::default();
//! let coded = encode_history(&data, &params)?;
//! assert!(coded.len() * 4 < data.len());
//! let mut back = vec![0; data.len()];
//! decode_history(&coded, &mut back, &params)?;
//! assert_eq!(back, data);
//! # Ok(())
//! # }
//! ```

mod contexts;
mod engine;
mod kernel;
mod mixer;
mod params;
mod referee;
mod refine;
mod slots;
mod state;

use alloc::vec::Vec;

use crate::coder::{Decoder, Encoder, IdealCost};
#[cfg(doc)]
use crate::error::ErrorKind;
use crate::error::Result;
#[cfg(test)]
use crate::model::cm::io::BitIo;
use crate::model::cm::shrink::code_bytes;
use crate::model::x86;
use engine::Engine;
pub use params::HistoryParams;

/// Flags bit: the block was coded after [`x86::to_absolute`].
const FLAG_X86: u8 = 1;

/// The block as the engine codes it (transformed when it is x86 code), and
/// the flags byte saying so.
fn prepare<'a>(data: &'a [u8], params: &HistoryParams) -> (alloc::borrow::Cow<'a, [u8]>, u8) {
    if params.x86 && x86::looks_like_x86(data) {
        let mut t = data.to_vec();
        x86::to_absolute(&mut t);
        (alloc::borrow::Cow::Owned(t), FLAG_X86)
    } else {
        (alloc::borrow::Cow::Borrowed(data), 0)
    }
}

fn encoder_until(
    data: &[u8],
    params: &HistoryParams,
    meter: bool,
    check: bool,
) -> Result<Option<(Encoder, u8)>> {
    let (block, flags) = prepare(data, params);
    let mut engine = Engine::new(params, block.len())?;
    let mut enc = Encoder::with_sink(Vec::with_capacity(block.len() / 3 + 16));
    if meter {
        enc.enable_cost_meter();
    }
    let coded = code_bytes(block.len(), enc, check, |enc, i| {
        engine.code_byte(enc, block[i])?;
        engine.push(&block[..=i]);
        Ok(())
    })?;
    Ok(coded.map(|e| (e, flags)))
}

fn finish(enc: Encoder, flags: u8) -> Result<Vec<u8>> {
    let coded = enc.finish()?;
    let mut out = Vec::with_capacity(coded.len() + 1);
    out.push(flags);
    out.extend_from_slice(&coded);
    Ok(out)
}

/// Compresses `data` with the history engine.
///
/// The output is a flags byte and a bare range-coded stream; the decoder
/// needs the length of `data` and the same parameters.
///
/// # Errors
///
/// [`ErrorKind::InvalidParameter`] when `params` is out of range.
pub fn encode_history(data: &[u8], params: &HistoryParams) -> Result<Vec<u8>> {
    let (enc, flags) = encoder_until(data, params, false, false)?.expect("no check");
    finish(enc, flags)
}

/// As [`encode_history`], but `None` (store the block) when its first
/// sixteenth does not shrink.
#[cfg_attr(not(feature = "std"), allow(dead_code))]
pub(crate) fn encode_history_or_store(
    data: &[u8],
    params: &HistoryParams,
) -> Result<Option<Vec<u8>>> {
    encoder_until(data, params, false, true)?
        .map(|(e, f)| finish(e, f))
        .transpose()
}

/// The ideal cost of coding `data` with the history engine (`Σ -log2 p`
/// over the coded bits, the flags byte not counted).
///
/// # Errors
///
/// As for [`encode_history`].
pub fn ideal_cost_history(data: &[u8], params: &HistoryParams) -> Result<IdealCost> {
    let (enc, _) = encoder_until(data, params, true, false)?.expect("no check");
    Ok(enc.ideal_cost().copied().unwrap_or_default())
}

/// Decompresses a payload of [`encode_history`] into `out`, whose length is
/// the raw length.
///
/// # Errors
///
/// [`ErrorKind::CorruptStream`] for unknown flags,
/// [`ErrorKind::Truncated`], [`ErrorKind::CorruptStream`] or
/// [`ErrorKind::TrailingBytes`] when the payload is not a stream of
/// `out.len()` bytes; [`ErrorKind::InvalidParameter`] for bad parameters.
pub fn decode_history(payload: &[u8], out: &mut [u8], params: &HistoryParams) -> Result<()> {
    let Some((&flags, coded)) = payload.split_first() else {
        return Err(crate::Error::truncated(0));
    };
    if flags & !FLAG_X86 != 0 {
        return Err(crate::Error::corrupt_stream(
            0,
            "unknown flags in a history block",
        ));
    }
    let mut engine = Engine::new(params, out.len())?;
    let mut dec = Decoder::new(coded)?;
    for i in 0..out.len() {
        out[i] = engine.code_byte(&mut dec, 0)?;
        engine.push(&out[..=i]);
    }
    dec.finish()?;
    if flags & FLAG_X86 != 0 {
        x86::to_relative(out);
    }
    Ok(())
}

/// Codes `data` through any [`BitIo`] (tests compare sides with it).
#[cfg(test)]
fn run<I: BitIo>(io: &mut I, data: &[u8], params: &HistoryParams) -> Result<()> {
    let mut engine = Engine::new(params, data.len())?;
    for i in 0..data.len() {
        engine.code_byte(io, data[i])?;
        engine.push(&data[..=i]);
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn round_trips_text_binary_and_code() {
        let p = HistoryParams::default();
        let mut code = Vec::new();
        for k in 0..3000u32 {
            code.extend_from_slice(&[0x55, 0xE8]);
            code.extend_from_slice(&(0x4000u32.wrapping_sub(k * 7)).to_le_bytes()[..3]);
            code.extend_from_slice(&[0, 0x90, (k % 7) as u8]);
        }
        assert!(x86::looks_like_x86(&code));
        for data in [
            crate::corpus::gauge_csv(1, 30_000),
            crate::corpus::random(2, 5000),
            code,
            Vec::new(),
            alloc::vec![7u8; 1],
        ] {
            let coded = encode_history(&data, &p).unwrap();
            let mut back = alloc::vec![0; data.len()];
            decode_history(&coded, &mut back, &p).unwrap();
            assert_eq!(back, data);
        }
    }

    #[test]
    fn engine_sides_agree() {
        let data = crate::corpus::gauge_csv(3, 3000);
        let p = HistoryParams::default();
        let mut enc = Encoder::new();
        run(&mut enc, &data, &p).unwrap();
        let coded = enc.finish().unwrap();
        assert!(coded.len() < data.len() / 3);
    }
}
