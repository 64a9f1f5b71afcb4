//! Limits on what a container may declare.
//!
//! Every size a container declares (block size, block lengths, model table
//! size, lane count, total length, memory a preset needs) is checked against
//! a limit *before* anything is allocated for it, so a hostile header
//! cannot make a decoder reserve memory or spin. The defaults suit files made
//! with any [`Options`](crate::stream::Options) this crate accepts; a caller
//! decoding untrusted input with tight memory lowers them.

/// Largest block size the format allows (and the default limit): 64 MiB.
pub const MAX_BLOCK_SIZE: u64 = 64 << 20;

/// Limits a decoder applies to declared sizes.
///
/// # Example
///
/// ```
/// use subrange::format::DecodeLimits;
///
/// let mut limits = DecodeLimits::default();
/// limits.max_block_size(1 << 20).max_memory(8 << 20);
/// assert_eq!(limits.block_size_limit(), 1 << 20);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[non_exhaustive]
pub struct DecodeLimits {
    block_size: u64,
    memory: u64,
    total: u64,
}

impl Default for DecodeLimits {
    fn default() -> Self {
        DecodeLimits {
            block_size: MAX_BLOCK_SIZE,
            memory: 256 << 20,
            total: u64::MAX,
        }
    }
}

impl DecodeLimits {
    /// The default limits: 64 MiB blocks, 256 MiB of decoder memory, no
    /// limit on the total length. (Model tables and lane counts have fixed
    /// limits of the format, see `docs/FORMAT.md`.)
    pub fn new() -> Self {
        Self::default()
    }

    /// Largest block size a header may declare (default 64 MiB, the format's
    /// maximum; larger values are capped at it).
    ///
    /// # Example
    ///
    /// ```
    /// let mut limits = subrange::format::DecodeLimits::new();
    /// limits.max_block_size(4096);
    /// assert_eq!(limits.block_size_limit(), 4096);
    /// ```
    pub fn max_block_size(&mut self, bytes: u64) -> &mut Self {
        self.block_size = bytes.min(MAX_BLOCK_SIZE);
        self
    }

    /// Most memory the decoder may need for one block, as reported by
    /// [`Preset::memory_needed`](crate::preset::Preset::memory_needed)
    /// (default 256 MiB). Parallel one-shot decoding keeps several blocks in
    /// flight only while their sum stays within this limit.
    ///
    /// # Example
    ///
    /// ```
    /// let mut limits = subrange::format::DecodeLimits::new();
    /// limits.max_memory(16 << 20);
    /// assert_eq!(limits.memory_limit(), 16 << 20);
    /// ```
    pub fn max_memory(&mut self, bytes: u64) -> &mut Self {
        self.memory = bytes;
        self
    }

    /// Largest total decoded length (default: no limit). Streaming decoders
    /// use O(block size) memory whatever the total; this guards one-shot
    /// decoding into memory against small inputs that expand enormously.
    ///
    /// # Example
    ///
    /// ```
    /// let mut limits = subrange::format::DecodeLimits::new();
    /// limits.max_total(1 << 30);
    /// assert_eq!(limits.total_limit(), 1 << 30);
    /// ```
    pub fn max_total(&mut self, bytes: u64) -> &mut Self {
        self.total = bytes;
        self
    }

    /// The block size limit in force.
    pub fn block_size_limit(&self) -> u64 {
        self.block_size
    }

    /// The memory limit in force.
    pub fn memory_limit(&self) -> u64 {
        self.memory
    }

    /// The total length limit in force.
    pub fn total_limit(&self) -> u64 {
        self.total
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn block_size_is_capped_at_the_format_maximum() {
        let mut l = DecodeLimits::new();
        l.max_block_size(u64::MAX);
        assert_eq!(l.block_size_limit(), MAX_BLOCK_SIZE);
        assert!(crate::Error::check_limit("x", 5, 4).is_err());
        assert!(crate::Error::check_limit("x", 4, 4).is_ok());
    }

    #[test]
    fn default_history_containers_decode_within_the_default_limit() {
        use crate::preset::{Preset, PresetKind};
        let p = Preset::new(PresetKind::History);
        let need = p.memory_needed(p.default_block_size());
        let limit = DecodeLimits::default().memory_limit();
        assert!(need <= limit, "{need} > {limit}");
        assert!(need > 200 << 20, "{need}");
        // Short blocks take little.
        assert!(p.memory_needed(4096) < 4 << 20, "{}", p.memory_needed(4096));
    }
}
