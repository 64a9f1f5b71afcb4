//! Compress and decompress files through the `std::io` adapters.
//!
//! A gauge network's collector appends telemetry lines to a log; this
//! example packs such a log for the radio link and unpacks it at the other
//! end, streaming, so memory stays a few block sizes however long the log
//! is.
//!
//! ```text
//! stream_files compress   IN OUT [PRESET] [BLOCK_SIZE]
//! stream_files decompress IN OUT
//! stream_files generate   BYTES OUT     synthetic gauge telemetry
//! ```
//!
//! `-` stands for standard input or output, so a large stream can be piped
//! through without touching the disk:
//!
//! ```text
//! stream_files generate 1000000000 - | stream_files compress - - | stream_files decompress - - | wc -c
//! ```

use std::error::Error;
use std::fs::File;
use std::io::{self, BufWriter, Read, Write};

use subrange::preset::Preset;
use subrange::{Compressor, Decompressor, Options};

fn open_in(path: &str) -> io::Result<Box<dyn Read>> {
    Ok(if path == "-" {
        Box::new(io::stdin().lock())
    } else {
        Box::new(File::open(path)?)
    })
}

fn open_out(path: &str) -> io::Result<Box<dyn Write>> {
    Ok(if path == "-" {
        Box::new(BufWriter::with_capacity(1 << 16, io::stdout().lock()))
    } else {
        Box::new(BufWriter::with_capacity(1 << 16, File::create(path)?))
    })
}

fn main() -> Result<(), Box<dyn Error>> {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let arg = |i: usize| args.get(i).map(String::as_str);
    match (arg(0), arg(1), arg(2)) {
        (Some("compress"), Some(input), Some(output)) => {
            let mut opts = Options::new();
            if let Some(name) = arg(3) {
                opts.preset(Preset::from_name(name)?);
            }
            if let Some(size) = arg(4) {
                opts.block_size(size.parse()?)?;
            }
            let mut c = Compressor::new(open_out(output)?, &opts);
            io::copy(&mut open_in(input)?, &mut c)?;
            c.try_finish()?;
            let (raw, packed) = (c.total_in(), c.total_out());
            c.finish()?.flush()?;
            eprintln!(
                "{raw} bytes -> {packed} bytes ({:.2} %), preset {}",
                100.0 * packed as f64 / raw.max(1) as f64,
                opts.get_preset()
            );
        }
        (Some("decompress"), Some(input), Some(output)) => {
            let mut d = Decompressor::new(open_in(input)?);
            let mut out = open_out(output)?;
            let n = io::copy(&mut d, &mut out)?;
            out.flush()?;
            eprintln!("{} bytes -> {n} bytes", d.total_in());
        }
        (Some("generate"), Some(bytes), Some(output)) => {
            let total: u64 = bytes.parse()?;
            let mut out = open_out(output)?;
            let mut written = 0u64;
            let mut seed = 1;
            while written < total {
                let n = (total - written).min(1 << 20) as usize;
                out.write_all(&subrange::corpus::gauge_csv(seed, n))?;
                written += n as u64;
                seed += 1;
            }
            out.flush()?;
        }
        _ => {
            eprintln!(
                "usage: stream_files compress IN OUT [PRESET] [BLOCK_SIZE]\n       \
                 stream_files decompress IN OUT\n       \
                 stream_files generate BYTES OUT\n(`-` is standard input/output; presets: {})",
                Preset::names().collect::<Vec<_>>().join(", ")
            );
            std::process::exit(2);
        }
    }
    Ok(())
}
