//! `subrange bench`: every preset and flate2 on files or the demo corpus.
//!
//! For each input and codec, compression and decompression are each timed over up to
//! `--runs` runs (stopping early once a measurement has taken a second) and
//! the best run is kept — the least disturbed by the rest of the machine; one
//! untimed pass then measures the ideal cost (for presets).
//! Presets write real containers on one thread (as flate2 runs on one), with
//! the default block size unless `--block-size` says otherwise, so their
//! sizes are those `subrange compress` writes.
//! Every round trip is compared with the input; a mismatch is a bug and ends
//! the command with the internal-error code.

use std::path::Path;
use std::time::Instant;

use crate::cli::BenchArgs;
use crate::codec::{self, Codec, Kind, PresetCodec};
use crate::entropy;
use crate::exit::{CliError, CliResult, Code};
use crate::files::{self, Input};
use crate::presets::PresetName;
use crate::progress::Progress;
use crate::{json, plot, report};

/// One codec on one input.
#[derive(Debug, Clone)]
pub struct Measurement {
    /// Codec name.
    pub codec: String,
    /// Preset or baseline.
    pub kind: Kind,
    /// Compressed size in bytes.
    pub compressed: u64,
    /// Ideal cost of the coded symbols in bits (presets only).
    pub ideal_bits: Option<f64>,
    /// Best compression time in seconds.
    pub encode_secs: f64,
    /// Best decompression time in seconds.
    pub decode_secs: f64,
}

impl Measurement {
    /// Original / compressed (`None` for an empty input or output).
    pub fn ratio(&self, size: u64) -> Option<f64> {
        (size > 0 && self.compressed > 0).then(|| size as f64 / self.compressed as f64)
    }

    /// Compressed bits per original byte.
    pub fn bits_per_byte(&self, size: u64) -> Option<f64> {
        (size > 0).then(|| 8.0 * self.compressed as f64 / size as f64)
    }

    /// Ideal cost in bytes.
    pub fn ideal_bytes(&self) -> Option<f64> {
        self.ideal_bits.map(|b| b / 8.0)
    }

    /// How much larger the output is than the ideal cost, in percent.
    pub fn overhead_pct(&self) -> Option<f64> {
        let ideal = self.ideal_bytes()?;
        (ideal > 0.0).then(|| 100.0 * (self.compressed as f64 - ideal) / ideal)
    }

    /// Compression speed in MB/s (10^6 bytes of input per second).
    pub fn encode_mb_s(&self, size: u64) -> Option<f64> {
        mb_s(size, self.encode_secs)
    }

    /// Decompression speed in MB/s (10^6 bytes of output per second).
    pub fn decode_mb_s(&self, size: u64) -> Option<f64> {
        mb_s(size, self.decode_secs)
    }
}

fn mb_s(size: u64, secs: f64) -> Option<f64> {
    (size > 0 && secs > 0.0).then(|| size as f64 / 1e6 / secs)
}

/// All codecs on one input.
#[derive(Debug, Clone)]
pub struct FileReport {
    /// The data set or file name.
    pub name: String,
    /// Input size in bytes.
    pub size: u64,
    /// Order-0 entropy of the input, bits per byte.
    pub entropy0: f64,
    /// One entry per codec, presets first.
    pub results: Vec<Measurement>,
}

impl FileReport {
    /// The preset with the smallest output.
    pub fn best_preset(&self) -> Option<&Measurement> {
        self.results
            .iter()
            .filter(|m| m.kind == Kind::Preset)
            .min_by_key(|m| m.compressed)
    }

    /// The measurement of the named codec.
    pub fn get(&self, codec: &str) -> Option<&Measurement> {
        self.results.iter().find(|m| m.codec == codec)
    }
}

/// What a run's time is measured with.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Clock {
    /// Elapsed (wall-clock) time.
    Wall,
    /// The measuring thread's CPU time.
    Cpu,
}

impl Clock {
    /// The clock named on the command line (`wall` or `cpu`).
    pub fn from_arg(name: &str) -> Clock {
        if name == "cpu" {
            Clock::Cpu
        } else {
            Clock::Wall
        }
    }

    /// Runs `f` and returns its result and the seconds it took.
    fn time<T>(self, f: impl FnOnce() -> T) -> (T, f64) {
        match self {
            Clock::Wall => {
                let start = Instant::now();
                let out = f();
                (out, start.elapsed().as_secs_f64())
            }
            Clock::Cpu => {
                let start = cpu_time::ThreadTime::now();
                let out = f();
                (out, start.elapsed().as_secs_f64())
            }
        }
    }

    /// How reports describe the clock.
    pub fn describe(self) -> &'static str {
        match self {
            Clock::Wall => "second",
            Clock::Cpu => "second of the measuring thread's CPU time",
        }
    }
}

/// The whole run.
#[derive(Debug, Clone)]
pub struct BenchReport {
    /// Per input.
    pub files: Vec<FileReport>,
    /// Most timed runs per measurement.
    pub runs: u32,
    /// What the times are.
    pub clock: Clock,
    /// Whether the inputs are the built-in demo corpus.
    pub demo_corpus: bool,
}

/// Runs `subrange bench`.
pub fn run(args: &BenchArgs) -> CliResult {
    let inputs = load_inputs(args)?;
    let presets = if args.preset.is_empty() {
        PresetName::all()
    } else {
        let mut v = args.preset.clone();
        v.dedup();
        v
    };
    let mut codecs: Vec<Box<dyn Codec>> = Vec::new();
    for p in &presets {
        codecs.push(Box::new(PresetCodec::new(p.preset(), args.block_size, 1)?));
    }
    codecs.extend(codec::baselines());

    let clock = Clock::from_arg(&args.clock);
    let mut progress = Progress::steps((inputs.len() * codecs.len()) as u64, args.quiet);
    let mut files = Vec::with_capacity(inputs.len());
    for (name, data) in &inputs {
        let mut results = Vec::with_capacity(codecs.len());
        for c in &codecs {
            progress.set_message(format!("{name}: {}", c.name()));
            results.push(measure(c.as_ref(), name, data, args.runs, clock)?);
            progress.inc(1);
        }
        files.push(FileReport {
            name: name.clone(),
            size: data.len() as u64,
            entropy0: entropy::order0(data),
            results,
        });
    }
    progress.finish();
    let report = BenchReport {
        files,
        runs: args.runs,
        clock,
        demo_corpus: args.files.is_empty(),
    };

    if let Some(path) = &args.plot {
        let svg = plot::render(&report)?;
        files::write_file(path, args.force, svg.as_bytes())?;
    }
    let text = if args.json {
        json::bench(&report)
    } else {
        report::bench(&report)
    };
    crate::print_stdout(&text)
}

/// The inputs: the named files, or the demo corpus.
fn load_inputs(args: &BenchArgs) -> CliResult<Vec<(String, Vec<u8>)>> {
    if args.files.is_empty() {
        let size = usize::try_from(args.corpus_size)
            .ok()
            .filter(|&s| s <= 1 << 30)
            .ok_or_else(|| CliError::usage("--corpus-size may be at most 1G"))?;
        return Ok(subrange::corpus::demo(size)
            .into_iter()
            .map(|d| (d.name.to_string(), d.data))
            .collect());
    }
    args.files
        .iter()
        .map(|p| {
            let input = Input::from_arg(Some(p));
            let (data, _) = input.read_prefix(None)?;
            Ok((display_name(p), data))
        })
        .collect()
}

fn display_name(p: &Path) -> String {
    if p.as_os_str() == "-" {
        "standard input".to_string()
    } else {
        p.display().to_string()
    }
}

/// Best-of-`runs` timing of `f` on `clock`; stops early after a second in
/// total.
fn best_time<T>(
    runs: u32,
    clock: Clock,
    mut f: impl FnMut() -> CliResult<T>,
) -> CliResult<(T, f64)> {
    let mut best = f64::INFINITY;
    let mut spent = 0.0;
    let mut last = None;
    for _ in 0..runs.max(1) {
        let (out, secs) = clock.time(&mut f);
        let out = out?;
        best = best.min(secs);
        spent += secs;
        last = Some(out);
        if spent > 1.0 {
            break;
        }
    }
    match last {
        Some(out) => Ok((out, best)),
        None => Err(CliError::new(Code::Internal, "bench ran no measurement")),
    }
}

fn measure(
    c: &dyn Codec,
    name: &str,
    data: &[u8],
    runs: u32,
    clock: Clock,
) -> CliResult<Measurement> {
    let context = |e: CliError| {
        CliError::new(
            e.code(),
            format!("bench: {} on {name}: {}", c.name(), e.message()),
        )
    };
    let (packed, encode_secs) = best_time(runs, clock, || c.compress(data)).map_err(context)?;
    let ideal_bits = c.ideal_bits(data, &packed).map_err(context)?;
    let (unpacked, decode_secs) =
        best_time(runs, clock, || c.decompress(&packed, data.len())).map_err(context)?;
    if unpacked != data {
        return Err(CliError::new(
            Code::Internal,
            format!(
                "bench: {} did not reproduce {name} (a bug; please report it)",
                c.name()
            ),
        ));
    }
    Ok(Measurement {
        codec: c.name(),
        kind: c.kind(),
        compressed: packed.len() as u64,
        ideal_bits,
        encode_secs,
        decode_secs,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn m(compressed: u64, ideal_bits: Option<f64>) -> Measurement {
        Measurement {
            codec: "x".into(),
            kind: Kind::Preset,
            compressed,
            ideal_bits,
            encode_secs: 0.5,
            decode_secs: 0.25,
        }
    }

    #[test]
    fn derived_figures() {
        let x = m(250, Some(1600.0));
        assert_eq!(x.ratio(1000), Some(4.0));
        assert_eq!(x.bits_per_byte(1000), Some(2.0));
        assert_eq!(x.ideal_bytes(), Some(200.0));
        assert_eq!(x.overhead_pct(), Some(25.0));
        assert_eq!(x.encode_mb_s(1_000_000), Some(2.0));
        assert_eq!(x.decode_mb_s(1_000_000), Some(4.0));
        // Empty inputs have no ratio or speed, rather than inf or NaN.
        assert_eq!(m(0, Some(0.0)).ratio(0), None);
        assert_eq!(m(0, Some(0.0)).overhead_pct(), None);
        assert_eq!(x.encode_mb_s(0), None);
    }

    #[test]
    fn best_of_runs_returns_the_minimum() {
        for clock in [Clock::Wall, Clock::Cpu] {
            let mut calls = 0;
            let (out, secs) = best_time(3, clock, || {
                calls += 1;
                Ok(calls)
            })
            .unwrap();
            assert_eq!(out, 3);
            assert!(secs >= 0.0);
        }
        // Busy work shows on the thread's CPU clock.
        let (sum, secs) = Clock::Cpu.time(|| (0..20_000_000u64).map(|i| i ^ (i >> 3)).sum::<u64>());
        assert!(sum > 0 && secs > 0.0);
    }
}
