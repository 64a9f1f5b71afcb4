//! A cache hint: ask for the line holding an element of a slice before the
//! engine needs it.
//!
//! The history engine knows some addresses a bit or two before it reads
//! them (the next bit's refinement curves, the low nibble's slot buckets).
//! A plain early read would hold up the instructions behind it until its
//! line arrives; a prefetch instruction retires at once and the line comes
//! in while the current bit is mixed and coded.
//!
//! Invariant: the hint only names an element of a slice (so the address is
//! in bounds) and changes no value: output is the same with or without it,
//! and on targets without the instruction it does nothing.
#![allow(unsafe_code)]

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
