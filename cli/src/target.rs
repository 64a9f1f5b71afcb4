//! Output targets: what kind of file a target is, and how it is written.
//!
//! What happens depends on what the target names:
//!
//! | target | how it is written | `--force` |
//! |--------|-------------------|-----------|
//! | nothing yet | a temporary file beside it, linked into place at the end | not needed |
//! | a regular file | a temporary file beside it, renamed over it at the end | needed |
//! | a device, FIFO or socket | in place: opened for writing (a socket: connected to), no temporary file | not needed |
//! | a symbolic link | followed: the rules above for what it points to; the link itself is never replaced | as for what it points to |
//! | a directory, or a link to nothing | refused | — |
//!
//! A regular file never lands half-written: the temporary file (same
//! directory as the file, so the last step is a rename on one file system)
//! is moved into place by [`OutputFile::commit`] only after every byte was
//! written and synced. Dropping an uncommitted [`OutputFile`] — on an error,
//! say — removes the temporary file, and so does a SIGINT, SIGTERM or SIGHUP
//! (see [`crate::interrupt`]). Only a SIGKILL (or a power cut) can leave one
//! behind; its name, `.NAME.subrange-PID-N.partial`, says whose it is, and
//! the next run writing the same target removes those whose process is gone.
//! A special file gets the bytes as they come, as standard output does.
//!
//! Without `--force` the final step for a new file is a hard link, which
//! fails if the name appeared meanwhile, so even a race cannot clobber a
//! file.

use std::fs::{self, File, OpenOptions};
use std::io::{self, BufWriter, Write};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU32, Ordering};

use crate::exit::{CliError, CliResult};
use crate::files::quote;
use crate::interrupt;

/// What a target names, found before anything is written.
#[derive(Debug, Clone, PartialEq, Eq)]
enum Kind {
    /// Nothing: the file is created.
    Absent,
    /// A regular file, at this path (the end of a symbolic link's chain).
    Regular(PathBuf),
    /// A device, FIFO or socket.
    Special(Special),
}

/// The special files a target may be.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Special {
    Device,
    Fifo,
    Socket,
}

/// Finds what `target` names, following symbolic links.
fn classify(target: &Path) -> CliResult<Kind> {
    let cannot = |e| CliError::io(format!("cannot write {}", quote(target)), e);
    let meta = match fs::symlink_metadata(target) {
        Ok(m) => m,
        Err(e) if e.kind() == io::ErrorKind::NotFound => return Ok(Kind::Absent),
        Err(e) => return Err(cannot(e)),
    };
    let link = meta.file_type().is_symlink();
    let meta = if link {
        match fs::metadata(target) {
            Ok(m) => m,
            Err(e) if e.kind() == io::ErrorKind::NotFound => {
                return Err(CliError::refused(format!(
                    "refusing to write {}: it is a symbolic link to a missing file; name the file itself with -o",
                    quote(target)
                )));
            }
            Err(e) => return Err(cannot(e)),
        }
    } else {
        meta
    };
    if meta.is_dir() {
        return Err(CliError::failure(format!(
            "cannot write {}: it is a directory",
            quote(target)
        )));
    }
    if meta.is_file() {
        let real = if link {
            fs::canonicalize(target).map_err(cannot)?
        } else {
            target.to_path_buf()
        };
        return Ok(Kind::Regular(real));
    }
    Ok(Kind::Special(special_kind(&meta)))
}

#[cfg(unix)]
fn special_kind(meta: &fs::Metadata) -> Special {
    use std::os::unix::fs::FileTypeExt;
    let t = meta.file_type();
    if t.is_fifo() {
        Special::Fifo
    } else if t.is_socket() {
        Special::Socket
    } else {
        Special::Device
    }
}

#[cfg(not(unix))]
fn special_kind(_meta: &fs::Metadata) -> Special {
    Special::Device
}

/// Where written bytes go.
#[derive(Debug)]
enum Sink {
    File(File),
    #[cfg(unix)]
    Socket(std::os::unix::net::UnixStream),
}

impl Write for Sink {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        match self {
            Sink::File(f) => f.write(buf),
            #[cfg(unix)]
            Sink::Socket(s) => s.write(buf),
        }
    }

    fn flush(&mut self) -> io::Result<()> {
        match self {
            Sink::File(f) => f.flush(),
            #[cfg(unix)]
            Sink::Socket(s) => s.flush(),
        }
    }
}

/// How the output reaches its target at the end.
#[derive(Debug)]
enum Finish {
    /// Written in place: nothing to do but flush.
    InPlace,
    /// A temporary file, moved to `dest` (replacing it when `replace`).
    Temp {
        dest: PathBuf,
        temp: PathBuf,
        replace: bool,
    },
}

/// A file target being written.
#[derive(Debug)]
pub struct OutputFile {
    target: PathBuf,
    finish: Finish,
    writer: Option<BufWriter<Sink>>,
}

/// Distinguishes temporary files of one process.
static TEMP_COUNTER: AtomicU32 = AtomicU32::new(0);

/// What temporary file names start and end with, around `PID-N`.
fn temp_affixes(base: &str) -> (String, &'static str) {
    (format!(".{base}.subrange-"), ".partial")
}

impl OutputFile {
    /// Starts writing `target`. `input` is the file being read, if any: the
    /// target may not be the same file, and a new file takes its
    /// permissions.
    ///
    /// # Errors
    ///
    /// A refusal when `target` is an existing regular file (or a link to
    /// one) and `force` is off, when it is the input, or when it is a link
    /// to nothing; a failure when it is a directory, cannot be opened, or
    /// its directory is not writable.
    pub fn create(target: &Path, force: bool, input: Option<&Path>) -> CliResult<Self> {
        if let Some(input) = input {
            if crate::files::same_file(input, target) {
                return Err(CliError::refused(format!(
                    "refusing to write to {}: it is the input file",
                    quote(target)
                )));
            }
        }
        let (dest, replace) = match classify(target)? {
            Kind::Special(kind) => return Self::in_place(target, kind),
            Kind::Regular(_) if !force => {
                return Err(CliError::refused(format!(
                    "{} already exists; use --force to overwrite it",
                    quote(target)
                )));
            }
            Kind::Regular(real) => (real, true),
            Kind::Absent => (target.to_path_buf(), false),
        };
        sweep_stale(&dest);
        let (temp, file) = create_temp_beside(&dest)?;
        if let Some(input) = input {
            // Best effort: a read-only input gives a read-only output, as a
            // copy would; failure to copy permissions is not an error.
            if let Ok(meta) = fs::metadata(input) {
                let _ = file.set_permissions(meta.permissions());
            }
        }
        Ok(OutputFile {
            target: target.to_path_buf(),
            finish: Finish::Temp {
                dest,
                temp,
                replace,
            },
            writer: Some(BufWriter::with_capacity(1 << 16, Sink::File(file))),
        })
    }

    /// Opens a special file for writing in place.
    fn in_place(target: &Path, kind: Special) -> CliResult<Self> {
        let what = || format!("cannot write {}", quote(target));
        let sink = match kind {
            #[cfg(unix)]
            Special::Socket => Sink::Socket(
                std::os::unix::net::UnixStream::connect(target)
                    .map_err(|e| CliError::io(what(), e))?,
            ),
            _ => Sink::File(
                OpenOptions::new()
                    .write(true)
                    .open(target)
                    .map_err(|e| CliError::io(what(), e))?,
            ),
        };
        Ok(OutputFile {
            target: target.to_path_buf(),
            finish: Finish::InPlace,
            writer: Some(BufWriter::with_capacity(1 << 16, sink)),
        })
    }

    /// The name the output was asked for.
    pub fn target(&self) -> &Path {
        &self.target
    }

    /// Flushes; for a regular file also syncs and moves it into place.
    ///
    /// # Errors
    ///
    /// A failure naming the target when writing or renaming fails; a refusal
    /// when a new file's name appeared meanwhile. On error the temporary
    /// file is removed.
    pub fn commit(mut self) -> CliResult {
        let what = || format!("cannot write {}", quote(&self.target));
        let Some(writer) = self.writer.take() else {
            return Err(CliError::failure(what()));
        };
        let sink = writer
            .into_inner()
            .map_err(|e| CliError::io(what(), e.into_error()))?;
        let Finish::Temp {
            dest,
            temp,
            replace,
        } = &self.finish
        else {
            return Ok(());
        };
        if let Sink::File(file) = &sink {
            file.sync_all().map_err(|e| CliError::io(what(), e))?;
        }
        drop(sink);
        let exists = || {
            CliError::refused(format!(
                "{} already exists; use --force to overwrite it",
                quote(&self.target)
            ))
        };
        if *replace {
            fs::rename(temp, dest).map_err(|e| CliError::io(what(), e))?;
        } else {
            match fs::hard_link(temp, dest) {
                Ok(()) => {
                    let _ = fs::remove_file(temp);
                }
                Err(e) if e.kind() == io::ErrorKind::AlreadyExists => return Err(exists()),
                Err(_) => {
                    // File systems without hard links: check, then rename.
                    if fs::symlink_metadata(dest).is_ok() {
                        return Err(exists());
                    }
                    fs::rename(temp, dest).map_err(|e| CliError::io(what(), e))?;
                }
            }
        }
        // Committed: nothing for Drop to remove.
        interrupt::forget(temp);
        self.finish = Finish::InPlace;
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
        if let Finish::Temp { temp, .. } = &self.finish {
            // Unwritten bytes of a file about to be removed are not worth a
            // write.
            if let Some(w) = self.writer.take() {
                let (sink, _) = w.into_parts();
                drop(sink);
            }
            let _ = fs::remove_file(temp);
            interrupt::forget(temp);
        }
    }
}

/// The directory holding `dest` and its file name.
fn dir_and_base(dest: &Path) -> (PathBuf, String) {
    let dir = match dest.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let base = dest
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "output".to_string());
    (dir, base)
}

/// Creates a new, uniquely named temporary file beside `dest`, registered
/// for removal on an interrupting signal.
fn create_temp_beside(dest: &Path) -> CliResult<(PathBuf, File)> {
    let (dir, base) = dir_and_base(dest);
    let (prefix, suffix) = temp_affixes(&base);
    let pid = std::process::id();
    let mut last_err = None;
    for _ in 0..64 {
        let n = TEMP_COUNTER.fetch_add(1, Ordering::Relaxed);
        let temp = dir.join(format!("{prefix}{pid}-{n}{suffix}"));
        // Registered before it exists, so that no signal can come between
        // its creation and its registration.
        interrupt::remember(&temp);
        match OpenOptions::new().write(true).create_new(true).open(&temp) {
            Ok(file) => return Ok((temp, file)),
            Err(e) => {
                interrupt::forget(&temp);
                if e.kind() != io::ErrorKind::AlreadyExists {
                    return Err(CliError::io(format!("cannot write {}", quote(dest)), e));
                }
                last_err = Some(e);
            }
        }
    }
    Err(CliError::io(
        format!("cannot write {}", quote(dest)),
        last_err.unwrap_or_else(|| io::Error::other("no free temporary name")),
    ))
}

/// Whether process `pid` is running: `Some` where the system says (Linux's
/// `/proc`), `None` where it cannot tell.
fn process_alive(pid: u32) -> Option<bool> {
    let proc = Path::new("/proc");
    if !proc.join("self").exists() {
        return None;
    }
    Some(proc.join(pid.to_string()).exists())
}

/// Removes temporary files beside `dest` left by runs that were killed
/// (their process is gone), saying so on stderr; where it cannot tell
/// whether their process is gone, says how to remove them.
fn sweep_stale(dest: &Path) {
    let (dir, base) = dir_and_base(dest);
    let (prefix, suffix) = temp_affixes(&base);
    let Ok(entries) = fs::read_dir(&dir) else {
        return;
    };
    for entry in entries.flatten() {
        let name = entry.file_name();
        let Some(name) = name.to_str() else { continue };
        let Some(pid) = name
            .strip_prefix(&prefix)
            .and_then(|rest| rest.strip_suffix(suffix))
            .and_then(|id| id.split_once('-'))
            .filter(|(_, n)| n.parse::<u32>().is_ok())
            .and_then(|(pid, _)| pid.parse::<u32>().ok())
        else {
            continue;
        };
        if pid == std::process::id() {
            continue;
        }
        let path = entry.path();
        match process_alive(pid) {
            Some(true) => {}
            Some(false) => {
                if fs::remove_file(&path).is_ok() {
                    eprintln!(
                        "subrange: removed {}, left by an interrupted run",
                        quote(&path)
                    );
                }
            }
            None => eprintln!(
                "subrange: {} is left by an interrupted run; remove it unless another subrange (process {pid}) is writing {}",
                quote(&path),
                quote(dest)
            ),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::exit::Code;
    use crate::scratch::Scratch;

    /// A scratch directory and the target `out.sr` in it.
    fn scratch(tag: &str) -> (Scratch, PathBuf) {
        let dir = Scratch::new(&format!("target-{tag}"));
        let target = dir.join("out.sr");
        (dir, target)
    }

    #[test]
    fn commit_creates_the_target_and_leaves_no_temp() {
        let (dir, target) = scratch("commit");
        let mut f = OutputFile::create(&target, false, None).unwrap();
        f.write_all(b"levels").unwrap();
        assert!(!target.exists(), "target must not appear before commit");
        f.commit().unwrap();
        assert_eq!(fs::read(&target).unwrap(), b"levels");
        assert_eq!(dir.entries(), ["out.sr"]);
    }

    #[test]
    fn dropping_without_commit_leaves_nothing() {
        let (dir, target) = scratch("drop");
        {
            let mut f = OutputFile::create(&target, false, None).unwrap();
            f.write_all(b"partial").unwrap();
        }
        assert!(dir.entries().is_empty(), "{:?}", dir.entries());
    }

    #[test]
    fn existing_target_is_refused_without_force_and_kept() {
        let (dir, target) = scratch("refuse");
        fs::write(&target, b"old").unwrap();
        let err = OutputFile::create(&target, false, None).unwrap_err();
        assert_eq!(err.code(), Code::Refused);
        assert!(err.message().contains("--force"));
        assert_eq!(fs::read(&target).unwrap(), b"old");
        assert_eq!(dir.entries(), ["out.sr"]);
    }

    #[test]
    fn target_appearing_before_commit_is_not_clobbered() {
        let (dir, target) = scratch("race");
        let mut f = OutputFile::create(&target, false, None).unwrap();
        f.write_all(b"new").unwrap();
        fs::write(&target, b"theirs").unwrap();
        let err = f.commit().unwrap_err();
        assert_eq!(err.code(), Code::Refused);
        assert_eq!(fs::read(&target).unwrap(), b"theirs");
        assert_eq!(dir.entries(), ["out.sr"]);
    }

    #[test]
    fn force_replaces_the_target() {
        let (dir, target) = scratch("force");
        fs::write(&target, b"old").unwrap();
        let mut f = OutputFile::create(&target, true, None).unwrap();
        f.write_all(b"new").unwrap();
        f.commit().unwrap();
        assert_eq!(fs::read(&target).unwrap(), b"new");
        assert_eq!(dir.entries(), ["out.sr"]);
    }

    #[test]
    fn the_input_is_never_the_output() {
        let (dir, _) = scratch("same");
        let input = dir.join("levels.csv");
        fs::write(&input, b"G100,0,112\n").unwrap();
        let err = OutputFile::create(&input, true, Some(&input)).unwrap_err();
        assert_eq!(err.code(), Code::Refused);
        // Through another spelling of the same path, too.
        let other = dir.join(".").join("levels.csv");
        let err = OutputFile::create(&other, true, Some(&input)).unwrap_err();
        assert_eq!(err.code(), Code::Refused);
        assert_eq!(fs::read(&input).unwrap(), b"G100,0,112\n");
    }

    #[test]
    fn a_directory_is_not_a_target() {
        let (dir, _) = scratch("dir");
        let err = OutputFile::create(dir.path(), true, None).unwrap_err();
        assert_eq!(err.code(), Code::Failure);
    }

    #[cfg(unix)]
    #[test]
    fn a_link_is_followed_and_kept() {
        let (dir, _) = scratch("link");
        let real = dir.join("real.sr");
        let link = dir.join("link.sr");
        fs::write(&real, b"old").unwrap();
        std::os::unix::fs::symlink(&real, &link).unwrap();
        // Pointing at a regular file: the usual rule for it.
        let err = OutputFile::create(&link, false, None).unwrap_err();
        assert_eq!(err.code(), Code::Refused);
        let mut f = OutputFile::create(&link, true, None).unwrap();
        f.write_all(b"new").unwrap();
        f.commit().unwrap();
        assert!(fs::symlink_metadata(&link).unwrap().is_symlink());
        assert_eq!(fs::read(&real).unwrap(), b"new");
        assert_eq!(dir.entries(), ["link.sr", "real.sr"]);
        // Pointing at nothing: refused, nothing created.
        fs::remove_file(&real).unwrap();
        let err = OutputFile::create(&link, true, None).unwrap_err();
        assert_eq!(err.code(), Code::Refused);
        assert!(err.message().contains("symbolic link"), "{}", err.message());
        assert_eq!(dir.entries(), ["link.sr"]);
    }

    #[cfg(unix)]
    #[test]
    fn stale_temporary_files_of_dead_processes_are_removed() {
        if process_alive(std::process::id()) != Some(true) {
            println!("skipped: this system cannot tell whether a process runs");
            return;
        }
        let (dir, target) = scratch("stale");
        // A process id above Linux's largest (2^22) is never running.
        let dead = dir.join(".out.sr.subrange-4194400-0.partial");
        fs::write(&dead, b"left over").unwrap();
        // One of a running process (this one's parent) is kept.
        let parent = std::os::unix::process::parent_id();
        let alive = dir.join(format!(".out.sr.subrange-{parent}-0.partial"));
        fs::write(&alive, b"in progress").unwrap();
        let other = dir.join(".other.sr.subrange-4194400-0.partial");
        fs::write(&other, b"another target's").unwrap();
        let mut f = OutputFile::create(&target, false, None).unwrap();
        f.write_all(b"x").unwrap();
        f.commit().unwrap();
        let mut want = vec![
            ".other.sr.subrange-4194400-0.partial".to_string(),
            format!(".out.sr.subrange-{parent}-0.partial"),
            "out.sr".to_string(),
        ];
        want.sort();
        assert_eq!(dir.entries(), want);
    }
}
