//! `subrange bench`: every preset and the general-compressor baselines on
//! files or the demo corpus.
//!
//! For each input and codec, compression and decompression are each timed over up to
//! `--runs` runs (stopping early once a measurement has taken a second) and
//! the best run is kept — the least disturbed by the rest of the machine; one
//! untimed pass then measures the ideal cost (for presets).
//! Presets write real containers on one thread, as every baseline runs on
//! one: all codecs run in this process, on this thread, on the same input
//! buffer, timed by the same clock. Presets use the default block size
//! unless `--block-size` says otherwise, so their sizes are those
//! `subrange compress` writes.
//!
//! Every round trip is compared with the input. A codec that fails — an
//! error from its library, an allocation it cannot have, output that does
//! not decode to the input — gets the reason in its row and the other rows
//! are measured as usual. A failing baseline leaves the exit status at 0 (the
//! report says what failed); a failing preset is a bug in this crate, and
//! after the report the command ends with the internal-error code.

use std::path::Path;
use std::time::Instant;

use crate::baseline::Baseline;
use crate::cli::BenchArgs;
use crate::codec::{Codec, Kind, PresetCodec};
use crate::entropy;
use crate::exit::{CliError, CliResult, Code};
use crate::files::{self, Input};
use crate::presets::PresetName;
use crate::progress::Progress;
use crate::{json, plot, report};

/// What one codec made of one input.
#[derive(Debug, Clone, PartialEq)]
pub struct Figures {
    /// Compressed size in bytes.
    pub compressed: u64,
    /// Ideal cost of the coded symbols in bits (presets only).
    pub ideal_bits: Option<f64>,
    /// Best compression time in seconds.
    pub encode_secs: f64,
    /// Best decompression time in seconds.
    pub decode_secs: f64,
}

impl Figures {
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

/// One codec on one input: its figures, or why it has none.
#[derive(Debug, Clone, PartialEq)]
pub struct Measurement {
    /// Codec name.
    pub codec: String,
    /// Preset or baseline.
    pub kind: Kind,
    /// Which compressor and setting, for a baseline.
    pub baseline: Option<Baseline>,
    /// The figures, or the reason the codec failed on this input.
    pub outcome: Result<Figures, String>,
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
    /// One entry per codec, in measurement order: presets, then baselines.
    pub results: Vec<Measurement>,
}

impl FileReport {
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
    let baselines = args.baselines.clone().unwrap_or_default();
    codecs.extend(baselines.0.iter().map(|&b| Box::new(b) as Box<dyn Codec>));

    let clock = Clock::from_arg(&args.clock);
    let mut progress = Progress::steps((inputs.len() * codecs.len()) as u64, args.quiet);
    let files = measure_all(&codecs, &inputs, args.runs, clock, &mut progress);
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
    crate::print_stdout(&text)?;
    match preset_failure(&report) {
        Some(err) => Err(err),
        None => Ok(()),
    }
}

/// Measures every codec on every input, in that order; failures are rows.
pub fn measure_all(
    codecs: &[Box<dyn Codec>],
    inputs: &[(String, Vec<u8>)],
    runs: u32,
    clock: Clock,
    progress: &mut Progress,
) -> Vec<FileReport> {
    let mut files = Vec::with_capacity(inputs.len());
    for (name, data) in inputs {
        let mut results = Vec::with_capacity(codecs.len());
        for c in codecs {
            progress.set_message(format!("{name}: {}", c.name()));
            results.push(measure(c.as_ref(), data, runs, clock));
            progress.inc(1);
        }
        files.push(FileReport {
            name: name.clone(),
            size: data.len() as u64,
            entropy0: entropy::order0(data),
            results,
        });
    }
    files
}

/// The first preset that failed, as the error the command ends with.
fn preset_failure(report: &BenchReport) -> Option<CliError> {
    report.files.iter().find_map(|f| {
        f.results.iter().find_map(|m| match (&m.outcome, m.kind) {
            (Err(why), Kind::Preset) => Some(CliError::new(
                Code::Internal,
                format!(
                    "bench: preset {} failed on {}: {why} (a bug; please report it)",
                    m.codec, f.name
                ),
            )),
            _ => None,
        })
    })
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

/// One codec on one input. Never fails: a failure is the row's outcome.
fn measure(c: &dyn Codec, data: &[u8], runs: u32, clock: Clock) -> Measurement {
    Measurement {
        codec: c.name(),
        kind: c.kind(),
        baseline: c.baseline(),
        outcome: figures(c, data, runs, clock),
    }
}

fn figures(c: &dyn Codec, data: &[u8], runs: u32, clock: Clock) -> Result<Figures, String> {
    let why = |e: CliError| e.message().to_string();
    let (packed, encode_secs) =
        best_time(runs, clock, || c.compress(data)).map_err(|e| format!("compress: {}", why(e)))?;
    let ideal_bits = c
        .ideal_bits(data, &packed)
        .map_err(|e| format!("ideal cost: {}", why(e)))?;
    let (unpacked, decode_secs) = best_time(runs, clock, || c.decompress(&packed, data.len()))
        .map_err(|e| format!("decompress: {}", why(e)))?;
    if let Some(at) = first_difference(&unpacked, data) {
        return Err(format!(
            "round trip differs from the input at byte {at} (decoded {} of {} bytes)",
            unpacked.len(),
            data.len()
        ));
    }
    Ok(Figures {
        compressed: packed.len() as u64,
        ideal_bits,
        encode_secs,
        decode_secs,
    })
}

/// Where `a` and `b` first differ (`None` if they are equal).
fn first_difference(a: &[u8], b: &[u8]) -> Option<usize> {
    match a.iter().zip(b).position(|(x, y)| x != y) {
        Some(i) => Some(i),
        None => (a.len() != b.len()).then(|| a.len().min(b.len())),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn m(compressed: u64, ideal_bits: Option<f64>) -> Figures {
        Figures {
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
            assert_eq!(calls, 3);
            assert!(secs.is_finite());
        }
        // Busy work shows on the thread's CPU clock.
        let (sum, secs) = Clock::Cpu.time(|| (0..20_000_000u64).map(|i| i ^ (i >> 3)).sum::<u64>());
        assert!(sum > 0 && secs > 0.0);
    }

    /// A codec that fails in the way it is told to.
    struct Faulty(Fault);

    #[derive(Clone, Copy)]
    enum Fault {
        Compress,
        Decompress,
        WrongBytes,
        ShortOutput,
    }

    impl Codec for Faulty {
        fn name(&self) -> String {
            "faulty".into()
        }
        fn kind(&self) -> Kind {
            Kind::Baseline
        }
        fn compress(&self, data: &[u8]) -> CliResult<Vec<u8>> {
            match self.0 {
                Fault::Compress => Err(CliError::failure("out of memory: 1 TiB refused")),
                _ => Ok(data.to_vec()),
            }
        }
        fn decompress(&self, packed: &[u8], _raw_len: usize) -> CliResult<Vec<u8>> {
            match self.0 {
                Fault::Decompress => Err(CliError::failure("corrupt stream")),
                Fault::WrongBytes => {
                    let mut v = packed.to_vec();
                    v[7] ^= 1;
                    Ok(v)
                }
                Fault::ShortOutput => Ok(packed[..packed.len() - 1].to_vec()),
                Fault::Compress => unreachable!(),
            }
        }
        fn ideal_bits(&self, _data: &[u8], _packed: &[u8]) -> CliResult<Option<f64>> {
            Ok(None)
        }
    }

    #[test]
    fn a_failing_codec_is_a_row_with_its_reason_and_the_rest_is_measured() {
        let data = subrange::corpus::gauge_csv(1, 5000);
        let inputs = vec![("gauge".to_string(), data.clone())];
        let mut codecs: Vec<Box<dyn Codec>> = vec![Box::new(
            PresetCodec::new(subrange::preset::Preset::default(), None, 1).unwrap(),
        )];
        for fault in [
            Fault::Compress,
            Fault::Decompress,
            Fault::WrongBytes,
            Fault::ShortOutput,
        ] {
            codecs.push(Box::new(Faulty(fault)));
        }
        codecs.push(Box::new(Baseline::new(
            crate::baseline::Family::Flate2,
            crate::baseline::Level::Default,
        )));
        let mut progress = Progress::steps(0, true);
        let files = measure_all(&codecs, &inputs, 1, Clock::Cpu, &mut progress);
        let r = &files[0].results;
        assert_eq!(r.len(), 6);
        assert!(r[0].outcome.is_ok() && r[5].outcome.is_ok());
        assert_eq!(r[5].codec, "flate2-6");
        let why = |i: usize| r[i].outcome.clone().unwrap_err();
        assert!(
            why(1).starts_with("compress: ") && why(1).contains("1 TiB"),
            "{}",
            why(1)
        );
        assert!(
            why(2).starts_with("decompress: corrupt stream"),
            "{}",
            why(2)
        );
        assert!(
            why(3).contains("differs from the input at byte 7"),
            "{}",
            why(3)
        );
        let short = why(4);
        assert!(
            short.contains(&format!("at byte {}", data.len() - 1)),
            "{short}"
        );
        assert!(short.contains(&format!("decoded {} of {}", data.len() - 1, data.len())));

        let report = BenchReport {
            files,
            runs: 1,
            clock: Clock::Cpu,
            demo_corpus: false,
        };
        // Baseline failures leave the command's status alone.
        assert!(preset_failure(&report).is_none());
        // Every renderer shows the reasons and still reports the others.
        let text = report::bench(&report);
        assert!(
            text.contains("1 TiB") && text.contains("corrupt stream"),
            "{text}"
        );
        assert!(
            text.contains("flate2-6") && text.contains("Summary"),
            "{text}"
        );
        let json = json::bench(&report);
        assert!(
            json.contains("\"error\": \"decompress: corrupt stream\""),
            "{json}"
        );
        assert!(plot::render(&report).is_ok());
    }

    #[test]
    fn a_failing_preset_ends_the_command_after_the_report() {
        let mut file = FileReport {
            name: "in".into(),
            size: 10,
            entropy0: 1.0,
            results: vec![Measurement {
                codec: "static".into(),
                kind: Kind::Preset,
                baseline: None,
                outcome: Err("decompress: bad".into()),
            }],
        };
        let report = |file: &FileReport| BenchReport {
            files: vec![file.clone()],
            runs: 1,
            clock: Clock::Wall,
            demo_corpus: false,
        };
        let err = preset_failure(&report(&file)).unwrap();
        assert_eq!(err.code(), Code::Internal);
        assert!(err
            .message()
            .contains("static failed on in: decompress: bad"));
        file.results[0].outcome = Ok(m(5, None));
        assert!(preset_failure(&report(&file)).is_none());
    }

    #[test]
    fn differences() {
        assert_eq!(first_difference(b"abc", b"abc"), None);
        assert_eq!(first_difference(b"abc", b"abd"), Some(2));
        assert_eq!(first_difference(b"ab", b"abc"), Some(2));
        assert_eq!(first_difference(b"", b"a"), Some(0));
    }
}
