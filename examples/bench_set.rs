//! Writes the generated files of the benchmark set (see `scripts/bench-set.sh`):
//! river-gauge telemetry as CSV, i.i.d. bytes of a known 16-symbol
//! distribution, uniform random bytes and long runs, all seeded.
//!
//! ```sh
//! cargo run --release --example bench_set -- target/bench-set
//! ```
//!
//! The i.i.d. file draws symbol `s` (0 ..= 15, written as byte `b'a' + s`)
//! with probability `(16 - s) / 136`; its entropy per byte is printed, so the
//! bench report can be read against `n·H`.

use std::error::Error;
use std::fs;
use std::path::PathBuf;

/// Weights of the i.i.d. file's 16 symbols.
fn weights() -> [u32; 16] {
    core::array::from_fn(|s| 16 - s as u32)
}

/// Symbols drawn by inverting the cumulative weights with 16-bit draws from
/// the crate's seeded random bytes.
fn iid(seed: u64, n: usize) -> Vec<u8> {
    let w = weights();
    let total: u32 = w.iter().sum();
    let raw = subrange::corpus::random(seed, 2 * n);
    raw.chunks_exact(2)
        .map(|c| {
            let u = (u32::from(u16::from_le_bytes([c[0], c[1]])) * total) >> 16;
            let mut acc = 0;
            let mut s = 0;
            while acc + w[s] <= u {
                acc += w[s];
                s += 1;
            }
            b'a' + s as u8
        })
        .collect()
}

/// Runs of 1 to 4096 bytes of a few byte values.
fn runs(seed: u64, n: usize) -> Vec<u8> {
    let r = subrange::corpus::random(seed, n / 64 + 64);
    let mut out = Vec::with_capacity(n);
    let mut k = 0;
    while out.len() < n {
        let len = 1 + (usize::from(r[k % r.len()]) << 4 | usize::from(r[(k + 1) % r.len()] & 15));
        let value = [0u8, 0xFF, b' ', 0x20 + r[(k + 2) % r.len()] % 8][k % 4];
        out.extend(std::iter::repeat_n(value, len.min(n - out.len())));
        k += 3;
    }
    out
}

fn main() -> Result<(), Box<dyn Error>> {
    let dir = PathBuf::from(std::env::args().nth(1).ok_or("usage: bench_set OUTDIR")?);
    fs::create_dir_all(&dir)?;
    fs::write(
        dir.join("gauge.csv"),
        subrange::corpus::gauge_csv(15, 3 << 20),
    )?;
    fs::write(dir.join("iid16.txt"), iid(16, 1 << 20))?;
    fs::write(
        dir.join("random.bin"),
        subrange::corpus::random(17, 1 << 20),
    )?;
    fs::write(dir.join("runs.bin"), runs(18, 1 << 20))?;
    let w = weights();
    let total: f64 = w.iter().map(|&x| f64::from(x)).sum();
    let h: f64 = w
        .iter()
        .map(|&x| {
            let p = f64::from(x) / total;
            -p * p.log2()
        })
        .sum();
    println!("iid16.txt: entropy {h:.6} bits per byte");
    Ok(())
}
