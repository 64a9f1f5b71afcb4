//! The one thread pool the checks' two-thread cases run in.
//!
//! The library spreads blocks over the pool it is called from when the
//! thread count asked for equals that pool's size, and otherwise builds a
//! pool of its own for the call (a count of 0 means every core). Fuzz
//! inputs are small and many: a pool built per call would cost more than
//! the coding, and its size would follow the machine. So the checks ask
//! for one or two threads only, and run the two-thread cases inside one
//! pool of [`TWO`] threads built once per process, where asking for two
//! threads uses it: every machine runs the same cases the same way, and a
//! fuzzer process never has more than three threads busy.
//!
//! Invariant: the pool is built on first use and lives as long as the
//! process; [`warm_up`] builds it ahead of a memory measurement, so that
//! its own allocations are not counted as the decoder's.

use std::sync::OnceLock;

use rayon::{ThreadPool, ThreadPoolBuilder};

/// Threads of the shared pool: what a check's "two threads" means.
pub const TWO: usize = 2;

fn pool() -> Option<&'static ThreadPool> {
    static POOL: OnceLock<Option<ThreadPool>> = OnceLock::new();
    POOL.get_or_init(|| ThreadPoolBuilder::new().num_threads(TWO).build().ok())
        .as_ref()
}

/// Builds the shared pool if it is not built yet.
pub fn warm_up() {
    let _ = pool();
}

/// Runs `f`, inside the shared pool when `threads` is [`TWO`] (so that the
/// library's two-thread paths use it), on the caller's thread otherwise.
/// Without a pool (the system refused the threads) `f` runs on the
/// caller's thread, and the library builds its own.
pub fn with_threads<T: Send>(threads: usize, f: impl FnOnce() -> T + Send) -> T {
    match pool() {
        Some(pool) if threads == TWO => pool.install(f),
        _ => f(),
    }
}
