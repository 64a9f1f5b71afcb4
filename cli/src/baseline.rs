//! General-compressor baselines for `bench` and `analyze`.
//!
//! A [`Baseline`] is one general compressor (a [`Family`]) at one setting (a
//! [`Level`]), run through its crates.io binding on a whole buffer in memory,
//! on the calling thread. `bench` drives it through the same [`Codec`] trait
//! as a preset, so both are timed on the same buffers with the same clock.
//!
//! | family   | binding | fast           | default       | strongest             |
//! | -------- | ------- | -------------- | ------------- | --------------------- |
//! | `flate2` | flate2  | 1              | 6             | 9                     |
//! | `zstd`   | zstd    | 1              | 3             | 22                    |
//! | `xz`     | liblzma | 0              | 6             | 9 with extreme flag   |
//! | `bzip2`  | bzip2   | 1              | 9             | 9                     |
//! | `brotli` | brotli  | 0              | 11            | 11                    |
//! | `lz4`    | lz4     | acceleration 8 | 1 (fast mode) | 12 (high compression) |
//!
//! "Default" is the setting each library applies when given none (from memory
//! of their documentation); bzip2 and brotli default to their strongest, so
//! they have two settings, not three. flate2 writes the zlib format, xz its
//! own container with a CRC-64, lz4 a bare block (the raw length is known to
//! the caller, as it is to `bench`).
//!
//! flate2 is always built; the others come with the CLI's `baselines`
//! feature. Asking for one that is not built is a usage error.
//!
//! Invariant: a baseline never panics on any input. Whatever its library
//! refuses (an allocation, an input over its size limit, a stream it cannot
//! decode) comes back as an error carrying the library's reason.

use std::fmt;
use std::io::{self, Read, Write};

use crate::codec::{Codec, Kind};
use crate::exit::{CliError, CliResult};

/// A general compressor.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Family {
    /// Deflate in the zlib format (flate2).
    Flate2,
    /// Zstandard (zstd).
    Zstd,
    /// LZMA2 in the xz format (liblzma).
    Xz,
    /// Burrows–Wheeler block sorting (bzip2).
    Bzip2,
    /// Brotli (brotli).
    Brotli,
    /// LZ4 blocks (lz4).
    Lz4,
}

/// Every family, in report order.
const FAMILIES: [Family; 6] = [
    Family::Flate2,
    Family::Zstd,
    Family::Xz,
    Family::Bzip2,
    Family::Brotli,
    Family::Lz4,
];

impl Family {
    /// The families built into this binary.
    pub fn built() -> impl Iterator<Item = Family> {
        FAMILIES.into_iter().filter(|f| f.is_built())
    }

    /// The name in reports and on the command line.
    pub fn name(self) -> &'static str {
        match self {
            Family::Flate2 => "flate2",
            Family::Zstd => "zstd",
            Family::Xz => "xz",
            Family::Bzip2 => "bzip2",
            Family::Brotli => "brotli",
            Family::Lz4 => "lz4",
        }
    }

    /// Whether this binary was built with the family's library.
    pub fn is_built(self) -> bool {
        self == Family::Flate2 || cfg!(feature = "baselines")
    }

    /// The family's distinct settings, fast first.
    pub fn baselines(self) -> Vec<Baseline> {
        let mut out: Vec<Baseline> = Vec::with_capacity(3);
        for level in Level::ALL {
            let b = Baseline {
                family: self,
                level,
            };
            if !out.iter().any(|o| o.setting() == b.setting()) {
                out.push(b);
            }
        }
        out
    }
}

/// Which of a family's settings.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Level {
    /// Its fastest usual setting.
    Fast,
    /// What the library uses when given no setting.
    Default,
    /// Its strongest (smallest-output) setting.
    Strongest,
}

impl Level {
    /// Every level, fast first.
    pub const ALL: [Level; 3] = [Level::Fast, Level::Default, Level::Strongest];

    /// The name on the command line and in JSON.
    pub fn name(self) -> &'static str {
        match self {
            Level::Fast => "fast",
            Level::Default => "default",
            Level::Strongest => "strongest",
        }
    }
}

/// A family's setting as its library takes it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Setting {
    /// A numbered level (flate2, zstd, bzip2, brotli, xz).
    Number(i32),
    /// xz's preset with its extreme flag.
    Extreme(u32),
    /// lz4's fast mode with an acceleration factor.
    Accelerated(i32),
    /// lz4's default fast mode.
    Plain,
    /// lz4's high-compression mode at a level.
    High(i32),
}

/// One general compressor at one setting.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Baseline {
    family: Family,
    level: Level,
}

impl Baseline {
    /// `family` at `level`.
    pub fn new(family: Family, level: Level) -> Self {
        Baseline { family, level }
    }

    /// The family.
    pub fn family(self) -> Family {
        self.family
    }

    /// The level.
    pub fn level(self) -> Level {
        self.level
    }

    fn setting(self) -> Setting {
        use Family::*;
        use Level::*;
        use Setting::*;
        match (self.family, self.level) {
            (Flate2, Fast) => Number(1),
            (Flate2, Default) => Number(6),
            (Flate2, Strongest) => Number(9),
            (Zstd, Fast) => Number(1),
            (Zstd, Default) => Number(3),
            (Zstd, Strongest) => Number(22),
            (Xz, Fast) => Number(0),
            (Xz, Default) => Number(6),
            (Xz, Strongest) => Extreme(9),
            (Bzip2, Fast) => Number(1),
            (Bzip2, Default | Strongest) => Number(9),
            (Brotli, Fast) => Number(0),
            (Brotli, Default | Strongest) => Number(11),
            (Lz4, Fast) => Accelerated(8),
            (Lz4, Default) => Plain,
            (Lz4, Strongest) => High(12),
        }
    }
}

impl fmt::Display for Baseline {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let family = self.family.name();
        match self.setting() {
            Setting::Number(n) => write!(f, "{family}-{n}"),
            Setting::Extreme(n) => write!(f, "{family}-{n}e"),
            Setting::Accelerated(a) => write!(f, "{family}-fast{a}"),
            Setting::Plain => write!(f, "{family}-1"),
            Setting::High(n) => write!(f, "{family}-{n}"),
        }
    }
}

/// The baselines `--baselines` selected, in report order.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct BaselineList(pub Vec<Baseline>);

impl Default for BaselineList {
    /// Every built family at its default setting.
    fn default() -> Self {
        BaselineList(
            Family::built()
                .map(|f| Baseline::new(f, Level::Default))
                .collect(),
        )
    }
}

/// `--baselines` long help.
pub fn baselines_help() -> String {
    let mut s = String::from(
        "General compressors to measure beside the presets, separated by commas: \
'all' (every compressor at its default setting; the default), 'all-levels' (every \
compressor at its fast, default and strongest settings), 'none', a compressor name \
(its default setting), NAME:fast, NAME:default, NAME:strongest or NAME:all-levels, or \
a setting as reports name it (e.g. zstd-22). Compressors and their settings:",
    );
    for family in FAMILIES {
        let default = Baseline::new(family, Level::Default).to_string();
        let names: Vec<String> = family
            .baselines()
            .iter()
            .map(|b| b.to_string())
            .map(|n| {
                if n == default {
                    format!("{n} (default)")
                } else {
                    n
                }
            })
            .collect();
        s.push_str(&format!("\n  {:<7} {}", family.name(), names.join(", ")));
        if !family.is_built() {
            s.push_str(" (not built: the 'baselines' feature is off)");
        }
    }
    s
}

/// Parses a `--baselines` list (clap value parser).
///
/// # Errors
///
/// A message naming the unknown item and the valid names, or the feature a
/// compressor that is not built needs.
pub fn parse_list(text: &str) -> Result<BaselineList, String> {
    let mut out: Vec<Baseline> = Vec::new();
    let mut add = |b: Baseline| {
        if !out.contains(&b) && !out.iter().any(|o| o.to_string() == b.to_string()) {
            out.push(b);
        }
    };
    for item in text.split(',').map(str::trim).filter(|s| !s.is_empty()) {
        let lower = item.to_ascii_lowercase();
        match lower.as_str() {
            "none" => continue,
            "all" => BaselineList::default().0.into_iter().for_each(&mut add),
            "all-levels" => Family::built()
                .flat_map(Family::baselines)
                .for_each(&mut add),
            _ => parse_item(&lower)?.into_iter().for_each(&mut add),
        }
    }
    Ok(BaselineList(out))
}

fn parse_item(item: &str) -> Result<Vec<Baseline>, String> {
    let valid = || {
        let names: Vec<&str> = FAMILIES.iter().map(|f| f.name()).collect();
        format!(
            "valid: all, all-levels, none, {} (optionally :fast, :default, :strongest or \
             :all-levels), or a setting such as zstd-22",
            names.join(", ")
        )
    };
    let (name, level) = match item.split_once(':') {
        Some((n, l)) => (n, Some(l)),
        None => (item, None),
    };
    let found = FAMILIES.iter().copied().find(|f| f.name() == name);
    let picked: Vec<Baseline> = match (found, level) {
        (Some(f), None | Some("default")) => vec![Baseline::new(f, Level::Default)],
        (Some(f), Some("all-levels")) => f.baselines(),
        (Some(f), Some(l)) => match Level::ALL.iter().find(|x| x.name() == l) {
            Some(&lv) => vec![Baseline::new(f, lv)],
            None => {
                return Err(format!(
                    "unknown setting '{l}' of baseline '{name}'; {}",
                    valid()
                ))
            }
        },
        (None, None) => {
            let exact = FAMILIES
                .iter()
                .flat_map(|f| f.baselines())
                .find(|b| b.to_string() == item);
            match exact {
                Some(b) => vec![b],
                None => return Err(format!("unknown baseline '{item}'; {}", valid())),
            }
        }
        (None, Some(_)) => return Err(format!("unknown baseline '{name}'; {}", valid())),
    };
    if let Some(b) = picked.iter().find(|b| !b.family.is_built()) {
        return Err(format!(
            "baseline '{}' is not built into this subrange: build it with the 'baselines' feature",
            b.family.name()
        ));
    }
    Ok(picked)
}

/// An output buffer of `capacity` bytes, or an error if it cannot be had.
fn buffer(capacity: usize) -> io::Result<Vec<u8>> {
    let mut v = Vec::new();
    v.try_reserve_exact(capacity)
        .map_err(|e| io::Error::new(io::ErrorKind::OutOfMemory, e.to_string()))?;
    Ok(v)
}

impl Codec for Baseline {
    fn name(&self) -> String {
        self.to_string()
    }
    fn kind(&self) -> Kind {
        Kind::Baseline
    }
    fn baseline(&self) -> Option<Baseline> {
        Some(*self)
    }
    fn compress(&self, data: &[u8]) -> CliResult<Vec<u8>> {
        let guess = data.len() / 2 + 64;
        encode(self.family, self.setting(), data, guess)
            .map_err(|e| CliError::io(format!("{self} failed"), e))
    }
    fn decompress(&self, packed: &[u8], raw_len: usize) -> CliResult<Vec<u8>> {
        decode(self.family, packed, raw_len).map_err(|e| CliError::io(format!("{self} failed"), e))
    }
    fn ideal_bits(&self, _data: &[u8], _packed: &[u8]) -> CliResult<Option<f64>> {
        Ok(None)
    }
}

fn encode(family: Family, setting: Setting, data: &[u8], guess: usize) -> io::Result<Vec<u8>> {
    let level = match setting {
        Setting::Number(n) | Setting::High(n) | Setting::Accelerated(n) => n,
        Setting::Extreme(n) => n as i32,
        Setting::Plain => 0,
    };
    match family {
        Family::Flate2 => {
            let mut enc = flate2::write::ZlibEncoder::new(
                buffer(guess)?,
                flate2::Compression::new(level as u32),
            );
            enc.write_all(data)?;
            enc.finish()
        }
        #[cfg(feature = "baselines")]
        other => more::encode(other, setting, data, guess),
        #[cfg(not(feature = "baselines"))]
        other => Err(not_built(other)),
    }
}

fn decode(family: Family, packed: &[u8], raw_len: usize) -> io::Result<Vec<u8>> {
    match family {
        Family::Flate2 => {
            let mut out = buffer(raw_len)?;
            flate2::read::ZlibDecoder::new(packed).read_to_end(&mut out)?;
            Ok(out)
        }
        #[cfg(feature = "baselines")]
        other => more::decode(other, packed, raw_len),
        #[cfg(not(feature = "baselines"))]
        other => Err(not_built(other)),
    }
}

#[cfg(not(feature = "baselines"))]
fn not_built(family: Family) -> io::Error {
    io::Error::other(format!("{} is not built into this subrange", family.name()))
}

/// The families of the `baselines` feature.
#[cfg(feature = "baselines")]
mod more {
    use super::*;

    pub(super) fn encode(
        family: Family,
        setting: Setting,
        data: &[u8],
        guess: usize,
    ) -> io::Result<Vec<u8>> {
        match (family, setting) {
            (Family::Zstd, Setting::Number(level)) => zstd::bulk::compress(data, level),
            (Family::Xz, Setting::Number(_) | Setting::Extreme(_)) => {
                let preset = match setting {
                    Setting::Extreme(n) => n | liblzma::stream::PRESET_EXTREME,
                    Setting::Number(n) => n as u32,
                    _ => unreachable!("matched above"),
                };
                let stream = liblzma::stream::Stream::new_easy_encoder(
                    preset,
                    liblzma::stream::Check::Crc64,
                )
                .map_err(io::Error::from)?;
                let mut enc = liblzma::write::XzEncoder::new_stream(buffer(guess)?, stream);
                enc.write_all(data)?;
                enc.finish()
            }
            (Family::Bzip2, Setting::Number(level)) => {
                let mut enc = bzip2::write::BzEncoder::new(
                    buffer(guess)?,
                    bzip2::Compression::new(level as u32),
                );
                enc.write_all(data)?;
                enc.finish()
            }
            (Family::Brotli, Setting::Number(quality)) => {
                let params = brotli::enc::BrotliEncoderParams {
                    quality,
                    size_hint: data.len(),
                    ..Default::default()
                };
                let mut out = buffer(guess)?;
                brotli::BrotliCompress(&mut &data[..], &mut out, &params)?;
                Ok(out)
            }
            (Family::Lz4, _) => {
                let mode = match setting {
                    Setting::Accelerated(a) => lz4::block::CompressionMode::FAST(a),
                    Setting::High(n) => lz4::block::CompressionMode::HIGHCOMPRESSION(n),
                    _ => lz4::block::CompressionMode::DEFAULT,
                };
                // lz4's optimal parser (level 12) reads the first bytes at
                // the source pointer even for an empty source, and an empty
                // Rust slice points nowhere: give it a real, empty buffer.
                let pad = [0u8; 16];
                let src = if data.is_empty() { &pad[..0] } else { data };
                lz4::block::compress(src, Some(mode), false)
            }
            (family, setting) => Err(io::Error::other(format!(
                "{} has no setting {setting:?}",
                family.name()
            ))),
        }
    }

    pub(super) fn decode(family: Family, packed: &[u8], raw_len: usize) -> io::Result<Vec<u8>> {
        match family {
            Family::Zstd => zstd::bulk::decompress(packed, raw_len),
            Family::Xz => {
                let mut out = buffer(raw_len)?;
                liblzma::read::XzDecoder::new(packed).read_to_end(&mut out)?;
                Ok(out)
            }
            Family::Bzip2 => {
                let mut out = buffer(raw_len)?;
                bzip2::read::BzDecoder::new(packed).read_to_end(&mut out)?;
                Ok(out)
            }
            Family::Brotli => {
                let mut out = buffer(raw_len)?;
                brotli::BrotliDecompress(&mut &packed[..], &mut out)?;
                Ok(out)
            }
            Family::Lz4 => {
                let len = i32::try_from(raw_len).map_err(|_| {
                    io::Error::new(
                        io::ErrorKind::InvalidInput,
                        "an lz4 block holds at most 2^31 - 1 bytes",
                    )
                })?;
                lz4::block::decompress(packed, Some(len))
            }
            Family::Flate2 => unreachable!("flate2 is decoded by the caller"),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_built_setting_round_trips_and_reports_garbage() {
        let data = subrange::corpus::gauge_csv(9, 30_000);
        let mut seen = 0;
        for b in Family::built().flat_map(Family::baselines) {
            for input in [&data[..], &[][..], &data[..1]] {
                let packed = b.compress(input).unwrap();
                assert_eq!(b.decompress(&packed, input.len()).unwrap(), input, "{b}");
            }
            // Damaged streams are errors with a reason (or, where the format
            // has no checksum, different bytes), never a panic.
            let mut packed = b.compress(&data).unwrap();
            let mid = packed.len() / 2;
            packed[mid] ^= 0x55;
            packed.truncate(packed.len() - 3);
            match b.decompress(&packed, data.len()) {
                Ok(out) => assert_ne!(out, data, "{b} decoded a damaged stream"),
                Err(e) => assert!(e.message().contains(&b.to_string()), "{}", e.message()),
            }
            seen += 1;
        }
        let families = Family::built().count();
        assert!(seen >= 3 * families - 2 * usize::from(families > 1));
    }

    #[test]
    fn settings_reach_the_library() {
        let data = subrange::corpus::gauge_csv(4, 200_000);
        for f in Family::built() {
            let size = |l| Baseline::new(f, l).compress(&data).unwrap().len();
            let (fast, strongest) = (size(Level::Fast), size(Level::Strongest));
            // Different output, and the strongest setting not meaningfully
            // larger (bzip2's 900k blocks cost it 1% here against 100k ones).
            assert_ne!(fast, strongest, "{}", f.name());
            assert!(
                strongest * 100 <= fast * 102,
                "{}: {strongest} > {fast}",
                f.name()
            );
        }
    }

    #[test]
    fn names_and_lists() {
        let name = |f, l| Baseline::new(f, l).to_string();
        assert_eq!(name(Family::Flate2, Level::Strongest), "flate2-9");
        assert_eq!(name(Family::Xz, Level::Strongest), "xz-9e");
        assert_eq!(name(Family::Lz4, Level::Fast), "lz4-fast8");
        assert_eq!(Family::Bzip2.baselines().len(), 2);
        assert_eq!(Family::Brotli.baselines().len(), 2);
        assert_eq!(Family::Zstd.baselines().len(), 3);

        let all = parse_list("all").unwrap();
        assert_eq!(all, BaselineList::default());
        assert_eq!(all.0.len(), Family::built().count());
        assert!(all.0.iter().all(|b| b.level() == Level::Default));
        assert!(parse_list("none").unwrap().0.is_empty());
        let every = parse_list("all-levels").unwrap();
        let want: usize = Family::built().map(|f| f.baselines().len()).sum();
        assert_eq!(every.0.len(), want);
        // Repeats collapse; order is the order given.
        let two = parse_list("flate2-9, flate2:strongest,flate2").unwrap();
        let names: Vec<String> = two.0.iter().map(|b| b.to_string()).collect();
        assert_eq!(names, ["flate2-9", "flate2-6"]);
        for bad in ["gzip", "flate2:best", "flate2-4", "nope:fast"] {
            let err = parse_list(bad).unwrap_err();
            assert!(err.contains("valid:"), "{bad}: {err}");
        }
        if cfg!(feature = "baselines") {
            let b = parse_list("xz:strongest,lz4-12").unwrap();
            let names: Vec<String> = b.0.iter().map(|b| b.to_string()).collect();
            assert_eq!(names, ["xz-9e", "lz4-12"]);
        } else {
            let err = parse_list("zstd").unwrap_err();
            assert!(err.contains("baselines"), "{err}");
        }
        let help = baselines_help();
        for f in FAMILIES {
            assert!(help.contains(f.name()), "{help}");
        }
        assert!(help.contains("xz-6 (default), xz-9e"), "{help}");
    }
}
