//! Compression of the engines against flate2 level 9 and against entropy.

use std::io::Write;

use crate::support::gen;
use subrange::model::cm::{
    decode_mix, decode_order2, encode_mix, encode_order2, MixParams, Order2Params,
};

fn deflate9(data: &[u8]) -> usize {
    let mut e = flate2::write::DeflateEncoder::new(Vec::new(), flate2::Compression::new(9));
    e.write_all(data).unwrap();
    e.finish().unwrap().len()
}

fn mix_ratio(data: &[u8]) -> f64 {
    let p = MixParams::default();
    let coded = encode_mix(data, &p).unwrap();
    assert_eq!(decode_mix(&coded, data.len(), &p).unwrap(), data);
    coded.len() as f64 / deflate9(data) as f64
}

/// The committed open-data sample (see tests/data/README.md).
const WORDS: &[u8] = include_bytes!("../data/words-sample.txt");

#[test]
fn mix_beats_deflate_on_the_word_list_sample() {
    let r = mix_ratio(WORDS);
    assert!(r <= 0.80, "mix / deflate-9 = {r:.3} on the word list");
}

#[test]
fn mix_beats_deflate_on_text_and_telemetry() {
    let r = mix_ratio(&gen::text(31, 200_000));
    assert!(r <= 0.80, "mix / deflate-9 = {r:.3} on text");
    let r = mix_ratio(&gen::telemetry(32, 200_000));
    assert!(r <= 0.80, "mix / deflate-9 = {r:.3} on telemetry");
}

#[test]
fn mix_stays_near_eight_bits_a_byte_on_random_data() {
    let data = gen::random(33, 200_000);
    let p = MixParams::default();
    let coded = encode_mix(&data, &p).unwrap();
    assert!(
        coded.len() as f64 <= data.len() as f64 * 1.001,
        "{} coded bytes for {} random bytes",
        coded.len(),
        data.len()
    );
    assert_eq!(decode_mix(&coded, data.len(), &p).unwrap(), data);
}

#[test]
fn order2_is_close_to_the_order2_conditional_entropy() {
    // Text-like input of 1 MiB: within 5 % of its empirical order-2
    // conditional entropy (which an adaptive model can only approach, as it
    // pays to learn each context).
    let data = gen::text(34, 1 << 20);
    let p = Order2Params::default();
    let coded = encode_order2(&data, &p).unwrap();
    assert_eq!(decode_order2(&coded, data.len(), &p).unwrap(), data);
    let h2 = gen::order2_entropy_bits(&data) / 8.0;
    let r = coded.len() as f64 / h2;
    assert!(r <= 1.05, "order2 / H2 = {r:.3}");
}

#[test]
fn order2_entropy_matches_a_hand_count() {
    // "abab…": after the first two bytes every context predicts one byte, so
    // only the first two bytes cost anything: byte 0 has the empty context
    // (one occurrence, 0 bits), byte 1 the context "a" (one occurrence, 0 bits).
    assert_eq!(gen::order2_entropy_bits(b"abababab"), 0.0);
    // Context (b, a) is followed by 'a' twice and 'c' once: 3·h(1/3) bits.
    let h = 3.0 * -(1.0f64 / 3.0 * (1.0f64 / 3.0).log2() + 2.0 / 3.0 * (2.0f64 / 3.0).log2());
    let got = gen::order2_entropy_bits(b"baabaabac");
    assert!((got - h).abs() < 1e-9, "{got} vs {h}");
}
