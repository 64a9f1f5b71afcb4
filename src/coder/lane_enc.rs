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
//! lane already wrote (they stay in the lane's region until [`finish`]), so
//! no byte is withheld.
//!
//! All lanes write into one buffer, lane `l` into the region that starts
//! at `l * stride`: [`FRONT`] bytes of its own, then room for two bytes a
//! symbol and some slack. The front bytes let a vector step write the byte
//! before a lane's position (where a carry lands) together with the new
//! ones in a single store, and a carry can never reach them (the coded
//! number stays below 1).
//!
//! Whole rows (one byte for every lane) run on a vector kernel when the CPU
//! has one for the lane count ([`EncodeKernel`]: AVX-512 for multiples of
//! sixteen lanes, AVX2 for multiples of eight), otherwise in scalar passes
//! of up to eight lanes with the states in registers. Every path writes the
//! same bytes.
//!
//! Invariant: `2^24 <= range` after every step, and a lane's region always
//! has room for two more bytes per symbol still to come plus the slack of a
//! four-byte store (it is sized for the whole block up front), so the
//! branch-free steps may store bytes before they know whether they are
//! real.
//!
//! [`finish`]: LaneEncoder::finish

use alloc::vec;
use alloc::vec::Vec;

use crate::error::{ErrorKind, Result};

const TOP: u32 = 1 << 24;

/// Rows coded per scalar pass of a lane group before the next group takes
/// over.
const CHUNK_ROWS: usize = 64;

/// Bytes of a lane's region before its stream.
pub(crate) const FRONT: usize = 4;

/// Bytes of a lane's region after room for two bytes a symbol: a flush
/// (four bytes) and a four-byte store at the last position.
const BACK: usize = 8;

/// A byte table in the forms the lane steps read: per byte value
/// `cum | freq << 32` (scalar steps) and `cum | (freq - 1) << 16` (vector
/// steps); frequency 0 marks a byte the table cannot code.
#[derive(Clone)]
pub(crate) struct EncodeTable {
    pub(crate) entry: [u64; 256],
    pub(crate) packed: [u32; 256],
    pub(crate) shift: u32,
    pub(crate) total: u32,
    /// The packed entry of the table's last symbol (`cum + freq == total`),
    /// the one symbol whose step takes the rest of the range; `u32::MAX`
    /// (no entry's value) when there is none.
    pub(crate) last: u32,
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
            last: u32::MAX,
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
        // The last symbol is the last one with a frequency (the symbols
        // after it have none and start at the total).
        self.last = match freq[..n].iter().rposition(|&f| f > 0) {
            Some(s) if cum[s] + freq[s] == self.total => self.packed[s],
            _ => u32::MAX,
        };
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

/// One coding step of a lane whose state lives in the caller's locals;
/// `out` is the lane's stream (its region past the front bytes).
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

/// The vector kernel a lane encoder may use (none off x86-64).
#[cfg(target_arch = "x86_64")]
pub(crate) type EncodeVector = Option<super::table_simd_enc::EncodeKernel>;
/// The vector kernel a lane encoder may use (none off x86-64).
#[cfg(not(target_arch = "x86_64"))]
pub(crate) type EncodeVector = Option<core::convert::Infallible>;

/// The best vector kernel for encoding `lanes` lanes on this CPU, if any.
pub(crate) fn best_encode_kernel(lanes: usize) -> EncodeVector {
    #[cfg(target_arch = "x86_64")]
    return super::table_simd_enc::EncodeKernel::for_lanes(lanes);
    #[cfg(not(target_arch = "x86_64"))]
    {
        let _ = lanes;
        None
    }
}

/// The finished lane streams of a block, in the encoder's buffer.
pub(crate) struct LaneStreams {
    buf: Vec<u8>,
    stride: usize,
    lens: Vec<usize>,
}

impl LaneStreams {
    /// Lane `l`'s stream.
    pub(crate) fn lane(&self, l: usize) -> &[u8] {
        let start = l * self.stride + FRONT;
        &self.buf[start..start + self.lens[l]]
    }

    /// Every lane's stream, in lane order.
    #[cfg(feature = "std")]
    pub(crate) fn views(&self) -> Vec<&[u8]> {
        (0..self.lens.len()).map(|l| self.lane(l)).collect()
    }

    /// Every lane's stream as a vector of its own.
    pub(crate) fn into_vecs(self) -> Vec<Vec<u8>> {
        (0..self.lens.len())
            .map(|l| self.lane(l).to_vec())
            .collect()
    }

    /// The lanes' total length.
    #[cfg(feature = "std")]
    pub(crate) fn coded_len(&self) -> usize {
        self.lens.iter().sum()
    }
}

/// `n` interleaved range coders over byte tables (see the module docs).
pub(crate) struct LaneEncoder {
    /// The lanes' regions, `stride` bytes each.
    buf: Vec<u8>,
    stride: usize,
    low: Vec<u32>,
    range: Vec<u32>,
    /// Bytes each lane has written (past its front bytes).
    pos: Vec<usize>,
    /// The lane the next byte goes to.
    next: usize,
    /// Bytes still allowed (the regions are sized for them).
    room: usize,
    #[cfg_attr(not(target_arch = "x86_64"), allow(dead_code))]
    kernel: EncodeVector,
}

impl LaneEncoder {
    /// Coders for a block of `len` bytes over `lanes` lanes (`1 ..= 32`),
    /// on the best vector kernel of this CPU.
    #[cfg(feature = "std")]
    pub(crate) fn new(len: usize, lanes: usize) -> Self {
        Self::with_kernel(len, lanes, best_encode_kernel(lanes))
    }

    /// As [`new`](Self::new) with the vector kernel chosen by the caller
    /// (`None`: the scalar steps only). A kernel that does not fit the lane
    /// count is not used.
    pub(crate) fn with_kernel(len: usize, lanes: usize, kernel: EncodeVector) -> Self {
        debug_assert!((1..=crate::coder::MAX_LANES).contains(&lanes));
        let stride = FRONT + 2 * len.div_ceil(lanes) + BACK;
        let size = stride * lanes;
        #[cfg(target_arch = "x86_64")]
        let kernel = kernel.filter(|k| k.fits(lanes) && size <= i32::MAX as usize);
        LaneEncoder {
            buf: vec![0u8; size],
            stride,
            low: vec![0; lanes],
            range: vec![u32::MAX; lanes],
            pos: vec![0; lanes],
            next: 0,
            room: len,
            kernel,
        }
    }

    /// Lane `l`'s stream region (past its front bytes).
    fn region(&mut self, l: usize) -> &mut [u8] {
        let start = l * self.stride;
        &mut self.buf[start + FRONT..start + self.stride]
    }

    /// Codes `data`, the next bytes of the block, with `table`.
    ///
    /// # Panics
    ///
    /// When `data` runs past the length given to [`new`](Self::new). A byte
    /// the table cannot code (callers check with
    /// [`EncodeTable::uncodable`]) gives unspecified streams.
    pub(crate) fn code(&mut self, data: &[u8], table: &EncodeTable) {
        assert!(data.len() <= self.room, "more bytes than the block holds");
        debug_assert!(table.uncodable(data).is_none());
        self.room -= data.len();
        let n = self.low.len();
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
    pub(crate) fn finish(mut self) -> LaneStreams {
        let n = self.low.len();
        let mut lens = Vec::with_capacity(n);
        for l in 0..n {
            let (low, range, pos) = (self.low[l], self.range[l], self.pos[l]);
            lens.push(flush_lane(low, range, self.region(l), pos));
        }
        LaneStreams {
            buf: self.buf,
            stride: self.stride,
            lens,
        }
    }

    fn step(&mut self, l: usize, b: u8, table: &EncodeTable, shape: &Shape) {
        let e = table.entry[usize::from(b)];
        let start = l * self.stride;
        let out = &mut self.buf[start + FRONT..start + self.stride];
        encode_step(
            &mut self.low[l],
            &mut self.range[l],
            out,
            &mut self.pos[l],
            e,
            shape,
        );
    }

    /// Whole rows: the vector kernel over all lanes, or lane groups in
    /// register-resident scalar passes over chunks.
    fn rows(&mut self, body: &[u8], table: &EncodeTable, shape: &Shape) {
        #[cfg(target_arch = "x86_64")]
        if let Some(kernel) = self.kernel {
            super::table_simd_enc::encode_rows(
                kernel,
                super::table_simd_enc::Lanes {
                    low: &mut self.low,
                    range: &mut self.range,
                    pos: &mut self.pos,
                    buf: &mut self.buf,
                    stride: self.stride,
                },
                body,
                table,
            );
            return;
        }
        let n = self.low.len();
        let group = match n {
            1 | 2 | 4 | 8 => n,
            _ if n.is_multiple_of(8) => 8,
            _ if n.is_multiple_of(4) => 4,
            _ => 1,
        };
        for chunk in body.chunks(CHUNK_ROWS * n) {
            for first in (0..n).step_by(group) {
                match group {
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
        let n = self.low.len();
        let cols = first..first + P;
        let mut regions = self.buf.chunks_exact_mut(self.stride).skip(first);
        let bufs: [&mut [u8]; P] = core::array::from_fn(|_| {
            let region = regions.next().expect("P lanes");
            &mut region[FRONT..]
        });
        let mut l: [u32; P] = core::array::from_fn(|k| self.low[first + k]);
        let mut r: [u32; P] = core::array::from_fn(|k| self.range[first + k]);
        let mut p: [usize; P] = core::array::from_fn(|k| self.pos[first + k]);
        for row in chunk.chunks_exact(n) {
            let bytes = &row[cols.clone()];
            for k in 0..P {
                let e = t.entry[usize::from(bytes[k])];
                encode_step(&mut l[k], &mut r[k], bufs[k], &mut p[k], e, s);
            }
        }
        self.low[cols.clone()].copy_from_slice(&l);
        self.range[cols.clone()].copy_from_slice(&r);
        self.pos[cols].copy_from_slice(&p);
    }
}
