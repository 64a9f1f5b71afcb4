//! The codecs `bench` and `analyze` measure: presets and general compressors.
//!
//! A [`Codec`] compresses a whole buffer in memory and decompresses it again;
//! `bench` times both directions and checks the round trip. Presets are
//! [`PresetCodec`]s; the general compressors are [`Baseline`]s. A preset
//! codec writes a real container ([`subrange::compress`]), so its size is
//! exactly what `subrange compress` writes with the same preset and block
//! size.
//!
//! Presets also report their *ideal cost*: `Σ -log2(freq / total)` over every
//! symbol their models code, measured with the encoder's cost meter in a
//! separate, untimed pass that rebuilds the preset's models block by block
//! ([`Preset::ideal_cost`]; stored blocks cost 8 bits a byte). The
//! report then splits a preset's size into model quality (the ideal cost) and
//! coding overhead (what the coder, tables, block frames and the header add).

use subrange::format::{inspect, BlockKind};
use subrange::preset::Preset;
use subrange::stream::{decompress_with_options, DecodeOptions};
use subrange::Options;

use crate::baseline::Baseline;
use crate::exit::{CliError, CliResult};

/// What a codec is in a report.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Kind {
    /// One of our presets.
    Preset,
    /// A general compressor measured beside them.
    Baseline,
}

/// A whole-buffer compressor under measurement.
pub trait Codec {
    /// Name in reports (`static`, `flate2-6`, …).
    fn name(&self) -> String;
    /// Preset or baseline.
    fn kind(&self) -> Kind;
    /// Which general compressor and setting, for a baseline.
    fn baseline(&self) -> Option<Baseline> {
        None
    }
    /// Compresses `data`.
    fn compress(&self, data: &[u8]) -> CliResult<Vec<u8>>;
    /// Decompresses what [`compress`](Codec::compress) returned for `raw_len` bytes.
    fn decompress(&self, packed: &[u8], raw_len: usize) -> CliResult<Vec<u8>>;
    /// The ideal cost in bits of the symbols the models coded, when known;
    /// `packed` is what [`compress`](Codec::compress) made of `data`.
    fn ideal_bits(&self, data: &[u8], packed: &[u8]) -> CliResult<Option<f64>>;
}

/// A preset coding real containers.
pub struct PresetCodec {
    preset: Preset,
    options: Options,
    decode: DecodeOptions,
}

impl PresetCodec {
    /// `preset` with `block_size` (default: the container's) on `threads`
    /// threads (0: all cores).
    ///
    /// # Errors
    ///
    /// A usage error for a block size the container does not accept.
    pub fn new(preset: Preset, block_size: Option<u64>, threads: usize) -> CliResult<Self> {
        let mut options = Options::new();
        options.preset(preset).threads(threads);
        if let Some(size) = block_size {
            options
                .block_size(size)
                .map_err(|e| CliError::usage(format!("--block-size {size}: {e}")))?;
        }
        let mut decode = DecodeOptions::new();
        decode.threads(threads);
        Ok(PresetCodec {
            preset,
            options,
            decode,
        })
    }
}

fn lib_err(codec: &str, e: subrange::Error) -> CliError {
    CliError::library(format!("{codec} failed"), &e)
}

impl Codec for PresetCodec {
    fn name(&self) -> String {
        self.preset.name().to_string()
    }
    fn kind(&self) -> Kind {
        Kind::Preset
    }
    fn compress(&self, data: &[u8]) -> CliResult<Vec<u8>> {
        subrange::compress(data, &self.options).map_err(|e| lib_err(self.preset.name(), e))
    }
    fn decompress(&self, packed: &[u8], _raw_len: usize) -> CliResult<Vec<u8>> {
        decompress_with_options(packed, &self.decode).map_err(|e| lib_err(self.preset.name(), e))
    }
    fn ideal_bits(&self, data: &[u8], packed: &[u8]) -> CliResult<Option<f64>> {
        let name = self.preset.name();
        // Which blocks the container coded and which it stored raw (coding
        // would not have made them shorter): a stored block's bytes cost
        // exactly 8 bits each, whatever the model would have said.
        let walk = inspect(packed).map_err(|e| lib_err(name, e))?;
        if let Some(e) = walk.error {
            return Err(lib_err(name, e));
        }
        let mut total = 0.0;
        for info in &walk.blocks {
            let block = usize::try_from(info.raw_offset)
                .ok()
                .zip(usize::try_from(info.raw_len).ok())
                .and_then(|(start, len)| data.get(start..start.checked_add(len)?))
                .ok_or_else(|| {
                    CliError::new(
                        crate::exit::Code::Internal,
                        format!("{name}: block {} lies outside the input", info.index),
                    )
                })?;
            if info.kind == BlockKind::Stored {
                total += 8.0 * block.len() as f64;
                continue;
            }
            let bits = self
                .preset
                .ideal_cost(block)
                .map_err(|e| lib_err(name, e))?
                .bits();
            total += bits;
        }
        Ok(Some(total))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::baseline::Family;

    fn all_codecs(block: Option<u64>) -> Vec<Box<dyn Codec>> {
        let mut codecs: Vec<Box<dyn Codec>> = Preset::all()
            .map(|p| Box::new(PresetCodec::new(p, block, 1).unwrap()) as Box<dyn Codec>)
            .collect();
        codecs.extend(
            Family::built()
                .flat_map(Family::baselines)
                .map(|b| Box::new(b) as Box<dyn Codec>),
        );
        codecs
    }

    #[test]
    fn every_codec_round_trips() {
        let data = subrange::corpus::gauge_csv(9, 20_000);
        for c in &all_codecs(Some(4096)) {
            for input in [&data[..], &[][..], &data[..1]] {
                let packed = c.compress(input).unwrap();
                assert_eq!(
                    c.decompress(&packed, input.len()).unwrap(),
                    input,
                    "{}",
                    c.name()
                );
            }
        }
    }

    #[test]
    fn ideal_cost_is_below_the_container_size_and_close_to_it() {
        let data = subrange::corpus::skewed(3, 200_000);
        for block in [None, Some(16 << 10)] {
            for p in Preset::all() {
                let c = PresetCodec::new(p, block, 1).unwrap();
                let packed = c.compress(&data).unwrap();
                let Some(bits) = c.ideal_bits(&data, &packed).unwrap() else {
                    continue;
                };
                let size = packed.len() as f64 * 8.0;
                assert!(bits < size, "{}: ideal {bits} vs {size}", c.name());
                assert!(size < bits * 1.05, "{}: ideal {bits} vs {size}", c.name());
            }
        }
    }

    #[test]
    fn stored_blocks_cost_eight_bits_a_byte() {
        let data = subrange::corpus::random(5, 100_000);
        for p in Preset::all() {
            let c = PresetCodec::new(p, Some(16 << 10), 1).unwrap();
            let packed = c.compress(&data).unwrap();
            if let Some(bits) = c.ideal_bits(&data, &packed).unwrap() {
                assert!(bits <= packed.len() as f64 * 8.0, "{}", c.name());
            }
        }
    }

    #[test]
    fn a_bad_block_size_is_a_usage_error() {
        let err = PresetCodec::new(Preset::default(), Some(1), 1)
            .err()
            .unwrap();
        assert_eq!(err.code(), crate::exit::Code::Usage);
    }
}
