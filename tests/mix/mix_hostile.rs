//! Damaged and arbitrary input into the engines' decoders.

use crate::support::gen;
use proptest::prelude::*;
use subrange::model::cm::{decode_mix, decode_order2, encode_mix, encode_order2, Order2Params};

use crate::small_mix;

proptest! {
    #![proptest_config(ProptestConfig::with_cases(32))]

    #[test]
    fn arbitrary_bytes_never_panic(coded in proptest::collection::vec(any::<u8>(), 0..300), raw_len in 0usize..2000) {
        // Either an error or raw_len bytes: nothing else.
        if let Ok(out) = decode_order2(&coded, raw_len, &Order2Params::default()) {
            prop_assert_eq!(out.len(), raw_len);
        }
        if let Ok(out) = decode_mix(&coded, raw_len, &small_mix()) {
            prop_assert_eq!(out.len(), raw_len);
        }
    }
}

#[test]
fn truncated_and_extended_streams_are_errors() {
    let data = gen::text(21, 5000);
    let p2 = Order2Params::default();
    let pm = small_mix();
    let a = encode_order2(&data, &p2).unwrap();
    let b = encode_mix(&data, &pm).unwrap();
    for cut in [0, 1, a.len() / 2, a.len() - 8] {
        assert!(
            decode_order2(&a[..cut], data.len(), &p2).is_err(),
            "cut {cut}"
        );
    }
    for cut in [0, 1, b.len() / 2, b.len() - 8] {
        assert!(decode_mix(&b[..cut], data.len(), &pm).is_err(), "cut {cut}");
    }
    // The encoder drops up to four trailing zero bytes, which the decoder
    // reads back implicitly; five extra bytes cannot all be taken for those.
    let tail = [1, 2, 3, 4, 5];
    let mut longer = b.clone();
    longer.extend_from_slice(&tail);
    assert!(decode_mix(&longer, data.len(), &pm).is_err());
    let mut longer = a.clone();
    longer.extend_from_slice(&tail);
    assert!(decode_order2(&longer, data.len(), &p2).is_err());
}

#[test]
fn flipped_bits_never_panic() {
    let data = gen::telemetry(22, 4000);
    let p2 = Order2Params::default();
    let pm = small_mix();
    let a = encode_order2(&data, &p2).unwrap();
    let b = encode_mix(&data, &pm).unwrap();
    for i in (0..a.len()).step_by(97) {
        let mut bad = a.clone();
        bad[i] ^= 0x10;
        let _ = decode_order2(&bad, data.len(), &p2);
    }
    for i in (0..b.len()).step_by(97) {
        let mut bad = b.clone();
        bad[i] ^= 0x10;
        let _ = decode_mix(&bad, data.len(), &pm);
    }
}
