//! The `adaptive` preset's block codec: a [`AdaptiveModel`] over the bytes
//! of the block, started afresh at every block, over interleaved lanes.
//!
//! The encoder first reads the block once: its set of byte values (only
//! those get a frequency, so absent bytes cost nothing) and, running the
//! model over the block's segments with one histogram each, the exact ideal
//! cost of coding it — a block that cannot come out shorter than it is is
//! stored without being coded. Otherwise the block is coded a segment at a
//! time with [`encode_adaptive_lanes`] over `n` lanes, `n` being the `lanes`
//! parameter reduced so that every lane has at least 1 KiB.
//!
//! Payload: `lanes: u8`, the byte set (below), `lanes - 1` lane lengths as
//! vints, then the lane streams back to back (the last lane takes the rest).
//! The byte set is one byte `m` (its size less one), then nothing when all
//! 256 values occur, the `m + 1` values in increasing order when `m < 31`,
//! and otherwise a 32-byte bitmap (value `v` is bit `v mod 8` of byte
//! `v / 8`).
//!
//! Invariant: the decoder accepts exactly the payloads the encoder can make
//! for some block, up to the range coder's own slack: the byte set must be
//! in its canonical form, the lane lengths must fit the payload, and every
//! lane must be consumed exactly.

use alloc::vec::Vec;

use crate::coder::{decode_adaptive_lanes, encode_adaptive_lanes, log2_q32, IdealCost};
use crate::error::{Error, ErrorKind, Result};
use crate::model::{AdaptiveModel, AdaptiveParams};
use crate::preset::codec::Codec;
use crate::preset::lanes::{decoder_memory, lanes_for, put_lanes, read_lanes, LANES, LOG2_TOTAL};
use crate::preset::spec::{ParamSpec, Values};
use crate::vint::Cursor;

/// The longest segment between two rebuilds.
const PERIOD: ParamSpec = ParamSpec {
    name: "period",
    default: 256,
    min: 32,
    max: 1 << 20,
    help: "most bytes coded between two rebuilds of the table (the first after 32, then doubling)",
    absent: None,
};

/// The count limit at a rebuild.
const LIMIT: ParamSpec = ParamSpec {
    name: "limit",
    default: 4096,
    min: 256,
    max: 1 << 30,
    help: "at a rebuild, counts are halved while their sum exceeds this",
    absent: None,
};

/// Symbols coded with a block's first table; later segments double.
const FIRST_PERIOD: u32 = 32;

/// Byte sets of fewer values than this are listed, larger ones mapped.
const LIST_MAX: usize = 31;

/// The `adaptive` preset.
pub(crate) struct Adaptive;

/// The `adaptive` preset's parameters.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) struct Params {
    /// Most lanes a block is coded over.
    lanes: u32,
    /// The model's table total, segment lengths and count limit.
    refresh: AdaptiveParams,
}

impl Codec for Adaptive {
    type Params = Params;
    const ID: u32 = 5;
    const NAME: &'static str = "adaptive";
    const SUMMARY: &'static str =
        "adaptive order-0 model per block, table rebuilt as it learns, interleaved lanes";
    const PARAMS: &'static [ParamSpec] = &[LANES, LOG2_TOTAL, PERIOD, LIMIT];

    fn parse(values: Values<'_>) -> Result<Params> {
        Ok(Params {
            lanes: values.get(&LANES)?,
            refresh: AdaptiveParams {
                log2_total: values.get(&LOG2_TOTAL)?,
                first_period: FIRST_PERIOD,
                max_period: values.get(&PERIOD)?,
                limit: values.get(&LIMIT)?,
            },
        })
    }

    /// The model's own rules.
    fn check(p: &Params) -> Result<()> {
        AdaptiveModel::with_params(256, p.refresh).map(drop)
    }

    fn encode(raw: &[u8], p: &Params) -> Result<Vec<u8>> {
        encode_with_set(raw, p, &byte_set(raw))
    }

    /// `None` when the payload cannot come out shorter than `raw`, decided
    /// from the model's exact ideal cost without coding: a lane's bytes are
    /// at least its ideal cost less one byte (see the `static` preset's twin
    /// of this test).
    ///
    /// Working out that cost runs the model over the block, so it is done
    /// only for blocks whose byte histogram is nearly flat (order-0 entropy
    /// of at least 7.875 bits a byte); other blocks are coded straight away,
    /// and the rare one of them that does not shrink is caught by the
    /// container's length check.
    fn encode_or_store(raw: &[u8], p: &Params) -> Result<Option<Vec<u8>>> {
        let counts = crate::model::byte_counts(raw);
        let set: [bool; 256] = core::array::from_fn(|b| counts[b] > 0);
        let n = raw.len() as u64;
        let log_n = log2_q32(n);
        let entropy_q32: u128 = counts
            .iter()
            .filter(|&&c| c > 0)
            .map(|&c| u128::from(c) * u128::from(log_n - log2_q32(c)))
            .sum();
        if entropy_q32 < u128::from(n * 8 - n / 8) << 32 {
            return encode_with_set(raw, p, &set).map(Some);
        }
        let lanes = lanes_for(raw.len(), p.lanes) as u64;
        let bits_q32 = cost(raw, p)?.bits_q32();
        // `log2_q32` reads high by at most about 2.7e-6 bits a symbol (see
        // `static_codec`); allow 8 bytes and 4 a MiB.
        let margin = 8 + raw.len() as u64 / (1 << 18);
        let floor = ((bits_q32 >> 32) as u64 / 8).saturating_sub(lanes + margin);
        if 2 + floor >= raw.len() as u64 {
            return Ok(None);
        }
        encode_with_set(raw, p, &set).map(Some)
    }

    fn decode(payload: &[u8], p: &Params, out: &mut [u8]) -> Result<()> {
        let mut cur = Cursor::new(payload);
        let lanes = cur
            .byte()
            .ok_or_else(|| Error::corrupt_stream(0, "payload is empty"))?;
        if lanes == 0 || u32::from(lanes) > p.lanes {
            return Err(Error::corrupt_stream(
                0,
                "lane count outside 1 ..= the preset's lanes",
            ));
        }
        let set = read_byte_set(&mut cur)?;
        let mut model = AdaptiveModel::with_symbols(&set, p.refresh)
            .map_err(|_| Error::corrupt_stream(1, "byte set does not fit the table total"))?;
        let views = read_lanes(&mut cur, usize::from(lanes))?;
        decode_adaptive_lanes(&mut model, &views, out).map_err(|e| match e.kind() {
            ErrorKind::InvalidParameter { .. } => Error::corrupt_stream(0, "lane count"),
            _ => e,
        })
    }

    fn ideal_cost(raw: &[u8], p: &Params) -> Result<IdealCost> {
        cost(raw, p)
    }

    /// The model (counts, frequencies and cumulative frequencies, about 4
    /// KiB) and the lane decoder's tables (a symbol byte per unit of the
    /// total and 1 KiB of spans), rounded up to 8 bytes per unit, plus its
    /// padded copy of the lanes.
    fn working_memory(p: &Params, block_size: u64) -> u64 {
        decoder_memory(8192 + (8u64 << p.refresh.log2_total), block_size)
    }
}

fn byte_set(raw: &[u8]) -> [bool; 256] {
    let mut seen = [false; 256];
    for &b in raw {
        seen[usize::from(b)] = true;
    }
    seen
}

fn put_byte_set(out: &mut Vec<u8>, set: &[bool; 256]) {
    let count = set.iter().filter(|&&s| s).count();
    out.push((count - 1) as u8);
    if count == 256 {
    } else if count <= LIST_MAX {
        out.extend((0..=255u8).filter(|&b| set[usize::from(b)]));
    } else {
        let mut map = [0u8; 32];
        for (v, _) in set.iter().enumerate().filter(|(_, &s)| s) {
            map[v / 8] |= 1 << (v % 8);
        }
        out.extend_from_slice(&map);
    }
}

fn read_byte_set(cur: &mut Cursor<'_>) -> Result<[bool; 256]> {
    let at = cur.position();
    let count = usize::from(
        cur.byte()
            .ok_or_else(|| Error::corrupt_stream(at as u64, "byte set missing"))?,
    ) + 1;
    let mut set = [count == 256; 256];
    if count == 256 {
        return Ok(set);
    }
    let at = cur.position();
    if count <= LIST_MAX {
        let list = cur
            .take(count as u64)
            .ok_or_else(|| Error::corrupt_stream(at as u64, "byte set runs past the payload"))?;
        if list.windows(2).any(|w| w[0] >= w[1]) {
            return Err(Error::corrupt_stream(
                at as u64,
                "byte set is not in increasing order",
            ));
        }
        for &b in list {
            set[usize::from(b)] = true;
        }
    } else {
        let map = cur
            .take(32)
            .ok_or_else(|| Error::corrupt_stream(at as u64, "byte set runs past the payload"))?;
        for (v, s) in set.iter_mut().enumerate() {
            *s = map[v / 8] >> (v % 8) & 1 == 1;
        }
        if set.iter().filter(|&&s| s).count() != count {
            return Err(Error::corrupt_stream(
                at as u64,
                "byte set map does not match its size",
            ));
        }
    }
    Ok(set)
}

/// The model's cost of `raw`, segment by segment, without coding it.
fn cost(raw: &[u8], p: &Params) -> Result<IdealCost> {
    let mut model = AdaptiveModel::with_symbols(&byte_set(raw), p.refresh)?;
    let shift = model.log2_total();
    let mut cost = IdealCost::new();
    let mut rest = raw;
    while !rest.is_empty() {
        let (segment, next) = rest.split_at((model.segment_left() as usize).min(rest.len()));
        let histogram = crate::model::byte_counts(segment);
        for (&h, &f) in histogram.iter().zip(model.frequencies()) {
            cost.add_repeated(f, 1 << shift, h);
        }
        model.update_run(segment);
        rest = next;
    }
    Ok(cost)
}

/// [`Codec::encode`] with the block's byte set already known.
fn encode_with_set(raw: &[u8], p: &Params, set: &[bool; 256]) -> Result<Vec<u8>> {
    let lanes = lanes_for(raw.len(), p.lanes);
    let mut model = AdaptiveModel::with_symbols(set, p.refresh)?;
    let streams = encode_adaptive_lanes(&mut model, raw, lanes)?;
    let coded: usize = streams.iter().map(Vec::len).sum();
    let mut out = Vec::with_capacity(coded + 34 + 8 * lanes);
    out.push(lanes as u8);
    put_byte_set(&mut out, set);
    put_lanes(&mut out, &streams);
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use alloc::vec;

    /// The defaults.
    fn params() -> Params {
        Adaptive::parse(Values::new(Adaptive::PARAMS, &[32, 12, 256, 4096])).unwrap()
    }

    #[test]
    fn byte_sets_round_trip_in_all_three_forms() {
        for n in [1usize, 2, 30, 31, 32, 200, 255, 256] {
            let raw: Vec<u8> = (0..n).map(|i| (i * 97 % 256) as u8).collect();
            let set = byte_set(&raw);
            let mut out = vec![];
            put_byte_set(&mut out, &set);
            let expected = match n {
                256 => 1,
                _ if n <= LIST_MAX => 1 + n,
                _ => 33,
            };
            assert_eq!(out.len(), expected, "{n} values");
            let mut cur = Cursor::new(&out);
            assert_eq!(read_byte_set(&mut cur).unwrap(), set);
            assert!(cur.rest().is_empty());
        }
    }

    #[test]
    fn non_canonical_byte_sets_are_rejected() {
        for bad in [&[1u8, 7, 7][..], &[1, 9, 3], &[40, 0xFF]] {
            let mut cur = Cursor::new(bad);
            assert!(read_byte_set(&mut cur).is_err(), "{bad:?}");
        }
    }

    #[test]
    fn blocks_round_trip_and_trailing_bytes_are_rejected() {
        let raw = crate::corpus::gauge_csv(5, 40_000);
        let mut payload = Adaptive::encode(&raw, &params()).unwrap();
        let mut out = vec![0u8; raw.len()];
        Adaptive::decode(&payload, &params(), &mut out).unwrap();
        assert_eq!(out, raw);
        payload.extend_from_slice(&[1, 2, 3, 4, 5, 6]);
        assert!(Adaptive::decode(&payload, &params(), &mut out).is_err());
    }

    /// Stores exactly the blocks coding could not shrink.
    #[test]
    fn store_decision_matches_coding() {
        for (i, raw) in [
            crate::corpus::random(1, 200_000),
            crate::corpus::random(2, 3_000),
            crate::corpus::gauge_binary(3, 100_000),
            (0..=255u8).cycle().take(70_000).collect(),
            crate::corpus::skewed(4, 50_000),
            vec![9u8; 10],
        ]
        .into_iter()
        .enumerate()
        {
            let coded = Adaptive::encode(&raw, &params()).unwrap();
            match Adaptive::encode_or_store(&raw, &params()).unwrap() {
                Some(c) => assert_eq!(c, coded, "case {i}"),
                None => assert!(
                    coded.len() >= raw.len(),
                    "case {i}: stored a block coding shrinks"
                ),
            }
        }
        assert!(
            Adaptive::encode_or_store(&crate::corpus::random(1, 200_000), &params())
                .unwrap()
                .is_none()
        );
    }

    #[test]
    fn ideal_cost_is_what_the_lanes_reach() {
        let raw = crate::corpus::text_like(8, 300_000);
        let ideal = Adaptive::ideal_cost(&raw, &params()).unwrap().bits() / 8.0;
        let payload = Adaptive::encode(&raw, &params()).unwrap().len() as f64;
        // Header, byte set and lane lengths, and up to four flush bytes a lane.
        assert!(
            payload >= ideal && payload < ideal + 40.0 + 32.0 * 7.0,
            "{payload} vs {ideal}"
        );
    }
}
