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

use alloc::vec::Vec;

use crate::coder::{Decoder, Encoder, SliceSource};
use crate::error::{ErrorKind, Result};
use crate::model::Model;

/// Most lanes a block may use.
pub const MAX_LANES: usize = 32;

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
/// use subrange::coder::{decode_interleaved, encode_interleaved};
/// use subrange::model::TableModel;
///
/// # fn main() -> Result<(), subrange::Error> {
/// let data = b"level 112 cm, flow 3.4 m3/s, water 11.2 C; level 113 cm".to_vec();
/// let mut model = TableModel::from_bytes_histogram(&data, 12)?;
/// let streams = encode_interleaved(&mut model, &data, 4)?;
/// let views: Vec<&[u8]> = streams.iter().map(|s| s.as_slice()).collect();
/// let mut back = vec![0u8; data.len()];
/// decode_interleaved(&mut model, &views, &mut back)?;
/// assert_eq!(back, data);
/// # Ok(())
/// # }
/// ```
pub fn encode_interleaved<M: Model + ?Sized>(
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

/// Decodes `out.len()` bytes coded by [`encode_interleaved`] with
/// `streams.len()` lanes.
///
/// # Errors
///
/// [`ErrorKind::InvalidParameter`] unless `1 <= streams.len() <= MAX_LANES`;
/// the decoder's errors ([`ErrorKind::Truncated`], [`ErrorKind::CorruptStream`]);
/// [`ErrorKind::TrailingBytes`] when a lane holds more than its symbols need.
pub fn decode_interleaved<M: Model + ?Sized>(
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
    let decoders: &mut [Decoder<SliceSource<'_>>; N] =
        decoders
            .as_mut_slice()
            .try_into()
            .map_err(|_| ErrorKind::InvalidParameter {
                name: "lanes",
                reason: "lane count mismatch",
            })?;
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
    use super::*;
    use crate::model::{AdaptiveModel, TableModel};
    use alloc::vec;

    #[test]
    fn every_lane_count_round_trips() {
        let data: Vec<u8> = (0..5000u32).map(|i| (i * i % 97) as u8).collect();
        for lanes in 1..=MAX_LANES {
            let mut t = TableModel::from_bytes_histogram(&data, 12).unwrap();
            let s = encode_interleaved(&mut t, &data, lanes).unwrap();
            let v: Vec<&[u8]> = s.iter().map(|x| x.as_slice()).collect();
            let mut out = vec![0u8; data.len()];
            decode_interleaved(&mut t, &v, &mut out).unwrap();
            assert_eq!(out, data);

            let mut a = AdaptiveModel::new(256).unwrap();
            let s = encode_interleaved(&mut a, &data[..lanes * 3 + 1], lanes).unwrap();
            let v: Vec<&[u8]> = s.iter().map(|x| x.as_slice()).collect();
            let mut a = AdaptiveModel::new(256).unwrap();
            let mut out = vec![0u8; lanes * 3 + 1];
            decode_interleaved(&mut a, &v, &mut out).unwrap();
            assert_eq!(out, &data[..lanes * 3 + 1]);
        }
    }

    #[test]
    fn trailing_bytes_in_a_lane_are_reported() {
        let data = vec![1u8, 2, 3, 1, 2, 3, 1, 1];
        let mut t = TableModel::from_bytes_histogram(&data, 8).unwrap();
        let mut s = encode_interleaved(&mut t, &data, 2).unwrap();
        s[1].extend_from_slice(&[1, 2, 3, 4, 5]);
        let v: Vec<&[u8]> = s.iter().map(|x| x.as_slice()).collect();
        let mut out = vec![0u8; data.len()];
        assert!(decode_interleaved(&mut t, &v, &mut out).is_err());
    }
}
