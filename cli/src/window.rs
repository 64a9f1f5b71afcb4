//! `subrange decompress --bytes START..END`: one byte range of the original.
//!
//! From a file, the blocks holding the range are found with the file's
//! block index (or a walk over the block frames of a file without one) and
//! only they are decoded. From standard input, which cannot seek, the
//! stream is decoded from the start and the bytes before the range are
//! dropped. A range that does not lie within the original is refused as a
//! usage error before any output is created (from standard input: when the
//! data ends first, and a file target is then not created).

use std::fs::File;
use std::io::{self, Read, Seek, SeekFrom, Write};

use subrange::stream::IndexedReader;
use subrange::Decompressor;

use crate::cli::{parse_size, DecompressArgs};
use crate::exit::{CliError, CliResult};
use crate::files::{quote, Input, Output};
use crate::target::OutputFile;

/// A byte range of the original, as given: `START..END`, `START..` (to the
/// end) or `..END` (from the start).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ByteRange {
    /// First byte.
    pub start: u64,
    /// One past the last byte; `None`: the end of the data.
    pub end: Option<u64>,
}

/// Parses `START..END` with sizes as `--block-size` takes them.
pub fn parse_byte_range(text: &str) -> Result<ByteRange, String> {
    let Some((a, b)) = text.split_once("..") else {
        return Err(format!(
            "'{text}' is not a byte range: expected START..END, START.. or ..END, e.g. 1M..2M"
        ));
    };
    let start = if a.trim().is_empty() {
        0
    } else {
        parse_size(a)?
    };
    let end = if b.trim().is_empty() {
        None
    } else {
        Some(parse_size(b)?)
    };
    if end.is_some_and(|e| e < start) {
        return Err(format!("'{text}' ends before it starts"));
    }
    Ok(ByteRange { start, end })
}

fn outside(range: &ByteRange, len: u64) -> CliError {
    let end = range.end.map_or(String::new(), |e| e.to_string());
    CliError::usage(format!(
        "--bytes {}..{end}: the original holds only {len} bytes",
        range.start
    ))
}

fn output(args: &DecompressArgs, input: &Input) -> CliResult<Output> {
    Ok(match args.output.as_deref() {
        None => Output::stdout(),
        Some(p) if p.as_os_str() == "-" => Output::stdout(),
        Some(p) => Output::File(OutputFile::create(p, args.force, input.path())?),
    })
}

/// Copies `len` bytes of `reader` to `out`; returns how many there were.
fn copy(reader: impl Read, len: u64, out: &mut Output, what: &str) -> CliResult<u64> {
    let target = out.describe();
    let mut reader = reader.take(len);
    let mut buf = vec![0u8; 256 << 10];
    let mut copied = 0;
    loop {
        let n = match reader.read(&mut buf) {
            Ok(0) => return Ok(copied),
            Ok(n) => n,
            Err(e) if e.kind() == io::ErrorKind::Interrupted => continue,
            Err(e) => return Err(CliError::io(format!("cannot decompress {what}"), e)),
        };
        out.write_all(&buf[..n])
            .map_err(|e| CliError::io(format!("cannot write {target}"), e))?;
        copied += n as u64;
    }
}

/// Runs `subrange decompress --bytes`.
pub fn decompress_window(args: &DecompressArgs, range: &ByteRange) -> CliResult {
    let input = Input::from_arg(args.input.as_deref());
    match &input {
        Input::File(path) => {
            let what = quote(path);
            let file =
                File::open(path).map_err(|e| CliError::io(format!("cannot open {what}"), e))?;
            let mut reader =
                IndexedReader::with_limits(file, &crate::compress::decode_limits(args))
                    .map_err(|e| CliError::library(format!("cannot decompress {what}"), &e))?;
            let len = reader.len();
            let end = range.end.unwrap_or(len);
            if range.start > end || end > len {
                return Err(outside(range, len));
            }
            reader
                .seek(SeekFrom::Start(range.start))
                .map_err(|e| CliError::io(format!("cannot decompress {what}"), e))?;
            let mut out = output(args, &input)?;
            copy(&mut reader, end - range.start, &mut out, &what)?;
            out.finish()
        }
        Input::Stdin => {
            let what = input.describe();
            let mut dec = Decompressor::with_options(
                io::stdin().lock(),
                &crate::compress::decode_options(args),
            );
            let mut out = output(args, &input)?;
            let skipped = io::copy(&mut (&mut dec).take(range.start), &mut io::sink())
                .map_err(|e| CliError::io(format!("cannot decompress {what}"), e))?;
            let want = range.end.map_or(u64::MAX, |e| e - range.start);
            let copied = copy(&mut dec, want, &mut out, &what)?;
            // The whole stream is read and checked to its end record (so
            // that a damaged or truncated stream is reported).
            let rest = io::copy(&mut dec, &mut io::sink())
                .map_err(|e| CliError::io(format!("cannot decompress {what}"), e))?;
            let len = skipped + copied + rest;
            if skipped < range.start || range.end.is_some_and(|_| copied < want) {
                return Err(outside(range, len));
            }
            out.finish()
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ranges_parse_with_sizes_and_open_ends() {
        let r = |start, end| Ok(ByteRange { start, end });
        assert_eq!(parse_byte_range("1K..2K"), r(1024, Some(2048)));
        assert_eq!(parse_byte_range("5.."), r(5, None));
        assert_eq!(parse_byte_range("..1M"), r(0, Some(1 << 20)));
        assert_eq!(parse_byte_range("7..7"), r(7, Some(7)));
        assert!(parse_byte_range("9..3").is_err());
        assert!(parse_byte_range("12").is_err());
        assert!(parse_byte_range("1X..2").is_err());
    }
}
