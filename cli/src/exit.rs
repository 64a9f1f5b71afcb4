//! Exit codes and the command's error type.
//!
//! Every failure reaches the user as one line on stderr,
//! `subrange: <what went wrong>`, naming the file and, where the library
//! knows it, the block and offset. The process then exits with one of the
//! codes below, so scripts can tell a damaged file from a typing mistake:
//!
//! | code | meaning |
//! |------|---------|
//! | 0 | success |
//! | 1 | I/O or other failure (cannot read or write a file, disk full, …) |
//! | 2 | usage error: unknown option, bad value, unknown preset, underivable name |
//! | 3 | damaged or invalid input: not a container, checksum mismatch, truncation |
//! | 4 | refused: the output exists (no `--force`), compressed data to a terminal, output is the input |
//! | 5 | internal error: a bug in `subrange` (please report it) |

use std::fmt;
use std::io;

/// Text for `--help`: the exit codes.
pub const EXIT_CODES_HELP: &str = "\
Exit codes:
  0  success
  1  I/O or other failure (cannot read or write a file, disk full, ...)
  2  usage error (unknown option, bad value, unknown preset, underivable output name)
  3  damaged or invalid input (not a subrange container, checksum mismatch, truncation)
  4  refused: output exists (use --force), compressed data to a terminal, output is the input
  5  internal error (a bug in subrange; please report it)";

/// The process exit status of a failure.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Code {
    /// I/O or other failure.
    Failure = 1,
    /// Usage error (also what clap uses for argument errors).
    Usage = 2,
    /// Damaged or invalid input.
    Damaged = 3,
    /// Refused to overwrite, to write to a terminal, or to replace the input.
    Refused = 4,
    /// A bug: a panic caught by the hook.
    Internal = 5,
}

impl Code {
    /// The numeric exit status.
    pub fn status(self) -> i32 {
        self as i32
    }
}

/// A failure of a command: a one-line message and an exit code.
#[derive(Debug)]
pub struct CliError {
    code: Code,
    message: String,
    quiet: bool,
}

impl CliError {
    /// A failure with an explicit code.
    pub fn new(code: Code, message: impl Into<String>) -> Self {
        CliError {
            code,
            message: one_line(message.into()),
            quiet: false,
        }
    }

    /// A usage error (exit 2).
    pub fn usage(message: impl Into<String>) -> Self {
        Self::new(Code::Usage, message)
    }

    /// A refusal (exit 4).
    pub fn refused(message: impl Into<String>) -> Self {
        Self::new(Code::Refused, message)
    }

    /// A general failure (exit 1).
    pub fn failure(message: impl Into<String>) -> Self {
        Self::new(Code::Failure, message)
    }

    /// Damaged input (exit 3).
    pub fn damaged(message: impl Into<String>) -> Self {
        Self::new(Code::Damaged, message)
    }

    /// The reader of our standard output went away: stop without a message.
    pub fn broken_pipe() -> Self {
        CliError {
            code: Code::Failure,
            message: String::new(),
            quiet: true,
        }
    }

    /// An I/O error while doing `what` (e.g. "cannot read 'x.csv'").
    ///
    /// An `io::Error` that carries a `subrange::Error` (the stream adapters
    /// wrap damage that way) is classified by the inner error, so a checksum
    /// mismatch met through `Read` still exits with 3. A broken pipe becomes a
    /// quiet exit.
    pub fn io(what: impl fmt::Display, err: io::Error) -> Self {
        if err.kind() == io::ErrorKind::BrokenPipe {
            return Self::broken_pipe();
        }
        if let Some(inner) =
            std::error::Error::source(&err).and_then(|e| e.downcast_ref::<subrange::Error>())
        {
            return Self::library(what, inner);
        }
        Self::failure(format!("{what}: {}", describe_io(&err)))
    }

    /// A library error while doing `what`, classified by its kind.
    pub fn library(what: impl fmt::Display, err: &subrange::Error) -> Self {
        use subrange::ErrorKind;
        let code = match err.kind() {
            ErrorKind::Io(inner) if inner.kind() == io::ErrorKind::BrokenPipe => {
                return Self::broken_pipe();
            }
            ErrorKind::Io(inner) => {
                return Self::failure(format!("{what}: {}", describe_io(inner)));
            }
            ErrorKind::InvalidParameter { .. } => Code::Usage,
            _ if err.is_damage() => Code::Damaged,
            ErrorKind::UnsupportedVersion { .. }
            | ErrorKind::UnknownPreset { .. }
            | ErrorKind::LimitExceeded { .. } => Code::Damaged,
            _ => Code::Failure,
        };
        Self::new(code, format!("{what}: {err}"))
    }

    /// The exit code.
    pub fn code(&self) -> Code {
        self.code
    }

    /// The message (one line, without the `subrange:` prefix).
    pub fn message(&self) -> &str {
        &self.message
    }

    /// True when nothing should be printed (broken pipe).
    pub fn is_quiet(&self) -> bool {
        self.quiet
    }
}

impl fmt::Display for CliError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.message)
    }
}

/// An I/O error as users read it: the OS text without the "(os error N)" tail.
fn describe_io(err: &io::Error) -> String {
    let text = err.to_string();
    match text.find(" (os error") {
        Some(cut) => text[..cut].to_string(),
        None => text,
    }
}

/// Folds a message onto one line (a file name could hold a newline).
fn one_line(message: String) -> String {
    if message.contains(['\n', '\r']) {
        message.replace(['\n', '\r'], " ")
    } else {
        message
    }
}

/// Result of a command.
pub type CliResult<T = ()> = Result<T, CliError>;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn damage_inside_io_error_is_classified_as_damage() {
        let lib = subrange::Error::from(subrange::ErrorKind::ChecksumMismatch {
            block: 2,
            expected: 1,
            actual: 2,
        });
        let io_err: io::Error = lib.into();
        let e = CliError::io("cannot decompress 'a.sr'", io_err);
        assert_eq!(e.code(), Code::Damaged);
        assert!(e.message().contains("block 2"), "{}", e.message());
    }

    #[test]
    fn plain_io_errors_are_failures_without_os_error_tail() {
        let err = io::Error::from_raw_os_error(2);
        let e = CliError::io("cannot open 'x'", err);
        assert_eq!(e.code(), Code::Failure);
        assert!(!e.message().contains("os error"), "{}", e.message());
        assert!(e.message().starts_with("cannot open 'x': "));
    }

    #[test]
    fn broken_pipe_is_quiet() {
        let e = CliError::io("x", io::Error::from(io::ErrorKind::BrokenPipe));
        assert!(e.is_quiet());
    }

    #[test]
    fn messages_are_one_line() {
        let e = CliError::usage("bad\nname");
        assert_eq!(e.message(), "bad name");
    }
}
