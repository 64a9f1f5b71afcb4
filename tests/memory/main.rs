//! Memory use, measured: a counting global allocator records the live heap
//! bytes of the whole process, so every test of this binary that measures
//! (the container's hostile headers, the engines' tables, the fuzz checks
//! replayed on kept inputs) takes the one lock of [`serial`] and runs alone.
//! The allocator and the fuzz checks are those of the fuzz targets
//! (`tests/fuzz_support/`).
#![cfg(feature = "std")]

use std::sync::{Mutex, MutexGuard};

#[path = "../fuzz_support/mod.rs"]
mod fuzz_support;

mod cm_memory;
mod container_alloc;
mod fuzz_regressions;

#[global_allocator]
static ALLOC: fuzz_support::alloc::Counting = fuzz_support::alloc::Counting;

static SERIAL: Mutex<()> = Mutex::new(());

/// Holds the binary's one lock while a test measures, so that the peaks it
/// reads are its own (a test that failed while holding it leaves it usable).
fn serial() -> MutexGuard<'static, ()> {
    SERIAL.lock().unwrap_or_else(|e| e.into_inner())
}
