//! Writes the seed corpora of the container fuzz targets, and their
//! dictionary, with the library itself.
//!
//! ```text
//! fuzz_seeds OUTDIR [DICTDIR]
//! ```
//!
//! - `OUTDIR/decode_container/`: real containers for every preset (default
//!   and extreme parameters), several block sizes, empty input, flushed
//!   streams with short blocks, concatenated containers, and snippets of the
//!   demo corpus (river-gauge telemetry and friends);
//! - `OUTDIR/decode_index/`: containers of many small blocks with and
//!   without a block index, and indexed empty and one-block containers;
//! - `OUTDIR/roundtrip/`: the roundtrip target's eight setup bytes (preset
//!   index, block size, threads, write pattern, parameters) before demo
//!   data;
//! - `OUTDIR/decode_frame/`: model snapshots with frames coded from them
//!   (and from other snapshots), frames alone, and training samples with
//!   messages, in that target's three input modes;
//! - `DICTDIR/decode_container.dict` (also used for `decode_index`): the
//!   format's magic, version, record kinds, the index mark, preset ids and
//!   parameter values, and whole headers and end records as this release
//!   writes them, so the fuzzer starts from the byte patterns a decoder
//!   branches on.
//!
//! Everything is derived from the library's constants and output, so seeds
//! and dictionary follow the format as it changes; `fuzz/gen_seeds.py` runs
//! this. Seeds stay a few KiB long: libFuzzer sizes its inputs after the
//! largest seed, and small inputs keep it fast.

use std::error::Error;
use std::fmt::Write as _;
use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};

use subrange::format::{inspect, IndexPolicy, INDEX_MARK, MAGIC, VERSION};
use subrange::preset::{Preset, PresetKind};
use subrange::{compress, Compressor, Options};

/// Block sizes the containers are cut with (16 is the smallest allowed;
/// the container target accepts up to 64 KiB).
const BLOCK_SIZES: [u64; 6] = [16, 100, 1024, 4096, 16_384, 65_536];

/// Writes seed files, numbered, into one target's directory.
struct Seeds {
    dir: PathBuf,
    count: usize,
}

impl Seeds {
    fn new(root: &Path, target: &str) -> Result<Self, Box<dyn Error>> {
        let dir = root.join(target);
        fs::create_dir_all(&dir)?;
        Ok(Seeds { dir, count: 0 })
    }

    fn put(&mut self, name: &str, bytes: &[u8]) -> Result<(), Box<dyn Error>> {
        let file = format!("{:03}-{name}", self.count);
        fs::write(self.dir.join(file), bytes)?;
        self.count += 1;
        Ok(())
    }
}

fn options(preset: Preset, block_size: u64) -> Result<Options, Box<dyn Error>> {
    let mut opts = Options::new();
    opts.preset(preset).threads(1).block_size(block_size)?;
    Ok(opts)
}

/// Every preset with default parameters, then each parameter at its
/// minimum and at its maximum (where the others allow it, and where a reader
/// with default limits still accepts the result: 256 MiB of memory).
fn preset_variants() -> Vec<(String, Preset)> {
    const DEFAULT_MEMORY_LIMIT: u64 = 256 << 20;
    let mut out = Vec::new();
    // The presets kept for reading older containers are fuzzed too.
    let kept = PresetKind::KEPT_FOR_READING.iter().map(|&k| Preset::new(k));
    for base in Preset::all().chain(kept) {
        out.push((base.name().to_string(), base));
        for spec in base.param_specs() {
            for v in [spec.min, spec.max] {
                let mut p = base;
                if v != spec.default
                    && p.set_param(spec.name, v).is_ok()
                    && p.memory_needed(64 << 10) <= DEFAULT_MEMORY_LIMIT
                {
                    out.push((format!("{}-{}{v}", base.name(), spec.name), p));
                }
            }
        }
    }
    out
}

fn decode_container_seeds(root: &Path) -> Result<(), Box<dyn Error>> {
    let mut seeds = Seeds::new(root, "decode_container")?;
    let demo = subrange::corpus::demo(1500);
    for (name, preset) in preset_variants() {
        seeds.put(
            &format!("{name}-empty"),
            &compress(&[], &options(preset, 4096)?)?,
        )?;
        for (i, &bs) in BLOCK_SIZES.iter().enumerate() {
            // One data set per block size, rotating, keeps the corpus small.
            let set = &demo[i % demo.len()];
            let packed = compress(&set.data, &options(preset, bs)?)?;
            seeds.put(&format!("{name}-{}-b{bs}", set.name), &packed)?;
        }
    }
    for preset in Preset::all() {
        let name = preset.name();
        // Every demo data set in one block; and once at the default block
        // size, above the container target's limit.
        for set in &demo {
            let packed = compress(&set.data, &options(preset, 8192)?)?;
            seeds.put(&format!("{name}-{}", set.name), &packed)?;
        }
        let packed = compress(&demo[0].data, Options::new().preset(preset).threads(1))?;
        seeds.put(&format!("{name}-default-block-size"), &packed)?;
        // A telemetry stream flushed after every few readings: short blocks.
        let mut c = Compressor::new(Vec::new(), &options(preset, 4096)?);
        let readings = subrange::corpus::gauge_csv(9, 1200);
        for (i, line) in readings.split_inclusive(|&b| b == b'\n').enumerate() {
            c.write_all(line)?;
            if i % 5 == 4 {
                c.flush()?;
            }
        }
        seeds.put(&format!("{name}-flushed"), &c.finish()?)?;
        // Two containers back to back, the second one empty.
        let mut both = compress(&demo[0].data[..600], &options(preset, 256)?)?;
        both.extend(compress(&[], &options(preset, 256)?)?);
        seeds.put(&format!("{name}-concatenated"), &both)?;
        // Long runs: a small container that decodes to full 64 KiB blocks.
        let packed = compress(&vec![b'7'; 128 << 10], &options(preset, 64 << 10)?)?;
        seeds.put(&format!("{name}-run-128k"), &packed)?;
    }
    Ok(())
}

/// Seeds for the random-access target: containers of several blocks with
/// a block index (and a few without), small blocks so that a seed holds
/// many entries.
fn decode_index_seeds(root: &Path) -> Result<(), Box<dyn Error>> {
    let mut seeds = Seeds::new(root, "decode_index")?;
    let demo = subrange::corpus::demo(1200);
    for (i, preset) in Preset::all().enumerate() {
        let name = preset.name();
        for (j, &bs) in [16u64, 100, 1024].iter().enumerate() {
            let set = &demo[(i + j) % demo.len()];
            let mut opts = options(preset, bs)?;
            for policy in [IndexPolicy::Auto, IndexPolicy::Never] {
                opts.block_index(policy);
                let packed = compress(&set.data, &opts)?;
                seeds.put(&format!("{name}-{}-b{bs}-{policy:?}", set.name), &packed)?;
            }
        }
        let mut opts = options(preset, 256)?;
        opts.block_index(IndexPolicy::Always);
        seeds.put(&format!("{name}-empty-indexed"), &compress(&[], &opts)?)?;
        seeds.put(
            &format!("{name}-one-block-indexed"),
            &compress(&demo[0].data[..200], &opts)?,
        )?;
    }
    Ok(())
}

fn roundtrip_seeds(root: &Path) -> Result<(), Box<dyn Error>> {
    let mut seeds = Seeds::new(root, "roundtrip")?;
    let demo = subrange::corpus::demo(1200);
    let presets = Preset::all().count() as u8;
    for p in 0..presets {
        for mode in 0..4u8 {
            for write in 0..4u8 {
                let set = &demo[usize::from(mode * 4 + write) % demo.len()];
                // preset, block mode, block value (2 bytes), threads and write
                // pattern, largest write, two parameters (default).
                let threads = write & 1;
                let setup = [
                    p,
                    mode,
                    40 + 9 * write,
                    1,
                    threads | write << 1 | 8,
                    11,
                    0,
                    0,
                ];
                let mut input = setup.to_vec();
                input.extend_from_slice(&set.data);
                seeds.put(&format!("p{p}-m{mode}-w{write}-{}", set.name), &input)?;
            }
        }
        // Extreme parameters (bytes 6 and 7 at 128 and 255: minimum and
        // maximum) and empty data.
        seeds.put(&format!("p{p}-min-params"), &[p, 0, 0, 0, 0, 1, 128, 128])?;
        let mut input = vec![p, 2, 8, 0, 3, 200, 255, 255];
        input.extend_from_slice(&demo[1].data);
        seeds.put(&format!("p{p}-max-params"), &input)?;
    }
    Ok(())
}

/// A dictionary entry in libFuzzer's format: `name="\xNN..."`.
fn entry(out: &mut String, name: &str, bytes: &[u8]) {
    let mut value = String::new();
    for &b in bytes {
        let _ = write!(value, "\\x{b:02X}");
    }
    let _ = writeln!(out, "{name}=\"{value}\"");
}

fn vint(mut v: u64) -> Vec<u8> {
    let mut out = Vec::new();
    while v >= 0x80 {
        out.push(v as u8 | 0x80);
        v >>= 7;
    }
    out.push(v as u8);
    out
}

fn decode_container_dict() -> Result<String, Box<dyn Error>> {
    let mut d = String::new();
    d.push_str(
        "# Tokens of the subrange container format (docs/FORMAT.md).\n\
         # Generated by examples/fuzz_seeds.rs (run by fuzz/gen_seeds.py); do not edit.\n\n\
         # Magic, and magic with the version.\n",
    );
    entry(&mut d, "magic", &MAGIC);
    let mut mv = MAGIC.to_vec();
    mv.push(VERSION);
    entry(&mut d, "magic_version", &mv);
    d.push_str("\n# Record kinds: end record, stored block, coded block.\n");
    entry(&mut d, "kind_end", &[0x00]);
    entry(&mut d, "kind_stored", &[0x01]);
    entry(&mut d, "kind_coded", &[0x02]);
    entry(&mut d, "kind_indexed_end", &[0x03]);
    entry(&mut d, "index_mark", &INDEX_MARK);
    d.push_str("\n# Block sizes as vints, and vint edge cases (largest, non-minimal).\n");
    for bs in BLOCK_SIZES
        .iter()
        .copied()
        .chain([1, 64 << 20, (64 << 20) + 1])
    {
        entry(&mut d, &format!("block_size_{bs}"), &vint(bs));
    }
    entry(&mut d, "vint_max", &vint(u64::MAX));
    entry(&mut d, "vint_u32_max", &vint(u32::MAX.into()));
    entry(&mut d, "vint_non_minimal", &[0x80, 0x00]);
    d.push_str("\n# Presets: id, parameter count, each parameter's range ends and default.\n");
    for preset in Preset::all() {
        let name = preset.name();
        entry(&mut d, &format!("{name}_id"), &vint(preset.id().into()));
        entry(
            &mut d,
            &format!("{name}_param_count"),
            &[preset.params().len() as u8],
        );
        for spec in preset.param_specs() {
            for (what, v) in [
                ("min", spec.min),
                ("max", spec.max),
                ("default", spec.default),
            ] {
                entry(
                    &mut d,
                    &format!("{name}_{}_{what}", spec.name),
                    &vint(v.into()),
                );
            }
        }
    }
    d.push_str("\n# Whole headers and empty-container end records, as written.\n");
    for (name, preset) in preset_variants() {
        for bs in [16u64, 4096, 64 << 10] {
            let packed = compress(&[], &options(preset, bs)?)?;
            let header_len = inspect(&packed[..])?.header.len as usize;
            entry(
                &mut d,
                &format!("header_{name}_b{bs}"),
                &packed[..header_len],
            );
            if bs == 4096 {
                entry(&mut d, &format!("end_empty_{name}"), &packed[header_len..]);
            }
        }
    }
    Ok(d)
}

/// Seeds for the primed-message target: byte 0 is the input mode (see
/// `tests/fuzz_support/decode_frame.rs`).
fn decode_frame_seeds(root: &Path) -> Result<(), Box<dyn Error>> {
    use subrange::model::{ContextModel, ContextParams, Model, Snapshot, StepwiseModel};
    use subrange::prime::encode_message;

    let mut seeds = Seeds::new(root, "decode_frame")?;
    let text = subrange::corpus::gauge_csv(7, 3000);
    let (sample, messages) = text.split_at(2400);
    let mut context = ContextModel::new(ContextParams::default())?;
    context.train(sample);
    let mut adaptive = StepwiseModel::new(256)?;
    for &b in sample {
        adaptive.update(b.into());
    }
    let snapshots = [Snapshot::capture(&context)?, Snapshot::capture(&adaptive)?];
    for (k, snapshot) in snapshots.iter().enumerate() {
        for (i, message) in messages.chunks(150).take(3).enumerate() {
            let frame = encode_message(snapshot, message)?;
            let bytes = snapshot.as_bytes();
            let mut seed = vec![0u8];
            seed.extend_from_slice(&(bytes.len() as u16).to_le_bytes());
            seed.extend_from_slice(bytes);
            seed.extend_from_slice(&frame);
            seeds.put(&format!("snapshot{k}-frame{i}"), &seed)?;
            let mut alone = vec![1u8];
            alone.extend_from_slice(&frame);
            seeds.put(&format!("frame{k}-{i}"), &alone)?;
        }
    }
    for (i, pick) in [0u8, 1, 6, 0x2C, 0xC6].into_iter().enumerate() {
        let mut seed = vec![2u8, pick];
        seed.extend_from_slice(&text[..300 + 100 * i]);
        seeds.put(&format!("train-{i}"), &seed)?;
    }
    Ok(())
}

fn main() -> Result<(), Box<dyn Error>> {
    let mut args = std::env::args_os().skip(1);
    let Some(out) = args.next() else {
        eprintln!("usage: fuzz_seeds OUTDIR [DICTDIR]");
        std::process::exit(2);
    };
    let out = PathBuf::from(out);
    decode_container_seeds(&out)?;
    decode_index_seeds(&out)?;
    roundtrip_seeds(&out)?;
    decode_frame_seeds(&out)?;
    if let Some(dicts) = args.next() {
        let dicts = PathBuf::from(dicts);
        fs::create_dir_all(&dicts)?;
        fs::write(
            dicts.join("decode_container.dict"),
            decode_container_dict()?,
        )?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn dictionary_holds_the_magic_and_every_preset() {
        let d = decode_container_dict().unwrap();
        assert!(d.contains("magic=\"\\xB7\\x73\\x72\\x67\""));
        for p in Preset::all() {
            assert!(d.contains(&format!("header_{}_b4096=", p.name())));
        }
        assert_eq!(vint(300), [0xAC, 0x02]); // docs/FORMAT.md, section 1
    }

    #[test]
    fn seeds_are_small_containers() {
        let dir = std::env::temp_dir().join(format!("fuzz-seeds-{}", std::process::id()));
        decode_container_seeds(&dir).unwrap();
        let mut n = 0;
        for e in fs::read_dir(dir.join("decode_container")).unwrap() {
            let bytes = fs::read(e.unwrap().path()).unwrap();
            assert!(bytes.starts_with(&MAGIC));
            assert!(bytes.len() <= 8 << 10, "seeds stay small");
            n += 1;
        }
        fs::remove_dir_all(&dir).unwrap();
        assert!(n > 20);
    }
}
