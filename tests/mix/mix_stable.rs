//! Streams the context-mixing engines and the lane coders wrote must keep
//! decoding: all are deterministic, so the coded bytes for fixed inputs and
//! parameters are pinned here by their length and CRC-32. A speed-up that
//! changes one coded byte fails this test; a different model belongs behind
//! a new parameter value, so that streams with the old values still decode.
//! The lane pins hold on every path the CPU offers (vector kernels or
//! scalar steps: the tests of the kernels compare them with each other).

use crate::support::gen;
use subrange::model::cm::{
    decode_mix, decode_order2, encode_mix, encode_order2, MixParams, Order2Params,
};

/// The inputs: seeded text and telemetry, a short record and a binary mix.
fn inputs() -> Vec<(&'static str, Vec<u8>)> {
    let mut binary = gen::telemetry(5, 6000);
    binary.extend(gen::random(6, 3000));
    binary.extend(gen::text(7, 6000));
    vec![
        ("text", gen::text(1, 24_000)),
        ("telemetry", gen::telemetry(2, 24_000)),
        ("short", gen::telemetry(3, 300)),
        ("binary", binary),
    ]
}

/// Checks `coded` against its pin.
fn check(what: &str, coded: &[u8], pin: (usize, u32)) {
    let got = (coded.len(), crc32fast::hash(coded));
    assert_eq!(got, pin, "{what}: (length, CRC-32) of the coded bytes");
}

/// Per input of [`inputs`], the (length, CRC-32) of its coded bytes.
type Pins = [(usize, u32); 4];

/// `MixParams::to_bytes` of each parameter set, and its pins. Flag bit 3
/// selects the precise binary step (the default); the sets without it pin
/// the coarse step of earlier streams.
const MIX_PINS: &[([u8; 4], Pins)] = &[
    (
        [2, 7, 15, 6],
        [
            (7388, 0xE2E8A396),
            (1951, 0xCC18714C),
            (132, 0xCDD13125),
            (5962, 0x2D3A98E7),
        ],
    ),
    (
        [2, 7, 7, 6],
        [
            (7389, 0xE24ED549),
            (1954, 0xB1C103FF),
            (133, 0xA5C54AFE),
            (5964, 0x0A99A029),
        ],
    ),
    (
        [0, 63, 7, 6],
        [
            (7661, 0x07B981E2),
            (1989, 0x4D1F0658),
            (133, 0xAEC661B4),
            (6018, 0x879CFA8E),
        ],
    ),
    (
        [1, 1, 0, 6],
        [
            (10022, 0xE333A06E),
            (6999, 0x035B1B12),
            (165, 0x809333C3),
            (7624, 0xB38BF453),
        ],
    ),
    (
        [0, 0, 4, 3],
        [
            (10545, 0x23C1D3C1),
            (4121, 0xE175FC69),
            (181, 0x04C03D6E),
            (7430, 0xD6A3D260),
        ],
    ),
    (
        [3, 42, 3, 20],
        [
            (7886, 0x0C6FF296),
            (2281, 0xD67EABD0),
            (126, 0x2F99167E),
            (6123, 0xBBF77175),
        ],
    ),
    (
        [0, 2, 4, 64],
        [
            (9161, 0x26D0A998),
            (4061, 0xDFCC9DDF),
            (129, 0x691B6D6D),
            (6894, 0xF6CA4A46),
        ],
    ),
    (
        [2, 4, 1, 1],
        [
            (8812, 0x0EC8BFD5),
            (3180, 0x01D76198),
            (169, 0xA8D817C6),
            (6822, 0xE7097581),
        ],
    ),
    (
        [10, 3, 6, 6],
        [
            (7597, 0x37B5CEDF),
            (1984, 0x56E9CCE3),
            (135, 0xB9D79125),
            (6021, 0xD7E3F55C),
        ],
    ),
];

/// `Order2Params::to_bytes` of each parameter set, and its pins (flag bit
/// 1: the precise binary step, the default).
const ORDER2_PINS: &[([u8; 3], Pins)] = &[
    (
        [3, 60, 0],
        [
            (8542, 0xD8F12AB5),
            (4278, 0xEE21BF6E),
            (158, 0x1E634EE3),
            (7085, 0x62D8A066),
        ],
    ),
    (
        [1, 60, 0],
        [
            (8544, 0x9CFA3A91),
            (4282, 0xFAFDE069),
            (158, 0x81A16349),
            (7086, 0xE10B3D22),
        ],
    ),
    (
        [0, 255, 0],
        [
            (9342, 0x9103B105),
            (4697, 0xFB8A61D5),
            (186, 0x2D011E73),
            (7380, 0x91119C55),
        ],
    ),
];

#[test]
fn defaults_use_the_precise_step() {
    assert_eq!(MixParams::default().to_bytes(), [2, 7, 15, 6]);
    assert_eq!(Order2Params::default().to_bytes(), [3, 60, 0]);
}

#[test]
fn mix_streams_are_pinned() {
    let inputs = inputs();
    for &(bytes, pins) in MIX_PINS {
        let p = MixParams::from_bytes(bytes).unwrap();
        for ((name, data), pin) in inputs.iter().zip(pins) {
            let coded = encode_mix(data, &p).unwrap();
            check(&format!("mix {bytes:?} {name}"), &coded, pin);
            assert_eq!(decode_mix(&coded, data.len(), &p).unwrap(), *data);
        }
    }
}

#[test]
fn order2_streams_are_pinned() {
    let inputs = inputs();
    for &(bytes, pins) in ORDER2_PINS {
        let p = Order2Params::from_bytes(bytes).unwrap();
        for ((name, data), pin) in inputs.iter().zip(pins) {
            let coded = encode_order2(data, &p).unwrap();
            check(&format!("order2 {bytes:?} {name}"), &coded, pin);
            assert_eq!(decode_order2(&coded, data.len(), &p).unwrap(), *data);
        }
    }
}

/// The lane-coded inputs: seeded telemetry, text, skewed bytes, a short
/// record and a run that drives long carry chains.
fn lane_inputs() -> Vec<(&'static str, Vec<u8>)> {
    let mut carries = vec![1u8; 30_000];
    for i in (0..carries.len()).step_by(997) {
        carries[i] = 0;
    }
    vec![
        ("csv", subrange::corpus::gauge_csv(11, 200_000)),
        ("text", subrange::corpus::text_like(12, 150_000)),
        ("skewed", subrange::corpus::skewed(13, 70_001)),
        ("short", subrange::corpus::gauge_csv(14, 777)),
        ("carries", carries),
    ]
}

/// Per input and kind of stream (`table`: the table lanes at three totals
/// and every lane count; `refresh`: the adaptive lanes at six lane counts;
/// `container`: both presets at two block sizes, written without a block
/// index so the pins hold the coded blocks alone), the length (`u64`) and
/// CRC-32 (`u32`) of each stream, little-endian, back to back.
fn lane_pins() -> Vec<(&'static str, &'static str, Vec<u8>)> {
    use subrange::coder::{encode_adaptive_lanes, encode_table_lanes};
    use subrange::format::IndexPolicy;
    use subrange::model::{AdaptiveModel, TableModel};
    use subrange::preset::Preset;
    use subrange::{compress, Options};
    let mut pins = Vec::new();
    for (name, data) in lane_inputs() {
        let mut groups: [Vec<u8>; 3] = Default::default();
        let mut add = |group: usize, lanes: &[Vec<u8>]| {
            let joined: Vec<u8> = lanes.concat();
            groups[group].extend_from_slice(&(joined.len() as u64).to_le_bytes());
            groups[group].extend_from_slice(&crc32fast::hash(&joined).to_le_bytes());
        };
        for log2_total in [10u32, 12, 16] {
            let model = TableModel::from_bytes_histogram(&data, log2_total).unwrap();
            for lanes in 1..=32 {
                let s = encode_table_lanes(&model, &data, lanes).unwrap();
                add(0, &s);
            }
        }
        for lanes in [1usize, 5, 8, 16, 24, 32] {
            let mut model = AdaptiveModel::new(256).unwrap();
            let s = encode_adaptive_lanes(&mut model, &data, lanes).unwrap();
            add(1, &s);
        }
        for preset in ["static", "adaptive"] {
            for block in [1u64 << 20, 40_000] {
                let mut opts = Options::new();
                opts.preset(Preset::from_name(preset).unwrap())
                    .block_index(IndexPolicy::Never)
                    .block_size(block)
                    .unwrap();
                let c = compress(&data, &opts).unwrap();
                add(2, &[c]);
            }
        }
        let [table, refresh, container] = groups;
        pins.push((name, "table", table));
        pins.push((name, "refresh", refresh));
        pins.push((name, "container", container));
    }
    pins
}

/// Per entry of [`lane_pins`]: (input, kind, streams, CRC-32 of the
/// entry's bytes).
const LANE_PINS: &[(&str, &str, usize, u32)] = &[
    ("csv", "table", 96, 0x6475b939),
    ("csv", "refresh", 6, 0x86429018),
    ("csv", "container", 4, 0xd7eb99ba),
    ("text", "table", 96, 0xc755d954),
    ("text", "refresh", 6, 0x99e5a63c),
    ("text", "container", 4, 0x3299da0d),
    ("skewed", "table", 96, 0x1d376d44),
    ("skewed", "refresh", 6, 0xcde8acc8),
    ("skewed", "container", 4, 0x38caf0f0),
    ("short", "table", 96, 0x7ae06b3c),
    ("short", "refresh", 6, 0x807b6128),
    ("short", "container", 4, 0xe42889a6),
    ("carries", "table", 96, 0xda81ccd2),
    ("carries", "refresh", 6, 0xad6dd172),
    ("carries", "container", 4, 0xa1f9fd62),
];

#[test]
fn lane_streams_are_pinned() {
    let pins = lane_pins();
    assert_eq!(pins.len(), LANE_PINS.len());
    for ((name, kind, bytes), &(pin_name, pin_kind, streams, crc)) in pins.iter().zip(LANE_PINS) {
        assert_eq!((*name, *kind), (pin_name, pin_kind));
        assert_eq!(bytes.len(), 12 * streams, "{name} {kind}");
        assert_eq!(
            crc32fast::hash(bytes),
            crc,
            "{name} {kind}: lengths and CRC-32s of the streams"
        );
    }
}
