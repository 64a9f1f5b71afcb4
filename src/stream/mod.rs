//! [`std::io`] adapters and one-shot helpers over the container.
//!
//! - [`Compressor`]: an [`io::Write`](std::io::Write) that compresses into
//!   an inner writer; [`Decompressor`]: an [`io::Read`](std::io::Read) that
//!   decompresses from an inner reader. Both keep O(block size) memory
//!   whatever the stream length (the compressor's bound:
//!   [`Options::memory_bound`]).
//! - [`compress`] / [`decompress`]: whole buffers in memory;
//!   [`compress_reader`] / [`decompress_reader`]: reader to writer.
//! - [`IndexedReader`]: an [`io::Read`](std::io::Read) +
//!   [`io::Seek`](std::io::Seek) view of the decoded data of a container in
//!   a source that can seek, decoding only the blocks a read needs;
//!   [`decompress_range`]: one byte range of a container in memory.
//! - [`Options`] and [`DecodeOptions`]: settings, builder style.
//!
//! One engine does the work on each side (the block writer under
//! `Compressor`, `compress` and `compress_reader`; the container reader
//! under `Decompressor`, `decompress` and the
//! [`Inspector`](crate::format::Inspector)); the public types are thin
//! wrappers. With the `parallel` feature, blocks are coded on several
//! threads and the output is byte-identical to the single-threaded one.
//!
//! # Example: compress telemetry as it arrives, decode it elsewhere
//!
//! ```
//! use std::io::{Read, Write};
//! use subrange::{Compressor, Decompressor, Options};
//!
//! # fn main() -> std::io::Result<()> {
//! let mut opts = Options::new();
//! opts.block_size(4096).expect("in range");
//! let mut link = Compressor::new(Vec::new(), &opts);
//! for minute in (0..1440).step_by(10) {
//!     writeln!(link, "G114,{minute},{},{},87", 300 + minute % 7, 2200 + minute % 13)?;
//! }
//! let sent = link.finish()?;
//!
//! let mut text = String::new();
//! Decompressor::new(&sent[..]).read_to_string(&mut text)?;
//! assert!(text.starts_with("G114,0,300,2200,87\n"));
//! # Ok(())
//! # }
//! ```

mod compressor;
mod decompressor;
mod engine;
mod indexed;
mod oneshot;
mod options;
mod pipeline;
mod workers;

pub use crate::format::{DecodeLimits, IndexPolicy, TrailingData};
pub use compressor::Compressor;
pub use decompressor::Decompressor;
pub use indexed::{decompress_range, decompress_range_with_limits, IndexedReader};
pub use oneshot::{
    compress, compress_reader, decompress, decompress_reader, decompress_with_limits,
    decompress_with_options, Totals,
};
pub use options::{DecodeOptions, Options, DEFAULT_BLOCK_SIZE, MAX_THREADS, MIN_BLOCK_SIZE};

#[allow(dead_code)]
fn _adapters_are_send_and_sync() {
    fn check<T: Send + Sync>() {}
    check::<Compressor<std::vec::Vec<u8>>>();
    check::<Decompressor<&[u8]>>();
    check::<IndexedReader<std::io::Cursor<&[u8]>>>();
    check::<crate::format::Inspector<&[u8]>>();
    check::<Options>();
    check::<DecodeOptions>();
}
