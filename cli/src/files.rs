//! Inputs, output names, and where output goes.
//!
//! Rules kept here and in [`crate::target`], which writes file targets:
//! - output never lands half-written in a regular file, and an existing one
//!   is never replaced without `--force`;
//! - devices, FIFOs and sockets are written in place, never replaced;
//! - the output may not be the input file, `--force` or not;
//! - compressed data is not written to a terminal;
//! - the input is only ever opened for reading.

use std::fs::{self, File};
use std::io::{self, BufWriter, IsTerminal, Read, Write};
use std::path::{Path, PathBuf};

use crate::exit::{CliError, CliResult};
use crate::target::OutputFile;

/// File name extension of compressed files, without the dot.
pub const EXTENSION: &str = "sr";

/// Where a command reads from.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Input {
    /// Standard input (no argument, or `-`).
    Stdin,
    /// A named file.
    File(PathBuf),
}

impl Input {
    /// The input named by a command-line argument: absent or `-` is stdin.
    pub fn from_arg(arg: Option<&Path>) -> Self {
        match arg {
            None => Input::Stdin,
            Some(p) if p.as_os_str() == "-" => Input::Stdin,
            Some(p) => Input::File(p.to_path_buf()),
        }
    }

    /// How messages name this input: `'path'` or `standard input`.
    pub fn describe(&self) -> String {
        match self {
            Input::Stdin => "standard input".to_string(),
            Input::File(p) => quote(p),
        }
    }

    /// The file path, if this is a file.
    pub fn path(&self) -> Option<&Path> {
        match self {
            Input::Stdin => None,
            Input::File(p) => Some(p),
        }
    }

    /// Opens the input for reading; also returns its size when known.
    ///
    /// # Errors
    ///
    /// A failure naming the file when it cannot be opened or is a directory.
    pub fn open(&self) -> CliResult<(Box<dyn Read + Send>, Option<u64>)> {
        match self {
            Input::Stdin => Ok((Box::new(io::stdin()), None)),
            Input::File(path) => {
                let file = File::open(path)
                    .map_err(|e| CliError::io(format!("cannot open {}", quote(path)), e))?;
                let meta = file
                    .metadata()
                    .map_err(|e| CliError::io(format!("cannot read {}", quote(path)), e))?;
                if meta.is_dir() {
                    return Err(CliError::failure(format!(
                        "cannot read {}: it is a directory",
                        quote(path)
                    )));
                }
                let size = meta.is_file().then_some(meta.len());
                Ok((Box::new(file), size))
            }
        }
    }

    /// Reads at most `limit` bytes (all when `None`); returns them and the
    /// total size of the input when known.
    ///
    /// # Errors
    ///
    /// As for [`open`](Input::open), and read errors naming the input.
    pub fn read_prefix(&self, limit: Option<u64>) -> CliResult<(Vec<u8>, Option<u64>)> {
        let (reader, size) = self.open()?;
        let mut data = Vec::new();
        let result = match limit {
            Some(n) => reader.take(n).read_to_end(&mut data),
            None => {
                let mut reader = reader;
                reader.read_to_end(&mut data)
            }
        };
        result.map_err(|e| CliError::io(format!("cannot read {}", self.describe()), e))?;
        Ok((data, size))
    }
}

/// `path` in single quotes, for messages.
pub fn quote(path: &Path) -> String {
    format!("'{}'", path.display())
}

/// The default name of the compressed form of `input`: `input.sr`.
pub fn compressed_name(input: &Path) -> PathBuf {
    let mut name = input.as_os_str().to_os_string();
    name.push(".");
    name.push(EXTENSION);
    PathBuf::from(name)
}

/// The default name of the decompressed form of `input`: `input` without its
/// `.sr` extension.
///
/// # Errors
///
/// A usage error when the name does not end in `.sr` or nothing is left
/// without it.
pub fn decompressed_name(input: &Path) -> CliResult<PathBuf> {
    let file_name = input.file_name().and_then(|n| n.to_str());
    let suffix = format!(".{EXTENSION}");
    match file_name {
        Some(name) if name.len() > suffix.len() && name.ends_with(&suffix) => {
            Ok(input.with_file_name(&name[..name.len() - suffix.len()]))
        }
        _ => Err(CliError::usage(format!(
            "cannot derive an output name from {}: it does not end in '{suffix}'; name the output with -o",
            quote(input)
        ))),
    }
}

/// Refuses when standard output is a terminal and the data is binary.
///
/// # Errors
///
/// A refusal (exit 4) naming the way out.
pub fn refuse_terminal_stdout() -> CliResult {
    if io::stdout().is_terminal() {
        return Err(CliError::refused(
            "refusing to write compressed data to a terminal; use -o FILE or redirect standard output",
        ));
    }
    Ok(())
}

/// True when `a` and `b` name the same existing file.
pub(crate) fn same_file(a: &Path, b: &Path) -> bool {
    #[cfg(unix)]
    {
        use std::os::unix::fs::MetadataExt;
        if let (Ok(ma), Ok(mb)) = (fs::metadata(a), fs::metadata(b)) {
            return ma.dev() == mb.dev() && ma.ino() == mb.ino();
        }
        false
    }
    #[cfg(not(unix))]
    {
        match (fs::canonicalize(a), fs::canonicalize(b)) {
            (Ok(ca), Ok(cb)) => ca == cb,
            _ => false,
        }
    }
}

/// Where a command's data output goes: standard output or a safe file.
#[derive(Debug)]
pub enum Output {
    /// Standard output.
    Stdout(BufWriter<io::Stdout>),
    /// A file, committed at the end.
    File(OutputFile),
}

impl Output {
    /// Standard output (buffered).
    pub fn stdout() -> Self {
        Output::Stdout(BufWriter::with_capacity(1 << 16, io::stdout()))
    }

    /// How messages name this output.
    pub fn describe(&self) -> String {
        match self {
            Output::Stdout(_) => "standard output".to_string(),
            Output::File(f) => quote(f.target()),
        }
    }

    /// Finishes: flushes standard output or commits the file.
    ///
    /// # Errors
    ///
    /// As for [`OutputFile::commit`], or a write error on standard output.
    pub fn finish(self) -> CliResult {
        match self {
            Output::Stdout(mut w) => w
                .flush()
                .map_err(|e| CliError::io("cannot write standard output", e)),
            Output::File(f) => f.commit(),
        }
    }
}

impl Write for Output {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        match self {
            Output::Stdout(w) => w.write(buf),
            Output::File(f) => f.write(buf),
        }
    }

    fn write_all(&mut self, buf: &[u8]) -> io::Result<()> {
        match self {
            Output::Stdout(w) => w.write_all(buf),
            Output::File(f) => f.write_all(buf),
        }
    }

    fn flush(&mut self) -> io::Result<()> {
        match self {
            Output::Stdout(w) => w.flush(),
            Output::File(f) => f.flush(),
        }
    }
}

/// Writes a whole report file (a plot, say) safely: all or nothing.
///
/// # Errors
///
/// As for [`OutputFile::create`] and [`OutputFile::commit`].
pub fn write_file(target: &Path, force: bool, bytes: &[u8]) -> CliResult {
    let mut out = OutputFile::create(target, force, None)?;
    out.write_all(bytes)
        .map_err(|e| CliError::io(format!("cannot write {}", quote(target)), e))?;
    out.commit()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::exit::Code;
    use crate::scratch::Scratch;

    #[test]
    fn names_are_derived_and_underivable_ones_refused() {
        assert_eq!(
            compressed_name(Path::new("a/levels.csv")),
            PathBuf::from("a/levels.csv.sr")
        );
        assert_eq!(
            decompressed_name(Path::new("a/levels.csv.sr")).unwrap(),
            PathBuf::from("a/levels.csv")
        );
        for bad in ["levels.csv", "a/.sr", "levels.sr.bak", "sr"] {
            let err = decompressed_name(Path::new(bad)).unwrap_err();
            assert_eq!(err.code(), Code::Usage, "{bad}");
        }
    }

    #[test]
    fn input_arguments() {
        assert_eq!(Input::from_arg(None), Input::Stdin);
        assert_eq!(Input::from_arg(Some(Path::new("-"))), Input::Stdin);
        assert_eq!(
            Input::from_arg(Some(Path::new("x"))),
            Input::File(PathBuf::from("x"))
        );
    }

    #[test]
    fn write_file_is_all_or_nothing() {
        let dir = Scratch::new("files-whole");
        let target = dir.join("plot.svg");
        write_file(&target, false, b"<svg/>").unwrap();
        assert_eq!(fs::read(&target).unwrap(), b"<svg/>");
        assert_eq!(
            write_file(&target, false, b"x").unwrap_err().code(),
            Code::Refused
        );
    }
}
