//! Settings for compressing and decompressing.

use crate::error::{ErrorKind, Result};
use crate::format::{DecodeLimits, TrailingData, MAX_BLOCK_SIZE};
use crate::preset::Preset;

/// Smallest block size [`Options::block_size`] accepts.
pub const MIN_BLOCK_SIZE: usize = 16;

/// Block size used unless set, for every preset but `history`
/// ([`Preset::default_block_size`]): 1 MiB.
pub const DEFAULT_BLOCK_SIZE: usize = 1 << 20;

/// How to compress: preset, block size, threads.
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
#[derive(Debug, Clone, PartialEq, Eq, Default)]
#[non_exhaustive]
pub struct Options {
    preset: Preset,
    /// `None`: the preset's default.
    block_size: Option<usize>,
    threads: usize,
}

impl Options {
    /// The defaults: the `static` preset, 1 MiB blocks, all cores.
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
    /// (default: [`Preset::default_block_size`], 1 MiB for every
    /// preset but `history`, whose default is 32 MiB). Larger blocks code a little better and need more
    /// memory (a few times the block size, per thread); smaller ones limit
    /// the loss from a damaged block and the delay before output appears.
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
    pub fn block_size(&mut self, bytes: usize) -> Result<&mut Self> {
        if bytes < MIN_BLOCK_SIZE || bytes as u64 > MAX_BLOCK_SIZE {
            return Err(ErrorKind::InvalidParameter {
                name: "block_size",
                reason: "must be 16 bytes ..= 64 MiB",
            }
            .into());
        }
        self.block_size = Some(bytes);
        Ok(self)
    }

    /// Sets how many threads code blocks: 0 (the default) uses all cores,
    /// 1 codes on the caller's thread. The output is identical whatever the
    /// count. Without the `parallel` feature this is ignored.
    ///
    /// # Example
    ///
    /// ```
    /// let mut opts = subrange::Options::new();
    /// opts.threads(2);
    /// assert_eq!(opts.get_threads(), 2);
    /// ```
    pub fn threads(&mut self, threads: usize) -> &mut Self {
        self.threads = threads;
        self
    }

    /// The preset in force.
    pub fn get_preset(&self) -> &Preset {
        &self.preset
    }

    /// The block size in force: the one set, or the preset's default.
    pub fn get_block_size(&self) -> usize {
        self.block_size
            .unwrap_or_else(|| self.preset.default_block_size())
    }

    /// The thread count in force (0: all cores).
    pub fn get_threads(&self) -> usize {
        self.threads
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

    /// Sets how many threads the one-shot [`decompress_with_options`]
    /// decodes blocks on (0, the default: all cores; 1: the caller's
    /// thread). The streaming [`Decompressor`] decodes on the caller's
    /// thread.
    ///
    /// [`decompress_with_options`]: crate::stream::decompress_with_options
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
        self.threads = threads;
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
