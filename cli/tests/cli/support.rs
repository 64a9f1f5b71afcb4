//! Helpers for the CLI tests: run the binary as a separate process in a
//! scratch directory of its own.

use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};

#[path = "../../src/scratch.rs"]
mod scratch;
pub use scratch::Scratch;

/// Writing into a scratch directory, for the tests that prepare inputs.
pub trait ScratchFiles {
    /// Writes `bytes` to `name` in the directory and returns its path.
    fn write(&self, name: &str, bytes: &[u8]) -> PathBuf;
}

impl ScratchFiles for Scratch {
    fn write(&self, name: &str, bytes: &[u8]) -> PathBuf {
        let p = self.join(name);
        fs::write(&p, bytes).unwrap();
        p
    }
}

/// Runs `subrange` with `args` in `dir`, feeding `stdin` (empty if `None`).
pub fn run_in(dir: &Path, args: &[&str], stdin: Option<&[u8]>) -> Output {
    let mut child = Command::new(env!("CARGO_BIN_EXE_subrange"))
        .args(args)
        .current_dir(dir)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("the subrange binary runs");
    let mut pipe = child.stdin.take().unwrap();
    let input = stdin.unwrap_or(&[]).to_vec();
    let feeder = std::thread::spawn(move || {
        // The command may exit before reading everything (an error): ignore.
        let _ = pipe.write_all(&input);
    });
    let out = child.wait_with_output().unwrap();
    feeder.join().unwrap();
    out
}

/// The exit code (panics if killed by a signal).
pub fn code(out: &Output) -> i32 {
    out.status.code().expect("exited normally")
}

pub fn stderr(out: &Output) -> String {
    String::from_utf8_lossy(&out.stderr).into_owned()
}

pub fn stdout(out: &Output) -> String {
    String::from_utf8_lossy(&out.stdout).into_owned()
}

/// Asserts the command failed with `want` and printed exactly one line,
/// prefixed `subrange:`, and no panic text.
pub fn assert_one_line_failure(out: &Output, want: i32) {
    let err = stderr(out);
    assert_eq!(code(out), want, "stderr: {err}");
    assert_eq!(err.lines().count(), 1, "one line expected: {err:?}");
    assert!(err.starts_with("subrange: "), "{err:?}");
    assert!(!err.contains("panicked"), "{err:?}");
}

/// Gauge readings as CSV lines, about `lines` of them: the crate's own
/// demo generator (`subrange::corpus::gauge_csv`, 18 bytes a line on
/// average), seeded.
pub fn gauge_text(lines: usize) -> Vec<u8> {
    subrange::corpus::gauge_csv(11, lines * 18)
}
