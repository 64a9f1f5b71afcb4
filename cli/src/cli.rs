//! Command-line arguments (clap derive).
//!
//! Five commands: `compress`, `decompress`, `bench`, `inspect`, `analyze`.
//! Values are checked while parsing, so a bad size, thread count or preset
//! name is a usage error (exit 2) with clap's message, before any file is
//! touched.

use std::path::PathBuf;

use clap::{Args, Parser, Subcommand};

use crate::baseline::{self, BaselineList};
use crate::exit::EXIT_CODES_HELP;
use crate::presets::{self, PresetName};

/// Streaming arithmetic-coding compression.
#[derive(Debug, Parser)]
#[command(
    name = "subrange",
    version,
    about = "Arithmetic-coding compression: compress, decompress, bench, inspect, analyze",
    long_about = "Compress and decompress files with an integer range coder and a choice of \
models (presets), measure the presets against general compressors (flate2, zstd, xz, \
bzip2, brotli, lz4) on your own data, look inside a compressed file block by block, \
and estimate how compressible a file is.\n\n\
Compressed files end in '.sr'. Run 'subrange <command> --help' for each command's options.",
    after_long_help = EXIT_CODES_HELP,
    propagate_version = true
)]
pub struct Cli {
    /// The command to run.
    #[command(subcommand)]
    pub command: Command,
}

/// The commands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Compress a file (or standard input).
    #[command(after_long_help = EXIT_CODES_HELP)]
    Compress(CompressArgs),
    /// Decompress a '.sr' file (or standard input).
    #[command(after_long_help = EXIT_CODES_HELP)]
    Decompress(DecompressArgs),
    /// Measure every preset against general compressors on files or the built-in demo corpus.
    #[command(after_long_help = EXIT_CODES_HELP)]
    Bench(BenchArgs),
    /// Show a compressed file's header and blocks, checking every block.
    #[command(after_long_help = EXIT_CODES_HELP)]
    Inspect(InspectArgs),
    /// Estimate a file's entropy (orders 0-3) and each preset's size.
    #[command(after_long_help = EXIT_CODES_HELP)]
    Analyze(AnalyzeArgs),
}

/// Arguments of `subrange compress`.
#[derive(Debug, Args)]
pub struct CompressArgs {
    /// File to compress; absent or '-' reads standard input.
    pub input: Option<PathBuf>,

    /// Where to write: a file name, or '-' for standard output. Default:
    /// INPUT with '.sr' appended, or standard output when reading standard
    /// input. Compressed data is never written to a terminal.
    #[arg(short, long, value_name = "OUTPUT")]
    pub output: Option<PathBuf>,

    /// Model preset to code with; see 'subrange bench' to choose.
    #[arg(
        short,
        long,
        value_name = "NAME",
        value_parser = presets::parse_name,
        long_help = presets::preset_help()
    )]
    pub preset: Option<PresetName>,

    /// Bytes per independently decodable block (suffixes K, M, G).
    #[arg(short, long, value_name = "SIZE", value_parser = parse_size, long_help = block_size_help())]
    pub block_size: Option<u64>,

    /// Threads coding blocks (default: all cores; at most 256). The output
    /// is the same whatever the count.
    #[arg(short, long, value_name = "N", value_parser = parse_threads)]
    pub threads: Option<usize>,

    /// Blocks held in memory at once (default: one more than threads: one
    /// is read or written while the others are coded). Memory stays within
    /// this many times the block size plus what a block's model needs.
    #[arg(long, value_name = "N", value_parser = clap::value_parser!(u32).range(1..=4096))]
    pub blocks_in_flight: Option<u32>,

    /// Let the output need up to SIZE of memory per block to decompress
    /// (suffixes K, M, G). By default compress refuses a preset and block
    /// size that a default decompress (256M) could not read; whoever reads
    /// a file written with this needs 'decompress --memory SIZE'.
    #[arg(long, value_name = "SIZE", value_parser = parse_size)]
    pub reader_memory: Option<u64>,

    /// Overwrite OUTPUT if it is an existing regular file. Devices, FIFOs
    /// and sockets are written in place without it.
    #[arg(short, long)]
    pub force: bool,

    /// No progress bar.
    #[arg(short, long)]
    pub quiet: bool,
}

/// Arguments of `subrange decompress`.
#[derive(Debug, Args)]
pub struct DecompressArgs {
    /// File to decompress; absent or '-' reads standard input.
    pub input: Option<PathBuf>,

    /// Where to write: a file name, or '-' for standard output. Default:
    /// INPUT without its '.sr' extension (other names are refused), or
    /// standard output when reading standard input (and with --bytes).
    #[arg(short, long, value_name = "OUTPUT")]
    pub output: Option<PathBuf>,

    /// Decompress only the bytes START..END of the original (END excluded;
    /// suffixes K, M, G; 'START..' runs to the end, '..END' from the
    /// start). From a file only the blocks holding them are decoded;
    /// standard input is decoded from its start. Output goes to standard
    /// output unless -o names a file.
    #[arg(long, value_name = "START..END", value_parser = crate::window::parse_byte_range)]
    pub bytes: Option<crate::window::ByteRange>,

    /// Most memory decoding one block may need (suffixes K, M, G; default
    /// 256M). A file whose header declares more is refused before anything
    /// is allocated; files written by 'compress --reader-memory SIZE' need
    /// at least that SIZE here.
    #[arg(long, value_name = "SIZE", value_parser = parse_size)]
    pub memory: Option<u64>,

    /// Refuse to write more than SIZE decoded bytes (suffixes K, M, G;
    /// default: no cap). For input from others: a container of a few
    /// hundred bytes can legitimately expand to gigabytes. Nothing is
    /// written to a file target when the cap is passed.
    #[arg(long, value_name = "SIZE", value_parser = parse_size)]
    pub output_limit: Option<u64>,

    /// Threads decoding blocks (default: all cores; at most 256). One more
    /// block than threads is held in memory, fewer when --memory would be
    /// passed.
    #[arg(short, long, value_name = "N", value_parser = parse_threads)]
    pub threads: Option<usize>,

    /// Overwrite OUTPUT if it is an existing regular file. Devices, FIFOs
    /// and sockets are written in place without it.
    #[arg(short, long)]
    pub force: bool,

    /// No progress bar.
    #[arg(short, long)]
    pub quiet: bool,
}

/// Arguments of `subrange bench`.
#[derive(Debug, Args)]
#[command(
    long_about = "Compress and decompress each file with each preset and with \
general compressors (flate2, zstd, xz, bzip2, brotli, lz4; see --baselines), all in this \
process on one thread, on the same buffers and with the same clock; check every round \
trip; and print a table per file, smallest output first: compressed size, ratio \
(original / compressed), bits per byte, the ideal cost of what a preset's models coded \
(the sum of -log2 p over all symbols) and the coding overhead above it (headers, tables, \
coder flushes), and encode / decode speed in MB/s (10^6 bytes of uncompressed data per \
second, best of --runs runs), with the smallest and the fastest marked. A codec that \
fails on a file gets the reason in its row. Then a summary per file and over all files: \
the smallest preset against the smallest baseline, and each preset's speed against the \
baseline nearest to it in size.\n\nWith no FILES, the built-in demo corpus is used: \
synthetic river-gauge telemetry (CSV and binary frames), text, skewed and random bytes."
)]
pub struct BenchArgs {
    /// Files to measure (each read whole into memory); none: the demo corpus.
    pub files: Vec<PathBuf>,

    /// Presets to measure (repeat or separate with commas; default: all).
    #[arg(
        short,
        long,
        value_name = "NAME",
        value_delimiter = ',',
        value_parser = presets::parse_name,
        long_help = presets::preset_help()
    )]
    pub preset: Vec<PresetName>,

    /// General compressors to measure (default: all, each at its default
    /// setting; 'all-levels': fast, default and strongest; 'none').
    #[arg(
        long,
        value_name = "LIST",
        value_parser = baseline::parse_list,
        long_help = baseline::baselines_help()
    )]
    pub baselines: Option<BaselineList>,

    /// Also write an SVG chart of bits per byte against encode and decode
    /// speed, every codec a labelled point.
    #[arg(long, value_name = "FILE.svg")]
    pub plot: Option<PathBuf>,

    /// Print the results as JSON on standard output instead of tables.
    #[arg(long)]
    pub json: bool,

    /// Bytes per data set of the demo corpus (suffixes K, M, G).
    #[arg(long, value_name = "SIZE", default_value = "512K", value_parser = parse_size)]
    pub corpus_size: u64,

    /// Timed runs per measurement; the best is reported. Measurements that
    /// take long stop early (after one second of runs).
    #[arg(long, value_name = "N", default_value_t = 3, value_parser = clap::value_parser!(u32).range(1..=100))]
    pub runs: u32,

    /// Block size for the presets (suffixes K, M, G; default: the container's).
    #[arg(short, long, value_name = "SIZE", value_parser = parse_size)]
    pub block_size: Option<u64>,

    /// What a run's time is: 'wall' (elapsed time) or 'cpu' (the measuring
    /// thread's CPU time, steadier on a busy machine; every codec runs on
    /// that one thread).
    #[arg(long, value_name = "CLOCK", default_value = "wall", value_parser = ["wall", "cpu"])]
    pub clock: String,

    /// Overwrite the --plot file if it exists.
    #[arg(short, long)]
    pub force: bool,

    /// No progress bar.
    #[arg(short, long)]
    pub quiet: bool,
}

/// Arguments of `subrange inspect`.
#[derive(Debug, Args)]
#[command(
    long_about = "Print a compressed file's header (format version, preset and \
its parameters, block size) and one line per block: raw and coded size, bits per byte \
and whether the block decodes and its CRC-32 matches. A damaged file is reported block \
by block; the exit code is 3 when any block is damaged."
)]
pub struct InspectArgs {
    /// The compressed file ('-' reads standard input).
    pub file: PathBuf,
}

/// Arguments of `subrange analyze`.
#[derive(Debug, Args)]
#[command(
    long_about = "Estimate how compressible a file is: the empirical entropy of \
orders 0 to 3 (H(X | previous k bytes), the plug-in estimate from counts), a chart of \
the byte histogram, and the size each preset would reach beside general compressors \
(see --baselines), so you can choose a preset before compressing.\n\nThe plug-in \
estimate is exact for the sample itself but optimistic as a prediction when contexts \
are rare: the report shows how many distinct contexts each order saw."
)]
pub struct AnalyzeArgs {
    /// The file to analyze ('-' reads standard input).
    pub file: PathBuf,

    /// Analyze at most this many bytes from the start (suffixes K, M, G);
    /// preset sizes are then scaled to the whole file.
    #[arg(long, value_name = "SIZE", default_value = "8M", value_parser = parse_size)]
    pub sample: u64,

    /// General compressors to size beside the presets (default: all, each
    /// at its default setting; 'all-levels'; 'none').
    #[arg(
        long,
        value_name = "LIST",
        value_parser = baseline::parse_list,
        long_help = baseline::baselines_help()
    )]
    pub baselines: Option<BaselineList>,
}

/// `--block-size` long help, with the library's default and limits.
fn block_size_help() -> String {
    format!(
        "Bytes per independently decodable block, with an optional suffix: K (2^10), \
M (2^20) or G (2^30), e.g. 256K or 4M; from {} bytes to {} MiB, default {} KiB. Larger \
blocks let adaptive models learn longer; smaller ones limit what one damaged byte can \
take with it.",
        subrange::stream::MIN_BLOCK_SIZE,
        subrange::format::MAX_BLOCK_SIZE >> 20,
        subrange::stream::DEFAULT_BLOCK_SIZE >> 10,
    )
}

/// Parses a byte count with an optional binary suffix: `4096`, `256K`, `4M`,
/// `1G` (also `KiB`, `MiB`, `GiB`, lower case).
pub fn parse_size(text: &str) -> Result<u64, String> {
    let t = text.trim();
    let split = t.find(|c: char| !c.is_ascii_digit()).unwrap_or(t.len());
    let (digits, suffix) = t.split_at(split);
    if digits.is_empty() {
        return Err(format!(
            "'{text}' is not a size: expected a number with an optional K, M or G suffix, e.g. 256K"
        ));
    }
    let shift = match suffix.to_ascii_lowercase().as_str() {
        "" | "b" => 0,
        "k" | "kb" | "kib" => 10,
        "m" | "mb" | "mib" => 20,
        "g" | "gb" | "gib" => 30,
        _ => {
            return Err(format!(
                "'{text}' has an unknown suffix '{suffix}': use K, M or G (powers of 1024)"
            ))
        }
    };
    let n: u64 = digits
        .parse()
        .map_err(|_| format!("'{text}' is too large"))?;
    n.checked_mul(1u64 << shift)
        .ok_or_else(|| format!("'{text}' is too large"))
}

/// Parses a thread count: 1 to the library's cap.
fn parse_threads(text: &str) -> Result<usize, String> {
    let max = subrange::stream::MAX_THREADS;
    match text.trim().parse::<usize>() {
        Ok(n) if (1..=max).contains(&n) => Ok(n),
        _ => Err(format!("'{text}' is not a thread count from 1 to {max}")),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use clap::CommandFactory;

    #[test]
    fn definitions_are_consistent() {
        Cli::command().debug_assert();
    }

    #[test]
    fn sizes_with_suffixes() {
        assert_eq!(parse_size("4096"), Ok(4096));
        assert_eq!(parse_size("256K"), Ok(256 << 10));
        assert_eq!(parse_size("4M"), Ok(4 << 20));
        assert_eq!(parse_size("4mib"), Ok(4 << 20));
        assert_eq!(parse_size("1G"), Ok(1 << 30));
        assert!(parse_size("").is_err());
        assert!(parse_size("K").is_err());
        assert!(parse_size("12Q").is_err());
        assert!(parse_size("-1").is_err());
        assert!(parse_size("99999999999999999999G").is_err());
        assert!(parse_size("18446744073709551615G").is_err());
    }

    #[test]
    fn thread_counts() {
        assert_eq!(parse_threads("3"), Ok(3));
        assert!(parse_threads("0").is_err());
        assert_eq!(parse_threads("256"), Ok(256));
        assert!(parse_threads("257").is_err());
        assert!(parse_threads("many").is_err());
    }
}
