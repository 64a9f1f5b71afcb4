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
#[inline]
pub(crate) fn propagate_carry(out: &mut [u8], pos: usize) {
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
            reason: "must be 1 ..= 32",
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
        #[cfg(target_arch = "x86_64")]
        n if n.is_multiple_of(8) && super::table_simd_enc::available() => {
            Ok(encode_vector(data, &entry, shift, total, n))
        }
        8 => Ok(encode_fixed::<8>(data, &entry, shift, total)),
        n if n % 8 == 0 => Ok(encode_passes::<8>(data, &entry, shift, total, n)),
        n if n % 4 == 0 => Ok(encode_passes::<4>(data, &entry, shift, total, n)),
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

/// The states of one group of lanes during a pass: `low`, `range`, `pos`
/// and the output buffers of columns `first .. first + low.len()`.
struct GroupStates<'a> {
    low: &'a mut [u32],
    range: &'a mut [u32],
    pos: &'a mut [usize],
    bufs: &'a mut [Vec<u8>],
}

/// Many lanes, `group` at a time: for each chunk of whole rows, `pass`
/// codes the rows' columns `first .. first + group` (given the chunk and
/// `first`) for one group after another; the last, partial row is coded
/// lane by lane. Same streams as coding the rows in order, since lanes are
/// independent.
#[allow(clippy::too_many_arguments)]
fn encode_grouped(
    data: &[u8],
    entry: &[u64; 256],
    shift: u32,
    total: u32,
    lanes: usize,
    group: usize,
    mut pass: impl FnMut(GroupStates<'_>, &[u8], usize),
) -> Vec<Vec<u8>> {
    let mut outs = lane_buffers(data.len(), lanes);
    let mut low = alloc::vec![0u32; lanes];
    let mut range = alloc::vec![u32::MAX; lanes];
    let mut pos = alloc::vec![0usize; lanes];
    let rows = data.len() / lanes;
    let (body, tail) = data.split_at(rows * lanes);
    for chunk in body.chunks(CHUNK_ROWS * lanes) {
        for first in (0..lanes).step_by(group) {
            let cols = first..first + group;
            let states = GroupStates {
                low: &mut low[cols.clone()],
                range: &mut range[cols.clone()],
                pos: &mut pos[cols.clone()],
                bufs: &mut outs[cols],
            };
            pass(states, chunk, first);
        }
    }
    for (k, &b) in tail.iter().enumerate() {
        let e = entry[b as usize];
        encode_step(
            &mut low[k],
            &mut range[k],
            &mut outs[k],
            &mut pos[k],
            e,
            shift,
            total,
        );
    }
    finish_lanes(outs, &low, &range, &pos)
}

/// Lane counts that are a multiple of 8 on CPUs with AVX2: the vector
/// kernel codes eight columns at a time.
#[cfg(target_arch = "x86_64")]
fn encode_vector(
    data: &[u8],
    entry: &[u64; 256],
    shift: u32,
    total: u32,
    lanes: usize,
) -> Vec<Vec<u8>> {
    use super::table_simd_enc::{encode_rows, Group};
    // The kernel's packing: cum | (freq - 1) << 16 (every byte of `data` has
    // a non-zero frequency, checked by the caller).
    let packed: [u32; 256] = core::array::from_fn(|b| {
        (entry[b] as u32) | ((entry[b] >> 32) as u32).wrapping_sub(1) << 16
    });
    encode_grouped(data, entry, shift, total, lanes, 8, |s, chunk, first| {
        let mut group = Group {
            low: (&*s.low).try_into().expect("eight lanes"),
            range: (&*s.range).try_into().expect("eight lanes"),
            pos: (&*s.pos).try_into().expect("eight lanes"),
            bufs: s.bufs,
        };
        encode_rows(&mut group, chunk, lanes, first, &packed, shift, total);
        s.low.copy_from_slice(&group.low);
        s.range.copy_from_slice(&group.range);
        s.pos.copy_from_slice(&group.pos);
    })
}

/// Many lanes, `P` at a time, on the scalar steps with each group's states
/// in registers.
fn encode_passes<const P: usize>(
    data: &[u8],
    entry: &[u64; 256],
    shift: u32,
    total: u32,
    lanes: usize,
) -> Vec<Vec<u8>> {
    encode_grouped(data, entry, shift, total, lanes, P, |s, chunk, first| {
        let bufs: &mut [Vec<u8>; P] = s.bufs.try_into().expect("P lanes");
        let mut l: [u32; P] = core::array::from_fn(|k| s.low[k]);
        let mut r: [u32; P] = core::array::from_fn(|k| s.range[k]);
        let mut p: [usize; P] = core::array::from_fn(|k| s.pos[k]);
        for row in chunk.chunks_exact(lanes) {
            let cols = &row[first..first + P];
            for k in 0..P {
                let e = entry[cols[k] as usize];
                encode_step(
                    &mut l[k],
                    &mut r[k],
                    &mut bufs[k],
                    &mut p[k],
                    e,
                    shift,
                    total,
                );
            }
        }
        s.low.copy_from_slice(&l);
        s.range.copy_from_slice(&r);
        s.pos.copy_from_slice(&p);
    })
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

/// Rows decoded between two checks of the lanes' read positions.
const CHUNK_ROWS: usize = 64;

/// Zero bytes after each lane in the decoder's copy of the input: the four
/// implicit zeros a lane may read, two bytes a step for a chunk of
/// `CHUNK_ROWS` steps, and three for a four-byte read at the last position.
pub(crate) const LANE_PAD: usize = 4 + 2 * CHUNK_ROWS + 4;

/// One lane's decoding state; `pos` is an offset into the padded copy of all
/// lanes.
#[derive(Clone, Copy)]
pub(crate) struct LaneState {
    pub(crate) range: u32,
    pub(crate) code: u32,
    pub(crate) pos: usize,
    pub(crate) bad: bool,
}

impl LaneState {
    fn start(buffer: &[u8], at: usize) -> Self {
        let mut code = 0u32;
        for &b in &buffer[at..at + 4] {
            code = code << 8 | u32::from(b);
        }
        LaneState {
            range: u32::MAX,
            code,
            pos: at + 4,
            bad: code == u32::MAX,
        }
    }
}

/// The block-wide decoding tables, one entry per slot of the total.
pub(crate) struct DecodeTables {
    /// Per slot: `cum | (freq - 1) << 12 | symbol << 24` when `packed`
    /// (totals up to 2^12), else `cum | (freq - 1) << 16`.
    pub(crate) slots: Vec<u32>,
    /// Per slot: its symbol; three zero bytes follow for four-byte reads.
    pub(crate) symbols: Vec<u8>,
    pub(crate) shift: u32,
    pub(crate) total: u32,
    pub(crate) packed: bool,
}

impl DecodeTables {
    fn new(model: &TableModel) -> Self {
        let total = model.total();
        let shift = model.log2_total();
        let packed = shift <= 12;
        let mut slots = vec![0u32; total as usize];
        let mut symbols = vec![0u8; total as usize + 3];
        let (freq, cum) = (model.frequencies(), model.cumulative());
        for s in 0..freq.len() {
            if freq[s] == 0 {
                continue;
            }
            let entry = if packed {
                cum[s] | (freq[s] - 1) << 12 | (s as u32) << 24
            } else {
                cum[s] | (freq[s] - 1) << 16
            };
            let span = cum[s] as usize..(cum[s] + freq[s]) as usize;
            slots[span.clone()].fill(entry);
            symbols[span].fill(s as u8);
        }
        DecodeTables {
            slots,
            symbols,
            shift,
            total,
            packed,
        }
    }

    /// The slot's cumulative frequency and frequency.
    #[inline(always)]
    fn span(&self, entry: u32) -> (u32, u32) {
        if self.packed {
            (entry & 0xFFF, (entry >> 12 & 0xFFF) + 1)
        } else {
            (entry & 0xFFFF, (entry >> 16) + 1)
        }
    }
}

/// One decoding step; returns the symbol. Positions stay inside the lane's
/// padding (checked by the caller between chunks), where bytes read as zero.
#[inline(always)]
fn decode_step(lane: &mut LaneState, buffer: &[u8], tables: &DecodeTables) -> u8 {
    let total = tables.total;
    let r = (lane.range >> tables.shift).max(1);
    let t = (lane.code / r).min(total - 1) as usize;
    let e = tables.slots.get(t).copied().unwrap_or(0);
    let sym = tables.symbols.get(t).copied().unwrap_or(0);
    let (cum, freq) = tables.span(e);
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
        let byte = u32::from(buffer.get(lane.pos).copied().unwrap_or(0));
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
/// On x86-64 CPUs with AVX2, lane counts that are a multiple of 8 decode
/// eight lanes per vector instruction; the result is the same on every path.
///
/// # Errors
///
/// [`ErrorKind::InvalidParameter`] as for [`encode_table_lanes`];
/// [`ErrorKind::Truncated`], [`ErrorKind::CorruptStream`] or
/// [`ErrorKind::TrailingBytes`] when a lane's stream is damaged. The work done
/// is bounded by `out.len()` whatever the input.
pub fn decode_table_lanes(model: &TableModel, streams: &[&[u8]], out: &mut [u8]) -> Result<()> {
    #[cfg(target_arch = "x86_64")]
    let kernel = super::table_simd::Kernel::for_lanes(streams.len());
    #[cfg(not(target_arch = "x86_64"))]
    let kernel = None;
    decode_with(model, streams, out, kernel)
}

/// [`decode_table_lanes`] on the scalar steps only, whatever the CPU: the
/// reference the vector kernels are checked against (by the tests and the
/// fuzz targets). Same results, slower.
///
/// # Errors
///
/// As for [`decode_table_lanes`].
#[doc(hidden)]
pub fn decode_table_lanes_scalar(
    model: &TableModel,
    streams: &[&[u8]],
    out: &mut [u8],
) -> Result<()> {
    decode_with(model, streams, out, None)
}

/// The vector kernel a lane decoder may use (none off x86-64).
#[cfg(target_arch = "x86_64")]
type Vector = Option<super::table_simd::Kernel>;
#[cfg(not(target_arch = "x86_64"))]
type Vector = Option<core::convert::Infallible>;

/// [`decode_table_lanes`] with the vector kernel chosen by the caller
/// (`None`: the scalar steps only).
fn decode_with(
    model: &TableModel,
    streams: &[&[u8]],
    out: &mut [u8],
    kernel: Vector,
) -> Result<()> {
    check(model, streams.len())?;
    let tables = DecodeTables::new(model);
    // All lanes back to back in one buffer, each followed by `LANE_PAD` zeros.
    let size: usize = streams.iter().map(|s| s.len() + LANE_PAD).sum();
    let mut buffer = Vec::with_capacity(size);
    let mut starts = Vec::with_capacity(streams.len());
    for s in streams {
        starts.push(buffer.len());
        buffer.extend_from_slice(s);
        buffer.resize(buffer.len() + LANE_PAD, 0);
    }
    let mut lanes: Vec<LaneState> = starts
        .iter()
        .map(|&at| LaneState::start(&buffer, at))
        .collect();
    let truncated = |lanes: &[LaneState]| {
        lanes
            .iter()
            .zip(streams.iter().zip(&starts))
            .find(|(lane, (s, &at))| lane.pos - at > s.len() + 4)
            .map(|(_, (s, _))| ErrorKind::Truncated {
                offset: s.len() as u64,
            })
    };

    let n = lanes.len();
    let rows = out.len() / n;
    let (body, tail) = out.split_at_mut(rows * n);
    for chunk in body.chunks_mut(CHUNK_ROWS * n) {
        // A lane past its four implicit zeros is truncated for good: stop
        // before its reads could leave its padding.
        if let Some(e) = truncated(&lanes) {
            return Err(e.into());
        }
        decode_chunk(&mut lanes, &buffer, &tables, chunk, kernel);
    }
    if let Some(e) = truncated(&lanes) {
        return Err(e.into());
    }
    for (lane, b) in lanes.iter_mut().zip(tail.iter_mut()) {
        *b = decode_step(lane, &buffer, &tables);
    }

    for (lane, (stream, &at)) in lanes.iter().zip(streams.iter().zip(&starts)) {
        let (len, used) = (stream.len(), lane.pos - at);
        if used > len + 4 {
            return Err(ErrorKind::Truncated { offset: len as u64 }.into());
        }
        if lane.bad {
            return Err(ErrorKind::CorruptStream {
                offset: used.min(len) as u64,
                reason: "code value outside the coder interval",
            }
            .into());
        }
        if used < len {
            return Err(ErrorKind::TrailingBytes {
                offset: used as u64,
                count: (len - used) as u64,
            }
            .into());
        }
    }
    Ok(())
}

/// Decodes whole rows (one symbol from every lane each) into `chunk`.
fn decode_chunk(
    lanes: &mut [LaneState],
    buffer: &[u8],
    tables: &DecodeTables,
    chunk: &mut [u8],
    kernel: Vector,
) {
    let n = lanes.len();
    #[cfg(target_arch = "x86_64")]
    if let Some(kernel) = kernel {
        if buffer.len() <= i32::MAX as usize {
            return super::table_simd::decode_rows(kernel, lanes, buffer, tables, chunk);
        }
    }
    #[cfg(not(target_arch = "x86_64"))]
    let _ = kernel;
    match n {
        4 => decode_fixed::<4>(lanes, buffer, tables, chunk),
        8 => decode_fixed::<8>(lanes, buffer, tables, chunk),
        _ => {
            for row in chunk.chunks_exact_mut(n) {
                for (lane, b) in lanes.iter_mut().zip(row) {
                    *b = decode_step(lane, buffer, tables);
                }
            }
        }
    }
}

/// The scalar rows with the lane count fixed, so the states stay in registers.
fn decode_fixed<const N: usize>(
    lanes: &mut [LaneState],
    buffer: &[u8],
    tables: &DecodeTables,
    chunk: &mut [u8],
) {
    let mut state: [LaneState; N] = core::array::from_fn(|l| lanes[l]);
    for row in chunk.chunks_exact_mut(N) {
        for l in 0..N {
            row[l] = decode_step(&mut state[l], buffer, tables);
        }
    }
    lanes.copy_from_slice(&state);
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

    /// Every vector kernel this CPU has decodes exactly as the scalar steps:
    /// same bytes and same verdict, on clean and on damaged lanes.
    #[cfg(target_arch = "x86_64")]
    #[test]
    fn vector_kernels_match_the_scalar_steps() {
        use crate::coder::table_simd::Kernel;
        let data: Vec<u8> = (0..30_011u32)
            .map(|i| (i.wrapping_mul(2_654_435_761) >> 27) as u8 % (1 + (i / 500 % 40) as u8))
            .collect();
        let kernels: Vec<Kernel> = [Kernel::Avx512, Kernel::Avx2]
            .into_iter()
            .filter(|k| k.supported())
            .collect();
        for k in [8u32, 12, 13, 16] {
            let model = TableModel::from_bytes_histogram(&data, k).unwrap();
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
                    for &kernel in &kernels {
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
                let model = TableModel::from_bytes_histogram(&data, k).unwrap();
                for lanes in [8usize, 32] {
                    let fast = encode_table_lanes(&model, &data, lanes).unwrap();
                    let mut m = model.clone();
                    assert_eq!(fast, encode_interleaved(&mut m, &data, lanes).unwrap());
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
