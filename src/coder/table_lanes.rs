//! The fast path for static byte tables over interleaved lanes.
//!
//! [`encode_table_lanes`] and [`decode_table_lanes`] produce and read exactly
//! the same streams as [`encode_interleaved`](super::encode_interleaved) /
//! [`decode_interleaved`](super::decode_interleaved) with a [`TableModel`]
//! over bytes, but keep every lane's state in registers and look each decoding
//! slot up in one packed table entry (symbol, cumulative frequency and
//! frequency together). The total is a power of two, so the encoder never
//! divides; the decoder's one division per symbol overlaps across lanes.
//!
//! Invariants are those of the plain coder (`2^24 <= range`, `code < range`
//! for valid input). Input checks are batched: a lane that reads more than
//! four implicit zero bytes is truncated, a lane whose `code` ever leaves its
//! interval is corrupt — both are reported once the block is decoded, which
//! costs no more work than the caller's output length.

use alloc::vec;
use alloc::vec::Vec;

use crate::coder::lanes::MAX_LANES;
use crate::error::{ErrorKind, Result};
use crate::model::{Model, TableModel};

const TOP: u32 = 1 << 24;

/// Adds the carry into the bytes already written to `out[..pos]`.
#[cold]
fn propagate_carry(out: &mut [u8], pos: usize) {
    for b in out[..pos].iter_mut().rev() {
        *b = b.wrapping_add(1);
        if *b != 0 {
            return;
        }
    }
}

/// Ends one lane: the same flush as `Encoder::finish`.
fn flush_lane(mut low: u32, range: u32, out: &mut [u8], mut pos: usize) -> usize {
    let end = u64::from(low) + u64::from(range);
    let mut keep = 0;
    let mut value = u64::from(low);
    for k in 0..=4u32 {
        let mask = (1u64 << (32 - 8 * k)) - 1;
        let candidate = (u64::from(low) + mask) & !mask;
        if candidate < end {
            keep = k;
            value = candidate;
            break;
        }
    }
    if value >> 32 != 0 {
        propagate_carry(out, pos);
    }
    low = value as u32;
    for _ in 0..keep {
        out[pos] = (low >> 24) as u8;
        pos += 1;
        low <<= 8;
    }
    pos
}

fn check(model: &TableModel, lanes: usize) -> Result<()> {
    if lanes == 0 || lanes > MAX_LANES {
        return Err(ErrorKind::InvalidParameter {
            name: "lanes",
            reason: "must be 1 ..= 16",
        }
        .into());
    }
    if model.alphabet_size() > 256 {
        return Err(ErrorKind::InvalidParameter {
            name: "model",
            reason: "the byte fast path needs an alphabet of at most 256 symbols",
        }
        .into());
    }
    Ok(())
}

/// Codes `data` with a static byte table over `lanes` interleaved coders.
///
/// Output is identical to [`encode_interleaved`](super::encode_interleaved)
/// with the same model and lane count.
///
/// # Errors
///
/// [`ErrorKind::InvalidParameter`] for a lane count outside `1 ..= 16` or a
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
pub fn encode_table_lanes(model: &TableModel, data: &[u8], lanes: usize) -> Result<Vec<Vec<u8>>> {
    check(model, lanes)?;
    // Per byte value: cum | freq << 32 (freq 0 marks bytes the table cannot code).
    let mut entry = [0u64; 256];
    let freq = model.frequencies();
    let cum = model.cumulative();
    for s in 0..freq.len() {
        entry[s] = u64::from(cum[s]) | u64::from(freq[s]) << 32;
    }
    if let Some(&b) = data.iter().find(|&&b| entry[b as usize] >> 32 == 0) {
        return Err(ErrorKind::UncodableSymbol {
            symbol: b.into(),
            alphabet: model.alphabet_size(),
        }
        .into());
    }
    let shift = model.log2_total();
    let total = model.total();
    match lanes {
        4 => Ok(encode_fixed::<4>(data, &entry, shift, total)),
        2 => Ok(encode_fixed::<2>(data, &entry, shift, total)),
        8 => Ok(encode_fixed::<8>(data, &entry, shift, total)),
        _ => Ok(encode_fixed_dyn(data, &entry, shift, total, lanes)),
    }
}

/// One coding step of a lane whose state lives in the caller's locals.
#[inline(always)]
fn encode_step(
    low: &mut u32,
    range: &mut u32,
    out: &mut [u8],
    pos: &mut usize,
    e: u64,
    shift: u32,
    total: u32,
) {
    let (cum, freq) = (e as u32, (e >> 32) as u32);
    let r = *range >> shift;
    let offset = r * cum;
    let (sum, carry) = low.overflowing_add(offset);
    *low = sum;
    if carry {
        propagate_carry(out, *pos);
    }
    *range = if cum + freq < total {
        r * freq
    } else {
        *range - offset
    };
    // A step narrows the range by at most 2^16, so at most two bytes leave
    // per symbol. Branch-free: the byte is always stored, the position only
    // advances when the byte is real (the buffer has room for the extra one).
    for _ in 0..2 {
        let step = u32::from(*range < TOP);
        if let Some(slot) = out.get_mut(*pos) {
            *slot = (*low >> 24) as u8;
        }
        *pos += step as usize;
        *low <<= 8 * step;
        *range <<= 8 * step;
    }
}

fn lane_buffers(data_len: usize, lanes: usize) -> Vec<Vec<u8>> {
    (0..lanes)
        .map(|_| alloc::vec![0u8; 2 * data_len.div_ceil(lanes) + 8])
        .collect()
}

fn encode_fixed<const N: usize>(
    data: &[u8],
    entry: &[u64; 256],
    shift: u32,
    total: u32,
) -> Vec<Vec<u8>> {
    let mut outs = lane_buffers(data.len(), N);
    let mut low = [0u32; N];
    let mut range = [u32::MAX; N];
    let mut pos = [0usize; N];
    {
        let bufs: &mut [Vec<u8>] = &mut outs;
        let mut chunks = data.chunks_exact(N);
        for chunk in &mut chunks {
            for l in 0..N {
                let e = entry[chunk[l] as usize];
                encode_step(
                    &mut low[l],
                    &mut range[l],
                    &mut bufs[l],
                    &mut pos[l],
                    e,
                    shift,
                    total,
                );
            }
        }
        for (l, &b) in chunks.remainder().iter().enumerate() {
            let e = entry[b as usize];
            encode_step(
                &mut low[l],
                &mut range[l],
                &mut bufs[l],
                &mut pos[l],
                e,
                shift,
                total,
            );
        }
    }
    finish_lanes(outs, &low, &range, &pos)
}

/// Flushes every lane and cuts its buffer to the bytes written.
fn finish_lanes(mut outs: Vec<Vec<u8>>, low: &[u32], range: &[u32], pos: &[usize]) -> Vec<Vec<u8>> {
    for (l, out) in outs.iter_mut().enumerate() {
        let end = flush_lane(low[l], range[l], out, pos[l]);
        out.truncate(end);
    }
    outs
}

fn encode_fixed_dyn(
    data: &[u8],
    entry: &[u64; 256],
    shift: u32,
    total: u32,
    lanes: usize,
) -> Vec<Vec<u8>> {
    let mut outs = lane_buffers(data.len(), lanes);
    let mut low = alloc::vec![0u32; lanes];
    let mut range = alloc::vec![u32::MAX; lanes];
    let mut pos = alloc::vec![0usize; lanes];
    for (i, &b) in data.iter().enumerate() {
        let l = i % lanes;
        let e = entry[b as usize];
        encode_step(
            &mut low[l],
            &mut range[l],
            &mut outs[l],
            &mut pos[l],
            e,
            shift,
            total,
        );
    }
    finish_lanes(outs, &low, &range, &pos)
}

/// Zero bytes placed after each lane's input, so reads need no end test.
const PAD: usize = 8;

/// One lane's decoding state, kept in the caller's locals.
#[derive(Clone, Copy)]
struct LaneState {
    range: u32,
    code: u32,
    pos: usize,
    bad: bool,
}

impl LaneState {
    fn start(input: &[u8]) -> Self {
        let mut code = 0u32;
        for &b in &input[..4] {
            code = code << 8 | u32::from(b);
        }
        LaneState {
            range: u32::MAX,
            code,
            pos: 4,
            bad: code == u32::MAX,
        }
    }
}

/// The block-wide decoding tables.
struct Slots<'a> {
    slots: &'a [u64],
    shift: u32,
    total: u32,
}

/// One decoding step; returns the symbol. `input` is the lane's bytes plus
/// `PAD` zeros; reads beyond it yield zero and are caught by the verdict.
#[inline(always)]
fn decode_step(lane: &mut LaneState, input: &[u8], tables: &Slots<'_>) -> u8 {
    let total = tables.total;
    let r = (lane.range >> tables.shift).max(1);
    let t = (lane.code / r).min(total - 1);
    let e = tables.slots.get(t as usize).copied().unwrap_or(0);
    let sym = e as u8;
    let cum = (e >> 8) as u32 & 0x1_FFFF;
    let freq = (e >> 32) as u32;
    let offset = r.wrapping_mul(cum);
    lane.code = lane.code.wrapping_sub(offset);
    lane.range = if cum + freq < total {
        r.wrapping_mul(freq)
    } else {
        lane.range.wrapping_sub(offset)
    };
    // At most two bytes per symbol (see `encode_step`); branch-free.
    for _ in 0..2 {
        let step = u32::from(lane.range < TOP);
        let byte = u32::from(input.get(lane.pos).copied().unwrap_or(0));
        lane.code = (lane.code << (8 * step)) | (byte & 0u32.wrapping_sub(step));
        lane.range <<= 8 * step;
        lane.pos += step as usize;
    }
    lane.bad |= lane.code >= lane.range;
    sym
}

/// Decodes `out.len()` bytes coded by [`encode_table_lanes`] (or by
/// [`encode_interleaved`](super::encode_interleaved) with a byte table).
///
/// # Errors
///
/// [`ErrorKind::InvalidParameter`] as for [`encode_table_lanes`];
/// [`ErrorKind::Truncated`], [`ErrorKind::CorruptStream`] or
/// [`ErrorKind::TrailingBytes`] when a lane's stream is damaged. The work done
/// is bounded by `out.len()` whatever the input.
pub fn decode_table_lanes(model: &TableModel, streams: &[&[u8]], out: &mut [u8]) -> Result<()> {
    check(model, streams.len())?;
    let total = model.total();
    let shift = model.log2_total();
    let freq = model.frequencies();
    let cum = model.cumulative();
    // Per slot: symbol | cum << 8 | freq << 32.
    let mut slots = vec![0u64; total as usize];
    for s in 0..freq.len() {
        let e = s as u64 | u64::from(cum[s]) << 8 | u64::from(freq[s]) << 32;
        slots[cum[s] as usize..(cum[s] + freq[s]) as usize].fill(e);
    }
    let inputs: Vec<Vec<u8>> = streams
        .iter()
        .map(|s| {
            let mut v = Vec::with_capacity(s.len() + PAD);
            v.extend_from_slice(s);
            v.resize(s.len() + PAD, 0);
            v
        })
        .collect();
    let views: Vec<&[u8]> = inputs.iter().map(Vec::as_slice).collect();
    let tables = Slots {
        slots: &slots,
        shift,
        total,
    };
    let states = match views.len() {
        4 => decode_fixed::<4>(&views, out, &tables),
        2 => decode_fixed::<2>(&views, out, &tables),
        8 => decode_fixed::<8>(&views, out, &tables),
        _ => decode_dyn(&views, out, &tables),
    };
    for (lane, stream) in states.iter().zip(streams) {
        let len = stream.len();
        if lane.pos > len + 4 {
            return Err(ErrorKind::Truncated { offset: len as u64 }.into());
        }
        if lane.bad {
            return Err(ErrorKind::CorruptStream {
                offset: lane.pos.min(len) as u64,
                reason: "code value outside the coder interval",
            }
            .into());
        }
        if lane.pos < len {
            return Err(ErrorKind::TrailingBytes {
                offset: lane.pos as u64,
                count: (len - lane.pos) as u64,
            }
            .into());
        }
    }
    Ok(())
}

fn decode_fixed<const N: usize>(
    inputs: &[&[u8]],
    out: &mut [u8],
    tables: &Slots<'_>,
) -> Vec<LaneState> {
    let mut lanes: [LaneState; N] = core::array::from_fn(|l| LaneState::start(inputs[l]));
    let input: [&[u8]; N] = core::array::from_fn(|l| inputs[l]);
    let mut chunks = out.chunks_exact_mut(N);
    for chunk in &mut chunks {
        for l in 0..N {
            chunk[l] = decode_step(&mut lanes[l], input[l], tables);
        }
    }
    for (l, b) in chunks.into_remainder().iter_mut().enumerate() {
        *b = decode_step(&mut lanes[l], input[l], tables);
    }
    lanes.to_vec()
}

fn decode_dyn(inputs: &[&[u8]], out: &mut [u8], tables: &Slots<'_>) -> Vec<LaneState> {
    let n = inputs.len();
    let mut lanes: Vec<LaneState> = inputs.iter().map(|i| LaneState::start(i)).collect();
    for (i, b) in out.iter_mut().enumerate() {
        *b = decode_step(&mut lanes[i % n], inputs[i % n], tables);
    }
    lanes
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::coder::{decode_interleaved, encode_interleaved};

    #[test]
    fn identical_to_generic_path() {
        let data: Vec<u8> = (0..20_000u32)
            .map(|i| ((i * 31) % 200 / (1 + i % 7)) as u8)
            .collect();
        for k in [8u32, 12, 15, 16] {
            let model = TableModel::from_bytes_histogram(&data, k).unwrap();
            for lanes in 1..=MAX_LANES {
                let fast = encode_table_lanes(&model, &data, lanes).unwrap();
                let mut m = model.clone();
                let slow = encode_interleaved(&mut m, &data, lanes).unwrap();
                assert_eq!(fast, slow, "k={k} lanes={lanes}");
                let views: Vec<&[u8]> = fast.iter().map(Vec::as_slice).collect();
                let mut out = vec![0u8; data.len()];
                decode_table_lanes(&model, &views, &mut out).unwrap();
                assert_eq!(out, data);
                let mut out2 = vec![0u8; data.len()];
                decode_interleaved(&mut m, &views, &mut out2).unwrap();
                assert_eq!(out2, data);
            }
        }
    }

    #[test]
    fn uncodable_and_damaged() {
        let model = TableModel::from_counts(&[5, 5], 4).unwrap();
        assert!(encode_table_lanes(&model, &[0, 1, 2], 4).is_err());
        let data = [0u8, 1, 1, 0, 1, 0, 0, 0, 1];
        let lanes = encode_table_lanes(&model, &data, 2).unwrap();
        let views: Vec<&[u8]> = lanes.iter().map(Vec::as_slice).collect();
        let mut out = vec![0u8; 400];
        // Asking for far more symbols than were coded runs past the end.
        assert!(decode_table_lanes(&model, &views, &mut out).is_err());
    }
}
