//! The 512-bit build of the byte-table lane decoder (x86-64 with AVX-512 F
//! and BW): sixteen lanes per vector.
//!
//! Each step is the one of [`decode`](super::decode), on vectors
//! twice as wide, so a row of 32 lanes takes half the instructions:
//!
//! 1. `r = range >> log2_total`; the slot `t = min(code / r, total - 1)`,
//!    estimated in `f32`. The step goes on from the estimate, which is
//!    within one of `t`; when that leaves some lane's `code` outside its new
//!    range (the estimate fell into another span, see [`estimate`]), the
//!    vector's step is redone from the exact slot (see [`slot`]). Either
//!    way each lane narrows exactly as the scalar step does, and the
//!    integer correction, a multiplication and four operations long, is
//!    off the chain of dependent instructions on most steps.
//! 2. One gather reads the slot's packed entry (and, for totals above
//!    2^12, a second one the symbol).
//! 3. `code -= r * cum`; `range = r * freq`, or `range - r * cum` for the
//!    last symbol of the table.
//! 4. Renormalisation takes zero, one or two bytes per lane from a
//!    big-endian word gathered at the lane's position before the step.
//!
//! Comparisons yield AVX-512 mask registers, so lane selection, the damage
//! flag and the byte counts need no extra blend instructions, and sixteen
//! decoded symbols narrow to bytes in one instruction.
//!
//! Invariant, kept by the caller (`decode::decode_rows` asserts it): no
//! position can pass `buffer.len() - 4` during the call, so every four-byte
//! gather reads inside the buffer.
#![allow(unsafe_code)]

use core::arch::x86_64::*;

use super::decode::{BY_SYMBOL, PACKED};
use crate::coder::lanes::decode::{DecodeTables, LaneState};

/// Whether the running CPU has this kernel's instructions.
pub(crate) fn supported() -> bool {
    #[cfg(feature = "std")]
    {
        std::is_x86_feature_detected!("avx512f") && std::is_x86_feature_detected!("avx512bw")
    }
    #[cfg(not(feature = "std"))]
    {
        cfg!(all(target_feature = "avx512f", target_feature = "avx512bw"))
    }
}

/// The decoding slot of sixteen lanes: `min(code / r, last_slot)`, exact.
///
/// `code` converts to `f32` with one rounding (relative error at most
/// 2^-24) and the division rounds once more, so the estimate is within one
/// of the quotient wherever the quotient is below 2^17; the remainder
/// `code - q * r` tells which way to correct it. Above 2^17 the estimate
/// stays far above any `last_slot < 2^16` and the clamp makes the result
/// exact too. `r` must be in `1 ..= 2^24`.
///
/// # Safety
///
/// The CPU has AVX-512 F.
#[target_feature(enable = "avx512f")]
#[inline]
unsafe fn slot(code: __m512i, r: __m512i, last_slot: __m512i) -> __m512i {
    let one = _mm512_set1_epi32(1);
    let q = _mm512_cvttps_epu32(_mm512_div_ps(
        _mm512_cvtepu32_ps(code),
        _mm512_cvtepu32_ps(r),
    ));
    let rem = _mm512_sub_epi32(code, _mm512_mullo_epi32(q, r));
    // rem < 0: the estimate is one too high; rem >= r: one too low.
    let high = _mm512_cmplt_epi32_mask(rem, _mm512_setzero_si512());
    let low = _mm512_cmpge_epi32_mask(rem, r);
    let q = _mm512_mask_sub_epi32(q, high, q, one);
    let q = _mm512_mask_add_epi32(q, low, q, one);
    _mm512_min_epu32(q, last_slot)
}

/// The slot estimate of [`slot`] without its correction:
/// `min(q, last_slot)` for the rounded quotient `q`, within one of the
/// exact clamped quotient `t`.
///
/// A step from a slot one off narrows exactly as from `t` when both slots
/// are in one span (same entry). In another span it leaves `code - r * cum`
/// at or above the new range: one past `t` starts a span at `t + 1`, so
/// the difference wraps below zero, to at least `2^32 - r`, above any
/// range that fits below `2^32` together with `r * cum`; one before `t`
/// ends a span at `t`, so the difference is at least `r * freq`, and that
/// span is not the last. The kernel takes the estimate when no lane shows
/// this, and otherwise redoes the step from the exact slot.
///
/// # Safety
///
/// The CPU has AVX-512 F.
#[target_feature(enable = "avx512f")]
#[inline]
unsafe fn estimate(code: __m512i, r: __m512i, last_slot: __m512i) -> __m512i {
    let q = _mm512_cvttps_epu32(_mm512_div_ps(
        _mm512_cvtepu32_ps(code),
        _mm512_cvtepu32_ps(r),
    ));
    _mm512_min_epu32(q, last_slot)
}

/// Where the kernel looks slots up.
struct Lookup {
    slots: *const u32,
    symbols: *const u8,
    total: __m512i,
}

/// Step 2 and 3 of a step from slot `t`: the new `code` (before
/// renormalisation), the new `range` and the symbol, for the tables'
/// `LAYOUT`.
///
/// # Safety
///
/// The CPU has AVX-512 F and BW; every lane of `t` is below the tables'
/// total, the slots' entries (by symbol: the symbols' entries) are
/// readable and the symbol table has three readable bytes past the total.
#[target_feature(enable = "avx512f,avx512bw")]
#[inline]
unsafe fn narrow<const LAYOUT: u8>(
    code: __m512i,
    range: __m512i,
    r: __m512i,
    t: __m512i,
    at: &Lookup,
) -> (__m512i, __m512i, __m512i) {
    let one = _mm512_set1_epi32(1);
    let low16 = _mm512_set1_epi32(0xFFFF);
    let low12 = _mm512_set1_epi32(0xFFF);
    let low8 = _mm512_set1_epi32(0xFF);
    let (cum, freq, sym) = if LAYOUT == PACKED {
        // SAFETY: `t` is below the total (caller).
        let entry = unsafe { _mm512_i32gather_epi32::<4>(t, at.slots.cast()) };
        let cum = _mm512_and_si512(entry, low12);
        let freq = _mm512_and_si512(_mm512_srli_epi32::<12>(entry), low12);
        (
            cum,
            _mm512_add_epi32(freq, one),
            _mm512_srli_epi32::<24>(entry),
        )
    } else {
        // SAFETY: as for the entry; the symbol table has at least three
        // bytes of padding past the total.
        let sym = unsafe { _mm512_i32gather_epi32::<1>(t, at.symbols.cast()) };
        let sym = _mm512_and_si512(sym, low8);
        let entry = if LAYOUT == BY_SYMBOL {
            // SAFETY: by symbol, `sym < 256` and the symbols' entries are
            // readable.
            unsafe { _mm512_i32gather_epi32::<4>(sym, at.slots.cast()) }
        } else {
            // SAFETY: `t` is below the total.
            unsafe { _mm512_i32gather_epi32::<4>(t, at.slots.cast()) }
        };
        let cum = _mm512_and_si512(entry, low16);
        let freq = _mm512_add_epi32(_mm512_srli_epi32::<16>(entry), one);
        (cum, freq, sym)
    };
    let offset = _mm512_mullo_epi32(r, cum);
    let c = _mm512_sub_epi32(code, offset);
    let is_last = _mm512_cmpeq_epi32_mask(_mm512_add_epi32(cum, freq), at.total);
    let rg = _mm512_mask_blend_epi32(
        is_last,
        _mm512_mullo_epi32(r, freq),
        _mm512_sub_epi32(range, offset),
    );
    (c, rg, sym)
}

/// Decodes whole rows of `chunk` for the lanes `first .. first + 16 * G`
/// of `width`; see the module documentation.
///
/// # Safety
///
/// The CPU has AVX-512 F and BW, `group` has `16 * G` lanes starting at
/// column `first` of rows `width` bytes wide, `chunk` holds whole rows, and
/// every lane position stays below `buffer.len() - 3` for the rows of
/// `chunk`; slot entries lie below `tables.slots.len()` for every slot
/// below `tables.total` (by symbol: for every symbol), and the symbol
/// table has three bytes past it.
#[target_feature(enable = "avx512f,avx512bw")]
pub(crate) unsafe fn rows<const G: usize, const LAYOUT: u8>(
    group: &mut [LaneState],
    first: usize,
    width: usize,
    buffer: &[u8],
    tables: &DecodeTables,
    chunk: &mut [u8],
) {
    let rows = chunk.len() / width;
    let mut range = [_mm512_setzero_si512(); G];
    let mut code = [_mm512_setzero_si512(); G];
    let mut pos = [_mm512_setzero_si512(); G];
    let mut bad = [0 as __mmask16; G];
    for g in 0..G {
        let lanes = &group[16 * g..16 * g + 16];
        let r: [u32; 16] = core::array::from_fn(|l| lanes[l].range);
        let c: [u32; 16] = core::array::from_fn(|l| lanes[l].code);
        let p: [u32; 16] = core::array::from_fn(|l| lanes[l].pos as u32);
        // SAFETY: each array is 64 readable bytes; the loads are unaligned.
        unsafe {
            range[g] = _mm512_loadu_si512(r.as_ptr().cast());
            code[g] = _mm512_loadu_si512(c.as_ptr().cast());
            pos[g] = _mm512_loadu_si512(p.as_ptr().cast());
        }
        bad[g] = lanes
            .iter()
            .enumerate()
            .fold(0, |m, (l, lane)| m | u16::from(lane.bad) << l);
    }

    let shift = _mm_cvtsi32_si128(tables.shift as i32);
    let total = _mm512_set1_epi32(tables.total as i32);
    let last_slot = _mm512_set1_epi32(tables.total as i32 - 1);
    let one = _mm512_set1_epi32(1);
    let top24 = _mm512_set1_epi32(1 << 24);
    let top16 = _mm512_set1_epi32(1 << 16);
    let thirty_two = _mm512_set1_epi32(32);
    // Reverses the bytes of each 32-bit word (little- to big-endian).
    let bswap = _mm512_set4_epi32(0x0C0D_0E0F, 0x0809_0A0B, 0x0405_0607, 0x0001_0203);
    let base = buffer.as_ptr();
    let at = Lookup {
        slots: tables.slots.as_ptr(),
        symbols: tables.symbols.as_ptr(),
        total,
    };

    for row in 0..rows {
        for g in 0..G {
            // SAFETY: positions stay below `buffer.len() - 3` (caller).
            let word = unsafe { _mm512_i32gather_epi32::<1>(pos[g], base.cast()) };
            let word = _mm512_shuffle_epi8(word, bswap);

            let r = _mm512_srl_epi32(range[g], shift);
            // The slot from the quotient estimate alone, then its check: a
            // slot one off in the same span has the same entry (same step),
            // one in another span leaves `code` outside the new range (see
            // `estimate`), and then the step is redone from the exact slot.
            // SAFETY: the function's features include AVX-512 F and BW, and
            // every slot is below `total` (the tables' bounds, caller).
            let (mut c, mut rg, mut sym) = unsafe {
                narrow::<LAYOUT>(code[g], range[g], r, estimate(code[g], r, last_slot), &at)
            };
            if _mm512_cmpge_epu32_mask(c, rg) != 0 {
                // SAFETY: as above.
                (c, rg, sym) = unsafe {
                    narrow::<LAYOUT>(code[g], range[g], r, slot(code[g], r, last_slot), &at)
                };
            }

            // Bytes to take: one below 2^24, two below 2^16.
            let below24 = _mm512_cmplt_epu32_mask(rg, top24);
            let below16 = _mm512_cmplt_epu32_mask(rg, top16);
            let take = _mm512_maskz_mov_epi32(below24, one);
            let take = _mm512_mask_add_epi32(take, below16, take, one);
            let bits = _mm512_slli_epi32::<3>(take);
            let c = _mm512_or_si512(
                _mm512_sllv_epi32(c, bits),
                _mm512_srlv_epi32(word, _mm512_sub_epi32(thirty_two, bits)),
            );
            let rg = _mm512_sllv_epi32(rg, bits);
            pos[g] = _mm512_add_epi32(pos[g], take);
            // code >= range (unsigned) marks a damaged lane.
            bad[g] |= _mm512_cmpge_epu32_mask(c, rg);
            code[g] = c;
            range[g] = rg;

            let bytes = _mm512_cvtepi32_epi8(sym);
            let col = row * width + first + 16 * g;
            let out: &mut [u8; 16] = (&mut chunk[col..col + 16])
                .try_into()
                .expect("a row holds the group's columns");
            // SAFETY: `out` is 16 writable bytes; the store is unaligned.
            unsafe { _mm_storeu_si128(out.as_mut_ptr().cast(), bytes) };
        }
    }

    for g in 0..G {
        let mut v = [[0u32; 16]; 3];
        for (dst, src) in v.iter_mut().zip([range[g], code[g], pos[g]]) {
            // SAFETY: `dst` is 64 writable bytes; the store is unaligned.
            unsafe { _mm512_storeu_si512(dst.as_mut_ptr().cast(), src) };
        }
        for (l, lane) in group[16 * g..16 * g + 16].iter_mut().enumerate() {
            lane.range = v[0][l];
            lane.code = v[1][l];
            lane.pos = v[2][l] as usize;
            lane.bad = bad[g] >> l & 1 == 1;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Scalar `min(code / r, last)` against the vector estimate, on the
    /// values where rounding bites (the cases of the 256-bit kernel's test).
    #[test]
    fn slot_is_the_exact_clamped_quotient() {
        crate::coder::lanes::simd::decode::tests::check_quotient_cases();
        if !supported() {
            std::eprintln!("skipped: the 512-bit slot estimate (this CPU lacks AVX-512 F and BW)");
            return;
        }
        let mut checked = 0u64;
        for (r, last, codes) in crate::coder::lanes::simd::decode::tests::quotient_cases() {
            for chunk in codes.chunks(16) {
                let mut c = [0u32; 16];
                c[..chunk.len()].copy_from_slice(chunk);
                let mut got = [0u32; 16];
                // SAFETY: AVX-512 F is available (checked above); the
                // arrays are 64 bytes each.
                unsafe {
                    let v = slot(
                        _mm512_loadu_si512(c.as_ptr().cast()),
                        _mm512_set1_epi32(r as i32),
                        _mm512_set1_epi32(last as i32),
                    );
                    _mm512_storeu_si512(got.as_mut_ptr().cast(), v);
                }
                for l in 0..16 {
                    assert_eq!(got[l], (c[l] / r).min(last), "code {} r {r}", c[l]);
                }
                checked += 16;
            }
        }
        assert!(checked > 1_000_000);
    }

    /// The uncorrected estimate is within one of the exact clamped
    /// quotient on the same values (the bound the kernel's check relies
    /// on), and is off somewhere (so the check has work to do).
    #[test]
    fn estimate_is_within_one_of_the_slot() {
        if !supported() {
            return;
        }
        let mut off = 0u64;
        for (r, last, codes) in crate::coder::lanes::simd::decode::tests::quotient_cases() {
            for chunk in codes.chunks(16) {
                let mut c = [0u32; 16];
                c[..chunk.len()].copy_from_slice(chunk);
                let mut got = [0u32; 16];
                // SAFETY: AVX-512 F is available (checked above); the
                // arrays are 64 bytes each.
                unsafe {
                    let v = estimate(
                        _mm512_loadu_si512(c.as_ptr().cast()),
                        _mm512_set1_epi32(r as i32),
                        _mm512_set1_epi32(last as i32),
                    );
                    _mm512_storeu_si512(got.as_mut_ptr().cast(), v);
                }
                for l in 0..16 {
                    let exact = (c[l] / r).min(last);
                    assert!(got[l].abs_diff(exact) <= 1, "code {} r {r}", c[l]);
                    off += u64::from(got[l] != exact);
                }
            }
        }
        assert!(off > 0);
    }
}
