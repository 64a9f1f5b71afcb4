//! Damage: truncation at every offset and every single-bit flip of a sample
//! container are reported as errors and never yield wrong bytes; CRC-32
//! detects bursts; the inspector reports damage block by block.
#![cfg(feature = "std")]

use std::io::Read;

use subrange::format::{inspect, CrcStatus, Inspector};
use subrange::preset::Preset;
use subrange::{compress, decompress, Decompressor, ErrorKind, Options};

fn sample(preset: Preset) -> (Vec<u8>, Vec<u8>) {
    // Several coded blocks and one stored (random) block.
    let mut data = subrange::corpus::gauge_csv(31, 2048);
    data.extend(subrange::corpus::random(32, 512));
    data.extend(subrange::corpus::skewed(33, 600));
    let mut o = Options::new();
    o.preset(preset).threads(1);
    o.block_size(512).unwrap();
    let packed = compress(&data, &o).unwrap();
    (data, packed)
}

/// Decodes `bytes` both ways; both must fail, and the streaming decoder
/// may only have produced a prefix of `data` before failing.
fn assert_rejected(bytes: &[u8], data: &[u8], what: &str) {
    assert!(decompress(bytes).is_err(), "one-shot accepted {what}");
    let mut d = Decompressor::new(bytes);
    let mut out = Vec::new();
    let mut buf = [0u8; 97];
    let err = loop {
        match d.read(&mut buf) {
            Ok(0) => panic!("stream accepted {what}"),
            Ok(n) => out.extend_from_slice(&buf[..n]),
            Err(e) => break e,
        }
    };
    assert!(
        matches!(
            err.kind(),
            std::io::ErrorKind::InvalidData | std::io::ErrorKind::UnexpectedEof
        ),
        "{what}: {err}"
    );
    assert!(data.starts_with(&out), "wrong bytes released for {what}");
}

#[test]
fn sample_has_several_blocks_of_both_kinds() {
    for preset in Preset::all() {
        let (_, packed) = sample(preset);
        let report = inspect(&packed[..]).unwrap();
        assert!(report.is_intact());
        assert!(report.blocks.len() >= 6);
        let stored = report
            .blocks
            .iter()
            .filter(|b| b.kind == subrange::format::BlockKind::Stored)
            .count();
        assert!(
            stored >= 1 && stored < report.blocks.len(),
            "{preset}: {stored} stored of {}",
            report.blocks.len()
        );
    }
}

#[test]
fn truncation_at_every_offset_is_an_error() {
    cuts(false);
}

fn cuts(exhaustive: bool) {
    for preset in Preset::all() {
        let (data, packed) = sample(preset);
        for cut in positions(preset, packed.len(), 3, exhaustive) {
            let t = &packed[..cut];
            assert_rejected(t, &data, &format!("{preset} cut at {cut}"));
            if let Err(e) = decompress(t) {
                assert!(
                    matches!(e.kind(), ErrorKind::Truncated { .. }),
                    "cut {cut}: {e}"
                );
            }
        }
    }
}

/// Positions to damage for `preset`: every one for the order-0 presets; for
/// the context-mixing presets (which clear megabytes of tables per block, so
/// an exhaustive sweep takes minutes) every `stride`-th one (every
/// `3 * stride`-th for `history`), offset so successive strides cover
/// different residues. Framing and checksums do not
/// depend on the preset; `exhaustive_damage_of_context_presets` (ignored by
/// default) sweeps every position.
fn positions(preset: Preset, n: usize, stride: usize, exhaustive: bool) -> Vec<usize> {
    if exhaustive || !matches!(preset.name(), "order2" | "mix" | "history") {
        return (0..n).collect();
    }
    // The history engine's tables cost the most to set up per block.
    let stride = if preset.name() == "history" {
        3 * stride
    } else {
        stride
    };
    (0..n)
        .filter(|i| (i + i / stride).is_multiple_of(stride))
        .collect()
}

#[test]
fn every_single_bit_flip_is_an_error() {
    flips(false);
}

#[test]
#[ignore = "minutes: sweeps every bit of the context-mixing presets too"]
fn exhaustive_damage_of_context_presets() {
    flips(true);
    cuts(true);
}

fn flips(exhaustive: bool) {
    for preset in Preset::all() {
        let (data, packed) = sample(preset);
        let mut bytes = packed.clone();
        for bit in positions(preset, packed.len() * 8, 11, exhaustive) {
            bytes[bit / 8] ^= 1 << (bit % 8);
            assert_rejected(&bytes, &data, &format!("{preset} flip of bit {bit}"));
            bytes[bit / 8] ^= 1 << (bit % 8);
        }
    }
}

#[test]
fn crc32_check_value() {
    // CRC catalogue check value of CRC-32 (IEEE 802.3): CRC of the ASCII
    // bytes "123456789" is 0xCBF43926 (from memory).
    assert_eq!(crc32fast::hash(b"123456789"), 0xCBF4_3926);
    // The container records that same CRC of each block's raw bytes.
    let data = b"123456789".repeat(100);
    let mut o = Options::new();
    o.block_size(900).unwrap();
    let packed = compress(&data, &o).unwrap();
    let report = inspect(&packed[..]).unwrap();
    assert_eq!(report.blocks[0].crc_expected, crc32fast::hash(&data));
}

#[test]
fn crc32_detects_every_burst_up_to_32_bits() {
    // A CRC with a generator of degree r detects every burst error of
    // length <= r (Peterson & Brown, "Cyclic codes for error detection",
    // Proc. IRE 49(1), 1961); CRC-32 has r = 32. A burst of length b starts
    // and ends with a flipped bit; the bits between are arbitrary.
    let mut rng = subrange::corpus::SplitMix64::new(77);
    for len in [5usize, 64] {
        let buf: Vec<u8> = (0..len).map(|_| rng.next_u64() as u8).collect();
        let base = crc32fast::hash(&buf);
        let bits = len * 8;
        for b in 1..=32usize.min(bits) {
            for start in 0..=bits - b {
                for _ in 0..3 {
                    let middle = if b > 2 {
                        rng.next_u64() & ((1 << (b - 2)) - 1)
                    } else {
                        0
                    };
                    let pattern: u64 = if b == 1 {
                        1
                    } else {
                        1 | (middle << 1) | (1 << (b - 1))
                    };
                    let mut damaged = buf.clone();
                    for i in 0..b {
                        if pattern >> i & 1 == 1 {
                            let bit = start + i;
                            damaged[bit / 8] ^= 0x80 >> (bit % 8);
                        }
                    }
                    assert_ne!(crc32fast::hash(&damaged), base, "burst {b} at {start}");
                }
            }
        }
    }
}

#[test]
fn inspector_reports_damage_block_by_block() {
    for preset in Preset::all() {
        let (_, packed) = sample(preset);
        let blocks: Vec<_> = Inspector::new(&packed[..])
            .unwrap()
            .collect::<Result<_, _>>()
            .unwrap();
        let n = blocks.len();
        let b2 = &blocks[2];

        // Damage inside block 2's payload: only block 2 is reported bad.
        let mut bytes = packed.clone();
        bytes[(b2.offset + b2.frame_len) as usize + 1] ^= 0x04;
        let report = inspect(&bytes[..]).unwrap();
        assert_eq!(report.blocks.len(), n);
        assert!(report.end.is_some());
        assert!(!report.is_intact());
        for (i, b) in report.blocks.iter().enumerate() {
            assert_eq!(matches!(b.crc_status, CrcStatus::Ok), i != 2, "block {i}");
        }

        // Damage to block 2's frame: the walk stops there.
        let mut bytes = packed.clone();
        bytes[b2.offset as usize + 1] ^= 0x01;
        let report = inspect(&bytes[..]).unwrap();
        assert_eq!(report.blocks.len(), 2);
        assert!(matches!(
            report.error.as_ref().unwrap().kind(),
            ErrorKind::CorruptFrame { index: 2, .. }
        ));

        // Swapping two intact blocks is caught by the index in the frame check.
        let b1 = &blocks[1];
        let (s1, e1) = (b1.offset as usize, b2.offset as usize);
        let e2 = blocks[3].offset as usize;
        let mut swapped = packed[..s1].to_vec();
        swapped.extend_from_slice(&packed[e1..e2]);
        swapped.extend_from_slice(&packed[s1..e1]);
        swapped.extend_from_slice(&packed[e2..]);
        let err = decompress(&swapped).unwrap_err();
        assert!(
            matches!(err.kind(), ErrorKind::CorruptFrame { index: 1, .. }),
            "{err}"
        );
    }
}

/// The error of decoding `bytes` one-shot, and through the streaming
/// reader (the same).
fn both_errors(bytes: &[u8]) -> subrange::Error {
    let one_shot = decompress(bytes).unwrap_err();
    let io = Decompressor::new(bytes)
        .read_to_end(&mut Vec::new())
        .unwrap_err();
    assert_eq!(io.to_string(), one_shot.to_string());
    one_shot
}

#[test]
fn each_message_names_the_damaged_part_and_where() {
    let (_, packed) = sample(Preset::default());
    let blocks: Vec<_> = Inspector::new(&packed[..])
        .unwrap()
        .collect::<Result<_, _>>()
        .unwrap();
    let header_len = inspect(&packed[..]).unwrap().header.len as usize;

    // The header's own check (its last four bytes).
    let mut bytes = packed.clone();
    bytes[header_len - 2] ^= 0x10;
    let e = both_errors(&bytes);
    assert!(
        matches!(e.kind(), ErrorKind::CorruptHeader { offset, .. } if *offset == header_len as u64 - 4),
        "{e:?}"
    );
    let text = e.to_string();
    assert!(
        text.contains("header") && text.contains("checksum"),
        "{text}"
    );
    assert!(!text.contains("coded stream"), "{text}");

    // A block's frame: which block, at which offset.
    let b3 = &blocks[3];
    let mut bytes = packed.clone();
    bytes[b3.offset as usize + 1] ^= 0x01;
    let e = both_errors(&bytes);
    assert!(
        matches!(e.kind(), ErrorKind::CorruptFrame { index: 3, offset, .. } if *offset == b3.offset),
        "{e:?}"
    );
    assert!(e.to_string().contains("frame of block 3"), "{e}");

    // A block's payload.
    let mut bytes = packed.clone();
    bytes[(b3.offset + b3.frame_len) as usize + 2] ^= 0x04;
    let e = both_errors(&bytes);
    assert!(e.to_string().contains("payload of block 3"), "{e}");

    // The end record: its check, and a count that disagrees.
    let end = inspect(&packed[..]).unwrap().end.unwrap();
    let mut bytes = packed.clone();
    // The end record's last byte (its check), before the block index.
    let last = (end.container_len - end.index_len - 1) as usize;
    bytes[last] ^= 0x20;
    let e = both_errors(&bytes);
    assert!(
        matches!(e.kind(), ErrorKind::CorruptEnd { offset, .. } if *offset == end.offset),
        "{e:?}"
    );
    assert!(e.to_string().contains("end record"), "{e}");
    // An end record that lies about the block count (and carries a
    // matching check): built from the layout of docs/FORMAT.md, section 4.
    let mut bytes = packed[..end.offset as usize].to_vec();
    let lie = blocks.len() as u64 + 1;
    let mut record = vec![0u8, lie as u8];
    let mut total = end.total_raw;
    while total >= 0x80 {
        record.push(total as u8 | 0x80);
        total >>= 7;
    }
    record.push(total as u8);
    // The check binds the number of blocks before the record (section 2).
    let mut h = crc32fast::Hasher::new();
    h.update(&(blocks.len() as u64).to_le_bytes());
    h.update(&record);
    record.extend_from_slice(&h.finalize().to_le_bytes());
    bytes.extend_from_slice(&record);
    let e = both_errors(&bytes);
    assert!(
        matches!(e.kind(), ErrorKind::CorruptEnd { offset, .. } if *offset == end.offset),
        "{e:?}"
    );
    assert!(e.to_string().contains("block count"), "{e}");
}
