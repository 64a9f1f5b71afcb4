//! One-shot and reader-to-writer helpers.
//!
//! [`compress`] and [`compress_reader`] run the same engine as the
//! [`Compressor`] ([`compress`] codes all blocks in one parallel pass, as it
//! holds input and output in memory anyway); [`decompress`] reads with the same container reader as
//! the [`Decompressor`] but decodes batches of blocks on several threads.
//! Output is byte-identical whatever the thread count.

use std::io::{self, Read, Write};
use std::vec::Vec;

#[cfg(doc)]
use crate::error::ErrorKind;
use crate::error::{Error, Result};
use crate::format::{
    check_stored, decode_payload_into, BlockFrame, ContainerReader, DecodeLimits, Kind, Payload,
};
use crate::preset::Preset;
use crate::stream::engine::Engine;
use crate::stream::workers::Workers;
use crate::stream::{DecodeOptions, Options};

/// Turns an I/O error back into the crate error it carries, if it does.
pub(crate) fn from_io(e: io::Error) -> Error {
    Error::from(e)
}

/// Compresses `data` into a container in memory.
///
/// # Errors
///
/// [`ErrorKind::LimitExceeded`] when a default reader could not decode the
/// output ([`Options::check`]; raise [`Options::max_decoder_memory`] on
/// purpose to write it anyway).
///
/// # Example
///
/// ```
/// use subrange::{compress, decompress, Options};
///
/// # fn main() -> Result<(), subrange::Error> {
/// let data = subrange::corpus::gauge_csv(1, 50_000);
/// let packed = compress(&data, &Options::default())?;
/// assert!(packed.len() < data.len() / 2);
/// assert_eq!(decompress(&packed)?, data);
/// # Ok(())
/// # }
/// ```
pub fn compress(data: &[u8], options: &Options) -> Result<Vec<u8>> {
    // Room for the worst case (every block stored), so the output never
    // moves; pages not written are never touched.
    options.check()?;
    let block_size = usize::try_from(options.get_block_size()).unwrap_or(usize::MAX);
    let blocks = data.len() / block_size + 1;
    // A frame of up to 24 bytes and an index entry of up to 20 per block.
    let bound = data.len() + 44 * blocks + 64;
    let mut engine = Engine::new(Vec::with_capacity(bound), options);
    engine.finish_with(data).map_err(from_io)?;
    Ok(engine
        .take_inner()
        .expect("the inner writer is present until taken"))
}

/// Decompresses a whole container held in memory, with default options.
///
/// # Errors
///
/// Any damage ([`ErrorKind::CorruptBlock`], [`ErrorKind::ChecksumMismatch`],
/// [`ErrorKind::Truncated`], [`ErrorKind::TrailingBytes`], ...), an
/// unsupported container, or a limit exceeded; see
/// [`decompress_with_options`].
pub fn decompress(data: &[u8]) -> Result<Vec<u8>> {
    decompress_with_options(data, &DecodeOptions::default())
}

/// Decompresses a container in memory, applying `limits`.
///
/// # Errors
///
/// As for [`decompress`]; [`ErrorKind::LimitExceeded`] when the container
/// declares more than `limits` allow.
///
/// # Example
///
/// ```
/// use subrange::format::DecodeLimits;
/// use subrange::{compress, decompress_with_limits, ErrorKind, Options};
///
/// let packed = compress(&[0u8; 100_000], &Options::default()).unwrap();
/// let mut limits = DecodeLimits::new();
/// limits.max_total(10_000);
/// let err = decompress_with_limits(&packed, &limits).unwrap_err();
/// assert!(matches!(err.kind(), ErrorKind::LimitExceeded { .. }));
/// ```
pub fn decompress_with_limits(data: &[u8], limits: &DecodeLimits) -> Result<Vec<u8>> {
    let mut opts = DecodeOptions::default();
    opts.limits(*limits);
    decompress_with_options(data, &opts)
}

/// Decompresses a container in memory with explicit options, decoding
/// batches of blocks on `options.threads` threads (16 blocks per thread at
/// a time, fewer when their memory would pass the memory limit).
///
/// # Errors
///
/// As for [`decompress_with_limits`].
pub fn decompress_with_options(data: &[u8], options: &DecodeOptions) -> Result<Vec<u8>> {
    let workers = Workers::new(options.get_threads());
    let limits = *options.get_limits();
    let mut reader = ContainerReader::new(data, limits, options.get_trailing());
    let mut out = Vec::new();
    // Payloads are borrowed from `data`; a buffer for the rare one that
    // cannot be (see `ContainerReader::next_block_borrowed`).
    let mut spare = Vec::new();
    loop {
        let header = reader.header()?;
        let need = header.preset.memory_needed(header.block_size).max(1);
        let fit = usize::try_from(limits.memory_limit() / need).unwrap_or(usize::MAX);
        // The output is in memory anyway: large batches keep all threads
        // busy, within the memory limit.
        let batch = (16 * workers.count()).min(fit).max(1);
        let mut items: Vec<(Preset, BlockFrame, Payload<'_>)> = Vec::with_capacity(batch);
        // A read error is reported after the blocks before it, so that the
        // first damage in stream order is the one reported.
        let mut stop = None;
        while items.len() < batch {
            match reader.next_block_borrowed(&mut spare) {
                Ok(Some((frame, payload))) => {
                    let preset = reader.header()?.preset;
                    items.push((preset, frame, payload));
                }
                Ok(None) => break,
                Err(e) => {
                    stop = Some(e);
                    break;
                }
            }
        }
        if items.is_empty() {
            return stop.map_or(Ok(out), Err);
        }
        // Blocks decode straight into their place in the output (their
        // lengths passed the block size and total limits); stored blocks
        // are copied there at once, with no zero fill first.
        let start = out.len();
        for (_, frame, payload) in &items {
            match frame.kind {
                Kind::Stored if payload.bytes().len() as u64 == frame.raw_len => {
                    out.extend_from_slice(payload.bytes())
                }
                _ => out.resize(out.len() + frame.raw_len as usize, 0),
            }
        }
        let mut rest = &mut out[start..];
        let mut jobs = Vec::with_capacity(items.len());
        for (preset, frame, payload) in items {
            let (slot, tail) = rest.split_at_mut(frame.raw_len as usize);
            rest = tail;
            jobs.push((preset, frame, payload, slot));
        }
        let results = workers.map(jobs, |(preset, frame, payload, slot)| {
            let r = match frame.kind {
                Kind::Stored if payload.bytes().len() as u64 == frame.raw_len => {
                    check_stored(&frame, slot)
                }
                _ => decode_payload_into(&preset, &frame, payload.bytes(), slot),
            };
            r.map(|()| payload)
        });
        for r in results {
            if let Payload::Owned(buf) = r? {
                spare = buf;
            }
        }
        if let Some(e) = stop {
            return Err(e);
        }
    }
}

/// Bytes read and written by a reader-to-writer helper.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[non_exhaustive]
pub struct Totals {
    /// Bytes read from the reader.
    pub read: u64,
    /// Bytes written to the writer.
    pub written: u64,
}

/// Compresses everything `reader` gives into a container on `writer`.
///
/// Reading and writing (on the caller's thread) overlap the coding of the
/// other blocks in flight ([`Options::get_blocks_in_flight`], by default
/// one more than the threads, which code them); block buffers are reused,
/// so raw bytes are read straight into the buffer a block is coded from.
/// Memory stays within [`Options::memory_bound`] whatever the input
/// length; the output is the same whatever the thread count and blocks in
/// flight. The writer is flushed at the end. With one block in flight,
/// blocks are read, coded and written in turn on the caller's thread.
///
/// # Errors
///
/// [`ErrorKind::LimitExceeded`] as for [`compress`], before anything is
/// read or written; the reader's or writer's I/O error ([`ErrorKind::Io`]).
///
/// # Example
///
/// ```
/// use subrange::{compress_reader, decompress, Options};
///
/// # fn main() -> Result<(), subrange::Error> {
/// let data = subrange::corpus::gauge_binary(2, 30_000);
/// let mut packed = Vec::new();
/// let totals = compress_reader(&data[..], &mut packed, &Options::default())?;
/// assert_eq!(totals.read, 30_000);
/// assert_eq!(totals.written, packed.len() as u64);
/// assert_eq!(decompress(&packed)?, data);
/// # Ok(())
/// # }
/// ```
pub fn compress_reader<R: Read, W: Write>(
    reader: R,
    writer: W,
    options: &Options,
) -> Result<Totals> {
    crate::stream::pipeline::compress(reader, writer, options)
}

/// Decompresses a container from `reader` onto `writer`. Reading and
/// writing (on the caller's thread) overlap the decoding of other blocks:
/// with `options.threads` decoding threads (0: all cores), up to one block
/// more than the threads is in flight, fewer when their memory (what the
/// preset needs for one block, two to three block sizes, each) would pass
/// the memory limit; with one block in flight everything runs on the
/// caller's thread. Buffers are reused from block to block. The writer is
/// flushed at the end.
///
/// # Errors
///
/// As for [`decompress`], plus the reader's or writer's I/O error. Bytes of
/// blocks before a damaged one have been written by then, and the first
/// error in stream order is the one returned.
///
/// # Example
///
/// ```
/// use subrange::stream::{decompress_reader, DecodeOptions};
/// use subrange::{compress, Options};
///
/// # fn main() -> Result<(), subrange::Error> {
/// let data = subrange::corpus::text_like(3, 30_000);
/// let packed = compress(&data, &Options::default())?;
/// let mut back = Vec::new();
/// let totals = decompress_reader(&packed[..], &mut back, &DecodeOptions::default())?;
/// assert_eq!(back, data);
/// assert_eq!(totals.read, packed.len() as u64);
/// # Ok(())
/// # }
/// ```
pub fn decompress_reader<R: Read, W: Write>(
    reader: R,
    writer: W,
    options: &DecodeOptions,
) -> Result<Totals> {
    crate::stream::pipeline::decompress(reader, writer, options)
}
