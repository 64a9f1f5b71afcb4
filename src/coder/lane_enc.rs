//! The lane encoder: interleaved range coders over byte tables, with the
//! state kept between calls.
//!
//! A [`LaneEncoder`] holds `n` range coders; byte `i` of everything it is
//! given goes to coder `i mod n`, counted across calls, so a block can be
//! coded in pieces with a different [`EncodeTable`] for each piece (the
//! adaptive lanes refresh their table between pieces) and the streams are
//! the ones one call would make. Each table has a power-of-two total, so a
//! step never divides: `r = range >> log2_total; low += r * cum;
//! range = r * freq`, the last symbol of the table taking what is left of
//! `range`. `low` is 32 bits; a carry out of it is added into the bytes the
//! lane already wrote (they stay in the lane's buffer until [`finish`]), so
//! no byte is withheld.
//!
//! Whole rows (one byte for every lane) run in register-resident passes:
//! eight lanes per AVX2 vector when the CPU has it and the lane count is a
//! multiple of eight, otherwise scalar passes of up to eight lanes.
//!
//! Invariant: `2^24 <= range` after every step, and a lane's buffer always
//! has room for two more bytes per byte still to come (it is sized for the
//! whole block up front), so the branch-free steps may store a byte before
//! they know whether it is real.
//!
//! [`finish`]: LaneEncoder::finish

use alloc::vec;
use alloc::vec::Vec;

use crate::error::{ErrorKind, Result};

const TOP: u32 = 1 << 24;

/// Rows coded per pass of a lane group before the next group takes over.
const CHUNK_ROWS: usize = 64;

/// A byte table in the forms the lane steps read: per byte value
/// `cum | freq << 32` (scalar steps) and `cum | (freq - 1) << 16` (vector
/// steps); frequency 0 marks a byte the table cannot code.
#[derive(Clone)]
pub(crate) struct EncodeTable {
    pub(crate) entry: [u64; 256],
    pub(crate) packed: [u32; 256],
    pub(crate) shift: u32,
    pub(crate) total: u32,
}

impl EncodeTable {
    /// The table of `freq` (at most 256 symbols) with cumulative
    /// frequencies `cum` out of `2^shift`.
    pub(crate) fn new(freq: &[u32], cum: &[u32], shift: u32) -> Self {
        let mut table = EncodeTable {
            entry: [0; 256],
            packed: [0; 256],
            shift,
            total: 1 << shift,
        };
        table.set(freq, cum, shift);
        table
    }

    /// Replaces the table's contents, reusing its storage.
    pub(crate) fn set(&mut self, freq: &[u32], cum: &[u32], shift: u32) {
        self.shift = shift;
        self.total = 1 << shift;
        let n = freq.len().min(256);
        for ((e, p), (&f, &c)) in self
            .entry
            .iter_mut()
            .zip(&mut self.packed)
            .zip(freq.iter().zip(cum))
        {
            *e = u64::from(c) | u64::from(f) << 32;
            *p = c | f.wrapping_sub(1) << 16;
        }
        self.entry[n..].fill(0);
        self.packed[n..].fill(0);
    }

    /// The first byte of `data` this table cannot code.
    pub(crate) fn uncodable(&self, data: &[u8]) -> Option<u8> {
        data.iter()
            .copied()
            .find(|&b| self.entry[usize::from(b)] >> 32 == 0)
    }

    /// Checks that the table codes every byte of `data`.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::UncodableSymbol`] for the first byte it cannot code
    /// (`alphabet` is the model's, for the message).
    pub(crate) fn check_codable(&self, data: &[u8], alphabet: u32) -> Result<()> {
        match self.uncodable(data) {
            Some(b) => Err(ErrorKind::UncodableSymbol {
                symbol: b.into(),
                alphabet,
            }
            .into()),
            None => Ok(()),
        }
    }
}

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

/// One coding step of a lane whose state lives in the caller's locals.
#[inline(always)]
fn encode_step(low: &mut u32, range: &mut u32, out: &mut [u8], pos: &mut usize, e: u64, t: &Shape) {
    let (cum, freq) = (e as u32, (e >> 32) as u32);
    let r = *range >> t.shift;
    let offset = r * cum;
    let (sum, carry) = low.overflowing_add(offset);
    *low = sum;
    if carry {
        propagate_carry(out, *pos);
    }
    *range = if cum + freq < t.total {
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

/// The two numbers of a table every step needs.
#[derive(Clone, Copy)]
struct Shape {
    shift: u32,
    total: u32,
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

/// `n` interleaved range coders over byte tables (see the module docs).
pub(crate) struct LaneEncoder {
    outs: Vec<Vec<u8>>,
    low: Vec<u32>,
    range: Vec<u32>,
    pos: Vec<usize>,
    /// The lane the next byte goes to.
    next: usize,
    /// Bytes still allowed (the buffers are sized for them).
    room: usize,
    vector: bool,
}

impl LaneEncoder {
    /// Coders for a block of `len` bytes over `lanes` lanes (`1 ..= 32`).
    pub(crate) fn new(len: usize, lanes: usize) -> Self {
        debug_assert!((1..=crate::coder::MAX_LANES).contains(&lanes));
        #[cfg(target_arch = "x86_64")]
        let vector = lanes.is_multiple_of(8) && super::table_simd_enc::available();
        #[cfg(not(target_arch = "x86_64"))]
        let vector = false;
        LaneEncoder {
            outs: (0..lanes)
                .map(|_| vec![0u8; 2 * len.div_ceil(lanes) + 8])
                .collect(),
            low: vec![0; lanes],
            range: vec![u32::MAX; lanes],
            pos: vec![0; lanes],
            next: 0,
            room: len,
            vector,
        }
    }

    /// Codes `data`, the next bytes of the block, with `table`.
    ///
    /// # Panics
    ///
    /// When `data` runs past the length given to [`new`](Self::new), or
    /// holds a byte the table cannot code (callers check with
    /// [`EncodeTable::uncodable`]).
    pub(crate) fn code(&mut self, data: &[u8], table: &EncodeTable) {
        assert!(data.len() <= self.room, "more bytes than the block holds");
        debug_assert!(table.uncodable(data).is_none());
        self.room -= data.len();
        let n = self.outs.len();
        let shape = Shape {
            shift: table.shift,
            total: table.total,
        };
        // Complete the current row one lane at a time.
        let head = if self.next == 0 {
            0
        } else {
            (n - self.next).min(data.len())
        };
        let (head, rest) = data.split_at(head);
        for &b in head {
            self.step(self.next, b, table, &shape);
            self.next = (self.next + 1) % n;
        }
        let rows = rest.len() / n;
        let (body, tail) = rest.split_at(rows * n);
        if !body.is_empty() {
            self.rows(body, table, &shape);
        }
        for (l, &b) in tail.iter().enumerate() {
            self.step(l, b, table, &shape);
        }
        if !tail.is_empty() {
            self.next = tail.len();
        }
    }

    /// Flushes every lane; returns the lane streams.
    pub(crate) fn finish(mut self) -> Vec<Vec<u8>> {
        for (l, out) in self.outs.iter_mut().enumerate() {
            let end = flush_lane(self.low[l], self.range[l], out, self.pos[l]);
            out.truncate(end);
        }
        self.outs
    }

    fn step(&mut self, l: usize, b: u8, table: &EncodeTable, shape: &Shape) {
        let e = table.entry[usize::from(b)];
        encode_step(
            &mut self.low[l],
            &mut self.range[l],
            &mut self.outs[l],
            &mut self.pos[l],
            e,
            shape,
        );
    }

    /// Whole rows: lane groups in register-resident passes over chunks.
    fn rows(&mut self, body: &[u8], table: &EncodeTable, shape: &Shape) {
        let n = self.outs.len();
        let group = match n {
            _ if self.vector => 8,
            1 | 2 | 4 | 8 => n,
            _ if n.is_multiple_of(8) => 8,
            _ if n.is_multiple_of(4) => 4,
            _ => 1,
        };
        for chunk in body.chunks(CHUNK_ROWS * n) {
            for first in (0..n).step_by(group) {
                match group {
                    #[cfg(target_arch = "x86_64")]
                    8 if self.vector => self.pass_vector(chunk, first, table),
                    8 => self.pass::<8>(chunk, first, table, shape),
                    4 => self.pass::<4>(chunk, first, table, shape),
                    2 => self.pass::<2>(chunk, first, table, shape),
                    _ => self.pass::<1>(chunk, first, table, shape),
                }
            }
        }
    }

    /// Columns `first .. first + P` of the rows in `chunk`, scalar steps with
    /// the states in registers.
    fn pass<const P: usize>(&mut self, chunk: &[u8], first: usize, t: &EncodeTable, s: &Shape) {
        let n = self.outs.len();
        let cols = first..first + P;
        let bufs: &mut [Vec<u8>; P] = (&mut self.outs[cols.clone()]).try_into().expect("P lanes");
        let mut l: [u32; P] = core::array::from_fn(|k| self.low[first + k]);
        let mut r: [u32; P] = core::array::from_fn(|k| self.range[first + k]);
        let mut p: [usize; P] = core::array::from_fn(|k| self.pos[first + k]);
        for row in chunk.chunks_exact(n) {
            let bytes = &row[cols.clone()];
            for k in 0..P {
                let e = t.entry[usize::from(bytes[k])];
                encode_step(&mut l[k], &mut r[k], &mut bufs[k], &mut p[k], e, s);
            }
        }
        self.low[cols.clone()].copy_from_slice(&l);
        self.range[cols.clone()].copy_from_slice(&r);
        self.pos[cols].copy_from_slice(&p);
    }

    /// Columns `first .. first + 8` of the rows in `chunk` on the AVX2
    /// kernel.
    #[cfg(target_arch = "x86_64")]
    fn pass_vector(&mut self, chunk: &[u8], first: usize, t: &EncodeTable) {
        use super::table_simd_enc::{encode_rows, Group};
        let cols = first..first + 8;
        let mut group = Group {
            low: self.low[cols.clone()].try_into().expect("eight lanes"),
            range: self.range[cols.clone()].try_into().expect("eight lanes"),
            pos: self.pos[cols.clone()].try_into().expect("eight lanes"),
            bufs: &mut self.outs[cols.clone()],
        };
        let n = self.low.len();
        encode_rows(&mut group, chunk, n, first, &t.packed, t.shift, t.total);
        self.low[cols.clone()].copy_from_slice(&group.low);
        self.range[cols.clone()].copy_from_slice(&group.range);
        self.pos[cols].copy_from_slice(&group.pos);
    }
}
