//! Speed of batch coding with a per-value table index, through the Rust API.
//!
//! The work: residuals of a water-level predictor across a network of
//! gauges, one value a reading, each coded with the discretised Gaussian
//! table (64 scales, 2^-3 to 2^6 cm, totals of 2^16) that the predictor's
//! scale for that reading selects. The values are drawn from the very
//! tables they are coded with (seeded), so the coded length approaches the
//! tables' entropy.
//!
//! ```sh
//! cargo run --release --example batch_speed                   # 10 million values
//! cargo run --release --example batch_speed -- VALUES INDEXES SCALES
//! #   raw little-endian files: i32 values, u32 indexes, u32 Q16 scales
//! ```
//!
//! Prints one line: `symbols=N bytes=B encode_msym_s=E decode_msym_s=D`
//! (the best of five runs each, by the thread's CPU time on Linux, so other
//! load on the machine does not move the figures; wall clock elsewhere). The Python package's benchmark
//! (`python/bench/bench_batch.py`) writes its data to two files and runs this
//! program on them, so both sides time the same work in the same run.

use std::time::Instant;

use subrange::batch::{decode_indexed, encode_indexed, IndexedTables};
use subrange::corpus::SplitMix64;
use subrange::model::parametric::{Family, ParametricGrid};

/// The scale grid: 64 scales from 2^-3 to 2^6, evenly spaced in log2 (Q16).
pub fn scales() -> Vec<u32> {
    (0..64)
        .map(|i| {
            let log2 = -3.0 + 9.0 * f64::from(i) / 63.0;
            (2f64.powf(log2) * 65536.0).round() as u32
        })
        .collect()
}

fn generate(tables: &IndexedTables, n: usize) -> (Vec<i32>, Vec<u32>) {
    let mut rng = SplitMix64::new(2024);
    let mut values = Vec::with_capacity(n);
    let mut indexes = Vec::with_capacity(n);
    let mut scale = 32i64;
    for _ in 0..n {
        // The predicted scale drifts as the river rises and falls.
        scale = (scale + rng.step(2)).clamp(0, 63);
        let t = scale as usize;
        let cum = tables.cumulative(t).expect("table");
        let slot = rng.below(1 << 16) as u32;
        let k = cum.partition_point(|&c| c <= slot) - 1;
        values.push(k as i32 + tables.origin(t).expect("table"));
        indexes.push(t as u32);
    }
    (values, indexes)
}

fn read_raw(path: &str) -> Vec<[u8; 4]> {
    let bytes = std::fs::read(path).unwrap_or_else(|e| panic!("{path}: {e}"));
    bytes
        .chunks_exact(4)
        .map(|c| [c[0], c[1], c[2], c[3]])
        .collect()
}

/// Seconds this thread has run on a processor (Linux: the first field of
/// `/proc/thread-self/schedstat`, in nanoseconds); `None` elsewhere.
fn thread_cpu_seconds() -> Option<f64> {
    let text = std::fs::read_to_string("/proc/thread-self/schedstat").ok()?;
    let ns: u64 = text.split_whitespace().next()?.parse().ok()?;
    Some(ns as f64 / 1e9)
}

/// The best of `runs` timings of `f`, by this thread's CPU time where the
/// system reports it (other load on the machine does not move it), else by
/// the wall clock.
fn best_of<T>(runs: usize, mut f: impl FnMut() -> T) -> (f64, T) {
    let mut best = f64::INFINITY;
    let mut out = None;
    for _ in 0..runs {
        let (wall, cpu) = (Instant::now(), thread_cpu_seconds());
        let r = f();
        let spent = match (cpu, thread_cpu_seconds()) {
            (Some(a), Some(b)) => b - a,
            _ => wall.elapsed().as_secs_f64(),
        };
        best = best.min(spent);
        out = Some(r);
    }
    (best, out.expect("at least one run"))
}

fn main() -> Result<(), subrange::Error> {
    let grid = ParametricGrid::new(Family::Gaussian, 16, 8 << 16, 1023);
    let args: Vec<String> = std::env::args().skip(1).collect();
    let (values, indexes, tables) = match args.as_slice() {
        [v, i, s] => {
            let scales: Vec<u32> = read_raw(s).into_iter().map(u32::from_le_bytes).collect();
            (
                read_raw(v).into_iter().map(i32::from_le_bytes).collect(),
                read_raw(i).into_iter().map(u32::from_le_bytes).collect(),
                IndexedTables::from_parametric(&grid.build(&scales, 0)?)?,
            )
        }
        _ => {
            let tables = IndexedTables::from_parametric(&grid.build(&scales(), 0)?)?;
            let (v, i) = generate(&tables, 10_000_000);
            (v, i, tables)
        }
    };
    let n = values.len();
    let (enc_s, bytes) = best_of(5, || encode_indexed(&tables, &values, &indexes, None));
    let bytes = bytes?;
    let mut back = vec![0i32; n];
    let (dec_s, r) = best_of(5, || {
        decode_indexed(&tables, &bytes, &indexes, None, &mut back)
    });
    r?;
    assert_eq!(back, values, "round trip");
    println!(
        "symbols={n} bytes={} encode_msym_s={:.1} decode_msym_s={:.1}",
        bytes.len(),
        n as f64 / enc_s / 1e6,
        n as f64 / dec_s / 1e6
    );
    Ok(())
}
