//! The `static` preset's block codec: a table model per block over
//! interleaved lanes.
//!
//! Encoding counts the block's bytes, quantises the counts to a table with a
//! total of `2^k` (`k` grows with the block length up to the `log2_total`
//! parameter: small blocks get small totals, whose tables cost fewer bytes),
//! and codes the bytes with that table over `n` lanes, `n` being the `lanes`
//! parameter, reduced so that every lane has at least 1 KiB (each lane costs
//! up to four flush bytes and a length field).
//!
//! Payload: `lanes: u8`, `table_len: vint`, the table (as
//! [`TableModel::to_bytes`] writes it), `lanes - 1` lane lengths as vints,
//! then the lane streams back to back (the last lane takes the rest).
//!
//! Invariant: the decoder accepts exactly the payloads the encoder can make
//! for some block, up to the range coder's own slack: the table must be in
//! its canonical form and fill `table_len` exactly, the lane lengths must fit
//! the payload, and every lane must be consumed exactly.

use alloc::vec::Vec;

use crate::coder::{decode_table_lanes, encode_counted, log2_q32, IdealCost};
use crate::error::{Error, Result};
use crate::model::TableModel;
use crate::preset::codec::Codec;
use crate::preset::lanes::{self, decoder_memory, lanes_for, put_lanes, read_lanes, LANES};
use crate::preset::spec::{ParamSpec, Values};
use crate::vint::{put_vint, Cursor};

/// The largest table total.
const LOG2_TOTAL: ParamSpec = ParamSpec {
    help: "largest table total, as a power of two (small blocks use smaller totals)",
    ..lanes::LOG2_TOTAL
};

/// The `static` preset.
pub(crate) struct Static;

/// The `static` preset's parameters.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) struct Params {
    /// Most lanes a block is coded over.
    lanes: u32,
    /// Largest table total, as a power of two.
    log2_total: u32,
}

impl Codec for Static {
    type Params = Params;
    const ID: u32 = 1;
    const NAME: &'static str = "static";
    const SUMMARY: &'static str =
        "table model per block from its byte histogram, interleaved lanes; fastest";
    const PARAMS: &'static [ParamSpec] = &[LANES, LOG2_TOTAL];

    fn parse(values: Values<'_>) -> Result<Params> {
        Ok(Params {
            lanes: values.get(&LANES)?,
            log2_total: values.get(&LOG2_TOTAL)?,
        })
    }

    fn encode(raw: &[u8], p: &Params) -> Result<Vec<u8>> {
        let model = TableModel::from_bytes_histogram(raw, table_log2(raw.len(), p.log2_total))?;
        encode_with(raw, &model, lanes_for(raw.len(), p.lanes))
    }

    /// `None` when the payload cannot come out shorter than `raw`, decided
    /// from the byte counts alone, without coding. The decision is exact,
    /// never a guess: a lane's bytes are at least its ideal cost less one
    /// byte (the range stays at least 2^24, so all but 8 bits of the
    /// information leave as bytes), so when the ideal cost less one byte per
    /// lane, plus the table, already reaches the block's length, coding
    /// would be wasted work.
    fn encode_or_store(raw: &[u8], p: &Params) -> Result<Option<Vec<u8>>> {
        let counts = crate::model::byte_counts(raw);
        let model = TableModel::from_counts(&counts, table_log2(raw.len(), p.log2_total))?;
        let lanes = lanes_for(raw.len(), p.lanes);
        let total_log = u64::from(model.log2_total()) << 32;
        let mut bits_q32: u128 = 0;
        for (&c, &f) in counts.iter().zip(model.frequencies()) {
            if c > 0 {
                bits_q32 += u128::from(c) * u128::from(total_log - log2_q32(u64::from(f)));
            }
        }
        // `log2_q32` interpolates a concave curve from below (256 points an
        // octave), so each symbol's cost can read high by at most about
        // 2.7e-6 bits, under 0.4 bytes a MiB; allow 8 bytes and 4 a MiB.
        let margin = 8 + raw.len() as u64 / (1 << 18);
        let floor = ((bits_q32 >> 32) as u64 / 8).saturating_sub(lanes as u64 + margin);
        let table_len = model.to_bytes().len() as u64;
        if 1 + table_len + floor >= raw.len() as u64 {
            return Ok(None);
        }
        encode_with(raw, &model, lanes).map(Some)
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
        let at = cur.position();
        let table_len = cur
            .vint()
            .map_err(|_| Error::corrupt_stream(at as u64, "malformed table length"))?;
        Error::check_limit("model table size", table_len, MAX_TABLE_BYTES)?;
        let at = cur.position();
        let table = cur
            .take(table_len)
            .ok_or_else(|| Error::corrupt_stream(at as u64, "table runs past the payload"))?;
        let (model, used) = TableModel::from_table_bytes(table, 256)?;
        if used != table.len() || model.frequencies().len() != 256 || model.to_bytes() != table {
            return Err(Error::corrupt_stream(
                at as u64,
                "model table is not in canonical form",
            ));
        }
        if model.log2_total() > p.log2_total {
            return Err(Error::corrupt_stream(
                at as u64,
                "table total above the preset's log2_total",
            ));
        }
        let views = read_lanes(&mut cur, usize::from(lanes))?;
        decode_table_lanes(&model, &views, out)
    }

    fn ideal_cost(raw: &[u8], p: &Params) -> Result<IdealCost> {
        let model = TableModel::from_bytes_histogram(raw, table_log2(raw.len(), p.log2_total))?;
        let mut cost = IdealCost::new();
        for &b in raw {
            let f = model.frequencies()[usize::from(b)];
            cost.add(f, 1 << model.log2_total());
        }
        Ok(cost)
    }

    /// Table model state (frequencies and cumulative counts, 2 x 257 x 4
    /// bytes, and the model's slot table, 2 bytes per unit of the total) and
    /// the fast decoder's slot and symbol tables (5 bytes per unit), rounded
    /// up, plus the lane decoder's padded copy of the lanes.
    fn working_memory(p: &Params, block_size: u64) -> u64 {
        decoder_memory(4096 + (8u64 << p.log2_total), block_size)
    }
}

/// Largest table a block may declare, in bytes. A 256-symbol table takes at
/// most about 1.1 KiB (three header codes and two codes of at most 33 bits
/// per symbol).
const MAX_TABLE_BYTES: u64 = 4096;

fn table_log2(len: usize, cap: u32) -> u32 {
    let bits = usize::BITS - len.leading_zeros();
    bits.saturating_sub(4).clamp(8, cap)
}

fn encode_with(raw: &[u8], model: &TableModel, lanes: usize) -> Result<Vec<u8>> {
    let streams = encode_counted(model, raw, lanes)?;
    let table = model.to_bytes();
    let mut out = Vec::with_capacity(streams.coded_len() + table.len() + 8 * lanes);
    out.push(lanes as u8);
    put_vint(&mut out, table.len() as u64);
    out.extend_from_slice(&table);
    put_lanes(&mut out, &streams.views());
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ErrorKind;
    use alloc::vec;

    const FOUR: Params = Params {
        lanes: 4,
        log2_total: 12,
    };

    #[test]
    fn totals_follow_the_block_length() {
        assert_eq!(table_log2(1, 12), 8);
        assert_eq!(table_log2(4096, 12), 9);
        assert_eq!(table_log2(1 << 16, 12), 12);
        assert_eq!(table_log2(1 << 20, 16), 16);
    }

    /// Stores exactly the blocks coding could not shrink: the shortcut
    /// agrees with coding and comparing lengths.
    #[test]
    fn store_decision_matches_coding() {
        let params = Params {
            lanes: 32,
            log2_total: 12,
        };
        for (i, raw) in [
            crate::corpus::random(1, 200_000),
            crate::corpus::random(2, 5_000),
            crate::corpus::gauge_csv(3, 100_000),
            (0..=255u8).cycle().take(70_000).collect(),
            crate::corpus::skewed(4, 50_000),
        ]
        .into_iter()
        .enumerate()
        {
            let coded = Static::encode(&raw, &params).unwrap();
            match Static::encode_or_store(&raw, &params).unwrap() {
                Some(c) => assert_eq!(c, coded, "case {i}"),
                None => assert!(
                    coded.len() >= raw.len(),
                    "case {i}: stored a block coding shrinks"
                ),
            }
        }
        // Random bytes take the shortcut.
        assert!(
            Static::encode_or_store(&crate::corpus::random(1, 200_000), &params)
                .unwrap()
                .is_none()
        );
    }

    #[test]
    fn hostile_table_length_is_a_limit_error() {
        let mut payload = vec![1u8];
        put_vint(&mut payload, 1 << 40);
        let mut out = [0u8; 10];
        let err = Static::decode(&payload, &FOUR, &mut out).unwrap_err();
        assert!(matches!(err.kind(), ErrorKind::LimitExceeded { .. }));
    }

    #[test]
    fn non_canonical_table_is_rejected() {
        let raw = b"river level 212 cm".to_vec();
        let mut payload = Static::encode(&raw, &FOUR).unwrap();
        let mut out = vec![0u8; raw.len()];
        Static::decode(&payload, &FOUR, &mut out).unwrap();
        assert_eq!(out, raw);
        // Set a padding bit in the table's last byte.
        let table_len = payload[1] as usize;
        payload[1 + table_len] |= 1;
        assert!(Static::decode(&payload, &FOUR, &mut out).is_err());
    }
}
