//! Vector kernels of the byte-table lane encoder (x86-64): sixteen lanes
//! per 512-bit vector with AVX-512, eight per 256-bit vector with AVX2.
//!
//! One pass codes one row — a symbol in every lane — exactly as the scalar
//! `encode_step` in `lanes::encode` does, all the row's vectors side by side so
//! that their dependency chains (multiply, select, renormalise) overlap:
//!
//! 1. A gather reads each byte's packed `cum | (freq - 1) << 16`.
//! 2. `r = range >> log2_total`; `sum = low + r * cum`, the lanes where the
//!    32-bit sum wrapped around being the carries; `range = r * freq`, or
//!    `range - r * cum` for the table's last symbol (its packed entry is
//!    known, so one comparison finds it).
//! 3. Renormalisation: a lane whose range fell below 2^24 releases one
//!    byte, below 2^16 two.
//! 4. Output is one four-byte store per lane at `pos - 1`: the byte before
//!    the lane's position (kept in a register, plus the step's carry), then
//!    the top three bytes of `sum`. The position then advances by the bytes
//!    released, so the bytes not released are overwritten by the next
//!    store, and the register takes the new last byte. With AVX-512 the
//!    stores are one scatter; with AVX2, eight scalar stores.
//! 5. A carry into a last byte of 0xFF runs further back: for those lanes
//!    (about one carry in 256) the scalar `propagate_carry` adds it into
//!    the bytes before, after the store has written the 0x00.
//!
//! So no carry is ever looked for in memory and no byte is written twice
//! except the ones not yet released. The output is byte-identical to the
//! scalar steps (tested, and fuzzed against them), whatever the CPU.
//!
//! Invariant, checked by [`encode_rows`] before any vector instruction
//! runs: every lane's region has room for two bytes a row of the call plus
//! a four-byte store, so every store lands inside the lane's own region;
//! gathers index the 256-entry table with byte values.
#![allow(unsafe_code)]

use core::arch::x86_64::*;

use super::EncodeKernel;
use crate::coder::lanes::encode::{propagate_carry, EncodeTable, FRONT};

/// The lane encoder's state, as the kernels read and update it: lane `l`'s
/// region is `buf[l * stride ..][..stride]`, its stream starting [`FRONT`]
/// bytes in, `pos[l]` bytes written.
pub(crate) struct Lanes<'a> {
    pub(crate) low: &'a mut [u32],
    pub(crate) range: &'a mut [u32],
    pub(crate) pos: &'a mut [usize],
    pub(crate) buf: &'a mut [u8],
    pub(crate) stride: usize,
}

/// Codes `rows` (row-major, one byte per lane a row) for every lane, on
/// `kernel`. Every byte in `rows` should have a non-zero frequency in
/// `table`; one that has not gives unspecified streams (but no write
/// outside the lanes' regions).
///
/// # Panics
///
/// When a bound the kernels rely on does not hold: `kernel` not supported
/// by this CPU or not fitting the lane count, `rows` not whole rows, a
/// buffer above `i32::MAX` bytes or too short for the regions, or a lane
/// without room for two bytes a row plus a four-byte store. The lane
/// encoder never calls it so.
pub(crate) fn encode_rows(
    kernel: EncodeKernel,
    lanes: Lanes<'_>,
    rows: &[u8],
    table: &EncodeTable,
) {
    let n = lanes.low.len();
    assert!(kernel.supported() && kernel.fits(n));
    assert!(lanes.range.len() == n && lanes.pos.len() == n);
    assert!(rows.len().is_multiple_of(n));
    assert!(lanes.stride * n <= lanes.buf.len() && lanes.buf.len() <= i32::MAX as usize);
    let count = rows.len() / n;
    for &p in lanes.pos.iter() {
        assert!(FRONT + p + 2 * count + 3 <= lanes.stride);
    }
    // SAFETY: the CPU has the kernel's instructions and the lane count fits
    // it (asserted); the asserts above are the bounds the kernels rely on.
    unsafe {
        match (kernel, n / 8) {
            (EncodeKernel::Avx512, 4) => rows_avx512::<2>(lanes, rows, table),
            (EncodeKernel::Avx512, _) => rows_avx512::<1>(lanes, rows, table),
            (EncodeKernel::Avx2, 4) => rows_avx2::<4>(lanes, rows, table),
            (EncodeKernel::Avx2, 3) => rows_avx2::<3>(lanes, rows, table),
            (EncodeKernel::Avx2, 2) => rows_avx2::<2>(lanes, rows, table),
            (EncodeKernel::Avx2, _) => rows_avx2::<1>(lanes, rows, table),
        }
    }
}

/// The offset of the byte before each lane's position, and that byte.
fn entry_state<const W: usize>(lanes: &Lanes<'_>, first: usize) -> ([u32; W], [u32; W]) {
    let at: [u32; W] = core::array::from_fn(|k| {
        let l = first + k;
        (l * lanes.stride + FRONT + lanes.pos[l] - 1) as u32
    });
    let prev = core::array::from_fn(|k| u32::from(lanes.buf[at[k] as usize]));
    (at, prev)
}

/// Writes back the positions of lanes `first .. first + W` from the offsets
/// of the byte before them.
fn leave_state<const W: usize>(lanes: &mut Lanes<'_>, first: usize, at: &[u32; W]) {
    for (k, &a) in at.iter().enumerate() {
        let l = first + k;
        lanes.pos[l] = a as usize + 1 - l * lanes.stride - FRONT;
    }
}

/// Adds a carry into the bytes before offset `at` of lane `l`'s stream, for
/// each lane `first + k` whose bit `k` is set in `mask`.
fn carry_on(buf: &mut [u8], stride: usize, first: usize, mask: u32, at: &[u32]) {
    let mut m = mask;
    while m != 0 {
        let k = m.trailing_zeros() as usize;
        let start = (first + k) * stride + FRONT;
        let at = at[k] as usize;
        if at > start {
            propagate_carry(&mut buf[start..], at - start);
        }
        m &= m - 1;
    }
}

/// The AVX-512 kernel, `V` vectors of sixteen lanes a row.
///
/// # Safety
///
/// The CPU has AVX-512 F, BW and CD; the lanes are `16 * V`; `rows` holds
/// whole rows; the buffer holds the regions and is at most `i32::MAX`
/// bytes; every lane has room for two bytes a row plus a four-byte store.
#[target_feature(enable = "avx512f,avx512bw,avx512cd")]
unsafe fn rows_avx512<const V: usize>(mut lanes: Lanes<'_>, rows: &[u8], table: &EncodeTable) {
    let mut low = [_mm512_setzero_si512(); V];
    let mut range = [_mm512_setzero_si512(); V];
    let mut at = [_mm512_setzero_si512(); V];
    let mut prev = [_mm512_setzero_si512(); V];
    for v in 0..V {
        let (a, p) = entry_state::<16>(&lanes, 16 * v);
        // SAFETY: each source is 64 readable bytes; the loads are unaligned.
        unsafe {
            low[v] = _mm512_loadu_si512(lanes.low[16 * v..16 * v + 16].as_ptr().cast());
            range[v] = _mm512_loadu_si512(lanes.range[16 * v..16 * v + 16].as_ptr().cast());
            at[v] = _mm512_loadu_si512(a.as_ptr().cast());
            prev[v] = _mm512_loadu_si512(p.as_ptr().cast());
        }
    }
    let count = _mm_cvtsi32_si128(table.shift as i32);
    let last = _mm512_set1_epi32(table.last as i32);
    let one = _mm512_set1_epi32(1);
    let low8 = _mm512_set1_epi32(0xFF);
    let low16 = _mm512_set1_epi32(0xFFFF);
    let bytes24 = _mm512_set1_epi32(24);
    let bytes16 = _mm512_set1_epi32(16);
    // Per 32-bit word: a zero byte, then the word's top three bytes from
    // the most significant down (memory order of the stream).
    let out3 = _mm512_set4_epi32(0x0D0E_0F80, 0x090A_0B80, 0x0506_0780, 0x0102_0380);
    let entries = table.packed.as_ptr().cast::<i32>();
    let width = 16 * V;

    for row in rows.chunks_exact(width) {
        for v in 0..V {
            let cols: &[u8; 16] = row[16 * v..16 * v + 16]
                .try_into()
                .expect("a row holds the vector's columns");
            // SAFETY: `cols` is 16 readable bytes; the load is unaligned.
            let bytes = unsafe { _mm_loadu_si128(cols.as_ptr().cast()) };
            // SAFETY: every index is a byte value, below the table's 256
            // entries.
            let e = unsafe { _mm512_i32gather_epi32::<4>(_mm512_cvtepu8_epi32(bytes), entries) };
            let cum = _mm512_and_si512(e, low16);
            let freq = _mm512_add_epi32(_mm512_srli_epi32::<16>(e), one);
            let r = _mm512_srl_epi32(range[v], count);
            let offset = _mm512_mullo_epi32(r, cum);
            let sum = _mm512_add_epi32(low[v], offset);
            let carry = _mm512_cmplt_epu32_mask(sum, low[v]);
            let is_last = _mm512_cmpeq_epi32_mask(e, last);
            let next = _mm512_mask_blend_epi32(
                is_last,
                _mm512_mullo_epi32(r, freq),
                _mm512_sub_epi32(range[v], offset),
            );
            // Bytes released, times 8: 0, 8 or 16 (a valid step keeps
            // `next >= 2^8`; the clamp bounds the stores whatever the
            // table).
            let bits =
                _mm512_min_epu32(_mm512_and_si512(_mm512_lzcnt_epi32(next), bytes24), bytes16);
            let before = _mm512_mask_add_epi32(prev[v], carry, prev[v], one);
            let spill = _mm512_mask_cmpeq_epi32_mask(carry, prev[v], low8);
            let word = _mm512_or_si512(
                _mm512_shuffle_epi8(sum, out3),
                _mm512_and_si512(before, low8),
            );
            // SAFETY: each offset is the byte before a lane's position, in
            // the lane's region, with room for four bytes (checked by
            // `encode_rows` for every row of the call).
            unsafe { _mm512_i32scatter_epi32::<1>(lanes.buf.as_mut_ptr().cast(), at[v], word) };
            if spill != 0 {
                let mut offsets = [0u32; 16];
                // SAFETY: `offsets` is 64 writable bytes; the store is
                // unaligned.
                unsafe { _mm512_storeu_si512(offsets.as_mut_ptr().cast(), at[v]) };
                carry_on(lanes.buf, lanes.stride, 16 * v, u32::from(spill), &offsets);
            }
            at[v] = _mm512_add_epi32(at[v], _mm512_srli_epi32::<3>(bits));
            prev[v] = _mm512_and_si512(_mm512_srlv_epi32(word, bits), low8);
            low[v] = _mm512_sllv_epi32(sum, bits);
            range[v] = _mm512_sllv_epi32(next, bits);
        }
    }

    for v in 0..V {
        let mut a = [0u32; 16];
        // SAFETY: each destination is 64 writable bytes; the stores are
        // unaligned.
        unsafe {
            _mm512_storeu_si512(lanes.low[16 * v..16 * v + 16].as_mut_ptr().cast(), low[v]);
            _mm512_storeu_si512(
                lanes.range[16 * v..16 * v + 16].as_mut_ptr().cast(),
                range[v],
            );
            _mm512_storeu_si512(a.as_mut_ptr().cast(), at[v]);
        }
        leave_state::<16>(&mut lanes, 16 * v, &a);
    }
}

/// The AVX2 kernel, `V` vectors of eight lanes a row.
///
/// # Safety
///
/// The CPU has AVX2; the lanes are `8 * V`; `rows` holds whole rows; the
/// buffer holds the regions and is at most `i32::MAX` bytes; every lane has
/// room for two bytes a row plus a four-byte store.
#[target_feature(enable = "avx2")]
unsafe fn rows_avx2<const V: usize>(mut lanes: Lanes<'_>, rows: &[u8], table: &EncodeTable) {
    let mut low = [_mm256_setzero_si256(); V];
    let mut range = [_mm256_setzero_si256(); V];
    let mut at = [_mm256_setzero_si256(); V];
    let mut prev = [_mm256_setzero_si256(); V];
    for v in 0..V {
        let (a, p) = entry_state::<8>(&lanes, 8 * v);
        // SAFETY: each source is 32 readable bytes; the loads are unaligned.
        unsafe {
            low[v] = _mm256_loadu_si256(lanes.low[8 * v..8 * v + 8].as_ptr().cast());
            range[v] = _mm256_loadu_si256(lanes.range[8 * v..8 * v + 8].as_ptr().cast());
            at[v] = _mm256_loadu_si256(a.as_ptr().cast());
            prev[v] = _mm256_loadu_si256(p.as_ptr().cast());
        }
    }
    let count = _mm_cvtsi32_si128(table.shift as i32);
    let last = _mm256_set1_epi32(table.last as i32);
    let one = _mm256_set1_epi32(1);
    let zero = _mm256_setzero_si256();
    let low8 = _mm256_set1_epi32(0xFF);
    let low16 = _mm256_set1_epi32(0xFFFF);
    let spilled = _mm256_set1_epi32(0x100);
    let sign = _mm256_set1_epi32(i32::MIN);
    let out3 = _mm256_setr_epi32(
        0x0102_0380,
        0x0506_0780,
        0x090A_0B80,
        0x0D0E_0F80,
        0x0102_0380,
        0x0506_0780,
        0x090A_0B80,
        0x0D0E_0F80,
    );
    let entries = table.packed.as_ptr().cast::<i32>();
    let width = 8 * V;
    let mut offsets = [0u32; 8];
    let mut words = [0u32; 8];

    for row in rows.chunks_exact(width) {
        for v in 0..V {
            let cols: &[u8; 8] = row[8 * v..8 * v + 8]
                .try_into()
                .expect("a row holds the vector's columns");
            // SAFETY: `cols` is 8 readable bytes.
            let bytes = unsafe { _mm_loadl_epi64(cols.as_ptr().cast()) };
            // SAFETY: every index is a byte value, below the table's 256
            // entries.
            let e = unsafe { _mm256_i32gather_epi32::<4>(entries, _mm256_cvtepu8_epi32(bytes)) };
            let cum = _mm256_and_si256(e, low16);
            let freq = _mm256_add_epi32(_mm256_srli_epi32::<16>(e), one);
            let r = _mm256_srl_epi32(range[v], count);
            let offset = _mm256_mullo_epi32(r, cum);
            let sum = _mm256_add_epi32(low[v], offset);
            // Unsigned sum < low: the addition wrapped, a carry (all ones).
            let carry =
                _mm256_cmpgt_epi32(_mm256_xor_si256(low[v], sign), _mm256_xor_si256(sum, sign));
            let is_last = _mm256_cmpeq_epi32(e, last);
            let next = _mm256_blendv_epi8(
                _mm256_mullo_epi32(r, freq),
                _mm256_sub_epi32(range[v], offset),
                is_last,
            );
            let below24 = _mm256_cmpeq_epi32(_mm256_srli_epi32::<24>(next), zero);
            let below16 = _mm256_cmpeq_epi32(_mm256_srli_epi32::<16>(next), zero);
            let released = _mm256_sub_epi32(zero, _mm256_add_epi32(below24, below16));
            let bits = _mm256_slli_epi32::<3>(released);
            let before = _mm256_sub_epi32(prev[v], carry);
            let spill =
                _mm256_movemask_ps(_mm256_castsi256_ps(_mm256_cmpeq_epi32(before, spilled))) as u32;
            let word = _mm256_or_si256(
                _mm256_shuffle_epi8(sum, out3),
                _mm256_and_si256(before, low8),
            );
            // SAFETY: both arrays are 32 writable bytes; the stores are
            // unaligned.
            unsafe {
                _mm256_storeu_si256(offsets.as_mut_ptr().cast(), at[v]);
                _mm256_storeu_si256(words.as_mut_ptr().cast(), word);
            }
            let base = lanes.buf.as_mut_ptr();
            for k in 0..8 {
                // SAFETY: each offset is the byte before a lane's position,
                // in the lane's region, with room for four bytes (checked
                // by `encode_rows` for every row of the call).
                unsafe {
                    base.add(offsets[k] as usize)
                        .cast::<u32>()
                        .write_unaligned(words[k]);
                }
            }
            if spill != 0 {
                carry_on(lanes.buf, lanes.stride, 8 * v, spill, &offsets);
            }
            at[v] = _mm256_add_epi32(at[v], released);
            prev[v] = _mm256_and_si256(_mm256_srlv_epi32(word, bits), low8);
            low[v] = _mm256_sllv_epi32(sum, bits);
            range[v] = _mm256_sllv_epi32(next, bits);
        }
    }

    for v in 0..V {
        let mut a = [0u32; 8];
        // SAFETY: each destination is 32 writable bytes; the stores are
        // unaligned.
        unsafe {
            _mm256_storeu_si256(lanes.low[8 * v..8 * v + 8].as_mut_ptr().cast(), low[v]);
            _mm256_storeu_si256(lanes.range[8 * v..8 * v + 8].as_mut_ptr().cast(), range[v]);
            _mm256_storeu_si256(a.as_mut_ptr().cast(), at[v]);
        }
        leave_state::<8>(&mut lanes, 8 * v, &a);
    }
}

#[cfg(test)]
mod tests {
    use super::EncodeKernel;
    use crate::coder::encode_lanes;
    use crate::coder::lanes::encode::{EncodeTable, LaneEncoder};
    use crate::coder::lanes::testing::TestTable;
    use crate::coder::LaneTable;
    use alloc::vec;
    use alloc::vec::Vec;
    use proptest::prelude::*;

    /// The kernels this CPU runs; a skip line for each it cannot.
    fn kernels() -> Vec<EncodeKernel> {
        EncodeKernel::ALL
            .into_iter()
            .filter(|k| {
                let ok = k.supported();
                if !ok {
                    std::eprintln!("skipped: lane-encoder kernel {k:?} (this CPU lacks it)");
                }
                ok
            })
            .collect()
    }

    fn table_of(model: &TestTable) -> EncodeTable {
        EncodeTable::new(model.frequencies(), model.cumulative(), model.log2_total())
    }

    /// Codes `data` in pieces of the lengths in `pieces` (cycled), as the
    /// adaptive lanes do, on `kernel` (`None`: the scalar steps).
    fn code(
        t: &EncodeTable,
        data: &[u8],
        lanes: usize,
        kernel: Option<EncodeKernel>,
        pieces: &[usize],
    ) -> Vec<Vec<u8>> {
        let mut enc = LaneEncoder::with_kernel(data.len(), lanes, kernel);
        let mut rest = data;
        for &p in pieces.iter().cycle() {
            if rest.is_empty() {
                break;
            }
            let (piece, next) = rest.split_at(p.clamp(1, rest.len()));
            enc.code(piece, t);
            rest = next;
        }
        enc.finish().into_vecs()
    }

    /// One lane's scalar coder, to find the data the kernels' detour needs.
    #[derive(Clone)]
    struct Lane {
        low: u32,
        range: u32,
        out: Vec<u8>,
    }

    impl Lane {
        /// Codes `b`; returns whether its carry reached a last byte of 0xFF
        /// (the kernels' scalar detour).
        fn step(&mut self, model: &TestTable, b: u8) -> bool {
            let (freq, cum, shift) = (model.frequencies(), model.cumulative(), model.log2_total());
            let (c, f) = (cum[usize::from(b)], freq[usize::from(b)]);
            let r = self.range >> shift;
            let (sum, carry) = self.low.overflowing_add(r * c);
            let spill = carry && self.out.last() == Some(&0xFF);
            if carry {
                let len = self.out.len();
                crate::coder::lanes::encode::propagate_carry(&mut self.out, len);
            }
            self.low = sum;
            self.range = if c + f < 1 << shift {
                r * f
            } else {
                self.range - r * c
            };
            while self.range < crate::coder::TOP {
                self.out.push((self.low >> 24) as u8);
                self.low <<= 8;
                self.range <<= 8;
            }
            spill
        }
    }

    /// Carries that reach a last byte of 0xFF in the scalar steps of the
    /// `lanes` lanes.
    fn spills(model: &TestTable, data: &[u8], lanes: usize) -> usize {
        (0..lanes.min(data.len()))
            .map(|l| {
                let mut lane = Lane {
                    low: 0,
                    range: u32::MAX,
                    out: Vec::new(),
                };
                data[l..]
                    .iter()
                    .step_by(lanes)
                    .filter(|&&b| lane.step(model, b))
                    .count()
            })
            .sum()
    }

    /// `len` bytes over symbols 0, 1 and 2 chosen, lane by lane (over
    /// `lanes` lanes), to make carries into runs of 0xFF: each step takes
    /// the symbol that makes one, else one that leaves 0xFF as the last
    /// byte, else a pseudo-random one.
    fn carry_heavy(model: &TestTable, len: usize, lanes: usize) -> Vec<u8> {
        let mut data = vec![0u8; len];
        let mut seed = 0x9E37_79B9u32;
        for l in 0..lanes {
            let mut lane = Lane {
                low: 0,
                range: u32::MAX,
                out: Vec::new(),
            };
            for i in (l..len).step_by(lanes) {
                seed = seed.wrapping_mul(1_664_525).wrapping_add(1_013_904_223);
                let mut pick = (seed >> 30) as u8 % 3;
                let mut best = 0;
                for b in 0..3u8 {
                    let mut next = lane.clone();
                    let score = if next.step(model, b) {
                        2
                    } else {
                        u32::from(next.out.last() == Some(&0xFF))
                    };
                    if score > best && seed >> 8 & 7 != 0 {
                        (best, pick) = (score, b);
                    }
                }
                lane.step(model, pick);
                data[i] = pick;
            }
        }
        data
    }

    #[test]
    fn lane_edges_match_the_scalar_steps() {
        let kernels = kernels();
        for log2_total in [8u32, 12, 16] {
            let model = TestTable::from_counts(&[3, 1, 60], log2_total).unwrap();
            let t = table_of(&model);
            for lanes in 1..=crate::coder::MAX_LANES {
                let data = carry_heavy(&model, 8_000 + 300 * lanes, lanes);
                // The data reaches the kernels' detour wherever they run.
                if lanes % 8 == 0 {
                    assert!(
                        spills(&model, &data, lanes) > 0,
                        "k={log2_total} lanes={lanes}"
                    );
                }
                let mut m = model.clone();
                let reference = encode_lanes(&mut m, &data, lanes).unwrap();
                assert_eq!(code(&t, &data, lanes, None, &[data.len()]), reference);
                for &k in &kernels {
                    let whole = code(&t, &data, lanes, Some(k), &[data.len()]);
                    assert_eq!(whole, reference, "{k:?} k={log2_total} lanes={lanes}");
                    let pieces = code(&t, &data, lanes, Some(k), &[1, 97, 4096, 3, lanes]);
                    assert_eq!(
                        pieces, reference,
                        "{k:?} pieces k={log2_total} lanes={lanes}"
                    );
                    // Tiny and empty blocks: part rows, one row, a row and
                    // a bit.
                    for len in [0, 1, lanes - 1, lanes, lanes + 1, 2 * lanes + 3] {
                        let d = &data[..len];
                        let want = code(&t, d, lanes, None, &[len]);
                        assert_eq!(code(&t, d, lanes, Some(k), &[len]), want, "{k:?} len={len}");
                    }
                }
            }
        }
    }

    /// A table of up to 256 counts (some zero) and data over its codable
    /// bytes.
    fn table_and_data() -> impl Strategy<Value = (Vec<u64>, u32, Vec<u8>)> {
        (
            prop::collection::vec(prop_oneof![Just(0u64), 1u64..4, 1u64..5000], 1..=256),
            8u32..=16,
            prop::collection::vec(any::<u16>(), 0..3000),
        )
            .prop_map(|(mut counts, log2_total, picks)| {
                if counts.iter().all(|&c| c == 0) {
                    counts[0] = 1;
                }
                let codable: Vec<u8> = (0..counts.len())
                    .filter(|&s| counts[s] > 0)
                    .map(|s| s as u8)
                    .collect();
                // Mostly the first codable bytes, so that tables are skewed.
                let data = picks
                    .iter()
                    .map(|&p| codable[usize::from(p) % codable.len().min(1 + usize::from(p >> 12))])
                    .collect();
                (counts, log2_total, data)
            })
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(96))]

        #[test]
        fn kernels_match_the_scalar_steps(
            (counts, log2_total, data) in table_and_data(),
            lanes in prop::sample::select(vec![8usize, 16, 24, 32]),
            pieces in prop::collection::vec(1usize..300, 1..4),
        ) {
            let model = TestTable::from_counts(&counts, log2_total).unwrap();
            let t = table_of(&model);
            let want = code(&t, &data, lanes, None, &[data.len()]);
            let mut m = model.clone();
            prop_assert_eq!(&want, &encode_lanes(&mut m, &data, lanes).unwrap());
            for k in kernels() {
                prop_assert_eq!(&code(&t, &data, lanes, Some(k), &[data.len()]), &want);
                prop_assert_eq!(&code(&t, &data, lanes, Some(k), &pieces), &want);
            }
        }
    }
}
