//! Progress bars on stderr, only where a person is watching.
//!
//! A bar is drawn when stderr is a terminal, `--quiet` is off, and the work is
//! large: an input of at least [`THRESHOLD`] bytes, or an input of unknown size
//! (standard input) once that many bytes have gone by. Piped or redirected
//! stderr never sees a bar, so logs stay clean.

use std::io::{self, IsTerminal, Read};

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};

/// Inputs smaller than this finish too fast to need a bar.
pub const THRESHOLD: u64 = 8 << 20;

/// A progress display that may be invisible.
#[derive(Debug, Clone)]
pub struct Progress {
    bar: ProgressBar,
    /// Whether the bar may become visible at all.
    allowed: bool,
    /// Whether it is visible now.
    shown: bool,
}

impl Progress {
    /// Progress over `total` bytes (`None`: unknown, e.g. standard input).
    pub fn bytes(total: Option<u64>, quiet: bool, label: &str) -> Self {
        let allowed = !quiet && io::stderr().is_terminal();
        let bar = match total {
            Some(n) => ProgressBar::with_draw_target(Some(n), ProgressDrawTarget::hidden())
                .with_style(
                    ProgressStyle::with_template(
                        "{msg} [{bar:30}] {bytes}/{total_bytes} {binary_bytes_per_sec} eta {eta}",
                    )
                    .unwrap_or_else(|_| ProgressStyle::default_bar())
                    .progress_chars("=> "),
                ),
            None => ProgressBar::with_draw_target(None, ProgressDrawTarget::hidden()).with_style(
                ProgressStyle::with_template("{msg} {spinner} {bytes} {binary_bytes_per_sec}")
                    .unwrap_or_else(|_| ProgressStyle::default_spinner()),
            ),
        };
        bar.set_message(label.to_string());
        let mut p = Progress {
            bar,
            allowed,
            shown: false,
        };
        if total.is_some_and(|n| n >= THRESHOLD) {
            p.show();
        }
        p
    }

    /// Progress over `steps` units of work (bench), shown on a terminal.
    pub fn steps(steps: u64, quiet: bool) -> Self {
        let allowed = !quiet && io::stderr().is_terminal();
        let bar = ProgressBar::with_draw_target(Some(steps), ProgressDrawTarget::hidden())
            .with_style(
                ProgressStyle::with_template("[{bar:30}] {pos}/{len} {msg}")
                    .unwrap_or_else(|_| ProgressStyle::default_bar())
                    .progress_chars("=> "),
            );
        let mut p = Progress {
            bar,
            allowed,
            shown: false,
        };
        p.show();
        p
    }

    fn show(&mut self) {
        if self.allowed && !self.shown {
            self.bar.set_draw_target(ProgressDrawTarget::stderr());
            self.shown = true;
        }
    }

    /// Advances by `n`.
    pub fn inc(&mut self, n: u64) {
        self.bar.inc(n);
        if !self.shown && self.bar.length().is_none() && self.bar.position() >= THRESHOLD {
            self.show();
        }
    }

    /// Sets the text beside the bar.
    pub fn set_message(&self, msg: impl Into<String>) {
        self.bar.set_message(msg.into());
    }

    /// Removes the bar from the terminal.
    pub fn finish(&self) {
        self.bar.finish_and_clear();
    }

    /// Wraps a reader so that bytes read advance this progress.
    pub fn reader<R: Read>(&self, inner: R) -> ProgressReader<R> {
        ProgressReader {
            inner,
            progress: self.clone(),
        }
    }
}

/// A reader that reports the bytes it passes on.
#[derive(Debug)]
pub struct ProgressReader<R> {
    inner: R,
    progress: Progress,
}

impl<R: Read> Read for ProgressReader<R> {
    fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
        let n = self.inner.read(buf)?;
        self.progress.inc(n as u64);
        Ok(n)
    }
}

impl<R> Drop for ProgressReader<R> {
    fn drop(&mut self) {
        self.progress.finish();
    }
}
