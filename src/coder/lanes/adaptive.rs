//! The fast path for a [`LaneTable`] that learns, over interleaved lanes.
//!
//! A lane table is fixed for a whole segment, so a segment is
//! coded exactly like a block with a static table: the [lane
//! encoder](super::encode) and [lane decoder](super::decode) (vector
//! kernels included) run over it, keeping their states from one segment to
//! the next; between segments the model learns the segment's bytes in one
//! step and the coding tables are rebuilt from its new frequencies.
//!
//! Invariant: [`encode_adaptive_lanes`] writes exactly the streams of
//! [`encode_lanes`](super::encode_lanes) with the same model
//! and lane count, and both leave the model in the same state; the same
//! holds for the decoders.

use alloc::vec::Vec;

use crate::coder::lanes::decode::{best_kernel, DecodeTables, LaneDecoder, Vector};
use crate::coder::lanes::encode::{best_encode_kernel, EncodeTable, EncodeVector, LaneEncoder};
use crate::coder::lanes::{check_lanes, LaneTable};
#[cfg(doc)]
use crate::error::ErrorKind;
use crate::error::Result;

/// Codes `data` with `model` over `lanes` interleaved coders, a segment at
/// a time; the model learns every byte.
///
/// Output is identical to [`encode_lanes`](super::encode_lanes)
/// with the same model and lane count.
///
/// # Errors
///
/// [`ErrorKind::InvalidParameter`] for a lane count outside `1 ..= 32`;
/// [`ErrorKind::UncodableSymbol`] for a byte the model cannot code (nothing
/// is learnt then).
///
/// # Example
///
/// ```
/// use subrange::coder::{decode_adaptive_lanes, encode_adaptive_lanes};
/// use subrange::model::AdaptiveModel;
///
/// # fn main() -> Result<(), subrange::Error> {
/// let data = b"G107,1440,212,1123,98\nG114,1440,208,1081,97\n".repeat(200);
/// let mut model = AdaptiveModel::new(256)?;
/// let lanes = encode_adaptive_lanes(&mut model, &data, 8)?;
/// let coded: usize = lanes.iter().map(Vec::len).sum();
/// assert!(coded < data.len() / 2);
///
/// let views: Vec<&[u8]> = lanes.iter().map(Vec::as_slice).collect();
/// let mut model = AdaptiveModel::new(256)?;
/// let mut back = vec![0; data.len()];
/// decode_adaptive_lanes(&mut model, &views, &mut back)?;
/// assert_eq!(back, data);
/// # Ok(())
/// # }
/// ```
pub fn encode_adaptive_lanes<T: LaneTable + ?Sized>(
    model: &mut T,
    data: &[u8],
    lanes: usize,
) -> Result<Vec<Vec<u8>>> {
    encode_with(model, data, lanes, best_encode_kernel(lanes))
}

/// [`encode_adaptive_lanes`] on the scalar steps only, whatever the CPU: the
/// reference the vector kernels are checked against (by the tests and the
/// fuzz targets). Same results, slower.
///
/// # Errors
///
/// As for [`encode_adaptive_lanes`].
#[doc(hidden)]
pub fn encode_adaptive_lanes_scalar<T: LaneTable + ?Sized>(
    model: &mut T,
    data: &[u8],
    lanes: usize,
) -> Result<Vec<Vec<u8>>> {
    encode_with(model, data, lanes, None)
}

/// [`encode_adaptive_lanes`] with the vector kernel chosen by the caller.
fn encode_with<T: LaneTable + ?Sized>(
    model: &mut T,
    data: &[u8],
    lanes: usize,
    kernel: EncodeVector,
) -> Result<Vec<Vec<u8>>> {
    check_lanes(lanes)?;
    let mut table = EncodeTable::new(model.frequencies(), model.cumulative(), model.log2_total());
    // The set of codable symbols never changes (a `LaneTable` rule), so
    // the first table tells.
    table.check_codable(data, model.alphabet_size())?;
    let mut enc = LaneEncoder::with_kernel(data.len(), lanes, kernel);
    let mut rest = data;
    while !rest.is_empty() {
        let left = model.segment_left();
        let (segment, next) = rest.split_at(left.min(rest.len() as u64) as usize);
        enc.code(segment, &table);
        learn_run(model, segment);
        if segment.len() as u64 == left {
            table.set(model.frequencies(), model.cumulative(), model.log2_total());
        }
        rest = next;
    }
    Ok(enc.finish().into_vecs())
}

/// Decodes `out.len()` bytes coded by [`encode_adaptive_lanes`] (or by
/// [`encode_lanes`](super::encode_lanes) with the same
/// model) with `streams.len()` lanes; the model learns every
/// byte.
///
/// # Errors
///
/// [`ErrorKind::InvalidParameter`] for a lane count outside `1 ..= 32`;
/// [`ErrorKind::Truncated`], [`ErrorKind::CorruptStream`] or
/// [`ErrorKind::TrailingBytes`] when a lane's stream is damaged. The work
/// done is bounded by `out.len()` whatever the input.
pub fn decode_adaptive_lanes<T: LaneTable + ?Sized>(
    model: &mut T,
    streams: &[&[u8]],
    out: &mut [u8],
) -> Result<()> {
    decode_with(model, streams, out, best_kernel(streams.len()))
}

/// [`decode_adaptive_lanes`] on the scalar steps only, whatever the CPU: the
/// reference the vector kernels are checked against (by the tests and the
/// fuzz targets). Same results, slower.
///
/// # Errors
///
/// As for [`decode_adaptive_lanes`].
#[doc(hidden)]
pub fn decode_adaptive_lanes_scalar<T: LaneTable + ?Sized>(
    model: &mut T,
    streams: &[&[u8]],
    out: &mut [u8],
) -> Result<()> {
    decode_with(model, streams, out, None)
}

/// [`LaneTable::update_run`], compiled for wider vectors where the CPU
/// has them.
#[inline]
fn learn_run<T: LaneTable + ?Sized>(model: &mut T, run: &[u8]) {
    #[cfg(target_arch = "x86_64")]
    super::simd::decode::learn_run(model, run);
    #[cfg(not(target_arch = "x86_64"))]
    model.update_run(run);
}

/// [`decode_adaptive_lanes`] with the vector kernel chosen by the caller.
fn decode_with<T: LaneTable + ?Sized>(
    model: &mut T,
    streams: &[&[u8]],
    out: &mut [u8],
    kernel: Vector,
) -> Result<()> {
    check_lanes(streams.len())?;
    // Tables written at every refresh: the by-symbol layout, which has a
    // quarter of the bytes to write.
    let mut tables =
        DecodeTables::by_symbol(model.frequencies(), model.cumulative(), model.log2_total());
    let mut dec = LaneDecoder::new(streams, kernel);
    let mut rest = out;
    while !rest.is_empty() {
        let left = model.segment_left();
        let len = left.min(rest.len() as u64) as usize;
        let (segment, next) = rest.split_at_mut(len);
        dec.decode(&tables, segment)?;
        learn_run(model, segment);
        if len as u64 == left {
            tables.set(model.frequencies(), model.cumulative(), model.log2_total());
        }
        rest = next;
    }
    dec.finish()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::coder::lanes::testing::Segmented;
    use crate::coder::{decode_lanes, encode_lanes};
    use crate::error::ErrorKind;
    use alloc::vec;

    fn drifting(len: usize) -> Vec<u8> {
        (0..len as u32)
            .map(|i| {
                let phase = i / 3000 % 5;
                (i.wrapping_mul(2_654_435_761) >> 24) as u8 % (4 + 50 * phase as u8) + phase as u8
            })
            .collect()
    }

    #[test]
    fn identical_to_the_generic_path() {
        let data = drifting(70_001);
        for log2_total in [8u32, 12, 15] {
            for lanes in [1usize, 3, 4, 8, 24, 32] {
                let fresh = || Segmented::new(256, log2_total, 3001);
                let (mut a, mut b) = (fresh(), fresh());
                let fast = encode_adaptive_lanes(&mut a, &data, lanes).unwrap();
                let slow = encode_lanes(&mut b, &data, lanes).unwrap();
                assert_eq!(fast, slow, "log2_total={log2_total} lanes={lanes}");
                assert_eq!(a, b);
                let views: Vec<&[u8]> = fast.iter().map(Vec::as_slice).collect();
                let (mut c, mut d) = (fresh(), fresh());
                let mut out = vec![0u8; data.len()];
                decode_adaptive_lanes(&mut c, &views, &mut out).unwrap();
                assert_eq!(out, data);
                let mut out2 = vec![0u8; data.len()];
                decode_lanes(&mut d, &views, &mut out2).unwrap();
                assert_eq!(out2, data);
                assert_eq!(c, a);
            }
        }
    }

    /// The vector and scalar decoders agree on clean and damaged lanes.
    #[test]
    fn kernels_agree_with_the_scalar_steps() {
        let data = drifting(40_000);
        let fresh = || Segmented::new(256, 12, 2048);
        if best_kernel(16).is_none() {
            std::eprintln!(
                "skipped: the vector lane decoder (this CPU lacks AVX2); scalar steps only"
            );
        }
        let mut streams = encode_adaptive_lanes(&mut fresh(), &data, 16).unwrap();
        for damage in 0..3 {
            match damage {
                1 => streams[5][40] ^= 0x21,
                2 => streams[9].truncate(100),
                _ => {}
            }
            let views: Vec<&[u8]> = streams.iter().map(Vec::as_slice).collect();
            let mut want = vec![0u8; data.len()];
            let verdict = decode_adaptive_lanes_scalar(&mut fresh(), &views, &mut want)
                .map_err(|e| alloc::format!("{e:?}"));
            let mut got = vec![0u8; data.len()];
            let v = decode_adaptive_lanes(&mut fresh(), &views, &mut got)
                .map_err(|e| alloc::format!("{e:?}"));
            assert_eq!(v, verdict, "damage {damage}");
            if damage == 0 {
                assert_eq!(got, data);
            }
            if v.is_ok() || damage == 1 {
                assert_eq!(got, want);
            }
        }
    }

    /// Every vector kernel this CPU has decodes the by-symbol tables of
    /// the adaptive lanes exactly as the scalar steps, on clean and
    /// damaged lanes, for every kernel width and table total it takes: few
    /// and all 256 byte values, one value taking the whole total (the
    /// last-symbol rule at every step), spans longer than a fill block.
    #[cfg(target_arch = "x86_64")]
    #[test]
    fn every_kernel_agrees_with_the_scalar_steps() {
        use crate::coder::lanes::simd::Kernel;
        let kernels: Vec<Kernel> = [Kernel::Avx512Wide, Kernel::Avx512, Kernel::Avx2]
            .into_iter()
            .filter(|k| k.supported())
            .collect();
        let all: Vec<u8> = (0..12_000u32).map(|i| (i * 7 % 256) as u8).collect();
        for (i, data) in [drifting(20_000), all, vec![b'x'; 5000]].iter().enumerate() {
            for log2_total in [8u32, 12, 13, 16] {
                let fresh = || Segmented::new(256, log2_total, 256);
                for lanes in [8usize, 16, 24, 32] {
                    let mut streams = encode_adaptive_lanes(&mut fresh(), data, lanes).unwrap();
                    for damage in 0..3 {
                        match damage {
                            1 => {
                                let lane = &mut streams[lanes / 2];
                                let at = 9.min(lane.len() - 1);
                                lane[at] ^= 0x5A;
                            }
                            2 => {
                                let len = streams[lanes - 1].len();
                                streams[lanes - 1].truncate(len / 3);
                            }
                            _ => {}
                        }
                        let views: Vec<&[u8]> = streams.iter().map(Vec::as_slice).collect();
                        let mut want = vec![0u8; data.len()];
                        let verdict = decode_with(&mut fresh(), &views, &mut want, None)
                            .map_err(|e| alloc::format!("{e:?}"));
                        if damage == 0 {
                            assert_eq!(&want, data, "case {i} k={log2_total} lanes={lanes}");
                        }
                        for &kernel in kernels.iter().filter(|k| k.fits(lanes)) {
                            let mut got = vec![0u8; data.len()];
                            let v = decode_with(&mut fresh(), &views, &mut got, Some(kernel))
                                .map_err(|e| alloc::format!("{e:?}"));
                            let at = alloc::format!(
                                "{kernel:?} case {i} k={log2_total} lanes={lanes} damage={damage}"
                            );
                            assert_eq!(v, verdict, "{at}");
                            if v.is_ok() || damage == 1 {
                                assert_eq!(got, want, "{at}");
                            }
                        }
                    }
                }
            }
        }
    }

    /// Short segments (a few rows each) share one check of the lanes'
    /// read positions: a lane cut short is still reported truncated, by
    /// every kernel and by the scalar steps, and the reads stay in the
    /// lanes' padding (the vector kernels rely on it).
    #[test]
    fn truncated_lanes_are_found_across_short_segments() {
        #[cfg(target_arch = "x86_64")]
        let kernels: Vec<Vector> = [
            crate::coder::lanes::simd::Kernel::Avx512Wide,
            crate::coder::lanes::simd::Kernel::Avx512,
            crate::coder::lanes::simd::Kernel::Avx2,
        ]
        .into_iter()
        .filter(|k| k.supported())
        .map(Some)
        .chain([None])
        .collect();
        #[cfg(not(target_arch = "x86_64"))]
        let kernels: Vec<Vector> = vec![None];
        let data = drifting(30_000);
        for period in [1u64, 5, 37, 100] {
            for lanes in [8usize, 16, 32] {
                let fresh = || Segmented::new(256, 12, period);
                let streams = encode_adaptive_lanes(&mut fresh(), &data, lanes).unwrap();
                for keep in [0usize, 3, streams[1].len() / 3] {
                    let mut cut = streams.clone();
                    cut[1].truncate(keep);
                    let views: Vec<&[u8]> = cut.iter().map(Vec::as_slice).collect();
                    for &kernel in &kernels {
                        #[cfg(target_arch = "x86_64")]
                        let kernel = kernel.filter(|k| k.fits(lanes));
                        let mut out = vec![0u8; data.len()];
                        let err = decode_with(&mut fresh(), &views, &mut out, kernel).unwrap_err();
                        assert!(
                            matches!(err.kind(), ErrorKind::Truncated { .. }),
                            "{kernel:?} period {period} lanes {lanes} keep {keep}: {err:?}"
                        );
                    }
                }
            }
        }
    }

    #[cfg(target_arch = "x86_64")]
    mod generated {
        use super::*;
        use crate::coder::lanes::simd::Kernel;
        use proptest::prelude::*;

        proptest! {
            #![proptest_config(ProptestConfig::with_cases(64))]

            /// Random byte sets, skews, totals and periods: each vector
            /// kernel gives the scalar steps' bytes, and the model ends in
            /// the encoder's state.
            #[test]
            fn kernels_match_the_scalar_steps(
                seed in any::<u32>(),
                len in 0usize..6000,
                spread in 1u32..=256,
                log2_total in 8u32..=16,
                max_period in 1u32..2048,
                lanes in prop::sample::select(vec![8usize, 16, 24, 32]),
            ) {
                let mut x = seed | 1;
                let data: Vec<u8> = (0..len)
                    .map(|_| {
                        x ^= x << 13;
                        x ^= x >> 17;
                        x ^= x << 5;
                        // Skewed: small values far more often.
                        ((x % spread) * (x >> 24) / 256) as u8
                    })
                    .collect();
                // Every value below `spread` codable, as a model listing
                // the block's byte set would have it.
                let fresh = || Segmented::new(spread as usize, log2_total, u64::from(max_period));
                let mut enc_model = fresh();
                let streams = encode_adaptive_lanes(&mut enc_model, &data, lanes).unwrap();
                let views: Vec<&[u8]> = streams.iter().map(Vec::as_slice).collect();
                let mut want = vec![0u8; data.len()];
                let mut model = fresh();
                decode_with(&mut model, &views, &mut want, None).unwrap();
                prop_assert_eq!(&want, &data);
                prop_assert_eq!(&model, &enc_model);
                for kernel in [Kernel::Avx512Wide, Kernel::Avx512, Kernel::Avx2] {
                    if !kernel.supported() || !kernel.fits(lanes) {
                        continue;
                    }
                    let mut got = vec![0u8; data.len()];
                    let mut model = fresh();
                    decode_with(&mut model, &views, &mut got, Some(kernel)).unwrap();
                    prop_assert_eq!(&got, &data);
                    prop_assert_eq!(&model, &enc_model);
                }
            }
        }
    }

    #[test]
    fn uncodable_bytes_and_bad_lane_counts() {
        let mut m = Segmented::new(10, 12, 100);
        let err = encode_adaptive_lanes(&mut m, &[1, 2, 200], 2).unwrap_err();
        assert!(matches!(
            err.kind(),
            ErrorKind::UncodableSymbol { symbol: 200, .. }
        ));
        assert_eq!(m, Segmented::new(10, 12, 100));
        assert!(encode_adaptive_lanes(&mut m, &[1], 0).is_err());
        assert!(encode_adaptive_lanes(&mut m, &[1], 33).is_err());
        let mut out = [0u8; 4];
        assert!(decode_adaptive_lanes(&mut m, &[], &mut out).is_err());
    }
}
