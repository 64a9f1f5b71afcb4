//! Spreading independent blocks over threads.
//!
//! Blocks are coded and decoded independently, so a batch of them can be
//! handed to a thread pool and the results collected in order. The output
//! is the same, byte for byte, whatever the number of threads: threads
//! change only when a block is coded, never how.
//!
//! Without the `parallel` feature, or with one thread, everything runs on
//! the caller's thread. A thread count other than rayon's global pool's
//! gets a pool of its own, built only when a batch has more than one block
//! and kept for the next call with the same count (building a pool costs
//! far more than coding a small message).

use std::vec::Vec;

/// A handle to the threads that code blocks (or just the caller's thread).
#[derive(Debug, Clone)]
pub(crate) struct Workers {
    count: usize,
    /// Whether `count` differs from the global pool's size, so that work
    /// needs a pool of its own.
    #[cfg(feature = "parallel")]
    own_pool: bool,
}

/// The pool most recently built for a thread count other than the global
/// pool's, kept for the next call that asks for the same count.
#[cfg(feature = "parallel")]
static LAST_POOL: std::sync::Mutex<Option<(usize, std::sync::Arc<rayon::ThreadPool>)>> =
    std::sync::Mutex::new(None);

/// A pool of `count` threads: the kept one if its size matches, else a new
/// one (then kept). `None` when no pool can be built.
#[cfg(feature = "parallel")]
fn pool_of(count: usize) -> Option<std::sync::Arc<rayon::ThreadPool>> {
    let mut last = LAST_POOL.lock().unwrap_or_else(|e| e.into_inner());
    if let Some((n, pool)) = last.as_ref() {
        if *n == count {
            return Some(pool.clone());
        }
    }
    let pool = std::sync::Arc::new(
        rayon::ThreadPoolBuilder::new()
            .num_threads(count)
            .build()
            .ok()?,
    );
    *last = Some((count, pool.clone()));
    Some(pool)
}

impl Workers {
    /// `threads` of 0 means all cores; 1 means the caller's thread only.
    #[cfg(feature = "parallel")]
    pub(crate) fn new(threads: usize) -> Self {
        let global = rayon::current_num_threads();
        let count = if threads == 0 { global } else { threads };
        let count = count.min(crate::stream::MAX_THREADS);
        Workers {
            count: count.max(1),
            own_pool: count > 1 && count != global,
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
            // Without a pool of its own the work runs on the global pool,
            // or, when none can be built, on the caller's thread; the
            // output is the same.
            let pool = if self.own_pool {
                match pool_of(self.count) {
                    Some(pool) => Some(pool),
                    None => return items.into_iter().map(f).collect(),
                }
            } else {
                None
            };
            let run = || items.into_par_iter().map(&f).collect();
            return match pool {
                Some(pool) => pool.install(run),
                None => run(),
            };
        }
        items.into_iter().map(f).collect()
    }
}

#[cfg(all(test, feature = "parallel"))]
mod tests {
    use super::*;
    use std::vec;

    #[test]
    fn pools_are_kept_and_results_stay_in_order() {
        let count = rayon::current_num_threads() + 1;
        let a = pool_of(count).unwrap();
        let b = pool_of(count).unwrap();
        assert!(std::sync::Arc::ptr_eq(&a, &b));
        let workers = Workers::new(count);
        assert_eq!(workers.count(), count);
        let squares = workers.map((0..100u64).collect(), |x| x * x);
        assert_eq!(squares, (0..100u64).map(|x| x * x).collect::<Vec<_>>());
        let one = Workers::new(1);
        assert_eq!(one.map(vec![1, 2, 3], |x| x + 1), vec![2, 3, 4]);
    }
}
