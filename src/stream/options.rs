//! Settings for compressing and decompressing.
//!
//! # What the writer writes, the reader reads
//!
//! A reader with default [`DecodeLimits`] decodes everything a writer with
//! default [`Options`] writes, and the writer refuses — with
//! [`ErrorKind::LimitExceeded`], before it writes anything — options whose
//! output the default reader would refuse. The one declared size where they
//! could disagree is the memory needed to decode one block
//! ([`Preset::memory_needed`] of the block size), which grows with the
//! block size and with some preset parameters (`order2` and `history` at
//! 64 MiB blocks, `mix` with a large `memory_mib`). A caller who wants such output raises
//! [`Options::max_decoder_memory`] on purpose, and then every reader of it
//! needs [`DecodeLimits::max_memory`] raised to match. Block sizes agree by
//! construction: both sides allow up to [`MAX_BLOCK_SIZE`].
//!
//! # Memory of the compressor
//!
//! A [`Compressor`](crate::stream::Compressor) (and [`compress_reader`])
//! holds at most [`Options::blocks_in_flight`] blocks at once: raw bytes
//! gathered for them, then their coding (each on a thread with its model)
//! and their coded records until written. Its memory stays within
//! [`Options::memory_bound`], `blocks in flight × (block size +
//! memory_needed(block size))`, whatever the stream length; by default the
//! blocks in flight are one more than the thread count (one is read or
//! written while the others are coded). Threads are capped at
//! [`MAX_THREADS`].
//!
//! (The one-shot [`compress`] holds its whole input and output anyway and
//! codes all blocks in one parallel pass.)
//!
//! [`compress_reader`]: crate::stream::compress_reader
//! [`compress`]: crate::stream::compress

#[cfg(doc)]
use crate::error::ErrorKind;
use crate::error::Result;
use crate::format::{DecodeLimits, IndexPolicy, TrailingData, MAX_BLOCK_SIZE};
use crate::preset::Preset;

/// Smallest block size [`Options::block_size`] accepts.
pub const MIN_BLOCK_SIZE: u64 = 16;

/// Block size used unless set, for every preset but `history`
/// ([`Preset::default_block_size`]): 1 MiB.
pub const DEFAULT_BLOCK_SIZE: u64 = 1 << 20;

/// Most threads [`Options::threads`] and [`DecodeOptions::threads`] use
/// (larger counts are capped): far above the cores of the machines this is
/// meant for, so that a mistyped count cannot start thousands of threads.
pub const MAX_THREADS: usize = 256;

/// How to compress: preset, block size, threads, blocks in flight, and the
/// memory a reader may need.
///
/// # Example
///
/// ```
/// use subrange::preset::Preset;
/// use subrange::Options;
///
/// # fn main() -> Result<(), subrange::Error> {
/// let mut opts = Options::new();
/// opts.preset(Preset::from_name("adaptive")?)
///     .threads(1)
///     .block_size(256 << 10)?;
/// assert_eq!(opts.get_block_size(), 256 << 10);
/// # Ok(())
/// # }
/// ```
#[derive(Debug, Clone, PartialEq, Eq)]
#[non_exhaustive]
pub struct Options {
    preset: Preset,
    /// `None`: the preset's default.
    block_size: Option<u64>,
    threads: usize,
    index: IndexPolicy,
    in_flight: usize,
    decoder_memory: u64,
}

impl Default for Options {
    fn default() -> Self {
        Options {
            preset: Preset::default(),
            block_size: None,
            threads: 0,
            index: IndexPolicy::Auto,
            in_flight: 0,
            decoder_memory: DecodeLimits::new().memory_limit(),
        }
    }
}

impl Options {
    /// The defaults: the `static` preset, 1 MiB blocks, all cores, as many
    /// blocks in flight as threads, output the default reader decodes.
    pub fn new() -> Self {
        Self::default()
    }

    /// Sets the preset that codes every block.
    ///
    /// # Example
    ///
    /// ```
    /// use subrange::preset::Preset;
    /// let mut opts = subrange::Options::new();
    /// opts.preset(Preset::from_name("adaptive").unwrap());
    /// assert_eq!(opts.get_preset().name(), "adaptive");
    /// ```
    pub fn preset(&mut self, preset: Preset) -> &mut Self {
        self.preset = preset;
        self
    }

    /// Sets the block size: the raw bytes coded as one independent block
    /// (default: [`Preset::default_block_size`], 1 MiB for every preset
    /// but `history`, whose default is 32 MiB). Larger blocks code a little
    /// better and need more memory (see [`memory_bound`](Options::memory_bound));
    /// smaller ones limit the loss from a damaged block and the delay before
    /// output appears. Whether the default reader can decode the blocks of a
    /// preset at this size is checked when compressing (see
    /// [`check`](Options::check)).
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`] outside
    /// [`MIN_BLOCK_SIZE`] ..= [`MAX_BLOCK_SIZE`] (16 bytes to 64 MiB).
    ///
    /// # Example
    ///
    /// ```
    /// let mut opts = subrange::Options::new();
    /// opts.block_size(64 << 10).unwrap();
    /// assert_eq!(opts.get_block_size(), 65536);
    /// assert!(opts.block_size(1).is_err());
    /// ```
    pub fn block_size(&mut self, bytes: u64) -> Result<&mut Self> {
        if !(MIN_BLOCK_SIZE..=MAX_BLOCK_SIZE).contains(&bytes) {
            return Err(crate::Error::invalid_parameter(
                "block_size",
                "must be 16 bytes ..= 64 MiB",
            ));
        }
        self.block_size = Some(bytes);
        Ok(self)
    }

    /// Sets how many threads code blocks: 0 (the default) uses all cores,
    /// 1 codes on the caller's thread; counts above [`MAX_THREADS`] are
    /// capped at it. The output is identical whatever the count. Without
    /// the `parallel` feature this is ignored.
    ///
    /// # Example
    ///
    /// ```
    /// let mut opts = subrange::Options::new();
    /// opts.threads(2);
    /// assert_eq!(opts.get_threads(), 2);
    /// opts.threads(100_000);
    /// assert_eq!(opts.get_threads(), subrange::stream::MAX_THREADS);
    /// ```
    pub fn threads(&mut self, threads: usize) -> &mut Self {
        self.threads = threads.min(MAX_THREADS);
        self
    }

    /// Sets when a block index is written after the end record (default
    /// [`IndexPolicy::Auto`]: for two or more blocks). The index lets a
    /// reader that can seek decode any byte range from the blocks holding
    /// it ([`IndexedReader`](crate::stream::IndexedReader)); it costs about
    /// four bytes a block (at most 20) plus 16, in the container and in the
    /// writer's memory until the end. Containers without it read
    /// everywhere too, by a walk over the block frames.
    ///
    /// # Example
    ///
    /// ```
    /// use subrange::format::{inspect, IndexPolicy};
    /// use subrange::Options;
    ///
    /// # fn main() -> Result<(), subrange::Error> {
    /// let data = subrange::corpus::gauge_csv(1, 10_000);
    /// let mut opts = Options::new();
    /// opts.block_size(1024)?.block_index(IndexPolicy::Never);
    /// let plain = subrange::compress(&data, &opts)?;
    /// let indexed = subrange::compress(&data, opts.block_index(IndexPolicy::Auto))?;
    /// // Ten blocks: a record length of two bytes and a shortfall of one
    /// // each (two for the short last block), and the 16-byte tail.
    /// let index_len = inspect(&indexed[..])?.end.unwrap().index_len;
    /// assert_eq!(index_len, 10 * 3 + 1 + 16);
    /// assert_eq!(indexed.len() - plain.len(), index_len as usize);
    /// # Ok(())
    /// # }
    /// ```
    pub fn block_index(&mut self, policy: IndexPolicy) -> &mut Self {
        self.index = policy;
        self
    }

    /// The block index policy in force.
    pub fn get_block_index(&self) -> IndexPolicy {
        self.index
    }

    /// Sets how many blocks a [`Compressor`](crate::stream::Compressor)
    /// holds at once (gathered, being coded, or coded and not yet written):
    /// 0 (the default) means one more than the threads that code them.
    /// [`compress_reader`](crate::stream::compress_reader) reads and writes
    /// on the caller's thread while the other blocks in flight are coded
    /// (with one block in flight it reads, codes and writes in turn); a
    /// [`Compressor`](crate::stream::Compressor) codes the blocks it
    /// gathered once that many are full, then writes them. Memory stays within [`memory_bound`](Options::memory_bound).
    /// Fewer blocks than threads leave threads idle; more even out blocks
    /// that take unequal times. The output is identical whatever the count.
    ///
    /// # Example
    ///
    /// ```
    /// let mut opts = subrange::Options::new();
    /// opts.threads(4).blocks_in_flight(6);
    /// assert_eq!(opts.get_blocks_in_flight(), 6);
    /// opts.blocks_in_flight(0);
    /// assert_eq!(opts.get_blocks_in_flight(), 5);
    /// ```
    pub fn blocks_in_flight(&mut self, blocks: usize) -> &mut Self {
        self.in_flight = blocks;
        self
    }

    /// Sets the most memory a reader may need to decode one block of the
    /// output ([`Preset::memory_needed`] of the block size). The default is
    /// the default reader's limit ([`DecodeLimits::memory_limit`], 256 MiB),
    /// so that default readers decode whatever is written. Raising it on
    /// purpose allows larger blocks or model memory; readers of that output
    /// then need [`DecodeLimits::max_memory`] raised as far.
    ///
    /// # Example
    ///
    /// ```
    /// use subrange::preset::Preset;
    /// use subrange::{ErrorKind, Options};
    ///
    /// let mut opts = Options::new();
    /// opts.preset(Preset::from_name("order2").unwrap()).block_size(64 << 20).unwrap();
    /// // A default reader could not decode it: refused.
    /// let err = opts.check().unwrap_err();
    /// assert!(matches!(err.kind(), ErrorKind::LimitExceeded { .. }));
    /// // Raised on purpose.
    /// opts.max_decoder_memory(512 << 20);
    /// assert!(opts.check().is_ok());
    /// ```
    pub fn max_decoder_memory(&mut self, bytes: u64) -> &mut Self {
        self.decoder_memory = bytes;
        self
    }

    /// Checks that a reader within [`max_decoder_memory`](Options::max_decoder_memory)
    /// decodes the output of these options. Compressing checks it before
    /// writing anything.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::LimitExceeded`] (what: "memory needed per block") when
    /// the preset at this block size needs more.
    pub fn check(&self) -> Result<()> {
        crate::Error::check_limit(
            "memory needed per block",
            self.preset.memory_needed(self.get_block_size()),
            self.decoder_memory,
        )
    }

    /// An upper bound of the memory a [`Compressor`](crate::stream::Compressor)
    /// with these options holds, whatever the stream length: for each block
    /// in flight, its raw bytes plus at most what decoding a block needs
    /// ([`Preset::memory_needed`]: the coded bytes, copies and the model),
    /// that is `get_blocks_in_flight() × (block size + memory_needed(block
    /// size))`.
    ///
    /// # Example
    ///
    /// ```
    /// let mut opts = subrange::Options::new();
    /// opts.threads(2).block_size(1 << 20).unwrap();
    /// let one = (1 << 20) + opts.get_preset().memory_needed(1 << 20);
    /// assert_eq!(opts.memory_bound(), 3 * one);
    /// ```
    pub fn memory_bound(&self) -> u64 {
        let blocks = u64::try_from(self.get_blocks_in_flight()).unwrap_or(u64::MAX);
        self.preset
            .memory_needed(self.get_block_size())
            .saturating_add(self.get_block_size())
            .saturating_mul(blocks)
    }

    /// The preset in force.
    pub fn get_preset(&self) -> &Preset {
        &self.preset
    }

    /// The block size in force: the one set, or the preset's default.
    pub fn get_block_size(&self) -> u64 {
        self.block_size
            .unwrap_or_else(|| self.preset.default_block_size())
    }

    /// The thread count in force (0: all cores).
    pub fn get_threads(&self) -> usize {
        self.threads
    }

    /// The blocks a compressor holds at once: the count set, or when none
    /// is, one more than the threads that code them (all cores for a thread
    /// count of 0; one without the `parallel` feature), so that one block
    /// is read or written while the others are coded.
    pub fn get_blocks_in_flight(&self) -> usize {
        match self.in_flight {
            0 => crate::stream::workers::Workers::new(self.threads).count() + 1,
            n => n,
        }
    }

    /// The most memory a reader may need per block of the output.
    pub fn get_max_decoder_memory(&self) -> u64 {
        self.decoder_memory
    }
}

/// How to decompress: limits, what may follow the end record, threads.
///
/// # Example
///
/// ```
/// use subrange::format::{DecodeLimits, TrailingData};
/// use subrange::stream::DecodeOptions;
///
/// let mut limits = DecodeLimits::new();
/// limits.max_memory(32 << 20);
/// let mut opts = DecodeOptions::new();
/// opts.limits(limits).trailing(TrailingData::Leave).threads(1);
/// assert_eq!(opts.get_limits().memory_limit(), 32 << 20);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[non_exhaustive]
pub struct DecodeOptions {
    limits: DecodeLimits,
    trailing: TrailingData,
    threads: usize,
}

impl DecodeOptions {
    /// The defaults: default limits, trailing bytes rejected, all cores.
    pub fn new() -> Self {
        Self::default()
    }

    /// Sets the limits on declared sizes.
    ///
    /// # Example
    ///
    /// ```
    /// use subrange::format::DecodeLimits;
    /// let mut limits = DecodeLimits::new();
    /// limits.max_block_size(1 << 20);
    /// let mut opts = subrange::stream::DecodeOptions::new();
    /// opts.limits(limits);
    /// assert_eq!(opts.get_limits().block_size_limit(), 1 << 20);
    /// ```
    pub fn limits(&mut self, limits: DecodeLimits) -> &mut Self {
        self.limits = limits;
        self
    }

    /// Sets what may follow the end record (default: nothing,
    /// [`TrailingData::Reject`]).
    ///
    /// # Example
    ///
    /// ```
    /// use subrange::format::TrailingData;
    /// let mut opts = subrange::stream::DecodeOptions::new();
    /// opts.trailing(TrailingData::Leave);
    /// assert_eq!(opts.get_trailing(), TrailingData::Leave);
    /// ```
    pub fn trailing(&mut self, trailing: TrailingData) -> &mut Self {
        self.trailing = trailing;
        self
    }

    /// Sets how many threads the one-shot [`decompress_with_options`] and
    /// [`decompress_reader`] decode blocks on (0, the default: all cores; 1: the caller's
    /// thread; counts above [`MAX_THREADS`] are capped at it). The
    /// streaming [`Decompressor`] decodes on the caller's thread.
    ///
    /// [`decompress_with_options`]: crate::stream::decompress_with_options
    /// [`decompress_reader`]: crate::stream::decompress_reader
    /// [`Decompressor`]: crate::stream::Decompressor
    ///
    /// # Example
    ///
    /// ```
    /// let mut opts = subrange::stream::DecodeOptions::new();
    /// opts.threads(1);
    /// assert_eq!(opts.get_threads(), 1);
    /// ```
    pub fn threads(&mut self, threads: usize) -> &mut Self {
        self.threads = threads.min(MAX_THREADS);
        self
    }

    /// The limits in force.
    pub fn get_limits(&self) -> &DecodeLimits {
        &self.limits
    }

    /// The trailing-data rule in force.
    pub fn get_trailing(&self) -> TrailingData {
        self.trailing
    }

    /// The thread count in force (0: all cores).
    pub fn get_threads(&self) -> usize {
        self.threads
    }
}
