//! Interleaved lanes: several range coders sharing one block.
//!
//! A single range decoder is bound by one division per symbol, and each
//! division waits for the previous step's `range`. Splitting a block into `N`
//! lanes — symbol `i` is coded by lane `i mod N`, each lane a complete range
//! coder with its own output — gives the processor `N` independent dependency
//! chains to overlap (Giesen, "Interleaved entropy coders", arXiv:1402.3392,
//! 2014). The model is shared and sees symbols in their original order, so an
//! adaptive model works unchanged; only the coder state is split.
//!
//! Invariant: lane `k` holds exactly the symbols at positions `k, k + N,
//! k + 2N, …`, so a decoder that knows the block length and `N` knows how many
//! symbols each lane carries. Each lane stream is an ordinary coded stream
//! (see [`Encoder`]), ended by its own flush; a container stores their lengths.
//!
//! Three pairs of entry points share that layout and write the same bytes:
//!
//! - [`encode_lanes`] / [`decode_lanes`]: any [`Model`], one
//!   scalar coder per lane;
//! - [`encode_table_lanes`] / [`decode_table_lanes`]: a [`LaneTable`]'s
//!   current table for the whole block, with every lane's state in registers
//!   ([`encode`] and [`decode`], vector kernels in `simd`);
//! - [`encode_adaptive_lanes`] / [`decode_adaptive_lanes`]: the same steps
//!   segment by segment, the model learning each segment and handing over
//!   its next table.

use alloc::vec::Vec;

use crate::coder::{Decoder, Encoder, Model, SliceSource};
#[cfg(doc)]
use crate::error::ErrorKind;
use crate::error::Result;

mod adaptive;
mod decode;
mod encode;
#[cfg(target_arch = "x86_64")]
mod simd;
mod table;
#[cfg(test)]
pub(crate) mod testing;

pub use adaptive::{
    decode_adaptive_lanes, decode_adaptive_lanes_scalar, encode_adaptive_lanes,
    encode_adaptive_lanes_scalar,
};
#[cfg(feature = "std")]
pub(crate) use decode::LANE_PAD;
#[cfg(feature = "std")]
pub(crate) use table::encode_counted;
pub use table::{
    decode_table_lanes, decode_table_lanes_scalar, encode_table_lanes, encode_table_lanes_scalar,
};

/// Most lanes a block may use.
pub const MAX_LANES: usize = 32;

/// A byte model whose frequencies form a table with a power-of-two total
/// that holds for a segment of symbols: what the table lanes code with.
///
/// # Implementer notes
///
/// - [`frequencies`](LaneTable::frequencies) has one entry per symbol (at
///   most 256), [`cumulative`](LaneTable::cumulative) one more (the running
///   sums, the last one the total), and the total is
///   `2^log2_total()` with `log2_total() <= 16`; they agree with the
///   model's [`Model::span`].
/// - A symbol has a frequency of 0 in every table or in none: the set of
///   codable symbols never changes.
/// - [`segment_left`](LaneTable::segment_left) is at least 1: the symbols
///   still coded with the current table. [`update_run`](LaneTable::update_run)
///   learns at most that many symbols at once, exactly as
///   [`Model::update`] for each would, and may change the table only when
///   it ends the segment. A table that never changes keeps the defaults.
pub trait LaneTable: Model {
    /// The frequencies, one per symbol.
    fn frequencies(&self) -> &[u32];

    /// The cumulative frequencies: `alphabet_size() + 1` entries, the last
    /// one the total.
    fn cumulative(&self) -> &[u32];

    /// `log2` of the total.
    fn log2_total(&self) -> u32;

    /// Symbols still coded with the current table (at least 1). The
    /// default, `u64::MAX`, is a table that never changes.
    fn segment_left(&self) -> u64 {
        u64::MAX
    }

    /// Learns a run of at most [`segment_left`](LaneTable::segment_left)
    /// coded symbols at once. The default learns nothing.
    fn update_run(&mut self, symbols: &[u8]) {
        let _ = symbols;
    }
}

/// Codes the bytes of `data` with `model` over `lanes` interleaved coders.
///
/// Returns one coded stream per lane. `lanes` of 1 gives a single ordinary
/// stream.
///
/// # Errors
///
/// [`ErrorKind::InvalidParameter`] unless `1 <= lanes <= MAX_LANES`; the
/// model's errors as for [`Encoder::encode`].
///
/// # Example
///
/// ```
/// use subrange::coder::{decode_lanes, encode_lanes};
/// use subrange::model::TableModel;
///
/// # fn main() -> Result<(), subrange::Error> {
/// let data = b"level 112 cm, flow 3.4 m3/s, water 11.2 C; level 113 cm".to_vec();
/// let mut model = TableModel::from_bytes_histogram(&data, 12)?;
/// let streams = encode_lanes(&mut model, &data, 4)?;
/// let views: Vec<&[u8]> = streams.iter().map(|s| s.as_slice()).collect();
/// let mut back = vec![0u8; data.len()];
/// decode_lanes(&mut model, &views, &mut back)?;
/// assert_eq!(back, data);
/// # Ok(())
/// # }
/// ```
pub fn encode_lanes<M: Model + ?Sized>(
    model: &mut M,
    data: &[u8],
    lanes: usize,
) -> Result<Vec<Vec<u8>>> {
    check_lanes(lanes)?;
    match lanes {
        1 => encode_n::<M, 1>(model, data),
        2 => encode_n::<M, 2>(model, data),
        4 => encode_n::<M, 4>(model, data),
        8 => encode_n::<M, 8>(model, data),
        _ => encode_any(model, data, lanes),
    }
}

/// Decodes `out.len()` bytes coded by [`encode_lanes`] with
/// `streams.len()` lanes.
///
/// # Errors
///
/// [`ErrorKind::InvalidParameter`] unless `1 <= streams.len() <= MAX_LANES`;
/// the decoder's errors ([`ErrorKind::Truncated`], [`ErrorKind::CorruptStream`]);
/// [`ErrorKind::TrailingBytes`] when a lane holds more than its symbols need.
pub fn decode_lanes<M: Model + ?Sized>(
    model: &mut M,
    streams: &[&[u8]],
    out: &mut [u8],
) -> Result<()> {
    check_lanes(streams.len())?;
    match streams.len() {
        1 => decode_n::<M, 1>(model, streams, out),
        2 => decode_n::<M, 2>(model, streams, out),
        4 => decode_n::<M, 4>(model, streams, out),
        8 => decode_n::<M, 8>(model, streams, out),
        _ => decode_any(model, streams, out),
    }
}

/// Checks a lane count: `1 ..= MAX_LANES`.
pub(crate) fn check_lanes(lanes: usize) -> Result<()> {
    if lanes == 0 || lanes > MAX_LANES {
        return Err(crate::Error::invalid_parameter("lanes", "must be 1 ..= 32"));
    }
    Ok(())
}

fn encode_n<M: Model + ?Sized, const N: usize>(model: &mut M, data: &[u8]) -> Result<Vec<Vec<u8>>> {
    let mut encoders: [Encoder; N] =
        core::array::from_fn(|_| Encoder::with_sink(Vec::with_capacity(data.len() / N + 8)));
    let mut chunks = data.chunks_exact(N);
    for chunk in &mut chunks {
        for (enc, &b) in encoders.iter_mut().zip(chunk) {
            enc.encode(model, u32::from(b))?;
        }
    }
    for (enc, &b) in encoders.iter_mut().zip(chunks.remainder()) {
        enc.encode(model, u32::from(b))?;
    }
    encoders.into_iter().map(Encoder::finish).collect()
}

fn encode_any<M: Model + ?Sized>(model: &mut M, data: &[u8], lanes: usize) -> Result<Vec<Vec<u8>>> {
    let mut encoders: Vec<Encoder> = (0..lanes).map(|_| Encoder::new()).collect();
    for (i, &b) in data.iter().enumerate() {
        encoders[i % lanes].encode(model, u32::from(b))?;
    }
    encoders.into_iter().map(Encoder::finish).collect()
}

fn decode_n<M: Model + ?Sized, const N: usize>(
    model: &mut M,
    streams: &[&[u8]],
    out: &mut [u8],
) -> Result<()> {
    let mut decoders: Vec<Decoder<SliceSource<'_>>> = streams
        .iter()
        .map(|s| Decoder::new(s))
        .collect::<Result<_>>()?;
    let decoders: &mut [Decoder<SliceSource<'_>>; N] = decoders
        .as_mut_slice()
        .try_into()
        .map_err(|_| crate::Error::invalid_parameter("lanes", "lane count mismatch"))?;
    let mut chunks = out.chunks_exact_mut(N);
    for chunk in &mut chunks {
        for (dec, b) in decoders.iter_mut().zip(chunk.iter_mut()) {
            *b = dec.decode(model)? as u8;
        }
    }
    for (dec, b) in decoders.iter_mut().zip(chunks.into_remainder().iter_mut()) {
        *b = dec.decode(model)? as u8;
    }
    finish_all(decoders.iter_mut())
}

fn decode_any<M: Model + ?Sized>(model: &mut M, streams: &[&[u8]], out: &mut [u8]) -> Result<()> {
    let lanes = streams.len();
    let mut decoders: Vec<Decoder<SliceSource<'_>>> = streams
        .iter()
        .map(|s| Decoder::new(s))
        .collect::<Result<_>>()?;
    for (i, b) in out.iter_mut().enumerate() {
        *b = decoders[i % lanes].decode(model)? as u8;
    }
    finish_all(decoders.iter_mut())
}

fn finish_all<'a, 'b: 'a>(
    decoders: impl Iterator<Item = &'a mut Decoder<SliceSource<'b>>>,
) -> Result<()> {
    for dec in decoders {
        if !dec.past_end() && !dec.source().remaining().is_empty() {
            return Err(crate::Error::trailing_bytes(
                dec.bytes_read(),
                dec.source().remaining().len() as u64,
            ));
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::testing::{Segmented, TestTable};
    use super::*;
    use alloc::vec;

    #[test]
    fn every_lane_count_round_trips() {
        let data: Vec<u8> = (0..5000u32).map(|i| (i * i % 97) as u8).collect();
        for lanes in 1..=MAX_LANES {
            let mut t = TestTable::from_bytes(&data, 12).unwrap();
            let s = encode_lanes(&mut t, &data, lanes).unwrap();
            let v: Vec<&[u8]> = s.iter().map(|x| x.as_slice()).collect();
            let mut out = vec![0u8; data.len()];
            decode_lanes(&mut t, &v, &mut out).unwrap();
            assert_eq!(out, data);

            let mut a = Segmented::new(256, 12, 7);
            let s = encode_lanes(&mut a, &data[..lanes * 3 + 1], lanes).unwrap();
            let v: Vec<&[u8]> = s.iter().map(|x| x.as_slice()).collect();
            let mut a = Segmented::new(256, 12, 7);
            let mut out = vec![0u8; lanes * 3 + 1];
            decode_lanes(&mut a, &v, &mut out).unwrap();
            assert_eq!(out, &data[..lanes * 3 + 1]);
        }
    }

    #[test]
    fn trailing_bytes_in_a_lane_are_reported() {
        let data = vec![1u8, 2, 3, 1, 2, 3, 1, 1];
        let mut t = TestTable::from_bytes(&data, 8).unwrap();
        let mut s = encode_lanes(&mut t, &data, 2).unwrap();
        s[1].extend_from_slice(&[1, 2, 3, 4, 5]);
        let v: Vec<&[u8]> = s.iter().map(|x| x.as_slice()).collect();
        let mut out = vec![0u8; data.len()];
        assert!(decode_lanes(&mut t, &v, &mut out).is_err());
    }
}
