//! Inputs and safe outputs.
//!
//! Output never lands half-written: a file target is written to a temporary
//! file beside it (same directory, so the final step is a rename on one file
//! system) and only moved into place by [`OutputFile::commit`] after every
//! byte was written and synced. Dropping an uncommitted [`OutputFile`] — on an
//! error, say — removes the temporary file, so a failed command leaves nothing
//! behind.
//!
//! Rules kept here:
//! - an existing target is never replaced without `--force`; without it the
//!   final step is a hard link, which fails if the name appeared meanwhile,
//!   so even a race cannot clobber a file;
//! - the output may not be the input file, `--force` or not;
//! - compressed data is not written to a terminal;
//! - the input is only ever opened for reading.

use std::fs::{self, File, OpenOptions};
use std::io::{self, BufWriter, IsTerminal, Read, Write};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU32, Ordering};

use crate::exit::{CliError, CliResult};

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
fn same_file(a: &Path, b: &Path) -> bool {
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

/// A file being written: a temporary file beside the target until committed.
#[derive(Debug)]
pub struct OutputFile {
    target: PathBuf,
    temp: PathBuf,
    writer: Option<BufWriter<File>>,
    force: bool,
}

/// Distinguishes temporary files of one process.
static TEMP_COUNTER: AtomicU32 = AtomicU32::new(0);

impl OutputFile {
    /// Starts writing `target`. `input` is the file being read, if any: the
    /// target may not be the same file, and the output takes its permissions.
    ///
    /// # Errors
    ///
    /// A refusal when `target` exists and `force` is off, or when it is the
    /// input; a failure when it is a directory or its directory is not
    /// writable.
    pub fn create(target: &Path, force: bool, input: Option<&Path>) -> CliResult<Self> {
        if let Some(input) = input {
            if same_file(input, target) {
                return Err(CliError::refused(format!(
                    "refusing to write to {}: it is the input file",
                    quote(target)
                )));
            }
        }
        match fs::symlink_metadata(target) {
            Ok(meta) if meta.is_dir() => {
                return Err(CliError::failure(format!(
                    "cannot write {}: it is a directory",
                    quote(target)
                )));
            }
            Ok(_) if !force => {
                return Err(CliError::refused(format!(
                    "{} already exists; use --force to overwrite it",
                    quote(target)
                )));
            }
            _ => {}
        }
        let (temp, file) = create_temp_beside(target)?;
        if let Some(input) = input {
            // Best effort: a read-only input gives a read-only output, as a
            // copy would; failure to copy permissions is not an error.
            if let Ok(meta) = fs::metadata(input) {
                let _ = file.set_permissions(meta.permissions());
            }
        }
        Ok(OutputFile {
            target: target.to_path_buf(),
            temp,
            writer: Some(BufWriter::with_capacity(1 << 16, file)),
            force,
        })
    }

    /// The final name.
    pub fn target(&self) -> &Path {
        &self.target
    }

    /// Flushes, syncs and moves the file into place.
    ///
    /// # Errors
    ///
    /// A failure naming the target when writing or renaming fails; a refusal
    /// when the target appeared meanwhile and `force` is off. On error the
    /// temporary file is removed.
    pub fn commit(mut self) -> CliResult {
        let what = || format!("cannot write {}", quote(&self.target));
        let Some(writer) = self.writer.take() else {
            return Err(CliError::failure(what()));
        };
        let file = writer
            .into_inner()
            .map_err(|e| CliError::io(what(), e.into_error()))?;
        file.sync_all().map_err(|e| CliError::io(what(), e))?;
        drop(file);
        if self.force {
            fs::rename(&self.temp, &self.target).map_err(|e| CliError::io(what(), e))?;
        } else {
            match fs::hard_link(&self.temp, &self.target) {
                Ok(()) => {
                    let _ = fs::remove_file(&self.temp);
                }
                Err(e) if e.kind() == io::ErrorKind::AlreadyExists => {
                    return Err(CliError::refused(format!(
                        "{} already exists; use --force to overwrite it",
                        quote(&self.target)
                    )));
                }
                Err(_) => {
                    // File systems without hard links: check, then rename.
                    if fs::symlink_metadata(&self.target).is_ok() {
                        return Err(CliError::refused(format!(
                            "{} already exists; use --force to overwrite it",
                            quote(&self.target)
                        )));
                    }
                    fs::rename(&self.temp, &self.target).map_err(|e| CliError::io(what(), e))?;
                }
            }
        }
        // Committed: nothing for Drop to remove.
        self.temp = PathBuf::new();
        Ok(())
    }
}

impl Write for OutputFile {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        match &mut self.writer {
            Some(w) => w.write(buf),
            None => Err(io::Error::other("output already committed")),
        }
    }

    fn flush(&mut self) -> io::Result<()> {
        match &mut self.writer {
            Some(w) => w.flush(),
            None => Ok(()),
        }
    }
}

impl Drop for OutputFile {
    fn drop(&mut self) {
        drop(self.writer.take());
        if !self.temp.as_os_str().is_empty() {
            let _ = fs::remove_file(&self.temp);
        }
    }
}

/// Creates a new, uniquely named temporary file in the target's directory.
fn create_temp_beside(target: &Path) -> CliResult<(PathBuf, File)> {
    let dir = match target.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let base = target
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "output".to_string());
    let pid = std::process::id();
    let mut last_err = None;
    for _ in 0..64 {
        let n = TEMP_COUNTER.fetch_add(1, Ordering::Relaxed);
        let temp = dir.join(format!(".{base}.{pid}-{n}.partial"));
        match OpenOptions::new().write(true).create_new(true).open(&temp) {
            Ok(file) => return Ok((temp, file)),
            Err(e) if e.kind() == io::ErrorKind::AlreadyExists => last_err = Some(e),
            Err(e) => return Err(CliError::io(format!("cannot write {}", quote(target)), e)),
        }
    }
    Err(CliError::io(
        format!("cannot write {}", quote(target)),
        last_err.unwrap_or_else(|| io::Error::other("no free temporary name")),
    ))
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

    /// A fresh, empty directory under the system's temporary directory.
    fn scratch(tag: &str) -> PathBuf {
        static N: AtomicU32 = AtomicU32::new(0);
        let dir = std::env::temp_dir().join(format!(
            "subrange-files-{tag}-{}-{}",
            std::process::id(),
            N.fetch_add(1, Ordering::Relaxed)
        ));
        let _ = fs::remove_dir_all(&dir);
        fs::create_dir_all(&dir).unwrap();
        dir
    }

    fn entries(dir: &Path) -> Vec<String> {
        let mut v: Vec<String> = fs::read_dir(dir)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        v.sort();
        v
    }

    #[test]
    fn commit_creates_the_target_and_leaves_no_temp() {
        let dir = scratch("commit");
        let target = dir.join("out.sr");
        let mut f = OutputFile::create(&target, false, None).unwrap();
        f.write_all(b"levels").unwrap();
        assert!(!target.exists(), "target must not appear before commit");
        f.commit().unwrap();
        assert_eq!(fs::read(&target).unwrap(), b"levels");
        assert_eq!(entries(&dir), vec!["out.sr".to_string()]);
        fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn dropping_without_commit_leaves_nothing() {
        let dir = scratch("drop");
        let target = dir.join("out.sr");
        {
            let mut f = OutputFile::create(&target, false, None).unwrap();
            f.write_all(b"partial").unwrap();
        }
        assert!(entries(&dir).is_empty(), "{:?}", entries(&dir));
        fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn existing_target_is_refused_without_force_and_kept() {
        let dir = scratch("refuse");
        let target = dir.join("out.sr");
        fs::write(&target, b"old").unwrap();
        let err = OutputFile::create(&target, false, None).unwrap_err();
        assert_eq!(err.code(), Code::Refused);
        assert!(err.message().contains("--force"));
        assert_eq!(fs::read(&target).unwrap(), b"old");
        assert_eq!(entries(&dir), vec!["out.sr".to_string()]);
        fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn target_appearing_before_commit_is_not_clobbered() {
        let dir = scratch("race");
        let target = dir.join("out.sr");
        let mut f = OutputFile::create(&target, false, None).unwrap();
        f.write_all(b"new").unwrap();
        fs::write(&target, b"theirs").unwrap();
        let err = f.commit().unwrap_err();
        assert_eq!(err.code(), Code::Refused);
        assert_eq!(fs::read(&target).unwrap(), b"theirs");
        assert_eq!(entries(&dir), vec!["out.sr".to_string()]);
        fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn force_replaces_the_target() {
        let dir = scratch("force");
        let target = dir.join("out.sr");
        fs::write(&target, b"old").unwrap();
        let mut f = OutputFile::create(&target, true, None).unwrap();
        f.write_all(b"new").unwrap();
        f.commit().unwrap();
        assert_eq!(fs::read(&target).unwrap(), b"new");
        assert_eq!(entries(&dir), vec!["out.sr".to_string()]);
        fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn the_input_is_never_the_output() {
        let dir = scratch("same");
        let input = dir.join("levels.csv");
        fs::write(&input, b"G100,0,112\n").unwrap();
        let err = OutputFile::create(&input, true, Some(&input)).unwrap_err();
        assert_eq!(err.code(), Code::Refused);
        // Through another spelling of the same path, too.
        let other = dir.join(".").join("levels.csv");
        let err = OutputFile::create(&other, true, Some(&input)).unwrap_err();
        assert_eq!(err.code(), Code::Refused);
        assert_eq!(fs::read(&input).unwrap(), b"G100,0,112\n");
        fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn a_directory_is_not_a_target() {
        let dir = scratch("dir");
        let err = OutputFile::create(&dir, true, None).unwrap_err();
        assert_eq!(err.code(), Code::Failure);
        fs::remove_dir_all(&dir).unwrap();
    }

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
        let dir = scratch("whole");
        let target = dir.join("plot.svg");
        write_file(&target, false, b"<svg/>").unwrap();
        assert_eq!(fs::read(&target).unwrap(), b"<svg/>");
        assert_eq!(
            write_file(&target, false, b"x").unwrap_err().code(),
            Code::Refused
        );
        fs::remove_dir_all(&dir).unwrap();
    }
}
