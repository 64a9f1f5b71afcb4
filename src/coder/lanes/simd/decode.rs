//! Vector kernels of the byte-table lane decoder (x86-64, eight lanes per
//! 256-bit vector).
//!
//! Each vector holds the `range`, `code` and read position of eight lanes,
//! and one pass decodes one symbol in each of them, exactly as the scalar
//! step in `lanes::decode` does:
//!
//! 1. `r = range >> log2_total`; the slot `t = min(code / r, total - 1)`.
//!    The quotient is estimated in `f32` and then corrected with integer
//!    arithmetic: for `code < 2^32` and `2^8 <= r < 2^24` the estimate is
//!    off by at most one wherever the quotient is below `2^17`, the
//!    remainder `code - q * r` tells which way, and where the estimate could
//!    be off by more the quotient is far above `total - 1` and the clamp
//!    hides it. So `t` is the exact integer of the scalar step, on every
//!    CPU.
//! 2. One gather reads the slot's packed entry: `cum | (freq - 1) << 12 |
//!    symbol << 24` for totals up to 2^12, otherwise `cum | (freq - 1) << 16`
//!    with a second gather (off the critical path) for the symbol. In the
//!    by-symbol layout (the refreshed lanes, whose tables change every few
//!    hundred symbols) one gather reads the slot's symbol byte and a
//!    second, dependent one the symbol's entry `cum | (freq - 1) << 16`.
//! 3. `code -= r * cum`; `range = r * freq`, or `range - r * cum` for the
//!    last symbol of the table.
//! 4. Renormalisation takes zero, one or two bytes per lane at once from a
//!    big-endian word gathered at the lane's position before the step, so
//!    the byte loads overlap the division.
//!
//! One pass is a long dependency chain (division, gather, multiply), so
//! several vectors run side by side and the chains overlap: two with AVX2's
//! sixteen vector registers, four when AVX-512 supplies thirty-two (the
//! same code, compiled for the larger register file).
//!
//! Invariant, kept by the caller ([`decode_rows`] asserts it): no position
//! can pass `buffer.len() - 4` during the call, so every four-byte gather
//! reads inside the buffer.
#![allow(unsafe_code)]

use core::arch::x86_64::*;

use super::Kernel;
use crate::coder::lanes::decode::{fill_by_symbol, fill_spans, DecodeTables, LaneState};
use crate::coder::lanes::LaneTable;

/// Fills the decoding tables of `freq` / `cum` (see `DecodeTables::set`)
/// with the widest stores the CPU has: the table fill of the refreshed
/// lanes runs at every refresh, a few thousand slots for a few hundred
/// symbols. Returns `false`, having done nothing, on a CPU with neither
/// AVX-512 nor AVX2.
pub(crate) fn fill_tables(t: &mut DecodeTables, freq: &[u32], cum: &[u32]) -> bool {
    if Kernel::Avx512Wide.supported() {
        // SAFETY: the CPU has AVX-512 F and BW (checked); the function is
        // safe code compiled for them.
        unsafe { fill_avx512(t, freq, cum) };
        true
    } else if Kernel::Avx2.supported() {
        // SAFETY: the CPU has AVX2 (checked); the function is safe code
        // compiled for it.
        unsafe { fill_avx2(t, freq, cum) };
        true
    } else {
        false
    }
}

/// [`fill_tables`] for the by-symbol layout (`lanes::decode::fill_by_symbol`).
pub(crate) fn fill_symbol_tables(t: &mut DecodeTables, freq: &[u32], cum: &[u32]) -> bool {
    if Kernel::Avx512Wide.supported() {
        // SAFETY: the CPU has AVX-512 F and BW (checked); the function is
        // safe code compiled for them.
        unsafe { fill_symbols_avx512(t, freq, cum) };
        true
    } else if Kernel::Avx2.supported() {
        // SAFETY: the CPU has AVX2 (checked); the function is safe code
        // compiled for it.
        unsafe { fill_symbols_avx2(t, freq, cum) };
        true
    } else {
        false
    }
}

#[target_feature(enable = "avx512f,avx512bw")]
fn fill_symbols_avx512(t: &mut DecodeTables, freq: &[u32], cum: &[u32]) {
    fill_by_symbol(t, freq, cum);
}

#[target_feature(enable = "avx2")]
fn fill_symbols_avx2(t: &mut DecodeTables, freq: &[u32], cum: &[u32]) {
    fill_by_symbol(t, freq, cum);
}

/// Slot layouts of the kernels' `LAYOUT` parameter: the per-slot entry
/// carries the symbol.
pub(crate) const PACKED: u8 = 0;
/// The per-slot entry and a per-slot symbol table.
pub(crate) const WIDE: u8 = 1;
/// A per-slot symbol table, then a per-symbol entry.
pub(crate) const BY_SYMBOL: u8 = 2;

/// The `LAYOUT` parameter of the kernels for `tables`.
pub(crate) fn layout(tables: &DecodeTables) -> u8 {
    match (tables.by_symbol, tables.packed) {
        (true, _) => BY_SYMBOL,
        (false, true) => PACKED,
        (false, false) => WIDE,
    }
}

#[target_feature(enable = "avx512f,avx512bw")]
fn fill_avx512(t: &mut DecodeTables, freq: &[u32], cum: &[u32]) {
    fill_spans(t, freq, cum);
}

#[target_feature(enable = "avx2")]
fn fill_avx2(t: &mut DecodeTables, freq: &[u32], cum: &[u32]) {
    fill_spans(t, freq, cum);
}

/// [`LaneTable::update_run`] compiled for the widest vectors the CPU
/// has: the refresh at the end of a segment quantises all 256 counts and
/// sums them up, loops that run several times faster on 256- or 512-bit
/// vectors. Same results on every CPU.
pub(crate) fn learn_run<T: LaneTable + ?Sized>(model: &mut T, run: &[u8]) {
    if Kernel::Avx512Wide.supported() {
        // SAFETY: the CPU has AVX-512 F and BW (checked); the function is
        // safe code compiled for them.
        unsafe { learn_avx512(model, run) }
    } else if Kernel::Avx2.supported() {
        // SAFETY: the CPU has AVX2 (checked); the function is safe code
        // compiled for it.
        unsafe { learn_avx2(model, run) }
    } else {
        model.update_run(run);
    }
}

#[target_feature(enable = "avx512f,avx512bw")]
fn learn_avx512<T: LaneTable + ?Sized>(model: &mut T, run: &[u8]) {
    model.update_run(run);
}

#[target_feature(enable = "avx2")]
fn learn_avx2<T: LaneTable + ?Sized>(model: &mut T, run: &[u8]) {
    model.update_run(run);
}

/// Decodes whole rows of `chunk` (row-major, one symbol per lane a row),
/// advancing every lane.
///
/// # Panics
///
/// When a bound the kernels rely on does not hold: `kernel` not supported by
/// this CPU, a lane count that is not a multiple of eight, a buffer above
/// `i32::MAX` bytes, a lane that could read past the buffer within the
/// chunk's rows, or malformed tables. The lane decoder never calls it so.
pub(crate) fn decode_rows(
    kernel: Kernel,
    lanes: &mut [LaneState],
    buffer: &[u8],
    tables: &DecodeTables,
    chunk: &mut [u8],
) {
    let n = lanes.len();
    assert!(kernel.supported());
    assert!(n > 0 && kernel.fits(n));
    let rows = chunk.len() / n;
    assert!(buffer.len() <= i32::MAX as usize);
    for lane in lanes.iter() {
        assert!(lane.pos + 2 * rows + 4 <= buffer.len());
    }
    if tables.by_symbol {
        assert!(tables.slots.len() >= 256 && !tables.packed);
    } else {
        assert!(tables.slots.len() >= tables.total as usize);
        assert_eq!(tables.packed, tables.shift <= 12);
    }
    assert!(tables.symbols.len() >= tables.total as usize + 3);
    assert!((8..=16).contains(&tables.shift));
    let layout = layout(tables);
    if kernel == Kernel::Avx512Wide {
        let mut first = 0;
        while first < n {
            let vectors = if n - first >= 32 { 2 } else { 1 };
            let group = &mut lanes[first..first + 16 * vectors];
            // SAFETY: the CPU supports the kernel, `group` has `16 *
            // vectors` lanes, and the asserts above are the bounds the
            // kernel relies on (see `decode_rows` of the narrow build).
            unsafe {
                use super::decode_wide::rows;
                match (vectors, layout) {
                    (2, PACKED) => rows::<2, PACKED>(group, first, n, buffer, tables, chunk),
                    (2, WIDE) => rows::<2, WIDE>(group, first, n, buffer, tables, chunk),
                    (2, _) => rows::<2, BY_SYMBOL>(group, first, n, buffer, tables, chunk),
                    (_, PACKED) => rows::<1, PACKED>(group, first, n, buffer, tables, chunk),
                    (_, WIDE) => rows::<1, WIDE>(group, first, n, buffer, tables, chunk),
                    (_, _) => rows::<1, BY_SYMBOL>(group, first, n, buffer, tables, chunk),
                }
            }
            first += 16 * vectors;
        }
        return;
    }
    let mut first = 0;
    while first < n {
        // Vectors in this pass: as many as the register file holds.
        let vectors = match (kernel, (n - first) / 8) {
            (Kernel::Avx512, 4..) => 4,
            (_, 2..) => 2,
            _ => 1,
        };
        let group = &mut lanes[first..first + 8 * vectors];
        let pass = Pass {
            first,
            width: n,
            buffer,
            tables,
        };
        // SAFETY: the CPU supports the kernel, `group` has `8 * vectors`
        // lanes, and the asserts above are the bounds the kernels rely on:
        // every position stays below `buffer.len() - 3` for `rows` steps,
        // slots are below `total`, and `chunk` holds `rows * n` bytes, of
        // which the pass writes columns `first .. first + 8 * vectors`.
        unsafe {
            match (kernel, vectors) {
                (Kernel::Avx512, 4) => match layout {
                    PACKED => rows_avx512::<4, PACKED>(group, &pass, chunk),
                    WIDE => rows_avx512::<4, WIDE>(group, &pass, chunk),
                    _ => rows_avx512::<4, BY_SYMBOL>(group, &pass, chunk),
                },
                (Kernel::Avx512, 2) => match layout {
                    PACKED => rows_avx512::<2, PACKED>(group, &pass, chunk),
                    WIDE => rows_avx512::<2, WIDE>(group, &pass, chunk),
                    _ => rows_avx512::<2, BY_SYMBOL>(group, &pass, chunk),
                },
                (Kernel::Avx512, _) => match layout {
                    PACKED => rows_avx512::<1, PACKED>(group, &pass, chunk),
                    WIDE => rows_avx512::<1, WIDE>(group, &pass, chunk),
                    _ => rows_avx512::<1, BY_SYMBOL>(group, &pass, chunk),
                },
                (_, 2) => match layout {
                    PACKED => rows_avx2::<2, PACKED>(group, &pass, chunk),
                    WIDE => rows_avx2::<2, WIDE>(group, &pass, chunk),
                    _ => rows_avx2::<2, BY_SYMBOL>(group, &pass, chunk),
                },
                _ => match layout {
                    PACKED => rows_avx2::<1, PACKED>(group, &pass, chunk),
                    WIDE => rows_avx2::<1, WIDE>(group, &pass, chunk),
                    _ => rows_avx2::<1, BY_SYMBOL>(group, &pass, chunk),
                },
            }
        }
        first += 8 * vectors;
    }
}

/// What one pass reads: its first column, the row width, the input and
/// the tables.
#[derive(Clone, Copy)]
struct Pass<'a> {
    first: usize,
    width: usize,
    buffer: &'a [u8],
    tables: &'a DecodeTables,
}

/// The lanes' fields as vectors' worth of words: `range`, `code`, `pos`,
/// and all-ones for a damaged lane.
fn fields(group: &[LaneState]) -> [[u32; 8]; 4] {
    [
        core::array::from_fn(|l| group[l].range),
        core::array::from_fn(|l| group[l].code),
        core::array::from_fn(|l| group[l].pos as u32),
        core::array::from_fn(|l| if group[l].bad { u32::MAX } else { 0 }),
    ]
}

/// Writes vectors' worth of words back into the lanes.
fn store_fields(group: &mut [LaneState], v: &[[u32; 8]; 4]) {
    for (l, lane) in group.iter_mut().enumerate() {
        lane.range = v[0][l];
        lane.code = v[1][l];
        lane.pos = v[2][l] as usize;
        lane.bad = v[3][l] != 0;
    }
}

/// The decoding slot of eight lanes: `min(code / r, last_slot)`, exact.
///
/// The quotient is estimated in `f32` (the conversion of `code` and the
/// division each round once, a relative error below 2^-22) and corrected by
/// one step either way from the remainder. Below 2^17 the estimate is within
/// one of the quotient, so the result is exact; above, the estimate stays
/// far above any `last_slot < 2^16` and the clamp makes it exact too.
/// `r` must be in `1 ..= 2^24`.
///
/// # Safety
///
/// The CPU has AVX2.
#[target_feature(enable = "avx2")]
#[inline]
unsafe fn slot(code: __m256i, r: __m256i, last_slot: __m256i) -> __m256i {
    let zero = _mm256_setzero_si256();
    let one = _mm256_set1_epi32(1);
    // code as f32: flip the sign bit, convert signed, add 2^31.
    let code_f = _mm256_add_ps(
        _mm256_cvtepi32_ps(_mm256_xor_si256(code, _mm256_set1_epi32(i32::MIN))),
        _mm256_set1_ps(2_147_483_648.0),
    );
    let q = _mm256_cvttps_epi32(_mm256_div_ps(code_f, _mm256_cvtepi32_ps(r)));
    let rem = _mm256_sub_epi32(code, _mm256_mullo_epi32(q, r));
    // rem < 0: the estimate is one too high; rem >= r: one too low.
    let q = _mm256_add_epi32(q, _mm256_cmpgt_epi32(zero, rem));
    let q = _mm256_sub_epi32(q, _mm256_cmpgt_epi32(rem, _mm256_sub_epi32(r, one)));
    _mm256_min_epu32(q, last_slot)
}

/// Defines one build of the kernel: `G` vectors of eight lanes a pass,
/// `LAYOUT` the tables' layout ([`PACKED`], [`WIDE`] or [`BY_SYMBOL`]).
macro_rules! kernel {
    ($name:ident, $features:literal) => {
        /// One pass over `8 * G` lanes (see the module documentation).
        ///
        /// # Safety
        ///
        /// The CPU has the function's target features, `group` has
        /// `8 * G` lanes, and the bounds of [`decode_rows`] hold.
        #[target_feature(enable = $features)]
        unsafe fn $name<const G: usize, const LAYOUT: u8>(
            group: &mut [LaneState],
            pass: &Pass<'_>,
            chunk: &mut [u8],
        ) {
            let Pass {
                first,
                width,
                buffer,
                tables,
            } = *pass;
            let rows = chunk.len() / width;
            let mut range = [_mm256_setzero_si256(); G];
            let mut code = [_mm256_setzero_si256(); G];
            let mut pos = [_mm256_setzero_si256(); G];
            let mut bad = [_mm256_setzero_si256(); G];
            for g in 0..G {
                let f = fields(&group[8 * g..8 * g + 8]);
                // SAFETY: each array is 32 readable bytes; the loads are unaligned.
                unsafe {
                    range[g] = _mm256_loadu_si256(f[0].as_ptr().cast());
                    code[g] = _mm256_loadu_si256(f[1].as_ptr().cast());
                    pos[g] = _mm256_loadu_si256(f[2].as_ptr().cast());
                    bad[g] = _mm256_loadu_si256(f[3].as_ptr().cast());
                }
            }

            let shift = _mm_cvtsi32_si128(tables.shift as i32);
            let total = _mm256_set1_epi32(tables.total as i32);
            let last_slot = _mm256_set1_epi32(tables.total as i32 - 1);
            let zero = _mm256_setzero_si256();
            let one = _mm256_set1_epi32(1);
            let low16 = _mm256_set1_epi32(0xFFFF);
            let low12 = _mm256_set1_epi32(0xFFF);
            let low8 = _mm256_set1_epi32(0xFF);
            let thirty_two = _mm256_set1_epi32(32);
            // Reverses the bytes of each 32-bit word (little- to big-endian).
            let bswap = _mm256_setr_epi8(
                3, 2, 1, 0, 7, 6, 5, 4, 11, 10, 9, 8, 15, 14, 13, 12, 3, 2, 1, 0, 7, 6, 5, 4, 11,
                10, 9, 8, 15, 14, 13, 12,
            );
            // Low byte of each word to the first four bytes of each half.
            let pack = _mm256_setr_epi8(
                0, 4, 8, 12, -1, -1, -1, -1, -1, -1, -1, -1, -1, -1, -1, -1, 0, 4, 8, 12, -1, -1,
                -1, -1, -1, -1, -1, -1, -1, -1, -1, -1,
            );
            let halves = _mm256_setr_epi32(0, 4, 1, 5, 2, 6, 3, 7);
            let base = buffer.as_ptr().cast::<i32>();
            let slots = tables.slots.as_ptr().cast::<i32>();
            let symbols = tables.symbols.as_ptr().cast::<i32>();

            for row in 0..rows {
                for g in 0..G {
                    // SAFETY: positions stay below `buffer.len() - 3` (caller).
                    let word = unsafe { _mm256_i32gather_epi32::<1>(base, pos[g]) };
                    let word = _mm256_shuffle_epi8(word, bswap);

                    let r = _mm256_srl_epi32(range[g], shift);
                    // SAFETY: the kernel's features include AVX2.
                    let t = unsafe { slot(code[g], r, last_slot) };

                    let (cum, freq, sym) = if LAYOUT == PACKED {
                        // SAFETY: `t < total <= slots.len()`.
                        let entry = unsafe { _mm256_i32gather_epi32::<4>(slots, t) };
                        let cum = _mm256_and_si256(entry, low12);
                        let freq = _mm256_and_si256(_mm256_srli_epi32::<12>(entry), low12);
                        (
                            cum,
                            _mm256_add_epi32(freq, one),
                            _mm256_srli_epi32::<24>(entry),
                        )
                    } else {
                        // SAFETY: `t < total`, and the symbol table has at least
                        // three bytes of padding past `total` for the four-byte
                        // read.
                        let sym = unsafe { _mm256_i32gather_epi32::<1>(symbols, t) };
                        let sym = _mm256_and_si256(sym, low8);
                        let entry = if LAYOUT == BY_SYMBOL {
                            // SAFETY: by symbol, `sym < 256 <= slots.len()`.
                            unsafe { _mm256_i32gather_epi32::<4>(slots, sym) }
                        } else {
                            // SAFETY: `t < total <= slots.len()`.
                            unsafe { _mm256_i32gather_epi32::<4>(slots, t) }
                        };
                        let cum = _mm256_and_si256(entry, low16);
                        let freq = _mm256_add_epi32(_mm256_srli_epi32::<16>(entry), one);
                        (cum, freq, sym)
                    };
                    let offset = _mm256_mullo_epi32(r, cum);
                    let c = _mm256_sub_epi32(code[g], offset);
                    let is_last = _mm256_cmpeq_epi32(_mm256_add_epi32(cum, freq), total);
                    let rg = _mm256_blendv_epi8(
                        _mm256_mullo_epi32(r, freq),
                        _mm256_sub_epi32(range[g], offset),
                        is_last,
                    );

                    // Bytes to take: one below 2^24, two below 2^16.
                    let below24 = _mm256_cmpeq_epi32(_mm256_srli_epi32::<24>(rg), zero);
                    let below16 = _mm256_cmpeq_epi32(_mm256_srli_epi32::<16>(rg), zero);
                    let take = _mm256_sub_epi32(zero, _mm256_add_epi32(below24, below16));
                    let bits = _mm256_slli_epi32::<3>(take);
                    let c = _mm256_or_si256(
                        _mm256_sllv_epi32(c, bits),
                        _mm256_srlv_epi32(word, _mm256_sub_epi32(thirty_two, bits)),
                    );
                    let rg = _mm256_sllv_epi32(rg, bits);
                    pos[g] = _mm256_add_epi32(pos[g], take);
                    // code >= range (unsigned) marks a damaged lane.
                    bad[g] =
                        _mm256_or_si256(bad[g], _mm256_cmpeq_epi32(_mm256_max_epu32(c, rg), c));
                    code[g] = c;
                    range[g] = rg;

                    let packed =
                        _mm256_permutevar8x32_epi32(_mm256_shuffle_epi8(sym, pack), halves);
                    let at = row * width + first + 8 * g;
                    // SAFETY: `chunk` holds `rows * width` bytes and the pass's
                    // columns end within a row, so the eight bytes are in bounds.
                    unsafe {
                        _mm_storel_epi64(
                            chunk.as_mut_ptr().add(at).cast(),
                            _mm256_castsi256_si128(packed),
                        )
                    };
                }
            }

            for g in 0..G {
                let mut v = [[0u32; 8]; 4];
                for (dst, src) in v.iter_mut().zip([range[g], code[g], pos[g], bad[g]]) {
                    // SAFETY: `dst` is 32 writable bytes; the store is unaligned.
                    unsafe { _mm256_storeu_si256(dst.as_mut_ptr().cast(), src) };
                }
                store_fields(&mut group[8 * g..8 * g + 8], &v);
            }
        }
    };
}

kernel!(rows_avx2, "avx2");
kernel!(rows_avx512, "avx2,avx512f,avx512vl");

#[cfg(test)]
pub(crate) mod tests {
    use super::*;
    use alloc::vec::Vec;

    /// The values where the quotient estimate's rounding bites, for every
    /// `(r, last)` case: codes next to multiples of `r`, across the whole
    /// range of `r` (`2^8 ..= 2^24`) and of the quotient, with the clamps of
    /// totals 2^8, 2^12 and 2^16. Shared with the 512-bit kernel's test.
    pub(crate) fn quotient_cases() -> Vec<(u32, u32, Vec<u32>)> {
        let mut rs: Vec<u32> = (8..=24)
            .flat_map(|b| [1u32 << b, (1 << b) + 1, (1 << b) - 1])
            .collect();
        let mut x = 0x9E37_79B9u32;
        for _ in 0..400 {
            x ^= x << 13;
            x ^= x >> 17;
            x ^= x << 5;
            rs.push(256 + x % ((1 << 24) - 256));
        }
        rs.retain(|&r| (256..=1 << 24).contains(&r));
        let mut cases = Vec::new();
        for &r in &rs {
            for last in [255u32, 4095, 65535] {
                let mut codes = Vec::new();
                for m in (0..=u64::from(u32::MAX) / u64::from(r))
                    .step_by(997)
                    .chain([
                        u64::from(last),
                        u64::from(last) + 1,
                        u64::from(u32::MAX) / u64::from(r),
                    ])
                {
                    let base = m * u64::from(r);
                    for d in [-2i64, -1, 0, 1] {
                        let c = base as i64 + d;
                        if (0..=i64::from(u32::MAX)).contains(&c) {
                            codes.push(c as u32);
                        }
                    }
                }
                cases.push((r, last, codes));
            }
        }
        cases
    }

    /// The cases cover what they are for, on any CPU: every `r` in
    /// `2^8 ..= 2^24`, and for each `(r, last)` codes on both sides of a
    /// multiple of `r`, and at and above the clamp where codes reach it.
    pub(crate) fn check_quotient_cases() {
        let cases = quotient_cases();
        assert!(cases.len() > 1000);
        for (r, last, codes) in &cases {
            assert!((256..=1 << 24).contains(r));
            assert!(codes.iter().any(|&c| c % r == r - 1) && codes.iter().any(|&c| c % r == 0));
            if u32::MAX / r > *last {
                assert!(codes.iter().any(|&c| c / r == *last));
                assert!(codes.iter().any(|&c| c / r > *last));
            }
        }
    }

    /// Scalar `min(code / r, last)` against the vector estimate, on
    /// [`quotient_cases`].
    #[test]
    fn slot_is_the_exact_clamped_quotient() {
        check_quotient_cases();
        if !Kernel::Avx2.supported() {
            std::eprintln!("skipped: the 256-bit slot estimate (this CPU lacks AVX2)");
            return;
        }
        let mut checked = 0u64;
        for (r, last, codes) in quotient_cases() {
            for chunk in codes.chunks(8) {
                let mut c = [0u32; 8];
                c[..chunk.len()].copy_from_slice(chunk);
                let mut got = [0u32; 8];
                // SAFETY: AVX2 is available (checked above); the arrays are
                // 32 bytes each.
                unsafe {
                    let v = slot(
                        _mm256_loadu_si256(c.as_ptr().cast()),
                        _mm256_set1_epi32(r as i32),
                        _mm256_set1_epi32(last as i32),
                    );
                    _mm256_storeu_si256(got.as_mut_ptr().cast(), v);
                }
                for l in 0..8 {
                    assert_eq!(got[l], (c[l] / r).min(last), "code {} r {r}", c[l]);
                }
                checked += 8;
            }
        }
        assert!(checked > 1_000_000);
    }
}
