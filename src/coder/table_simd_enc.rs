//! The AVX2 kernel of the byte-table lane encoder: eight lanes per vector.
//!
//! One pass codes one symbol in each of eight lanes, exactly as the scalar
//! `encode_step` in `lane_enc` does:
//!
//! 1. A gather reads each byte's packed `cum | (freq - 1) << 16`.
//! 2. `r = range >> log2_total`; `low += r * cum`, with the lanes whose
//!    32-bit `low` wrapped around noted as carries; `range = r * freq`, or
//!    `range - r * cum` for the last symbol of the table.
//! 3. Renormalisation: a lane whose range fell below 2^24 releases one byte,
//!    below 2^16 two. The kernel always stores the top two bytes of `low` at
//!    the lane's position and advances the position by the count released,
//!    so a byte not released is overwritten by the next store.
//! 4. A carry adds one into the bytes the lane wrote before this step (the
//!    scalar `propagate_carry`); it never reaches the bytes stored in step 3,
//!    which sit at and after the position.
//!
//! The output is byte-identical to the scalar steps (tested), whatever the
//! CPU. Every output buffer access is a bounds-checked slice operation; the
//! `unsafe` is the vector instructions: loads and stores of the kernel's
//! own 32-byte arrays, an 8-byte load from a row slice checked to hold it,
//! and a gather from the 256-entry table indexed by byte values.
#![allow(unsafe_code)]

use alloc::vec::Vec;
use core::arch::x86_64::*;

use crate::coder::lane_enc::propagate_carry;

/// Whether the running CPU has AVX2.
pub(crate) fn available() -> bool {
    crate::coder::table_simd::Kernel::Avx2.supported()
}

/// One group of eight lanes: their states, positions and buffers.
pub(crate) struct Group<'a> {
    pub(crate) low: [u32; 8],
    pub(crate) range: [u32; 8],
    pub(crate) pos: [usize; 8],
    pub(crate) bufs: &'a mut [Vec<u8>],
}

/// Codes `rows` (row-major, `width` bytes a row) for the eight lanes of
/// `group`, which are columns `first .. first + 8`. `entry` holds, per byte
/// value, `cum | (freq - 1) << 16` (every byte in `rows` must have a non-zero
/// frequency); `shift` is `log2(total)`.
///
/// # Panics
///
/// When AVX2 is missing, the group does not have eight buffers, or a row is
/// shorter than `first + 8` bytes. A buffer too short for the bytes a lane
/// releases panics on the slice bounds check (the lane encoder sizes them
/// at two bytes a symbol).
#[allow(clippy::too_many_arguments)]
pub(crate) fn encode_rows(
    group: &mut Group<'_>,
    rows: &[u8],
    width: usize,
    first: usize,
    entry: &[u32; 256],
    shift: u32,
    total: u32,
) {
    assert!(available());
    assert_eq!(group.bufs.len(), 8);
    assert!(first + 8 <= width && rows.len().is_multiple_of(width));
    // SAFETY: AVX2 is available (asserted above).
    unsafe { rows_avx2(group, rows, width, first, entry, shift, total) }
}

#[target_feature(enable = "avx2")]
#[allow(clippy::too_many_arguments)]
unsafe fn rows_avx2(
    group: &mut Group<'_>,
    rows: &[u8],
    width: usize,
    first: usize,
    entry: &[u32; 256],
    shift: u32,
    total: u32,
) {
    // SAFETY (all loads and stores below): the arrays are exactly 32 bytes
    // and the unaligned forms are used.
    let mut low = unsafe { _mm256_loadu_si256(group.low.as_ptr().cast()) };
    let mut range = unsafe { _mm256_loadu_si256(group.range.as_ptr().cast()) };
    let count = _mm_cvtsi32_si128(shift as i32);
    let total = _mm256_set1_epi32(total as i32);
    let one = _mm256_set1_epi32(1);
    let zero = _mm256_setzero_si256();
    let low16 = _mm256_set1_epi32(0xFFFF);
    let sign = _mm256_set1_epi32(i32::MIN);
    let second = _mm256_set1_epi32(0xFF00);
    let table = entry.as_ptr().cast::<i32>();
    let mut pos = group.pos;
    let mut pairs = [0u32; 8];

    for row in rows.chunks_exact(width) {
        let cols: &[u8; 8] = row[first..first + 8]
            .try_into()
            .expect("a row holds the group's columns");
        let bytes = _mm_loadl_epi64(cols.as_ptr().cast());
        // SAFETY: every index is a byte value, below the table's 256 entries.
        let e = unsafe { _mm256_i32gather_epi32::<4>(table, _mm256_cvtepu8_epi32(bytes)) };
        let cum = _mm256_and_si256(e, low16);
        let freq = _mm256_add_epi32(_mm256_srli_epi32::<16>(e), one);

        let r = _mm256_srl_epi32(range, count);
        let offset = _mm256_mullo_epi32(r, cum);
        let sum = _mm256_add_epi32(low, offset);
        // Unsigned sum < low: the addition wrapped, a carry.
        let carry = _mm256_cmpgt_epi32(_mm256_xor_si256(low, sign), _mm256_xor_si256(sum, sign));
        let is_last = _mm256_cmpeq_epi32(_mm256_add_epi32(cum, freq), total);
        let rg = _mm256_blendv_epi8(
            _mm256_mullo_epi32(r, freq),
            _mm256_sub_epi32(range, offset),
            is_last,
        );

        let below24 = _mm256_cmpeq_epi32(_mm256_srli_epi32::<24>(rg), zero);
        let below16 = _mm256_cmpeq_epi32(_mm256_srli_epi32::<16>(rg), zero);
        let bits =
            _mm256_slli_epi32::<3>(_mm256_sub_epi32(zero, _mm256_add_epi32(below24, below16)));
        // The top two bytes of the new low, in stream order, as a u16.
        let pair = _mm256_or_si256(
            _mm256_srli_epi32::<24>(sum),
            _mm256_and_si256(_mm256_srli_epi32::<8>(sum), second),
        );
        low = _mm256_sllv_epi32(sum, bits);
        range = _mm256_sllv_epi32(rg, bits);

        unsafe { _mm256_storeu_si256(pairs.as_mut_ptr().cast(), pair) };
        let carries = _mm256_movemask_ps(_mm256_castsi256_ps(carry)) as u32;
        let one_byte = _mm256_movemask_ps(_mm256_castsi256_ps(below24)) as u32;
        let two_bytes = _mm256_movemask_ps(_mm256_castsi256_ps(below16)) as u32;
        let mut c = carries;
        while c != 0 {
            let l = c.trailing_zeros() as usize;
            propagate_carry(&mut group.bufs[l], pos[l]);
            c &= c - 1;
        }
        for l in 0..8 {
            let p = pos[l];
            group.bufs[l][p..p + 2].copy_from_slice(&(pairs[l] as u16).to_le_bytes());
            pos[l] = p + (one_byte >> l & 1) as usize + (two_bytes >> l & 1) as usize;
        }
    }

    unsafe {
        _mm256_storeu_si256(group.low.as_mut_ptr().cast(), low);
        _mm256_storeu_si256(group.range.as_mut_ptr().cast(), range);
    }
    group.pos = pos;
}
