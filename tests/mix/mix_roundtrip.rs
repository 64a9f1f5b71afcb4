//! Round trips, determinism and parameter handling of the two engines.

use crate::support::gen;
use proptest::prelude::*;
use subrange::model::cm::{
    check_memory, decode_mix, decode_order2, encode_mix, encode_order2, MixParams, Order2Params,
};
use subrange::ErrorKind;

use crate::small_mix;

proptest! {
    #![proptest_config(ProptestConfig::with_cases(24))]

    #[test]
    fn order2_round_trips(data in proptest::collection::vec(any::<u8>(), 0..600), inherit: bool, limit in 1u16..=1023) {
        let mut p = Order2Params::default();
        p.order1 = inherit;
        p.limit = limit;
        let coded = encode_order2(&data, &p).unwrap();
        prop_assert_eq!(decode_order2(&coded, data.len(), &p).unwrap(), data);
    }

    #[test]
    fn mix_round_trips(
        data in proptest::collection::vec(prop_oneof![Just(b'a'), Just(b','), Just(b'\n'), any::<u8>()], 0..600),
        orders in 0u8..64, flags in 0u8..8, rate in 1u8..=64,
    ) {
        let mut p = small_mix();
        p.orders = orders;
        p.word = flags & 1 != 0;
        p.column = flags & 2 != 0;
        p.matcher = flags & 4 != 0;
        p.rate = rate;
        if p.validate().is_err() {
            // Only the configuration with no context at all is refused.
            prop_assert!(orders == 0 && flags == 0);
            return Ok(());
        }
        let coded = encode_mix(&data, &p).unwrap();
        prop_assert_eq!(decode_mix(&coded, data.len(), &p).unwrap(), data);
    }
}

#[test]
fn synthetic_round_trips_and_determinism() {
    let inputs = [
        gen::text(11, 60_000),
        gen::telemetry(12, 60_000),
        gen::random(13, 20_000),
        vec![0u8; 30_000],
        (0..40_000u32).map(|i| (i % 251) as u8).collect(),
    ];
    let p2 = Order2Params::default();
    let pm = small_mix();
    for data in &inputs {
        let a = encode_order2(data, &p2).unwrap();
        assert_eq!(
            a,
            encode_order2(data, &p2).unwrap(),
            "order2 is deterministic"
        );
        assert_eq!(&decode_order2(&a, data.len(), &p2).unwrap(), data);
        let b = encode_mix(data, &pm).unwrap();
        assert_eq!(b, encode_mix(data, &pm).unwrap(), "mix is deterministic");
        assert_eq!(&decode_mix(&b, data.len(), &pm).unwrap(), data);
    }
}

#[test]
fn default_mix_round_trips() {
    let data = gen::text(14, 100_000);
    let p = MixParams::default();
    let coded = encode_mix(&data, &p).unwrap();
    assert_eq!(decode_mix(&coded, data.len(), &p).unwrap(), data);
}

#[test]
fn wrong_parameters_do_not_decode_silently_or_panic() {
    let data = gen::telemetry(15, 20_000);
    let p = small_mix();
    let coded = encode_mix(&data, &p).unwrap();
    let mut q = p;
    q.rate = 7;
    // Different parameters: an error or different bytes, never a panic.
    if let Ok(out) = decode_mix(&coded, data.len(), &q) {
        assert_ne!(out, data);
    }
}

#[test]
fn parameters_record_as_bytes_and_memory_is_bounded() {
    let p = MixParams::default();
    assert_eq!(MixParams::from_bytes(p.to_bytes()).unwrap(), p);
    let q = Order2Params::default();
    assert_eq!(Order2Params::from_bytes(q.to_bytes()).unwrap(), q);
    // Memory need grows with mem_log2 and is checked against a limit.
    let mut big = p;
    big.mem_log2 = MixParams::MAX_MEM_LOG2;
    assert!(big.memory_needed() > p.memory_needed());
    assert!(big.memory_needed() >= 1 << 30);
    let err = check_memory(big.memory_needed(), 256 << 20).unwrap_err();
    assert!(matches!(err.kind(), ErrorKind::LimitExceeded { .. }));
    big.mem_log2 = 11;
    let err = big.validate().unwrap_err();
    assert!(matches!(
        err.kind(),
        ErrorKind::InvalidParameter {
            name: "mem_log2",
            ..
        }
    ));
    let err = encode_mix(b"x", &big).unwrap_err();
    assert!(matches!(err.kind(), ErrorKind::InvalidParameter { .. }));
    let mut bad = q;
    bad.limit = 0;
    assert!(matches!(
        decode_order2(&[], 0, &bad).unwrap_err().kind(),
        ErrorKind::InvalidParameter { name: "limit", .. }
    ));
}
