//! Scratch directories for the unit tests that write files.
//!
//! Each [`Scratch`] is a fresh, empty directory under the system's
//! temporary directory, named after the test's tag, this process and a
//! counter, so tests running in parallel never share one; it is removed
//! when the value drops, whether the test passed or not.

use std::fs;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU32, Ordering};

/// A fresh, empty directory, removed on drop.
pub struct Scratch {
    dir: PathBuf,
}

impl Scratch {
    /// Creates the directory `subrange-<tag>-<pid>-<n>`.
    pub fn new(tag: &str) -> Self {
        static N: AtomicU32 = AtomicU32::new(0);
        let dir = std::env::temp_dir().join(format!(
            "subrange-{tag}-{}-{}",
            std::process::id(),
            N.fetch_add(1, Ordering::Relaxed)
        ));
        let _ = fs::remove_dir_all(&dir);
        fs::create_dir_all(&dir).unwrap();
        Scratch { dir }
    }

    /// The directory.
    pub fn path(&self) -> &Path {
        &self.dir
    }

    /// A path in the directory.
    pub fn join(&self, name: impl AsRef<Path>) -> PathBuf {
        self.dir.join(name)
    }

    /// The names in the directory, sorted.
    pub fn entries(&self) -> Vec<String> {
        let mut v: Vec<String> = fs::read_dir(&self.dir)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        v.sort();
        v
    }
}

impl Drop for Scratch {
    fn drop(&mut self) {
        let _ = fs::remove_dir_all(&self.dir);
    }
}
