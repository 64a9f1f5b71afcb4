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

use crate::coder::{decode_table_lanes, encode_counted, log2_q32};
use crate::error::Result;
use crate::model::TableModel;
use crate::preset::corrupt;
use crate::preset::lanes::{put_lanes, read_lanes};
use crate::vint::{put_vint, Cursor};

/// Largest table a block may declare, in bytes. A 256-symbol table takes at
/// most about 1.1 KiB (three header codes and two codes of at most 33 bits
/// per symbol).
pub(crate) const MAX_TABLE_BYTES: u64 = 4096;

/// Least bytes per lane before another lane is used.
const LANE_MIN_BYTES: usize = 1024;

fn table_log2(len: usize, cap: u32) -> u32 {
    let bits = usize::BITS - len.leading_zeros();
    bits.saturating_sub(4).clamp(8, cap)
}

/// The ideal cost of a block under the table this preset would build for it.
pub(crate) fn ideal(raw: &[u8], params: &[u32]) -> Result<crate::coder::IdealCost> {
    let model = TableModel::from_bytes_histogram(raw, table_log2(raw.len(), params[1]))?;
    let mut cost = crate::coder::IdealCost::new();
    for &b in raw {
        let f = model.frequencies()[usize::from(b)];
        cost.add(f, 1 << model.log2_total());
    }
    Ok(cost)
}

fn lanes_for(len: usize, max_lanes: u32) -> usize {
    (len / LANE_MIN_BYTES).clamp(1, max_lanes as usize)
}

pub(crate) fn encode(raw: &[u8], params: &[u32]) -> Result<Vec<u8>> {
    let (max_lanes, cap) = (params[0], params[1]);
    let model = TableModel::from_bytes_histogram(raw, table_log2(raw.len(), cap))?;
    encode_with(raw, &model, lanes_for(raw.len(), max_lanes))
}

/// As [`encode`], or `None` when the payload cannot come out shorter than
/// `raw` (the container then stores the block): decided from the byte
/// counts alone, without coding. The decision is exact, never a guess: a
/// lane's bytes are at least its ideal cost less one byte (the range stays
/// at least 2^24, so all but 8 bits of the information leave as bytes), so
/// when the ideal cost less one byte per lane, plus the table, already
/// reaches the block's length, coding would be wasted work.
pub(crate) fn encode_or_store(raw: &[u8], params: &[u32]) -> Result<Option<Vec<u8>>> {
    let (max_lanes, cap) = (params[0], params[1]);
    let counts = crate::model::byte_counts(raw);
    let model = TableModel::from_counts(&counts, table_log2(raw.len(), cap))?;
    let lanes = lanes_for(raw.len(), max_lanes);
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

pub(crate) fn decode(payload: &[u8], params: &[u32], out: &mut [u8]) -> Result<()> {
    let (max_lanes, cap) = (params[0], params[1]);
    let mut cur = Cursor::new(payload);
    let lanes = cur.byte().ok_or_else(|| corrupt(0, "payload is empty"))?;
    if lanes == 0 || u32::from(lanes) > max_lanes {
        return Err(corrupt(0, "lane count outside 1 ..= the preset's lanes"));
    }
    let at = cur.position();
    let table_len = cur
        .vint()
        .map_err(|_| corrupt(at, "malformed table length"))?;
    if table_len > MAX_TABLE_BYTES {
        return Err(crate::Error::limit_exceeded(
            "model table size",
            table_len,
            MAX_TABLE_BYTES,
        ));
    }
    let at = cur.position();
    let table = cur
        .take(table_len)
        .ok_or_else(|| corrupt(at, "table runs past the payload"))?;
    let (model, used) = TableModel::from_table_bytes(table, 256)?;
    if used != table.len() || model.frequencies().len() != 256 || model.to_bytes() != table {
        return Err(corrupt(at, "model table is not in canonical form"));
    }
    if model.log2_total() > cap {
        return Err(corrupt(at, "table total above the preset's log2_total"));
    }
    let views = read_lanes(&mut cur, usize::from(lanes))?;
    decode_table_lanes(&model, &views, out)
}

/// Working memory to decode a block of up to `block_size` bytes, beyond the
/// payload and output buffers: table model state (frequencies and
/// cumulative counts, 2 x 257 x 4 bytes, and the model's slot table, 2 bytes
/// per unit of the total), the fast decoder's slot and symbol tables (5
/// bytes per unit), rounded up, plus the fast decoder's padded copy of the
/// lanes (the payload, shorter than the block, and its padding per lane).
pub(crate) fn working_memory(params: &[u32], block_size: u64) -> u64 {
    let tables = 4096 + (8u64 << params[1]);
    let pad = crate::coder::LANE_PAD as u64 * crate::coder::MAX_LANES as u64;
    tables.saturating_add(block_size.saturating_add(pad))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ErrorKind;
    use alloc::vec;

    #[test]
    fn totals_and_lanes_follow_the_block_length() {
        assert_eq!(table_log2(1, 12), 8);
        assert_eq!(table_log2(4096, 12), 9);
        assert_eq!(table_log2(1 << 16, 12), 12);
        assert_eq!(table_log2(1 << 20, 16), 16);
        assert_eq!(lanes_for(10, 4), 1);
        assert_eq!(lanes_for(2048, 4), 2);
        assert_eq!(lanes_for(1 << 20, 4), 4);
    }

    /// Stores exactly the blocks coding could not shrink: the shortcut
    /// agrees with coding and comparing lengths.
    #[test]
    fn store_decision_matches_coding() {
        let params = [32u32, 12];
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
            let coded = encode(&raw, &params).unwrap();
            match encode_or_store(&raw, &params).unwrap() {
                Some(c) => assert_eq!(c, coded, "case {i}"),
                None => assert!(
                    coded.len() >= raw.len(),
                    "case {i}: stored a block coding shrinks"
                ),
            }
        }
        // Random bytes take the shortcut.
        assert!(encode_or_store(&crate::corpus::random(1, 200_000), &params)
            .unwrap()
            .is_none());
    }

    #[test]
    fn hostile_table_length_is_a_limit_error() {
        let mut payload = vec![1u8];
        put_vint(&mut payload, 1 << 40);
        let mut out = [0u8; 10];
        let err = decode(&payload, &[4, 12], &mut out).unwrap_err();
        assert!(matches!(err.kind(), ErrorKind::LimitExceeded { .. }));
    }

    #[test]
    fn non_canonical_table_is_rejected() {
        let raw = b"river level 212 cm".to_vec();
        let mut payload = encode(&raw, &[4, 12]).unwrap();
        let mut out = vec![0u8; raw.len()];
        decode(&payload, &[4, 12], &mut out).unwrap();
        assert_eq!(out, raw);
        // Set a padding bit in the table's last byte.
        let table_len = payload[1] as usize;
        payload[1 + table_len] |= 1;
        assert!(decode(&payload, &[4, 12], &mut out).is_err());
    }
}
