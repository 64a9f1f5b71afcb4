//! The history engine's machine-level kernels: a cache hint, and the dot
//! product and training step of the mixer's `i16` rows.
//!
//! The engine knows some addresses a bit or two before it reads them (the
//! next bit's refinement curves, the low nibble's slot buckets).
//! A plain early read would hold up the instructions behind it until its
//! line arrives; a prefetch instruction retires at once and the line comes
//! in while the current bit is mixed and coded ([`prefetch`]).
//!
//! [`dot`] sums `x_i · w_i` over a row of 16 `i16` pairs with SSE2's
//! multiply-add of `i16` pairs (`pmaddwd`, part of every x86-64
//! processor), two multiply-adds a row where the compiler's own code takes
//! one multiply a pair; elsewhere a plain loop computes the same sum.
//! [`train`] adds the rounded `(x_i · err + 2^15) >> 16` to each weight,
//! saturated, eight lanes at a time: the high half of the `i16` product
//! plus bit 15 of its low half is exactly that rounded step, and the
//! saturating add is exactly the clamp.
//!
//! Invariants: the hint only names an element of a slice (so the address is
//! in bounds) and changes no value: output is the same with or without it,
//! and on targets without the instruction it does nothing. Both forms of
//! `dot` give the exact integer sum (it fits an `i32` for `i16` inputs of
//! at most ±2047, see the mixer), and both forms of `train` the same
//! weights, so output never depends on the target.
#![allow(unsafe_code)]

/// Length of a mixer row.
pub(crate) const ROW: usize = 16;

/// Hints that `s[i]` will be read soon (nothing when `i` is out of bounds).
#[inline(always)]
pub(crate) fn prefetch<T>(s: &[T], i: usize) {
    #[cfg(target_arch = "x86_64")]
    {
        if let Some(e) = s.get(i) {
            let p = e as *const T as *const i8;
            // SAFETY: the prefetch instruction reads nothing
            // architecturally and cannot fault; `p` points into a live
            // slice anyway. SSE is part of every x86-64 target.
            unsafe { core::arch::x86_64::_mm_prefetch(p, core::arch::x86_64::_MM_HINT_T0) };
        }
    }
    #[cfg(not(target_arch = "x86_64"))]
    {
        let _ = (s, i);
    }
}

/// `Σ x_i w_i` over a whole row.
#[inline(always)]
pub(crate) fn dot(x: &[i16; ROW], w: &[i16; ROW]) -> i32 {
    #[cfg(all(target_arch = "x86_64", target_feature = "sse2"))]
    {
        // SAFETY: SSE2 is enabled for this build (the cfg above), and the
        // kernel reads only its two arrays.
        unsafe { dot_sse2(x, w) }
    }
    #[cfg(not(all(target_arch = "x86_64", target_feature = "sse2")))]
    {
        dot_plain(x, w)
    }
}

#[cfg(all(target_arch = "x86_64", target_feature = "sse2"))]
#[target_feature(enable = "sse2")]
#[inline]
fn dot_sse2(x: &[i16; ROW], w: &[i16; ROW]) -> i32 {
    use core::arch::x86_64::*;
    let mut acc = _mm_setzero_si128();
    for j in 0..ROW / 8 {
        // SAFETY: `8 * j + 8 <= ROW`: sixteen bytes inside each array.
        let (a, b) = unsafe {
            (
                _mm_loadu_si128(x.as_ptr().add(8 * j) as *const __m128i),
                _mm_loadu_si128(w.as_ptr().add(8 * j) as *const __m128i),
            )
        };
        acc = _mm_add_epi32(acc, _mm_madd_epi16(a, b));
    }
    let acc = _mm_add_epi32(acc, _mm_shuffle_epi32::<0b01_00_11_10>(acc));
    let acc = _mm_add_epi32(acc, _mm_shuffle_epi32::<0b10_11_00_01>(acc));
    _mm_cvtsi128_si32(acc)
}

/// `w_i += round(x_i · err / 2^16)` over a whole row, saturated to `i16`
/// (`err` within ±32767).
#[inline(always)]
pub(crate) fn train(x: &[i16; ROW], w: &mut [i16; ROW], err: i32) {
    #[cfg(all(target_arch = "x86_64", target_feature = "sse2"))]
    {
        // SAFETY: SSE2 is enabled for this build (the cfg above), and the
        // kernel touches only its two arrays.
        unsafe { train_sse2(x, w, err as i16) }
    }
    #[cfg(not(all(target_arch = "x86_64", target_feature = "sse2")))]
    {
        train_plain(x, w, err)
    }
}

/// The product's high half plus bit 15 of its low half is the rounded
/// `(x · err + 2^15) >> 16`; the saturating add is the clamp.
#[cfg(all(target_arch = "x86_64", target_feature = "sse2"))]
#[target_feature(enable = "sse2")]
#[inline]
fn train_sse2(x: &[i16; ROW], w: &mut [i16; ROW], err: i16) {
    use core::arch::x86_64::*;
    let e = _mm_set1_epi16(err);
    for j in 0..ROW / 8 {
        // SAFETY: `8 * j + 8 <= ROW`: sixteen bytes inside each array.
        unsafe {
            let xv = _mm_loadu_si128(x.as_ptr().add(8 * j) as *const __m128i);
            let at = w.as_mut_ptr().add(8 * j) as *mut __m128i;
            let step = _mm_add_epi16(
                _mm_mulhi_epi16(xv, e),
                _mm_srli_epi16::<15>(_mm_mullo_epi16(xv, e)),
            );
            _mm_storeu_si128(at, _mm_adds_epi16(_mm_loadu_si128(at), step));
        }
    }
}

/// The plain loop of [`train`].
#[cfg_attr(all(target_arch = "x86_64", target_feature = "sse2"), allow(dead_code))]
fn train_plain(x: &[i16; ROW], w: &mut [i16; ROW], err: i32) {
    for (wi, &xi) in w.iter_mut().zip(x) {
        let step = (i32::from(xi) * err + (1 << 15)) >> 16;
        *wi = (i32::from(*wi) + step).clamp(-32768, 32767) as i16;
    }
}

/// The plain loop of [`dot`].
#[cfg_attr(all(target_arch = "x86_64", target_feature = "sse2"), allow(dead_code))]
fn dot_plain(x: &[i16; ROW], w: &[i16; ROW]) -> i32 {
    x.iter()
        .zip(w)
        .map(|(&a, &b)| i32::from(a) * i32::from(b))
        .sum()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn dot_is_the_plain_sum() {
        let mut x = [0i16; ROW];
        let mut w = [0i16; ROW];
        for i in 0..ROW {
            x[i] = if i % 3 == 0 { 2047 } else { -(i as i16) * 127 };
            w[i] = if i % 2 == 0 { 32767 } else { -32768 + i as i16 };
        }
        let want: i32 = (0..ROW).map(|i| i32::from(x[i]) * i32::from(w[i])).sum();
        assert_eq!(dot(&x, &w), want);
        assert_eq!(dot_plain(&x, &w), want);
    }

    #[test]
    fn train_is_the_plain_step() {
        let mut x = [0i16; ROW];
        for (i, v) in x.iter_mut().enumerate() {
            *v = (i as i16 * 523 % 4095) - 2047;
        }
        for err in [-32767, -30_001, -1, 0, 1, 77, 4096, 32767] {
            let mut a = [0i16; ROW];
            for (i, v) in a.iter_mut().enumerate() {
                *v = [32767, -32768, 0, 1, -1, 1234, -20_000, 31_000][i % 8];
            }
            let mut b = a;
            train(&x, &mut a, err);
            train_plain(&x, &mut b, err);
            assert_eq!(a, b, "err {err}");
        }
    }
}
