//! One container read by N workers at once, as a job on a cluster engine
//! reads one large file: the block index gives each worker its own blocks.
//!
//! ```text
//! cargo run --release --example parallel_ranges -- [WORKERS] [MEGABYTES]
//! ```
//!
//! A month of river-gauge readings (synthetic, from `subrange::corpus`) is
//! compressed into a file with 256 KiB blocks. The coordinator reads the
//! block index once and cuts the decoded data into WORKERS ranges on block
//! boundaries ([`BlockIndex::split`]); each worker thread opens the file on
//! its own, reads only its range through an [`IndexedReader`] built from the
//! shared index, and counts the readings in it. The pieces, put back in
//! order, are the original bytes, and no block was decoded twice.
//!
//! On a cluster the coordinator sends each task its range (and, to spare
//! the tasks a read of the index, the index itself or just the block
//! offsets); every task opens the file on shared storage and seeks.

use std::error::Error;
use std::fs::File;
use std::io::{Read, Seek, SeekFrom};
use std::ops::Range;
use std::path::Path;
use std::thread;

use subrange::format::{BlockIndex, DecodeLimits};
use subrange::{Compressor, IndexedReader, Options};

/// What one worker hands back: its range, the bytes, and the blocks it
/// decoded.
struct Piece {
    range: Range<u64>,
    bytes: Vec<u8>,
    blocks: u64,
}

/// A worker: opens the file, reads `range` of the decoded data.
fn work(path: &Path, index: BlockIndex, range: Range<u64>) -> Result<Piece, std::io::Error> {
    let mut reader = IndexedReader::with_index(File::open(path)?, index);
    reader.seek(SeekFrom::Start(range.start))?;
    let mut bytes = Vec::new();
    (&mut reader)
        .take(range.end - range.start)
        .read_to_end(&mut bytes)?;
    Ok(Piece {
        range,
        bytes,
        blocks: reader.blocks_decoded(),
    })
}

/// Compresses `data` into `path` and decodes it back on `workers` threads;
/// returns the decoded bytes.
fn run(path: &Path, data: &[u8], workers: usize) -> Result<Vec<u8>, Box<dyn Error>> {
    let mut opts = Options::new();
    opts.block_size(256 << 10)?;
    let mut c = Compressor::new(std::io::BufWriter::new(File::create(path)?), &opts);
    std::io::Write::write_all(&mut c, data)?;
    c.finish()?;

    // The coordinator: one read of the index, one range per worker.
    let index = BlockIndex::read(&mut File::open(path)?, &DecodeLimits::new())?;
    let ranges = index.split(workers);
    let pieces = thread::scope(|s| {
        let handles: Vec<_> = ranges
            .iter()
            .map(|r| {
                let (index, r) = (index.clone(), r.clone());
                s.spawn(move || work(path, index, r))
            })
            .collect();
        handles
            .into_iter()
            .map(|h| h.join().expect("a worker panicked"))
            .collect::<Result<Vec<Piece>, _>>()
    })?;

    let mut out = Vec::with_capacity(data.len());
    let mut decoded = 0;
    for p in &pieces {
        let readings = p.bytes.iter().filter(|&&b| b == b'\n').count();
        println!(
            "bytes {:>9}..{:<9} {:>3} blocks decoded, {readings} readings",
            p.range.start, p.range.end, p.blocks
        );
        assert_eq!(p.bytes.len() as u64, p.range.end - p.range.start);
        out.extend_from_slice(&p.bytes);
        decoded += p.blocks;
    }
    // Ranges on block boundaries: every block decoded exactly once.
    assert_eq!(decoded, index.blocks().len() as u64);
    Ok(out)
}

fn main() -> Result<(), Box<dyn Error>> {
    let mut args = std::env::args().skip(1);
    let workers: usize = args.next().map_or(Ok(4), |a| a.parse())?;
    let megabytes: usize = args.next().map_or(Ok(8), |a| a.parse())?;
    let data = subrange::corpus::gauge_csv(30, megabytes << 20);
    let path = std::env::temp_dir().join(format!("gauge-month-{}.sr", std::process::id()));
    let result = run(&path, &data, workers);
    let _ = std::fs::remove_file(&path);
    let back = result?;
    assert!(back == data, "the pieces differ from the original");
    println!(
        "{workers} workers decoded {} bytes, identical to the original",
        back.len()
    );
    Ok(())
}

#[cfg(test)]
mod tests {
    #[test]
    fn workers_decode_the_same_bytes() {
        let data = subrange::corpus::gauge_csv(31, 3 << 20);
        for workers in [1, 3, 4, 16] {
            let path = std::env::temp_dir()
                .join(format!("gauge-test-{}-{workers}.sr", std::process::id()));
            let back = super::run(&path, &data, workers);
            let _ = std::fs::remove_file(&path);
            assert!(back.unwrap() == data, "{workers} workers");
        }
    }
}
