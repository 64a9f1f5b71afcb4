//! The fast path for static byte tables over interleaved lanes.
//!
//! [`encode_table_lanes`] and [`decode_table_lanes`] produce and read exactly
//! the same streams as [`encode_lanes`](super::encode_lanes) /
//! [`decode_lanes`](super::decode_lanes) with a
//! [`LaneTable`] over bytes (its current table; the model does not learn),
//! but keep every lane's state in registers and look each decoding
//! slot up in one packed table entry (symbol, cumulative frequency and
//! frequency together): they run the [lane encoder](super::encode) and
//! [lane decoder](super::decode) over the whole block with one table. The
//! total is a power of two, so the encoder never divides; the decoder's one
//! division per symbol overlaps across lanes.
//!
//! Invariants are those of the plain coder (`2^24 <= range`, `code < range`
//! for valid input). Input checks are batched: a lane that reads more than
//! four implicit zero bytes is truncated, a lane whose `code` ever leaves its
//! interval is corrupt — both are reported once the block is decoded, which
//! costs no more work than the caller's output length.

use alloc::vec::Vec;

use crate::coder::lanes::decode::{best_kernel, DecodeTables, LaneDecoder, Vector};
use crate::coder::lanes::encode::{
    best_encode_kernel, EncodeTable, EncodeVector, LaneEncoder, LaneStreams,
};
use crate::coder::lanes::{check_lanes, LaneTable};
#[cfg(doc)]
use crate::error::ErrorKind;
use crate::error::Result;

fn check<T: LaneTable + ?Sized>(model: &T, lanes: usize) -> Result<()> {
    check_lanes(lanes)?;
    if model.alphabet_size() > 256 {
        return Err(crate::Error::invalid_parameter(
            "model",
            "the byte fast path needs an alphabet of at most 256 symbols",
        ));
    }
    Ok(())
}

/// Codes `data` with a static byte table over `lanes` interleaved coders.
///
/// Output is identical to [`encode_lanes`](super::encode_lanes)
/// with the same model and lane count. On x86-64 CPUs with AVX-512, lane
/// counts that are a multiple of 16 code sixteen lanes per vector
/// instruction; with AVX2, multiples of 8 code eight; the result is the
/// same on every path.
///
/// # Errors
///
/// [`ErrorKind::InvalidParameter`] for a lane count outside `1 ..= 32` or a
/// model over more than 256 symbols; [`ErrorKind::UncodableSymbol`] for a byte
/// with zero frequency.
///
/// # Example
///
/// ```
/// use subrange::coder::{decode_table_lanes, encode_table_lanes};
/// use subrange::model::TableModel;
///
/// # fn main() -> Result<(), subrange::Error> {
/// let data = b"G107,1440,212,1123,98\nG114,1440,208,1081,97\n".repeat(20);
/// let model = TableModel::from_bytes_histogram(&data, 12)?;
/// let lanes = encode_table_lanes(&model, &data, 4)?;
/// let views: Vec<&[u8]> = lanes.iter().map(Vec::as_slice).collect();
/// let mut back = vec![0; data.len()];
/// decode_table_lanes(&model, &views, &mut back)?;
/// assert_eq!(back, data);
/// # Ok(())
/// # }
/// ```
pub fn encode_table_lanes<T: LaneTable + ?Sized>(
    model: &T,
    data: &[u8],
    lanes: usize,
) -> Result<Vec<Vec<u8>>> {
    encode_checked(model, data, lanes, best_encode_kernel(lanes)).map(LaneStreams::into_vecs)
}

/// [`encode_table_lanes`] on the scalar steps only, whatever the CPU: the
/// reference the vector kernels are checked against (by the tests and the
/// fuzz targets). Same results, slower.
///
/// # Errors
///
/// As for [`encode_table_lanes`].
#[doc(hidden)]
pub fn encode_table_lanes_scalar<T: LaneTable + ?Sized>(
    model: &T,
    data: &[u8],
    lanes: usize,
) -> Result<Vec<Vec<u8>>> {
    encode_checked(model, data, lanes, None).map(LaneStreams::into_vecs)
}

/// [`encode_table_lanes`] with the vector kernel chosen by the caller,
/// leaving the streams in the encoder's buffer.
pub(crate) fn encode_checked<T: LaneTable + ?Sized>(
    model: &T,
    data: &[u8],
    lanes: usize,
    kernel: EncodeVector,
) -> Result<LaneStreams> {
    check(model, lanes)?;
    let table = EncodeTable::new(model.frequencies(), model.cumulative(), model.log2_total());
    table.check_codable(data, model.alphabet_size())?;
    let mut enc = LaneEncoder::with_kernel(data.len(), lanes, kernel);
    enc.code(data, &table);
    Ok(enc.finish())
}

/// [`encode_table_lanes`] for a model built from the counts of `data`
/// itself, which codes every byte of it (not checked again), leaving the
/// streams in the encoder's buffer.
///
/// # Errors
///
/// As for [`encode_table_lanes`], but a byte the model cannot code gives
/// unspecified streams instead of an error.
#[cfg(feature = "std")]
pub(crate) fn encode_counted<T: LaneTable + ?Sized>(
    model: &T,
    data: &[u8],
    lanes: usize,
) -> Result<LaneStreams> {
    check(model, lanes)?;
    let table = EncodeTable::new(model.frequencies(), model.cumulative(), model.log2_total());
    let mut enc = LaneEncoder::new(data.len(), lanes);
    enc.code(data, &table);
    Ok(enc.finish())
}

/// Decodes `out.len()` bytes coded by [`encode_table_lanes`] (or by
/// [`encode_lanes`](super::encode_lanes) with a byte table).
///
/// On x86-64 CPUs with AVX2, lane counts that are a multiple of 8 decode
/// eight lanes per vector instruction; the result is the same on every path.
///
/// # Errors
///
/// [`ErrorKind::InvalidParameter`] as for [`encode_table_lanes`];
/// [`ErrorKind::Truncated`], [`ErrorKind::CorruptStream`] or
/// [`ErrorKind::TrailingBytes`] when a lane's stream is damaged. The work done
/// is bounded by `out.len()` whatever the input.
pub fn decode_table_lanes<T: LaneTable + ?Sized>(
    model: &T,
    streams: &[&[u8]],
    out: &mut [u8],
) -> Result<()> {
    decode_with(model, streams, out, best_kernel(streams.len()))
}

/// [`decode_table_lanes`] on the scalar steps only, whatever the CPU: the
/// reference the vector kernels are checked against (by the tests and the
/// fuzz targets). Same results, slower.
///
/// # Errors
///
/// As for [`decode_table_lanes`].
#[doc(hidden)]
pub fn decode_table_lanes_scalar<T: LaneTable + ?Sized>(
    model: &T,
    streams: &[&[u8]],
    out: &mut [u8],
) -> Result<()> {
    decode_with(model, streams, out, None)
}

/// [`decode_table_lanes`] with the vector kernel chosen by the caller
/// (`None`: the scalar steps only).
fn decode_with<T: LaneTable + ?Sized>(
    model: &T,
    streams: &[&[u8]],
    out: &mut [u8],
    kernel: Vector,
) -> Result<()> {
    check(model, streams.len())?;
    let tables = DecodeTables::new(model.frequencies(), model.cumulative(), model.log2_total());
    let mut dec = LaneDecoder::new(streams, kernel);
    dec.decode(&tables, out)?;
    dec.finish()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::coder::lanes::testing::TestTable;
    use crate::coder::{decode_lanes, encode_lanes, MAX_LANES};
    use alloc::vec;

    #[test]
    fn identical_to_generic_path() {
        let data: Vec<u8> = (0..20_000u32)
            .map(|i| ((i * 31) % 200 / (1 + i % 7)) as u8)
            .collect();
        for k in [8u32, 12, 15, 16] {
            let model = TestTable::from_bytes(&data, k).unwrap();
            for lanes in 1..=MAX_LANES {
                let fast = encode_table_lanes(&model, &data, lanes).unwrap();
                let mut m = model.clone();
                let slow = encode_lanes(&mut m, &data, lanes).unwrap();
                assert_eq!(fast, slow, "k={k} lanes={lanes}");
                let views: Vec<&[u8]> = fast.iter().map(Vec::as_slice).collect();
                let mut out = vec![0u8; data.len()];
                decode_table_lanes(&model, &views, &mut out).unwrap();
                assert_eq!(out, data);
                let mut out2 = vec![0u8; data.len()];
                decode_lanes(&mut m, &views, &mut out2).unwrap();
                assert_eq!(out2, data);
            }
        }
    }

    /// Every vector kernel this CPU has decodes exactly as the scalar steps:
    /// same bytes and same verdict, on clean and on damaged lanes.
    #[cfg(target_arch = "x86_64")]
    #[test]
    fn vector_kernels_match_the_scalar_steps() {
        use crate::coder::lanes::simd::Kernel;
        let data: Vec<u8> = (0..30_011u32)
            .map(|i| (i.wrapping_mul(2_654_435_761) >> 27) as u8 % (1 + (i / 500 % 40) as u8))
            .collect();
        let kernels: Vec<Kernel> = [Kernel::Avx512Wide, Kernel::Avx512, Kernel::Avx2]
            .into_iter()
            .filter(|k| {
                if !k.supported() {
                    std::eprintln!("skipped: lane-decoder kernel {k:?} (this CPU lacks it)");
                }
                k.supported()
            })
            .collect();
        for k in [8u32, 12, 13, 16] {
            let model = TestTable::from_bytes(&data, k).unwrap();
            for lanes in [8usize, 16, 24, 32] {
                let mut streams = encode_table_lanes(&model, &data, lanes).unwrap();
                for damage in 0..4u32 {
                    match damage {
                        1 => streams[lanes / 2][7] ^= 0x5A,
                        2 => {
                            let last = streams.len() - 1;
                            let len = streams[last].len();
                            streams[last].truncate(len / 3);
                        }
                        3 => streams[1].push(0),
                        _ => {}
                    }
                    let views: Vec<&[u8]> = streams.iter().map(Vec::as_slice).collect();
                    let mut want = vec![0u8; data.len()];
                    let verdict = decode_with(&model, &views, &mut want, None)
                        .map_err(|e| alloc::format!("{e:?}"));
                    if damage == 0 {
                        assert_eq!(want, data);
                    }
                    for &kernel in kernels.iter().filter(|k| k.fits(lanes)) {
                        let mut got = vec![0u8; data.len()];
                        let v = decode_with(&model, &views, &mut got, Some(kernel))
                            .map_err(|e| alloc::format!("{e:?}"));
                        assert_eq!(v, verdict, "{kernel:?} k={k} lanes={lanes} damage={damage}");
                        if verdict.is_ok() || damage == 1 {
                            assert_eq!(got, want, "{kernel:?} k={k} lanes={lanes} damage={damage}");
                        }
                    }
                }
            }
        }
    }

    /// Edge tables through the vector encoder: one symbol taking the whole
    /// total (the last-symbol rule every step), and all 256 bytes.
    #[test]
    fn edge_tables_match_the_generic_path() {
        let one = vec![b'x'; 5000];
        let all: Vec<u8> = (0..9000u32).map(|i| (i * 7 % 256) as u8).collect();
        for data in [one, all] {
            for k in [8u32, 16] {
                let model = TestTable::from_bytes(&data, k).unwrap();
                for lanes in [8usize, 32] {
                    let fast = encode_table_lanes(&model, &data, lanes).unwrap();
                    let mut m = model.clone();
                    assert_eq!(fast, encode_lanes(&mut m, &data, lanes).unwrap());
                    let views: Vec<&[u8]> = fast.iter().map(Vec::as_slice).collect();
                    let mut out = vec![0u8; data.len()];
                    decode_table_lanes(&model, &views, &mut out).unwrap();
                    assert_eq!(out, data);
                }
            }
        }
    }

    #[test]
    fn uncodable_and_damaged() {
        let model = TestTable::from_counts(&[5, 5], 4).unwrap();
        assert!(encode_table_lanes(&model, &[0, 1, 2], 4).is_err());
        let data = [0u8, 1, 1, 0, 1, 0, 0, 0, 1];
        let lanes = encode_table_lanes(&model, &data, 2).unwrap();
        let views: Vec<&[u8]> = lanes.iter().map(Vec::as_slice).collect();
        let mut out = vec![0u8; 400];
        // Asking for far more symbols than were coded runs past the end.
        assert!(decode_table_lanes(&model, &views, &mut out).is_err());
    }
}
