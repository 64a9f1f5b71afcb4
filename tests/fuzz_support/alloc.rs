//! A counting global allocator: live heap bytes and their peak.
//!
//! A binary that wants the counts installs it with
//! `#[global_allocator] static A: Counting = Counting;`; without that,
//! [`peak_during`] reports 0 and the memory checks pass trivially, so every
//! binary using the checks must install it (the fuzz targets and the
//! regression test do). A reallocation counts the old and the new block as
//! live at once, as a moving reallocation has them.

use std::alloc::{GlobalAlloc, Layout, System};
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};

/// The counting allocator; forwards everything to [`System`].
#[derive(Debug)]
pub struct Counting;

static LIVE: AtomicUsize = AtomicUsize::new(0);
static PEAK: AtomicUsize = AtomicUsize::new(0);
static INSTALLED: AtomicBool = AtomicBool::new(false);

fn grew(by: usize) {
    let now = LIVE.fetch_add(by, Ordering::Relaxed) + by;
    PEAK.fetch_max(now, Ordering::Relaxed);
}

// SAFETY: every method forwards its arguments unchanged to the system
// allocator and only updates counters besides.
unsafe impl GlobalAlloc for Counting {
    unsafe fn alloc(&self, layout: Layout) -> *mut u8 {
        INSTALLED.store(true, Ordering::Relaxed);
        // SAFETY: the caller's contract is passed on unchanged.
        let p = unsafe { System.alloc(layout) };
        if !p.is_null() {
            grew(layout.size());
        }
        p
    }

    unsafe fn alloc_zeroed(&self, layout: Layout) -> *mut u8 {
        INSTALLED.store(true, Ordering::Relaxed);
        // SAFETY: the caller's contract is passed on unchanged.
        let p = unsafe { System.alloc_zeroed(layout) };
        if !p.is_null() {
            grew(layout.size());
        }
        p
    }

    unsafe fn dealloc(&self, ptr: *mut u8, layout: Layout) {
        // SAFETY: the caller's contract is passed on unchanged.
        unsafe { System.dealloc(ptr, layout) };
        LIVE.fetch_sub(layout.size(), Ordering::Relaxed);
    }

    unsafe fn realloc(&self, ptr: *mut u8, layout: Layout, new_size: usize) -> *mut u8 {
        // Counted as if the new block were taken before the old one is
        // given back.
        grew(new_size);
        // SAFETY: the caller's contract is passed on unchanged.
        let p = unsafe { System.realloc(ptr, layout, new_size) };
        if p.is_null() {
            LIVE.fetch_sub(new_size, Ordering::Relaxed);
        } else {
            LIVE.fetch_sub(layout.size(), Ordering::Relaxed);
        }
        p
    }
}

/// Runs `f` and returns its result with the peak of live heap bytes above
/// the level at the start.
///
/// # Panics
///
/// If [`Counting`] is not the global allocator (nothing would be counted).
pub fn peak_during<T>(f: impl FnOnce() -> T) -> (T, usize) {
    let probe = std::hint::black_box(Box::new(0u8));
    drop(probe);
    assert!(
        INSTALLED.load(Ordering::Relaxed),
        "install `Counting` as the global allocator to measure memory"
    );
    let base = LIVE.load(Ordering::Relaxed);
    PEAK.store(base, Ordering::Relaxed);
    let r = f();
    let peak = PEAK.load(Ordering::Relaxed).saturating_sub(base);
    (r, peak)
}
