//! The lane decoder: reads what [`LaneEncoder`](super::encode) wrote,
//! in pieces, each piece with its own byte table.
//!
//! All lane streams are copied back to back into one buffer, each followed
//! by [`LANE_PAD`] zero bytes, so a step may read a few bytes ahead without
//! a bounds branch. Byte `i` of the output comes from lane `i mod n`,
//! counted across calls. A step finds the slot `code / (range >> log2_total)`
//! in the table (one packed entry gives symbol, cumulative frequency and
//! frequency), then narrows and renormalises exactly as the encoder did.
//!
//! Input checks are batched: rows are decoded in chunks of [`CHUNK_ROWS`],
//! and before a lane could take more than [`CHUNK_ROWS`] steps since the
//! last check (counted across calls, so short pieces share one check), a
//! lane that has read more than its stream plus the four implicit zero
//! bytes is reported truncated (the padding covers the reads of
//! [`CHUNK_ROWS`] steps). A lane whose `code` ever leaves its interval is
//! corrupt; both verdicts come out of [`finish`](LaneDecoder::finish), so
//! the work done is bounded by the output length whatever the input.
//!
//! Invariants are those of the plain coder: `2^24 <= range`, and
//! `code < range` for a valid stream.

use alloc::vec::Vec;

use crate::coder::TOP;
use crate::error::Result;

/// Rows decoded between two checks of the lanes' read positions.
pub(crate) const CHUNK_ROWS: usize = 64;

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

/// Entries a table fill writes at once (see [`DecodeTables::set`]); also
/// the padding after the last slot.
const FILL: usize = 16;

/// Symbols a fill of the by-symbol layout writes at once after the first
/// half block of a span (see [`fill_by_symbol`]); also the padding after
/// the last slot of its symbol table.
const SYMBOL_FILL: usize = 128;

/// The decoding tables of one byte table.
///
/// Two layouts. Per slot (the default, one lookup a step): one entry per
/// slot of the total, `cum | (freq - 1) << 12 | symbol << 24` when `packed`
/// (totals up to 2^12), else `cum | (freq - 1) << 16` and the symbol in a
/// table of its own. By symbol ([`DecodeTables::by_symbol`], two dependent
/// lookups a step): one symbol byte per slot, then one entry
/// `cum | (freq - 1) << 16` per symbol; a quarter of the bytes to write per
/// table, for tables that change every few hundred symbols.
pub(crate) struct DecodeTables {
    /// Per slot its entry (per-slot layout; [`FILL`] more entries of
    /// padding follow), or per symbol its entry (by-symbol layout; 256
    /// entries).
    pub(crate) slots: Vec<u32>,
    /// Per slot, when not `packed`: its symbol; [`SYMBOL_FILL`] bytes of
    /// padding follow (covering four-byte reads at the last slot).
    pub(crate) symbols: Vec<u8>,
    pub(crate) shift: u32,
    pub(crate) total: u32,
    /// The per-slot entries carry the symbol (totals up to 2^12, per-slot
    /// layout).
    pub(crate) packed: bool,
    /// The by-symbol layout.
    pub(crate) by_symbol: bool,
    /// By symbol: the symbols with a frequency when the tables were made,
    /// the only ones a table update may give one.
    pub(crate) codable: Vec<u8>,
}

impl DecodeTables {
    /// The tables of `freq` (at most 256 symbols, summing to `2^shift`,
    /// `shift <= 16`) with cumulative frequencies `cum`.
    pub(crate) fn new(freq: &[u32], cum: &[u32], shift: u32) -> Self {
        let mut t = DecodeTables {
            slots: Vec::new(),
            symbols: Vec::new(),
            shift,
            total: 1 << shift,
            packed: shift <= 12,
            by_symbol: false,
            codable: Vec::new(),
        };
        t.set(freq, cum, shift);
        t
    }

    /// The tables of `freq` / `cum` as [`new`](Self::new) makes them, in
    /// the by-symbol layout (see [`DecodeTables`]). Later updates
    /// ([`set`](Self::set)) must give frequencies to the same symbols (as
    /// the tables of an adaptive model do);
    /// other tables decode wrongly, without leaving the tables' bounds.
    pub(crate) fn by_symbol(freq: &[u32], cum: &[u32], shift: u32) -> Self {
        let mut t = DecodeTables {
            slots: Vec::new(),
            symbols: Vec::new(),
            shift,
            total: 1 << shift,
            packed: false,
            by_symbol: true,
            codable: (0..freq.len().min(256))
                .filter(|&s| freq[s] > 0)
                .map(|s| s as u8)
                .collect(),
        };
        t.set(freq, cum, shift);
        t
    }

    /// Replaces the tables' contents, reusing their storage and keeping
    /// their layout.
    ///
    /// Spans are filled a block of [`FILL`] entries (by symbol: half a
    /// block of [`SYMBOL_FILL`] bytes, then whole ones) at a time, in
    /// symbol order, each block possibly running past its span into the
    /// next symbol's (which then overwrites it) or into the padding after
    /// the last slot. With totals
    /// up to 2^12 the symbol is part of the slot entry and the separate
    /// symbol table is not filled.
    pub(crate) fn set(&mut self, freq: &[u32], cum: &[u32], shift: u32) {
        debug_assert!(freq.len() <= 256 && shift <= 16);
        let total = 1usize << shift;
        self.shift = shift;
        self.total = total as u32;
        if self.by_symbol {
            debug_assert!(
                (0..freq.len()).all(|s| (freq[s] > 0) == self.codable.contains(&(s as u8)))
            );
            self.slots.resize(256, 0);
            self.symbols.resize(total + SYMBOL_FILL, 0);
            #[cfg(target_arch = "x86_64")]
            if super::simd::decode::fill_symbol_tables(self, freq, cum) {
                return;
            }
            fill_by_symbol(self, freq, cum);
            return;
        }
        self.packed = shift <= 12;
        self.slots.resize(total + FILL, 0);
        self.symbols.resize(total + FILL, 0);
        #[cfg(target_arch = "x86_64")]
        if super::simd::decode::fill_tables(self, freq, cum) {
            return;
        }
        fill_spans(self, freq, cum);
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

/// Writes every span of `freq` / `cum` into the slot (and symbol) tables
/// of `t` (see [`DecodeTables::set`]). Plain code, compiled once more for
/// wider vectors where the CPU has them (`simd::decode::fill_tables`).
#[inline(always)]
pub(crate) fn fill_spans(t: &mut DecodeTables, freq: &[u32], cum: &[u32]) {
    let n = freq.len().min(cum.len());
    for s in 0..n {
        let (f, c) = (freq[s], cum[s]);
        if f == 0 {
            continue;
        }
        let entry = if t.packed {
            c | (f - 1) << 12 | (s as u32) << 24
        } else {
            c | (f - 1) << 16
        };
        let (start, end) = (c as usize, (c + f) as usize);
        let block = [entry; FILL];
        let mut at = start;
        while at < end {
            t.slots[at..at + FILL].copy_from_slice(&block);
            at += FILL;
        }
        if !t.packed {
            let block = [s as u8; FILL];
            let mut at = start;
            while at < end {
                t.symbols[at..at + FILL].copy_from_slice(&block);
                at += FILL;
            }
        }
    }
}

/// Writes the by-symbol tables of `freq` / `cum` into `t` (see
/// [`DecodeTables::set`]). Plain code, compiled once more for wider vectors
/// where the CPU has them (`simd::decode::fill_symbol_tables`).
///
/// The loop runs over the codable symbols listed when the tables were made
/// (the symbols a table update may give a frequency). A span gets half a
/// block first (enough for most symbols' spans), then whole blocks while
/// it lasts: the one branch, whether a span is longer than half a block,
/// is mostly not taken, and the long spans of the frequent symbols take
/// few turns of the loop.
#[inline(always)]
pub(crate) fn fill_by_symbol(t: &mut DecodeTables, freq: &[u32], cum: &[u32]) {
    for &s in &t.codable {
        let s = usize::from(s);
        let (f, c) = (freq[s], cum[s]);
        t.slots[s] = c | f.saturating_sub(1) << 16;
        let block = [s as u8; SYMBOL_FILL];
        let (mut at, end) = (c as usize, (c + f) as usize);
        t.symbols[at..at + SYMBOL_FILL / 2].copy_from_slice(&block[..SYMBOL_FILL / 2]);
        at += SYMBOL_FILL / 2;
        while at < end {
            t.symbols[at..at + SYMBOL_FILL].copy_from_slice(&block);
            at += SYMBOL_FILL;
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
    let (e, sym) = if tables.by_symbol {
        let sym = tables.symbols.get(t).copied().unwrap_or(0);
        (
            tables.slots.get(usize::from(sym)).copied().unwrap_or(0),
            sym,
        )
    } else {
        let e = tables.slots.get(t).copied().unwrap_or(0);
        let sym = if tables.packed {
            (e >> 24) as u8
        } else {
            tables.symbols.get(t).copied().unwrap_or(0)
        };
        (e, sym)
    };
    let (cum, freq) = tables.span(e);
    let offset = r.wrapping_mul(cum);
    lane.code = lane.code.wrapping_sub(offset);
    lane.range = if cum + freq < total {
        r.wrapping_mul(freq)
    } else {
        lane.range.wrapping_sub(offset)
    };
    // At most two bytes per symbol (see the encoder's step); branch-free.
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

/// The vector kernel a lane decoder may use (none off x86-64).
#[cfg(target_arch = "x86_64")]
pub(crate) type Vector = Option<super::simd::Kernel>;
/// The vector kernel a lane decoder may use (none off x86-64).
#[cfg(not(target_arch = "x86_64"))]
pub(crate) type Vector = Option<core::convert::Infallible>;

/// The best vector kernel for `lanes` lanes on this CPU, if any.
pub(crate) fn best_kernel(lanes: usize) -> Vector {
    #[cfg(target_arch = "x86_64")]
    return super::simd::Kernel::for_lanes(lanes);
    #[cfg(not(target_arch = "x86_64"))]
    {
        let _ = lanes;
        None
    }
}

/// `n` lane decoders over one padded copy of their streams (see the module
/// docs).
pub(crate) struct LaneDecoder {
    buffer: Vec<u8>,
    lanes: Vec<LaneState>,
    starts: Vec<usize>,
    lens: Vec<usize>,
    /// The lane the next byte comes from.
    next: usize,
    /// Steps any one lane may have taken since the read positions were
    /// last checked (at most [`CHUNK_ROWS`]: the padding covers them).
    unchecked: usize,
    #[cfg_attr(not(target_arch = "x86_64"), allow(dead_code))]
    kernel: Vector,
}

impl LaneDecoder {
    /// Decoders for `streams` (`1 ..= 32` of them), using `kernel` for whole
    /// rows where it applies.
    pub(crate) fn new(streams: &[&[u8]], kernel: Vector) -> Self {
        let size: usize = streams.iter().map(|s| s.len() + LANE_PAD).sum();
        let mut buffer = Vec::with_capacity(size);
        let mut starts = Vec::with_capacity(streams.len());
        for s in streams {
            starts.push(buffer.len());
            buffer.extend_from_slice(s);
            buffer.resize(buffer.len() + LANE_PAD, 0);
        }
        let lanes = starts
            .iter()
            .map(|&at| LaneState::start(&buffer, at))
            .collect();
        #[cfg(target_arch = "x86_64")]
        let kernel = kernel.filter(|_| size <= i32::MAX as usize);
        LaneDecoder {
            buffer,
            lanes,
            starts,
            lens: streams.iter().map(|s| s.len()).collect(),
            next: 0,
            unchecked: 0,
            kernel,
        }
    }

    /// Makes room for `steps` more steps of each lane: checks the read
    /// positions ([`truncated`](Self::truncated)) unless the steps taken
    /// since the last check and these still fit in the padding.
    fn room(&mut self, steps: usize) -> Result<()> {
        debug_assert!(steps <= CHUNK_ROWS);
        if self.unchecked + steps > CHUNK_ROWS {
            self.truncated()?;
            self.unchecked = 0;
        }
        self.unchecked += steps;
        Ok(())
    }

    /// A lane that has read past its stream and the four implicit zeros.
    fn truncated(&self) -> Result<()> {
        // One pass without branches first: damage is rare.
        let over = self
            .lanes
            .iter()
            .zip(&self.starts)
            .zip(&self.lens)
            .fold(false, |over, ((lane, &at), &len)| {
                over | (lane.pos - at > len + 4)
            });
        if !over {
            return Ok(());
        }
        for ((lane, &at), &len) in self.lanes.iter().zip(&self.starts).zip(&self.lens) {
            if lane.pos - at > len + 4 {
                return Err(crate::Error::truncated(len as u64));
            }
        }
        Ok(())
    }

    /// Decodes the next `out.len()` bytes of the block with `tables`.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::Truncated`] when a lane has read past its end, found
    /// within [`CHUNK_ROWS`] steps of it or by [`finish`](Self::finish)
    /// (the bytes of `out` are then unspecified). Corrupt lanes are reported by
    /// [`finish`](Self::finish).
    pub(crate) fn decode(&mut self, tables: &DecodeTables, out: &mut [u8]) -> Result<()> {
        let n = self.lanes.len();
        let head = if self.next == 0 {
            0
        } else {
            (n - self.next).min(out.len())
        };
        let (head, rest) = out.split_at_mut(head);
        if !head.is_empty() {
            self.room(1)?;
        }
        for b in head {
            *b = decode_step(&mut self.lanes[self.next], &self.buffer, tables);
            self.next = (self.next + 1) % n;
        }
        let rows = rest.len() / n;
        let (body, tail) = rest.split_at_mut(rows * n);
        for chunk in body.chunks_mut(CHUNK_ROWS * n) {
            // A lane past its four implicit zeros is truncated for good: stop
            // before its reads could leave its padding.
            self.room(chunk.len() / n)?;
            self.chunk(tables, chunk);
        }
        if !tail.is_empty() {
            self.room(1)?;
        }
        for (lane, b) in self.lanes.iter_mut().zip(tail.iter_mut()) {
            *b = decode_step(lane, &self.buffer, tables);
        }
        if !tail.is_empty() {
            self.next = tail.len();
        }
        Ok(())
    }

    /// Checks that every lane was read exactly to its end, and none left its
    /// interval.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::Truncated`], [`ErrorKind::CorruptStream`] or
    /// [`ErrorKind::TrailingBytes`], for the first lane that shows it.
    pub(crate) fn finish(&self) -> Result<()> {
        for ((lane, &at), &len) in self.lanes.iter().zip(&self.starts).zip(&self.lens) {
            let used = lane.pos - at;
            if used > len + 4 {
                return Err(crate::Error::truncated(len as u64));
            }
            if lane.bad {
                return Err(crate::Error::corrupt_stream(
                    used.min(len) as u64,
                    "code value outside the coder interval",
                ));
            }
            if used < len {
                return Err(crate::Error::trailing_bytes(
                    used as u64,
                    (len - used) as u64,
                ));
            }
        }
        Ok(())
    }

    /// Decodes whole rows (one symbol from every lane each) into `chunk`.
    fn chunk(&mut self, tables: &DecodeTables, chunk: &mut [u8]) {
        let n = self.lanes.len();
        let (lanes, buffer) = (&mut self.lanes[..], &self.buffer[..]);
        #[cfg(target_arch = "x86_64")]
        if let Some(kernel) = self.kernel {
            // The kernels' quotient bound needs `r < 2^24`: totals of at
            // least 2^8.
            if tables.shift >= 8 {
                return super::simd::decode::decode_rows(kernel, lanes, buffer, tables, chunk);
            }
        }
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

    #[test]
    fn tables_reuse_their_storage() {
        let symbol = |t: &DecodeTables, slot: usize| {
            if t.packed {
                (t.slots[slot] >> 24) as u8
            } else {
                t.symbols[slot]
            }
        };
        for shift in [8, 13] {
            let total = 1u32 << shift;
            let mut t = DecodeTables::new(&[1, total - 1], &[0, 1], shift);
            assert_eq!(symbol(&t, 0), 0);
            assert!((1..total as usize).all(|s| symbol(&t, s) == 1));
            t.set(&[200, 50, total - 250], &[0, 200, 250], shift);
            assert!((0..200).all(|s| symbol(&t, s) == 0));
            assert!((200..250).all(|s| symbol(&t, s) == 1));
            assert!((250..total as usize).all(|s| symbol(&t, s) == 2));
            assert_eq!(t.span(t.slots[249]), (200, 50));
        }
    }

    /// The by-symbol layout gives every slot the symbol and span of the
    /// per-slot layout, through updates that move every boundary (spans
    /// shorter and longer than a fill block, absent symbols in between).
    #[test]
    fn by_symbol_tables_match_the_per_slot_tables() {
        for shift in [8u32, 12, 16] {
            let total = 1u32 << shift;
            let tables = |round: u32| {
                let mut freq = [0u32; 256];
                for (s, f) in freq.iter_mut().enumerate() {
                    if s % 3 != 1 {
                        *f = 1 + (s as u32 * (round + 5)) % (total >> 8);
                    }
                }
                let rest = total - freq.iter().sum::<u32>();
                freq[(round as usize * 41) % 256 / 3 * 3] += rest;
                let mut cum = [0u32; 257];
                for s in 0..256 {
                    cum[s + 1] = cum[s] + freq[s];
                }
                (freq, cum)
            };
            let (freq, cum) = tables(0);
            let mut by = DecodeTables::by_symbol(&freq, &cum, shift);
            for round in 0..4 {
                let (freq, cum) = tables(round);
                by.set(&freq, &cum, shift);
                let per = DecodeTables::new(&freq, &cum, shift);
                for t in 0..total as usize {
                    let (sym, entry) = if per.packed {
                        ((per.slots[t] >> 24) as u8, per.slots[t])
                    } else {
                        (per.symbols[t], per.slots[t])
                    };
                    assert_eq!(by.symbols[t], sym, "shift {shift} round {round} slot {t}");
                    assert_eq!(
                        by.span(by.slots[usize::from(sym)]),
                        per.span(entry),
                        "shift {shift} round {round} slot {t}"
                    );
                }
            }
        }
    }

    /// Spans of every length around the fill's half and whole blocks
    /// (`SYMBOL_FILL / 2`, `SYMBOL_FILL`, and one more block), next to
    /// spans of one slot: the by-symbol tables, filled by the plain code
    /// and by the vector build, give every slot its symbol.
    #[test]
    fn by_symbol_fill_at_the_block_edges() {
        let (half, whole) = (SYMBOL_FILL as u32 / 2, SYMBOL_FILL as u32);
        let lengths: Vec<u32> = [half, whole, whole + half, 2 * whole]
            .iter()
            .flat_map(|&e| [e - 1, e, e + 1, 1])
            .collect();
        let shift = 16;
        let total = 1u32 << shift;
        for turn in 0..lengths.len() {
            let mut freq = [0u32; 256];
            for s in 0..255 {
                freq[s] = lengths[(s + turn) % lengths.len()];
            }
            freq[255] = total - freq.iter().sum::<u32>();
            let mut cum = [0u32; 257];
            for s in 0..256 {
                cum[s + 1] = cum[s] + freq[s];
            }
            let mut vector = DecodeTables::by_symbol(&freq, &cum, shift);
            let mut plain = DecodeTables::by_symbol(&freq, &cum, shift);
            // Stale contents first, as after an earlier table.
            plain.symbols.fill(0xEE);
            fill_by_symbol(&mut plain, &freq, &cum);
            vector.set(&freq, &cum, shift);
            for s in 0..256 {
                for t in cum[s]..cum[s + 1] {
                    let t = t as usize;
                    assert_eq!(usize::from(plain.symbols[t]), s, "turn {turn} slot {t}");
                    assert_eq!(usize::from(vector.symbols[t]), s, "turn {turn} slot {t}");
                }
                assert_eq!(plain.slots[s], cum[s] | (freq[s] - 1) << 16);
                assert_eq!(vector.slots[s], plain.slots[s]);
            }
        }
    }
}
