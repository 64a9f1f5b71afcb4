//! The codecs `bench` and `analyze` measure: presets and the flate2 baseline.
//!
//! A [`Codec`] compresses a whole buffer in memory and decompresses it again;
//! `bench` times both directions and checks the round trip. Presets also
//! report their *ideal cost*: `Σ -log2(freq / total)` over every coded symbol,
//! measured with the encoder's cost meter in a separate, untimed pass, so the
//! report can split a preset's size into model quality (the ideal cost) and
//! coding overhead (what the coder, tables and headers add on top).
//!
//! The preset codecs here drive the models through the coder directly:
//! - `static`: a [`TableModel`] of the data's byte histogram, coded over four
//!   interleaved lanes; the size counts the serialised table and each lane's
//!   length (as a LEB128 number) besides the lane streams.
//! - `adaptive`: an [`AdaptiveModel`] over 256 symbols, one lane.

use std::io::{Read, Write};

use subrange::coder::{decode_table_lanes, encode_table_lanes, Decoder, Encoder};
use subrange::model::{AdaptiveModel, Model, TableModel};

use crate::exit::{CliError, CliResult};
use crate::presets::PresetName;

/// `log2` of the static table's total.
const TABLE_LOG2_TOTAL: u32 = 14;
/// Interleaved lanes of the static preset.
const STATIC_LANES: usize = 4;

/// What a codec is in a report.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Kind {
    /// One of our presets.
    Preset,
    /// The flate2 comparison.
    Baseline,
}

/// A whole-buffer compressor under measurement.
pub trait Codec {
    /// Name in reports (`static`, `flate2-6`, …).
    fn name(&self) -> String;
    /// Preset or baseline.
    fn kind(&self) -> Kind;
    /// Compresses `data`.
    fn compress(&self, data: &[u8]) -> CliResult<Vec<u8>>;
    /// Decompresses what [`compress`](Codec::compress) returned for `raw_len` bytes.
    fn decompress(&self, packed: &[u8], raw_len: usize) -> CliResult<Vec<u8>>;
    /// The ideal cost in bits of the symbols the models coded, when known.
    fn ideal_bits(&self, data: &[u8]) -> CliResult<Option<f64>>;
}

/// The codec of a preset.
pub fn preset_codec(preset: &PresetName) -> Box<dyn Codec> {
    match preset.as_str() {
        "static" => Box::new(StaticCodec),
        _ => Box::new(AdaptiveCodec),
    }
}

/// The flate2 baselines: levels 1, 6 and 9.
pub fn baselines() -> Vec<Box<dyn Codec>> {
    [1, 6, 9]
        .into_iter()
        .map(|level| Box::new(Flate { level }) as Box<dyn Codec>)
        .collect()
}

fn lib_err(codec: &str, e: subrange::Error) -> CliError {
    CliError::library(format!("{codec} failed"), &e)
}

/// Ideal cost of coding `data` with `model` (a single metered encoder).
fn metered<M: Model>(mut model: M, data: &[u8], codec: &str) -> CliResult<f64> {
    let mut enc = Encoder::new();
    enc.enable_cost_meter();
    for &b in data {
        enc.encode(&mut model, u32::from(b))
            .map_err(|e| lib_err(codec, e))?;
    }
    Ok(enc.ideal_cost().map_or(0.0, |c| c.bits()))
}

/// The `static` preset, driven directly.
struct StaticCodec;

impl Codec for StaticCodec {
    fn name(&self) -> String {
        "static".into()
    }
    fn kind(&self) -> Kind {
        Kind::Preset
    }
    fn compress(&self, data: &[u8]) -> CliResult<Vec<u8>> {
        if data.is_empty() {
            return Ok(Vec::new());
        }
        let model = TableModel::from_bytes_histogram(data, TABLE_LOG2_TOTAL)
            .map_err(|e| lib_err("static", e))?;
        let lanes =
            encode_table_lanes(&model, data, STATIC_LANES).map_err(|e| lib_err("static", e))?;
        let mut out = model.to_bytes();
        for lane in &lanes {
            put_leb128(&mut out, lane.len() as u64);
        }
        for lane in &lanes {
            out.extend_from_slice(lane);
        }
        Ok(out)
    }
    fn decompress(&self, packed: &[u8], raw_len: usize) -> CliResult<Vec<u8>> {
        if raw_len == 0 {
            return Ok(Vec::new());
        }
        let (model, used) =
            TableModel::from_table_bytes(packed, 256).map_err(|e| lib_err("static", e))?;
        let mut pos = used;
        let mut lens = [0usize; STATIC_LANES];
        for len in &mut lens {
            *len = get_leb128(packed, &mut pos)
                .ok_or_else(|| CliError::damaged("static: lane lengths are damaged"))?;
        }
        let mut views = Vec::with_capacity(STATIC_LANES);
        for len in lens {
            let end = pos
                .checked_add(len)
                .filter(|&e| e <= packed.len())
                .ok_or_else(|| CliError::damaged("static: a lane runs past the end"))?;
            views.push(&packed[pos..end]);
            pos = end;
        }
        let mut out = vec![0u8; raw_len];
        decode_table_lanes(&model, &views, &mut out).map_err(|e| lib_err("static", e))?;
        Ok(out)
    }
    fn ideal_bits(&self, data: &[u8]) -> CliResult<Option<f64>> {
        if data.is_empty() {
            return Ok(Some(0.0));
        }
        let model = TableModel::from_bytes_histogram(data, TABLE_LOG2_TOTAL)
            .map_err(|e| lib_err("static", e))?;
        metered(model, data, "static").map(Some)
    }
}

/// The `adaptive` preset, driven directly.
struct AdaptiveCodec;

impl AdaptiveCodec {
    fn model() -> CliResult<AdaptiveModel> {
        AdaptiveModel::new(256).map_err(|e| lib_err("adaptive", e))
    }
}

impl Codec for AdaptiveCodec {
    fn name(&self) -> String {
        "adaptive".into()
    }
    fn kind(&self) -> Kind {
        Kind::Preset
    }
    fn compress(&self, data: &[u8]) -> CliResult<Vec<u8>> {
        let mut model = Self::model()?;
        let mut enc = Encoder::with_sink(Vec::with_capacity(data.len() / 2 + 16));
        for &b in data {
            enc.encode(&mut model, u32::from(b))
                .map_err(|e| lib_err("adaptive", e))?;
        }
        enc.finish().map_err(|e| lib_err("adaptive", e))
    }
    fn decompress(&self, packed: &[u8], raw_len: usize) -> CliResult<Vec<u8>> {
        let mut model = Self::model()?;
        let mut dec = Decoder::new(packed).map_err(|e| lib_err("adaptive", e))?;
        let mut out = Vec::with_capacity(raw_len);
        for _ in 0..raw_len {
            let s = dec.decode(&mut model).map_err(|e| lib_err("adaptive", e))?;
            out.push(s as u8);
        }
        dec.finish().map_err(|e| lib_err("adaptive", e))?;
        Ok(out)
    }
    fn ideal_bits(&self, data: &[u8]) -> CliResult<Option<f64>> {
        metered(Self::model()?, data, "adaptive").map(Some)
    }
}

/// flate2 (zlib format: deflate plus a 2-byte header and an Adler-32).
struct Flate {
    level: u32,
}

impl Codec for Flate {
    fn name(&self) -> String {
        format!("flate2-{}", self.level)
    }
    fn kind(&self) -> Kind {
        Kind::Baseline
    }
    fn compress(&self, data: &[u8]) -> CliResult<Vec<u8>> {
        let mut enc = flate2::write::ZlibEncoder::new(
            Vec::with_capacity(data.len() / 2 + 64),
            flate2::Compression::new(self.level),
        );
        enc.write_all(data)
            .and_then(|()| enc.finish())
            .map_err(|e| CliError::io(format!("{} failed", self.name()), e))
    }
    fn decompress(&self, packed: &[u8], raw_len: usize) -> CliResult<Vec<u8>> {
        let mut out = Vec::with_capacity(raw_len);
        flate2::read::ZlibDecoder::new(packed)
            .read_to_end(&mut out)
            .map_err(|e| CliError::io(format!("{} failed", self.name()), e))?;
        Ok(out)
    }
    fn ideal_bits(&self, _data: &[u8]) -> CliResult<Option<f64>> {
        Ok(None)
    }
}

fn put_leb128(out: &mut Vec<u8>, mut v: u64) {
    while v >= 0x80 {
        out.push((v as u8) | 0x80);
        v >>= 7;
    }
    out.push(v as u8);
}

fn get_leb128(bytes: &[u8], pos: &mut usize) -> Option<usize> {
    let mut v = 0u64;
    for shift in (0..64).step_by(7) {
        let b = *bytes.get(*pos)?;
        *pos += 1;
        v |= u64::from(b & 0x7F) << shift;
        if b < 0x80 {
            return usize::try_from(v).ok();
        }
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_codec_round_trips() {
        let data = subrange::corpus::gauge_csv(9, 20_000);
        let mut codecs: Vec<Box<dyn Codec>> = PresetName::all().iter().map(preset_codec).collect();
        codecs.extend(baselines());
        for c in &codecs {
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
    fn ideal_cost_is_below_the_coded_size_and_close_to_it() {
        let data = subrange::corpus::skewed(3, 50_000);
        for p in PresetName::all() {
            let c = preset_codec(&p);
            let bits = c.ideal_bits(&data).unwrap().unwrap();
            let size = c.compress(&data).unwrap().len() as f64 * 8.0;
            assert!(bits < size, "{p}: ideal {bits} vs {size}");
            assert!(size < bits * 1.05, "{p}: ideal {bits} vs {size}");
        }
    }

    #[test]
    fn leb128_round_trips_and_rejects_truncation() {
        for v in [0u64, 1, 127, 128, 300, 1 << 40] {
            let mut b = Vec::new();
            put_leb128(&mut b, v);
            let mut pos = 0;
            assert_eq!(get_leb128(&b, &mut pos), Some(v as usize));
            assert_eq!(pos, b.len());
            let mut pos = 0;
            assert_eq!(get_leb128(&b[..b.len() - 1], &mut pos), None);
        }
    }
}
