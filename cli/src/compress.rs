//! `subrange compress` and `subrange decompress`.
//!
//! Both stream through the library's reader-to-writer pipeline (reading and
//! writing overlap the coding of other blocks): compressing holds
//! `--blocks-in-flight` blocks (by default one more than threads) and their
//! models, decompressing one block more than `--threads` and their models,
//! whatever the input length. Compressing refuses options a default
//! decompress could not read unless `--reader-memory` raises the limit on
//! purpose; decompressing takes the matching `--memory`, and
//! `--output-limit` caps what untrusted input may expand to. Output goes through [`crate::files`], so a file target only
//! appears, complete, after the last byte was written; on any error it does
//! not appear at all. Standard output gets whole verified blocks as they are
//! decoded; an error stops it after the last good block.

use std::cell::Cell;
use std::io::{self, Read, Write};
use std::path::Path;

use subrange::format::DecodeLimits;
use subrange::stream::DecodeOptions;
use subrange::{ErrorKind, Options};

use crate::cli::{CompressArgs, DecompressArgs};
use crate::exit::{CliError, CliResult};
use crate::files::{self, Input, Output};
use crate::progress::Progress;
use crate::target::OutputFile;

/// Where the output goes, from `-o` and the input.
enum Dest {
    Stdout,
    File(std::path::PathBuf),
}

fn dest(
    output: Option<&Path>,
    input: &Input,
    derive: impl Fn(&Path) -> CliResult<std::path::PathBuf>,
) -> CliResult<Dest> {
    Ok(match (output, input) {
        (Some(p), _) if p.as_os_str() == "-" => Dest::Stdout,
        (Some(p), _) => Dest::File(p.to_path_buf()),
        (None, Input::Stdin) => Dest::Stdout,
        (None, Input::File(p)) => Dest::File(derive(p)?),
    })
}

fn open_output(d: &Dest, force: bool, input: &Input) -> CliResult<Output> {
    Ok(match d {
        Dest::Stdout => Output::stdout(),
        Dest::File(p) => Output::File(OutputFile::create(p, force, input.path())?),
    })
}

/// The compression settings from the arguments.
fn options(args: &CompressArgs) -> CliResult<Options> {
    let mut opts = Options::new();
    if let Some(p) = &args.preset {
        opts.preset(p.preset());
    }
    if let Some(size) = args.block_size {
        opts.block_size(size).map_err(|e| {
            CliError::usage(format!(
                "--block-size {}: {e}",
                args.block_size.unwrap_or(0)
            ))
        })?;
    }
    // 0: all cores, and as many blocks in flight as threads.
    opts.threads(args.threads.unwrap_or(0));
    opts.blocks_in_flight(args.blocks_in_flight.map_or(0, |n| n as usize));
    if let Some(bytes) = args.reader_memory {
        opts.max_decoder_memory(bytes);
    }
    if let Err(e) = opts.check() {
        let ErrorKind::LimitExceeded {
            declared, limit, ..
        } = e.kind()
        else {
            return Err(CliError::library("cannot compress", &e));
        };
        let raised = args.reader_memory.is_some();
        return Err(CliError::usage(format!(
            "preset {} with {}-byte blocks needs {declared} bytes of memory per block to \
             decompress, above the {} limit of {limit}: choose a smaller --block-size{}",
            opts.get_preset().name(),
            opts.get_block_size(),
            if raised {
                "--reader-memory"
            } else {
                "default reader's"
            },
            if raised {
                " or a larger --reader-memory"
            } else {
                ", or write it anyway with --reader-memory SIZE (reading it then needs \
                 decompress --memory SIZE)"
            },
        )));
    }
    Ok(opts)
}

/// The decoding limits from the arguments (`--memory`, `--output-limit`).
pub fn decode_limits(args: &DecompressArgs) -> DecodeLimits {
    let mut limits = DecodeLimits::new();
    if let Some(bytes) = args.memory {
        limits.max_memory(bytes);
    }
    if let Some(bytes) = args.output_limit {
        limits.max_total(bytes);
    }
    limits
}

/// The decompression settings from the arguments.
pub fn decode_options(args: &DecompressArgs) -> DecodeOptions {
    let mut opts = DecodeOptions::new();
    opts.limits(decode_limits(args));
    opts.threads(args.threads.unwrap_or(0));
    opts
}

/// A decompression error, with the option that moves the limit it met.
fn decode_error(input: &Input, e: io::Error) -> CliError {
    let err = CliError::io(format!("cannot decompress {}", input.describe()), e);
    if err.is_quiet() {
        return err;
    }
    let hint = if err.message().contains("memory needed per block") {
        " (decompress --memory SIZE raises the limit)"
    } else if err.message().contains("total decoded length") {
        " (the --output-limit)"
    } else {
        ""
    };
    CliError::new(err.code(), format!("{}{hint}", err.message()))
}

/// Runs `subrange compress`.
pub fn compress(args: &CompressArgs) -> CliResult {
    let input = Input::from_arg(args.input.as_deref());
    let opts = options(args)?;
    let d = dest(args.output.as_deref(), &input, |p| {
        Ok(files::compressed_name(p))
    })?;
    if matches!(d, Dest::Stdout) {
        files::refuse_terminal_stdout()?;
    }
    let (reader, size) = input.open()?;
    let mut out = open_output(&d, args.force, &input)?;
    let target = out.describe();
    let progress = Progress::bytes(size, args.quiet, "compressing");
    let failed = Failed::default();
    let reader = Watched::new(progress.reader(reader), &failed.read);
    let writer = Watched::new(&mut out, &failed.write);
    if let Err(e) = subrange::compress_reader(reader, writer, &opts) {
        let e = io::Error::from(e);
        return Err(if failed.read.get() {
            CliError::io(format!("cannot read {}", input.describe()), e)
        } else {
            CliError::io(format!("cannot write {target}"), e)
        });
    }
    out.finish()
}

/// Which side of a reader-to-writer run failed.
#[derive(Default)]
struct Failed {
    read: Cell<bool>,
    write: Cell<bool>,
}

/// A reader or writer that marks `failed` when it returns an error (other
/// than `Interrupted`), so that a message can name the side that failed.
struct Watched<'a, T> {
    inner: T,
    failed: &'a Cell<bool>,
}

impl<'a, T> Watched<'a, T> {
    fn new(inner: T, failed: &'a Cell<bool>) -> Self {
        Watched { inner, failed }
    }

    fn watch<U>(&self, r: io::Result<U>) -> io::Result<U> {
        if r.as_ref()
            .is_err_and(|e| e.kind() != io::ErrorKind::Interrupted)
        {
            self.failed.set(true);
        }
        r
    }
}

impl<T: Read> Read for Watched<'_, T> {
    fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
        let r = self.inner.read(buf);
        self.watch(r)
    }
}

impl<T: Write> Write for Watched<'_, T> {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        let r = self.inner.write(buf);
        self.watch(r)
    }

    fn flush(&mut self) -> io::Result<()> {
        let r = self.inner.flush();
        self.watch(r)
    }
}

/// Runs `subrange decompress`.
pub fn decompress(args: &DecompressArgs) -> CliResult {
    if let Some(range) = &args.bytes {
        return crate::window::decompress_window(args, range);
    }
    let input = Input::from_arg(args.input.as_deref());
    let d = dest(args.output.as_deref(), &input, files::decompressed_name)?;
    let (reader, size) = input.open()?;
    let mut out = open_output(&d, args.force, &input)?;
    let target = out.describe();
    let progress = Progress::bytes(size, args.quiet, "decompressing");
    let failed = Failed::default();
    let writer = Watched::new(&mut out, &failed.write);
    let reader = progress.reader(reader);
    if let Err(e) = subrange::stream::decompress_reader(reader, writer, &decode_options(args)) {
        let e = io::Error::from(e);
        return Err(if failed.write.get() {
            CliError::io(format!("cannot write {target}"), e)
        } else {
            decode_error(&input, e)
        });
    }
    out.finish()
}
