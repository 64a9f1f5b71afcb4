//! The MQ coder against the test sequence of ITU-T T.88 Annex H.2 (from
//! memory): 256 decisions, all in one context starting at state 0 with MPS 0,
//! coded with the bi-level termination.

use subrange::mq::{MqContexts, MqDecoder, MqEncoder, Termination};

/// The decisions, most significant bit of each byte first (ITU-T T.88
/// Annex H.2, from memory).
const DECISION_BYTES: [u8; 32] = [
    0x00, 0x02, 0x00, 0x51, 0x00, 0x00, 0x00, 0xC0, 0x03, 0x52, 0x87, 0x2A, 0xAA, 0xAA, 0xAA, 0xAA,
    0x82, 0xC0, 0x20, 0x00, 0xFC, 0xD7, 0x9E, 0xF6, 0xBF, 0x7F, 0xED, 0x90, 0x4F, 0x46, 0xA3, 0xBF,
];

/// The coded stream the standard gives for them (ITU-T T.88 Annex H.2, from
/// memory).
const CODED: [u8; 30] = [
    0x84, 0xC7, 0x3B, 0xFC, 0xE1, 0xA1, 0x43, 0x04, 0x02, 0x20, 0x00, 0x00, 0x41, 0x0D, 0xBB, 0x86,
    0xF4, 0x31, 0x7F, 0xFF, 0x88, 0xFF, 0x37, 0x47, 0x1A, 0xDB, 0x6A, 0xDF, 0xFF, 0xAC,
];

fn decisions() -> Vec<bool> {
    DECISION_BYTES
        .iter()
        .flat_map(|&byte| (0..8).rev().map(move |i| (byte >> i) & 1 != 0))
        .collect()
}

#[test]
fn encodes_to_the_standard_stream() {
    let bits = decisions();
    assert_eq!(bits.len(), 256);
    let mut contexts = MqContexts::new(1);
    let mut encoder = MqEncoder::new(Vec::new());
    let mut previous = 0;
    for (i, &bit) in bits.iter().enumerate() {
        encoder.encode(&mut contexts, 0, bit).unwrap();
        // Every byte that has left the encoder so far is final and must be
        // the standard's byte at that position.
        let written = encoder.get_ref();
        assert_eq!(written.len(), encoder.bytes_written());
        assert!(written.len() >= previous, "output shrank at decision {i}");
        assert!(
            written.len() <= CODED.len() - 2,
            "too many bytes after decision {i}"
        );
        assert_eq!(
            written[..],
            CODED[..written.len()],
            "bytes written after decision {i}"
        );
        previous = written.len();
    }
    // Before the flush all but the last few bytes are out.
    assert!(
        previous >= CODED.len() - 5,
        "only {previous} bytes before FLUSH"
    );
    let stream = encoder.finish(Termination::BiLevel);
    assert_eq!(stream, CODED);
}

#[test]
fn decodes_the_standard_stream() {
    let bits = decisions();
    let mut contexts = MqContexts::new(1);
    let mut decoder = MqDecoder::new(&CODED);
    for (i, &bit) in bits.iter().enumerate() {
        assert_eq!(
            decoder.decode(&mut contexts, 0).unwrap(),
            bit,
            "decision {i}"
        );
    }
    // The decoder stops at the marker: the 0xFF is read, the 0xAC is not.
    assert_eq!(decoder.bytes_read(), CODED.len() - 1);
}

#[test]
fn decode_many_matches_the_standard_stream() {
    let bits = decisions();
    let mut out = vec![false; bits.len()];
    MqDecoder::new(&CODED)
        .decode_many(&mut MqContexts::new(1), 0, &mut out)
        .unwrap();
    assert_eq!(out, bits);
}

#[test]
fn encode_many_matches_the_standard_stream() {
    let mut encoder = MqEncoder::new(Vec::new());
    encoder
        .encode_many(&mut MqContexts::new(1), 0, &decisions())
        .unwrap();
    assert_eq!(encoder.finish(Termination::BiLevel), CODED);
}

#[test]
fn wavelet_termination_shares_the_body_and_decodes() {
    // Same registers up to FLUSH, so the same bytes up to the marker; the
    // last byte (0xDF) is not 0xFF and is kept.
    let bits = decisions();
    let mut encoder = MqEncoder::new(Vec::new());
    encoder
        .encode_many(&mut MqContexts::new(1), 0, &bits)
        .unwrap();
    let stream = encoder.finish(Termination::Wavelet);
    assert_eq!(stream[..], CODED[..CODED.len() - 2]);

    let mut out = vec![false; bits.len()];
    MqDecoder::new(&stream)
        .decode_many(&mut MqContexts::new(1), 0, &mut out)
        .unwrap();
    assert_eq!(out, bits);
}
