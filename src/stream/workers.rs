//! Spreading independent blocks over threads.
//!
//! Blocks are coded and decoded independently, so a batch of them can be
//! handed to a thread pool and the results collected in order. The output
//! is the same, byte for byte, whatever the number of threads: threads
//! change only when a block is coded, never how.
//!
//! Without the `parallel` feature, or with one thread, everything runs on
//! the caller's thread.

use std::vec::Vec;

/// A handle to the threads that code blocks (or just the caller's thread).
#[derive(Debug, Clone)]
pub(crate) struct Workers {
    count: usize,
    #[cfg(feature = "parallel")]
    pool: Option<std::sync::Arc<rayon::ThreadPool>>,
}

impl Workers {
    /// `threads` of 0 means all cores; 1 means the caller's thread only.
    #[cfg(feature = "parallel")]
    pub(crate) fn new(threads: usize) -> Self {
        let global = rayon::current_num_threads();
        let count = if threads == 0 { global } else { threads };
        if count <= 1 {
            return Workers {
                count: 1,
                pool: None,
            };
        }
        if count == global {
            return Workers { count, pool: None };
        }
        match rayon::ThreadPoolBuilder::new().num_threads(count).build() {
            Ok(pool) => Workers {
                count,
                pool: Some(std::sync::Arc::new(pool)),
            },
            // Without a pool the work runs on the caller's thread; the
            // output is the same.
            Err(_) => Workers {
                count: 1,
                pool: None,
            },
        }
    }

    /// Without the `parallel` feature everything runs on the caller's thread.
    #[cfg(not(feature = "parallel"))]
    pub(crate) fn new(threads: usize) -> Self {
        let _ = threads;
        Workers { count: 1 }
    }

    /// Number of threads work is spread over.
    pub(crate) fn count(&self) -> usize {
        self.count
    }

    /// Applies `f` to every item, in parallel when there are several
    /// threads; results come back in item order.
    pub(crate) fn map<T, U, F>(&self, items: Vec<T>, f: F) -> Vec<U>
    where
        T: Send,
        U: Send,
        F: Fn(T) -> U + Sync + Send,
    {
        #[cfg(feature = "parallel")]
        if self.count > 1 && items.len() > 1 {
            use rayon::prelude::*;
            let run = || items.into_par_iter().map(&f).collect();
            return match &self.pool {
                Some(pool) => pool.install(run),
                None => run(),
            };
        }
        items.into_iter().map(f).collect()
    }
}
